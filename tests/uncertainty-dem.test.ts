/**
 * DEM error without re-flooding (uncertainty/dem-error.ts) against full
 * re-flooding of DEMs perturbed by simulated correlated error fields, on
 * the seeded reference valley (the GRASS r.lake fixture's terrain).
 *
 * The reference is the plain Monte Carlo of DEM error propagation: add a
 * simulated error field to the DEM and run the whole estimate again (crest,
 * bed and escape found again, the pond flooded again). The fast path reads
 * each dam's fill at a drawn level instead; a pond that escapes below its
 * crest floods only its rim again (uncertainty/escape-rim.ts). Both see the
 * same fields (common random numbers), so what differs is the approximation
 * alone; the engine's own model of the rim's error is checked last, against
 * re-flooding's percentile intervals.
 * Fields are symmetric, so the pond on z + e is distributed as the engine's
 * pond on the true ground z − e′ with e′ = −e: the fast path is fed −e.
 */
import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import { colToX, rowToY } from '../src/grid/transform.js';
import type { DamInput } from '../src/inventory.js';
import { estimatePonds } from '../src/pipeline/estimate.js';
import { drawBands } from '../src/pipeline/draws.js';
import { defaultParams } from '../src/pipeline/run.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { createFillScratch, fillBehindCrest, type PondFill } from '../src/ponds/fill.js';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { floodedCount, levelForVolumeM, pondAt, pondAtExtended } from '../src/ponds/stage-storage.js';
import { setupAndFill } from '../src/ponds/upstream-by-fill.js';
import { percentileStandardError, quantileSorted } from '../src/uncertainty/bands.js';
import { buildSupport, pointCovariance, pointSupportCovariances, sphericalCovariance, supportCovariance, supportCovarianceBlock, supportSize } from '../src/uncertainty/covariance.js';
import { alternativesGivenReference, cholesky, drawnLevelM, passError, referenceError } from '../src/uncertainty/dem-error.js';
import { smearedPond } from '../src/uncertainty/engine.js';
import { createRimWork, drawRimErrors, errorAt, rimPondVolumeM3, setRimErrors } from '../src/uncertainty/escape-rim.js';
import { createFieldSimulator, simulateFieldPair } from '../src/uncertainty/field.js';
import { defaultUncertaintyParams, zeroVarianceParams, type UncertaintyParams } from '../src/uncertainty/params.js';
import { createDrawPrep, flippedCrest, type DamDrawInput } from '../src/uncertainty/prepare.js';
import { createRng, normal } from '../src/uncertainty/random.js';
import { memoryDem } from './helpers/memory-dem.js';
import { REFERENCE_VALLEY, makeDam, referenceChannelCol, referenceDams, referenceValley, sampleGrid } from './helpers/synthetic.js';

const SIGMA_M = 0.1; // USGS Lidar Base Specification QL2 RMSEz (from memory)
const RANGE_M = 20;
const FIELDS = 400;

/** A crest across the reference valley's channel at `row`, `halfM` each side (upstream: north, the left of a west → east line). */
function across(row: number, halfM: number): [number, number][][] {
  const t = REFERENCE_VALLEY.transform;
  const x = colToX(t, referenceChannelCol(row));
  const y = rowToY(t, row + 0.5);
  return [[[x - halfM, y], [x + halfM, y]]];
}

const [lower, upper] = referenceDams();
/** Ponds held by their crest: the r.lake fixture's two measured dams (standalone here; 'upper' has two equally low crest cells). */
const CREST_HELD = [lower!, upper!];
/** Ponds that spill round short crests, far from the DEM's edge: unmeasured (default height) and measured. */
const SPILLING = [
  makeDam({ id: 'spill-150', index: 3, lines: across(150, 4), upstream: 'left' }),
  makeDam({ id: 'spill-120', index: 4, lines: across(120, 5), heightM: 0.9, upstream: 'left' }),
  makeDam({ id: 'spill-180', index: 5, lines: across(180, 3), upstream: 'left' }),
];

