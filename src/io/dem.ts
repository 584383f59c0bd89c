/**
 * A DEM as one or more GeoTIFF tiles that form a mosaic, read window by window.
 */
import type { Grid } from '../grid/grid.js';
import type { GeoTransform } from '../grid/transform.js';
import type { Crs } from './crs.js';
import type { LinearUnit } from '../units.js';

export interface DemSource {
  /** Full mosaic size in cells. */
  readonly width: number;
  readonly height: number;
  /** Transform of the full mosaic (pixel corner, CRS units). */
  readonly transform: GeoTransform;
  readonly crs: Crs;
  /** Vertical unit of the stored values, and how it was decided. */
  readonly zUnit: LinearUnit;
  readonly zUnitSource: 'geokey' | 'assumed-horizontal' | 'assumed-metre' | 'option';
  /** Paths of the tiles, in the order given. */
  readonly files: readonly string[];
  /**
   * Reads cells [col0, col0+cols) × [row0, row0+rows) of the mosaic, clipped to it,
   * as a Grid in metres with NaN for NoData and for gaps between tiles.
   */
  readWindow(col0: number, row0: number, cols: number, rows: number): Promise<Grid>;
  /** Releases decoders and file handles. */
  close(): Promise<void>;
}
