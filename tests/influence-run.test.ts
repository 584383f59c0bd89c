/**
 * The influence zone end to end, through the files a user gives and gets: a
 * flat DEM GeoTIFF, a dam whose crest is a closed ring (the pond is the flat
 * disc inside it), a valley-bottom polygon over the whole DEM, and the run
 * folder's summary.json, influence.tif and influence.geojson.
 */
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { crsFromEpsg } from '../src/io/crs.js';
import { openDem } from '../src/io/dem.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { defaultWaterRunParams } from '../src/pipeline/water-stage.js';

const EPSG = 32612;
const X0 = 500_000;
const Y0 = 4_400_000;
const N = 240; // cells of 1 m
const RING_M = 41; // crest ring radius: the pond inside it is about 40 m in radius
const toLonLat = proj4(crsFromEpsg(EPSG).proj4, 'EPSG:4326');
const ll = (x: number, y: number): [number, number] => toLonLat.forward([X0 + x, Y0 + y]) as [number, number];

let dir: string;

/** Runs the ring pond with the given riparian reach; returns the summary. */
async function run(name: string, riparianDistanceM: number): Promise<Summary> {
  const params = defaultParams();
  params.uncertainty = undefined;
  params.water = { ...defaultWaterRunParams(), detect: false };
  params.influence = { ...params.influence!, riparianDistanceM };
  await runEstimate({
    demPaths: [join(dir, 'dem.tif')],
    damsPath: join(dir, 'dams.geojson'),
    valleyBottomPath: join(dir, 'valley.geojson'),
    outDir: join(dir, name),
    params,
  });
  return JSON.parse(await readFile(join(dir, name, 'summary.json'), 'utf8')) as Summary;
}

let d50: Summary;
let d20: Summary;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-influence-'));
  const z = new Float32Array(N * N).fill(100);
  const transform = { x0: X0 - N / 2, y0: Y0 + N / 2, dx: 1, dy: -1 };
  await writeGeoTiff(join(dir, 'dem.tif'), { width: N, height: N, data: z, transform, crs: crsFromEpsg(EPSG), noData: -9999, zUnit: 'metre' });
  // A counter-clockwise ring: its left side, the upstream side, is the inside.
  const ring: [number, number][] = [];
  for (let k = 0; k <= 144; k++) ring.push(ll(RING_M * Math.cos((2 * Math.PI * k) / 144), RING_M * Math.sin((2 * Math.PI * k) / 144)));
  const dams = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { id: 'ring', height_m: 0.5, upstream: 'left' }, geometry: { type: 'LineString', coordinates: ring } }] };
  await writeFile(join(dir, 'dams.geojson'), JSON.stringify(dams));
  const h = N / 2 - 2;
  const valley = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [[ll(-h, -h), ll(h, -h), ll(h, h), ll(-h, h), ll(-h, -h)]] } }] };
  await writeFile(join(dir, 'valley.geojson'), JSON.stringify(valley));
  d50 = await run('d50', 50);
  d20 = await run('d20', 20);
}, 60_000);

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('influence zone of a circular pond on flat ground, end to end', () => {
  it('holds the flat disc inside the ring crest as one pond at the crest level', () => {
    const d = d50.dams[0]!;
    expect(d.limited_by).toBe('crest');
    expect(d.water_level_m).toBeCloseTo(100.5, 9);
    // Disc area π·r² (analytic) for r between 39.5 and 41 m: the 4-connected crest wall takes the outer cells.
    expect(d.area_m2).toBeGreaterThan(Math.PI * 39.5 ** 2);
    expect(d.area_m2).toBeLessThan(Math.PI * RING_M ** 2);
  });

  it('influences π(r + D)² within 1 % for D = 50 m and D = 20 m, r the pond\'s radius √(A/π) (area of a disc)', () => {
    for (const [s, D] of [[d50, 50], [d20, 20]] as const) {
      const d = s.dams[0]!;
      const r = Math.sqrt(d.area_m2 / Math.PI);
      const analytic = Math.PI * (r + D) ** 2;
      expect(Math.abs(d.influence_area_m2! / analytic - 1)).toBeLessThan(0.01);
      expect(d.influence_area_m2).toBe(d.area_m2 + d.riparian_area_m2!);
      expect(s.totals.influence_area_m2).toBe(d.influence_area_m2);
      expect(s.parameters['riparian_distance_m']).toBe(D);
    }
  });

  it('writes influence.tif on the DEM grid whose classes hold the pond and the fringe cell for cell', async () => {
    const tif = await openDem([join(dir, 'd50', 'influence.tif')]);
    try {
      expect(tif.crs.epsg).toBe(EPSG);
      const dem = await openDem([join(dir, 'dem.tif')]);
      // Same cell alignment: the raster's corner sits on a DEM cell corner.
      const col = (tif.transform.x0 - dem.transform.x0) / dem.transform.dx;
      const row = (tif.transform.y0 - dem.transform.y0) / dem.transform.dy;
      await dem.close();
      expect(col).toBe(Math.round(col));
      expect(row).toBe(Math.round(row));
      const g = await tif.readWindow(0, 0, tif.width, tif.height);
      let wet = 0;
      let fringe = 0;
      for (const v of g.z) {
        if (v === 1) wet++;
        else if (v === 2) fringe++;
        else expect(v).toBe(0);
      }
      const d = d50.dams[0]!;
      expect(wet).toBe(d.area_m2);
      expect(fringe).toBe(d.riparian_area_m2);
    } finally {
      await tif.close();
    }
  });

  it('outlines both classes in influence.geojson (lon/lat), with their areas', async () => {
    const fc = JSON.parse(await readFile(join(dir, 'd50', 'influence.geojson'), 'utf8')) as { features: { properties: Record<string, unknown>; geometry: { coordinates: number[][][][] } }[] };
    const byClass = new Map(fc.features.map((f) => [f.properties['class'], f]));
    const d = d50.dams[0]!;
    expect(byClass.get('inundated')!.properties['area_m2']).toBe(d.area_m2);
    expect(byClass.get('riparian')!.properties['area_m2']).toBe(d.riparian_area_m2);
    expect(byClass.get('riparian')!.properties['dam']).toBe('ring');
    const [lon, lat] = fc.features[0]!.geometry.coordinates[0]![0]![0]!;
    const [lon0, lat0] = ll(0, 0);
    expect(Math.abs(lon! - lon0)).toBeLessThan(0.01);
    expect(Math.abs(lat! - lat0)).toBeLessThan(0.01);
  });

  it('keeps the riparian fringe inside the valley-bottom polygon: a smaller polygon cuts it', async () => {
    // Only a 30 m × 30 m square beside the pond is valley bottom: the fringe is that square's cells within 50 m of the pond.
    const sq = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [[ll(45, -15), ll(75, -15), ll(75, 15), ll(45, 15), ll(45, -15)]] } }] };
    await writeFile(join(dir, 'small-valley.geojson'), JSON.stringify(sq));
    const params = defaultParams();
    params.uncertainty = undefined;
    params.water = { ...defaultWaterRunParams(), detect: false };
    await runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), valleyBottomPath: join(dir, 'small-valley.geojson'), outDir: join(dir, 'small'), params });
    const s = JSON.parse(await readFile(join(dir, 'small', 'summary.json'), 'utf8')) as Summary;
    const rip = s.dams[0]!.riparian_area_m2!;
    // Its 30 × 30 = 900 cells (centres x 45.5–74.5 m, |y| ≤ 14.5 m) all lie within 50 m of the pond's edge at about 40 m.
    expect(rip).toBe(900);
    expect(s.totals.valley_bottom_area_m2).toBe(900);
  });
});
