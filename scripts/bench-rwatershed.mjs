// GRASS GIS r.watershed side by side with pondage's terrain step on the same
// DEM: single flow direction (-s, D8), the same stream threshold in cells,
// accumulation, drainage, streams and basins; only r.watershed is timed
// (not the import).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

/** Returns r.watershed's wall time in seconds, or null when GRASS is not installed. */
export function rwatershedSideBySide({ demPath, work, thresholdCells }) {
  if (spawnSync('sh', ['-c', 'command -v grass']).status !== 0) return null;
  mkdirSync(work, { recursive: true });
  const script = join(work, 'run.sh');
  writeFileSync(
    script,
    `set -eu
r.in.gdal -o --quiet --overwrite input="${demPath}" output=dem
g.region raster=dem
t0=$(date +%s.%N)
r.watershed -s --quiet --overwrite elevation=dem threshold=${thresholdCells} accumulation=acc drainage=dir stream=str basin=bas
t1=$(date +%s.%N)
echo "$t0 $t1"
`,
  );
  const out = execFileSync('grass', ['--tmp-location', 'XY', '--exec', 'bash', script], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
  const [t0, t1] = out.trim().split('\n').pop().split(/\s+/).map(Number);
  return { rwatershedS: t1 - t0 };
}
