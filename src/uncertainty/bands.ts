/**
 * Bands: the 5th, 50th and 95th percentiles and the mean of a figure over
 * the Monte Carlo draws, and the Monte Carlo standard error of the 95th
 * percentile.
 *
 * Percentiles are Hyndman & Fan (1996, "Sample quantiles in statistical
 * packages", The American Statistician 50(4)) definition 7, linear
 * interpolation between order statistics at position (n − 1)·p: the default
 * of R's quantile() and NumPy's percentile(). When every draw is equal each
 * percentile and the mean are that value exactly, so a run whose sources all
 * have zero variance reports bands equal to the deterministic figures.
 *
 * Bands of a total are taken over the per-draw totals (each draw sums its
 * own dams), never summed from the dams' bands.
 */

/** One figure's band over the draws, in the figure's own unit. */
export interface Band {
  p05: number;
  p50: number;
  p95: number;
  mean: number;
}

/** Bands keyed by the figure's own output name (e.g. `storage_m3`). */
export type Bands = Record<string, Band>;

/** The percentiles every band reports. */
export const BAND_PERCENTILES = { p05: 0.05, p50: 0.5, p95: 0.95 } as const;

/** Percentile `p` (0–1) of ascending `sorted` values, Hyndman & Fan definition 7. */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) throw new Error('no values to take a percentile of');
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const a = sorted[lo]!;
  if (lo + 1 >= n) return a;
  const b = sorted[lo + 1]!;
  // a + f·(b − a) is exactly a when b equals a.
  return a + (h - lo) * (b - a);
}

/**
 * Mean as x₀ + Σ(xᵢ − x₀)/n: the same value as Σxᵢ/n up to rounding, and
 * exactly x₀ when every value equals x₀.
 */
export function meanOf(values: ArrayLike<number>): number {
  const n = values.length;
  if (n === 0) throw new Error('no values to take a mean of');
  const x0 = values[0]!;
  let sum = 0;
  for (let k = 0; k < n; k++) sum += values[k]! - x0;
  return x0 + sum / n;
}

/** Band of one figure's draws; `scratch` (length ≥ values.length) avoids an allocation. */
export function bandOf(values: Float64Array, scratch?: Float64Array): Band {
  const n = values.length;
  const sorted = scratch && scratch.length >= n ? scratch.subarray(0, n) : new Float64Array(n);
  sorted.set(values);
  sorted.sort();
  return {
    p05: quantileSorted(sorted, BAND_PERCENTILES.p05),
    p50: quantileSorted(sorted, BAND_PERCENTILES.p50),
    p95: quantileSorted(sorted, BAND_PERCENTILES.p95),
    mean: meanOf(values),
  };
}

/**
 * Bands of several figures of one object (a dam, a watershed, the totals),
 * keyed by the figures' names in the order given. New figures get bands by
 * being added to the record: nothing else needs to know them.
 */
export function bandsOf(figures: Record<string, Float64Array>, scratch?: Float64Array): Bands {
  const out: Bands = {};
  for (const [name, values] of Object.entries(figures)) out[name] = bandOf(values, scratch);
  return out;
}

/**
 * A band through a monotone increasing function (a unit conversion such as
 * m³ → acre-feet): percentiles commute with it; the mean does for linear
 * functions, which is what unit conversions are.
 */
export function mapBand(band: Band, f: (v: number) => number): Band {
  return { p05: f(band.p05), p50: f(band.p50), p95: f(band.p95), mean: f(band.mean) };
}

/** The same band for every figure: a figure that does not vary between draws. */
export function constantBand(value: number): Band {
  return { p05: value, p50: value, p95: value, mean: value };
}

/**
 * Distribution-free Monte Carlo uncertainty of a percentile: the ranks j < k
 * around n·p that cover the true percentile with about 95 % probability
 * (normal approximation to the binomial count of draws below it: n·p ∓
 * 1.96·√(n·p·(1 − p)); the order-statistic confidence interval of nonparametric
 * statistics, e.g. Conover 1999, Practical Nonparametric Statistics, §3.2;
 * from memory), and the standard error read from that interval as
 * (x₍ₖ₎ − x₍ⱼ₎)/(2·1.96).
 */
export function percentileStandardError(sorted: ArrayLike<number>, p: number): { low: number; high: number; standardError: number } {
  const n = sorted.length;
  if (n === 0) throw new Error('no values to take a percentile of');
  const half = 1.96 * Math.sqrt(n * p * (1 - p));
  // 1-based ranks clamped to the sample.
  const j = Math.min(n, Math.max(1, Math.floor(n * p - half)));
  const k = Math.min(n, Math.max(1, Math.ceil(n * p + half)));
  const low = sorted[j - 1]!;
  const high = sorted[k - 1]!;
  return { low, high, standardError: (high - low) / (2 * 1.96) };
}

/**
 * Too few draws for a trustworthy p95: fewer than 10 draws beyond it, or a
 * Monte Carlo standard error of p95 above 5 % of the band's width
 * (p95 − p05). A project choice: at 1000 draws of a normal figure the ratio
 * is about 2 %; it passes 5 % near 160 draws.
 */
export function tooFewDraws(draws: number, band: Band, p95StandardError: number): boolean {
  if (draws * (1 - BAND_PERCENTILES.p95) < 10) return true;
  const width = band.p95 - band.p05;
  return width > 0 && p95StandardError > 0.05 * width;
}
