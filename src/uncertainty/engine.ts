/**
 * The Monte Carlo engine: N draws of every uncertain input, the figures of
 * every dam and the totals in each draw, and their bands.
 *
 * Draws are paired: draw k of every dam, watershed and total comes from the
 * same draw of the inputs, totals are summed within each draw (in dam-row
 * order, as the deterministic totals are) and percentiles are taken last,
 * never added up.
 *
 * Per dam and draw (see dem-error.ts for the level shift):
 *   crest  = deterministic crest + (drawn height − deterministic height)
 *   level  = min(crest + ē − e_ref, escape + ē − e_pass)
 *                                            (the pond's level on the DEM)
 *   pond   = the fill at that level: a binary search in the fill order
 *   water level reported = min(level, fill top) − ē (the true surface)
 * and whether the dam counts in the draw (candidates: with probability
 * equal to their confidence). Ponds that can share cells (cascades, found
 * once in prepare.ts) are combined per draw exactly as the deterministic
 * water surface is: each cell takes the highest level, its water belongs to
 * the pond that sets it (ties: the lower row). All other dams keep their
 * own pond.
 *
 * When a draw's inputs equal the deterministic ones (level and inclusion of
 * the dam, or of every member of its cascade), the deterministic figures
 * are used as they are, so a run whose sources all have zero variance
 * reproduces the deterministic figures bit for bit.
 */
import type { DamStatus } from '../inventory.js';
import { levelForVolumeM, pondAtExtendedInto, type PondSize } from '../ponds/stage-storage.js';
import { combineCascade, createCascadeDraw, createCascadeScratch, type CascadeDraw } from './cascade.js';
import { bandOf, percentileStandardError, tooFewDraws, type Bands } from './bands.js';
import { HERMITE_5, drawDemErrors, drawnLevelM } from './dem-error.js';
import { createRimWork, drawRimErrors, rimPondVolumeM3 } from './escape-rim.js';
import { supportSize } from './covariance.js';
import { flippedCrest, type DrawInputs, type DamDrawInput, type OverlapCluster } from './prepare.js';
import type { UncertaintyParams } from './params.js';
import { drawMissing } from './recall.js';
import { createRng, deriveSeed, normal, type Rng } from './random.js';

/** The deterministic figures of a dam the engine reads (a subset of a dam's output record). */
export interface DeterministicDam {
  id: string;
  status: DamStatus;
  confidence: number | null;
  estimated: boolean;
  in_totals: boolean;
  area_m2: number;
  volume_m3: number;
  max_depth_m: number;
  mean_depth_m: number;
}

/**
 * A per-dam volume beyond the fill, with its own uncertainty (the hook for
 * water below a lidar water surface, whose model parameter has a published
 * spread). Its deterministic value must already be inside the dam's
 * deterministic volume_m3 and standalone_volume_m3; in each draw the drawn
 * value is added to the dam's volume (when the dam counts) and to its
 * standalone volume.
 */
export interface DamVolumeTerm {
  /** Source name in summary.json (e.g. `below_surface`). */
  name: string;
  /** Deterministic value per dam row, m³ (0 where none). */
  deterministicM3: Float64Array;
  /** Writes dam row `d`'s value in each draw into `out` (one per draw), drawing from `rng`, the dam's own stream for this term. */
  drawDam(d: number, rng: Rng, out: Float64Array): void;
  /**
   * Water below a surface the fill cannot see: per dam the surface's
   * elevation (m) and the deepest water below it (m), NaN where none. A
   * draw's deepest water is then at least (level − surface) + that depth.
   */
  belowSurface?: { surfaceM: Float64Array; maxDepthM: Float64Array };
}

/** Per-dam figures that get bands, in output order (names as in summary.json's dams[]). */
export const DAM_BAND_FIGURES = [
  'height_m',
  'water_level_m',
  'area_m2',
  'volume_m3',
  'max_depth_m',
  'mean_depth_m',
  'standalone_area_m2',
  'standalone_volume_m3',
] as const;

