/**
 * The influence stage inside a run (run.ts): read the user's polygon layers
 * before the ponds (so a bad file stops the run early), run the stage after
 * them, tally by watershed, put bands on the rows once the draws are made,
 * and say in summary.json what was done.
 */
import type { Warning } from '../errors.js';
import type { DamInput } from '../inventory.js';
import { readAreaLayer, type AreaLayer } from '../io/area-layer.js';
import type { DemSource } from '../io/dem.js';
import { sha256File } from '../io/hash.js';
import { tallyWatersheds, type InfluenceTotals, type WatershedRow, type WatershedTally } from '../tally/watersheds.js';
import { watershedBands, watershedDraws, type WatershedDraws } from '../tally/watershed-bands.js';
import type { EstimateResult } from './estimate.js';
import type { RunDraws } from './draws.js';
import type { RiparianReach } from './influence-draws.js';
import { runInfluenceStage, type InfluenceOutcome, type InfluenceRunParams } from './influence-stage.js';
import type { InputRecord } from './result.js';

/** Polygon inputs as the user gave them (all optional). */
export interface InfluenceInputOptions {
  /** `--watersheds`: GeoJSON polygons of the watersheds to report by. */
  watershedsPath?: string | undefined;
  /** `--watershed-field`: the property that names each watershed (default `id`). */
  watershedField?: string | undefined;
  /** `--watersheds-crs`: CRS of projected watershed coordinates. */
  watershedsCrs?: string | undefined;
  /** `--valley-bottom`: GeoJSON polygons of the valley bottom (replaces the HAND threshold). */
  valleyBottomPath?: string | undefined;
  /** `--valley-bottom-crs`: CRS of projected valley-bottom coordinates. */
  valleyBottomCrs?: string | undefined;
}

/** Default property naming each watershed polygon. */
export const DEFAULT_WATERSHED_FIELD = 'id';

/** The layers read before the ponds. */
export interface InfluenceLayers {
  watersheds: AreaLayer | null;
  valleyBottom: AreaLayer | null;
  inputs: InputRecord[];
}

/** Reads the polygon layers (InputError for bad files). */
export async function readInfluenceLayers(options: InfluenceInputOptions, dem: DemSource): Promise<InfluenceLayers> {
  const inputs: InputRecord[] = [];
  let watersheds: AreaLayer | null = null;
  let valleyBottom: AreaLayer | null = null;
  if (options.watershedsPath) {
    watersheds = await readAreaLayer(options.watershedsPath, {
      role: 'watersheds',
      flag: '--watersheds',
      idField: options.watershedField ?? DEFAULT_WATERSHED_FIELD,
      idFlag: '--watershed-field',
      crsText: options.watershedsCrs,
      crsFlag: '--watersheds-crs',
      demCrs: dem.crs,
    });
    inputs.push({ role: 'watersheds', path: options.watershedsPath, sha256: await sha256File(options.watershedsPath) });
  }
  if (options.valleyBottomPath) {
    valleyBottom = await readAreaLayer(options.valleyBottomPath, {
      role: 'valley bottom',
      flag: '--valley-bottom',
      crsText: options.valleyBottomCrs,
      crsFlag: '--valley-bottom-crs',
      demCrs: dem.crs,
    });
    inputs.push({ role: 'valley-bottom', path: options.valleyBottomPath, sha256: await sha256File(options.valleyBottomPath) });
  }
  return { watersheds, valleyBottom, inputs };
}

/** The stage's results for the rest of the run. */
export interface InfluenceRun {
  outcome: InfluenceOutcome;
  tally: WatershedTally;
  layers: InfluenceLayers;
  params: InfluenceRunParams;
  /** Per-draw figures of the rows (draws.csv), once the draws are made. */
  draws: WatershedDraws | null;
  warnings: Warning[];
}

/**
 * Runs the stage on a finished estimate: sets each dam's watershed and
 * influence area and tallies the rows. The stage's warnings are added to
 * `result.warnings`.
 */
export async function runInfluence(
  dem: DemSource,
  damInputs: readonly DamInput[],
  result: EstimateResult,
  params: InfluenceRunParams,
  layers: InfluenceLayers,
  /** The limits the draws can take (pipeline/influence-draws.ts `riparianReachOf`): tables for influence bands. */
  reach?: RiparianReach,
): Promise<InfluenceRun> {
  const outcome = await runInfluenceStage({
    dem,
    dams: result.dams,
    damInputs,
    pondWater: result.pondWater ?? { groups: [], cellCount: 0 },
    params,
    watersheds: layers.watersheds,
    valleyBottom: layers.valleyBottom,
    reach,
  });
  const units = outcome.units.map((u, k) => ({
    ...u,
    areaM2: outcome.unitAreaM2[k]!,
    streamLengthM: outcome.unitStreamLengthM[k]!,
    valleyBottomAreaM2: outcome.unitValleyBottomM2[k]!,
  }));
  const source = layers.watersheds ? `"${layers.watersheds.path}"` : 'the watersheds derived from the DEM';
  const tally = tallyWatersheds(result.dams, units, outcome.damUnit, outcome.damRiparianM2, source);
  const warnings = [...(layers.watersheds?.warnings ?? []), ...(layers.valleyBottom?.warnings ?? []), ...outcome.warnings, ...tally.warnings];
  result.warnings.push(...warnings);
  return { outcome, tally, layers, params, draws: null, warnings };
}

