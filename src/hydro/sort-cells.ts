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
  private readonly count = new Int32Array(2048);

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
    let n = 0;
    for (let i = 0; i < values.length; i++) {
      if (Number.isNaN(values[i] ?? NaN)) continue;
      const b = bits[i] ?? 0;
      keys[n] = (b & 0x80000000) !== 0 ? ~b >>> 0 : (b | 0x80000000) >>> 0; // order-preserving
      ids[n] = i;
      n++;
    }
    let keysTo = this.keysB;
    let idsTo = this.idsB;
    const count = this.count;
    for (let shift = 0; shift < 32; shift += 11) {
      count.fill(0);
      for (let k = 0; k < n; k++) {
        const d = ((keys[k] ?? 0) >>> shift) & 2047;
        count[d] = (count[d] ?? 0) + 1;
      }
      if ((count[((keys[0] ?? 0) >>> shift) & 2047] ?? 0) === n) continue; // one digit for all: nothing to do
      let sum = 0;
      for (let d = 0; d < 2048; d++) {
        const c = count[d] ?? 0;
        count[d] = sum;
        sum += c;
      }
      for (let k = 0; k < n; k++) {
        const key = keys[k] ?? 0;
        const d = (key >>> shift) & 2047;
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
