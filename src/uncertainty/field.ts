/**
 * Exact simulation of a stationary Gaussian error field with a spherical
 * covariance on a grid, by circulant embedding (Dietrich & Newsam 1997,
 * "Fast and exact simulation of stationary Gaussian processes through
 * circulant embedding of the covariance matrix", SIAM J. Sci. Comput. 18(4);
 * Wood & Chan 1994).
 *
 * The grid is embedded in a torus at least one range larger on each side
 * (powers of two); the covariance on the torus is circulant, its eigenvalues
 * are the FFT of its first row, and F·√(λ/N)·(a + ib) with independent
 * standard normals a, b gives two independent fields (real and imaginary
 * parts) whose covariance on the original grid is exactly the model's,
 * provided no eigenvalue is negative. Negative eigenvalues (rare for the
 * spherical model once the torus exceeds the grid by the range) are set to
 * zero and reported.
 *
 * This is the reference the fast path is tested against (a full re-flood of
 * DEMs perturbed by such fields), and a tool for error studies on small
 * windows; the draws of a run do not need it.
 */
import { fft2, nextPowerOfTwo } from './fft.js';
import { sphericalCovariance } from './covariance.js';
import { normal, type Rng } from './random.js';

/** A prepared simulator for one grid size, cell size and spherical model. */
export interface FieldSimulator {
  rows: number;
  cols: number;
  /** Torus size (powers of two). */
  torusRows: number;
  torusCols: number;
  /** √(λ/N) per torus frequency. */
  amplitude: Float64Array;
  /** Share of the eigenvalue mass that was negative and set to zero. */
  negativeShare: number;
}

/** Prepares a simulator for rows × cols cells of cellWM × cellHM metres, sill σ² (m²), range L (m). */
export function createFieldSimulator(args: { rows: number; cols: number; cellWM: number; cellHM: number; sillM2: number; rangeM: number }): FieldSimulator {
  const { rows, cols, cellWM, cellHM, sillM2, rangeM } = args;
  const torusRows = nextPowerOfTwo(rows + Math.ceil(rangeM / cellHM) + 1);
  const torusCols = nextPowerOfTwo(cols + Math.ceil(rangeM / cellWM) + 1);
  const n = torusRows * torusCols;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let r = 0; r < torusRows; r++) {
    const dy = Math.min(r, torusRows - r) * cellHM;
    for (let c = 0; c < torusCols; c++) {
      const dx = Math.min(c, torusCols - c) * cellWM;
      re[r * torusCols + c] = sphericalCovariance(Math.sqrt(dx * dx + dy * dy), sillM2, rangeM);
    }
  }
  fft2(re, im, torusRows, torusCols);
  const amplitude = new Float64Array(n);
  let negative = 0;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const lambda = re[i]!;
    total += Math.abs(lambda);
    if (lambda < 0) negative -= lambda;
    amplitude[i] = lambda > 0 ? Math.sqrt(lambda / n) : 0;
  }
  return { rows, cols, torusRows, torusCols, amplitude, negativeShare: total > 0 ? negative / total : 0 };
}

/** Two independent fields (rows × cols, row-major, metres) from one FFT. */
export function simulateFieldPair(sim: FieldSimulator, rng: Rng): [Float64Array, Float64Array] {
  const { rows, cols, torusRows, torusCols, amplitude } = sim;
  const n = torusRows * torusCols;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = amplitude[i]!;
    re[i] = a * normal(rng);
    im[i] = a * normal(rng);
  }
  fft2(re, im, torusRows, torusCols);
  const u = new Float64Array(rows * cols);
  const v = new Float64Array(rows * cols);
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      u[r * cols + c] = re[r * torusCols + c]!;
      v[r * cols + c] = im[r * torusCols + c]!;
    }
  }
  return [u, v];
}
