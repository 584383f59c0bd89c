/**
 * Polygons and multipolygons (with holes) to a label raster, at cell centres.
 *
 * Rules, each with a named test in tests/rasterise-polygon.test.ts:
 * - A cell belongs to a feature when its centre is inside the feature by the
 *   even–odd rule over all rings of all its polygons (GeoJSON RFC 7946
 *   polygons: outer ring then holes; ring orientation is not relied upon).
 *   Parts of a valid multipolygon do not overlap, so even–odd equals union
 *   minus holes there.
 * - Boundary: a centre exactly on an edge is inside on the edge's left/lower
 *   side only (half-open spans [xa, xb) and crossings counted for
 *   ymin ≤ y < ymax), so two polygons sharing an edge never share a cell.
 * - Overlap: the first feature (input order) keeps a cell; later features
 *   that also cover it are counted in `overlapCells` and warned about.
 * - Self-intersecting rings are detected (segment sweep) and warned about;
 *   the even–odd fill still gives a definite answer.
 *
 * Coordinates are in the grid's CRS (reproject before calling).
 */
import type { Warning } from '../errors.js';
import { rowToY, xToCol, yToRow, type GeoTransform } from './transform.js';

/** A GeoJSON position: [x, y, ...] in the grid's CRS. */
export type Position = readonly number[];
/** A closed or open ring of positions (closed automatically). */
export type Ring = readonly Position[];
/** One polygon: the outer ring, then its holes. */
export type PolygonCoords = readonly Ring[];

/** One area feature to burn: a polygon or multipolygon with an id for messages. */
export interface AreaFeature {
  /** Identifier used in warnings (e.g. the watershed id). */
  readonly id: string;
  /** One entry for a Polygon, several for a MultiPolygon. */
  readonly polygons: readonly PolygonCoords[];
}

/** Result of {@link rasterisePolygons}. */
export interface RasteriseResult {
  /** Per cell: 1 + index of the feature that owns it, 0 outside all features. */
  readonly labels: Int32Array;
  /** Cells owned by each feature (index = feature index). */
  readonly cellCounts: Int32Array;
  /** Cells covered by a feature but already owned by an earlier one (total over features). */
  readonly overlapCells: number;
  /** Features with no cell, overlapping features, self-intersecting rings. */
  readonly warnings: Warning[];
}

/** Grid geometry the rasteriser needs (a Grid satisfies it). */
export interface RasterGeometry {
  readonly width: number;
  readonly height: number;
  readonly transform: GeoTransform;
}

/** Burns `features` into a new label raster on the grid, first feature winning overlaps. */
export function rasterisePolygons(grid: RasterGeometry, features: readonly AreaFeature[]): RasteriseResult {
  const { width, height } = grid;
  const labels = new Int32Array(width * height);
  const cellCounts = new Int32Array(features.length);
  const warnings: Warning[] = [];
  const edges = new EdgeTable();
  let overlapCells = 0;
  for (let f = 0; f < features.length; f++) {
    const feature = features[f];
    if (feature === undefined) continue;
    edges.load(feature, grid.transform);
    for (let p = 0; p < feature.polygons.length; p++) {
      const polygon = feature.polygons[p] ?? [];
      if (findSelfIntersection(polygon)) {
        warnings.push({
          code: 'self-intersecting-ring',
          message:
            `polygon ${p + 1} of feature '${feature.id}' has rings that cross themselves or each other; ` +
            'cells were assigned by the even–odd rule, which may not be what was meant: repair the polygon (e.g. GDAL/QGIS "make valid")',
        });
      }
    }
    const { owned, overlapped } = burn(edges, grid, labels, f + 1);
    cellCounts[f] = owned;
    overlapCells += overlapped;
    if (overlapped > 0) {
      warnings.push({
        code: 'overlapping-polygons',
        message:
          `feature '${feature.id}' overlaps earlier features on ${overlapped} cells; ` +
          'those cells stay with the earlier feature (first one wins): remove the overlap if both should count',
      });
    }
    if (owned === 0 && overlapped === 0) {
      warnings.push({
        code: 'polygon-outside-grid',
        message:
          `feature '${feature.id}' covers no cell centre of the DEM; it gets no cells: ` +
          'check that its CRS matches or that it lies over the DEM',
      });
    }
  }
  return { labels, cellCounts, overlapCells, warnings };
}

