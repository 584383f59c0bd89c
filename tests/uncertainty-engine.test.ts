/**
 * The Monte Carlo engine on analytic and seeded valleys: the V-shaped
 * valley's closed form under a normal height, zero variance against the
 * deterministic estimate, per-draw sums, cascades per draw against the
 * deterministic water-surface combination, candidate inclusion and recall.
 */
import { describe, expect, it } from 'vitest';
import type { Grid } from '../src/grid/grid.js';
import type { DamInput } from '../src/inventory.js';
import { drawBands } from '../src/pipeline/draws.js';
import { estimatePonds, type EstimateParams } from '../src/pipeline/estimate.js';
import { defaultParams } from '../src/pipeline/run.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { combinePonds } from '../src/ponds/combine.js';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { percentileStandardError } from '../src/uncertainty/bands.js';
import { combineCascade, createCascadeScratch } from '../src/uncertainty/cascade.js';
import { DAM_BAND_FIGURES } from '../src/uncertainty/engine.js';
import { defaultUncertaintyParams, zeroVarianceParams, type UncertaintyParams } from '../src/uncertainty/params.js';
import { createRng } from '../src/uncertainty/random.js';
import { makeDam, referenceChannelCol, referenceDams, referenceValley, REFERENCE_VALLEY, sampleGrid, vValley } from './helpers/synthetic.js';
import { colToX, rowToY } from '../src/grid/transform.js';
import { memoryDem } from './helpers/memory-dem.js';


function runParams(u: Partial<UncertaintyParams>): EstimateParams {
  const p = defaultParams();
  p.water = { ...defaultWaterRunParams(), detect: false };
  p.uncertainty = { ...zeroVarianceParams(defaultUncertaintyParams()), ...u };
  return p;
}

async function estimateWithDraws(grid: Grid, dams: DamInput[], p: EstimateParams) {
  const result = await estimatePonds(memoryDem(grid), dams, p);
  const draws = drawBands(result, p);
  if (!draws) throw new Error('no draws');
  return { result, draws };
}

/** The reference valley's dams plus one between the lower and the upper, and two candidates. */
function cascadeScene(): DamInput[] {
  const t = REFERENCE_VALLEY.transform;
  const across = (row: number, halfM: number): [number, number][][] => {
    const x = colToX(t, referenceChannelCol(row));
    const y = rowToY(t, row + 0.5);
    return [[[x - halfM, y], [x + halfM, y]]];
  };
  const dams = referenceDams();
  dams.push(makeDam({ id: 'middle', index: 3, lines: across(235, 45), heightM: 0.42, upstream: 'left' }));
  dams.push({ ...makeDam({ id: 'maybe', index: 4, lines: across(120, 45), heightM: 0.5, upstream: 'left', status: 'candidate' }), confidence: 0.3 });
  dams.push({ ...makeDam({ id: 'likely', index: 5, lines: across(160, 45), upstream: 'left', status: 'candidate' }), confidence: 0.8 });
  return dams;
}

describe('V-shaped valley, measured height H ~ Normal(1 m, 0.1 m)', () => {
  // Analytic pond volume V = m·H³/(3S) (derived in tests/ponds-analytic.test.ts), monotone in H,
  // so V's 5th and 95th percentiles are V at H's: H = 1 ∓ 1.645·0.1 m.
  it('p05 and p95 of the volume equal m·H³/(3S) at H\'s p05 and p95, within the Monte Carlo error', async () => {
    const m = 10;
    const S = 0.01;
    const cellM = 0.5;
    const damRow = 330;
    const grid = vValley({ width: 71, height: damRow + 20, cellM, damRow }, m, S);
    const dam = makeDam({ id: 'v', lines: [[[-17, 0], [17, 0]]], heightM: 1, upstream: 'left' });
    const p = runParams({ draws: 2001, seed: 9, heightError: true, heightSurveySdM: 0.1 });
    const { result, draws } = await estimateWithDraws(grid, [dam], p);
    expect(result.dams[0]!.limited_by).toBe('crest');
    const N = draws.outcome.draws;
    const v = draws.outcome.damVolumeM3.slice(0, N).sort();
    const analytic = (h: number): number => (m * h ** 3) / (3 * S);
    for (const [q, z] of [[0.05, -1.6448536], [0.95, 1.6448536]] as const) {
      const ci = percentileStandardError(v, q);
      const target = analytic(1 + z * 0.1);
      // Within the order-statistic interval, widened by the grid's own 2 % (tests/ponds-analytic.test.ts).
      expect(target).toBeGreaterThan(ci.low * 0.98);
      expect(target).toBeLessThan(ci.high * 1.02);
    }
    const band = result.dams[0]!.bands!;
    const h = draws.outcome.damVolumeM3; // the same draws the band summarises
    expect(band.volume_m3!.p50).toBeGreaterThan(0);
    expect(h.length).toBe(N);
    expect(Math.abs(band.height_m!.p05 - (1 - 1.6448536 * 0.1))).toBeLessThan(0.01);
    expect(Math.abs(band.height_m!.p95 - (1 + 1.6448536 * 0.1))).toBeLessThan(0.01);
  });
});

