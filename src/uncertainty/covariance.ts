/**
 * The DEM error model: a zero-mean stationary field with a spherical
 * variogram of sill σ² (σ = RMSEz) and range L, and what it does to a pond.
 *
 * Spherical covariance (the standard geostatistical model, e.g. Journel &
 * Huijbregts 1978, Mining Geostatistics):
 *   C(h) = σ²·(1 − 3h/(2L) + h³/(2L³)) for h < L, 0 beyond.
 *
 * A pond's mean ground error ē over its area A does not shrink as σ²/n as if
 * cells were independent: Rolstad, Haug & Denby (2009, "Spatially integrated
 * geodetic glacier mass balance and its uncertainty based on geostatistical
 * analysis", Journal of Glaciology 55(192)) average the covariance over a
 * disc of the same area, radius r = √(A/π):
 *   Var(ē) = σ²·(1 − r/L + r³/(5L³))   for r ≤ L,
 *   Var(ē) = σ²·πL²/(5A)               for r ≥ L (A ≥ πL²).
 * (Derived here by integrating C over the disc: (2/r²)∫₀^min(r,L) C(h)·h dh.)
 *
 * For a real pond shape the variance of ē and its covariance with other
 * points and ponds are double sums over the pond's cells, computed here on
 * blocks: the pond's cells are binned into squares of about L/4 (at most
 * MAX_BLOCKS per pond, else larger), each block stands at its area-weighted
 * centroid with its water area as weight, and a block's covariance with
 * itself is the mean covariance of two random points in a square of its
 * area (blockSelfFactor). Blocks are
 * kept sorted by column, so each sum only visits the blocks within the
 * range (the covariance is zero beyond it): the cost grows with the pond's
 * area, not its square. Positions are in DEM cells with the dam's own cell
 * size in metres, so geographic DEMs work (distances between points further
 * apart than the range do not matter).
 */
import { cellBounds } from '../grid/cell-bounds.js';

/** Spherical covariance at distance hM (m) for sill σ² (m²) and range L (m). */
export function sphericalCovariance(hM: number, sillM2: number, rangeM: number): number {
  if (hM >= rangeM) return 0;
  const u = hM / rangeM;
  return sillM2 * (1 - 1.5 * u + 0.5 * u * u * u);
}

/** Spherical semivariogram γ(h) = σ² − C(h), m². */
export function sphericalSemivariogram(hM: number, sillM2: number, rangeM: number): number {
  return sillM2 - sphericalCovariance(hM, sillM2, rangeM);
}

/**
 * Var(ē)/σ² for the mean over an area A (m²) under a spherical model of
 * range L (m): Rolstad et al. (2009), see the file comment.
 */
export function areaAverageFactor(areaM2: number, rangeM: number): number {
  if (!(areaM2 > 0)) return 1;
  if (!(rangeM > 0)) return 0;
  const r = Math.sqrt(areaM2 / Math.PI);
  if (r >= rangeM) return (Math.PI * rangeM * rangeM) / (5 * areaM2);
  const u = r / rangeM;
  return 1 - u + (u * u * u) / 5;
}

/**
 * Moments of the distance between two random points of the unit square:
 * E[d] = (2 + √2 + 5·ln(1 + √2))/15 (a known closed form) and E[d³],
 * integrated numerically from the distance's density (derived here).
 */
const UNIT_SQUARE_MEAN_D = 0.5214054331647207;
const UNIT_SQUARE_MEAN_D3 = 0.2407165518464;

/**
 * Mean covariance / σ² of two random points in a square block of area
 * `areaM2` under the spherical model of range L: 1 − 1.5·E[d]/L +
 * 0.5·E[d³]/L³ while the block's diagonal is within the range; beyond, the
 * Rolstad average (a block large against the range).
 */
