/**
 * DEM vertical error in the draws, without re-flooding.
 *
 * Let the DEM be z = g + e (true ground g, error e). A dam's water level is
 * set from the DEM at its reference cell (bed + height, or the crest's
 * lowest DEM point), so the true level is W = h − e_ref for a DEM level h.
 * The true depth over a pond cell is W − g = (h − e_ref + e) − z, and the
 * stored volume Σa·(W − g) = Σa·(h − z) + A·(ē − e_ref): the pond on the DEM
 * at the shifted level h + (ē − e_ref), to first order in the error's
 * variation within the pond. The draws therefore need, per dam, only two
 * numbers: e_ref and the pond's area-mean error ē, jointly Gaussian with
 * the covariances of covariance.ts (across dams too: nearby ponds share
 * error). Each draw evaluates the dam's fill at the shifted level (a binary
 * search), never a new flood.
 *
 * A constant bias b (e = b everywhere) gives ē − e_ref = 0: it cancels for
 * every dam pondage estimates, because the crest level always comes from
 * the same DEM (bed + height, or the crest's DEM elevation). It would not
 * cancel for a crest elevation surveyed independently in an absolute datum,
 * which pondage does not take as input; there a bias b changes the volume
 * by −A·b.
 *
 * The error's variation within the pond, e − ē, does not average out at the
 * shore: a cell's water max(0, d − e′) gains on average where it is shallow
 * (Jensen's inequality). Summed over cells, the expected pond is the pond
 * with its level smeared by N(0, σ_w²), σ_w² = σ² − Var(ē) the mean
 * within-pond variance: the draws read the fill at five Gauss–Hermite
 * levels around the shifted one (Abramowitz & Stegun 1964, 25.4.46) instead
 * of one.
 *
 * The lowest cell is itself a choice the error can change. The crest
 * elevation hangs on the lowest of a set of cells (the crest's cells, or the
 * downstream probe's for a DEM-visible dam whose height is given): cells
 * nearly as low as the reference (within four standard deviations of the
 * error difference, prepare.ts referenceAlternatives) are drawn given its
 * error (they lie a few metres from it), and
 * the lowest of them on the true ground sets the crest: the effective
 * reference error is max(e_ref, max_j(e_j − Δz_j)). Two equally low crest
 * cells, common in a channel, lower the crest on average by about
 * sd(e_1 − e_2)/√(2π) (the mean of a minimum of two Gaussians).
 *
 * Water that escapes below the crest (round its end, off the reach box,
 * into NoData) leaves at the level of the pass, the highest cell of its way
 * out, and the true ground moves that pass with its own error. The lowest
 * ways out are found by closing each pass with a wall and flooding again
 * (prepare.ts escapeRoutes); on the true ground the lowest of them sets the
 * escape: the level is min(crest + ē − e_ref, escape + ē − e_pass) with the
 * passes' effective error likewise a maximum. The fill with those passes
 * closed answers for levels above the DEM's escape; above the last one
 * found, the pond deepens over its area (stage-storage.ts pondAtExtended).
 * Along a way out the error can also raise or lower other cells than its
 * pass, so that the way out's highest point moves: where the ground round
 * the ways out (the rim) is kept, which is the rule (escape-rim.ts), the
 * draws flood the rim again on the true ground instead and take the pond's
 * volume from it; the passes' model above stays for a pond whose rim was
 * too large to keep.
 *
 * Approximations, each tested against full re-flooding of perturbed DEMs
 * (tests/uncertainty-dem.test.ts): the pond whose mean error is taken is the
 * deterministic one; the smearing is the expected one, not drawn; the
 * upstream side and crest cells are those of the DEM as it is, and so is
 * the DEM visibility of a dam, except that a measured dam near the rule's
 * threshold has it drawn again from two cells' errors (prepare.ts
 * VisibilityFlip: within 5 % of re-flooding at p50 and p95 on a fixture,
 * the low tail a quarter short). Measured on the reference valley (σ = 0.1 m, range 20 m): ponds held
 * by their crest within 1 % of re-flooding at p05, p50 and p95. Ponds
 * spilling round short crests, whose bands span a factor of 4 to 5, get
 * re-flooding's pond from their rim given the same field (within 0.1 %),
 * and the engine's own draws of the rim's error land within re-flooding's
 * percentile intervals; with the passes' model alone they were within 14 %
 * (along an uphill channel to the DEM's edge the error raises the way out
 * more than its pass shows).
 */
