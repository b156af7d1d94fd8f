/**
 * Chart colours taken from the VS Code theme. Canvas charts cannot use CSS variables directly, so
 * the values are read once (and again when the theme changes) and parsed into rgba strings; a
 * missing variable falls back to a neutral default so a chart is never drawn invisible.
 */

export type ThemeKind = 'light' | 'dark' | 'high-contrast' | 'high-contrast-light';

export interface ChartPalette {
  readonly kind: ThemeKind;
  readonly foreground: string;
  readonly muted: string;
  readonly grid: string;
  readonly background: string;
  /** Primary series (run A, the headline, bars). */
  readonly seriesA: string;
  readonly seriesAFill: string;
  /** Second series (run B, the ideal curve). */
  readonly seriesB: string;
  readonly seriesBFill: string;
  /** Improvements / items that belong higher. */
  readonly better: string;
  /** Regressions / items that belong lower. */
  readonly worse: string;
  readonly font: string;
}

export interface Rgba {
  readonly r: number;
  readonly g: number;
  readonly b: number;
  readonly a: number;
}

/** Parses the colour syntaxes VS Code themes emit: #rgb, #rgba, #rrggbb, #rrggbbaa, rgb()/rgba(). */
export function parseColor(text: string): Rgba | undefined {
  const t = text.trim().toLowerCase();
  const hex = /^#([0-9a-f]{3,8})$/.exec(t);
  if (hex) {
    let h = hex[1]!;
    if (h.length === 3 || h.length === 4) h = h.split('').map((c) => c + c).join('');
    if (h.length !== 6 && h.length !== 8) return undefined;
    const n = (i: number): number => parseInt(h.slice(i, i + 2), 16);
    return { r: n(0), g: n(2), b: n(4), a: h.length === 8 ? Math.round((n(6) / 255) * 1000) / 1000 : 1 };
  }
  const fn = /^rgba?\(([^)]*)\)$/.exec(t);
  if (fn) {
    const parts = fn[1]!.split(/[\s,/]+/).filter((p) => p.length > 0);
    if (parts.length < 3) return undefined;
    const channel = (p: string): number => (p.endsWith('%') ? (parseFloat(p) / 100) * 255 : parseFloat(p));
    const alpha = parts[3] === undefined ? 1 : parts[3].endsWith('%') ? parseFloat(parts[3]) / 100 : parseFloat(parts[3]);
    const [r, g, b] = [channel(parts[0]!), channel(parts[1]!), channel(parts[2]!)];
    if ([r, g, b, alpha].some((v) => Number.isNaN(v))) return undefined;
    return { r: Math.round(r), g: Math.round(g), b: Math.round(b), a: Math.min(1, Math.max(0, alpha)) };
  }
  return undefined;
}

export function toRgbaString(c: Rgba, alpha = c.a): string {
  return `rgba(${c.r}, ${c.g}, ${c.b}, ${Math.round(alpha * 1000) / 1000})`;
}

/** VS Code sets one of these classes on <body>. */
export function themeKindFromBodyClass(className: string): ThemeKind {
  const classes = className.split(/\s+/);
  if (classes.includes('vscode-high-contrast-light')) return 'high-contrast-light';
  if (classes.includes('vscode-high-contrast')) return 'high-contrast';
  if (classes.includes('vscode-light')) return 'light';
  return 'dark';
}

const FALLBACK: Record<'light' | 'dark', Record<string, string>> = {
  dark: { fg: '#cccccc', a: '#3794ff', b: '#cca700', better: '#89d185', worse: '#f48771', bg: '#1e1e1e' },
  light: { fg: '#333333', a: '#006ab1', b: '#8a6d00', better: '#388a34', worse: '#c72e0f', bg: '#ffffff' },
};

/**
 * Builds the palette from a variable reader (in the page: getComputedStyle(body).getPropertyValue).
 * High-contrast themes get opaque fills and full-strength grid lines: translucency is what makes
 * charts unreadable there.
 */
export function resolvePalette(readVar: (name: string) => string, kind: ThemeKind): ChartPalette {
  const base = kind === 'light' || kind === 'high-contrast-light' ? FALLBACK.light : FALLBACK.dark;
  const highContrast = kind === 'high-contrast' || kind === 'high-contrast-light';
  const pick = (names: readonly string[], fallback: string): Rgba => {
    for (const n of names) {
      const c = parseColor(readVar(n));
      if (c) return c;
    }
    return parseColor(fallback)!;
  };
  const fg = pick(['--vscode-editor-foreground', '--vscode-foreground'], base.fg!);
  const bg = pick(['--vscode-editor-background'], base.bg!);
  const a = pick(['--vscode-charts-blue', '--vscode-focusBorder'], base.a!);
  const b = pick(['--vscode-charts-yellow', '--vscode-charts-orange'], base.b!);
  const better = pick(['--vscode-charts-green', '--vscode-testing-iconPassed'], base.better!);
  const worse = pick(['--vscode-charts-red', '--vscode-errorForeground'], base.worse!);
  const fontFamily = readVar('--vscode-font-family').trim() || 'sans-serif';
  return {
    kind,
    foreground: toRgbaString(fg),
    muted: toRgbaString(fg, highContrast ? 1 : 0.7),
    grid: toRgbaString(fg, highContrast ? 0.6 : 0.15),
    background: toRgbaString(bg),
    seriesA: toRgbaString(a, 1),
    seriesAFill: toRgbaString(a, highContrast ? 1 : 0.45),
    seriesB: toRgbaString(b, 1),
    seriesBFill: toRgbaString(b, highContrast ? 1 : 0.45),
    better: toRgbaString(better, 1),
    worse: toRgbaString(worse, 1),
    font: fontFamily,
  };
}
