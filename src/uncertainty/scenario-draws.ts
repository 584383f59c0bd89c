/**
 * The with-proposed scenario in every draw: the existing dams' water as the
 * draws found it, plus the proposed structures with a design height, their
 * ponds combined with the existing ones so no water is counted twice.
 *
 * This is a second combination of the same draws (engine.ts), not new
 * draws: each dam keeps its drawn level (a proposed structure's level is its
 * design height with the survey error, shifted by the DEM error like any
 * crest), and each existing dam its inclusion. Only the groups of ponds a
 * proposed pond can reach (found once in prepare.ts, `DrawInputs.scenario`)
 * are combined again, per draw, with the cascade combination of cascade.ts;
 * every other dam keeps the water it owns in the existing scenario.
 *
 * Per draw k:
 *   existing[k]      = the run's total in draw k (unchanged)
 *   with_proposed[k] = Σ over dams, in row order, of the water each owns in
 *                      the with-proposed surface (+ the missed dams' water
 *                      under --recall, as in the existing total)
 *   added[k]         = Σ over dams of (with-proposed share − existing share)
 * A draw whose inputs equal the deterministic ones takes the deterministic
 * with-proposed shares (pipeline/scenarios.ts), so zero variance reproduces
 * the deterministic scenario exactly.
 */
import { pondAt, pondAtExtended } from '../ponds/stage-storage.js';
import { bandOf, type Bands } from './bands.js';
import { combineCascade, createCascadeDraw, createCascadeScratch, type CascadeDraw } from './cascade.js';
import { smearedPond, type DeterministicDam, type DrawOutcome } from './engine.js';
import type { DrawInputs } from './prepare.js';

/** Per-draw storage (m³) and inundated area (m²) of one scenario. */
export interface ScenarioSeries {
  storage_m3: Float64Array;
  inundated_area_m2: Float64Array;
}

/** What the scenario pass found. Per-dam arrays are dam-major (d·draws + k). */
export interface ScenarioDrawOutcome {
  existing: ScenarioSeries;
  with_proposed: ScenarioSeries;
  added: ScenarioSeries;
  /** Water each dam owns in the with-proposed surface per draw, m³ and m² (0 when it does not count). */
  damVolumeM3: Float64Array;
  damAreaM2: Float64Array;
  /** Groups of ponds combined again because a proposed pond can reach them. */
  clusters: number;
}

/** A dam's deterministic share of the with-proposed surface (pipeline/scenarios.ts), m² and m³; null when the dam is not in it. */
export type ScenarioShare = { areaM2: number; volumeM3: number } | null;

/**
 * Runs the scenario pass over the draws of `outcome`. `shares` holds each
 * dam row's deterministic with-proposed share.
 */
