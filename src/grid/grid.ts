/**
 * The one raster type every computation module works on.
 *
 * Row-major, flat index `i = row * width + col`. Elevations are metres
 * (converted on read), NoData is NaN. Map coordinates are in the DEM's CRS;
 * cell sizes and areas are metres (per row, so geographic DEMs work too).
 */
import type { GeoTransform } from './transform.js';

export interface Grid {
  /** Columns. */
  readonly width: number;
  /** Rows. */
  readonly height: number;
  /** Pixel-corner affine transform of this grid, in the CRS's own units. */
  readonly transform: GeoTransform;
  /** Elevation in metres, NaN where NoData. Length width × height. */
  readonly z: Float32Array;
  /** Area of one cell in each row, m² (constant for projected CRSs). Length height. */
  readonly cellAreaM2: Float64Array;
  /** East–west size of one cell in each row, metres. Length height. */
  readonly cellWidthM: Float64Array;
  /** North–south size of one cell, metres. */
  readonly cellHeightM: number;
  /** Offset of this grid's cell (0,0) in the full DEM's pixel space (a window knows where it sits). */
  readonly colOffset: number;
  readonly rowOffset: number;
}

/** Row-wise cell metrics in metres, as a CRS reports them. */
export interface CellMetrics {
  cellAreaM2: Float64Array;
  cellWidthM: Float64Array;
  cellHeightM: number;
}

/** Builds a projected-CRS grid whose cells are `cellM` metres square (tests, demo, bench). */
export function makeGrid(options: {
  width: number;
  height: number;
  z: Float32Array;
  transform: GeoTransform;
  /** Metres per CRS unit (1 for metre-based CRSs). */
  unitM?: number;
  colOffset?: number;
  rowOffset?: number;
}): Grid {
  const { width, height, z, transform } = options;
  if (z.length !== width * height) {
    throw new Error(`grid data has ${z.length} cells; expected ${width} × ${height} = ${width * height}`);
  }
  const unitM = options.unitM ?? 1;
  const wM = Math.abs(transform.dx) * unitM;
  const hM = Math.abs(transform.dy) * unitM;
  return {
    width,
    height,
    transform,
    z,
    cellAreaM2: new Float64Array(height).fill(wM * hM),
    cellWidthM: new Float64Array(height).fill(wM),
    cellHeightM: hM,
    colOffset: options.colOffset ?? 0,
    rowOffset: options.rowOffset ?? 0,
  };
}
