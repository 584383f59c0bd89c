/**
 * Polygon layers a user gives: watersheds (`--watersheds FILE
 * --watershed-field NAME`) and the valley bottom (`--valley-bottom FILE`).
 *
 * GeoJSON FeatureCollection of Polygon / MultiPolygon features (a bare
 * Feature or geometry is read as a collection of one). Coordinates are WGS 84
 * lon/lat as RFC 7946 asks, unless the file carries a GeoJSON 2008 `crs`
 * member with an EPSG code, or the caller names the CRS (`--watersheds-crs`,
 * `--valley-bottom-crs`), which wins. Features are reprojected once into the
 * DEM's CRS and parsed into typed records here; nothing downstream sees the
 * raw JSON.
 *
 * Problems: a file that is not GeoJSON, holds no polygons, or whose
 * features lack the id property throws InputError naming the file, the
 * feature, the property and the properties it does have. Features without a
 * polygon geometry are skipped and counted (a warning).
 */
import { readFile } from 'node:fs/promises';
import { InputError, type Warning } from '../errors.js';
import type { PolygonCoords } from '../grid/rasterise-polygon.js';
import { WGS84, makeTransform, parseCrsText, type Crs } from './crs.js';

/** One polygon feature of a layer, in the DEM's CRS. */
export interface AreaLayerFeature {
  /** The id property's value as text (`--watershed-field`), or `feature N` (1-based) when the layer needs no ids. */
  id: string;
  /** The feature's `name` property when it is text, else null. */
  name: string | null;
  /** Position of the feature in the file (0-based). */
  index: number;
  /** One entry per polygon: outer ring then holes, DEM map units. */
  polygons: PolygonCoords[];
}

/** A polygon layer read into the DEM's CRS. */
export interface AreaLayer {
  path: string;
  /** The CRS the coordinates were read in, as text for summary.json. */
  crsLabel: string;
  /** The property that identified each feature, or null when the layer needs no ids. */
  idField: string | null;
  features: AreaLayerFeature[];
  /** Features skipped (no polygon geometry), with the reason in a warning. */
  warnings: Warning[];
}

/** How to read a layer. */
export interface AreaLayerOptions {
  /** What the layer is, for messages: `watersheds` or `valley bottom`. */
  role: string;
  /** The flag that gave the file, for messages (`--watersheds`). */
  flag: string;
  /** Property naming each feature (required on every feature when given). */
  idField?: string | undefined;
  /** The flag that names the id property, for messages (`--watershed-field`). */
  idFlag?: string;
  /** CRS text given on the command line (wins over the file's `crs` member). */
  crsText?: string | undefined;
  /** The flag that gives the CRS, for messages (`--watersheds-crs`). */
  crsFlag: string;
  /** The DEM's CRS: coordinates are converted into it. */
  demCrs: Crs;
}

/** Reads a polygon layer from a file (see the file comment). */
export async function readAreaLayer(path: string, options: AreaLayerOptions): Promise<AreaLayer> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(`cannot read the ${options.role} file "${path}" (${(e as Error).message}); give a GeoJSON file of polygons with ${options.flag}`);
  }
  return parseAreaLayer(text, path, options);
}

