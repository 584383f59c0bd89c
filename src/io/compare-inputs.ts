/**
 * Reads the run folders that `pondage compare` compares: summary.json (into a
 * RunRecord), draws.csv when the run kept its per-draw figures (format in
 * compare/draws.ts), depth.tif when the run has ponds, and the hillshade of
 * report-map.json for the map's relief.
 */
import { readFile, stat } from 'node:fs/promises';
import { basename, join, resolve } from 'node:path';
import { InputError } from '../errors.js';
import type { Backdrop, DepthRaster } from '../compare/change-map.js';
import { parseReportMap, REPORT_MAP_FILE } from '../report/map-file.js';
import type { RunInput } from '../compare/compare.js';
import { addWatershedSums, drawKey, type DrawScope, type DrawTable } from '../compare/draws.js';
import { parseRunSummary } from '../compare/run-record.js';
import { cellMetrics } from './crs.js';
import { CsvSyntaxError, detectDelimiter, parseCsv } from './csv.js';
import { openDem } from './dem.js';

/** File names in a run folder that compare reads. */
export const RUN_FILES = { summary: 'summary.json', draws: 'draws.csv', depth: 'depth.tif' } as const;

/** Reads one run folder; `label` names it in the outputs (default: the folder's name). */
export async function readRunFolder(dir: string, label?: string): Promise<RunInput> {
  const summaryPath = join(dir, RUN_FILES.summary);
  let text: string;
  try {
    text = await readFile(summaryPath, 'utf8');
  } catch {
    throw new InputError(`${dir}: no ${RUN_FILES.summary} here; give the output folder of a pondage estimate run (its --out)`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new InputError(`${summaryPath}: not valid JSON (${err instanceof Error ? err.message : String(err)}); rerun the estimate to write it again`);
  }
  const record = parseRunSummary(json, summaryPath, label ?? (basename(resolve(dir)) || dir), dir);
  const draws = (await exists(join(dir, RUN_FILES.draws))) ? parseDrawsCsv(await readFile(join(dir, RUN_FILES.draws), 'utf8'), join(dir, RUN_FILES.draws)) : null;
  if (draws && record.watersheds) addWatershedSums(draws, record.dams);
  const depth = (await exists(join(dir, RUN_FILES.depth))) ? await readDepth(join(dir, RUN_FILES.depth)) : null;
  return { record, draws, depth, backdrop: await readBackdrop(join(dir, REPORT_MAP_FILE)) };
}

/** The hillshade of a run's report-map.json, or null when the file or its hillshade is missing or unreadable (the map then has none). */
export async function readBackdrop(path: string): Promise<Backdrop | null> {
  if (!(await exists(path))) return null;
  try {
    const map = parseReportMap(await readFile(path, 'utf8'), path);
    return map.hillshade ? { crsKey: map.crs.proj4, extent: map.extent, pngBase64: map.hillshade.pngBase64 } : null;
  } catch (err) {
    if (err instanceof InputError) return null;
    throw err;
  }
}

/** Reads depth.tif (metres, NoData → NaN) with its frame and cell areas. */
export async function readDepth(path: string): Promise<DepthRaster> {
  const src = await openDem([path], { zUnit: 'metre' });
  try {
    const grid = await src.readWindow(0, 0, src.width, src.height);
    return {
      width: src.width,
      height: src.height,
      transform: src.transform,
      crsKey: src.crs.proj4,
      cellAreaM2: cellMetrics(src.crs, src.transform, 0, src.height).cellAreaM2,
      data: grid.z,
    };
  } finally {
    await src.close();
  }
}

const SCOPES: readonly DrawScope[] = ['total', 'watershed', 'scenario', 'dam'];

/** Parses draws.csv text (format: compare/draws.ts); `file` names it in errors. */
export function parseDrawsCsv(text: string, file: string): DrawTable {
  let records;
  try {
    records = parseCsv(text, detectDelimiter(text));
  } catch (err) {
    if (err instanceof CsvSyntaxError) throw new InputError(`${file} line ${err.line}: ${err.message}; rewrite the file as CSV (RFC 4180) or remove it`);
    throw err;
  }
  const header = records[0]?.fields.map((h) => h.trim()) ?? [];
  const drawCol = header.indexOf('draw');
  if (drawCol < 0) throw new InputError(`${file}: no "draw" column; per-draw files need draw,scope,id and figure columns (or remove the file)`);
  const scopeCol = header.indexOf('scope');
  const idCol = header.indexOf('id');
  const figureCols = header.map((h, k) => ({ h, k })).filter(({ k }) => k !== drawCol && k !== scopeCol && k !== idCol);
  const rows: { draw: number; key: string; values: number[] }[] = [];
  let count = 0;
  for (const rec of records.slice(1)) {
    if (rec.fields.length === 1 && rec.fields[0] === '') continue;
    const drawText = rec.fields[drawCol] ?? '';
    const draw = Number(drawText);
    if (drawText.trim() === '' || !Number.isInteger(draw) || draw < 0) throw new InputError(`${file} line ${rec.line}: draw "${drawText}" is not a draw number (0, 1, 2 …)`);
    const scopeText = scopeCol >= 0 ? (rec.fields[scopeCol] ?? '').trim() : 'total';
    const scope = SCOPES.find((s) => s === (scopeText === '' ? 'total' : scopeText));
    if (!scope) throw new InputError(`${file} line ${rec.line}: scope "${scopeText}" is not one of ${SCOPES.join(', ')}`);
    const id = idCol >= 0 ? (rec.fields[idCol] ?? '').trim() : '';
    const values = figureCols.map(({ k }) => {
      const t = (rec.fields[k] ?? '').trim();
      const v = t === '' ? NaN : Number(t);
      if (t !== '' && !Number.isFinite(v)) throw new InputError(`${file} line ${rec.line}: ${header[k]} "${t}" is not a number`);
      return v;
    });
    rows.push({ draw, key: drawKey(scope, id), values });
    count = Math.max(count, draw + 1);
  }
  const series = new Map<string, Map<string, Float64Array>>();
  for (const row of rows) {
    let figures = series.get(row.key);
    if (!figures) {
      figures = new Map(figureCols.map(({ h }) => [h, new Float64Array(count).fill(NaN)]));
      series.set(row.key, figures);
    }
    figureCols.forEach(({ h }, j) => {
      figures.get(h)![row.draw] = row.values[j]!;
    });
  }
  return { count, series };
}

async function exists(path: string): Promise<boolean> {
  try {
    return (await stat(path)).isFile();
  } catch {
    return false;
  }
}
