/**
 * Per-draw figures of a run: the Monte Carlo draws behind its bands, kept so
 * that two runs can be differenced draw by draw.
 *
 * File format read from a run folder (`draws.csv`, RFC 4180, one header row):
 *
 *   draw,scope,id,storage_m3,inundated_area_m2,influence_area_m2
 *   0,total,,1523.2,4210.7,9320.1
 *   0,watershed,trib-a,301.9,822.4,
 *   0,scenario,with_proposed,1876.0,5102.3,
 *   1,total,,...
 *
 * - `draw`: the draw's number, 0 … N−1; draw k of two runs made on the same
 *   DEM grid with the same seed saw the same DEM error field, which is what
 *   makes their per-draw difference a paired one.
 * - `scope`: `total` (the run's totals), `watershed`, `scenario`
 *   (`existing`, `with_proposed`) or `dam`; `id` names the watershed,
 *   scenario or dam, empty for totals. A file without `scope` and `id`
 *   columns holds totals only.
 * - every other column is a figure named as in summary.json (units in the
 *   name); an empty cell means the figure is not available in that draw.
 *
 * Figures are kept as Float64Array per (scope, id, figure), indexed by draw.
 */

/** Scopes of a per-draw row. */
export type DrawScope = 'total' | 'watershed' | 'scenario' | 'dam';

/** The draws of a run. */
export interface DrawTable {
  /** Number of draws (rows per scope and id). */
  count: number;
  /** Per-draw values by `drawKey(scope, id)` and figure name; NaN where a draw lacks the figure. */
  series: Map<string, Map<string, Float64Array>>;
}

/** The key of a scope and id in `DrawTable.series`. */
export function drawKey(scope: DrawScope, id = ''): string {
  return scope === 'total' ? 'total' : `${scope}:${id}`;
}

/** The per-draw values of one figure, or null when the run has none (or any draw lacks it). */
export function drawSeries(table: DrawTable | null, scope: DrawScope, id: string, figure: string): Float64Array | null {
  const values = table?.series.get(drawKey(scope, id))?.get(figure);
  if (!values || values.length === 0) return null;
  for (let k = 0; k < values.length; k++) if (Number.isNaN(values[k]!)) return null;
  return values;
}

/**
 * Adds per-draw watershed sums where the table has dam rows but no watershed
 * rows: a watershed's figure in draw k is the sum of its dams' figures in
 * draw k (`volume_m3` → `storage_m3`, `area_m2` → `inundated_area_m2`), in
 * dam order. `dams` gives each dam's id and watershed (null: none).
 */
export function addWatershedSums(table: DrawTable, dams: readonly { id: string; watershed: string | null }[]): void {
  const sums = new Map<string, Map<string, Float64Array>>();
  const pairs = [
    ['volume_m3', 'storage_m3'],
    ['area_m2', 'inundated_area_m2'],
  ] as const;
  for (const d of dams) {
    if (d.watershed === null || table.series.has(drawKey('watershed', d.watershed))) continue;
    const rows = table.series.get(drawKey('dam', d.id));
    if (!rows) continue;
    let ws = sums.get(d.watershed);
    if (!ws) {
      ws = new Map();
      sums.set(d.watershed, ws);
    }
    for (const [from, to] of pairs) {
      const src = rows.get(from);
      if (!src) continue;
      let acc = ws.get(to);
      if (!acc) {
        acc = new Float64Array(table.count);
        ws.set(to, acc);
      }
      for (let k = 0; k < table.count; k++) acc[k]! += src[k]!;
    }
  }
  for (const [id, figures] of sums) table.series.set(drawKey('watershed', id), figures);
}
