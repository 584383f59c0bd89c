/**
 * A dam standing in the water of the pond below it, as a lidar DEM records
 * it: the lower pond flattened at its level (a little below its crest) over
 * the upper dam's crest and on upstream, so the DEM shows the water's
 * surface, not the bed, where the upper dam crosses the channel.
 */
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Grid } from '../src/grid/grid.js';
import { crsFromEpsg } from '../src/io/crs.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { runTable } from '../src/cli/table.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { defaultUncertaintyParams } from '../src/uncertainty/params.js';
import { createRng, normal } from '../src/uncertainty/random.js';
import { makeDam, vValley } from './helpers/synthetic.js';
import { addNoise, flattenPond } from './helpers/water-scenes.js';

const EPSG = 32612;
const X0 = 500_000;
const Y0 = 4_400_000;
/** V-shaped valley z = S·y + |x|/m, 1 m cells; y upstream from the lower dam. */
const M = 10;
const S = 0.01;
/** Lower dam: 1.0 m high at y = 0, its pond flattened 5 cm below the crest (as the demo does). */
const LOWER_H = 1;
const FREEBOARD_M = 0.05;
const LEVEL = LOWER_H - FREEBOARD_M;
/** The head dam's crest line reaches the ground this far above its bed (1.0 m high, water at 1.5 m). */
const HEAD_REACH_M = 1.05;
/** Upper dam at y = 20 m (bed 0.20 m), 0.30 m high: its crest (0.50 m) stands a few decimetres under the water. */
const UPPER_Y = 20;
const UPPER_H = 0.3;
// USGS Lidar Base Specification, quality level 2: RMSEz 10 cm.
const QL2_RMSE_M = 0.1;

let dir: string;
/** In the noisy scene: today's level, and the upper dam's crest on the ground before the water (lowest crest cell + height), m. */
let noisyLevelM: number;
let upperCrestDryM: number;

/** Room for every pond of the tests, up to 2.1 m above the lower dam's bed. */
function valley(): Grid {
  const damRow = Math.ceil(2.1 / S) + 10;
  return vValley({ width: 2 * Math.ceil(M * 2.1) + 1, height: damRow + 20, cellM: 1, damRow }, M, S);
}

async function writeDem(path: string, g: Grid): Promise<void> {
  const t = g.transform;
  await writeGeoTiff(path, {
    width: g.width,
    height: g.height,
    data: g.z,
    transform: { x0: t.x0 + X0, y0: t.y0 + Y0, dx: t.dx, dy: t.dy },
    crs: crsFromEpsg(EPSG),
    noData: -9999,
    zUnit: 'metre',
  });
}

/** A crest across the valley at y (local metres), reaching the ground `reachM` above the bed there, as a mapper draws it. */
function crest(id: string, yM: number, reachM: number, props: Record<string, unknown>): object {
  const half = M * reachM + 0.5;
  return {
    type: 'Feature',
    properties: { id, upstream: 'left', ...props },
    geometry: { type: 'LineString', coordinates: [[X0 - half, Y0 + yM], [X0 + half, Y0 + yM]] },
  };
}

async function run(name: string, dem: string, dams: object[], opts: { draws?: number; model?: 'power-law' | 'reconstructed' } = {}): Promise<Summary> {
  const damsPath = join(dir, `${name}-dams.geojson`);
  await writeFile(damsPath, JSON.stringify({ type: 'FeatureCollection', features: dams }));
  const params = defaultParams();
  params.water = { ...defaultWaterRunParams(), belowModel: opts.model ?? 'power-law' };
  params.uncertainty = opts.draws ? { ...defaultUncertaintyParams(), draws: opts.draws } : undefined;
  params.influence = undefined;
  await runEstimate({ demPaths: [dem], damsPath, damsCrs: `EPSG:${EPSG}`, outDir: join(dir, name), params });
  return JSON.parse(await readFile(join(dir, name, 'summary.json'), 'utf8')) as Summary;
}

