/**
 * Comparing runs: dams matched and classed, the change in storage, inundated
 * and influenced area in total and per watershed with bands, the DEM
 * difference's level of detection, the change map, normalised figures and
 * the proposed-structures scenario of each run.
 *
 * Several runs: every consecutive pair is compared (`pairs`), and the
 * top-level `totals`, `dams`, `watersheds` compare the first run with the
 * last. Pure: records in, records out; io/ reads and writes the folders.
 */
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';
import {
  MAX_PAIRS_PER_DAM,
  excludesZero,
  independentDifferenceBand,
  pairedDifferenceBand,
  quadratureDifferenceBand,
  type BandMethod,
} from './bands.js';
import { changeMap, type Backdrop, type ChangeMapFigures, type ChangeRaster, type DepthRaster, type NoChangeMap } from './change-map.js';
import { drawSeries, type DrawScope, type DrawTable } from './draws.js';
import { demDifference, sameDem, type DemDifference } from './lod.js';
import { DEFAULT_MATCH, matchDams, type ChangeReason, type DamChangeClass, type MatchOptions } from './match.js';
import { normaliseRun, type Normalised, type RunNormalised } from './normalise.js';
import type { BandStats, Bands, RunRecord, RunWatershed } from './run-record.js';
import { proposedScenario, type ProposedScenario } from './scenario.js';

/** A run and what compare read beside its summary. */
export interface RunInput {
  record: RunRecord;
  /** Per-draw figures (draws.csv), or null. */
  draws: DrawTable | null;
  /** Water depth (depth.tif), or null. */
  depth: DepthRaster | null;
  /** Shaded relief for the map (report-map.json), or null. */
  backdrop?: Backdrop | null;
}

/** Options of a comparison. */
export interface CompareOptions {
  match: MatchOptions;
  /** DEM RMSE per run (metres) given on the command line; undefined entries fall back to the run's own or the default. */
  demRmseM?: (number | undefined)[];
}

/** The figures compared, by their name in a run and the name of their change. */
export const CHANGE_FIGURES = [
  { figure: 'storage_m3', change: 'storage_change_m3' },
  { figure: 'inundated_area_m2', change: 'inundated_area_change_m2' },
  { figure: 'influence_area_m2', change: 'influence_area_change_m2' },
] as const;

type FigureValues = { storage_m3: number | null; inundated_area_m2: number | null; influence_area_m2: number | null };

/** Bands of the changes with how each was made. */
export interface ChangeBands {
  /** Keyed by the change's name (`storage_change_m3`, ...); null when no figure has a band. */
  bands: Bands | null;
  band_methods: Record<string, BandMethod>;
  /** Per change: band excludes zero (null: no band). */
  detectable: Record<string, boolean | null>;
}

/** compare.json `totals` (and each pair's). */
export interface TotalsChange extends ChangeBands {
  from: FigureValues;
  to: FigureValues;
  storage_change_m3: number;
  inundated_area_change_m2: number;
  influence_area_change_m2: number | null;
  storage_change_acre_ft: number;
  inundated_area_change_ha: number;
  inundated_area_change_acres: number;
  /** Why the bands were made the way they were. */
  bands_note: string;
}

/** compare.json `dams[]`. */
export interface DamChange {
  /** The dam's id in the later run, else in the earlier one. */
  id: string;
  change: DamChangeClass;
  id_from: string | null;
  id_to: string | null;
  matched_by: 'id' | 'proximity' | null;
  distance_m: number | null;
  reasons: ChangeReason[];
  status_from: string | null;
  status_to: string | null;
  height_from_m: number | null;
  height_to_m: number | null;
  /** Water counted in each run's totals (0 when the dam does not count), m³ and m². */
  volume_from_m3: number;
  volume_to_m3: number;
  volume_change_m3: number;
  area_from_m2: number;
  area_to_m2: number;
  area_change_m2: number;
  drowned_by_from: string | null;
  drowned_by_to: string | null;
  /** Band of volume_change_m3 from the runs' per-draw dam figures (null without them). */
  volume_change_band: BandStats | null;
  /** Whether that band excludes zero (null: no band). */
  volume_change_detectable: boolean | null;
  crest_lon: number | null;
  crest_lat: number | null;
  /** Crest in the later run's DEM CRS (else the earlier's), map units. */
  crest_x: number | null;
  crest_y: number | null;
}

