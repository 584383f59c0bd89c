/**
 * The estimate pipeline, one direction through it:
 *
 *   load (DEM source, inventory in the DEM's CRS)
 *   → group dams by search box → per group: read one window, build crests,
 *     fill behind each crest, combine the group's ponds into one water surface
 *   → per-dam and total figures, depth raster, pond outlines.
 *
 * It touches no output files and prints nothing: io/write-run.ts writes what
 * this returns, and the CLI reports progress through the callback.
 */
import { InputError, type Warning } from '../errors.js';
import { onStep } from './figure-step.js';
import type { Grid } from '../grid/grid.js';
import { polygoniseCells } from '../grid/polygonise.js';
import { rasteriseLines } from '../grid/rasterise-line.js';
import { WGS84, cellMetrics, makeTransform } from '../io/crs.js';
import { colToX, rowToY, xToCol, yToRow } from '../grid/transform.js';
import type { DamInput } from '../inventory.js';
import type { DemSource } from '../io/dem.js';
import { combinePonds, type PondLayer } from '../ponds/combine.js';
import type { CrestSetup } from '../ponds/crest.js';
import { createFillScratch, fillBehindCrest, type PondFill, type ReachBox } from '../ponds/fill.js';
import { setupAndFill } from '../ponds/upstream-by-fill.js';
import type { PondParams } from '../ponds/params.js';
import { crestFromPoint } from '../ponds/point-crest.js';
import { pondStats, stageStorage } from '../ponds/stage-storage.js';
import type { DamResult, Totals } from './result.js';
import { clipBox, groupBoxes, unionBox, type CellBox } from './windows.js';
import { crestLocation } from './crest-location.js';
import { ScenarioTally, type Scenarios } from './scenarios.js';
import type { UncertaintyParams } from '../uncertainty/params.js';
import { sphericalSemivariogram } from '../uncertainty/covariance.js';
import { createDrawPrep, type DrawInputs, type DrawPrep } from '../uncertainty/prepare.js';
import { WaterStage, effectiveWaterParams, type WaterRunParams, type WaterWindowSource } from './water-stage.js';
import { PondWaterCollector, type PondWater } from './pond-water.js';
import type { InfluenceRunParams } from './influence-stage.js';

/** Run-level parameters beyond the pond engine's own. */
export interface EstimateParams {
  pond: PondParams;
  /** Largest distance a pond may reach from its crest, metres; bounds each dam's search box. */
  maxReachM: number;
  /** Search radius for the channel around a point dam, metres. */
  snapRadiusM: number;
  /** Cap on a crest built from a point, metres. */
  maxCrestLengthM: number;
  /** Candidates count in the totals only at or above this confidence (0–1). */
  minConfidence: number;
  /** Monte Carlo draws and their sources (uncertainty/params.ts); absent or 0 draws: no bands. */
  uncertainty?: UncertaintyParams;
  /** Ponds that already hold water (water-stage.ts); absent: the defaults. */
  water?: WaterRunParams;
  /** Influence zone, valley bottom and watersheds (influence-stage.ts); absent: that stage does not run. */
  influence?: InfluenceRunParams;
}

/** Progress of the long steps, for the CLI's bar. */
export type ProgressFn = (event: { stage: 'ponds'; done: number; total: number }) => void;

/** Everything a run found, ready to be written. */
export interface EstimateResult {
  dams: DamResult[];
  totals: Totals;
  /** Water depth on the output window, m; NaN where dry. */
  depth: { box: CellBox; data: Float32Array } | null;
  /**
   * Outline rings per dam (index into `dams`) in full-DEM pixel-corner
   * coordinates, exterior first: `attributed` is the water the dam owns in the
   * combined surface; `standalone` its own pond, given for dams not in the totals.
   */
  outlines: { dam: number; kind: 'attributed' | 'standalone'; polygons: [number, number][][][] }[];
  warnings: Warning[];
  /** Cells the floods visited, summed over dams (work done). */
  cellsVisited: number;
  /** Existing and existing-plus-proposed water surfaces (scenarios.ts); the totals above are the existing one. */
  scenarios?: Scenarios;
  /** What the Monte Carlo draws need (fills, error supports, overlapping ponds); null without draws. */
  drawInputs?: DrawInputs | null;
  /** The combined water surface's wet cells, levels and owners, for the influence stage (pond-water.ts). */
  pondWater?: PondWater;
}