/** What the draws found. Per-draw arrays are dam-major: index d·draws + k. */
export interface DrawOutcome {
  draws: number;
  seed: number;
  /** Bands of each dam's figures (null for a dam that was not estimated). */
  damBands: (Bands | null)[];
  /** Bands of the per-draw totals: storage_m3, inundated_area_m2, dams_in_totals (and missing_* with --recall). */
  totalsBands: Bands;
  /** Volume (m³) and area (m²) each dam owns in each draw (0 when it does not count). */
  damVolumeM3: Float64Array;
  damAreaM2: Float64Array;
  /** 1 where dam d counts in draw k. */
  included: Uint8Array;
  /** Per-draw totals by name (same keys as totalsBands). */
  totals: Record<string, Float64Array>;
  /** What a second combination of the ponds needs (uncertainty/scenario-draws.ts): each dam's drawn level on the DEM (m, dam-major; proposed dams too), its DEM error's within-pond sd (m), and the volume terms' sum per dam and draw (m³) with 1 where every term took its deterministic value (null without terms). */
  levelsM: Float64Array;
  withinSdM: Float64Array;
  termsM3: Float64Array | null;
  termsAtDeterministic: Uint8Array | null;
  monteCarlo: {
    /** Standard error of p95 of each total (order-statistic interval). */
    p95StandardError: Record<string, number>;
    /** True when the draws are too few for the p95 of total storage (see bands.ts). */
    tooFew: boolean;
    /** Dam-draws whose level went above the flood's top and were held there. */
    floodTopHits: number;
    /** Ponds combined per draw because they can share cells, and their groups. */
    overlapClusters: number;
    clusteredDams: number;
    /** Dams whose DEM errors are drawn jointly: groups, the largest, clipped pivots. */
    demGroups: number;
    largestDemGroup: number;
    clippedPivots: number;
    /** Ponds escaping below their crest whose rim the draws flood again, and those whose rim was not kept (escape-rim.ts). */
    escapeRims: number;
    escapeRimsNotKept: number;
  };
}

