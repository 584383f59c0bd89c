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
import { NearestSeedSweep } from '../grid/distance.js';

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
  /**
   * Also list the candidate riparian cells of looser limits (influence/
   * riparian-table.ts): every dry valley-bottom cell within `distanceMaxM`
   * of its nearest pond cell and at most `riseMaxM` above that pond's level,
   * with its distance, rise and owner. Both limits must be ≥ the rule's own.
   */
  candidates?: { distanceMaxM: number; riseMaxM: number };
}

/** Candidate riparian cells (see {@link InfluenceOptions.candidates}), in row-major order. */
export interface RiparianCandidates {
  count: number;
  /** Flat index in the grid. */
  cell: Int32Array;
  /** Distance to the nearest pond cell centre, m. */
  distanceM: Float32Array;
  /** Height above that pond cell's water level, m (may be negative). */
  riseM: Float64Array;
  /** Owner id of that pond cell (0 without `owner`). */
  owner: Int32Array;
  /** 1 where the cell is riparian under the rule's own limits (the deterministic zone). */
  inRule: Uint8Array;
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
  /** With `candidates`: the candidate riparian cells. */
  readonly candidates?: RiparianCandidates;
}

/** Pond cells as a list: flat indices on the grid, each one's water level and owner. */
export interface PondCells {
  /** Flat indices of the wet cells (a cell listed more than once counts once, as its last entry). */
  cells: Int32Array;
  /** Water level of each listed cell, m. */
  levelM: Float32Array;
  /** Owner id of each listed cell, ≥ 1 (see {@link InfluenceOptions.owner}); omit for totals only. */
  owner?: Int32Array;
}

/**
 * Classifies every cell of `grid` given the water level of each pond cell
 * (`waterLevelM`, metres, NaN where dry). Only the window around the ponds
 * (expanded by `distanceM`) is examined. The same as
 * {@link influenceZoneOfCells} on the wet cells in row-major order.
 */
export function influenceZone(grid: Grid, waterLevelM: Float32Array, options: InfluenceOptions = {}): InfluenceResult {
  const n = grid.width * grid.height;
  if (waterLevelM.length !== n) throw new Error(`water level raster has ${waterLevelM.length} cells; expected ${n}`);
  const { owner, ...rest } = options;
  let count = 0;
  for (let i = 0; i < n; i++) if (waterLevelM[i] === waterLevelM[i]) count++;
  const cells = new Int32Array(count);
  const levelM = new Float32Array(count);
  const owners = owner !== undefined ? new Int32Array(count) : undefined;
  let k = 0;
  for (let i = 0; i < n; i++) {
    const level = waterLevelM[i]!;
    if (level !== level) continue;
    cells[k] = i;
    levelM[k] = level;
    if (owners !== undefined && owner !== undefined) owners[k] = owner[i]!;
    k++;
  }
  return influenceZoneOfCells(grid, owners !== undefined ? { cells, levelM, owner: owners } : { cells, levelM }, rest);
}

/**
 * Classifies every cell of `grid` given the pond cells as a list (see
 * {@link PondCells}). Only the window around the ponds (expanded by the
 * reach) is examined, a row at a time: the distance to the nearest pond cell
 * comes from grid/distance.ts `NearestSeedSweep`, so nothing the size of
 * the window is allocated besides the results.
 */