import { normal, createRng, deriveSeed } from './random.js';
import { alternativeCovariance, supportCovarianceBlock, supportGapM, supportSize, type ErrorSupport } from './covariance.js';

/** Per-dam draws of the reference error, the pond's mean error and the pass's error, m; dam-major (d·draws + k). */
export interface DemErrorDraws {
  /**
   * The reference's effective error: the crest elevation in the draw is the
   * deterministic one minus this. max(e_ref, max_j(e_j − Δz_j)) over the
   * alternatives j (cells Δz_j above the reference among those the crest is
   * measured from): the lowest of them on the true ground sets the crest.
   */
  refErrorM: Float64Array;
  meanErrorM: Float64Array;
  /**
   * The passes' effective error: the escape level in the draw is the
   * deterministic one minus this. max_j(e_j − Δ_j) over the passes j
   * (escape levels Δ_j above the lowest): the lowest way out on the true
   * ground sets it. 0 without a pass.
   */
  passErrorM: Float64Array;
  /** Per dam: the error's standard deviation within its pond, σ_w = √(σ² − Var(ē)), m (0 without a support). */
  withinSdM: Float64Array;
  /** Dams whose errors are drawn jointly (connected within the range), for the record. */
  components: number;
  largestComponent: number;
  /** Negative pivots met in the Cholesky factorisation, set to zero (a positive semi-definite matrix). */
  clippedPivots: number;
  /** For the dams asked for (keepJoint): their jointly drawn errors [e_ref, ē, passes...] per draw, draw-major (k·size + r), m; null for the others. */
  jointM: (Float64Array | null)[];
}

/**
 * Draws the errors of every dam with a support (null: no DEM error, zeros):
 * per dam its reference, its pond's mean and its passes (supportSize), all
 * jointly Gaussian across dams closer than the range, then its reference's
 * alternatives given the reference's error; reduced to the three numbers
 * of DemErrorDraws. Each dam's standard normals come from its own
 * stream (seed, 'dem-error', id), so a dam's draws do not depend on the
 * order of the inventory.
 */
