/**
 * Influence-zone bands: the riparian summed-area tables against recomputing
 * the zone with the drawn limits, the triangular draws against their
 * analytic moments, and a run folder's influence bands and draws.csv rows.
 */
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { influenceZone } from '../src/influence/zone.js';
import { buildRiparianTables, riparianAreaAt, riparianErrorBoundM2 } from '../src/influence/riparian-table.js';
import { crsFromEpsg } from '../src/io/crs.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { parseDrawsCsv } from '../src/io/compare-inputs.js';
import { drawSeries } from '../src/compare/draws.js';
import { influencePerDraw } from '../src/pipeline/influence-draws.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { defaultUncertaintyParams, zeroVarianceParams, type UncertaintyParams } from '../src/uncertainty/params.js';
import { createRng } from '../src/uncertainty/random.js';
import { drawRiparianLimits, triangular } from '../src/uncertainty/riparian-draws.js';

/** n × n cells of 1 m, z from map coordinates (cell (mid, mid) at 0, 0); two disc ponds, owners 1 and 2. */
function twoPonds(n: number, zOf: (x: number, y: number) => number): { grid: Grid; level: Float32Array; owner: Int32Array; valley: Uint8Array } {
  const mid = (n - 1) / 2;
  const z = new Float32Array(n * n);
  const level = new Float32Array(n * n).fill(NaN);
  const owner = new Int32Array(n * n);
  const valley = new Uint8Array(n * n);
  for (let r = 0; r < n; r++) {
    for (let c = 0; c < n; c++) {
      const i = r * n + c;
      const x = c - mid;
      const y = mid - r;
      z[i] = zOf(x, y);
      valley[i] = y > -70 ? 1 : 0; // a valley edge across the south
      if (Math.hypot(x + 40, y) <= 15) {
        level[i] = 100.2;
        owner[i] = 1;
      } else if (Math.hypot(x - 45, y - 10) <= 10) {
        level[i] = 100.5;
        owner[i] = 2;
      }
    }
  }
  const half = n / 2;
  return { grid: makeGrid({ width: n, height: n, z, transform: { x0: -half, y0: half, dx: 1, dy: -1 } }), level, owner, valley };
}

const REACH = { distanceMinM: 25, distanceMaxM: 75, riseMinM: 0.9, riseMaxM: 1.2 };

describe('riparian summed-area tables', () => {
  // A gently rising, rolling surface so both limits bind somewhere between their low and high values.
  const scene = twoPonds(261, (x, y) => 100 + 0.012 * Math.hypot(x, y) + 0.3 * Math.sin(x / 9) * Math.cos(y / 13));
  const det = influenceZone(scene.grid, scene.level, { distanceM: 50, riseM: 1, valleyBottom: scene.valley, owner: scene.owner, candidates: { distanceMaxM: 75, riseMaxM: 1.2 } });
  const tables = buildRiparianTables({ candidates: det.candidates!, width: scene.grid.width, cellAreaM2OfRow: scene.grid.cellAreaM2, owners: 3, distanceM: 50, riseM: 1, ...REACH });

  it('at the run\'s own limits equal the zone exactly (1 m cells: whole square metres)', () => {
    for (const o of [1, 2]) {
      expect(det.byOwner!.riparianAreaM2[o]!).toBeGreaterThan(1000);
      expect(riparianAreaAt(tables, o, 50, 1)).toBe(det.byOwner!.riparianAreaM2[o]!);
      expect(riparianErrorBoundM2(tables, o, 50, 1)).toBe(0);
    }
  });

  it('match influenceZone recomputed with drawn limits within 1 %, and within the stated error bound', () => {
    const rng = createRng(7);
    let worst = 0;
    for (let k = 0; k < 30; k++) {
      const D = 25 + 50 * rng();
      const dz = 0.9 + 0.3 * rng();
      // Reference: the zone computed from scratch with these limits.
      const ref = influenceZone(scene.grid, scene.level, { distanceM: D, riseM: dz, valleyBottom: scene.valley, owner: scene.owner });
      for (const o of [1, 2]) {
        const exact = ref.byOwner!.riparianAreaM2[o]!;
        const got = riparianAreaAt(tables, o, D, dz);
        expect(Math.abs(got - exact)).toBeLessThanOrEqual(riparianErrorBoundM2(tables, o, D, dz) + 1e-9);
        worst = Math.max(worst, Math.abs(got - exact) / exact);
      }
    }
    expect(worst).toBeLessThan(0.01);
  });

  it('on flat ground a disc pond of radius r gets π((r + D)² − r²) for any D (circle area, within 2 %)', () => {
    const flat = twoPonds(261, () => 100);
    const zone = influenceZone(flat.grid, flat.level, { distanceM: 50, riseM: 1, owner: flat.owner, candidates: { distanceMaxM: 75, riseMaxM: 1.2 } });
    const t = buildRiparianTables({ candidates: zone.candidates!, width: flat.grid.width, cellAreaM2OfRow: flat.grid.cellAreaM2, owners: 3, distanceM: 50, riseM: 1, ...REACH });
    // Pond 2 (r = 10 m) is 45 m east of the centre; at D ≤ 30 m its fringe is a full ring clear of pond 1's (whose edge is 70 m away).
    for (const D of [26, 28.3, 30]) {
      const ring = Math.PI * ((10 + D) ** 2 - 10 ** 2);
      expect(Math.abs(riparianAreaAt(t, 2, D, 1.1) - ring) / ring).toBeLessThan(0.02);
    }
  });

  it('a dam-draw at the run\'s limits takes the deterministic riparian area bit for bit; an excluded dam has none', () => {
    const N = 3;
    const damArea = new Float64Array([100.25, 100.25, 100.25, 7, 7, 7]);
    const included = new Uint8Array([1, 1, 1, 1, 0, 1]);
    const rip = new Float64Array([0.1 + 0.2, 12345.678]);
    const out = influencePerDraw(tables, rip, damArea, included, N, 2, { distanceM: new Float64Array([50, 50, 60]), riseM: new Float64Array([1, 1, 1]) }, 50, 1);
    expect(out[0]).toBe(100.25 + (0.1 + 0.2));
    expect(out[3]).toBe(7 + 12345.678);
    expect(out[4]).toBe(0);
    expect(out[2]).toBe(100.25 + riparianAreaAt(tables, 1, 60, 1));
  });
});

