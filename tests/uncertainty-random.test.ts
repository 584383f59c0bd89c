/**
 * Random streams and the distributions the draws use, against their
 * analytic moments.
 */
import { describe, expect, it } from 'vitest';
import { beta, createRng, deriveSeed, gamma, normal } from '../src/uncertainty/random.js';
import { betaFromMoments, negativeBinomial } from '../src/uncertainty/recall.js';

function moments(draw: () => number, n: number): { mean: number; variance: number } {
  let s = 0;
  let s2 = 0;
  for (let k = 0; k < n; k++) {
    const x = draw();
    s += x;
    s2 += x * x;
  }
  const mean = s / n;
  return { mean, variance: s2 / n - mean * mean };
}

describe('derived seeds', () => {
  it('are stable, and differ between keys, between key splits and between run seeds', () => {
    expect(deriveSeed(1, 'height', 'dam-1')).toBe(deriveSeed(1, 'height', 'dam-1'));
    const seeds = new Set([
      deriveSeed(1, 'height', 'dam-1'),
      deriveSeed(1, 'height', 'dam-2'),
      deriveSeed(2, 'height', 'dam-1'),
      deriveSeed(1, 'dem-error', 'dam-1'),
      deriveSeed(1, 'heightdam-1'),
      deriveSeed(1, 'heigh', 'tdam-1'),
    ]);
    expect(seeds.size).toBe(6);
  });

  it('give streams that look independent (correlation of paired draws near 0)', () => {
    const a = createRng(deriveSeed(5, 'height', 'A'));
    const b = createRng(deriveSeed(5, 'height', 'B'));
    const n = 20000;
    let sab = 0;
    for (let k = 0; k < n; k++) sab += normal(a) * normal(b);
    // Standard error of the sample correlation of independent normals: 1/√n.
    expect(Math.abs(sab / n)).toBeLessThan(4 / Math.sqrt(n));
  });
});

describe('distributions (analytic moments)', () => {
  const n = 200000;
  it('normal: mean 0, variance 1', () => {
    const rng = createRng(11);
    const m = moments(() => normal(rng), n);
    expect(Math.abs(m.mean)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(m.variance - 1)).toBeLessThan(0.02);
  });

  it('gamma(k): mean k, variance k, for k below and above 1', () => {
    for (const k of [0.4, 2.5, 30]) {
      const rng = createRng(12);
      const m = moments(() => gamma(rng, k), n);
      expect(Math.abs(m.mean / k - 1)).toBeLessThan(0.01 + 4 / Math.sqrt(n * k));
      expect(Math.abs(m.variance / k - 1)).toBeLessThan(0.04);
    }
  });

  it('beta from moments: mean μ, standard deviation s (μ = 0.8, s = 0.05)', () => {
    const { a, b } = betaFromMoments(0.8, 0.05);
    // Beta(a, b): mean a/(a + b), variance ab/((a + b)²(a + b + 1)).
    expect(a / (a + b)).toBeCloseTo(0.8, 12);
    expect(Math.sqrt((a * b) / ((a + b) ** 2 * (a + b + 1)))).toBeCloseTo(0.05, 12);
    const rng = createRng(13);
    const m = moments(() => beta(rng, a, b), n);
    expect(Math.abs(m.mean - 0.8)).toBeLessThan(0.001);
    expect(Math.abs(Math.sqrt(m.variance) - 0.05)).toBeLessThan(0.001);
  });

  it('negative binomial (failures before the n-th success): mean n(1 − R)/R, variance n(1 − R)/R²', () => {
    const rng = createRng(14);
    const r = 0.6;
    const found = 12;
    const m = moments(() => negativeBinomial(rng, found, r), 50000);
    expect(Math.abs(m.mean / ((found * (1 - r)) / r) - 1)).toBeLessThan(0.02);
    expect(Math.abs(m.variance / ((found * (1 - r)) / (r * r)) - 1)).toBeLessThan(0.05);
    expect(negativeBinomial(rng, found, 1)).toBe(0);
    expect(negativeBinomial(rng, 0, 0.5)).toBe(0);
  });

  it('refuses a Beta that cannot have the asked moments', () => {
    expect(() => betaFromMoments(0.9, 0.4)).toThrow();
  });
});
