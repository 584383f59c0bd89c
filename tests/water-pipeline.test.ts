/**
 * Ponds that already hold water, end to end through the files a user gives:
 * a GeoTIFF DEM whose pond is flattened at today's water level, a dam
 * inventory, and optionally a bed DEM or a water mask.
 */
import { spawnSync } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Grid } from '../src/grid/grid.js';
import { crsFromEpsg } from '../src/io/crs.js';
import { openDem, type DemSource } from '../src/io/dem.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { openWaterInputs, type WaterInputs } from '../src/io/water-inputs.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';
import { generateBenchScene } from '../src/demo/index.js';
import { writeSceneInputs } from '../src/io/write-scene.js';
import { volumeBelow } from '../src/ponds/below-surface.js';
import { makeDam, vValley } from './helpers/synthetic.js';
import { flattenPond } from './helpers/water-scenes.js';

const EPSG = 32612;
const X0 = 500_000;
const Y0 = 4_400_000;
const CELL = 0.5;
const M = 10;
const S = 0.01;
const CREST_HALF_M = 17;
/** Today's water level over a bed at 0 at the dam; between the DEM's cell values, as real levels are. */
const LEVEL = 0.6871;

let dir: string;

/** The valley of the tests: z = S·y + |x|/m (y upstream from the dam row, metres). */
function valley(): Grid {
  const damRow = Math.ceil(115 / CELL);
  return vValley({ width: 2 * Math.ceil(18 / CELL) + 1, height: damRow + 20, cellM: CELL, damRow }, M, S);
}

async function writeDem(path: string, g: Grid, epsg = EPSG, shiftM: [number, number] = [0, 0]): Promise<void> {
  const t = g.transform;
  await writeGeoTiff(path, {
    width: g.width,
    height: g.height,
    data: g.z,
    transform: { x0: t.x0 + X0 + shiftM[0], y0: t.y0 + Y0 + shiftM[1], dx: t.dx, dy: t.dy },
    crs: crsFromEpsg(epsg),
    noData: -9999,
    zUnit: 'metre',
  });
}

/** A crest across the valley at y (local metres), as a GeoJSON feature in the DEM's CRS. */
function crest(id: string, yM: number, props: Record<string, unknown>): object {
  return {
    type: 'Feature',
    properties: { id, upstream: 'left', ...props },
    geometry: { type: 'LineString', coordinates: [[X0 - CREST_HALF_M, Y0 + yM], [X0 + CREST_HALF_M, Y0 + yM]] },
  };
}

async function run(name: string, dem: string, dams: object[], extra: { bedDem?: string; waterMask?: string; model?: 'power-law' | 'reconstructed' } = {}): Promise<Summary> {
  const damsPath = join(dir, `${name}-dams.geojson`);
  await writeFile(damsPath, JSON.stringify({ type: 'FeatureCollection', features: dams }));
  const params = defaultParams();
  params.water = { ...defaultWaterRunParams(), belowModel: extra.model ?? 'power-law' };
  params.uncertainty = undefined;
  await runEstimate({
    demPaths: [dem],
    damsPath,
    damsCrs: `EPSG:${EPSG}`,
    outDir: join(dir, name),
    params,
    bedDemPath: extra.bedDem,
    waterMaskPath: extra.waterMask,
  });
  return JSON.parse(await readFile(join(dir, name, 'summary.json'), 'utf8')) as Summary;
}

let dry: Grid;
let wetArea: number;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-water-'));
  dry = valley();
  const dam = makeDam({ id: 'main', lines: [[[-CREST_HALF_M, 0], [CREST_HALF_M, 0]]], heightM: 1, upstream: 'left' });
  const scene = flattenPond(dry, dam, LEVEL);
  wetArea = scene.waterAreaM2;
  await writeDem(join(dir, 'dry.tif'), dry);
  await writeDem(join(dir, 'wet.tif'), scene.wet);
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

function sums(s: Summary): { volume: number; above: number; below: number; area: number } {
  let volume = 0;
  let above = 0;
  let below = 0;
  let area = 0;
  for (const d of s.dams) {
    volume += d.volume_m3;
    above += d.volume_above_surface_m3 ?? 0;
    below += d.volume_below_surface_m3 ?? 0;
    area += d.area_m2;
  }
  return { volume, above, below, area };
}

