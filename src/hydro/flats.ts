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
 */
import type { Grid } from '../grid/grid.js';
import { DIR_COL, DIR_FLAT as FLAT, DIR_NONE, DIR_ROW, neighbourDistancesM, neighbourOffsets } from './neighbours.js';

/**
 * Routes every `FLAT`-marked cell of `dir` (in place) and returns the number
 * of flat cells that could not drain (left `DIR_NONE`).
 */
export function resolveFlats(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  z: Float32Array,
  dir: Uint8Array,
  flatCount: number,
): number {
  const { width, height } = grid;
  const n = width * height;
  const off = neighbourOffsets(width);
  const flats = new Int32Array(flatCount);
  let k = 0;
  for (let i = 0; i < n; i++) if (dir[i] === FLAT) flats[k++] = i;

  // 1. Label each flat (connected cells of equal elevation); `queue` doubles as the flood stack.
  const label = new Int32Array(n);
  const queue = new Int32Array(flatCount);
  let labels = 0;
  for (let f = 0; f < flatCount; f++) {
    const start = flats[f] ?? 0;
    if (label[start] !== 0) continue;
    labels++;
    label[start] = labels;
    const zf = z[start] ?? 0;
    let top = 0;
    queue[top++] = start;
    while (top > 0) {
      const cell = queue[--top] ?? 0;
      const r = (cell / width) | 0;
      const c = cell - r * width;
      const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
      for (let d = 0; d < 8; d++) {
        if (!interior && !inside(r, c, d, width, height)) continue;
        const nb = cell + (off[d] ?? 0);
        if (label[nb] !== 0 || dir[nb] !== FLAT || z[nb] !== zf) continue;
        label[nb] = labels;
        queue[top++] = nb;
      }
    }
  }

  // 2. Steps from higher ground (breadth-first from flat cells next to a higher cell).
  const mask = new Int32Array(n);
  const maxHigh = new Int32Array(labels + 1);
  // Edge cells of each flat: next to higher ground (flag 1) and/or next to a cell that drains (flag 2).
  const edgeKind = new Uint8Array(flatCount);
  let tail = 0;
  for (let f = 0; f < flatCount; f++) {
    const cell = flats[f] ?? 0;
    const kind = flatEdgeKind(cell, z, dir, width, height, off);
    edgeKind[f] = kind;
    if ((kind & 1) !== 0) {
      mask[cell] = 1;
      queue[tail++] = cell;
    }
  }
  for (let head = 0; head < tail; head++) {
    const cell = queue[head] ?? 0;
    const lab = label[cell] ?? 0;
    const next = (mask[cell] ?? 0) + 1;
    if ((mask[cell] ?? 0) > (maxHigh[lab] ?? 0)) maxHigh[lab] = mask[cell] ?? 0;
    const r = (cell / width) | 0;
    const c = cell - r * width;
    const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
    for (let d = 0; d < 8; d++) {
      if (!interior && !inside(r, c, d, width, height)) continue;
      const nb = cell + (off[d] ?? 0);
      if (label[nb] !== lab || mask[nb] !== 0) continue;
      mask[nb] = next;
      queue[tail++] = nb;
    }
  }

  // 3. Steps towards lower ground, combined into the final surface; visited cells get a negated label.
  tail = 0;
  for (let f = 0; f < flatCount; f++) {
    const cell = flats[f] ?? 0;
    if (((edgeKind[f] ?? 0) & 2) !== 0) {
      mask[cell] = 2 + (maxHigh[label[cell] ?? 0] ?? 0) - (mask[cell] ?? 0);
      label[cell] = -(label[cell] ?? 0);
      queue[tail++] = cell;
    }
  }
  let head = 0;
  let step = 1;
  while (head < tail) {
    const layerEnd = tail;
    step++;
    for (; head < layerEnd; head++) {
      const cell = queue[head] ?? 0;
      const lab = -(label[cell] ?? 0);
      const r = (cell / width) | 0;
      const c = cell - r * width;
      const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
      for (let d = 0; d < 8; d++) {
        if (!interior && !inside(r, c, d, width, height)) continue;
        const nb = cell + (off[d] ?? 0);
        if (label[nb] !== lab) continue;
        mask[nb] = 2 * step + (maxHigh[lab] ?? 0) - (mask[nb] ?? 0);
        label[nb] = -lab;
        queue[tail++] = nb;
      }
    }
  }

  // 4. D8 on the surface: steepest descent to a flat neighbour with a lower value, or to a cell that drains (value 0).
  const dist = new Float64Array(8);
  let distRow = -1;
  let pits = 0;
  for (let f = 0; f < flatCount; f++) {
    const cell = flats[f] ?? 0;
    const lab = label[cell] ?? 0;
    if (lab > 0) {
      dir[cell] = DIR_NONE;
      pits++;
      continue;
    }
    const r = (cell / width) | 0;
    const c = cell - r * width;
    if (r !== distRow) {
      neighbourDistancesM(grid.cellWidthM, grid.cellHeightM, r, dist); // flats are in row order
      distRow = r;
    }
    const m = mask[cell] ?? 0;
    const zc = z[cell] ?? 0;
    let best = 0;
    let bestDir = DIR_NONE;
    const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
    for (let d = 0; d < 8; d++) {
      if (!interior && !inside(r, c, d, width, height)) continue;
      const nb = cell + (off[d] ?? 0);
      let value: number;
      if (label[nb] === lab) value = mask[nb] ?? 0;
      else if (label[nb] === 0 && z[nb] === zc && dir[nb] !== FLAT && dir[nb] !== DIR_NONE) value = 0;
      else continue;
      const slope = (m - value) / (dist[d] ?? 1);
      if (slope > best) {
        best = slope;
        bestDir = d;
      }
    }
    dir[cell] = bestDir;
    if (bestDir === DIR_NONE) pits++; // cannot happen by construction; counted, not hidden
  }
  return pits;
}

/** Whether neighbour `d` of (r, c) lies on the grid. */
function inside(r: number, c: number, d: number, width: number, height: number): boolean {
  const rr = r + (DIR_ROW[d] ?? 0);
  const cc = c + (DIR_COL[d] ?? 0);
  return rr >= 0 && cc >= 0 && rr < height && cc < width;
}

/** Bit 1: the flat cell has a higher valid neighbour; bit 2: an equal-elevation neighbour that already drains. */
function flatEdgeKind(
  cell: number,
  z: Float32Array,
  dir: Uint8Array,
  width: number,
  height: number,
  off: Int32Array,
): number {
  const r = (cell / width) | 0;
  const c = cell - r * width;
  const zc = z[cell] ?? 0;
  const interior = r > 0 && c > 0 && r < height - 1 && c < width - 1;
  let kind = 0;
  for (let d = 0; d < 8; d++) {
    if (!interior && !inside(r, c, d, width, height)) continue;
    const nb = cell + (off[d] ?? 0);
    const zn = z[nb] ?? NaN;
    if (zn > zc) kind |= 1;
    else if (zn === zc && dir[nb] !== FLAT && dir[nb] !== DIR_NONE) kind |= 2;
  }
  return kind;
}
