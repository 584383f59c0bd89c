/**
 * The change map: two runs' water-depth rasters (depth.tif) on one grid,
 * cell by cell. It needs both rasters in one CRS with the same cell size and
 * origins a whole number of cells apart (runs on one DEM always are); the
 * common frame is the union of the two extents.
 *
 * Each cell gets one class (CHANGE_CLASSES). With a level of detection
 * (runs on different DEMs: LoD95, see lod.ts), a depth change smaller than
 * it is not called a change, and the thresholded storage change counts only
 * cells whose depth changed by at least the LoD (the thresholded DEM of
 * difference of Brasington et al. 2003).
 */
import type { GeoTransform } from '../grid/transform.js';

/** A run's water depth raster, as read from depth.tif. */
export interface DepthRaster {
  width: number;
  height: number;
  transform: GeoTransform;
  /** Identifies the CRS (its proj4 text); rasters compare only when equal. */
  crsKey: string;
  /** Cell area per row of this raster, m². */
  cellAreaM2: Float64Array;
  /** Depth, m; NaN where dry. */
  data: Float32Array;
}

/** A shaded-relief image to draw under the change map (a run's report-map.json hillshade). */
export interface Backdrop {
  /** CRS of the extent (proj4 text); drawn only under rasters of the same CRS. */
  crsKey: string;
  /** Extent the image covers, in CRS units. */
  extent: { xmin: number; ymin: number; xmax: number; ymax: number };
  /** The image, PNG as base64. */
  pngBase64: string;
}

/** Cell classes of the change map, in the order of their codes 0…5. */
export const CHANGE_CLASSES = ['dry', 'new water', 'water gone', 'deeper', 'shallower', 'wet, no detectable change'] as const;
export const CLASS_DRY = 0;
export const CLASS_NEW = 1;
export const CLASS_GONE = 2;
export const CLASS_DEEPER = 3;
export const CLASS_SHALLOWER = 4;
export const CLASS_SAME = 5;

/** The classed raster on the common frame. */
export interface ChangeRaster {
  width: number;
  height: number;
  transform: GeoTransform;
  /** CRS of the frame (proj4 text), as in DepthRaster. */
  crsKey: string;
  /** Class code per cell (CLASS_*). */
  classes: Uint8Array;
}

/** What the change map adds up to (compare.json `change_map`). */
export interface ChangeMapFigures {
  available: true;
  width_cells: number;
  height_cells: number;
  /** Depth change below which a cell is not called changed, m (LoD95 on different DEMs, 0 on one DEM). */
  threshold_m: number;
  /** Area of each class, m², keyed by class name. */
  class_area_m2: Record<string, number>;
  /** Σ (depth B − depth A) × cell area over all cells, m³. */
  storage_change_m3: number;
  /** The same over cells whose depth changed by at least the threshold, m³. */
  storage_change_above_threshold_m3: number;
  /** Wet area of B minus wet area of A, m². */
  inundated_area_change_m2: number;
  /** What the rasters leave out, when anything (e.g. water below lidar water surfaces). */
  note?: string;
}

/** Why there is no change map. */
export interface NoChangeMap {
  available: false;
  note: string;
}

const SNAP = 1e-6;

/** Classes two depth rasters on their common frame; a reason instead when they cannot be aligned. */
export function changeMap(a: DepthRaster | null, b: DepthRaster | null, thresholdM: number): { available: true; figures: ChangeMapFigures; raster: ChangeRaster } | NoChangeMap {
  if (!a || !b) return { available: false, note: `no change map: ${!a && !b ? 'neither run has' : !a ? 'the first run has no' : 'the second run has no'} depth.tif (a run without ponds writes none)` };
  const why = misalignment(a, b);
  if (why) return { available: false, note: `no change map: ${why}` };
  const t = a.transform;
  // Offsets of each raster in the union frame, whole cells.
  const colB = Math.round((b.transform.x0 - t.x0) / t.dx);
  const rowB = Math.round((b.transform.y0 - t.y0) / t.dy);
  const col0 = Math.min(0, colB);
  const row0 = Math.min(0, rowB);
  const width = Math.max(a.width, colB + b.width) - col0;
  const height = Math.max(a.height, rowB + b.height) - row0;
  const oa = { col: -col0, row: -row0 };
  const ob = { col: colB - col0, row: rowB - row0 };
  const classes = new Uint8Array(width * height);
  const area = new Float64Array(CHANGE_CLASSES.length);
  let dStorage = 0;
  let dStorageAbove = 0;
  let wetA = 0;
  let wetB = 0;
  for (let row = 0; row < height; row++) {
    const ra = row - oa.row;
    const rb = row - ob.row;
    const inA = ra >= 0 && ra < a.height;
    const inB = rb >= 0 && rb < b.height;
    if (!inA && !inB) continue;
    const cellArea = inA ? a.cellAreaM2[ra]! : b.cellAreaM2[rb]!;
    for (let col = 0; col < width; col++) {
      const ca = col - oa.col;
      const cb = col - ob.col;
      const da = inA && ca >= 0 && ca < a.width ? a.data[ra * a.width + ca]! : NaN;
      const db = inB && cb >= 0 && cb < b.width ? b.data[rb * b.width + cb]! : NaN;
      const wa = da > 0;
      const wb = db > 0;
      if (!wa && !wb) continue;
      const delta = (wb ? db : 0) - (wa ? da : 0);
      const detectable = Math.abs(delta) >= thresholdM && delta !== 0;
      let cls: number;
      if (!detectable) cls = CLASS_SAME;
      else if (!wa) cls = CLASS_NEW;
      else if (!wb) cls = CLASS_GONE;
      else cls = delta > 0 ? CLASS_DEEPER : CLASS_SHALLOWER;
      classes[row * width + col] = cls;
      area[cls]! += cellArea;
      dStorage += delta * cellArea;
      if (detectable) dStorageAbove += delta * cellArea;
      if (wa) wetA += cellArea;
      if (wb) wetB += cellArea;
    }
  }
  const classArea: Record<string, number> = {};
  CHANGE_CLASSES.forEach((name, k) => {
    if (k !== CLASS_DRY) classArea[name] = area[k]!;
  });
  return {
    available: true,
    figures: {
      available: true,
      width_cells: width,
      height_cells: height,
      threshold_m: thresholdM,
      class_area_m2: classArea,
      storage_change_m3: dStorage,
      storage_change_above_threshold_m3: dStorageAbove,
      inundated_area_change_m2: wetB - wetA,
    },
    raster: { width, height, transform: { x0: t.x0 + col0 * t.dx, y0: t.y0 + row0 * t.dy, dx: t.dx, dy: t.dy }, crsKey: a.crsKey, classes },
  };
}

/** Why two rasters cannot share a frame, or null when they can. */
function misalignment(a: DepthRaster, b: DepthRaster): string | null {
  if (a.crsKey !== b.crsKey) return 'the runs’ DEMs are in different CRSs';
  const ta = a.transform;
  const tb = b.transform;
  if (Math.abs(ta.dx - tb.dx) > SNAP * Math.abs(ta.dx) || Math.abs(ta.dy - tb.dy) > SNAP * Math.abs(ta.dy)) return 'the runs’ DEMs have different cell sizes';
  const fc = (tb.x0 - ta.x0) / ta.dx;
  const fr = (tb.y0 - ta.y0) / ta.dy;
  if (Math.abs(fc - Math.round(fc)) > 1e-3 || Math.abs(fr - Math.round(fr)) > 1e-3) return 'the runs’ DEM grids are not aligned (origins are not a whole number of cells apart)';
  return null;
}
