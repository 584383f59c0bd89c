/**
 * The Monte Carlo run's parameters and their defaults: the one place each
 * uncertainty default is defined, with where its number comes from.
 */

/** Vertical accuracy classes of airborne lidar DEMs. */
export type DemQualityLevel = 'QL0' | 'QL1' | 'QL2' | 'QL3';

/**
 * Non-vegetated vertical accuracy (RMSEz, metres) of each quality level in
 * the USGS Lidar Base Specification (QL0 ≤ 5 cm, QL1 and QL2 ≤ 10 cm,
 * QL3 ≤ 20 cm; from memory, as tabulated in the specification's editions
 * since 2018). A DEM meeting its level has at most this RMSEz, so using it
 * as the error's standard deviation errs on the wide side.
 */
export const DEM_QUALITY_RMSE_M: Readonly<Record<DemQualityLevel, number>> = Object.freeze({
  QL0: 0.05,
  QL1: 0.1,
  QL2: 0.1,
  QL3: 0.2,
});

/** Draws per run: 1000 keeps the Monte Carlo standard error of p95 near 2 % of the band width (see bands.ts). */
export const DEFAULT_DRAWS = 1000;

/** Seed of the draws when none is given (any fixed number; written into summary.json). */
export const DEFAULT_SEED = 1;

/**
 * Standard deviation of a measured dam height, metres: 0.10 m. A project
 * choice: the top of a stick-and-mud crest is uneven by about a decimetre
 * and the bed below it is soft (from memory, common practice for rod-and-
 * tape surveys of beaver dams).
 */
export const DEFAULT_HEIGHT_SURVEY_SD_M = 0.1;

/**
 * Geometric standard deviation of an unmeasured dam height: heights are
 * lognormal with median `--default-height` (1.0 m) and this factor, 1.42
 * (σ of ln H = 0.35), so 90 % of draws lie between 0.56 and 1.78 m and
 * about 12 % exceed 1.5 m. Chosen to match the statement that beaver dams
 * rarely exceed 1.5 m and exceptionally reach about 3 m (Burchsted &
 * Daniels 2014, quoted from memory, not re-checked); heights above the
 * skip threshold (3 m) are held at it.
 */
export const DEFAULT_UNMEASURED_HEIGHT_GSD = 1.42;

/**
 * Geometric standard deviation of the power-law exponent p of the water
 * below a lidar water surface (lognormal around the run's p, held within
 * the model's range 0.5–3): 1.5, a placeholder project choice. Karran et
 * al. (2017) fitted p per beaver pond; their spread should replace this
 * number (not restated here; not checked). 1 turns the source off.
 */
export const DEFAULT_POWER_P_GSD = 1.5;

/** DEM quality level assumed when neither `--dem-rmse` nor `--dem-quality` is given. */
export const DEFAULT_DEM_QUALITY: DemQualityLevel = 'QL2';

/**
 * Range of the DEM error's spherical variogram, metres: 50 m. A project
 * choice: airborne lidar errors are correlated within and between flight
 * swaths over tens to hundreds of metres (from memory; no published range
 * for QL2 DEMs is known to us). Fit it from a variogram of DEM minus check
 * points, or of two surveys' difference on stable ground, and pass
 * `--dem-error-range`.
 */
export const DEFAULT_DEM_ERROR_RANGE_M = 50;

/**
 * Standard deviation of the inventory recall R when `--recall` is given
 * without `--recall-sd`: 0.05, a project choice (a detector validated on a
 * few hundred dams knows its recall to a few percent).
 */
export const DEFAULT_RECALL_SD = 0.05;

/**
 * Each fill is flooded this many standard deviations of the crest level
 * above the deterministic crest (unmeasured heights: to the lognormal's
 * matching quantile, at most the skip height), so draws stay inside the
 * fill; P(|z| > 4.5) ≈ 7·10⁻⁶. Draws above a fill's top are held at it and
 * counted in summary.json.
 */
export const FLOOD_TOP_SIGMAS = 4.5;

