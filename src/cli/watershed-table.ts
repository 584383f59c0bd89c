/** The short per-watershed table printed after the dam table. */
import type { Summary } from '../pipeline/summary.js';
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';

/** Formats the watershed rows and the influence totals; empty text when the run has no watersheds. */
export function watershedTable(summary: Summary, options: { maxRows?: number } = {}): string {
  const rows = summary.watersheds;
  if (!rows || rows.length === 0) return '';
  const maxRows = options.maxRows ?? 30;
  const head = ['watershed', 'dams', 'counted', 'stream km', 'counted/km', 'inundated ha', 'influence ha', 'valley ha', '% infl.', 'storage m³', 'acre-ft'];
  const body = rows.slice(0, maxRows).map((w) => [
    w.id,
    String(w.dam_count),
    w.dams_in_totals === undefined ? '-' : String(w.dams_in_totals),
    w.stream_length_m === null ? '-' : (w.stream_length_m / 1000).toFixed(2),
    w.dams_per_stream_km === null || w.dams_per_stream_km === undefined ? '-' : w.dams_per_stream_km.toFixed(1),
    m2ToHectares(w.inundated_area_m2).toFixed(2),
    m2ToHectares(w.influence_area_m2).toFixed(2),
    w.valley_bottom_area_m2 === null ? '-' : m2ToHectares(w.valley_bottom_area_m2).toFixed(1),
    w.valley_bottom_influenced_pct === null || w.valley_bottom_influenced_pct === undefined ? '-' : w.valley_bottom_influenced_pct.toFixed(1),
    fmt(w.storage_m3),
    m3ToAcreFeet(w.storage_m3).toFixed(2),
  ]);
  const widths = head.map((h, k) => Math.max(h.length, ...body.map((r) => r[k]!.length)));
  const line = (cells: string[]): string => cells.map((c, k) => (k === 0 ? c.padEnd(widths[k]!) : c.padStart(widths[k]!))).join('  ');
  const out = ['', line(head), line(widths.map((w) => '-'.repeat(w))), ...body.map(line)];
  if (rows.length > maxRows) out.push(`… ${rows.length - maxRows} more watersheds in watersheds.csv`);
  const t = summary.totals;
  if (t.influence_area_m2 !== undefined) {
    out.push('');
    out.push(
      `influence zone ${m2ToHectares(t.influence_area_m2).toFixed(2)} ha (${m2ToAcres(t.influence_area_m2).toFixed(2)} acres): ponds and a riparian fringe within ${summary.parameters['riparian_distance_m']} m ` +
        `and ${summary.parameters['riparian_rise_m']} m above the nearest pond, in the valley bottom` +
        (t.valley_bottom_influenced_pct !== undefined && t.valley_bottom_influenced_pct !== null ? ` (${t.valley_bottom_influenced_pct.toFixed(1)} % of ${m2ToHectares(t.valley_bottom_area_m2 ?? 0).toFixed(1)} ha of valley bottom)` : ''),
    );
  }
  return out.join('\n') + '\n';
}

function fmt(v: number): string {
  return v.toLocaleString('en-US', { maximumFractionDigits: 0 });
}
