// The field preview: one webview panel beside the scene, following the active scene editor.
// It keeps no picture of its own: it forwards the newest result for its document to the page, and
// sends it again whenever the panel becomes visible (retainContextWhenHidden stays off).
import * as vscode from 'vscode';
import type {
  ExtensionToPreviewMessage,
  PreviewDrawnMessage,
  PreviewToExtensionMessage,
  PreviewSweepDrawnMessage,
  ResultParams,
  SolveStatusParams,
  SweepResultParams,
} from '../../server/src/protocol';
import { makeNonce, previewHtml } from './preview-html';

export const PREVIEW_VIEW_TYPE = 'voltscape.preview';

/** Where the panel gets results: the newest one seen for a document (fetched from the server if needed). */
export interface ResultSource {
  latest(uri: string): Promise<ResultParams | null>;
}

function titleOf(uri: string): string {
  const path = vscode.Uri.parse(uri).path;
  return path.slice(path.lastIndexOf('/') + 1);
}

export class PreviewPanel {
  static current: PreviewPanel | undefined;
  /** What the page last reported drawing (for tests and diagnostics of the preview itself). */
  lastDrawn: PreviewDrawnMessage | undefined;
  /** What the page last reported drawing in its sweep plot. */
  lastSweepDrawn: PreviewSweepDrawnMessage | undefined;
  /** The newest `voltscape/sweepResult` of each document, resent when the page is rebuilt. */
  private static readonly sweeps = new Map<string, SweepResultParams>();
  private uri: string;
  private readonly disposables: vscode.Disposable[] = [];

  /** Opens the preview beside the scene, or points the open one at `uri` and reveals it. */
  static show(extensionUri: vscode.Uri, uri: string, source: ResultSource): PreviewPanel {
    if (PreviewPanel.current) {
      PreviewPanel.current.follow(uri);
      PreviewPanel.current.panel.reveal(vscode.ViewColumn.Beside, true);
      return PreviewPanel.current;
    }
    const panel = vscode.window.createWebviewPanel(
      PREVIEW_VIEW_TYPE,
      `Field: ${titleOf(uri)}`,
      { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true },
      PreviewPanel.webviewOptions(extensionUri),
    );
    PreviewPanel.current = new PreviewPanel(panel, extensionUri, uri, source);
    return PreviewPanel.current;
  }

  /** Brings back a panel restored by VS Code after a reload. */
  static revive(panel: vscode.WebviewPanel, extensionUri: vscode.Uri, uri: string, source: ResultSource): PreviewPanel {
    panel.webview.options = PreviewPanel.webviewOptions(extensionUri);
    PreviewPanel.current?.panel.dispose();
    PreviewPanel.current = new PreviewPanel(panel, extensionUri, uri, source);
    return PreviewPanel.current;
  }

  static webviewOptions(extensionUri: vscode.Uri): vscode.WebviewOptions & vscode.WebviewPanelOptions {
    return {
      enableScripts: true,
      localResourceRoots: [vscode.Uri.joinPath(extensionUri, 'dist', 'webview')],
      retainContextWhenHidden: false,
    };
  }

  private constructor(
    readonly panel: vscode.WebviewPanel,
    extensionUri: vscode.Uri,
    uri: string,
    private readonly source: ResultSource,
  ) {
    this.uri = uri;
    const root = vscode.Uri.joinPath(extensionUri, 'dist', 'webview');
    const webview = panel.webview;
    webview.html = previewHtml(
      webview,
      webview.asWebviewUri(vscode.Uri.joinPath(root, 'preview.js')).toString(),
      webview.asWebviewUri(vscode.Uri.joinPath(root, 'preview.css')).toString(),
      makeNonce(),
    );
    this.disposables.push(
      webview.onDidReceiveMessage((m: PreviewToExtensionMessage) => this.onMessage(m)),
      // The page is rebuilt when a hidden panel is shown again; it then asks with 'ready'. Sending on
      // visibility too covers a page that kept its context.
      panel.onDidChangeViewState((e) => {
        if (e.webviewPanel.visible) void this.sendLatest();
      }),
      panel.onDidDispose(() => this.dispose()),
    );
  }

  get documentUri(): string {
    return this.uri;
  }

  /** Shows another scene. */
  follow(uri: string): void {
    if (uri === this.uri) return;
    this.uri = uri;
    this.panel.title = `Field: ${titleOf(uri)}`;
    void this.sendLatest();
  }

