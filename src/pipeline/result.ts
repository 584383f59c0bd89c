/**
 * What one estimate run produces, as plain records: the pipeline fills them,
 * io/ writes them, the CLI prints a few of them. Field names here are the
 * output names (summary.json, dams.csv, ponds.geojson).
 */
import type { Warning } from '../errors.js';
import type { DamStatus } from '../inventory.js';
import type { Bands } from '../uncertainty/bands.js';

/** How the crest height was decided. */
export type HeightSource = 'measured' | 'dem' | 'default' | 'breach';
/** What set the water level (`breach`: a breached dam of unknown breach height holds nothing). */
export type LimitedBy = 'crest' | 'spill' | 'edge' | 'nodata' | 'breach';

/** One row of a stage–area–storage curve: [level_m, area_m2, volume_m3]. */
export type StageRow = [number, number, number];

export interface DamResult {
  id: string;
  status: DamStatus;
  confidence: number | null;
  year: number | null;
  /** `line` when the inventory gave a crest line, `point` when pondage built it from a point. */
  crest_geometry: 'line' | 'point';
  /** Whether this dam's water counts in the existing totals (proposed and low-confidence candidates do not). */
  in_totals: boolean;
  /** False when the dam was skipped; `skip_reason` says why. */
  estimated: boolean;
  skip_reason: string | null;
  crest_elev_m: number | null;
  bed_elev_m: number | null;
  height_m: number | null;
  height_source: HeightSource | null;
  upstream_side: 'left' | 'right' | null;
  upstream_source: 'property' | 'terrain' | null;
  water_level_m: number | null;
  limited_by: LimitedBy | null;
  /** Water attributed to this dam in the combined water surface (sums to the totals). */
  area_m2: number;
  volume_m3: number;
  max_depth_m: number;
  mean_depth_m: number;
  /** The pond this dam would hold on its own, ignoring the other dams. */
  standalone_area_m2: number;
  standalone_volume_m3: number;
  /** Id of the dam whose pond covers this dam's crest, or null. */
  drowned_by: string | null;
  crest_length_m: number | null;
  /** Cells the flood visited (work done). */
  cells_visited: number;
  stage_storage: StageRow[];
  warnings: string[];
  /** The inventory's other properties, untouched. */
  properties: Record<string, unknown>;
  /**
   * Crest location (crest-location.ts): the midpoint along the crest line as
   * drawn, or the dam point; map x/y in the DEM's CRS units, lon/lat in WGS 84
   * degrees (null when the CRS cannot be converted). Always written by
   * estimate; optional so summaries of older runs still read.
   */
  crest_x?: number;
  crest_y?: number;
  crest_lon?: number | null;
  crest_lat?: number | null;
  /** Monte Carlo bands of this dam's figures, keyed by the figure's name (uncertainty/bands.ts); absent without draws. */
  bands?: Bands;
}

export interface Totals {
  dam_count: number;
  dams_estimated: number;
  dams_skipped: number;
  dams_in_totals: number;
  inundated_area_m2: number;
  storage_m3: number;
}

export interface InputRecord {
  role: 'dem' | 'dams';
  path: string;
  sha256: string;
}