const lower = crest('lower', 0, LOWER_H + 0.5, { height_m: LOWER_H });
const upper = crest('upper', UPPER_Y, UPPER_H, { height_m: UPPER_H });

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-drowned-'));
  const dry = valley();
  const dam = makeDam({ id: 'lower', lines: [[[-M * (LOWER_H + 0.5), 0], [M * (LOWER_H + 0.5), 0]]], heightM: LOWER_H, upstream: 'left' });
  // Lidar: the ground with its noise, the water at its level 5 cm below the crest (the bed the lowest crest cell,
  // as the pipeline takes it) with the same noise. The upper dam's crest stands below that level, so the water
  // stands over it and on upstream.
  const ground = addNoise(dry, QL2_RMSE_M, 7);
  const bedM = flattenPond(ground, dam, 0).setup.bedElevM;
  noisyLevelM = bedM + LOWER_H - FREEBOARD_M;
  const up = makeDam({ id: 'upper', lines: [[[-M * UPPER_H - 0.5, UPPER_Y], [M * UPPER_H + 0.5, UPPER_Y]]], heightM: UPPER_H, upstream: 'left' });
  upperCrestDryM = flattenPond(ground, up, 0).setup.bedElevM + UPPER_H;
  const scene = flattenPond(ground, dam, noisyLevelM);
  const rng = createRng(8);
  for (const i of scene.waterCells) scene.wet.z[i] = scene.wet.z[i]! + QL2_RMSE_M * normal(rng);
  await writeDem(join(dir, 'wet.tif'), scene.wet);

  // Its crest at the pond's head instead: the upper dam, 1.0 m high at y = 60 m (bed 0.60 m, crest 1.60 m),
  // holds its own pond at 1.50 m; the lower pond's water (0.95 m) reaches over its crest line (a thin dam
  // the lidar does not show), not beyond. Hydro-flattened (noise-free).
  const wetLower = flattenPond(dry, dam, LEVEL).wet;
  await writeDem(join(dir, 'flat.tif'), wetLower);
  const head = makeDam({ id: 'head', lines: [[[-M * HEAD_REACH_M - 0.5, 60], [M * HEAD_REACH_M + 0.5, 60]]], heightM: 1, upstream: 'left' });
  await writeDem(join(dir, 'head.tif'), flattenPond(wetLower, head, 1.5).wet);
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('a dam whose crest stands in the water of the pond below it', () => {
  let both: Summary;
  let alone: Summary;
  beforeAll(async () => {
    both = await run('both', join(dir, 'wet.tif'), [lower, upper]);
    alone = await run('alone', join(dir, 'wet.tif'), [lower]);
  });

  it('is drowned by that dam: no water of its own, no spill round a crest set on the water surface', () => {
    // The scene is what the check needs: the upper crest stands under today's water by more than the noise.
    expect(noisyLevelM - upperCrestDryM).toBeGreaterThan(2 * QL2_RMSE_M);
    const u = both.dams.find((d) => d.id === 'upper')!;
    const l = both.dams.find((d) => d.id === 'lower')!;
    expect(l.water_surface_check).toBe('found');
    expect(u.drowned_by).toBe('lower');
    expect(u.water_surface_check).toBe('drowned');
    expect(u.limited_by).toBe('crest');
    expect([u.area_m2, u.volume_m3, u.standalone_area_m2, u.standalone_volume_m3]).toEqual([0, 0, 0, 0]);
    // Its crest is at or below the water it stands in (an upper bound), its bed its height below.
    expect(u.crest_elev_m).toBe(l.water_surface_elev_m);
    expect(u.bed_elev_m! + u.height_m!).toBeCloseTo(u.crest_elev_m!, 9);
    const mine = both.warnings.filter((w) => w.dam_id === 'upper').map((w) => w.code);
    expect(mine).toContain('crest-in-standing-water');
    // The printed table says where its water went, not 'crest' with nothing behind it.
    const row = runTable(both).split('\n').find((r) => r.startsWith('upper'))!;
    expect(row).toContain('under lower');
    expect(runTable(both)).toContain('under X: the crest stands under the pond of dam X');
    expect(mine).not.toContain('spills-around-crest');
    expect(u.warnings.some((w) => w.includes('water escapes'))).toBe(false);
  });

  it('changes nothing for the dam below nor the totals (invariant: a drowned dam adds no water)', () => {
    const l = both.dams.find((d) => d.id === 'lower')!;
    const a = alone.dams[0]!;
    expect([l.area_m2, l.volume_m3, l.water_surface_area_m2, l.volume_below_surface_m3]).toEqual([a.area_m2, a.volume_m3, a.water_surface_area_m2, a.volume_below_surface_m3]);
    expect(both.totals.storage_m3).toBe(alone.totals.storage_m3);
    expect(both.totals.inundated_area_m2).toBe(alone.totals.inundated_area_m2);
    expect(both.totals.dams_with_water_surface).toBe(1);
  });

  it('holds the analytic pond of the dam below, whole: V = m·H³/(3S) on a V-shaped valley, within 3 % (hydro-flattened, rebuilt bed)', async () => {
    // A pond standing H above the bed at the dam of z = S·y + |x|/m has the cross-section m·(H − S·y)² at y, so
    // V = ∫₀^{H/S} m·(H − S·y)² dy = m·H³/(3S). Without noise the upper dam's lowest crest cell is the water
    // surface exactly, and its crest set from it (0.95 + 0.30 m) would stand above the lower crest.
    const s = await run('rebuilt', join(dir, 'flat.tif'), [lower, upper], { model: 'reconstructed' });
    const l = s.dams.find((d) => d.id === 'lower')!;
    const u = s.dams.find((d) => d.id === 'upper')!;
    expect(l.bed_source).toBe('reconstructed');
    expect(l.crest_elev_m).toBeCloseTo(LOWER_H, 9);
    expect(u.drowned_by).toBe('lower');
    expect(u.volume_m3).toBe(0);
    const analytic = (M * LOWER_H ** 3) / (3 * S);
    expect(Math.abs(s.totals.storage_m3 / analytic - 1)).toBeLessThan(0.03);
  });

  it('holds no water in any Monte Carlo draw either, and leaves the bands of the totals as they are', async () => {
    const withDraws = await run('draws-both', join(dir, 'wet.tif'), [lower, upper], { draws: 200 });
    const aloneDraws = await run('draws-alone', join(dir, 'wet.tif'), [lower], { draws: 200 });
    const u = withDraws.dams.find((d) => d.id === 'upper')!;
    expect(u.bands?.['volume_m3']?.p95).toBe(0);
    expect(u.bands?.['area_m2']?.p95).toBe(0);
    expect(withDraws.totals.bands?.['storage_m3']).toEqual(aloneDraws.totals.bands?.['storage_m3']);
  });
});

describe('a dam at the head of the pond below it', () => {
  it("keeps its own pond, warned that its lowest crest cell is the lower pond's water surface, not its bed", async () => {
    const s = await run('head', join(dir, 'head.tif'), [lower, crest('head', 60, HEAD_REACH_M, { height_m: 1 })]);
    const h = s.dams.find((d) => d.id === 'head')!;
    expect(h.drowned_by).toBeNull();
    expect(h.water_surface_check).toBe('found');
    expect(h.water_surface_elev_m).toBeCloseTo(1.5, 6);
    expect(s.warnings.filter((w) => w.dam_id === 'head').map((w) => w.code)).toContain('bed-in-standing-water');
    // The lower dam's row keeps its water up to the head dam's crest.
    const l = s.dams.find((d) => d.id === 'lower')!;
    expect(l.water_surface_elev_m).toBeCloseTo(LEVEL, 6);
  });
});