  onResult(p: ResultParams): void {
    if (p.uri === this.uri) this.post(this.showMessage(p));
  }

  /** Keeps the newest sweep of every document (also while no panel is open) and forwards it to the page. */
  static onSweep(p: SweepResultParams): void {
    PreviewPanel.sweeps.set(p.uri, p);
    if (PreviewPanel.current?.uri === p.uri) PreviewPanel.current.post({ type: 'sweep', ...p });
  }

  onStatus(p: SolveStatusParams): void {
    if (p.uri === this.uri) this.post({ type: 'status', state: p.state, version: p.version, message: p.message });
  }

  private showMessage(p: ResultParams): ExtensionToPreviewMessage {
    return { type: 'show', title: titleOf(p.uri), uri: p.uri, version: p.version, level: p.level, stale: p.stale, result: p.result };
  }

  private post(m: ExtensionToPreviewMessage): void {
    if (this.panel.visible) void this.panel.webview.postMessage(m);
  }

  private async sendLatest(): Promise<void> {
    const uri = this.uri;
    const latest = await this.source.latest(uri);
    if (uri !== this.uri) return;
    const sweep = PreviewPanel.sweeps.get(uri);
    if (latest) {
      this.post(this.showMessage(latest));
      if (sweep) this.post({ type: 'sweep', ...sweep });
    } else this.post({ type: 'empty', title: titleOf(uri), message: 'Not solved yet: the picture appears once the scene has been solved.' });
  }

  private onMessage(m: PreviewToExtensionMessage): void {
    if (!m || typeof m !== 'object') return;
    if (m.type === 'ready') void this.sendLatest();
    else if (m.type === 'selectElectrode') void this.selectElectrode(m.index, m.name, m.range);
    else if (m.type === 'export') void this.save(m.format, m.data, m.suggestedName);
    else if (m.type === 'drawn') this.lastDrawn = m;
    else if (m.type === 'sweepDrawn') this.lastSweepDrawn = m;
  }

  /** Selects the electrode's statement in the scene's editor (opening it beside if needed). */
  private async selectElectrode(index: number, name: string, fallback: vscode.Range | { start: { line: number; character: number }; end: { line: number; character: number } }): Promise<void> {
    const latest = await this.source.latest(this.uri);
    const located = latest?.electrodes[index];
    const r = located && located.name === name ? located.range : fallback;
    if (!r || typeof r.start?.line !== 'number') return;
    const range = new vscode.Range(r.start.line, r.start.character, r.end.line, r.end.character);
    const target = vscode.Uri.parse(this.uri);
    const visible = vscode.window.visibleTextEditors.find((e) => e.document.uri.toString() === this.uri);
    const editor = await vscode.window.showTextDocument(target, {
      viewColumn: visible?.viewColumn ?? vscode.ViewColumn.One,
      selection: range,
      preserveFocus: false,
    });
    editor.revealRange(range, vscode.TextEditorRevealType.InCenterIfOutsideViewport);
  }

  /** Saves an exported picture where the user says. */
  private async save(format: 'svg' | 'png', data: string, suggestedName: string): Promise<void> {
    let bytes: Uint8Array;
    if (format === 'svg' && typeof data === 'string' && data.includes('<svg')) bytes = new TextEncoder().encode(data);
    else if (format === 'png' && typeof data === 'string' && data.startsWith('data:image/png;base64,')) {
      bytes = Buffer.from(data.slice('data:image/png;base64,'.length), 'base64');
    } else return;
    const safeName = String(suggestedName).replace(/[^A-Za-z0-9_.-]+/g, '-') || `voltscape.${format}`;
    const scene = vscode.Uri.parse(this.uri);
    const folder = scene.scheme === 'file' ? vscode.Uri.joinPath(scene, '..') : vscode.workspace.workspaceFolders?.[0]?.uri;
    const target = await vscode.window.showSaveDialog({
      defaultUri: folder ? vscode.Uri.joinPath(folder, safeName) : undefined,
      filters: format === 'svg' ? { 'SVG picture': ['svg'] } : { 'PNG picture': ['png'] },
      saveLabel: 'Save picture',
    });
    if (!target) return;
    await vscode.workspace.fs.writeFile(target, bytes);
    void vscode.window.showInformationMessage(`Voltscape: picture saved to ${target.fsPath || target.toString()}`);
  }

  dispose(): void {
    if (PreviewPanel.current === this) PreviewPanel.current = undefined;
    for (const d of this.disposables.splice(0)) d.dispose();
  }
}