describe('zero variance and per-draw sums on a cascade', () => {
  it('with every source off, every band equals the deterministic figure exactly', async () => {
    const grid = referenceValley();
    const p = runParams({ draws: 64, seed: 3 });
    const { result, draws } = await estimateWithDraws(grid, cascadeScene(), p);
    expect(result.drawInputs!.clusters.length).toBeGreaterThan(0);
    let checked = 0;
    for (const d of result.dams) {
      if (!d.estimated) continue;
      const b = d.bands!;
      const det: Record<string, number> = {
        height_m: d.height_m!,
        water_level_m: d.water_level_m!,
        area_m2: d.area_m2,
        volume_m3: d.volume_m3,
        max_depth_m: d.max_depth_m,
        mean_depth_m: d.mean_depth_m,
        standalone_area_m2: d.standalone_area_m2,
        standalone_volume_m3: d.standalone_volume_m3,
      };
      for (const f of DAM_BAND_FIGURES) {
        for (const stat of ['p05', 'p50', 'p95', 'mean'] as const) expect(b[f]![stat]).toBe(det[f]);
        checked++;
      }
    }
    expect(checked).toBe(6 * DAM_BAND_FIGURES.length);
    const t = draws.totalsBands;
    for (const stat of ['p05', 'p50', 'p95', 'mean'] as const) {
      expect(t.storage_m3![stat]).toBe(result.totals.storage_m3);
      expect(t.inundated_area_m2![stat]).toBe(result.totals.inundated_area_m2);
      expect(t.dams_in_totals![stat]).toBe(result.totals.dams_in_totals);
    }
  });

  it('with every source on, each draw\'s totals are the sums of its dams (in row order, exactly)', async () => {
    const grid = referenceValley();
    const p = runParams({ ...defaultUncertaintyParams(), draws: 300, seed: 4, demErrorRangeM: 30 });
    const { result, draws } = await estimateWithDraws(grid, cascadeScene(), p);
    const o = draws.outcome;
    const N = o.draws;
    let spread = 0;
    for (let k = 0; k < N; k++) {
      let v = 0;
      let a = 0;
      let n = 0;
      for (let d = 0; d < result.dams.length; d++) {
        v += o.damVolumeM3[d * N + k]!;
        a += o.damAreaM2[d * N + k]!;
        n += o.included[d * N + k]!;
      }
      expect(o.totals.storage_m3![k]).toBe(v);
      expect(o.totals.inundated_area_m2![k]).toBe(a);
      expect(o.totals.dams_in_totals![k]).toBe(n);
      spread += Math.abs(v - result.totals.storage_m3);
    }
    expect(spread).toBeGreaterThan(0);
  });
});

describe('cascades per draw', () => {
  it('equal the deterministic water-surface combination (ponds/combine.ts) at random levels and inclusions', async () => {
    const grid = referenceValley();
    const p = runParams({ draws: 1, seed: 1, heightError: true });
    const result = await estimatePonds(memoryDem(grid), cascadeScene(), p);
    const inputs = result.drawInputs!;
    const cluster = inputs.clusters.find((c) => c.members.length >= 3)!;
    expect(cluster).toBeDefined();
    expect(cluster.reach.some((r) => r > 2)).toBe(true);
    const M = cluster.members.length;
    const scratch = createCascadeScratch(cluster);
    const draw = { levelM: new Float64Array(M), included: new Uint8Array(M), areaM2: new Float64Array(M), volumeM3: new Float64Array(M), maxDepthM: new Float64Array(M) };
    const rng = createRng(21);
    let contested = 0;
    for (let trial = 0; trial < 300; trial++) {
      for (let q = 0; q < M; q++) {
        const inp = inputs.dams[cluster.members[q]!]!;
        draw.levelM[q] = inp.crestElevM - 0.4 + 1.0 * rng();
        draw.included[q] = rng() < 0.85 ? 1 : 0;
      }
      // Every tenth trial: one level for all, so ties decide (the lower member keeps the water).
      if (trial % 10 === 0) draw.levelM.fill(draw.levelM[0]!);
      combineCascade(cluster, inputs.dams, draw, scratch);
      const layers = [];
      const index: number[] = [];
      for (let q = 0; q < M; q++) {
        if (draw.included[q] === 0) continue;
        const fill = inputs.dams[cluster.members[q]!]!.fill;
        layers.push({ fill, waterLevelM: draw.levelM[q]! });
        index.push(q);
      }
      const ref = combinePonds(grid, layers);
      let sumOwn = 0;
      ref.perPond.forEach((share, j) => {
        const q = index[j]!;
        expect(Math.abs(draw.areaM2[q]! - share.areaM2)).toBeLessThan(1e-6);
        expect(Math.abs(draw.volumeM3[q]! - share.volumeM3)).toBeLessThan(1e-6 * Math.max(1, share.volumeM3));
        expect(Math.abs(draw.maxDepthM[q]! - share.maxDepthM)).toBeLessThan(1e-9);
        sumOwn += share.volumeM3;
      });
      for (let q = 0; q < M; q++) if (draw.included[q] === 0) expect(draw.volumeM3[q]).toBe(0);
      let standalone = 0;
      for (const l of layers) {
        const own = combinePonds(grid, [l]);
        standalone += own.totalVolumeM3;
      }
      if (standalone > sumOwn + 1e-6) contested++;
    }
    // Many of the trials had water two ponds shared.
    expect(contested).toBeGreaterThan(100);
  });
});

