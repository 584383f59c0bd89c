/**
 * CSV dam inventory: a header row, comma or semicolon delimiter (detected),
 * RFC 4180 quoting. Geometry comes from one of, in this order of preference:
 *
 * 1. a WKT column (`wkt`, `geometry`, `geom`): POINT, MULTIPOINT of one point,
 *    LINESTRING, MULTILINESTRING, in the file's CRS;
 * 2. lon/lat columns (`lon`/`lng`/`long`/`longitude`, `lat`/`latitude`):
 *    always WGS84 degrees;
 * 3. x/y columns (`x`/`easting`, `y`/`northing`): in the file's CRS.
 *
 * When both lon/lat and x/y are present, x/y wins if --dams-crs is given.
 * Column names match case-insensitively. Coordinate columns not used for the
 * geometry stay as properties. In a semicolon file, `1,5` reads as 1.5.
 */
import type { Warning } from '../errors.js';
import { CsvSyntaxError, detectDelimiter, parseCsv, stripBom } from './csv.js';
import type { DamProblems } from './dam-problems.js';
import { crestGeometry } from './dam-geometry.js';
import type { RawCoords, RawDam, RawInventory } from './dam-raw.js';
import { parseWkt } from './wkt.js';

/** Accepted geometry column names, lower case. */
export const CSV_GEOMETRY_COLUMNS = {
  wkt: ['wkt', 'geometry', 'geom'],
  lon: ['lon', 'lng', 'long', 'longitude'],
  lat: ['lat', 'latitude'],
  x: ['x', 'easting'],
  y: ['y', 'northing'],
} as const;

type Role = keyof typeof CSV_GEOMETRY_COLUMNS;

const NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;

function readCoordinate(text: string, decimalComma: boolean): number | null {
  let s = text.trim();
  if (decimalComma && /^[-+]?\d+,\d+$/.test(s)) s = s.replace(',', '.');
  return NUMBER.test(s) ? Number(s) : null;
}

/** Options of the CSV reader. */
export interface CsvDamOptions {
  /** --dams-crs was given: prefer x/y columns over lon/lat ones. */
  damsCrsGiven: boolean;
}

