/** The Monte Carlo flags: draws, seed, and each uncertainty source's switch and spread. */
import type { Command } from 'commander';
import { InputError } from '../errors.js';
import {
  DEFAULT_DEM_ERROR_RANGE_M,
  DEFAULT_DEM_QUALITY,
  DEFAULT_DRAWS,
  DEFAULT_HEIGHT_SURVEY_SD_M,
  DEFAULT_POWER_P_GSD,
  DEFAULT_RECALL_SD,
  DEFAULT_RIPARIAN_DISTANCE_SPREAD,
  RIPARIAN_RISE_FACTORS,
  DEFAULT_SEED,
  DEFAULT_UNMEASURED_HEIGHT_GSD,
  DEM_QUALITY_RMSE_M,
  defaultUncertaintyParams,
  type DemQualityLevel,
  type UncertaintyParams,
} from '../uncertainty/params.js';
import { parseLengthM, parseNumber } from './options.js';

/** Flags as commander hands them over. */
export interface UncertaintyFlags {
  draws?: string;
  /** `--seed` (estimate only; the demo's --seed seeds its valley and its draws). */
  seed?: string;
  /** False with --no-height-error. */
  heightError?: boolean;
  heightSurveySd?: string;
  heightGsd?: string;
  /** False with --no-dem-error. */
  demError?: boolean;
  demRmse?: string;
  demQuality?: string;
  demErrorRange?: string;
  /** False with --no-candidate-draws. */
  candidateDraws?: boolean;
  powerPGsd?: string;
  recall?: string;
  recallSd?: string;
  /** False with --no-riparian-distance-draws. */
  riparianDistanceDraws?: boolean;
  riparianDistanceSpread?: string;
  /** False with --no-riparian-rise-draws. */
  riparianRiseDraws?: boolean;
}

/** Adds the Monte Carlo flags but --seed (estimate and demo). */
export function addUncertaintyOptions(cmd: Command): Command {
  const levels = Object.entries(DEM_QUALITY_RMSE_M)
    .map(([q, m]) => `${q} ${m * 100} cm`)
    .join(', ');
  return cmd
    .option('--draws <n>', 'Monte Carlo draws behind the bands (p05, p50, p95, mean) on every figure; 0: no bands', `${DEFAULT_DRAWS}`)
    .option('--no-height-error', 'draw no dam heights (measured and unmeasured heights as given)')
    .option('--height-survey-sd <length>', 'standard deviation of a measured height (m)', `${DEFAULT_HEIGHT_SURVEY_SD_M}`)
    .option('--height-gsd <factor>', 'geometric standard deviation of unmeasured heights, lognormal around --default-height (1: none)', `${DEFAULT_UNMEASURED_HEIGHT_GSD}`)
    .option('--no-dem-error', 'draw no DEM vertical error')
    .option('--dem-quality <level>', `USGS Lidar Base Specification quality level whose RMSEz is the DEM error (${levels})`, DEFAULT_DEM_QUALITY)
    .option('--dem-rmse <length>', 'DEM vertical RMSE, overriding --dem-quality (m)')
    .option('--dem-error-range <length>', 'correlation range of the DEM error (spherical variogram; m)', `${DEFAULT_DEM_ERROR_RANGE_M}`)
    .option('--no-candidate-draws', 'keep candidates in or out by --min-confidence instead of drawing each with probability = confidence')
    .option('--power-p-gsd <factor>', 'geometric standard deviation of the power-law p below lidar water surfaces (1: none)', `${DEFAULT_POWER_P_GSD}`)
    .option('--recall <share>', "inventory completeness: the share (0–1) of real dams the inventory holds; missed dams are represented by the found ones' ponds (off by default)")
    .option('--recall-sd <sd>', 'standard deviation of --recall', `${DEFAULT_RECALL_SD}`)
    .option('--no-riparian-distance-draws', 'keep the influence zone\'s riparian distance at --riparian-distance in every draw')
    .option('--riparian-distance-spread <share>', 'half-width of the riparian distance\'s triangular distribution, as a share (0–1) of --riparian-distance', `${DEFAULT_RIPARIAN_DISTANCE_SPREAD}`)
    .option('--no-riparian-rise-draws', `keep the influence zone's riparian rise at --riparian-rise in every draw (else triangular, ${RIPARIAN_RISE_FACTORS.low}–${RIPARIAN_RISE_FACTORS.high} × --riparian-rise)`);
}

