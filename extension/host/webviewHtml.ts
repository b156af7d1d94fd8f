/**
 * The page around the webview bundle. Nothing from the dump is ever written into this HTML: data
 * arrives only through postMessage and is rendered as text by the webview. No `vscode` import (the
 * caller passes the resolved resource URIs), so the policy is unit-tested.
 */
import { randomBytes } from 'node:crypto';
import type { ViewMode } from '../protocol/messages';

export interface WebviewHtmlInput {
  /** `webview.cspSource`. */
  readonly cspSource: string;
  /** `webview.asWebviewUri(dist/webview.js)`. */
  readonly scriptUri: string;
  /** `webview.asWebviewUri(dist/codicons/codicon.css)`. */
  readonly codiconCssUri: string;
  readonly mode: ViewMode;
  readonly title: string;
  /** Injected for tests; fresh random bytes otherwise. */
  readonly nonce?: string;
}

export function makeNonce(): string {
  return randomBytes(18).toString('base64').replace(/[+/=]/g, '');
}

/**
 * Scripts run only with the nonce. Styles come from the extension's own files, from constructable
 * stylesheets (web components), or from <style>/<link> elements carrying the nonce — no 'unsafe-inline':
 * the UI components set styles through the CSSOM, which the policy does not block.
 */
export function contentSecurityPolicy(cspSource: string, nonce: string): string {
  return [
    "default-src 'none'",
    `script-src 'nonce-${nonce}'`,
    `style-src ${cspSource} 'nonce-${nonce}'`,
    `font-src ${cspSource}`,
    `img-src ${cspSource} data:`,
  ].join('; ');
}

/**
 * Runs before the bundle is fetched and parsed: keeps the messages that arrive meanwhile (the host
 * posts a result as soon as it has it, which on a warm engine can be before the bundle has run), so
 * the app shows them at once instead of waiting for the repeat its 'ready' asks for. The app takes
 * them from `gainlineEarly` and ends the keeping (webview/src/app.ts, takeEarlyMessages).
 */
export const EARLY_MESSAGES = "window.gainlineEarly=[];addEventListener('message',function keep(e){var k=window.gainlineEarly;"
  + "if(!k){removeEventListener('message',keep);return;}if(k.length===0)performance.mark('gainline-first-message');k.push(e.data);});";

export function webviewHtml(input: WebviewHtmlInput): string {
  const nonce = input.nonce ?? makeNonce();
  const attr = escapeAttribute;
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${attr(contentSecurityPolicy(input.cspSource, nonce))}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<meta name="gainline-mode" content="${attr(input.mode)}">
<meta name="gainline-nonce" content="${attr(nonce)}">
<link rel="stylesheet" id="vscode-codicon-stylesheet" nonce="${attr(nonce)}" href="${attr(input.codiconCssUri)}">
<title>${escapeText(input.title)}</title>
</head>
<body data-mode="${attr(input.mode)}">
<script nonce="${attr(nonce)}">${EARLY_MESSAGES}</script>
<script nonce="${attr(nonce)}" src="${attr(input.scriptUri)}"></script>
</body>
</html>`;
}

function escapeAttribute(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

function escapeText(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}