/** The bed read on a window of the DEM equals `plane` at every cell centre (within float32 storage of values near 5 m: about 5e-7 m). */
async function expectPlaneOnWindow(water: WaterInputs, dem: DemSource, plane: (x: number, y: number) => number): Promise<void> {
  const box = { col0: 5, row0: 10, col1: 60, row1: 200 };
  const got = await water.readWindow(box);
  let checked = 0;
  for (let r = box.row0; r < box.row1; r++) {
    for (let c = box.col0; c < box.col1; c++) {
      const x = dem.transform.x0 + (c + 0.5) * dem.transform.dx;
      const y = dem.transform.y0 + (r + 0.5) * dem.transform.dy;
      const v = got.bedZ![(r - box.row0) * (box.col1 - box.col0) + (c - box.col0)]!;
      expect(Math.abs(v - plane(x, y))).toBeLessThan(1e-4);
      checked++;
    }
  }
  expect(checked).toBe(55 * 190);
}

describe('a pond holding water, with a bed DEM', () => {
  it('with --bed-dem equal to the DEM before the pond, the estimate equals the estimate on that DEM', async () => {
    const before = await run('dry', join(dir, 'dry.tif'), [crest('main', 0, { height_m: 1 })]);
    const withBed = await run('bed', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { bedDem: join(dir, 'dry.tif') });
    const a = before.dams[0]!;
    const b = withBed.dams[0]!;
    expect(a.water_surface_area_m2).toBe(0);
    expect(b.water_surface_elev_m).toBeCloseTo(LEVEL, 6);
    expect(b.bed_source).toBe('bed-dem');
    expect(b.water_surface_area_m2).toBe(wetArea);
    expect(b.area_m2).toBe(a.area_m2);
    expect(Math.abs(b.volume_m3 / a.volume_m3 - 1)).toBeLessThan(1e-9);
    expect(b.volume_m3).toBe((b.volume_above_surface_m3 ?? NaN) + (b.volume_below_surface_m3 ?? NaN));
    expect(b.freeboard_m).toBeCloseTo(1 - LEVEL, 6);
    expect(withBed.inputs.map((i) => i.role)).toEqual(['dem', 'dams', 'bed-dem']);
  });

  it('warns when the bed DEM is offset from the DEM on the dry ground of the pond (another datum)', async () => {
    const z = new Float32Array(dry.z);
    for (let i = 0; i < z.length; i++) z[i] = z[i]! + 0.5;
    await writeDem(join(dir, 'bed-offset.tif'), { ...dry, z });
    const s = await run('offset', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { bedDem: join(dir, 'bed-offset.tif') });
    const w = s.warnings.find((x) => x.code === 'bed-dem-offset');
    expect(w?.message).toMatch(/0\.50 m below the bed DEM/);
  });

  it('reads a bed DEM in another CRS (UTM zone 13 against the DEM\'s zone 12) at the DEM\'s cell centres: a plane comes back exact (analytic)', async () => {
    // A plane z = a + b·x + c·y in the DEM's coordinates, written on a 1.7 m grid of UTM zone 13N:
    // each bed cell holds the plane at its centre carried back to zone 12 (proj4, a general-purpose
    // library). Over a cell the conversion is affine to well under a micrometre, so bilinear
    // interpolation at the DEM's cell centres carried into zone 13 returns the plane.
    const toZone12 = proj4('+proj=utm +zone=13 +datum=WGS84 +units=m +no_defs', '+proj=utm +zone=12 +datum=WGS84 +units=m +no_defs');
    const toZone13 = proj4('+proj=utm +zone=12 +datum=WGS84 +units=m +no_defs', '+proj=utm +zone=13 +datum=WGS84 +units=m +no_defs');
    const plane = (x: number, y: number): number => 5 + 0.013 * (x - X0) - 0.021 * (y - Y0);
    const [cx, cy] = toZone13.forward([X0 + 10, Y0 + 50]);
    const cellM = 1.7;
    const width = 80;
    const height = 160;
    const t = { x0: cx - 60, y0: cy + 140, dx: cellM, dy: -cellM };
    const z = new Float32Array(width * height);
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) {
        const [x, y] = toZone12.forward([t.x0 + (c + 0.5) * cellM, t.y0 - (r + 0.5) * cellM]);
        z[r * width + c] = plane(x, y);
      }
    }
    await writeGeoTiff(join(dir, 'plane-utm13.tif'), { width, height, data: z, transform: t, crs: crsFromEpsg(32613), noData: -9999, zUnit: 'metre' });
    const dem = await openDem([join(dir, 'wet.tif')]);
    const water = (await openWaterInputs(dem, { bedDemPath: join(dir, 'plane-utm13.tif') }))!;
    expect(water.assumptions[0]).toMatch(/in EPSG:32613, interpolated bilinearly at the DEM's cell centres carried into that CRS/);
    await expectPlaneOnWindow(water, dem, plane);
    await water.close();
    await dem.close();
  });

  it('estimates with a bed DEM in another CRS as with the same bed on the DEM\'s grid, within the resampling\'s smoothing', async () => {
    // The dry DEM carried into zone 13 by GDAL (general-purpose reference software) when installed.
    const gdal = spawnSync('gdalwarp', ['--version'], { encoding: 'utf8' });
    if (gdal.status !== 0) return;
    const out = join(dir, 'dry-utm13.tif');
    const warp = spawnSync('gdalwarp', ['-q', '-overwrite', '-t_srs', 'EPSG:32613', '-tr', '0.5', '0.5', '-r', 'bilinear', join(dir, 'dry.tif'), out], { encoding: 'utf8' });
    expect(warp.status, warp.stderr).toBe(0);
    const onGrid = await run('bed-grid', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { bedDem: join(dir, 'dry.tif') });
    const other = await run('bed-utm13', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { bedDem: out });
    const a = onGrid.dams[0]!;
    const b = other.dams[0]!;
    expect(b.bed_source).toBe('bed-dem');
    // Two bilinear resamplings round the V-valley's sharp thalweg off by a few millimetres: 0.5 % of the water below the surface here.
    expect(Math.abs(b.volume_below_surface_m3! / a.volume_below_surface_m3! - 1)).toBeLessThan(0.01);
    expect(b.area_m2).toBe(a.area_m2);
  });

  it('resamples a bed DEM on another grid of the same CRS bilinearly: exact on a plane (analytic)', async () => {
    // Bilinear interpolation reproduces any plane z = a + b·x + c·y exactly.
    const width = 30;
    const height = 140;
    const cellM = 2.3;
    const t = { x0: X0 - 31.7, y0: Y0 + 117.3, dx: cellM, dy: -cellM };
    const plane = (x: number, y: number): number => 5 + 0.013 * (x - X0) - 0.021 * (y - Y0);
    const z = new Float32Array(width * height);
    for (let r = 0; r < height; r++) for (let c = 0; c < width; c++) z[r * width + c] = plane(t.x0 + (c + 0.5) * cellM, t.y0 - (r + 0.5) * cellM);
    await writeGeoTiff(join(dir, 'plane.tif'), { width, height, data: z, transform: t, crs: crsFromEpsg(EPSG), noData: -9999, zUnit: 'metre' });
    const dem = await openDem([join(dir, 'wet.tif')]);
    const water = (await openWaterInputs(dem, { bedDemPath: join(dir, 'plane.tif') }))!;
    await expectPlaneOnWindow(water, dem, plane);
    await water.close();
    await dem.close();
  });
});

