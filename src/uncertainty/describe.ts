/**
 * The `uncertainty` section of summary.json and the plain sentences that go
 * into its assumptions: what was drawn, from which distribution, on what
 * basis, and how trustworthy the Monte Carlo figures are.
 */
import { DEM_QUALITY_RMSE_M, type UncertaintyParams } from './params.js';
import type { DrawOutcome } from './engine.js';

/** One uncertainty source as written in summary.json. */
export interface SourceRecord {
  name: string;
  enabled: boolean;
  /** The distribution drawn, with its parameters and units. */
  distribution: string;
  /** Where the numbers come from. */
  basis: string;
}

/** summary.json `uncertainty`. */
export interface UncertaintySection {
  draws: number;
  seed: number;
  method: string;
  sources: SourceRecord[];
  approximations: string[];
  monte_carlo: {
    p95_standard_error: Record<string, number>;
    too_few_draws: boolean;
    flood_top_hits: number;
    overlap_groups: number;
    dams_in_overlap_groups: number;
    dem_error_groups: number;
    largest_dem_error_group: number;
    /** Ponds escaping below their crest whose rim is flooded again per draw, and those whose rim was too large to keep (the passes' model). */
    escape_rims_flooded: number;
    escape_rims_not_kept: number;
  };
  /** Per-draw figures kept in the run folder (format: io/draws-csv.ts). */
  draws_file: string;
}

/** Name of the per-draw file in a run folder. */
export const DRAWS_FILE = 'draws.csv';

/** Parameters written into summary.json `parameters`. */
export function uncertaintyParameters(u: UncertaintyParams): Record<string, number | string> {
  return {
    draws: u.draws,
    seed: u.seed,
    height_error: u.heightError ? 'on' : 'off',
    height_survey_sd_m: u.heightSurveySdM,
    unmeasured_height_gsd: u.unmeasuredHeightGsd,
    dem_error: u.demError ? 'on' : 'off',
    dem_rmse_m: u.demRmseM,
    dem_rmse_from: u.demRmseFrom === 'option' ? '--dem-rmse' : u.demRmseFrom,
    dem_error_range_m: u.demErrorRangeM,
    candidate_draws: u.candidates ? 'on' : 'off',
    power_p_gsd: u.powerPGsd,
    recall: u.recall === null ? 'off' : u.recall,
    recall_sd: u.recall === null ? 'off' : u.recallSd,
    riparian_distance_draws: u.riparianDistanceDraws ? 'on' : 'off',
    riparian_distance_spread: u.riparianDistanceSpread,
    riparian_rise_draws: u.riparianRiseDraws ? 'on' : 'off',
  };
}

/** The sources of a run, switched on or off, with distributions and their basis. */
export function sourceRecords(u: UncertaintyParams, defaultHeightM: number, maxHeightM: number, extra: readonly SourceRecord[] = []): SourceRecord[] {
  const sigmaLn = Math.log(u.unmeasuredHeightGsd);
  const q = (z: number): string => (defaultHeightM * Math.exp(z * sigmaLn)).toFixed(2);
  const rmseBasis =
    u.demRmseFrom === 'option'
      ? 'RMSEz given with --dem-rmse.'
      : `RMSEz of USGS Lidar Base Specification quality level ${u.demRmseFrom} (${DEM_QUALITY_RMSE_M[u.demRmseFrom] * 100} cm; from memory), taken as the error's standard deviation.`;
  return [
    {
      name: 'height_measured',
      enabled: u.heightError && u.heightSurveySdM > 0,
      distribution: `Normal(height_m, ${u.heightSurveySdM} m), held at 0 m from below; proposed structures' design heights drawn the same way (they count only in the with-proposed scenario)`,
      basis: 'Survey error of a measured crest height: a project choice (an uneven stick-and-mud crest over a soft bed; from memory, common practice).',
    },
    {
      name: 'height_unmeasured',
      enabled: u.heightError && u.unmeasuredHeightGsd > 1,
      distribution: `Lognormal with median ${defaultHeightM} m (--default-height) and geometric sd ${u.unmeasuredHeightGsd}: 90 % of draws within ${q(-1.645)}–${q(1.645)} m, held at ${maxHeightM} m from above`,
      basis: 'Beaver dams rarely exceed 1.5 m and exceptionally reach about 3 m (Burchsted & Daniels 2014, quoted from memory, not re-checked); the spread is a project choice matching that statement.',
    },
    {
      name: 'dem_error',
      enabled: u.demError && u.demRmseM > 0,
      distribution: `Zero-mean Gaussian field, spherical variogram with sill (${u.demRmseM} m)² and range ${u.demErrorRangeM} m; a pond's mean error follows the area average (Rolstad, Haug & Denby 2009: σ²·πL²/(5A) for A ≥ πL²)`,
      basis:
        `${rmseBasis} Range: --dem-error-range (default a project choice; fit it from your DEM's error variogram). ` +
        'A constant bias cancels for every dam here, because crest levels come from the same DEM as the ground (bed + height, or the crest seen in the DEM); it would not for a crest elevation surveyed independently in an absolute datum, which pondage does not take.',
    },
    {
      name: 'candidates',
      enabled: u.candidates,
      distribution: 'Each candidate counts in a draw with probability equal to its confidence (no confidence: 1)',
      basis: 'A detector or reviewer confidence read as the probability that the dam is real.',
    },
    {
      name: 'recall',
      enabled: u.recall !== null,
      distribution:
        u.recall === null
          ? 'off (the inventory is taken as complete)'
          : `Recall ~ Beta(mean ${u.recall}, sd ${u.recallSd}) per draw; missed dams per group ~ negative binomial given the dams found; each represented by a found dam of the same group`,
      basis: 'The share of real dams an inventory holds, e.g. from a detector validation (--recall, --recall-sd).',
    },
    ...extra,
  ];
}