export function blockSelfFactor(areaM2: number, rangeM: number): number {
  const s = Math.sqrt(areaM2) / rangeM;
  if (s * Math.SQRT2 > 1) return areaAverageFactor(areaM2, rangeM);
  return 1 - 1.5 * s * UNIT_SQUARE_MEAN_D + 0.5 * s * s * s * UNIT_SQUARE_MEAN_D3;
}

/** Most blocks a pond is represented by (beyond, the blocks grow). */
export const MAX_BLOCKS = 20000;

/**
 * Where a dam's DEM error acts: the reference point whose error shifts the
 * water level (the bed cell: crest = bed + height, or the crest's lowest DEM
 * point, which is the same cell) and the pond's blocks. Coordinates are
 * full-DEM cell positions (column, row of cell centres).
 */
export interface ErrorSupport {
  refCol: number;
  refRow: number;
  /** Cell size at the dam, metres. */
  cellWM: number;
  cellHM: number;
  /** Block centroids (cell positions, sorted by column) and weights (water area, m²). */
  blockCol: Float64Array;
  blockRow: Float64Array;
  blockAreaM2: Float64Array;
  /** Σ block areas, m² (0 for a dry pond: then ē is taken equal to the reference error). */
  areaM2: number;
  /**
   * The passes (cell positions), the cells whose elevation sets the escape
   * level by each of the lowest ways out (`passDeltaM`: their escape level
   * above the lowest, m; the first is 0). Drawn jointly with every dam.
   */
  pointCol: Float64Array;
  pointRow: Float64Array;
  passDeltaM: Float64Array;
  /**
   * The alternatives to the reference (cell positions): cells nearly as
   * low as it among those the crest elevation is measured from
   * (`altDeltaM`: their height above the reference, m). A few metres from
   * the reference, they are drawn given its error (see dem-error.ts).
   */
  altCol: Float64Array;
  altRow: Float64Array;
  altDeltaM: Float64Array;
  /** Bounding box of the reference, the points and the blocks, cell positions. */
  col0: number;
  col1: number;
  row0: number;
  row1: number;
}

/**
 * Bins pond cells (flat indices of a window of `width` columns whose cell
 * (0, 0) is full-DEM cell (colOffset, rowOffset)) into blocks of about
 * `blockM` metres, doubling the block size until at most MAX_BLOCKS remain.
 */