/** The non-horizontal edges of one feature, in row-sorted order, in reusable buffers. */
class EdgeTable {
  count = 0;
  x1: Float64Array = new Float64Array(64);
  y1: Float64Array = new Float64Array(64);
  x2: Float64Array = new Float64Array(64);
  y2: Float64Array = new Float64Array(64);
  /** First and last row whose centre line the edge may cross. */
  rowStart: Int32Array = new Int32Array(64);
  rowEnd: Int32Array = new Int32Array(64);
  /** Edge indices sorted by rowStart. */
  order: Int32Array = new Int32Array(64);

  load(feature: AreaFeature, t: GeoTransform): void {
    this.count = 0;
    for (const polygon of feature.polygons) {
      for (const ring of polygon) {
        const n = ring.length;
        for (let k = 0; k < n; k++) {
          const a = ring[k];
          const b = ring[(k + 1) % n];
          if (a === undefined || b === undefined) continue;
          this.add(a[0] ?? NaN, a[1] ?? NaN, b[0] ?? NaN, b[1] ?? NaN, t);
        }
      }
    }
    const order = this.order.subarray(0, this.count);
    for (let e = 0; e < this.count; e++) order[e] = e;
    const rowStart = this.rowStart;
    order.sort((a, b) => (rowStart[a] ?? 0) - (rowStart[b] ?? 0));
  }

  private add(ax: number, ay: number, bx: number, by: number, t: GeoTransform): void {
    if (ay === by || !Number.isFinite(ax + ay + bx + by)) return; // horizontal edges never cross a centre line
    if (this.count === this.x1.length) this.grow();
    const e = this.count++;
    this.x1[e] = ax;
    this.y1[e] = ay;
    this.x2[e] = bx;
    this.y2[e] = by;
    const ra = yToRow(t, ay) - 0.5; // fractional row-centre coordinate
    const rb = yToRow(t, by) - 0.5;
    this.rowStart[e] = Math.floor(Math.min(ra, rb));
    this.rowEnd[e] = Math.ceil(Math.max(ra, rb));
  }

  private grow(): void {
    const size = this.x1.length * 2;
    const f64 = (a: Float64Array): Float64Array => {
      const b = new Float64Array(size);
      b.set(a);
      return b;
    };
    this.x1 = f64(this.x1);
    this.y1 = f64(this.y1);
    this.x2 = f64(this.x2);
    this.y2 = f64(this.y2);
    const i32 = (a: Int32Array): Int32Array => {
      const b = new Int32Array(size);
      b.set(a);
      return b;
    };
    this.rowStart = i32(this.rowStart);
    this.rowEnd = i32(this.rowEnd);
    this.order = new Int32Array(size);
  }
}

/** Scanline fill of the loaded edges with `label`; returns cells newly owned and cells already owned by others. */
function burn(
  edges: EdgeTable,
  grid: RasterGeometry,
  labels: Int32Array,
  label: number,
): { owned: number; overlapped: number } {
  const { width, height, transform } = grid;
  let owned = 0;
  let overlapped = 0;
  if (edges.count === 0) return { owned, overlapped };
  const active = new Int32Array(edges.count);
  let crossings: Float64Array = new Float64Array(16);
  let nActive = 0;
  let next = 0; // position in edges.order of the next edge to activate
  const firstRow = Math.max(0, edges.rowStart[edges.order[0] ?? 0] ?? 0);
  for (let r = firstRow; r < height; r++) {
    while (next < edges.count && (edges.rowStart[edges.order[next] ?? 0] ?? 0) <= r) {
      active[nActive++] = edges.order[next++] ?? 0;
    }
    // Drop edges that ended above this row.
    let keep = 0;
    for (let a = 0; a < nActive; a++) {
      const e = active[a] ?? 0;
      if ((edges.rowEnd[e] ?? 0) >= r) active[keep++] = e;
    }
    nActive = keep;
    if (nActive === 0) {
      if (next >= edges.count) break;
      continue;
    }
    const y = rowToY(transform, r + 0.5);
    let nCross = 0;
    for (let a = 0; a < nActive; a++) {
      const e = active[a] ?? 0;
      const y1 = edges.y1[e] ?? 0;
      const y2 = edges.y2[e] ?? 0;
      if (y1 > y === y2 > y) continue;
      const x1 = edges.x1[e] ?? 0;
      const x2 = edges.x2[e] ?? 0;
      if (nCross === crossings.length) {
        const bigger = new Float64Array(nCross * 2);
        bigger.set(crossings);
        crossings = bigger;
      }
      crossings[nCross++] = x1 + ((y - y1) * (x2 - x1)) / (y2 - y1);
    }
    const xs = crossings.subarray(0, nCross).sort();
    const rowStart = r * width;
    for (let k = 0; k + 1 < nCross; k += 2) {
      // Cells whose centre x lies in [xa, xb).
      const c0 = Math.max(0, Math.ceil(xToCol(transform, xs[k] ?? 0) - 0.5));
      const c1 = Math.min(width - 1, Math.ceil(xToCol(transform, xs[k + 1] ?? 0) - 0.5) - 1);
      for (let c = c0; c <= c1; c++) {
        const i = rowStart + c;
        const current = labels[i] ?? 0;
        if (current === 0) {
          labels[i] = label;
          owned++;
        } else if (current !== label) {
          overlapped++;
        }
      }
    }
  }
  return { owned, overlapped };
}

