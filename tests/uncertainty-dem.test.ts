/**
 * DEM error without re-flooding (uncertainty/dem-error.ts) against full
 * re-flooding of DEMs perturbed by simulated correlated error fields, on
 * the seeded reference valley (the GRASS r.lake fixture's terrain).
 */
import { describe, expect, it } from 'vitest';
import { makeGrid } from '../src/grid/grid.js';
import { estimatePonds } from '../src/pipeline/estimate.js';
import { defaultParams } from '../src/pipeline/run.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { pondAt } from '../src/ponds/stage-storage.js';
import { percentileStandardError, quantileSorted } from '../src/uncertainty/bands.js';
import { buildSupport, supportCovariance } from '../src/uncertainty/covariance.js';
import { drawBands } from '../src/pipeline/draws.js';
import { createFieldSimulator, simulateFieldPair } from '../src/uncertainty/field.js';
import { defaultUncertaintyParams, zeroVarianceParams } from '../src/uncertainty/params.js';
import { createRng } from '../src/uncertainty/random.js';
import { HERMITE_5 } from '../src/uncertainty/dem-error.js';
import { fillDam, referenceDams, referenceValley } from './helpers/synthetic.js';
import { memoryDem } from './helpers/memory-dem.js';

const SIGMA_M = 0.1; // USGS Lidar Base Specification QL2 RMSEz (from memory)
const RANGE_M = 20;
const FIELDS = 400;


describe('DEM error: level shift against full re-flooding', () => {
  const grid = referenceValley();
  const dam = referenceDams()[0]!; // 'lower', measured 1.237 m
  const { setup, fill: detFill } = fillDam(grid, dam);
  const { fill: topFill } = fillDam(grid, dam, { maxLevelM: setup.crestElevM + 1 });
  const detCount = pondAt(detFill, detFill.waterLevelM).cellCount;
  const detCells = detFill.order.subarray(0, detCount);
  const support = buildSupport({
    cells: detCells,
    width: grid.width,
    colOffset: 0,
    rowOffset: 0,
    cellAreaM2: grid.cellAreaM2,
    refCell: setup.bedCell,
    cellWM: 1,
    cellHM: 1,
    blockM: RANGE_M / 4,
  });
  const [rr, rp, pr, pp] = supportCovariance(support, support, SIGMA_M * SIGMA_M, RANGE_M, true);
  // The error's spread within the pond, whose expected effect the draws take as a smeared level.
  const withinSd = Math.sqrt(SIGMA_M * SIGMA_M - pp);
  const smeared = (level: number): number => {
    let v = 0;
    for (let j = 0; j < HERMITE_5.x.length; j++) v += HERMITE_5.w[j]! * pondAt(topFill, level + Math.SQRT2 * withinSd * HERMITE_5.x[j]!).volumeM3;
    return v;
  };

  const sim = createFieldSimulator({ rows: grid.height, cols: grid.width, cellWM: 1, cellHM: 1, sillM2: SIGMA_M * SIGMA_M, rangeM: RANGE_M });
  const rng = createRng(20240611);
  const full: number[] = [];
  const fast: number[] = [];
  const shifts: number[] = [];
  for (let pair = 0; pair < FIELDS / 2; pair++) {
    for (const e of simulateFieldPair(sim, rng)) {
      // Full: the DEM plus the error, crest and bed found again, flooded again.
      const z = new Float32Array(grid.z.length);
      for (let i = 0; i < z.length; i++) z[i] = grid.z[i]! + e[i]!;
      const perturbed = makeGrid({ width: grid.width, height: grid.height, z, transform: grid.transform });
      const again = fillDam(perturbed, dam).fill;
      full.push(pondAt(again, again.waterLevelM).volumeM3);
      // Fast: the deterministic fill read at a shifted level. The re-flood measures the pond on the DEM z + e;
      // to first order that is the pond on z at crest + (e_bed − ē). (The engine's shift for the true pond
      // under an observed DEM, ē − e_ref, is its mirror image: the same distribution for a symmetric error.)
      let s = 0;
      for (let k = 0; k < detCells.length; k++) s += e[detCells[k]!]!;
      const shift = e[setup.bedCell]! - s / detCells.length;
      shifts.push(shift);
      fast.push(smeared(setup.crestElevM + shift));
    }
  }
  const sortedFull = Float64Array.from(full).sort();
  const sortedFast = Float64Array.from(fast).sort();

  it('the same error fields give percentiles (p05, p50, p95) within 2 % of re-flooding', () => {
    expect(sim.negativeShare).toBeLessThan(1e-3);
    for (const q of [0.05, 0.5, 0.95]) {
      const a = quantileSorted(sortedFast, q);
      const b = quantileSorted(sortedFull, q);
      expect(Math.abs(a / b - 1)).toBeLessThan(0.02);
    }
    // The error matters here: the band is wide against the 2 % tolerance.
    expect(quantileSorted(sortedFull, 0.95) / quantileSorted(sortedFull, 0.05)).toBeGreaterThan(1.2);
  });

  it('the draws\' covariance model gives the level shift\'s variance the simulated fields show (within sampling error)', () => {
    expect(rp).toBeCloseTo(pr, 15);
    const model = rr + pp - 2 * rp;
    const empirical = shifts.reduce((a, x) => a + x * x, 0) / shifts.length; // mean 0 by construction
    // Relative standard error of a variance from n normal values: √(2/n) ≈ 7 % at n = 400.
    expect(Math.abs(empirical / model - 1)).toBeLessThan(3 * Math.sqrt(2 / shifts.length));
  });

  it('the engine\'s own draws land within re-flooding\'s percentile intervals (order statistics), widened by 2 %', async () => {
    const p = defaultParams();
    p.water = { ...defaultWaterRunParams(), detect: false };
    p.uncertainty = { ...zeroVarianceParams(defaultUncertaintyParams()), demError: true, demRmseM: SIGMA_M, demRmseFrom: 'option', demErrorRangeM: RANGE_M, draws: 4000, seed: 31 };
    const result = await estimatePonds(memoryDem(grid), [dam], p);
    const out = drawBands(result, p)!;
    const band = result.dams[0]!.bands!.volume_m3!;
    for (const [q, v] of [[0.05, band.p05], [0.5, band.p50], [0.95, band.p95]] as const) {
      const ci = percentileStandardError(sortedFull, q);
      expect(v).toBeGreaterThan(ci.low * 0.98);
      expect(v).toBeLessThan(ci.high * 1.02);
    }
    expect(out.outcome.monteCarlo.floodTopHits).toBe(0);
  });
});
