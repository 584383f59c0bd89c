/**
 * The draws stage: after the deterministic estimate, run the Monte Carlo
 * draws on the kept fills and put a band beside every figure.
 *
 *   estimate (fills flooded to the draws' top) → draws → bands on each dam
 *   and on the totals → summary.json `uncertainty`, draws.csv
 *
 * Other stages add figures with bands by handing the engine a volume term
 * (DamVolumeTerm, e.g. water below a lidar water surface) or by summing the
 * per-draw dam figures of `DrawOutcome` themselves (`sumByGroup` for
 * watersheds) and calling `bandsOf`.
 */
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';
import { mapBand, type Bands } from '../uncertainty/bands.js';
import { runDraws, type DamVolumeTerm, type DrawOutcome } from '../uncertainty/engine.js';
import { sourceRecords, uncertaintySection, type SourceRecord, type UncertaintySection } from '../uncertainty/describe.js';
import type { EstimateParams, EstimateResult } from './estimate.js';

/** The draws of a run and what summary.json says about them. */
export interface RunDraws {
  outcome: DrawOutcome;
  section: UncertaintySection;
  /** Bands of the totals with the unit conversions summary.json's totals carry. */
  totalsBands: Bands;
}

/**
 * Runs the draws when the run asks for them, and attaches each dam's bands
 * to its record (`bands`). Returns null without draws.
 */
export function drawBands(
  result: EstimateResult,
  params: EstimateParams,
  options: { volumeTerms?: readonly DamVolumeTerm[]; extraSources?: readonly SourceRecord[]; recallGroups?: { groupOf: Int32Array; keys: readonly string[] } } = {},
): RunDraws | null {
  const u = params.uncertainty;
  if (!u || u.draws === 0 || !result.drawInputs) return null;
  const outcome = runDraws({
    inputs: result.drawInputs,
    dams: result.dams,
    params: u,
    defaultHeightM: params.pond.defaultHeightM,
    maxHeightM: params.pond.maxHeightM,
    ...(options.volumeTerms ? { volumeTerms: options.volumeTerms } : {}),
    ...(options.recallGroups ? { recallGroups: options.recallGroups } : {}),
  });
  result.dams.forEach((d, i) => {
    const b = outcome.damBands[i];
    if (b) d.bands = b;
  });
  if (outcome.monteCarlo.tooFew) {
    const band = outcome.totalsBands.storage_m3!;
    const se = outcome.monteCarlo.p95StandardError.storage_m3!;
    result.warnings.push({
      code: 'too-few-draws',
      message:
        `${outcome.draws} draws are too few for the bands' tails: the Monte Carlo standard error of the p95 of total storage is ${se.toPrecision(3)} m³` +
        (band.p95 > band.p05 ? ` (${((100 * se) / (band.p95 - band.p05)).toFixed(1)} % of the p05–p95 width)` : '') +
        '; raise --draws (1000 or more)',
    });
  }
  const sources = sourceRecords(u, params.pond.defaultHeightM, params.pond.maxHeightM, options.extraSources ?? []);
  return { outcome, section: uncertaintySection(u, outcome, sources), totalsBands: totalsBandsWithUnits(outcome.totalsBands) };
}

/** Totals' bands in the order and units of summary.json's totals (m², ha, acres, m³, acre-feet). */
export function totalsBandsWithUnits(b: Bands): Bands {
  const out: Bands = {};
  const area = b.inundated_area_m2!;
  const storage = b.storage_m3!;
  out.dams_in_totals = b.dams_in_totals!;
  out.inundated_area_m2 = area;
  out.storage_m3 = storage;
  out.inundated_area_ha = mapBand(area, m2ToHectares);
  out.inundated_area_acres = mapBand(area, m2ToAcres);
  out.storage_acre_ft = mapBand(storage, m3ToAcreFeet);
  for (const [name, band] of Object.entries(b)) if (!(name in out)) out[name] = band;
  return out;
}

/**
 * Per-draw sums of a dam-major figure (d·draws + k) by group (e.g. the
 * watershed of each dam; −1: none), added in dam-row order so a group's
 * draw equals the sum of its dams' draws exactly.
 */
export function sumByGroup(values: Float64Array, draws: number, groupOf: Int32Array, groupCount: number): Float64Array[] {
  const out = Array.from({ length: groupCount }, () => new Float64Array(draws));
  for (let d = 0; d < groupOf.length; d++) {
    const g = groupOf[d]!;
    if (g < 0) continue;
    const sums = out[g]!;
    const base = d * draws;
    for (let k = 0; k < draws; k++) sums[k]! += values[base + k]!;
  }
  return out;
}
