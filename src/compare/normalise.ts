/**
 * Figures that let valleys of different size be compared: storage per km of
 * stream and per km² of valley bottom, dams per km of stream, and the
 * percent of the valley bottom influenced. They need the stream lengths and
 * valley-bottom areas a run reports with its watersheds; without them each
 * figure is null and the note says why.
 */
import type { RunRecord, RunWatershed } from './run-record.js';

/** Normalised figures of a run or a watershed (null: not available). */
export interface Normalised {
  stream_length_km: number | null;
  valley_bottom_area_km2: number | null;
  storage_m3: number;
  /** m³ of storage per km of stream. */
  storage_per_stream_km_m3: number | null;
  /** m³ of storage per km² of valley bottom. */
  storage_per_valley_bottom_km2_m3: number | null;
  dams_per_stream_km: number | null;
  /** 100 × influence area / valley-bottom area. */
  valley_bottom_influenced_pct: number | null;
}

/** Normalised figures of a run: total and per watershed, with a note when not available. */
export interface RunNormalised {
  available: boolean;
  note: string;
  total: Normalised;
  watersheds: ({ id: string; name: string | null } & Normalised)[];
}

const ratio = (top: number | null, bottom: number | null): number | null =>
  top === null || bottom === null || !(bottom > 0) ? null : top / bottom;

/** Normalised figures from plain counts and sizes. */
export function normalisedOf(f: {
  storageM3: number;
  damCount: number | null;
  streamLengthM: number | null;
  valleyBottomAreaM2: number | null;
  influenceAreaM2: number | null;
}): Normalised {
  const km = f.streamLengthM === null ? null : f.streamLengthM / 1000;
  const km2 = f.valleyBottomAreaM2 === null ? null : f.valleyBottomAreaM2 / 1e6;
  const pct = ratio(f.influenceAreaM2, f.valleyBottomAreaM2);
  return {
    stream_length_km: km,
    valley_bottom_area_km2: km2,
    storage_m3: f.storageM3,
    storage_per_stream_km_m3: ratio(f.storageM3, km),
    storage_per_valley_bottom_km2_m3: ratio(f.storageM3, km2),
    dams_per_stream_km: ratio(f.damCount, km),
    valley_bottom_influenced_pct: pct === null ? null : 100 * pct,
  };
}

/** Sum of a field over watersheds, or null when any watershed lacks it (or there are none). */
function sumOf(ws: readonly RunWatershed[], pick: (w: RunWatershed) => number | null): number | null {
  if (ws.length === 0) return null;
  let s = 0;
  for (const w of ws) {
    const v = pick(w);
    if (v === null) return null;
    s += v;
  }
  return s;
}

/**
 * A run's normalised figures. The run's stream length and valley-bottom area
 * are its totals' when stated, else the sums over its watersheds; the dam
 * count is the dams in the totals.
 */
export function normaliseRun(run: RunRecord): RunNormalised {
  const ws = run.watersheds ?? [];
  const streamM = run.totals.stream_length_m ?? sumOf(ws, (w) => w.stream_length_m);
  const valleyM2 = run.totals.valley_bottom_area_m2 ?? sumOf(ws, (w) => w.valley_bottom_area_m2);
  const total = normalisedOf({
    storageM3: run.totals.storage_m3,
    damCount: run.totals.dams_in_totals,
    streamLengthM: streamM,
    valleyBottomAreaM2: valleyM2,
    influenceAreaM2: run.totals.influence_area_m2,
  });
  const watersheds = ws.map((w) => ({
    id: w.id,
    name: w.name,
    ...normalisedOf({
      storageM3: w.storage_m3 ?? 0,
      damCount: w.dam_count,
      streamLengthM: w.stream_length_m,
      valleyBottomAreaM2: w.valley_bottom_area_m2,
      influenceAreaM2: w.influence_area_m2,
    }),
  }));
  const missing: string[] = [];
  if (streamM === null) missing.push('stream lengths');
  if (valleyM2 === null) missing.push('valley-bottom areas');
  if (run.totals.influence_area_m2 === null) missing.push('influence area');
  const available = missing.length === 0;
  return {
    available,
    note: available
      ? 'Per km of stream and per km² of valley bottom, from the run’s watersheds.'
      : `Not available for ${run.label}: the run reports no ${listOf(missing)} (they come with watersheds and the influence zone); ${total.storage_per_stream_km_m3 !== null || total.storage_per_valley_bottom_km2_m3 !== null ? 'the figures it can give are shown' : 'rerun the estimate with watersheds'}.`,
    total,
    watersheds,
  };
}

/** "a", "a or b", "a, b or c". */
function listOf(items: readonly string[]): string {
  return items.length <= 1 ? (items[0] ?? '') : `${items.slice(0, -1).join(', ')} or ${items[items.length - 1]!}`;
}
