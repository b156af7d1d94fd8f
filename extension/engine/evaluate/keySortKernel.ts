/**
 * Runs the WebAssembly sort (kernel/keySort.ts) of a query's items by score: the order IndexSorter gives
 * (a stable sort's result is unique; `evaluate-sort.test.ts` compares the two on random lists), faster
 * (17 against 24 ns an item on 100-item lists of random scores). The keys are written straight into the kernel's memory through `keys`, and the
 * order read from `order`, so nothing is copied. A list longer than `capacity`, or a thread without the
 * compiled kernel, is sorted by IndexSorter. Loading this module makes QueryRanking use it: every Node
 * entry point that scores imports it (engine/index.ts and the thread scripts).
 */
import { instantiateKernel, kernelModule } from '../wasmKernels';
import { useKernelSorter, type KeyOrderSorter } from './ranking';

interface KeySortExports {
  dataEnd(): number;
  layout(keys: number, order: number, keyA: number, keyB: number, indexA: number, indexB: number, bucket: number, start: number): void;
  sortDescending(n: number): void;
}

/**
 * Items per list the kernel takes: 44 bytes each of a memory that never grows (a grown memory detaches its
 * old buffer, which makes V8 slow every later typed-array access of the thread).
 */
const CAPACITY = 1 << 16;

export class KeySortKernel implements KeyOrderSorter {
  readonly capacity = CAPACITY;
  /** Keys in: one per item, -Infinity for an item without a score, never NaN. */
  readonly keys: Float64Array;
  /** Order out: item positions, highest key first, equal keys in position order. */
  readonly order: Uint32Array;

  constructor(private readonly kernel: KeySortExports, buffer: ArrayBuffer) {
    const c = CAPACITY;
    // 8-byte columns first, then 4-byte ones; the start table has two more slots.
    const keys = 0;
    const keyA = keys + 8 * c;
    const keyB = keyA + 8 * c;
    const order = keyB + 8 * c;
    const indexA = order + 4 * c;
    const indexB = indexA + 4 * c;
    const bucket = indexB + 4 * c;
    const start = bucket + 4 * c;
    // After the kernel's own static data.
    const base = (kernel.dataEnd() + 15) & ~15;
    kernel.layout(base + keys, base + order, base + keyA, base + keyB, base + indexA, base + indexB, base + bucket, base + start);
    this.keys = new Float64Array(buffer, base + keys, c);
    this.order = new Uint32Array(buffer, base + order, c);
  }

  /** Sorts keys[0..n) (1 ≤ n ≤ capacity) into order[0..n). */
  sort(n: number): void {
    this.kernel.sortDescending(n);
  }
}

/** This thread's sorter, made on first use, for the module it was made from. */
let made: { readonly module: object; readonly sorter: KeySortKernel } | undefined;

/** This thread's kernel sorter; undefined without the compiled kernel. */
export function keySortKernel(): KeySortKernel | undefined {
  const module = kernelModule('keySort.wasm');
  if (module === undefined) return undefined;
  if (made?.module !== module) {
    const { exports, memory } = instantiateKernel<KeySortExports>(module, 44 * CAPACITY + 8 + (1 << 16), kernelAbort);
    made = { module, sorter: new KeySortKernel(exports, memory.buffer) };
  }
  return made.sorter;
}

useKernelSorter(keySortKernel);

function kernelAbort(): never {
  throw new Error('the sort kernel aborted');
}
