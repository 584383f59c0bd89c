/**
 * Tallies by watershed: one row per watershed (summary.json `watersheds[]`,
 * watersheds.csv) and the run's totals of the influence stage.
 *
 * Two kinds of figure:
 * - figures of the dams (counts by status, inundated area, influence area,
 *   storage and its split above/below today's water surface): a dam belongs
 *   to the watershed of its crest's lowest cell (pipeline/influence-stage.ts), and a row's figure is the
 *   sum of its dams' figures in dam-row order, exactly as the totals sum
 *   every dam. Dams in no watershed (outside every polygon, off the DEM, on
 *   NoData) go to one more row, `outside`, named in a warning. Counts, and
 *   areas made of whole cells on a grid whose cell area is a binary
 *   fraction of a square metre (1 m, 0.5 m, 2 m cells …), add up to the
 *   totals exactly; volumes, which are real numbers, agree with the totals
 *   to rounding (regrouping a floating-point sum changes its last bits: a
 *   relative 1e-12 or so).
 * - figures of the land (area, stream length, valley-bottom area): summed
 *   over the watershed's cells; the `outside` row has none (null), and the
 *   totals of these are the sums of the rows.
 *
 * SI and US customary side by side: m², ha, acres; m, km, miles; m³,
 * acre-feet (units.ts, NIST SP 811).
 */
import type { Warning } from '../errors.js';
import type { DamStatus } from '../inventory.js';
import type { DamResult } from '../pipeline/result.js';
import type { Bands } from '../uncertainty/bands.js';
import { m2ToAcres, m2ToHectares, m3ToAcreFeet, mToMiles } from '../units.js';

/** Id of the row of dams in no watershed (`outside-watersheds` when a watershed is called `outside`). */
export const OUTSIDE_ID = 'outside';

/** One row of summary.json `watersheds[]` (names fixed: id, dam_count, stream_length_m, inundated_area_m2, influence_area_m2, valley_bottom_area_m2, storage_m3). */
export interface WatershedRow {
  id: string;
  name: string | null;
  /** `polygon` (the user's), `derived` (from the DEM), `edge` (cells draining off the DEM), `outside` (dams in no watershed). */
  source: 'polygon' | 'derived' | 'edge' | 'outside';
  /** Area of the watershed on the DEM (cells whose centre it holds), m²; null for `outside`. */
  area_m2: number | null;
  area_ha: number | null;
  area_acres: number | null;
  /** Dams whose crest lies in the watershed, every status. */
  dam_count: number;
  dams_in_totals: number;
  dams_confirmed: number;
  dams_candidate: number;
  dams_breached: number;
  dams_proposed: number;
  /** Stream length, m (streams at the run's contributing-area threshold); null for `outside`. */
  stream_length_m: number | null;
  stream_length_km: number | null;
  stream_length_mi: number | null;
  /** Dams in the totals per km of stream; null without streams. */
  dams_per_stream_km: number | null;
  /** Water of the watershed's dams, m² (Σ area_m2). */
  inundated_area_m2: number;
  inundated_area_ha: number;
  inundated_area_acres: number;
  /** Riparian fringe of the watershed's dams' ponds, m². */
  riparian_area_m2: number;
  /** Inundated + riparian, m² (Σ of the dams' influence_area_m2). */
  influence_area_m2: number;
  influence_area_ha: number;
  influence_area_acres: number;
  /** Valley bottom in the watershed, m²; null for `outside`. */
  valley_bottom_area_m2: number | null;
  valley_bottom_area_ha: number | null;
  valley_bottom_area_acres: number | null;
  /** 100 × influence area / valley-bottom area; null without valley bottom. */
  valley_bottom_influenced_pct: number | null;
  /** Storage of the watershed's dams, m³ (Σ volume_m3) and acre-feet. */
  storage_m3: number;
  storage_acre_ft: number;
  storage_above_surface_m3: number;
  storage_below_surface_m3: number;
  storage_above_surface_acre_ft: number;
  storage_below_surface_acre_ft: number;
  /** Monte Carlo bands of the row's figures (tally/watershed-bands.ts); absent without draws. */
  bands?: Bands;
}

/**
 * A watershed row as summary.json's type promises it to readers: the
 * figures the issue fixes are always there, the others may be missing in
 * summaries from other producers.
 */
