/**
 * A small synthetic valley run for the report's tests: a sinuous V-shaped
 * valley (seeded lidar-like noise) in UTM zone 12N with dams of every kind
 * the report draws — confirmed, a low-confidence candidate, proposed,
 * breached and drowned, a point dam, and two skipped dams (off the DEM, too
 * high). The run folder is produced by runEstimate as a user's would be.
 */
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { crsFromEpsg } from '../src/io/crs.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import { defaultUncertaintyParams } from '../src/uncertainty/params.js';
import { createRng } from '../src/uncertainty/random.js';

export const VALLEY_EPSG = 32612;
const X0 = 430_000;
const Y0 = 5_120_000;
const WIDTH = 200;
const HEIGHT = 380;
const BOTTOM_Y = -20; // local y of the DEM's lowest cell row
const SLOPE = 0.01;
const SIDE = 8; // horizontal : vertical of the valley sides

/** Thalweg offset across the valley at local y (metres). */
function thalwegX(y: number): number {
  return 18 * Math.sin(y / 70);
}

/** The run folder and its parsed summary.json. */
export interface ValleyRun {
  dir: string;
  outDir: string;
  summaryText: string;
}

/**
 * Writes the valley's DEM and inventory under a fresh temporary folder and
 * runs the estimate into `<dir>/out`, with `draws` Monte Carlo draws (0: the
 * deterministic estimate only, no bands).
 */
export async function makeValleyRun(options: { draws?: number } = {}): Promise<ValleyRun> {
  const dir = await mkdtemp(join(tmpdir(), 'pondage-report-'));
  const rng = createRng(20261201);
  const z = new Float32Array(WIDTH * HEIGHT);
  for (let row = 0; row < HEIGHT; row++) {
    const y = BOTTOM_Y + (HEIGHT - 1 - row) + 0.5;
    for (let col = 0; col < WIDTH; col++) {
      const x = col + 0.5 - WIDTH / 2;
      const noise = (rng() - 0.5) * 0.02;
      z[row * WIDTH + col] = 100 + SLOPE * y + Math.abs(x - thalwegX(y)) / SIDE + noise;
    }
  }
  const transform = { x0: X0 - WIDTH / 2, y0: Y0 + BOTTOM_Y + HEIGHT, dx: 1, dy: -1 };
  await writeGeoTiff(join(dir, 'dem.tif'), { width: WIDTH, height: HEIGHT, data: z, transform, crs: crsFromEpsg(VALLEY_EPSG), noData: -9999, zUnit: 'metre' });

  const toLonLat = proj4(crsFromEpsg(VALLEY_EPSG).proj4, 'EPSG:4326');
  const lonLat = (x: number, y: number): [number, number] => {
    const [lon, lat] = toLonLat.forward([X0 + x, Y0 + y]);
    return [lon!, lat!];
  };
  const crest = (id: string, y: number, props: Record<string, unknown>): object => ({
    type: 'Feature',
    properties: { id, ...props },
    geometry: { type: 'LineString', coordinates: [lonLat(thalwegX(y) - 30, y), lonLat(thalwegX(y) + 30, y)] },
  });
  const dams = {
    type: 'FeatureCollection',
    features: [
      crest('LV-01', 10, { height_m: 1.0, status: 'confirmed', year: 2023 }),
      crest('LV-02', 50, { height_m: 0.3, status: 'breached' }),
      crest('LV-03', 135, { height_m: 0.8, status: 'confirmed' }),
      crest('LV-04', 215, { status: 'candidate', confidence: 0.3 }),
      crest('LV-05', 290, { height_m: 0.6, status: 'proposed' }),
      { type: 'Feature', properties: { id: 'LV-06', status: 'confirmed', height_m: 0.7 }, geometry: { type: 'Point', coordinates: lonLat(thalwegX(185), 185) } },
      crest('LV-07', 250, { height_m: 4.0, status: 'confirmed' }),
      { type: 'Feature', properties: { id: 'LV-08' }, geometry: { type: 'Point', coordinates: lonLat(5000, 5000) } },
    ],
  };
  await writeFile(join(dir, 'dams.geojson'), JSON.stringify(dams));
  const outDir = join(dir, 'out');
  // Ponds only (--ponds-only): the report's influence and watershed sections are exercised with enrichSummary.
  const params = { ...defaultParams(), influence: undefined, uncertainty: { ...defaultUncertaintyParams(), draws: options.draws ?? 0 } };
  await runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), outDir, params });
  return { dir, outDir, summaryText: await readFile(join(outDir, 'summary.json'), 'utf8') };
}

/**
 * What later stages add to summary.json (bands, watersheds, the influence
 * zone, the water-surface split), filled in with plausible values from the
 * run's own figures so the report's optional sections can be exercised.
 * Returns the enriched summary object.
 */
export function enrichSummary(summary: Record<string, unknown>): Record<string, unknown> {
  const s = structuredClone(summary) as {
    totals: Record<string, unknown> & { storage_m3: number; inundated_area_m2: number };
    dams: (Record<string, unknown> & { id: string; volume_m3: number; area_m2: number; estimated: boolean })[];
  } & Record<string, unknown>;
  const band = (v: number): { p05: number; p50: number; p95: number; mean: number } => ({ p05: v * 0.62, p50: v * 0.97, p95: v * 1.41, mean: v * 1.01 });
  const influence = s.totals.inundated_area_m2 * 3.7;
  s.totals['influence_area_m2'] = influence;
  s.totals['storage_below_surface_m3'] = s.totals.storage_m3 * 0.25;
  s.totals['storage_above_surface_m3'] = s.totals.storage_m3 * 0.75;
  s.totals['bands'] = { storage_m3: band(s.totals.storage_m3), inundated_area_m2: band(s.totals.inundated_area_m2), influence_area_m2: band(influence) };
  const half = Math.ceil(s.dams.length / 2);
  s.dams.forEach((d, k) => {
    d['watershed'] = k < half ? 'lower-fork' : 'upper-fork';
    if (d.estimated) {
      // One pond held by the way round its crest, as a spilling pond is reported.
      if (k === 0) d['limited_by'] = 'spill';
      d['bands'] = { volume_m3: band(d.volume_m3), area_m2: band(d.area_m2), influence_area_m2: band(d.area_m2 * 3.7) };
      d['volume_below_surface_m3'] = d.volume_m3 * 0.25;
      d['influence_area_m2'] = d.area_m2 * 3.7;
    }
  });
  const sum = (from: number, to: number, key: 'volume_m3' | 'area_m2'): number => s.dams.slice(from, to).reduce((a, d) => a + d[key], 0);
  const shed = (id: string, from: number, to: number, streamM: number, valleyM2: number): Record<string, unknown> => {
    const area = sum(from, to, 'area_m2');
    const storage = sum(from, to, 'volume_m3');
    return {
      id,
      dam_count: to - from,
      stream_length_m: streamM,
      inundated_area_m2: area,
      influence_area_m2: area * 3.7,
      valley_bottom_area_m2: valleyM2,
      storage_m3: storage,
      bands: { storage_m3: band(storage), inundated_area_m2: band(area), influence_area_m2: band(area * 3.7) },
    };
  };
  s['watersheds'] = [shed('lower-fork', 0, half, 2150, 81000), shed('upper-fork', half, s.dams.length, 1730, 64000)];
  return s;
}
