/**
 * `pondage compare` end to end on run folders of an analytic V-shaped valley:
 * a dam added, a dam removed, a cascade (a new downstream dam drowning an old
 * one), ids changed between surveys, and runs on a second DEM.
 */
import { mkdir, mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { HtmlValidate } from 'html-validate';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCompare } from '../src/cli/compare-command.js';
import type { Comparison } from '../src/compare/compare.js';
import { lod95M } from '../src/compare/lod.js';
import { readDepth } from '../src/io/compare-inputs.js';
import { parseCsv } from '../src/io/csv.js';
import type { Summary } from '../src/pipeline/summary.js';
import { createRng, normal } from '../src/uncertainty/random.js';
import { crest, runValley, writeValleyDem } from './helpers/compare-runs.js';

let dir: string;
const runs: Record<string, { runDir: string; summary: Summary }> = {};

const y1 = [
  crest('a', 0, { height_m: 0.6, status: 'confirmed', year: 2019 }),
  crest('up', 150, { height_m: 0.5, status: 'confirmed', year: 2019 }),
];

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-compare-'));
  const dem = await writeValleyDem(dir);
  runs['y1'] = await runValley(dir, dem, 'y1', y1);
  // Its pond (to y' ≈ 130 m) touches neither a's (to 60 m) nor up's (from 150 m).
  runs['add'] = await runValley(dir, dem, 'add', [...y1, crest('new1', 80, { height_m: 0.5, status: 'confirmed', year: 2024 })]);
  runs['remove'] = await runValley(dir, dem, 'remove', [y1[0]!]);
  // 20 m below a, 1 m high: its level stands 0.2 m above a's crest, so it drowns a.
  runs['cascade'] = await runValley(dir, dem, 'cascade', [...y1, crest('low', -20, { height_m: 1.0, status: 'confirmed', year: 2024 })]);
  // The same dams mapped again under other ids, crests drawn 3 m off across the valley.
  runs['renamed'] = await runValley(dir, dem, 'renamed', [
    crest('S24-001', 0, { height_m: 0.6, status: 'confirmed' }, 25, 3),
    crest('S24-002', 150, { height_m: 0.5, status: 'breached' }, 25, -3),
  ]);
  // A second DEM of the same valley (another lidar flight: 2 cm of seeded noise).
  const rng = createRng(7);
  const dem2 = await writeValleyDem(dir, 'dem2.tif', () => Math.round(0.02 * normal(rng) * 4096) / 4096);
  runs['otherDem'] = await runValley(dir, dem2, 'otherDem', y1);
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function compare(names: string[], out: string, extra: Partial<Parameters<typeof runCompare>[0]> = {}): Promise<Comparison> {
  return runCompare({ runDirs: names.map((n) => runs[n]!.runDir), outDir: join(dir, out), ...extra });
}

const dam = (name: string, id: string) => runs[name]!.summary.dams.find((d) => d.id === id)!;