/** Parses CSV text into raw dams; file-level problems go to `problems`. */
export function parseCsvDams(text: string, problems: DamProblems, options: CsvDamOptions): RawInventory {
  const src = stripBom(text);
  const delimiter = detectDelimiter(src);
  const decimalComma = delimiter === ';';
  const warnings: Warning[] = [];
  const inventory: RawInventory = {
    format: 'csv',
    dams: [],
    coords: { kind: 'file', columns: '' },
    declaredCrs: null,
    decimalComma,
    warnings,
  };
  let records;
  try {
    records = parseCsv(src, delimiter);
  } catch (err) {
    if (err instanceof CsvSyntaxError) {
      problems.add(null, `line ${err.line}: ${err.message}`);
      return inventory;
    }
    throw err;
  }
  const headerRecord = records[0];
  if (headerRecord === undefined) return inventory;
  const header = headerRecord.fields.map((h) => h.trim());
  const body = records.slice(1).filter((r) => r.fields.some((f) => f.trim() !== ''));

  // Column roles, duplicate and unnamed columns.
  const colOf = new Map<Role, number>();
  const seen = new Map<string, number>();
  const ignored = new Set<number>();
  header.forEach((name, c) => {
    const lower = name.toLowerCase();
    if (name === '') {
      if (body.some((r) => (r.fields[c] ?? '').trim() !== '')) {
        problems.add(null, `column ${c + 1} has values but no name in the header row; give it a name`);
      }
      ignored.add(c);
      return;
    }
    const before = seen.get(lower);
    if (before !== undefined) {
      problems.add(null, `columns ${before + 1} and ${c + 1} are both named "${name}"; give each column its own name`);
      return;
    }
    seen.set(lower, c);
    for (const role of Object.keys(CSV_GEOMETRY_COLUMNS) as Role[]) {
      const names: readonly string[] = CSV_GEOMETRY_COLUMNS[role];
      if (names.includes(lower) && !colOf.has(role)) colOf.set(role, c);
    }
  });

  const pair = (a: Role, b: Role): [number, number] | null => {
    const ca = colOf.get(a);
    const cb = colOf.get(b);
    if (ca === undefined && cb === undefined) return null;
    if (ca === undefined || cb === undefined) {
      const have = header[(ca ?? cb) as number];
      const missing = ca === undefined ? CSV_GEOMETRY_COLUMNS[a] : CSV_GEOMETRY_COLUMNS[b];
      problems.add(null, `column "${have}" has no partner; add a column named one of ${missing.join(', ')}`);
      return null;
    }
    return [ca, cb];
  };
  const wktCol = colOf.get('wkt');
  const lonLat = wktCol === undefined ? pair('lon', 'lat') : null;
  const xy = wktCol === undefined ? pair('x', 'y') : null;
  let geometryCols: number[];
  let coords: RawCoords;
  let read: (fields: string[]) => { ok: true; geometry: RawDam['geometry'] } | { ok: false; reason: string };
  const name = (c: number): string => header[c] ?? `column ${c + 1}`;

  if (wktCol !== undefined) {
    geometryCols = [wktCol];
    coords = { kind: 'file', columns: `column ${name(wktCol)}` };
    const others = (['lon', 'lat', 'x', 'y'] as const).map((r) => colOf.get(r)).filter((c) => c !== undefined);
    if (others.length > 0) {
      warnings.push({
        code: 'csv-geometry-columns',
        message: `${problems.file}: geometry read from column ${name(wktCol)}; columns ${others.map(name).join(', ')} kept as properties`,
      });
    }
    read = (fields) => {
      const w = parseWkt(fields[wktCol] ?? '');
      return w.ok ? crestGeometry(w.geometry) : { ok: false, reason: w.reason };
    };
  } else if (lonLat !== null || xy !== null) {
    const useXy = xy !== null && (lonLat === null || options.damsCrsGiven);
    const [cx, cy] = (useXy ? xy : lonLat) as [number, number];
    geometryCols = [cx, cy];
    const columns = `columns ${name(cx)}/${name(cy)}`;
    const projected = useXy && [cx, cy].some((c) => ['easting', 'northing'].includes(name(c).toLowerCase()));
    coords = { kind: useXy ? (projected ? 'projected' : 'file') : 'lonlat', columns };
    read = (fields) => {
      const xText = fields[cx] ?? '';
      const yText = fields[cy] ?? '';
      if (xText.trim() === '' && yText.trim() === '') return { ok: false, reason: `has no coordinates (${columns} are empty); fill them in or delete the row` };
      const x = readCoordinate(xText, decimalComma);
      const y = readCoordinate(yText, decimalComma);
      if (x === null || y === null) {
        const bad = x === null ? `${name(cx)} "${xText}"` : `${name(cy)} "${yText}"`;
        return { ok: false, reason: `${bad} is not a number; give both coordinates as plain numbers` };
      }
      return { ok: true, geometry: { kind: 'point', x, y } };
    };
    if (lonLat !== null && xy !== null) {
      const other = useXy ? lonLat : xy;
      warnings.push({
        code: 'csv-geometry-columns',
        message: `${problems.file}: geometry read from ${columns}; columns ${name(other[0])}/${name(other[1])} kept as properties${useXy ? '' : ' (pass --dams-crs to use them instead)'}`,
      });
    }
  } else {
    if (problems.count === 0) {
      const all = Object.values(CSV_GEOMETRY_COLUMNS).flat().join(', ');
      problems.add(null, `no geometry column in the header (${header.join(delimiter)}); add a WKT column or x/y or lon/lat columns (accepted names: ${all})`);
    }
    return inventory;
  }
  inventory.coords = coords;

  body.forEach((record, k) => {
    const dam: RawDam = { feature: k + 1, line: record.line, geometry: null, problems: [], properties: [] };
    if (record.fields.length !== header.length) {
      dam.problems.push({
        property: 'row',
        message: `has ${record.fields.length} fields but the header has ${header.length}; quote values that contain "${delimiter}" or a line break`,
      });
    }
    header.forEach((h, c) => {
      if (!geometryCols.includes(c) && !ignored.has(c)) dam.properties.push([h, record.fields[c] ?? '']);
    });
    const g = read(record.fields);
    if (g.ok) dam.geometry = g.geometry;
    else dam.problems.push({ property: 'geometry', message: g.reason });
    inventory.dams.push(dam);
  });
  return inventory;
}
