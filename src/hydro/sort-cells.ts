/**
 * Sorting cells by a Float32 value with an LSD radix sort (three passes of
 * 11, 11 and 10 bits over the value's bits made order-preserving as
 * unsigned integers), on reusable buffers. O(n), no comparisons, stable.
 */

/** Reusable buffers for sorting up to `capacity` cells. */
export class CellSorter {
  private keysA: Uint32Array;
  private keysB: Uint32Array;
  private idsB: Int32Array;
  private readonly count = new Int32Array(3 * 2048); // one histogram per pass

  constructor(capacity: number) {
    this.keysA = new Uint32Array(capacity);
    this.keysB = new Uint32Array(capacity);
    this.idsB = new Int32Array(capacity);
  }

  /**
   * Writes into `out` the indices 0…values.length−1 whose value is not NaN,
   * in ascending order of value (ties in index order); returns how many.
   * `values.length` must not exceed the capacity.
   */
  sort(values: Float32Array, out: Int32Array): number {
    const bits = new Uint32Array(values.buffer, values.byteOffset, values.length);
    let keys = this.keysA;
    let ids = out;
    const count = this.count;
    count.fill(0);
    let n = 0;
    for (let i = 0; i < values.length; i++) {
      if (Number.isNaN(values[i] ?? NaN)) continue;
      const b = bits[i] ?? 0;
      const key = (b & 0x80000000) !== 0 ? ~b >>> 0 : (b | 0x80000000) >>> 0; // order-preserving
      keys[n] = key;
      ids[n] = i;
      n++;
      const d0 = key & 2047;
      const d1 = 2048 + ((key >>> 11) & 2047);
      const d2 = 4096 + (key >>> 22);
      count[d0] = (count[d0] ?? 0) + 1;
      count[d1] = (count[d1] ?? 0) + 1;
      count[d2] = (count[d2] ?? 0) + 1;
    }
    let keysTo = this.keysB;
    let idsTo = this.idsB;
    for (let pass = 0; pass < 3; pass++) {
      const shift = 11 * pass;
      const base = 2048 * pass;
      if (n === 0 || (count[base + (((keys[0] ?? 0) >>> shift) & 2047)] ?? 0) === n) continue; // one digit for all
      let sum = 0;
      for (let d = base; d < base + 2048; d++) {
        const c = count[d] ?? 0;
        count[d] = sum;
        sum += c;
      }
      for (let k = 0; k < n; k++) {
        const key = keys[k] ?? 0;
        const d = base + ((key >>> shift) & 2047);
        const p = count[d] ?? 0;
        count[d] = p + 1;
        keysTo[p] = key;
        idsTo[p] = ids[k] ?? 0;
      }
      const tk = keys;
      keys = keysTo;
      keysTo = tk;
      const ti = ids;
      ids = idsTo;
      idsTo = ti;
    }
    if (ids !== out) out.set(ids.subarray(0, n));
    return n;
  }

}
