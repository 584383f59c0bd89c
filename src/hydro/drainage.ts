/**
 * What each cell takes from the stream cell its D8 flow path first reaches,
 * in one pass up the flow order: HAND (hand.ts), the link watershed
 * (watersheds.ts `subWatersheds`: the link of that stream cell) and the
 * valley bottom (valley-bottom.ts: HAND against the threshold of that
 * stream cell's drainage area). The values are those of the three separate
 * functions, cell for cell; one pass reads the order and the directions
 * once instead of three times, and the valley-bottom threshold is computed
 * once per run of cells with the same stream cell rather than per cell.
 */
import type { HandResult } from './hand.js';
import { DIR_NONE, neighbourOffsets } from './neighbours.js';
import { VALLEY_BOTTOM_DEFAULTS, type ValleyBottomOptions } from './valley-bottom.js';

/** Result of {@link drainageRasters}. */
export interface DrainageRasters {
  /** Height above the stream cell reached, m, and that cell (hand.ts `heightAboveDrainage`). */
  readonly hand: HandResult;
  /** Per cell: the id of the link it drains into, 0 if none (watersheds.ts `subWatersheds`). */
  readonly watershed: Int32Array;
  /** 1 in the valley bottom (valley-bottom.ts `valleyBottom`). */
  readonly valleyBottom: Uint8Array;
}

/**
 * HAND from elevations `z` (metres), link watersheds from the links' per-cell
 * ids `link` (streams.ts), and the valley bottom from the contributing area
 * `accumulationM2` (m²) under the threshold rule `options`, with D8 `dir`,
 * the upstream-first `order` of order.ts and the stream mask.
 */
export function drainageRasters(
  z: Float32Array,
  dir: Uint8Array,
  order: Int32Array,
  stream: Uint8Array,
  link: Int32Array,
  accumulationM2: Float64Array,
  width: number,
  options: ValleyBottomOptions = {},
): DrainageRasters {
  const o = { ...VALLEY_BOTTOM_DEFAULTS, ...options };
  const n = dir.length;
  const off = neighbourOffsets(width);
  const drainCell = new Int32Array(n).fill(-1);
  const heightM = new Float32Array(n).fill(NaN);
  const watershed = new Int32Array(n);
  const valley = new Uint8Array(n);
  const scale = 1e-6;
  let limitCell = -1;
  let limit = 0;
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k]!;
    let drain = -1;
    if (stream[i] === 1) {
      drain = i;
    } else {
      const d = dir[i] ?? DIR_NONE;
      if (d < 8) drain = drainCell[i + off[d]!]!;
    }
    drainCell[i] = drain;
    if (drain < 0) continue;
    heightM[i] = z[i]! - z[drain]!;
    watershed[i] = link[drain]!;
    const h = heightM[i]!; // the stored Float32 value, as valleyBottom reads it
    if (!(h <= o.maxM)) continue;
    if (drain !== limitCell) {
      limitCell = drain;
      limit = Math.min(o.maxM, o.baseM + o.coefficientM * Math.pow(accumulationM2[drain]! * scale, o.exponent));
    }
    if (h <= limit) valley[i] = 1;
  }
  return { hand: { heightM, drainCell }, watershed, valleyBottom: valley };
}