/** Runs the draws. */
export function runDraws(args: {
  inputs: DrawInputs;
  dams: readonly DeterministicDam[];
  params: UncertaintyParams;
  /** Unmeasured heights: median (the deterministic default) and the cap, m. */
  defaultHeightM: number;
  maxHeightM: number;
  volumeTerms?: readonly DamVolumeTerm[];
  /** Group of each dam row for --recall (watershed index; −1: none). Default: one group of every dam that may count. */
  recallGroups?: { groupOf: Int32Array; keys: readonly string[] };
}): DrawOutcome {
  const { inputs, dams, params: u } = args;
  const N = u.draws;
  const D = dams.length;
  if (!(N >= 1)) throw new Error(`draws must be at least 1; got ${N}`);
  const seed = u.seed;
  const terms = args.volumeTerms ?? [];

  // DEM error: (e_ref, ē) per dam and draw.
  const supports = inputs.dams.map((inp) => inp?.support ?? null);
  const dem = drawDemErrors({
    supports,
    ids: dams.map((d) => d.id),
    draws: N,
    seed,
    sigmaM: u.demError ? u.demRmseM : 0,
    rangeM: u.demErrorRangeM,
    keepJoint: inputs.dams.map((inp) => Boolean(inp?.rim) || Boolean(inp?.flip)),
  });
  // A dam whose rim is kept has the error's variation within its pond in its drawn volume already (escape-rim.ts).
  dem.jointM.forEach((joint, d) => {
    if (joint && inputs.dams[d]?.rim) dem.withinSdM[d] = 0;
  });

  // Heights, levels and inclusion.
  const heights = new Float64Array(D * N);
  const levels = new Float64Array(D * N);
  const included = new Uint8Array(D * N);
  const sigmaLn = Math.log(u.unmeasuredHeightGsd);
  for (let d = 0; d < D; d++) {
    const inp = inputs.dams[d];
    const det = dams[d]!;
    if (!inp || !det.estimated) continue;
    const base = d * N;
    drawHeights(inp, det, u, sigmaLn, args.defaultHeightM, args.maxHeightM, heights.subarray(base, base + N));
    const floor = levelFloor(terms, d, inp.waterLevelM);
    // Water that escapes below the crest does so at the lowest of its ways out, each moving with its pass's
    // error; where the rim round the ways out was kept, it is flooded again on the draw's true ground.
    const escapeM = inp.escapeLevelM;
    const rim = inp.rim ?? null;
    const joint = dem.jointM[d] ?? null;
    const rimWork = rim && joint ? createRimWork(rim) : null;
    const rimRng = rimWork ? createRng(deriveSeed(seed, 'dem-error-rim', det.id)) : null;
    const jointSize = joint && inp.support ? supportSize(inp.support) : 0;
    for (let k = 0; k < N; k++) {
      let crest = inp.crestElevM + (heights[base + k]! - inp.heightM);
      let refErr = dem.refErrorM[base + k]!;
      // Near the DEM-visibility threshold the rule may go the other way on the true ground: crest from the other cell.
      const flipped = inp.flip && joint ? flippedCrest(inp.flip, joint, k * jointSize) : null;
      if (flipped) {
        crest += flipped.shiftM;
        refErr = flipped.refErrorM;
      }
      let level: number;
      if (rim && joint && rimWork && rimRng) {
        // The pond on the rim's true ground, as the level at which the DEM's fill holds as much (no smearing: it is in the volume).
        for (let a = 0; a < rimWork.normals.length; a++) rimWork.normals[a] = normal(rimRng);
        drawRimErrors(rim, joint, k * rim.m, rimWork);
        level = levelForVolumeM(inp.fill, rimPondVolumeM3(rim, crest, refErr, dem.meanErrorM[base + k]!, rimWork));
      } else {
        level = drawnLevelM(crest, escapeM, refErr, dem.meanErrorM[base + k]!, dem.passErrorM[base + k]!);
      }
      levels[base + k] = level < floor ? floor : level;
    }
    drawInclusion(det, u, seed, included.subarray(base, base + N));
  }

  // Extra volume terms per dam and draw.
  const termDraws = terms.map((term) => {
    const out = new Float64Array(D * N);
    for (let d = 0; d < D; d++) {
      if (!inputs.dams[d]) continue;
      term.drawDam(d, createRng(deriveSeed(seed, `term:${term.name}`, dams[d]!.id)), out.subarray(d * N, (d + 1) * N));
    }
    return out;
  });
  const termsAtDet = (d: number, k: number): boolean => {
    for (let t = 0; t < terms.length; t++) if (termDraws[t]![d * N + k] !== terms[t]!.deterministicM3[d]) return false;
    return true;
  };
  const termSum = (d: number, k: number): number => {
    let s = 0;
    for (let t = 0; t < terms.length; t++) s += termDraws[t]![d * N + k]!;
    return s;
  };

  // Water each dam owns per draw: cascades first (they need every member's level).
  const damVolumeM3 = new Float64Array(D * N);
  const damAreaM2 = new Float64Array(D * N);
  const damMaxDepthM = new Float64Array(D * N);
  // 1 where a cascade's draw equalled the deterministic run and took its figures (terms included).
  const fromDeterministic = new Uint8Array(D * N);
  let clusteredDams = 0;
  for (const cluster of inputs.clusters) {
    clusteredDams += cluster.members.length;
    combineClusterDraws(cluster, inputs.dams, dams, levels, included, N, termsAtDet, {
      area: damAreaM2,
      volume: damVolumeM3,
      maxDepth: damMaxDepthM,
      fromDeterministic,
    });
  }

  // Per dam: standalone ponds, own water for the others, bands; totals in row order.
  const totals: Record<string, Float64Array> = {
    storage_m3: new Float64Array(N),
    inundated_area_m2: new Float64Array(N),
    dams_in_totals: new Float64Array(N),
  };
  const damBands: (Bands | null)[] = new Array<Bands | null>(D).fill(null);
  const scratch = new Float64Array(N);
  const fig = {
    water: new Float64Array(N),
    meanDepth: new Float64Array(N),
    standaloneArea: new Float64Array(N),
    standaloneVolume: new Float64Array(N),
  };
  let floodTopHits = 0;
  // Reused pond sizes (no allocation per dam and draw).
  const plainSize: PondSize = { cellCount: 0, areaM2: 0, volumeM3: 0 };
  const ownSize: PondSize = { cellCount: 0, areaM2: 0, volumeM3: 0 };
  const nodeSize: PondSize = { cellCount: 0, areaM2: 0, volumeM3: 0 };
  for (let d = 0; d < D; d++) {
    const inp = inputs.dams[d];
    const det = dams[d]!;
    if (!inp || !det.estimated) continue;
    const base = d * N;
    const fill = inp.fill;
    const clustered = inp.cluster >= 0;
    for (let k = 0; k < N; k++) {
      const level = levels[base + k]!;
      // Above an escape the pond deepens over its area at the pass (pondAtExtended); above the flood's level limit it is held there.
      const h = fill.escapeKind !== null ? level : Math.min(level, fill.topLevelM);
      if (level > fill.topLevelM && fill.escapeKind === null && inp.holdsWater) floodTopHits++;
      const plain = pondAtExtendedInto(fill, level, plainSize);
      const sw = dem.withinSdM[d]!;
      // The error's variation within the pond: the expected pond over the smeared level (dem-error.ts).
      const own = sw > 0 ? smearedPondInto(fill, level, sw, ownSize, nodeSize) : plain;
      const extra = terms.length > 0 ? termSum(d, k) : 0;
      fig.standaloneArea[k] = own.areaM2;
      fig.standaloneVolume[k] = own.volumeM3 + extra;
      fig.water[k] = inp.holdsWater ? h - dem.meanErrorM[base + k]! : fill.waterLevelM;
      if (!clustered) {
        if (included[base + k] === 0) {
          damAreaM2[base + k] = 0;
          damVolumeM3[base + k] = 0;
          damMaxDepthM[base + k] = 0;
        } else if (det.in_totals && h === inp.waterLevelM && termsAtDet(d, k)) {
          damAreaM2[base + k] = det.area_m2;
          damVolumeM3[base + k] = det.volume_m3;
          damMaxDepthM[base + k] = det.max_depth_m;
          fromDeterministic[base + k] = 1;
        } else {
          damAreaM2[base + k] = own.areaM2;
          damVolumeM3[base + k] = own.volumeM3 + extra;
          damMaxDepthM[base + k] = own.cellCount > 0 ? h - inp.prefixMinZ[own.cellCount - 1]! : 0;
        }
      } else if (included[base + k] === 1 && fromDeterministic[base + k] === 0) {
        // A cascade member: its share scaled by the smearing of its own pond, plus the terms.
        if (sw > 0 && plain.volumeM3 > 0) damVolumeM3[base + k] = (damVolumeM3[base + k]! * own.volumeM3) / plain.volumeM3;
        if (sw > 0 && plain.areaM2 > 0) damAreaM2[base + k] = (damAreaM2[base + k]! * own.areaM2) / plain.areaM2;
        damVolumeM3[base + k]! += extra;
      }
      if (included[base + k] === 1 && fromDeterministic[base + k] === 0 && damAreaM2[base + k]! > 0) {
        // Deepest water below a lidar water surface, when a term knows it.
        for (const term of terms) {
          const below = term.belowSurface;
          if (!below) continue;
          const deep = below.maxDepthM[d]!;
          if (!(deep >= 0)) continue;
          const reach = Math.max(0, h - below.surfaceM[d]!) + deep;
          if (reach > damMaxDepthM[base + k]!) damMaxDepthM[base + k] = reach;
        }
      }
      const a = damAreaM2[base + k]!;
      const v = damVolumeM3[base + k]!;
      // The deterministic mean depth is the same quotient of the same numbers.
      fig.meanDepth[k] = a > 0 ? v / a : 0;
      totals.storage_m3![k]! += v;
      totals.inundated_area_m2![k]! += a;
      totals.dams_in_totals![k]! += included[base + k]!;
    }
    damBands[d] = {
      height_m: bandOf(heights.subarray(base, base + N), scratch),
      water_level_m: bandOf(fig.water, scratch),
      area_m2: bandOf(damAreaM2.subarray(base, base + N), scratch),
      volume_m3: bandOf(damVolumeM3.subarray(base, base + N), scratch),
      max_depth_m: bandOf(damMaxDepthM.subarray(base, base + N), scratch),
      mean_depth_m: bandOf(fig.meanDepth, scratch),
      standalone_area_m2: bandOf(fig.standaloneArea, scratch),
      standalone_volume_m3: bandOf(fig.standaloneVolume, scratch),
    };
  }

  // Inventory completeness: missing dams resampled from the found ones of their group.
  if (u.recall !== null) {
    const groups = args.recallGroups ?? defaultRecallGroups(dams);
    const missing = drawMissing({
      draws: N,
      seed,
      recall: u.recall,
      recallSd: u.recallSd,
      included,
      groupOf: groups.groupOf,
      groupKeys: groups.keys,
      volumeM3: damVolumeM3,
      areaM2: damAreaM2,
    });
    for (let k = 0; k < N; k++) {
      totals.storage_m3![k]! += missing.storageM3[k]!;
      totals.inundated_area_m2![k]! += missing.areaM2[k]!;
    }
    totals.missing_dams = missing.dams;
    totals.missing_storage_m3 = missing.storageM3;
    totals.missing_area_m2 = missing.areaM2;
  }

  // Per dam and draw: the terms' sum and whether they all took their deterministic values (for a second combination of the ponds).
  let termsM3: Float64Array | null = null;
  let termsAtDeterministic: Uint8Array | null = null;
  if (terms.length > 0) {
    termsM3 = new Float64Array(D * N);
    termsAtDeterministic = new Uint8Array(D * N);
    for (let d = 0; d < D; d++) {
      for (let k = 0; k < N; k++) {
        termsM3[d * N + k] = termSum(d, k);
        termsAtDeterministic[d * N + k] = termsAtDet(d, k) ? 1 : 0;
      }
    }
  }

  const totalsBands: Bands = {};
  const p95StandardError: Record<string, number> = {};
  for (const [name, values] of Object.entries(totals)) {
    totalsBands[name] = bandOf(values, scratch);
    p95StandardError[name] = percentileStandardError(scratch, 0.95).standardError;
  }
  return {
    draws: N,
    seed,
    damBands,
    totalsBands,
    damVolumeM3,
    damAreaM2,
    included,
    totals,
    levelsM: levels,
    withinSdM: dem.withinSdM,
    termsM3,
    termsAtDeterministic,
    monteCarlo: {
      p95StandardError,
      tooFew: tooFewDraws(N, totalsBands.storage_m3!, p95StandardError.storage_m3!),
      floodTopHits,
      overlapClusters: inputs.clusters.length,
      clusteredDams,
      demGroups: dem.components,
      largestDemGroup: dem.largestComponent,
      clippedPivots: dem.clippedPivots,
      escapeRims: dem.jointM.filter((j) => j !== null).length,
      escapeRimsNotKept: inputs.dams.filter((inp) => inp?.rim === null).length,
    },
  };
}

