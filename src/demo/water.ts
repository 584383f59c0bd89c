/**
 * Standing water as lidar records it: some existing ponds are flattened into
 * the DEM at their water level, with the same random error as the ground.
 * A later survey comparison needs this (the storage below a water surface is
 * invisible to lidar); the default scene is dry.
 *
 * Each pond is a 4-connected flood from just upstream of the dam's stream
 * crossing over ground below the water level; crest lines of the other
 * existing dams are walls unless the water stands above their crest.
 */
import { rasteriseLines } from '../grid/rasterise-line.js';
import type { Rng } from '../uncertainty/random.js';
import type { CrestDem } from './crest.js';
import { addGaussianNoise } from './lattice.js';
import type { DemoDam } from './types.js';

/** Water stands this far below the crest, metres. */
export const FREEBOARD_M = 0.05;
/** A pond larger than this many cells is not flattened (it would mean the flood escaped). */
const MAX_POND_CELLS = 400_000;

/** What `flattenPonds` did. */
export interface FlattenResult {
  /** Ids of the dams whose ponds were flattened. */
  flattened: string[];
  /** Ids of the dams whose flood escaped or found no water; nothing was changed for them. */
  skipped: string[];
}

/**
 * Flattens the ponds of `wetIds` into `dem.z` (in place) and records level and
 * area in each dam's truth. Floods are all computed on the dry ground first.
 */
export function flattenPonds(dem: CrestDem, dams: DemoDam[], wetIds: ReadonlySet<string>, sigmaM: number, rng: Rng): FlattenResult {
  const { width, height, cellM, z } = dem;
  const walls = new Map<number, number>();
  for (const dam of dams) {
    if (dam.geometry.kind !== 'line' || dam.properties.status === 'proposed') continue;
    const { cells } = rasteriseLines(dem, dam.geometry.lines);
    for (const cell of cells) walls.set(cell, Math.min(walls.get(cell) ?? Infinity, dam.truth.crestZM));
  }
  const seen = new Uint8Array(width * height);
  const stack = new Int32Array(3 * MAX_POND_CELLS + 8);
  const found = new Int32Array(MAX_POND_CELLS + 1);
  const ponds: { dam: DemoDam; level: number; cells: Int32Array }[] = [];
  const result: FlattenResult = { flattened: [], skipped: [] };
  for (const dam of dams) {
    if (!wetIds.has(dam.id)) continue;
    const level = dam.truth.crestZM - FREEBOARD_M;
    const [tx, ty] = dam.truth.valleyTangent;
    const [px, py] = dam.truth.streamPoint;
    const c = Math.floor((px - 3 * tx - dem.transform.x0) / cellM);
    const r = Math.floor((dem.transform.y0 - (py - 3 * ty)) / cellM);
    const start = r * width + c;
    const cells = c >= 0 && c < width && r >= 0 && r < height ? flood(dem, start, level, walls, seen, stack, found) : null;
    if (cells === null || cells.length === 0) {
      result.skipped.push(dam.id);
      continue;
    }
    ponds.push({ dam, level, cells });
  }
  for (const { dam, level, cells } of ponds) {
    const surface = new Float32Array(cells.length).fill(level);
    addGaussianNoise(surface, sigmaM, rng);
    for (let j = 0; j < cells.length; j++) z[cells[j]!] = surface[j]!;
    dam.truth.waterLevelM = level;
    dam.truth.waterAreaM2 = cells.length * cellM * cellM;
    result.flattened.push(dam.id);
  }
  return result;
}

/** Cells 4-connected to `start` below `level`, not walled off; null when the flood escapes or grows too large. */
function flood(
  dem: CrestDem,
  start: number,
  level: number,
  walls: ReadonlyMap<number, number>,
  seen: Uint8Array,
  stack: Int32Array,
  found: Int32Array,
): Int32Array | null {
  const { width, height, z } = dem;
  if (!(z[start]! < level)) return new Int32Array(0);
  let count = 0;
  let top = 0;
  stack[top++] = start;
  seen[start] = 1;
  let escaped = false;
  while (top > 0) {
    const i = stack[--top]!;
    if (count === MAX_POND_CELLS) {
      escaped = true;
      break;
    }
    found[count++] = i;
    const c = i % width;
    const r = (i - c) / width;
    if (c === 0 || r === 0 || c === width - 1 || r === height - 1) {
      escaped = true;
      break;
    }
    for (let k = 0; k < 4; k++) {
      const j = k === 0 ? i - 1 : k === 1 ? i + 1 : k === 2 ? i - width : i + width;
      if (seen[j] !== 0 || !(z[j]! < level)) continue;
      const wall = walls.get(j);
      if (wall !== undefined && wall >= level) continue;
      seen[j] = 1;
      stack[top++] = j;
    }
  }
  for (let k = 0; k < count; k++) seen[found[k]!] = 0;
  for (let k = 0; k <= top; k++) seen[stack[k]!] = 0;
  return escaped ? null : found.slice(0, count);
}