export function buildSupport(args: {
  cells: Int32Array;
  width: number;
  colOffset: number;
  rowOffset: number;
  cellAreaM2: Float64Array;
  refCell: number;
  cellWM: number;
  cellHM: number;
  blockM: number;
  /** Alternatives to the reference (flat indices like `cells`) and their height above it, m. Default none. */
  altCells?: Int32Array;
  altDeltaM?: Float64Array;
  /** The passes (flat indices like `cells`), lowest first, and their escape levels above the first, m. Default none. */
  passCells?: Int32Array;
  passDeltaM?: Float64Array;
}): ErrorSupport {
  const { cells, width, colOffset, rowOffset, cellAreaM2, cellWM, cellHM } = args;
  const refCol = (args.refCell % width) + colOffset;
  const refRow = Math.floor(args.refCell / width) + rowOffset;
  const altCells = args.altCells ?? new Int32Array(0);
  const passCells = args.passCells ?? new Int32Array(0);
  let pc0 = refCol;
  let pc1 = refCol;
  let pr0 = refRow;
  let pr1 = refRow;
  const positions = (list: Int32Array): [Float64Array, Float64Array] => {
    const cs = new Float64Array(list.length);
    const rs = new Float64Array(list.length);
    for (let k = 0; k < list.length; k++) {
      const i = list[k]!;
      cs[k] = (i % width) + colOffset;
      rs[k] = Math.floor(i / width) + rowOffset;
      pc0 = Math.min(pc0, cs[k]!);
      pc1 = Math.max(pc1, cs[k]!);
      pr0 = Math.min(pr0, rs[k]!);
      pr1 = Math.max(pr1, rs[k]!);
    }
    return [cs, rs];
  };
  const [pointCol, pointRow] = positions(passCells);
  const [altCol, altRow] = positions(altCells);
  const points = { pointCol, pointRow, passDeltaM: args.passDeltaM ?? new Float64Array(0), altCol, altRow, altDeltaM: args.altDeltaM ?? new Float64Array(0) };
  const { c0, c1, r0, r1 } = cellBounds(cells, width);
  const empty = new Float64Array(0);
  if (cells.length === 0) {
    return { refCol, refRow, cellWM, cellHM, blockCol: empty, blockRow: empty, blockAreaM2: empty, areaM2: 0, ...points, col0: pc0, col1: pc1, row0: pr0, row1: pr1 };
  }
  let blockM = args.blockM;
  for (;;) {
    const bc = Math.max(1, Math.round(blockM / cellWM));
    const br = Math.max(1, Math.round(blockM / cellHM));
    const nbc = Math.floor((c1 - c0) / bc) + 1;
    const nbr = Math.floor((r1 - r0) / br) + 1;
    const w = new Float64Array(nbc * nbr);
    const wc = new Float64Array(nbc * nbr);
    const wr = new Float64Array(nbc * nbr);
    for (let k = 0; k < cells.length; k++) {
      const i = cells[k]!;
      const col = i % width;
      const row = (i - col) / width;
      const b = Math.floor((row - r0) / br) * nbc + Math.floor((col - c0) / bc);
      const a = cellAreaM2[row]!;
      w[b]! += a;
      wc[b]! += a * col;
      wr[b]! += a * row;
    }
    let used = 0;
    for (let b = 0; b < w.length; b++) if (w[b]! > 0) used++;
    if (used > MAX_BLOCKS && (bc < c1 - c0 + 1 || br < r1 - r0 + 1)) {
      blockM *= 2;
      continue;
    }
    const unsortedCol = new Float64Array(used);
    const idx = new Uint32Array(used);
    const nonEmpty = new Int32Array(used);
    let n = 0;
    for (let b = 0; b < w.length; b++) {
      if (!(w[b]! > 0)) continue;
      unsortedCol[n] = wc[b]! / w[b]! + colOffset;
      nonEmpty[n] = b;
      idx[n] = n;
      n++;
    }
    idx.sort((x, y) => unsortedCol[x]! - unsortedCol[y]! || x - y);
    const blockCol = new Float64Array(used);
    const blockRow = new Float64Array(used);
    const blockAreaM2 = new Float64Array(used);
    let areaM2 = 0;
    for (let k = 0; k < used; k++) {
      const b = nonEmpty[idx[k]!]!;
      const wb = w[b]!;
      blockCol[k] = unsortedCol[idx[k]!]!;
      blockRow[k] = wr[b]! / wb + rowOffset;
      blockAreaM2[k] = wb;
      areaM2 += wb;
    }
    return {
      refCol,
      refRow,
      cellWM,
      cellHM,
      blockCol,
      blockRow,
      blockAreaM2,
      areaM2,
      ...points,
      col0: Math.min(pc0, c0 + colOffset),
      col1: Math.max(pc1, c1 + colOffset),
      row0: Math.min(pr0, r0 + rowOffset),
      row1: Math.max(pr1, r1 + rowOffset),
    };
  }
}

/** Distance in metres between cell positions of two supports (mean cell size of the two). */
function distM(a: ErrorSupport, colA: number, rowA: number, b: ErrorSupport, colB: number, rowB: number): number {
  const dx = (colA - colB) * 0.5 * (a.cellWM + b.cellWM);
  const dy = (rowA - rowB) * 0.5 * (a.cellHM + b.cellHM);
  return Math.sqrt(dx * dx + dy * dy);
}