/** Sentences for summary.json `assumptions`. */
export function uncertaintyAssumptions(u: UncertaintyParams): string[] {
  if (u.draws === 0) return ['No Monte Carlo draws (--draws 0): figures carry no bands.'];
  const out = [
    `Bands are the 5th, 50th and 95th percentiles and the mean over ${u.draws} Monte Carlo draws (seed ${u.seed}); totals are summed within each draw before percentiles are taken.`,
  ];
  if (u.recall !== null) {
    out.push(
      `Inventory completeness: the inventory is taken to hold a share ${u.recall} (sd ${u.recallSd}) of the real dams; the missed dams are represented by resampling the found dams of the same group (watershed when known, else the whole inventory). Their water is in the totals' bands (missing_storage_m3), in no dam's row and not in the deterministic totals.`,
    );
  }
  return out;
}

/** Approximations of the fast draws, stated in summary.json. */
export const APPROXIMATIONS: readonly string[] = [
  'Each dam is flooded once, to the highest level a draw can reach (4.5 standard deviations above the crest); every draw reads its pond from that fill by binary search.',
  "DEM error enters as a shift of the pond's level by its area-mean error minus the error at the cell its crest is measured from (first order in the error's variation within the pond); that cell is the lowest on the true ground of the cells nearly as low as it; the pond whose mean is taken is the deterministic one.",
  "A pond whose water escapes below its crest (round it, off the reach box, into NoData) has the ground round its ways out flooded again in every draw on the true ground, with that ground's error kriged from the dam's drawn errors plus its exact conditional variation near the passes (against re-flooding perturbed DEMs: within 1 % for ponds held by their crest; for ponds spilling round short crests, re-flooding's pond on the same field); where that ground exceeds 250,000 cells the pond escapes at the lowest of its few lowest ways out, each moved by its pass's error (within 14 %).",
  "A measured dam standing near the height at which it counts as visible in the DEM has that rule taken again in each draw, from the error difference of the crest's lowest cell and its downstream toe alone (the rule itself uses the lowest of several cells and a ridge median); the draw's crest is then measured from the other cell. Other dams keep the DEM's choice, and the upstream side is the DEM's in every draw.",
  'Crests built from dam points are built once, for the deterministic height; higher draws may spill round their ends.',
  'Ponds that can share cells in some draw (found once from the fills) are combined per draw into one water surface; all other ponds are summed as they are.',
];

/** The summary.json section of a run with draws. */
export function uncertaintySection(u: UncertaintyParams, outcome: DrawOutcome, sources: SourceRecord[]): UncertaintySection {
  const mc = outcome.monteCarlo;
  return {
    draws: outcome.draws,
    seed: outcome.seed,
    method:
      'Monte Carlo with paired draws: draw k of every dam, watershed and total comes from the same draw of every input; totals are summed within each draw; percentiles (Hyndman & Fan 1996, definition 7) are taken last. Random streams are keyed by seed, source and dam id.',
    sources,
    approximations: [...APPROXIMATIONS],
    monte_carlo: {
      p95_standard_error: mc.p95StandardError,
      too_few_draws: mc.tooFew,
      flood_top_hits: mc.floodTopHits,
      overlap_groups: mc.overlapClusters,
      dams_in_overlap_groups: mc.clusteredDams,
      dem_error_groups: mc.demGroups,
      largest_dem_error_group: mc.largestDemGroup,
      escape_rims_flooded: mc.escapeRims,
      escape_rims_not_kept: mc.escapeRimsNotKept,
    },
    draws_file: DRAWS_FILE,
  };
}
