/**
 * The demo's two survey years: the earlier inventory derived from the later
 * one, run on the same DEM, and their comparison (the cascade MS-05 over
 * MS-06 and the breach of MS-04 are the demo's story; src/demo/dam-table.ts).
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCompare } from '../src/cli/compare-command.js';
import type { Comparison } from '../src/compare/compare.js';
import { earlierSurvey, EARLIER_SURVEY_YEAR } from '../src/demo/earlier-survey.js';
import { generateDemoValley, type DemoScene } from '../src/demo/index.js';
import { writeDamsGeoJson } from '../src/io/write-dams.js';
import { writeSceneInputs } from '../src/io/write-scene.js';
import { defaultParams, runEstimate } from '../src/pipeline/run.js';

let dir: string;
let scene: DemoScene;
let c: Comparison;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'pondage-demo-years-'));
  scene = generateDemoValley({ seed: 5, width: 1000, height: 800 });
  const inputs = await writeSceneInputs(join(dir, 'inputs'), scene);
  const early = join(dir, 'inputs', 'dams-early.geojson');
  await writeDamsGeoJson(early, scene.epsg, earlierSurvey(scene.dams));
  const params = defaultParams();
  if (params.uncertainty) params.uncertainty.draws = 0;
  await runEstimate({ demPaths: [inputs.demPath], damsPath: early, outDir: join(dir, 'early'), params });
  await runEstimate({ demPaths: [inputs.demPath], damsPath: inputs.damsPath, outDir: join(dir, 'late'), params });
  c = await runCompare({ runDirs: [join(dir, 'early'), join(dir, 'late')], outDir: join(dir, 'compare'), labels: ['2019', '2024'] });
}, 120_000);

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('the demo survey years', () => {
  it('leaves out every dam first seen after the earlier year and keeps the rest', () => {
    const early = earlierSurvey(scene.dams);
    expect(early.every((d) => d.properties.year <= EARLIER_SURVEY_YEAR)).toBe(true);
    expect(early.map((d) => d.id)).toEqual(scene.dams.filter((d) => d.properties.year <= EARLIER_SURVEY_YEAR).map((d) => d.id));
    expect(early.some((d) => d.properties.status === 'proposed' || d.properties.status === 'candidate')).toBe(false);
  });

  it('has the dam breached by the later survey standing in the earlier one, at its crest line’s height', () => {
    const ms04 = earlierSurvey(scene.dams).find((d) => d.id === 'MS-04')!;
    expect(ms04.properties.status).toBe('confirmed');
    expect(ms04.properties.height_m).toBeCloseTo(scene.dams.find((d) => d.id === 'MS-04')!.truth.lineReachM, 2);
  });

  it('compares the two years: new dams, the breach and the cascade are named, rows add up', () => {
    const byId = new Map(c.dams.map((d) => [d.id, d]));
    expect(byId.get('MS-05')!.change).toBe('new');
    expect(byId.get('MS-04')!.change).toBe('changed');
    expect(byId.get('MS-04')!.reasons).toContain('status');
    expect(byId.get('MS-06')!.drowned_by_to).toBe('MS-05');
    expect(c.dam_counts.gone).toBe(0);
    let sum = 0;
    for (const d of c.dams) sum += d.volume_change_m3;
    expect(sum).toBe(c.totals.storage_change_m3);
    expect(c.runs[1]!.proposed.with_proposed!.proposed_counted).toBe(scene.facts.cases.proposed.length);
  });
});