/** Adds --seed (estimate). */
export function addSeedOption(cmd: Command): Command {
  return cmd.option('--seed <n>', 'seed of the Monte Carlo draws (the same seed gives the same files)', `${DEFAULT_SEED}`);
}

/** Reads the flags into uncertainty parameters (every value checked). */
export function uncertaintyFromFlags(flags: UncertaintyFlags, seed?: number): UncertaintyParams {
  const u = defaultUncertaintyParams();
  if (flags.draws !== undefined) u.draws = parseNumber(flags.draws, '--draws', { integer: true, min: 0, max: 1_000_000 });
  if (seed !== undefined) u.seed = seed;
  else if (flags.seed !== undefined) u.seed = parseNumber(flags.seed, '--seed', { integer: true, min: 0, max: 2 ** 32 - 1 });
  if (flags.heightError === false) u.heightError = false;
  if (flags.heightSurveySd !== undefined) u.heightSurveySdM = parseLengthM(flags.heightSurveySd, '--height-survey-sd', { min: 0, max: 3 });
  if (flags.heightGsd !== undefined) u.unmeasuredHeightGsd = parseNumber(flags.heightGsd, '--height-gsd', { min: 1, max: 10 });
  if (flags.demError === false) u.demError = false;
  if (flags.demQuality !== undefined) {
    const q = flags.demQuality.trim().toUpperCase();
    if (!(q in DEM_QUALITY_RMSE_M)) {
      throw new InputError(`--dem-quality "${flags.demQuality}" is not a quality level pondage knows; use ${Object.keys(DEM_QUALITY_RMSE_M).join(', ')}, or give --dem-rmse`);
    }
    u.demRmseFrom = q as DemQualityLevel;
    u.demRmseM = DEM_QUALITY_RMSE_M[q as DemQualityLevel];
  }
  if (flags.demRmse !== undefined) {
    u.demRmseM = parseLengthM(flags.demRmse, '--dem-rmse', { min: 0, max: 10 });
    u.demRmseFrom = 'option';
  }
  if (flags.demErrorRange !== undefined) u.demErrorRangeM = parseLengthM(flags.demErrorRange, '--dem-error-range', { min: 0.01, max: 100_000 });
  if (flags.candidateDraws === false) u.candidates = false;
  if (flags.powerPGsd !== undefined) u.powerPGsd = parseNumber(flags.powerPGsd, '--power-p-gsd', { min: 1, max: 10 });
  if (flags.riparianDistanceDraws === false) u.riparianDistanceDraws = false;
  if (flags.riparianDistanceSpread !== undefined) u.riparianDistanceSpread = parseNumber(flags.riparianDistanceSpread, '--riparian-distance-spread', { min: 0, max: 1 });
  if (flags.riparianRiseDraws === false) u.riparianRiseDraws = false;
  if (flags.recallSd !== undefined) u.recallSd = parseNumber(flags.recallSd, '--recall-sd', { min: 0, max: 0.5 });
  if (flags.recall !== undefined) {
    u.recall = parseNumber(flags.recall, '--recall', { min: 0.01, max: 1 });
    if (u.recall < 1 && u.recallSd > 0 && u.recallSd * u.recallSd >= u.recall * (1 - u.recall)) {
      throw new InputError(
        `--recall-sd ${u.recallSd} is too wide for --recall ${u.recall}: a share's standard deviation must stay below √(R·(1 − R)) = ${Math.sqrt(u.recall * (1 - u.recall)).toFixed(3)}; give a smaller --recall-sd`,
      );
    }
  }
  return u;
}
