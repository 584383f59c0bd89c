/**
 * Reads a dam inventory (GeoJSON or CSV) into DamInput records in the DEM's
 * CRS. Every problem in the file is collected with its place and thrown as
 * one InputError; nothing is computed from a half-valid inventory.
 *
 * Coordinates: GeoJSON and x/y or WKT columns are in the CRS given with
 * --dams-crs, else in a CRS the file declares (old-style GeoJSON `crs`
 * member), else WGS84 lon/lat as RFC 7946 prescribes. lon/lat columns are
 * always WGS84. The caller supplies the transforms to the DEM's CRS.
 */
import { readFileSync } from 'node:fs';
import { extname } from 'node:path';
import { InputError, type Warning } from '../errors.js';
import type { DamInput } from '../inventory.js';
import { stripBom } from './csv.js';
import { readDamFields } from './dam-fields.js';
import { mapGeometry, vertices } from './dam-geometry.js';
import { DamProblems } from './dam-problems.js';
import type { RawInventory } from './dam-raw.js';
import { CSV_GEOMETRY_COLUMNS, parseCsvDams } from './dams-csv.js';
import { parseGeoJsonDams } from './dams-geojson.js';

/** A coordinate transform: (x, y) in one CRS → [x, y] in another, in each CRS's own units. */
export type XyTransform = (x: number, y: number) => [number, number];

/** Inventory formats pondage reads. */
export type DamFormat = 'geojson' | 'csv';

/** How to bring the file's coordinates into the DEM's CRS. */
export interface DamReadOptions {
  /** WGS84 longitude/latitude (degrees) → DEM CRS map units. */
  lonLatToDem: XyTransform;
  /** The CRS given with --dams-crs: its transform to the DEM CRS and a label for messages; absent when not given. */
  damsCrs?: { toDem: XyTransform; label: string } | null;
  /** Builds a transform for a CRS the file names (GeoJSON `crs` member); returns null when it cannot. */
  resolveDeclaredCrs?: (name: string) => XyTransform | null;
}

/** The inventory in the DEM's CRS, with notes for the user. */
export interface DamReadResult {
  dams: DamInput[];
  warnings: Warning[];
  format: DamFormat;
  /** CRS name the file declares (old-style GeoJSON `crs` member), when it has one. */
  declaredCrs?: string;
  /** The CRS the coordinates were read in, for reports. */
  sourceCrs: string;
}

const LONLAT_LABEL = 'WGS84 longitude/latitude';
const LONLAT_NAMES = /^(urn:ogc:def:crs:ogc:1\.3:crs84|urn:ogc:def:crs:epsg::4326|epsg:4326|crs84|wgs ?84)$/i;
const HEIGHT_LOOKALIKES = ['height', 'height_ft', 'dam_height', 'crest_height', 'height_cm', 'ht'];

/**
 * Decides the format from the content (a JSON object → GeoJSON) and the
 * extension (.geojson/.json, .csv); a file with another extension counts as
 * CSV only when its header names a geometry column. Null when neither.
 */
export function detectDamFormat(text: string, fileName: string): DamFormat | null {
  if (text.includes('\u0000')) return null;
  const ext = extname(fileName).toLowerCase();
  const body = stripBom(text).trimStart();
  if (body.startsWith('{')) return 'geojson';
  if (ext === '.geojson' || ext === '.json') return 'geojson';
  if (ext === '.csv') return 'csv';
  const firstLine = body.split(/\r\n|\n|\r/, 1)[0] ?? '';
  const names = firstLine.split(/[,;]/).map((s) => s.trim().replace(/^"|"$/g, '').toLowerCase());
  const known: string[] = Object.values(CSV_GEOMETRY_COLUMNS).flat();
  return names.length > 1 && names.some((n) => known.includes(n)) ? 'csv' : null;
}