/**
 * Lowest level a draw may take: today's water surface, where the DEM shows
 * one (water stands there, so whatever holds it is at least that high; in
 * the level-shift frame of dem-error.ts the condition is level ≥ surface
 * as the DEM has it), or the deterministic level when that is lower (an
 * overtopped crest). −Infinity without a surface.
 */
/** How far above today's water surface the lowest drawn level stands, m: enough to count the surface's cells as water. */
const SURFACE_FLOOR_ABOVE_M = 1e-6;

function levelFloor(terms: readonly DamVolumeTerm[], d: number, deterministicLevelM: number): number {
  let floor = -Infinity;
  for (const term of terms) {
    const surface = term.belowSurface?.surfaceM[d];
    // A micrometre above the surface, so the surface's own cells (joining at it) count as water.
    if (surface !== undefined && surface === surface) floor = Math.max(floor, Math.min(surface + SURFACE_FLOOR_ABOVE_M, deterministicLevelM));
  }
  return floor;
}

/** The pond's expected area and volume when its level is smeared by N(0, s²) (five-point Gauss–Hermite). */
export function smearedPond(fill: DamDrawInput['fill'], levelM: number, s: number): PondSize {
  return smearedPondInto(fill, levelM, s, { cellCount: 0, areaM2: 0, volumeM3: 0 }, { cellCount: 0, areaM2: 0, volumeM3: 0 });
}