/**
 * Half-width of the riparian distance's triangular distribution as a share
 * of the run's distance: 0.5, so D ~ Triangular(25, 50, 75) m around the
 * default 50 m. A project choice: Lowry (1993) describes the steep
 * water-table gradient as lying within about 50 m of the pond (from memory),
 * a figure read from a few transects, not a sharp limit; ±50 % spans the
 * plausible readings of it.
 */
export const DEFAULT_RIPARIAN_DISTANCE_SPREAD = 0.5;

/**
 * The riparian rise's triangular distribution relative to the run's rise:
 * low, mode and high factors 0.9, 1.0, 1.2, i.e. Triangular(0.9, 1.0,
 * 1.2) m around the default 1.0 m: the summer water-table declines of about
 * 0.9–1.2 m that dams prevented (Westbrook, Cooper & Baker 2006; range from
 * memory), with the mode at the run's value (a project choice).
 */
export const RIPARIAN_RISE_FACTORS = Object.freeze({ low: 0.9, mode: 1.0, high: 1.2 });

/** Monte Carlo settings and the switches of each uncertainty source. */
export interface UncertaintyParams {
  /** Number of draws; 0 runs the deterministic estimate only (no bands). */
  draws: number;
  /** Seed of every random stream (32-bit unsigned); the same seed gives the same bytes. */
  seed: number;
  /** Draw dam heights (measured: survey error; unmeasured: the height distribution). */
  heightError: boolean;
  /** Standard deviation of a measured height, metres. */
  heightSurveySdM: number;
  /** Geometric standard deviation (≥ 1) of unmeasured heights around the default height. */
  unmeasuredHeightGsd: number;
  /** Draw DEM vertical error. */
  demError: boolean;
  /** DEM RMSEz, metres (the error's standard deviation). */
  demRmseM: number;
  /** Where demRmseM came from: a quality level name (`QL2`) or `--dem-rmse`. */
  demRmseFrom: DemQualityLevel | 'option';
  /** Range of the spherical error variogram, metres. */
  demErrorRangeM: number;
  /** Include each candidate with probability equal to its confidence (else the --min-confidence rule). */
  candidates: boolean;
  /** Geometric standard deviation (≥ 1) of the power-law p below lidar water surfaces; 1: off. */
  powerPGsd: number;
  /** Inventory recall (share of real dams the inventory holds, 0–1), or null when off. */
  recall: number | null;
  /** Standard deviation of the recall. */
  recallSd: number;
  /** Draw the riparian distance D of the influence zone (uncertainty/riparian-draws.ts). */
  riparianDistanceDraws: boolean;
  /** Half-width of D's triangular distribution as a share of the run's D (0–1). */
  riparianDistanceSpread: number;
  /** Draw the riparian rise Δz of the influence zone. */
  riparianRiseDraws: boolean;
}

/** Uncertainty parameters with every default filled in. */
export function defaultUncertaintyParams(): UncertaintyParams {
  return {
    draws: DEFAULT_DRAWS,
    seed: DEFAULT_SEED,
    heightError: true,
    heightSurveySdM: DEFAULT_HEIGHT_SURVEY_SD_M,
    unmeasuredHeightGsd: DEFAULT_UNMEASURED_HEIGHT_GSD,
    demError: true,
    demRmseM: DEM_QUALITY_RMSE_M[DEFAULT_DEM_QUALITY],
    demRmseFrom: DEFAULT_DEM_QUALITY,
    demErrorRangeM: DEFAULT_DEM_ERROR_RANGE_M,
    candidates: true,
    powerPGsd: DEFAULT_POWER_P_GSD,
    recall: null,
    recallSd: DEFAULT_RECALL_SD,
    riparianDistanceDraws: true,
    riparianDistanceSpread: DEFAULT_RIPARIAN_DISTANCE_SPREAD,
    riparianRiseDraws: true,
  };
}

/** Every source switched off: each draw equals the deterministic estimate (a check, and a baseline). */
export function zeroVarianceParams(base: UncertaintyParams): UncertaintyParams {
  return { ...base, heightError: false, demError: false, candidates: false, powerPGsd: 1, recall: null, riparianDistanceDraws: false, riparianRiseDraws: false };
}
