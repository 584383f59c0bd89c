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
 * are combined per draw, and only on the cells both flood in that draw:
 * for every pair of overlapping ponds their common cells are listed twice,
 * sorted by each pond's join level, so a draw walks the shorter of the two
 * prefixes below the ponds' levels (usually the few cells where the
 * downstream pond's backwater reaches into the upstream one).
 */
import type { Grid } from '../grid/grid.js';
import { float32OrderKey, indexOfSorted, radixArgsort } from '../grid/sorted-search.js';
import type { DamInput } from '../inventory.js';
import type { CrestSetup, HeightSource } from '../ponds/crest.js';
import { fillBehindCrest, type FillScratch, type PondFill, type ReachBox } from '../ponds/fill.js';
import type { PondParams } from '../ponds/params.js';
import { floodedCount } from '../ponds/stage-storage.js';
import { buildSupport, sphericalSemivariogram, type ErrorSupport } from './covariance.js';
import { buildEscapeRim, type EscapeRim } from './escape-rim.js';
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
  /** Deterministic water level, m. */
  waterLevelM: number;
  /**
   * Level (m) at which water escapes the deterministic fill below its top
   * (Infinity: it does not). With the DEM error on, `fill` is flooded again
   * with the lowest ways out closed (see escapeRoutes), so it answers above
   * this level, up to the next way out.
   */
  escapeLevelM: number;
  /** Support of the DEM error, or null when that source is off. */
  support: ErrorSupport | null;
  /** For a pond escaping below its crest with the DEM error on: the ground round its ways out, flooded again in every draw (escape-rim.ts); null when it could not be kept, absent otherwise. */
  rim?: EscapeRim | null;
  /** For a measured dam near the height at which it counts as visible in the DEM: what the rule going the other way does (see VisibilityFlip). */
  flip?: VisibilityFlip;
  /** Lowest ground elevation among fill.order[0..k], m. */
  prefixMinZ: Float32Array;
  /** Index into DrawInputs.clusters, or -1 when the pond overlaps no other in any draw. */
  cluster: number;
  /** Cluster members only: the cluster's shared-cell index of each fill entry (−1: no other pond reaches it), its ground (m), and the entries' positions sorted by ground. */
  shares: { sharedIndex: Int32Array; zM: Float32Array; byGround: Int32Array } | null;
}

/** The cells two ponds of a cluster have in common, sorted by one pond's join level. */
export interface PairList {
  /** That pond's join level of each common cell, ascending, m. */
  join: Float64Array;
  /** The other pond's join level of the same cell, m. */
  other: Float64Array;
  /** The cell's shared-cell index in the cluster. */
  cell: Int32Array;
  /** Over entries 0..j: highest `other` (m), Σ area (m²), Σ area × ground (m³), lowest ground (m). */
  maxOther: Float64Array;
  cumAreaM2: Float64Array;
  cumAreaZ: Float64Array;
  minZ: Float64Array;
}

/**
 * Two overlapping ponds (members a < b of a cluster) and their common
 * cells, split into cells only these two reach (`two`) and cells a third
 * member reaches too (`multi`), each sorted by a's and by b's join level.
 */
export interface PairOverlap {
  a: number;
  b: number;
  twoByA: PairList;
  twoByB: PairList;
  multiByA: PairList;
  multiByB: PairList;
}

/** Ponds that share cells in some draw, with the ground and area of the cells they share. */
export interface OverlapCluster {
  /** Dam rows, ascending (the combine's order: ties go to the lower row). */
  members: number[];
  /** Ground elevation and area of each shared cell, m and m². */
  zM: Float64Array;
  areaM2: Float64Array;
  /** Members whose fills reach each shared cell (2, or more: held at 255). */
  reach: Uint8Array;
  /** Shared cell c is reached by members cellMember[cellStart[c] .. cellStart[c + 1]) (ascending) at join levels cellJoin (m). */
  cellStart: Int32Array;
  cellMember: Int32Array;
  cellJoin: Float64Array;
  /** Every pair of members with common cells. */
  pairs: PairOverlap[];
}