describe('a pond holding water, from the DEM alone', () => {
  let power: Summary;
  let rebuilt: Summary;
  beforeAll(async () => {
    power = await run('power', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })]);
    rebuilt = await run('rebuilt', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { model: 'reconstructed' });
  });

  it('finds the surface and adds the power law below it: V = A·h/(1 + 2/p), p = 0.91', () => {
    const d = power.dams[0]!;
    expect(d.water_surface_source).toBe('detected');
    expect(d.water_surface_elev_m).toBeCloseTo(LEVEL, 6);
    expect(d.bed_source).toBe('power-law');
    expect(d.power_p).toBe(0.91);
    expect(d.volume_below_surface_m3).toBeCloseTo(volumeBelow(d.water_surface_area_m2!, d.depth_at_dam_m!, 0.91), 5); // figures are stepped at 2^-20 m³ (FIGURE_STEP) so sums are exact
    // Hayashi & van der Kamp (2000): on a V-shaped valley (a cone-like pond, V = A·h/3 analytic) p = 0.91 gives a little less.
    const analytic = (M * LEVEL ** 3) / (3 * S);
    expect(d.volume_below_surface_m3! / analytic).toBeGreaterThan(0.9);
    expect(d.volume_below_surface_m3! / analytic).toBeLessThan(1);
  });

  it('rebuilds the bed within 3 % of the analytic V = m·h³/(3S), and the whole pond as on the dry DEM within 3 %', async () => {
    const d = rebuilt.dams[0]!;
    expect(d.bed_source).toBe('reconstructed');
    const analytic = (M * LEVEL ** 3) / (3 * S);
    expect(Math.abs(d.volume_below_surface_m3! / analytic - 1)).toBeLessThan(0.03);
    const before = JSON.parse(await readFile(join(dir, 'dry', 'summary.json'), 'utf8')) as Summary;
    expect(Math.abs(d.volume_m3 / before.dams[0]!.volume_m3 - 1)).toBeLessThan(0.03);
  });

  it('sums rows to the totals exactly: storage, above and below the surface', () => {
    for (const s of [power, rebuilt]) {
      const t = sums(s);
      expect(t.volume).toBe(s.totals.storage_m3);
      expect(t.above).toBe(s.totals.storage_above_surface_m3);
      expect(t.below).toBe(s.totals.storage_below_surface_m3);
      expect(s.totals.dams_with_water_surface).toBe(1);
    }
  });

  it('writes depth.tif down to the rebuilt bed (Σ depth × area = storage), above the surface only under the power law', async () => {
    for (const [name, s, want] of [
      ['rebuilt', rebuilt, rebuilt.totals.storage_m3],
      ['power', power, power.totals.storage_above_surface_m3!],
    ] as const) {
      const depth = await openDem([join(dir, name, 'depth.tif')]);
      const g = await depth.readWindow(0, 0, depth.width, depth.height);
      let v = 0;
      for (const d of g.z) if (!Number.isNaN(d)) v += d * CELL * CELL;
      expect(v / want).toBeCloseTo(1, 4);
      expect(s.parameters['below_model']).toBe(name === 'power' ? 'power-law' : 'reconstructed');
      await depth.close();
    }
  });

  it('continues the stage–storage curve below the surface: monotone, the water below at the surface, the whole pond at the top', () => {
    for (const s of [power, rebuilt]) {
      const d = s.dams[0]!;
      const rows = d.stage_storage;
      for (let k = 1; k < rows.length; k++) {
        expect(rows[k]![1]).toBeGreaterThanOrEqual(rows[k - 1]![1] - 1e-9);
        expect(rows[k]![2]).toBeGreaterThanOrEqual(rows[k - 1]![2] - 1e-9);
      }
      expect(rows[0]![2]).toBeLessThan(1e-6);
      expect(rows[rows.length - 1]![2]).toBeCloseTo(d.standalone_volume_m3, 6);
      expect(d.standalone_volume_m3).toBeCloseTo(d.volume_m3, 6);
      // The last row at or below today's level holds at most the water below the surface.
      const below = rows.filter((r) => r[0] < LEVEL);
      expect(below[below.length - 1]![2]).toBeLessThanOrEqual(d.volume_below_surface_m3! + 1e-6);
    }
  });

  it('writes the split to dams.csv', async () => {
    const [header, row] = (await readFile(join(dir, 'power', 'dams.csv'), 'utf8')).trim().split('\n');
    const cols = header!.split(',');
    const cells = row!.split(',');
    for (const c of ['volume_above_surface_m3', 'volume_below_surface_m3', 'water_surface_elev_m', 'water_surface_area_m2', 'freeboard_m', 'bed_source']) {
      expect(cols).toContain(c);
    }
    expect(cells[cols.indexOf('bed_source')]).toBe('power-law');
    expect(Number(cells[cols.indexOf('water_surface_elev_m')])).toBeCloseTo(LEVEL, 3);
  });
});

