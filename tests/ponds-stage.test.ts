/**
 * Stage–area–storage curve and pond statistics.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { levelForVolumeM, pondAt, pondStats, stageStorage } from '../src/ponds/stage-storage.js';
import { fillDam, makeDam, rectValley, thresholdPond, type ValleyFrame } from './helpers/synthetic.js';

// Rectangular valley W = 10 m, floor slope S = 0.01, 0.5 m cells; dam 1.0 m.
const W = 10;
const S = 0.01;
const frame: ValleyFrame = { width: 40, height: 240, cellM: 0.5, damRow: 220 };
const grid = rectValley(frame, W, S);
const { setup, fill } = fillDam(grid, makeDam({ id: 'r', lines: [[[-8, 0], [8, 0]]], heightM: 1, upstream: 'left' }));

describe('stageStorage', () => {
  const rows = stageStorage(fill, setup.bedElevM, DEFAULT_POND_PARAMS.stageStepM);
  it('runs from the bed to the water level at the documented 0.1 m step, last row exactly at the water level', () => {
    expect(DEFAULT_POND_PARAMS.stageStepM).toBe(0.1);
    expect(rows.length).toBe(11);
    expect(rows[0]![0]).toBe(0);
    for (let k = 0; k < rows.length - 1; k++) expect(rows[k]![0]).toBeCloseTo(0.1 * k, 12);
    const last = rows[rows.length - 1]!;
    expect(last[0]).toBe(fill.waterLevelM);
    const pond = pondAt(fill, fill.waterLevelM);
    expect(last[1]).toBe(pond.areaM2);
    expect(last[2]).toBe(pond.volumeM3);
  });
  it('is monotone, and each row is the exact discrete pond of its level', () => {
    for (let k = 1; k < rows.length; k++) {
      expect(rows[k]![0]).toBeGreaterThan(rows[k - 1]![0]);
      expect(rows[k]![1]).toBeGreaterThanOrEqual(rows[k - 1]![1]);
      expect(rows[k]![2]).toBeGreaterThanOrEqual(rows[k - 1]![2]);
    }
    for (const [level, areaM2, volumeM3] of rows) {
      const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, level);
      expect(areaM2).toBe(ref.areaM2);
      if (ref.volumeM3 === 0) expect(volumeM3).toBe(0);
      else expect(Math.abs(volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
    }
  });
  it('follows the rectangular valley curve V(h) = W·h²/(2S) within 3 % from h = 0.5 m up', () => {
    // Analytic: the pond at level h reaches y = h/S; V = ∫₀^{h/S} W(h − S·y) dy = W·h²/(2S).
    for (const [level, , volumeM3] of rows) {
      if (level < 0.5) continue;
      expect(Math.abs(volumeM3 / ((W * level * level) / (2 * S)) - 1)).toBeLessThan(0.03);
    }
  });
  it('a water level at the bed gives a single row', () => {
    const dry = { ...fill, waterLevelM: setup.bedElevM };
    expect(stageStorage(dry, setup.bedElevM, 0.1)).toEqual([[setup.bedElevM, 0, 0]]);
  });
});

describe('levelForVolumeM', () => {
  it('inverts the rectangular valley curve: h = √(2S·V/W) within 3 % from h = 0.5 m up, and the fill\'s own volume within 1e-6 m', () => {
    // Analytic: V(h) = W·h²/(2S), so h(V) = √(2S·V/W) above the bed.
    for (const h of [0.5, 0.7, 0.9]) {
      const volume = (W * h * h) / (2 * S);
      const level = levelForVolumeM(fill, volume);
      expect(Math.abs((level - setup.bedElevM) / h - 1)).toBeLessThan(0.03);
      // Its own inverse: the fill at that level holds the volume asked for (bisection to 1e-6 m).
      const held = pondAt(fill, level).volumeM3;
      expect(Math.abs(held - volume)).toBeLessThan(1e-6 * pondAt(fill, level).areaM2 + 1e-9);
    }
    expect(levelForVolumeM(fill, 0)).toBe(fill.joinM[0]);
  });
});

describe('pondStats', () => {
  it('mean depth = volume / area; max depth = level − lowest flooded ground', () => {
    const stats = pondStats(grid, fill);
    const pond = pondAt(fill, fill.waterLevelM);
    expect(stats.volumeM3).toBe(pond.volumeM3);
    expect(stats.areaM2).toBe(pond.areaM2);
    expect(stats.meanDepthM).toBe(pond.volumeM3 / pond.areaM2);
    let low = Infinity;
    for (const i of thresholdPond(grid, setup.seedCells, setup.crestCells, fill.waterLevelM).cells) low = Math.min(low, grid.z[i]!);
    expect(stats.maxDepthM).toBe(fill.waterLevelM - low);
    // Analytic mean depth of the rectangular valley: V/A = H/2.
    expect(stats.meanDepthM).toBeCloseTo(0.5, 2);
  });
});