/** Picks the transform for the file's coordinates, or throws an InputError saying what to pass. */
function chooseTransform(
  raw: RawInventory,
  file: string,
  options: DamReadOptions,
  warnings: Warning[],
): { toDem: XyTransform; label: string; checkLonLat: 'file' | 'feature' | 'none' } {
  const lonLat = { toDem: options.lonLatToDem, label: LONLAT_LABEL };
  const damsCrs = options.damsCrs ?? null;
  const declared = raw.declaredCrs;
  if (raw.coords.kind === 'lonlat') {
    if (damsCrs !== null) {
      warnings.push({
        code: 'dams-crs-unused',
        message: `${file}: --dams-crs ${damsCrs.label} is not used; ${raw.coords.columns} are read as WGS84 degrees`,
      });
    }
    return { ...lonLat, checkLonLat: 'feature' };
  }
  if (raw.coords.kind === 'projected' && damsCrs === null) {
    throw new InputError(
      `${file}: ${raw.coords.columns} hold projected coordinates but no CRS is known for them; pass --dams-crs with their CRS (e.g. --dams-crs EPSG:26911)`,
    );
  }
  if (damsCrs !== null) {
    if (declared !== null) {
      warnings.push({
        code: 'dams-crs-overrides-file',
        message: `${file} declares its CRS as ${declared}; its coordinates were read in ${damsCrs.label} as --dams-crs says`,
      });
    }
    return { toDem: damsCrs.toDem, label: damsCrs.label, checkLonLat: 'none' };
  }
  if (declared !== null) {
    if (LONLAT_NAMES.test(declared.trim())) return { ...lonLat, checkLonLat: 'file' };
    const toDem = options.resolveDeclaredCrs?.(declared) ?? null;
    if (toDem === null) {
      throw new InputError(`${file}: declares its CRS as "${declared}", which pondage cannot use; pass --dams-crs with the file's CRS (e.g. --dams-crs EPSG:26911)`);
    }
    return { toDem, label: declared, checkLonLat: 'none' };
  }
  return { ...lonLat, checkLonLat: 'file' };
}

/**
 * Parses an inventory already read into memory. `fileName` is used in
 * messages and for the extension. Throws InputError listing every problem.
 */