/** compare.json `watersheds[]`. */
export interface WatershedChange extends ChangeBands {
  id: string;
  name: string | null;
  in_from: boolean;
  in_to: boolean;
  from: FigureValues;
  to: FigureValues;
  storage_change_m3: number | null;
  inundated_area_change_m2: number | null;
  influence_area_change_m2: number | null;
  normalised_from: Normalised | null;
  normalised_to: Normalised | null;
}

/** One compared pair of runs. */
export interface PairComparison {
  from: string;
  to: string;
  totals: TotalsChange;
  dams: DamChange[];
  dam_counts: Record<DamChangeClass, number>;
  watersheds: WatershedChange[] | null;
  watersheds_note: string;
  dem_difference: DemDifference;
  change_map: ChangeMapFigures | NoChangeMap;
  notes: string[];
}

/** A run as compare.json lists it. */
export interface RunOverview {
  label: string;
  dir: string;
  tool_version: string;
  dem: RunRecord['dem'];
  dem_rmse_m: number | null;
  seed: number | null;
  draw_count: number | null;
  has_draws: boolean;
  totals: RunRecord['totals'];
  normalised: RunNormalised;
  proposed: ProposedScenario;
}

/** The whole comparison (compare.json without its tool header); its pair fields compare the first run with the last. */
export interface Comparison extends Omit<PairComparison, 'from' | 'to'> {
  runs: RunOverview[];
  parameters: {
    match_tolerance_m: number;
    id_conflict_m: number;
    height_change_m: number;
    volume_change_fraction: number;
    volume_change_min_m3: number;
  };
  /** Every consecutive pair (one when two runs are compared). */
  pairs: PairComparison[];
}

/** Compares two or more runs (see the file comment); also returns the change rasters for the map. */
export function compareRuns(runs: readonly RunInput[], options: CompareOptions = { match: DEFAULT_MATCH }): { comparison: Comparison; rasters: (ChangeRaster | null)[] } {
  if (runs.length < 2) throw new Error('compare needs at least two runs');
  const sigma = options.demRmseM ?? [];
  const pairs: PairComparison[] = [];
  const rasters: (ChangeRaster | null)[] = [];
  for (let k = 0; k + 1 < runs.length; k++) {
    const r = comparePair(runs[k]!, runs[k + 1]!, options.match, { from: sigma[k], to: sigma[k + 1] });
    pairs.push(r.pair);
    rasters.push(r.raster);
  }
  let overall = pairs[0]!;
  let overallRaster = rasters[0] ?? null;
  if (runs.length > 2) {
    const r = comparePair(runs[0]!, runs[runs.length - 1]!, options.match, { from: sigma[0], to: sigma[runs.length - 1] });
    overall = r.pair;
    overallRaster = r.raster;
  }
  const m = options.match;
  return {
    comparison: {
      runs: runs.map(overviewOf),
      parameters: {
        match_tolerance_m: m.toleranceM,
        id_conflict_m: m.idConflictM,
        height_change_m: m.heightChangeM,
        volume_change_fraction: m.volumeChangeFraction,
        volume_change_min_m3: m.volumeChangeMinM3,
      },
      totals: overall.totals,
      dams: overall.dams,
      dam_counts: overall.dam_counts,
      watersheds: overall.watersheds,
      watersheds_note: overall.watersheds_note,
      dem_difference: overall.dem_difference,
      change_map: overall.change_map,
      notes: overall.notes,
      pairs,
    },
    rasters: runs.length > 2 ? [overallRaster, ...rasters] : rasters,
  };
}

function overviewOf(run: RunInput): RunOverview {
  const r = run.record;
  return {
    label: r.label,
    dir: r.dir,
    tool_version: r.toolVersion,
    dem: r.dem,
    dem_rmse_m: r.demRmseM,
    seed: r.seed,
    draw_count: r.drawCount ?? run.draws?.count ?? null,
    has_draws: run.draws !== null,
    totals: r.totals,
    normalised: normaliseRun(r),
    proposed: proposedScenario(r, run.draws),
  };
}

