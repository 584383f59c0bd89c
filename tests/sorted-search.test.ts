/**
 * Sorting and search in typed arrays (src/grid/sorted-search.ts), against
 * the JavaScript engine's own comparison sort (Array.prototype.sort, a
 * general-purpose reference) on seeded data with ties, negatives and ±0.
 */
import { describe, expect, it } from 'vitest';
import { float32OrderKey, indexOfSorted, lowerBound, radixArgsort } from '../src/grid/sorted-search.js';
import { createRng } from '../src/uncertainty/random.js';

function seededFloats(n: number, seed: number): Float32Array {
  const rng = createRng(seed);
  // Few distinct values (ties), both signs, and some zeros of either sign.
  return Float32Array.from({ length: n }, () => {
    const u = rng();
    if (u < 0.05) return u < 0.025 ? -0 : 0;
    return Math.round((rng() - 0.5) * 200) / 8;
  });
}

describe('radixArgsort', () => {
  for (const n of [50, 20000]) {
    it(`equals a stable comparison sort by float32 value then cell (${n} items, ${n < 256 ? 'comparison' : 'radix'} path)`, () => {
      const z = seededFloats(n, n);
      const rng = createRng(n + 1);
      const cell = Uint32Array.from({ length: n }, () => Math.floor(rng() * 50));
      const perm = radixArgsort(n, [Uint32Array.from(z, float32OrderKey), cell]);
      const ref = Array.from({ length: n }, (_, i) => i).sort((a, b) => z[a]! - z[b]! || cell[a]! - cell[b]! || a - b);
      expect(Array.from(perm)).toEqual(ref);
    });
  }
});

describe('lowerBound and indexOfSorted', () => {
  it('find the first entry not below a value, and an entry\'s position or −1', () => {
    expect([0, 1, 2, 3, 4, 7, 8].map((v) => lowerBound(Float64Array.of(1, 3, 3, 7), v))).toEqual([0, 0, 1, 1, 3, 3, 4]);
    expect([1, 3, 5, 7].map((v) => indexOfSorted(Int32Array.of(1, 3, 3, 7), v))).toEqual([0, 1, -1, 3]);
  });
});
