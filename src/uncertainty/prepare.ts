/**
 * What the draws need from each dam, captured while its group's DEM window
 * is in memory: the fill (flooded once, up to the highest level any draw
 * can reach), the lowest ground along the fill order (for depths), the
 * pond's support for the DEM error, and the groups of ponds that can overlap
 * in some draw with cell tables for their per-draw union.
 *
 * Overlap is found once from the fills up to their tops: two ponds that
 * share no cell at their highest drawn levels never share one in any draw,
 * so their volumes simply add. Only ponds that do share cells (cascades)
 * are combined per draw.
 */
import type { Grid } from '../grid/grid.js';
import type { DamInput } from '../inventory.js';
import type { CrestSetup, HeightSource } from '../ponds/crest.js';
import type { PondFill } from '../ponds/fill.js';
import type { PondParams } from '../ponds/params.js';
import { floodedCount } from '../ponds/stage-storage.js';
import { buildSupport, type ErrorSupport } from './covariance.js';
import { FLOOD_TOP_SIGMAS, type UncertaintyParams } from './params.js';

/** One estimated dam as the draws see it. */
export interface DamDrawInput {
  /** Row of the dam in the run's dam list. */
  index: number;
  id: string;
  fill: PondFill;
  heightSource: HeightSource;
  /** Deterministic crest height above the bed, m. */
  heightM: number;
  /** Deterministic crest elevation, m. */
  crestElevM: number;
  /** True for a dam that holds water (false: breached with no breach height). */
  holdsWater: boolean;
  /** Support of the DEM error, or null when that source is off. */
  support: ErrorSupport | null;
  /** Lowest ground elevation among fill.order[0..k], m. */
  prefixMinZ: Float32Array;
  /** Index into DrawInputs.clusters, or -1 when the pond overlaps no other in any draw. */
  cluster: number;
  /** Cluster members only: the cluster-local cell of each fill entry. */
  localCells: Int32Array | null;
}

/** Ponds that share cells in some draw, with the ground and area of their cells. */
export interface OverlapCluster {
  /** Dam rows, ascending (the combine's order: ties go to the lower row). */
  members: number[];
  /** Ground elevation and area of each cluster-local cell, m and m². */
  zM: Float64Array;
  areaM2: Float64Array;
}

/** Everything the draws need, in dam-row order (null for dams not estimated). */
export interface DrawInputs {
  dams: (DamDrawInput | null)[];
  clusters: OverlapCluster[];
}

/** A dam of a group as the pipeline holds it after flooding. */
export interface GroupMember {
  index: number;
  dam: DamInput;
  /** Whether the dam counts in the deterministic totals. */
  inTotals: boolean;
  setup?: CrestSetup | undefined;
  fill?: PondFill | undefined;
}

/** Collects draw inputs group by group during the estimate. */
export interface DrawPrep {
  /** Level (m) to flood a dam to, so every draw of its crest stays inside the fill. */
  floodTopM(dam: DamInput, setup: CrestSetup): number;
  /** Records a group's dams while `grid` (the group's window) is in memory. */
  addGroup(grid: Grid, members: GroupMember[]): void;
  finish(): DrawInputs;
}

/** A collector for a run of `damCount` dams. */
export function createDrawPrep(u: UncertaintyParams, pond: PondParams, damCount: number): DrawPrep {
  const dams: (DamDrawInput | null)[] = new Array<DamDrawInput | null>(damCount).fill(null);
  const clusters: OverlapCluster[] = [];
  const demOn = u.demError && u.demRmseM > 0;
  return {
    floodTopM(dam, setup) {
      if (!setup.holdsWater) return setup.crestElevM;
      const z = FLOOD_TOP_SIGMAS;
      // The DEM term ē − e_ref has variance ≤ 2σ² (covariances are ≥ 0 under the spherical model).
      const demSd = demOn ? Math.SQRT2 * u.demRmseM : 0;
      let heightUpM = 0;
      let heightSd = 0;
      if (u.heightError && setup.heightSource === 'measured' && dam.status !== 'proposed') heightSd = u.heightSurveySdM;
      if (u.heightError && setup.heightSource === 'default') {
        heightUpM = Math.max(0, Math.min(pond.maxHeightM, setup.heightM * Math.pow(u.unmeasuredHeightGsd, z)) - setup.heightM);
      }
      return setup.crestElevM + heightUpM + z * Math.sqrt(heightSd * heightSd + demSd * demSd);
    },
    addGroup(grid, members) {
      const eligible: GroupMember[] = [];
      for (const m of members) {
        if (!m.fill || !m.setup) continue;
        const input = damInput(grid, m, u, demOn);
        dams[m.index] = input;
        if (input.fill.order.length > 0 && mayCount(m, u)) eligible.push(m);
      }
      for (const group of overlapGroups(grid, eligible)) {
        const c = clusters.length;
        clusters.push(buildCluster(grid, group, dams, c));
      }
    },
    finish() {
      return { dams, clusters };
    },
  };
}

/** Whether a dam's water can count in the totals in some draw. */
function mayCount(m: GroupMember, u: UncertaintyParams): boolean {
  if (m.dam.status === 'proposed') return false;
  if (m.dam.status === 'candidate' && u.candidates) return (m.dam.confidence ?? 1) > 0;
  return m.inTotals;
}