/** Whether two runs' draws may be paired, and why (not). */
export function pairing(a: RunInput, b: RunInput): { paired: boolean; reason: string } {
  if (!a.draws || !b.draws) return { paired: false, reason: 'per-draw figures missing' };
  if (!sameDem(a.record, b.record)) return { paired: false, reason: 'the runs read different DEMs, whose errors are independent' };
  const sa = a.record.seed;
  const sb = b.record.seed;
  if (sa === null || sb === null || sa !== sb) return { paired: false, reason: `the runs used ${sa === null || sb === null ? 'unstated' : 'different'} seeds` };
  if (a.draws.count !== b.draws.count) return { paired: false, reason: `the runs made different numbers of draws (${a.draws.count} and ${b.draws.count})` };
  return { paired: true, reason: `same DEM, same seed (${sa}) and ${a.draws.count} draws: draw k of one run is differenced with draw k of the other` };
}

/** Bands of the changes of one scope (totals or a watershed). */
function changeBands(
  a: RunInput,
  b: RunInput,
  scope: DrawScope,
  id: string,
  bandsA: Bands | null,
  bandsB: Bands | null,
  present: Record<string, boolean>,
  paired: boolean,
): ChangeBands {
  const bands: Bands = {};
  const methods: Record<string, BandMethod> = {};
  const detectable: Record<string, boolean | null> = {};
  for (const { figure, change } of CHANGE_FIGURES) {
    let band: BandStats | null = null;
    let method: BandMethod = 'none';
    if (present[figure]) {
      const da = drawSeries(a.draws, scope, id, figure);
      const db = drawSeries(b.draws, scope, id, figure);
      if (da && db) {
        method = paired && da.length === db.length ? 'paired' : 'independent';
        band = method === 'paired' ? pairedDifferenceBand(da, db) : independentDifferenceBand(da, db);
      } else {
        const ba = bandsA?.[figure];
        const bb = bandsB?.[figure];
        if (ba && bb) {
          band = quadratureDifferenceBand(ba, bb);
          method = 'quadrature';
        }
      }
    }
    if (band) bands[change] = band;
    methods[change] = method;
    detectable[change] = band ? excludesZero(band) : null;
  }
  return { bands: Object.keys(bands).length > 0 ? bands : null, band_methods: methods, detectable };
}

