// AssemblyScript, shared by the kernels that need 128-bit products (the record kernel's decimalToDouble.ts,
// the record writer's numberText.ts); not part of the TypeScript program.

/** The high 64 bits of the 128-bit product a × b (WebAssembly has no wide multiply). */
@inline export function multiplyHigh(a: u64, b: u64): u64 {
  const aLo = a & 0xffffffff;
  const aHi = a >> 32;
  const bLo = b & 0xffffffff;
  const bHi = b >> 32;
  const b00 = aLo * bLo;
  const mid1 = aHi * bLo + (b00 >> 32);
  const mid2 = aLo * bHi + (mid1 & 0xffffffff);
  return aHi * bHi + (mid1 >> 32) + (mid2 >> 32);
}