export function influenceZoneOfCells(grid: Grid, ponds: PondCells, options: Omit<InfluenceOptions, 'owner'> = {}): InfluenceResult {
  const { width, height, z, cellAreaM2 } = grid;
  const n = width * height;
  const distanceM = options.distanceM ?? DEFAULT_RIPARIAN_DISTANCE_M;
  const riseM = options.riseM ?? DEFAULT_RIPARIAN_RISE_M;
  if (!(distanceM >= 0) || !(riseM >= 0)) {
    throw new Error(`riparian distance and rise must be ≥ 0 m; got ${distanceM} m and ${riseM} m`);
  }
  const { valleyBottom } = options;
  const { cells, levelM: pondLevelM, owner } = ponds;
  const count = cells.length;
  if (pondLevelM.length !== count || (owner !== undefined && owner.length !== count)) {
    throw new Error(`pond cells: ${count} cells, ${pondLevelM.length} levels and ${owner?.length ?? count} owners; expected equal counts`);
  }
  const classes = new Uint8Array(n);

  // Window: pond bounding box grown by the reach.
  let r0 = height;
  let r1 = -1;
  let c0 = width;
  let c1 = -1;
  let ownerMax = 0;
  for (let k = 0; k < count; k++) {
    const i = cells[k]!;
    if (!(i >= 0 && i < n)) throw new Error(`pond cell ${i} lies off the ${width} × ${height} grid`);
    const r = (i / width) | 0;
    const c = i - r * width;
    if (r < r0) r0 = r;
    if (r > r1) r1 = r;
    if (c < c0) c0 = c;
    if (c > c1) c1 = c;
    if (owner !== undefined) {
      const o = owner[k]!;
      if (o < 0) throw new Error(`owner ids must be ≥ 0; cell ${i} has ${o}`);
      if (o > ownerMax) ownerMax = o;
    }
  }
  const cellOwner = owner !== undefined ? new Int32Array(n) : undefined;
  const byOwner =
    owner !== undefined
      ? { inundatedAreaM2: new Float64Array(ownerMax + 1), riparianAreaM2: new Float64Array(ownerMax + 1) }
      : undefined;
  const collect = options.candidates;
  if (collect !== undefined && !(collect.distanceMaxM >= distanceM && collect.riseMaxM >= riseM)) {
    throw new Error(`candidate limits (${collect.distanceMaxM} m, ${collect.riseMaxM} m) must be at least the rule's (${distanceM} m, ${riseM} m)`);
  }
  let cand: RiparianCandidates | undefined = collect !== undefined ? emptyCandidates(1024) : undefined;
  if (r1 < 0) return { classes, inundatedAreaM2: 0, riparianAreaM2: 0, influenceAreaM2: 0, cellOwner, byOwner, ...(cand ? { candidates: cand } : {}) };
  const reachM = collect !== undefined ? collect.distanceMaxM : distanceM;
  const riseMaxM = collect !== undefined ? collect.riseMaxM : riseM;

  let minWidthM = Infinity;
  for (let r = 0; r < height; r++) minWidthM = Math.min(minWidthM, grid.cellWidthM[r] ?? Infinity);
  const padCols = Math.ceil(reachM / minWidthM) + 1;
  const padRows = Math.ceil(reachM / grid.cellHeightM) + 1;
  r0 = Math.max(0, r0 - padRows);
  r1 = Math.min(height - 1, r1 + padRows);
  c0 = Math.max(0, c0 - padCols);
  c1 = Math.min(width - 1, c1 + padCols);
  const ww = c1 - c0 + 1;
  const wh = r1 - r0 + 1;

  const seeds = new Int32Array(count);
  for (let k = 0; k < count; k++) {
    const i = cells[k]!;
    const r = (i / width) | 0;
    seeds[k] = (r - r0) * ww + (i - r * width - c0);
  }
  const sweep = new NearestSeedSweep({ width: ww, height: wh, cellWidthM: grid.cellWidthM.subarray(r0, r1 + 1), cellHeightM: grid.cellHeightM }, seeds, reachM);
  const cols = new Int32Array(ww);
  const dist = new Float32Array(ww);
  const nearest = new Int32Array(ww);

  let inundatedAreaM2 = 0;
  let riparianAreaM2 = 0;
  for (let wr = 0; wr < wh; wr++) {
    const within = sweep.row(wr, cols, dist, nearest);
    if (within === 0) continue;
    const r = wr + r0;
    const area = cellAreaM2[r] ?? 0;
    const rowSeed = wr * ww;
    for (let m = 0; m < within; m++) {
      const wc = cols[m]!;
      const k = nearest[m]!;
      const i = r * width + wc + c0;
      if (seeds[k] === rowSeed + wc) {
        classes[i] = INFLUENCE_INUNDATED;
        inundatedAreaM2 += area;
        if (owner !== undefined && cellOwner !== undefined && byOwner !== undefined) {
          const o = owner[k]!;
          cellOwner[i] = o;
          byOwner.inundatedAreaM2[o] = byOwner.inundatedAreaM2[o]! + area;
        }
        continue;
      }
      const dw = dist[m]!;
      if (valleyBottom !== undefined && valleyBottom[i] !== 1) continue;
      const zi = z[i] ?? NaN;
      const levelM = pondLevelM[k]!;
      const inRule = dw <= distanceM && zi <= levelM + riseM; // NaN (NoData) fails
      if (cand !== undefined && zi - levelM <= riseMaxM) {
        if (cand.count === cand.cell.length) cand = growCandidates(cand);
        const j = cand.count++;
        cand.cell[j] = i;
        cand.distanceM[j] = dw;
        cand.riseM[j] = zi - levelM;
        cand.owner[j] = owner !== undefined ? owner[k]! : 0;
        cand.inRule[j] = inRule ? 1 : 0;
      }
      if (!inRule) continue;
      classes[i] = INFLUENCE_RIPARIAN;
      riparianAreaM2 += area;
      if (owner !== undefined && cellOwner !== undefined && byOwner !== undefined) {
        const o = owner[k]!;
        cellOwner[i] = o;
        byOwner.riparianAreaM2[o] = byOwner.riparianAreaM2[o]! + area;
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
    ...(cand ? { candidates: cand } : {}),
  };
}

function emptyCandidates(capacity: number): RiparianCandidates {
  return {
    count: 0,
    cell: new Int32Array(capacity),
    distanceM: new Float32Array(capacity),
    riseM: new Float64Array(capacity),
    owner: new Int32Array(capacity),
    inRule: new Uint8Array(capacity),
  };
}

/** The same list with twice the room. */
function growCandidates(c: RiparianCandidates): RiparianCandidates {
  const out = emptyCandidates(c.cell.length * 2);
  out.count = c.count;
  out.cell.set(c.cell);
  out.distanceM.set(c.distanceM);
  out.riseM.set(c.riseM);
  out.owner.set(c.owner);
  out.inRule.set(c.inRule);
  return out;
}
