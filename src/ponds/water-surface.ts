/**
 * Finding a pond's water surface in the DEM.
 *
 * Lidar does not see through water: where a pond already holds water the DEM
 * shows a near-flat surface at the water level, with the DEM's random error
 * on it (hydro-flattened DEMs are exactly flat; most beaver ponds are below
 * the size that requires flattening, so their surface carries the noise).
 *
 * Rule (checked in tests/water-detect.test.ts):
 * 1. Smoothing: a cell's smoothed elevation is the mean of the valid DEM
 *    cells in the (2r + 1)² window around it (r = `smoothRadiusCells`),
 *    leaving out the dam's crest and the cells just downstream of it (so the
 *    ground below the dam never pulls the water down). Independent errors of
 *    RMSE σ average to σ/(2r + 1).
 * 2. Level: a priority-flood on the smoothed surface from the cells just
 *    upstream of the crest visits cells by their join level, up to
 *    `outlierK`·σ above the first (and no more than tol above the crest,
 *    unless the first is); the water level W₁ is the lowest peak of their
 *    smoothed elevations that holds at least a twentieth of the largest (a
 *    water surface is one sharp peak at the bottom; banks and a floodplain
 *    above the water make others, higher up).
 * 3. Noise: the flat's own noise is measured on those cells (1.4826 × the
 *    median absolute deviation of their elevations from W₁), never taken
 *    above the stated σ (`rmseZM`); the window shrinks to what that noise
 *    needs (none on an exactly flat, hydro-flattened surface), and the
 *    tolerance is tol = k·σ/(2r + 1) (k = `toleranceK`), never below 5 mm:
 *    with QL2 noise (σ = 0.10 m, r = 2, k = 1.5) tol = 0.03 m.
 * 4. Extent: water cells are the cells 8-connected to the level's cells
 *    whose own elevation is at most W₁ + `outlierK`·σ, at least half of whose
 *    window is too, and whose smoothed elevation, leaving out window cells
 *    above W₁ + `outlierK`·σ (banks and walls are surely dry and must not
 *    pull the shore's water up), is at most W₁ + tol. Cells within 2·tol
 *    connect water cells across a noisy neck but are not counted. Holes in
 *    the surface no higher than W₁ + `outlierK`·σ are water (noise), higher
 *    ones are islands. The water level is the median elevation of the water
 *    cells.
 * 4b. Interpolated water: when the surface is locally smooth (the median
 *    3 × 3 elevation range of its cells under 2 cm: a TIN across a lidar
 *    water void, or a hydro-flattened surface) but not level (its 5–95 %
 *    elevation spread over 2·tol: a TIN sags between shore points), it is
 *    grown through the connected smooth cells up to 0.15 m above W₁, its
 *    level is the 95th percentile of its elevations (where it meets the
 *    banks), and the cells around it up to its 99th percentile are added
 *    (their windows reach onto the bank, so they are not smooth).
 * 5. Acceptance: the surface is kept when its area is at least `minAreaM2`
 *    (and, unless smooth, it has at least `minNoisyCells` cells);
 *    it stands at least `minDepthM` above the bed at the dam (the channel of
 *    a dry valley is its own lowest level; water backed up by a dam stands
 *    above the bed); its lower tail (level minus 5th percentile) is no more
 *    than 2.5σ + tol, its median elevation no more than tol below W₁, and
 *    at most 0.5 % of its cells (5 at least) have a smoothed elevation 4
 *    smoothed-noise σ below it (on water only noise
 *    lies below the level; a dry floodplain's flat has its channel below:
 *    both tests are skipped for interpolated water, whose sags are no
 *    ground); and a plane fitted to it has a relief across the surface of at
 *    most tol plus three times what noise alone gives such a fit, or 0.15 m
 *    for interpolated water (a level surface, not a sloping valley floor).
 *
 * Shore: on banks gentler than about 1:20 (in cells of the DEM) a cell ring
 * of dry ground within the tolerance of the level is taken for water; on
 * banks steeper than about 1:5 part of the water's outer ring is lost; ponds
 * narrower than the window (about 5 cells) are found in part.
 *
 * Or, with a water mask (`--water-mask`), the surface is the 8-connected
 * mask cells reached from the cells just upstream of the crest (looking up to
 * `maskSearchCells` cells away for the first mask cell), and the level is the
 * median DEM elevation over them.
 */
import type { Grid } from '../grid/grid.js';
import { MinHeap } from '../grid/priority-queue.js';

