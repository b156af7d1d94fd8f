// Text contrast as defined by WCAG 2.x (an open standard): relative luminance
// of sRGB colours and the ratio (L1 + 0.05) / (L2 + 0.05). The browser-side
// function walks up the tree to find the background actually behind the text.

/** WCAG 2.x relative luminance of an [r, g, b] colour with 0–255 channels. */
export function relativeLuminance([r, g, b]) {
  const channel = (c) => {
    const s = c / 255;
    return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * channel(r) + 0.7152 * channel(g) + 0.0722 * channel(b);
}

export function contrastRatio(foreground, background) {
  const a = relativeLuminance(foreground);
  const b = relativeLuminance(background);
  return (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05);
}

/**
 * Known values, so the checker itself is checked before it judges the UI:
 * black on white is 21:1 and a colour against itself 1:1 (both follow from the
 * WCAG 2.x formula); #767676 on white is about 4.54:1, the usual example of the
 * lightest grey that passes AA on white (common practice, value from memory,
 * recomputed here from the formula to two decimals).
 */
export function selfCheckContrast() {
  const close = (x, y) => Math.abs(x - y) < 0.01;
  const checks = [
    [contrastRatio([0, 0, 0], [255, 255, 255]), 21],
    [contrastRatio([40, 80, 120], [40, 80, 120]), 1],
    [contrastRatio([0x76, 0x76, 0x76], [255, 255, 255]), 4.54],
  ];
  for (const [got, want] of checks) {
    if (!close(got, want)) throw new Error(`contrast self-check failed: ${got.toFixed(3)} instead of ${want}`);
  }
}

/**
 * Runs inside the webview frame: for each selector, the text colour and the
 * first opaque background behind it (alpha-blended over the body colour when
 * a layer is translucent). Returns plain data for contrastRatio().
 */
export function sampleColoursInFrame(selectors) {
  const parse = (text) => {
    const m = /rgba?\(([^)]+)\)/.exec(text);
    if (!m) return null;
    const parts = m[1].split(/[ ,/]+/).filter(Boolean).map(Number);
    return { rgb: parts.slice(0, 3), alpha: parts.length > 3 ? parts[3] : 1 };
  };
  const blend = (top, bottom) => top.rgb.map((c, i) => c * top.alpha + bottom[i] * (1 - top.alpha));
  const backgroundBehind = (element) => {
    const layers = [];
    for (let node = element; node && node.nodeType === 1; node = node.parentElement) {
      const colour = parse(getComputedStyle(node).backgroundColor);
      if (colour && colour.alpha > 0) {
        layers.push(colour);
        if (colour.alpha >= 1) break;
      }
    }
    let base = [255, 255, 255];
    const root = parse(getComputedStyle(document.documentElement).backgroundColor);
    if (layers.length === 0 || layers[layers.length - 1].alpha < 1) {
      const editorBg = getComputedStyle(document.documentElement).getPropertyValue('--vscode-editor-background').trim();
      const probe = document.createElement('span');
      probe.style.color = editorBg || (root && root.alpha > 0 ? getComputedStyle(document.documentElement).backgroundColor : 'white');
      document.body.appendChild(probe);
      base = parse(getComputedStyle(probe).color)?.rgb ?? base;
      probe.remove();
    }
    for (let i = layers.length - 1; i >= 0; i -= 1) base = blend(layers[i], base);
    return base;
  };
  const out = [];
  for (const selector of selectors) {
    const element = document.querySelector(selector);
    if (!element) { out.push({ selector, missing: true }); continue; }
    const style = getComputedStyle(element);
    const colour = parse(style.color);
    const background = backgroundBehind(element);
    const text = (element.textContent ?? '').trim().slice(0, 40);
    out.push({ selector, text, colour: colour ? blend(colour, background) : null, background,
      fontSizePx: parseFloat(style.fontSize), fontWeight: Number(style.fontWeight) || 400 });
  }
  return { bodyClass: document.body.className, samples: out };
}
