/**
 * A binary min-heap of integer ids keyed by float priorities, on two typed
 * arrays (ids and priorities). Buffers grow by doubling and are never freed
 * on pop, so one heap serves many floods without allocating.
 *
 * Equal priorities come out in no particular order.
 */
export class MinHeap {
  private ids: Int32Array;
  private priorities: Float64Array;
  /** Number of entries in the heap. */
  size = 0;
  /** Priority of the entry most recently returned by `pop`. */
  lastPriority = 0;

  /** `capacity` is the initial number of entries the buffers hold. */
  constructor(capacity = 1024) {
    const n = Math.max(16, capacity | 0);
    this.ids = new Int32Array(n);
    this.priorities = new Float64Array(n);
  }

  /** Empties the heap, keeping its buffers. */
  clear(): void {
    this.size = 0;
  }

  /** Adds `id` with `priority`. */
  push(id: number, priority: number): void {
    if (this.size === this.ids.length) this.grow();
    const ids = this.ids;
    const pr = this.priorities;
    let pos = this.size++;
    while (pos > 0) {
      const parent = (pos - 1) >> 1;
      const pp = pr[parent]!;
      if (pp <= priority) break;
      ids[pos] = ids[parent]!;
      pr[pos] = pp;
      pos = parent;
    }
    ids[pos] = id;
    pr[pos] = priority;
  }

  /** Priority of the smallest entry; Infinity when empty. */
  peekPriority(): number {
    return this.size > 0 ? this.priorities[0]! : Infinity;
  }

  /** Removes and returns the id with the smallest priority (sets `lastPriority`); -1 when empty. */
  pop(): number {
    if (this.size === 0) return -1;
    const ids = this.ids;
    const pr = this.priorities;
    const top = ids[0]!;
    this.lastPriority = pr[0]!;
    const n = --this.size;
    if (n > 0) {
      const id = ids[n]!;
      const p = pr[n]!;
      let pos = 0;
      const half = n >> 1;
      while (pos < half) {
        let child = 2 * pos + 1;
        const right = child + 1;
        if (right < n && pr[right]! < pr[child]!) child = right;
        const cp = pr[child]!;
        if (cp >= p) break;
        ids[pos] = ids[child]!;
        pr[pos] = cp;
        pos = child;
      }
      ids[pos] = id;
      pr[pos] = p;
    }
    return top;
  }

  private grow(): void {
    const n = this.ids.length * 2;
    const ids = new Int32Array(n);
    ids.set(this.ids);
    const pr = new Float64Array(n);
    pr.set(this.priorities);
    this.ids = ids;
    this.priorities = pr;
  }
}
