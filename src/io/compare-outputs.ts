/**
 * Writes a comparison folder: compare.json, compare.csv and compare.html,
 * all or nothing (io/run-folder.ts). compare.json is the folder's marker, so
 * an earlier comparison folder may be replaced but a run folder never is.
 */
import { readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Backdrop, ChangeRaster } from '../compare/change-map.js';
import type { Comparison } from '../compare/compare.js';
import { renderCompareHtml } from '../compare/render/html.js';
import { compareView } from '../compare/render/view.js';
import { compareTable } from '../compare/table.js';
import { TOOL_NAME } from '../pipeline/summary.js';
import { toCsv } from './csv-write.js';
import { writeFolderAtomically } from './run-folder.js';

/** The marker file of a comparison folder. */
export const COMPARE_MARKER = 'compare.json';

/** The files of a comparison folder. */
export const COMPARE_FILES = { json: 'compare.json', csv: 'compare.csv', html: 'compare.html' } as const;

/** The repository's templates folder (found from this module's place in src/ or dist/). */
const TEMPLATES_DIR = fileURLToPath(new URL('../../templates/', import.meta.url));

/** compare.json as written: the tool, then the comparison. */
export function compareJson(c: Comparison, version: string): object {
  return { tool: { name: TOOL_NAME, version }, ...c };
}

/** Reads compare.hbs and the stylesheets: the report's (when present) and compare.css. */
export async function readCompareTemplates(): Promise<{ page: string; css: string[] }> {
  const page = await readFile(join(TEMPLATES_DIR, 'compare.hbs'), 'utf8');
  const css: string[] = [];
  for (const name of ['report.css', 'compare.css']) {
    try {
      css.push(await readFile(join(TEMPLATES_DIR, name), 'utf8'));
    } catch {
      // The report's stylesheet is optional: the page then has compare.css alone.
    }
  }
  return { page, css };
}

/**
 * Writes the comparison folder at `outDir`. `raster` is the first→last change
 * raster (null: no map); `unitM` metres per map unit of its CRS; `backdrop`
 * the relief drawn under it.
 */
export async function writeCompareFolder(outDir: string, c: Comparison, extras: { raster: ChangeRaster | null; unitM: number | null; version: string; backdrop?: Backdrop | null }): Promise<void> {
  const templates = await readCompareTemplates();
  const html = renderCompareHtml(compareView(c, extras.raster, extras.unitM, extras.backdrop ?? null), templates, `${TOOL_NAME} ${extras.version}`);
  const table = compareTable(c);
  await writeFolderAtomically(
    outDir,
    async (dir) => {
      await writeFile(join(dir, COMPARE_FILES.json), JSON.stringify(compareJson(c, extras.version), null, 2) + '\n');
      await writeFile(join(dir, COMPARE_FILES.csv), toCsv(table.header, table.rows));
      await writeFile(join(dir, COMPARE_FILES.html), html);
    },
    COMPARE_MARKER,
  );
}