/** Parameters of water-surface detection. */
export interface WaterParams {
  /**
   * Vertical RMSE of the DEM's random error, m. 0.10 m: the RMSEz of USGS
   * 3DEP quality level 2 lidar (USGS Lidar Base Specification, Techniques and
   * Methods 11-B4: QL2 ≤ 10 cm RMSEz in non-vegetated terrain).
   */
  rmseZM: number;
  /** Half-width of the smoothing window, cells (2: a 5 × 5 window). A project choice. */
  smoothRadiusCells: number;
  /**
   * Tolerance in standard errors of the smoothed elevation. 1.5: a project
   * choice, tuned on the synthetic ponds of tests/water-detect.test.ts so
   * that the dry ring taken on gentle banks and the water ring lost on steep
   * ones about balance; the 7 % of water cells it leaves out by noise alone
   * are holes in the surface, and holes are filled.
   */
  toleranceK: number;
  /** Cells above the level by more than this many σ are dry ground (3σ: a water cell is that high by noise 0.13 % of the time). */
  outlierK: number;
  /** Smallest water surface kept, m². 25 m²: a project choice, about a 5 m × 5 m pond; smaller flats are left to the noise. */
  minAreaM2: number;
  /**
   * Fewest cells of a surface that carries the DEM's noise (not smooth). 150:
   * a project choice; on a seeded 5000 × 5000 dry bench landscape with 500
   * dams and 0.10 m noise, flats of 40–130 cells passed every other test,
   * none larger. Smaller noisy ponds need a water mask.
   */
  minNoisyCells: number;
  /**
   * Smallest depth of water at the dam (water level minus the bed at the
   * dam), m, for a flat to count as a pond's surface. 0.3 m: three times
   * QL2's RMSEz; a dry channel's own lowest stretch stands within a few
   * noise widths of the bed.
   */
  minDepthM: number;
  /** Largest plane relief across the surface, in tolerances (beyond what noise explains). */
  maxReliefTol: number;
  /** With a water mask: how far (cells) from the cells upstream of the crest the first mask cell may lie. */
  maskSearchCells: number;
}

/** Documented defaults (see each field). Treat as read-only; copy to change. */
export const DEFAULT_WATER_PARAMS: Readonly<WaterParams> = Object.freeze({
  rmseZM: 0.1,
  smoothRadiusCells: 2,
  toleranceK: 1.5,
  outlierK: 3,
  minAreaM2: 25,
  minNoisyCells: 150,
  minDepthM: 0.3,
  maxReliefTol: 1,
  maskSearchCells: 5,
});

/**
 * Largest lower tail (level minus the 5th percentile of the surface's
 * elevations) a water surface may show, in σ, before tolerance: 1.645σ is
 * the normal distribution's (5th percentile); 2.5σ leaves room for a
 * sample's spread and for shore cells. A dry channel's flat shows its bed
 * well below its median and fails this.
 */
const LOW_TAIL_Z = 2.5;

/** Smoothed elevations this many smoothed-noise σ below the level are dips (ground below the water). */
const DIP_Z = 4;
/** A surface may hold this many dip cells, or this share of its cells, before it counts as a dry flat with a channel in it. */
const MAX_DIP_CELLS = 5;
const MAX_DIP_SHARE = 0.005;

/**
 * A surface whose cells' 3 × 3 elevation range has a median below this, m,
 * is an interpolated one (flat water in a lidar DEM: TIN-filled or
 * hydro-flattened). 2 cm: a project choice, below the range lidar noise or
 * ground texture leave on nine cells (QL2 noise alone gives about 0.3 m).
 */
const SMOOTH_WATER_M = 0.02;
/** An interpolated surface's level: this quantile of its elevations (the interpolation runs between shore points at the water's level and sags between them). */
const SMOOTH_LEVEL_QUANTILE = 0.95;

/** The shore ring of an interpolated surface takes the cells no higher than this quantile of its elevations (its top, short of outliers). */
const SHORE_QUANTILE = 0.99;

