/**
 * Builds the harness page: the real webview bundle plus the fake host, served from a local HTTP
 * server under the same strict CSP the extension uses (no inline script or style, nonce only), with
 * a minimal set of theme variables for dark, light and high-contrast bodies.
 */
import * as esbuild from 'esbuild';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const NONCE = 'harnessnonce123';

const THEMES = `
body.vscode-dark { --vscode-editor-background:#1e1e1e; --vscode-editor-foreground:#d4d4d4; --vscode-foreground:#cccccc; --vscode-descriptionForeground:#9d9d9d;
  --vscode-panel-border:#454545; --vscode-focusBorder:#007fd4; --vscode-list-hoverBackground:#2a2d2e; --vscode-list-activeSelectionBackground:#04395e;
  --vscode-list-activeSelectionForeground:#ffffff; --vscode-button-background:#0e639c; --vscode-button-foreground:#ffffff; --vscode-button-secondaryBackground:#3a3d41;
  --vscode-button-secondaryForeground:#ffffff; --vscode-input-background:#3c3c3c; --vscode-input-foreground:#cccccc; --vscode-dropdown-background:#3c3c3c;
  --vscode-dropdown-foreground:#f0f0f0; --vscode-charts-blue:#3794ff; --vscode-charts-yellow:#cca700; --vscode-charts-green:#89d185; --vscode-charts-red:#f14c4c;
  --vscode-errorForeground:#f48771; --vscode-font-family:system-ui, sans-serif; --vscode-font-size:13px; --vscode-editor-font-family:monospace; }
body.vscode-light { --vscode-editor-background:#ffffff; --vscode-editor-foreground:#000000; --vscode-foreground:#616161; --vscode-descriptionForeground:#717171;
  --vscode-panel-border:#e5e5e5; --vscode-focusBorder:#0090f1; --vscode-list-hoverBackground:#e8e8e8; --vscode-list-activeSelectionBackground:#0060c0;
  --vscode-list-activeSelectionForeground:#ffffff; --vscode-button-background:#007acc; --vscode-button-foreground:#ffffff; --vscode-button-secondaryBackground:#5f6a79;
  --vscode-button-secondaryForeground:#ffffff; --vscode-input-background:#ffffff; --vscode-input-foreground:#616161; --vscode-dropdown-background:#ffffff;
  --vscode-dropdown-foreground:#616161; --vscode-charts-blue:#1a85ff; --vscode-charts-yellow:#bf8803; --vscode-charts-green:#388a34; --vscode-charts-red:#e51400;
  --vscode-errorForeground:#a1260d; --vscode-font-family:system-ui, sans-serif; --vscode-font-size:13px; --vscode-editor-font-family:monospace; }
body.vscode-high-contrast { --vscode-editor-background:#000000; --vscode-editor-foreground:#ffffff; --vscode-foreground:#ffffff; --vscode-descriptionForeground:#ffffff;
  --vscode-panel-border:#6fc3df; --vscode-contrastBorder:#6fc3df; --vscode-focusBorder:#f38518; --vscode-list-hoverBackground:transparent; --vscode-list-activeSelectionBackground:transparent;
  --vscode-list-focusOutline:#f38518; --vscode-button-background:#000000; --vscode-button-foreground:#ffffff; --vscode-button-border:#6fc3df;
  --vscode-charts-blue:#3794ff; --vscode-charts-yellow:#ffd700; --vscode-charts-green:#89d185; --vscode-charts-red:#f48771; --vscode-errorForeground:#f48771;
  --vscode-font-family:system-ui, sans-serif; --vscode-font-size:13px; }
`;

export interface Harness {
  readonly url: string;
  close(): Promise<void>;
}

export async function startHarness(): Promise<Harness> {
  const dir = mkdtempSync(join(tmpdir(), 'gl-webview-'));
  const common = { bundle: true, platform: 'browser' as const, format: 'iife' as const, target: 'es2022', logLevel: 'error' as const };
  await esbuild.build({ ...common, entryPoints: ['test/webview/harness/harness.ts'], outfile: join(dir, 'harness.js') });
  await esbuild.build({ ...common, entryPoints: ['webview/src/main.ts'], outfile: join(dir, 'webview.js'), loader: { '.ttf': 'file', '.css': 'text' } });
  const page = (theme: string) => `<!doctype html><html><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'nonce-${NONCE}'; style-src 'nonce-${NONCE}'; img-src data:; font-src data:;">
<style nonce="${NONCE}">${THEMES}</style></head>
<body class="${theme}"><script nonce="${NONCE}" src="harness.js"></script><script nonce="${NONCE}" src="webview.js"></script></body></html>`;
  const server: Server = createServer((req, res) => {
    const url = new URL(req.url ?? '/', 'http://localhost');
    if (url.pathname === '/') {
      res.writeHead(200, { 'content-type': 'text/html' });
      res.end(page(url.searchParams.get('theme') ?? 'vscode-dark'));
      return;
    }
    const file = url.pathname === '/harness.js' || url.pathname === '/webview.js' ? url.pathname.slice(1) : undefined;
    if (!file) {
      res.writeHead(404).end();
      return;
    }
    res.writeHead(200, { 'content-type': 'text/javascript' });
    res.end(readFileSync(join(dir, file)));
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  writeFileSync(join(dir, 'README'), 'temporary webview harness build\n');
  return { url: `http://127.0.0.1:${port}/`, close: () => new Promise((r) => server.close(() => r())) };
}