export type SummaryWatershed = Pick<WatershedRow, 'id' | 'dam_count' | 'stream_length_m' | 'inundated_area_m2' | 'influence_area_m2' | 'valley_bottom_area_m2' | 'storage_m3'> & Partial<WatershedRow>;

/** The influence stage's additions to summary.json `totals`. */
export interface InfluenceTotals {
  /** Σ of the dams' influence_area_m2 (inundated + riparian), m². */
  influence_area_m2: number;
  influence_area_ha: number;
  influence_area_acres: number;
  /** Σ of the dams' riparian_area_m2, m². */
  riparian_area_m2: number;
  /** Σ of the watershed rows' stream lengths, m. */
  stream_length_m: number;
  stream_length_mi: number;
  /** Σ of the watershed rows' valley-bottom areas, m². */
  valley_bottom_area_m2: number;
  valley_bottom_area_ha: number;
  valley_bottom_area_acres: number;
  valley_bottom_influenced_pct: number | null;
  /** Watershed rows, the `outside` row included. */
  watershed_count: number;
}

/** A watershed as the tally sees it, with its land figures. */
export interface TallyUnit {
  id: string;
  name: string | null;
  source: 'polygon' | 'derived' | 'edge';
  areaM2: number;
  streamLengthM: number;
  valleyBottomAreaM2: number;
}

/** What {@link tallyWatersheds} returns. */
export interface WatershedTally {
  rows: WatershedRow[];
  totals: InfluenceTotals;
  /** Row of each dam (index into rows). */
  rowOfDam: Int32Array;
  warnings: Warning[];
}

const STATUS_FIELD: Record<DamStatus, 'dams_confirmed' | 'dams_candidate' | 'dams_breached' | 'dams_proposed'> = {
  confirmed: 'dams_confirmed',
  candidate: 'dams_candidate',
  breached: 'dams_breached',
  proposed: 'dams_proposed',
};

/**
 * Sets each dam's `watershed`, `riparian_area_m2` and `influence_area_m2`
 * (its water plus the riparian cells nearest to its pond; 0 for a dam
 * whose water is not counted) and tallies the rows. `damUnit[d]` is the
 * watershed of dam row d (−1: none), `damRiparianM2[d]` its riparian area.
 */
export function tallyWatersheds(dams: DamResult[], units: readonly TallyUnit[], damUnit: Int32Array, damRiparianM2: Float64Array, source: string): WatershedTally {
  const rows: WatershedRow[] = units.map((u) => emptyRow(u.id, u.name, u.source, u));
  const outsideDams: string[] = [];
  dams.forEach((d, k) => {
    if (damUnit[k]! < 0) outsideDams.push(d.id);
  });
  let outsideRow = -1;
  if (outsideDams.length > 0) {
    let id = OUTSIDE_ID;
    if (units.some((u) => u.id === id)) id = `${OUTSIDE_ID}-watersheds`;
    outsideRow = rows.length;
    rows.push(emptyRow(id, 'dams in no watershed', 'outside', null));
  }
  const rowOfDam = new Int32Array(dams.length);
  let influence = 0;
  let riparian = 0;
  dams.forEach((d, k) => {
    const counted = d.estimated && d.in_totals;
    const ripM2 = counted ? damRiparianM2[k]! : 0;
    d.riparian_area_m2 = ripM2;
    d.influence_area_m2 = counted ? d.area_m2 + ripM2 : 0;
    const r = damUnit[k]! >= 0 ? damUnit[k]! : outsideRow;
    rowOfDam[k] = r;
    const row = rows[r]!;
    d.watershed = row.id;
    row.dam_count++;
    row[STATUS_FIELD[d.status]]++;
    if (counted) row.dams_in_totals++;
    row.inundated_area_m2 += d.area_m2;
    row.riparian_area_m2 += ripM2;
    row.influence_area_m2 += d.influence_area_m2;
    row.storage_m3 += d.volume_m3;
    row.storage_above_surface_m3 += d.volume_above_surface_m3 ?? 0;
    row.storage_below_surface_m3 += d.volume_below_surface_m3 ?? 0;
    influence += d.influence_area_m2;
    riparian += ripM2;
  });
  let streamM = 0;
  let valleyM2 = 0;
  for (const row of rows) {
    finishRow(row);
    streamM += row.stream_length_m ?? 0;
    valleyM2 += row.valley_bottom_area_m2 ?? 0;
  }
  const warnings: Warning[] = [];
  if (outsideDams.length > 0) {
    const shown = outsideDams.slice(0, 12).join(', ');
    warnings.push({
      code: 'dams-outside-watersheds',
      message:
        `${outsideDams.length} of ${dams.length} dams lie in no watershed of ${source} (${shown}${outsideDams.length > 12 ? ', …' : ''}); ` +
        `they are tallied in the watershed row '${rows[outsideRow]!.id}'. Extend the watershed polygons over them, or check the dams' coordinates`,
    });
  }
  return {
    rows,
    rowOfDam,
    warnings,
    totals: {
      influence_area_m2: influence,
      influence_area_ha: m2ToHectares(influence),
      influence_area_acres: m2ToAcres(influence),
      riparian_area_m2: riparian,
      stream_length_m: streamM,
      stream_length_mi: mToMiles(streamM),
      valley_bottom_area_m2: valleyM2,
      valley_bottom_area_ha: m2ToHectares(valleyM2),
      valley_bottom_area_acres: m2ToAcres(valleyM2),
      valley_bottom_influenced_pct: valleyM2 > 0 ? (100 * influence) / valleyM2 : null,
      watershed_count: rows.length,
    },
  };
}

