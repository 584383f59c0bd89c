/**
 * Ponds that can share cells (cascades), combined in each draw into one
 * water surface exactly as ponds/combine.ts does for the deterministic run:
 * each cell takes the highest level among the ponds that count in the draw
 * and flood it, its water belongs to the pond that sets that level (ties:
 * the lower row), so shared water is counted once.
 *
 * Work per draw is the cells two ponds both flood, not the ponds' areas:
 * a pond's own pond at its level comes from its fill's running sums; then,
 * for every overlapping pair, the common cells below both levels are found
 * by walking the shorter of the pair's two join-sorted prefixes, and the
 * water of each such cell is taken from every pond but its owner (a cell
 * only two ponds reach goes straight to the higher one; a cell three or more
 * reach is settled once among all of them).
 */
import type { DamDrawInput, OverlapCluster, PairList } from './prepare.js';
import { floodedCount, pondAt } from '../ponds/stage-storage.js';
import { lowerBound } from '../grid/sorted-search.js';

/** Reusable per-cluster buffers. */
export interface CascadeScratch {
  stamp: number;
  /** Per member: level, flooded count, water lost to other ponds, lowest ground. */
  h: Float64Array;
  n: Int32Array;
  lostArea: Float64Array;
  lostVolume: Float64Array;
  lostCount: Int32Array;
  lowLost: Uint8Array;
  lowZ: Float64Array;
  /** Draw stamp of the shared cells reached by three or more members, once settled. */
  cellStamp: Int32Array;
}

/** Buffers for a cluster. */
export function createCascadeScratch(cluster: OverlapCluster): CascadeScratch {
  const M = cluster.members.length;
  return {
    stamp: 0,
    h: new Float64Array(M),
    n: new Int32Array(M),
    lostArea: new Float64Array(M),
    lostVolume: new Float64Array(M),
    lostCount: new Int32Array(M),
    lowLost: new Uint8Array(M),
    lowZ: new Float64Array(M),
    cellStamp: new Int32Array(cluster.zM.length),
  };
}

/** Level and inclusion of each member in one draw, and where the result goes. */
export interface CascadeDraw {
  /** Water level of each member on the DEM, m (held at its fill's top here). */
  levelM: Float64Array;
  /** 1 when the member counts in the draw. */
  included: Uint8Array;
  /** Outputs per member: the water it owns, m² and m³, and its deepest owned water, m. */
  areaM2: Float64Array;
  volumeM3: Float64Array;
  maxDepthM: Float64Array;
}

/** Buffers for one draw of a cluster of `members` ponds, reused draw after draw. */
export function createCascadeDraw(members: number): CascadeDraw {
  return {
    levelM: new Float64Array(members),
    included: new Uint8Array(members),
    areaM2: new Float64Array(members),
    volumeM3: new Float64Array(members),
    maxDepthM: new Float64Array(members),
  };
}

/** Combines one draw of a cluster (see the file comment). Members are indexed as in cluster.members. */
export function combineCascade(cluster: OverlapCluster, inputs: (DamDrawInput | null)[], draw: CascadeDraw, s: CascadeScratch): void {
  const members = cluster.members;
  const M = members.length;
  const { h, n, lostArea, lostVolume, lostCount, lowLost, lowZ } = s;
  n.fill(0);
  lostArea.fill(0);
  lostVolume.fill(0);
  lostCount.fill(0);
  lowLost.fill(0);
  for (let p = 0; p < M; p++) {
    if (draw.included[p] === 0) continue;
    const inp = inputs[members[p]!]!;
    h[p] = Math.min(draw.levelM[p]!, inp.fill.topLevelM);
    n[p] = floodedCount(inp.fill, h[p]!);
    if (n[p]! > 0) lowZ[p] = inp.prefixMinZ[n[p]! - 1]!;
  }
  if (s.stamp >= 0x7ffffffe) {
    s.cellStamp.fill(0);
    s.stamp = 0;
  }
  const stamp = ++s.stamp;

  for (const pair of cluster.pairs) {
    const { a, b } = pair;
    if (n[a] === 0 || n[b] === 0) continue;
    const ha = h[a]!;
    const hb = h[b]!;
    // Cells only these two reach go to the higher level (ties: the lower member, a).
    const loser = ha >= hb ? b : a;
    const two = pickPrefix(pair.twoByA, pair.twoByB, ha, hb);
    if (two.count > 0) {
      const list = two.list;
      const last = two.count - 1;
      if (list.maxOther[last]! < two.otherLevel) {
        // Every cell of the prefix is flooded by both: running sums.
        const area = list.cumAreaM2[last]!;
        lostArea[loser]! += area;
        lostVolume[loser]! += h[loser]! * area - list.cumAreaZ[last]!;
        lostCount[loser]! += two.count;
        if (list.minZ[last] === lowZ[loser]) lowLost[loser] = 1;
      } else {
        lostTwo(list, two.count, two.otherLevel, loser, cluster, s);
      }
    }
    // Cells a third member reaches: settled once per draw among all members.
    const multi = pickPrefix(pair.multiByA, pair.multiByB, ha, hb);
    const other = multi.list.other;
    const cells = multi.list.cell;
    for (let j = 0; j < multi.count; j++) {
      if (!(other[j]! < multi.otherLevel)) continue;
      const c = cells[j]!;
      if (s.cellStamp[c] === stamp) continue;
      s.cellStamp[c] = stamp;
      settleCell(cluster, c, s);
    }
  }

  for (let p = 0; p < M; p++) {
    const count = n[p]!;
    if (count === 0 || lostCount[p] === count) {
      draw.areaM2[p] = 0;
      draw.volumeM3[p] = 0;
      draw.maxDepthM[p] = 0;
      continue;
    }
    const inp = inputs[members[p]!]!;
    const own = pondAt(inp.fill, h[p]!);
    const v = own.volumeM3 - lostVolume[p]!;
    draw.areaM2[p] = own.areaM2 - lostArea[p]!;
    draw.volumeM3[p] = v > 0 ? v : 0;
    draw.maxDepthM[p] = lowLost[p] === 0 ? h[p]! - lowZ[p]! : deepestKept(cluster, inp, p, count, s);
  }
}