/** Parses a polygon layer's text; `path` names it in messages. */
export function parseAreaLayer(text: string, path: string, options: AreaLayerOptions): AreaLayer {
  const where = `${options.role} file "${path}" (${options.flag})`;
  let root: unknown;
  try {
    root = JSON.parse(text.replace(/^\ufeff/, ''));
  } catch (e) {
    throw new InputError(`${where} is not valid JSON (${(e as Error).message}); give a GeoJSON FeatureCollection of Polygon or MultiPolygon features`);
  }
  if (!isRecord(root)) throw new InputError(`${where} is not a GeoJSON object; give a FeatureCollection of Polygon or MultiPolygon features`);

  let from: Crs = WGS84;
  let crsLabel = 'WGS 84 lon/lat (RFC 7946)';
  if (options.crsText !== undefined) {
    from = parseCrsText(options.crsText, options.crsFlag);
    crsLabel = `${from.epsg !== null ? `EPSG:${from.epsg}` : from.name} (${options.crsFlag})`;
  } else {
    const member = root['crs'];
    const name = isRecord(member) && isRecord(member['properties']) ? member['properties']['name'] : undefined;
    if (typeof name === 'string') {
      const m = /EPSG:{1,2}(\d+)$/i.exec(name.trim());
      if (!m) throw new InputError(`${where}: its "crs" member "${name}" names no EPSG code; remove it and give lon/lat, or name the CRS with ${options.crsFlag} EPSG:NNNN`);
      from = parseCrsText(`EPSG:${m[1]}`, `the "crs" member of ${where}`);
      crsLabel = `EPSG:${m[1]} (the file's "crs" member)`;
    }
  }
  const toDem = makeTransform(from, options.demCrs);

  const rawFeatures: unknown[] =
    root['type'] === 'FeatureCollection' && Array.isArray(root['features'])
      ? root['features']
      : root['type'] === 'Feature'
        ? [root]
        : typeof root['type'] === 'string' && 'coordinates' in root
          ? [{ type: 'Feature', properties: {}, geometry: root }]
          : [];
  if (rawFeatures.length === 0) {
    throw new InputError(`${where} holds no features; give a GeoJSON FeatureCollection of Polygon or MultiPolygon features`);
  }

  const features: AreaLayerFeature[] = [];
  const skipped: string[] = [];
  let outOfRange = 0;
  rawFeatures.forEach((f, index) => {
    const feature = isRecord(f) ? f : {};
    const props = isRecord(feature['properties']) ? feature['properties'] : {};
    const id = options.idField !== undefined ? idOf(feature, props, options.idField, index, where, options.idFlag ?? 'the id option') : `feature ${index + 1}`;
    const g = feature['geometry'];
    const polygons = isRecord(g) ? polygonsOf(g) : null;
    if (polygons === null || polygons.length === 0) {
      skipped.push(id);
      return;
    }
    if (from.geographic) {
      for (const polygon of polygons) for (const ring of polygon) for (const p of ring) if (!(Math.abs(p[0]!) <= 180 && Math.abs(p[1]!) <= 90)) outOfRange++;
    }
    const converted = polygons.map((polygon) => polygon.map((ring) => ring.map((p) => toDem(p[0]!, p[1]!) as readonly number[])));
    const name = typeof props['name'] === 'string' ? props['name'] : null;
    features.push({ id, name, index, polygons: converted });
  });
  if (outOfRange > 0) {
    throw new InputError(
      `${where}: ${outOfRange} coordinates lie outside longitude ±180° / latitude ±90°, so they are not lon/lat; ` +
        `name the file's projected CRS with ${options.crsFlag} (e.g. ${options.crsFlag} EPSG:${options.demCrs.epsg ?? 'NNNN'})`,
    );
  }
  if (features.length === 0) {
    throw new InputError(`${where} holds no Polygon or MultiPolygon features (${skipped.length} features without one); draw the ${options.role} as polygons`);
  }
  const warnings: Warning[] = [];
  if (skipped.length > 0) {
    const shown = skipped.slice(0, 10).map((s) => `'${s}'`).join(', ');
    warnings.push({
      code: 'area-feature-skipped',
      message: `${where}: ${skipped.length} features have no Polygon or MultiPolygon geometry (${shown}${skipped.length > 10 ? ', …' : ''}) and are left out; give them polygons if they should count`,
    });
  }
  return { path, crsLabel, idField: options.idField ?? null, features, warnings };
}

/** The id of a feature from property `field` (or the feature's own `id` member when the field is `id`). */
function idOf(feature: Record<string, unknown>, props: Record<string, unknown>, field: string, index: number, where: string, flag: string): string {
  const v = field in props ? props[field] : field === 'id' ? feature['id'] : undefined;
  if (typeof v === 'string' && v.trim() !== '') return v.trim();
  if (typeof v === 'number' && Number.isFinite(v)) return String(v);
  const keys = Object.keys(props);
  const have = keys.length > 0 ? `its properties are ${keys.map((k) => `"${k}"`).join(', ')}` : 'it has no properties';
  const what = v === undefined ? `has no property "${field}"` : `has property "${field}" = ${JSON.stringify(v)}, which is no id (text or a number)`;
  throw new InputError(`${where}: feature ${index + 1} ${what}; ${have}. Name the property that identifies each polygon with ${flag} NAME`);
}

/** Rings of a Polygon or MultiPolygon as [x, y] arrays in the file's CRS; null for other geometries. */
function polygonsOf(g: Record<string, unknown>): [number, number][][][] | null {
  const ring = (r: unknown): [number, number][] =>
    Array.isArray(r)
      ? r.flatMap((p) => (Array.isArray(p) && typeof p[0] === 'number' && typeof p[1] === 'number' && Number.isFinite(p[0]) && Number.isFinite(p[1]) ? [[p[0], p[1]] as [number, number]] : []))
      : [];
  const polygon = (p: unknown): [number, number][][] => (Array.isArray(p) ? p.map(ring).filter((r) => r.length >= 3) : []);
  if (g['type'] === 'Polygon') return [polygon(g['coordinates'])].filter((p) => p.length > 0);
  if (g['type'] === 'MultiPolygon' && Array.isArray(g['coordinates'])) return g['coordinates'].map(polygon).filter((p) => p.length > 0);
  if (g['type'] === 'GeometryCollection' && Array.isArray(g['geometries'])) {
    const out: [number, number][][][] = [];
    for (const sub of g['geometries'] as unknown[]) if (isRecord(sub)) out.push(...(polygonsOf(sub) ?? []));
    return out;
  }
  return null;
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}
