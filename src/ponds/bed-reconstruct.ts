/**
 * The pre-dam bed under a pond that already holds water, rebuilt from the dry
 * ground around it.
 *
 * - Along the pond: the channel's profile is a straight line from the bed at
 *   the dam (the dry channel just below it, or crest minus measured height)
 *   to the water level at the pond's upstream end, where the dry channel
 *   above the pond comes out of the water. Distance is measured from the
 *   crest through the water (8-neighbour steps of one cell or one diagonal),
 *   so a winding pond is measured along its length; the upstream end lies
 *   half a cell beyond the farthest water cell.
 * - Across the pond: each valley side keeps its slope under the water. The
 *   slope at a shore point is a least-squares fit, through the shoreline,
 *   of the rise of the dry cells within `sideProbeM` of the water over their
 *   distance from the shoreline (taken half a cell beyond the last water
 *   cell), over the shore cells within `sideProbeM` of that point; a water
 *   cell's side bed is the water level minus that slope times its distance
 *   from its nearest shore point.
 * - The bed of a water cell is the higher of the two (the side bed meets the
 *   channel profile at the valley floor), never above the water level.
 *
 * On a V-shaped valley (sides of constant slope, a straight floor) and on a
 * flat-floored valley between walls this gives the pre-dam ground back, up
 * to half-cell discretisation at the shore and the pond's end.
 */
import type { Grid } from '../grid/grid.js';
import { distanceTransform } from '../grid/distance.js';
import { MinHeap } from '../grid/priority-queue.js';

/** Parameters of the reconstruction. */
export interface ReconstructParams {
  /**
   * How far beyond the shore the valley sides are measured, m. 3 m: a
   * project choice, a few lidar cells of bank, short enough to stay on the
   * bank that goes under the water.
   */
  sideProbeM: number;
  /**
   * A bank whose fitted rise at the shoreline exceeds this, m, is a step (a
   * wall or cut bank) and keeps its steepness under the water. 0.25 m: a
   * project choice, above what lidar noise and half a cell of ground slope
   * put there on a plain bank.
   */
  bankStepM: number;
}

/** Documented defaults. */
export const DEFAULT_RECONSTRUCT_PARAMS: Readonly<ReconstructParams> = Object.freeze({ sideProbeM: 3, bankStepM: 0.25 });

/** The rebuilt bed under one water surface. */
export interface ReconstructedBed {
  /** Bed elevation of each water cell, in the order of the surface's cells, m. */
  bedM: Float32Array;
  /** Σ cell area × (water level − bed), m³. */
  volumeM3: number;
  /** Deepest water below the surface, m. */
  maxDepthM: number;
  /** Length of the pond from the crest to its upstream end along the water, m. */
  lengthM: number;
  /** Median side slope found at the shore (rise over run), or NaN when no dry shore was measured. */
  sideSlope: number;
}

/**
 * Rebuilds the bed under a water surface (see the file comment).
 *
 * @param grid the DEM window (elevations m; water cells may be flattened)
 * @param cells water cells (flat indices)
 * @param levelM water level, m
 * @param crestCells the dam's crest cells (flat indices): where distances along the pond start
 * @param bedAtDamM bed elevation at the dam, m
 * @param bedOverride optional per-grid-cell bed (a bed DEM on this grid, NaN where it has no data): used where finite
 * @param downstreamCells cells just below the crest (flat indices): never taken for a bank of the pond
 */