describe('bad input and odd water', () => {
  it('warns when the water stands above the crest (overtopped, or the crest height is wrong)', async () => {
    const s = await run('over', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 0.5 })]);
    expect(s.warnings.map((w) => w.code)).toContain('water-above-crest');
    expect(s.dams[0]!.freeboard_m!).toBeLessThan(0);
    // The water below the surface is still counted; there is no capacity above it.
    expect(s.dams[0]!.volume_below_surface_m3!).toBeGreaterThan(0);
  });

  it('warns when a water-mask polygon touches no pond, and uses the one that does', async () => {
    const toLonLat = proj4(crsFromEpsg(EPSG).proj4, 'EPSG:4326');
    const ring = (pts: number[][]): number[][] => [...pts, pts[0]!].map(([x, y]) => toLonLat.forward([X0 + x!, Y0 + y!]));
    const mask = {
      type: 'FeatureCollection',
      features: [
        // Today's water: the triangle the level covers on the V (shore at |x| = m(h − S·y), analytic).
        { type: 'Feature', properties: { id: 'pond' }, geometry: { type: 'Polygon', coordinates: [ring([[-M * LEVEL, 0.25], [M * LEVEL, 0.25], [0, LEVEL / S]])] } },
        { type: 'Feature', properties: { id: 'stray' }, geometry: { type: 'Polygon', coordinates: [ring([[-15, -40], [-10, -40], [-10, -30], [-15, -30]])] } },
      ],
    };
    await writeFile(join(dir, 'mask.geojson'), JSON.stringify(mask));
    const s = await run('mask', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { waterMask: join(dir, 'mask.geojson') });
    const d = s.dams[0]!;
    expect(d.water_surface_source).toBe('mask');
    expect(d.water_surface_elev_m!).toBeCloseTo(LEVEL, 3);
    const unused = s.warnings.filter((w) => w.code === 'water-mask-unused');
    expect(unused).toHaveLength(1);
    expect(unused[0]!.message).toMatch(/'stray'/);
    expect(unused[0]!.message).not.toMatch(/'pond'/);
  });

  it('takes water from a GeoTIFF mask on the DEM grid, and warns about mask water bodies that touch no pond', async () => {
    const scene = flattenPond(dry, makeDam({ id: 'main', lines: [[[-CREST_HALF_M, 0], [CREST_HALF_M, 0]]], heightM: 1, upstream: 'left' }), LEVEL);
    const mask = new Float32Array(dry.z.length);
    for (const i of scene.waterCells) mask[i] = 1;
    // A stray water body below the dam: 3 × 3 cells in the corner.
    for (let r = dry.height - 4; r < dry.height - 1; r++) for (let c = 1; c < 4; c++) mask[r * dry.width + c] = 1;
    await writeDem(join(dir, 'mask.tif'), { ...dry, z: mask });
    const s = await run('raster-mask', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 })], { waterMask: join(dir, 'mask.tif') });
    const d = s.dams[0]!;
    expect(d.water_surface_source).toBe('mask');
    expect(d.water_surface_area_m2).toBe(wetArea);
    expect(d.water_surface_elev_m!).toBeCloseTo(LEVEL, 6);
    const unused = s.warnings.filter((w) => w.code === 'water-mask-unused');
    expect(unused).toHaveLength(1);
    expect(unused[0]!.message).toMatch(/^1 water bodies .*\(2 m²\)/);
    expect(s.inputs.map((i) => i.role)).toEqual(['dem', 'dams', 'water-mask']);
  });

  it("counts a cascade once: the lower dam's water drowns the upper dam, whose row holds none of it", async () => {
    // The upper crest at y = 30 m stands 0.2 m above the bed there (S·30 = 0.3 m): under today's water (0.687 m).
    const s = await run('cascade', join(dir, 'wet.tif'), [crest('main', 0, { height_m: 1 }), crest('upper', 30, { height_m: 0.2 })]);
    const main = s.dams.find((d) => d.id === 'main')!;
    const upper = s.dams.find((d) => d.id === 'upper')!;
    expect(upper.drowned_by).toBe('main');
    expect(upper.volume_below_surface_m3 ?? 0).toBe(0);
    expect(upper.water_surface_area_m2 ?? 0).toBe(0);
    expect(Math.abs(main.water_surface_area_m2! / wetArea - 1)).toBeLessThan(0.02);
    const t = sums(s);
    expect(t.volume).toBe(s.totals.storage_m3);
    expect(t.below).toBe(s.totals.storage_below_surface_m3);
  });
});

describe('a dry landscape: no water where there is none', () => {
  it('finds no water surface behind any of 30 dams on a seeded 2 km × 2 km landscape with lidar noise', async () => {
    const scene = generateBenchScene({ seed: 3, width: 2000, height: 2000, damCount: 30 });
    expect(scene.facts.lidarRmseM).toBeGreaterThan(0);
    const inputs = await writeSceneInputs(join(dir, 'landscape'), scene);
    const params = defaultParams();
    params.uncertainty = undefined;
    await runEstimate({ demPaths: [inputs.demPath], damsPath: inputs.damsPath, outDir: join(dir, 'landscape-out'), params });
    const s = JSON.parse(await readFile(join(dir, 'landscape-out', 'summary.json'), 'utf8')) as Summary;
    expect(s.totals.dams_estimated).toBeGreaterThan(20);
    expect(s.totals.dams_with_water_surface).toBe(0);
    expect(s.totals.storage_below_surface_m3).toBe(0);
    expect(s.totals.storage_above_surface_m3).toBe(s.totals.storage_m3);
  });
});
