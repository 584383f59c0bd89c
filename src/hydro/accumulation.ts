/**
 * Flow accumulation: the contributing area of each cell (its own area plus
 * every cell that drains through it), m², using each row's own cell area so
 * geographic grids are right. NoData cells get 0.
 */
import type { Grid } from '../grid/grid.js';
import { DIR_NONE, neighbourOffsets } from './neighbours.js';

/** Contributing area per cell, m², from D8 `dir` and the upstream-first `order` of {@link flowOrder}. */
export function flowAccumulationM2(
  grid: Pick<Grid, 'width' | 'cellAreaM2'>,
  dir: Uint8Array,
  order: Int32Array,
): Float64Array {
  const { width, cellAreaM2 } = grid;
  const acc = new Float64Array(dir.length);
  const off = neighbourOffsets(width);
  for (let k = 0; k < order.length; k++) {
    const i = order[k] ?? 0;
    const a = (acc[i] ?? 0) + (cellAreaM2[(i / width) | 0] ?? 0);
    acc[i] = a;
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) {
      const r = i + (off[d] ?? 0);
      acc[r] = (acc[r] ?? 0) + a;
    }
  }
  return acc;
}
