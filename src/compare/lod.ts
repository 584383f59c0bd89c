/**
 * Level of detection of a DEM difference: two DEMs with independent vertical
 * errors σ₁ and σ₂ differ by less than
 *
 *   LoD95 = 1.96 · √(σ₁² + σ₂²)
 *
 * at 95 % confidence without any change of the ground (Lane, Westaway &
 * Hicks 2003, Earth Surface Processes and Landforms 28; Brasington, Langham
 * & Rumsby 2003, Geomorphology 53). Applied here to water depths from two
 * runs on different DEMs: a depth change smaller than LoD95 in a cell is
 * not called a change there.
 *
 * σ of each run comes from the run's stated DEM RMSE, or a `--dem-rmse`
 * given to compare, or the default: the USGS Lidar Base Specification's
 * quality level 2 (10 cm RMSEz), stated as assumed.
 */
import type { RunRecord } from './run-record.js';

/** Two-sided 95 % quantile of the standard normal distribution (1.96, as the published formula writes it). */
export const Z95 = 1.96;

/** DEM vertical RMSE assumed when a run states none, metres: USGS Lidar Base Specification QL2 (10 cm RMSEz). */
export const DEFAULT_DEM_RMSE_M = 0.1;

/** Where a run's σ came from. */
export type SigmaSource = 'run' | 'option' | 'default (USGS Lidar Base Specification QL2, 10 cm RMSEz)';

/** LoD95 in metres for two independent vertical errors σ₁, σ₂ (metres). */
export function lod95M(sigma1M: number, sigma2M: number): number {
  return Z95 * Math.sqrt(sigma1M * sigma1M + sigma2M * sigma2M);
}

/** The DEM-difference section of a comparison. */
export interface DemDifference {
  /** True when both runs read the same DEM files (same SHA-256): no DEM difference exists. */
  same_dem: boolean;
  sigma_from_m: number;
  sigma_from_source: SigmaSource;
  sigma_to_m: number;
  sigma_to_source: SigmaSource;
  /** LoD95 of the DEM difference, metres; null on the same DEM. */
  lod95_m: number | null;
  note: string;
}

/** True when two runs read the same DEM files, in the same order (SHA-256). */
export function sameDem(a: RunRecord, b: RunRecord): boolean {
  return a.dem.sha256.length > 0 && a.dem.sha256.length === b.dem.sha256.length && a.dem.sha256.every((h, k) => h !== '' && h === b.dem.sha256[k]);
}

/** σ of a run: the option, else what the run states, else the QL2 default. */
export function sigmaOf(run: RunRecord, optionM: number | undefined): { sigmaM: number; source: SigmaSource } {
  if (optionM !== undefined) return { sigmaM: optionM, source: 'option' };
  if (run.demRmseM !== null) return { sigmaM: run.demRmseM, source: 'run' };
  return { sigmaM: DEFAULT_DEM_RMSE_M, source: 'default (USGS Lidar Base Specification QL2, 10 cm RMSEz)' };
}

/** The DEM-difference facts of a pair of runs. */
export function demDifference(a: RunRecord, b: RunRecord, sigmaOptionsM: { from?: number; to?: number } = {}): DemDifference {
  const sa = sigmaOf(a, sigmaOptionsM.from);
  const sb = sigmaOf(b, sigmaOptionsM.to);
  const same = sameDem(a, b);
  const lod = same ? null : lod95M(sa.sigmaM, sb.sigmaM);
  return {
    same_dem: same,
    sigma_from_m: sa.sigmaM,
    sigma_from_source: sa.source,
    sigma_to_m: sb.sigmaM,
    sigma_to_source: sb.source,
    lod95_m: lod,
    note: same
      ? 'Both runs read the same DEM: the change comes from the inventories alone, and no DEM-difference level of detection applies.'
      : `The runs read different DEMs: a water-depth change under LoD95 = 1.96·√(σ₁² + σ₂²) = ${lod!.toFixed(3)} m in a cell is within the DEMs' combined error (Lane et al. 2003; Brasington et al. 2003).`,
  };
}