describe('candidates and recall', () => {
  const m = 10;
  const S = 0.01;
  const grid = vValley({ width: 71, height: 350, cellM: 0.5, damRow: 330 }, m, S);
  const lines = (yM: number): [number, number][][] => [[[-17, yM], [17, yM]]];

  it('a candidate counts in a share of draws equal to its confidence, within binomial error', async () => {
    const dams = [
      makeDam({ id: 'sure', index: 0, lines: lines(0), heightM: 0.5, upstream: 'left' }),
      { ...makeDam({ id: 'maybe', index: 1, lines: lines(80), heightM: 0.4, upstream: 'left', status: 'candidate' }), confidence: 0.3 },
    ];
    const p = runParams({ draws: 4000, seed: 17, candidates: true });
    const { draws } = await estimateWithDraws(grid, dams, p);
    const N = draws.outcome.draws;
    let inSure = 0;
    let inMaybe = 0;
    for (let k = 0; k < N; k++) {
      inSure += draws.outcome.included[k]!;
      inMaybe += draws.outcome.included[N + k]!;
    }
    expect(inSure).toBe(N);
    // Binomial(N, 0.3): standard deviation √(N·p·(1 − p)).
    expect(Math.abs(inMaybe - 0.3 * N)).toBeLessThan(4 * Math.sqrt(N * 0.3 * 0.7));
  });

  it('--recall R: missed dams per draw average n(1 − R)/R and carry a found dam\'s water of the same draw', async () => {
    const dams = [makeDam({ id: 'only', index: 0, lines: lines(0), heightM: 0.6, upstream: 'left' })];
    const p = runParams({ draws: 3000, seed: 23, heightError: true, recall: 0.5, recallSd: 0 });
    const { draws } = await estimateWithDraws(grid, dams, p);
    const o = draws.outcome;
    const N = o.draws;
    let missed = 0;
    for (let k = 0; k < N; k++) {
      const mk = o.totals.missing_dams![k]!;
      missed += mk;
      // One found dam: each missed dam is a copy of it in the same draw.
      expect(o.totals.missing_storage_m3![k]).toBeCloseTo(mk * o.damVolumeM3[k]!, 6);
      expect(o.totals.storage_m3![k]).toBe(o.damVolumeM3[k]! + o.totals.missing_storage_m3![k]!);
    }
    // Negative binomial with n = 1, R = 0.5: mean 1, variance n(1 − R)/R² = 2.
    expect(Math.abs(missed / N - 1)).toBeLessThan(4 * Math.sqrt(2 / N));
  });
});

describe('a dam near the height at which it counts as visible in the DEM', () => {
  // A mound across a 1 % valley (the DEM-visible dam of tests/ponds-crest.test.ts); the rule counts it from 0.3 m (DEFAULT_POND_PARAMS).
  const frame = { width: 61, height: 120, cellM: 0.5, damRow: 100 };
  const mound = (heightM: number): Grid => sampleGrid(frame, (x, y) => 0.01 * y + Math.abs(x) / 10 + (Math.abs(y) <= 0.5 ? heightM : 0));
  const dam = makeDam({ id: 'v', lines: [[[-14, 0], [14, 0]]], heightM: 1 });
  const codes = async (heightM: number, demError: boolean): Promise<string[]> => {
    const p = runParams({ demError, demRmseM: 0.1, demRmseFrom: 'option', draws: 10 });
    return (await estimatePonds(memoryDem(mound(heightM)), [dam], p)).warnings.map((w) => w.code);
  };
  it('is flagged when the DEM error is drawn and it stands within two sd of the crest–toe error difference of that height, either side', async () => {
    expect(DEFAULT_POND_PARAMS.demVisibleMinM).toBe(0.3);
    // Crest and toe lie the 3 m probe apart: sd = √(2·γ(3 m)) = 0.042 m for σ = 0.1 m and the default 50 m range (spherical model).
    expect(DEFAULT_POND_PARAMS.probeM).toBe(3);
    // 0.35 m (visible, 0.05 m above) and 0.27 m (not visible, 0.03 m below).
    expect(await codes(0.35, true)).toContain('visibility-near-threshold');
    expect(await codes(0.27, true)).toContain('visibility-near-threshold');
    // Not without the DEM error, nor 0.15 m clear of the threshold.
    expect(await codes(0.35, false)).not.toContain('visibility-near-threshold');
    expect(await codes(0.45, true)).not.toContain('visibility-near-threshold');
  });
});