/** Everything the draws need, in dam-row order (null for dams not estimated). */
export interface DrawInputs {
  dams: (DamDrawInput | null)[];
  clusters: OverlapCluster[];
  /**
   * The with-proposed scenario's second pass: the groups of overlapping ponds
   * once the designed proposed structures join them (only groups holding at
   * least one such structure; every other group is the same as in
   * `clusters`). `dams` holds, for the members of these groups, copies of
   * their inputs whose `cluster` and `shares` refer to `clusters` here (null
   * elsewhere); `designed` is 1 for a proposed dam with a design height.
   */
  scenario?: { dams: (DamDrawInput | null)[]; clusters: OverlapCluster[]; designed: Uint8Array };
}

/** A dam of a group as the pipeline holds it after flooding. */
export interface GroupMember {
  index: number;
  dam: DamInput;
  /** Whether the dam counts in the deterministic totals. */
  inTotals: boolean;
  setup?: CrestSetup | undefined;
  fill?: PondFill | undefined;
  /** The box the dam's fill was confined to (cells of the group's window); default the whole window. */
  reachBox?: ReachBox | undefined;
}

/** Collects draw inputs group by group during the estimate. */
export interface DrawPrep {
  /** Level (m) to flood a dam to, so every draw of its crest stays inside the fill. */
  floodTopM(dam: DamInput, setup: CrestSetup): number;
  /** Records a group's dams while `grid` (the group's window) is in memory; `scratch` (optional) serves its fills. */
  addGroup(grid: Grid, members: GroupMember[], scratch?: FillScratch): void;
  finish(): DrawInputs;
}

/** A collector for a run of `damCount` dams. */
export function createDrawPrep(u: UncertaintyParams, pond: PondParams, damCount: number): DrawPrep {
  const dams: (DamDrawInput | null)[] = new Array<DamDrawInput | null>(damCount).fill(null);
  const clusters: OverlapCluster[] = [];
  const scenarioDams: (DamDrawInput | null)[] = new Array<DamDrawInput | null>(damCount).fill(null);
  const scenarioClusters: OverlapCluster[] = [];
  const designed = new Uint8Array(damCount);
  const demOn = u.demError && u.demRmseM > 0;
  return {
    floodTopM(dam, setup) {
      if (!setup.holdsWater) return setup.crestElevM;
      const z = FLOOD_TOP_SIGMAS;
      // The DEM term ē − e_ref has variance ≤ 2σ² (covariances are ≥ 0 under the spherical model).
      const demSd = demOn ? Math.SQRT2 * u.demRmseM : 0;
      let heightUpM = 0;
      let heightSd = 0;
      // Proposed structures too: their design height is drawn with the survey error (the with-proposed scenario's draws).
      if (u.heightError && setup.heightSource === 'measured') heightSd = u.heightSurveySdM;
      if (u.heightError && setup.heightSource === 'default') {
        heightUpM = Math.max(0, Math.min(pond.maxHeightM, setup.heightM * Math.pow(u.unmeasuredHeightGsd, z)) - setup.heightM);
      }
      // A DEM-visible dam whose visibility the error can take away: its crest may stand at the crest's lowest point + height.
      const flip = demOn ? visibilityFlipOf(setup, u, pond) : null;
      const flipUpM = flip && flip.visible ? flip.deltaM : 0;
      return setup.crestElevM + flipUpM + heightUpM + z * Math.sqrt(heightSd * heightSd + demSd * demSd);
    },
    addGroup(grid, members, scratch) {
      const eligible: GroupMember[] = [];
      for (const m of members) {
        if (!m.fill || !m.setup) continue;
        const input = damInput(grid, m, u, pond, demOn, this.floodTopM(m.dam, m.setup), scratch);
        dams[m.index] = input;
        if (input.fill.order.length > 0 && mayCount(m, u)) eligible.push(m);
      }
      for (const group of overlapGroups(grid, eligible)) {
        const c = clusters.length;
        clusters.push(buildCluster(grid, group, dams, c));
      }
      // Second pass for the with-proposed scenario: the same grouping with the designed proposals in.
      const proposals = members.filter((m) => isDesigned(m) && dams[m.index] !== null && m.fill!.order.length > 0);
      if (proposals.length === 0) return;
      for (const m of proposals) designed[m.index] = 1;
      for (const group of overlapGroups(grid, [...eligible, ...proposals].sort((a, b) => a.index - b.index))) {
        if (!group.some((m) => designed[m.index] === 1)) continue;
        for (const m of group) scenarioDams[m.index] = { ...dams[m.index]!, cluster: -1, shares: null };
        const c = scenarioClusters.length;
        scenarioClusters.push(buildCluster(grid, group, scenarioDams, c));
      }
    },
    finish() {
      return { dams, clusters, scenario: { dams: scenarioDams, clusters: scenarioClusters, designed } };
    },
  };
}

