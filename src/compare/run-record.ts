/**
 * A run folder's summary.json as compare sees it: parsed once from untyped
 * JSON into typed records, keeping only what comparing needs. Sections that
 * only some runs have (bands, watersheds, influence, scenarios, crest
 * locations) become null when absent, so every comparison can say what it
 * lacks instead of failing.
 */
import { InputError } from '../errors.js';
import { metresPer, parseLinearUnit } from '../units.js';

/** A band of a figure over the Monte Carlo draws (same units as the figure). */
export interface BandStats {
  p05: number;
  p50: number;
  p95: number;
  mean: number;
}

/** Bands keyed by the figure's own name, e.g. `storage_m3`. */
export type Bands = Record<string, BandStats>;

/** Where a dam's crest is (see pipeline/crest-location.ts). */
export interface CrestPoint {
  /** Map coordinates in the run's DEM CRS units. */
  x: number;
  y: number;
  /** WGS 84 degrees, or null when the run could not convert. */
  lon: number | null;
  lat: number | null;
}

/** One dam of a run. Volumes m³, areas m², heights m. */
export interface RunDam {
  id: string;
  status: string;
  in_totals: boolean;
  estimated: boolean;
  height_m: number | null;
  /** Water attributed to the dam in the run's combined surface (counts in the totals). */
  volume_m3: number;
  area_m2: number;
  /** The dam's own pond, ignoring the others. */
  standalone_volume_m3: number;
  standalone_area_m2: number;
  drowned_by: string | null;
  year: number | null;
  /** The watershed the dam lies in (`watershed` or `watershed_id`), or null. */
  watershed: string | null;
  crest: CrestPoint | null;
  bands: Bands | null;
}

/** One watershed row of a run (watersheds[] in summary.json). */
export interface RunWatershed {
  id: string;
  name: string | null;
  dam_count: number | null;
  stream_length_m: number | null;
  inundated_area_m2: number | null;
  influence_area_m2: number | null;
  valley_bottom_area_m2: number | null;
  storage_m3: number | null;
  bands: Bands | null;
}

/** Existing and with-proposed figures of a run (pipeline/scenarios.ts). */
export interface RunScenarios {
  existing: { dams_counted: number; storage_m3: number; inundated_area_m2: number; bands: Bands | null };
  with_proposed: { dams_counted: number; proposed_counted: number; storage_m3: number; inundated_area_m2: number; bands: Bands | null };
  drowned_by_proposed: { id: string; drowned_by: string; volume_existing_m3: number; volume_with_proposed_m3: number }[];
  proposed_left_out: { id: string; reason: string }[];
}

/** A run as compare reads it. */
export interface RunRecord {
  /** Short name shown in the outputs (folder name unless given). */
  label: string;
  /** The run folder as given. */
  dir: string;
  toolVersion: string;
  dem: {
    /** SHA-256 of each DEM file, in input order. */
    sha256: string[];
    widthCells: number;
    heightCells: number;
    cellSizeX: number;
    cellSizeY: number;
    crsName: string;
    epsg: number | null;
    /** Metres per horizontal CRS unit; null for geographic or unknown units. */
    crsUnitM: number | null;
  };
  /** DEM vertical RMSE the run states, m, or null. */
  demRmseM: number | null;
  /** Seed and number of Monte Carlo draws the run states, or null. */
  seed: number | null;
  drawCount: number | null;
  totals: {
    dam_count: number;
    dams_in_totals: number;
    storage_m3: number;
    inundated_area_m2: number;
    influence_area_m2: number | null;
    /** Stream length and valley-bottom area of the whole run, when stated. */
    stream_length_m: number | null;
    valley_bottom_area_m2: number | null;
    /** Water below today's lidar water surfaces, in the totals but not in depth.tif, m³ (null: not reported). */
    storage_below_surface_m3: number | null;
    bands: Bands | null;
  };
  dams: RunDam[];
  watersheds: RunWatershed[] | null;
  scenarios: RunScenarios | null;
}

