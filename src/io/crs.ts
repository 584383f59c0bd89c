/**
 * Coordinate reference systems: EPSG codes → proj4 definitions (epsg-index),
 * transforms to and from WGS84 lon/lat, unit handling, and per-row cell
 * metrics on the ellipsoid for geographic grids.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import proj4 from 'proj4';
import { InputError } from '../errors.js';
import { FOOT_M, US_SURVEY_FOOT_M, metresPer, type LinearUnit } from '../units.js';
import type { CellMetrics } from '../grid/grid.js';
import type { GeoTransform } from '../grid/transform.js';
import {
  DEG_TO_RAD,
  WGS84_ELLIPSOID,
  meridianArcM,
  parallelRadiusM,
  zoneAreaPerRadianM2,
} from '../grid/geodesy.js';

export interface Crs {
  /** EPSG code when known. */
  epsg: number | null;
  /** Human-readable name (from the EPSG registry or the user's text). */
  name: string;
  /** proj4 definition string. */
  proj4: string;
  /** True for lon/lat degree systems. */
  geographic: boolean;
  /** Horizontal linear unit for projected CRSs; null for geographic. */
  linearUnit: LinearUnit | null;
}

/** WGS 84 longitude/latitude in degrees (EPSG:4326). */
export const WGS84: Crs = {
  epsg: 4326,
  name: 'WGS 84',
  proj4: '+proj=longlat +datum=WGS84 +no_defs',
  geographic: true,
  linearUnit: null,
};

/** One entry of epsg-index, parsed from its JSON. */
interface EpsgRecord {
  kind: string;
  name: string;
  proj4: string;
}

const requireHere = createRequire(import.meta.url);
let epsgDir: string | null = null;

/** Reads `epsg-index/s/<code>.json`, or null when the registry has no such code. */
function readEpsgRecord(code: number): EpsgRecord | null {
  epsgDir ??= join(dirname(requireHere.resolve('epsg-index/package.json')), 's');
  let text: string;
  try {
    text = readFileSync(join(epsgDir, `${code}.json`), 'utf8');
  } catch {
    return null;
  }
  const raw: unknown = JSON.parse(text);
  if (typeof raw !== 'object' || raw === null) return null;
  const r = raw as Record<string, unknown>;
  return {
    kind: typeof r['kind'] === 'string' ? r['kind'] : '',
    name: typeof r['name'] === 'string' ? r['name'] : `EPSG:${code}`,
    proj4: typeof r['proj4'] === 'string' ? r['proj4'] : '',
  };
}