describe('storage change between runs', () => {
  it('adding one dam changes storage by exactly its pond volume', async () => {
    const c = await compare(['y1', 'add'], 'cmp-add');
    const added = dam('add', 'new1');
    expect(added.volume_m3).toBeGreaterThan(10);
    expect(c.totals.storage_change_m3).toBe(added.volume_m3);
    expect(c.totals.inundated_area_change_m2).toBe(added.area_m2);
    // The same, up to rounding, as the difference of the totals.
    expect(c.totals.storage_change_m3 / (runs['add']!.summary.totals.storage_m3 - runs['y1']!.summary.totals.storage_m3)).toBeCloseTo(1, 12);
    expect(c.dams.map((d) => [d.id, d.change])).toEqual([['a', 'persisting'], ['up', 'persisting'], ['new1', 'new']]);
  });

  it('removing one dam changes storage by exactly minus its pond volume', async () => {
    const c = await compare(['y1', 'remove'], 'cmp-remove');
    expect(c.totals.storage_change_m3).toBe(-dam('y1', 'up').volume_m3);
    expect(c.dams.find((d) => d.id === 'up')!.change).toBe('gone');
    expect(c.dam_counts).toEqual({ new: 0, gone: 1, persisting: 1, changed: 0 });
  });

  it('a new dam drowning an old one changes storage by the volume of the union minus the old pond', async () => {
    const c = await compare(['y1', 'cascade'], 'cmp-cascade');
    const low = dam('cascade', 'low');
    const a1 = dam('y1', 'a');
    expect(dam('cascade', 'a').drowned_by).toBe('low');
    // The union of both ponds is low's own pond (it holds a's).
    expect(c.totals.storage_change_m3 / (low.standalone_volume_m3 - a1.standalone_volume_m3)).toBeCloseTo(1, 9);
    // Independently, from the two depth rasters: Σ depth × cell area, cell by cell.
    const depthA = await readDepth(join(runs['y1']!.runDir, 'depth.tif'));
    const depthB = await readDepth(join(runs['cascade']!.runDir, 'depth.tif'));
    const sum = (r: typeof depthA): number => {
      let v = 0;
      for (let i = 0; i < r.data.length; i++) if (r.data[i]! > 0) v += r.data[i]! * r.cellAreaM2[0]!;
      return v;
    };
    expect(c.totals.storage_change_m3 / (sum(depthB) - sum(depthA))).toBeCloseTo(1, 5);
    const a = c.dams.find((d) => d.id === 'a')!;
    expect(a.change).toBe('changed');
    expect(a.reasons).toContain('drowned_by');
    expect(a.volume_change_m3).toBe(-a1.volume_m3);
    // The change map's raster sum agrees, and on one DEM no LoD applies.
    expect(c.dem_difference.same_dem).toBe(true);
    expect(c.dem_difference.lod95_m).toBeNull();
    expect(c.change_map.available).toBe(true);
    if (c.change_map.available) {
      expect(c.change_map.storage_change_m3 / c.totals.storage_change_m3).toBeCloseTo(1, 5);
      expect(c.change_map.class_area_m2['new water']!).toBeGreaterThan(0);
      expect(c.change_map.class_area_m2['water gone']).toBe(0);
    }
  });

  it('writes compare.json, compare.csv and compare.html, and nothing else', async () => {
    const out = join(dir, 'cmp-cascade');
    expect((await readdir(out)).sort()).toEqual(['compare.csv', 'compare.html', 'compare.json']);
    const json = JSON.parse(await readFile(join(out, 'compare.json'), 'utf8')) as Record<string, unknown> & Comparison;
    expect(Object.keys(json.totals)).toEqual(expect.arrayContaining(['storage_change_m3', 'inundated_area_change_m2', 'influence_area_change_m2', 'bands']));
    expect(json.dams.every((d) => ['new', 'gone', 'persisting', 'changed'].includes(d.change))).toBe(true);
    const csv = parseCsv(await readFile(join(out, 'compare.csv'), 'utf8'), ',');
    const header = csv[0]!.fields;
    const total = csv.find((r) => r.fields[header.indexOf('scope')] === 'total')!;
    expect(Number(total.fields[header.indexOf('storage_change_m3')])).toBeCloseTo(json.totals.storage_change_m3, 3);
    expect(csv.filter((r) => r.fields[header.indexOf('scope')] === 'dam')).toHaveLength(json.dams.length);
    const html = await readFile(join(out, 'compare.html'), 'utf8');
    // Valid HTML by html-validate's recommended rules (a general-purpose validator).
    const report = await new HtmlValidate({ extends: ['html-validate:recommended'] }).validateString(html);
    expect(report.results.flatMap((r) => r.messages.map((m) => `${m.line}:${m.column} ${m.ruleId}: ${m.message}`))).toEqual([]);
    expect(html).toContain('data:image/png;base64,');
    expect(html).not.toMatch(/https?:\/\/(?!www\.w3\.org\/2000\/svg)/); // self-contained: no link but the SVG namespace
  });

  it('writes the same bytes for the same runs (no clock, seeded pair samples)', async () => {
    await compare(['y1', 'cascade'], 'cmp-once');
    await compare(['y1', 'cascade'], 'cmp-twice');
    for (const f of ['compare.json', 'compare.csv', 'compare.html']) {
      const once = await readFile(join(dir, 'cmp-once', f), 'utf8');
      expect(once.length).toBeGreaterThan(100);
      expect(await readFile(join(dir, 'cmp-twice', f), 'utf8')).toBe(once);
    }
  });

  it('refuses to write over a run folder, and replaces an earlier comparison', async () => {
    await expect(compare(['y1', 'add'], 'y1')).rejects.toThrow(/did not write/);
    await expect(compare(['y1', 'add'], 'cmp-add')).resolves.toBeTruthy();
  });
});

