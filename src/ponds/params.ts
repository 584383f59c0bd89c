/**
 * Parameters of the pond engine and their defaults: the one place each
 * default is defined.
 *
 * Dam heights: Burchsted & Daniels (2014, Geomorphology 205, on beaver dams
 * of headwater streams in Connecticut) describe dams that rarely exceed
 * 1.5 m and exceptionally reach about 3 m. These figures are quoted from
 * memory and not re-checked against the paper; they set the warning and
 * skip thresholds below, not any computed volume.
 */

export interface PondParams {
  /**
   * Crest height above the bed used when a dam has no measured height and
   * does not stand out in the DEM, metres. 1.0 m: a typical beaver dam
   * height (common practice; from memory, within the range reported by
   * Burchsted & Daniels 2014).
   */
  defaultHeightM: number;
  /** Heights above this (m) are kept with a `height-high` warning: beaver dams rarely exceed 1.5 m. */
  typicalMaxHeightM: number;
  /** Heights above this (m) skip the dam (`height-implausible`): about the largest beaver dams reach. */
  maxHeightM: number;
  /**
   * A crest whose lowest DEM point stands at least this far (m) above the
   * lowest ground within `probeM` downstream is "visible" in the DEM: the
   * bed is taken at the downstream toe and, without a measured height, the
   * crest at the crest's lowest DEM point. 0.3 m is three times the 10 cm
   * RMSEz of USGS 3DEP quality level 2 lidar (USGS Lidar Base
   * Specification; from memory), so noise alone rarely passes it.
   */
  demVisibleMinM: number;
  /**
   * Radius (m) around the bed cell within which the lowest ground on each
   * side of the crest is found, for the upstream side and the downstream
   * toe. 3 m: a project choice, a little more than the base half-width of a
   * typical beaver dam (from memory). Never less than 1.5 cells, so coarse
   * DEMs still sample the neighbours.
   */
  probeM: number;
  /**
   * When the lowest ground on the two sides differs by less than this (m),
   * the upstream side inferred from the terrain is flagged ambiguous.
   * 0.02 m: a project choice, about the point-to-point precision of lidar on
   * smooth ground (from memory); a 1 % channel already drops about 0.06 m
   * between the ends of a 3 m probe on each side.
   */
  upstreamToleranceM: number;
  /** Level step of the stage–area–storage curve, metres. */
  stageStepM: number;
}

/** Documented defaults (see each field). Treat as read-only; copy to change. */
export const DEFAULT_POND_PARAMS: Readonly<PondParams> = Object.freeze({
  defaultHeightM: 1.0,
  typicalMaxHeightM: 1.5,
  maxHeightM: 3.0,
  demVisibleMinM: 0.3,
  probeM: 3.0,
  upstreamToleranceM: 0.02,
  stageStepM: 0.1,
});
