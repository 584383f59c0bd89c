/**
 * Volume below today's water surface: the area–depth power law's closed
 * forms, and both models on analytic valleys whose pond surface is flattened
 * into the DEM (as lidar records standing water).
 */
import { describe, expect, it } from 'vitest';
import { POWER_P_MEDIAN, areaAtDepth, volumeBelow } from '../src/ponds/below-surface.js';
import { reconstructBed } from '../src/ponds/bed-reconstruct.js';
import { detectWaterSurface, DEFAULT_WATER_PARAMS } from '../src/ponds/water-surface.js';
import { makeDam, rectValley, vValley } from './helpers/synthetic.js';
import { flattenPond } from './helpers/water-scenes.js';
import { bedAtDam } from '../src/pipeline/water-stage.js';
import type { CrestSetup } from '../src/ponds/crest.js';

describe('area–depth power law, V = A·h/(1 + 2/p)', () => {
  // Hayashi & van der Kamp (2000), Journal of Hydrology 237: closed forms for A = 1000 m², h = 1 m.
  it('gives 312.7 m³ at p = 0.91, 333.3 m³ at p = 1 (a cone) and 500 m³ at p = 2 (a paraboloid)', () => {
    expect(volumeBelow(1000, 1, 0.91)).toBeCloseTo(312.7, 1);
    expect(volumeBelow(1000, 1, 1)).toBeCloseTo(1000 / 3, 6);
    expect(volumeBelow(1000, 1, 2)).toBeCloseTo(500, 9);
  });

  it('uses the median p of Karran et al. (2017), 0.91, as the default', () => {
    // Karran et al. (2017), Hydrology and Earth System Sciences 21: median p over beaver ponds.
    expect(POWER_P_MEDIAN).toBe(0.91);
  });

  it('is the integral of its own stage–area relation A(y) = A·(y/h)^(2/p)', () => {
    // Independent check: V = ∫₀^h A(y) dy by the midpoint rule must match the closed form.
    for (const p of [0.6, 0.91, 1, 2, 3.5]) {
      const n = 20000;
      let sum = 0;
      for (let k = 0; k < n; k++) sum += areaAtDepth(1000, 1.3, ((k + 0.5) / n) * 1.3, p) * (1.3 / n);
      expect(sum / volumeBelow(1000, 1.3, p)).toBeCloseTo(1, 5);
    }
  });

  it('holds nothing without area or depth, and refuses a non-positive p', () => {
    expect(volumeBelow(0, 1, 1)).toBe(0);
    expect(volumeBelow(1000, -0.2, 1)).toBe(0);
    expect(() => volumeBelow(1000, 1, 0)).toThrow(/positive/);
  });
});

/** Detects the flattened surface and returns it with the scene. */
function detected(scene: ReturnType<typeof flattenPond>) {
  const out = detectWaterSurface(scene.wet, scene.setup, DEFAULT_WATER_PARAMS);
  if (!out.surface) throw new Error(`no surface: ${out.reason}`);
  return out.surface;
}

