/**
 * The proposed-structures scenario in summary.json: the existing totals stay
 * as they were, and `scenarios.with_proposed` combines the existing ponds with
 * the proposed ones over the same fills.
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DamResult } from '../src/pipeline/result.js';
import { ScenarioTally } from '../src/pipeline/scenarios.js';
import type { Summary } from '../src/pipeline/summary.js';
import { pondStats } from '../src/ponds/stage-storage.js';
import { analyticVolumeM3, crest, runValley, VALLEY, writeValleyDem } from './helpers/compare-runs.js';
import { fillDam, makeDam, vValley } from './helpers/synthetic.js';

let dir: string;
let summary: Summary;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-scenario-'));
  const dem = await writeValleyDem(dir);
  ({ summary } = await runValley(dir, dem, 'run', [
    crest('old', 0, { height_m: 0.6, status: 'confirmed' }),
    // 20 m downstream of `old`, 1 m design height: its level stands 0.2 m above old's crest, so it drowns it.
    crest('plan', -20, { height_m: 1.0, status: 'proposed' }),
    // Far upstream, its own pond: adds water without touching the others.
    crest('solo', 200, { height_m: 0.5, status: 'confirmed' }),
    // A proposal with no design height is left out and named.
    crest('sketch', 150, { status: 'proposed' }),
  ]));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('scenarios: existing and with proposed structures', () => {
  it('repeats the existing totals exactly and keeps proposals out of them', () => {
    const s = summary.scenarios!;
    expect(s.existing.storage_m3).toBe(summary.totals.storage_m3);
    expect(s.existing.inundated_area_m2).toBe(summary.totals.inundated_area_m2);
    const old = summary.dams.find((d) => d.id === 'old')!;
    const solo = summary.dams.find((d) => d.id === 'solo')!;
    expect(summary.totals.storage_m3).toBe(old.volume_m3 + solo.volume_m3);
  });

  it('combines the proposed pond with the existing ones: the drowned pond is counted once, in the union', () => {
    const s = summary.scenarios!;
    const plan = summary.dams.find((d) => d.id === 'plan')!;
    const solo = summary.dams.find((d) => d.id === 'solo')!;
    const old = summary.dams.find((d) => d.id === 'old')!;
    // The union of old's and plan's ponds is plan's own pond (it contains old's), so the
    // with-proposed storage is plan's standalone pond plus the untouched solo pond.
    expect(s.with_proposed.storage_m3 / (plan.standalone_volume_m3 + solo.volume_m3)).toBeCloseTo(1, 9);
    expect(s.with_proposed.proposed_counted).toBe(1);
    expect(s.drowned_by_proposed).toEqual([{ id: 'old', drowned_by: 'plan', volume_existing_m3: old.volume_m3, volume_with_proposed_m3: 0 }]);
    // What the design adds is the union's difference: plan's pond minus old's.
    expect(s.added.storage_m3 / (plan.standalone_volume_m3 - old.standalone_volume_m3)).toBeCloseTo(1, 9);
    // Analytic V-valley ponds (V = M·h³/(3S)) at each dam's water depth above the valley line, within 3 %.
    const hPlan = plan.water_level_m! - (100 - 20 * VALLEY.floorSlope);
    expect(Math.abs(plan.standalone_volume_m3 / analyticVolumeM3(hPlan) - 1)).toBeLessThan(0.03);
  });

  it('with-proposed rows sum to the scenario figures and name the proposal without a design height', () => {
    const s = summary.scenarios!;
    let v = 0;
    let a = 0;
    for (const d of s.with_proposed.dams) {
      v += d.volume_m3;
      a += d.area_m2;
    }
    expect(v).toBe(s.with_proposed.storage_m3);
    expect(a).toBe(s.with_proposed.inundated_area_m2);
    expect(s.with_proposed.dams.map((d) => d.id)).toEqual(['old', 'plan', 'solo']);
    expect(s.proposed_left_out.map((p) => p.id)).toEqual(['sketch']);
    expect(s.proposed_left_out[0]!.reason).toMatch(/design height/);
  });

  it('writes each dam crest location: map coordinates in the DEM CRS and lon/lat', () => {
    const solo = summary.dams.find((d) => d.id === 'solo')!;
    // Crest from x' = −25 to +25 m at y' = 200 m: its midpoint is (x0, y0 + 200) in UTM 12N.
    expect(solo.crest_x!).toBeCloseTo(VALLEY.x0, 3);
    expect(solo.crest_y!).toBeCloseTo(VALLEY.y0 + 200, 3);
    expect(solo.crest_lon!).toBeLessThan(-108);
    expect(solo.crest_lon!).toBeGreaterThan(-112); // UTM 12N spans 114°W–108°W; easting 500 000 is its central meridian 111°W
    expect(solo.crest_lon!).toBeCloseTo(-111, 4);
  });
});

describe('scenario tally on one window', () => {
  // V valley (M = 10, S = 0.01) on a 0.5 m grid: an existing dam whose pond already held water
  // (60 m³ below its lidar surface, as the water-surface stage would record it) and a proposed
  // dam 20 m downstream that drowns it.
  const frame = { width: 120, height: 400, cellM: 0.5, damRow: 360 };
  const grid = vValley(frame, 10, 0.01, 100);
  const old = makeDam({ id: 'old', lines: [[[-25, 0], [25, 0]]], heightM: 0.6 });
  const plan = makeDam({ id: 'plan', lines: [[[-25, -15], [25, -15]]], heightM: 1.0, status: 'proposed', index: 1 });
  const fo = fillDam(grid, old).fill;
  const fp = fillDam(grid, plan).fill;

  function result(id: string, status: DamResult['status'], inTotals: boolean, volumeM3: number, belowM3: number): DamResult {
    return {
      id, status, confidence: null, year: null, crest_geometry: 'line', in_totals: inTotals, estimated: true, skip_reason: null,
      crest_elev_m: null, bed_elev_m: null, height_m: null, height_source: 'measured', upstream_side: null, upstream_source: null,
      water_level_m: null, limited_by: 'crest', area_m2: 0, volume_m3: volumeM3, max_depth_m: 0, mean_depth_m: 0,
      standalone_area_m2: 0, standalone_volume_m3: 0, drowned_by: null, crest_length_m: null, cells_visited: 0,
      stage_storage: [], warnings: [], properties: {}, volume_below_surface_m3: belowM3,
    };
  }

  it('keeps water below an existing lidar surface in the with-proposed storage, once', () => {
    const aboveOld = pondStats(grid, fo).volumeM3;
    const r0 = result('old', 'confirmed', true, aboveOld + 60, 60);
    const r1 = result('plan', 'proposed', false, 0, 0);
    const tally = new ScenarioTally(2);
    tally.addGroup(grid, [{ index: 0, result: r0, fill: fo }, { index: 1, result: r1, fill: fp }]);
    const s = tally.finish([r0, r1], { dam_count: 2, dams_estimated: 2, dams_skipped: 0, dams_in_totals: 1, inundated_area_m2: 0, storage_m3: r0.volume_m3 });
    // The union of the two ponds is plan's own pond (it holds old's), plus the 60 m³ under old's surface.
    const union = pondStats(grid, fp).volumeM3;
    expect(s.with_proposed.storage_m3 / (union + 60)).toBeCloseTo(1, 9);
    expect(s.added.storage_m3 / (union - aboveOld)).toBeCloseTo(1, 9);
    expect(s.drowned_by_proposed.map((d) => [d.id, d.drowned_by])).toEqual([['old', 'plan']]);
  });
});
