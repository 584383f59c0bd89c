// One timed estimate run in its own process, so its peak memory is its own.
// Ponds only (--ponds-only): the influence stage is timed on its own
// (bench-terrain.mjs), so this figure stays the ponds' own.
// Usage: node scripts/bench-estimate.mjs DEM DAMS OUT [DRAWS]   → prints one JSON line.
// DRAWS 0 is the deterministic run (no bands); the default is the run's default draw count.
import { defaultParams, runEstimate } from '../dist/pipeline/run.js';

const [dem, dams, out, drawsArg] = process.argv.slice(2);
const t0 = performance.now();
const base = defaultParams();
const params = { ...base, influence: undefined };
if (drawsArg !== undefined && params.uncertainty) params.uncertainty = { ...params.uncertainty, draws: Number(drawsArg) };
const { summary, result } = await runEstimate({ demPaths: [dem], damsPath: dams, outDir: out, params });
const wallS = (performance.now() - t0) / 1000;
process.stdout.write(
  JSON.stringify({
    wallS,
    maxRssMiB: process.resourceUsage().maxRSS / 1024,
    cellsVisited: result.cellsVisited,
    damsEstimated: summary.totals.dams_estimated,
    storageM3: summary.totals.storage_m3,
    draws: summary.parameters.draws ?? 0,
    drawsS: summary.run.draws_s ?? 0,
  }) + '\n',
);
