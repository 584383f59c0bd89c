/**
 * Rasterising crest polylines into the cells they cross.
 *
 * The result is a 4-connected "supercover" line: every cell the segment
 * passes through, and where a segment passes exactly through a cell corner,
 * both cells beside the corner. A 4-connected wall has no diagonal gaps, so
 * water flooding with 8 neighbours cannot slip through it.
 *
 * Segments are clipped to the grid first, so a crest drawn far off the grid
 * (a wrong CRS) costs nothing; off-grid vertices are counted instead.
 */
import { xToCol, yToRow, type GeoTransform } from './transform.js';

/** Result of `rasteriseLines`. */
export interface RasterisedLine {
  /** Flat cell indices (row · width + col), unique, in order along the lines. */
  cells: Int32Array;
  /** Number of vertices that fall off the grid (non-finite ones included); 0 when the lines lie wholly on it. */
  outside: number;
}

/** Ties between crossing a column and a row boundary closer than this (in segment parameter) are a corner pass. */
const CORNER_EPS = 1e-12;

/**
 * Cells crossed by polylines given in map coordinates (the grid's CRS units).
 * A polyline of one vertex marks the cell holding it.
 */
export function rasteriseLines(
  grid: { width: number; height: number; transform: GeoTransform },
  lines: [number, number][][],
): RasterisedLine {
  const { width, height, transform } = grid;
  const list = new CellList(width);
  let outside = 0;
  const clip = new Float64Array(4);
  for (const line of lines) {
    const n = line.length;
    const cs = new Float64Array(n);
    const rs = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      const [x, y] = line[k]!;
      const c = xToCol(transform, x);
      const r = yToRow(transform, y);
      cs[k] = c;
      rs[k] = r;
      if (!(c >= 0 && c < width && r >= 0 && r < height)) outside++;
    }
    if (n === 1) {
      const c = cs[0]!;
      const r = rs[0]!;
      if (c >= 0 && c < width && r >= 0 && r < height) list.add(Math.floor(c), Math.floor(r));
      continue;
    }
    for (let k = 0; k + 1 < n; k++) {
      if (clipSegment(cs[k]!, rs[k]!, cs[k + 1]!, rs[k + 1]!, width, height, clip)) {
        walkSegment(clip[0]!, clip[1]!, clip[2]!, clip[3]!, width, height, list);
      }
    }
  }
  return { cells: Int32Array.from(list.cells), outside };
}

/**
 * Liang–Barsky clipping of the pixel-space segment (c0,r0)–(c1,r1) to
 * [0, width] × [0, height]. Writes the clipped ends into `out`; false when
 * nothing is left (or a coordinate is not finite).
 */
function clipSegment(
  c0: number,
  r0: number,
  c1: number,
  r1: number,
  width: number,
  height: number,
  out: Float64Array,
): boolean {
  if (!Number.isFinite(c0) || !Number.isFinite(r0) || !Number.isFinite(c1) || !Number.isFinite(r1)) return false;
  const dc = c1 - c0;
  const dr = r1 - r0;
  let t0 = 0;
  let t1 = 1;
  const p = [-dc, dc, -dr, dr];
  const q = [c0, width - c0, r0, height - r0];
  for (let k = 0; k < 4; k++) {
    const pk = p[k]!;
    const qk = q[k]!;
    if (pk === 0) {
      if (qk < 0) return false;
    } else {
      const t = qk / pk;
      if (pk < 0) {
        if (t > t1) return false;
        if (t > t0) t0 = t;
      } else {
        if (t < t0) return false;
        if (t < t1) t1 = t;
      }
    }
  }
  out[0] = c0 + t0 * dc;
  out[1] = r0 + t0 * dr;
  out[2] = c0 + t1 * dc;
  out[3] = r0 + t1 * dr;
  return true;
}

/** Unique cells in first-seen order. */
class CellList {
  readonly cells: number[] = [];
  private readonly seen = new Set<number>();
  constructor(private readonly width: number) {}
  add(col: number, row: number): void {
    const i = row * this.width + col;
    if (!this.seen.has(i)) {
      this.seen.add(i);
      this.cells.push(i);
    }
  }
}

function clampIndex(v: number, n: number): number {
  const i = Math.floor(v);
  return i < 0 ? 0 : i >= n ? n - 1 : i;
}

/** Grid traversal (Amanatides & Woo 1987) of one clipped segment, adding both cells at exact corner passes. */
function walkSegment(
  c0: number,
  r0: number,
  c1: number,
  r1: number,
  width: number,
  height: number,
  list: CellList,
): void {
  let col = clampIndex(c0, width);
  let row = clampIndex(r0, height);
  const endCol = clampIndex(c1, width);
  const endRow = clampIndex(r1, height);
  const dc = c1 - c0;
  const dr = r1 - r0;
  const stepC = dc > 0 ? 1 : dc < 0 ? -1 : 0;
  const stepR = dr > 0 ? 1 : dr < 0 ? -1 : 0;
  const tDeltaC = stepC !== 0 ? 1 / Math.abs(dc) : Infinity;
  const tDeltaR = stepR !== 0 ? 1 / Math.abs(dr) : Infinity;
  let tMaxC = stepC > 0 ? (col + 1 - c0) / dc : stepC < 0 ? (c0 - col) / -dc : Infinity;
  let tMaxR = stepR > 0 ? (row + 1 - r0) / dr : stepR < 0 ? (r0 - row) / -dr : Infinity;
  list.add(col, row);
  while (col !== endCol || row !== endRow) {
    if (col === endCol) {
      row += stepR;
      tMaxR += tDeltaR;
    } else if (row === endRow) {
      col += stepC;
      tMaxC += tDeltaC;
    } else if (tMaxC < tMaxR - CORNER_EPS) {
      col += stepC;
      tMaxC += tDeltaC;
    } else if (tMaxR < tMaxC - CORNER_EPS) {
      row += stepR;
      tMaxR += tDeltaR;
    } else {
      // Exact corner: both cells beside it, so the wall stays 4-connected either way round.
      list.add(col + stepC, row);
      list.add(col, row + stepR);
      col += stepC;
      row += stepR;
      tMaxC += tDeltaC;
      tMaxR += tDeltaR;
    }
    list.add(col, row);
  }
}