/** smearedPond written into `out` (returned); `node` is scratch for one Gauss–Hermite node. */
export function smearedPondInto(fill: DamDrawInput['fill'], levelM: number, s: number, out: PondSize, node: PondSize): PondSize {
  let area = 0;
  let volume = 0;
  let cells = 0;
  for (let j = 0; j < HERMITE_5.x.length; j++) {
    const p = pondAtExtendedInto(fill, levelM + Math.SQRT2 * s * HERMITE_5.x[j]!, node);
    area += HERMITE_5.w[j]! * p.areaM2;
    volume += HERMITE_5.w[j]! * p.volumeM3;
    if (j === 0) cells = p.cellCount;
  }
  out.cellCount = cells;
  out.areaM2 = area;
  out.volumeM3 = volume;
  return out;
}

/** Crest heights of one dam in every draw, m. */
function drawHeights(inp: DamDrawInput, det: DeterministicDam, u: UncertaintyParams, sigmaLn: number, defaultHeightM: number, maxHeightM: number, out: Float64Array): void {
  const H = inp.heightM;
  out.fill(H);
  if (!u.heightError || !inp.holdsWater) return;
  const rng = createRng(deriveSeed(u.seed, 'height', det.id));
  if (inp.heightSource === 'measured' && u.heightSurveySdM > 0) {
    // Survey error: Normal(H, sd), held at 0 from below (a dam cannot be lower than its bed).
    // A proposed structure's design height is drawn the same way (it is built to a surveyed height); it counts only in the with-proposed scenario.
    for (let k = 0; k < out.length; k++) out[k] = Math.max(0, H + u.heightSurveySdM * normal(rng));
  } else if (inp.heightSource === 'default' && sigmaLn > 0) {
    // Unmeasured: lognormal with median the default height, held at the skip height from above.
    for (let k = 0; k < out.length; k++) out[k] = Math.min(maxHeightM, defaultHeightM * Math.exp(sigmaLn * normal(rng)));
  }
}