/** A proposed structure with a design height (as pipeline/scenarios.ts isDesignedProposal). */
function isDesigned(m: GroupMember): boolean {
  return m.dam.status === 'proposed' && m.fill !== undefined && m.setup !== undefined && m.setup.heightSource === 'measured';
}

/** Whether a dam's water can count in the totals in some draw. */
function mayCount(m: GroupMember, u: UncertaintyParams): boolean {
  if (m.dam.status === 'proposed') return false;
  if (m.dam.status === 'candidate' && u.candidates) return (m.dam.confidence ?? 1) > 0;
  return m.inTotals;
}

function damInput(grid: Grid, m: GroupMember, u: UncertaintyParams, pond: PondParams, demOn: boolean, floodTopM: number, scratch: FillScratch | undefined): DamDrawInput {
  const setup = m.setup!;
  const escapeLevelM = m.fill!.escapeKind !== null ? m.fill!.escapeLevelM : Infinity;
  // With the DEM error on, a pond whose water escapes below its crest gets its next ways out and a fill with
  // them closed. (A pond held by its crest whose fill escapes higher up, within the draws' reach, keeps the
  // one pass: few draws reach it, and finding the others would cost a flood each for every such dam.)
  const escapeLimited = m.fill!.escapeKind !== null && m.fill!.limitedBy !== 'crest';
  const routes = demOn && setup.holdsWater && escapeLimited ? escapeRoutes(grid, setup, m.fill!, floodTopM, m.reachBox, u.demRmseM, scratch) : null;
  const fill = routes ? routes.fill : m.fill!;
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
  let rim: EscapeRim | null | undefined;
  let flip: VisibilityFlip | undefined;
  if (demOn && setup.holdsWater) {
    // The deterministic pond's cells (the fill with ways out closed starts with the same cells).
    let count = floodedCount(fill, m.fill!.waterLevelM);
    if (count === 0) count = n;
    const refRow = Math.floor(setup.levelRefCell / grid.width);
    const alts = referenceAlternatives(grid, setup, u.demRmseM, u.demErrorRangeM);
    let passCells = routes?.passCells ?? (fill.escapeKind !== null ? Int32Array.of(fill.escapePassCell) : new Int32Array(0));
    let passDeltaM = routes?.passDeltaM ?? (fill.escapeKind !== null ? Float64Array.of(0) : new Float64Array(0));
    const found = visibilityFlipOf(setup, u, pond);
    if (found) {
      // The other cell the crest could be measured from, drawn with the passes (never a way out: Δ = ∞).
      flip = { ...found, jointIndex: 2 + passCells.length };
      passCells = Int32Array.from([...passCells, found.otherCell]);
      passDeltaM = Float64Array.from([...passDeltaM, Infinity]);
    }
    support = buildSupport({
      cells: fill.order.subarray(0, count),
      width: grid.width,
      colOffset: grid.colOffset,
      rowOffset: grid.rowOffset,
      cellAreaM2: grid.cellAreaM2,
      refCell: setup.levelRefCell,
      cellWM: grid.cellWidthM[refRow]!,
      cellHM: grid.cellHeightM,
      blockM: u.demErrorRangeM / 4,
      altCells: alts.cells,
      altDeltaM: alts.deltaM,
      passCells,
      passDeltaM,
    });
    if (routes) {
      rim = buildEscapeRim({ grid, setup, fill: m.fill!, closed: routes.fill, support, floodTopM, reachBox: m.reachBox, sigmaM: u.demRmseM, rangeM: u.demErrorRangeM, scratch });
    }
  }
  return {
    index: m.index,
    id: m.dam.id,
    fill,
    heightSource: setup.heightSource,
    heightM: setup.heightM,
    crestElevM: setup.crestElevM,
    holdsWater: setup.holdsWater,
    waterLevelM: m.fill!.waterLevelM,
    escapeLevelM,
    support,
    ...(rim !== undefined ? { rim } : {}),
    ...(flip ? { flip } : {}),
    prefixMinZ,
    cluster: -1,
    shares: null,
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

/** Shared cells of a set of overlapping ponds, each member's map to them, and the pairs' common cells. */
function buildCluster(grid: Grid, group: GroupMember[], dams: (DamDrawInput | null)[], clusterIndex: number): OverlapCluster {
  const { width, z, cellAreaM2 } = grid;
  const M = group.length;
  // Cells reached by two or more members: sort every member's cells and keep the repeated ones.
  let total = 0;
  for (const m of group) total += m.fill!.order.length;
  const all = new Int32Array(total);
  let at = 0;
  for (const m of group) {
    all.set(m.fill!.order, at);
    at += m.fill!.order.length;
  }
  all.sort();
  const repeated = new Int32Array(total >> 1);
  let shared = 0;
  for (let k = 1; k < total; k++) {
    if (all[k] === all[k - 1] && (shared === 0 || repeated[shared - 1] !== all[k])) repeated[shared++] = all[k]!;
  }
  const sharedCells = repeated.slice(0, shared);
  const zM = new Float64Array(shared);
  const areaM2 = new Float64Array(shared);
  for (let c = 0; c < shared; c++) {
    const i = sharedCells[c]!;
    zM[c] = z[i]!;
    areaM2[c] = cellAreaM2[Math.floor(i / width)]!;
  }

  // Each member's shared entries; then, per shared cell, the members reaching it with their join levels.
  const perCell = new Int32Array(shared + 1);
  group.forEach((m) => {
    const order = m.fill!.order;
    const sharedIndex = new Int32Array(order.length);
    const zAt = new Float32Array(order.length);
    const byGround = new Int32Array(order.length);
    for (let k = 0; k < order.length; k++) {
      const c = indexOfSorted(sharedCells, order[k]!);
      sharedIndex[k] = c;
      zAt[k] = z[order[k]!]!;
      byGround[k] = k;
      if (c >= 0) perCell[c + 1]!++;
    }
    const groundKey = new Uint32Array(order.length);
    for (let k = 0; k < order.length; k++) groundKey[k] = float32OrderKey(zAt[k]!);
    byGround.set(radixArgsort(order.length, [groundKey]));
    const input = dams[m.index]!;
    input.cluster = clusterIndex;
    input.shares = { sharedIndex, zM: zAt, byGround };
  });
  for (let c = 0; c < shared; c++) perCell[c + 1]! += perCell[c]!;
  const events = perCell[shared]!;
  const evMember = new Int32Array(events);
  const evJoin = new Float64Array(events);
  const next = perCell.slice(0, shared);
  group.forEach((m, p) => {
    const sharedIndex = dams[m.index]!.shares!.sharedIndex;
    const join = m.fill!.joinM;
    for (let k = 0; k < sharedIndex.length; k++) {
      const c = sharedIndex[k]!;
      if (c < 0) continue;
      const e = next[c]!++;
      evMember[e] = p;
      evJoin[e] = join[k]!;
    }
  });

  // Pairs: count the common cells of each, then fill their lists.
  const pairOf = new Map<number, number>();
  const pairCount: number[] = [];
  const pairMembers: [number, number][] = [];
  for (let c = 0; c < shared; c++) {
    for (let x = perCell[c]!; x < perCell[c + 1]!; x++) {
      for (let y = x + 1; y < perCell[c + 1]!; y++) {
        const key = evMember[x]! * M + evMember[y]!;
        let id = pairOf.get(key);
        if (id === undefined) {
          id = pairCount.length;
          pairOf.set(key, id);
          pairCount.push(0);
          pairMembers.push([evMember[x]!, evMember[y]!]);
        }
        pairCount[id]!++;
      }
    }
  }
  const raw = pairCount.map((n) => ({ joinA: new Float64Array(n), joinB: new Float64Array(n), cell: new Int32Array(n), fill: 0 }));
  for (let c = 0; c < shared; c++) {
    for (let x = perCell[c]!; x < perCell[c + 1]!; x++) {
      for (let y = x + 1; y < perCell[c + 1]!; y++) {
        const r = raw[pairOf.get(evMember[x]! * M + evMember[y]!)!]!;
        r.joinA[r.fill] = evJoin[x]!;
        r.joinB[r.fill] = evJoin[y]!;
        r.cell[r.fill] = c;
        r.fill++;
      }
    }
  }
  const reach = new Uint8Array(shared);
  for (let c = 0; c < shared; c++) reach[c] = Math.min(255, perCell[c + 1]! - perCell[c]!);
  const shares = { zM, areaM2, reach };
  const pairs: PairOverlap[] = raw.map((r, id) => ({
    a: pairMembers[id]![0],
    b: pairMembers[id]![1],
    twoByA: sortedList(r.joinA, r.joinB, r.cell, shares, false),
    twoByB: sortedList(r.joinB, r.joinA, r.cell, shares, false),
    multiByA: sortedList(r.joinA, r.joinB, r.cell, shares, true),
    multiByB: sortedList(r.joinB, r.joinA, r.cell, shares, true),
  }));
  return { members: group.map((m) => m.index), zM, areaM2, reach, cellStart: perCell, cellMember: evMember, cellJoin: evJoin, pairs };
}

/** Sorts entry positions `idx` by join level, ties by cell (join levels are ground elevations, float32 values). */
function sortByJoinThenCell(idx: Uint32Array, join: Float64Array, cell: Int32Array): void {
  const n = idx.length;
  const joinKey = new Uint32Array(n);
  const cellKey = new Uint32Array(n);
  for (let k = 0; k < n; k++) {
    const j = join[idx[k]!]!;
    if (Math.fround(j) !== j) {
      idx.sort((x, y) => join[x]! - join[y]! || cell[x]! - cell[y]!);
      return;
    }
    joinKey[k] = float32OrderKey(j);
    cellKey[k] = cell[idx[k]!]! >>> 0;
  }
  const perm = radixArgsort(n, [joinKey, cellKey]);
  const sorted = Uint32Array.from(perm, (p) => idx[p]!);
  idx.set(sorted);
}

/** Common cells (those a third member reaches when `multi`, else the others) sorted by `join` ascending (ties by cell), with running figures. */
function sortedList(
  join: Float64Array,
  other: Float64Array,
  cell: Int32Array,
  shared: { zM: Float64Array; areaM2: Float64Array; reach: Uint8Array },
  multi: boolean,
): PairList {
  let n = 0;
  for (let k = 0; k < cell.length; k++) if (shared.reach[cell[k]!] !== 2 === multi) n++;
  const idx = new Uint32Array(n);
  n = 0;
  for (let k = 0; k < cell.length; k++) if (shared.reach[cell[k]!] !== 2 === multi) idx[n++] = k;
  sortByJoinThenCell(idx, join, cell);
  const out: PairList = {
    join: new Float64Array(n),
    other: new Float64Array(n),
    cell: new Int32Array(n),
    maxOther: new Float64Array(n),
    cumAreaM2: new Float64Array(n),
    cumAreaZ: new Float64Array(n),
    minZ: new Float64Array(n),
  };
  let maxOther = -Infinity;
  let sumA = 0;
  let sumAZ = 0;
  let low = Infinity;
  for (let k = 0; k < n; k++) {
    const j = idx[k]!;
    const c = cell[j]!;
    out.join[k] = join[j]!;
    out.other[k] = other[j]!;
    out.cell[k] = c;
    if (other[j]! > maxOther) maxOther = other[j]!;
    sumA += shared.areaM2[c]!;
    sumAZ += shared.areaM2[c]! * shared.zM[c]!;
    if (shared.zM[c]! < low) low = shared.zM[c]!;
    out.maxOther[k] = maxOther;
    out.cumAreaM2[k] = sumA;
    out.cumAreaZ[k] = sumAZ;
    out.minZ[k] = low;
  }
  return out;
}


/**
 * A measured dam standing near the height at which pondage counts it as
 * visible in the DEM (crest.ts rule 4; within VISIBILITY_FLIP_SDS standard
 * deviations of the crest–toe error difference). Visible, its crest is the
 * toe + height; not visible, the crest's lowest point + height, ΔM higher.
 * On the true ground the rule is taken again on the margin moved by the
 * error difference, margin − (e_crest − e_toe): where it goes the other
 * way, the draw's crest moves by ±ΔM and is measured from the other cell.
 */
export interface VisibilityFlip {
  /** Whether the DEM has the dam visible (crest from the toe). */
  visible: boolean;
  /** The visibility margin on the DEM (CrestSetup.visibilityMarginM), m. */
  marginM: number;
  /** Crest's lowest DEM point − toe, m: how much higher the crest stands measured from the crest. */
  deltaM: number;
  /** The cell the crest is not measured from on the DEM (the crest's lowest when visible, else the toe). */
  otherCell: number;
  /** Its error's place in the dam's jointly drawn errors ([e_ref, ē, points...]). */
  jointIndex: number;
}

/** Standard deviations of the crest–toe error difference within which a dam's visibility is drawn. */
export const VISIBILITY_FLIP_SDS = 4;

/** The visibility flip of a measured dam, or null when it stands clear of the rule (or has no toe). */
function visibilityFlipOf(setup: CrestSetup, u: UncertaintyParams, pond: PondParams): Omit<VisibilityFlip, 'jointIndex'> | null {
  if (setup.heightSource !== 'measured' || !setup.holdsWater || setup.toeCell < 0 || !(u.demRmseM > 0)) return null;
  const margin = setup.visibilityMarginM;
  const sd = Math.sqrt(2 * sphericalSemivariogram(pond.probeM, u.demRmseM * u.demRmseM, u.demErrorRangeM));
  if (!(Math.abs(margin) < VISIBILITY_FLIP_SDS * sd)) return null;
  return { visible: setup.demVisible, marginM: margin, deltaM: setup.crestLowM - setup.probeDownM, otherCell: setup.demVisible ? setup.bedCell : setup.toeCell };
}

/**
 * The crest of a draw for a dam with a visibility flip: the crest elevation
 * shift (m) and the reference error (m) when the rule goes the other way on
 * the true ground, or null when it does not. `joint[o ..]` are the dam's
 * jointly drawn errors; the engine's frame (true ground z − e).
 */
export function flippedCrest(flip: VisibilityFlip, joint: ArrayLike<number>, o: number): { shiftM: number; refErrorM: number } | null {
  const eRef = joint[o]!;
  const eOther = joint[o + flip.jointIndex]!;
  const eCrest = flip.visible ? eOther : eRef;
  const eToe = flip.visible ? eRef : eOther;
  const visible = flip.marginM - eCrest + eToe >= 0;
  if (visible === flip.visible) return null;
  return { shiftM: flip.visible ? flip.deltaM : -flip.deltaM, refErrorM: eOther };
}

/** Most alternatives to a dam's reference cell drawn with it. */
export const MAX_REFERENCE_ALTERNATIVES = 8;
/** An alternative counts while it stands less than this many standard deviations of the error difference above the reference. */
const ALTERNATIVE_SDS = 4;

/**
 * The cells that could be the lowest of those a dam's crest elevation is
 * measured from (CrestSetup.levelCells) once the DEM error is added: every
 * other cell whose height above the reference cell, Δz, is under
 * ALTERNATIVE_SDS standard deviations of the two cells' error difference,
 * √(2·γ(h)) for the spherical model at their distance h; the
 * MAX_REFERENCE_ALTERNATIVES likeliest (smallest Δz per standard deviation).
 * Flat indices of `grid` and Δz in metres.
 */
export function referenceAlternatives(grid: Grid, setup: CrestSetup, sigmaM: number, rangeM: number): { cells: Int32Array; deltaM: Float64Array } {
  const { z, width } = grid;
  const ref = setup.levelRefCell;
  const refCol = ref % width;
  const refRow = (ref - refCol) / width;
  const zRef = z[ref]!;
  const found: { cell: number; deltaM: number; score: number }[] = [];
  for (let k = 0; k < setup.levelCells.length; k++) {
    const i = setup.levelCells[k]!;
    if (i === ref) continue;
    const col = i % width;
    const row = (i - col) / width;
    const dx = (col - refCol) * grid.cellWidthM[row]!;
    const dy = (row - refRow) * grid.cellHeightM;
    const sd = Math.sqrt(2 * sphericalSemivariogram(Math.hypot(dx, dy), sigmaM * sigmaM, rangeM));
    const deltaM = z[i]! - zRef;
    if (!(sd > 0) || !(deltaM < ALTERNATIVE_SDS * sd)) continue;
    found.push({ cell: i, deltaM, score: deltaM / sd });
  }
  found.sort((a, b) => a.score - b.score || a.cell - b.cell);
  const kept = found.slice(0, MAX_REFERENCE_ALTERNATIVES);
  return { cells: Int32Array.from(kept, (f) => f.cell), deltaM: Float64Array.from(kept, (f) => f.deltaM) };
}

/** Most ways out of a pond drawn with it (the lowest and the next ones). */
export const MAX_ESCAPE_ROUTES = 6;

/**
 * The lowest ways out of a pond that escapes below its top: the pass of the
 * deterministic fill (the cell whose elevation set the escape level), then,
 * with that pass made a wall, the pass of the next way out, and so on while
 * the next escape level stands less than ALTERNATIVE_SDS·√2·σ above the
 * first (beyond, its own error could hardly make it the lowest), at most
 * MAX_ESCAPE_ROUTES. On the true ground the lowest of them lets the water
 * out. Also returns the fill with all those passes closed, flooded to the
 * draws' top: it answers for levels above the first escape (the pond whose
 * pass stands higher than the DEM shows grows over the ground behind it).
 * The routes closed are parallel ways out; that a route's highest point may
 * move along it under the error is not modelled.
 */
export function escapeRoutes(
  grid: Grid,
  setup: CrestSetup,
  fill: PondFill,
  floodTopM: number,
  reachBox: ReachBox | undefined,
  sigmaM: number,
  scratch: FillScratch | undefined,
): { passCells: Int32Array; passDeltaM: Float64Array; fill: PondFill } {
  const first = fill.escapeLevelM;
  const reachM = ALTERNATIVE_SDS * Math.SQRT2 * sigmaM;
  const passes = [fill.escapePassCell];
  const deltas = [0];
  // A pass where the flood starts (a seed cell) lets the water out at once: no other way out to close.
  const seeds = new Set(setup.seedCells);
  if (seeds.has(fill.escapePassCell)) return { passCells: Int32Array.from(passes), passDeltaM: Float64Array.from(deltas), fill };
  const options = { maxLevelM: Math.max(floodTopM, fill.topLevelM), ...(reachBox ? { reachBox } : {}) };
  let closed = fillBehindCrest(grid, setup, { ...options, wallCells: Int32Array.from(passes) }, scratch);
  while (
    closed.escapeKind !== null &&
    passes.length < MAX_ESCAPE_ROUTES &&
    closed.escapeLevelM - first < reachM &&
    closed.escapePassCell >= 0 &&
    !seeds.has(closed.escapePassCell)
  ) {
    passes.push(closed.escapePassCell);
    deltas.push(closed.escapeLevelM - first);
    closed = fillBehindCrest(grid, setup, { ...options, wallCells: Int32Array.from(passes) }, scratch);
  }
  return { passCells: Int32Array.from(passes), passDeltaM: Float64Array.from(deltas), fill: closed };
}
