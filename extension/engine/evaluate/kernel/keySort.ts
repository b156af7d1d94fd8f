// AssemblyScript, compiled to WebAssembly by build.mjs (not part of the TypeScript program).
//
// A query's items ordered by score, highest first, equal scores in file order: the order
// evaluate/sortIndex.ts gives (a stable sort's result is unique, so the two agree exactly; the tests
// compare them on random lists). Scores are spread into as many buckets as items between the list's
// extremes (a stable counting pass), and each bucket is finished by insertion, or by bottom-up merging
// when it came out large. The same loops in JavaScript cost about 27 ns an item, most of it the
// typed-array checks V8 keeps in them; here they run without.
//
// Memory (byte offsets set by the host with `layout`, room for `capacity` items each): the keys in, the
// order out, and scratch.

const RUN: i32 = 16;

let keyAt: usize = 0; // f64 per item: the score (-Infinity for none; never NaN)
let orderAt: usize = 0; // u32 per item: out, item positions in sorted order
let keyAAt: usize = 0; // f64 scratch
let keyBAt: usize = 0;
let indexAAt: usize = 0; // u32 scratch
let indexBAt: usize = 0;
let bucketAt: usize = 0; // u32 per item
let startAt: usize = 0; // u32 per bucket + 2

export function dataEnd(): usize {
  return __heap_base;
}

export function layout(keys: usize, order: usize, keyA: usize, keyB: usize, indexA: usize, indexB: usize, bucket: usize, start: usize): void {
  keyAt = keys;
  orderAt = order;
  keyAAt = keyA;
  keyBAt = keyB;
  indexAAt = indexA;
  indexBAt = indexB;
  bucketAt = bucket;
  startAt = start;
}

@inline function key(i: i32): f64 {
  return load<f64>(keyAt + (<usize>i << 3));
}

/** Stable descending insertion sort of the scratch pair (keyA, indexA) over [lo, hi). */
function insertion(lo: i32, hi: i32): void {
  for (let i = lo + 1; i < hi; i++) {
    const k = load<f64>(keyAAt + (<usize>i << 3));
    const v = load<u32>(indexAAt + (<usize>i << 2));
    let j = i - 1;
    while (j >= lo) {
      const kj = load<f64>(keyAAt + (<usize>j << 3));
      if (!(kj < k)) break;
      store<f64>(keyAAt + (<usize>(j + 1) << 3), kj);
      store<u32>(indexAAt + (<usize>(j + 1) << 2), load<u32>(indexAAt + (<usize>j << 2)));
      j--;
    }
    store<f64>(keyAAt + (<usize>(j + 1) << 3), k);
    store<u32>(indexAAt + (<usize>(j + 1) << 2), v);
  }
}

