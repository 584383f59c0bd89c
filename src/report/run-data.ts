/**
 * The run as the report reads it: summary.json parsed once into typed
 * records. Fields other issues add to summary.json (bands, watersheds, the
 * influence zone, the water-surface split) are optional here, so the report
 * shows their sections when a run has them and leaves them out otherwise.
 */
import { InputError } from '../errors.js';

/** A band of a figure over the Monte Carlo draws (same unit as the figure). */
export interface Band {
  p05: number;
  p50: number;
  p95: number;
  mean: number;
}
/** Bands keyed by the figure's own name, e.g. `storage_m3`. */
export type Bands = Record<string, Band>;

/** One row of a stage–area–storage curve: [level_m, area_m2, volume_m3]. */
export type StageRow = [number, number, number];

export interface RunDam {
  /** Position in summary.json's `dams` list. */
  index: number;
  id: string;
  status: string;
  confidence: number | null;
  year: number | null;
  crestGeometry: string | null;
  inTotals: boolean;
  estimated: boolean;
  skipReason: string | null;
  crestElevM: number | null;
  bedElevM: number | null;
  heightM: number | null;
  heightSource: string | null;
  waterLevelM: number | null;
  limitedBy: string | null;
  areaM2: number;
  volumeM3: number;
  maxDepthM: number;
  standaloneAreaM2: number;
  standaloneVolumeM3: number;
  drownedBy: string | null;
  stageStorage: StageRow[];
  warnings: string[];
  /** Optional, from the water-surface issue: volume below today's water surface and how the bed was found. */
  volumeBelowSurfaceM3: number | null;
  volumeAboveSurfaceM3: number | null;
  waterSurfaceAreaM2: number | null;
  bedSource: string | null;
  /** Optional: the watershed the dam lies in. */
  watershed: string | null;
  /** Optional: influence area attributed to the dam, m². */
  influenceAreaM2: number | null;
  bands: Bands | null;
}

export interface RunWatershed {
  index: number;
  id: string;
  damCount: number | null;
  streamLengthM: number | null;
  inundatedAreaM2: number | null;
  influenceAreaM2: number | null;
  valleyBottomAreaM2: number | null;
  storageM3: number;
  bands: Bands | null;
}

export interface RunTotals {
  damCount: number;
  damsEstimated: number;
  damsSkipped: number;
  damsInTotals: number;
  inundatedAreaM2: number;
  storageM3: number;
  influenceAreaM2: number | null;
  storageAboveSurfaceM3: number | null;
  storageBelowSurfaceM3: number | null;
  bands: Bands | null;
}

/** The Monte Carlo set-up of a run (summary.json `uncertainty`), when it has draws. */
export interface RunUncertainty {
  draws: number;
  seed: number | null;
  method: string | null;
  sources: { name: string; enabled: boolean; distribution: string; basis: string }[];
  approximations: string[];
  /** Monte Carlo standard error of the 95th percentile, by figure name. */
  p95StandardError: [string, number][];
  tooFewDraws: boolean;
}

/** Existing and existing-plus-proposed water surfaces (summary.json `scenarios`). */
export interface RunScenarios {
  existing: { damsCounted: number; inundatedAreaM2: number; storageM3: number; bands?: Bands | null };
  withProposed: { damsCounted: number; proposedCounted: number; inundatedAreaM2: number; storageM3: number; bands?: Bands | null };
  added: { inundatedAreaM2: number; storageM3: number; bands?: Bands | null };
  drownedByProposed: { id: string; drownedBy: string; volumeExistingM3: number; volumeWithProposedM3: number; index: number }[];
  proposedLeftOut: { id: string; reason: string }[];
}

export interface RunSummary {
  tool: { name: string; version: string };
  run: { startedAt: string | null; finishedAt: string | null; durationS: number | null };
  inputs: { role: string; path: string; sha256: string }[];
  dem: {
    widthCells: number | null;
    heightCells: number | null;
    fileCount: number | null;
    cellWidthM: number | null;
    cellHeightM: number | null;
    crsName: string;
    epsg: number | null;
    zUnit: string | null;
  };
  damsFile: { format: string | null; crs: string | null };
  parameters: [string, number | string | boolean][];
  assumptions: string[];
  cautions: string[];
  /** Named models and their sources, when the run records them (strings or {name, source} records). */
  models: { name: string; detail: string | null }[];
  totals: RunTotals;
  dams: RunDam[];
  watersheds: RunWatershed[] | null;
  warnings: { code: string; damId: string | null; message: string }[];
  uncertainty: RunUncertainty | null;
  scenarios: RunScenarios | null;
}