describe('more than two runs', () => {
  it('compares each run with the one before, and the first with the last at the top level', async () => {
    const c = await compare(['y1', 'add', 'cascade'], 'cmp-three');
    expect(c.pairs.map((p) => [p.from, p.to])).toEqual([['y1', 'add'], ['add', 'cascade']]);
    const sum = c.pairs[0]!.totals.storage_change_m3 + c.pairs[1]!.totals.storage_change_m3;
    expect(c.totals.storage_change_m3 / sum).toBeCloseTo(1, 9);
    expect(c.dams.find((d) => d.id === 'low')!.change).toBe('new');
    expect(c.pairs[1]!.dams.find((d) => d.id === 'new1')!.change).toBe('gone');
    const csv = parseCsv(await readFile(join(dir, 'cmp-three', 'compare.csv'), 'utf8'), ',');
    const totals = csv.filter((r) => r.fields[2] === 'total').map((r) => `${r.fields[0]}→${r.fields[1]}`);
    expect(totals).toEqual(['y1→cascade', 'y1→add', 'add→cascade']);
  });
});

describe('matching and classing between surveys', () => {
  it('matches dams whose ids changed by crest proximity and classes a breach as changed', async () => {
    const c = await compare(['y1', 'renamed'], 'cmp-renamed');
    const rows = c.dams.map((d) => [d.id, d.id_from, d.matched_by, d.change]);
    expect(rows).toEqual([
      ['S24-001', 'a', 'proximity', expect.stringMatching(/persisting|changed/)],
      ['S24-002', 'up', 'proximity', 'changed'],
    ]);
    // Crests 3 m apart across the valley (the test moved them by 3 m).
    expect(c.dams[0]!.distance_m!).toBeCloseTo(3, 1);
    expect(c.dams[1]!.reasons).toContain('status');
  });

  it('leaves dams farther apart than the tolerance unmatched', async () => {
    const c = await compare(['y1', 'renamed'], 'cmp-tight', { match: { toleranceM: 2, idConflictM: 100, heightChangeM: 0.1, volumeChangeFraction: 0.1, volumeChangeMinM3: 1 } });
    expect(c.dam_counts).toEqual({ new: 2, gone: 2, persisting: 0, changed: 0 });
  });
});

describe('runs on different DEMs', () => {
  it('reports the DEM-difference level of detection LoD95 = 1.96·√(σ₁² + σ₂²)', async () => {
    // The second run as an older run would be: no DEM RMSE stated, so QL2's 0.10 m is assumed.
    const summaryPath = join(runs['otherDem']!.runDir, 'summary.json');
    const s = JSON.parse(await readFile(summaryPath, 'utf8')) as { parameters: Record<string, unknown> };
    delete s.parameters['dem_rmse_m'];
    await writeFile(summaryPath, JSON.stringify(s));
    const c = await compare(['y1', 'otherDem'], 'cmp-dem');
    expect(c.dem_difference.same_dem).toBe(false);
    expect(c.dem_difference.sigma_to_source).toMatch(/QL2/);
    expect(c.dem_difference.sigma_to_m).toBe(0.1);
    // The first run states 0.10 m, or states nothing and QL2's 0.10 m is assumed (USGS Lidar
    // Base Specification), so LoD95 = 1.96·√(0.01 + 0.01) = 0.277186 m (Lane et al. 2003; Brasington et al. 2003).
    expect(c.dem_difference.sigma_from_m).toBe(0.1);
    expect(c.dem_difference.lod95_m!).toBeCloseTo(0.277186, 6);
    const c2 = await compare(['y1', 'otherDem'], 'cmp-dem2', { demRmseM: [0.05, 0.15] });
    expect(c2.dem_difference.lod95_m!).toBeCloseTo(lod95M(0.05, 0.15), 12);
    expect(c2.dem_difference.sigma_to_source).toBe('option');
    // Depth changes of a 2 cm noise are under the LoD: nothing is called changed on the map,
    // while the unthresholded raster sum still follows the totals.
    if (c.change_map.available) {
      expect(c.change_map.threshold_m).toBeCloseTo(0.277186, 6);
      expect(Math.abs(c.change_map.storage_change_above_threshold_m3)).toBeLessThan(Math.abs(c.change_map.storage_change_m3) + 1e-9);
    } else {
      throw new Error('expected a change map on aligned DEMs');
    }
  });
});

