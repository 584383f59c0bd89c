// The influence stage timed on its own, in its own process so its peak
// memory is its own: the ponds are estimated first (no draws; not timed),
// then the stage reads the whole DEM and runs depression filling, D8,
// accumulation, streams, HAND and the valley bottom, derived watersheds, and
// the influence zone with its tallies (the files are not written).
// Usage: node scripts/bench-terrain.mjs DEM DAMS   → prints one JSON line.
import { loadInputs } from '../dist/pipeline/load.js';
import { estimatePonds } from '../dist/pipeline/estimate.js';
import { defaultParams } from '../dist/pipeline/run.js';
import { runInfluence } from '../dist/pipeline/influence-run.js';

const [demPath, damsPath] = process.argv.slice(2);
const params = defaultParams();
params.uncertainty = undefined;
const loaded = await loadInputs({ demPaths: [demPath], damsPath });
const result = await estimatePonds(loaded.dem, loaded.dams, params);
const rssBeforeMiB = process.memoryUsage().rss / 2 ** 20;
const t0 = performance.now();
const run = await runInfluence(loaded.dem, loaded.dams, result, params.influence, { watersheds: null, valleyBottom: null, inputs: [] });
const stageS = (performance.now() - t0) / 1000;
await loaded.dem.close();
const t = run.outcome.timings;
process.stdout.write(
  JSON.stringify({
    stageS,
    readS: t.readS,
    terrainS: t.terrainS,
    watershedsS: t.watershedsS,
    influenceS: t.influenceS,
    terrainStepsS: t.terrainStepsS,
    cells: run.outcome.width * run.outcome.height,
    watersheds: run.tally.rows.length,
    streamLinks: run.outcome.streams.length,
    influenceAreaM2: run.tally.totals.influence_area_m2,
    rssBeforeMiB,
    maxRssMiB: process.resourceUsage().maxRSS / 1024,
  }) + '\n',
);
