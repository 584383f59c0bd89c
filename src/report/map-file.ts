/**
 * report-map.json: what the report's overview map is drawn from, written by
 * every estimate run beside summary.json, so that `pondage report RUN_DIR`
 * redraws the map without the DEM (which may have moved since).
 *
 * It holds the DEM's CRS (with its proj4 definition, to bring the run's
 * lon/lat GeoJSON layers back into the DEM's CRS), the mapped extent, a
 * downsampled hillshade as PNG, and the dams' positions in the DEM's CRS.
 */
import { InputError } from '../errors.js';

/** The file name in a run folder. */
export const REPORT_MAP_FILE = 'report-map.json';
/** Format tag and version written into the file. */
export const REPORT_MAP_FORMAT = 'pondage-report-map';
export const REPORT_MAP_VERSION = 1;

/** A dam's position in the DEM's CRS. */
export type MapDam =
  | { id: string; kind: 'line'; lines: [number, number][][] }
  | { id: string; kind: 'point'; point: [number, number] };

export interface ReportMap {
  format: typeof REPORT_MAP_FORMAT;
  version: number;
  crs: {
    name: string;
    epsg: number | null;
    proj4: string;
    geographic: boolean;
    /** Unit of map coordinates: 'metre', 'foot', 'us-survey-foot' or 'degree'. */
    unit: string;
  };
  /** Mapped extent in the DEM's CRS units (the hillshade covers exactly this). */
  extent: { xmin: number; ymin: number; xmax: number; ymax: number };
  /** Metres per CRS unit east–west and north–south at the map's centre (1 for metre CRSs). */
  metresPerUnitX: number;
  metresPerUnitY: number;
  /** Hillshade of the extent, or null when the DEM had no data there. */
  hillshade: {
    widthPx: number;
    heightPx: number;
    /** DEM cells per hillshade pixel along each side (block mean). */
    blockCells: number;
    azimuthDeg: number;
    altitudeDeg: number;
    /** Greyscale PNG (with alpha where the DEM has NoData), base64. */
    pngBase64: string;
  } | null;
  dams: MapDam[];
}

/** Parses the JSON text of report-map.json; throws InputError naming the file and the fix. */
export function parseReportMap(text: string, path: string): ReportMap {
  const fail = (what: string): never => {
    throw new InputError(`${path}: ${what}; rerun pondage estimate to write a fresh ${REPORT_MAP_FILE}`);
  };
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    return fail('is not valid JSON');
  }
  const o = obj(raw) ?? fail('is not a JSON object');
  if (o['format'] !== REPORT_MAP_FORMAT) fail(`has no "format": "${REPORT_MAP_FORMAT}"`);
  const version = num(o['version']) ?? fail('has no version');
  if (version > REPORT_MAP_VERSION) fail(`is version ${version}, newer than this pondage reads (${REPORT_MAP_VERSION})`);
  const c = obj(o['crs']) ?? fail('has no "crs"');
  const e = obj(o['extent']) ?? fail('has no "extent"');
  const extent = {
    xmin: num(e['xmin']) ?? fail('extent.xmin is missing'),
    ymin: num(e['ymin']) ?? fail('extent.ymin is missing'),
    xmax: num(e['xmax']) ?? fail('extent.xmax is missing'),
    ymax: num(e['ymax']) ?? fail('extent.ymax is missing'),
  };
  if (!(extent.xmax > extent.xmin && extent.ymax > extent.ymin)) fail('extent is empty');
  let hillshade: ReportMap['hillshade'] = null;
  const h = obj(o['hillshade']);
  if (h) {
    hillshade = {
      widthPx: num(h['widthPx']) ?? fail('hillshade.widthPx is missing'),
      heightPx: num(h['heightPx']) ?? fail('hillshade.heightPx is missing'),
      blockCells: num(h['blockCells']) ?? fail('hillshade.blockCells is missing'),
      azimuthDeg: num(h['azimuthDeg']) ?? fail('hillshade.azimuthDeg is missing'),
      altitudeDeg: num(h['altitudeDeg']) ?? fail('hillshade.altitudeDeg is missing'),
      pngBase64: str(h['pngBase64']) ?? fail('hillshade.pngBase64 is missing'),
    };
    if (!/^[A-Za-z0-9+/]*={0,2}$/.test(hillshade.pngBase64)) fail('hillshade.pngBase64 is not base64');
  }
  const dams: MapDam[] = [];
  const list = Array.isArray(o['dams']) ? (o['dams'] as unknown[]) : fail('has no "dams" list');
  for (const item of list) {
    const d = obj(item) ?? fail('a dam entry is not an object');
    const id = str(d['id']) ?? fail('a dam entry has no id');
    if (d['kind'] === 'point') {
      const p = pair(d['point']) ?? fail(`dam ${id} has no point`);
      dams.push({ id, kind: 'point', point: p });
    } else if (d['kind'] === 'line') {
      const ls = Array.isArray(d['lines']) ? (d['lines'] as unknown[]) : fail(`dam ${id} has no lines`);
      const lines = ls.map((l) => (Array.isArray(l) ? l.map((p) => pair(p) ?? fail(`dam ${id} has a bad vertex`)) : fail(`dam ${id} has a bad line`)));
      dams.push({ id, kind: 'line', lines });
    } else {
      fail(`dam ${id} has an unknown kind`);
    }
  }
  return {
    format: REPORT_MAP_FORMAT,
    version,
    crs: {
      name: str(c['name']) ?? fail('crs.name is missing'),
      epsg: num(c['epsg']),
      proj4: str(c['proj4']) ?? fail('crs.proj4 is missing'),
      geographic: c['geographic'] === true,
      unit: str(c['unit']) ?? fail('crs.unit is missing'),
    },
    extent,
    metresPerUnitX: num(o['metresPerUnitX']) ?? fail('metresPerUnitX is missing'),
    metresPerUnitY: num(o['metresPerUnitY']) ?? fail('metresPerUnitY is missing'),
    hillshade,
    dams,
  };
}

function obj(v: unknown): Record<string, unknown> | null {
  return typeof v === 'object' && v !== null && !Array.isArray(v) ? (v as Record<string, unknown>) : null;
}
function num(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}
function str(v: unknown): string | null {
  return typeof v === 'string' ? v : null;
}
function pair(v: unknown): [number, number] | null {
  if (!Array.isArray(v) || v.length < 2) return null;
  const x = num(v[0]);
  const y = num(v[1]);
  return x === null || y === null ? null : [x, y];
}
