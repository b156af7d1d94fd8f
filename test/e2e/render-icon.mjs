// Renders media/icon.svg to media/icon.png (256×256, transparent corners) with
// headless Chromium. Run by hand after editing the SVG: node test/e2e/render-icon.mjs
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { REPO_ROOT } from '../support/code-server-install.mjs';
import { launchBrowser } from './harness.mjs';

const svg = readFileSync(join(REPO_ROOT, 'media', 'icon.svg'), 'utf8');
const browser = await launchBrowser();
try {
  const page = await browser.newPage({ viewport: { width: 256, height: 256 } });
  await page.setContent(`<html><body style="margin:0;background:transparent">${svg}</body></html>`);
  await page.locator('svg').screenshot({ path: join(REPO_ROOT, 'media', 'icon.png'), omitBackground: true });
} finally {
  await browser.close();
}
console.log('media/icon.png written');