/** Range of the valid, non-blocked elevations in the 3 × 3 window of cell i, m. */
function localRangeM(z: Float32Array, mark: Uint8Array, width: number, height: number, i: number): number {
  const col = i % width;
  const row = (i - col) / width;
  let lo = Infinity;
  let hi = -Infinity;
  for (let rr = Math.max(0, row - 1); rr <= Math.min(height - 1, row + 1); rr++) {
    for (let cc = Math.max(0, col - 1); cc <= Math.min(width - 1, col + 1); cc++) {
      const j = rr * width + cc;
      if ((mark[j]! & BLOCKED) !== 0) continue;
      const v = z[j]!;
      if (v !== v) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return hi - lo;
}

/** Grows the region (first `count` cells) through 8-connected smooth cells no higher than `topM`; returns the new count. */
function growSmooth(s: WaterScratch, count: number, grid: Grid, b: WaterBox, topM: number): number {
  const { width, height, z } = grid;
  const mark = s.mark;
  let top = 0;
  for (let k = 0; k < count; k++) {
    const i = s.cells[k]!;
    touch(s, i, IN_REGION);
    if (top === s.stack.length) growStack(s);
    s.stack[top++] = i;
  }
  while (top > 0) {
    const i = s.stack[--top]!;
    const col = i % width;
    const row = (i - col) / width;
    for (let dr = -1; dr <= 1; dr++) {
      const rr = row + dr;
      if (rr < b.row0 || rr >= b.row1) continue;
      for (let dc = -1; dc <= 1; dc++) {
        const cc = col + dc;
        if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
        const j = rr * width + cc;
        if ((mark[j]! & (BLOCKED | IN_REGION)) !== 0) continue;
        const v = z[j]!;
        if (!(v <= topM) || localRangeM(z, mark, width, height, j) >= SMOOTH_WATER_M) continue;
        touch(s, j, IN_REGION);
        if (count === s.cells.length) growLists(s);
        s.cells[count++] = j;
        if (top === s.stack.length) growStack(s);
        s.stack[top++] = j;
      }
    }
  }
  return count;
}

/** Adds the neighbours of the region no higher than `limitM` (the shore ring, whose windows reach onto the bank); returns the new count. */
function addShore(s: WaterScratch, count: number, grid: Grid, b: WaterBox, limitM: number): number {
  const { width, z } = grid;
  const mark = s.mark;
  for (let k = 0; k < count; k++) touch(s, s.cells[k]!, IN_REGION);
  const n = count;
  for (let k = 0; k < n; k++) {
    const i = s.cells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    for (let dr = -1; dr <= 1; dr++) {
      const rr = row + dr;
      if (rr < b.row0 || rr >= b.row1) continue;
      for (let dc = -1; dc <= 1; dc++) {
        const cc = col + dc;
        if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
        const j = rr * width + cc;
        if ((mark[j]! & (BLOCKED | IN_REGION)) !== 0 || !(z[j]! <= limitM)) continue;
        touch(s, j, IN_REGION);
        if (count === s.cells.length) growLists(s);
        s.cells[count++] = j;
      }
    }
  }
  return count;
}

/** The q-quantile of the first n values (reorders them). */
function quantile(values: Float64Array, n: number, q: number): number {
  if (n === 0) return NaN;
  const v = values.subarray(0, n).sort();
  return v[Math.min(n - 1, Math.floor(q * (n - 1)))]!;
}

/** Largest relief of a plane fitted to an interpolated surface, m: TIN sags of a few centimetres to a decimetre are allowed (a project choice). */
const SMOOTH_RELIEF_M = 0.15;

/** Median over `cells` of the range of valid, non-blocked elevations in each cell's 3 × 3 window, m (uses `buf` as scratch). */
function medianLocalRangeM(z: Float32Array, mark: Uint8Array, width: number, height: number, cells: Int32Array, buf: Float64Array): number {
  const n = Math.min(cells.length, buf.length);
  for (let k = 0; k < n; k++) {
    buf[k] = localRangeM(z, mark, width, height, cells[k]!);
  }
  return n > 0 ? median(buf, n) : Infinity;
}

/** A peak of the level histogram counts when it holds this share of the largest one. */
const PEAK_SHARE = 0.05;

/** Median absolute deviation to standard deviation for normal errors (1/Φ⁻¹(3/4)). */
const MAD_TO_SIGMA = 1.4826;

/** Smallest noise assumed, m: below this a surface counts as exactly flat. */
const MIN_SIGMA_M = 0.002;

/** Smallest tolerance, m (hydro-flattened or noise-free DEMs still round their water to the millimetre). */
const MIN_TOLERANCE_M = 0.005;

/** Connectors (cells the extent is traced through but that do not count as water) lie within this many smoothed-noise σ of the level. */
const CONNECT_K = 3;

/** Standard error of a smoothed elevation, m: σ/(2r + 1). */
function smoothedNoiseM(params: WaterParams): number {
  return params.rmseZM / (2 * params.smoothRadiusCells + 1);
}

/** Tolerance of step 2 of the rule, metres. */
export function waterToleranceM(params: WaterParams): number {
  return Math.max(MIN_TOLERANCE_M, (params.toleranceK * params.rmseZM) / (2 * params.smoothRadiusCells + 1));
}

/** Where a water surface came from. */
export type WaterSource = 'detected' | 'mask';

/** A pond's water surface today. */
export interface WaterSurface {
  /** Water level, m. */
  levelM: number;
  /** Flat indices of the water cells (grid of the call). */
  cells: Int32Array;
  /** Σ cell area, m². */
  areaM2: number;
  source: WaterSource;
  /** True when the surface reaches the edge of the search box (it may go on beyond it). */
  reachesEdge: boolean;
  /** Relief of a plane fitted to the surface's elevations, m. */
  reliefM: number;
  /**
   * Cells the surface was traced through but that are not counted as water
   * (within 2·tol of the level: a noisy neck, or the bank's first ring).
   * Setting them to the level keeps the water connected for a fill.
   */
  connectors?: Int32Array;
  /** True for an interpolated (TIN or hydro-flattened) surface found by rule 4b: smooth, possibly sagging. */
  interpolated?: boolean;
}

/** Why no surface was kept. */
export type NoWaterReason = 'no-start' | 'too-small' | 'too-shallow' | 'dips-below' | 'tilted' | 'no-mask';

/** The outcome of a detection: a surface, or why there is none (with the figures that decided it). */
export type WaterOutcome =
  | { surface: WaterSurface }
  | { surface: null; reason: NoWaterReason; areaM2: number; levelM: number; reliefM: number };

/** What the detector needs about one dam (a CrestSetup has these). */
export interface WaterDam {
  /** Cells just upstream of the bed cell, flat indices. */
  seedCells: Int32Array;
  /** Crest cells: walls, and left out of every smoothing window. */
  crestCells: Int32Array;
  /** Cells just downstream of the crest: left out like the crest. */
  downstreamCells: Int32Array;
  /** Bed elevation at the dam, m. */
  bedElevM: number;
  /** Crest elevation, m: the level search stops a little above it (water higher up has gone round the dam). */
  crestElevM: number;
}

/** Cells [col0, col1) × [row0, row1) the search may enter. */
export interface WaterBox {
  col0: number;
  row0: number;
  col1: number;
  row1: number;
}

const BLOCKED = 1;
const SEEN1 = 2;
const SEEN2 = 4;
const IN_REGION = 8;

/** Reusable buffers: one byte a cell, cleared after each dam through the list of touched cells. */
export interface WaterScratch {
  readonly cellCount: number;
  readonly mark: Uint8Array;
  readonly heap: MinHeap;
  touched: Int32Array;
  touchedCount: number;
  stack: Int32Array;
  cells: Int32Array;
  values: Float64Array;
}

/** Scratch for grids of up to `cellCount` cells. */
export function createWaterScratch(cellCount: number): WaterScratch {
  return {
    cellCount,
    mark: new Uint8Array(cellCount),
    heap: new MinHeap(1024),
    touched: new Int32Array(4096),
    touchedCount: 0,
    stack: new Int32Array(4096),
    cells: new Int32Array(4096),
    values: new Float64Array(4096),
  };
}

/** Detects the water surface behind one dam (see the file comment). */
export function detectWaterSurface(
  grid: Grid,
  dam: WaterDam,
  params: WaterParams,
  box?: WaterBox,
  scratch?: WaterScratch,
): WaterOutcome {
  const { width, height, z } = grid;
  const s = scratch !== undefined && scratch.cellCount >= width * height ? scratch : createWaterScratch(width * height);
  const b = clampBox(box, width, height);
  const tol = waterToleranceM(params);
  const r = params.smoothRadiusCells;
  const mark = s.mark;
  try {
    block(s, dam);

    // Step 3: the pond's lowest level, by a priority-flood on the smoothed surface.
    const heap = s.heap;
    heap.clear();
    for (let k = 0; k < dam.seedCells.length; k++) {
      const i = dam.seedCells[k]!;
      if (!inBox(i, width, b) || mark[i]! !== 0 || Number.isNaN(z[i]!)) continue;
      const zs = windowMean(z, mark, width, height, i, r, Infinity);
      if (Number.isNaN(zs)) continue;
      touch(s, i, SEEN1);
      heap.push(i, zs);
    }
    if (heap.size === 0) return { surface: null, reason: 'no-start', areaM2: 0, levelM: NaN, reliefM: NaN };
    let n1 = 0;
    let first = NaN;
    let passTopM = Infinity;
    let level = -Infinity;
    while (heap.size > 0) {
      const i = heap.pop();
      const zs = heap.lastPriority;
      if (zs > level) level = zs;
      if (Number.isNaN(first)) {
        first = level;
        // Up to outlierK·σ above the first cell, but not far over the crest: beyond it water has gone round the dam.
        passTopM = Math.max(first + 2 * tol, Math.min(first + params.outlierK * params.rmseZM, dam.crestElevM + tol));
      }
      if (level > passTopM) break;
      if (n1 === s.cells.length) growLists(s);
      s.cells[n1] = i;
      s.values[n1] = windowMean(z, mark, width, height, i, r, Infinity);
      n1++;
      const col = i % width;
      const row = (i - col) / width;
      for (let dr = -1; dr <= 1; dr++) {
        const rr = row + dr;
        if (rr < b.row0 || rr >= b.row1) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const cc = col + dc;
          if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
          const j = rr * width + cc;
          if (mark[j]! !== 0 || Number.isNaN(z[j]!)) continue;
          const zj = windowMean(z, mark, width, height, j, r, Infinity);
          touch(s, j, SEEN1);
          heap.push(j, zj > level ? zj : level);
        }
      }
    }
    const w1 = lowestPeak(s.values, n1, smoothedNoiseM(params), Math.max(9, params.minAreaM2 / grid.cellAreaM2[Math.min(height - 1, Math.max(0, b.row0))]!));

    // The noise the flat itself shows (never more than the DEM's stated RMSE): cells near the level, raw elevations.
    let nNear = 0;
    const nearM = 2 * smoothedNoiseM(params);
    for (let k = 0; k < n1; k++) {
      const i = s.cells[k]!;
      if (Math.abs(windowMean(z, mark, width, height, i, r, Infinity) - w1) > nearM) continue;
      s.values[nNear++] = Math.abs(z[i]! - w1);
    }
    const sigmaM = Math.max(MIN_SIGMA_M, Math.min(params.rmseZM, nNear >= 9 ? MAD_TO_SIGMA * median(s.values, nNear) : params.rmseZM));
    // Smooth only as much as that noise needs to reach the precision the stated RMSE would get with the full window.
    const rEff = Math.max(0, Math.min(r, Math.ceil((sigmaM / smoothedNoiseM(params) - 1) / 2 - 1e-9)));
    const noiseS = sigmaM / (2 * rEff + 1);
    const tolEff = Math.max(MIN_TOLERANCE_M, params.toleranceK * noiseS);

    // Step 4: the extent at that level.
    const capM = w1 + params.outlierK * sigmaM;
    const limitM = w1 + tolEff;
    const connectM = w1 + Math.max(2 * tolEff, CONNECT_K * noiseS);
    // Water cells go on the stack as their index, connectors as ~index (reached through, not counted).
    let top = 0;
    for (let k = 0; k < n1; k++) {
      const i = s.cells[k]!;
      mark[i] = mark[i]! | SEEN2;
      const a = accept(z, mark, width, height, i, rEff, capM, limitM, connectM);
      if (a === 0) continue;
      if (top === s.stack.length) growStack(s);
      s.stack[top++] = a === 2 ? i : ~i;
    }
    let count = 0;
    const connectors: number[] = [];
    while (top > 0) {
      let i = s.stack[--top]!;
      if (i >= 0) {
        if (count === s.cells.length) growLists(s);
        s.cells[count++] = i;
      } else {
        i = ~i;
        connectors.push(i);
      }
      const col = i % width;
      const row = (i - col) / width;
      for (let dr = -1; dr <= 1; dr++) {
        const rr = row + dr;
        if (rr < b.row0 || rr >= b.row1) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const cc = col + dc;
          if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
          const j = rr * width + cc;
          const m = mark[j]!;
          if ((m & (BLOCKED | SEEN2)) !== 0) continue;
          if (m === 0) touch(s, j, SEEN2);
          else mark[j] = m | SEEN2;
          const a = accept(z, mark, width, height, j, rEff, capM, limitM, connectM);
          if (a === 0) continue;
          if (top === s.stack.length) growStack(s);
          s.stack[top++] = a === 2 ? j : ~j;
        }
      }
    }
    count = fillHoles(s, count, grid, capM);
    // An interpolated surface (TIN across a lidar water void, or hydro-flattened) is locally smooth. A flattened
    // one is level and already found; a TIN one need not be level: it is all the smooth cells connected to the
    // water found, its level where it meets the banks.
    const smooth = medianLocalRangeM(z, mark, width, height, s.cells.subarray(0, count), s.values) < SMOOTH_WATER_M;
    for (let k = 0; k < count; k++) s.values[k] = z[s.cells[k]!]!;
    const spreadM = count > 0 ? quantile(s.values, count, 0.95) - s.values[Math.floor(0.05 * (count - 1))]! : 0;
    const interpolated = smooth && spreadM > 2 * tolEff;
    let smoothLevelM = NaN;
    if (interpolated) {
      count = growSmooth(s, count, grid, b, w1 + SMOOTH_RELIEF_M);
      for (let k = 0; k < count; k++) s.values[k] = z[s.cells[k]!]!;
      smoothLevelM = quantile(s.values, count, SMOOTH_LEVEL_QUANTILE);
      count = addShore(s, count, grid, b, quantile(s.values, count, SHORE_QUANTILE));
      count = fillHoles(s, count, grid, smoothLevelM + params.outlierK * sigmaM);
    }
    const { areaM2, reachesEdge, fit } = measure(grid, s.cells, count, b);
    const cells = s.cells.slice(0, count);
    for (let k = 0; k < count; k++) s.values[k] = z[cells[k]!]!;
    const medianM = count > 0 ? median(s.values, count) : w1;
    const levelM = interpolated ? smoothLevelM : medianM;
    // The lower tail: on water only noise lies below the level (median − 5th percentile = 1.645σ for normal errors).
    const lowTailM = count > 0 ? medianM - s.values[Math.floor(0.05 * (count - 1))]! : 0;
    // Cells whose smoothed elevation lies clearly below the level: on water, noise alone almost never puts one there
    // (P(z < −4σ) ≈ 3·10⁻⁵); a channel or hollow inside a dry flat does, as a line or patch of them.
    const dipM = medianM - DIP_Z * noiseS;
    let dips = 0;
    for (let k = 0; k < count; k++) if (windowMean(z, mark, width, height, cells[k]!, rEff, capM) < dipM) dips++;
    const reliefM = fit.reliefM();
    // Step 5: acceptance.
    const noiseReliefM = count > 2 ? 3 * Math.sqrt(24 / count) * sigmaM : Infinity;
    const maxReliefM = Math.max(params.maxReliefTol * tolEff + noiseReliefM, smooth ? SMOOTH_RELIEF_M : 0);
    let reason: NoWaterReason | null = null;
    if (count === 0 || areaM2 < params.minAreaM2 || (!smooth && count < params.minNoisyCells)) reason = 'too-small';
    else if (levelM - dam.bedElevM < params.minDepthM) reason = 'too-shallow';
    else if (!smooth && (lowTailM > LOW_TAIL_Z * sigmaM + tolEff || dips > Math.max(MAX_DIP_CELLS, MAX_DIP_SHARE * count) || w1 - medianM > tolEff)) reason = 'dips-below';
    else if (reliefM > maxReliefM) reason = 'tilted';
    if (reason !== null) return { surface: null, reason, areaM2, levelM, reliefM };
    return { surface: { levelM, cells, areaM2, source: 'detected', reachesEdge, reliefM, connectors: Int32Array.from(connectors), interpolated } };
  } finally {
    clearMarks(s);
  }
}