type Obj = Record<string, unknown>;

/** Parses summary.json's text; throws InputError naming the file and what is missing. */
export function parseRunSummary(text: string, path: string): RunSummary {
  const fail = (what: string): never => {
    throw new InputError(`${path}: ${what}; is this a pondage run folder? Rerun pondage estimate to write it again`);
  };
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    return fail('is not valid JSON');
  }
  const o = obj(raw) ?? fail('is not a JSON object');
  const tool = obj(o['tool']) ?? fail('has no "tool"');
  const totalsRaw = obj(o['totals']) ?? fail('has no "totals"');
  const damsRaw = Array.isArray(o['dams']) ? (o['dams'] as unknown[]) : fail('has no "dams" list');
  const dem = obj(o['dem']) ?? {};
  const run = obj(o['run']) ?? {};
  const damsFile = obj(o['dams_file']) ?? {};
  const need = (rec: Obj, key: string, where: string): number => num(rec[key]) ?? fail(`${where}.${key} is missing or not a number`);

  const dams = damsRaw.map((item, index): RunDam => {
    const d = obj(item) ?? fail(`dams[${index}] is not an object`);
    const where = `dams[${index}]`;
    return {
      index,
      id: str(d['id']) ?? fail(`${where}.id is missing`),
      status: str(d['status']) ?? 'confirmed',
      confidence: num(d['confidence']),
      year: num(d['year']),
      crestGeometry: str(d['crest_geometry']),
      inTotals: d['in_totals'] === true,
      estimated: d['estimated'] === true,
      skipReason: str(d['skip_reason']),
      crestElevM: num(d['crest_elev_m']),
      bedElevM: num(d['bed_elev_m']),
      heightM: num(d['height_m']),
      heightSource: str(d['height_source']),
      waterLevelM: num(d['water_level_m']),
      limitedBy: str(d['limited_by']),
      areaM2: need(d, 'area_m2', where),
      volumeM3: need(d, 'volume_m3', where),
      maxDepthM: num(d['max_depth_m']) ?? 0,
      standaloneAreaM2: num(d['standalone_area_m2']) ?? 0,
      standaloneVolumeM3: num(d['standalone_volume_m3']) ?? 0,
      drownedBy: str(d['drowned_by']),
      stageStorage: stageRows(d['stage_storage']),
      warnings: Array.isArray(d['warnings']) ? (d['warnings'] as unknown[]).filter((w): w is string => typeof w === 'string') : [],
      volumeBelowSurfaceM3: num(d['volume_below_surface_m3']),
      volumeAboveSurfaceM3: num(d['volume_above_surface_m3']),
      waterSurfaceAreaM2: num(d['water_surface_area_m2']),
      bedSource: str(d['bed_source']),
      watershed: str(d['watershed']) ?? str(d['watershed_id']),
      influenceAreaM2: num(d['influence_area_m2']),
      bands: bands(d['bands']),
    };
  });

  let watersheds: RunWatershed[] | null = null;
  if (Array.isArray(o['watersheds'])) {
    watersheds = (o['watersheds'] as unknown[]).map((item, index): RunWatershed => {
      const w = obj(item) ?? fail(`watersheds[${index}] is not an object`);
      const idRaw = w['id'];
      return {
        index,
        id: typeof idRaw === 'number' ? String(idRaw) : (str(idRaw) ?? fail(`watersheds[${index}].id is missing`)),
        damCount: num(w['dam_count']),
        streamLengthM: num(w['stream_length_m']),
        inundatedAreaM2: num(w['inundated_area_m2']),
        influenceAreaM2: num(w['influence_area_m2']),
        valleyBottomAreaM2: num(w['valley_bottom_area_m2']),
        storageM3: need(w, 'storage_m3', `watersheds[${index}]`),
        bands: bands(w['bands']),
      };
    });
  }

  const parameters: [string, number | string | boolean][] = [];
  for (const [k, v] of Object.entries(obj(o['parameters']) ?? {})) {
    if (typeof v === 'number' || typeof v === 'string' || typeof v === 'boolean') parameters.push([k, v]);
    else if (v === null) parameters.push([k, 'none']);
  }

  return {
    tool: { name: str(tool['name']) ?? 'pondage', version: str(tool['version']) ?? '?' },
    run: { startedAt: str(run['started_at']), finishedAt: str(run['finished_at']), durationS: num(run['duration_s']) },
    inputs: (Array.isArray(o['inputs']) ? (o['inputs'] as unknown[]) : []).flatMap((i) => {
      const r = obj(i);
      return r ? [{ role: str(r['role']) ?? '?', path: str(r['path']) ?? '?', sha256: str(r['sha256']) ?? '' }] : [];
    }),
    dem: {
      widthCells: num(dem['widthCells']),
      heightCells: num(dem['heightCells']),
      fileCount: num(dem['fileCount']),
      cellWidthM: num(dem['cellWidthM']),
      cellHeightM: num(dem['cellHeightM']),
      crsName: str(dem['crsName']) ?? 'unknown CRS',
      epsg: num(dem['epsg']),
      zUnit: str(dem['zUnit']),
    },
    damsFile: { format: str(damsFile['format']), crs: str(damsFile['crs']) },
    parameters,
    assumptions: strings(o['assumptions']),
    cautions: strings(o['cautions']),
    models: models(o['models']),
    totals: {
      damCount: need(totalsRaw, 'dam_count', 'totals'),
      damsEstimated: need(totalsRaw, 'dams_estimated', 'totals'),
      damsSkipped: need(totalsRaw, 'dams_skipped', 'totals'),
      damsInTotals: need(totalsRaw, 'dams_in_totals', 'totals'),
      inundatedAreaM2: need(totalsRaw, 'inundated_area_m2', 'totals'),
      storageM3: need(totalsRaw, 'storage_m3', 'totals'),
      influenceAreaM2: num(totalsRaw['influence_area_m2']),
      storageAboveSurfaceM3: num(totalsRaw['storage_above_surface_m3']),
      storageBelowSurfaceM3: num(totalsRaw['storage_below_surface_m3']),
      bands: bands(totalsRaw['bands']),
    },
    dams,
    watersheds,
    warnings: (Array.isArray(o['warnings']) ? (o['warnings'] as unknown[]) : []).flatMap((i) => {
      const r = obj(i);
      return r ? [{ code: str(r['code']) ?? 'warning', damId: str(r['dam_id']), message: str(r['message']) ?? '' }] : [];
    }),
    uncertainty: uncertaintyOf(o['uncertainty']),
    scenarios: scenariosOf(o['scenarios']),
  };
}