/** Shortest possible distance (m) between the bounding boxes of two supports. */
export function supportGapM(a: ErrorSupport, b: ErrorSupport): number {
  const gc = Math.max(0, a.col0 - b.col1, b.col0 - a.col1);
  const gr = Math.max(0, a.row0 - b.row1, b.row0 - a.row1);
  return Math.hypot(gc * 0.5 * (a.cellWM + b.cellWM), gr * 0.5 * (a.cellHM + b.cellHM));
}

/**
 * Covariances (m²) of the error at two supports' reference points and of
 * their ponds' mean errors: [ref·ref, refA·pondB, pondA·refB, pondA·pondB].
 * For a dry pond the pond's mean error is its reference error.
 */
export function supportCovariance(a: ErrorSupport, b: ErrorSupport, sillM2: number, rangeM: number, same: boolean): [number, number, number, number] {
  const rr = sphericalCovariance(distM(a, a.refCol, a.refRow, b, b.refCol, b.refRow), sillM2, rangeM);
  const rp = b.areaM2 > 0 ? pointToPond(a, a.refCol, a.refRow, b, sillM2, rangeM) : rr;
  const pr = a.areaM2 > 0 ? pointToPond(b, b.refCol, b.refRow, a, sillM2, rangeM) : rr;
  let pp: number;
  if (a.areaM2 > 0 && b.areaM2 > 0) pp = pondToPond(a, b, sillM2, rangeM, same);
  else if (b.areaM2 > 0) pp = rp;
  else pp = pr;
  return [rr, rp, pr, pp];
}

/**
 * Covariances (m²) of a support's alternatives: with its reference
 * (`withRef`, one per alternative) and among themselves (`among`,
 * row-major).
 */
export function alternativeCovariance(s: ErrorSupport, sillM2: number, rangeM: number): { withRef: Float64Array; among: Float64Array } {
  const n = s.altCol.length;
  const withRef = new Float64Array(n);
  const among = new Float64Array(n * n);
  for (let a = 0; a < n; a++) {
    withRef[a] = sphericalCovariance(distM(s, s.altCol[a]!, s.altRow[a]!, s, s.refCol, s.refRow), sillM2, rangeM);
    for (let b = 0; b < n; b++) among[a * n + b] = sphericalCovariance(distM(s, s.altCol[a]!, s.altRow[a]!, s, s.altCol[b]!, s.altRow[b]!), sillM2, rangeM);
  }
  return { withRef, among };
}

/** Number of jointly drawn errors of a support: the reference, the pond's mean, then its passes. */
export function supportSize(s: ErrorSupport): number {
  return 2 + s.pointCol.length;
}

/**
 * Covariances (m²) between the errors of two supports, row-major
 * supportSize(a) × supportSize(b): [reference, pond mean, passes...] of `a`
 * against the same of `b`. For a dry pond the pond's mean error is its
 * reference error. The first 2 × 2 equal supportCovariance.
 */
export function supportCovarianceBlock(a: ErrorSupport, b: ErrorSupport, sillM2: number, rangeM: number, same: boolean): Float64Array {
  const na = supportSize(a);
  const nb = supportSize(b);
  const out = new Float64Array(na * nb);
  const [rr, rp, pr, pp] = supportCovariance(a, b, sillM2, rangeM, same);
  out[0] = rr;
  out[1] = rp;
  out[nb] = pr;
  out[nb + 1] = pp;
  // Point of a (x = −1: the reference) with point of b, and points with the other pond.
  const colOf = (s: ErrorSupport, x: number): number => (x < 0 ? s.refCol : s.pointCol[x]!);
  const rowOf = (s: ErrorSupport, x: number): number => (x < 0 ? s.refRow : s.pointRow[x]!);
  for (let x = -1; x < na - 2; x++) {
    const ra = x < 0 ? 0 : x + 2;
    for (let y = -1; y < nb - 2; y++) {
      if (x < 0 && y < 0) continue;
      const rb = y < 0 ? 0 : y + 2;
      out[ra * nb + rb] = sphericalCovariance(distM(a, colOf(a, x), rowOf(a, x), b, colOf(b, y), rowOf(b, y)), sillM2, rangeM);
    }
    // With b's pond mean (column 1), and b's points with a's pond mean (row 1).
    if (x >= 0) out[ra * nb + 1] = b.areaM2 > 0 ? pointToPond(a, colOf(a, x), rowOf(a, x), b, sillM2, rangeM) : out[ra * nb]!;
  }
  for (let y = 0; y < nb - 2; y++) {
    const rb = y + 2;
    out[nb + rb] = a.areaM2 > 0 ? pointToPond(b, b.pointCol[y]!, b.pointRow[y]!, a, sillM2, rangeM) : out[rb]!;
  }
  return out;
}