interface Working {
  dam: DamInput;
  result: DamResult;
  box: CellBox | null;
  setup?: CrestSetup;
  fill?: PondFill;
}

/** Runs the pond stages for an opened DEM and a read inventory. */
export async function estimatePonds(
  dem: DemSource,
  dams: readonly DamInput[],
  params: EstimateParams,
  progress?: ProgressFn,
  waterSource?: WaterWindowSource | null,
): Promise<EstimateResult> {
  const warnings: Warning[] = [];
  const water = new WaterStage(effectiveWaterParams(params), waterSource ?? null);
  const cellM = demCellSizeM(dem);
  const toLonLat = makeTransform(dem.crs, WGS84);
  const work: Working[] = dams.map((dam) => {
    const result = { ...emptyResult(dam, params.minConfidence), ...crestLocation(dam.geometry, toLonLat) };
    const box = searchBox(dem, dam, params, cellM);
    if (!box) skip(result, warnings, {
      code: 'outside-dem',
      damId: dam.id,
      message: `dam ${dam.id}: its geometry lies outside the DEM; check the dams' CRS (--dams-crs) or the DEM tiles given`,
    });
    return { dam, result, box };
  });

  if (work.length > 0 && work.every((w) => w.box === null)) {
    throw new InputError(
      `none of the ${work.length} dams lies on the DEM; the inventory and the DEM do not overlap. ` +
        'Check the dams\' CRS (--dams-crs for projected coordinates; GeoJSON without it is read as WGS 84 lon/lat) and that the DEM tiles cover the dams',
    );
  }
  const groups = groupBoxes(work.map((w) => w.box));
  const outlines: EstimateResult['outlines'] = [];
  let outBox: CellBox | null = null;
  for (const g of groups) outBox = outBox ? unionBox(outBox, g.box) : g.box;
  const depth = outBox ? { box: outBox, data: new Float32Array((outBox.col1 - outBox.col0) * (outBox.row1 - outBox.row0)).fill(NaN) } : null;

  let done = 0;
  let cellsVisited = 0;
  const scenarioTally = new ScenarioTally(work.length);
  const prep = params.uncertainty && params.uncertainty.draws > 0 ? createDrawPrep(params.uncertainty, params.pond, work.length) : null;
  const pondWater = new PondWaterCollector();
  for (const group of groups) {
    const { box } = group;
    const grid = await dem.readWindow(box.col0, box.row0, box.col1 - box.col0, box.row1 - box.row0);
    const scratch = createFillScratch(grid.width * grid.height);
    for (const k of group.members) {
      const w = work[k]!;
      floodOne(grid, w, box, params, warnings, scratch, prep);
      cellsVisited += w.fill?.visitedCount ?? 0;
      progress?.({ stage: 'ponds', done: ++done, total: dams.length });
    }
    // Ponds holding water today: set their surfaces to their level, fill again on that surface.
    const members = group.members.map((k) => work[k]!);
    const waterWindow = await water.window(box);
    if (water.detect(grid, members, box, waterWindow, warnings)) {
      for (const w of members) if (water.affects(w.fill, grid.width)) cellsVisited += refillOne(grid, w, box, scratch, params, prep);
    }
    combineGroup(grid, group.members.map((k) => work[k]!), box, depth!, outlines, work, pondWater);
    water.below(grid, members, box, waterWindow, depth, warnings);
    scenarioTally.addGroup(grid, group.members.map((k) => ({ index: k, result: work[k]!.result, fill: work[k]!.fill })));
    prep?.addGroup(
      grid,
      group.members.map((k) => ({ index: k, dam: work[k]!.dam, inTotals: work[k]!.result.in_totals, setup: work[k]!.setup, fill: work[k]!.fill, reachBox: reachBoxIn(work[k]!.box, box) })),
      scratch,
    );
  }

  warnings.push(...water.finish());
  const results = work.map((w) => w.result);
  for (const r of results) quantiseFigures(r);
  const totals = totalsOf(results);
  return { dams: results, totals, depth, outlines, warnings, cellsVisited, scenarios: scenarioTally.finish(results, totals), drawInputs: prep?.finish() ?? null, pondWater: pondWater.finish() };
}

