/**
 * Coordinate reference systems: EPSG codes → proj4 definitions (epsg-index),
 * transforms to and from WGS84 lon/lat, unit handling, and per-row cell
 * metrics on the ellipsoid for geographic grids.
 */
import type { LinearUnit } from '../units.js';

export interface Crs {
  /** EPSG code when known. */
  epsg: number | null;
  /** Human-readable name (from the EPSG registry or the user's text). */
  name: string;
  /** proj4 definition string. */
  proj4: string;
  /** True for lon/lat degree systems. */
  geographic: boolean;
  /** Horizontal linear unit for projected CRSs; null for geographic. */
  linearUnit: LinearUnit | null;
}