/**
 * The water surface behind one dam from a water mask (non-zero = water) on
 * the same grid: the 8-connected mask cells reached from the cells just
 * upstream of the crest, the level the median DEM elevation over them.
 */
export function waterFromMask(
  grid: Grid,
  dam: WaterDam,
  mask: ArrayLike<number>,
  params: WaterParams,
  box?: WaterBox,
  scratch?: WaterScratch,
): WaterOutcome {
  const { width, height, z } = grid;
  const s = scratch !== undefined && scratch.cellCount >= width * height ? scratch : createWaterScratch(width * height);
  const b = clampBox(box, width, height);
  const mark = s.mark;
  try {
    block(s, dam);
    // Breadth-first from the seeds over non-blocked cells, up to maskSearchCells rings, for the first mask cells.
    let frontStart = 0;
    let frontEnd = 0;
    for (let k = 0; k < dam.seedCells.length; k++) {
      const i = dam.seedCells[k]!;
      if (!inBox(i, width, b) || mark[i]! !== 0) continue;
      touch(s, i, SEEN1);
      if (frontEnd === s.cells.length) growLists(s);
      s.cells[frontEnd++] = i;
    }
    let top = 0;
    for (let ring = 0; ring <= params.maskSearchCells && frontEnd > frontStart && top === 0; ring++) {
      const end = frontEnd;
      for (let k = frontStart; k < end; k++) {
        const i = s.cells[k]!;
        if (mask[i]! !== 0 && !Number.isNaN(z[i]!)) {
          if (top === s.stack.length) growStack(s);
          s.stack[top++] = i;
          mark[i] = mark[i]! | SEEN2;
        }
      }
      if (top > 0) break;
      for (let k = frontStart; k < end; k++) {
        const i = s.cells[k]!;
        const col = i % width;
        const row = (i - col) / width;
        for (let dr = -1; dr <= 1; dr++) {
          const rr = row + dr;
          if (rr < b.row0 || rr >= b.row1) continue;
          for (let dc = -1; dc <= 1; dc++) {
            const cc = col + dc;
            if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
            const j = rr * width + cc;
            if (mark[j]! !== 0) continue;
            touch(s, j, SEEN1);
            if (frontEnd === s.cells.length) growLists(s);
            s.cells[frontEnd++] = j;
          }
        }
      }
      frontStart = end;
    }
    if (top === 0) return { surface: null, reason: 'no-mask', areaM2: 0, levelM: NaN, reliefM: NaN };
    let count = 0;
    while (top > 0) {
      const i = s.stack[--top]!;
      const col = i % width;
      const row = (i - col) / width;
      if (count === s.cells.length) growLists(s);
      s.cells[count++] = i;
      for (let dr = -1; dr <= 1; dr++) {
        const rr = row + dr;
        if (rr < b.row0 || rr >= b.row1) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const cc = col + dc;
          if ((dc === 0 && dr === 0) || cc < b.col0 || cc >= b.col1) continue;
          const j = rr * width + cc;
          const m = mark[j]!;
          if ((m & (BLOCKED | SEEN2)) !== 0) continue;
          if (m === 0) touch(s, j, SEEN2);
          else mark[j] = m | SEEN2;
          if (mask[j]! === 0 || Number.isNaN(z[j]!)) continue;
          if (top === s.stack.length) growStack(s);
          s.stack[top++] = j;
        }
      }
    }
    const { areaM2, reachesEdge, fit } = measure(grid, s.cells, count, b);
    for (let k = 0; k < count; k++) s.values[k] = z[s.cells[k]!]!;
    const cells = s.cells.slice(0, count);
    const levelM = median(s.values, count);
    return { surface: { levelM, cells, areaM2, source: 'mask', reachesEdge, reliefM: fit.reliefM() } };
  } finally {
    clearMarks(s);
  }
}