function uncertainty(): UncertaintyParams {
  return { ...zeroVarianceParams(defaultUncertaintyParams()), demError: true, demRmseM: SIGMA_M, demRmseFrom: 'option', demErrorRangeM: RANGE_M, draws: 1, seed: 31 };
}

/** The dam set up and flooded as the estimate does it (whole grid as its window), and its draw input. */
function prepared(grid: Grid, dam: DamInput): { input: DamDrawInput; detFill: PondFill } {
  const u = uncertainty();
  const prep = createDrawPrep(u, DEFAULT_POND_PARAMS, 1);
  const scratch = createFillScratch(grid.width * grid.height);
  const crest = rasteriseLines(grid, dam.geometry.kind === 'line' ? dam.geometry.lines : []).cells;
  const done = setupAndFill(grid, dam, crest, DEFAULT_POND_PARAMS, {}, scratch);
  if ('skip' in done) throw new Error(done.skip.message);
  const top = prep.floodTopM(dam, done.setup);
  const fill = done.fill.escapeKind === null && top > done.fill.topLevelM ? fillBehindCrest(grid, done.setup, { maxLevelM: top }, scratch) : done.fill;
  prep.addGroup(grid, [{ index: 0, dam, inTotals: true, setup: done.setup, fill }], scratch);
  return { input: prep.finish().dams[0]!, detFill: fill };
}

/** Volumes of full re-flooding and of the fast path on the same fields, per dam. */
function compare(dams: DamInput[], grid: Grid = referenceValley()): Map<string, { full: Float64Array; fast: Float64Array; input: DamDrawInput; det: number }> {
  const sim = createFieldSimulator({ rows: grid.height, cols: grid.width, cellWM: grid.cellWidthM[0]!, cellHM: grid.cellHeightM, sillM2: SIGMA_M * SIGMA_M, rangeM: RANGE_M });
  const rng = createRng(20240611);
  const per = dams.map((dam) => {
    const { input, detFill } = prepared(grid, dam);
    const s = input.support!;
    const cells = input.fill.order.subarray(0, floodedCount(input.fill, input.waterLevelM));
    const pp = supportCovariance(s, s, SIGMA_M * SIGMA_M, RANGE_M, true)[3];
    return { dam, input, cells, withinSd: Math.sqrt(SIGMA_M * SIGMA_M - pp), det: pondAt(detFill, detFill.waterLevelM).volumeM3, full: [] as number[], fast: [] as number[] };
  });
  const scratch = createFillScratch(grid.width * grid.height);
  for (let pair = 0; pair < FIELDS / 2; pair++) {
    for (const e of simulateFieldPair(sim, rng)) {
      const z = new Float32Array(grid.z.length);
      for (let i = 0; i < z.length; i++) z[i] = grid.z[i]! + e[i]!;
      const perturbed = makeGrid({ width: grid.width, height: grid.height, z, transform: grid.transform });
      for (const p of per) {
        const crest = rasteriseLines(perturbed, p.dam.geometry.kind === 'line' ? p.dam.geometry.lines : []).cells;
        const again = setupAndFill(perturbed, p.dam, crest, DEFAULT_POND_PARAMS, {}, scratch);
        if ('skip' in again) throw new Error(again.skip.message);
        p.full.push(pondAt(again.fill, again.fill.waterLevelM).volumeM3);
        // The fast path, fed e′ = −e: [e_ref, ē, passes...] and the alternatives of the dam's support, then its level and smeared pond (or its rim).
        const s = p.input.support!;
        const v = new Float64Array(supportSize(s));
        v[0] = -e[s.refRow * grid.width + s.refCol]!;
        let sum = 0;
        for (let k = 0; k < p.cells.length; k++) sum -= e[p.cells[k]!]!;
        v[1] = sum / p.cells.length;
        for (let j = 0; j < s.pointCol.length; j++) v[2 + j] = -e[s.pointRow[j]! * grid.width + s.pointCol[j]!]!;
        const alts = Float64Array.from(s.altCol, (c, j) => -e[s.altRow[j]! * grid.width + c]!);
        let refErr = referenceError(s, v[0]!, alts);
        // Near the DEM-visibility threshold: the rule taken again on the true ground.
        const flipped = p.input.flip ? flippedCrest(p.input.flip, v, 0) : null;
        const crestM = p.input.crestElevM + (flipped ? flipped.shiftM : 0);
        if (flipped) refErr = flipped.refErrorM;
        const rim = p.input.rim;
        if (rim) {
          // The rim flooded on the same field (its cells are flat indices of the whole grid here), the whole error given.
          const work = createRimWork(rim);
          setRimErrors(rim, Float64Array.from(rim.gridCells, (c) => -e[c]!), work);
          const volume = rimPondVolumeM3(rim, crestM, refErr, v[1]!, work);
          p.fast.push(pondAtExtended(p.input.fill, levelForVolumeM(p.input.fill, volume)).volumeM3);
        } else {
          const level = drawnLevelM(crestM, p.input.escapeLevelM, refErr, v[1]!, passError(s, v, 0));
          p.fast.push(smearedPond(p.input.fill, level, p.withinSd).volumeM3);
        }
      }
    }
  }
  return new Map(per.map((p) => [p.dam.id, { full: Float64Array.from(p.full).sort(), fast: Float64Array.from(p.fast).sort(), input: p.input, det: p.det }]));
}

