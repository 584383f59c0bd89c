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
  const { width, height, cellWidthM, cellHeightM } = grid;
  const out = pool ? pool.float32(width * height, true) : new Float32Array(width * height);
  const length = new Float64Array(8);
  for (let r = 0; r < height; r++) {
    const w = cellWidthM[r] ?? 0;
    for (let d = 0; d < 8; d++) {
      const dr = DIR_ROW[d] ?? 0;
      const dc = DIR_COL[d] ?? 0;
      if (dr === 0) length[d] = w;
      else if (dc === 0) length[d] = cellHeightM;
      else {
        const wm = 0.5 * (w + (cellWidthM[r + dr] ?? w));
        length[d] = Math.sqrt(wm * wm + cellHeightM * cellHeightM);
      }
    }
    const start = r * width;
    for (let i = start; i < start + width; i++) {
      const d = dir[i] ?? 255;
      if (stream[i] === 1 && d < 8) out[i] = length[d] ?? 0;
    }
  }
  return out;
}
