/**
 * Loading the engine's WebAssembly kernels (compiled from AssemblyScript by build.mjs into the bundle
 * folder): the record kernel that reads delimited text and the writer of the JSON report's records.
 * A kernel that is missing (a test that did not build it) or cannot run (Node's --jitless, a host
 * policy) is reported as undefined, and its caller runs the JavaScript code that gives the same result.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { engineSettings } from './config';

/**
 * The part of the WebAssembly JavaScript API used here. Node provides the global, but Node 20's type
 * declarations leave its types to the DOM library, which the engine's build target does not load.
 */
export type WasmModule = object;
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
}
interface WasmApi {
  readonly Module: new (bytes: Uint8Array) => WasmModule;
  readonly Memory: new (descriptor: { initial: number }) => WasmMemory;
  readonly Instance: new (module: WasmModule, imports: Record<string, Record<string, unknown>>) => { readonly exports: unknown };
}

/** Looked up when used: under Node's --jitless the global is missing, and the caller falls back. */
function webAssembly(): WasmApi {
  return (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;
}

export const WASM_PAGE = 65536;

/** Compiled modules by path, each compiled once (null: not available). */
const compiled = new Map<string, WasmModule | null>();

/** The compiled kernel `fileName` of the configured bundle folder; undefined when there is none to run. */
export function kernelModule(fileName: string): WasmModule | undefined {
  const { bundleDir } = engineSettings();
  if (bundleDir === undefined) return undefined;
  const path = join(bundleDir, fileName);
  let module = compiled.get(path);
  if (module === undefined) {
    module = null;
    try {
      if (existsSync(path)) module = new (webAssembly().Module)(readFileSync(path));
    } catch {
      // WebAssembly switched off: the JavaScript code does the same work.
    }
    compiled.set(path, module);
  }
  return module ?? undefined;
}

/** An instance of `module` on a memory of its own of `bytes` (rounded up to pages); the kernels import their memory. */
export function instantiateKernel<Exports>(module: WasmModule, bytes: number, abort: () => never): { exports: Exports; memory: WasmMemory } {
  const { Instance, Memory } = webAssembly();
  const memory = new Memory({ initial: Math.ceil(bytes / WASM_PAGE) + 1 });
  const exports = new Instance(module, { env: { memory, abort } }).exports as Exports;
  return { exports, memory };
}