function uncertaintyOf(v: unknown): RunUncertainty | null {
  const u = obj(v);
  const draws = u ? num(u['draws']) : null;
  if (!u || draws === null) return null;
  const mc = obj(u['monte_carlo']) ?? {};
  const se = obj(mc['p95_standard_error']) ?? {};
  return {
    draws,
    seed: num(u['seed']),
    method: str(u['method']),
    sources: (Array.isArray(u['sources']) ? (u['sources'] as unknown[]) : []).flatMap((s) => {
      const r = obj(s);
      const name = r ? str(r['name']) : null;
      return r && name ? [{ name, enabled: r['enabled'] !== false, distribution: str(r['distribution']) ?? '', basis: str(r['basis']) ?? '' }] : [];
    }),
    approximations: strings(u['approximations']),
    p95StandardError: Object.entries(se).flatMap(([k, x]) => (typeof x === 'number' && Number.isFinite(x) ? [[k, x] as [string, number]] : [])),
    tooFewDraws: mc['too_few_draws'] === true,
  };
}

function scenariosOf(v: unknown): RunScenarios | null {
  const s = obj(v);
  const e = s ? obj(s['existing']) : null;
  const w = s ? obj(s['with_proposed']) : null;
  const a = s ? obj(s['added']) : null;
  if (!s || !e || !w || !a) return null;
  const figures = [num(e['dams_counted']), num(e['inundated_area_m2']), num(e['storage_m3']), num(w['dams_counted']), num(w['proposed_counted']), num(w['inundated_area_m2']), num(w['storage_m3']), num(a['inundated_area_m2']), num(a['storage_m3'])];
  if (figures.some((f) => f === null)) return null;
  const [eDams, eArea, eStorage, wDams, wProposed, wArea, wStorage, aArea, aStorage] = figures as number[];
  return {
    existing: { damsCounted: eDams!, inundatedAreaM2: eArea!, storageM3: eStorage!, bands: bands(e['bands']) },
    withProposed: { damsCounted: wDams!, proposedCounted: wProposed!, inundatedAreaM2: wArea!, storageM3: wStorage!, bands: bands(w['bands']) },
    added: { inundatedAreaM2: aArea!, storageM3: aStorage!, bands: bands(a['bands']) },
    drownedByProposed: (Array.isArray(s['drowned_by_proposed']) ? (s['drowned_by_proposed'] as unknown[]) : []).flatMap((item, index) => {
      const r = obj(item);
      const id = r ? str(r['id']) : null;
      const by = r ? str(r['drowned_by']) : null;
      const ve = r ? num(r['volume_existing_m3']) : null;
      const vw = r ? num(r['volume_with_proposed_m3']) : null;
      return id && by && ve !== null && vw !== null ? [{ id, drownedBy: by, volumeExistingM3: ve, volumeWithProposedM3: vw, index }] : [];
    }),
    proposedLeftOut: (Array.isArray(s['proposed_left_out']) ? (s['proposed_left_out'] as unknown[]) : []).flatMap((item) => {
      const r = obj(item);
      const id = r ? str(r['id']) : null;
      return r && id ? [{ id, reason: str(r['reason']) ?? '' }] : [];
    }),
  };
}

