/**
 * Reads what a webview saved with `setState` (webview/src/app.ts, SavedState) when VS Code hands it back
 * after a window reload. The state comes from the page, so every field is checked. No `vscode` import:
 * tested in plain Node.
 */

/** A compare panel's two runs (SavedState.runs), or undefined. */
export function savedRuns(state: unknown): readonly [string, string] | undefined {
  const runs = field(state, 'runs');
  if (!Array.isArray(runs) || runs.length !== 2 || !runs.every((r) => typeof r === 'string' && r.length > 0)) return undefined;
  return [runs[0] as string, runs[1] as string];
}

/** A trend panel's series, as the Runs view keys it (SavedState.series), or undefined. */
export function savedSeriesKey(state: unknown): string | undefined {
  const key = field(state, 'series');
  return typeof key === 'string' && key.length > 0 ? key : undefined;
}

function field(state: unknown, name: string): unknown {
  return typeof state === 'object' && state !== null ? (state as Record<string, unknown>)[name] : undefined;
}