/**
 * Covariances (m²) of the error at a point (full-DEM cell position, at the
 * support's cell size) with the support's jointly drawn errors, written to
 * `out` (supportSize(s)): [reference, pond mean, passes...]. For a dry pond
 * the pond's mean error is its reference error.
 */
export function pointSupportCovariances(s: ErrorSupport, col: number, row: number, sillM2: number, rangeM: number, out: Float64Array): void {
  out[0] = sphericalCovariance(distM(s, col, row, s, s.refCol, s.refRow), sillM2, rangeM);
  out[1] = s.areaM2 > 0 ? pointToPond(s, col, row, s, sillM2, rangeM) : out[0]!;
  for (let j = 0; j < s.pointCol.length; j++) out[2 + j] = sphericalCovariance(distM(s, col, row, s, s.pointCol[j]!, s.pointRow[j]!), sillM2, rangeM);
}

/** Covariance (m²) of the error at two points (full-DEM cell positions at the support's cell size). */
export function pointCovariance(s: ErrorSupport, colA: number, rowA: number, colB: number, rowB: number, sillM2: number, rangeM: number): number {
  return sphericalCovariance(distM(s, colA, rowA, s, colB, rowB), sillM2, rangeM);
}

/** First block of `q` whose column is at least `col` (blocks are sorted by column). */
function firstBlockFrom(q: ErrorSupport, col: number): number {
  let lo = 0;
  let hi = q.blockCol.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (q.blockCol[mid]! < col) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Mean covariance between a point of support `p` and the blocks of `q` (only blocks within the range add). */
function pointToPond(p: ErrorSupport, col: number, row: number, q: ErrorSupport, sillM2: number, rangeM: number): number {
  const reachCols = rangeM / Math.min(p.cellWM, q.cellWM);
  let s = 0;
  for (let j = firstBlockFrom(q, col - reachCols); j < q.blockCol.length && q.blockCol[j]! <= col + reachCols; j++) {
    s += q.blockAreaM2[j]! * sphericalCovariance(distM(p, col, row, q, q.blockCol[j]!, q.blockRow[j]!), sillM2, rangeM);
  }
  return s / q.areaM2;
}

/** Mean covariance between the blocks of two ponds (a block with itself: the Rolstad disc average). */
function pondToPond(a: ErrorSupport, b: ErrorSupport, sillM2: number, rangeM: number, same: boolean): number {
  const reachCols = rangeM / Math.min(a.cellWM, b.cellWM);
  let s = 0;
  for (let i = 0; i < a.blockAreaM2.length; i++) {
    const wi = a.blockAreaM2[i]!;
    const ci = a.blockCol[i]!;
    const ri = a.blockRow[i]!;
    let si = 0;
    for (let j = firstBlockFrom(b, ci - reachCols); j < b.blockCol.length && b.blockCol[j]! <= ci + reachCols; j++) {
      const c = same && i === j ? sillM2 * blockSelfFactor(wi, rangeM) : sphericalCovariance(distM(a, ci, ri, b, b.blockCol[j]!, b.blockRow[j]!), sillM2, rangeM);
      si += b.blockAreaM2[j]! * c;
    }
    s += wi * si;
  }
  return s / (a.areaM2 * b.areaM2);
}
