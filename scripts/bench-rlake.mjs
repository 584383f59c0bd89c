// GRASS GIS r.lake side by side with pondage's fill, on the same dams at the
// same water levels: each dam's crest is raised 100 m into a window of the DEM
// (r.lake knows no crest), r.lake is seeded just upstream of the crest, and
// only the flooding commands are timed on both sides.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { openDem } from '../dist/io/dem.js';
import { readDams } from '../dist/io/dams-read.js';
import { WGS84, makeTransform } from '../dist/io/crs.js';
import { writeGeoTiff } from '../dist/io/geotiff-write.js';
import { rasteriseLines } from '../dist/grid/rasterise-line.js';
import { colToX, rowToY, windowTransform, xToCol, yToRow } from '../dist/grid/transform.js';
import { createFillScratch } from '../dist/ponds/fill.js';
import { DEFAULT_POND_PARAMS } from '../dist/ponds/params.js';
import { pondAt } from '../dist/ponds/stage-storage.js';
import { setupAndFill } from '../dist/ponds/upstream-by-fill.js';

const WINDOW_MARGIN_M = 600;

/** Returns timings and agreement, or null when GRASS is not installed. */
export async function rlakeSideBySide({ demPath, damsPath, work, count }) {
  if (spawnSync('sh', ['-c', 'command -v grass']).status !== 0) return null;
  mkdirSync(work, { recursive: true });
  const dem = await openDem([demPath]);
  const { dams } = readDams(damsPath, { lonLatToDem: makeTransform(WGS84, dem.crs) });
  const plan = [];
  let pondageS = 0;
  for (const dam of dams) {
    if (plan.length >= count) break;
    if (dam.geometry.kind !== 'line' || dam.status !== 'confirmed') continue;
    const xs = dam.geometry.lines.flat().map((p) => xToCol(dem.transform, p[0]));
    const ys = dam.geometry.lines.flat().map((p) => yToRow(dem.transform, p[1]));
    const pad = Math.ceil(WINDOW_MARGIN_M / Math.abs(dem.transform.dx));
    const col0 = Math.max(0, Math.floor(Math.min(...xs)) - pad);
    const row0 = Math.max(0, Math.floor(Math.min(...ys)) - pad);
    const col1 = Math.min(dem.width, Math.ceil(Math.max(...xs)) + pad);
    const row1 = Math.min(dem.height, Math.ceil(Math.max(...ys)) + pad);
    const grid = await dem.readWindow(col0, row0, col1 - col0, row1 - row0);
    const crest = rasteriseLines(grid, dam.geometry.lines);
    const scratch = createFillScratch(grid.width * grid.height);
    const t = performance.now();
    const done = setupAndFill(grid, dam, crest.cells, DEFAULT_POND_PARAMS, {}, scratch);
    pondageS += (performance.now() - t) / 1000;
    if ('skip' in done || done.fill.limitedBy !== 'crest') continue;
    const { setup, fill } = done;
    const z = Float32Array.from(grid.z);
    for (const i of setup.crestCells) z[i] += 100;
    const file = join(work, `walled-${plan.length}.tif`);
    await writeGeoTiff(file, { width: grid.width, height: grid.height, data: z, transform: windowTransform(dem.transform, col0, row0), crs: dem.crs, noData: -9999 });
    let seed = setup.seedCells[0];
    for (const i of setup.seedCells) if (grid.z[i] < grid.z[seed]) seed = i;
    const sc = seed % grid.width;
    const sr = (seed - sc) / grid.width;
    const x = colToX(grid.transform, sc + 0.5);
    const y = rowToY(grid.transform, sr + 0.5);
    plan.push({ id: dam.id, file, level: fill.waterLevelM, x, y, cells: pondAt(fill, fill.waterLevelM).cellCount });
  }
  await dem.close();
  writeFileSync(join(work, 'plan.txt'), plan.map((p, k) => `${k} ${p.file} ${p.level.toPrecision(17)} ${p.x} ${p.y}`).join('\n') + '\n');
  const script = join(work, 'run.sh');
  writeFileSync(
    script,
    `set -eu
while read -r k file level x y; do
  r.in.gdal -o --quiet --overwrite input="$file" output="w$k"
  g.region raster="w$k"
  t0=$(date +%s.%N)
  r.lake --quiet --overwrite elevation="w$k" water_level="$level" lake="lake$k" coordinates="$x,$y"
  t1=$(date +%s.%N)
  n=$(r.univar -g map="lake$k" | sed -n 's/^n=//p')
  echo "$k $t0 $t1 $n"
done < "${join(work, 'plan.txt')}"
`,
  );
  const out = execFileSync('grass', ['--tmp-location', 'XY', '--exec', 'bash', script], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
  let rlakeS = 0;
  let agree = 0;
  const mismatches = [];
  for (const row of out.trim().split('\n')) {
    const [k, t0, t1, n] = row.split(/\s+/);
    rlakeS += Number(t1) - Number(t0);
    if (Number(n) === plan[Number(k)].cells) agree++;
    else mismatches.push({ dam: plan[Number(k)].id, pondage: plan[Number(k)].cells, rlake: Number(n) });
  }
  return { count: plan.length, rlakeS, pondageS, agree, mismatches };
}
