/**
 * Bands on the proposed-structures scenario: the with-proposed water surface
 * in every draw (uncertainty/scenario-draws.ts) against the deterministic
 * scenario (pipeline/scenarios.ts) at zero variance, against the
 * deterministic water-surface combination (ponds/combine.ts) on the drawn
 * levels, and through draws.csv as `pondage compare` reads it.
 */
import { describe, expect, it } from 'vitest';
import type { DamInput } from '../src/inventory.js';
import { drawsCsv } from '../src/io/draws-csv.js';
import { parseDrawsCsv } from '../src/io/compare-inputs.js';
import { drawSeries } from '../src/compare/draws.js';
import { drawBands } from '../src/pipeline/draws.js';
import { estimatePonds, type EstimateParams } from '../src/pipeline/estimate.js';
import { defaultParams } from '../src/pipeline/run.js';
import { addScenarioBands } from '../src/pipeline/scenario-bands.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { combinePonds } from '../src/ponds/combine.js';
import { pondStats } from '../src/ponds/stage-storage.js';
import { defaultUncertaintyParams, zeroVarianceParams, type UncertaintyParams } from '../src/uncertainty/params.js';
import { fillDam, makeDam, vValley } from './helpers/synthetic.js';
import { memoryDem } from './helpers/memory-dem.js';


function runParams(u: Partial<UncertaintyParams>): EstimateParams {
  const p = defaultParams();
  p.water = { ...defaultWaterRunParams(), detect: false };
  delete p.influence;
  p.uncertainty = { ...zeroVarianceParams(defaultUncertaintyParams()), ...u };
  return p;
}

// V valley (side slope M = 10, floor slope S = 0.01) on a 0.5 m grid. `old` (0.6 m) stands 15 m
// upstream of the proposed `plan` (1.0 m design height), whose level stands about 0.25 m above
// old's crest: plan drowns old. `solo` is far upstream on its own.
const frame = { width: 120, height: 400, cellM: 0.5, damRow: 360 };
const grid = vValley(frame, 10, 0.01, 100);
const across = (yM: number): [number, number][][] => [[[-25, yM], [25, yM]]];
const scene = (): DamInput[] => [
  makeDam({ id: 'old', index: 0, lines: across(0), heightM: 0.6 }),
  makeDam({ id: 'plan', index: 1, lines: across(-15), heightM: 1.0, status: 'proposed' }),
  makeDam({ id: 'solo', index: 2, lines: across(150), heightM: 0.4 }),
];

async function run(u: Partial<UncertaintyParams>, dams: DamInput[] = scene()) {
  const p = runParams(u);
  const result = await estimatePonds(memoryDem(grid), dams, p);
  const draws = drawBands(result, p);
  if (!draws) throw new Error('no draws');
  const scenario = addScenarioBands(result, draws);
  if (!scenario) throw new Error('no scenario draws');
  return { result, draws, scenario };
}

