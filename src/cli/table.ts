/** The short table printed after a run. */
import type { Summary } from '../pipeline/summary.js';
import { m3ToAcreFeet, m2ToAcres } from '../units.js';

/** Formats a fixed-width table of the dams and the totals. */
export function runTable(summary: Summary, options: { maxRows?: number } = {}): string {
  const maxRows = options.maxRows ?? 40;
  const head = ['dam', 'status', 'height m', 'from', 'level by', 'area m²', 'volume m³', 'below surface m³', 'acre-ft'];
  const rows = summary.dams.slice(0, maxRows).map((d) => [
    d.id,
    d.status + (d.estimated && !d.in_totals ? '*' : ''),
    d.height_m === null ? '-' : d.height_m.toFixed(2),
    d.height_source ?? '-',
    !d.estimated ? 'skipped' : d.drowned_by ? `under ${d.drowned_by}` : (d.limited_by ?? '-'),
    d.estimated ? fmt(d.in_totals ? d.area_m2 : d.standalone_area_m2, 0) : '-',
    d.estimated ? fmt(d.in_totals ? d.volume_m3 : d.standalone_volume_m3, 1) : '-',
    d.in_totals && (d.water_surface_area_m2 ?? 0) > 0 ? fmt(d.volume_below_surface_m3 ?? 0, 1) : '-',
    d.estimated ? m3ToAcreFeet(d.in_totals ? d.volume_m3 : d.standalone_volume_m3).toFixed(3) : '-',
  ]);
  const widths = head.map((h, k) => Math.max(h.length, ...rows.map((r) => r[k]!.length)));
  const line = (cells: string[]): string => cells.map((c, k) => (k < 5 ? c.padEnd(widths[k]!) : c.padStart(widths[k]!))).join('  ');
  const out = [line(head), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)];
  if (summary.dams.length > maxRows) out.push(`… ${summary.dams.length - maxRows} more dams in dams.csv`);
  const t = summary.totals;
  out.push('');
  out.push(
    `${t.dams_in_totals} of ${t.dam_count} dams in the totals (${t.dams_skipped} skipped): ` +
      `inundated ${fmt(t.inundated_area_m2, 0)} m² (${m2ToAcres(t.inundated_area_m2).toFixed(2)} acres), ` +
      `storage ${fmt(t.storage_m3, 0)} m³ (${m3ToAcreFeet(t.storage_m3).toFixed(2)} acre-ft)`,
  );
  if ((t.dams_with_water_surface ?? 0) > 0) {
    out.push(
      `of which ${fmt(t.storage_above_surface_m3 ?? 0, 0)} m³ above today's water surfaces and ${fmt(t.storage_below_surface_m3 ?? 0, 0)} m³ below them ` +
        `(${t.dams_with_water_surface} ponds hold water today, ${fmt(t.water_surface_area_m2 ?? 0, 0)} m² of it; water below a surface: ${summary.parameters['below_model'] ?? 'model'}, see bed_source)`,
    );
  }
  const storageBand = t.bands?.storage_m3;
  const areaBand = t.bands?.inundated_area_m2;
  if (storageBand && areaBand) {
    out.push(
      `bands over ${summary.uncertainty?.draws ?? '?'} draws (p05–p95, median): storage ${fmt(storageBand.p05, 0)}–${fmt(storageBand.p95, 0)} m³ (${fmt(storageBand.p50, 0)}), ` +
        `inundated ${fmt(areaBand.p05, 0)}–${fmt(areaBand.p95, 0)} m² (${fmt(areaBand.p50, 0)}); per dam in dams.csv (*_p05, *_p50, *_p95, *_mean)`,
    );
  }
  out.push('* not in the totals (proposed, or a candidate below --min-confidence): its own pond is shown.');
  if (summary.dams.some((d) => d.drowned_by)) out.push('under X: the crest stands under the pond of dam X, whose water is counted there.');
  return out.join('\n') + '\n';
}

function fmt(v: number, digits: number): string {
  return v.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
}