/** Stable descending bottom-up merge sort of (keyA, indexA) over [lo0, hi0); the result is left there. */
function mergeSort(lo0: i32, hi0: i32): void {
  for (let lo = lo0; lo < hi0; lo += RUN) insertion(lo, min(lo + RUN, hi0));
  let ka = keyAAt;
  let ia = indexAAt;
  let kb = keyBAt;
  let ib = indexBAt;
  for (let width = RUN; width < hi0 - lo0; width <<= 1) {
    for (let lo = lo0; lo < hi0; lo += width << 1) {
      const mid = min(lo + width, hi0);
      const hi = min(lo + (width << 1), hi0);
      let i = lo;
      let j = mid;
      let o = lo;
      while (i < mid && j < hi) {
        const ki = load<f64>(ka + (<usize>i << 3));
        const kj = load<f64>(ka + (<usize>j << 3));
        // From the right run only when strictly greater: ties keep the earlier run's order.
        if (kj > ki) {
          store<f64>(kb + (<usize>o << 3), kj);
          store<u32>(ib + (<usize>o << 2), load<u32>(ia + (<usize>j << 2)));
          j++;
        } else {
          store<f64>(kb + (<usize>o << 3), ki);
          store<u32>(ib + (<usize>o << 2), load<u32>(ia + (<usize>i << 2)));
          i++;
        }
        o++;
      }
      for (; i < mid; i++, o++) {
        store<f64>(kb + (<usize>o << 3), load<f64>(ka + (<usize>i << 3)));
        store<u32>(ib + (<usize>o << 2), load<u32>(ia + (<usize>i << 2)));
      }
      for (; j < hi; j++, o++) {
        store<f64>(kb + (<usize>o << 3), load<f64>(ka + (<usize>j << 3)));
        store<u32>(ib + (<usize>o << 2), load<u32>(ia + (<usize>j << 2)));
      }
    }
    const tk = ka;
    ka = kb;
    kb = tk;
    const ti = ia;
    ia = ib;
    ib = ti;
  }
  if (ka != keyAAt) {
    memory.copy(keyAAt + (<usize>lo0 << 3), ka + (<usize>lo0 << 3), <usize>(hi0 - lo0) << 3);
    memory.copy(indexAAt + (<usize>lo0 << 2), ia + (<usize>lo0 << 2), <usize>(hi0 - lo0) << 2);
  }
}

/** Writes the order of keys[0..n) (n ≥ 1) to `order`: highest key first, equal keys in position order. */
export function sortDescending(n: i32): void {
  // One pass: already in order (a ranker's dump often is), and the extremes for the buckets.
  let sorted = true;
  let previous = key(0);
  let highest = -Infinity;
  let lowest = Infinity;
  for (let i = 0; i < n; i++) {
    const k = key(i);
    if (k > previous) sorted = false;
    previous = k;
    if (k > highest) highest = k;
    if (k < lowest && k != -Infinity) lowest = k;
  }
  if (sorted) {
    for (let i = 0; i < n; i++) store<u32>(orderAt + (<usize>i << 2), i);
    return;
  }
  const range = highest - lowest;
  if (!(range > 0 && range < Infinity)) {
    // Every finite key equal, or a range beyond a double: merge sort the lot.
    for (let i = 0; i < n; i++) {
      store<f64>(keyAAt + (<usize>i << 3), key(i));
      store<u32>(indexAAt + (<usize>i << 2), i);
    }
    mergeSort(0, n);
  } else {
    // Buckets 0..n-1 for finite keys (highest first), bucket n for -Infinity; counted, then filled in order.
    const scale = <f64>n / range;
    memory.fill(startAt, 0, <usize>(n + 2) << 2);
    for (let i = 0; i < n; i++) {
      const k = key(i);
      let b = n;
      if (k != -Infinity) {
        b = <i32>((highest - k) * scale);
        if (b >= n) b = n - 1;
      }
      store<u32>(bucketAt + (<usize>i << 2), b);
      const at = startAt + (<usize>(b + 1) << 2);
      store<u32>(at, load<u32>(at) + 1);
    }
    for (let b = 0; b <= n; b++) {
      const at = startAt + (<usize>(b + 1) << 2);
      store<u32>(at, load<u32>(at) + load<u32>(at - 4));
    }
    // Each bucket's start moves to its end as it fills.
    for (let i = 0; i < n; i++) {
      const at = startAt + (<usize>load<u32>(bucketAt + (<usize>i << 2)) << 2);
      const o = load<u32>(at);
      store<u32>(at, o + 1);
      store<f64>(keyAAt + (<usize>o << 3), key(i));
      store<u32>(indexAAt + (<usize>o << 2), i);
    }
    let lo: i32 = 0;
    for (let b = 0; b < n; b++) {
      const hi = <i32>load<u32>(startAt + (<usize>b << 2));
      if (hi - lo > RUN) mergeSort(lo, hi);
      else if (hi - lo > 1) insertion(lo, hi);
      lo = hi;
    }
  }
  memory.copy(orderAt, indexAAt, <usize>n << 2);
}
