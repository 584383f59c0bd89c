/**
 * The influence stage of a run, after the ponds are combined:
 *
 *   analysis window of the DEM (read whole)
 *   → terrain (hydro/terrain.ts): filled DEM, D8, accumulation, streams,
 *     stream length, HAND, valley bottom, link watersheds
 *   → watersheds: the user's polygons, or derived (watersheds-stage.ts)
 *   → valley bottom: from HAND, or the user's polygons
 *   → influence zone (influence/zone.ts) around the combined water surface,
 *     each riparian cell given to the dam whose pond is nearest
 *   → per dam: its watershed and influence area; per watershed: stream
 *     length, valley-bottom area (tallied in tally/watersheds.ts).
 *
 * The analysis window: derived watersheds need the whole catchment, so the
 * whole DEM is read and analysed; with polygons, the polygons' extent and
 * the ponds grown by the riparian distance (clipped to the DEM). Streams
 * and HAND inside the window see only the area inside it: a window that
 * cuts a catchment starts its streams where the area inside reaches the
 * threshold.
 *
 * Memory: plan on {@link BYTES_PER_ANALYSED_CELL} bytes per analysed cell at
 * the peak (the DEM, filled DEM, directions, flow order, contributing area,
 * stream mask and links, drainage cells, link watersheds, valley bottom,
 * labels; the HAND and stream-length rasters are not built): the
 * bench's 25 million cells peaked at 1.22 GiB with the ponds' data; the
 * terrain's rasters are released before the influence zone is computed.
 */
