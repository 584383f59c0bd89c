/**
 * draws.csv: the per-draw figures behind a run's bands, so that runs can be
 * differenced draw by draw (paired) and watersheds or scenarios re-summed.
 *
 * RFC 4180, one header row, LF line ends (the format `pondage compare`
 * reads, see compare/draws.ts):
 *
 *   draw,scope,id,storage_m3,inundated_area_m2,dams_in_totals,volume_m3,area_m2[,missing_dams,missing_storage_m3,missing_area_m2]
 *   0,total,,182440.87,559270,485,,
 *   0,dam,B-0001,,,,312.5,950
 *   ...
 *
 * - `draw` 0 … N−1; rows of draw k come together: the totals row, then one
 *   row per watershed when the run has watersheds (scope `watershed`, id the
 *   watershed's id, in summary.json's order; its totals' figures are the
 *   sums of its dams' figures in that draw), then, when the run has the
 *   proposed-structures scenario, two rows `scenario,existing` and
 *   `scenario,with_proposed` (storage_m3 and inundated_area_m2 only; the
 *   existing row equals the totals row), then one row per dam (scope
 *   `dam`, id the dam's id, in summary.json's order).
 * - Totals rows fill the totals' figures; dam rows the dam's own water in
 *   that draw (`volume_m3`, `area_m2`: 0 when the dam does not count).
 *   Other cells are empty.
 * - With the influence stage, a last column `influence_area_m2` (m²): the
 *   totals', each watershed's and each dam's influence area in that draw
 *   (a dam's is 0 when it does not count); empty on scenario rows.
 * - Numbers are written in full (shortest round-trip form), so a totals
 *   row equals the sum of its dam rows in file order exactly (plus
 *   `missing_storage_m3` / `missing_area_m2` when --recall is on).
 */
import { open } from 'node:fs/promises';
import { csvField } from './csv-write.js';
import type { ScenarioSeries } from '../uncertainty/scenario-draws.js';

/** What draws.csv holds. Per-dam arrays are dam-major (d·draws + k). */
export interface DrawsTable {
  draws: number;
  damIds: readonly string[];
  /** Per-draw totals by figure name (storage_m3, inundated_area_m2, dams_in_totals, missing_*). */
  totals: Record<string, Float64Array>;
  damVolumeM3: Float64Array;
  damAreaM2: Float64Array;
  /** Rows of dams to write (default every dam). */
  damRows?: readonly number[];
  /** Watershed rows: ids and, per watershed, per-draw figures named as the first three totals (storage_m3, inundated_area_m2, dams_in_totals). */
  watersheds?: { ids: readonly string[]; figures: readonly Record<string, Float64Array>[] };
  /** Scenario rows (pipeline/scenario-bands.ts): per-draw storage_m3 (m³) and inundated_area_m2 (m²) of each scenario. */
  scenarios?: { existing: ScenarioSeries; with_proposed: ScenarioSeries };
  /**
   * Influence areas per draw, m² (pipeline/influence-draws.ts): a last
   * column `influence_area_m2` filled on the totals row, the watershed rows
   * (rows as in `watersheds`) and the dam rows (dam-major); empty on scenario rows.
   */
  influence?: { total: Float64Array; watersheds?: readonly Float64Array[]; dams: Float64Array };
}

/** The file's text. */
export function drawsCsv(t: DrawsTable): string {
  let text = '';
  for (const chunk of drawsCsvChunks(t)) text += chunk;
  return text;
}

/** The file's text in pieces of a few thousand lines (the header first), so a large file is never one string. */
export function* drawsCsvChunks(t: DrawsTable): Generator<string> {
  const totalNames = Object.keys(t.totals);
  const inf = t.influence;
  const header = ['draw', 'scope', 'id', ...totalNames.slice(0, 3), 'volume_m3', 'area_m2', ...totalNames.slice(3), ...(inf ? ['influence_area_m2'] : [])];
  const rows = t.damRows ?? t.damIds.map((_, d) => d);
  const ids = t.damIds.map((id) => csvField(id));
  const emptyTotals = ','.repeat(3);
  const emptyTail = ','.repeat(totalNames.length - 3);
  yield header.join(',') + '\n';
  let lines: string[] = [];
  const N = t.draws;
  for (let k = 0; k < N; k++) {
    const head = totalNames.slice(0, 3).map((n) => String(t.totals[n]![k]!));
    const tail = totalNames.slice(3).map((n) => String(t.totals[n]![k]!));
    lines.push(`${k},total,,${head.join(',')},,${tail.length > 0 ? ',' + tail.join(',') : ''}${inf ? ',' + String(inf.total[k]!) : ''}`);
    if (t.watersheds) {
      t.watersheds.ids.forEach((id, w) => {
        const f = t.watersheds!.figures[w]!;
        const cells = totalNames.slice(0, 3).map((n) => (f[n] ? String(f[n][k]!) : ''));
        const wInf = inf?.watersheds?.[w];
        lines.push(`${k},watershed,${csvField(id)},${cells.join(',')},,${emptyTail}${inf ? ',' + (wInf ? String(wInf[k]!) : '') : ''}`);
      });
    }
    if (t.scenarios) {
      for (const id of ['existing', 'with_proposed'] as const) {
        const f = t.scenarios[id];
        lines.push(`${k},scenario,${id},${String(f.storage_m3[k]!)},${String(f.inundated_area_m2[k]!)},,,${emptyTail}${inf ? ',' : ''}`);
      }
    }
    for (const d of rows) {
      lines.push(`${k},dam,${ids[d]!}${emptyTotals},${String(t.damVolumeM3[d * N + k]!)},${String(t.damAreaM2[d * N + k]!)}${emptyTail}${inf ? ',' + String(inf.dams[d * N + k]!) : ''}`);
    }
    if (lines.length >= CHUNK_LINES || k === N - 1) {
      yield lines.join('\n') + '\n';
      lines = [];
    }
  }
}

/** Lines per piece of drawsCsvChunks (at least; a draw's rows stay together). */
const CHUNK_LINES = 8192;

/** Writes draws.csv at `path`. */
export async function writeDrawsCsv(path: string, t: DrawsTable): Promise<void> {
  const file = await open(path, 'w');
  try {
    for (const chunk of drawsCsvChunks(t)) await file.write(chunk);
  } finally {
    await file.close();
  }
}
