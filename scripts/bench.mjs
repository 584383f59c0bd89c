// pondage benchmark: a seeded 5000 × 5000 landscape of 1 m cells with 500
// dams, written as a GeoTIFF and a GeoJSON inventory, then the full estimate
// (every pond with its stage–storage curve, the combined water surface and
// all outputs) timed over repeats in fresh processes. When GRASS GIS is
// installed, r.lake floods 10 of the same dams at the same levels and the
// time ratio is printed. Then the influence stage (terrain of the whole DEM,
// derived watersheds, influence zone) is timed on its own in fresh processes,
// and, with GRASS, r.watershed on the same DEM beside it.
//
// Usage: npm run bench [-- --size 5000 --dams 500 --repeats 3 --seed 7]
//        npm run bench -- --only influence   (the landscape, then the influence stage and r.watershed only)
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { generateBenchScene } from '../dist/demo/index.js';
import { writeSceneInputs } from '../dist/io/write-scene.js';
import { rlakeSideBySide } from './bench-rlake.mjs';
import { rwatershedSideBySide } from './bench-rwatershed.mjs';

const args = Object.fromEntries(
  process.argv.slice(2).reduce((acc, a, k, all) => (a.startsWith('--') ? [...acc, [a.slice(2), all[k + 1]]] : acc), []),
);
const size = Number(args.size ?? 5000);
const damCount = Number(args.dams ?? 500);
const repeats = Number(args.repeats ?? 3);
const seed = Number(args.seed ?? 1);
const only = args.only ?? 'all';
if (only !== 'all' && only !== 'influence') {
  console.error(`--only takes "influence" (or leave it out for the whole bench); got "${only}"`);
  process.exit(2);
}
const root = resolve('bench-out');
rmSync(root, { recursive: true, force: true });
mkdirSync(root, { recursive: true });

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const line = (label, value) => console.log(`${label.padEnd(34)} ${value}`);

console.log(`pondage bench — ${new Date().toISOString().slice(0, 10)}, node ${process.version}, ${os()}`);
let t = performance.now();
const scene = generateBenchScene({ seed, width: size, height: size, damCount });
line('generate landscape', `${((performance.now() - t) / 1000).toFixed(2)} s (${size} × ${size} cells, ${scene.dams.length} dams)`);
t = performance.now();
const inputs = await writeSceneInputs(join(root, 'inputs'), scene);
line('write inputs (GeoTIFF + GeoJSON)', `${((performance.now() - t) / 1000).toFixed(2)} s`);

// Deterministic (no draws) and with the default 1,000 draws, each in fresh processes.
function estimateRuns(draws) {
  const runs = [];
  for (let k = 0; k < repeats; k++) {
    const out = spawnSync(process.execPath, ['scripts/bench-estimate.mjs', inputs.demPath, inputs.damsPath, join(root, 'results'), String(draws)], { encoding: 'utf8' });
    if (out.status !== 0) {
      console.error(out.stderr);
      process.exit(1);
    }
    runs.push(JSON.parse(out.stdout.trim().split('\n').pop()));
  }
  return runs;
}
// The estimate, deterministic and with draws, and r.lake beside it (skipped with --only influence).
async function estimateSection() {
  const runs = estimateRuns(0);
  const drawRuns = estimateRuns(1000);
  const walls = runs.map((r) => r.wallS);
  const rss = runs.map((r) => r.maxRssMiB);
  const r0 = runs[0];
  line('estimate, deterministic (median)', `${median(walls).toFixed(2)} s  [min ${Math.min(...walls).toFixed(2)}, max ${Math.max(...walls).toFixed(2)}; ${repeats} runs]  goal < 20 s`);
  line('  peak memory (median)', `${median(rss).toFixed(0)} MiB  goal < 2048 MiB`);
  line('  dams estimated', `${r0.damsEstimated} of ${scene.dams.length}`);
  line('  cells visited by the floods', `${r0.cellsVisited.toLocaleString('en-US')}  (${(r0.cellsVisited / median(walls) / 1e6).toFixed(2)} M cells/s of run wall time)`);
  line('  total storage', `${r0.storageM3.toFixed(0)} m³`);
  const dWalls = drawRuns.map((r) => r.wallS);
  line('estimate, 1,000 draws (median)', `${median(dWalls).toFixed(2)} s  (draws stage ${median(drawRuns.map((r) => r.drawsS)).toFixed(2)} s; peak ${median(drawRuns.map((r) => r.maxRssMiB)).toFixed(0)} MiB)`);
  line('  ratio to deterministic', `${(median(dWalls) / median(walls)).toFixed(2)} ×  goal < 2 ×`);
  const rlake = await rlakeSideBySide({ demPath: inputs.demPath, damsPath: inputs.damsPath, work: join(root, 'rlake'), count: 10 });
  if (rlake) {
    line('r.lake, 10 dams (flood only)', `${rlake.rlakeS.toFixed(2)} s`);
    line('pondage, same 10 dams (fill only)', `${rlake.pondageS.toFixed(3)} s`);
    line('time ratio r.lake / pondage', `${(rlake.rlakeS / rlake.pondageS).toFixed(1)} ×  (same levels; cell counts agree on ${rlake.agree} of ${rlake.count})`);
    for (const m of rlake.mismatches) line(`  ${m.dam}: pondage / r.lake cells`, `${m.pondage} / ${m.rlake}`);
  } else {
    line('r.lake side by side', 'skipped (GRASS GIS not installed: apt-get install grass-core)');
  }
  return { runs, drawRuns, rlake };
}
const { runs, drawRuns, rlake } = only === 'influence' ? { runs: [], drawRuns: [], rlake: null } : await estimateSection();