export function drawDemErrors(args: {
  supports: (ErrorSupport | null)[];
  ids: readonly string[];
  draws: number;
  seed: number;
  sigmaM: number;
  rangeM: number;
  /** Dams whose jointly drawn errors are kept (escape-rim.ts floods their rims with them). Default none. */
  keepJoint?: readonly boolean[];
}): DemErrorDraws {
  const { supports, ids, draws, seed, sigmaM, rangeM } = args;
  const n = supports.length;
  const jointM: (Float64Array | null)[] = supports.map((sup, d) => (sup && args.keepJoint?.[d] && sigmaM > 0 ? new Float64Array(draws * supportSize(sup)) : null));
  const refErrorM = new Float64Array(n * draws);
  const meanErrorM = new Float64Array(n * draws);
  const passErrorM = new Float64Array(n * draws);
  const withinSdM = new Float64Array(n);
  const sill = sigmaM * sigmaM;
  let components = 0;
  let largest = 0;
  let clipped = 0;
  if (!(sill > 0)) return { refErrorM, meanErrorM, passErrorM, withinSdM, components, largestComponent: largest, clippedPivots: clipped, jointM };

  const members = connectedWithin(supports, rangeM);
  for (const comp of members) {
    components++;
    largest = Math.max(largest, comp.length);
    // Each member's first row in the component's vector of errors.
    const start = new Int32Array(comp.length + 1);
    for (let p = 0; p < comp.length; p++) start[p + 1] = start[p]! + supportSize(supports[comp[p]!]!);
    const m = start[comp.length]!;
    // Covariance of every member's [e_ref, ē, points...], row-major m × m.
    const cov = new Float64Array(m * m);
    for (let p = 0; p < comp.length; p++) {
      for (let q = p; q < comp.length; q++) {
        const a = supports[comp[p]!]!;
        const b = supports[comp[q]!]!;
        // Supports further apart than the range share no error.
        if (p !== q && supportGapM(a, b) >= rangeM) continue;
        const block = supportCovarianceBlock(a, b, sill, rangeM, p === q);
        const na = start[p + 1]! - start[p]!;
        const nb = start[q + 1]! - start[q]!;
        for (let r = 0; r < na; r++) for (let c = 0; c < nb; c++) set2(cov, m, start[p]! + r, start[q]! + c, block[r * nb + c]!);
        if (p === q && a.areaM2 > 0) withinSdM[comp[p]!] = Math.sqrt(Math.max(0, sill - block[nb + 1]!));
      }
    }
    const chol = cholesky(cov, m);
    clipped += chol.clipped;
    const lower = chol.lower;
    // Standard normals per dam from its own stream: draw k's row holds each member's normals at its start.
    const z = new Float64Array(draws * m);
    for (let p = 0; p < comp.length; p++) {
      const rng = createRng(deriveSeed(seed, 'dem-error', ids[comp[p]!]!));
      const size = start[p + 1]! - start[p]!;
      for (let k = 0; k < draws; k++) for (let r = 0; r < size; r++) z[k * m + start[p]! + r] = normal(rng);
    }
    const e = new Float64Array(m);
    for (let k = 0; k < draws; k++) {
      const zk = k * m;
      for (let r = 0; r < m; r++) {
        let s = 0;
        const row = r * m;
        for (let c = 0; c <= r; c++) s += lower[row + c]! * z[zk + c]!;
        e[r] = s;
      }
      for (let p = 0; p < comp.length; p++) {
        const d = comp[p]!;
        const sup = supports[d]!;
        const o = start[p]!;
        refErrorM[d * draws + k] = e[o]!;
        meanErrorM[d * draws + k] = e[o + 1]!;
        passErrorM[d * draws + k] = passError(sup, e, o);
        const joint = jointM[d];
        if (joint) {
          const size = start[p + 1]! - o;
          for (let r = 0; r < size; r++) joint[k * size + r] = e[o + r]!;
        }
      }
    }
  }
  // The alternatives to each reference, given its error: the effective reference error.
  supports.forEach((sup, d) => {
    if (!sup || sup.altDeltaM.length === 0) return;
    const { gain, lower } = alternativesGivenReference(sup, sill, rangeM);
    const n = sup.altDeltaM.length;
    const rng = createRng(deriveSeed(seed, 'dem-error-alternatives', ids[d]!));
    const z = new Float64Array(n);
    const alt = new Float64Array(n);
    for (let k = 0; k < draws; k++) {
      const eRef = refErrorM[d * draws + k]!;
      for (let a = 0; a < n; a++) z[a] = normal(rng);
      for (let a = 0; a < n; a++) {
        let r = 0;
        for (let b = 0; b <= a; b++) r += lower[a * n + b]! * z[b]!;
        alt[a] = gain[a]! * eRef + r;
      }
      refErrorM[d * draws + k] = referenceError(sup, eRef, alt);
    }
  });
  return { refErrorM, meanErrorM, passErrorM, withinSdM, components, largestComponent: largest, clippedPivots: clipped, jointM };
}

/**
 * The reference's effective error (m) from its own error and its
 * alternatives' (one per alternative): max(e_ref, max_j(e_j − Δz_j)).
 */
export function referenceError(s: ErrorSupport, eRefM: number, altErrorsM: ArrayLike<number>): number {
  let ref = eRefM;
  for (let j = 0; j < s.altDeltaM.length; j++) ref = Math.max(ref, altErrorsM[j]! - s.altDeltaM[j]!);
  return ref;
}

/**
 * The alternatives' errors given the reference's, e_alt = gain·e_ref + L·z
 * (z standard normal): the Gaussian conditional on the reference alone.
 * The alternatives lie a few metres from the reference, so what they share
 * with the pond and with other dams passes through it.
 */
export function alternativesGivenReference(s: ErrorSupport, sillM2: number, rangeM: number): { gain: Float64Array; lower: Float64Array } {
  const { withRef, among } = alternativeCovariance(s, sillM2, rangeM);
  const n = withRef.length;
  const gain = new Float64Array(n);
  for (let a = 0; a < n; a++) gain[a] = withRef[a]! / sillM2;
  const cond = new Float64Array(n * n);
  for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) cond[a * n + b] = among[a * n + b]! - (withRef[a]! * withRef[b]!) / sillM2;
  return { gain, lower: cholesky(cond, n).lower };
}

/** The passes' effective error (m) from one dam's jointly drawn errors `e[o..]` = [e_ref, ē, passes...]: max_j(e_j − Δ_j); 0 without a pass. */
export function passError(s: ErrorSupport, e: ArrayLike<number>, o: number): number {
  const first = o + 2;
  if (s.passDeltaM.length === 0) return 0;
  let pass = -Infinity;
  for (let j = 0; j < s.passDeltaM.length; j++) pass = Math.max(pass, e[first + j]! - s.passDeltaM[j]!);
  // Points that are no way out (Δ = ∞, prepare.ts VisibilityFlip) leave no pass.
  return pass === -Infinity ? 0 : pass;
}

