/**
 * The influence stage's files in a run folder:
 *
 * - `watersheds.csv`: one row per watershed (summary.json `watersheds[]`),
 *   SI and US customary side by side, bands beside storage and inundated
 *   area when the run has draws.
 * - `watersheds.geojson`: the watersheds as counted (the cells each one
 *   holds, outlined), with the row's figures.
 * - `streams.geojson`: the stream links the tallies used, as lines.
 * - `influence.geojson`: outlines of the influence zone by dam and class
 *   (`inundated`, `riparian`), with the dam's watershed.
 * - `influence.tif`: the classes on the DEM's grid and CRS (Float32: 0 none,
 *   1 inundated, 2 riparian; NoData −9999 where the DEM has none), over the
 *   influence zone's extent.
 *
 * GeoJSON is RFC 7946: WGS 84 lon/lat, exterior rings counter-clockwise.
 * Outlines pass through cell-edge midpoints (grid/polygonise.ts): take
 * areas from the figures, not from the polygons.
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { windowTransform } from '../grid/transform.js';
import type { InfluenceOutcome } from '../pipeline/influence-stage.js';
import type { DamResult } from '../pipeline/result.js';
import type { WatershedRow } from '../tally/watersheds.js';
import type { Bands } from '../uncertainty/bands.js';
import { m2ToAcres, m2ToHectares, mToMiles } from '../units.js';
import type { Crs } from './crs.js';
import { bucketLabels, cornerToLonLat, outlineLonLat, type CornerToLonLat } from './outlines.js';
import { toCsv, type CsvValue } from './csv-write.js';
import { writeGeoTiff } from './geotiff-write.js';

/** NoData of influence.tif. */
export const INFLUENCE_NODATA = -9999;

/** File names the stage writes (the report reads the GeoJSON layers by these names). */
export const INFLUENCE_FILES = {
  watershedsCsv: 'watersheds.csv',
  watersheds: 'watersheds.geojson',
  streams: 'streams.geojson',
  influence: 'influence.geojson',
  influenceTif: 'influence.tif',
} as const;

/** What the writer needs. */
export interface InfluenceFiles {
  outcome: InfluenceOutcome;
  rows: readonly WatershedRow[];
  dams: readonly DamResult[];
  demCrs: Crs;
}

/** Writes the five files into `dir`. */
export async function writeInfluenceFiles(dir: string, f: InfluenceFiles): Promise<void> {
  await writeFile(join(dir, INFLUENCE_FILES.watershedsCsv), watershedsCsv(f.rows));
  const toLonLat = cornerToLonLat(f.outcome.transform, f.demCrs);
  await writeFile(join(dir, INFLUENCE_FILES.watersheds), JSON.stringify(watershedsGeoJson(f, toLonLat)) + '\n');
  await writeFile(join(dir, INFLUENCE_FILES.streams), JSON.stringify(streamsGeoJson(f, toLonLat)) + '\n');
  await writeFile(join(dir, INFLUENCE_FILES.influence), JSON.stringify(influenceGeoJson(f, toLonLat)) + '\n');
  await writeInfluenceTif(join(dir, INFLUENCE_FILES.influenceTif), f);
}

/** Columns of watersheds.csv, in order (units in the names). */
export const WATERSHEDS_CSV_COLUMNS = [
  'id', 'name', 'source', 'area_m2', 'area_ha', 'area_acres',
  'dam_count', 'dams_in_totals', 'dams_confirmed', 'dams_candidate', 'dams_breached', 'dams_proposed',
  'stream_length_m', 'stream_length_km', 'stream_length_mi', 'dams_per_stream_km',
  'inundated_area_m2', 'inundated_area_ha', 'inundated_area_acres', 'riparian_area_m2',
  'influence_area_m2', 'influence_area_ha', 'influence_area_acres',
  'valley_bottom_area_m2', 'valley_bottom_area_ha', 'valley_bottom_area_acres', 'valley_bottom_influenced_pct',
  'storage_m3', 'storage_acre_ft', 'storage_above_surface_m3', 'storage_below_surface_m3',
  'storage_above_surface_acre_ft', 'storage_below_surface_acre_ft',
] as const satisfies readonly (keyof WatershedRow)[];

/** Columns that get band columns (`_p05`, `_p50`, `_p95`, `_mean`) when the rows have bands, and the band each reads. */
const BANDED: Readonly<Record<string, string>> = {
  dams_in_totals: 'dams_in_totals',
  inundated_area_m2: 'inundated_area_m2',
  inundated_area_ha: 'inundated_area_ha',
  inundated_area_acres: 'inundated_area_acres',
  storage_m3: 'storage_m3',
  storage_acre_ft: 'storage_acre_ft',
  influence_area_m2: 'influence_area_m2',
  influence_area_ha: 'influence_area_ha',
  influence_area_acres: 'influence_area_acres',
};
const STATS = ['p05', 'p50', 'p95', 'mean'] as const;

/** watersheds.csv: full precision (so rows re-add to the totals as summary.json's do), empty cells for nulls. */
export function watershedsCsv(rows: readonly WatershedRow[]): string {
  const withBands = rows.some((r) => r.bands !== undefined);
  const header: string[] = [];
  for (const c of WATERSHEDS_CSV_COLUMNS) {
    header.push(c);
    if (withBands && BANDED[c]) for (const s of STATS) header.push(`${c}_${s}`);
  }
  const body = rows.map((r): CsvValue[] => {
    const out: CsvValue[] = [];
    for (const c of WATERSHEDS_CSV_COLUMNS) {
      out.push(r[c]);
      const band = BANDED[c];
      if (withBands && band) for (const s of STATS) out.push(r.bands?.[band]?.[s] ?? null);
    }
    return out;
  });
  return toCsv(header, body);
}

