/**
 * Polygon outlines of raster masks (marching squares via d3-contour).
 *
 * Output rings are in pixel-corner coordinates of the grid (a cell (c, r)
 * spans [c, c+1] × [r, r+1]); the caller converts them to map coordinates.
 * Outlines pass through cell-edge midpoints, so a lone cell becomes a diamond
 * of half its area: take areas from cell counts, never from these polygons.
 */
import { contours } from 'd3-contour';
import { cellBounds } from './cell-bounds.js';

/** Rings of one polygon: exterior first, then holes; each ring closed. */
export type PixelPolygon = [number, number][][];

/**
 * Outlines the cells of `cells` (flat indices into a width-wide grid).
 * Work is proportional to the cells' bounding box, not to the grid.
 */
export function polygoniseCells(cells: ArrayLike<number>, width: number): PixelPolygon[] {
  if (cells.length === 0) return [];
  const { c0, c1, r0, r1 } = cellBounds(cells, width);
  // One empty cell of padding on every side closes every ring inside the box.
  const bw = c1 - c0 + 3;
  const bh = r1 - r0 + 3;
  const box = new Float64Array(bw * bh);
  for (let k = 0; k < cells.length; k++) {
    const i = cells[k]!;
    const r = Math.floor(i / width);
    const c = i - r * width;
    box[(r - r0 + 1) * bw + (c - c0 + 1)] = 1;
  }
  // d3-contour only indexes the values, so the typed array goes in as is (no copy to a plain array).
  const [shape] = contours().size([bw, bh]).smooth(false).thresholds([0.5])(box as unknown as number[]);
  if (!shape) return [];
  const dc = c0 - 1;
  const dr = r0 - 1;
  return shape.coordinates.map((polygon) =>
    polygon.map((ring) => ring.map((point) => [point[0]! + dc, point[1]! + dr] as [number, number])),
  );
}

/** Twice the signed area of a ring (positive when counter-clockwise in a y-up frame). */
export function ringSignedArea2(ring: readonly (readonly [number, number])[]): number {
  let s = 0;
  for (let k = 0, n = ring.length; k < n - 1; k++) {
    const a = ring[k]!;
    const b = ring[k + 1]!;
    s += a[0] * b[1] - b[0] * a[1];
  }
  return s;
}

/**
 * Orients rings as RFC 7946 asks (exterior counter-clockwise, holes clockwise)
 * in a lon/lat or other y-up frame. Mutates and returns the polygon.
 */
export function orientRfc7946(polygon: [number, number][][]): [number, number][][] {
  polygon.forEach((ring, k) => {
    const ccw = ringSignedArea2(ring) > 0;
    if ((k === 0) !== ccw) ring.reverse();
  });
  return polygon;
}
