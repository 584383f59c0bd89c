/**
 * Riparian area for any riparian distance D and rise Δz, without
 * recomputing the influence zone: per owner (dam), a summed-area table of
 * the candidate riparian cells (influence/zone.ts `candidates`) over
 * distance bins × rise bins. A Monte Carlo draw's riparian area for
 * (D_k, Δz_k) is then four table reads per owner.
 *
 * Bins. Distance edges are e_m = D₀ + (m − m₀)·bD and rise edges
 * g_j = Δz₀ + (j − j₀)·bZ, where (D₀, Δz₀) are the deterministic limits, so
 * the deterministic limits are edges. A cell lies in the distance bin m with
 * e_{m−1} < distance ≤ e_m (bin 0 holds everything up to e₀) and likewise for
 * rise; cells riparian under the deterministic rule (`inRule`) are put at or
 * below (m₀, j₀) and the others above, so the table at (m₀, j₀) holds exactly
 * the deterministic zone's cells. Table entry T[m][j] is the area of the
 * cells with distance bin ≤ m and rise bin ≤ j, i.e. with distance ≤ e_m and
 * rise ≤ g_j: exact at the edges. Between edges the area is interpolated
 * bilinearly; its error is at most the area of the cells in the boundary
 * strips, T[m][j] − T[m−1][j−1] for the bin (m, j) that holds (D_k, Δz_k)
 * ({@link riparianErrorBoundM2} gives it per lookup).
 *
 * The table knows only the candidate cells, i.e. the deterministic ponds'
 * extents and nearest pond cells: a draw's own pond changes the inundated
 * area, not the fringe's distances (the approximation is stated in
 * summary.json by the draws stage).
 */
import type { RiparianCandidates } from './zone.js';

/** Bins of distance and rise and the per-owner tables. */
export interface RiparianTables {
  /** Deterministic limits (edges m₀ and j₀), m. */
  distanceM: number;
  riseM: number;
  /** Bin widths, m. */
  distanceBinM: number;
  riseBinM: number;
  /** Index of the deterministic edges and the number of edges of each axis. */
  distanceEdge0: number;
  riseEdge0: number;
  distanceEdges: number;
  riseEdges: number;
  /** Number of owners (ids 0 … owners − 1). */
  owners: number;
  /** Owner id → table slot (−1: no candidate cells). */
  slotOf: Int32Array;
  /** Summed-area tables, slot-major: slot·(distanceEdges·riseEdges) + m·riseEdges + j, m². */
  table: Float64Array;
}

/** Bins per axis of a table: 128 between the lowest and the highest limit a draw can take. */
export const RIPARIAN_TABLE_BINS = 128;

/**
 * Builds the per-owner tables from the candidates of a zone computed with
 * the largest limits (`distanceMaxM`, `riseMaxM`) and the rule's own
 * (`distanceM`, `riseM`). `distanceMinM`/`riseMinM` are the smallest limits
 * a draw can take (edges start at or below them); `cellAreaM2OfRow` and
 * `width` give each candidate's area; `owners` is one more than the largest
 * owner id.
 */