function damInput(grid: Grid, m: GroupMember, u: UncertaintyParams, demOn: boolean): DamDrawInput {
  const fill = m.fill!;
  const setup = m.setup!;
  const z = grid.z;
  const n = fill.order.length;
  const prefixMinZ = new Float32Array(n);
  let low = Infinity;
  for (let k = 0; k < n; k++) {
    const zi = z[fill.order[k]!]!;
    if (zi < low) low = zi;
    prefixMinZ[k] = low;
  }
  let support: ErrorSupport | null = null;
  if (demOn && setup.holdsWater) {
    let count = floodedCount(fill, fill.waterLevelM);
    if (count === 0) count = n;
    const bedRow = Math.floor(setup.bedCell / grid.width);
    support = buildSupport({
      cells: fill.order.subarray(0, count),
      width: grid.width,
      colOffset: grid.colOffset,
      rowOffset: grid.rowOffset,
      cellAreaM2: grid.cellAreaM2,
      refCell: setup.bedCell,
      cellWM: grid.cellWidthM[bedRow]!,
      cellHM: grid.cellHeightM,
      blockM: u.demErrorRangeM / 6,
    });
  }
  return {
    index: m.index,
    id: m.dam.id,
    fill,
    heightSource: setup.heightSource,
    heightM: setup.heightM,
    crestElevM: setup.crestElevM,
    holdsWater: setup.holdsWater,
    support,
    prefixMinZ,
    cluster: -1,
    localCells: null,
  };
}

/** Cell bounding box of a fill, window cells [c0, c1] × [r0, r1]. */
interface Box {
  c0: number;
  c1: number;
  r0: number;
  r1: number;
}

function fillBox(fill: PondFill, width: number): Box {
  const b = { c0: Infinity, c1: -Infinity, r0: Infinity, r1: -Infinity };
  const order = fill.order;
  for (let k = 0; k < order.length; k++) {
    const i = order[k]!;
    const col = i % width;
    const row = (i - col) / width;
    if (col < b.c0) b.c0 = col;
    if (col > b.c1) b.c1 = col;
    if (row < b.r0) b.r0 = row;
    if (row > b.r1) b.r1 = row;
  }
  return b;
}

/** Sets of ponds (at least two) that share a cell at their tops, transitively; members by row. */
function overlapGroups(grid: Grid, eligible: GroupMember[]): GroupMember[][] {
  const { width } = grid;
  const boxes = eligible.map((m) => fillBox(m.fill!, width));
  const parent = eligible.map((_, i) => i);
  const find = (i: number): number => {
    let r = i;
    while (parent[r]! !== r) r = parent[r]!;
    return r;
  };
  let marks = new Uint8Array(0);
  for (let p = 0; p < eligible.length; p++) {
    for (let q = p + 1; q < eligible.length; q++) {
      const a = boxes[p]!;
      const b = boxes[q]!;
      const c0 = Math.max(a.c0, b.c0);
      const c1 = Math.min(a.c1, b.c1);
      const r0 = Math.max(a.r0, b.r0);
      const r1 = Math.min(a.r1, b.r1);
      if (c0 > c1 || r0 > r1 || find(p) === find(q)) continue;
      const w = c1 - c0 + 1;
      const size = w * (r1 - r0 + 1);
      if (marks.length < size) marks = new Uint8Array(size);
      else marks.fill(0, 0, size);
      const op = eligible[p]!.fill!.order;
      for (let k = 0; k < op.length; k++) {
        const i = op[k]!;
        const col = i % width;
        const row = (i - col) / width;
        if (col >= c0 && col <= c1 && row >= r0 && row <= r1) marks[(row - r0) * w + (col - c0)] = 1;
      }
      const oq = eligible[q]!.fill!.order;
      for (let k = 0; k < oq.length; k++) {
        const i = oq[k]!;
        const col = i % width;
        const row = (i - col) / width;
        if (col >= c0 && col <= c1 && row >= r0 && row <= r1 && marks[(row - r0) * w + (col - c0)] === 1) {
          parent[find(q)] = find(p);
          break;
        }
      }
    }
  }
  const byRoot = new Map<number, GroupMember[]>();
  eligible.forEach((m, i) => {
    const r = find(i);
    const list = byRoot.get(r);
    if (list) list.push(m);
    else byRoot.set(r, [m]);
  });
  return [...byRoot.values()].filter((g) => g.length > 1).map((g) => g.sort((a, b) => a.index - b.index));
}

/** Cluster-local cell numbering, ground and areas for a set of overlapping ponds. */
function buildCluster(grid: Grid, group: GroupMember[], dams: (DamDrawInput | null)[], clusterIndex: number): OverlapCluster {
  const { width, z, cellAreaM2 } = grid;
  const box = { c0: Infinity, c1: -Infinity, r0: Infinity, r1: -Infinity };
  for (const m of group) {
    const b = fillBox(m.fill!, width);
    box.c0 = Math.min(box.c0, b.c0);
    box.c1 = Math.max(box.c1, b.c1);
    box.r0 = Math.min(box.r0, b.r0);
    box.r1 = Math.max(box.r1, b.r1);
  }
  const w = box.c1 - box.c0 + 1;
  const local = new Int32Array(w * (box.r1 - box.r0 + 1)).fill(-1);
  let total = 0;
  for (const m of group) total += m.fill!.order.length;
  const zs = new Float64Array(total);
  const areas = new Float64Array(total);
  let count = 0;
  for (const m of group) {
    const order = m.fill!.order;
    const cells = new Int32Array(order.length);
    for (let k = 0; k < order.length; k++) {
      const i = order[k]!;
      const col = i % width;
      const row = (i - col) / width;
      const b = (row - box.r0) * w + (col - box.c0);
      let c = local[b]!;
      if (c < 0) {
        c = count++;
        local[b] = c;
        zs[c] = z[i]!;
        areas[c] = cellAreaM2[row]!;
      }
      cells[k] = c;
    }
    const input = dams[m.index]!;
    input.cluster = clusterIndex;
    input.localCells = cells;
  }
  return { members: group.map((m) => m.index), zM: zs.slice(0, count), areaM2: areas.slice(0, count) };
}
