// The Voltscape extension: starts the language server, keeps the newest result per scene, and
// wires the field preview and the status-bar item. Every language decision lives in the server.
import * as vscode from 'vscode';
import { LanguageClient, LanguageClientOptions, ServerOptions, TransportKind } from 'vscode-languageclient/node';
import {
  LatestResultRequest,
  PreviewDrawnMessage,
  ResultNotification,
  ResultParams,
  SolveStatusNotification,
  SolveStatusParams,
  SweepResultNotification,
  SweepResultParams,
} from '../../server/src/protocol';
import { PREVIEW_VIEW_TYPE, PreviewPanel, ResultSource } from './preview-panel';
import { SolveStatusItem } from './status-item';

let client: LanguageClient | undefined;

const isScene = (d: vscode.TextDocument | undefined): d is vscode.TextDocument => d?.languageId === 'vscape';

/** What activate returns: a small window for the extension's own tests. */
export interface VoltscapeApi {
  /** The open preview's document and what its page last reported drawing, if a preview is open. */
  preview(): { uri: string; drawn: PreviewDrawnMessage | undefined } | undefined;
}

export async function activate(context: vscode.ExtensionContext): Promise<VoltscapeApi> {
  const serverModule = context.asAbsolutePath('dist/server.js');
  const serverOptions: ServerOptions = {
    run: { module: serverModule, transport: TransportKind.ipc },
    debug: { module: serverModule, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6019'] } },
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: [{ language: 'vscape' }],
    outputChannelName: 'Voltscape',
  };
  client = new LanguageClient('voltscape', 'Voltscape language server', serverOptions, clientOptions);

  const results = new Map<string, ResultParams>();
  const status = new SolveStatusItem();
  context.subscriptions.push(status);

  const source: ResultSource = {
    async latest(uri: string): Promise<ResultParams | null> {
      // Ask the server (its answer has `stale` up to date); fall back to the last result seen.
      try {
        const answer = await client?.sendRequest<ResultParams | null>(LatestResultRequest.method, { uri });
        if (answer) return answer;
      } catch {
        // The server may be starting or restarting; the cached result serves meanwhile.
      }
      return results.get(uri) ?? null;
    },
  };

  client.onNotification(ResultNotification.method, (p: ResultParams) => {
    results.set(p.uri, p);
    status.onResult(p);
    PreviewPanel.current?.onResult(p);
  });
  client.onNotification(SolveStatusNotification.method, (p: SolveStatusParams) => {
    status.onStatus(p);
    PreviewPanel.current?.onStatus(p);
  });
  client.onNotification(SweepResultNotification.method, (p: SweepResultParams) => PreviewPanel.onSweep(p));

  const openPreview = (uri?: vscode.Uri): void => {
    const target = uri?.toString() ?? vscode.window.activeTextEditor?.document.uri.toString();
    const doc = vscode.workspace.textDocuments.find((d) => d.uri.toString() === target);
    if (!target || (doc && !isScene(doc))) {
      void vscode.window.showInformationMessage('Voltscape: open a .vscape scene to preview its field.');
      return;
    }
    PreviewPanel.show(context.extensionUri, target, source);
  };

  context.subscriptions.push(
    vscode.commands.registerCommand('voltscape.openPreview', openPreview),
    vscode.window.onDidChangeActiveTextEditor((editor) => {
      status.refresh();
      if (editor && isScene(editor.document)) PreviewPanel.current?.follow(editor.document.uri.toString());
    }),
    vscode.workspace.onDidCloseTextDocument((d) => {
      if (isScene(d)) {
        results.delete(d.uri.toString());
        status.forget(d.uri.toString());
      }
    }),
    vscode.window.registerWebviewPanelSerializer(PREVIEW_VIEW_TYPE, {
      async deserializeWebviewPanel(panel: vscode.WebviewPanel): Promise<void> {
        const active = vscode.window.activeTextEditor?.document;
        const scene = isScene(active) ? active : vscode.workspace.textDocuments.find(isScene);
        if (!scene) {
          panel.dispose();
          return;
        }
        PreviewPanel.revive(panel, context.extensionUri, scene.uri.toString(), source);
      },
    }),
    { dispose: () => PreviewPanel.current?.panel.dispose() },
  );

  await client.start();
  return {
    preview: () => {
      const p = PreviewPanel.current;
      return p && { uri: p.documentUri, drawn: p.lastDrawn };
    },
  };
}

export async function deactivate(): Promise<void> {
  await client?.stop();
  client = undefined;
}
