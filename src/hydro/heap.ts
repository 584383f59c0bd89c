/**
 * A binary min-heap of cell indices keyed by a number (an elevation), on two
 * typed arrays that grow by doubling and never shrink or free on pop.
 */
export class CellHeap {
  private ids: Int32Array;
  private keys: Float64Array;
  /** Number of queued cells. */
  size = 0;

  /** `capacity` is a starting size; the heap grows as needed. */
  constructor(capacity = 1024) {
    this.ids = new Int32Array(Math.max(16, capacity));
    this.keys = new Float64Array(Math.max(16, capacity));
  }

  /** Queues cell `id` with priority `key` (lower comes out first). */
  push(id: number, key: number): void {
    if (this.size === this.ids.length) this.grow();
    const ids = this.ids;
    const keys = this.keys;
    let pos = this.size++;
    while (pos > 0) {
      const parent = (pos - 1) >> 1;
      const pk = keys[parent] ?? 0;
      if (pk <= key) break;
      ids[pos] = ids[parent] ?? 0;
      keys[pos] = pk;
      pos = parent;
    }
    ids[pos] = id;
    keys[pos] = key;
  }

  /** Key of the cell that `pop` would return. Only valid when size > 0. */
  peekKey(): number {
    return this.keys[0] ?? NaN;
  }

  /** Removes and returns the cell with the lowest key. Only valid when size > 0. */
  pop(): number {
    const ids = this.ids;
    const keys = this.keys;
    const top = ids[0] ?? -1;
    const n = --this.size;
    if (n > 0) {
      const id = ids[n] ?? 0;
      const key = keys[n] ?? 0;
      let pos = 0;
      const half = n >> 1;
      while (pos < half) {
        let child = 2 * pos + 1;
        let ck = keys[child] ?? 0;
        const right = child + 1;
        if (right < n) {
          const rk = keys[right] ?? 0;
          if (rk < ck) {
            child = right;
            ck = rk;
          }
        }
        if (ck >= key) break;
        ids[pos] = ids[child] ?? 0;
        keys[pos] = ck;
        pos = child;
      }
      ids[pos] = id;
      keys[pos] = key;
    }
    return top;
  }

  private grow(): void {
    const ids = new Int32Array(this.ids.length * 2);
    ids.set(this.ids);
    this.ids = ids;
    const keys = new Float64Array(this.keys.length * 2);
    keys.set(this.keys);
    this.keys = keys;
  }
}
