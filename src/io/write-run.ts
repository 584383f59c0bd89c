/**
 * Writes one estimate run's files into a folder (the caller makes the folder
 * appear atomically): summary.json, dams.csv, ponds.geojson, depth.tif
 * (the influence stage's files: io/write-influence.ts).
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { colToX, rowToY, windowTransform, type GeoTransform } from '../grid/transform.js';
import { orientRfc7946 } from '../grid/polygonise.js';
import type { EstimateResult } from '../pipeline/estimate.js';
import type { DamResult } from '../pipeline/result.js';
import type { Summary } from '../pipeline/summary.js';
import { FOOT_M, m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';
import { WGS84, makeTransform, type Crs } from './crs.js';
import { toCsv, type CsvValue } from './csv-write.js';
import { bandProperties, withBandColumns } from './band-columns.js';
import { writeGeoTiff } from './geotiff-write.js';

/** NoData written in depth.tif (GDAL reads it from the GDAL_NODATA tag). */
export const DEPTH_NODATA = -9999;

export interface RunFiles {
  summary: Summary;
  result: EstimateResult;
  demTransform: GeoTransform;
  demCrs: Crs;
}

/** Writes every file of a run into `dir`. */
export async function writeRunFiles(dir: string, run: RunFiles): Promise<void> {
  await writeFile(join(dir, 'summary.json'), JSON.stringify(run.summary, null, 2) + '\n');
  await writeFile(join(dir, 'dams.csv'), damsCsv(run.summary.dams));
  await writeFile(join(dir, 'ponds.geojson'), JSON.stringify(pondsGeoJson(run)) + '\n');
  const depth = run.result.depth;
  if (depth) {
    const { box, data } = depth;
    const out = new Float32Array(data.length);
    for (let i = 0; i < data.length; i++) out[i] = Number.isNaN(data[i]!) ? DEPTH_NODATA : data[i]!;
    await writeGeoTiff(join(dir, 'depth.tif'), {
      width: box.col1 - box.col0,
      height: box.row1 - box.row0,
      data: out,
      transform: windowTransform(run.demTransform, box.col0, box.row0),
      crs: run.demCrs,
      noData: DEPTH_NODATA,
      zUnit: 'metre',
    });
  }
}

const round = (v: number | null, digits: number): number | null => (v === null || !Number.isFinite(v) ? null : Number(v.toFixed(digits)));

/** Fixed columns of dams.csv; the inventory's own properties follow them. Units are in the names. */
export const DAMS_CSV_COLUMNS = [
  'id', 'status', 'confidence', 'year', 'in_totals', 'estimated', 'skip_reason', 'crest_geometry', 'crest_length_m',
  'bed_elev_m', 'crest_elev_m', 'height_m', 'height_ft', 'height_source', 'upstream_side', 'upstream_source',
  'water_level_m', 'limited_by', 'area_m2', 'area_ha', 'area_acres', 'volume_m3', 'volume_acre_ft',
  'volume_above_surface_m3', 'volume_below_surface_m3', 'volume_below_surface_acre_ft', 'water_surface_elev_m',
  'water_surface_area_m2', 'freeboard_m', 'depth_at_dam_m', 'bed_source', 'water_surface_source',
  'max_depth_m', 'max_depth_ft', 'mean_depth_m', 'standalone_area_m2', 'standalone_volume_m3',
  'standalone_volume_acre_ft', 'drowned_by', 'watershed', 'riparian_area_m2', 'influence_area_m2', 'influence_area_ha',
  'influence_area_acres', 'warnings',
] as const;

/**
 * dams.csv: one row a dam, SI and US customary side by side. Values are
 * rounded for reading (elevations and depths to the millimetre, areas to
 * 0.01 m², volumes to 0.001 m³); summary.json keeps full precision.
 */
