/**
 * Stream length carried by each cell: the D8 link from the cell's centre to
 * its receiver's centre, metres (cardinal: cell width or height; diagonal:
 * √(w² + h²) with the mean width of the two rows, so geographic grids are
 * right to first order). A stream cell that drains off the grid carries 0.
 */
import type { Grid } from '../grid/grid.js';
import { DIR_COL, DIR_ROW } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';

/** Per-cell stream length in metres (0 off the stream network); the raster comes from `pool` when given. */
export function streamLengthM(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  dir: Uint8Array,
  stream: Uint8Array,
  pool?: RasterPool,
): Float32Array {
  const { width, height } = grid;
  const out = pool ? pool.float32(width * height, true) : new Float32Array(width * height);
  const length = new Float64Array(8);
  for (let r = 0; r < height; r++) {
    linkLengthsM(grid, r, length);
    const start = r * width;
    for (let i = start; i < start + width; i++) {
      const d = dir[i] ?? 255;
      if (stream[i] === 1 && d < 8) out[i] = length[d] ?? 0;
    }
  }
  return out;
}

/** The stream cells in row-major order and the length each carries, m (the non-zero cells of {@link streamLengthM} and the zeros among the stream cells). */
export interface StreamCellLengths {
  readonly cells: Int32Array;
  /** As {@link streamLengthM} stores it (Float32). */
  readonly lengthM: Float32Array;
}

/**
 * {@link streamLengthM} for the stream cells only, as lists (no raster):
 * `streamCells` lists every stream cell once, in any order (order.ts
 * `flowRouting` lists them in flow order).
 */
export function streamCellLengthsM(grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>, dir: Uint8Array, streamCells: Int32Array): StreamCellLengths {
  const { width } = grid;
  const cells = Int32Array.from(streamCells).sort();
  const lengthM = new Float32Array(cells.length);
  const length = new Float64Array(8);
  let row = -1;
  for (let k = 0; k < cells.length; k++) {
    const i = cells[k]!;
    const r = (i / width) | 0;
    if (r !== row) {
      linkLengthsM(grid, r, length);
      row = r;
    }
    const d = dir[i] ?? 255;
    lengthM[k] = d < 8 ? length[d]! : 0;
  }
  return { cells, lengthM };
}

/** Length of the D8 link in each direction from a cell of row `r`, metres, into `out` (length 8). */
function linkLengthsM(grid: Pick<Grid, 'cellWidthM' | 'cellHeightM'>, r: number, out: Float64Array): void {
  const { cellWidthM, cellHeightM } = grid;
  const w = cellWidthM[r] ?? 0;
  for (let d = 0; d < 8; d++) {
    const dr = DIR_ROW[d] ?? 0;
    const dc = DIR_COL[d] ?? 0;
    if (dr === 0) out[d] = w;
    else if (dc === 0) out[d] = cellHeightM;
    else {
      const wm = 0.5 * (w + (cellWidthM[r + dr] ?? w));
      out[d] = Math.sqrt(wm * wm + cellHeightM * cellHeightM);
    }
  }
}