describe('riparian limit draws', () => {
  it('triangular draws have the analytic mean (a + b + c)/3 and variance (a² + b² + c² − ab − ac − bc)/18 (triangular distribution moments)', () => {
    const rng = createRng(11);
    const r = { lowM: 0.9, modeM: 1.0, highM: 1.2 };
    const n = 40000;
    let s = 0;
    let s2 = 0;
    for (let k = 0; k < n; k++) {
      const v = triangular(rng, r);
      expect(v).toBeGreaterThanOrEqual(0.9);
      expect(v).toBeLessThanOrEqual(1.2);
      s += v;
      s2 += v * v;
    }
    const mean = s / n;
    const variance = s2 / n - mean * mean;
    const a = 0.9, b = 1.0, c = 1.2;
    const trueVar = (a * a + b * b + c * c - a * b - a * c - b * c) / 18;
    expect(Math.abs(mean - (a + b + c) / 3)).toBeLessThan(4 * Math.sqrt(trueVar / n));
    expect(Math.abs(variance / trueVar - 1)).toBeLessThan(0.05);
  });

  it('are keyed by seed (same seed, same limits) and keep the run\'s limits when switched off', () => {
    const u = { ...defaultUncertaintyParams(), draws: 50, seed: 9 };
    const a = drawRiparianLimits(u, 50, 1);
    const b = drawRiparianLimits({ ...u, heightError: false }, 50, 1);
    expect(Array.from(a.distanceM)).toEqual(Array.from(b.distanceM));
    expect(Math.min(...a.distanceM)).toBeGreaterThanOrEqual(25);
    expect(Math.max(...a.distanceM)).toBeLessThanOrEqual(75);
    const off = drawRiparianLimits(zeroVarianceParams(u), 50, 1);
    expect(off.distanceM.every((v) => v === 50) && off.riseM.every((v) => v === 1)).toBe(true);
  });
});