const QUANTILES = [0.05, 0.5, 0.95];

describe('DEM error: the fast path against full re-flooding', () => {
  const results = compare([...CREST_HELD, ...SPILLING]);
  const ratios = (id: string): number[] => {
    const r = results.get(id)!;
    return QUANTILES.map((q) => quantileSorted(r.fast, q) / quantileSorted(r.full, q));
  };

  it('ponds held by their crest: percentiles (p05, p50, p95) within 2 % of re-flooding', () => {
    for (const dam of CREST_HELD) {
      const r = results.get(dam.id)!;
      expect(r.input.escapeLevelM).toBeGreaterThan(r.input.waterLevelM);
      for (const ratio of ratios(dam.id)) expect(Math.abs(ratio - 1)).toBeLessThan(0.02);
      // The error matters here: the band is wide against the 2 % tolerance.
      expect(quantileSorted(r.full, 0.95) / quantileSorted(r.full, 0.05)).toBeGreaterThan(1.2);
    }
    // 'upper' has two equally low crest cells: the lower of the two on the true ground sets its crest.
    expect(results.get('upper')!.input.support!.altDeltaM.length).toBeGreaterThan(0);
  });

  it('ponds that spill round their crest: the rim flooded on the same field gives re-flooding\'s pond (percentiles within 2 %)', () => {
    for (const dam of SPILLING) {
      const r = results.get(dam.id)!;
      expect(r.input.escapeLevelM).toBe(r.input.waterLevelM);
      expect(r.input.support!.passDeltaM.length).toBeGreaterThan(1);
      // The rim was kept (its zero-error flood found the DEM's escape), with its own variation round the passes.
      expect(r.input.rim).toBeTruthy();
      expect(r.input.rim!.localRows.length).toBeGreaterThan(0);
      for (const ratio of ratios(dam.id)) expect(Math.abs(ratio - 1)).toBeLessThan(0.02);
      // Re-flooding spreads these ponds wide: a fixed escape level would give them almost none of it.
      expect(quantileSorted(r.full, 0.95) / quantileSorted(r.full, 0.05)).toBeGreaterThan(2);
    }
  });

  it('the rim\'s error round the passes, drawn given the dam\'s joint errors, has the spherical model\'s covariances (within sampling error)', () => {
    const input = results.get('spill-150')!.input;
    const rim = input.rim!;
    const s = input.support!;
    const width = referenceValley().width;
    const sill = SIGMA_M * SIGMA_M;
    const m = supportSize(s);
    const lvv = cholesky(supportCovarianceBlock(s, s, sill, RANGE_M, true), m).lower;
    // Three rows with their own variation (first, middle, last) and one without.
    const nl = rim.localRows.length;
    const local = [rim.localRows[0]!, rim.localRows[nl >> 1]!, rim.localRows[nl - 1]!];
    const other = rim.localOf.findIndex((a) => a < 0);
    const rows = [...local, other];
    const pos = (r: number): [number, number] => [rim.gridCells[r]! % width, Math.floor(rim.gridCells[r]! / width)];
    const draws = 20000;
    const rng = createRng(11);
    const work = createRimWork(rim);
    const z = new Float64Array(m);
    const v = new Float64Array(m);
    const e = new Float64Array(rows.length);
    const withV = new Float64Array(rows.length * m);
    const among = new Float64Array(rows.length * rows.length);
    for (let k = 0; k < draws; k++) {
      for (let j = 0; j < m; j++) z[j] = normal(rng);
      for (let i = 0; i < m; i++) {
        let t = 0;
        for (let j = 0; j <= i; j++) t += lvv[i * m + j]! * z[j]!;
        v[i] = t;
      }
      for (let a = 0; a < work.normals.length; a++) work.normals[a] = normal(rng);
      drawRimErrors(rim, v, 0, work);
      rows.forEach((r, i) => (e[i] = errorAt(rim, work, r)));
      for (let i = 0; i < rows.length; i++) {
        for (let j = 0; j < m; j++) withV[i * m + j]! += e[i]! * v[j]!;
        for (let j = 0; j < rows.length; j++) among[i * rows.length + j]! += e[i]! * e[j]!;
      }
    }
    // A sample covariance of n Gaussian pairs has a standard error of at most σ²·√(2/n): 1 % of the sill here.
    const tol = 4 * sill * Math.sqrt(2 / draws);
    const cxv = new Float64Array(m);
    rows.forEach((r, i) => {
      // With the joint errors (kriging keeps them for every row): the spherical model, pond mean over its blocks.
      pointSupportCovariances(s, ...pos(r), sill, RANGE_M, cxv);
      for (let j = 0; j < m; j++) expect(Math.abs(withV[i * m + j]! / draws - cxv[j]!)).toBeLessThan(tol);
    });
    // Among the rows with their own variation: C(h) = σ²(1 − 3h/2L + h³/2L³) (Journel & Huijbregts 1978), conditioning by kriging being exact.
    for (let i = 0; i < local.length; i++) {
      for (let j = 0; j < local.length; j++) {
        const model = pointCovariance(s, ...pos(local[i]!), ...pos(local[j]!), sill, RANGE_M);
        expect(Math.abs(among[i * rows.length + j]! / draws - model)).toBeLessThan(tol);
      }
    }
    // The row without: the kriged part only, its variance short of the sill by its residual, which the volume integrates out.
    const last = rows.length - 1;
    const resid = rim.residualSdM[other]!;
    expect(resid).toBeGreaterThan(0);
    expect(Math.abs(among[last * rows.length + last]! / draws - (sill - resid * resid))).toBeLessThan(tol);
  });

  // The engine draws the rim's error from the dam's joint errors (kriging, and the exact conditional variation
  // round the passes), not the whole field: this checks that model against re-flooding.
  it('the engine\'s own draws land within re-flooding\'s percentile intervals (order statistics), widened by 2 %', async () => {
    const p = defaultParams();
    p.water = { ...defaultWaterRunParams(), detect: false };
    p.uncertainty = { ...uncertainty(), draws: 4000 };
    const grid = referenceValley();
    for (const dam of [...CREST_HELD, ...SPILLING]) {
      const result = await estimatePonds(memoryDem(grid), [dam], p);
      const out = drawBands(result, p)!;
      const band = result.dams[0]!.bands!.volume_m3!;
      const full = results.get(dam.id)!.full;
      for (const [q, v] of [[0.05, band.p05], [0.5, band.p50], [0.95, band.p95]] as const) {
        const ci = percentileStandardError(full, q);
        expect(v).toBeGreaterThan(ci.low * 0.98);
        expect(v).toBeLessThan(ci.high * 1.02);
      }
      expect(out.outcome.monteCarlo.floodTopHits).toBe(0);
    }
  });
});

