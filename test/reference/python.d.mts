// Types for python.mjs (plain JavaScript so the benchmark runner, run by node directly, shares it).
export const PYTHON: string;
export function pythonHas(modules: string): boolean;
export function requirePython(modules: string): void;
export function runPython(args: readonly string[], options?: { input?: string; what?: string }): string;
export function pythonJson<T>(script: string, input: unknown, what?: string): T;
