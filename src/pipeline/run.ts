/**
 * One estimate run end to end: load → ponds → summary → files, written into
 * a folder that appears only when everything succeeded.
 */
import { join } from 'node:path';
import { writeDrawsCsv } from '../io/draws-csv.js';
import { writeFolderAtomically } from '../io/run-folder.js';
import { openWaterInputs, type WaterInputs } from '../io/water-inputs.js';
import { writeRunFiles } from '../io/write-run.js';
import { collectHillshade, writeReportFiles } from '../report/write.js';
import { DEFAULT_POND_PARAMS } from '../ponds/params.js';
import { DEFAULT_MAX_CREST_LENGTH_M, DEFAULT_SNAP_RADIUS_M } from '../ponds/point-crest.js';
import { estimatePonds, type EstimateParams, type EstimateResult, type ProgressFn } from './estimate.js';
import { loadInputs, type LoadOptions } from './load.js';
import { buildSummary, type Summary } from './summary.js';
import { TOOL_VERSION } from './version.js';
import { drawBands } from './draws.js';
import { addScenarioBands } from './scenario-bands.js';
import { addInfluenceBands, riparianReachOf } from './influence-draws.js';
import { DRAWS_FILE } from '../uncertainty/describe.js';
import { defaultUncertaintyParams } from '../uncertainty/params.js';
import { defaultInfluenceParams } from './influence-stage.js';
import { addWatershedBands, influenceSummary, readInfluenceLayers, recallGroupsOf, runInfluence, type InfluenceInputOptions } from './influence-run.js';
import { writeInfluenceFiles } from '../io/write-influence.js';

/**
 * Largest distance a pond may reach from its crest (m): 1000 m. Beaver ponds
 * are mostly tens to a few hundred metres long (common practice); a 1.5 m
 * dam on a 0.15 % valley floor backs water up 1 km. Ponds that reach it are
 * flagged `edge`, never silently cut.
 */
export const DEFAULT_MAX_REACH_M = 1000;
/** Candidates count in the totals from this confidence up (a project choice: more likely than not). */
export const DEFAULT_MIN_CONFIDENCE = 0.5;

/** Run parameters with every default filled in. */
export function defaultParams(): EstimateParams {
  return {
    pond: { ...DEFAULT_POND_PARAMS },
    maxReachM: DEFAULT_MAX_REACH_M,
    snapRadiusM: DEFAULT_SNAP_RADIUS_M,
    maxCrestLengthM: DEFAULT_MAX_CREST_LENGTH_M,
    minConfidence: DEFAULT_MIN_CONFIDENCE,
    uncertainty: defaultUncertaintyParams(),
    influence: defaultInfluenceParams(),
  };
}

export interface RunOptions extends LoadOptions, InfluenceInputOptions {
  /** `--water-mask`: GeoTIFF or GeoJSON polygons of today's water (replaces detection in the DEM). */
  waterMaskPath?: string | undefined;
  /** `--bed-dem`: a DEM of the bed (before the dams, a drained year, bathymetry), used under today's water. */
  bedDemPath?: string | undefined;
  outDir: string;
  params: EstimateParams;
  progress?: ProgressFn;
}

/** Runs an estimate and writes its folder; returns what was written. */
export async function runEstimate(options: RunOptions): Promise<{ summary: Summary; result: EstimateResult }> {
  const startedAt = new Date();
  const loaded = await loadInputs(options);
  let water: WaterInputs | null = null;
  try {
    water = await openWaterInputs(loaded.dem, {
      maskPath: options.waterMaskPath,
      bedDemPath: options.bedDemPath,
      zUnit: loaded.dem.zUnitSource === 'option' ? loaded.dem.zUnit : undefined,
    });
    // Polygon layers are read before the ponds, so a bad file stops the run early.
    const layers = options.params.influence ? await readInfluenceLayers(options, loaded.dem) : null;
    // The report's hillshade is gathered from the estimate's own window reads (report/shade-blocks.ts).
    const { maxReachM, maxCrestLengthM, snapRadiusM } = options.params;
    const shade = collectHillshade(loaded.dem, loaded.dams, maxReachM + maxCrestLengthM / 2 + snapRadiusM);
    const result = await estimatePonds(shade.source, loaded.dams, options.params, options.progress, water);
    // Influence zone, valley bottom and watersheds (influence-stage.ts): before the draws, which resample missed dams by watershed.
    const influence = options.params.influence && layers ? await runInfluence(loaded.dem, loaded.dams, result, options.params.influence, layers, riparianReachOf(options.params)) : null;
    const drawsStart = performance.now();
    const draws = drawBands(result, options.params, influence ? { recallGroups: recallGroupsOf(influence, result) } : {});
    if (draws && influence) addWatershedBands(influence, draws);
    // Influence-area bands from the stage's riparian tables (influence-draws.ts).
    const influenceDraws = draws && influence && options.params.uncertainty ? addInfluenceBands(influence, draws, result, options.params.uncertainty) : null;
    // The with-proposed scenario in every draw (bands on summary.json's scenarios).
    const scenarioDraws = addScenarioBands(result, draws);
    const drawsS = (performance.now() - drawsStart) / 1000;
    const summary = buildSummary({
      version: TOOL_VERSION,
      startedAt,
      finishedAt: new Date(),
      inputs: [...loaded.inputs, ...(water?.inputs ?? []), ...(layers?.inputs ?? [])],
      dem: loaded.demFacts,
      damsFormat: loaded.damsFormat,
      damsCrs: loaded.damsSourceCrs,
      params: options.params,
      assumptions: [...loaded.assumptions, ...(water?.assumptions ?? [])],
      result,
      warnings: [...loaded.warnings, ...result.warnings],
      draws,
      drawsS,
      influence: influence ? influenceSummary(influence) : null,
    });
    await writeFolderAtomically(options.outDir, async (dir) => {
      await writeRunFiles(dir, { summary, result, demTransform: loaded.dem.transform, demCrs: loaded.dem.crs });
      if (draws) {
        const o = draws.outcome;
        const watersheds = influence?.draws ? { ids: influence.tally.rows.map((r) => r.id), figures: influence.draws } : undefined;
        await writeDrawsCsv(join(dir, DRAWS_FILE), { draws: o.draws, damIds: result.dams.map((d) => d.id), totals: o.totals, damVolumeM3: o.damVolumeM3, damAreaM2: o.damAreaM2, ...(watersheds ? { watersheds } : {}), ...(scenarioDraws ? { scenarios: scenarioDraws } : {}), ...(influenceDraws ? { influence: influenceDraws } : {}) });
      }
      if (influence) await writeInfluenceFiles(dir, { outcome: influence.outcome, rows: influence.tally.rows, dams: result.dams, demCrs: loaded.dem.crs });
      // Last, so it reads the files above: report-map.json and report.html.
      await writeReportFiles(dir, { dem: loaded.dem, dams: loaded.dams, outlines: result.outlines, collected: shade.blocks });
    });
    return { summary, result };
  } finally {
    await water?.close();
    await loaded.dem.close();
  }
}
