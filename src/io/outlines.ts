/**
 * Outlines of labelled cells as RFC 7946 polygons (WGS 84 lon/lat, exterior
 * rings counter-clockwise), for the GeoJSON layers of a run and of the demo.
 * Rings pass through cell-edge midpoints (grid/polygonise.ts); vertices on a
 * straight run are dropped.
 */
import { orientRfc7946, polygoniseCells } from '../grid/polygonise.js';
import { colToX, rowToY, type GeoTransform } from '../grid/transform.js';
import { WGS84, makeTransform, type Crs } from './crs.js';

/** Pixel-corner coordinates of a grid to lon/lat, rounded to 1e-8° (about 1 mm). */
export type CornerToLonLat = (col: number, row: number) => [number, number];

/** The conversion for a grid whose pixel (0, 0) corner is at `t` in `crs`. */
export function cornerToLonLat(t: GeoTransform, crs: Crs): CornerToLonLat {
  const toLonLat = makeTransform(crs, WGS84);
  return (col, row) => {
    const [lon, lat] = toLonLat(colToX(t, col), rowToY(t, row));
    return [Number(lon.toFixed(8)), Number(lat.toFixed(8))];
  };
}

/**
 * Cells bucketed by label (1 … count; 0 is none): the cells of label l are
 * cells[start[l − 1] … start[l]), in flat-index order.
 */
export function bucketLabels(labels: Int32Array, count: number): { cells: Int32Array; start: Int32Array } {
  const start = new Int32Array(count + 1);
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i]!;
    if (l > 0) start[l]!++;
  }
  for (let k = 0; k < count; k++) start[k + 1]! += start[k]!;
  const cells = new Int32Array(start[count]!);
  const next = start.slice(0, count);
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i]!;
    if (l > 0) cells[next[l - 1]!++] = i;
  }
  return { cells, start };
}

/** Outline polygons of `cells` (flat indices of a `width`-wide grid) in lon/lat. */
export function outlineLonLat(cells: Int32Array, width: number, toLonLat: CornerToLonLat): [number, number][][][] {
  return polygoniseCells(cells, width).map((polygon) => orientRfc7946(polygon.map((ring) => dropCollinear(ring).map(([c, r]) => toLonLat(c, r)))));
}

/** Removes vertices on the straight line through their neighbours (pixel coordinates are exact halves, so the test is exact). */
function dropCollinear(ring: [number, number][]): [number, number][] {
  const n = ring.length - 1; // closed: last = first
  if (n < 4) return ring;
  const out: [number, number][] = [];
  for (let k = 0; k < n; k++) {
    const a = ring[(k + n - 1) % n]!;
    const b = ring[k]!;
    const c = ring[(k + 1) % n]!;
    if ((b[0] - a[0]) * (c[1] - b[1]) - (b[1] - a[1]) * (c[0] - b[0]) !== 0) out.push(b);
  }
  if (out.length < 3) return ring;
  out.push(out[0]!);
  return out;
}
