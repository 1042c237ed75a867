// The preview webview's HTML: a strict Content-Security-Policy with a fresh nonce, and only the
// extension's own bundle and stylesheet (from dist/webview, the panel's one local resource root).
import { randomBytes } from 'node:crypto';

/** A fresh nonce for one page load, from the operating system's random source. */
export function makeNonce(): string {
  return randomBytes(18).toString('base64');
}

export interface WebviewLike {
  cspSource: string;
}

/** The page around the bundle. `scriptUri` and `styleUri` are webview URIs of dist/webview files. */
export function previewHtml(webview: WebviewLike, scriptUri: string, styleUri: string, nonce: string): string {
  const csp = [
    "default-src 'none'",
    `img-src ${webview.cspSource} data: blob:`,
    `style-src ${webview.cspSource}`,
    `font-src ${webview.cspSource}`,
    `script-src 'nonce-${nonce}'`,
  ].join('; ');
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<link rel="stylesheet" href="${styleUri}">
<title>Voltscape field preview</title>
</head>
<body>
<script nonce="${nonce}" src="${scriptUri}"></script>
</body>
</html>`;
}