export function damsCsv(dams: readonly DamResult[]): string {
  const extraKeys: string[] = [];
  for (const d of dams) for (const k of Object.keys(d.properties)) if (!extraKeys.includes(k)) extraKeys.push(k);
  const header = [...DAMS_CSV_COLUMNS, ...extraKeys.map((k) => ((DAMS_CSV_COLUMNS as readonly string[]).includes(k) ? `property_${k}` : k))];
  const rows = dams.map((d): CsvValue[] => [
    d.id, d.status, d.confidence, d.year, d.in_totals, d.estimated, d.skip_reason, d.crest_geometry, round(d.crest_length_m, 2),
    round(d.bed_elev_m, 3), round(d.crest_elev_m, 3), round(d.height_m, 3), round(d.height_m === null ? null : d.height_m / FOOT_M, 3),
    d.height_source, d.upstream_side, d.upstream_source,
    round(d.water_level_m, 3), d.limited_by, round(d.area_m2, 2), round(m2ToHectares(d.area_m2), 5), round(m2ToAcres(d.area_m2), 5),
    round(d.volume_m3, 3), round(m3ToAcreFeet(d.volume_m3), 6),
    round(d.volume_above_surface_m3 ?? null, 3), round(d.volume_below_surface_m3 ?? null, 3),
    round(d.volume_below_surface_m3 === undefined ? null : m3ToAcreFeet(d.volume_below_surface_m3), 6),
    round(d.water_surface_elev_m ?? null, 3), round(d.water_surface_area_m2 ?? null, 2), round(d.freeboard_m ?? null, 3),
    round(d.depth_at_dam_m ?? null, 3), d.bed_source ?? null, d.water_surface_source ?? null,
    round(d.max_depth_m, 3), round(d.max_depth_m / FOOT_M, 3), round(d.mean_depth_m, 3),
    round(d.standalone_area_m2, 2), round(d.standalone_volume_m3, 3), round(m3ToAcreFeet(d.standalone_volume_m3), 6),
    d.drowned_by, d.watershed ?? null, round(d.riparian_area_m2 ?? null, 2), round(d.influence_area_m2 ?? null, 2),
    round(d.influence_area_m2 === undefined ? null : m2ToHectares(d.influence_area_m2), 5),
    round(d.influence_area_m2 === undefined ? null : m2ToAcres(d.influence_area_m2), 5), d.warnings.join(' | '),
    ...extraKeys.map((k) => csvValueOf(d.properties[k])),
  ]);
  // Monte Carlo bands beside each figure's column (io/band-columns.ts), when the run made draws.
  const banded = withBandColumns(header, rows, dams.map((d) => d.bands));
  return toCsv(banded.header, banded.rows);
}

function csvValueOf(v: unknown): CsvValue {
  if (v === null || v === undefined) return null;
  if (typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean') return v;
  return JSON.stringify(v);
}

/**
 * ponds.geojson (RFC 7946: WGS 84 lon/lat, exterior rings counter-clockwise):
 * one feature a pond outline with the dam's figures. `pond_kind` is
 * `attributed` for water counted in the totals, `standalone` for the pond a
 * dam outside the totals (proposed, low-confidence candidate) would hold.
 */
export function pondsGeoJson(run: RunFiles): object {
  const toLonLat = makeTransform(run.demCrs, WGS84);
  const t = run.demTransform;
  const features = run.result.outlines.map((o) => {
    const d = run.summary.dams[o.dam]!;
    const coordinates = o.polygons.map((polygon) =>
      orientRfc7946(
        polygon.map((ring) =>
          ring.map(([c, r]) => {
            const [lon, lat] = toLonLat(colToX(t, c), rowToY(t, r));
            return [Number(lon.toFixed(8)), Number(lat.toFixed(8))] as [number, number];
          }),
        ),
      ),
    );
    const { stage_storage: _curve, properties, warnings, bands, ...figures } = d;
    return {
      type: 'Feature',
      geometry: { type: 'MultiPolygon', coordinates },
      properties: {
        ...figures,
        pond_kind: o.kind,
        area_acres: m2ToAcres(o.kind === 'attributed' ? d.area_m2 : d.standalone_area_m2),
        volume_acre_ft: m3ToAcreFeet(o.kind === 'attributed' ? d.volume_m3 : d.standalone_volume_m3),
        ...bandProperties(bands, o.kind === 'attributed' ? ['area_m2', 'volume_m3'] : ['standalone_area_m2', 'standalone_volume_m3']),
        warnings: warnings.join(' | '),
        ...Object.fromEntries(Object.entries(properties).map(([k, v]) => [k in figures ? `property_${k}` : k, v])),
      },
    };
  });
  return { type: 'FeatureCollection', features };
}
