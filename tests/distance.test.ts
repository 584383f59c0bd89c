import { describe, expect, it } from 'vitest';
import { distanceTransform, NearestSeedSweep, type DistanceGeometry } from '../src/grid/distance.js';
import { createRng } from '../src/uncertainty/random.js';

function geometry(width: number, height: number, wM: number, hM: number): DistanceGeometry {
  return { width, height, cellWidthM: new Float64Array(height).fill(wM), cellHeightM: hM };
}

/** Independent reference: the minimum over all seeds of the Euclidean distance between cell centres. */
function bruteForce(g: DistanceGeometry, seeds: Uint8Array): Float64Array {
  const out = new Float64Array(g.width * g.height).fill(Infinity);
  for (let r = 0; r < g.height; r++) {
    for (let c = 0; c < g.width; c++) {
      const w = g.cellWidthM[r] ?? 0;
      let best = Infinity;
      for (let sr = 0; sr < g.height; sr++) {
        for (let sc = 0; sc < g.width; sc++) {
          if (seeds[sr * g.width + sc] === 0) continue;
          const d = Math.hypot((c - sc) * w, (r - sr) * g.cellHeightM);
          if (d < best) best = d;
        }
      }
      out[r * g.width + c] = best;
    }
  }
  return out;
}

describe('distanceTransform', () => {
  it('gives 5 at (3,4) from a seed at (0,0) (the 3-4-5 right triangle, Pythagoras)', () => {
    const g = geometry(6, 6, 1, 1);
    const seeds = new Uint8Array(36);
    seeds[0] = 1;
    const { distanceM, nearest } = distanceTransform(g, seeds);
    expect(distanceM[4 * 6 + 3]).toBe(5); // row 4, col 3
    expect(distanceM[3 * 6 + 4]).toBe(5);
    expect(nearest[4 * 6 + 3]).toBe(0);
  });

  it('scales each axis by its own cell size (3 m × 4 m cells: one cell east and one north is 5 m)', () => {
    const g = geometry(3, 3, 3, 4);
    const seeds = new Uint8Array(9);
    seeds[4] = 1; // centre
    const { distanceM } = distanceTransform(g, seeds);
    expect(distanceM[0]).toBeCloseTo(5, 6);
    expect(distanceM[1]).toBeCloseTo(4, 6);
    expect(distanceM[3]).toBeCloseTo(3, 6);
  });

  it('equals brute force on seeded random masks, square and anisotropic cells', () => {
    const rng = createRng(20240611);
    for (let trial = 0; trial < 24; trial++) {
      const width = 5 + Math.floor(rng() * 30);
      const height = 5 + Math.floor(rng() * 30);
      const wM = trial % 2 === 0 ? 1 : 0.5 + rng() * 3;
      const hM = trial % 2 === 0 ? 1 : 0.5 + rng() * 3;
      const g = geometry(width, height, wM, hM);
      const density = [0.002, 0.02, 0.2, 0.7][trial % 4] ?? 0.1;
      const seeds = new Uint8Array(width * height);
      for (let i = 0; i < seeds.length; i++) seeds[i] = rng() < density ? 1 : 0;
      if (trial % 4 === 0) seeds[Math.floor(rng() * seeds.length)] = 1;
      const expected = bruteForce(g, seeds);
      const { distanceM, nearest } = distanceTransform(g, seeds);
      for (let i = 0; i < seeds.length; i++) {
        const e = expected[i] ?? NaN;
        expect(distanceM[i]).toBeCloseTo(e, 4);
        // The reported nearest seed is a seed, and at the reported distance.
        const s = nearest[i] ?? -1;
        if (e === Infinity) {
          expect(s).toBe(-1);
          continue;
        }
        expect(seeds[s]).toBe(1);
        const r = Math.floor(i / width);
        const d = Math.hypot(((i % width) - (s % width)) * wM, (r - Math.floor(s / width)) * hM);
        expect(d).toBeCloseTo(e, 4);
      }
    }
  });

  it('reports Infinity and −1 when there is no seed, and reuses given buffers', () => {
    const g = geometry(4, 3, 1, 1);
    const out = { distanceM: new Float32Array(12), nearest: new Int32Array(12) };
    const res = distanceTransform(g, new Uint8Array(12), out);
    expect(res.distanceM).toBe(out.distanceM);
    expect(Array.from(res.distanceM).every((d) => d === Infinity)).toBe(true);
    expect(Array.from(res.nearest).every((s) => s === -1)).toBe(true);
  });

  it('measures east–west offsets with the target row width on a geographic-style grid', () => {
    // Rows narrow northwards as on a lon/lat grid; a seed in the same row is plain width × columns.
    const g: DistanceGeometry = { width: 8, height: 2, cellWidthM: new Float64Array([20, 10]), cellHeightM: 30 };
    const seeds = new Uint8Array(16);
    seeds[0] = 1;
    seeds[8] = 1;
    const { distanceM } = distanceTransform(g, seeds);
    expect(distanceM[7]).toBeCloseTo(7 * 20, 4);
    expect(distanceM[15]).toBeCloseTo(7 * 10, 4);
  });
});

