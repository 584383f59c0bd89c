/**
 * Several ponds on one grid: one water surface.
 *
 * Each cell's water level is the highest level of the ponds that reach it;
 * its water belongs to the pond that sets that level (ties: the lower
 * index). So a downstream pond that drowns an upstream dam counts the
 * shared cells once, and the per-pond sums add up to the totals exactly:
 * both are Float64 sums over the same cells in the same order (totals are
 * the per-pond sums added in pond order).
 */
import type { Grid } from '../grid/grid.js';
import type { PondFill } from './fill.js';
import { floodedCount } from './stage-storage.js';

/** One pond to combine: a fill (all on the same grid) and the water level to take it at. */
export interface PondLayer {
  fill: PondFill;
  /** Water level, m (a draw may differ from fill.waterLevelM); capped at fill.topLevelM. */
  waterLevelM: number;
  /** Crest elevation for the drowned check, m (default fill.crestElevM). */
  crestElevM?: number;
}

/** Per-pond share of the combined water surface. */
export interface PondShare {
  /** Cells whose water this pond sets. */
  cellCount: number;
  areaM2: number;
  volumeM3: number;
  /** Deepest water in those cells, m (0 when none). */
  maxDepthM: number;
  /** Index of the pond whose level stands above this dam's crest on its crest cells, or -1. */
  drownedBy: number;
}

/** The combined water surface. */
export interface CombinedPonds {
  /** Water level per cell, m; NaN where dry. */
  levelM: Float32Array;
  /** Index of the pond that owns each cell's water; -1 where dry. */
  owner: Int32Array;
  perPond: PondShare[];
  totalAreaM2: number;
  totalVolumeM3: number;
}

/** Combines the ponds of several dams (see the file comment). */
export function combinePonds(grid: Grid, ponds: PondLayer[]): CombinedPonds {
  const { width, height, z, cellAreaM2 } = grid;
  const n = width * height;
  const owner = new Int32Array(n).fill(-1);
  const levels = new Float64Array(ponds.length);
  for (let p = 0; p < ponds.length; p++) {
    const { fill, waterLevelM } = ponds[p]!;
    const h = Math.min(waterLevelM, fill.topLevelM);
    levels[p] = h;
    const count = floodedCount(fill, h);
    const order = fill.order;
    for (let k = 0; k < count; k++) {
      const i = order[k]!;
      const o = owner[i]!;
      if (o < 0 || h > levels[o]!) owner[i] = p;
    }
  }

  const levelM = new Float32Array(n).fill(NaN);
  const cells = new Float64Array(ponds.length);
  const area = new Float64Array(ponds.length);
  const volume = new Float64Array(ponds.length);
  const maxDepth = new Float64Array(ponds.length);
  for (let row = 0; row < height; row++) {
    const a = cellAreaM2[row]!;
    const base = row * width;
    for (let col = 0; col < width; col++) {
      const i = base + col;
      const o = owner[i]!;
      if (o < 0) continue;
      const h = levels[o]!;
      const depth = h - z[i]!;
      levelM[i] = h;
      cells[o]! += 1;
      area[o]! += a;
      volume[o]! += a * depth;
      if (depth > maxDepth[o]!) maxDepth[o] = depth;
    }
  }

  const perPond: PondShare[] = [];
  let totalAreaM2 = 0;
  let totalVolumeM3 = 0;
  for (let p = 0; p < ponds.length; p++) {
    totalAreaM2 += area[p]!;
    totalVolumeM3 += volume[p]!;
    perPond.push({
      cellCount: cells[p]!,
      areaM2: area[p]!,
      volumeM3: volume[p]!,
      maxDepthM: maxDepth[p]!,
      drownedBy: drownedBy(ponds, p, owner, levels),
    });
  }
  return { levelM, owner, perPond, totalAreaM2, totalVolumeM3 };
}

/** The other pond with the highest level above dam p's crest elevation on p's crest cells, or -1. */
function drownedBy(ponds: PondLayer[], p: number, owner: Int32Array, levels: Float64Array): number {
  const layer = ponds[p]!;
  const crestElevM = layer.crestElevM ?? layer.fill.crestElevM;
  const crest = layer.fill.crestCells;
  let best = -1;
  for (let k = 0; k < crest.length; k++) {
    const o = owner[crest[k]!]!;
    if (o < 0 || o === p || !(levels[o]! > crestElevM)) continue;
    if (best < 0 || levels[o]! > levels[best]!) best = o;
  }
  return best;
}
