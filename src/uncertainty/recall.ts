/**
 * Inventory completeness (`--recall R`): dams the inventory missed.
 *
 * Model: each real dam is in the inventory with probability R (its recall,
 * e.g. from a detector's validation), independently. Given n dams found in a
 * group, the number missed M then follows a negative binomial: the failures
 * before the n-th success, P(M = m) = C(n + m − 1, m)·Rⁿ·(1 − R)ᵐ, mean
 * n(1 − R)/R; that is the posterior of N − n under a scale-invariant prior
 * on the number N of real dams (P(N) ∝ 1/N; derived here). R itself is
 * drawn per draw from a Beta with the given mean and standard deviation
 * (moments matched), shared by every group of the draw.
 *
 * Each missing dam is represented by an observed dam drawn at random from
 * the same group (the watershed when watersheds are known, else the whole
 * inventory), with that dam's storage and area in the same draw, so the
 * missing water carries the draw's other errors. Missing dams belong to no
 * dam row: their water is reported as `missing_storage_m3` in the totals'
 * bands. Off by default; stated as an assumption when on.
 */
import { beta, createRng, deriveSeed, type Rng } from './random.js';

/** Beta parameters with mean μ and standard deviation s (requires 0 < s² < μ(1 − μ)). */
export function betaFromMoments(mean: number, sd: number): { a: number; b: number } {
  const v = sd * sd;
  const common = (mean * (1 - mean)) / v - 1;
  if (!(mean > 0 && mean < 1) || !(common > 0)) throw new Error(`no Beta distribution has mean ${mean} and sd ${sd}`);
  return { a: mean * common, b: (1 - mean) * common };
}

/** Number of failures before the n-th success with success probability r (sum of n geometric counts). */
export function negativeBinomial(rng: Rng, n: number, r: number): number {
  if (n <= 0 || r >= 1) return 0;
  const logQ = Math.log1p(-r);
  let m = 0;
  for (let k = 0; k < n; k++) {
    let u = rng();
    while (u <= 0) u = rng();
    m += Math.floor(Math.log(u) / logQ);
  }
  return m;
}

/** Per-draw missing dams and their water. */
export interface MissingDraws {
  dams: Float64Array;
  storageM3: Float64Array;
  areaM2: Float64Array;
  /** Recall drawn for each draw. */
  recall: Float64Array;
}

/**
 * Missing dams per draw. `included[d·draws + k]` says whether dam d counts in
 * draw k (only those are found dams and can be resampled); `groupOf[d]` is
 * its group (−1: none); volumes and areas are the dams' per-draw figures.
 */
export function drawMissing(args: {
  draws: number;
  seed: number;
  recall: number;
  recallSd: number;
  included: Uint8Array;
  groupOf: Int32Array;
  groupKeys: readonly string[];
  volumeM3: Float64Array;
  areaM2: Float64Array;
}): MissingDraws {
  const { draws, seed, recall, recallSd, included, groupOf, groupKeys, volumeM3, areaM2 } = args;
  const damCount = groupOf.length;
  const out: MissingDraws = {
    dams: new Float64Array(draws),
    storageM3: new Float64Array(draws),
    areaM2: new Float64Array(draws),
    recall: new Float64Array(draws),
  };
  const recallRng = createRng(deriveSeed(seed, 'recall', 'share'));
  const shape = recallSd > 0 && recall < 1 ? betaFromMoments(recall, recallSd) : null;
  for (let k = 0; k < draws; k++) out.recall[k] = shape ? beta(recallRng, shape.a, shape.b) : recall;

  const members: number[][] = groupKeys.map(() => []);
  for (let d = 0; d < damCount; d++) {
    const g = groupOf[d]!;
    if (g >= 0) members[g]!.push(d);
  }
  const found = new Int32Array(damCount);
  groupKeys.forEach((key, g) => {
    const rng = createRng(deriveSeed(seed, 'recall', key));
    const list = members[g]!;
    for (let k = 0; k < draws; k++) {
      let n = 0;
      for (const d of list) if (included[d * draws + k] === 1) found[n++] = d;
      const m = negativeBinomial(rng, n, out.recall[k]!);
      let volume = 0;
      let area = 0;
      for (let j = 0; j < m; j++) {
        const d = found[Math.floor(rng() * n)]!;
        volume += volumeM3[d * draws + k]!;
        area += areaM2[d * draws + k]!;
      }
      out.dams[k]! += m;
      out.storageM3[k]! += volume;
      out.areaM2[k]! += area;
    }
  });
  return out;
}
