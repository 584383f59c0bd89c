/**
 * One tile of the tiled priority-flood (see fill.ts): floods the tile from
 * its own edge cells, each a seed with its own label (cells where water
 * leaves the grid share {@link OUTLET_LABEL}), labels every cell with the
 * seed that reached it, and records in the spill graph where two labels'
 * regions meet. Works on tile-sized buffers that stay in cache and are
 * reused from tile to tile.
 *
 * Inside the tile this is Barnes, Lehman & Mulla (2014) Algorithm 2 (a
 * priority queue plus a plain queue for cells at the current spill level),
 * with one more plain queue in the spirit of Zhou, Sun & Fu (2016): a cell
 * above the spill level whose unreached neighbours are all higher cannot be
 * affected by processing order, so it skips the heap.
 */
import { CellHeap } from './heap.js';
import { OUTLET_LABEL, type SpillGraph } from './spill-graph.js';

const CLOSED = 1;
const NEAR_NODATA = 2;

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
  private readonly slope: Int32Array;
  private readonly heap = new CellHeap(4096);

  constructor(maxRows: number, maxCols: number) {
    const size = maxRows * maxCols;
    this.lz = new Float32Array(size);
    this.state = new Uint8Array(size);
    this.lab = new Int32Array(size);
    this.pit = new Int32Array(size);
    this.slope = new Int32Array(size);
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
    const { lz, state, lab, pit, slope, heap } = this;
    const size = rows * cols;
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
        state[li] = CLOSED;
        heap.push(li, zi);
      }
    }
    let pitHead = 0;
    let pitTail = 0;
    let slopeHead = 0;
    let slopeTail = 0;
    for (;;) {
      let cell: number;
      if (pitHead < pitTail) {
        cell = pit[pitHead++] ?? 0;
        if (pitHead === pitTail) {
          pitHead = 0;
          pitTail = 0;
        }
      } else if (slopeHead < slopeTail) {
        cell = slope[slopeHead++] ?? 0;
        if (slopeHead === slopeTail) {
          slopeHead = 0;
          slopeTail = 0;
        }
      } else if (heap.size > 0) {
        cell = heap.pop();
      } else {
        break;
      }
      const level = lz[cell] ?? 0;
      const own = lab[cell] ?? 0;
      const lr = (cell / cols) | 0;
      const lc = cell - lr * cols;
      const interior = lr > 0 && lc > 0 && lr < rows - 1 && lc < cols - 1;
      for (let dr = -1; dr <= 1; dr++) {
        const nr = lr + dr;
        if (!interior && (nr < 0 || nr >= rows)) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const nc = lc + dc;
          if ((dr === 0 && dc === 0) || (!interior && (nc < 0 || nc >= cols))) continue;
          const nb = nr * cols + nc;
          const zn = lz[nb] ?? 0;
          if (state[nb] === CLOSED) {
            const other = lab[nb] ?? 0;
            if (other !== own && other !== 0) graph.add(own, other, zn > level ? zn : level);
            continue;
          }
          state[nb] = CLOSED;
          lab[nb] = own;
          if (zn <= level) {
            lz[nb] = level;
            pit[pitTail++] = nb;
          } else if (openNeighboursHigher(lz, state, cols, nb, zn)) {
            slope[slopeTail++] = nb;
          } else {
            heap.push(nb, zn);
          }
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

/** Whether every not-yet-reached neighbour of interior tile cell `cell` is higher than `zc`. */
function openNeighboursHigher(lz: Float32Array, state: Uint8Array, cols: number, cell: number, zc: number): boolean {
  for (let k = -cols; k <= cols; k += cols) {
    const base = cell + k;
    for (let i = base - 1; i <= base + 1; i++) {
      if (state[i] !== CLOSED && (lz[i] ?? 0) <= zc) return false;
    }
  }
  return true;
}
