/**
 * The report's files: reading a run folder into the report's input, writing
 * report.html (atomically: a temporary file renamed into place), and, at the
 * end of an estimate, writing report-map.json beside the run's other files.
 */
import { readFile, rename, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../errors.js';
import type { DamInput } from '../inventory.js';
import type { DemSource } from '../io/dem.js';
import { parseGeoJsonLayer, type LayerFeature } from './geojson-layer.js';
import { HILLSHADE_MAX_SIDE_PX, buildReportMap, type PixelPolygons } from './map-build.js';
import { REPORT_MAP_FILE, parseReportMap, type ReportMap } from './map-file.js';
import { renderReport } from './render.js';
import { parseRunSummary } from './run-data.js';
import { planBlocks, teeDem, type BlockMeans } from './shade-blocks.js';
import type { ReportInput } from './view.js';

/** The report's file name in a run folder. */
export const REPORT_FILE = 'report.html';

/**
 * Optional GeoJSON layers of a run folder the map draws when present
 * (RFC 7946 lon/lat). ponds.geojson comes with every run; the others come
 * with the influence-zone and watershed stages.
 */
export const LAYER_FILES = {
  ponds: 'ponds.geojson',
  influence: 'influence.geojson',
  watersheds: 'watersheds.geojson',
  streams: 'streams.geojson',
} as const;

/** Reads what the report needs from a run folder; summary.json is required, the rest optional. */
export async function readRunFolder(runDir: string): Promise<ReportInput> {
  const summaryPath = join(runDir, 'summary.json');
  const summaryText = await readOptional(summaryPath);
  if (summaryText === null) {
    throw new InputError(`${runDir} has no summary.json; give the folder an estimate run wrote (its --out folder)`);
  }
  const summary = parseRunSummary(summaryText, summaryPath);
  const mapText = await readOptional(join(runDir, REPORT_MAP_FILE));
  const map: ReportMap | null = mapText === null ? null : parseReportMap(mapText, join(runDir, REPORT_MAP_FILE));
  const layer = async (name: string): Promise<LayerFeature[] | null> => {
    const text = await readOptional(join(runDir, name));
    return text === null ? null : parseGeoJsonLayer(text, join(runDir, name));
  };
  return {
    summary,
    map,
    layers: {
      ponds: (await layer(LAYER_FILES.ponds)) ?? [],
      influence: await layer(LAYER_FILES.influence),
      watersheds: await layer(LAYER_FILES.watersheds),
      streams: await layer(LAYER_FILES.streams),
    },
  };
}

/**
 * Renders a run folder's report and writes it (default: report.html in the
 * folder). Returns the path written and the input it was drawn from.
 */
export async function writeReport(runDir: string, outPath: string = join(runDir, REPORT_FILE)): Promise<{ path: string; input: ReportInput; bytes: number }> {
  const input = await readRunFolder(runDir);
  const html = renderReport(input);
  const tmp = `${outPath}.partial-${process.pid}`;
  try {
    await writeFile(tmp, html);
    await rename(tmp, outPath);
  } catch (err) {
    await rm(tmp, { force: true });
    throw err;
  }
  return { path: outPath, input, bytes: Buffer.byteLength(html) };
}

/**
 * The estimate's report step, run inside the run folder's atomic write after
 * the other files: report-map.json (from the open DEM, and from the blocks
 * gathered during the estimate when given: see shade-blocks.ts) and report.html.
 */
export async function writeReportFiles(
  dir: string,
  run: { dem: DemSource; dams: readonly DamInput[]; outlines: PixelPolygons; collected?: BlockMeans | null },
): Promise<void> {
  const map = await buildReportMap({ dem: run.dem, dams: run.dams, outlines: run.outlines, collected: run.collected ?? null });
  await writeFile(join(dir, REPORT_MAP_FILE), JSON.stringify(map) + '\n');
  await writeReport(dir);
}

/**
 * Wraps the DEM an estimate will read so its windows also feed the report's
 * hillshade: pass `source` to the estimate and `blocks` to writeReportFiles.
 * `reachM` is how far the estimate reads around each dam, metres.
 */
export function collectHillshade(dem: DemSource, dams: readonly DamInput[], reachM: number): { source: DemSource; blocks: BlockMeans } {
  const blocks = planBlocks(dem, dams, reachM, HILLSHADE_MAX_SIDE_PX);
  return { source: teeDem(dem, blocks), blocks };
}

async function readOptional(path: string): Promise<string | null> {
  try {
    return await readFile(path, 'utf8');
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw err;
  }
}