/** proj4 parameters as a map: `+units=us-ft` → units → 'us-ft'; flags map to ''. */
function proj4Params(def: string): Map<string, string> {
  const params = new Map<string, string>();
  for (const m of def.matchAll(/\+([A-Za-z_0-9]+)(?:=("[^"]*"|\S*))?/g)) {
    params.set((m[1] ?? '').toLowerCase(), m[2] ?? '');
  }
  return params;
}

const near = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * b;

/** Horizontal unit of a projected proj4 definition, or null when it is not one pondage supports. */
function linearUnitOf(params: Map<string, string>): LinearUnit | null {
  const units = params.get('units');
  const toMeter = params.get('to_meter');
  if (units !== undefined) {
    if (units === 'm') return 'metre';
    if (units === 'us-ft') return 'us-survey-foot';
    if (units === 'ft') return 'foot';
    return null;
  }
  if (toMeter !== undefined) {
    const f = Number(toMeter);
    if (near(f, 1)) return 'metre';
    if (near(f, US_SURVEY_FOOT_M)) return 'us-survey-foot';
    if (near(f, FOOT_M)) return 'foot';
    return null;
  }
  return 'metre'; // proj4's default unit
}

/** Builds a Crs from a proj4 definition; `what` names the source for error messages. */
function crsFromProj4(def: string, name: string, epsg: number | null, what: string, fix: string): Crs {
  const params = proj4Params(def);
  const projName = params.get('proj');
  if (projName === undefined) {
    throw new InputError(`${what}: the definition "${def}" has no +proj=; ${fix}`);
  }
  const geographic = projName === 'longlat' || projName === 'latlong' || projName === 'lonlat' || projName === 'latlon';
  let linearUnit: LinearUnit | null = null;
  if (!geographic) {
    linearUnit = linearUnitOf(params);
    if (linearUnit === null) {
      const u = params.get('units') ?? `to_meter=${params.get('to_meter') ?? ''}`;
      throw new InputError(
        `${what}: its linear unit "${u}" is not supported (metre, US survey foot or international foot only); ${fix}`,
      );
    }
  }
  const clean = def.replace(/\s*\+type=crs\b/g, '').trim();
  try {
    proj4(clean, WGS84.proj4);
  } catch (e) {
    throw new InputError(`${what}: proj4 cannot use "${clean}" (${(e as Error).message}); ${fix}`);
  }
  return { epsg, name, proj4: clean, geographic, linearUnit };
}

const FIX_FLAGS = 'give the CRS explicitly with --dem-crs EPSG:NNNN (or --dams-crs EPSG:NNNN for the dam file)';

/**
 * The horizontal CRS with this EPSG code, from the epsg-index registry.
 * Throws InputError for unknown codes, non-horizontal CRSs and unsupported units.
 */
export function crsFromEpsg(code: number): Crs {
  if (!Number.isInteger(code) || code <= 0) {
    throw new InputError(`EPSG code ${code} is not a positive integer; ${FIX_FLAGS}`);
  }
  const rec = readEpsgRecord(code);
  if (rec === null || rec.proj4 === '') {
    throw new InputError(`EPSG:${code} is not a CRS pondage knows; ${FIX_FLAGS} with a valid code`);
  }
  if (rec.kind !== 'CRS-PROJCRS' && rec.kind !== 'CRS-GEOGCRS') {
    throw new InputError(
      `EPSG:${code} (${rec.name}) is a ${rec.kind.replace(/^CRS-/, '')}, not a horizontal projected or geographic CRS; ${FIX_FLAGS}`,
    );
  }
  return crsFromProj4(rec.proj4, rec.name, code, `EPSG:${code} (${rec.name})`, FIX_FLAGS);
}

/**
 * Vertical unit of a vertical CRS (e.g. EPSG:6360 NAVD88 height (ftUS) → us-survey-foot),
 * or null when the code is not a vertical CRS in a supported unit.
 */
export function verticalUnitFromEpsg(code: number): LinearUnit | null {
  const rec = readEpsgRecord(code);
  if (rec === null || rec.kind !== 'CRS-VERTCRS') return null;
  const vunits = proj4Params(rec.proj4).get('vunits');
  if (vunits === 'm') return 'metre';
  if (vunits === 'us-ft') return 'us-survey-foot';
  if (vunits === 'ft') return 'foot';
  return null;
}

/**
 * Parses a CRS as written on the command line: "EPSG:32611", "32611" or a proj4
 * string "+proj=...". `flag` is the option name, used in error messages.
 */
export function parseCrsText(text: string, flag: string): Crs {
  const t = text.trim();
  const m = /^(?:EPSG:{1,2})?(\d+)$/i.exec(t);
  if (m) {
    const code = Number(m[1]);
    try {
      return crsFromEpsg(code);
    } catch (e) {
      if (e instanceof InputError) {
        throw new InputError(`${flag} ${t}: ${e.message.replace(FIX_FLAGS, `use ${flag} EPSG:NNNN`)}`);
      }
      throw e;
    }
  }
  if (t.startsWith('+')) {
    return crsFromProj4(t, t, null, `${flag} "${t}"`, `use ${flag} EPSG:NNNN or a valid proj4 string`);
  }
  throw new InputError(`${flag} "${t}" is not a CRS; write it as EPSG:NNNN, NNNN or a proj4 string starting with +proj=`);
}

const DATUM_KEYS = ['datum', 'ellps', 'a', 'b', 'rf', 'f', 'r', 'towgs84', 'nadgrids', 'pm'];

/** The datum part of a definition, as a canonical string (equal strings ⇒ same datum). */
function datumKey(params: Map<string, string>): string {
  return DATUM_KEYS.map((k) => (params.has(k) ? `+${k}=${params.get(k) ?? ''}` : '')).join(' ');
}

/** Mandatory datum grid files (not `@optional`, not `@null`). */
function mandatoryGrids(params: Map<string, string>): string[] {
  const v = params.get('nadgrids');
  if (v === undefined) return [];
  return v
    .replace(/"/g, '')
    .split(',')
    .filter((g) => g !== '' && !g.startsWith('@'));
}

/** The lon/lat CRS (degrees) on the same datum as `crs`. */
export function baseGeographic(crs: Crs): Crs {
  if (crs.geographic) return crs;
  const params = proj4Params(crs.proj4);
  const datum = DATUM_KEYS.filter((k) => params.has(k)).map((k) => {
    const v = params.get(k) ?? '';
    return v === '' ? `+${k}` : `+${k}=${v}`;
  });
  return {
    epsg: null,
    name: `lon/lat of ${crs.name}`,
    proj4: ['+proj=longlat', ...datum, '+no_defs'].join(' '),
    geographic: true,
    linearUnit: null,
  };
}

/**
 * A point transform from one CRS to another (x/easting or longitude first, in
 * each CRS's own units; degrees for geographic). Points outside a projection's
 * domain come back as NaN. When the two datums differ and the shift needs a
 * grid file pondage does not ship, the returned function throws InputError on
 * its first call (so building a transform that is never used is harmless).
 */
export function makeTransform(from: Crs, to: Crs): (x: number, y: number) => [number, number] {
  if (from.proj4 === to.proj4) return (x, y) => [x, y];
  const pf = proj4Params(from.proj4);
  const pt = proj4Params(to.proj4);
  let defFrom = from.proj4;
  let defTo = to.proj4;
  if (datumKey(pf) === datumKey(pt)) {
    // Same datum: a pure (un)projection, no datum shift and so no grid file needed.
    defFrom = defFrom.replace(/\s*\+nadgrids=("[^"]*"|\S*)/g, '');
    defTo = defTo.replace(/\s*\+nadgrids=("[^"]*"|\S*)/g, '');
  } else {
    const grids = [...mandatoryGrids(pf), ...mandatoryGrids(pt)];
    if (grids.length > 0) {
      const error = new InputError(
        `converting coordinates from ${from.name} to ${to.name} needs the datum grid ${grids.join(', ')}, which pondage does not ship; ` +
          `give the dam locations in the DEM's own CRS (--dams-crs ${to.epsg !== null ? `EPSG:${to.epsg}` : 'with the DEM CRS'})`,
      );
      return () => {
        throw error;
      };
    }
  }
  const conv = proj4(defFrom, defTo);
  return (x, y) => {
    const r = conv.forward([x, y]);
    return [r[0] ?? NaN, r[1] ?? NaN];
  };
}

/** Metres per horizontal CRS unit for projected CRSs; null for geographic ones. */
export function crsUnitM(crs: Crs): number | null {
  return crs.geographic || crs.linearUnit === null ? null : metresPer(crs.linearUnit);
}

/**
 * Cell sizes and areas in metres for rows [rowOffset, rowOffset + rows) of a grid.
 * Projected CRSs: constant |dx|·|dy| in metres (grid units, not corrected for the
 * projection's scale factor). Geographic CRSs: exact per-row area on the WGS 84
 * ellipsoid between the row's bounding parallels; width per row at the row's centre
 * latitude; height is the mean meridian arc per row over these rows. Latitudes
 * beyond ±90° are clamped.
 */
export function cellMetrics(crs: Crs, t: GeoTransform, rowOffset: number, rows: number): CellMetrics {
  const n = Math.max(0, rows);
  const cellAreaM2 = new Float64Array(n);
  const cellWidthM = new Float64Array(n);
  if (!crs.geographic) {
    const unitM = crs.linearUnit === null ? 1 : metresPer(crs.linearUnit);
    const wM = Math.abs(t.dx) * unitM;
    const hM = Math.abs(t.dy) * unitM;
    cellAreaM2.fill(wM * hM);
    cellWidthM.fill(wM);
    return { cellAreaM2, cellWidthM, cellHeightM: hM };
  }
  const ell = WGS84_ELLIPSOID;
  const clampLat = (deg: number): number => Math.max(-90, Math.min(90, deg)) * DEG_TO_RAD;
  const dLonRad = Math.abs(t.dx) * DEG_TO_RAD;
  for (let i = 0; i < n; i++) {
    const r = rowOffset + i;
    const top = clampLat(t.y0 + r * t.dy);
    const bottom = clampLat(t.y0 + (r + 1) * t.dy);
    cellAreaM2[i] = dLonRad * zoneAreaPerRadianM2(top, bottom, ell);
    cellWidthM[i] = dLonRad * parallelRadiusM(clampLat(t.y0 + (r + 0.5) * t.dy), ell);
  }
  const rowsForHeight = Math.max(1, n);
  const first = clampLat(t.y0 + rowOffset * t.dy);
  const last = clampLat(t.y0 + (rowOffset + rowsForHeight) * t.dy);
  const cellHeightM = Math.abs(meridianArcM(first, ell) - meridianArcM(last, ell)) / rowsForHeight;
  return { cellAreaM2, cellWidthM, cellHeightM };
}
