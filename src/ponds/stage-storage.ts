/**
 * The pond at any water level from one fill, and the stage–area–storage
 * curve.
 *
 * With the n(h) flooded cells of join level below h (binary search in the
 * fill order), area(h) = Σa and volume(h) = h·Σa − Σa·z, the two sums read
 * from the fill's running totals: O(log n) per level, exact up to rounding.
 */
import type { Grid } from '../grid/grid.js';
import { lowerBound } from '../grid/sorted-search.js';
import type { PondFill } from './fill.js';

/** Pond size at one water level. */
export interface PondSize {
  /** Flooded cells (depth > 0). */
  cellCount: number;
  /** Water-surface area, m². */
  areaM2: number;
  /** Stored water, m³. */
  volumeM3: number;
}

/** Number of fill entries whose join level is below `levelM`. */
export function floodedCount(fill: PondFill, levelM: number): number {
  return lowerBound(fill.joinM, levelM);
}

/**
 * The pond at water level `levelM` (m). Levels above the fill's `topLevelM`
 * are taken at `topLevelM` (the water would escape higher up).
 */
export function pondAt(fill: PondFill, levelM: number): PondSize {
  const h = Math.min(levelM, fill.topLevelM);
  const n = floodedCount(fill, h);
  if (n === 0) return { cellCount: 0, areaM2: 0, volumeM3: 0 };
  const areaM2 = fill.cumAreaM2[n - 1]!;
  const volumeM3 = (h - fill.zRefM) * areaM2 - fill.cumAreaZ[n - 1]!;
  return { cellCount: n, areaM2, volumeM3: volumeM3 > 0 ? volumeM3 : 0 };
}

/**
 * The pond at `levelM` like pondAt, except that above the escape level of a
 * fill that escaped, the pond keeps its area at the escape level and
 * deepens: volume(top) + area(top)·(levelM − top). That is the pond whose
 * pass stands higher than the DEM has it (the DEM-error draws move the
 * pass with its own error); cells beyond the pass never join. Above a top
 * set by the flood's level limit (no escape), levels are held at the top
 * as in pondAt.
 */
export function pondAtExtended(fill: PondFill, levelM: number): PondSize {
  return pondAtExtendedInto(fill, levelM, { cellCount: 0, areaM2: 0, volumeM3: 0 });
}

/** pondAtExtended written into `out` (returned), for loops over many draws. */
export function pondAtExtendedInto(fill: PondFill, levelM: number, out: PondSize): PondSize {
  const extended = fill.escapeKind !== null && levelM > fill.topLevelM;
  const h = extended ? fill.topLevelM : Math.min(levelM, fill.topLevelM);
  const n = floodedCount(fill, h);
  if (n === 0) {
    out.cellCount = 0;
    out.areaM2 = 0;
    out.volumeM3 = 0;
    return out;
  }
  const areaM2 = fill.cumAreaM2[n - 1]!;
  const volumeM3 = ((extended ? levelM : h) - fill.zRefM) * areaM2 - fill.cumAreaZ[n - 1]!;
  out.cellCount = n;
  out.areaM2 = areaM2;
  out.volumeM3 = volumeM3 > 0 ? volumeM3 : 0;
  return out;
}

/**
 * The level (m) at which the fill holds `volumeM3` (pondAtExtended's volume,
 * which never decreases with the level), by bisection to 1e-6 m; the
 * lowest join level for a volume of 0 or less.
 */
export function levelForVolumeM(fill: PondFill, volumeM3: number): number {
  if (fill.order.length === 0) return fill.waterLevelM;
  let lo = fill.joinM[0]!;
  if (!(volumeM3 > 0)) return lo;
  let step = 0.5;
  let hi = Math.max(lo, fill.waterLevelM) + step;
  while (pondAtExtended(fill, hi).volumeM3 < volumeM3 && step < 1e4) {
    lo = hi;
    step *= 2;
    hi += step;
  }
  while (hi - lo > 1e-6) {
    const mid = 0.5 * (lo + hi);
    if (pondAtExtended(fill, mid).volumeM3 < volumeM3) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * Stage–area–storage rows [level_m, area_m2, volume_m3] from the bed to the
 * fill's water level every `stepM` metres (the params default is 0.1 m);
 * the last row is exactly at the water level. Levels are bed + k·step, not
 * accumulated, so they carry no drift. Area and volume never decrease.
 */
export function stageStorage(fill: PondFill, bedElevM: number, stepM: number): [number, number, number][] {
  if (!(stepM > 0)) throw new Error(`stage step must be positive; got ${stepM}`);
  const top = fill.waterLevelM;
  const rows: [number, number, number][] = [];
  for (let k = 0; ; k++) {
    const level = bedElevM + k * stepM;
    if (level >= top - 1e-9 * stepM) break;
    const p = pondAt(fill, level);
    rows.push([level, p.areaM2, p.volumeM3]);
  }
  const last = pondAt(fill, top);
  rows.push([top, last.areaM2, last.volumeM3]);
  return rows;
}

/** Summary of a pond at one level. */
export interface PondStats extends PondSize {
  /** Water level minus the lowest flooded ground, m (0 when dry). */
  maxDepthM: number;
  /** volume / area, m (0 when dry). */
  meanDepthM: number;
}

/** Area, volume, maximum and mean depth of a fill's pond at `levelM` (default its water level). */
export function pondStats(grid: Grid, fill: PondFill, levelM: number = fill.waterLevelM): PondStats {
  const size = pondAt(fill, levelM);
  const h = Math.min(levelM, fill.topLevelM);
  const z = grid.z;
  let lowM = Infinity;
  for (let k = 0; k < size.cellCount; k++) {
    const zi = z[fill.order[k]!]!;
    if (zi < lowM) lowM = zi;
  }
  return {
    ...size,
    maxDepthM: size.cellCount > 0 ? h - lowM : 0,
    meanDepthM: size.areaM2 > 0 ? size.volumeM3 / size.areaM2 : 0,
  };
}