/** watersheds.geojson: one MultiPolygon feature per watershed with cells, with the row's figures. */
function watershedsGeoJson(f: InfluenceFiles, toLonLat: CornerToLonLat): object {
  const o = f.outcome;
  const { cells, start } = bucketLabels(o.labels, o.units.length);
  const features: object[] = [];
  o.units.forEach((u, k) => {
    const own = cells.subarray(start[k]!, start[k + 1]!);
    if (own.length === 0) return;
    const row = f.rows.find((r) => r.id === u.id);
    features.push({ type: 'Feature', geometry: { type: 'MultiPolygon', coordinates: outlineLonLat(own, o.width, toLonLat) }, properties: row ? flatRow(row) : { id: u.id } });
  });
  return { type: 'FeatureCollection', features };
}

/** A row's figures as flat properties (bands as `<figure>_<stat>`). */
function flatRow(row: WatershedRow): Record<string, unknown> {
  const { bands, ...figures } = row;
  const out: Record<string, unknown> = { ...figures };
  if (bands) for (const [name, b] of Object.entries(bands as Bands)) for (const s of STATS) out[`${name}_${s}`] = b[s];
  return out;
}

/** streams.geojson: one LineString per stream link. */
function streamsGeoJson(f: InfluenceFiles, toLonLat: CornerToLonLat): object {
  const o = f.outcome;
  const t = o.transform;
  const features = o.streams
    .filter((s) => s.xy.length >= 4)
    .map((s) => {
      const coordinates: [number, number][] = [];
      for (let k = 0; k + 1 < s.xy.length; k += 2) {
        // Back to window pixel coordinates, so one conversion serves every layer.
        coordinates.push(toLonLat((s.xy[k]! - t.x0) / t.dx, (s.xy[k + 1]! - t.y0) / t.dy));
      }
      return {
        type: 'Feature',
        geometry: { type: 'LineString', coordinates },
        properties: {
          link_id: s.linkId,
          downstream_link_id: s.downstreamLinkId,
          watershed: s.unit >= 0 ? (o.units[s.unit]?.id ?? null) : null,
          length_m: s.lengthM,
          length_mi: mToMiles(s.lengthM),
        },
      };
    });
  return { type: 'FeatureCollection', features };
}

/** influence.geojson: one feature per dam and class with cells. */
function influenceGeoJson(f: InfluenceFiles, toLonLat: CornerToLonLat): object {
  const o = f.outcome;
  const D = f.dams.length;
  const { classes, classOwner } = o;
  // Label (dam row · 2 + class − 1) + 1 per influenced cell, 0 elsewhere.
  const key = new Int32Array(classes.length);
  for (let i = 0; i < classes.length; i++) {
    const c = classes[i]!;
    const d = classOwner[i]! - 1;
    if ((c === 1 || c === 2) && d >= 0) key[i] = d * 2 + c;
  }
  const { cells, start } = bucketLabels(key, 2 * D);
  const areas = o.cellAreaM2;
  const features: object[] = [];
  for (let d = 0; d < D; d++) {
    for (let c = 0; c < 2; c++) {
      const k = d * 2 + c;
      const own = cells.subarray(start[k]!, start[k + 1]!);
      if (own.length === 0) continue;
      let areaM2 = 0;
      for (let j = 0; j < own.length; j++) areaM2 += areas[(own[j]! / o.width) | 0]!;
      const dam = f.dams[d]!;
      features.push({
        type: 'Feature',
        geometry: { type: 'MultiPolygon', coordinates: outlineLonLat(own, o.width, toLonLat) },
        properties: {
          class: c === 0 ? 'inundated' : 'riparian',
          dam: dam.id,
          watershed: dam.watershed ?? null,
          area_m2: areaM2,
          area_ha: m2ToHectares(areaM2),
          area_acres: m2ToAcres(areaM2),
        },
      });
    }
  }
  return { type: 'FeatureCollection', features };
}

/** influence.tif over the influence zone's extent (a cell of margin), on the DEM's grid. */
async function writeInfluenceTif(path: string, f: InfluenceFiles): Promise<void> {
  const o = f.outcome;
  const { classes, width, height } = o;
  let c0 = width;
  let c1 = -1;
  let r0 = height;
  let r1 = -1;
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const v = classes[r * width + c]!;
      if (v !== 1 && v !== 2) continue;
      if (c < c0) c0 = c;
      if (c > c1) c1 = c;
      if (r < r0) r0 = r;
      if (r > r1) r1 = r;
    }
  }
  if (c1 < 0) return; // no influence zone: no raster
  c0 = Math.max(0, c0 - 1);
  r0 = Math.max(0, r0 - 1);
  c1 = Math.min(width - 1, c1 + 1);
  r1 = Math.min(height - 1, r1 + 1);
  const w = c1 - c0 + 1;
  const h = r1 - r0 + 1;
  const data = new Float32Array(w * h);
  for (let r = 0; r < h; r++) {
    for (let c = 0; c < w; c++) {
      const v = classes[(r + r0) * width + c + c0]!;
      data[r * w + c] = v === 255 ? INFLUENCE_NODATA : v;
    }
  }
  await writeGeoTiff(path, { width: w, height: h, data, transform: windowTransform(o.transform, c0, r0), crs: f.demCrs, noData: INFLUENCE_NODATA });
}