describe('alternatives to the reference, drawn given its error', () => {
  it('have the covariances of the spherical model with the reference and among themselves (within sampling error)', () => {
    // Reference at cell (10, 10) of a 40-column window; alternatives 1, 3 and 6 m east and 2 m north.
    const width = 40;
    const at = (col: number, row: number): number => row * width + col;
    const s = buildSupport({
      cells: new Int32Array(0),
      width,
      colOffset: 0,
      rowOffset: 0,
      cellAreaM2: new Float64Array(40).fill(1),
      refCell: at(10, 10),
      cellWM: 1,
      cellHM: 1,
      blockM: 5,
      altCells: Int32Array.of(at(11, 10), at(13, 10), at(16, 10), at(10, 8)),
      altDeltaM: Float64Array.of(0, 0.05, 0.1, 0.2),
    });
    const sill = SIGMA_M * SIGMA_M;
    const { gain, lower } = alternativesGivenReference(s, sill, RANGE_M);
    const n = 4;
    const draws = 40000;
    const rng = createRng(7);
    const sums = new Float64Array((n + 1) * (n + 1));
    const e = new Float64Array(n + 1);
    for (let k = 0; k < draws; k++) {
      e[0] = SIGMA_M * normal(rng);
      const z = Array.from({ length: n }, () => normal(rng));
      for (let a = 0; a < n; a++) {
        let r = 0;
        for (let b = 0; b <= a; b++) r += lower[a * n + b]! * z[b]!;
        e[a + 1] = gain[a]! * e[0]! + r;
      }
      for (let i = 0; i <= n; i++) for (let j = 0; j <= n; j++) sums[i * (n + 1) + j]! += e[i]! * e[j]!;
    }
    // Positions: the reference, then the alternatives (cells of 1 m).
    const pos = [[10, 10], [11, 10], [13, 10], [16, 10], [10, 8]] as const;
    for (let i = 0; i <= n; i++) {
      for (let j = 0; j <= n; j++) {
        // The model: C(h) = σ²(1 − 3h/2L + h³/2L³) (spherical; Journel & Huijbregts 1978).
        const model = sphericalCovariance(Math.hypot(pos[i]![0] - pos[j]![0], pos[i]![1] - pos[j]![1]), sill, RANGE_M);
        // A sample covariance of n Gaussian pairs has a standard error of at most σ²·√(2/n): 0.7 % here.
        expect(Math.abs(sums[i * (n + 1) + j]! / draws - model)).toBeLessThan(4 * sill * Math.sqrt(2 / draws));
      }
    }
  });
});

