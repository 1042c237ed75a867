// The webview page's HTML: a strict Content-Security-Policy with a fresh nonce from the OS random source.
import { describe, expect, it } from 'vitest';
import { makeNonce, previewHtml } from '../../client/src/preview-html';

describe('previewHtml', () => {
  const html = previewHtml({ cspSource: 'vscode-resource:' }, 'vscode-resource:/dist/webview/preview.js', 'vscode-resource:/dist/webview/preview.css', 'abc123');

  it('allows scripts only by nonce and styles only from the extension, with no unsafe sources', () => {
    const csp = /content="([^"]+)"/.exec(html)![1];
    expect(csp).toContain("default-src 'none'");
    expect(csp).toContain("script-src 'nonce-abc123'");
    expect(csp).toContain('style-src vscode-resource:');
    expect(csp).not.toMatch(/unsafe-inline|unsafe-eval|\*/);
  });

  it('loads exactly one script, the bundle, carrying the nonce, and no inline handlers', () => {
    expect(html.match(/<script/g)!.length).toBe(1);
    expect(html).toContain('<script nonce="abc123" src="vscode-resource:/dist/webview/preview.js"></script>');
    expect(html).not.toMatch(/\son[a-z]+=/i);
    expect(html).not.toMatch(/style="/);
  });

  it('makes a different 24-character base64 nonce each time', () => {
    const seen = new Set(Array.from({ length: 50 }, makeNonce));
    expect(seen.size).toBe(50);
    for (const n of seen) expect(n).toMatch(/^[A-Za-z0-9+/]{24}$/);
  });
});
