/**
 * Bands of a change between two runs.
 *
 * - paired: both runs have per-draw figures made on the same DEM with the
 *   same seed and number of draws; the change in draw k is B_k − A_k, and
 *   the band is taken over those differences. Errors both runs share (the
 *   DEM error field) cancel, as they do in the real difference.
 * - independent: per-draw figures that cannot be paired; every draw of A is
 *   differenced with every draw of B (the exact distribution of B − A for
 *   independent draws), up to `MAX_PAIRS`, beyond which a seeded sample of
 *   pairs is taken.
 * - quadrature: only the runs' bands are known (no per-draw figures); the
 *   change's band is the difference of the medians ± the half-widths
 *   combined in quadrature, the lower side from A's upper and B's lower
 *   half-width. An approximation that assumes independent, roughly normal
 *   errors.
 *
 * Percentiles are linear between order statistics (Hyndman & Fan 1996,
 * definition 7, the default of R and NumPy).
 */
import { createRng } from '../uncertainty/random.js';
import type { BandStats } from './run-record.js';

/** How a change's band was made. */
export type BandMethod = 'paired' | 'independent' | 'quadrature' | 'none';

/** Largest number of draw pairs differenced for independent bands of totals and watersheds (all pairs below it). */
export const MAX_PAIRS = 1_000_000;

/** The same for each dam's band (many dams: a smaller sample each). */
export const MAX_PAIRS_PER_DAM = 20_000;

/** Seed of the pair sample taken above MAX_PAIRS (fixed, so outputs repeat). */
const PAIR_SAMPLE_SEED = 20_030_101;

/** The q-quantile (0 ≤ q ≤ 1) of ascending values, linear between order statistics. */
export function quantileSorted(sorted: Float64Array, q: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
}

/** p05, p50, p95 and mean of values (the array is not changed). */
export function bandOf(values: Float64Array): BandStats {
  const sorted = Float64Array.from(values).sort();
  let sum = 0;
  for (let k = 0; k < values.length; k++) sum += values[k]!;
  return { p05: quantileSorted(sorted, 0.05), p50: quantileSorted(sorted, 0.5), p95: quantileSorted(sorted, 0.95), mean: sum / values.length };
}

/** Band of B_k − A_k over draws k (the two arrays have the same length). */
export function pairedDifferenceBand(a: Float64Array, b: Float64Array): BandStats {
  if (a.length !== b.length) throw new Error(`paired draws need equal counts, got ${a.length} and ${b.length}`);
  const d = new Float64Array(a.length);
  for (let k = 0; k < a.length; k++) d[k] = b[k]! - a[k]!;
  return bandOf(d);
}

/**
 * Band of B − A for independent draws: every pair (j, k) gives B_k − A_j (a
 * seeded sample of `maxPairs` pairs above that many).
 */
export function independentDifferenceBand(a: Float64Array, b: Float64Array, maxPairs: number = MAX_PAIRS): BandStats {
  const na = a.length;
  const nb = b.length;
  if (na * nb <= maxPairs) {
    const d = new Float64Array(na * nb);
    let i = 0;
    for (let j = 0; j < na; j++) {
      const aj = a[j]!;
      for (let k = 0; k < nb; k++) d[i++] = b[k]! - aj;
    }
    return bandOf(d);
  }
  const rng = createRng(PAIR_SAMPLE_SEED);
  const d = new Float64Array(maxPairs);
  for (let i = 0; i < maxPairs; i++) d[i] = b[Math.floor(rng() * nb)]! - a[Math.floor(rng() * na)]!;
  return bandOf(d);
}

/**
 * Band of B − A from the two runs' bands alone, centred on the difference of
 * the medians m = B.p50 − A.p50:
 * p05 = m − √((B.p50 − B.p05)² + (A.p95 − A.p50)²),
 * p95 = m + √((B.p95 − B.p50)² + (A.p50 − A.p05)²), mean = B.mean − A.mean.
 */
export function quadratureDifferenceBand(a: BandStats, b: BandStats): BandStats {
  const m = b.p50 - a.p50;
  return {
    p05: m - Math.hypot(b.p50 - b.p05, a.p95 - a.p50),
    p50: m,
    p95: m + Math.hypot(b.p95 - b.p50, a.p50 - a.p05),
    mean: b.mean - a.mean,
  };
}

/** A change is detectable only when its band excludes zero. */
export function excludesZero(band: BandStats): boolean {
  return band.p05 > 0 || band.p95 < 0;
}

/** Width of a band, p95 − p05. */
export function bandWidth(band: BandStats): number {
  return band.p95 - band.p05;
}
