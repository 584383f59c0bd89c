/**
 * Flags of the influence stage: the riparian rule, streams, derived
 * watersheds and the valley bottom (estimate and demo), and the polygon
 * inputs (estimate). The option text is the CLI reference.
 */
import type { Command } from 'commander';
import { InputError } from '../errors.js';
import { DEFAULT_STREAM_THRESHOLD_M2 } from '../hydro/streams.js';
import { VALLEY_BOTTOM_DEFAULTS } from '../hydro/valley-bottom.js';
import { DEFAULT_RIPARIAN_DISTANCE_M, DEFAULT_RIPARIAN_RISE_M } from '../influence/zone.js';
import { DEFAULT_MIN_WATERSHED_AREA_M2, defaultInfluenceParams, type InfluenceRunParams } from '../pipeline/influence-stage.js';
import { DEFAULT_WATERSHED_FIELD, type InfluenceInputOptions } from '../pipeline/influence-run.js';
import { ACRE_M2, HECTARE_M2 } from '../units.js';
import { parseLengthM } from './options.js';

/** Parameter flags as commander hands them over. */
export interface InfluenceFlags {
  riparianDistance?: string;
  riparianRise?: string;
  streamThreshold?: string;
  minWatershedArea?: string;
  valleyBottomHand?: string;
  valleyBottomMax?: string;
  pondsOnly?: boolean;
}

/** Input flags (estimate only). */
export interface AreaInputFlags {
  watersheds?: string;
  watershedField?: string;
  watershedsCrs?: string;
  valleyBottom?: string;
  valleyBottomCrs?: string;
}

/** Adds the parameter flags (estimate and demo). */
export function addInfluenceOptions(cmd: Command): Command {
  return cmd
    .option('--riparian-distance <length>', 'riparian fringe: largest horizontal distance from the nearest pond cell (m; Lowry 1993)', `${DEFAULT_RIPARIAN_DISTANCE_M}`)
    .option('--riparian-rise <length>', "riparian fringe: largest height above that pond's water level (m; Westbrook et al. 2006)", `${DEFAULT_RIPARIAN_RISE_M}`)
    .option('--stream-threshold <area>', 'contributing area that starts a stream (m², or add km2 / ha / acres)', `${DEFAULT_STREAM_THRESHOLD_M2}`)
    .option('--min-watershed-area <area>', 'smallest watershed derived from the DEM (m², or add km2 / ha / acres)', `${DEFAULT_MIN_WATERSHED_AREA_M2}`)
    .option('--valley-bottom-hand <length>', 'valley bottom: height above the nearest stream (HAND) at zero drainage area; it grows with the stream\'s drainage area (m)', `${VALLEY_BOTTOM_DEFAULTS.baseM}`)
    .option('--valley-bottom-max <length>', 'valley bottom: largest HAND threshold, however large the drainage area (m)', `${VALLEY_BOTTOM_DEFAULTS.maxM}`)
    .option('--ponds-only', 'skip the influence zone, valley bottom and watersheds (only the windows the dams need are read)');
}

/** Adds the polygon input flags (estimate). */
export function addAreaInputOptions(cmd: Command): Command {
  return cmd
    .option('--watersheds <file>', 'watershed polygons (GeoJSON) to report by; default: watersheds derived from the DEM')
    .option('--watershed-field <name>', `property naming each watershed polygon (default: ${DEFAULT_WATERSHED_FIELD})`)
    .option('--watersheds-crs <crs>', 'CRS of projected watershed coordinates (default: lon/lat WGS 84 as RFC 7946 asks, or the file\'s "crs" member)')
    .option('--valley-bottom <file>', 'valley-bottom polygons (GeoJSON); default: cells under the HAND threshold')
    .option('--valley-bottom-crs <crs>', 'CRS of projected valley-bottom coordinates (default: lon/lat WGS 84)');
}

/** The stage's parameters from the flags; undefined with --ponds-only. */
export function influenceFromFlags(flags: InfluenceFlags): InfluenceRunParams | undefined {
  if (flags.pondsOnly) return undefined;
  const p = defaultInfluenceParams();
  if (flags.riparianDistance !== undefined) p.riparianDistanceM = parseLengthM(flags.riparianDistance, '--riparian-distance', { min: 0, max: 5000 });
  if (flags.riparianRise !== undefined) p.riparianRiseM = parseLengthM(flags.riparianRise, '--riparian-rise', { min: 0, max: 100 });
  if (flags.streamThreshold !== undefined) p.streamThresholdM2 = parseAreaM2(flags.streamThreshold, '--stream-threshold', 1);
  if (flags.minWatershedArea !== undefined) p.minWatershedAreaM2 = parseAreaM2(flags.minWatershedArea, '--min-watershed-area', 0);
  if (flags.valleyBottomHand !== undefined) p.valleyBottom.baseM = parseLengthM(flags.valleyBottomHand, '--valley-bottom-hand', { min: 0, max: 100 });
  if (flags.valleyBottomMax !== undefined) p.valleyBottom.maxM = parseLengthM(flags.valleyBottomMax, '--valley-bottom-max', { min: 0, max: 500 });
  if (p.valleyBottom.maxM < p.valleyBottom.baseM) {
    throw new InputError(`--valley-bottom-max (${p.valleyBottom.maxM} m) is below --valley-bottom-hand (${p.valleyBottom.baseM} m); give a cap at least as high as the base`);
  }
  return p;
}

/** The polygon inputs from the flags, checked against the stage being on. */
export function areaInputsFromFlags(flags: AreaInputFlags & InfluenceFlags): InfluenceInputOptions {
  if (flags.pondsOnly && (flags.watersheds || flags.valleyBottom)) {
    throw new InputError(`--ponds-only skips the watersheds and the valley bottom; drop it, or drop ${flags.watersheds ? '--watersheds' : '--valley-bottom'}`);
  }
  if (!flags.watersheds && (flags.watershedField !== undefined || flags.watershedsCrs !== undefined)) {
    throw new InputError(`${flags.watershedField !== undefined ? '--watershed-field' : '--watersheds-crs'} needs --watersheds FILE (the polygons it describes)`);
  }
  if (!flags.valleyBottom && flags.valleyBottomCrs !== undefined) throw new InputError('--valley-bottom-crs needs --valley-bottom FILE (the polygons it describes)');
  return {
    watershedsPath: flags.watersheds,
    watershedField: flags.watershedField,
    watershedsCrs: flags.watershedsCrs,
    valleyBottomPath: flags.valleyBottom,
    valleyBottomCrs: flags.valleyBottomCrs,
  };
}

/** An area in m² from "100000", "100000 m2", "0.1 km2", "10 ha" or "25 acres". */
export function parseAreaM2(text: string, flag: string, min: number): number {
  const m = /^\s*((?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)\s*(m2|m²|km2|km²|ha|hectares?|acres?|ac)?\s*$/i.exec(text);
  if (!m) throw new InputError(`${flag} "${text}" is not an area; write a number of m², or add a unit: km2, ha, acres`);
  const unit = (m[2] ?? 'm2').toLowerCase();
  const perUnit = unit.startsWith('km') ? 1e6 : unit === 'ha' || unit.startsWith('hectare') ? HECTARE_M2 : unit.startsWith('ac') ? ACRE_M2 : 1;
  const value = Number(m[1]) * perUnit;
  if (!(value >= min)) throw new InputError(`${flag} "${text}" is below the smallest allowed area, ${min} m²`);
  return value;
}
