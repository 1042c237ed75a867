// Runs inside a VS Code (Electron) extension host started by @vscode/test-electron: the same checks as
// the code-server tests, through the VS Code API (diagnostics, the preview's report of what it drew).
// Bundled by tests/extension/editor-host.test.ts; `run` is the entry that VS Code calls.
import * as vscode from 'vscode';
import type { VoltscapeApi } from '../../../client/src/extension';

/** Resolves when `ready()` holds, re-checking on each `events` firing and every 200 ms; rejects after `ms`. */
function until(what: string, ready: () => boolean, events: vscode.Event<unknown>[] = [], ms = 120_000): Promise<void> {
  return new Promise((resolve, reject) => {
    const subs: vscode.Disposable[] = [];
    const done = (err?: Error) => {
      clearInterval(timer);
      clearTimeout(limit);
      subs.forEach((s) => s.dispose());
      err ? reject(err) : resolve();
    };
    const check = () => {
      if (ready()) done();
    };
    const timer = setInterval(check, 200);
    const limit = setTimeout(() => done(new Error(`timed out waiting for ${what}`)), ms);
    for (const e of events) subs.push(e(check));
    check();
  });
}

function assert(cond: unknown, message: string): asserts cond {
  if (!cond) throw new Error(message);
}

export async function run(): Promise<void> {
  const folder = vscode.workspace.workspaceFolders?.[0]?.uri;
  assert(folder, 'no workspace folder');
  const expectedErrors = Number(process.env.VOLTSCAPE_EXPECTED_ERRORS);

  // Diagnostics of a scene with mistakes.
  const mistakes = vscode.Uri.joinPath(folder, 'mistakes.vscape');
  await vscode.window.showTextDocument(await vscode.workspace.openTextDocument(mistakes));
  const errorsOf = (u: vscode.Uri) => vscode.languages.getDiagnostics(u).filter((d) => d.severity === vscode.DiagnosticSeverity.Error).length;
  await until('diagnostics', () => errorsOf(mistakes) === expectedErrors, [vscode.languages.onDidChangeDiagnostics]);

  // The preview opens beside the scene and draws contours.
  const sphereUri = vscode.Uri.joinPath(folder, 'sphere.vscape');
  const doc = await vscode.workspace.openTextDocument(sphereUri);
  const editor = await vscode.window.showTextDocument(doc);
  const ext = vscode.extensions.getExtension<VoltscapeApi>('voltscape.voltscape');
  assert(ext, 'extension voltscape.voltscape not found');
  const api = ext.isActive ? ext.exports : await ext.activate();
  await vscode.commands.executeCommand('voltscape.openPreview');
  await until('a drawn preview', () => (api.preview()?.drawn?.contours ?? 0) > 5);
  assert(api.preview()?.uri === sphereUri.toString(), 'the preview shows another document');

  // A typed change redraws the picture for the new version.
  await editor.edit((b) => b.insert(new vscode.Position(doc.lineCount, 0), 'electrode probe_ball sphere center (120, 0, 0) mm radius 20 mm potential -5 kV\n'));
  const version = doc.version;
  await until('the picture of the edited scene', () => {
    const drawn = api.preview()?.drawn;
    return !!drawn && drawn.version === version && !drawn.stale && drawn.contours > 5;
  });
}
