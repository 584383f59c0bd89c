import { describe, expect, it } from 'vitest';
import { distanceTransform, type DistanceGeometry } from '../src/grid/distance.js';
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