describe('bands from per-draw files', () => {
  // Synthetic per-draw figures in the documented draws.csv format: a DEM error
  // shared by both runs (draw k of each saw the same field) plus a little of each run's own.
  async function writeDraws(runName: string, shared: Float64Array, own: Float64Array, base: number, seed: number): Promise<void> {
    const runDir = runs[runName]!.runDir;
    const lines = ['draw,scope,id,storage_m3,inundated_area_m2,volume_m3'];
    const dams = runs[runName]!.summary.dams;
    for (let k = 0; k < shared.length; k++) {
      lines.push(`${k},total,,${base + shared[k]! + own[k]!},${1000 + shared[k]!},`);
      // Each dam takes its share of the draw's errors.
      for (const d of dams) lines.push(`${k},dam,${d.id},,,${d.volume_m3 + ((shared[k]! + own[k]!) * d.volume_m3) / base}`);
    }
    await writeFile(join(runDir, 'draws.csv'), lines.join('\n') + '\n');
    const summaryPath = join(runDir, 'summary.json');
    const s = JSON.parse(await readFile(summaryPath, 'utf8')) as { parameters: Record<string, unknown> };
    s.parameters['seed'] = seed;
    s.parameters['draws'] = shared.length;
    await writeFile(summaryPath, JSON.stringify(s));
  }

  it('pairs draws on the same DEM and seed, and the paired band is narrower than the independent one', async () => {
    const rng = createRng(99);
    const n = 400;
    const shared = new Float64Array(n);
    const ownA = new Float64Array(n);
    const ownB = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      shared[k] = 40 * normal(rng);
      ownA[k] = 2 * normal(rng);
      ownB[k] = 2 * normal(rng);
    }
    const vA = runs['y1']!.summary.totals.storage_m3;
    const vB = runs['add']!.summary.totals.storage_m3;
    await writeDraws('y1', shared, ownA, vA, 5);
    await writeDraws('add', shared, ownB, vB, 5);
    const paired = await compare(['y1', 'add'], 'cmp-paired');
    expect(paired.totals.band_methods['storage_change_m3']).toBe('paired');
    const pb = paired.totals.bands!['storage_change_m3']!;
    // Another seed: the draws are independent.
    await writeDraws('add', shared, ownB, vB, 6);
    const indep = await compare(['y1', 'add'], 'cmp-indep');
    expect(indep.totals.band_methods['storage_change_m3']).toBe('independent');
    const ib = indep.totals.bands!['storage_change_m3']!;
    expect(pb.p95 - pb.p05).toBeLessThan((ib.p95 - ib.p05) / 5);
    // Paired: the change is vB − vA + (ownB − ownA), ownB − ownA ~ N(0, 2√2); 90 % band ±1.645·2.83 = ±4.65 m³ (normal quantile).
    expect(pb.p95 - pb.p05).toBeGreaterThan(2 * 4.65 * 0.8);
    expect(pb.p95 - pb.p05).toBeLessThan(2 * 4.65 * 1.2);
    expect(paired.totals.detectable['storage_change_m3']).toBe(true);
    // The independent band (σ ≈ 40√2 = 57 m³, 90 % half-width ≈ 94 m³) holds zero: new1's pond
    // (V = M·H³/(3S) ≈ 42 m³ at H = 0.5 m) is smaller than the DEM error the runs do not share.
    expect(vB - vA).toBeLessThan(94);
    expect(indep.totals.detectable['storage_change_m3']).toBe(false);
    // Per dam too: the persisting dam's paired band is narrower than its independent one,
    // and the new dam's band is its own draws against zero.
    const width = (c: Comparison, id: string): number => {
      const b = c.dams.find((d) => d.id === id)!.volume_change_band!;
      return b.p95 - b.p05;
    };
    expect(width(paired, 'a')).toBeLessThan(width(indep, 'a') / 3);
    const newBand = paired.dams.find((d) => d.id === 'new1')!.volume_change_band!;
    expect(newBand.p05).toBeLessThan(dam('add', 'new1').volume_m3);
    expect(newBand.p95).toBeGreaterThan(dam('add', 'new1').volume_m3);
    for (const name of ['y1', 'add']) await rm(join(runs[name]!.runDir, 'draws.csv'));
  });
});