/** Recall groups by watershed row for the draws (dams that may count; proposed and skipped dams in none). */
export function recallGroupsOf(run: InfluenceRun, result: EstimateResult): { groupOf: Int32Array; keys: string[] } {
  const groupOf = new Int32Array(result.dams.length).fill(-1);
  result.dams.forEach((d, k) => {
    if (d.estimated && d.status !== 'proposed') groupOf[k] = run.tally.rowOfDam[k]!;
  });
  return { groupOf, keys: run.tally.rows.map((r) => r.id) };
}

/** Puts bands on the rows from the run's draws (sums of their dams' draws within each draw). */
export function addWatershedBands(run: InfluenceRun, draws: RunDraws): void {
  run.draws = watershedDraws(draws.outcome, run.tally.rowOfDam, run.tally.rows.length);
  const bands = watershedBands(run.draws);
  run.tally.rows.forEach((row, k) => {
    row.bands = bands[k]!;
  });
}

/** What summary.json gets from the stage. */
export interface InfluenceSummary {
  totals: InfluenceTotals;
  watersheds: WatershedRow[];
  parameters: Record<string, number | string>;
  assumptions: string[];
}

/** The stage's part of summary.json. */
export function influenceSummary(run: InfluenceRun): InfluenceSummary {
  const p = run.params;
  const o = run.outcome;
  const vb = p.valleyBottom;
  const ws = run.layers.watersheds;
  const parameters: Record<string, number | string> = {
    riparian_distance_m: p.riparianDistanceM,
    riparian_rise_m: p.riparianRiseM,
    stream_threshold_m2: p.streamThresholdM2,
    watersheds_source: ws ? `polygons: ${ws.path}` : 'derived from the DEM',
    valley_bottom_source: run.layers.valleyBottom ? `polygons: ${run.layers.valleyBottom.path}` : 'HAND threshold',
    analysis_window_cells: o.width * o.height,
  };
  if (!ws) parameters['min_watershed_area_m2'] = p.minWatershedAreaM2;
  if (!run.layers.valleyBottom) {
    parameters['valley_bottom_base_m'] = vb.baseM;
    parameters['valley_bottom_coefficient_m'] = vb.coefficientM;
    parameters['valley_bottom_exponent'] = vb.exponent;
    parameters['valley_bottom_max_m'] = vb.maxM;
  }
  const assumptions = [
    `Influence zone = inundated cells ∪ riparian cells: a dry cell is riparian when its centre lies within ${p.riparianDistanceM} m of the nearest pond cell (exact Euclidean distance transform, Felzenszwalb & Huttenlocher 2012), ` +
      `no more than ${p.riparianRiseM} m above that pond's water level, and in the valley bottom; it is attributed to the dam owning that pond cell. ` +
      'Defaults: 50 m, the steep water-table gradient zone around beaver ponds (Lowry 1993); 1.0 m, the summer water-table decline prevented where dams stood (about 0.9–1.2 m, Westbrook et al. 2006).',
    run.layers.valleyBottom
      ? `Valley bottom: the polygons of ${run.layers.valleyBottom.path} (${run.layers.valleyBottom.crsLabel}), at cell centres.`
      : `Valley bottom: cells whose height above the nearest stream (HAND; Rennó et al. 2008, Nobre et al. 2011) is at most min(${vb.maxM} m, ${vb.baseM} m + ${vb.coefficientM} m × (A / 1 km²)^${vb.exponent}), A the drainage area of the stream cell the cell drains to.`,
    `Streams: cells whose contributing area (D8 flow on the depression-filled DEM: O'Callaghan & Mark 1984; priority-flood filling, Barnes et al. 2014) reaches ${p.streamThresholdM2} m²; stream length follows the D8 links between cell centres.`,
    ws
      ? `Watersheds: the polygons of ${ws.path} (${ws.crsLabel}), identified by their "${ws.idField ?? DEFAULT_WATERSHED_FIELD}" property, burnt at cell centres; where polygons overlap the one listed first keeps the cells. The DEM was analysed over the polygons' extent and the ponds' surroundings, so streams start where the area inside that window reaches the threshold.`
      : `Watersheds derived from the whole DEM: sub-watersheds at stream junctions merged downstream until each holds at least ${p.minWatershedAreaM2} m²; cells draining off the DEM before meeting a stream form the watershed "edge".`,
    'A dam belongs to the watershed of its crest\'s lowest DEM cell (where it crosses the channel it dams), or of its point; a watershed\'s storage, inundated and influence areas and dam counts are the sums of its dams\' figures (dams in no watershed form the row "outside"), its stream length and valley-bottom area are those of its cells.',
  ];
  return { totals: run.tally.totals, watersheds: run.tally.rows, parameters, assumptions };
}
