/**
 * The demo valley's watersheds, at a reduced size (1000 × 800 cells): the
 * sub-watershed polygons the demo passes with --watersheds hold their own
 * valleys' dams and add up to the totals, and the watersheds the estimate
 * derives from the DEM when none are given cover every cell of it.
 */
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateDemoValley, type DemoScene } from '../src/demo/index.js';
import { DEMO_LOWER_ID, demoWatershedLabels } from '../src/demo/watersheds.js';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import { crsFromEpsg } from '../src/io/crs.js';
import { writeLabelPolygons } from '../src/io/write-label-polygons.js';
import { writeSceneInputs } from '../src/io/write-scene.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';
import type { Summary } from '../src/pipeline/summary.js';
import { EDGE_WATERSHED_ID } from '../src/pipeline/watersheds-stage.js';
import type { WatershedRow } from '../src/tally/watersheds.js';

let dir: string;
let scene: DemoScene;
let named: Summary;
let derived: Summary;
let demoLabels: ReturnType<typeof demoWatershedLabels>;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-demo-ws-'));
  scene = generateDemoValley({ seed: 5, width: 1000, height: 800, waterSurfaces: true });
  const inputs = await writeSceneInputs(join(dir, 'inputs'), scene);
  const ws = demoWatershedLabels(scene);
  demoLabels = ws;
  const wsPath = join(dir, 'inputs', 'watersheds.geojson');
  await writeLabelPolygons(wsPath, { labels: ws.labels, width: scene.width, transform: scene.transform, crs: crsFromEpsg(scene.epsg), units: ws.units });
  const params = defaultParams();
  params.uncertainty!.draws = 30;
  await runEstimate({ demPaths: [inputs.demPath], damsPath: inputs.damsPath, watershedsPath: wsPath, watershedField: 'id', outDir: join(dir, 'named'), params });
  named = JSON.parse(await readFile(join(dir, 'named', 'summary.json'), 'utf8')) as Summary;
  const plain = defaultParams();
  plain.uncertainty!.draws = 0;
  // A smaller unit than the default, for a valley of 0.8 km².
  plain.influence!.minWatershedAreaM2 = 100_000;
  await runEstimate({ demPaths: [inputs.demPath], damsPath: inputs.damsPath, outDir: join(dir, 'derived'), params: plain });
  derived = JSON.parse(await readFile(join(dir, 'derived', 'summary.json'), 'utf8')) as Summary;
}, 120_000);

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('the demo valley by its sub-watersheds', () => {
  it('reports the three sub-watersheds and the lower main stem, each holding its own valley\'s dams', () => {
    const rows = named.watersheds as WatershedRow[];
    expect(rows.map((r) => r.id)).toEqual(['main-upper', 'trib-a', 'trib-b', DEMO_LOWER_ID]);
    expect(rows.find((r) => r.id === 'trib-a')!.name).toBe('tributary A');
    const byId = new Map(named.dams.map((d) => [d.id, d.watershed]));
    // The rule: a dam lies in the watershed of its crest's lowest DEM cell (a point dam: its cell), read here
    // from the generator's own labels, which the polygons carried through the run at cell centres.
    const { labels, units } = demoLabels;
    for (const d of scene.dams) {
      let cell: number;
      if (d.geometry.kind === 'point') {
        cell = Math.floor((scene.transform.y0 - d.geometry.y) / scene.cellM) * scene.width + Math.floor((d.geometry.x - scene.transform.x0) / scene.cellM);
      } else {
        cell = -1;
        for (const i of rasteriseLines(scene, d.geometry.lines).cells) if (cell < 0 || scene.z[i]! < scene.z[cell]!) cell = i;
      }
      expect([d.id, byId.get(d.id)]).toEqual([d.id, units[labels[cell]! - 1]!.id]);
    }
    // Every dam of tributary B is in trib-b; of tributary A, all but a crest drawn across into the main valley at this reduced size.
    const inOwn = (ch: string, id: string): number => scene.dams.filter((d) => d.truth.channelId === ch && byId.get(d.id) === id).length;
    const onChannel = (ch: string): number => scene.dams.filter((d) => d.truth.channelId === ch).length;
    expect(inOwn('TB', 'trib-b')).toBe(onChannel('TB'));
    expect(inOwn('TA', 'trib-a')).toBeGreaterThanOrEqual(onChannel('TA') - 1);
    expect(scene.dams.filter((d) => d.truth.channelId === 'MS' && byId.get(d.id)!.startsWith('trib'))).toEqual([]);
    expect(rows.every((r) => r.dam_count > 0 && (r.stream_length_m ?? 0) > 0 && (r.valley_bottom_area_m2 ?? 0) > 0)).toBe(true);
    expect(named.warnings.some((w) => w.code === 'dams-outside-watersheds')).toBe(false);
  });

  it('adds the rows up to the totals: counts, areas (1 m² cells) and the DEM\'s area exactly, storage to rounding', () => {
    const rows = named.watersheds as WatershedRow[];
    const t = named.totals;
    const sum = (f: (r: WatershedRow) => number): number => rows.reduce((s, r) => s + f(r), 0);
    expect(sum((r) => r.dam_count)).toBe(t.dam_count);
    expect(sum((r) => r.dams_in_totals)).toBe(t.dams_in_totals);
    expect(sum((r) => r.inundated_area_m2)).toBe(t.inundated_area_m2);
    expect(sum((r) => r.influence_area_m2)).toBe(t.influence_area_m2);
    expect(sum((r) => r.area_m2 ?? 0)).toBe(scene.width * scene.height);
    expect(sum((r) => r.storage_m3)).toBe(t.storage_m3); // exact: per-dam figures are whole multiples of FIGURE_STEP
    expect(sum((r) => r.storage_below_surface_m3)).toBe(t.storage_below_surface_m3 ?? 0);
    // Bands of rows with water exist and bracket the row's median.
    for (const r of rows) {
      const b = r.bands!['storage_m3']!;
      expect(b.p05).toBeLessThanOrEqual(b.p50);
      expect(b.p50).toBeLessThanOrEqual(b.p95);
    }
  });
});

describe('watersheds derived from the demo DEM', () => {
  it('cover the DEM: every cell lies in exactly one watershed (the rows\' areas add up to the DEM\'s)', () => {
    const rows = derived.watersheds as WatershedRow[];
    // Each cell carries one label (an Int32 per cell), so the areas add up to the DEM's only when every cell has one.
    expect(rows.reduce((s, r) => s + (r.area_m2 ?? 0), 0)).toBe(scene.width * scene.height);
    expect(rows.filter((r) => r.source === 'derived').length).toBeGreaterThan(1);
    expect(rows.every((r) => r.source !== 'outside')).toBe(true);
    for (const r of rows) expect(r.id === EDGE_WATERSHED_ID || /^ws-\d+$/.test(r.id)).toBe(true);
    expect(derived.parameters['watersheds_source']).toBe('derived from the DEM');
  });

  it('puts every dam in a watershed and tallies the same totals as the named run', () => {
    expect(derived.dams.every((d) => typeof d.watershed === 'string' && d.watershed !== 'outside')).toBe(true);
    expect(derived.totals.storage_m3).toBe(named.totals.storage_m3);
    expect(derived.totals.influence_area_m2).toBe(named.totals.influence_area_m2);
  });
});
