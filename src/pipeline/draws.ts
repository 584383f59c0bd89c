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
import { POWER_P_RANGE } from '../ponds/below-surface.js';
import { mapBand, type Bands } from '../uncertainty/bands.js';
import { normal } from '../uncertainty/random.js';
import type { UncertaintyParams } from '../uncertainty/params.js';
import type { DrawInputs } from '../uncertainty/prepare.js';
import { runDraws, type DamVolumeTerm, type DrawOutcome } from '../uncertainty/engine.js';
import { sourceRecords, uncertaintySection, type SourceRecord, type UncertaintySection } from '../uncertainty/describe.js';
import type { EstimateParams, EstimateResult } from './estimate.js';
import type { DamResult } from './result.js';

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
  const water = waterBelowTerm(result.dams, result.drawInputs, u);
  const volumeTerms = [...(water ? [water] : []), ...(options.volumeTerms ?? [])];
  const outcome = runDraws({
    inputs: result.drawInputs,
    dams: result.dams,
    params: u,
    defaultHeightM: params.pond.defaultHeightM,
    maxHeightM: params.pond.maxHeightM,
    volumeTerms,
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
  const waterSource: SourceRecord = {
    name: 'below_surface_p',
    enabled: water !== null && u.powerPGsd > 1,
    distribution: `Lognormal with median the run's p (power law below lidar water surfaces, bed_source power-law) and geometric sd ${u.powerPGsd}, held within ${POWER_P_RANGE[0]}–${POWER_P_RANGE[1]}; the water below scales as 1/(1 + 2/p)`,
    basis:
      "Placeholder spread (a project choice): Karran et al. (2017) fitted p per beaver pond and their spread should set --power-p-gsd (not restated here; not checked). Water below surfaces from a bed DEM or the reconstructed bed is kept as computed; so is the water below when a draw's level falls under today’s surface (an approximation).",
  };
  const sources = sourceRecords(u, params.pond.defaultHeightM, params.pond.maxHeightM, [waterSource, ...(options.extraSources ?? [])]);
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

/**
 * The water below lidar water surfaces (pipeline/water-stage.ts) as a draw
 * term: constant per dam, except where it comes from the power law alone,
 * whose exponent p is drawn (V ∝ 1/(1 + 2/p), Hayashi & van der Kamp 2000).
 * It also carries today's surfaces, below which no draw's level goes (the
 * water stands there). Null when no dam has a water surface.
 */
function waterBelowTerm(dams: readonly DamResult[], inputs: DrawInputs, u: UncertaintyParams): DamVolumeTerm | null {
  const D = dams.length;
  const deterministicM3 = new Float64Array(D);
  const surfaceM = new Float64Array(D).fill(NaN);
  const maxDepthM = new Float64Array(D).fill(NaN);
  let any = false;
  dams.forEach((d, i) => {
    if (d.water_surface_elev_m === null || d.water_surface_elev_m === undefined) return;
    any = true;
    surfaceM[i] = d.water_surface_elev_m;
    const below = d.volume_below_surface_m3 ?? 0;
    if (!(below > 0)) return;
    deterministicM3[i] = below;
    // The deepest water the deterministic run found, seen from today's surface.
    const aboveAtWater = d.water_level_m !== null && d.water_level_m > d.water_surface_elev_m ? d.water_level_m - d.water_surface_elev_m : 0;
    maxDepthM[i] = Math.max(0, d.max_depth_m - aboveAtWater);
  });
  if (!any) return null;
  const sigmaLn = Math.log(u.powerPGsd);
  const [pLow, pHigh] = POWER_P_RANGE;
  return {
    name: 'below_surface',
    deterministicM3,
    belowSurface: { surfaceM, maxDepthM },
    drawDam(d, rng, out) {
      out.fill(deterministicM3[d]!);
      const r = dams[d]!;
      const p0 = r.power_p ?? null;
      if (!(sigmaLn > 0) || r.bed_source !== 'power-law' || p0 === null || !(deterministicM3[d]! > 0) || !inputs.dams[d]) return;
      const shape0 = 1 + 2 / p0;
      for (let k = 0; k < out.length; k++) {
        const p = Math.min(pHigh, Math.max(pLow, p0 * Math.exp(sigmaLn * normal(rng))));
        out[k] = (deterministicM3[d]! * shape0) / (1 + 2 / p);
      }
    },
  };
}
