// The language server: wires the LSP connection to the core and the features, in one place.
// Every handler is guarded: a crash in one feature is logged and answered empty; a cancelled
// request is answered as cancelled. Started by the extension (dist/server.js over IPC or stdio)
// and by `voltscape lsp --stdio`.
import {
  createConnection,
  DidChangeConfigurationNotification,
  LSPErrorCodes,
  ProposedFeatures,
  ResponseError,
  TextDocuments,
  TextDocumentSyncKind,
  type CancellationToken,
  type Connection,
  type InitializeResult,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { LatestResultRequest, type LatestResultParams } from '../protocol';
import { ServerCore, type DocumentState } from './core';
import { FeatureError } from './feature-error';
import { codeActions } from './features/code-actions';
import { completionTriggerCharacters, completions } from './features/completion';
import { definition, prepareRename, references, rename } from './features/definition';
import { documentSymbols } from './features/document-symbols';
import { formatDocument } from './features/formatting';
import { hover } from './features/hover';
import { inlayHints } from './features/inlay-hints';
import { semanticTokens, semanticTokensLegend } from './features/semantic-tokens';
import { readSettings } from './settings';
import { createSolver, type Solver } from './solver';
import { warmUpAnalysis } from './warm-up';

export interface ServerOptions {
  /** Defaults to a connection made from the process arguments (--stdio, --node-ipc, --socket=). */
  connection?: Connection;
  /** Defaults to the worker next to the bundle (dist/solve-worker.js). */
  solver?: Solver;
}

/**
 * Wraps a feature as a request handler: finds the document, honours cancellation (answers
 * RequestCancelled), turns a FeatureError into a failed request with its message, and turns any
 * other crash into a log line and an empty answer.
 */
export function makeGuard(find: (uri: string) => DocumentState | undefined, log: (message: string) => void) {
  return function guard<P extends { textDocument: { uri: string } }, R>(
    name: string,
    empty: R,
    feature: (state: DocumentState, params: P) => R,
  ): (params: P, token?: CancellationToken) => R | ResponseError<void> {
    return (params, token) => {
      if (token?.isCancellationRequested) return new ResponseError(LSPErrorCodes.RequestCancelled, 'cancelled');
      const state = find(params.textDocument.uri);
      if (!state) return empty;
      try {
        return feature(state, params);
      } catch (error) {
        if (error instanceof FeatureError) return new ResponseError(LSPErrorCodes.RequestFailed, error.message);
        log(`${name} failed: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}`);
        return empty;
      }
    };
  };
}

/** Starts the Voltscape language server on a connection and returns it. */
export function startLanguageServer(options: ServerOptions = {}): Connection {
  const connection = options.connection ?? createConnection(ProposedFeatures.all);
  const log = (message: string) => connection.console.log(message);
  const solver = options.solver ?? createSolver(log);
  const core = new ServerCore(
    {
      publishDiagnostics: (uri, version, diagnostics) => void connection.sendDiagnostics({ uri, version, diagnostics }),
      notify: (type, params) => void connection.sendNotification(type.method, params),
      log,
    },
    solver,
  );
  const documents = new TextDocuments(TextDocument);
  let pullConfiguration = false;

  const guard = makeGuard((uri) => core.get(uri), log);

  connection.onInitialize((params): InitializeResult => {
    // Compile the language code hot before any document comes (warm-up.ts): some 0.1 s before the
    // server answers, rather than on the first keystrokes (run between messages, it got in their way).
    warmUpAnalysis(2, (next) => next());
    pullConfiguration = !!params.capabilities.workspace?.configuration;
    return {
      capabilities: {
        textDocumentSync: TextDocumentSyncKind.Incremental,
        completionProvider: { triggerCharacters: completionTriggerCharacters },
        hoverProvider: true,
        inlayHintProvider: true,
        documentSymbolProvider: true,
        definitionProvider: true,
        referencesProvider: true,
        renameProvider: { prepareProvider: true },
        semanticTokensProvider: { legend: semanticTokensLegend, full: true },
        documentFormattingProvider: true,
        codeActionProvider: { codeActionKinds: ['quickfix'] },
      },
      serverInfo: { name: 'voltscape', version: '0.1.0' },
    };
  });

  async function loadSettings(pushed?: unknown): Promise<void> {
    try {
      const raw = pushed ?? (pullConfiguration ? await connection.workspace.getConfiguration('voltscape') : undefined);
      core.configure(readSettings(raw));
    } catch (error) {
      log(`reading settings failed: ${error instanceof Error ? error.message : String(error)}`);
    }
  }

  connection.onInitialized(() => {
    if (pullConfiguration) {
      void connection.client.register(DidChangeConfigurationNotification.type, { section: 'voltscape' }).catch(() => {});
    }
    void loadSettings();
  });
  connection.onDidChangeConfiguration((change) => {
    const pushed = (change.settings as { voltscape?: unknown } | null)?.voltscape;
    void loadSettings(pullConfiguration ? undefined : pushed);
  });

  const update = (document: TextDocument) => {
    try {
      core.update(document.uri, document.getText(), document.version);
    } catch (error) {
      log(`analysis failed: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}`);
    }
  };
  documents.onDidChangeContent((e) => update(e.document));
  documents.onDidClose((e) => core.close(e.document.uri));

  connection.onCompletion(guard('completion', [], (s, p) => completions(s, p.position)));
  connection.onHover(guard('hover', null, (s, p) => hover(s, p.position)));
  connection.languages.inlayHint.on(guard('inlay hints', [], (s, p) => (core.settings.inlayHints ? inlayHints(s, p.range) : [])));
  connection.onDocumentSymbol(guard('document symbols', [], (s) => documentSymbols(s)));
  connection.onDefinition(guard('definition', null, (s, p) => definition(s, p.position)));
  connection.onReferences(guard('references', [], (s, p) => references(s, p.position, p.context.includeDeclaration)));
  connection.onPrepareRename(guard('prepare rename', null, (s, p) => prepareRename(s, p.position)));
  connection.onRenameRequest(guard('rename', null, (s, p) => rename(s, p.position, p.newName)));
  connection.languages.semanticTokens.on(guard('semantic tokens', { data: [] }, (s) => semanticTokens(s)));
  connection.onDocumentFormatting(guard('formatting', [], (s, p) => formatDocument(s, p.options)));
  connection.onCodeAction(guard('code actions', [], (s, p) => codeActions(s, p.range, p.context.diagnostics)));
  connection.onRequest(LatestResultRequest.method, (p: LatestResultParams) => {
    try {
      return core.latestResult(p.uri);
    } catch (error) {
      log(`latest result failed: ${error instanceof Error ? error.message : String(error)}`);
      return null;
    }
  });
  connection.onShutdown(() => core.dispose());

  documents.listen(connection);
  connection.listen();
  return connection;
}
