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
  /*
   * Ponds that already hold water (pipeline/water-stage.ts). Lidar does not
   * see through water: where a pond holds water today the DEM is its surface.
   * `volume_m3` = `volume_above_surface_m3` + `volume_below_surface_m3`.
   * Always written by estimate; optional so summaries of older runs still read.
   */
  /** Today's water surface behind the dam, m; null when none was found. */
  water_surface_elev_m?: number | null;
  /** Area of that surface this dam's row counts (a shared surface is counted once), m². */
  water_surface_area_m2?: number;
  /** `detected` in the DEM, or from the `mask` given with --water-mask; null when none. */
  water_surface_source?: 'detected' | 'mask' | null;
  /** `found`, or why no surface was kept (no-start, too-small, too-shallow, dips-below, tilted, ground-below, no-mask); null when not looked for. */
  water_surface_check?: string | null;
  /** Crest elevation minus today's water surface, m (negative: overtopped). */
  freeboard_m?: number | null;
  /** Today's water surface minus the bed at the dam, m: the depth h of the power law. */
  depth_at_dam_m?: number | null;
  /** Capacity above today's water surface: the fill's share of the combined surface, m³. */
  volume_above_surface_m3?: number;
  /** Water below today's surface (model or bed DEM), m³. */
  volume_below_surface_m3?: number;
  /** Where the bed under today's water came from. */
  bed_source?: BedSource;
  /** Exponent p of the area–depth power law when it was used (dimensionless), else null. */
  power_p?: number | null;
  /** Reconstructed bed: the pond's length from the crest along the water, m. */
  pond_length_m?: number | null;
  /** Reconstructed bed: median valley-side slope at the shore (rise over run). */
  side_slope?: number | null;
  /*
   * The influence stage (pipeline/influence-stage.ts, tally/watersheds.ts).
   * Written by estimate unless --ponds-only; optional so older runs still read.
   */
  /** Id of the watershed of the crest's lowest DEM cell, or of the dam point (`outside` when in none). */
  watershed?: string;
  /** Riparian cells whose nearest pond cell is this dam's water, m² (0 when its water is not counted). */
  riparian_area_m2?: number;
  /** This dam's influence zone: its water (area_m2) plus riparian_area_m2, m². */
  influence_area_m2?: number;
}

/** Where the bed under today's water came from: `none` (no water surface), a model, a bed DEM, or a bed DEM where it has data and a model elsewhere. */
export type BedSource = 'none' | 'power-law' | 'reconstructed' | 'bed-dem' | 'bed-dem+power-law' | 'bed-dem+reconstructed';

export interface Totals {
  dam_count: number;
  dams_estimated: number;
  dams_skipped: number;
  dams_in_totals: number;
  inundated_area_m2: number;
  storage_m3: number;
  /** Σ volume_above_surface_m3 (capacity above today's water), m³. Optional so older summaries still read. */
  storage_above_surface_m3?: number;
  /** Σ volume_below_surface_m3 (water below today's surface), m³. */
  storage_below_surface_m3?: number;
  /** Σ water_surface_area_m2, m². */
  water_surface_area_m2?: number;
  /** Dams in the totals with a water surface today. */
  dams_with_water_surface?: number;
}

export interface InputRecord {
  role: 'dem' | 'dams' | 'water-mask' | 'bed-dem' | 'watersheds' | 'valley-bottom';
  path: string;
  sha256: string;
}