export function runScenarioDraws(args: {
  inputs: DrawInputs;
  dams: readonly DeterministicDam[];
  outcome: DrawOutcome;
  shares: readonly ScenarioShare[];
}): ScenarioDrawOutcome {
  const { inputs, dams, outcome, shares } = args;
  const N = outcome.draws;
  const D = dams.length;
  const sc = inputs.scenario;
  const designed = sc?.designed ?? new Uint8Array(D);
  const levels = outcome.levelsM;
  const termsM3 = outcome.termsM3;
  const termsAtDet = outcome.termsAtDeterministic;

  // Every dam starts with the water it owns in the existing surface.
  const volume = Float64Array.from(outcome.damVolumeM3);
  const area = Float64Array.from(outcome.damAreaM2);

  // Existing dams no proposed pond reaches: where a draw took the dam's deterministic figures, take its
  // deterministic with-proposed share (the same water; the two deterministic records may differ in the
  // last bits, pipeline/scenarios.ts keeps shares before the figures are put on their step).
  for (let d = 0; d < D; d++) {
    const det = shares[d] ?? null;
    if (!det || designed[d] === 1 || (sc && sc.dams[d] !== null)) continue;
    const dv = dams[d]!.volume_m3;
    const da = dams[d]!.area_m2;
    for (let k = 0; k < N; k++) {
      const at = d * N + k;
      if (volume[at] === dv && area[at] === da) {
        volume[at] = det.volumeM3;
        area[at] = det.areaM2;
      }
    }
  }

  // Proposed ponds that reach no other pond in any draw: their own pond.
  for (let d = 0; d < D; d++) {
    const inp = inputs.dams[d];
    if (designed[d] === 0 || !inp || (sc && sc.dams[d] !== null)) continue;
    const fill = inp.fill;
    const sw = outcome.withinSdM[d]!;
    const det = shares[d] ?? null;
    for (let k = 0; k < N; k++) {
      const level = levels[d * N + k]!;
      if (det && (fill.escapeKind !== null ? level : Math.min(level, fill.topLevelM)) === inp.waterLevelM) {
        area[d * N + k] = det.areaM2;
        volume[d * N + k] = det.volumeM3;
        continue;
      }
      const own = sw > 0 ? smearedPond(fill, level, sw) : pondAtExtended(fill, level);
      area[d * N + k] = own.areaM2;
      volume[d * N + k] = own.volumeM3;
    }
  }

  // Groups a proposed pond can reach: combined again per draw, proposed dams included.
  for (const cluster of sc?.clusters ?? []) {
    const members = cluster.members;
    const M = members.length;
    const scratch = createCascadeScratch(cluster);
    const draw = createCascadeDraw(M);
    for (let k = 0; k < N; k++) {
      let deterministic = true;
      for (let p = 0; p < M; p++) {
        const d = members[p]!;
        const fill = sc!.dams[d]!.fill;
        const inc = designed[d] === 1 || outcome.included[d * N + k] === 1;
        const detInc = designed[d] === 1 || dams[d]!.in_totals;
        draw.levelM[p] = levels[d * N + k]!;
        draw.included[p] = inc ? 1 : 0;
        if (inc !== detInc) deterministic = false;
        else if (inc && (Math.min(draw.levelM[p]!, fill.topLevelM) !== sc!.dams[d]!.waterLevelM || (termsAtDet !== null && termsAtDet[d * N + k] === 0))) deterministic = false;
      }
      if (deterministic) {
        for (const d of members) {
          const det = shares[d] ?? null;
          area[d * N + k] = det ? det.areaM2 : 0;
          volume[d * N + k] = det ? det.volumeM3 : 0;
        }
        continue;
      }
      combineCascade(cluster, sc!.dams, draw, scratch);
      for (let p = 0; p < M; p++) {
        const d = members[p]!;
        const at = d * N + k;
        if (draw.included[p] === 0) {
          area[at] = 0;
          volume[at] = 0;
          continue;
        }
        let a = draw.areaM2[p]!;
        let v = draw.volumeM3[p]!;
        const sw = outcome.withinSdM[d]!;
        if (sw > 0) {
          // The share scaled by the smearing of the dam's own pond, as the existing combination does (engine.ts).
          const fill = sc!.dams[d]!.fill;
          const plain = pondAt(fill, draw.levelM[p]!);
          const own = smearedPond(fill, draw.levelM[p]!, sw);
          if (plain.volumeM3 > 0) v = (v * own.volumeM3) / plain.volumeM3;
          if (plain.areaM2 > 0) a = (a * own.areaM2) / plain.areaM2;
        }
        // Water below today's surfaces stays with existing dams in either scenario.
        if (designed[d] === 0 && termsM3 !== null) v += termsM3[at]!;
        area[at] = a;
        volume[at] = v;
      }
    }
  }

  const existing: ScenarioSeries = {
    storage_m3: Float64Array.from(outcome.totals.storage_m3!),
    inundated_area_m2: Float64Array.from(outcome.totals.inundated_area_m2!),
  };
  const withProposed: ScenarioSeries = { storage_m3: new Float64Array(N), inundated_area_m2: new Float64Array(N) };
  const added: ScenarioSeries = { storage_m3: new Float64Array(N), inundated_area_m2: new Float64Array(N) };
  for (let d = 0; d < D; d++) {
    const base = d * N;
    for (let k = 0; k < N; k++) {
      const v = volume[base + k]!;
      const a = area[base + k]!;
      withProposed.storage_m3[k]! += v;
      withProposed.inundated_area_m2[k]! += a;
      added.storage_m3[k]! += v - outcome.damVolumeM3[base + k]!;
      added.inundated_area_m2[k]! += a - outcome.damAreaM2[base + k]!;
    }
  }
  // Dams the inventory missed (--recall) are existing dams: in both scenarios.
  const missingV = outcome.totals.missing_storage_m3;
  const missingA = outcome.totals.missing_area_m2;
  if (missingV && missingA) {
    for (let k = 0; k < N; k++) {
      withProposed.storage_m3[k]! += missingV[k]!;
      withProposed.inundated_area_m2[k]! += missingA[k]!;
    }
  }
  return { existing, with_proposed: withProposed, added, damVolumeM3: volume, damAreaM2: area, clusters: sc?.clusters.length ?? 0 };
}

/** Bands of a scenario's per-draw figures (keys storage_m3, inundated_area_m2). */
export function scenarioBands(s: ScenarioSeries): Bands {
  const scratch = new Float64Array(s.storage_m3.length);
  return { storage_m3: bandOf(s.storage_m3, scratch), inundated_area_m2: bandOf(s.inundated_area_m2, scratch) };
}