/**
 * Step 4's test for one cell: its own elevation below the cap, at least half
 * of its window below the cap (a water cell's window is mostly water), and
 * its outlier-free window mean: 2 (water) within `limitM`, 1 (a connector,
 * reached through but not counted) within twice the tolerance, else 0.
 */
function accept(z: Float32Array, mark: Uint8Array, width: number, height: number, i: number, r: number, capM: number, limitM: number, connectM: number): number {
  const zi = z[i]!;
  if (!(zi <= capM)) return 0;
  const zs = windowMean(z, mark, width, height, i, r, capM);
  if (lastWindowKept * 2 < lastWindowValid) return 0;
  return zs <= limitM ? 2 : zs <= connectM ? 1 : 0;
}

/** Cells the last windowMean call averaged, and the valid non-blocked cells in its window. */
let lastWindowKept = 0;
let lastWindowValid = 0;

/** Mean of the valid, non-blocked cells at most `capM` in the (2r + 1)² window around cell i; NaN when none. */
function windowMean(z: Float32Array, mark: Uint8Array, width: number, height: number, i: number, r: number, capM: number): number {
  const col = i % width;
  const row = (i - col) / width;
  const c0 = col - r < 0 ? 0 : col - r;
  const c1 = col + r >= width ? width - 1 : col + r;
  const r0 = row - r < 0 ? 0 : row - r;
  const r1 = row + r >= height ? height - 1 : row + r;
  let sum = 0;
  let n = 0;
  let valid = 0;
  for (let rr = r0; rr <= r1; rr++) {
    const base = rr * width;
    for (let cc = c0; cc <= c1; cc++) {
      const j = base + cc;
      if ((mark[j]! & BLOCKED) !== 0) continue;
      const v = z[j]!;
      if (v !== v) continue;
      valid++;
      if (!(v <= capM)) continue;
      sum += v;
      n++;
    }
  }
  lastWindowKept = n;
  lastWindowValid = valid;
  return n > 0 ? sum / n : NaN;
}