type Obj = Record<string, unknown>;

/** Reads a parsed summary.json; `file` names it in errors. Throws InputError when it is not a pondage run summary. */
export function parseRunSummary(json: unknown, file: string, label: string, dir: string): RunRecord {
  const bad = (what: string): InputError =>
    new InputError(`${file}: ${what}; give the folder of a pondage estimate run (it holds summary.json written by pondage estimate)`);
  const root = asObj(json);
  const tool = asObj(root?.['tool']);
  if (!root || tool?.['name'] !== 'pondage') throw bad('not a pondage run summary (no tool.name "pondage")');
  const totals = asObj(root['totals']);
  const damsRaw = root['dams'];
  if (!totals || !Array.isArray(damsRaw)) throw bad('has no totals or dams');
  const storage = num(totals['storage_m3']);
  const inundated = num(totals['inundated_area_m2']);
  if (storage === null || inundated === null) throw bad('totals lack storage_m3 or inundated_area_m2');
  const dem = asObj(root['dem']) ?? {};
  const inputs = Array.isArray(root['inputs']) ? root['inputs'].map(asObj) : [];
  const params = asObj(root['parameters']) ?? {};
  const unc = asObj(root['uncertainty']) ?? asObj(root['draws']) ?? {};
  const dams = damsRaw.map((d, k) => parseDam(d, k, bad));
  return {
    label,
    dir,
    toolVersion: str(tool['version']) ?? 'unknown',
    dem: {
      sha256: inputs.filter((i) => i?.['role'] === 'dem').map((i) => str(i?.['sha256']) ?? ''),
      widthCells: num(dem['widthCells']) ?? 0,
      heightCells: num(dem['heightCells']) ?? 0,
      cellSizeX: num(dem['cellSizeX']) ?? 0,
      cellSizeY: num(dem['cellSizeY']) ?? 0,
      crsName: str(dem['crsName']) ?? 'unknown',
      epsg: num(dem['epsg']),
      crsUnitM: unitM(dem['crsUnit']),
    },
    demRmseM: firstNum(params['dem_rmse_m'], params['dem_rmsez_m'], unc['dem_rmse_m']),
    seed: firstNum(params['seed'], unc['seed'], asObj(root['run'])?.['seed']),
    drawCount: firstNum(params['draws'], unc['draws'], unc['count'], unc['draw_count']),
    totals: {
      dam_count: num(totals['dam_count']) ?? dams.length,
      dams_in_totals: num(totals['dams_in_totals']) ?? dams.filter((d) => d.in_totals && d.estimated).length,
      storage_m3: storage,
      inundated_area_m2: inundated,
      influence_area_m2: num(totals['influence_area_m2']),
      stream_length_m: num(totals['stream_length_m']),
      valley_bottom_area_m2: num(totals['valley_bottom_area_m2']),
      storage_below_surface_m3: num(totals['storage_below_surface_m3']),
      bands: parseBands(totals['bands']),
    },
    dams,
    watersheds: Array.isArray(root['watersheds']) ? root['watersheds'].map((w, k) => parseWatershed(w, k)) : null,
    scenarios: parseScenarios(root['scenarios']),
  };
}

function parseDam(raw: unknown, k: number, bad: (what: string) => InputError): RunDam {
  const d = asObj(raw);
  const id = d ? str(d['id']) : null;
  if (!d || id === null) throw bad(`dams[${k}] has no id`);
  const x = num(d['crest_x']);
  const y = num(d['crest_y']);
  return {
    id,
    status: str(d['status']) ?? 'confirmed',
    in_totals: d['in_totals'] === true,
    estimated: d['estimated'] === true,
    height_m: num(d['height_m']),
    volume_m3: num(d['volume_m3']) ?? 0,
    area_m2: num(d['area_m2']) ?? 0,
    standalone_volume_m3: num(d['standalone_volume_m3']) ?? 0,
    standalone_area_m2: num(d['standalone_area_m2']) ?? 0,
    drowned_by: str(d['drowned_by']),
    year: num(d['year']),
    watershed: str(d['watershed']) ?? str(d['watershed_id']) ?? (num(d['watershed_id']) !== null ? String(d['watershed_id']) : null),
    crest: x !== null && y !== null ? { x, y, lon: num(d['crest_lon']), lat: num(d['crest_lat']) } : null,
    bands: parseBands(d['bands']),
  };
}