/**
 * True when two edges of the polygon's rings cross or overlap (a bowtie, a
 * hole crossing its outer ring). Edges that share a ring vertex as
 * neighbours are not compared; rings touching at a single vertex are allowed
 * (OGC simple features). Sweep over edges sorted by min x: about n log n for
 * ordinary rings, n² at worst.
 */
export function findSelfIntersection(polygon: PolygonCoords): boolean {
  const xs: number[] = [];
  const ys: number[] = [];
  const ringOf: number[] = [];
  const next: number[] = []; // index of the edge's end vertex
  const ringLength: number[] = [];
  for (let r = 0; r < polygon.length; r++) {
    const ring = polygon[r] ?? [];
    let n = ring.length;
    const first = ring[0];
    const last = ring[n - 1];
    if (n > 1 && first !== undefined && last !== undefined && first[0] === last[0] && first[1] === last[1]) n--;
    ringLength.push(n);
    const base = xs.length;
    for (let k = 0; k < n; k++) {
      const p = ring[k] ?? [];
      xs.push(p[0] ?? NaN);
      ys.push(p[1] ?? NaN);
      ringOf.push(r);
      next.push(base + ((k + 1) % n));
    }
  }
  const m = xs.length;
  const order = Array.from({ length: m }, (_, e) => e);
  const minX = (e: number): number => Math.min(xs[e] ?? 0, xs[next[e] ?? 0] ?? 0);
  order.sort((a, b) => minX(a) - minX(b));
  for (let a = 0; a < m; a++) {
    const e = order[a] ?? 0;
    const eEnd = next[e] ?? 0;
    const maxX = Math.max(xs[e] ?? 0, xs[eEnd] ?? 0);
    for (let b = a + 1; b < m; b++) {
      const f = order[b] ?? 0;
      if (minX(f) > maxX) break;
      const fEnd = next[f] ?? 0;
      if ((ringLength[ringOf[e] ?? 0] ?? 0) < 3) continue;
      const neighbours = ringOf[e] === ringOf[f] && (eEnd === f || fEnd === e);
      if (segmentsCross(xs, ys, e, eEnd, f, fEnd, neighbours)) return true;
    }
  }
  return false;
}

/**
 * Proper crossing or collinear overlap of segments a–b and c–d (touching at an
 * endpoint only is not a crossing). For ring neighbours (sharing a vertex),
 * only a fold-back (collinear overlap, a spike) counts.
 */
function segmentsCross(
  xs: number[],
  ys: number[],
  a: number,
  b: number,
  c: number,
  d: number,
  neighbours: boolean,
): boolean {
  const ax = xs[a] ?? 0;
  const ay = ys[a] ?? 0;
  const bx = xs[b] ?? 0;
  const by = ys[b] ?? 0;
  const cx = xs[c] ?? 0;
  const cy = ys[c] ?? 0;
  const dx = xs[d] ?? 0;
  const dy = ys[d] ?? 0;
  const o1 = Math.sign((bx - ax) * (cy - ay) - (by - ay) * (cx - ax));
  const o2 = Math.sign((bx - ax) * (dy - ay) - (by - ay) * (dx - ax));
  const o3 = Math.sign((dx - cx) * (ay - cy) - (dy - cy) * (ax - cx));
  const o4 = Math.sign((dx - cx) * (by - cy) - (dy - cy) * (bx - cx));
  if (!neighbours && o1 * o2 < 0 && o3 * o4 < 0) return true;
  if (o1 === 0 && o2 === 0) {
    // Collinear: overlapping by more than a point?
    const useX = Math.abs(bx - ax) >= Math.abs(by - ay);
    const p0 = useX ? Math.min(ax, bx) : Math.min(ay, by);
    const p1 = useX ? Math.max(ax, bx) : Math.max(ay, by);
    const q0 = useX ? Math.min(cx, dx) : Math.min(cy, dy);
    const q1 = useX ? Math.max(cx, dx) : Math.max(cy, dy);
    return Math.min(p1, q1) - Math.max(p0, q0) > 0;
  }
  return false;
}
