/**
 * The DEM error model: FFT, the simulated correlated field against its
 * variogram, and the area-averaged error of a pond against Rolstad, Haug &
 * Denby (2009).
 */
import { describe, expect, it } from 'vitest';
import { areaAverageFactor, buildSupport, sphericalSemivariogram, supportCovariance } from '../src/uncertainty/covariance.js';
import { fft, fft2 } from '../src/uncertainty/fft.js';
import { createFieldSimulator, simulateFieldPair } from '../src/uncertainty/field.js';
import { createRng } from '../src/uncertainty/random.js';

describe('FFT', () => {
  it('equals the discrete Fourier transform by its definition, X[k] = Σ x[n]·e^(−2πikn/N)', () => {
    const rng = createRng(3);
    const n = 64;
    const re = Float64Array.from({ length: n }, () => rng() - 0.5);
    const im = Float64Array.from({ length: n }, () => rng() - 0.5);
    const r0 = re.slice();
    const i0 = im.slice();
    fft(re, im);
    for (let k = 0; k < n; k++) {
      let sr = 0;
      let si = 0;
      for (let t = 0; t < n; t++) {
        const a = (-2 * Math.PI * k * t) / n;
        sr += r0[t]! * Math.cos(a) - i0[t]! * Math.sin(a);
        si += r0[t]! * Math.sin(a) + i0[t]! * Math.cos(a);
      }
      expect(re[k]).toBeCloseTo(sr, 10);
      expect(im[k]).toBeCloseTo(si, 10);
    }
  });

  it('2-D: a unit impulse transforms to all ones; a constant to one spike of N', () => {
    const rows = 8;
    const cols = 16;
    const re = new Float64Array(rows * cols);
    const im = new Float64Array(rows * cols);
    re[0] = 1;
    fft2(re, im, rows, cols);
    for (let i = 0; i < re.length; i++) {
      expect(re[i]).toBeCloseTo(1, 12);
      expect(im[i]).toBeCloseTo(0, 12);
    }
    const c = new Float64Array(rows * cols).fill(1);
    const ci = new Float64Array(rows * cols);
    fft2(c, ci, rows, cols);
    expect(c[0]).toBeCloseTo(rows * cols, 9);
    for (let i = 1; i < c.length; i++) expect(Math.abs(c[i]!)).toBeLessThan(1e-9);
  });
});

describe('simulated DEM error field (circulant embedding)', () => {
  // Spherical model (Journel & Huijbregts 1978): γ(h) = σ²(1.5h/L − 0.5h³/L³) for h < L, σ² beyond.
  const sigma = 0.1;
  const rangeCells = 12;
  const size = 160;

  it('has the model\'s sill and range: empirical semivariogram along rows and columns within 6 %', () => {
    const sim = createFieldSimulator({ rows: size, cols: size, cellWM: 1, cellHM: 1, sillM2: sigma * sigma, rangeM: rangeCells });
    expect(sim.negativeShare).toBeLessThan(1e-3);
    const rng = createRng(20240601);
    const lags = [1, 3, 6, 9, 12, 18, 24];
    const sum = new Float64Array(lags.length);
    const count = new Float64Array(lags.length);
    for (let rep = 0; rep < 20; rep++) {
      for (const f of simulateFieldPair(sim, rng)) {
        lags.forEach((h, j) => {
          for (let r = 0; r < size; r++) {
            for (let c = 0; c + h < size; c++) {
              const a = f[r * size + c]!;
              const dRow = a - f[r * size + c + h]!;
              const dCol = f[c * size + r]! - f[(c + h) * size + r]!;
              sum[j]! += 0.5 * (dRow * dRow + dCol * dCol);
              count[j]! += 2;
            }
          }
        });
      }
    }
    lags.forEach((h, j) => {
      const gamma = sum[j]! / count[j]!;
      const model = sphericalSemivariogram(h, sigma * sigma, rangeCells);
      expect(Math.abs(gamma / model - 1)).toBeLessThan(0.06);
    });
    // Range: beyond L the semivariogram is flat at the sill (σ² = 0.01 m²).
    const beyond = lags.map((h, j) => ({ h, g: sum[j]! / count[j]! })).filter((x) => x.h >= rangeCells);
    for (const b of beyond) expect(Math.abs(b.g / (sigma * sigma) - 1)).toBeLessThan(0.06);
  });

  it('gives a disc\'s mean error the variance σ²·πL²/(5A) for A ≫ πL² (Rolstad, Haug & Denby 2009), r = 10 L', () => {
    // L = 4 cells, disc radius 40 cells: A = 100·πL². Discs 2r + L apart are independent (spherical covariance is 0 beyond L).
    const L = 4;
    const r = 40;
    const step = 2 * r + L + 1;
    const per = 3;
    const n = per * step;
    const sim = createFieldSimulator({ rows: n, cols: n, cellWM: 1, cellHM: 1, sillM2: sigma * sigma, rangeM: L });
    const rng = createRng(77);
    // Cells of one disc, as offsets from its centre cell.
    const offsets: number[] = [];
    for (let dy = -r; dy <= r; dy++) for (let dx = -r; dx <= r; dx++) if ((dx + 0.5) ** 2 + (dy + 0.5) ** 2 <= r * r) offsets.push(dy * n + dx);
    const area = offsets.length;
    let s2 = 0;
    let m = 0;
    for (let rep = 0; rep < 70; rep++) {
      for (const f of simulateFieldPair(sim, rng)) {
        for (let by = 0; by < per; by++) {
          for (let bx = 0; bx < per; bx++) {
            const centre = (by * step + r + 1) * n + (bx * step + r + 1);
            let s = 0;
            for (const o of offsets) s += f[centre + o]!;
            const mean = s / area;
            s2 += mean * mean;
            m++;
          }
        }
      }
    }
    const variance = s2 / m; // the field's mean is known to be 0
    const rolstad = (sigma * sigma * Math.PI * L * L) / (5 * area);
    // Sampling error of a variance from m = 1260 independent discs: √(2/m) ≈ 4 %; the
    // disc's edge lowers the exact value by about 0.27·L/r ≈ 3 % (derived in covariance.ts terms).
    expect(Math.abs(variance / rolstad - 1)).toBeLessThan(0.12);
    expect(Math.abs(areaAverageFactor(area, L) - (Math.PI * L * L) / (5 * area))).toBeLessThan(1e-15);
  });
});

