/**
 * Drainage across flats, after Barnes, Lehman & Mulla (2014), "An efficient
 * assignment of drainage direction over flat surfaces in raster digital
 * elevation models", Computers & Geosciences 62.
 *
 * Each flat (8-connected cells of one elevation with no lower neighbour) gets
 * an integer surface: 2 × (steps to the nearest cell that can drain, "towards
 * lower terrain") + (flat's largest steps from higher ground − steps from
 * higher ground, "away from higher terrain"). Neighbouring values differ by
 * the first term (2) more than the second can undo (1), so every flat cell
 * has a strictly lower neighbour on this surface and drains; flow leaves the
 * flat through its outlets and stays away from its higher rim, which keeps
 * channels in the middle of filled ponds and valley floors.
 *
 * A flat with no cell that can drain (a pit of an unfilled DEM) is left as
 * `DIR_NONE`.
 *
 * Layout: the flat cells are numbered 0…F−1 in row-major order (the paper's
 * flat mask and labels become arrays of F entries). One row-major pass over
 * the flat cells records, per cell, its eight neighbours as seen from the
 * flat: the number of a neighbour in the same flat, or whether it is a cell
 * at the same elevation that drains, or neither. The labelling, both
 * breadth-first searches and the final directions then read only these
 * compact arrays, which stay in cache where full-grid rasters do not.
 */
import type { Grid } from '../grid/grid.js';
import { DIR_COL, DIR_FLAT as FLAT, DIR_NONE, DIR_ROW, neighbourOffsets, neighbourDistancesM } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';

/** Neighbour slot: not in this flat and not a draining cell at the flat's elevation. */
const NO_LINK = -1;
/** Neighbour slot: a cell at the flat's elevation that already drains (a way out of the flat). */
const DRAIN = -2;

/**
 * Routes the flat cells `flats` (flat indices in row-major order, each
 * marked `DIR_FLAT` in `dir`) in place and returns the number of flat cells
 * that could not drain (left `DIR_NONE`). Scratch rasters come from and go
 * back to `pool` when given.
 */
export function resolveFlats(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  z: Float32Array,
  dir: Uint8Array,
  flats: Int32Array,
  pool?: RasterPool,
): number {
  const { width, height } = grid;
  const count = flats.length;
  const off = neighbourOffsets(width);
  // 1 + flat number of each flat cell; read only where `dir` marks a flat cell (elsewhere it holds anything).
  const number = pool ? pool.int32(width * height, false) : new Int32Array(width * height);
  for (let f = 0; f < count; f++) number[flats[f]!] = f + 1;

  // Neighbour links (flat number, DRAIN or NO_LINK) and edge kinds: bit 1,
  // next to higher ground; bit 2, next to a cell at this elevation that drains.
  const link = pool ? pool.int32(8 * count, false) : new Int32Array(8 * count);
  const edgeKind = new Uint8Array(count);
  for (let f = 0; f < count; f++) {
    const cell = flats[f]!;
    const zc = z[cell]!;
    const r = (cell / width) | 0;
    const c = cell - r * width;
    const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
    let kind = 0;
    for (let d = 0; d < 8; d++) {
      const slot = 8 * f + d;
      link[slot] = NO_LINK;
      if (!interior && !inside(r, c, d, width, height)) continue;
      const nb = cell + off[d]!;
      const zn = z[nb]!;
      const flat = dir[nb] === FLAT;
      if (flat && zn === zc) {
        link[slot] = number[nb]! - 1;
      } else if (zn > zc) {
        kind |= 1;
      } else if (zn === zc && !flat && dir[nb] !== DIR_NONE) {
        kind |= 2;
        link[slot] = DRAIN;
      }
    }
    edgeKind[f] = kind;
  }

  // 1. Label each flat (connected cells of equal elevation); `queue` doubles as the flood stack.
  const label = new Int32Array(count);
  const queue = new Int32Array(count);
  let labels = 0;
  for (let f = 0; f < count; f++) {
    if (label[f] !== 0) continue;
    labels++;
    label[f] = labels;
    let top = 0;
    queue[top++] = f;
    while (top > 0) {
      const g = queue[--top]!;
      for (let s = 8 * g; s < 8 * g + 8; s++) {
        const h = link[s]!;
        if (h < 0 || label[h] !== 0) continue;
        label[h] = labels;
        queue[top++] = h;
      }
    }
  }

  // 2. Steps from higher ground (breadth-first from flat cells next to a higher cell).
  const mask = new Int32Array(count);
  const maxHigh = new Int32Array(labels + 1);
  let tail = 0;
  for (let f = 0; f < count; f++) {
    if ((edgeKind[f]! & 1) !== 0) {
      mask[f] = 1;
      queue[tail++] = f;
    }
  }
  for (let head = 0; head < tail; head++) {
    const g = queue[head]!;
    const lab = label[g]!;
    const steps = mask[g]!;
    if (steps > maxHigh[lab]!) maxHigh[lab] = steps;
    for (let s = 8 * g; s < 8 * g + 8; s++) {
      const h = link[s]!;
      if (h < 0 || mask[h] !== 0) continue;
      mask[h] = steps + 1;
      queue[tail++] = h;
    }
  }

  // 3. Steps towards lower ground, combined into the final surface in `mask`.
  const reached = new Uint8Array(count);
  tail = 0;
  for (let f = 0; f < count; f++) {
    if ((edgeKind[f]! & 2) !== 0) {
      mask[f] = 2 + maxHigh[label[f]!]! - mask[f]!;
      reached[f] = 1;
      queue[tail++] = f;
    }
  }
  let head = 0;
  let step = 1;
  while (head < tail) {
    const layerEnd = tail;
    step++;
    for (; head < layerEnd; head++) {
      const g = queue[head]!;
      const top = maxHigh[label[g]!]!;
      for (let s = 8 * g; s < 8 * g + 8; s++) {
        const h = link[s]!;
        if (h < 0 || reached[h] !== 0) continue;
        mask[h] = 2 * step + top - mask[h]!;
        reached[h] = 1;
        queue[tail++] = h;
      }
    }
  }

  // 4. D8 on the surface: steepest descent to a flat neighbour with a lower value, or to a cell that drains (value 0).
  const dist = new Float64Array(8);
  let distRow = -1;
  let pits = 0;
  for (let f = 0; f < count; f++) {
    const cell = flats[f]!;
    if (reached[f] === 0) {
      dir[cell] = DIR_NONE;
      pits++;
      continue;
    }
    const r = (cell / width) | 0;
    if (r !== distRow) {
      neighbourDistancesM(grid.cellWidthM, grid.cellHeightM, r, dist); // flats are in row order
      distRow = r;
    }
    const m = mask[f]!;
    let best = 0;
    let bestDir = DIR_NONE;
    for (let d = 0; d < 8; d++) {
      const h = link[8 * f + d]!;
      if (h === NO_LINK) continue;
      const value = h === DRAIN ? 0 : mask[h]!;
      const slope = (m - value) / dist[d]!;
      if (slope > best) {
        best = slope;
        bestDir = d;
      }
    }
    dir[cell] = bestDir;
    if (bestDir === DIR_NONE) pits++; // cannot happen by construction; counted, not hidden
  }
  pool?.release(number, link);
  return pits;
}

/** Whether neighbour `d` of (r, c) lies on the grid. */
function inside(r: number, c: number, d: number, width: number, height: number): boolean {
  const rr = r + DIR_ROW[d]!;
  const cc = c + DIR_COL[d]!;
  return rr >= 0 && cc >= 0 && rr < height && cc < width;
}