/**
 * A dam's level on the DEM in a draw (m): the crest held at its drawn
 * elevation `crestM` or the water let out at its escape level `escapeM`
 * (Infinity: none), whichever is lower, each moved by its own error and
 * raised by the pond's mean error (the frame of the file comment).
 */
export function drawnLevelM(crestM: number, escapeM: number, refErrorM: number, meanErrorM: number, passErrorM: number): number {
  const held = crestM + (meanErrorM - refErrorM);
  const escaped = escapeM + (meanErrorM - passErrorM);
  return escaped < held ? escaped : held;
}

/** Gauss–Hermite nodes and weights / √π for E[f(u)], u ~ N(0, s²) ≈ Σ wⱼ·f(√2·s·xⱼ) (five points; Abramowitz & Stegun 1964, 25.4.46). */
export const HERMITE_5: { x: readonly number[]; w: readonly number[] } = {
  x: [0, 0.958572464613819, -0.958572464613819, 2.020182870456086, -2.020182870456086],
  w: [0.945308720482942 / Math.sqrt(Math.PI), 0.393619323152241 / Math.sqrt(Math.PI), 0.393619323152241 / Math.sqrt(Math.PI), 0.0199532420590459 / Math.sqrt(Math.PI), 0.0199532420590459 / Math.sqrt(Math.PI)],
};

function set2(a: Float64Array, m: number, r: number, c: number, v: number): void {
  a[r * m + c] = v;
  a[c * m + r] = v;
}

/** Groups dams whose supports come within the range of each other (union-find over a sweep by column). */
function connectedWithin(supports: (ErrorSupport | null)[], rangeM: number): number[][] {
  const idx: number[] = [];
  supports.forEach((s, d) => {
    if (s) idx.push(d);
  });
  const parent = new Int32Array(supports.length).map((_, i) => i);
  const find = (i: number): number => {
    let r = i;
    while (parent[r]! !== r) r = parent[r]!;
    while (parent[i]! !== r) {
      const next = parent[i]!;
      parent[i] = r;
      i = next;
    }
    return r;
  };
  idx.sort((a, b) => supports[a]!.col0 - supports[b]!.col0);
  for (let x = 0; x < idx.length; x++) {
    const a = supports[idx[x]!]!;
    const reachCols = rangeM / a.cellWM + 1;
    for (let y = x + 1; y < idx.length; y++) {
      const b = supports[idx[y]!]!;
      if (b.col0 - a.col1 > reachCols) break;
      if (supportGapM(a, b) < rangeM) {
        const ra = find(idx[x]!);
        const rb = find(idx[y]!);
        if (ra !== rb) parent[Math.max(ra, rb)] = Math.min(ra, rb);
      }
    }
  }
  const groups = new Map<number, number[]>();
  for (const d of idx.sort((a, b) => a - b)) {
    const r = find(d);
    const g = groups.get(r);
    if (g) g.push(d);
    else groups.set(r, [d]);
  }
  return [...groups.values()];
}

/**
 * Lower Cholesky factor of a symmetric positive semi-definite m × m matrix
 * (row-major). Pivots below a tiny fraction of the diagonal's scale are set
 * to zero with their column (the matrix is singular there: e.g. a dry pond
 * whose mean error is its reference error); they are counted.
 */
export function cholesky(a: Float64Array, m: number): { lower: Float64Array; clipped: number } {
  const lower = new Float64Array(m * m);
  let scale = 0;
  for (let i = 0; i < m; i++) scale = Math.max(scale, a[i * m + i]!);
  const tiny = scale * 1e-12;
  let clipped = 0;
  for (let j = 0; j < m; j++) {
    let d = a[j * m + j]!;
    for (let k = 0; k < j; k++) d -= lower[j * m + k]! * lower[j * m + k]!;
    if (d <= tiny) {
      if (d < -tiny) clipped++;
      continue; // column j stays zero
    }
    const ljj = Math.sqrt(d);
    lower[j * m + j] = ljj;
    for (let i = j + 1; i < m; i++) {
      let s = a[i * m + j]!;
      for (let k = 0; k < j; k++) s -= lower[i * m + k]! * lower[j * m + k]!;
      lower[i * m + j] = s / ljj;
    }
  }
  return { lower, clipped };
}