describe('with-proposed scenario per draw', () => {
  it('zero variance on every source reproduces the deterministic scenarios exactly', async () => {
    const { result, draws, scenario } = await run({ draws: 25, seed: 3 });
    const s = result.scenarios!;
    // The scene is what the check needs: plan drowns old, and adds water.
    expect(s.drowned_by_proposed.map((d) => [d.id, d.drowned_by])).toEqual([['old', 'plan']]);
    expect(s.added.storage_m3).toBeGreaterThan(0);
    for (let k = 0; k < 25; k++) {
      expect(scenario.existing.storage_m3[k]).toBe(s.existing.storage_m3);
      expect(scenario.existing.inundated_area_m2[k]).toBe(s.existing.inundated_area_m2);
      expect(scenario.with_proposed.storage_m3[k]).toBe(s.with_proposed.storage_m3);
      expect(scenario.with_proposed.inundated_area_m2[k]).toBe(s.with_proposed.inundated_area_m2);
      expect(scenario.added.storage_m3[k]).toBeCloseTo(s.added.storage_m3, 9);
    }
    for (const [band, value] of [
      [s.existing.bands!.storage_m3!, s.existing.storage_m3],
      [s.with_proposed.bands!.storage_m3!, s.with_proposed.storage_m3],
      [s.with_proposed.bands!.inundated_area_m2!, s.with_proposed.inundated_area_m2],
    ] as const) {
      expect([band.p05, band.p50, band.p95, band.mean]).toEqual([value, value, value, value]);
    }
    expect(s.added.bands!.storage_m3!.p50).toBeCloseTo(s.added.storage_m3, 9);
    // The existing scenario's draws are the totals' draws.
    expect(scenario.existing.storage_m3).toEqual(draws.outcome.totals.storage_m3);
  });

  it('zero variance without proposals: with_proposed repeats the deterministic scenario in every draw', async () => {
    const { result, scenario } = await run({ draws: 10, seed: 3 }, scene().filter((d) => d.status !== 'proposed'));
    const s = result.scenarios!;
    expect(s.with_proposed.proposed_counted).toBe(0);
    for (let k = 0; k < 10; k++) {
      expect(scenario.with_proposed.storage_m3[k]).toBe(s.with_proposed.storage_m3);
      expect(scenario.with_proposed.inundated_area_m2[k]).toBe(s.with_proposed.inundated_area_m2);
    }
  });

  it('with survey error on the heights: with_proposed − existing equals added in every draw, and the existing draws are the totals', async () => {
    const { draws, scenario, result } = await run({ draws: 300, seed: 11, heightError: true });
    const o = draws.outcome;
    let spread = 0;
    for (let k = 0; k < o.draws; k++) {
      expect(scenario.existing.storage_m3[k]).toBe(o.totals.storage_m3![k]);
      expect(scenario.existing.inundated_area_m2[k]).toBe(o.totals.inundated_area_m2![k]);
      const wp = scenario.with_proposed.storage_m3[k]!;
      // added is summed dam by dam (share with proposed − share existing), independently of the two totals.
      expect(Math.abs(wp - scenario.existing.storage_m3[k]! - scenario.added.storage_m3[k]!)).toBeLessThan(1e-9 * wp);
      const wa = scenario.with_proposed.inundated_area_m2[k]!;
      expect(Math.abs(wa - scenario.existing.inundated_area_m2[k]! - scenario.added.inundated_area_m2[k]!)).toBeLessThan(1e-9 * wa);
      spread = Math.max(spread, Math.abs(wp - result.scenarios!.with_proposed.storage_m3));
    }
    // The proposed height is drawn: the with-proposed storage varies.
    expect(spread).toBeGreaterThan(1);
    const b = result.scenarios!.with_proposed.bands!.storage_m3!;
    expect(b.p05).toBeLessThan(b.p50);
    expect(b.p50).toBeLessThan(b.p95);
  });

  it('a proposed pond that drowns an existing one counts the shared water once: each draw equals combinePonds on the drawn levels', async () => {
    const { draws, scenario, result } = await run({ draws: 40, seed: 29, heightError: true });
    const o = draws.outcome;
    const N = o.draws;
    // Reference fills on the whole grid, flooded high enough for every draw.
    const dams = scene();
    const fills = dams.map((d) => fillDam(grid, d, { maxLevelM: 200 }).fill);
    const planStandalone = new Float64Array(N);
    let drownedDraws = 0;
    for (let k = 0; k < 8; k++) {
      const layers = dams.map((_, d) => ({ fill: fills[d]!, waterLevelM: o.levelsM[d * N + k]! }));
      // Reference: ponds/combine.ts, the deterministic combination (each cell's water counted once, in the highest pond).
      const combined = combinePonds(grid, layers);
      expect(scenario.with_proposed.storage_m3[k]! / combined.totalVolumeM3).toBeCloseTo(1, 9);
      expect(scenario.with_proposed.inundated_area_m2[k]! / combined.totalAreaM2).toBeCloseTo(1, 9);
      const withoutPlan = combinePonds(grid, [layers[0]!, layers[2]!]);
      expect(scenario.existing.storage_m3[k]! / withoutPlan.totalVolumeM3).toBeCloseTo(1, 9);
      planStandalone[k] = pondStats(grid, { ...fills[1]!, waterLevelM: layers[1]!.waterLevelM }).volumeM3;
      if (combined.perPond[0]!.volumeM3 === 0) {
        drownedDraws++;
        // Old's pond lies inside plan's: the sum of the two ponds would count old's water twice.
        expect(scenario.with_proposed.storage_m3[k]!).toBeLessThan(scenario.existing.storage_m3[k]! + planStandalone[k]! - 1);
      }
    }
    expect(drownedDraws).toBeGreaterThan(0);
    expect(result.scenarios!.drowned_by_proposed.length).toBe(1);
  });

  it('same seed, same bytes; draws.csv carries the scenario rows that compare reads', async () => {
    const a = await run({ draws: 50, seed: 7, heightError: true });
    const b = await run({ draws: 50, seed: 7, heightError: true });
    const text = (r: typeof a) =>
      drawsCsv({ draws: 50, damIds: r.result.dams.map((d) => d.id), totals: r.draws.outcome.totals, damVolumeM3: r.draws.outcome.damVolumeM3, damAreaM2: r.draws.outcome.damAreaM2, scenarios: r.scenario });
    expect(text(a)).toBe(text(b));
    expect(JSON.stringify(a.result.scenarios)).toBe(JSON.stringify(b.result.scenarios));
    const table = parseDrawsCsv(text(a), 'draws.csv');
    const wp = drawSeries(table, 'scenario', 'with_proposed', 'storage_m3')!;
    const ex = drawSeries(table, 'scenario', 'existing', 'inundated_area_m2')!;
    expect(Array.from(wp)).toEqual(Array.from(a.scenario.with_proposed.storage_m3));
    expect(Array.from(ex)).toEqual(Array.from(a.draws.outcome.totals.inundated_area_m2!));
  });
});
