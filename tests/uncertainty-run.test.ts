/**
 * Bands end to end, through the files a user gives and gets: the seeded
 * reference valley as a GeoTIFF, a GeoJSON inventory (a cascade and a
 * candidate), run folders compared byte for byte.
 */
import { mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { crsFromEpsg } from '../src/io/crs.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { parseDrawsCsv } from '../src/io/compare-inputs.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { defaultUncertaintyParams, type UncertaintyParams } from '../src/uncertainty/params.js';
import { REFERENCE_VALLEY, referenceDams, referenceValley } from './helpers/synthetic.js';

let dir: string;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-bands-'));
  const grid = referenceValley();
  await writeGeoTiff(join(dir, 'dem.tif'), {
    width: grid.width,
    height: grid.height,
    data: grid.z,
    transform: REFERENCE_VALLEY.transform,
    crs: crsFromEpsg(32612),
    noData: -9999,
    zUnit: 'metre',
  });
  const dams = referenceDams().map((d) => ({
    type: 'Feature',
    properties: { id: d.id, ...(d.heightM !== null ? { height_m: d.heightM } : {}), ...(d.upstream ? { upstream: d.upstream } : {}) },
    geometry: { type: 'LineString', coordinates: d.geometry.kind === 'line' ? d.geometry.lines[0] : [] },
  }));
  const candidate = structuredClone(dams[0]!);
  candidate.properties = { id: 'maybe', status: 'candidate', confidence: 0.4, height_m: 0.5, upstream: 'left' } as typeof candidate.properties;
  (candidate.geometry.coordinates as [number, number][]).forEach((p) => {
    p[1] += 120;
  });
  await writeFile(join(dir, 'dams.geojson'), JSON.stringify({ type: 'FeatureCollection', features: [...dams, candidate] }));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function run(name: string, u: Partial<UncertaintyParams>): Promise<Summary> {
  const params = defaultParams();
  params.uncertainty = { ...defaultUncertaintyParams(), ...u };
  const { summary } = await runEstimate({ demPaths: [join(dir, 'dem.tif')], damsPath: join(dir, 'dams.geojson'), damsCrs: 'EPSG:32612', outDir: join(dir, name), params });
  return summary;
}

/** summary.json text with the run-varying `run` block taken out. */
async function summaryWithoutRun(name: string): Promise<string> {
  const s = JSON.parse(await readFile(join(dir, name, 'summary.json'), 'utf8')) as Record<string, unknown>;
  delete s.run;
  return JSON.stringify(s);
}

describe('bands in a run folder', () => {
  it('the same seed gives the same bytes in every file but summary.json\'s run block', async () => {
    await run('a', { draws: 300, seed: 42 });
    await run('b', { draws: 300, seed: 42 });
    const files = (await readdir(join(dir, 'a'))).sort();
    expect(files).toEqual((await readdir(join(dir, 'b'))).sort());
    expect(files).toContain('draws.csv');
    for (const f of files) {
      if (f === 'summary.json') continue;
      const [x, y] = await Promise.all([readFile(join(dir, 'a', f)), readFile(join(dir, 'b', f))]);
      if (f === 'report.html') {
        // The report prints the run's clock (when it ran, how long): the same text once those are masked.
        const mask = (b: Buffer): string => b.toString('utf8').replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, 'T').replace(/ran [\d.]+ s/g, 'ran s');
        expect(mask(x) === mask(y), 'report.html differs beyond its clock times').toBe(true);
        continue;
      }
      expect(x.equals(y), `${f} differs between two runs with the same seed`).toBe(true);
    }
    expect(await summaryWithoutRun('a')).toBe(await summaryWithoutRun('b'));
    // And the run block is where the clock went.
    const a = JSON.parse(await readFile(join(dir, 'a', 'summary.json'), 'utf8')) as Summary;
    expect(a.run.started_at).toMatch(/^\d{4}-\d\d-\d\dT/);
    expect(a.parameters.seed).toBe(42);
    expect(a.parameters.draws).toBe(300);
    expect(a.uncertainty!.seed).toBe(42);
  });

  it('another seed moves the bands, never the deterministic figures; --draws 0 gives the same figures without bands', async () => {
    const a = JSON.parse(await readFile(join(dir, 'a', 'summary.json'), 'utf8')) as Summary;
    const c = await run('c', { draws: 300, seed: 43 });
    const none = await run('none', { draws: 0 });
    expect(c.totals.bands!.storage_m3!.p95).not.toBe(a.totals.bands!.storage_m3!.p95);
    const strip = (s: Summary): unknown => ({
      totals: { ...s.totals, bands: undefined },
      dams: s.dams.map((d) => ({ ...d, bands: undefined, cells_visited: undefined })),
    });
    expect(strip(c)).toEqual(strip(a));
    expect(strip(none)).toEqual(strip(a));
    expect(none.totals.bands).toBeUndefined();
    expect(none.uncertainty).toBeUndefined();
    expect(await readdir(join(dir, 'none'))).not.toContain('draws.csv');
    // Every estimated dam and the totals carry a band for each banded figure, p05 ≤ p50 ≤ p95.
    for (const d of a.dams.filter((x) => x.estimated)) {
      for (const b of Object.values(d.bands!)) {
        expect(b.p05).toBeLessThanOrEqual(b.p50);
        expect(b.p50).toBeLessThanOrEqual(b.p95);
      }
    }
    expect(Object.keys(a.totals.bands!)).toEqual(expect.arrayContaining(['storage_m3', 'inundated_area_m2', 'storage_acre_ft', 'inundated_area_acres', 'inundated_area_ha']));
  });

  it('draws.csv: each draw\'s totals row equals the sum of its dam rows exactly, and compare reads it', async () => {
    const text = await readFile(join(dir, 'a', 'draws.csv'), 'utf8');
    const lines = text.trim().split('\n');
    const header = lines[0]!.split(',');
    const col = (name: string): number => header.indexOf(name);
    const sums = new Map<number, number>();
    const totals = new Map<number, number>();
    for (const line of lines.slice(1)) {
      const f = line.split(',');
      const k = Number(f[col('draw')]);
      if (f[col('scope')] === 'total') totals.set(k, Number(f[col('storage_m3')]));
      if (f[col('scope')] === 'dam') sums.set(k, (sums.get(k) ?? 0) + Number(f[col('volume_m3')]));
    }
    expect(totals.size).toBe(300);
    for (const [k, t] of totals) expect(sums.get(k)).toBe(t);
    const table = parseDrawsCsv(text, 'draws.csv');
    expect(table.count).toBe(300);
    expect(table.series.get('total')!.get('storage_m3')!.length).toBe(300);
  });

  it('dams.csv carries p05, p50, p95 and mean beside each banded figure, rounded as the figure', async () => {
    const csv = (await readFile(join(dir, 'a', 'dams.csv'), 'utf8')).split('\n');
    const header = csv[0]!.split(',');
    const v = header.indexOf('volume_m3');
    expect(header.slice(v, v + 5)).toEqual(['volume_m3', 'volume_m3_p05', 'volume_m3_p50', 'volume_m3_p95', 'volume_m3_mean']);
    const a = JSON.parse(await readFile(join(dir, 'a', 'summary.json'), 'utf8')) as Summary;
    const row = csv[1]!.split(',');
    expect(Number(row[v + 3])).toBe(Number(a.dams[0]!.bands!.volume_m3!.p95.toFixed(3)));
  });

  it('warns when the draws are too few for p95', async () => {
    const s = await run('few', { draws: 50, seed: 1 });
    expect(s.uncertainty!.monte_carlo.too_few_draws).toBe(true);
    expect(s.warnings.some((w) => w.code === 'too-few-draws')).toBe(true);
    const a = JSON.parse(await readFile(join(dir, 'a', 'summary.json'), 'utf8')) as Summary;
    expect(a.warnings.some((w) => w.code === 'too-few-draws')).toBe(false);
    expect(a.uncertainty!.monte_carlo.p95_standard_error.storage_m3).toBeGreaterThan(0);
  });
});
