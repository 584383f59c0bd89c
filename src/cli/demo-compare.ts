/**
 * The demo's second survey year and its comparison: `pondage demo` runs the
 * later survey into results/, then this writes the earlier survey's
 * inventory, runs it into results-<year>/ on the same DEM and parameters, and
 * compares the two into compare/.
 */
import { join } from 'node:path';
import { earlierSurvey, EARLIER_SURVEY_YEAR, LATER_SURVEY_YEAR } from '../demo/earlier-survey.js';
import type { DemoScene } from '../demo/index.js';
import { writeDamsGeoJson } from '../io/write-dams.js';
import type { EstimateParams } from '../pipeline/estimate.js';
import { runEstimate, type RunOptions } from '../pipeline/run.js';
import { compareLines, runCompare } from './compare-command.js';

/** Where the demo's survey comparison goes, under the demo folder. */
export const DEMO_COMPARE = { earlierRun: `results-${EARLIER_SURVEY_YEAR}`, compare: 'compare', dams: `dams-${EARLIER_SURVEY_YEAR}.geojson` } as const;

/** Runs the earlier survey and the comparison; `laterRunDir` holds the later survey's run. */
export async function runDemoSurveys(args: {
  scene: DemoScene;
  demPath: string;
  inputsDir: string;
  demoDir: string;
  laterRunDir: string;
  params: EstimateParams;
  say: (text: string) => void;
  /** Further estimate options of the later run (e.g. watersheds), so both years are estimated alike. */
  extra?: Omit<Partial<RunOptions>, 'demPaths' | 'damsPath' | 'outDir' | 'params' | 'progress'>;
}): Promise<void> {
  const dams = earlierSurvey(args.scene.dams);
  const damsPath = join(args.inputsDir, DEMO_COMPARE.dams);
  await writeDamsGeoJson(damsPath, args.scene.epsg, dams);
  const earlierDir = join(args.demoDir, DEMO_COMPARE.earlierRun);
  args.say(`\nthe ${EARLIER_SURVEY_YEAR} survey: ${dams.length} dams (${damsPath}); estimating into ${earlierDir}/…\n`);
  await runEstimate({ ...args.extra, demPaths: [args.demPath], damsPath, outDir: earlierDir, params: args.params });
  const compareDir = join(args.demoDir, DEMO_COMPARE.compare);
  const comparison = await runCompare({
    runDirs: [earlierDir, args.laterRunDir],
    outDir: compareDir,
    labels: [String(EARLIER_SURVEY_YEAR), String(LATER_SURVEY_YEAR)],
  });
  args.say(`\n${compareLines(comparison)}`);
  args.say(`wrote ${compareDir}/ (compare.json, compare.csv, compare.html)\n`);
  args.say(`the same comparison by hand: pondage compare ${earlierDir} ${args.laterRunDir} --labels ${EARLIER_SURVEY_YEAR},${LATER_SURVEY_YEAR} --out ${compareDir}\n`);
}