/** Builds the crest, fills behind it and records the dam's own pond. */
function floodOne(grid: Grid, w: Working, box: CellBox, params: EstimateParams, warnings: Warning[], scratch: ReturnType<typeof createFillScratch>, prep: DrawPrep | null): void {
  const { dam, result } = w;
  let lines: [number, number][][];
  if (dam.geometry.kind === 'point') {
    const built = crestFromPoint(grid, dam.geometry.x, dam.geometry.y, {
      heightM: dam.heightM !== null && dam.heightM > 0 ? dam.heightM : params.pond.defaultHeightM,
      snapRadiusM: params.snapRadiusM,
      maxCrestLengthM: params.maxCrestLengthM,
      damId: dam.id,
    });
    if ('skip' in built) return skip(result, warnings, built.skip);
    for (const wn of built.warnings) note(result, warnings, wn);
    lines = [built.line];
  } else {
    lines = dam.geometry.lines;
  }
  const crest = rasteriseLines(grid, lines);
  if (crest.outside > 0) {
    note(result, warnings, {
      code: 'crest-off-dem',
      damId: dam.id,
      message: `dam ${dam.id}: ${crest.outside} crest vertices lie off the DEM; the crest is cut at the DEM's edge`,
    });
  }
  const reachBox = reachBoxIn(w.box!, box)!;
  // A crest built from a point is a line from here on.
  const lineDam: DamInput = dam.geometry.kind === 'line' ? dam : { ...dam, geometry: { kind: 'line', lines } };
  const done = setupAndFill(grid, lineDam, crest.cells, params.pond, { reachBox }, scratch);
  if ('skip' in done) return skip(result, warnings, done.skip);
  const { setup } = done;
  // Draws raise the crest: flood once more, up to the highest level a draw can reach (same pond at the crest).
  const drawTopM = prep ? prep.floodTopM(dam, setup) : -Infinity;
  const kept = done.fill.escapeKind === null && drawTopM > done.fill.topLevelM ? fillBehindCrest(grid, setup, { reachBox, maxLevelM: drawTopM }, scratch) : done.fill;
  for (const wn of setup.warnings) note(result, warnings, wn);
  const marginal = visibilityNearThreshold(dam.id, setup, params);
  if (marginal) note(result, warnings, marginal);
  w.setup = setup;
  w.fill = kept;
  const stats = pondStats(grid, kept);
  Object.assign(result, {
    estimated: true,
    crest_elev_m: setup.crestElevM,
    bed_elev_m: setup.bedElevM,
    height_m: setup.heightM,
    height_source: setup.heightSource,
    upstream_side: setup.upstreamSide,
    upstream_source: setup.upstreamSource,
    water_level_m: kept.waterLevelM,
    limited_by: kept.limitedBy,
    standalone_area_m2: stats.areaM2,
    standalone_volume_m3: stats.volumeM3,
    crest_length_m: crestLengthM(grid, lines),
    cells_visited: kept.visitedCount,
    stage_storage: stageStorage(kept, setup.bedElevM, params.pond.stageStepM),
  } satisfies Partial<DamResult>);
  if (kept.limitedBy !== 'crest' && kept.limitedBy !== 'breach') {
    note(result, warnings, limitWarning(dam.id, kept));
  }
}

/**
 * A warning when the DEM error is drawn and the dam stands within two
 * standard deviations of the error difference between its crest and its
 * toe of the height at which pondage counts it as visible in the DEM: on
 * the true ground the rule could go the other way and count the dam's
 * height from the other place (toe or crest). The draws take the rule
 * again for measured dams (uncertainty/prepare.ts VisibilityFlip), not
 * for the others. The two lie about the probe's length apart, so the difference's
 * standard deviation is √(2·γ(probe)) under the spherical error model.
 */
function visibilityNearThreshold(id: string, setup: CrestSetup, params: EstimateParams): Warning | null {
  const u = params.uncertainty;
  if (!u || !(u.draws > 0) || !u.demError || !(u.demRmseM > 0) || !setup.holdsWater) return null;
  const margin = setup.visibilityMarginM;
  const sdM = Math.sqrt(2 * sphericalSemivariogram(params.pond.probeM, u.demRmseM * u.demRmseM, u.demErrorRangeM));
  if (!(Math.abs(margin) < 2 * sdM)) return null;
  const stands = (margin + params.pond.demVisibleMinM).toFixed(2);
  const rule = params.pond.demVisibleMinM.toFixed(2);
  const now = setup.demVisible ? 'from its downstream toe' : 'from the crest\'s lowest DEM point';
  // Measured dams have the rule drawn again (uncertainty/prepare.ts VisibilityFlip); the others keep the DEM's choice.
  const bands =
    setup.heightSource === 'measured' && setup.toeCell >= 0
      ? 'the bands take the rule again in each draw, from the error difference of those two cells alone'
      : 'which the bands do not include';
  return {
    code: 'visibility-near-threshold',
    damId: id,
    message: `dam ${id}: it stands ${stands} m above its surroundings in the DEM, near the ${rule} m at which it counts as visible there; its crest level is counted ${now}, and with the DEM's error (RMSE ${u.demRmseM} m) the rule could go the other way; ${bands}`,
  };
}

