import { describe, expect, it } from 'vitest';
import { parseColor, resolvePalette, themeKindFromBodyClass, toRgbaString } from '../../webview/src/model/themeColors';

describe('parseColor (CSS Color Module Level 4 hex and rgb() forms)', () => {
  it('reads hex forms', () => {
    expect(parseColor('#fff')).toEqual({ r: 255, g: 255, b: 255, a: 1 });
    expect(parseColor(' #1E1E1E ')).toEqual({ r: 30, g: 30, b: 30, a: 1 });
    expect(parseColor('#00000080')).toEqual({ r: 0, g: 0, b: 0, a: 0.502 }); // 0x80 / 255
    expect(parseColor('#f008')).toEqual({ r: 255, g: 0, b: 0, a: 0.533 });
  });
  it('reads rgb()/rgba(), comma and space syntax', () => {
    expect(parseColor('rgb(10, 20, 30)')).toEqual({ r: 10, g: 20, b: 30, a: 1 });
    expect(parseColor('rgba(10,20,30,0.5)')).toEqual({ r: 10, g: 20, b: 30, a: 0.5 });
    expect(parseColor('rgb(100% 0% 50% / 25%)')).toEqual({ r: 255, g: 0, b: 128, a: 0.25 });
  });
  it('rejects what it cannot read', () => {
    expect(parseColor('')).toBeUndefined();
    expect(parseColor('var(--x)')).toBeUndefined();
    expect(parseColor('#12345')).toBeUndefined();
  });
  it('writes rgba strings', () => {
    expect(toRgbaString({ r: 1, g: 2, b: 3, a: 1 }, 0.25)).toBe('rgba(1, 2, 3, 0.25)');
  });
});

describe('resolvePalette', () => {
  const vars: Record<string, string> = {
    '--vscode-editor-foreground': '#d4d4d4',
    '--vscode-editor-background': '#1e1e1e',
    '--vscode-charts-blue': '#3794ff',
    '--vscode-font-family': ' system-ui ',
  };
  const read = (n: string) => vars[n] ?? '';

  it('takes colours from the theme and falls back when a variable is missing', () => {
    const p = resolvePalette(read, 'dark');
    expect(p.foreground).toBe('rgba(212, 212, 212, 1)');
    expect(p.seriesA).toBe('rgba(55, 148, 255, 1)');
    expect(p.seriesAFill).toBe('rgba(55, 148, 255, 0.45)');
    expect(p.seriesB).toBe('rgba(204, 167, 0, 1)'); // fallback
    expect(p.font).toBe('system-ui');
  });

  it('uses opaque fills and strong grid lines in high contrast', () => {
    const p = resolvePalette(read, 'high-contrast');
    expect(p.seriesAFill).toBe('rgba(55, 148, 255, 1)');
    expect(p.grid).toBe('rgba(212, 212, 212, 0.6)');
  });

  it('reads the theme kind from the body class VS Code sets', () => {
    expect(themeKindFromBodyClass('vscode-light')).toBe('light');
    expect(themeKindFromBodyClass('vscode-high-contrast vscode-high-contrast-light')).toBe('high-contrast-light');
    expect(themeKindFromBodyClass('vscode-high-contrast')).toBe('high-contrast');
    expect(themeKindFromBodyClass('vscode-dark foo')).toBe('dark');
  });
});