/** Of a pair's two orderings, the one with the shorter prefix below its pond's level, that prefix's length, and the other pond's level. */
function pickPrefix(byA: PairList, byB: PairList, ha: number, hb: number): { list: PairList; count: number; otherLevel: number } {
  const na = lowerBound(byA.join, ha);
  const nb = lowerBound(byB.join, hb);
  return na <= nb ? { list: byA, count: na, otherLevel: hb } : { list: byB, count: nb, otherLevel: ha };
}

/** Cells only two members reach, in a prefix not all flooded by the other: the loser loses those the other floods. */
function lostTwo(list: PairList, count: number, otherLevel: number, loser: number, cluster: OverlapCluster, s: CascadeScratch): void {
  const hl = s.h[loser]!;
  const low = s.lowZ[loser]!;
  let area = 0;
  let volume = 0;
  let lost = 0;
  for (let j = 0; j < count; j++) {
    if (!(list.other[j]! < otherLevel)) continue;
    const c = list.cell[j]!;
    const ac = cluster.areaM2[c]!;
    area += ac;
    volume += ac * (hl - cluster.zM[c]!);
    lost++;
    if (cluster.zM[c] === low) s.lowLost[loser] = 1;
  }
  s.lostArea[loser]! += area;
  s.lostVolume[loser]! += volume;
  s.lostCount[loser]! += lost;
}

/** Owner of shared cell c in this draw (members flooding it: included with join below their level), or −1. */
function ownerOf(cluster: OverlapCluster, c: number, s: CascadeScratch): number {
  let best = -Infinity;
  let owner = -1;
  for (let e = cluster.cellStart[c]!; e < cluster.cellStart[c + 1]!; e++) {
    const p = cluster.cellMember[e]!;
    const hp = s.h[p]!;
    // Members come in ascending order, so a tie keeps the lower one.
    if (s.n[p]! > 0 && cluster.cellJoin[e]! < hp && hp > best) {
      best = hp;
      owner = p;
    }
  }
  return owner;
}

/** A cell three or more members reach: every flooding member but the owner loses its water there. */
function settleCell(cluster: OverlapCluster, c: number, s: CascadeScratch): void {
  const owner = ownerOf(cluster, c, s);
  const ac = cluster.areaM2[c]!;
  const zc = cluster.zM[c]!;
  for (let e = cluster.cellStart[c]!; e < cluster.cellStart[c + 1]!; e++) {
    const p = cluster.cellMember[e]!;
    if (p === owner || s.n[p] === 0 || !(cluster.cellJoin[e]! < s.h[p]!)) continue;
    s.lostArea[p]! += ac;
    s.lostVolume[p]! += ac * (s.h[p]! - zc);
    s.lostCount[p]!++;
    if (zc === s.lowZ[p]) s.lowLost[p] = 1;
  }
}

/** Deepest water among a pond's flooded cells it keeps (its lowest cell may have gone to another pond): its cells from the lowest up, to the first it keeps. */
function deepestKept(cluster: OverlapCluster, inp: DamDrawInput, p: number, count: number, s: CascadeScratch): number {
  const { sharedIndex, zM, byGround } = inp.shares!;
  for (let x = 0; x < byGround.length; x++) {
    const k = byGround[x]!;
    if (k >= count) continue;
    const c = sharedIndex[k]!;
    if (c >= 0 && ownerOf(cluster, c, s) !== p) continue;
    return s.h[p]! - zM[k]!;
  }
  return 0;
}

