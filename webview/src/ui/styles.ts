/**
 * Applies the bundled stylesheet. A constructed stylesheet needs no inline <style> and so passes a
 * strict CSP; when unsupported, fall back to a <style> carrying the page's script nonce.
 */
import css from '../styles.css';

export function applyStyles(): void {
  if ('adoptedStyleSheets' in Document.prototype && 'replaceSync' in CSSStyleSheet.prototype) {
    const sheet = new CSSStyleSheet();
    sheet.replaceSync(css);
    document.adoptedStyleSheets = [...document.adoptedStyleSheets, sheet];
    return;
  }
  const style = document.createElement('style');
  const nonce = document.querySelector<HTMLScriptElement>('script[nonce]')?.nonce;
  if (nonce) style.nonce = nonce;
  style.textContent = css;
  document.head.appendChild(style);
}
