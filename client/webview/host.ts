// Where the page runs: inside a VS Code webview (messages to the extension) or as a standalone page
// written by `voltscape solve --html` (data embedded as JSON, saving by download).
import type { PreviewToExtensionMessage } from '../../server/src/protocol';

interface VsCodeApi {
  postMessage(message: unknown): void;
  getState(): unknown;
  setState(state: unknown): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

export interface ViewState {
  slice: number;
  mode: 'potential' | 'field';
  fieldLines: boolean;
}

export interface Host {
  standalone: boolean;
  post(message: PreviewToExtensionMessage): void;
  save(format: 'svg' | 'png', data: string, name: string): void;
  getState(): Partial<ViewState>;
  setState(state: ViewState): void;
}

function download(format: 'svg' | 'png', data: string, name: string): void {
  const a = document.createElement('a');
  const url = format === 'svg' ? URL.createObjectURL(new Blob([data], { type: 'image/svg+xml' })) : data;
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  if (format === 'svg') setTimeout(() => URL.revokeObjectURL(url), 0);
}

let host: Host | undefined;

/** The host, created once (acquireVsCodeApi may be called only once per page). */
export function getHost(): Host {
  if (host) return host;
  if (typeof acquireVsCodeApi === 'function') {
    const api = acquireVsCodeApi();
    host = {
      standalone: false,
      post: (m) => api.postMessage(m),
      save: (format, data, suggestedName) => api.postMessage({ type: 'export', format, data, suggestedName }),
      getState: () => (api.getState() as Partial<ViewState>) ?? {},
      setState: (s) => api.setState(s),
    };
  } else {
    let state: Partial<ViewState> = {};
    host = {
      standalone: true,
      post: () => undefined,
      save: download,
      getState: () => state,
      setState: (s) => {
        state = s;
      },
    };
  }
  return host;
}