describe('pond supports (the draws\' covariance of a pond\'s mean error)', () => {
  const sill = 0.01;
  function squareSupport(cells: number[], width: number, refCell: number, blockM: number): ReturnType<typeof buildSupport> {
    return buildSupport({
      cells: Int32Array.from(cells),
      width,
      colOffset: 0,
      rowOffset: 0,
      cellAreaM2: new Float64Array(width).fill(1),
      refCell,
      cellWM: 1,
      cellHM: 1,
      blockM,
    });
  }

  it('a disc of r = 10 L on 1 m cells gives Var(ē) within 5 % of σ²·πL²/(5A) (Rolstad et al. 2009)', () => {
    const L = 20;
    const r = 200;
    const width = 2 * r + 3;
    const cells: number[] = [];
    for (let row = 0; row < width; row++) {
      for (let col = 0; col < width; col++) if ((col - r - 1) ** 2 + (row - r - 1) ** 2 <= r * r) cells.push(row * width + col);
    }
    const support = squareSupport(cells, width, (r + 1) * width + r + 1, L / 4);
    const [rr, , , pp] = supportCovariance(support, support, sill, L, true);
    expect(rr).toBe(sill);
    const rolstad = (sill * Math.PI * L * L) / (5 * cells.length);
    // The exact value sits about 0.27·L/r ≈ 3 % below the formula (the disc's edge).
    expect(Math.abs(pp / rolstad - 1)).toBeLessThan(0.05);
  });

  it('on an irregular pond smaller than the range, blocks match the exact double sums over cells within 3 %', () => {
    // Exact: Var(ē) = (1/n²)ΣΣ C(dᵢⱼ), Cov(e_ref, ē) = (1/n)Σ C(dᵢ,ref) over the cells (definition of the variance of a mean).
    const L = 50;
    const width = 60;
    const rng = createRng(5);
    const cells: number[] = [];
    for (let row = 0; row < 40; row++) {
      const half = 6 + 10 * Math.sin((row / 40) * Math.PI) + 2 * rng();
      for (let col = 0; col < width; col++) if (Math.abs(col - 30 - 0.2 * row) <= half) cells.push(row * width + col);
    }
    const ref = 30;
    const support = squareSupport(cells, width, ref, L / 4);
    const [rr, rp, , pp] = supportCovariance(support, support, sill, L, true);
    let exactPP = 0;
    let exactRP = 0;
    const xy = cells.map((i) => [i % width, Math.floor(i / width)] as const);
    for (const [x1, y1] of xy) {
      exactRP += sphericalCovarianceAt(Math.hypot(x1 - (ref % width), y1), sill, L);
      for (const [x2, y2] of xy) exactPP += sphericalCovarianceAt(Math.hypot(x1 - x2, y1 - y2), sill, L);
    }
    exactPP /= cells.length * cells.length;
    exactRP /= cells.length;
    expect(rr).toBe(sill);
    expect(Math.abs(pp / exactPP - 1)).toBeLessThan(0.03);
    expect(Math.abs(rp / exactRP - 1)).toBeLessThan(0.03);
    // And the level shift's variance, Var(ē − e_ref) = σ² + Var(ē) − 2·Cov: well under 2σ², over 0.
    const exactDelta = sill + exactPP - 2 * exactRP;
    expect(Math.abs(rr + pp - 2 * rp - exactDelta)).toBeLessThan(0.03 * exactDelta + 1e-6);
  });
});

function sphericalCovarianceAt(h: number, sill: number, range: number): number {
  return sill - sphericalSemivariogram(h, sill, range);
}