function emptyRow(id: string, name: string | null, source: WatershedRow['source'], land: TallyUnit | null): WatershedRow {
  return {
    id,
    name,
    source,
    area_m2: land ? land.areaM2 : null,
    area_ha: null,
    area_acres: null,
    dam_count: 0,
    dams_in_totals: 0,
    dams_confirmed: 0,
    dams_candidate: 0,
    dams_breached: 0,
    dams_proposed: 0,
    stream_length_m: land ? land.streamLengthM : null,
    stream_length_km: null,
    stream_length_mi: null,
    dams_per_stream_km: null,
    inundated_area_m2: 0,
    inundated_area_ha: 0,
    inundated_area_acres: 0,
    riparian_area_m2: 0,
    influence_area_m2: 0,
    influence_area_ha: 0,
    influence_area_acres: 0,
    valley_bottom_area_m2: land ? land.valleyBottomAreaM2 : null,
    valley_bottom_area_ha: null,
    valley_bottom_area_acres: null,
    valley_bottom_influenced_pct: null,
    storage_m3: 0,
    storage_acre_ft: 0,
    storage_above_surface_m3: 0,
    storage_below_surface_m3: 0,
    storage_above_surface_acre_ft: 0,
    storage_below_surface_acre_ft: 0,
  };
}

/** Unit conversions and ratios once the sums are in. */
function finishRow(row: WatershedRow): void {
  const nullable = (v: number | null, f: (x: number) => number): number | null => (v === null ? null : f(v));
  row.area_ha = nullable(row.area_m2, m2ToHectares);
  row.area_acres = nullable(row.area_m2, m2ToAcres);
  row.stream_length_km = nullable(row.stream_length_m, (m) => m / 1000);
  row.stream_length_mi = nullable(row.stream_length_m, mToMiles);
  row.dams_per_stream_km = row.stream_length_m !== null && row.stream_length_m > 0 ? row.dams_in_totals / (row.stream_length_m / 1000) : null;
  row.inundated_area_ha = m2ToHectares(row.inundated_area_m2);
  row.inundated_area_acres = m2ToAcres(row.inundated_area_m2);
  row.influence_area_ha = m2ToHectares(row.influence_area_m2);
  row.influence_area_acres = m2ToAcres(row.influence_area_m2);
  row.valley_bottom_area_ha = nullable(row.valley_bottom_area_m2, m2ToHectares);
  row.valley_bottom_area_acres = nullable(row.valley_bottom_area_m2, m2ToAcres);
  row.valley_bottom_influenced_pct = row.valley_bottom_area_m2 !== null && row.valley_bottom_area_m2 > 0 ? (100 * row.influence_area_m2) / row.valley_bottom_area_m2 : null;
  row.storage_acre_ft = m3ToAcreFeet(row.storage_m3);
  row.storage_above_surface_acre_ft = m3ToAcreFeet(row.storage_above_surface_m3);
  row.storage_below_surface_acre_ft = m3ToAcreFeet(row.storage_below_surface_m3);
}
