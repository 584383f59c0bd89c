/** `pondage demo`: generate the fictional valley, write it as inputs, run the estimate on it. */
import type { Command } from 'commander';
import { join } from 'node:path';
import { generateDemoValley } from '../demo/index.js';
import { writeSceneInputs } from '../io/write-scene.js';
import { runEstimate } from '../pipeline/run.js';
import { runDemoSurveys } from './demo-compare.js';
import { addParamOptions, paramsFromFlags, type ParamFlags } from './estimate-command.js';
import { parseNumber } from './options.js';
import { progressBar } from './progress.js';
import { runTable } from './table.js';
import { demoWatershedLabels } from '../demo/watersheds.js';
import { crsFromEpsg } from '../io/crs.js';
import { writeLabelPolygons } from '../io/write-label-polygons.js';
import { watershedTable } from './watershed-table.js';
import { writtenFiles } from './estimate-command.js';

interface DemoFlags extends ParamFlags {
  out: string;
  seed: string;
  quiet?: boolean;
}

export function addDemoCommand(program: Command): void {
  const cmd = program
    .command('demo')
    .description('generate a fictional beaver valley (DEM and dam inventory) and run the estimate on it')
    .option('--out <dir>', 'folder for the demo inputs and results', 'pondage-demo')
    .option('--seed <n>', 'seed of the generated valley and of the Monte Carlo draws (the same seed gives the same files)', '20261201')
    .option('-q, --quiet', 'print nothing but errors');
  addParamOptions(cmd).action(async (flags: DemoFlags) => {
    const seed = parseNumber(flags.seed, '--seed', { integer: true, min: 0, max: 2 ** 32 - 1 });
    const params = paramsFromFlags(flags);
    const say = (text: string): void => {
      if (!flags.quiet) process.stdout.write(text);
    };
    say(`generating the fictional valley (seed ${seed})…\n`);
    const scene = generateDemoValley({ seed, waterSurfaces: true });
    const inputs = await writeSceneInputs(join(flags.out, 'inputs'), scene);
    say(`wrote ${inputs.demPath} (${scene.width} × ${scene.height} cells of ${scene.cellM} m) and ${inputs.damsPath} (${scene.dams.length} dams)\n`);
    // The valley's sub-watersheds as a mapped polygon layer (demo/watersheds.ts), reported by with --watersheds.
    const areas = params.influence ? { watershedsPath: join(flags.out, 'inputs', 'watersheds.geojson'), watershedField: 'id' } : {};
    if (areas.watershedsPath) {
      const ws = demoWatershedLabels(scene);
      await writeLabelPolygons(areas.watershedsPath, { labels: ws.labels, width: scene.width, transform: scene.transform, crs: crsFromEpsg(scene.epsg), units: ws.units });
      say(`wrote ${areas.watershedsPath} (${ws.units.map((u) => u.id).join(', ')})\n`);
    }
    say('\n');
    const outDir = join(flags.out, 'results');
    const bar = progressBar('ponds', flags.quiet ?? false);
    try {
      const { summary } = await runEstimate({
        demPaths: [inputs.demPath],
        damsPath: inputs.damsPath,
        ...areas,
        outDir,
        params,
        ...(bar.onProgress ? { progress: bar.onProgress } : {}),
      });
      bar.stop();
      say(runTable(summary));
      say(watershedTable(summary));
      say(`\nwrote ${outDir}/ (${writtenFiles(summary)})\n`);
      const byHand = areas.watershedsPath ? ` --watersheds ${areas.watershedsPath} --watershed-field id` : '';
      say(`the same run by hand: pondage estimate --dem ${inputs.demPath} --dams ${inputs.damsPath}${byHand} --out ${outDir}\n`);
      await runDemoSurveys({ scene, demPath: inputs.demPath, inputsDir: join(flags.out, 'inputs'), demoDir: flags.out, laterRunDir: outDir, params, say, extra: areas });
    } finally {
      bar.stop();
    }
  });
}