/** Whether the dam counts in each draw: candidates with probability = confidence, others as in the deterministic run. */
function drawInclusion(det: DeterministicDam, u: UncertaintyParams, seed: number, out: Uint8Array): void {
  if (det.status === 'candidate' && u.candidates) {
    const p = det.confidence ?? 1;
    const rng = createRng(deriveSeed(seed, 'candidate', det.id));
    for (let k = 0; k < out.length; k++) out[k] = rng() < p ? 1 : 0;
    return;
  }
  out.fill(det.in_totals && det.status !== 'proposed' ? 1 : 0);
}

/** One group: every dam that may count (not proposed). */
function defaultRecallGroups(dams: readonly DeterministicDam[]): { groupOf: Int32Array; keys: string[] } {
  const groupOf = new Int32Array(dams.length).fill(-1);
  dams.forEach((d, i) => {
    if (d.estimated && d.status !== 'proposed') groupOf[i] = 0;
  });
  return { groupOf, keys: ['all'] };
}

/**
 * Per draw, the water surface of a cascade (cascade.ts). Draws equal to the
 * deterministic run take the deterministic figures.
 */
function combineClusterDraws(
  cluster: OverlapCluster,
  inputs: (DamDrawInput | null)[],
  dams: readonly DeterministicDam[],
  levels: Float64Array,
  included: Uint8Array,
  N: number,
  termsAtDet: (d: number, k: number) => boolean,
  out: { area: Float64Array; volume: Float64Array; maxDepth: Float64Array; fromDeterministic: Uint8Array },
): void {
  const members = cluster.members;
  const M = members.length;
  const scratch = createCascadeScratch(cluster);
  const draw = createCascadeDraw(M);
  for (let k = 0; k < N; k++) {
    let deterministic = true;
    for (let p = 0; p < M; p++) {
      const d = members[p]!;
      const fill = inputs[d]!.fill;
      const det = dams[d]!;
      const inc = included[d * N + k] === 1;
      draw.levelM[p] = levels[d * N + k]!;
      draw.included[p] = inc ? 1 : 0;
      if (inc !== det.in_totals || (inc && (Math.min(draw.levelM[p]!, fill.topLevelM) !== inputs[d]!.waterLevelM || !termsAtDet(d, k)))) deterministic = false;
    }
    if (deterministic) {
      for (const d of members) {
        const det = dams[d]!;
        out.area[d * N + k] = det.area_m2;
        out.volume[d * N + k] = det.volume_m3;
        out.maxDepth[d * N + k] = det.max_depth_m;
        out.fromDeterministic[d * N + k] = 1;
      }
      continue;
    }
    combineCascade(cluster, inputs, draw, scratch);
    for (let p = 0; p < M; p++) {
      const d = members[p]!;
      out.area[d * N + k] = draw.areaM2[p]!;
      out.volume[d * N + k] = draw.volumeM3[p]!;
      out.maxDepth[d * N + k] = draw.maxDepthM[p]!;
    }
  }
}
