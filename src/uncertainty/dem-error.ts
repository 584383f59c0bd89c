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
 * Approximations (tested against full re-flooding of perturbed DEMs): the
 * pond whose mean error is taken is the deterministic one; the smearing is
 * the expected one, not drawn; the escape level (spill) is taken from the
 * DEM as it is; for a DEM-visible dam with a measured height, the bed (the
 * downstream toe, within the 3 m probe) is taken to share the bed cell's
 * error.
 */
import { normal, createRng, deriveSeed } from './random.js';
import { supportCovariance, supportGapM, type ErrorSupport } from './covariance.js';

/** Per-dam draws of the reference error and the pond's mean error, m; dam-major (d·draws + k). */
export interface DemErrorDraws {
  refErrorM: Float64Array;
  meanErrorM: Float64Array;
  /** Per dam: the error's standard deviation within its pond, σ_w = √(σ² − Var(ē)), m (0 without a support). */
  withinSdM: Float64Array;
  /** Dams whose errors are drawn jointly (connected within the range), for the record. */
  components: number;
  largestComponent: number;
  /** Negative pivots met in the Cholesky factorisation, set to zero (a positive semi-definite matrix). */
  clippedPivots: number;
}

/**
 * Draws (e_ref, ē) for every dam with a support (null: no DEM error, zeros),
 * jointly Gaussian across dams closer than the range. Each dam's standard
 * normals come from its own stream (seed, 'dem', id), so a dam's draws do
 * not depend on the order of the inventory.
 */
export function drawDemErrors(args: {
  supports: (ErrorSupport | null)[];
  ids: readonly string[];
  draws: number;
  seed: number;
  sigmaM: number;
  rangeM: number;
}): DemErrorDraws {
  const { supports, ids, draws, seed, sigmaM, rangeM } = args;
  const n = supports.length;
  const refErrorM = new Float64Array(n * draws);
  const meanErrorM = new Float64Array(n * draws);
  const withinSdM = new Float64Array(n);
  const sill = sigmaM * sigmaM;
  let components = 0;
  let largest = 0;
  let clipped = 0;
  if (!(sill > 0)) return { refErrorM, meanErrorM, withinSdM, components, largestComponent: largest, clippedPivots: clipped };

  const members = connectedWithin(supports, rangeM);
  for (const comp of members) {
    components++;
    largest = Math.max(largest, comp.length);
    const m = 2 * comp.length;
    // Covariance of [e_ref(0), ē(0), e_ref(1), ē(1), ...], row-major m × m.
    const cov = new Float64Array(m * m);
    for (let p = 0; p < comp.length; p++) {
      for (let q = p; q < comp.length; q++) {
        const a = supports[comp[p]!]!;
        const b = supports[comp[q]!]!;
        // Supports further apart than the range share no error.
        if (p !== q && supportGapM(a, b) >= rangeM) continue;
        const [rr, rp, pr, pp] = supportCovariance(a, b, sill, rangeM, p === q);
        set2(cov, m, 2 * p, 2 * q, rr);
        set2(cov, m, 2 * p, 2 * q + 1, rp);
        set2(cov, m, 2 * p + 1, 2 * q, pr);
        set2(cov, m, 2 * p + 1, 2 * q + 1, pp);
        if (p === q && a.areaM2 > 0) withinSdM[comp[p]!] = Math.sqrt(Math.max(0, sill - pp));
      }
    }
    const chol = cholesky(cov, m);
    clipped += chol.clipped;
    const lower = chol.lower;
    // Standard normals per dam from its own stream: z[(k·m) + 2p + {0,1}].
    const z = new Float64Array(draws * m);
    for (let p = 0; p < comp.length; p++) {
      const rng = createRng(deriveSeed(seed, 'dem-error', ids[comp[p]!]!));
      for (let k = 0; k < draws; k++) {
        z[k * m + 2 * p] = normal(rng);
        z[k * m + 2 * p + 1] = normal(rng);
      }
    }
    for (let k = 0; k < draws; k++) {
      const zk = k * m;
      for (let r = 0; r < m; r++) {
        let s = 0;
        const row = r * m;
        for (let c = 0; c <= r; c++) s += lower[row + c]! * z[zk + c]!;
        const d = comp[r >> 1]!;
        if ((r & 1) === 0) refErrorM[d * draws + k] = s;
        else meanErrorM[d * draws + k] = s;
      }
    }
  }
  return { refErrorM, meanErrorM, withinSdM, components, largestComponent: largest, clippedPivots: clipped };
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
