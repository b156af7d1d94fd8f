// Types for find-editor.mjs, so the vitest check of the search type-checks under strict mode.
export interface EditorFs {
  isFile(path: string): boolean;
  exists(path: string): boolean;
  realpath(path: string): string;
}
export interface EditorSearch {
  executable: string | undefined;
  source?: string;
  reason?: string;
  misconfigured?: boolean;
}
export const ENV_VAR: string;
export function electronFromLauncher(launcher: string, platform?: NodeJS.Platform, fs?: EditorFs): string | undefined;
export function findDesktopEditor(options?: { env?: Record<string, string | undefined>; platform?: NodeJS.Platform; fs?: EditorFs }): EditorSearch;