/** Compares one pair. */
function comparePair(
  a: RunInput,
  b: RunInput,
  matchOptions: MatchOptions,
  sigma: { from: number | undefined; to: number | undefined },
): { pair: PairComparison; raster: ChangeRaster | null } {
  const ra = a.record;
  const rb = b.record;
  const notes: string[] = [];
  const unitA = crsUnitM(ra);
  const shared = ra.dem.crsName === rb.dem.crsName && unitA !== null && unitA === crsUnitM(rb) ? unitA : null;
  const { matches, notes: matchNotes } = matchDams(ra.dams, rb.dams, { sharedCrsUnitM: shared }, matchOptions);
  notes.push(...matchNotes);

  const pairInfo = pairing(a, b);
  const counts: Record<DamChangeClass, number> = { new: 0, gone: 0, persisting: 0, changed: 0 };
  const dams: DamChange[] = [];
  let storageByDams = 0;
  let areaByDams = 0;
  for (const m of matches) {
    const da = m.a === null ? null : ra.dams[m.a]!;
    const db = m.b === null ? null : rb.dams[m.b]!;
    counts[m.change]++;
    const vFrom = da && da.in_totals ? da.volume_m3 : 0;
    const vTo = db && db.in_totals ? db.volume_m3 : 0;
    const aFrom = da && da.in_totals ? da.area_m2 : 0;
    const aTo = db && db.in_totals ? db.area_m2 : 0;
    storageByDams += vTo - vFrom;
    areaByDams += aTo - aFrom;
    const crest = db?.crest ?? da?.crest ?? null;
    const band = damChangeBand(a.draws, da?.id ?? null, b.draws, db?.id ?? null, pairInfo.paired);
    dams.push({
      id: (db ?? da)!.id,
      change: m.change,
      id_from: da?.id ?? null,
      id_to: db?.id ?? null,
      matched_by: m.by,
      distance_m: m.distanceM,
      reasons: m.reasons,
      status_from: da?.status ?? null,
      status_to: db?.status ?? null,
      height_from_m: da?.height_m ?? null,
      height_to_m: db?.height_m ?? null,
      volume_from_m3: vFrom,
      volume_to_m3: vTo,
      volume_change_m3: vTo - vFrom,
      area_from_m2: aFrom,
      area_to_m2: aTo,
      area_change_m2: aTo - aFrom,
      drowned_by_from: da?.drowned_by ?? null,
      drowned_by_to: db?.drowned_by ?? null,
      volume_change_band: band,
      volume_change_detectable: band ? excludesZero(band) : null,
      crest_lon: crest?.lon ?? null,
      crest_lat: crest?.lat ?? null,
      crest_x: crest?.x ?? null,
      crest_y: crest?.y ?? null,
    });
  }

  // The change is the sum of the per-dam changes, so the dams' rows add up to it
  // exactly; when the runs' totals are not their dams' sums, the totals decide.
  const storageByTotals = rb.totals.storage_m3 - ra.totals.storage_m3;
  const areaByTotals = rb.totals.inundated_area_m2 - ra.totals.inundated_area_m2;
  const agrees = (x: number, y: number): boolean => Math.abs(x - y) <= 1e-9 * Math.max(1, Math.abs(ra.totals.storage_m3), Math.abs(rb.totals.storage_m3), Math.abs(ra.totals.inundated_area_m2), Math.abs(rb.totals.inundated_area_m2));
  const storageChange = agrees(storageByDams, storageByTotals) ? storageByDams : storageByTotals;
  const areaChange = agrees(areaByDams, areaByTotals) ? areaByDams : areaByTotals;
  if (storageChange !== storageByDams || areaChange !== areaByDams) {
    notes.push('the runs’ totals are not the sums of their dams’ rows (e.g. water counted outside any dam): the total changes are the totals’ differences, and the per-dam changes do not add up to them');
  }
  const influenceChange = ra.totals.influence_area_m2 !== null && rb.totals.influence_area_m2 !== null ? rb.totals.influence_area_m2 - ra.totals.influence_area_m2 : null;

  const totalBands = changeBands(a, b, 'total', '', ra.totals.bands, rb.totals.bands, { storage_m3: true, inundated_area_m2: true, influence_area_m2: influenceChange !== null }, pairInfo.paired);
  const methodsUsed = new Set(Object.values(totalBands.band_methods).filter((m) => m !== 'none'));
  const bandsNote =
    methodsUsed.size === 0
      ? 'No bands: the runs have no per-draw figures and no bands (run the estimates with Monte Carlo draws); no change is called detectable.'
      : [
          methodsUsed.has('paired') ? `Paired draws: ${pairInfo.reason}.` : '',
          methodsUsed.has('independent') ? `Independent draws (${pairInfo.reason}): every draw of one run against every draw of the other.` : '',
          methodsUsed.has('quadrature') ? 'From the runs’ bands in quadrature (no per-draw figures): an approximation assuming independent, roughly normal errors.' : '',
          'A change is called detectable only when its band (5th–95th percentile) excludes zero.',
        ]
          .filter((s) => s !== '')
          .join(' ');

  const totals: TotalsChange = {
    from: { storage_m3: ra.totals.storage_m3, inundated_area_m2: ra.totals.inundated_area_m2, influence_area_m2: ra.totals.influence_area_m2 },
    to: { storage_m3: rb.totals.storage_m3, inundated_area_m2: rb.totals.inundated_area_m2, influence_area_m2: rb.totals.influence_area_m2 },
    storage_change_m3: storageChange,
    inundated_area_change_m2: areaChange,
    influence_area_change_m2: influenceChange,
    storage_change_acre_ft: m3ToAcreFeet(storageChange),
    inundated_area_change_ha: m2ToHectares(areaChange),
    inundated_area_change_acres: m2ToAcres(areaChange),
    ...totalBands,
    bands_note: bandsNote,
  };
  if (influenceChange === null) notes.push('influence_area_change_m2 is not available: a run reports no influence area (totals.influence_area_m2)');

  const ws = watershedChanges(a, b, pairInfo.paired);
  const dem = demDifference(ra, rb, sigma);
  const map = changeMap(a.depth, b.depth, dem.lod95_m ?? 0);
  const belowA = ra.totals.storage_below_surface_m3 ?? 0;
  const belowB = rb.totals.storage_below_surface_m3 ?? 0;
  if (map.available && (belowA > 0 || belowB > 0)) {
    map.figures.note =
      `depth.tif holds the water above today's lidar water surfaces; the water below them (${Math.round(belowA)} m³ in ${ra.label}, ${Math.round(belowB)} m³ in ${rb.label}) ` +
      'is in the storage figures but not on the map, so the map sums to the change of the water above the surfaces.';
  }
  return {
    pair: {
      from: ra.label,
      to: rb.label,
      totals,
      dams,
      dam_counts: counts,
      watersheds: ws.rows,
      watersheds_note: ws.note,
      dem_difference: dem,
      change_map: map.available ? map.figures : map,
      notes,
    },
    raster: map.available ? map.raster : null,
  };
}

