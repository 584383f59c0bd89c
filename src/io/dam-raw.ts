/**
 * What a format reader hands to the inventory builder: features with their
 * geometry still in the file's coordinates and their properties still untyped.
 */
import type { Warning } from '../errors.js';
import type { DamGeometry } from '../inventory.js';

/** One feature (GeoJSON) or data row (CSV) of an inventory. */
export interface RawDam {
  /** 1-based position among the features or data rows. */
  feature: number;
  /** 1-based line where a CSV record starts. */
  line?: number;
  /** Geometry in the file's coordinates; null when unusable (see `problems`). */
  geometry: DamGeometry | null;
  /** Problems found while reading this feature, reported later with its id. */
  problems: { property: string; message: string }[];
  /** Property (name, value) pairs in file order; geometry columns are not among them. */
  properties: [string, unknown][];
  /** The GeoJSON Feature's own `id` member, used when the properties have none. */
  featureId?: unknown;
}

/** How the coordinates of a file are to be read. */
export type RawCoords =
  /** In the file's CRS: --dams-crs, else a CRS the file declares, else WGS84 lon/lat. */
  | { kind: 'file'; columns: string }
  /** Always WGS84 lon/lat degrees (CSV lon/lat columns), whatever --dams-crs says. */
  | { kind: 'lonlat'; columns: string }
  /** Projected by name (easting/northing columns): --dams-crs is required. */
  | { kind: 'projected'; columns: string };

/** A whole inventory file, parsed but not yet checked or transformed. */
export interface RawInventory {
  format: 'geojson' | 'csv';
  dams: RawDam[];
  coords: RawCoords;
  /** CRS name from an old-style GeoJSON `crs` member, or null. */
  declaredCrs: string | null;
  /** Accept `1,5` for 1.5 in numeric properties. */
  decimalComma: boolean;
  /** File-level notes for the user. */
  warnings: Warning[];
}
