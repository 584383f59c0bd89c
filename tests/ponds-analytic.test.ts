/**
 * Ponds in valleys with closed-form sizes (analytic solutions derived below).
 */
import { describe, expect, it } from 'vitest';
import { pondAt, pondStats } from '../src/ponds/stage-storage.js';
import { Z_QUANTUM_M, fillDam, makeDam, rectValley, thresholdPond, vValley } from './helpers/synthetic.js';

describe('V-shaped valley', () => {
  /*
   * Geometry: z = S·y + |x|/m, y upstream from the dam (bed at x = y = 0),
   * side slope m horizontal : 1 vertical, floor slope S, water level H.
   * At distance y the water surface spans |x| < m(H − S·y), width
   * 2m(H − S·y), for 0 ≤ y < H/S. Area:
   *   A = ∫₀^{H/S} 2m(H − S·y) dy = 2m(H²/S − H²/(2S)) = m·H²/S.
   * The cross-section at y is a triangle of width 2m(H − S·y) and depth
   * (H − S·y): area m(H − S·y)². Volume:
   *   V = ∫₀^{H/S} m(H − S·y)² dy = m·H³/(3S) = A·H/3.
   * On the grid the crest row itself holds no water, so the strip
   * 0 ≤ y < cell/2 is lost: about 2mH·(cell/2) / A = S·cell/H of the area
   * (0.5 % for S = 0.01, H = 1 m);
   * the rest is the stair-stepped shoreline.
   */
  const cases = [
    { m: 10, S: 0.01, H: 1.0 },
    { m: 5, S: 0.01, H: 1.0 },
    { m: 15, S: 0.01, H: 0.7 },
    { m: 20, S: 0.005, H: 0.6 },
  ];
  for (const { m, S, H } of cases) {
    it(`m = ${m}, S = ${S}, H = ${H} m on 0.5 m cells: within 2 % of A = mH²/S and V = mH³/(3S)`, () => {
      const lengthM = H / S;
      const halfWidthM = m * H;
      const cellM = 0.5;
      const damRow = Math.ceil((lengthM + 10) / cellM);
      const halfCols = Math.ceil((halfWidthM + 5) / cellM);
      const grid = vValley({ width: 2 * halfCols + 1, height: damRow + 21, cellM, damRow }, m, S);
      const crestHalfM = (halfCols - 1) * cellM;
      const dam = makeDam({ id: 'v', lines: [[[-crestHalfM, 0], [crestHalfM, 0]]], heightM: H, upstream: 'left' });
      const { setup, fill } = fillDam(grid, dam);
      expect(setup.bedElevM).toBe(0);
      expect(fill.limitedBy).toBe('crest');
      expect(fill.waterLevelM).toBe(H);
      const pond = pondAt(fill, H);
      const areaM2 = (m * H * H) / S;
      const volumeM3 = (m * H ** 3) / (3 * S);
      expect(Math.abs(pond.areaM2 / areaM2 - 1)).toBeLessThan(0.02);
      expect(Math.abs(pond.volumeM3 / volumeM3 - 1)).toBeLessThan(0.02);
      // Exact discrete sum Σ a·(h − z) over the connected cells below h, by a plain flood fill.
      const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, H);
      expect(pond.cellCount).toBe(ref.cellCount);
      expect(Math.abs(pond.volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
      expect(Math.abs(pond.areaM2 / ref.areaM2 - 1)).toBeLessThan(1e-12);
      // Mean depth = V/A = H/3 analytically.
      const stats = pondStats(grid, fill);
      expect(Math.abs(stats.meanDepthM / (H / 3) - 1)).toBeLessThan(0.02);
    });
  }
});

describe('rectangular valley', () => {
  /*
   * Floor z = S·y between vertical walls W apart. The water reaches y = H/S
   * with depth H − S·y across the full width:
   *   A = W·H/S,  V = ∫₀^{H/S} W(H − S·y) dy = W·H²/(2S) = A·H/2.
   */
  it('W = 10 m, S = 0.01, H = 1 m: within 2 % of A = WH/S and V = AH/2; deepest water = H less half a cell of slope', () => {
    const W = 10;
    const S = 0.01;
    const H = 1;
    const cellM = 0.5;
    const damRow = 220;
    const grid = rectValley({ width: 40, height: damRow + 20, cellM, damRow }, W, S);
    const dam = makeDam({ id: 'r', lines: [[[-8, 0], [8, 0]]], heightM: H, upstream: 'left' });
    const { setup, fill } = fillDam(grid, dam);
    const pond = pondAt(fill, fill.waterLevelM);
    const areaM2 = (W * H) / S;
    expect(Math.abs(pond.areaM2 / areaM2 - 1)).toBeLessThan(0.02);
    expect(Math.abs(pond.volumeM3 / ((areaM2 * H) / 2) - 1)).toBeLessThan(0.02);
    const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, H);
    expect(Math.abs(pond.volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
    // The first row upstream of the crest has its centre half a cell (0.25 m) up the slope (z quantised to 2^-12 m).
    const stats = pondStats(grid, fill);
    expect(Math.abs(stats.maxDepthM - (H - S * 0.5))).toBeLessThanOrEqual(Z_QUANTUM_M);
  });
});