import { totalmem } from 'node:os';
import { InputError, type Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import { rasteriseLines } from '../grid/rasterise-line.js';
import { xToCol, yToRow, type GeoTransform } from '../grid/transform.js';
import { streamPolylines } from '../hydro/stream-lines.js';
import type { StreamCellLengths } from '../hydro/stream-length.js';
import { DEFAULT_STREAM_THRESHOLD_M2, type StreamLinks } from '../hydro/streams.js';
import { analyseTerrain, type Terrain } from '../hydro/terrain.js';
import { VALLEY_BOTTOM_DEFAULTS, type ValleyBottomOptions } from '../hydro/valley-bottom.js';
import { DEFAULT_RIPARIAN_DISTANCE_M, DEFAULT_RIPARIAN_RISE_M, influenceZoneOfCells } from '../influence/zone.js';
import { buildRiparianTables, type RiparianTables } from '../influence/riparian-table.js';
import type { RiparianReach } from './influence-draws.js';
import type { DamInput } from '../inventory.js';
import type { AreaLayer } from '../io/area-layer.js';
import { cellMetrics } from '../io/crs.js';
import type { DemSource } from '../io/dem.js';
import { pondCellsOn, pondWaterBox, type PondWater } from './pond-water.js';
import type { DamResult } from './result.js';
import { derivedWatersheds, featuresBox, polygonValleyBottom, polygonWatersheds, type WatershedUnit } from './watersheds-stage.js';
import { clipBox, unionBox, type CellBox } from './windows.js';

/**
 * Smallest area of a derived watershed, m²: 1 km² (100 ha). A project
 * choice: about the catchment of a small headwater valley with beaver
 * dams, so a 5 km × 5 km DEM gives a handful to a few dozen units; set
 * --min-watershed-area for coarser or finer units.
 */
export const DEFAULT_MIN_WATERSHED_AREA_M2 = 1_000_000;

/** Bytes per analysed DEM cell to plan for (see the file comment): the bench run's peak per cell (53 B, the process with the ponds' data; 61 B before the terrain step reused its buffers), rounded up. */
export const BYTES_PER_ANALYSED_CELL = 64;

/** The stage's parameters (metres, m²). */
export interface InfluenceRunParams {
  /** Horizontal reach of the riparian fringe from the nearest pond cell, m (Lowry 1993). */
  riparianDistanceM: number;
  /** Largest height of a riparian cell above that pond's water level, m (Westbrook et al. 2006). */
  riparianRiseM: number;
  /** Contributing area that starts a stream, m². */
  streamThresholdM2: number;
  /** Smallest derived watershed, m². */
  minWatershedAreaM2: number;
  /** HAND threshold rule of the valley bottom (hydro/valley-bottom.ts). */
  valleyBottom: Required<ValleyBottomOptions>;
}

/** The stage's defaults, each with its source in the module that defines it. */
export function defaultInfluenceParams(): InfluenceRunParams {
  return {
    riparianDistanceM: DEFAULT_RIPARIAN_DISTANCE_M,
    riparianRiseM: DEFAULT_RIPARIAN_RISE_M,
    streamThresholdM2: DEFAULT_STREAM_THRESHOLD_M2,
    minWatershedAreaM2: DEFAULT_MIN_WATERSHED_AREA_M2,
    valleyBottom: { ...VALLEY_BOTTOM_DEFAULTS },
  };
}

/** One derived stream link as a line, for streams.geojson. */
export interface StreamLine {
  linkId: number;
  downstreamLinkId: number;
  /** Index of the watershed of its upstream end, −1 when in none. */
  unit: number;
  /** Length along the D8 path, m. */
  lengthM: number;
  /** Interleaved x, y of cell centres in the DEM's CRS, upstream first. */
  xy: Float64Array;
}

/** What the stage found. Rasters are on the analysis window, flat-indexed. */
export interface InfluenceOutcome {
  /** The analysis window in full-DEM pixel space, and its transform. */
  box: CellBox;
  transform: GeoTransform;
  width: number;
  height: number;
  /** Cell area of each window row, m². */
  cellAreaM2: Float64Array;
  watershedSource: 'polygons' | 'derived';
  valleyBottomSource: 'hand' | 'polygons';
  units: WatershedUnit[];
  /** Per cell: 1 + watershed index, 0 in none. */
  labels: Int32Array;
  /** Per watershed: area on the DEM, stream length, valley-bottom area (m², m, m²; each row's own cell area). */
  unitAreaM2: Float64Array;
  unitStreamLengthM: Float64Array;
  unitValleyBottomM2: Float64Array;
  /** Per dam row: watershed index (−1: outside every watershed) and riparian area attributed to it, m². */
  damUnit: Int32Array;
  damRiparianM2: Float64Array;
  /** Per cell: 0 none, 1 inundated, 2 riparian, 255 NoData; and the dam row + 1 of influenced cells (0 elsewhere). */
  classes: Uint8Array;
  classOwner: Int32Array;
  streams: StreamLine[];
  warnings: Warning[];
  /** Per-dam riparian area tables over the draws' limits (owner id = dam row + 1; influence/riparian-table.ts), or null without `reach`. */
  riparianTables: RiparianTables | null;
  /**
   * Wall time of each step, s (for the bench); riparianTableS is the part of
   * influenceS that builds the tables, terrainStepsS the parts of terrainS
   * (hydro/terrain.ts `timingsS`).
   */
  timings: { readS: number; terrainS: number; watershedsS: number; influenceS: number; riparianTableS?: number; terrainStepsS: Terrain['timingsS'] };
}

/** Inputs of the stage besides the estimate's result. */
export interface InfluenceStageInputs {
  dem: DemSource;
  dams: DamResult[];
  /** The inventory as read (crest geometry in the DEM's CRS), in the same order as `dams`. */
  damInputs: readonly DamInput[];
  pondWater: PondWater;
  params: InfluenceRunParams;
  watersheds: AreaLayer | null;
  valleyBottom: AreaLayer | null;
  /** Limits the draws can take: list candidate riparian cells within them and build the tables (pipeline/influence-draws.ts). */
  reach?: RiparianReach | undefined;
}

/** Runs the stage (see the file comment). */
export async function runInfluenceStage(inp: InfluenceStageInputs): Promise<InfluenceOutcome> {
  const { dem, params } = inp;
  const warnings: Warning[] = [];
  const box = analysisBox(inp);
  const cells = (box.col1 - box.col0) * (box.row1 - box.row0);
  checkMemory(cells, dem, inp.watersheds !== null);

  let t = performance.now();
  const grid = await dem.readWindow(box.col0, box.row0, box.col1 - box.col0, box.row1 - box.row0);
  const readS = (performance.now() - t) / 1000;

  t = performance.now();
  let terrain: ReturnType<typeof analyseTerrain> | null = analyseTerrain(grid, { streamThresholdM2: params.streamThresholdM2, valleyBottom: params.valleyBottom });
  const terrainS = (performance.now() - t) / 1000;
  const terrainStepsS = terrain.timingsS;

  t = performance.now();
  let unitOfLink: Int32Array | null = null;
  let ws;
  if (inp.watersheds) {
    ws = polygonWatersheds(grid, inp.watersheds);
  } else {
    const derived = derivedWatersheds(grid, terrain.watershed, terrain.links, params.minWatershedAreaM2);
    unitOfLink = derived.unitOfLink;
    ws = derived;
  }
  warnings.push(...ws.warnings);
  const { labels, units } = ws;
  let valley = terrain.valleyBottom;
  if (inp.valleyBottom) {
    const vb = polygonValleyBottom(grid, inp.valleyBottom);
    valley = vb.mask;
    warnings.push(...vb.warnings);
  }
  const geo = unitGeography(grid, labels, units.length, terrain.streamCellLengths, valley, terrain.links);
  const streams = streamLines(grid, terrain, labels, unitOfLink, geo.linkLengthM);
  const watershedsS = (performance.now() - t) / 1000;
  terrain = null; // the terrain's rasters are not needed any more

  t = performance.now();
  const zone = influenceZoneOfCells(grid, pondCellsOn(inp.pondWater, box), {
    distanceM: params.riparianDistanceM,
    riseM: params.riparianRiseM,
    valleyBottom: valley,
    ...(inp.reach ? { candidates: { distanceMaxM: inp.reach.distanceMaxM, riseMaxM: inp.reach.riseMaxM } } : {}),
  });
  const tableStart = performance.now();
  const riparianTables =
    inp.reach && zone.candidates
      ? buildRiparianTables({
          candidates: zone.candidates,
          width: grid.width,
          cellAreaM2OfRow: grid.cellAreaM2,
          owners: inp.dams.length + 1,
          distanceM: params.riparianDistanceM,
          riseM: params.riparianRiseM,
          ...inp.reach,
        })
      : null;
  const riparianTableS = (performance.now() - tableStart) / 1000;
  const damRiparianM2 = new Float64Array(inp.dams.length);
  const byOwner = zone.byOwner!;
  for (let d = 0; d < inp.dams.length; d++) damRiparianM2[d] = byOwner.riparianAreaM2[d + 1] ?? 0;
  const classes = zone.classes;
  const z = grid.z;
  for (let i = 0; i < classes.length; i++) if (z[i] !== z[i]) classes[i] = 255;
  const damUnit = damWatersheds(inp.damInputs, grid, labels);
  const influenceS = (performance.now() - t) / 1000;

  return {
    box,
    transform: grid.transform,
    width: grid.width,
    height: grid.height,
    cellAreaM2: grid.cellAreaM2,
    watershedSource: inp.watersheds ? 'polygons' : 'derived',
    valleyBottomSource: inp.valleyBottom ? 'polygons' : 'hand',
    units,
    labels,
    unitAreaM2: geo.areaM2,
    unitStreamLengthM: geo.streamLengthM,
    unitValleyBottomM2: geo.valleyBottomM2,
    damUnit,
    damRiparianM2,
    classes,
    classOwner: zone.cellOwner!,
    streams,
    warnings,
    riparianTables,
    timings: { readS, terrainS, watershedsS, influenceS, ...(inp.reach ? { riparianTableS } : {}), terrainStepsS },
  };
}

/**
 * The window the stage analyses: the whole DEM for derived watersheds; else
 * the polygons' extent and the ponds' extent grown by the riparian reach,
 * clipped to the DEM. Polygons whose extent misses the DEM are an error.
 */
function analysisBox(inp: InfluenceStageInputs): CellBox {
  const { dem } = inp;
  const whole: CellBox = { col0: 0, row0: 0, col1: dem.width, row1: dem.height };
  if (!inp.watersheds) return whole;
  const t = dem.transform;
  const polygons = featuresBox(inp.watersheds.features, t, dem.width, dem.height);
  if (!polygons) {
    throw new InputError(
      `watersheds file "${inp.watersheds.path}": its polygons lie outside the DEM; the polygons and the DEM do not overlap. ` +
        `Check the polygons' CRS (read as ${inp.watersheds.crsLabel}; name a projected CRS with --watersheds-crs) and the DEM tiles given`,
    );
  }
  const wet = pondWaterBox(inp.pondWater);
  if (!wet) return polygons;
  // Grow the ponds by the reach, in cells of the DEM's smallest cell size (geographic: its narrowest row).
  const top = cellMetrics(dem.crs, t, 0, 1);
  const bottom = cellMetrics(dem.crs, t, dem.height - 1, 1);
  const cellM = Math.min(top.cellWidthM[0]!, bottom.cellWidthM[0]!, top.cellHeightM);
  const pad = Math.ceil(Math.max(inp.params.riparianDistanceM, inp.reach?.distanceMaxM ?? 0) / cellM) + 2;
  const grown = clipBox({ col0: wet.col0 - pad, row0: wet.row0 - pad, col1: wet.col1 + pad, row1: wet.row1 + pad }, dem.width, dem.height);
  return grown ? unionBox(polygons, grown) : polygons;
}

/** Refuses an analysis that cannot fit: flat indices are 32-bit, and the rasters need memory. */
function checkMemory(cells: number, dem: DemSource, polygons: boolean): void {
  const needGiB = (cells * BYTES_PER_ANALYSED_CELL) / 2 ** 30;
  const haveGiB = totalmem() / 2 ** 30;
  if (cells >= 2 ** 31 || needGiB > 0.8 * haveGiB) {
    throw new InputError(
      `the influence and watershed stage would analyse ${cells.toLocaleString('en-US')} DEM cells (${polygons ? 'the watershed polygons\' extent' : `the whole DEM, ${dem.width} × ${dem.height}`}), ` +
        `which needs about ${needGiB.toFixed(1)} GiB of memory (this machine has ${haveGiB.toFixed(1)} GiB)${cells >= 2 ** 31 ? ' and more cells than one raster can index' : ''}; ` +
        'give watershed polygons that cover only the area of interest (--watersheds), crop the DEM, or run the ponds alone (--ponds-only)',
    );
  }
}

/**
 * Per watershed: its area, stream length and valley-bottom area, summed in
 * row-major order; and per stream link its length. Areas take one pass
 * over the cells; lengths only the stream cells (listed in row-major order,
 * so the sums are the same as over every cell).
 */
function unitGeography(
  grid: Grid,
  labels: Int32Array,
  count: number,
  streamLengths: StreamCellLengths,
  valley: Uint8Array,
  links: StreamLinks,
): { areaM2: Float64Array; streamLengthM: Float64Array; valleyBottomM2: Float64Array; linkLengthM: Float64Array } {
  const areaM2 = new Float64Array(count + 1);
  const lengthM = new Float64Array(count + 1);
  const valleyM2 = new Float64Array(count + 1);
  const linkLengthM = new Float64Array(links.count + 1);
  const link = links.link;
  const { width, height, cellAreaM2 } = grid;
  for (let r = 0; r < height; r++) {
    const a = cellAreaM2[r]!;
    const base = r * width;
    for (let i = base; i < base + width; i++) {
      const l = labels[i]!;
      if (l === 0) continue;
      areaM2[l]! += a;
      if (valley[i] === 1) valleyM2[l]! += a;
    }
  }
  const { cells, lengthM: cellLengthM } = streamLengths;
  for (let k = 0; k < cells.length; k++) {
    const len = cellLengthM[k]!;
    if (len === 0) continue;
    const i = cells[k]!;
    linkLengthM[link[i]!]! += len;
    const l = labels[i]!;
    if (l !== 0) lengthM[l]! += len;
  }
  return { areaM2: areaM2.subarray(1), streamLengthM: lengthM.subarray(1), valleyBottomM2: valleyM2.subarray(1), linkLengthM };
}

/** Stream links as lines with their lengths and watersheds. */
function streamLines(grid: Grid, terrain: ReturnType<typeof analyseTerrain>, labels: Int32Array, unitOfLink: Int32Array | null, lengths: Float64Array): StreamLine[] {
  const { links } = terrain;
  return streamPolylines(grid, terrain.dir, links).map((line) => {
    const first = links.firstCell[line.linkId] ?? -1;
    const unit = unitOfLink ? unitOfLink[line.linkId]! - 1 : first >= 0 ? labels[first]! - 1 : -1;
    return { linkId: line.linkId, downstreamLinkId: line.downstreamLinkId, unit, lengthM: lengths[line.linkId]!, xy: line.xy };
  });
}

/**
 * Each dam's watershed: the label of its crest's lowest DEM cell (where the
 * crest crosses the channel it dams; the crest rasterised as the pond
 * engine does), or of the cell under a dam point; −1 when that cell is in no
 * watershed or off the window.
 */
function damWatersheds(dams: readonly DamInput[], grid: Grid, labels: Int32Array): Int32Array {
  const out = new Int32Array(dams.length).fill(-1);
  const { width, height, transform, z } = grid;
  dams.forEach((d, k) => {
    let cell = -1;
    if (d.geometry.kind === 'point') {
      const c = Math.floor(xToCol(transform, d.geometry.x));
      const r = Math.floor(yToRow(transform, d.geometry.y));
      if (c >= 0 && c < width && r >= 0 && r < height) cell = r * width + c;
    } else {
      const cells = rasteriseLines(grid, d.geometry.lines).cells;
      for (let j = 0; j < cells.length; j++) {
        const i = cells[j]!;
        if (z[i] === z[i] && (cell < 0 || z[i]! < z[cell]!)) cell = i;
      }
    }
    if (cell >= 0) out[k] = labels[cell]! - 1;
  });
  return out;
}
