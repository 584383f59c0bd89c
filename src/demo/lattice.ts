/**
 * Coarse lattices of values spread over a fine grid, row by row: bilinear for
 * smooth fields (the upland envelope), smoothstep-weighted for value noise
 * (the hillslope texture). Column weights are computed once per lattice, so
 * the per-cell work is one interpolation.
 */
import type { Rng } from '../uncertainty/random.js';

/** Values on lattice nodes; node (i, j) sits on grid column i·spacing, row j·spacing. */
export interface Lattice {
  readonly nx: number;
  readonly ny: number;
  /** Node spacing in cells. */
  readonly spacing: number;
  /** Node values, row-major, length nx × ny. */
  readonly values: Float32Array;
}

/** An empty lattice that covers a width × height grid with nodes `spacing` cells apart. */
export function makeLattice(width: number, height: number, spacing: number): Lattice {
  const nx = Math.floor((width - 1) / spacing) + 2;
  const ny = Math.floor((height - 1) / spacing) + 2;
  return { nx, ny, spacing, values: new Float32Array(nx * ny) };
}

/** A lattice of uniform [0, 1) values from `rng`: one octave of value noise. */
export function randomLattice(width: number, height: number, spacing: number, rng: Rng): Lattice {
  const lattice = makeLattice(width, height, spacing);
  const v = lattice.values;
  for (let i = 0; i < v.length; i++) v[i] = rng();
  return lattice;
}

/** Interpolates one lattice onto the rows of a grid `width` cells wide. */
export class LatticeSampler {
  private readonly colIndex: Int32Array;
  private readonly colWeight: Float32Array;
  private readonly rowValues: Float32Array;

  /** `smooth` uses smoothstep weights (value noise); otherwise bilinear. */
  constructor(
    private readonly lattice: Lattice,
    width: number,
    private readonly smooth: boolean,
  ) {
    this.colIndex = new Int32Array(width);
    this.colWeight = new Float32Array(width);
    for (let c = 0; c < width; c++) {
      const g = c / lattice.spacing;
      const i = Math.floor(g);
      this.colIndex[c] = i;
      this.colWeight[c] = weight(g - i, smooth);
    }
    this.rowValues = new Float32Array(lattice.nx);
  }

  /** Adds `scale` × the interpolated lattice along grid row `row` to `out` (length = grid width). */
  addRow(row: number, out: Float32Array, scale: number): void {
    const { nx, spacing, values } = this.lattice;
    const g = row / spacing;
    const j = Math.floor(g);
    const t = weight(g - j, this.smooth);
    const a = j * nx;
    const b = a + nx;
    const rv = this.rowValues;
    for (let i = 0; i < nx; i++) {
      const va = values[a + i]!;
      rv[i] = va + (values[b + i]! - va) * t;
    }
    const ci = this.colIndex;
    const cw = this.colWeight;
    const n = out.length;
    for (let c = 0; c < n; c++) {
      const i = ci[c]!;
      const v0 = rv[i]!;
      out[c] = out[c]! + scale * (v0 + (rv[i + 1]! - v0) * cw[c]!);
    }
  }
}

function weight(t: number, smooth: boolean): number {
  return smooth ? t * t * (3 - 2 * t) : t;
}

/**
 * Adds independent normal errors of standard deviation `sigmaM` to every
 * value. Deviates come from a 65 536-entry table of the standard normal
 * quantile function at the midpoints of equal-probability bins (tails cut
 * beyond about 4.3σ), rescaled to unit variance; each 32-bit draw of `rng`
 * gives two deviates. Exact enough for lidar error, and fast on 25 M cells.
 */
export function addGaussianNoise(values: Float32Array, sigmaM: number, rng: Rng): void {
  const table = normalTable();
  const n = values.length;
  for (let i = 0; i < n; i += 2) {
    const bits = Math.floor(rng() * 4294967296);
    values[i] = values[i]! + sigmaM * table[bits & 0xffff]!;
    if (i + 1 < n) values[i + 1] = values[i + 1]! + sigmaM * table[bits >>> 16]!;
  }
}

let cachedTable: Float32Array | null = null;

/** Standard normal quantiles at p = (i + 0.5) / 65536, scaled to unit variance. */
export function normalTable(): Float32Array {
  if (cachedTable) return cachedTable;
  const size = 65536;
  const table = new Float32Array(size);
  let sumSq = 0;
  for (let i = 0; i < size; i++) {
    const q = normalQuantile((i + 0.5) / size);
    table[i] = q;
    sumSq += q * q;
  }
  const scale = 1 / Math.sqrt(sumSq / size);
  for (let i = 0; i < size; i++) table[i] = table[i]! * scale;
  cachedTable = table;
  return table;
}

/**
 * Inverse of the standard normal distribution function, by P. J. Acklam's
 * rational approximation (relative error below 1.2e-9 on (0, 1)).
 */
export function normalQuantile(p: number): number {
  const pLow = 0.02425;
  if (p < pLow) return tail(Math.sqrt(-2 * Math.log(p)));
  if (p > 1 - pLow) return -tail(Math.sqrt(-2 * Math.log(1 - p)));
  const q = p - 0.5;
  const r = q * q;
  const num = (((((-3.969683028665376e1 * r + 2.209460984245205e2) * r - 2.759285104469687e2) * r + 1.38357751867269e2) * r - 3.066479806614716e1) * r + 2.506628277459239) * q;
  const den = ((((-5.447609879822406e1 * r + 1.615858368580409e2) * r - 1.556989798598866e2) * r + 6.680131188771972e1) * r - 1.328068155288572e1) * r + 1;
  return num / den;
}

function tail(q: number): number {
  const num = ((((-7.784894002430293e-3 * q - 3.223964580411365e-1) * q - 2.400758277161838) * q - 2.549732539343734) * q + 4.374664141464968) * q + 2.938163982698783;
  const den = (((7.784695709041462e-3 * q + 3.224671290700398e-1) * q + 2.445134137142996) * q + 3.754408661907416) * q + 1;
  return num / den;
}
