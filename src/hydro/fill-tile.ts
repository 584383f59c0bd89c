/**
 * One tile of the tiled priority-flood (see fill.ts): floods the tile from
 * its own edge cells, each a seed with its own label (cells where water
 * leaves the grid share {@link OUTLET_LABEL}), labels every cell with the
 * seed that reached it, and records in the spill graph where two labels'
 * regions meet. Works on tile-sized buffers that stay in cache and are
 * reused from tile to tile.
 *
 * Inside the tile this is Barnes, Lehman & Mulla (2014) Algorithm 2 (a
 * priority queue plus a plain queue for cells at the current spill level).
 * The priority queue itself is the tile's cells radix-sorted by elevation
 * and a forward-only pointer (see `run`), which costs O(n) instead of a
 * heap's O(n log n) and was the larger part of the time. Queuing a cell is
 * then a single state write, so a cell above the spill level always goes
 * to that queue: testing its neighbours first to let it skip the queue (as
 * Zhou, Sun & Fu 2016 do with a heap) cost more than it saved.
 */
import { CellSorter } from './sort-cells.js';
import { OUTLET_LABEL, type SpillGraph } from './spill-graph.js';

// Cell states in a tile: 0 not reached yet; otherwise reached, and either
// waiting in the priority order (QUEUED) or done with (CLOSED). NEAR_NODATA
// marks outlet cells before seeding only.
const CLOSED = 1;
const QUEUED = 2;
const NEAR_NODATA = 4;

/** A rectangle of the grid: first row and column, size in cells. */
export interface TileBounds {
  r0: number;
  c0: number;
  rows: number;
  cols: number;
}

/** Reusable buffers for flooding tiles of up to `maxRows` × `maxCols` cells. */
export class TileFlood {
  private readonly lz: Float32Array;
  private readonly state: Uint8Array;
  private readonly lab: Int32Array;
  private readonly pit: Int32Array;
  private readonly sorted: Int32Array;
  private readonly sorter: CellSorter;
  /** Offsets of the eight neighbours in the current tile (NW, N, NE, W, E, SW, S, SE), and room for an edge cell's list. */
  private readonly around = new Int32Array(8);
  private readonly edge = new Int32Array(8);

  constructor(maxRows: number, maxCols: number) {
    const size = maxRows * maxCols;
    this.lz = new Float32Array(size);
    this.state = new Uint8Array(size);
    this.lab = new Int32Array(size);
    this.pit = new Int32Array(size);
    this.sorted = new Int32Array(size);
    this.sorter = new CellSorter(size);
  }

  /**
   * Floods tile `t` of the `width` × `height` elevation grid `z` (metres,
   * NaN NoData), writing the tile's local fill into `filled` and labels into
   * `label`; new labels start at `nextLabel`. Returns the next free label.
   */
  run(
    z: Float32Array,
    width: number,
    height: number,
    t: TileBounds,
    filled: Float32Array,
    label: Int32Array,
    nextLabel: number,
    graph: SpillGraph,
  ): number {
    const { r0, c0, rows, cols } = t;
    const { lz, state, lab, pit, sorted, around, edge } = this;
    const size = rows * cols;
    around.set([-cols - 1, -cols, -cols + 1, -1, 1, cols - 1, cols, cols + 1]);
    for (let lr = 0; lr < rows; lr++) {
      const g = (r0 + lr) * width + c0;
      for (let lc = 0; lc < cols; lc++) lz[lr * cols + lc] = z[g + lc] ?? NaN;
    }
    state.fill(0, 0, size);
    lab.fill(0, 0, size);
    // NoData in the tile or its one-cell halo makes its neighbours outlets.
    for (let rr = Math.max(0, r0 - 1); rr <= Math.min(height - 1, r0 + rows); rr++) {
      for (let cc = Math.max(0, c0 - 1); cc <= Math.min(width - 1, c0 + cols); cc++) {
        if (!Number.isNaN(z[rr * width + cc] ?? 0)) continue;
        for (let lr = rr - r0 - 1; lr <= rr - r0 + 1; lr++) {
          if (lr < 0 || lr >= rows) continue;
          for (let lc = cc - c0 - 1; lc <= cc - c0 + 1; lc++) {
            if (lc >= 0 && lc < cols) state[lr * cols + lc] = NEAR_NODATA;
          }
        }
      }
    }
    // Seeds: every non-NoData cell on the tile's edge.
    for (let lr = 0; lr < rows; lr++) {
      const r = r0 + lr;
      const edgeRow = lr === 0 || lr === rows - 1;
      for (let lc = 0; lc < cols; lc++) {
        const li = lr * cols + lc;
        const zi = lz[li] ?? NaN;
        if (Number.isNaN(zi)) {
          state[li] = CLOSED;
          continue;
        }
        const c = c0 + lc;
        if (r === 0 || c === 0 || r === height - 1 || c === width - 1 || state[li] === NEAR_NODATA) {
          lab[li] = OUTLET_LABEL;
        } else if (edgeRow || lc === 0 || lc === cols - 1) {
          lab[li] = nextLabel++;
        } else {
          continue;
        }
        state[li] = QUEUED;
      }
    }
    // The priority queue: all cells sorted by elevation once, and a pointer
    // that only moves forward. A cell queued later is always higher than
    // the spill level the pointer has reached (lower ones join through the
    // pit queue), so the first queued cell at or after the pointer is the
    // lowest queued cell.
    const queued = this.sorter.sort(lz.subarray(0, size), sorted);
    let next = 0;
    let pitHead = 0;
    let pitTail = 0;
    for (;;) {
      let cell: number;
      if (pitHead < pitTail) {
        cell = pit[pitHead++] ?? 0;
        if (pitHead === pitTail) {
          pitHead = 0;
          pitTail = 0;
        }
      } else {
        while (next < queued && state[sorted[next] ?? 0] !== QUEUED) next++;
        if (next === queued) break;
        cell = sorted[next++] ?? 0;
        state[cell] = CLOSED;
      }
      const level = lz[cell] ?? 0;
      const own = lab[cell] ?? 0;
      const lr = (cell / cols) | 0;
      const lc = cell - lr * cols;
      const interior = lr > 0 && lc > 0 && lr < rows - 1 && lc < cols - 1;
      let count = 8;
      if (!interior) {
        // On the tile's edge: list the neighbours inside the tile (same order as `around`).
        count = 0;
        for (let dr = -1; dr <= 1; dr++) {
          const nr = lr + dr;
          if (nr < 0 || nr >= rows) continue;
          for (let dc = -1; dc <= 1; dc++) {
            const nc = lc + dc;
            if ((dr !== 0 || dc !== 0) && nc >= 0 && nc < cols) edge[count++] = nr * cols + nc;
          }
        }
      }
      for (let k = 0; k < count; k++) {
        const nb = interior ? cell + around[k]! : edge[k]!;
        const zn = lz[nb]!;
        if (state[nb] !== 0) {
          const other = lab[nb]!;
          if (other !== own && other !== 0) graph.add(own, other, zn > level ? zn : level);
          continue;
        }
        state[nb] = CLOSED;
        lab[nb] = own;
        if (zn <= level) {
          lz[nb] = level;
          pit[pitTail++] = nb;
        } else {
          state[nb] = QUEUED;
        }
      }
    }

    for (let lr = 0; lr < rows; lr++) {
      const g = (r0 + lr) * width + c0;
      const l = lr * cols;
      filled.set(lz.subarray(l, l + cols), g);
      label.set(lab.subarray(l, l + cols), g);
    }
    return nextLabel;
  }
}