/** A dam's own search box in the cells of its group's window (undefined without a box). */
function reachBoxIn(own: CellBox | null, box: CellBox): ReachBox | undefined {
  if (!own) return undefined;
  return { col0: own.col0 - box.col0, row0: own.row0 - box.row0, col1: own.col1 - box.col0, row1: own.row1 - box.row0 };
}

/**
 * Fills a dam again with the setup it has, on a window whose water surfaces
 * were set to their level, and records the fill's figures; returns the cells
 * the new fill visited.
 */
function refillOne(grid: Grid, w: Working, box: CellBox, scratch: ReturnType<typeof createFillScratch>, params: EstimateParams, prep: DrawPrep | null): number {
  const { setup, result } = w;
  if (!setup || !w.fill || !w.box) return 0;
  const reachBox = reachBoxIn(w.box, box)!;
  const first = fillBehindCrest(grid, setup, { reachBox }, scratch);
  const drawTopM = prep ? prep.floodTopM(w.dam, setup) : -Infinity;
  const kept = first.escapeKind === null && drawTopM > first.topLevelM ? fillBehindCrest(grid, setup, { reachBox, maxLevelM: drawTopM }, scratch) : first;
  w.fill = kept;
  const stats = pondStats(grid, kept);
  Object.assign(result, {
    water_level_m: kept.waterLevelM,
    limited_by: kept.limitedBy,
    standalone_area_m2: stats.areaM2,
    standalone_volume_m3: stats.volumeM3,
    cells_visited: result.cells_visited + kept.visitedCount,
    stage_storage: stageStorage(kept, setup.bedElevM, params.pond.stageStepM),
  } satisfies Partial<DamResult>);
  return kept.visitedCount;
}

/** Combines the group's ponds that count in the totals and records each dam's share, depth and outline. */
function combineGroup(grid: Grid, members: Working[], box: CellBox, depth: NonNullable<EstimateResult['depth']>, outlines: EstimateResult['outlines'], all: Working[], pondWater: PondWaterCollector): void {
  const layers: PondLayer[] = [];
  const owners: Working[] = [];
  for (const w of members) {
    if (!w.fill) continue;
    if (w.result.in_totals) {
      layers.push({ fill: w.fill, waterLevelM: w.fill.waterLevelM });
      owners.push(w);
    } else {
      const stats = pondStats(grid, w.fill);
      outlines.push({ dam: all.indexOf(w), kind: 'standalone', polygons: outlineOf(w.fill.order.subarray(0, stats.cellCount), grid, box) });
    }
  }
  if (layers.length === 0) return;
  const combined = combinePonds(grid, layers);
  combined.perPond.forEach((share, p) => {
    const r = owners[p]!.result;
    r.area_m2 = share.areaM2;
    r.volume_m3 = share.volumeM3;
    r.max_depth_m = share.maxDepthM;
    r.mean_depth_m = share.areaM2 > 0 ? share.volumeM3 / share.areaM2 : 0;
    r.drowned_by = share.drownedBy >= 0 ? owners[share.drownedBy]!.dam.id : null;
    if (r.drowned_by) r.warnings.push(`crest under the pond of dam ${r.drowned_by}; its water is counted there`);
  });

  // Depth into the output window, and the cells each dam owns (bucketed by owner).
  const { width, height, z } = grid;
  const outW = depth.box.col1 - depth.box.col0;
  const counts = new Int32Array(layers.length + 1);
  for (let row = 0; row < height; row++) {
    const outRow = (row + box.row0 - depth.box.row0) * outW + (box.col0 - depth.box.col0);
    for (let col = 0; col < width; col++) {
      const i = row * width + col;
      const o = combined.owner[i]!;
      if (o < 0) continue;
      depth.data[outRow + col] = combined.levelM[i]! - z[i]!;
      counts[o + 1]!++;
    }
  }
  for (let p = 0; p < layers.length; p++) counts[p + 1]! += counts[p]!;
  const cells = new Int32Array(counts[layers.length]!);
  const next = counts.slice(0, layers.length);
  for (let i = 0; i < combined.owner.length; i++) {
    const o = combined.owner[i]!;
    if (o >= 0) cells[next[o]!++] = i;
  }
  for (let p = 0; p < layers.length; p++) {
    const own = cells.subarray(counts[p]!, counts[p + 1]!);
    if (own.length > 0) outlines.push({ dam: all.indexOf(owners[p]!), kind: 'attributed', polygons: outlineOf(own, grid, box) });
  }
  pondWater.add(box, combined, cells, counts, owners.map((w) => all.indexOf(w)));
}