export function reconstructBed(
  grid: Grid,
  cells: Int32Array,
  levelM: number,
  crestCells: Int32Array,
  bedAtDamM: number,
  params: ReconstructParams = DEFAULT_RECONSTRUCT_PARAMS,
  bedOverride?: Float32Array | null,
  downstreamCells?: Int32Array,
): ReconstructedBed {
  const n = cells.length;
  const bedM = new Float32Array(n);
  if (n === 0) return { bedM, volumeM3: 0, maxDepthM: 0, lengthM: 0, sideSlope: NaN };
  const { width, height, z } = grid;

  // Local frame: the water and crest cells' box grown by the side probe.
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  for (let k = 0; k < n + crestCells.length; k++) {
    const i = k < n ? cells[k]! : crestCells[k - n]!;
    const col = i % width;
    const row = (i - col) / width;
    if (col < c0) c0 = col;
    if (col > c1) c1 = col;
    if (row < r0) r0 = row;
    if (row > r1) r1 = row;
  }
  const cellMinM = Math.min(grid.cellHeightM, grid.cellWidthM[Math.min(height - 1, Math.max(0, r0))]!);
  const margin = Math.ceil(params.sideProbeM / cellMinM) + 2;
  c0 = Math.max(0, c0 - margin);
  r0 = Math.max(0, r0 - margin);
  c1 = Math.min(width - 1, c1 + margin);
  r1 = Math.min(height - 1, r1 + margin);
  const lw = c1 - c0 + 1;
  const lh = r1 - r0 + 1;
  const ln = lw * lh;
  const WATER = 1;
  const CREST = 2;
  const kind = new Uint8Array(ln);
  for (let k = 0; k < n; k++) kind[localIndex(cells[k]!, width, c0, r0, lw)] = WATER;
  for (let k = 0; k < crestCells.length; k++) {
    const q = localIndex(crestCells[k]!, width, c0, r0, lw);
    if (kind[q] === 0) kind[q] = CREST;
  }
  const BELOW_DAM = 3;
  if (downstreamCells) {
    for (let k = 0; k < downstreamCells.length; k++) {
      const i: number = downstreamCells[k]!;
      const col: number = i % width;
      const row: number = (i - col) / width;
      if (col < c0 || col > c1 || row < r0 || row > r1) continue;
      const q = (row - r0) * lw + (col - c0);
      if (kind[q] === 0) kind[q] = BELOW_DAM;
    }
  }
  const localZ = new Float32Array(ln);
  for (let row = r0; row <= r1; row++) {
    for (let col = c0; col <= c1; col++) localZ[(row - r0) * lw + (col - c0)] = z[row * width + col]!;
  }
  const cellWidthM = grid.cellWidthM.slice(r0, r1 + 1);
  const geometry = { width: lw, height: lh, cellWidthM, cellHeightM: grid.cellHeightM };

  // Along the pond: distance from the crest through the water.
  const along = alongDistances(kind, lw, lh, cellWidthM, grid.cellHeightM, WATER, CREST);
  let maxAlong = 0;
  for (let q = 0; q < ln; q++) if (kind[q] === WATER && along[q]! < Infinity && along[q]! > maxAlong) maxAlong = along[q]!;
  const halfCellM = 0.5 * grid.cellHeightM;
  const lengthM = maxAlong + halfCellM;

  // Across the pond: dry shore cells, their distance out from the water, and the side slope near each.
  const waterSeeds = new Uint8Array(ln);
  const drySeeds = new Uint8Array(ln);
  for (let q = 0; q < ln; q++) {
    if (kind[q] === WATER) waterSeeds[q] = 1;
    else if (kind[q] === 0 && !Number.isNaN(localZ[q]!)) drySeeds[q] = 1;
  }
  const out = distanceTransform(geometry, waterSeeds);
  const probeM = Math.max(params.sideProbeM, 1.5 * cellMinM);
  // Rise and run of each dry cell within the probe: rise = z − level, run = distance out − half a cell.
  const rise = new Float64Array(ln).fill(NaN);
  const run = new Float64Array(ln);
  for (let q = 0; q < ln; q++) {
    if (drySeeds[q] !== 1) continue;
    const d = out.distanceM[q]!;
    if (!(d <= probeM)) continue;
    // A bank cell faces the water directly: not across the dam.
    if (crossesDam(q, out.nearest[q]!, kind, lw, CREST, BELOW_DAM)) continue;
    const row = Math.floor(q / lw);
    const half = 0.5 * Math.min(cellWidthM[row]!, grid.cellHeightM);
    rise[q] = localZ[q]! - levelM;
    run[q] = Math.max(d - half, half);
  }
  const slopeAt = new Float64Array(ln).fill(NaN);
  const reach = Math.ceil(probeM / cellMinM);
  const slopes: number[] = [];
  for (let q = 0; q < ln; q++) {
    // Slopes are needed at shore cells: dry cells next to the water.
    if (drySeeds[q] !== 1 || !(out.distanceM[q]! <= 1.5 * Math.max(grid.cellHeightM, cellWidthM[Math.floor(q / lw)]!))) continue;
    const qc = q % lw;
    const qr = (q - qc) / lw;
    let m = 0;
    let sg = 0;
    let sr = 0;
    let sgr = 0;
    let srr = 0;
    for (let rr = Math.max(0, qr - reach); rr <= Math.min(lh - 1, qr + reach); rr++) {
      for (let cc = Math.max(0, qc - reach); cc <= Math.min(lw - 1, qc + reach); cc++) {
        const p = rr * lw + cc;
        const g = rise[p]!;
        if (g !== g) continue;
        const h = run[p]!;
        m++;
        sg += g;
        sr += h;
        sgr += g * h;
        srr += h * h;
      }
    }
    // Regression of rise on run: the slope does not depend on where exactly between cells the shoreline lies.
    // A bank that steps up at the shore (a wall, a cut bank: the regression's rise at the shoreline is large)
    // keeps its steepness under water: then the steeper slope through the shoreline is taken.
    const varRun = m > 0 ? srr / m - (sr / m) ** 2 : 0;
    if (m >= 1 && srr > 0) {
      const through = sgr / srr;
      const regression = m >= 3 && varRun > 1e-12 ? (sgr / m - (sg / m) * (sr / m)) / varRun : through;
      const stepAtShoreM = sg / m - regression * (sr / m);
      const s = Math.max(0, stepAtShoreM > params.bankStepM ? Math.max(regression, through) : regression);
      slopeAt[q] = s;
      slopes.push(s);
    }
  }
  // Each water cell looks to its nearest shore cell that has a slope (never across the crest).
  const shoreSeeds = new Uint8Array(ln);
  for (let q = 0; q < ln; q++) if (slopeAt[q] === slopeAt[q]) shoreSeeds[q] = 1;
  const shore = distanceTransform(geometry, shoreSeeds);
  slopes.sort((a, b) => a - b);
  const sideSlope = slopes.length > 0 ? slopes[slopes.length >> 1]! : NaN;

  // The bed of each water cell.
  let volumeM3 = 0;
  let maxDepthM = 0;
  const rise0 = levelM - bedAtDamM;
  for (let k = 0; k < n; k++) {
    const i = cells[k]!;
    const q = localIndex(i, width, c0, r0, lw);
    const row = (i - (i % width)) / width;
    let bed: number;
    const given = bedOverride ? bedOverride[i]! : NaN;
    if (given === given) {
      bed = given;
    } else {
      const d = along[q]!;
      const profile = d < Infinity && lengthM > 0 ? bedAtDamM + (rise0 * d) / lengthM : bedAtDamM;
      const nearest = shore.nearest[q]!;
      const slope = nearest >= 0 ? slopeAt[nearest]! : NaN;
      const half = 0.5 * Math.min(grid.cellWidthM[row]!, grid.cellHeightM);
      const side = slope === slope ? levelM - slope * Math.max(0, shore.distanceM[q]! - half) : -Infinity;
      bed = Math.min(levelM, Math.max(profile, side));
    }
    bedM[k] = bed;
    const depth = levelM - bed;
    if (depth > 0) {
      volumeM3 += grid.cellAreaM2[row]! * depth;
      if (depth > maxDepthM) maxDepthM = depth;
    }
  }
  return { bedM, volumeM3, maxDepthM, lengthM, sideSlope };
}

