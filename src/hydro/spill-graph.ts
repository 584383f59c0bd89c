/**
 * The graph of a tiled priority-flood (Barnes 2016, "Parallel Priority-Flood
 * depression filling for trillion cell digital elevation models on desktops
 * or clusters", Computers & Geosciences 96): nodes are seed labels (one per
 * tile-edge cell, plus node 1 for every cell where water leaves the grid),
 * edges carry the elevation at which two labels' flooded regions meet. The
 * level each label must be filled to is its minimax path height from node 1.
 */
import { CellHeap } from './heap.js';

/** Node id shared by all cells that drain off the grid or into NoData. */
export const OUTLET_LABEL = 1;

const CACHE_SHIFT = 18; // 2^(32 − 18) = 16 384 slots
const CACHE_SIZE = 1 << (32 - CACHE_SHIFT);

/** Edges as three parallel arrays: labels at both ends and the meeting elevation (m). */
export interface SpillEdges {
  from: Int32Array<ArrayBuffer>;
  to: Int32Array<ArrayBuffer>;
  weight: Float32Array<ArrayBuffer>;
}

/** Growable undirected edge list with a minimax solver. */
export class SpillGraph {
  private from: Int32Array = new Int32Array(1024);
  private to: Int32Array = new Int32Array(1024);
  private weight: Float32Array = new Float32Array(1024);
  private count = 0;
  // Direct-mapped cache of recent pairs: floods meet along boundaries, so the
  // same pair comes up again and again; only new pairs or lower meeting
  // elevations are stored.
  private readonly cacheA = new Int32Array(CACHE_SIZE);
  private readonly cacheB = new Int32Array(CACHE_SIZE);
  private readonly cacheW = new Float32Array(CACHE_SIZE);

  /** Records that labels `a` and `b` meet at elevation `w` (metres). */
  add(a: number, b: number, w: number): void {
    const slot = (Math.imul(a, 0x9e3779b1) ^ Math.imul(b, 0x85ebca6b)) >>> CACHE_SHIFT;
    if (this.cacheA[slot] === a && this.cacheB[slot] === b && (this.cacheW[slot] ?? 0) <= w) return;
    this.cacheA[slot] = a;
    this.cacheB[slot] = b;
    this.cacheW[slot] = w;
    if (this.count === this.from.length) this.grow();
    const k = this.count++;
    this.from[k] = a;
    this.to[k] = b;
    this.weight[k] = w;
  }

  /** Number of edges recorded. */
  get size(): number {
    return this.count;
  }

  /** Copies of the recorded edges (to send from a worker thread). */
  exportEdges(): SpillEdges {
    return {
      from: this.from.slice(0, this.count),
      to: this.to.slice(0, this.count),
      weight: this.weight.slice(0, this.count),
    };
  }

  /** Adds edges exported by another graph. */
  importEdges(edges: SpillEdges): void {
    const { from, to, weight } = edges;
    for (let k = 0; k < from.length; k++) this.add(from[k] ?? 0, to[k] ?? 0, weight[k] ?? 0);
  }

  /**
   * Fill level of every label 0…labels−1, metres: the lowest possible
   * highest edge on a path to {@link OUTLET_LABEL} (−∞ for the outlet itself,
   * +∞ for a label with no path, which a grid with edges cannot have).
   */
  solve(labels: number): Float64Array {
    const m = this.count;
    const start = new Int32Array(labels + 1);
    for (let k = 0; k < m; k++) {
      const a = this.from[k] ?? 0;
      const b = this.to[k] ?? 0;
      start[a + 1] = (start[a + 1] ?? 0) + 1;
      start[b + 1] = (start[b + 1] ?? 0) + 1;
    }
    for (let v = 0; v < labels; v++) start[v + 1] = (start[v + 1] ?? 0) + (start[v] ?? 0);
    const fillPos = start.slice(0, labels);
    const adj = new Int32Array(2 * m);
    const adjW = new Float32Array(2 * m);
    for (let k = 0; k < m; k++) {
      const a = this.from[k] ?? 0;
      const b = this.to[k] ?? 0;
      const w = this.weight[k] ?? 0;
      let p = fillPos[a] ?? 0;
      adj[p] = b;
      adjW[p] = w;
      fillPos[a] = p + 1;
      p = fillPos[b] ?? 0;
      adj[p] = a;
      adjW[p] = w;
      fillPos[b] = p + 1;
    }
    const level = new Float64Array(labels).fill(Infinity);
    level[OUTLET_LABEL] = -Infinity;
    const heap = new CellHeap(1024);
    heap.push(OUTLET_LABEL, -Infinity);
    while (heap.size > 0) {
      const key = heap.peekKey();
      const u = heap.pop();
      if (key > (level[u] ?? Infinity)) continue; // stale entry
      const end = start[u + 1] ?? 0;
      for (let p = start[u] ?? 0; p < end; p++) {
        const v = adj[p] ?? 0;
        const w = adjW[p] ?? 0;
        const candidate = key > w ? key : w;
        if (candidate < (level[v] ?? Infinity)) {
          level[v] = candidate;
          heap.push(v, candidate);
        }
      }
    }
    return level;
  }

  private grow(): void {
    const size = this.from.length * 2;
    const from = new Int32Array(size);
    from.set(this.from);
    this.from = from;
    const to = new Int32Array(size);
    to.set(this.to);
    this.to = to;
    const weight = new Float32Array(size);
    weight.set(this.weight);
    this.weight = weight;
  }
}