/** All rows of a sweep as full rasters: distance (Infinity off the list) and nearest seed index (−1). */
function sweepAll(g: DistanceGeometry, seeds: Int32Array, reachM: number): { distanceM: Float32Array; nearest: Int32Array } {
  const sweep = new NearestSeedSweep(g, seeds, reachM);
  const distanceM = new Float32Array(g.width * g.height).fill(Infinity);
  const nearest = new Int32Array(g.width * g.height).fill(-1);
  const cols = new Int32Array(g.width);
  const d = new Float32Array(g.width);
  const k = new Int32Array(g.width);
  for (let r = 0; r < g.height; r++) {
    const count = sweep.row(r, cols, d, k);
    for (let m = 0; m < count; m++) {
      if (m > 0) expect(cols[m]!).toBeGreaterThan(cols[m - 1]!);
      distanceM[r * g.width + cols[m]!] = d[m]!;
      nearest[r * g.width + cols[m]!] = k[m]!;
    }
  }
  return { distanceM, nearest };
}

describe('NearestSeedSweep (nearest seed within a reach, row by row)', () => {
  it('lists exactly the cells within the reach, at the brute-force distance, each with a seed at that distance', () => {
    const rng = createRng(5150);
    for (let trial = 0; trial < 24; trial++) {
      const width = 5 + Math.floor(rng() * 40);
      const height = 5 + Math.floor(rng() * 40);
      const wM = trial % 2 === 0 ? 1 : 0.5 + rng() * 3;
      const hM = trial % 2 === 0 ? 1 : 0.5 + rng() * 3;
      const g = geometry(width, height, wM, hM);
      const mask = new Uint8Array(width * height);
      const density = [0.002, 0.01, 0.05, 0.3][trial % 4] ?? 0.1;
      for (let i = 0; i < mask.length; i++) mask[i] = rng() < density ? 1 : 0;
      mask[Math.floor(rng() * mask.length)] = 1;
      const list: number[] = [];
      for (let i = 0; i < mask.length; i++) if (mask[i] === 1) list.push(i);
      const seeds = Int32Array.from(list.reverse()); // any order
      const reachM = [0, 1.5, 4, 9.3][trial % 4]! * Math.max(wM, hM);
      const expected = bruteForce(g, mask);
      const { distanceM, nearest } = sweepAll(g, seeds, reachM);
      for (let i = 0; i < mask.length; i++) {
        const e = expected[i]!;
        if (e > reachM * (1 + 1e-6)) {
          expect(nearest[i]).toBe(-1);
          continue;
        }
        if (e < reachM * (1 - 1e-6) || e === 0) expect(nearest[i]).toBeGreaterThanOrEqual(0);
        if (nearest[i] === -1) continue; // on the reach itself, to rounding
        expect(distanceM[i]).toBeCloseTo(e, 4);
        const s = seeds[nearest[i]!]!;
        const d = Math.hypot(((i % width) - (s % width)) * wM, (Math.floor(i / width) - Math.floor(s / width)) * hM);
        expect(d).toBeCloseTo(e, 4);
      }
    }
  });

  it('gives distanceTransform’s distance and nearest seed on every cell within the reach', () => {
    const rng = createRng(77);
    for (let trial = 0; trial < 12; trial++) {
      const width = 30 + Math.floor(rng() * 50);
      const height = 30 + Math.floor(rng() * 50);
      const g: DistanceGeometry = {
        width,
        height,
        cellWidthM: Float64Array.from({ length: height }, (_, r) => (trial % 3 === 0 ? 1 : 1.5 + 0.01 * r)),
        cellHeightM: trial % 3 === 0 ? 1 : 2,
      };
      const mask = new Uint8Array(width * height);
      // Blobs of seeds (like ponds), so ties between equally near seeds occur.
      for (let b = 0; b < 4; b++) {
        const cr = Math.floor(rng() * height);
        const cc = Math.floor(rng() * width);
        const rad = 1 + rng() * 5;
        for (let r = 0; r < height; r++) for (let c = 0; c < width; c++) if (Math.hypot(r - cr, c - cc) <= rad) mask[r * width + c] = 1;
      }
      const list: number[] = [];
      for (let i = 0; i < mask.length; i++) if (mask[i] === 1) list.push(i);
      const seeds = Int32Array.from(list);
      const reachM = 12;
      const full = distanceTransform(g, mask);
      const { distanceM, nearest } = sweepAll(g, seeds, reachM);
      let within = 0;
      for (let i = 0; i < mask.length; i++) {
        if (!(full.distanceM[i]! <= reachM)) {
          expect(nearest[i]).toBe(-1);
          continue;
        }
        within++;
        expect(distanceM[i]).toBe(full.distanceM[i]);
        expect(seeds[nearest[i]!]).toBe(full.nearest[i]);
      }
      expect(within).toBeGreaterThan(0);
    }
  });

  it('counts a cell listed twice once, as its last entry, and wants rows in increasing order', () => {
    const g = geometry(6, 4, 1, 1);
    const sweep = new NearestSeedSweep(g, Int32Array.from([8, 3, 8]), 2);
    const cols = new Int32Array(6);
    const d = new Float32Array(6);
    const k = new Int32Array(6);
    const count = sweep.row(1, cols, d, k);
    const at = Array.from(cols.subarray(0, count)).indexOf(2); // cell 8 is row 1, col 2
    expect(at).toBeGreaterThanOrEqual(0);
    expect(d[at]).toBe(0);
    expect(k[at]).toBe(2);
    expect(() => sweep.row(1, cols, d, k)).toThrow(/increasing order/);
  });
});
