/**
 * Percentiles, means and the Monte Carlo error of p95.
 */
import { describe, expect, it } from 'vitest';
import { bandOf, bandsOf, mapBand, meanOf, percentileStandardError, quantileSorted, tooFewDraws } from '../src/uncertainty/bands.js';
import { createRng, normal } from '../src/uncertainty/random.js';

describe('percentiles (Hyndman & Fan 1996, definition 7)', () => {
  it('match R quantile(type = 7) / NumPy percentile on a worked example', () => {
    // x = 1, 2, 3, 4: position (n − 1)·p = 3p from the first value (definition 7).
    // R: quantile(1:4, c(.05, .5, .95)) = 1.15, 2.50, 3.85; NumPy percentile gives the same.
    const x = Float64Array.from([1, 2, 3, 4]);
    expect(quantileSorted(x, 0.05)).toBeCloseTo(1.15, 12);
    expect(quantileSorted(x, 0.5)).toBeCloseTo(2.5, 12);
    expect(quantileSorted(x, 0.95)).toBeCloseTo(3.85, 12);
    expect(quantileSorted(x, 0)).toBe(1);
    expect(quantileSorted(x, 1)).toBe(4);
  });

  it('band of unsorted draws sorts a copy and leaves the draws alone', () => {
    const x = Float64Array.from([4, 1, 3, 2]);
    const b = bandOf(x);
    expect(b).toEqual({ p05: quantileSorted(Float64Array.from([1, 2, 3, 4]), 0.05), p50: 2.5, p95: quantileSorted(Float64Array.from([1, 2, 3, 4]), 0.95), mean: 2.5 });
    expect(Array.from(x)).toEqual([4, 1, 3, 2]);
  });

  it('equal draws give that value exactly for every percentile and the mean (zero variance reproduces the estimate)', () => {
    // 0.1 summed ten times and divided is not 0.1 in binary floating point; the mean here must be.
    const v = 0.1 + 0.2;
    const x = new Float64Array(1000).fill(v);
    const b = bandOf(x);
    expect(b.p05).toBe(v);
    expect(b.p50).toBe(v);
    expect(b.p95).toBe(v);
    expect(b.mean).toBe(v);
    expect(meanOf(x)).toBe(v);
  });

  it('bandsOf keeps the figures\' names and order; mapBand carries a unit conversion through', () => {
    const b = bandsOf({ storage_m3: Float64Array.from([1, 2, 3]), inundated_area_m2: Float64Array.from([5, 5, 5]) });
    expect(Object.keys(b)).toEqual(['storage_m3', 'inundated_area_m2']);
    const acreFt = mapBand(b.storage_m3!, (v) => v / 1233.48183754752);
    expect(acreFt.p50).toBeCloseTo(2 / 1233.48183754752, 15);
  });
});

describe('Monte Carlo error of p95', () => {
  // Asymptotic standard error of a sample p-quantile: √(p(1 − p)/n) / f(x_p)
  // (e.g. Serfling 1980, Approximation Theorems of Mathematical Statistics,
  // §2.3; from memory). For a standard normal at p = 0.95, f(1.645) = 0.1031.
  it('the order-statistic interval gives about the asymptotic standard error for normal draws', () => {
    const rng = createRng(7);
    const n = 4000;
    const ratios: number[] = [];
    for (let rep = 0; rep < 20; rep++) {
      const x = new Float64Array(n);
      for (let k = 0; k < n; k++) x[k] = normal(rng);
      x.sort();
      const se = percentileStandardError(x, 0.95).standardError;
      ratios.push(se / (Math.sqrt((0.95 * 0.05) / n) / 0.1031));
    }
    const mean = ratios.reduce((a, b) => a + b, 0) / ratios.length;
    expect(mean).toBeGreaterThan(0.85);
    expect(mean).toBeLessThan(1.15);
  });

  it('flags too few draws: under 200, or a p95 error above 5 % of the band width', () => {
    const band = { p05: 0, p50: 1, p95: 2, mean: 1 };
    expect(tooFewDraws(150, band, 0.01)).toBe(true);
    expect(tooFewDraws(1000, band, 0.05)).toBe(false);
    expect(tooFewDraws(1000, band, 0.2)).toBe(true);
    expect(tooFewDraws(1000, { p05: 3, p50: 3, p95: 3, mean: 3 }, 0)).toBe(false);
  });
});