function obj(v: unknown): Obj | null {
  return typeof v === 'object' && v !== null && !Array.isArray(v) ? (v as Obj) : null;
}
function num(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}
function str(v: unknown): string | null {
  return typeof v === 'string' ? v : null;
}
function strings(v: unknown): string[] {
  return Array.isArray(v) ? v.filter((s): s is string => typeof s === 'string') : [];
}

function stageRows(v: unknown): StageRow[] {
  if (!Array.isArray(v)) return [];
  const out: StageRow[] = [];
  for (const row of v) {
    if (!Array.isArray(row)) continue;
    const a = num(row[0]);
    const b = num(row[1]);
    const c = num(row[2]);
    if (a !== null && b !== null && c !== null) out.push([a, b, c]);
  }
  return out;
}

/** Bands as issue-5 writes them: `{figure: {p05, p50, p95, mean}}`; malformed entries are left out. */
function bands(v: unknown): Bands | null {
  const o = obj(v);
  if (!o) return null;
  const out: Bands = {};
  for (const [k, raw] of Object.entries(o)) {
    const b = obj(raw);
    if (!b) continue;
    const p05 = num(b['p05']);
    const p50 = num(b['p50']);
    const p95 = num(b['p95']);
    const mean = num(b['mean']);
    if (p05 !== null && p50 !== null && p95 !== null && mean !== null) out[k] = { p05, p50, p95, mean };
  }
  return Object.keys(out).length > 0 ? out : null;
}

function models(v: unknown): { name: string; detail: string | null }[] {
  if (Array.isArray(v)) {
    return v.flatMap((m) => {
      if (typeof m === 'string') return [{ name: m, detail: null }];
      const r = obj(m);
      if (!r) return [];
      const name = str(r['name']) ?? str(r['model']) ?? str(r['id']);
      if (!name) return [];
      const detail = [str(r['description']), str(r['source']) ?? str(r['reference'])].filter((s): s is string => s !== null).join(' — ');
      return [{ name, detail: detail || null }];
    });
  }
  const r = obj(v);
  if (!r) return [];
  return Object.entries(r).flatMap(([k, val]) => {
    if (typeof val === 'string') return [{ name: k, detail: val }];
    const m = obj(val);
    if (!m) return [];
    const detail = [str(m['name']) ?? str(m['model']), str(m['description']), str(m['source']) ?? str(m['reference'])]
      .filter((s): s is string => s !== null)
      .join(' — ');
    return [{ name: k, detail: detail || null }];
  });
}