/** Outline rings of window cells, shifted to full-DEM pixel coordinates. */
function outlineOf(cells: Int32Array, grid: Grid, box: CellBox): [number, number][][][] {
  return polygoniseCells(cells, grid.width).map((polygon) =>
    polygon.map((ring) => ring.map(([c, r]) => [c + box.col0, r + box.row0] as [number, number])),
  );
}

/** The dam's search box in DEM cells: its geometry's extent grown by the maximum reach. */
function searchBox(dem: DemSource, dam: DamInput, params: EstimateParams, cellM: { x: number; y: number }): CellBox | null {
  const t = dem.transform;
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  const visit = (x: number, y: number): void => {
    const c = xToCol(t, x);
    const r = yToRow(t, y);
    c0 = Math.min(c0, c);
    c1 = Math.max(c1, c);
    r0 = Math.min(r0, r);
    r1 = Math.max(r1, r);
  };
  let growM = params.maxReachM;
  if (dam.geometry.kind === 'point') {
    visit(dam.geometry.x, dam.geometry.y);
    growM += params.maxCrestLengthM / 2 + params.snapRadiusM;
  } else {
    for (const line of dam.geometry.lines) for (const [x, y] of line) visit(x, y);
  }
  if (!Number.isFinite(c0) || !Number.isFinite(r0)) return null;
  // The geometry itself must touch the DEM; only then is the box grown.
  if (!clipBox({ col0: Math.floor(c0), row0: Math.floor(r0), col1: Math.floor(c1) + 1, row1: Math.floor(r1) + 1 }, dem.width, dem.height)) {
    return null;
  }
  const gc = Math.ceil(growM / cellM.x);
  const gr = Math.ceil(growM / cellM.y);
  return clipBox(
    { col0: Math.floor(c0) - gc, row0: Math.floor(r0) - gr, col1: Math.floor(c1) + 1 + gc, row1: Math.floor(r1) + 1 + gr },
    dem.width,
    dem.height,
  );
}

/** Smallest cell size of the DEM in metres (geographic: over its rows), so reach boxes are never too small. */
function demCellSizeM(dem: DemSource): { x: number; y: number } {
  const top = cellMetrics(dem.crs, dem.transform, 0, 1);
  const bottom = cellMetrics(dem.crs, dem.transform, dem.height - 1, 1);
  return { x: Math.min(top.cellWidthM[0]!, bottom.cellWidthM[0]!), y: top.cellHeightM };
}

/** Crest length in metres, measured on the grid's per-row cell sizes. */
function crestLengthM(grid: Grid, lines: [number, number][][]): number {
  let total = 0;
  for (const line of lines) {
    for (let k = 0; k + 1 < line.length; k++) {
      const [xa, ya] = line[k]!;
      const [xb, yb] = line[k + 1]!;
      const ra = yToRow(grid.transform, ya);
      const rb = yToRow(grid.transform, yb);
      const row = Math.min(grid.height - 1, Math.max(0, Math.floor((ra + rb) / 2)));
      const dxM = (xToCol(grid.transform, xb) - xToCol(grid.transform, xa)) * grid.cellWidthM[row]!;
      const dyM = (rb - ra) * grid.cellHeightM;
      total += Math.hypot(dxM, dyM);
    }
  }
  return total;
}

function limitWarning(id: string, fill: PondFill): Warning {
  const level = fill.waterLevelM.toFixed(2);
  switch (fill.limitedBy) {
    case 'spill':
      return { code: 'spills-around-crest', damId: id, message: `dam ${id}: water escapes around the end of the crest at ${level} m, below the crest; the crest line may be too short, or the dam does not span the valley` };
    case 'edge':
      return { code: 'reaches-edge', damId: id, message: `dam ${id}: the pond reaches the edge of the DEM or of the maximum pond reach at ${level} m; its extent and volume are a lower bound (raise --max-reach or add DEM tiles)` };
    default:
      return { code: 'reaches-nodata', damId: id, message: `dam ${id}: the pond reaches NoData cells at ${level} m; its extent and volume are a lower bound` };
  }
}