describe('V-shaped valley with its pond flattened (V = A·h/3, analytic)', () => {
  /*
   * z = S·y + |x|/m; water at level h over a bed at 0 at the dam covers
   * A = m·h²/S and holds V = m·h³/(3S) = A·h/3 (derivation in
   * tests/ponds-analytic.test.ts). The DEM shows the water flat at h.
   */
  const cases = [
    // Levels between the DEM's cell values, as real water levels are.
    { m: 10, S: 0.01, h: 0.9871, cellM: 0.5 },
    { m: 5, S: 0.01, h: 0.7923, cellM: 0.5 },
    { m: 15, S: 0.005, h: 0.6117, cellM: 0.5 },
  ];
  for (const { m, S, h, cellM } of cases) {
    const lengthM = h / S;
    const damRow = Math.ceil((lengthM + 15) / cellM);
    const halfCols = Math.ceil((m * (h + 0.5) + 5) / cellM);
    const dry = vValley({ width: 2 * halfCols + 1, height: damRow + 21, cellM, damRow }, m, S);
    const crestHalfM = (halfCols - 1) * cellM;
    const dam = makeDam({ id: 'v', lines: [[[-crestHalfM, 0], [crestHalfM, 0]]], heightM: h + 0.3, upstream: 'left' });
    const scene = flattenPond(dry, dam, h);
    const analyticV = (m * h ** 3) / (3 * S);

    it(`m = ${m}, S = ${S}, h = ${h} m: the surface is found at h, the power law at p = 1 within 3 %`, () => {
      const surface = detected(scene);
      expect(Math.abs(surface.levelM - h)).toBeLessThan(1e-6);
      const v = volumeBelow(surface.areaM2, surface.levelM - scene.setup.bedElevM, 1);
      expect(Math.abs(v / analyticV - 1)).toBeLessThan(0.03);
    });

    it(`m = ${m}, S = ${S}, h = ${h} m: the reconstructed bed within 3 %`, () => {
      const surface = detected(scene);
      const bed = reconstructBed(scene.wet, surface.cells, surface.levelM, scene.setup.crestCells, scene.setup.bedElevM, undefined, null, scene.setup.downstreamCells);
      expect(Math.abs(bed.volumeM3 / analyticV - 1)).toBeLessThan(0.03);
      // The pond's length from the dam is h/S (analytic), up to a cell.
      expect(Math.abs(bed.lengthM - h / S)).toBeLessThan(2 * cellM);
      // The sides keep their slope 1/m under the water.
      expect(Math.abs(bed.sideSlope * m - 1)).toBeLessThan(0.1);
    });
  }
});

describe('rectangular valley with its pond flattened (V = A·h/2, analytic)', () => {
  /*
   * Floor z = S·y between vertical walls W apart: the water at h covers
   * A = W·h/S and holds V = W·h²/(2S) = A·h/2. A cone-like power law
   * (p = 1) would give A·h/3, a third too little: this is the shape the
   * reconstructed bed is for.
   */
  for (const { W, S, h, cellM } of [
    { W: 10, S: 0.01, h: 0.9871, cellM: 0.5 },
    { W: 16, S: 0.004, h: 0.7117, cellM: 1 },
  ]) {
    it(`W = ${W} m, S = ${S}, h = ${h} m: the reconstructed bed within 3 %`, () => {
      const damRow = Math.ceil((h / S + 15) / cellM);
      const width = Math.ceil((W + 16) / cellM);
      const dry = rectValley({ width, height: damRow + 20, cellM, damRow }, W, S);
      const dam = makeDam({ id: 'r', lines: [[[-(W / 2 + 4), 0], [W / 2 + 4, 0]]], heightM: h + 0.3, upstream: 'left' });
      const scene = flattenPond(dry, dam, h);
      const surface = detected(scene);
      const analyticV = (W * h * h) / (2 * S);
      const bed = reconstructBed(scene.wet, surface.cells, surface.levelM, scene.setup.crestCells, scene.setup.bedElevM, undefined, null, scene.setup.downstreamCells);
      expect(Math.abs(bed.volumeM3 / analyticV - 1)).toBeLessThan(0.03);
      // The same surface under the power law at p = 2 (a paraboloid, V = A·h/2) agrees, while p = 1 is a third short.
      expect(Math.abs(volumeBelow(surface.areaM2, h, 2) / analyticV - 1)).toBeLessThan(0.03);
      expect(volumeBelow(surface.areaM2, h, 1) / analyticV).toBeLessThan(0.7);
    });
  }
});

describe('bed at the dam', () => {
  it('is the setup bed, or for a dam standing out in the DEM with a measured height its crest minus that height when lower', () => {
    const base = { bedElevM: 10, crestLowM: 11.2, heightM: 1.0, demVisible: true, heightSource: 'measured' as const };
    // The dry channel below (10 m) is lower than crest − height (10.2 m): the channel.
    expect(bedAtDam(base as unknown as CrestSetup)).toBe(10);
    // The ground below the dam is a lower pond's water at 10.6 m: crest − height (10.2 m) is the bed.
    expect(bedAtDam({ ...base, bedElevM: 10.6 } as unknown as CrestSetup)).toBeCloseTo(10.2, 12);
    // Not standing out, or a default height: the setup's bed.
    expect(bedAtDam({ ...base, bedElevM: 10.6, demVisible: false } as unknown as CrestSetup)).toBe(10.6);
    expect(bedAtDam({ ...base, bedElevM: 10.6, heightSource: 'default' } as unknown as CrestSetup)).toBe(10.6);
  });
});
