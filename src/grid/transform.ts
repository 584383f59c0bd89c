/**
 * Pixel ↔ map conversions: the only place they live.
 *
 * GDAL convention, north-up, no rotation: map x = x0 + col·dx, map y = y0 + row·dy
 * at the pixel's upper-left corner (dy is negative for north-up rasters).
 * Cell centres sit at col + 0.5, row + 0.5.
 */
export interface GeoTransform {
  /** Map x of the upper-left corner of pixel (0,0). */
  readonly x0: number;
  /** Map y of the upper-left corner of pixel (0,0). */
  readonly y0: number;
  /** Pixel width in CRS units (positive). */
  readonly dx: number;
  /** Pixel height in CRS units (negative for north-up). */
  readonly dy: number;
}

/** Map x of a (fractional) pixel column; pass col + 0.5 for a cell centre. */
export function colToX(t: GeoTransform, col: number): number {
  return t.x0 + col * t.dx;
}

/** Map y of a (fractional) pixel row; pass row + 0.5 for a cell centre. */
export function rowToY(t: GeoTransform, row: number): number {
  return t.y0 + row * t.dy;
}

/** Fractional pixel column of a map x (floor it for the containing cell). */
export function xToCol(t: GeoTransform, x: number): number {
  return (x - t.x0) / t.dx;
}

/** Fractional pixel row of a map y (floor it for the containing cell). */
export function yToRow(t: GeoTransform, y: number): number {
  return (y - t.y0) / t.dy;
}

/** The transform of a window starting at (col0, row0) of a larger grid. */
export function windowTransform(t: GeoTransform, col0: number, row0: number): GeoTransform {
  return { x0: t.x0 + col0 * t.dx, y0: t.y0 + row0 * t.dy, dx: t.dx, dy: t.dy };
}

/** GDAL's six-number geotransform [x0, dx, 0, y0, 0, dy]. */
export function toGdalGeoTransform(t: GeoTransform): [number, number, number, number, number, number] {
  return [t.x0, t.dx, 0, t.y0, 0, t.dy];
}