/** Least-squares plane z = a + b·x + c·y by running sums (x, y in metres, centred on the first point for precision). */
class PlaneFit {
  private n = 0;
  private x0 = 0;
  private y0 = 0;
  private sx = 0;
  private sy = 0;
  private sz = 0;
  private sxx = 0;
  private sxy = 0;
  private syy = 0;
  private sxz = 0;
  private syz = 0;
  private z0 = 0;

  add(xM: number, yM: number, zM: number): void {
    if (this.n === 0) {
      this.x0 = xM;
      this.y0 = yM;
      this.z0 = zM;
    }
    const x = xM - this.x0;
    const y = yM - this.y0;
    const zz = zM - this.z0;
    this.n++;
    this.sx += x;
    this.sy += y;
    this.sz += zz;
    this.sxx += x * x;
    this.sxy += x * y;
    this.syy += y * y;
    this.sxz += x * zz;
    this.syz += y * zz;
  }

  /** √12 × the standard deviation of the fitted plane over the points: the full relief of a uniform ramp, m. */
  reliefM(): number {
    const n = this.n;
    if (n < 3) return 0;
    const vxx = this.sxx / n - (this.sx / n) ** 2;
    const vyy = this.syy / n - (this.sy / n) ** 2;
    const vxy = this.sxy / n - (this.sx / n) * (this.sy / n);
    const vxz = this.sxz / n - (this.sx / n) * (this.sz / n);
    const vyz = this.syz / n - (this.sy / n) * (this.sz / n);
    const det = vxx * vyy - vxy * vxy;
    let b = 0;
    let c = 0;
    if (det > 1e-12 * (vxx * vyy + 1e-30)) {
      b = (vxz * vyy - vyz * vxy) / det;
      c = (vyz * vxx - vxz * vxy) / det;
    } else if (vxx > 0 || vyy > 0) {
      // Points on a line: fit along it.
      if (vxx >= vyy) b = vxz / vxx;
      else c = vyz / vyy;
    }
    const variance = b * b * vxx + 2 * b * c * vxy + c * c * vyy;
    return Math.sqrt(Math.max(0, variance) * 12);
  }
}

