/**
 * What each cell takes from the stream cell its D8 flow path first reaches,
 * in one pass up the flow order: HAND (hand.ts), the link watershed
 * (watersheds.ts `subWatersheds`: the link of that stream cell) and the
 * valley bottom (valley-bottom.ts: HAND against the threshold of that
 * stream cell's drainage area). The values are those of the three separate
 * functions, cell for cell; one pass reads the order and the directions
 * once instead of three times, and the valley-bottom threshold is computed
 * once per run of cells with the same stream cell rather than per cell.
 * The HAND raster itself is built from the drainage cells when first read.
 */
import type { HandResult } from './hand.js';
import { DIR_NONE, neighbourOffsets } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';
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
 * the upstream-first `order` of order.ts, the stream mask and the stream
 * cells in that order (order.ts `flowRouting` lists them).
 *
 * Each stream cell's elevation, link and valley-bottom threshold are read
 * once into arrays of the stream cells' size, and the pass carries the
 * position of the stream cell reached rather than its flat index: the
 * values every cell needs then come from a few megabytes that stay in
 * cache instead of scattered reads across DEM-sized rasters. Rasters come
 * from `pool` when given.
 */
export function drainageRasters(
  z: Float32Array,
  dir: Uint8Array,
  order: Int32Array,
  stream: Uint8Array,
  streamCells: Int32Array,
  link: Int32Array,
  accumulationM2: Float64Array,
  width: number,
  options: ValleyBottomOptions = {},
  pool?: RasterPool,
): DrainageRasters {
  const o = { ...VALLEY_BOTTOM_DEFAULTS, ...options };
  const n = dir.length;
  const off = neighbourOffsets(width);
  const streams = streamCells.length;
  const streamZ = new Float32Array(streams);
  const streamLink = new Int32Array(streams);
  const streamLimitM = new Float64Array(streams);
  const scale = 1e-6;
  for (let s = 0; s < streams; s++) {
    const c = streamCells[s]!;
    streamZ[s] = z[c]!;
    streamLink[s] = link[c]!;
    streamLimitM[s] = Math.min(o.maxM, o.baseM + o.coefficientM * Math.pow(accumulationM2[c]! * scale, o.exponent));
  }
  // Per cell: position in `streamCells` of the stream cell it drains to, −1 when none.
  const reached = pool ? pool.int32(n, false) : new Int32Array(n);
  if (order.length < n) reached.fill(-1); // cells off the order (NoData) drain nowhere; the others are all written below
  const watershed = pool ? pool.int32(n, true) : new Int32Array(n);
  const valley = pool ? pool.uint8(n, true) : new Uint8Array(n);
  // Going back up the order, stream cells come in the reverse of their order in `streamCells`.
  let nextStream = streams;
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k]!;
    let s = -1;
    if (stream[i] === 1) {
      s = --nextStream;
      if (streamCells[s] !== i) throw new Error(`stream cell ${i} is not where the stream cell list has it (${streamCells[s]}); give the list of flowRouting`);
    } else {
      const d = dir[i] ?? DIR_NONE;
      if (d < 8) s = reached[i + off[d]!]!;
    }
    reached[i] = s;
    if (s < 0) continue;
    watershed[i] = streamLink[s]!;
    const h = Math.fround(z[i]! - streamZ[s]!); // HAND as its Float32 raster holds it
    if (h <= o.maxM && h <= streamLimitM[s]!) valley[i] = 1;
  }
  if (nextStream !== 0) throw new Error(`${nextStream} of ${streams} listed stream cells are not stream cells of the order`);
  let hand: HandResult | null = null;
  return {
    // The HAND rasters only when asked for (the run reads the valley bottom, not HAND itself).
    get hand(): HandResult {
      hand ??= handRasters(z, reached, streamCells);
      return hand;
    },
    watershed,
    valleyBottom: valley,
  };
}

/** HAND and drainage cells from each cell's stream-cell position (`reached`, −1 none). */
function handRasters(z: Float32Array, reached: Int32Array, streamCells: Int32Array): HandResult {
  const heightM = new Float32Array(reached.length);
  const drainCell = new Int32Array(reached.length);
  for (let i = 0; i < reached.length; i++) {
    const s = reached[i]!;
    const d = s >= 0 ? streamCells[s]! : -1;
    drainCell[i] = d;
    heightM[i] = d >= 0 ? z[i]! - z[d]! : NaN;
  }
  return { heightM, drainCell };
}