function parseWatershed(raw: unknown, k: number): RunWatershed {
  const w = asObj(raw) ?? {};
  return {
    id: str(w['id']) ?? (num(w['id']) !== null ? String(w['id']) : `watershed-${k + 1}`),
    name: str(w['name']),
    dam_count: num(w['dam_count']),
    stream_length_m: num(w['stream_length_m']),
    inundated_area_m2: num(w['inundated_area_m2']),
    influence_area_m2: num(w['influence_area_m2']),
    valley_bottom_area_m2: num(w['valley_bottom_area_m2']),
    storage_m3: num(w['storage_m3']),
    bands: parseBands(w['bands']),
  };
}

function parseScenarios(raw: unknown): RunScenarios | null {
  const s = asObj(raw);
  const ex = asObj(s?.['existing']);
  const wp = asObj(s?.['with_proposed']);
  if (!s || !ex || !wp) return null;
  const exStorage = num(ex['storage_m3']);
  const wpStorage = num(wp['storage_m3']);
  if (exStorage === null || wpStorage === null) return null;
  const list = (v: unknown): Obj[] => (Array.isArray(v) ? v.map(asObj).filter((o): o is Obj => o !== null) : []);
  return {
    existing: { dams_counted: num(ex['dams_counted']) ?? 0, storage_m3: exStorage, inundated_area_m2: num(ex['inundated_area_m2']) ?? 0, bands: parseBands(ex['bands']) },
    with_proposed: {
      dams_counted: num(wp['dams_counted']) ?? 0,
      proposed_counted: num(wp['proposed_counted']) ?? 0,
      storage_m3: wpStorage,
      inundated_area_m2: num(wp['inundated_area_m2']) ?? 0,
      bands: parseBands(wp['bands']),
    },
    drowned_by_proposed: list(s['drowned_by_proposed']).map((o) => ({
      id: str(o['id']) ?? '',
      drowned_by: str(o['drowned_by']) ?? '',
      volume_existing_m3: num(o['volume_existing_m3']) ?? 0,
      volume_with_proposed_m3: num(o['volume_with_proposed_m3']) ?? 0,
    })),
    proposed_left_out: list(s['proposed_left_out']).map((o) => ({ id: str(o['id']) ?? '', reason: str(o['reason']) ?? '' })),
  };
}

/** `bands: {figure: {p05, p50, p95, mean}}`; figures missing a percentile are dropped. */
export function parseBands(raw: unknown): Bands | null {
  const o = asObj(raw);
  if (!o) return null;
  const out: Bands = {};
  for (const [key, value] of Object.entries(o)) {
    const b = asObj(value);
    const p05 = num(b?.['p05']);
    const p50 = num(b?.['p50']);
    const p95 = num(b?.['p95']);
    if (p05 === null || p50 === null || p95 === null) continue;
    out[key] = { p05, p50, p95, mean: num(b?.['mean']) ?? p50 };
  }
  return Object.keys(out).length > 0 ? out : null;
}

function unitM(v: unknown): number | null {
  const unit = typeof v === 'string' ? parseLinearUnit(v) : null;
  return unit ? metresPer(unit) : null;
}

function asObj(v: unknown): Obj | null {
  return typeof v === 'object' && v !== null && !Array.isArray(v) ? (v as Obj) : null;
}

function num(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

function str(v: unknown): string | null {
  return typeof v === 'string' ? v : null;
}

function firstNum(...vs: unknown[]): number | null {
  for (const v of vs) {
    const n = num(v);
    if (n !== null) return n;
  }
  return null;
}
