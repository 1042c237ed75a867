// The status-bar item: the solve state of the scene in the active editor.
import * as vscode from 'vscode';
import type { ResultParams, SolveStatusParams } from '../../server/src/protocol';

interface DocState {
  status?: SolveStatusParams;
  result?: ResultParams;
}

export class SolveStatusItem implements vscode.Disposable {
  private readonly item = vscode.window.createStatusBarItem('voltscape.solveStatus', vscode.StatusBarAlignment.Left, 50);
  private readonly docs = new Map<string, DocState>();

  constructor() {
    this.item.name = 'Voltscape solve status';
    this.item.command = 'voltscape.openPreview';
    this.refresh();
  }

  onStatus(p: SolveStatusParams): void {
    const d = this.docs.get(p.uri) ?? {};
    d.status = p;
    this.docs.set(p.uri, d);
    this.refresh();
  }

  onResult(p: ResultParams): void {
    const d = this.docs.get(p.uri) ?? {};
    d.result = p;
    this.docs.set(p.uri, d);
    this.refresh();
  }

  forget(uri: string): void {
    this.docs.delete(uri);
    if (this.lastScene === uri) this.lastScene = undefined;
    this.refresh();
  }

  /** The text for a document's state (exported for tests of the wording). */
  static describe(d: DocState): { text: string; tooltip: string } {
    const s = d.status;
    const r = d.result;
    const solved = r ? `solved in ${Math.round(r.solveMs)} ms${r.level === 'coarse' ? ' (coarse)' : ''}` : 'not solved yet';
    switch (s?.state) {
      case 'queued':
      case 'solving':
        return { text: `$(sync~spin) Voltscape: solving${s.level === 'coarse' ? ' (coarse)' : ''}…`, tooltip: 'Solving the field of this scene' };
      case 'stale':
        return { text: '$(warning) Voltscape: scene has errors', tooltip: 'The scene has errors; the preview shows the last good result' };
      case 'limited':
        return { text: '$(warning) Voltscape: over a limit', tooltip: s.message ?? 'The scene is over a solve limit and was not solved' };
      case 'failed':
        return { text: '$(error) Voltscape: solve failed', tooltip: s.message ?? 'The solver failed' };
      default:
        return { text: `$(pulse) Voltscape: ${solved}`, tooltip: 'Open the field preview' };
    }
  }

  /** The scene last shown in a text editor: still the subject while the preview (a webview) has focus. */
  private lastScene: string | undefined;

  refresh(): void {
    const editor = vscode.window.activeTextEditor;
    if (editor) this.lastScene = editor.document.languageId === 'vscape' ? editor.document.uri.toString() : undefined;
    const uri = this.lastScene;
    if (!uri) {
      this.item.hide();
      return;
    }
    const { text, tooltip } = SolveStatusItem.describe(this.docs.get(uri) ?? {});
    this.item.text = text;
    this.item.tooltip = tooltip;
    this.item.show();
  }

  dispose(): void {
    this.item.dispose();
  }
}