/** Area, box-edge contact and plane fit of the first `count` cells. */
function measure(grid: Grid, cells: Int32Array, count: number, b: WaterBox): { areaM2: number; reachesEdge: boolean; fit: PlaneFit } {
  const { width, z } = grid;
  let areaM2 = 0;
  let reachesEdge = false;
  const fit = new PlaneFit();
  for (let k = 0; k < count; k++) {
    const i = cells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    areaM2 += grid.cellAreaM2[row]!;
    fit.add(col * grid.cellWidthM[row]!, row * grid.cellHeightM, z[i]!);
    if (col === b.col0 || col === b.col1 - 1 || row === b.row0 || row === b.row1 - 1) reachesEdge = true;
  }
  return { areaM2, reachesEdge, fit };
}

/**
 * Adds the holes of the region (its first `count` cells in s.cells): cells
 * not 4-connected to the outside of its bounding box through non-region
 * cells, valid, not blocked and no higher than `capM` (a noisy water cell,
 * not an island standing clear of the water). Returns the new count.
 */
function fillHoles(s: WaterScratch, count: number, grid: Grid, capM: number): number {
  if (count === 0) return 0;
  const { width, z } = grid;
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  for (let k = 0; k < count; k++) {
    const i = s.cells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    if (col < c0) c0 = col;
    if (col > c1) c1 = col;
    if (row < r0) r0 = row;
    if (row > r1) r1 = row;
  }
  // Local frame with a one-cell margin: 1 = region, 2 = outside.
  const lw = c1 - c0 + 3;
  const lh = r1 - r0 + 3;
  const local = new Uint8Array(lw * lh);
  for (let k = 0; k < count; k++) {
    const i = s.cells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    local[(row - r0 + 1) * lw + (col - c0 + 1)] = 1;
  }
  const stack = new Int32Array(lw * lh);
  let top = 0;
  local[0] = 2;
  stack[top++] = 0;
  while (top > 0) {
    const q = stack[--top]!;
    const qc = q % lw;
    const qr = (q - qc) / lw;
    if (qc > 0 && local[q - 1] === 0) { local[q - 1] = 2; stack[top++] = q - 1; }
    if (qc < lw - 1 && local[q + 1] === 0) { local[q + 1] = 2; stack[top++] = q + 1; }
    if (qr > 0 && local[q - lw] === 0) { local[q - lw] = 2; stack[top++] = q - lw; }
    if (qr < lh - 1 && local[q + lw] === 0) { local[q + lw] = 2; stack[top++] = q + lw; }
  }
  for (let q = 0; q < local.length; q++) {
    if (local[q] !== 0) continue;
    const qc = q % lw;
    const qr = (q - qc) / lw;
    const i = (qr - 1 + r0) * width + (qc - 1 + c0);
    if ((s.mark[i]! & BLOCKED) !== 0 || !(z[i]! <= capM)) continue;
    if (count === s.cells.length) growLists(s);
    s.cells[count++] = i;
  }
  return count;
}

