/**
 * compare.csv: the comparison as one table a spreadsheet filters. One row per
 * compared total, watershed and dam (`scope`), for the first→last comparison
 * and, with more than two runs, for every consecutive pair (`from`, `to`).
 * Units are in the column names; bands are p05/p95 columns beside each change.
 */
import { m2ToAcres, m3ToAcreFeet } from '../units.js';
import type { Comparison, PairComparison } from './compare.js';
import type { Bands } from './run-record.js';

/** Columns of compare.csv, in order. */
export const COMPARE_CSV_COLUMNS = [
  'from', 'to', 'scope', 'id', 'name', 'change', 'matched_by', 'distance_m', 'reasons', 'status_from', 'status_to',
  'height_from_m', 'height_to_m', 'storage_from_m3', 'storage_to_m3', 'storage_change_m3', 'storage_change_acre_ft',
  'storage_change_p05_m3', 'storage_change_p95_m3', 'storage_change_detectable', 'inundated_area_from_m2', 'inundated_area_to_m2',
  'inundated_area_change_m2', 'inundated_area_change_acres', 'inundated_area_change_p05_m2', 'inundated_area_change_p95_m2',
  'inundated_area_change_detectable', 'influence_area_change_m2', 'influence_area_change_p05_m2', 'influence_area_change_p95_m2',
  'influence_area_change_detectable', 'band_method', 'crest_lon', 'crest_lat',
] as const;

type Cell = string | number | boolean | null;
type Row = Partial<Record<(typeof COMPARE_CSV_COLUMNS)[number], Cell>>;

const r = (v: number | null, digits: number): number | null => (v === null || !Number.isFinite(v) ? null : Number(v.toFixed(digits)));

function bandCells(bands: Bands | null, detectable: Record<string, boolean | null>): Row {
  const b = (k: string, p: 'p05' | 'p95'): number | null => r(bands?.[k]?.[p] ?? null, 3);
  return {
    storage_change_p05_m3: b('storage_change_m3', 'p05'),
    storage_change_p95_m3: b('storage_change_m3', 'p95'),
    storage_change_detectable: detectable['storage_change_m3'] ?? null,
    inundated_area_change_p05_m2: b('inundated_area_change_m2', 'p05'),
    inundated_area_change_p95_m2: b('inundated_area_change_m2', 'p95'),
    inundated_area_change_detectable: detectable['inundated_area_change_m2'] ?? null,
    influence_area_change_p05_m2: b('influence_area_change_m2', 'p05'),
    influence_area_change_p95_m2: b('influence_area_change_m2', 'p95'),
    influence_area_change_detectable: detectable['influence_area_change_m2'] ?? null,
  };
}

function pairRows(p: PairComparison): Row[] {
  const rows: Row[] = [];
  const t = p.totals;
  rows.push({
    from: p.from,
    to: p.to,
    scope: 'total',
    storage_from_m3: r(t.from.storage_m3, 3),
    storage_to_m3: r(t.to.storage_m3, 3),
    storage_change_m3: r(t.storage_change_m3, 3),
    storage_change_acre_ft: r(t.storage_change_acre_ft, 6),
    inundated_area_from_m2: r(t.from.inundated_area_m2, 2),
    inundated_area_to_m2: r(t.to.inundated_area_m2, 2),
    inundated_area_change_m2: r(t.inundated_area_change_m2, 2),
    inundated_area_change_acres: r(t.inundated_area_change_acres, 5),
    influence_area_change_m2: r(t.influence_area_change_m2, 2),
    band_method: Object.values(t.band_methods).filter((m) => m !== 'none').filter((m, k, all) => all.indexOf(m) === k).join(' ') || 'none',
    ...bandCells(t.bands, t.detectable),
  });
  for (const w of p.watersheds ?? []) {
    rows.push({
      from: p.from,
      to: p.to,
      scope: 'watershed',
      id: w.id,
      name: w.name,
      change: w.in_from && w.in_to ? null : w.in_to ? 'only in to' : 'only in from',
      storage_from_m3: r(w.from.storage_m3, 3),
      storage_to_m3: r(w.to.storage_m3, 3),
      storage_change_m3: r(w.storage_change_m3, 3),
      storage_change_acre_ft: w.storage_change_m3 === null ? null : r(m3ToAcreFeet(w.storage_change_m3), 6),
      inundated_area_from_m2: r(w.from.inundated_area_m2, 2),
      inundated_area_to_m2: r(w.to.inundated_area_m2, 2),
      inundated_area_change_m2: r(w.inundated_area_change_m2, 2),
      inundated_area_change_acres: w.inundated_area_change_m2 === null ? null : r(m2ToAcres(w.inundated_area_change_m2), 5),
      influence_area_change_m2: r(w.influence_area_change_m2, 2),
      band_method: Object.values(w.band_methods).filter((m) => m !== 'none').filter((m, k, all) => all.indexOf(m) === k).join(' ') || 'none',
      ...bandCells(w.bands, w.detectable),
    });
  }
  for (const d of p.dams) {
    rows.push({
      from: p.from,
      to: p.to,
      scope: 'dam',
      id: d.id,
      name: d.id_from !== null && d.id_to !== null && d.id_from !== d.id_to ? `was ${d.id_from}` : null,
      change: d.change,
      matched_by: d.matched_by,
      distance_m: r(d.distance_m, 2),
      reasons: d.reasons.join(' '),
      status_from: d.status_from,
      status_to: d.status_to,
      height_from_m: r(d.height_from_m, 3),
      height_to_m: r(d.height_to_m, 3),
      storage_from_m3: r(d.volume_from_m3, 3),
      storage_to_m3: r(d.volume_to_m3, 3),
      storage_change_m3: r(d.volume_change_m3, 3),
      storage_change_acre_ft: r(m3ToAcreFeet(d.volume_change_m3), 6),
      inundated_area_from_m2: r(d.area_from_m2, 2),
      inundated_area_to_m2: r(d.area_to_m2, 2),
      inundated_area_change_m2: r(d.area_change_m2, 2),
      inundated_area_change_acres: r(m2ToAcres(d.area_change_m2), 5),
      storage_change_p05_m3: r(d.volume_change_band?.p05 ?? null, 3),
      storage_change_p95_m3: r(d.volume_change_band?.p95 ?? null, 3),
      storage_change_detectable: d.volume_change_detectable,
      crest_lon: d.crest_lon,
      crest_lat: d.crest_lat,
    });
  }
  return rows;
}

/** The rows of compare.csv as header + cell arrays. */
export function compareTable(c: Comparison): { header: string[]; rows: Cell[][] } {
  const pairs = c.pairs.length > 1 ? [overall(c), ...c.pairs] : c.pairs;
  const rows = pairs.flatMap(pairRows).map((row) => COMPARE_CSV_COLUMNS.map((k) => row[k] ?? null));
  return { header: [...COMPARE_CSV_COLUMNS], rows };
}

/** The first→last comparison as a pair record. */
function overall(c: Comparison): PairComparison {
  return {
    from: c.runs[0]!.label,
    to: c.runs[c.runs.length - 1]!.label,
    totals: c.totals,
    dams: c.dams,
    dam_counts: c.dam_counts,
    watersheds: c.watersheds,
    watersheds_note: c.watersheds_note,
    dem_difference: c.dem_difference,
    change_map: c.change_map,
    notes: c.notes,
  };
}