export function buildRiparianTables(args: {
  candidates: RiparianCandidates;
  width: number;
  cellAreaM2OfRow: Float64Array;
  owners: number;
  distanceM: number;
  riseM: number;
  distanceMinM: number;
  distanceMaxM: number;
  riseMinM: number;
  riseMaxM: number;
  bins?: number;
}): RiparianTables {
  const { candidates: c, width, cellAreaM2OfRow, owners, distanceM, riseM } = args;
  const bins = args.bins ?? RIPARIAN_TABLE_BINS;
  const dSpan = args.distanceMaxM - args.distanceMinM;
  const zSpan = args.riseMaxM - args.riseMinM;
  const bD = dSpan > 0 ? dSpan / bins : 1;
  const bZ = zSpan > 0 ? zSpan / bins : 1;
  const m0 = Math.max(0, Math.ceil((distanceM - args.distanceMinM) / bD - 1e-9));
  const j0 = Math.max(0, Math.ceil((riseM - args.riseMinM) / bZ - 1e-9));
  const MD = m0 + Math.max(0, Math.ceil((args.distanceMaxM - distanceM) / bD - 1e-9)) + 1;
  const MZ = j0 + Math.max(0, Math.ceil((args.riseMaxM - riseM) / bZ - 1e-9)) + 1;

  const slotOf = new Int32Array(owners).fill(-1);
  let slots = 0;
  for (let k = 0; k < c.count; k++) {
    const o = c.owner[k]!;
    if (slotOf[o] === -1) slotOf[o] = slots++;
  }
  const size = MD * MZ;
  const table = new Float64Array(slots * size);
  // Bin counts first, then the running sums over both axes.
  for (let k = 0; k < c.count; k++) {
    const inRule = c.inRule[k] === 1;
    let m = m0 + Math.ceil((c.distanceM[k]! - distanceM) / bD);
    let j = j0 + Math.ceil((c.riseM[k]! - riseM) / bZ);
    if (inRule) {
      if (m > m0) m = m0;
      if (j > j0) j = j0;
    } else if (m <= m0 && j <= j0) {
      // Outside the rule's zone, so above one of its edges: the one the cell's values are beyond.
      if (c.distanceM[k]! > distanceM) m = m0 + 1;
      else j = j0 + 1;
    }
    if (m < 0) m = 0;
    if (j < 0) j = 0;
    if (m >= MD) m = MD - 1;
    if (j >= MZ) j = MZ - 1;
    const row = (c.cell[k]! / width) | 0;
    table[slotOf[c.owner[k]!]! * size + m * MZ + j]! += cellAreaM2OfRow[row]!;
  }
  for (let s = 0; s < slots; s++) {
    const base = s * size;
    for (let m = 0; m < MD; m++) {
      let run = 0;
      for (let j = 0; j < MZ; j++) {
        run += table[base + m * MZ + j]!;
        table[base + m * MZ + j] = m > 0 ? table[base + (m - 1) * MZ + j]! + run : run;
      }
    }
  }
  return { distanceM, riseM, distanceBinM: bD, riseBinM: bZ, distanceEdge0: m0, riseEdge0: j0, distanceEdges: MD, riseEdges: MZ, owners, slotOf, table };
}

/** Position of a limit on an axis: the edge below it and the fraction of the bin above that edge. */
function axis(value: number, det: number, bin: number, edge0: number, edges: number): { lo: number; f: number } {
  let h = edge0 + (value - det) / bin;
  if (value === det) h = edge0;
  if (h <= 0) return { lo: 0, f: 0 };
  if (h >= edges - 1) return { lo: edges - 1, f: 0 };
  const lo = Math.floor(h);
  return { lo, f: h - lo };
}

/**
 * Riparian area of `owner` for the limits (`distanceM`, `riseM`), m²:
 * bilinear between the table's edges, exact on them (the deterministic
 * limits are an edge). 0 for an owner without candidate cells.
 */
export function riparianAreaAt(t: RiparianTables, owner: number, distanceM: number, riseM: number): number {
  const slot = owner >= 0 && owner < t.owners ? t.slotOf[owner]! : -1;
  if (slot < 0) return 0;
  const a = axis(distanceM, t.distanceM, t.distanceBinM, t.distanceEdge0, t.distanceEdges);
  const b = axis(riseM, t.riseM, t.riseBinM, t.riseEdge0, t.riseEdges);
  const MZ = t.riseEdges;
  const base = slot * t.distanceEdges * MZ;
  const T = t.table;
  const v00 = T[base + a.lo * MZ + b.lo]!;
  if (a.f === 0 && b.f === 0) return v00;
  const v10 = a.f > 0 ? T[base + (a.lo + 1) * MZ + b.lo]! : v00;
  const v01 = b.f > 0 ? T[base + a.lo * MZ + b.lo + 1]! : v00;
  const v11 = a.f > 0 && b.f > 0 ? T[base + (a.lo + 1) * MZ + b.lo + 1]! : a.f > 0 ? v10 : v01;
  return (1 - a.f) * (1 - b.f) * v00 + a.f * (1 - b.f) * v10 + (1 - a.f) * b.f * v01 + a.f * b.f * v11;
}

/**
 * Upper bound of the interpolation error of {@link riparianAreaAt}, m²: the
 * area of the owner's cells in the bins the limits fall inside (0 on edges).
 */
export function riparianErrorBoundM2(t: RiparianTables, owner: number, distanceM: number, riseM: number): number {
  const slot = owner >= 0 && owner < t.owners ? t.slotOf[owner]! : -1;
  if (slot < 0) return 0;
  const a = axis(distanceM, t.distanceM, t.distanceBinM, t.distanceEdge0, t.distanceEdges);
  const b = axis(riseM, t.riseM, t.riseBinM, t.riseEdge0, t.riseEdges);
  const MZ = t.riseEdges;
  const base = slot * t.distanceEdges * MZ;
  const hiA = a.f > 0 ? a.lo + 1 : a.lo;
  const hiB = b.f > 0 ? b.lo + 1 : b.lo;
  return t.table[base + hiA * MZ + hiB]! - t.table[base + a.lo * MZ + b.lo]!;
}