/**
 * The pond's lowest level among the first n values: for each value, the
 * count of values within ±1 bin (`binM` wide); the lowest value whose count
 * reaches a twentieth of the largest count (and `minCount`) starts a climb to the
 * top of its peak; the level is the median of the values within ±1 bin of
 * that top (the climb looks 4 bins ahead, over the noise of the counts). A
 * water surface is one sharp peak at the bottom; banks and a
 * floodplain above the water make other peaks, higher up. Reorders the values.
 */
function lowestPeak(values: Float64Array, n: number, binM: number, minCount: number): number {
  if (n === 0) return NaN;
  const v = values.subarray(0, n).sort();
  const bin = binM > 0 ? binM : 1e-3;
  const counts = new Int32Array(n);
  let best = 0;
  let lo = 0;
  let hi = 0;
  for (let k = 0; k < n; k++) {
    const c = v[k]!;
    while (v[lo]! < c - bin) lo++;
    while (hi < n && v[hi]! <= c + bin) hi++;
    counts[k] = hi - lo;
    if (hi - lo > best) best = hi - lo;
  }
  const floor = Math.max(Math.min(minCount, best), Math.ceil(PEAK_SHARE * best));
  let k = 0;
  while (k < n - 1 && counts[k]! < floor) k++;
  // Climb to the top of this peak: the fullest value within 4 bins above, again while that is the window's last.
  for (;;) {
    let top = k;
    let j = k + 1;
    while (j < n && v[j]! <= v[k]! + 4 * bin) {
      if (counts[j]! > counts[top]!) top = j;
      j++;
    }
    if (top === k) break;
    k = top;
  }
  const centre = v[k]!;
  let a = 0;
  while (v[a]! < centre - bin) a++;
  let b = a;
  while (b < n && v[b]! <= centre + bin) b++;
  const m = (a + b - 1) >> 1;
  return (b - a) % 2 === 1 ? v[m]! : (v[m]! + v[m + 1]!) / 2;
}

/** Median of the first n values (reorders them). */
function median(values: Float64Array, n: number): number {
  if (n === 0) return NaN;
  const v = values.subarray(0, n).sort();
  const mid = n >> 1;
  return n % 2 === 1 ? v[mid]! : (v[mid - 1]! + v[mid]!) / 2;
}

function clampBox(box: WaterBox | undefined, width: number, height: number): WaterBox {
  return {
    col0: Math.max(0, box?.col0 ?? 0),
    row0: Math.max(0, box?.row0 ?? 0),
    col1: Math.min(width, box?.col1 ?? width),
    row1: Math.min(height, box?.row1 ?? height),
  };
}

function inBox(i: number, width: number, b: WaterBox): boolean {
  const col = i % width;
  const row = (i - col) / width;
  return col >= b.col0 && col < b.col1 && row >= b.row0 && row < b.row1;
}

function block(s: WaterScratch, dam: WaterDam): void {
  for (let k = 0; k < dam.crestCells.length; k++) touch(s, dam.crestCells[k]!, BLOCKED);
  for (let k = 0; k < dam.downstreamCells.length; k++) touch(s, dam.downstreamCells[k]!, BLOCKED);
}

/** Sets a flag on a cell not yet touched by this dam and remembers it for clearing. */
function touch(s: WaterScratch, i: number, flag: number): void {
  if (s.mark[i] === 0) {
    if (s.touchedCount === s.touched.length) {
      const t = new Int32Array(s.touched.length * 2);
      t.set(s.touched);
      s.touched = t;
    }
    s.touched[s.touchedCount++] = i;
  }
  s.mark[i] = s.mark[i]! | flag;
}

function clearMarks(s: WaterScratch): void {
  for (let k = 0; k < s.touchedCount; k++) s.mark[s.touched[k]!] = 0;
  s.touchedCount = 0;
}

function growStack(s: WaterScratch): void {
  const t = new Int32Array(s.stack.length * 2);
  t.set(s.stack);
  s.stack = t;
}

function growLists(s: WaterScratch): void {
  const n = s.cells.length * 2;
  const c = new Int32Array(n);
  c.set(s.cells);
  const v = new Float64Array(n);
  v.set(s.values);
  s.cells = c;
  s.values = v;
}
