/**
 * End to end through the files a user gives and gets: a GeoTIFF DEM of an
 * analytic V-shaped valley and a GeoJSON inventory in, the run folder out.
 */
import { mkdtemp, readFile, readdir, rm, writeFile, mkdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.js';
import { makeGrid } from '../src/grid/grid.js';
import { crsFromEpsg } from '../src/io/crs.js';
import { openDem } from '../src/io/dem.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { ACRE_FOOT_M3 } from '../src/units.js';

// A V-shaped valley z = S·y' + |x'|/m in local metres (x' across, y' up-valley
// from the dam), placed in UTM zone 12N. A dam of height H across it holds a
// pond reaching y' = H/S whose width at y' is 2m(H − S·y'), so
//   A = ∫0^{H/S} 2m(H − S·y) dy = m·H²/S,
//   V = ∫0^{H/S} ∫ (H − S·y − |x|/m) dx dy = ∫ m(H − S·y)² dy = m·H³/(3S)   (analytic).
const EPSG = 32612;
const X0 = 500_000;
const Y0 = 4_400_000;
const CELL = 0.5;
const M = 10;
const S = 0.01;
const H = 1;
const WIDTH = 120; // 60 m across
const HEIGHT = 380; // 190 m along the valley
const DAM_ROW = 340; // the dam's cell centres sit at y' = 0
const toLonLat = proj4(crsFromEpsg(EPSG).proj4, 'EPSG:4326');
const fromLonLat = (lon: number, lat: number): [number, number] => proj4('EPSG:4326', crsFromEpsg(EPSG).proj4, [lon, lat]) as [number, number];

let dir: string;
let summary: Summary;

function local(xl: number, yl: number): [number, number] {
  const [lon, lat] = toLonLat.forward([X0 + xl, Y0 + yl]);
  return [lon!, lat!];
}

function line(id: string, yl: number, halfWidth: number, props: Record<string, unknown>): object {
  return { type: 'Feature', properties: { id, ...props }, geometry: { type: 'LineString', coordinates: [local(-halfWidth, yl), local(halfWidth, yl)] } };
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-run-'));
  const z = new Float32Array(WIDTH * HEIGHT);
  for (let row = 0; row < HEIGHT; row++) {
    const yl = (DAM_ROW - row) * CELL;
    for (let col = 0; col < WIDTH; col++) {
      const xl = (col + 0.5) * CELL - (WIDTH * CELL) / 2;
      z[row * WIDTH + col] = 100 + S * yl + Math.abs(xl) / M;
    }
  }
  const transform = { x0: X0 - (WIDTH * CELL) / 2, y0: Y0 + (DAM_ROW + 0.5) * CELL, dx: CELL, dy: -CELL };
  makeGrid({ width: WIDTH, height: HEIGHT, z, transform }); // shape check
  await writeGeoTiff(join(dir, 'dem.tif'), { width: WIDTH, height: HEIGHT, data: z, transform, crs: crsFromEpsg(EPSG), noData: -9999, zUnit: 'metre' });
  const dams = {
    type: 'FeatureCollection',
    features: [
      line('main', 0, 20, { height_m: H, status: 'confirmed', surveyor: 'QA', year: 2024 }),
      line('upper', 40, 20, { height_m: 0.3, status: 'confirmed' }), // its pond lies inside main's: drowned
      line('plan', 110, 20, { height_m: 0.5, status: 'proposed' }), // beyond main's pond (it ends at y' = 100 m)
      { type: 'Feature', properties: { id: 'far' }, geometry: { type: 'Point', coordinates: local(5000, 5000) } },
    ],
  };
  await writeFile(join(dir, 'dams.geojson'), JSON.stringify(dams));
  await runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), outDir: join(dir, 'out'), params: defaultParams() });
  summary = JSON.parse(await readFile(join(dir, 'out', 'summary.json'), 'utf8')) as Summary;
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('estimate run on an analytic V-shaped valley', () => {
  it('writes the run folder with its core files', async () => {
    expect(await readdir(join(dir, 'out'))).toEqual(expect.arrayContaining(['dams.csv', 'depth.tif', 'ponds.geojson', 'summary.json']));
    expect(summary.tool.name).toBe('pondage');
    expect(summary.inputs.map((i) => i.role)).toEqual(['dem', 'dams']);
    expect(summary.inputs[0]!.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  // The bed is the lowest crest cell, whose centre is a quarter cell off the
  // thalweg, so the water stands h = level − 100 m above the valley's analytic
  // bottom line at the dam; the analytic pond is taken at that h.
  it('matches the analytic pond of the main dam (A = m·h²/S, V = m·h³/(3S)) within 2 %', () => {
    const main = summary.dams.find((d) => d.id === 'main')!;
    expect(main.limited_by).toBe('crest');
    expect(main.height_source).toBe('measured');
    expect(main.height_m).toBeCloseTo(H, 9);
    const h = main.water_level_m! - 100;
    expect(h).toBeGreaterThan(H);
    expect(h).toBeLessThan(H + CELL / M);
    expect(Math.abs(main.standalone_area_m2 / ((M * h * h) / S) - 1)).toBeLessThan(0.02);
    expect(Math.abs(main.standalone_volume_m3 / ((M * h ** 3) / (3 * S)) - 1)).toBeLessThan(0.02);
  });

  it('counts the drowned upstream dam once and sums rows to the totals exactly', () => {
    const main = summary.dams.find((d) => d.id === 'main')!;
    const upper = summary.dams.find((d) => d.id === 'upper')!;
    expect(upper.drowned_by).toBe('main');
    expect(upper.volume_m3).toBe(0);
    expect(main.volume_m3).toBe(main.standalone_volume_m3);
    let area = 0;
    let volume = 0;
    for (const d of summary.dams) {
      area += d.area_m2;
      volume += d.volume_m3;
    }
    expect(volume).toBe(summary.totals.storage_m3);
    expect(area).toBe(summary.totals.inundated_area_m2);
    expect(summary.totals.storage_acre_ft).toBeCloseTo(summary.totals.storage_m3 / ACRE_FOOT_M3, 9);
  });

  it('keeps the proposed dam out of the totals but reports its own pond (analytic V at H = 0.5 m)', () => {
    const plan = summary.dams.find((d) => d.id === 'plan')!;
    expect(plan.in_totals).toBe(false);
    expect(plan.volume_m3).toBe(0);
    expect(plan.limited_by).toBe('crest');
    const h = plan.water_level_m! - (100 + 110 * S);
    expect(Math.abs(plan.standalone_volume_m3 / ((M * h ** 3) / (3 * S)) - 1)).toBeLessThan(0.03);
  });

  it('skips the dam off the DEM with a reason and carries extra properties', () => {
    const far = summary.dams.find((d) => d.id === 'far')!;
    expect(far.estimated).toBe(false);
    expect(far.skip_reason).toMatch(/outside the DEM/);
    expect(summary.totals.dams_skipped).toBe(1);
    expect(summary.dams.find((d) => d.id === 'main')!.properties).toEqual({ surveyor: 'QA' });
  });

  it('writes depth.tif on the DEM grid: same CRS and cell alignment, Σ depth × cell area = storage', async () => {
    const depth = await openDem([join(dir, 'out', 'depth.tif')]);
    const dem = await openDem([join(dir, 'dem.tif')]);
    expect(depth.crs.epsg).toBe(EPSG);
    expect(depth.transform.dx).toBe(dem.transform.dx);
    expect(depth.transform.dy).toBe(dem.transform.dy);
    // Origins differ by whole cells only.
    const dc = (depth.transform.x0 - dem.transform.x0) / CELL;
    const dr = (depth.transform.y0 - dem.transform.y0) / CELL;
    expect(dc).toBe(Math.round(dc));
    expect(dr).toBe(Math.round(dr));
    const grid = await depth.readWindow(0, 0, depth.width, depth.height);
    let volume = 0;
    let minDepth = Infinity;
    for (let i = 0; i < grid.z.length; i++) {
      const d = grid.z[i]!;
      if (Number.isNaN(d)) continue;
      volume += d * CELL * CELL;
      minDepth = Math.min(minDepth, d);
    }
    expect(minDepth).toBeGreaterThanOrEqual(0);
    expect(volume / summary.totals.storage_m3).toBeCloseTo(1, 5);
    await depth.close();
    await dem.close();
  });

  it('writes dams.csv with SI and US customary columns, a row a dam', async () => {
    const text = await readFile(join(dir, 'out', 'dams.csv'), 'utf8');
    const [header, ...rows] = text.trim().split('\n');
    const cols = header!.split(',');
    expect(rows).toHaveLength(4);
    for (const c of ['area_m2', 'area_ha', 'area_acres', 'volume_m3', 'volume_acre_ft', 'height_ft', 'surveyor']) expect(cols).toContain(c);
    const main = rows.find((r) => r.startsWith('main,'))!.split(',');
    const v = Number(main[cols.indexOf('volume_m3')]);
    const af = Number(main[cols.indexOf('volume_acre_ft')]);
    expect(af).toBeCloseTo(v / ACRE_FOOT_M3, 5); // acre-foot 1233.48183754752 m³ (NIST SP 811)
  });

  it('writes ponds.geojson as RFC 7946: lon/lat, closed rings, exterior counter-clockwise, area near the pond area', async () => {
    const fc = JSON.parse(await readFile(join(dir, 'out', 'ponds.geojson'), 'utf8')) as {
      features: { geometry: { type: string; coordinates: [number, number][][][] }; properties: { id: string; pond_kind: string; area_m2: number } }[];
    };
    const main = fc.features.find((f) => f.properties.id === 'main' && f.properties.pond_kind === 'attributed')!;
    expect(main.geometry.type).toBe('MultiPolygon');
    let planar = 0;
    for (const polygon of main.geometry.coordinates) {
      polygon.forEach((ring, k) => {
        expect(ring[0]).toEqual(ring[ring.length - 1]);
        let s = 0;
        for (let j = 0; j + 1 < ring.length; j++) s += ring[j]![0] * ring[j + 1]![1] - ring[j + 1]![0] * ring[j]![1];
        expect(s > 0).toBe(k === 0); // RFC 7946 §3.1.6
        for (const [lon, lat] of ring) {
          expect(Math.abs(lon)).toBeLessThanOrEqual(180);
          expect(Math.abs(lat)).toBeLessThanOrEqual(90);
        }
        // Area back in UTM metres (proj4 as an independent reference).
        const xy = ring.map(([lon, lat]) => fromLonLat(lon, lat));
        let a = 0;
        for (let j = 0; j + 1 < xy.length; j++) a += xy[j]![0] * xy[j + 1]![1] - xy[j + 1]![0] * xy[j]![1];
        planar += (k === 0 ? 1 : -1) * Math.abs(a / 2);
      });
    }
    // Outlines run through cell-edge midpoints, so they are slightly inside the cells (common practice: marching squares).
    expect(planar / main.properties.area_m2).toBeGreaterThan(0.9);
    expect(planar / main.properties.area_m2).toBeLessThan(1.01);
  });
});

describe('estimate run failures', () => {
  it('leaves no output folder when an input is bad', async () => {
    const bad = join(dir, 'bad.geojson');
    await writeFile(bad, JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: { status: 'maybe' }, geometry: { type: 'Point', coordinates: local(0, 0) } }] }));
    await expect(runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: bad, outDir: join(dir, 'never'), params: defaultParams() })).rejects.toThrow(InputError);
    await expect(readdir(join(dir, 'never'))).rejects.toThrow();
    expect((await readdir(dir)).filter((n) => n.includes('partial'))).toEqual([]);
  });

  it('stops with one message when no dam lies on the DEM (a CRS mix-up, not a result)', async () => {
    const off = join(dir, 'off.geojson');
    await writeFile(off, JSON.stringify({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'Point', coordinates: local(9000, 9000) } }] }));
    await expect(runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: off, outDir: join(dir, 'off-out'), params: defaultParams() })).rejects.toThrow(/none of the 1 dams lies on the DEM.*--dams-crs/);
    await expect(readdir(join(dir, 'off-out'))).rejects.toThrow();
  });

  it('refuses to replace a folder that holds files pondage did not write', async () => {
    const foreign = join(dir, 'mine');
    await mkdir(foreign);
    await writeFile(join(foreign, 'notes.txt'), 'keep me');
    await expect(runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), outDir: foreign, params: defaultParams() })).rejects.toThrow(/did not write/);
    expect(await readFile(join(foreign, 'notes.txt'), 'utf8')).toBe('keep me');
  });
});
