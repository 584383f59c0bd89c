/**
 * Bands of the influence area (inundated + riparian) on every dam, every
 * watershed row and the totals, after the draws:
 *
 *   influence stage: candidate riparian cells within the largest limits a
 *   draw can take → per-dam summed-area tables (influence/riparian-table.ts)
 *   → draws: D_k and Δz_k (uncertainty/riparian-draws.ts) → per dam and
 *   draw: its water in that draw + table lookup → watershed and total sums
 *   within each draw → bands.
 *
 * A dam's influence in draw k is 0 when it does not count in that draw,
 * else its own water in that draw (`damAreaM2`) plus its riparian area at
 * (D_k, Δz_k). Where D_k and Δz_k equal the run's limits the deterministic
 * riparian area is used as it is, so a run whose sources all have zero
 * variance reproduces the deterministic influence areas bit for bit.
 * Watershed rows and totals add the dams' draws in dam-row order, as the
 * deterministic tally does.
 */
import { bandOf, mapBand, percentileStandardError, type Bands } from '../uncertainty/bands.js';
import { drawRiparianLimits, riparianRanges, riparianSourceRecords, RIPARIAN_APPROXIMATION } from '../uncertainty/riparian-draws.js';
import type { UncertaintyParams } from '../uncertainty/params.js';
import { riparianAreaAt, riparianErrorBoundM2, type RiparianTables } from '../influence/riparian-table.js';
import { m2ToAcres, m2ToHectares } from '../units.js';
import { sumByGroup, type RunDraws } from './draws.js';
import type { EstimateParams, EstimateResult } from './estimate.js';
import type { InfluenceRun } from './influence-run.js';

/** The limits the influence stage lists candidate cells for, and the lowest a draw takes (m). */
export interface RiparianReach {
  distanceMinM: number;
  distanceMaxM: number;
  riseMinM: number;
  riseMaxM: number;
}

/** The reach a run's draws need, or undefined when the run has no draws or no influence stage. */
export function riparianReachOf(params: EstimateParams): RiparianReach | undefined {
  const u = params.uncertainty;
  const inf = params.influence;
  if (!u || u.draws === 0 || !inf) return undefined;
  const r = riparianRanges(u, inf.riparianDistanceM, inf.riparianRiseM);
  return { distanceMinM: r.distance.lowM, distanceMaxM: r.distance.highM, riseMinM: r.rise.lowM, riseMaxM: r.rise.highM };
}

/** Per-draw influence areas (m²) for draws.csv. */
export interface InfluenceDraws {
  /** Per dam and draw, dam-major (d·draws + k). */
  dams: Float64Array;
  /** Per watershed row and draw (rows as in the tally). */
  watersheds: Float64Array[];
  /** Per draw, the total. */
  total: Float64Array;
  /** The drawn limits, m. */
  distanceM: Float64Array;
  riseM: Float64Array;
  /** Largest per-draw bound of the table's interpolation error on the total, m². */
  maxTotalErrorBoundM2: number;
  /** Wall time of the lookups and sums, s (for the bench). */
  seconds: number;
}

/**
 * Computes the per-draw influence areas from the stage's tables and the
 * run's draws, puts `influence_area_m2` bands on each dam, each watershed
 * row (with `_ha`, `_acres`) and the totals, and records the two sources and
 * the approximation in `draws.section`. Null when the stage kept no tables.
 */
export function addInfluenceBands(run: InfluenceRun, draws: RunDraws, result: EstimateResult, u: UncertaintyParams): InfluenceDraws | null {
  const tables = run.outcome.riparianTables;
  if (!tables) return null;
  const t0 = performance.now();
  const o = draws.outcome;
  const N = o.draws;
  const D = result.dams.length;
  const p = run.params;
  const limits = drawRiparianLimits(u, p.riparianDistanceM, p.riparianRiseM);
  const dams = influencePerDraw(tables, run.outcome.damRiparianM2, o.damAreaM2, o.included, N, D, limits, p.riparianDistanceM, p.riparianRiseM);
  const total = new Float64Array(N);
  for (let d = 0; d < D; d++) {
    const base = d * N;
    for (let k = 0; k < N; k++) total[k]! += dams[base + k]!;
  }
  const rows = run.tally.rows;
  const watersheds = sumByGroup(dams, N, run.tally.rowOfDam, rows.length);

  const scratch = new Float64Array(N);
  result.dams.forEach((d, i) => {
    if (d.bands) d.bands.influence_area_m2 = bandOf(dams.subarray(i * N, (i + 1) * N), scratch);
  });
  rows.forEach((row, r) => {
    if (!row.bands) return;
    Object.assign(row.bands, areaBands(bandOf(watersheds[r]!, scratch)));
  });
  Object.assign(draws.totalsBands, areaBands(bandOf(total, scratch)));
  draws.section.monte_carlo.p95_standard_error['influence_area_m2'] = percentileStandardError(scratch, 0.95).standardError;
  draws.section.sources.push(...riparianSourceRecords(u, p.riparianDistanceM, p.riparianRiseM));
  draws.section.approximations.push(RIPARIAN_APPROXIMATION);

  let maxBound = 0;
  for (let k = 0; k < N; k++) {
    let bound = 0;
    for (let d = 0; d < D; d++) if (o.included[d * N + k] === 1) bound += riparianErrorBoundM2(tables, d + 1, limits.distanceM[k]!, limits.riseM[k]!);
    if (bound > maxBound) maxBound = bound;
  }
  return { dams, watersheds, total, distanceM: limits.distanceM, riseM: limits.riseM, maxTotalErrorBoundM2: maxBound, seconds: (performance.now() - t0) / 1000 };
}

/**
 * Influence area of each dam in each draw, m² (dam-major): 0 where the dam
 * does not count, else its water in the draw plus its riparian area at the
 * draw's limits (owner id = dam row + 1 in the tables; the deterministic
 * riparian area where the limits are the run's own).
 */
export function influencePerDraw(
  tables: RiparianTables,
  damRiparianM2: Float64Array,
  damAreaM2: Float64Array,
  included: Uint8Array,
  N: number,
  D: number,
  limits: { distanceM: Float64Array; riseM: Float64Array },
  distanceM: number,
  riseM: number,
): Float64Array {
  const out = new Float64Array(D * N);
  for (let d = 0; d < D; d++) {
    const base = d * N;
    for (let k = 0; k < N; k++) {
      if (included[base + k] !== 1) continue;
      const dk = limits.distanceM[k]!;
      const zk = limits.riseM[k]!;
      const rip = dk === distanceM && zk === riseM ? damRiparianM2[d]! : riparianAreaAt(tables, d + 1, dk, zk);
      out[base + k] = damAreaM2[base + k]! + rip;
    }
  }
  return out;
}

/** An area band in m² with its ha and acre versions, named as summary.json's influence figures. */
function areaBands(b: ReturnType<typeof bandOf>): Bands {
  return { influence_area_m2: b, influence_area_ha: mapBand(b, m2ToHectares), influence_area_acres: mapBand(b, m2ToAcres) };
}
