/**
 * `pondage estimate --watersheds FILE --watershed-field NAME` from the
 * command line, on an analytic V-shaped valley (tests/helpers/compare-runs.ts)
 * with two watershed polygons across it: rows per watershed that add up to
 * the totals, the dam outside every polygon in an `outside` row, bands from
 * per-draw sums, the files a GIS opens; and the bad inputs: polygons off the
 * DEM, a missing id field, lon/lat that are not, overlapping polygons and a
 * self-intersecting ring.
 */
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { EXIT_INPUT, EXIT_OK, main } from '../src/cli/main.js';
import { parseCsv } from '../src/io/csv.js';
import type { Summary } from '../src/pipeline/summary.js';
import type { WatershedRow } from '../src/tally/watersheds.js';
import { VALLEY, crest, local, writeValleyDem } from './helpers/compare-runs.js';

let dir: string;
let demPath: string;
let damsPath: string;
let summary: Summary;
let rows: WatershedRow[];
let out: string;

/** A polygon feature over local valley metres x ∈ [x0, x1], y' ∈ [y0, y1], in lon/lat. */
function box(props: Record<string, unknown>, y0: number, y1: number, x0 = -40, x1 = 40): object {
  return { type: 'Feature', properties: props, geometry: { type: 'Polygon', coordinates: [[local(x0, y0), local(x1, y0), local(x1, y1), local(x0, y1), local(x0, y0)]] } };
}

async function writeLayer(name: string, features: object[], extra: Record<string, unknown> = {}): Promise<string> {
  const path = join(dir, name);
  await writeFile(path, JSON.stringify({ type: 'FeatureCollection', ...extra, features }));
  return path;
}

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let stdout = '';
  let stderr = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((chunk: string | Uint8Array) => {
    stdout += String(chunk);
    return true;
  });
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => {
    stderr += String(chunk);
    return true;
  });
  try {
    return { code: await main(['node', 'pondage', ...args]), out: stdout, err: stderr };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}

