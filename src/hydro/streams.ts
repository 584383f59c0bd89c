/**
 * Stream cells and stream links.
 *
 * A cell is a stream cell when its contributing area reaches a threshold.
 * Default 0.1 km² (100 000 m²): common practice for small headwater channels
 * on fine DEMs, where thresholds of roughly 0.01–1 km² are in use; the
 * value is from memory, not from one published calibration — set it to
 * match mapped channel heads where they are known.
 *
 * Links: the stream network split at junctions (a stream cell with two or
 * more stream cells draining into it). A link runs from a channel head or a
 * junction (the junction cell starts the downstream link) to the cell before
 * the next junction, or to the outlet. Contributing area never decreases
 * downstream, so the receiver of a stream cell is a stream cell.
 */
import { DIR_NONE, neighbourOffsets } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';

/** Default contributing-area threshold for a stream cell, m² (0.1 km², common practice, from memory). */
export const DEFAULT_STREAM_THRESHOLD_M2 = 100_000;

/** 1 where contributing area ≥ `thresholdM2` (m²), else 0. */
export function streamMask(accumulationM2: Float64Array, thresholdM2: number = DEFAULT_STREAM_THRESHOLD_M2): Uint8Array {
  if (!(thresholdM2 > 0)) throw new Error(`stream threshold must be a positive area in m²; got ${thresholdM2}`);
  const mask = new Uint8Array(accumulationM2.length);
  for (let i = 0; i < mask.length; i++) mask[i] = (accumulationM2[i] ?? 0) >= thresholdM2 ? 1 : 0;
  return mask;
}

/** The stream network as links (see file comment). Link ids run 1…count, upstream links before downstream ones. */
export interface StreamLinks {
  /** Per cell: link id, 0 off the network. */
  readonly link: Int32Array;
  /** Number of links. */
  readonly count: number;
  /** Per link id (index 0 unused): the link it flows into, 0 when it leaves the grid or ends in a pit. */
  readonly downstream: Int32Array;
  /** Per link id: flat index of its most upstream cell (channel head or junction). */
  readonly firstCell: Int32Array;
  /** Per link id: flat index of its most downstream cell. */
  readonly lastCell: Int32Array;
  /** Flat indices of junction cells. */
  readonly junctions: Int32Array;
}

/**
 * Splits the stream cells into links, using D8 `dir` and the upstream-first
 * `order` of {@link flowOrder}, or only the stream cells of that order
 * (order.ts `flowRouting` lists them): cells off the stream are skipped.
 * Rasters come from `pool` when given.
 */
export function streamLinks(dir: Uint8Array, order: Int32Array, stream: Uint8Array, width: number, pool?: RasterPool): StreamLinks {
  const n = dir.length;
  const off = neighbourOffsets(width);
  const streamDonors = pool ? pool.uint8(n, true) : new Uint8Array(n);
  for (let k = 0; k < order.length; k++) {
    const i = order[k]!;
    const d = dir[i] ?? DIR_NONE;
    if (stream[i] === 1 && d < 8) {
      const r = i + (off[d] ?? 0);
      streamDonors[r] = (streamDonors[r] ?? 0) + 1;
    }
  }
  const link = pool ? pool.int32(n, true) : new Int32Array(n);
  let count = 0;
  let junctionCount = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k] ?? 0;
    if (stream[i] !== 1) continue;
    if (link[i] === 0) {
      link[i] = ++count; // channel head or junction: a new link starts
      if ((streamDonors[i] ?? 0) > 1) junctionCount++;
    }
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) {
      const r = i + (off[d] ?? 0);
      if (streamDonors[r] === 1) link[r] = link[i] ?? 0;
    }
  }
  const downstream = new Int32Array(count + 1);
  const firstCell = new Int32Array(count + 1).fill(-1);
  const lastCell = new Int32Array(count + 1).fill(-1);
  const junctions = new Int32Array(junctionCount);
  let j = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k] ?? 0;
    const id = link[i] ?? 0;
    if (id === 0) continue;
    if (firstCell[id] === -1) {
      firstCell[id] = i;
      if ((streamDonors[i] ?? 0) > 1) junctions[j++] = i;
    }
    lastCell[id] = i; // the order is upstream first, so the last seen is the most downstream
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) {
      const down = link[i + (off[d] ?? 0)] ?? 0;
      if (down !== id) downstream[id] = down;
    }
  }
  pool?.release(streamDonors);
  return { link, count, downstream, firstCell, lastCell, junctions };
}