export function parseDams(text: string, fileName: string, options: DamReadOptions): DamReadResult {
  const format = detectDamFormat(text, fileName);
  if (format === null) {
    throw new InputError(
      `${fileName}: not a dam inventory pondage can read; give GeoJSON (.geojson or .json, a FeatureCollection of crest lines or dam points) or CSV (.csv, a header row and x/y, lon/lat or WKT columns). Convert other formats first, e.g. ogr2ogr -f GeoJSON dams.geojson ${fileName}`,
    );
  }
  const problems = new DamProblems(fileName);
  const damsCrsGiven = (options.damsCrs ?? null) !== null;
  const raw = format === 'geojson' ? parseGeoJsonDams(text, problems) : parseCsvDams(text, problems, { damsCrsGiven });
  if (raw.dams.length === 0) {
    problems.throwIfAny();
    throw new InputError(`${fileName}: the dam inventory has no ${format === 'csv' ? 'data rows' : 'features'}; give at least one crest line or dam point`);
  }
  const warnings = [...raw.warnings];
  const crs = chooseTransform(raw, fileName, options, warnings);

  if (crs.checkLonLat === 'file') {
    for (const dam of raw.dams) {
      if (dam.geometry === null) continue;
      for (const [x, y] of vertices(dam.geometry)) {
        if (Math.abs(x) > 180 || Math.abs(y) > 90) {
          throw new InputError(
            `${fileName}: feature ${dam.feature} has coordinates (${x}, ${y}), which are not longitude/latitude degrees as assumed when no CRS is given (RFC 7946 for GeoJSON); they look projected. Pass --dams-crs with the file's CRS (e.g. --dams-crs EPSG:26911)`,
          );
        }
      }
    }
  }

  type Built = Omit<DamInput, 'id'> & { id: string | null; feature: number };
  const built: Built[] = [];
  const byId = new Map<string, number[]>();
  for (const dam of raw.dams) {
    const place = { feature: dam.feature, ...(dam.line === undefined ? {} : { line: dam.line }) };
    const fields = readDamFields(dam.properties, place, problems, { decimalComma: raw.decimalComma });
    let id = fields.id;
    if (id === null && typeof dam.featureId === 'string' && dam.featureId.trim() !== '') id = dam.featureId.trim();
    if (id === null && typeof dam.featureId === 'number' && Number.isFinite(dam.featureId)) id = String(dam.featureId);
    if (id !== null) byId.set(id, [...(byId.get(id) ?? []), dam.feature]);
    for (const p of dam.problems) problems.add({ ...place, id, property: p.property }, p.message);
    if (dam.geometry === null) continue;
    if (crs.checkLonLat === 'feature') {
      const bad = [...vertices(dam.geometry)].find(([x, y]) => Math.abs(x) > 180 || Math.abs(y) > 90);
      if (bad !== undefined) {
        problems.add(
          { ...place, id, property: 'geometry' },
          `(${bad[0]}, ${bad[1]}) is not a longitude/latitude pair, as ${raw.coords.columns} must be; if these are projected coordinates, name the columns x/y and pass --dams-crs`,
        );
        continue;
      }
    }
    let geometry: DamInput['geometry'];
    try {
      geometry = mapGeometry(dam.geometry, crs.toDem);
    } catch (err) {
      const detail = err instanceof Error ? err.message : String(err);
      problems.add({ ...place, id, property: 'geometry' }, `cannot be transformed from ${crs.label} to the DEM's CRS (${detail}); check --dams-crs`);
      continue;
    }
    const notFinite = [...vertices(geometry)].some(([x, y]) => !Number.isFinite(x) || !Number.isFinite(y));
    if (notFinite) {
      problems.add({ ...place, id, property: 'geometry' }, `has coordinates that do not transform from ${crs.label} to the DEM's CRS; check --dams-crs`);
      continue;
    }
    const { extra, heightM, status, confidence, year } = fields;
    let upstream = fields.upstream;
    if (upstream !== null && geometry.kind === 'point') {
      const who = id === null ? `feature ${dam.feature}` : `dam ${id}`;
      warnings.push({
        code: 'upstream-ignored',
        message: `${fileName}: ${who} is a point, so "upstream" (a side of a drawn line) does not apply; the flow direction is taken from the terrain`,
        ...(id === null ? {} : { damId: id }),
      });
      upstream = null;
    }
    built.push({ id, feature: dam.feature, index: dam.feature - 1, geometry, heightM, status, confidence, year, upstream, extra });
  }

  for (const [id, features] of byId) {
    if (features.length > 1) {
      problems.add(null, `id "${id}" is used by features ${features.join(', ')}; ids must be unique, so rename all but one (or empty them to have ids generated)`);
    }
  }
  problems.throwIfAny();

  // Generated ids: dam-<feature number>, moving past any id already taken.
  const used = new Set(byId.keys());
  const dams: DamInput[] = built.map(({ feature, id, ...rest }) => {
    let finalId = id;
    if (finalId === null) {
      let n = feature;
      while (used.has(`dam-${n}`)) n++;
      finalId = `dam-${n}`;
      used.add(finalId);
    }
    return { id: finalId, ...rest };
  });

  const keys = new Set(raw.dams.flatMap((d) => d.properties.map(([k]) => k.trim().toLowerCase())));
  if (!keys.has('height_m')) {
    for (const k of HEIGHT_LOOKALIKES.filter((h) => keys.has(h))) {
      warnings.push({ code: 'height-property-ignored', message: `${fileName}: property "${k}" is not read as the crest height; rename it height_m (in metres) to use it` });
    }
  }
  return { dams, warnings, format, sourceCrs: crs.label, ...(raw.declaredCrs === null ? {} : { declaredCrs: raw.declaredCrs }) };
}

/** Reads and parses an inventory file; a missing or unreadable file is an InputError. */
export function readDams(path: string, options: DamReadOptions): DamReadResult {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = typeof err === 'object' && err !== null && 'code' in err ? String(err.code) : '';
    const why = code === 'ENOENT' ? 'not found' : code === 'EISDIR' ? 'is a directory, not a file' : `cannot be read (${code || String(err)})`;
    throw new InputError(`${path}: dam inventory ${why}; give the path of a GeoJSON or CSV file`);
  }
  return parseDams(text, path, options);
}