describe('watersheds and valleys of different size', () => {
  // The runs as they read once watersheds are reported: the lower valley (dams a and new1,
  // 150 m of stream, 4500 m² of valley bottom) and the upper one (dam up).
  async function addWatersheds(runName: string): Promise<void> {
    const runDir = runs[runName]!.runDir;
    const summaryPath = join(runDir, 'summary.json');
    const s = JSON.parse(await readFile(summaryPath, 'utf8')) as Summary & Record<string, unknown>;
    const shed = (id: string): string => (id === 'up' ? 'upper' : 'lower');
    const rows = ['lower', 'upper'].map((id) => {
      const dams = s.dams.filter((d) => shed(d.id) === id);
      let storage = 0;
      let area = 0;
      for (const d of dams) {
        storage += d.volume_m3;
        area += d.area_m2;
      }
      return { id, dam_count: dams.length, stream_length_m: 150, inundated_area_m2: area, influence_area_m2: 2 * area, valley_bottom_area_m2: 4500, storage_m3: storage };
    });
    s['watersheds'] = rows;
    (s.totals as unknown as Record<string, unknown>)['influence_area_m2'] = rows[0]!.influence_area_m2 + rows[1]!.influence_area_m2;
    // The totals of the land figures are the rows' sums, as an estimate writes them.
    (s.totals as unknown as Record<string, unknown>)['stream_length_m'] = 300;
    (s.totals as unknown as Record<string, unknown>)['valley_bottom_area_m2'] = 9000;
    for (const d of s.dams) (d as unknown as Record<string, unknown>)['watershed'] = shed(d.id);
    await writeFile(summaryPath, JSON.stringify(s));
    // Draws with dam rows only: each dam its deterministic volume plus a shared error.
    const lines = ['draw,scope,id,storage_m3,inundated_area_m2,volume_m3,area_m2'];
    for (let k = 0; k < 200; k++) {
      const e = (k % 20) - 9.5;
      lines.push(`${k},total,,${s.totals.storage_m3 + e * s.dams.length},${s.totals.inundated_area_m2},,`);
      for (const d of s.dams) lines.push(`${k},dam,${d.id},,,${d.volume_m3 + e},${d.area_m2}`);
    }
    await writeFile(join(runDir, 'draws.csv'), lines.join('\n') + '\n');
  }

  it('differences each watershed, with bands summed from the dam draws, and normalises by stream and valley bottom', async () => {
    await addWatersheds('y1');
    await addWatersheds('add');
    const c = await compare(['y1', 'add'], 'cmp-sheds');
    const lower = c.watersheds!.find((w) => w.id === 'lower')!;
    const upper = c.watersheds!.find((w) => w.id === 'upper')!;
    const v = dam('add', 'new1').volume_m3;
    expect(lower.storage_change_m3! / v).toBeCloseTo(1, 12);
    expect(upper.storage_change_m3).toBe(0);
    // Per-draw watershed sums: lower holds one more dam, so each draw adds e once more;
    // the independent band of that (e uniform on ±9.5, two dams against three) is not a point.
    expect(lower.band_methods['storage_change_m3']).toMatch(/paired|independent/);
    expect(lower.bands!['storage_change_m3']!.p95).toBeGreaterThan(lower.bands!['storage_change_m3']!.p05);
    expect(c.totals.influence_area_change_m2).not.toBeNull();
    const n = c.runs[1]!.normalised;
    expect(n.available).toBe(true);
    // 300 m of stream in all: storage per km = storage / 0.3 km; dams per km = dams / 0.3 km.
    expect(n.total.storage_per_stream_km_m3!).toBeCloseTo(runs['add']!.summary.totals.storage_m3 / 0.3, 6);
    expect(n.total.dams_per_stream_km!).toBeCloseTo(3 / 0.3, 9);
    expect(n.total.storage_per_valley_bottom_km2_m3!).toBeCloseTo(runs['add']!.summary.totals.storage_m3 / 0.009, 3);
    expect(n.watersheds.find((w) => w.id === 'upper')!.valley_bottom_influenced_pct!).toBeCloseTo((100 * 2 * dam('add', 'up').area_m2) / 4500, 9);
    const html = await readFile(join(dir, 'cmp-sheds', 'compare.html'), 'utf8');
    expect(html).toContain('id="watersheds"');
    for (const name of ['y1', 'add']) await rm(join(runs[name]!.runDir, 'draws.csv'));
  });
});

describe('bad input', () => {
  it('names a folder that is not a run', async () => {
    const empty = join(dir, 'not-a-run');
    await mkdir(empty, { recursive: true });
    await expect(runCompare({ runDirs: [runs['y1']!.runDir, empty], outDir: join(dir, 'cmp-bad') })).rejects.toThrow(/no summary\.json/);
  });
});
