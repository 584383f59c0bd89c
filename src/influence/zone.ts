/**
 * The beaver influence zone: inundated cells ∪ riparian cells.
 *
 * A dry cell is riparian when all of these hold:
 * - its centre is within `distanceM` (horizontal, metres) of the nearest
 *   pond cell centre (exact Euclidean distance transform, grid/distance.ts);
 * - its elevation is at most `riseM` above THAT nearest pond cell's water
 *   level (so each cell is judged against the pond that reaches it first);
 * - it lies in the valley bottom, when a valley-bottom mask is given.
 *
 * Defaults, each an option:
 * - distanceM = 50 m: groundwater studies around beaver ponds found a steep
 *   water-table gradient within about 50 m of the pond (Lowry 1993, MSc
 *   thesis, Oregon State University; citation details from memory).
 * - riseM = 1.0 m: summer water-table declines of about 0.9–1.2 m were
 *   prevented near dams (Westbrook, Cooper & Baker 2006, Water Resources
 *   Research 42; citation details from memory).
 *
 * Areas use each row's cell area (m²). NoData cells are never riparian.
 */
import type { Grid } from '../grid/grid.js';
import { distanceTransform } from '../grid/distance.js';

/** Default horizontal reach of the riparian fringe, m (Lowry 1993). */
export const DEFAULT_RIPARIAN_DISTANCE_M = 50;
/** Default height a riparian cell may stand above the nearest pond's water level, m (Westbrook et al. 2006). */
export const DEFAULT_RIPARIAN_RISE_M = 1.0;

/** Influence class: neither inundated nor riparian. */
export const INFLUENCE_NONE = 0;
/** Influence class: under water (a pond cell). */
export const INFLUENCE_INUNDATED = 1;
/** Influence class: riparian (dry, near and not far above the nearest pond). */
export const INFLUENCE_RIPARIAN = 2;

/** Options of {@link influenceZone}. */
export interface InfluenceOptions {
  /** Horizontal reach from the nearest pond cell, m. Default 50. */
  distanceM?: number;
  /** Largest height above the nearest pond's water level, m. Default 1.0. */
  riseM?: number;
  /** 1 where riparian cells are allowed (valley bottom); all cells when omitted. */
  valleyBottom?: Uint8Array;
  /**
   * Owner id of each pond cell (e.g. 1 + dam index or a watershed id), ≥ 1;
   * riparian cells take the owner of their nearest pond cell. Omit for totals only.
   */
  owner?: Int32Array;
}

/** Result of {@link influenceZone}. */
export interface InfluenceResult {
  /** Per cell: 0 none, 1 inundated, 2 riparian. */
  readonly classes: Uint8Array;
  /** Area of pond cells, m². */
  readonly inundatedAreaM2: number;
  /** Area of riparian cells, m². */
  readonly riparianAreaM2: number;
  /** Inundated + riparian, m². */
  readonly influenceAreaM2: number;
  /** With `owner`: per cell, the owner of the influenced cell (0 elsewhere). */
  readonly cellOwner?: Int32Array;
  /** With `owner`: areas per owner id (index = id; index 0 collects pond cells without owner), m². */
  readonly byOwner?: { readonly inundatedAreaM2: Float64Array; readonly riparianAreaM2: Float64Array };
}

/**
 * Classifies every cell of `grid` given the water level of each pond cell
 * (`waterLevelM`, metres, NaN where dry). Only the window around the ponds
 * (expanded by `distanceM`) is examined.
 */
