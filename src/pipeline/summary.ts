/**
 * summary.json: everything a run found, machine-readable. Field names are
 * part of pondage's interface; add, never rename.
 *
 * Numbers are written at full double precision so that per-dam rows, summed
 * in row order, equal the totals exactly when read back.
 */
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';
import type { Warning } from '../errors.js';
import type { DemDescription } from '../io/dem.js';
import type { EstimateParams, EstimateResult } from './estimate.js';
import type { DamResult, InputRecord, Totals } from './result.js';
import { effectiveWaterParams, waterAssumptions, waterParameters } from './water-stage.js';
import { CAUTIONS } from './cautions.js';
import type { Scenarios } from './scenarios.js';
import type { RunDraws } from './draws.js';
import type { Bands } from '../uncertainty/bands.js';
import { uncertaintyAssumptions, uncertaintyParameters, type UncertaintySection } from '../uncertainty/describe.js';
import type { InfluenceSummary } from './influence-run.js';
import type { InfluenceTotals, SummaryWatershed } from '../tally/watersheds.js';

export const TOOL_NAME = 'pondage';

export interface Summary {
  tool: { name: string; version: string };
  /** Facts that differ between otherwise identical runs (clock times). */
  run: { started_at: string; finished_at: string; duration_s: number; cells_visited: number; draws_s?: number };
  inputs: InputRecord[];
  dem: DemDescription;
  dams_file: { format: string; crs: string };
  parameters: Record<string, number | string>;
  assumptions: string[];
  cautions: string[];
  totals: Totals & {
    inundated_area_ha: number;
    inundated_area_acres: number;
    storage_acre_ft: number;
    bands?: Bands;
    /** Above and below today's water surface, acre-feet (water-stage.ts). */
    storage_above_surface_acre_ft?: number;
    storage_below_surface_acre_ft?: number;
  } & Partial<InfluenceTotals>;
  dams: DamResult[];
  /** One row per watershed (tally/watersheds.ts); absent with --ponds-only and in older runs. */
  watersheds?: SummaryWatershed[];
  warnings: { code: string; dam_id: string | null; message: string }[];
  /** Existing and existing-plus-proposed water surfaces (pipeline/scenarios.ts); absent in older runs. */
  scenarios?: Scenarios;
  /** Monte Carlo draws: seed, sources, approximations, Monte Carlo error (uncertainty/describe.ts); absent without draws. */
  uncertainty?: UncertaintySection;
}

/** Builds the summary record of a run. */
export function buildSummary(args: {
  version: string;
  startedAt: Date;
  finishedAt: Date;
  inputs: InputRecord[];
  dem: DemDescription;
  damsFormat: string;
  damsCrs: string;
  params: EstimateParams;
  assumptions: string[];
  result: EstimateResult;
  warnings: Warning[];
  /** The run's Monte Carlo draws (pipeline/draws.ts), or null, and the seconds they took (clock time, under `run`). */
  draws?: RunDraws | null;
  drawsS?: number;
  /** The influence stage's part (pipeline/influence-run.ts), or null when it did not run. */
  influence?: InfluenceSummary | null;
}): Summary {
  const { result, params } = args;
  const t = result.totals;
  return {
    tool: { name: TOOL_NAME, version: args.version },
    run: {
      started_at: args.startedAt.toISOString(),
      finished_at: args.finishedAt.toISOString(),
      duration_s: (args.finishedAt.getTime() - args.startedAt.getTime()) / 1000,
      cells_visited: result.cellsVisited,
      ...(args.draws ? { draws_s: args.drawsS ?? 0 } : {}),
    },
    inputs: args.inputs,
    dem: args.dem,
    dams_file: { format: args.damsFormat, crs: args.damsCrs },
    parameters: {
      default_height_m: params.pond.defaultHeightM,
      typical_max_height_m: params.pond.typicalMaxHeightM,
      max_height_m: params.pond.maxHeightM,
      dem_visible_min_m: params.pond.demVisibleMinM,
      probe_m: params.pond.probeM,
      stage_step_m: params.pond.stageStepM,
      max_reach_m: params.maxReachM,
      snap_radius_m: params.snapRadiusM,
      max_crest_length_m: params.maxCrestLengthM,
      min_confidence: params.minConfidence,
      ...(params.uncertainty ? uncertaintyParameters(params.uncertainty) : {}),
      ...waterParameters(effectiveWaterParams(params)),
      ...(args.influence?.parameters ?? {}),
    },
    assumptions: [
      ...(params.uncertainty ? [...args.assumptions, ...uncertaintyAssumptions(params.uncertainty)] : args.assumptions),
      ...waterAssumptions(effectiveWaterParams(params)),
      ...(args.influence?.assumptions ?? []),
    ],
    cautions: CAUTIONS,
    totals: {
      ...t,
      inundated_area_ha: m2ToHectares(t.inundated_area_m2),
      inundated_area_acres: m2ToAcres(t.inundated_area_m2),
      storage_acre_ft: m3ToAcreFeet(t.storage_m3),
      storage_above_surface_acre_ft: m3ToAcreFeet(t.storage_above_surface_m3 ?? 0),
      storage_below_surface_acre_ft: m3ToAcreFeet(t.storage_below_surface_m3 ?? 0),
      ...(args.influence?.totals ?? {}),
      ...(args.draws ? { bands: args.draws.totalsBands } : {}),
    },
    dams: result.dams,
    ...(args.influence ? { watersheds: args.influence.watersheds } : {}),
    warnings: args.warnings.map((w) => ({ code: w.code, dam_id: w.damId ?? null, message: w.message })),
    ...(result.scenarios ? { scenarios: result.scenarios } : {}),
    ...(args.draws ? { uncertainty: args.draws.section } : {}),
  };
}