function note(result: DamResult, warnings: Warning[], w: Warning): void {
  result.warnings.push(stripId(w));
  warnings.push(w);
}

function skip(result: DamResult, warnings: Warning[], w: Warning): void {
  result.estimated = false;
  result.skip_reason = stripId(w);
  result.in_totals = false;
  warnings.push(w);
}

/** Per-dam messages are stored on the dam's own row, without repeating its id. */
function stripId(w: Warning): string {
  return w.damId ? w.message.replace(`dam ${w.damId}: `, '') : w.message;
}

function emptyResult(dam: DamInput, minConfidence: number): DamResult {
  const inTotals = dam.status === 'proposed' ? false : dam.status === 'candidate' ? (dam.confidence ?? 1) >= minConfidence : true;
  return {
    id: dam.id,
    status: dam.status,
    confidence: dam.confidence,
    year: dam.year,
    crest_geometry: dam.geometry.kind,
    in_totals: inTotals,
    estimated: false,
    skip_reason: null,
    crest_elev_m: null,
    bed_elev_m: null,
    height_m: null,
    height_source: null,
    upstream_side: null,
    upstream_source: null,
    water_level_m: null,
    limited_by: null,
    area_m2: 0,
    volume_m3: 0,
    max_depth_m: 0,
    mean_depth_m: 0,
    standalone_area_m2: 0,
    standalone_volume_m3: 0,
    drowned_by: null,
    crest_length_m: null,
    cells_visited: 0,
    stage_storage: [],
    warnings: [],
    properties: dam.extra,
    water_surface_elev_m: null,
    water_surface_area_m2: 0,
    water_surface_source: null,
    water_surface_check: null,
    freeboard_m: null,
    depth_at_dam_m: null,
    volume_above_surface_m3: 0,
    volume_below_surface_m3: 0,
    bed_source: 'none',
    power_p: null,
    pond_length_m: null,
    side_slope: null,
  };
}

/** Totals are the sums of the per-dam rows, in row order, so they agree exactly. */

/** Puts a dam's additive figures on FIGURE_STEP; its volume stays the exact sum of its parts. */
function quantiseFigures(d: DamResult): void {
  d.area_m2 = onStep(d.area_m2);
  if (d.water_surface_area_m2 !== undefined && d.water_surface_area_m2 !== null) d.water_surface_area_m2 = onStep(d.water_surface_area_m2);
  const above = d.volume_above_surface_m3;
  const below = d.volume_below_surface_m3;
  if (above !== undefined && above !== null && below !== undefined && below !== null) {
    d.volume_above_surface_m3 = onStep(above);
    d.volume_below_surface_m3 = onStep(below);
    d.volume_m3 = d.volume_above_surface_m3 + d.volume_below_surface_m3;
  } else {
    d.volume_m3 = onStep(d.volume_m3);
  }
  // The mean depth stays the quotient of the reported figures.
  d.mean_depth_m = d.area_m2 > 0 ? d.volume_m3 / d.area_m2 : 0;
}

function totalsOf(dams: DamResult[]): Totals {
  let area = 0;
  let volume = 0;
  let estimated = 0;
  let inTotals = 0;
  let above = 0;
  let below = 0;
  let waterArea = 0;
  let withWater = 0;
  for (const d of dams) {
    if (d.estimated) estimated++;
    if (d.estimated && d.in_totals) inTotals++;
    area += d.area_m2;
    volume += d.volume_m3;
    above += d.volume_above_surface_m3 ?? 0;
    below += d.volume_below_surface_m3 ?? 0;
    waterArea += d.water_surface_area_m2 ?? 0;
    if ((d.water_surface_area_m2 ?? 0) > 0) withWater++;
  }
  return {
    dam_count: dams.length,
    dams_estimated: estimated,
    dams_skipped: dams.length - estimated,
    dams_in_totals: inTotals,
    inundated_area_m2: area,
    storage_m3: volume,
    storage_above_surface_m3: above,
    storage_below_surface_m3: below,
    water_surface_area_m2: waterArea,
    dams_with_water_surface: withWater,
  };
}

/** Map coordinates of a full-DEM pixel-corner position. */
export function pixelToMap(dem: DemSource, col: number, row: number): [number, number] {
  return [colToX(dem.transform, col), rowToY(dem.transform, row)];
}