export function influenceZone(grid: Grid, waterLevelM: Float32Array, options: InfluenceOptions = {}): InfluenceResult {
  const { width, height, z, cellAreaM2 } = grid;
  const n = width * height;
  const distanceM = options.distanceM ?? DEFAULT_RIPARIAN_DISTANCE_M;
  const riseM = options.riseM ?? DEFAULT_RIPARIAN_RISE_M;
  if (!(distanceM >= 0) || !(riseM >= 0)) {
    throw new Error(`riparian distance and rise must be ≥ 0 m; got ${distanceM} m and ${riseM} m`);
  }
  if (waterLevelM.length !== n) throw new Error(`water level raster has ${waterLevelM.length} cells; expected ${n}`);
  const { valleyBottom, owner } = options;
  const classes = new Uint8Array(n);

  // Window: pond bounding box grown by the reach.
  let r0 = height;
  let r1 = -1;
  let c0 = width;
  let c1 = -1;
  let ownerMax = 0;
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      if (Number.isNaN(waterLevelM[i] ?? NaN)) continue;
      if (r < r0) r0 = r;
      if (r > r1) r1 = r;
      if (c < c0) c0 = c;
      if (c > c1) c1 = c;
      if (owner !== undefined) {
        const o = owner[i] ?? 0;
        if (o < 0) throw new Error(`owner ids must be ≥ 0; cell ${i} has ${o}`);
        if (o > ownerMax) ownerMax = o;
      }
    }
  }
  const cellOwner = owner !== undefined ? new Int32Array(n) : undefined;
  const byOwner =
    owner !== undefined
      ? { inundatedAreaM2: new Float64Array(ownerMax + 1), riparianAreaM2: new Float64Array(ownerMax + 1) }
      : undefined;
  if (r1 < 0) return { classes, inundatedAreaM2: 0, riparianAreaM2: 0, influenceAreaM2: 0, cellOwner, byOwner };

  let minWidthM = Infinity;
  for (let r = 0; r < height; r++) minWidthM = Math.min(minWidthM, grid.cellWidthM[r] ?? Infinity);
  const padCols = Math.ceil(distanceM / minWidthM) + 1;
  const padRows = Math.ceil(distanceM / grid.cellHeightM) + 1;
  r0 = Math.max(0, r0 - padRows);
  r1 = Math.min(height - 1, r1 + padRows);
  c0 = Math.max(0, c0 - padCols);
  c1 = Math.min(width - 1, c1 + padCols);
  const ww = c1 - c0 + 1;
  const wh = r1 - r0 + 1;

  const seeds = new Uint8Array(ww * wh);
  for (let wr = 0; wr < wh; wr++) {
    const rowStart = (wr + r0) * width + c0;
    for (let wc = 0; wc < ww; wc++) seeds[wr * ww + wc] = Number.isNaN(waterLevelM[rowStart + wc] ?? NaN) ? 0 : 1;
  }
  const { distanceM: dist, nearest } = distanceTransform(
    { width: ww, height: wh, cellWidthM: grid.cellWidthM.subarray(r0, r1 + 1), cellHeightM: grid.cellHeightM },
    seeds,
  );

  let inundatedAreaM2 = 0;
  let riparianAreaM2 = 0;
  for (let wr = 0; wr < wh; wr++) {
    const r = wr + r0;
    const area = cellAreaM2[r] ?? 0;
    for (let wc = 0; wc < ww; wc++) {
      const wi = wr * ww + wc;
      const i = r * width + wc + c0;
      if (seeds[wi] === 1) {
        classes[i] = INFLUENCE_INUNDATED;
        inundatedAreaM2 += area;
        if (owner !== undefined && cellOwner !== undefined && byOwner !== undefined) {
          const o = owner[i] ?? 0;
          cellOwner[i] = o;
          byOwner.inundatedAreaM2[o] = (byOwner.inundatedAreaM2[o] ?? 0) + area;
        }
        continue;
      }
      if (!((dist[wi] ?? Infinity) <= distanceM)) continue;
      if (valleyBottom !== undefined && valleyBottom[i] !== 1) continue;
      const s = nearest[wi] ?? 0;
      const sr = ((s / ww) | 0) + r0;
      const seed = sr * width + (s % ww) + c0;
      const zi = z[i] ?? NaN;
      if (!(zi <= (waterLevelM[seed] ?? NaN) + riseM)) continue; // NaN (NoData) fails
      classes[i] = INFLUENCE_RIPARIAN;
      riparianAreaM2 += area;
      if (owner !== undefined && cellOwner !== undefined && byOwner !== undefined) {
        const o = owner[seed] ?? 0;
        cellOwner[i] = o;
        byOwner.riparianAreaM2[o] = (byOwner.riparianAreaM2[o] ?? 0) + area;
      }
    }
  }
  return {
    classes,
    inundatedAreaM2,
    riparianAreaM2,
    influenceAreaM2: inundatedAreaM2 + riparianAreaM2,
    cellOwner,
    byOwner,
  };
}