/**
 * Band of a dam's change from the per-draw dam rows (`volume_m3`: the water
 * the dam counts in each draw). A dam missing from one run counts zero
 * there; without both runs' draws there is no band.
 */
function damChangeBand(drawsA: DrawTable | null, idA: string | null, drawsB: DrawTable | null, idB: string | null, paired: boolean): BandStats | null {
  if (!drawsA || !drawsB) return null;
  const sa = idA === null ? new Float64Array(drawsA.count) : drawSeries(drawsA, 'dam', idA, 'volume_m3');
  const sb = idB === null ? new Float64Array(drawsB.count) : drawSeries(drawsB, 'dam', idB, 'volume_m3');
  if (!sa || !sb || sa.length === 0 || sb.length === 0) return null;
  return paired && sa.length === sb.length ? pairedDifferenceBand(sa, sb) : independentDifferenceBand(sa, sb, MAX_PAIRS_PER_DAM);
}

/** Per-watershed changes, matched by watershed id. */
function watershedChanges(a: RunInput, b: RunInput, paired: boolean): { rows: WatershedChange[] | null; note: string } {
  const wa = a.record.watersheds;
  const wb = b.record.watersheds;
  if (!wa || !wb) {
    return { rows: null, note: `Per-watershed changes are not available: ${!wa && !wb ? 'neither run reports' : !wa ? `${a.record.label} reports no` : `${b.record.label} reports no`} watersheds.` };
  }
  const na = normaliseRun(a.record).watersheds;
  const nb = normaliseRun(b.record).watersheds;
  const ids: string[] = [];
  for (const w of [...wa, ...wb]) if (!ids.includes(w.id)) ids.push(w.id);
  const shared = ids.filter((id) => wa.some((w) => w.id === id) && wb.some((w) => w.id === id)).length;
  const rows = ids.map((id): WatershedChange => {
    const x = wa.find((w) => w.id === id) ?? null;
    const y = wb.find((w) => w.id === id) ?? null;
    const vals = (w: RunWatershed | null): FigureValues => ({
      storage_m3: w?.storage_m3 ?? null,
      inundated_area_m2: w?.inundated_area_m2 ?? null,
      influence_area_m2: w?.influence_area_m2 ?? null,
    });
    const from = vals(x);
    const to = vals(y);
    const diff = (f: keyof FigureValues): number | null => (x && y && from[f] !== null && to[f] !== null ? to[f]! - from[f]! : null);
    const present = { storage_m3: diff('storage_m3') !== null, inundated_area_m2: diff('inundated_area_m2') !== null, influence_area_m2: diff('influence_area_m2') !== null };
    return {
      id,
      name: y?.name ?? x?.name ?? null,
      in_from: x !== null,
      in_to: y !== null,
      from,
      to,
      storage_change_m3: diff('storage_m3'),
      inundated_area_change_m2: diff('inundated_area_m2'),
      influence_area_change_m2: diff('influence_area_m2'),
      ...changeBands(a, b, 'watershed', id, x?.bands ?? null, y?.bands ?? null, present, paired),
      normalised_from: na.find((w) => w.id === id) ?? null,
      normalised_to: nb.find((w) => w.id === id) ?? null,
    };
  });
  return {
    rows,
    note:
      shared === ids.length
        ? 'Watersheds matched by id; every watershed is in both runs.'
        : `Watersheds matched by id; ${ids.length - shared} of ${ids.length} are in one run only (different valleys): compare them on the normalised figures.`,
  };
}

/** Metres per map unit of a run's DEM CRS, null for geographic or unknown. */
function crsUnitM(r: RunRecord): number | null {
  return r.dem.crsUnitM;
}
