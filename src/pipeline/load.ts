/**
 * The load stage: open the DEM (tiles, CRS, units), read the inventory into
 * the DEM's CRS, hash the inputs, and say what was assumed.
 */
import { InputError, type Warning } from '../errors.js';
import type { DamInput } from '../inventory.js';
import { WGS84, makeTransform, parseCrsText, type Crs } from '../io/crs.js';
import { readDams } from '../io/dams-read.js';
import { describeDem, openDem, type DemDescription, type DemSource } from '../io/dem.js';
import { sha256File } from '../io/hash.js';
import { parseLinearUnit, type LinearUnit } from '../units.js';
import type { InputRecord } from './result.js';

/** Paths and CRS/unit overrides as the user gave them. */
export interface LoadOptions {
  demPaths: string[];
  damsPath: string;
  /** `--dem-crs` text, e.g. "EPSG:26911". */
  demCrs?: string | undefined;
  /** `--dams-crs` text. */
  damsCrs?: string | undefined;
  /** `--z-units` text: m, ft, us-ft. */
  zUnits?: string | undefined;
}

export interface Loaded {
  dem: DemSource;
  demFacts: DemDescription;
  dams: DamInput[];
  damsFormat: string;
  damsSourceCrs: string;
  inputs: InputRecord[];
  /** Plain sentences for summary.json and the report. */
  assumptions: string[];
  warnings: Warning[];
}

/** Opens and reads every input; throws InputError naming the file and the fix. */
export async function loadInputs(options: LoadOptions): Promise<Loaded> {
  if (options.demPaths.length === 0) throw new InputError('no DEM given; pass --dem FILE (several tiles: --dem a.tif b.tif)');
  const demCrs = options.demCrs ? parseCrsText(options.demCrs, '--dem-crs') : undefined;
  let zUnit: LinearUnit | undefined;
  if (options.zUnits) {
    const parsed = parseLinearUnit(options.zUnits);
    if (!parsed) throw new InputError(`--z-units "${options.zUnits}" is not a unit pondage knows; use m, ft (international foot) or us-ft (US survey foot)`);
    zUnit = parsed;
  }
  const dem = await openDem(options.demPaths, { ...(demCrs ? { crs: demCrs } : {}), ...(zUnit ? { zUnit } : {}) });
  try {
    const demFacts = describeDem(dem);
    const damsCrs: Crs | undefined = options.damsCrs ? parseCrsText(options.damsCrs, '--dams-crs') : undefined;
    const read = readDams(options.damsPath, {
      lonLatToDem: makeTransform(WGS84, dem.crs),
      damsCrs: damsCrs ? { toDem: makeTransform(damsCrs, dem.crs), label: damsCrs.name } : null,
      resolveDeclaredCrs: (name) => {
        const m = /EPSG:{1,2}(\d+)$/i.exec(name.trim());
        if (!m) return null;
        try {
          return makeTransform(parseCrsText(`EPSG:${m[1]}`, 'the file\'s "crs" member'), dem.crs);
        } catch {
          return null;
        }
      },
    });
    const inputs: InputRecord[] = [];
    for (const path of options.demPaths) inputs.push({ role: 'dem', path, sha256: await sha256File(path) });
    inputs.push({ role: 'dams', path: options.damsPath, sha256: await sha256File(options.damsPath) });
    return {
      dem,
      demFacts,
      dams: read.dams,
      damsFormat: read.format,
      damsSourceCrs: read.sourceCrs,
      inputs,
      assumptions: assumptionsOf(dem, demFacts, read.sourceCrs),
      warnings: read.warnings,
    };
  } catch (err) {
    await dem.close();
    throw err;
  }
}

function assumptionsOf(dem: DemSource, facts: DemDescription, damsCrs: string): string[] {
  const out: string[] = [];
  const zWords = { metre: 'metres', foot: 'international feet', 'us-survey-foot': 'US survey feet' }[dem.zUnit];
  switch (dem.zUnitSource) {
    case 'geokey':
      out.push(`DEM elevations are in ${zWords}, as the file's vertical-units GeoKey states.`);
      break;
    case 'option':
      out.push(`DEM elevations are in ${zWords}, as given with --z-units.`);
      break;
    case 'assumed-horizontal':
      out.push(`DEM elevations are assumed to be in ${zWords}, the CRS's horizontal unit (the file has no vertical-units GeoKey); pass --z-units if not.`);
      break;
    case 'assumed-metre':
      out.push('DEM elevations are assumed to be in metres (geographic CRS, no vertical-units GeoKey); pass --z-units if not.');
      break;
  }
  out.push(`DEM CRS: ${facts.crsName}${facts.epsg ? ` (EPSG:${facts.epsg})` : ''}; dam coordinates read as ${damsCrs}.`);
  if (dem.crs.geographic) out.push('Geographic DEM: cell areas and sizes are computed per row on the WGS 84 ellipsoid.');
  out.push('Reported elevations, heights and depths are metres; the DEM is the ground (or water) surface the lidar saw.');
  return out;
}