// The influence stage: fill, D8, accumulation, streams, HAND, watersheds and the influence zone over the whole DEM.
const stages = [];
for (let k = 0; k < repeats; k++) {
  const out = spawnSync(process.execPath, ['scripts/bench-terrain.mjs', inputs.demPath, inputs.damsPath], { encoding: 'utf8' });
  if (out.status !== 0) {
    console.error(out.stderr);
    process.exit(1);
  }
  stages.push(JSON.parse(out.stdout.trim().split('\n').pop()));
}
const med = (key) => median(stages.map((r) => r[key]));
const work = (r) => r.terrainS + r.watershedsS + r.influenceS;
const workS = median(stages.map(work));
line('influence stage: read the DEM', `${med('readS').toFixed(2)} s  (${stages[0].cells.toLocaleString('en-US')} cells)`);
line('  fill, D8, accum, streams, HAND', `${med('terrainS').toFixed(2)} s`);
const step = (key) => median(stages.map((r) => r.terrainStepsS[key])).toFixed(2);
line('    fill with D8 | flats | routing', `${step('fillS')} | ${step('flatsS')} | ${step('routingS')} s`);
line('    links | HAND, valley bottom', `${step('linksS')} | ${step('drainageS')} s`);
line('  watersheds (derived, tallied)', `${med('watershedsS').toFixed(2)} s  (${stages[0].watersheds} watersheds, ${stages[0].streamLinks} stream links)`);
line('  influence zone', `${med('influenceS').toFixed(2)} s  (${(stages[0].influenceAreaM2 / 1e4).toFixed(1)} ha)`);
line('  together (median)', `${workS.toFixed(2)} s  [min ${Math.min(...stages.map(work)).toFixed(2)}, max ${Math.max(...stages.map(work)).toFixed(2)}; ${repeats} runs]  goal < 15 s`);
line('  peak memory (median)', `${med('maxRssMiB').toFixed(0)} MiB (${med('rssBeforeMiB').toFixed(0)} MiB before the stage)  goal < 3072 MiB`);
const cellAreaM2 = scene.cellM ** 2;
const rws = rwatershedSideBySide({ demPath: resolve(inputs.demPath), work: join(root, 'rwatershed'), thresholdCells: Math.round(100_000 / cellAreaM2) });
if (rws) {
  const oursS = median(stages.map((r) => r.terrainS + r.watershedsS));
  line('r.watershed -s (same DEM)', `${rws.rwatershedS.toFixed(2)} s`);
  line('pondage fill … watersheds', `${oursS.toFixed(2)} s`);
  line('time ratio r.watershed / pondage', `${(rws.rwatershedS / oursS).toFixed(2)} ×`);
} else {
  line('r.watershed side by side', 'skipped (GRASS GIS not installed: apt-get install grass-core)');
}
writeFileSync(join(root, 'bench.json'), JSON.stringify({ size, damCount, seed, runs, drawRuns, rlake, influenceStage: stages, rwatershed: rws }, null, 2));

function os() {
  try {
    const cpu = execFileSync('sh', ['-c', "grep -m1 'model name' /proc/cpuinfo | cut -d: -f2"], { encoding: 'utf8' }).trim();
    return `${cpu}, ${execFileSync('nproc', { encoding: 'utf8' }).trim()} cores`;
  } catch {
    return 'unknown machine';
  }
}