describe('influence bands in a run folder', () => {
  let dir: string;
  // A ring-shaped crest (radius 41 m) on ground that rises 3 cm per metre beyond 45 m from its centre, and a valley-bottom polygon over the DEM.
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'pondage-influence-bands-'));
    const n = 240;
    const x0 = 500_000;
    const y0 = 4_400_000;
    const z = new Float32Array(n * n);
    for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) z[r * n + c] = 100 + 0.03 * Math.max(0, Math.hypot(c + 0.5 - n / 2, n / 2 - r - 0.5) - 45);
    await writeGeoTiff(join(dir, 'dem.tif'), { width: n, height: n, data: z, transform: { x0: x0 - n / 2, y0: y0 + n / 2, dx: 1, dy: -1 }, crs: crsFromEpsg(32612), noData: -9999, zUnit: 'metre' });
    const ring: [number, number][] = [];
    for (let k = 0; k <= 144; k++) ring.push([x0 + 41 * Math.cos((2 * Math.PI * k) / 144), y0 + 41 * Math.sin((2 * Math.PI * k) / 144)]);
    await writeFile(join(dir, 'dams.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: { id: 'ring', height_m: 0.5, upstream: 'left' }, geometry: { type: 'LineString', coordinates: ring } }] }));
    const h = n / 2 - 2;
    const box = [[x0 - h, y0 - h], [x0 + h, y0 - h], [x0 + h, y0 + h], [x0 - h, y0 + h], [x0 - h, y0 - h]];
    await writeFile(join(dir, 'valley.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [box] } }] }));
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  async function run(name: string, u: UncertaintyParams): Promise<Summary> {
    const params = defaultParams();
    params.uncertainty = u;
    const { summary } = await runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), damsCrs: 'EPSG:32612', valleyBottomPath: join(dir, 'valley.geojson'), valleyBottomCrs: 'EPSG:32612', outDir: join(dir, name), params });
    return summary;
  }

  it('zero variance reproduces the deterministic influence areas exactly on totals, watersheds and dams', async () => {
    const s = await run('zero', zeroVarianceParams({ ...defaultUncertaintyParams(), draws: 20 }));
    const t = s.totals as unknown as { influence_area_m2: number; bands: Record<string, { p05: number; p95: number; mean: number }> };
    expect(t.influence_area_m2).toBeGreaterThan(0);
    expect(t.bands['influence_area_m2']).toEqual({ p05: t.influence_area_m2, p50: t.influence_area_m2, p95: t.influence_area_m2, mean: t.influence_area_m2 });
    for (const w of s.watersheds ?? []) expect(w.bands?.['influence_area_m2']?.p50).toBe(w.influence_area_m2);
    for (const d of s.dams) if (d.bands) expect(d.bands['influence_area_m2']?.mean).toBe(d.influence_area_m2);
  });

  it('with the limits drawn: bands on every object, dams.csv and watersheds.csv columns, and draws.csv rows that add up', async () => {
    const u = { ...zeroVarianceParams({ ...defaultUncertaintyParams(), draws: 200, seed: 3 }), riparianDistanceDraws: true, riparianRiseDraws: true };
    const s = await run('drawn', u);
    const tb = (s.totals as unknown as { bands: Record<string, { p05: number; p95: number }> }).bands;
    expect(tb["influence_area_m2"]!.p95).toBeGreaterThan(tb['influence_area_m2']!.p05);
    expect(tb['influence_area_ha']).toBeDefined();
    expect(s.uncertainty?.sources.map((x) => x.name)).toEqual(expect.arrayContaining(['riparian_distance', 'riparian_rise']));
    const damsCsv = await readFile(join(dir, 'drawn', 'dams.csv'), 'utf8');
    expect(damsCsv.split('\n')[0]).toContain('influence_area_m2_p05');
    const wsCsv = await readFile(join(dir, 'drawn', 'watersheds.csv'), 'utf8');
    expect(wsCsv.split('\n')[0]).toContain('influence_area_m2_p95');
    const table = parseDrawsCsv(await readFile(join(dir, 'drawn', 'draws.csv'), 'utf8'), 'draws.csv');
    const total = drawSeries(table, 'total', '', 'influence_area_m2')!;
    expect(total).not.toBeNull();
    for (let k = 0; k < table.count; k++) {
      let byDam = 0;
      for (const d of s.dams) byDam += drawSeries(table, 'dam', d.id, 'influence_area_m2')![k]!;
      let byWs = 0;
      for (const w of s.watersheds ?? []) byWs += drawSeries(table, 'watershed', w.id, 'influence_area_m2')![k]!;
      expect(byDam).toBe(total[k]!); // summed in the same dam order
      expect(Math.abs(byWs - total[k]!)).toBeLessThanOrEqual(1e-9 * total[k]!);
    }
  });
});
