/**
 * HAND, height above the nearest drainage: for each cell, its elevation minus
 * the elevation of the stream cell its D8 flow path first reaches (Rennó et
 * al. 2008, "HAND, a new terrain descriptor using SRTM-DEM", Remote Sensing
 * of Environment 112; Nobre et al. 2011, Journal of Hydrology 404).
 *
 * Flow paths come from the (filled) D8 directions; heights from the `z`
 * given: pass the filled DEM for the classic descriptor (never negative), or
 * the original DEM to keep real depressions, where HAND can be negative
 * (a cell below the stream cell it drains to). Cells that never reach a
 * stream, and NoData, get NaN and drain cell −1.
 */
import { DIR_NONE, neighbourOffsets } from './neighbours.js';

/** Result of {@link heightAboveDrainage}. */
export interface HandResult {
  /** Height above the drainage cell, metres; NaN when there is none. */
  readonly heightM: Float32Array;
  /** Flat index of the stream cell each cell drains to (itself on a stream), −1 when none. */
  readonly drainCell: Int32Array;
}

/** HAND from elevations `z` (metres), D8 `dir`, upstream-first `order` and the stream mask. */
export function heightAboveDrainage(
  z: Float32Array,
  dir: Uint8Array,
  order: Int32Array,
  stream: Uint8Array,
  width: number,
): HandResult {
  const n = dir.length;
  const off = neighbourOffsets(width);
  const drainCell = new Int32Array(n).fill(-1);
  const heightM = new Float32Array(n).fill(NaN);
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k] ?? 0;
    let drain = -1;
    if (stream[i] === 1) {
      drain = i;
    } else {
      const d = dir[i] ?? DIR_NONE;
      if (d < 8) drain = drainCell[i + (off[d] ?? 0)] ?? -1;
    }
    drainCell[i] = drain;
    if (drain >= 0) heightM[i] = (z[i] ?? NaN) - (z[drain] ?? NaN);
  }
  return { heightM, drainCell };
}
