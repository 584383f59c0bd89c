// One timed estimate run in its own process, so its peak memory is its own.
// Ponds only (--ponds-only): the influence stage is timed on its own
// (bench-terrain.mjs), so this figure stays the ponds' own.
// Usage: node scripts/bench-estimate.mjs DEM DAMS OUT   → prints one JSON line.
import { defaultParams, runEstimate } from '../dist/pipeline/run.js';

const [dem, dams, out] = process.argv.slice(2);
const t0 = performance.now();
const params = { ...defaultParams(), influence: undefined };
const { summary, result } = await runEstimate({ demPaths: [dem], damsPath: dams, outDir: out, params });
const wallS = (performance.now() - t0) / 1000;
process.stdout.write(
  JSON.stringify({
    wallS,
    maxRssMiB: process.resourceUsage().maxRSS / 1024,
    cellsVisited: result.cellsVisited,
    damsEstimated: summary.totals.dams_estimated,
    storageM3: summary.totals.storage_m3,
  }) + '\n',
);
