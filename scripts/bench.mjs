// pondage benchmark: a seeded 5000 × 5000 landscape of 1 m cells with 500
// dams, written as a GeoTIFF and a GeoJSON inventory, then the full estimate
// (every pond with its stage–storage curve, the combined water surface and
// all outputs) timed over repeats in fresh processes. When GRASS GIS is
// installed, r.lake floods 10 of the same dams at the same levels and the
// time ratio is printed.
//
// Usage: npm run bench [-- --size 5000 --dams 500 --repeats 3 --seed 7]
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { generateBenchScene } from '../dist/demo/index.js';
import { writeSceneInputs } from '../dist/io/write-scene.js';
import { rlakeSideBySide } from './bench-rlake.mjs';

const args = Object.fromEntries(
  process.argv.slice(2).reduce((acc, a, k, all) => (a.startsWith('--') ? [...acc, [a.slice(2), all[k + 1]]] : acc), []),
);
const size = Number(args.size ?? 5000);
const damCount = Number(args.dams ?? 500);
const repeats = Number(args.repeats ?? 3);
const seed = Number(args.seed ?? 1);
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

const runs = [];
for (let k = 0; k < repeats; k++) {
  const out = spawnSync(process.execPath, ['scripts/bench-estimate.mjs', inputs.demPath, inputs.damsPath, join(root, 'results')], { encoding: 'utf8' });
  if (out.status !== 0) {
    console.error(out.stderr);
    process.exit(1);
  }
  runs.push(JSON.parse(out.stdout.trim().split('\n').pop()));
}
const walls = runs.map((r) => r.wallS);
const rss = runs.map((r) => r.maxRssMiB);
const r0 = runs[0];
line('estimate wall time (median)', `${median(walls).toFixed(2)} s  [min ${Math.min(...walls).toFixed(2)}, max ${Math.max(...walls).toFixed(2)}; ${repeats} runs]  goal < 20 s`);
line('estimate peak memory (median)', `${median(rss).toFixed(0)} MiB  goal < 2048 MiB`);
line('dams estimated', `${r0.damsEstimated} of ${scene.dams.length}`);
line('cells visited by the floods', `${r0.cellsVisited.toLocaleString('en-US')}  (${(r0.cellsVisited / median(walls) / 1e6).toFixed(2)} M cells/s of run wall time)`);
line('total storage', `${r0.storageM3.toFixed(0)} m³`);

const rlake = await rlakeSideBySide({ demPath: inputs.demPath, damsPath: inputs.damsPath, work: join(root, 'rlake'), count: 10 });
if (rlake) {
  line('r.lake, 10 dams (flood only)', `${rlake.rlakeS.toFixed(2)} s`);
  line('pondage, same 10 dams (fill only)', `${rlake.pondageS.toFixed(3)} s`);
  line('time ratio r.lake / pondage', `${(rlake.rlakeS / rlake.pondageS).toFixed(1)} ×  (same levels; cell counts agree on ${rlake.agree} of ${rlake.count})`);
} else {
  line('r.lake side by side', 'skipped (GRASS GIS not installed: apt-get install grass-core)');
}
writeFileSync(join(root, 'bench.json'), JSON.stringify({ size, damCount, seed, runs, rlake }, null, 2));

function os() {
  try {
    const cpu = execFileSync('sh', ['-c', "grep -m1 'model name' /proc/cpuinfo | cut -d: -f2"], { encoding: 'utf8' }).trim();
    return `${cpu}, ${execFileSync('nproc', { encoding: 'utf8' }).trim()} cores`;
  } catch {
    return 'unknown machine';
  }
}
