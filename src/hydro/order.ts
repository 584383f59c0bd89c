/**
 * Cells in upstream-to-downstream order along D8 links: every cell comes
 * after all the cells that drain into it (a topological sort by donor
 * counts, as in Kahn's algorithm, emitting whole flow paths at a time). Walking the order forwards accumulates downstream;
 * walking it backwards passes values from the outlets upstream.
 */
import type { Grid } from '../grid/grid.js';
import { DIR_NONE, DIR_ROW, neighbourOffsets } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';

const EMITTED = 255;

/**
 * Valid cells (z not NaN) ordered so that each follows all its donors.
 * Throws if the directions contain a cycle (a bug, not an input problem).
 */
export function flowOrder(dir: Uint8Array, z: Float32Array, width: number): Int32Array {
  const n = dir.length;
  const off = neighbourOffsets(width);
  const donors = new Uint8Array(n);
  let valid = 0;
  for (let i = 0; i < n; i++) {
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) {
      const r = i + (off[d] ?? 0);
      donors[r] = (donors[r] ?? 0) + 1;
    }
    if (!Number.isNaN(z[i] ?? NaN)) valid++;
  }
  // Scan the grid; from every cell without donors walk downstream as long as
  // each next cell has had all its donors emitted. Walks follow flow paths,
  // so later passes over this order touch memory mostly nearby.
  const order = new Int32Array(valid);
  let tail = 0;
  for (let start = 0; start < n; start++) {
    if (donors[start] !== 0 || Number.isNaN(z[start] ?? NaN)) continue;
    let i = start;
    for (;;) {
      order[tail++] = i;
      const d = dir[i] ?? DIR_NONE;
      if (d >= 8) break;
      const r = i + (off[d] ?? 0);
      const left = (donors[r] ?? 1) - 1;
      if (left !== 0) {
        donors[r] = left;
        break;
      }
      donors[r] = EMITTED; // so the scan does not take it for a cell without donors
      i = r;
    }
  }
  if (tail !== valid) throw new Error(`flow directions contain a cycle: ordered ${tail} of ${valid} cells`);
  return order;
}

/** Result of {@link flowRouting}. */
export interface FlowRouting {
  /** Valid cells, upstream before downstream (as {@link flowOrder}). */
  readonly order: Int32Array;
  /** Contributing area per cell, m² (as accumulation.ts `flowAccumulationM2`). */
  readonly accumulationM2: Float64Array;
  /** 1 where the contributing area reaches the stream threshold (as streams.ts `streamMask`). */
  readonly stream: Uint8Array;
  /** The stream cells in flow order (upstream first). */
  readonly streamCells: Int32Array;
}

/**
 * Flow order, contributing area (m², each row's own cell area) and stream
 * cells (contributing area ≥ `streamThresholdM2`, m²) in one walk: a cell's
 * area is complete when the walk emits it, since all its donors came first.
 * The order and the sums are those of {@link flowOrder} followed by
 * `flowAccumulationM2` and `streamMask`, value for value (the additions
 * happen in the same sequence). Rasters come from `pool` when given.
 */
export function flowRouting(
  grid: Pick<Grid, 'width' | 'height' | 'cellAreaM2'>,
  dir: Uint8Array,
  z: Float32Array,
  streamThresholdM2: number,
  pool?: RasterPool,
): FlowRouting {
  if (!(streamThresholdM2 > 0)) throw new Error(`stream threshold must be a positive area in m²; got ${streamThresholdM2}`);
  const { width, height, cellAreaM2 } = grid;
  const n = dir.length;
  const off = neighbourOffsets(width);
  const donors = pool ? pool.uint8(n, true) : new Uint8Array(n);
  let valid = 0;
  for (let i = 0; i < n; i++) {
    const d = dir[i]!;
    if (d < 8) {
      const r = i + off[d]!;
      donors[r] = donors[r]! + 1;
    }
    if (z[i] === z[i]) valid++;
  }
  const order = pool ? pool.int32(valid, false) : new Int32Array(valid);
  const acc = pool ? pool.float64(n, true) : new Float64Array(n);
  const stream = pool ? pool.uint8(n, true) : new Uint8Array(n);
  let streamCells = new Int32Array(1024);
  let streamCount = 0;
  let tail = 0;
  for (let r = 0; r < height; r++) {
    const rowEnd = (r + 1) * width;
    for (let start = r * width; start < rowEnd; start++) {
      if (donors[start] !== 0 || z[start] !== z[start]) continue;
      let i = start;
      let row = r;
      for (;;) {
        order[tail++] = i;
        const a = acc[i]! + cellAreaM2[row]!;
        acc[i] = a;
        if (a >= streamThresholdM2) {
          stream[i] = 1;
          if (streamCount === streamCells.length) {
            const more = new Int32Array(2 * streamCount);
            more.set(streamCells);
            streamCells = more;
          }
          streamCells[streamCount++] = i;
        }
        const d = dir[i]!;
        if (d >= 8) break;
        const next = i + off[d]!;
        acc[next] = acc[next]! + a;
        const left = donors[next]! - 1;
        if (left !== 0) {
          donors[next] = left;
          break;
        }
        donors[next] = EMITTED;
        i = next;
        row += DIR_ROW[d]!;
      }
    }
  }
  if (tail !== valid) throw new Error(`flow directions contain a cycle: ordered ${tail} of ${valid} cells`);
  pool?.release(donors);
  return { order, accumulationM2: acc, stream, streamCells: streamCells.slice(0, streamCount) };
}