describe('DEM error: a measured dam near the height at which it counts as visible in the DEM', () => {
  // A mound across a 1 % valley of 0.5 m cells (the DEM-visible dam of tests/ponds-crest.test.ts), 0.32 m high:
  // 0.02 m over the rule's 0.3 m, so on a perturbed DEM the dam is often not visible and its height counts from the crest.
  const frame = { width: 61, height: 320, cellM: 0.5, damRow: 300 };
  const grid = sampleGrid(frame, (x, y) => 0.01 * y + Math.abs(x) / 10 + (Math.abs(y) <= 0.5 ? 0.32 : 0));
  const dam = makeDam({ id: 'mound', lines: [[[-14, 0], [14, 0]]], heightM: 0.5, upstream: 'left' });
  const results = compare([dam], grid);
  it('draws the rule again on the true ground: p50 and p95 within 5 % of re-flooding (held at the DEM\'s choice, p95 was 0.35 of it)', () => {
    const r = results.get('mound')!;
    expect(r.input.flip).toBeTruthy();
    expect(r.input.flip!.visible).toBe(true);
    const [p05, p50, p95] = QUANTILES.map((q) => quantileSorted(r.fast, q) / quantileSorted(r.full, q));
    expect(Math.abs(p50! - 1)).toBeLessThan(0.05);
    expect(Math.abs(p95! - 1)).toBeLessThan(0.05);
    // The low tail is a quarter short (0.75), with or without the flip: the toe, lowest of some 50 probed cells, is not this.
    expect(Math.abs(p05! - 1)).toBeLessThan(0.3);
    // Re-flooding's band is wide: the rule goes the other way in about a fifth of the fields.
    expect(quantileSorted(r.full, 0.95) / quantileSorted(r.full, 0.5)).toBeGreaterThan(3);
  });
});