/** True when the straight line from local cell a to local cell b passes over a crest or below-dam cell. */
function crossesDam(a: number, b: number, kind: Uint8Array, lw: number, CREST: number, BELOW_DAM: number): boolean {
  if (b < 0) return true;
  const ac = a % lw;
  const ar = (a - ac) / lw;
  const bc = b % lw;
  const br = (b - bc) / lw;
  const steps = Math.max(Math.abs(bc - ac), Math.abs(br - ar));
  for (let t = 1; t < steps; t++) {
    const c = Math.round(ac + ((bc - ac) * t) / steps);
    const r = Math.round(ar + ((br - ar) * t) / steps);
    const k = kind[r * lw + c];
    if (k === CREST || k === BELOW_DAM) return true;
  }
  return false;
}

/** Index in the local frame of grid cell i. */
function localIndex(i: number, width: number, c0: number, r0: number, lw: number): number {
  const col = i % width;
  const row = (i - col) / width;
  return (row - r0) * lw + (col - c0);
}

/**
 * Shortest 8-neighbour path length (m) from the crest to each water cell,
 * through water cells; Infinity where no path exists. With no water cell
 * next to the crest, distances start from the water cell nearest the crest.
 */
function alongDistances(
  kind: Uint8Array,
  lw: number,
  lh: number,
  cellWidthM: Float64Array,
  cellHeightM: number,
  WATER: number,
  CREST: number,
): Float64Array {
  const ln = lw * lh;
  const dist = new Float64Array(ln).fill(Infinity);
  const heap = new MinHeap(1024);
  for (let q = 0; q < ln; q++) {
    if (kind[q] !== CREST) continue;
    relax(q, 0, kind, lw, lh, cellWidthM, cellHeightM, WATER, dist, heap);
  }
  if (heap.size === 0) {
    // No water next to the crest: start from the water cell nearest to any crest cell.
    let best = -1;
    let bestD = Infinity;
    const crest: number[] = [];
    for (let q = 0; q < ln; q++) if (kind[q] === CREST) crest.push(q);
    for (let q = 0; q < ln && crest.length > 0; q++) {
      if (kind[q] !== WATER) continue;
      const qc = q % lw;
      const qr = (q - qc) / lw;
      for (const c of crest) {
        const cc = c % lw;
        const cr = (c - cc) / lw;
        const d = Math.hypot((qc - cc) * cellWidthM[qr]!, (qr - cr) * cellHeightM);
        if (d < bestD) {
          bestD = d;
          best = q;
        }
      }
    }
    if (best < 0) return dist;
    dist[best] = bestD;
    heap.push(best, bestD);
  }
  while (heap.size > 0) {
    const q = heap.pop();
    const d = heap.lastPriority;
    if (d > dist[q]!) continue;
    if (kind[q] === CREST || kind[q] === WATER) relax(q, d, kind, lw, lh, cellWidthM, cellHeightM, WATER, dist, heap);
  }
  return dist;
}

/** Offers each water neighbour of local cell q the path length d plus one step. */
function relax(
  q: number,
  d: number,
  kind: Uint8Array,
  lw: number,
  lh: number,
  cellWidthM: Float64Array,
  cellHeightM: number,
  WATER: number,
  dist: Float64Array,
  heap: MinHeap,
): void {
  const qc = q % lw;
  const qr = (q - qc) / lw;
  const w = cellWidthM[qr]!;
  for (let dr = -1; dr <= 1; dr++) {
    const rr = qr + dr;
    if (rr < 0 || rr >= lh) continue;
    for (let dc = -1; dc <= 1; dc++) {
      const cc = qc + dc;
      if ((dc === 0 && dr === 0) || cc < 0 || cc >= lw) continue;
      const p = rr * lw + cc;
      if (kind[p] !== WATER) continue;
      const nd = d + (dc === 0 ? cellHeightM : dr === 0 ? w : Math.hypot(w, cellHeightM));
      if (nd < dist[p]!) {
        dist[p] = nd;
        heap.push(p, nd);
      }
    }
  }
}
