/**
 * Binary search in ascending typed arrays.
 */

/** First index of ascending `sorted` whose value is at least `value` (sorted.length when none). */
export function lowerBound(sorted: Float64Array, value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid]! < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Position of `value` in ascending `sorted` (cell indices), or −1. Its own
 * loop, so that lowerBound, which the draws call on Float64Arrays in their
 * hot loops, only ever sees one element type.
 */
export function indexOfSorted(sorted: Int32Array, value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid]! < value) lo = mid + 1;
    else hi = mid;
  }
  return lo < sorted.length && sorted[lo] === value ? lo : -1;
}

const F32 = new Float32Array(1);
const U32 = new Uint32Array(F32.buffer);

/**
 * An unsigned 32-bit key that orders as the float32 value `x` does
 * (IEEE 754 bits, sign flipped; −0 taken as +0). `x` must be a float32
 * value (Math.fround(x) === x) and not NaN.
 */
export function float32OrderKey(x: number): number {
  F32[0] = x === 0 ? 0 : x;
  const bits = U32[0]!;
  return (bits & 0x80000000 ? ~bits : bits | 0x80000000) >>> 0;
}

/** Below this many items radixArgsort compares instead. */
const RADIX_MIN_ITEMS = 256;
/** Digit width of radixArgsort: 11 bits, 3 passes per 32-bit key. */
const RADIX_BITS = 11;
const RADIX_BUCKETS = 1 << RADIX_BITS;
const RADIX_MASK = RADIX_BUCKETS - 1;

/**
 * The permutation that sorts `n` items by `keys` (unsigned 32-bit, most
 * significant first), stable: items with equal keys keep their order.
 * LSD radix sort with 11-bit digits: 3 passes per key, O(n).
 */
export function radixArgsort(n: number, keys: readonly Uint32Array[]): Uint32Array {
  let order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  // Few items: a comparison sort costs less than clearing the digit counts.
  if (n < RADIX_MIN_ITEMS) {
    return order.sort((a, b) => {
      for (let k = 0; k < keys.length; k++) {
        const d = keys[k]![a]! - keys[k]![b]!;
        if (d !== 0) return d;
      }
      return a - b;
    });
  }
  let next = new Uint32Array(n);
  const count = new Uint32Array(RADIX_BUCKETS + 1);
  for (let k = keys.length - 1; k >= 0; k--) {
    const key = keys[k]!;
    for (let shift = 0; shift < 32; shift += RADIX_BITS) {
      count.fill(0);
      for (let i = 0; i < n; i++) count[((key[order[i]!]! >>> shift) & RADIX_MASK) + 1]!++;
      for (let d = 0; d < RADIX_BUCKETS; d++) count[d + 1]! += count[d]!;
      for (let i = 0; i < n; i++) {
        const item = order[i]!;
        next[count[(key[item]! >>> shift) & RADIX_MASK]!++] = item;
      }
      const t = order;
      order = next;
      next = t;
    }
  }
  return order;
}