/** An estimate with the watershed layer `ws` (and further flags); fast settings. */
function estimate(ws: string, outDir: string, more: string[] = []): Promise<{ code: number; out: string; err: string }> {
  return cli(['estimate', '--dem', demPath, '--dams', damsPath, '--watersheds', ws, '--out', outDir, '--draws', '0', '--no-water-detection', ...more]);
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-watersheds-'));
  demPath = await writeValleyDem(dir);
  damsPath = join(dir, 'dams.geojson');
  const dams = [
    crest('low', 0, { height_m: 1.0 }),
    crest('mid', 120, { height_m: 0.8 }),
    crest('high', 200, { height_m: 0.6, status: 'candidate', confidence: 0.9 }),
    crest('plan', 160, { height_m: 0.5, status: 'proposed' }),
    crest('top', 270, { height_m: 0.5 }),
  ];
  await writeFile(damsPath, JSON.stringify({ type: 'FeatureCollection', features: dams }));
  // 'lower' up to y' = 100.25 m, 'upper' from there to 240.25 m: dam 'top' (270 m) lies in neither.
  const ws = await writeLayer('watersheds.geojson', [box({ basin: 'lower', name: 'Lower reach' }, -90, 100.25), box({ basin: 'upper' }, 100.25, 240.25)]);
  out = join(dir, 'out');
  const r = await cli(['estimate', '--dem', demPath, '--dams', damsPath, '--watersheds', ws, '--watershed-field', 'basin', '--out', out, '--draws', '60', '--no-water-detection']);
  expect(r.err).toBe('');
  expect(r.code).toBe(EXIT_OK);
  summary = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as Summary;
  rows = summary.watersheds as WatershedRow[];
  expect(r.out).toMatch(/watershed\s+dams\s+counted/);
  expect(r.out).toMatch(/^upper\s+3\s+2\s/m);
}, 90_000);

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('estimate with watershed polygons', () => {
  it('puts each dam in the polygon its crest lies in, and the one outside every polygon in an "outside" row, named in a warning', () => {
    const ws = Object.fromEntries(summary.dams.map((d) => [d.id, d.watershed]));
    expect(ws).toEqual({ low: 'lower', mid: 'upper', high: 'upper', plan: 'upper', top: 'outside' });
    expect(rows.map((r) => r.id)).toEqual(['lower', 'upper', 'outside']);
    expect(rows[0]!.name).toBe('Lower reach');
    expect(rows.map((r) => r.dam_count)).toEqual([1, 3, 1]);
    expect(rows[1]).toMatchObject({ dams_in_totals: 2, dams_confirmed: 1, dams_candidate: 1, dams_proposed: 1, dams_breached: 0 });
    const w = summary.warnings.find((x) => x.code === 'dams-outside-watersheds')!;
    expect(w.message).toContain('1 of 5 dams');
    expect(w.message).toContain('top');
    expect(rows[2]!.stream_length_m).toBeNull();
    expect(rows[2]!.valley_bottom_area_m2).toBeNull();
    expect(summary.inputs.map((i) => i.role)).toEqual(['dem', 'dams', 'watersheds']);
  });

  it('adds the rows up to the totals: counts and areas exactly (cells of 0.25 m²), storage to rounding', () => {
    const t = summary.totals;
    let dams = 0;
    let counted = 0;
    let inundated = 0;
    let influence = 0;
    let storage = 0;
    let stream = 0;
    let valley = 0;
    for (const r of rows) {
      dams += r.dam_count;
      counted += r.dams_in_totals;
      inundated += r.inundated_area_m2;
      influence += r.influence_area_m2;
      storage += r.storage_m3;
      stream += r.stream_length_m ?? 0;
      valley += r.valley_bottom_area_m2 ?? 0;
    }
    expect(dams).toBe(t.dam_count);
    expect(counted).toBe(t.dams_in_totals);
    expect(inundated).toBe(t.inundated_area_m2);
    expect(influence).toBe(t.influence_area_m2);
    expect(storage).toBe(t.storage_m3); // exact: per-dam figures are whole multiples of FIGURE_STEP
    expect(stream).toBe(t.stream_length_m);
    expect(valley).toBe(t.valley_bottom_area_m2);
    expect(t.inundated_area_m2).toBeGreaterThan(0);
    // Each row's storage is the sum of its dams' (in row order).
    for (const r of rows) {
      let s = 0;
      for (const d of summary.dams) if (d.watershed === r.id) s += d.volume_m3;
      expect(r.storage_m3).toBe(s);
    }
  });

  it('takes land figures from the polygon\'s cells: area within the DEM, acres and miles beside m² and m', () => {
    // 'lower' holds the DEM's rows from y' = −80 m (its first row) to 100.25 m, across the whole 60 m width.
    const lower = rows[0]!;
    const rowsIn = Math.round((100.25 - VALLEY.yMinM) / VALLEY.cellM); // centres −80, −79.5, … 100: 361 rows
    expect(lower.area_m2).toBe(rowsIn * (VALLEY.widthM / VALLEY.cellM) * VALLEY.cellM ** 2);
    // 1 acre = 4046.8564224 m², 1 mile = 1609.344 m (NIST SP 811).
    expect(lower.area_acres).toBeCloseTo(lower.area_m2! / 4046.8564224, 9);
    if (lower.stream_length_m !== null && lower.stream_length_m > 0) expect(lower.stream_length_mi).toBeCloseTo(lower.stream_length_m / 1609.344, 9);
  });

  it('bands each row from the per-draw sums of its dams (draws.csv), not from the dams\' percentiles', async () => {
    const text = await readFile(join(out, 'draws.csv'), 'utf8');
    const records = parseCsv(text, ',');
    const header = records[0]!.fields;
    const col = (name: string): number => header.indexOf(name);
    const perDraw = new Map<string, number[]>();
    const damSums = new Map<string, number[]>();
    const shedOf = new Map(summary.dams.map((d) => [d.id, d.watershed!]));
    for (const rec of records.slice(1)) {
      const f = rec.fields;
      if (f.length < 3) continue;
      const k = Number(f[col('draw')]);
      if (f[col('scope')] === 'watershed') {
        const list = perDraw.get(f[col('id')]!) ?? [];
        list[k] = Number(f[col('storage_m3')]);
        perDraw.set(f[col('id')]!, list);
      } else if (f[col('scope')] === 'dam') {
        const w = shedOf.get(f[col('id')]!)!;
        const list = damSums.get(w) ?? [];
        list[k] = (list[k] ?? 0) + Number(f[col('volume_m3')]);
        damSums.set(w, list);
      }
    }
    for (const r of rows) {
      const draws = perDraw.get(r.id)!;
      expect(draws).toHaveLength(60);
      // The file's watershed row of draw k is the sum of its dam rows of draw k (in dam order, as written).
      expect(draws).toEqual(damSums.get(r.id));
      // p50 by Hyndman & Fan definition 7 over 60 draws: halfway between the 30th and 31st smallest.
      const sorted = [...draws].sort((a, b) => a - b);
      expect(r.bands!['storage_m3']!.p50).toBeCloseTo((sorted[29]! + sorted[30]!) / 2, 9);
    }
    const upper = rows[1]!;
    const damP50 = summary.dams.filter((d) => d.watershed === 'upper' && d.in_totals).reduce((s, d) => s + d.bands!['volume_m3']!.p50, 0);
    expect(upper.bands!['storage_m3']!.p50).not.toBe(damP50);
  });

  it('writes watersheds.csv and the GeoJSON layers a GIS opens (lon/lat)', async () => {
    const csv = parseCsv(await readFile(join(out, 'watersheds.csv'), 'utf8'), ',');
    const header = csv[0]!.fields;
    for (const name of ['id', 'dam_count', 'stream_length_m', 'stream_length_mi', 'inundated_area_m2', 'inundated_area_acres', 'influence_area_m2', 'valley_bottom_area_m2', 'valley_bottom_influenced_pct', 'storage_m3', 'storage_acre_ft', 'storage_m3_p05', 'storage_m3_p95']) {
      expect(header).toContain(name);
    }
    const lines = csv.slice(1).filter((r) => r.fields.length > 1);
    expect(lines.map((r) => r.fields[0])).toEqual(['lower', 'upper', 'outside']);
    expect(Number(lines[0]!.fields[header.indexOf('storage_m3')])).toBe(rows[0]!.storage_m3);
    const ws = JSON.parse(await readFile(join(out, 'watersheds.geojson'), 'utf8')) as { features: { properties: { id: string }; geometry: { type: string; coordinates: number[][][][] } }[] };
    expect(ws.features.map((f) => f.properties.id)).toEqual(['lower', 'upper']);
    const [lon, lat] = ws.features[0]!.geometry.coordinates[0]![0]![0]!;
    const [lon0, lat0] = local(0, 0);
    expect(Math.abs(lon! - lon0)).toBeLessThan(0.01);
    expect(Math.abs(lat! - lat0)).toBeLessThan(0.01);
    const streams = JSON.parse(await readFile(join(out, 'streams.geojson'), 'utf8')) as { type: string; features: unknown[] };
    expect(streams.type).toBe('FeatureCollection');
    const dams = parseCsv(await readFile(join(out, 'dams.csv'), 'utf8'), ',');
    expect(dams[0]!.fields).toContain('watershed');
    expect(dams[0]!.fields).toContain('influence_area_m2');
  });

  it('reads projected polygons with --watersheds-crs, and refuses them as lon/lat', async () => {
    const proj = (xl: number, yl: number): [number, number] => [500_000 + xl, 4_400_000 + yl];
    const rect = (id: string, y0: number, y1: number): object => ({ type: 'Feature', properties: { id }, geometry: { type: 'Polygon', coordinates: [[proj(-40, y0), proj(40, y0), proj(40, y1), proj(-40, y1), proj(-40, y0)]] } });
    const path = await writeLayer('projected.geojson', [rect('lower', -90, 100.25), rect('upper', 100.25, 240.25)]);
    const ok = await estimate(path, join(dir, 'projected'), ['--watersheds-crs', 'EPSG:32612']);
    expect(ok.code).toBe(EXIT_OK);
    const s = JSON.parse(await readFile(join(dir, 'projected', 'summary.json'), 'utf8')) as Summary;
    expect(s.watersheds!.map((w) => [w.id, w.area_m2])).toEqual(rows.map((w) => [w.id, w.area_m2]));
    const bad = await estimate(path, join(dir, 'projected-bad'));
    expect(bad.code).toBe(EXIT_INPUT);
    expect(bad.err).toContain('not lon/lat');
    expect(bad.err).toContain('--watersheds-crs');
  });

  it('refuses polygons that do not overlap the DEM, naming the file and the CRS flag', async () => {
    const path = await writeLayer('far.geojson', [box({ id: 'far' }, 5000, 6000, 5000, 6000)]);
    const r = await estimate(path, join(dir, 'far'));
    expect(r.code).toBe(EXIT_INPUT);
    expect(r.err).toContain('far.geojson');
    expect(r.err).toContain('do not overlap');
    expect(r.err).toContain('--watersheds-crs');
  });

  it('refuses a missing id field, naming the field and the properties the feature has', async () => {
    const path = await writeLayer('no-id.geojson', [box({ basin: 'lower', huc: 17 }, -90, 100)]);
    const r = await estimate(path, join(dir, 'no-id'), ['--watershed-field', 'name']);
    expect(r.code).toBe(EXIT_INPUT);
    expect(r.err).toContain('feature 1 has no property "name"');
    expect(r.err).toContain('"basin", "huc"');
    expect(r.err).toContain('--watershed-field');
  });

  it('keeps overlapping cells with the polygon listed first and warns with the area lost', async () => {
    // 'upper' reaches down to y' = 90.25 m: 20 rows of 120 cells (0.25 m² each) inside 'lower' as well.
    const path = await writeLayer('overlap.geojson', [box({ id: 'lower' }, -90, 100.25), box({ id: 'upper' }, 90.25, 240.25)]);
    const r = await estimate(path, join(dir, 'overlap'));
    expect(r.code).toBe(EXIT_OK);
    const s = JSON.parse(await readFile(join(dir, 'overlap', 'summary.json'), 'utf8')) as Summary;
    const w = s.warnings.find((x) => x.code === 'overlapping-watersheds')!;
    expect(w.message).toContain("watershed 'upper'");
    expect(w.message).toContain("'lower'");
    expect(w.message).toContain('600.0 m² (2400 cells)');
    expect(w.message).toContain('first one wins');
    expect(s.watersheds!.slice(0, 2).map((x) => x.area_m2)).toEqual(rows.slice(0, 2).map((x) => x.area_m2));
  });

  it('warns about a self-intersecting ring and still counts its cells by the even–odd rule', async () => {
    // A bowtie over the upper valley: its two triangles meet at (0, 170).
    const bowtie = { type: 'Feature', properties: { id: 'bow' }, geometry: { type: 'Polygon', coordinates: [[local(-40, 110), local(40, 230), local(40, 110), local(-40, 230), local(-40, 110)]] } };
    const path = await writeLayer('bowtie.geojson', [box({ id: 'lower' }, -90, 100.25), bowtie]);
    const r = await estimate(path, join(dir, 'bowtie'));
    expect(r.code).toBe(EXIT_OK);
    const s = JSON.parse(await readFile(join(dir, 'bowtie', 'summary.json'), 'utf8')) as Summary;
    const w = s.warnings.find((x) => x.code === 'self-intersecting-ring')!;
    expect(w.message).toContain("'bow'");
    expect(w.message).toContain('bowtie.geojson');
    expect(s.watersheds!.find((x) => x.id === 'bow')!.area_m2).toBeGreaterThan(0);
  });
});
