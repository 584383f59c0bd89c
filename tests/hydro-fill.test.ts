import { describe, expect, it } from 'vitest';
import { makeGrid } from '../src/grid/grid.js';
import { fillDepressions } from '../src/hydro/fill.js';
import { createRng } from '../src/uncertainty/random.js';

/**
 * Independent reference fill, by the definition of a depressionless surface
 * (the iteration of Planchon & Darboux 2001, Catena 46, in its plainest
 * form): start from +∞ inside and the DEM on the edge and next to NoData,
 * then repeat z = max(z0, min over the 8 neighbours) until nothing changes.
 */
function bruteForceFill(z0: Float32Array, width: number, height: number): Float32Array {
  const w = new Float32Array(z0.length);
  const isOut = (r: number, c: number): boolean => {
    if (r === 0 || c === 0 || r === height - 1 || c === width - 1) return true;
    for (let dr = -1; dr <= 1; dr++) for (let dc = -1; dc <= 1; dc++) if (Number.isNaN(z0[(r + dr) * width + c + dc] ?? 0)) return true;
    return false;
  };
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      const z = z0[i] ?? NaN;
      w[i] = Number.isNaN(z) || isOut(r, c) ? z : Infinity;
    }
  }
  for (let changed = true; changed; ) {
    changed = false;
    for (let r = 1; r < height - 1; r++) {
      for (let c = 1; c < width - 1; c++) {
        const i = r * width + c;
        if (w[i] === (z0[i] ?? NaN) || Number.isNaN(z0[i] ?? NaN)) continue;
        let low = Infinity;
        for (let dr = -1; dr <= 1; dr++) {
          for (let dc = -1; dc <= 1; dc++) {
            const v = w[(r + dr) * width + c + dc] ?? NaN;
            if ((dr !== 0 || dc !== 0) && v < low) low = v;
          }
        }
        const next = Math.max(z0[i] ?? NaN, low);
        if (next < (w[i] ?? 0)) {
          w[i] = next;
          changed = true;
        }
      }
    }
  }
  return w;
}

function randomDem(seed: number, width: number, height: number, nodata: number): Float32Array {
  const rng = createRng(seed);
  const z = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      // A rough bowl-and-ridges surface, quantised so that ties and flats occur.
      const v = 10 + 0.3 * r + 3 * Math.sin(c / 3) * Math.cos(r / 4) + 4 * rng();
      z[r * width + c] = Math.round(v * 4) / 4;
    }
  }
  for (let k = 0; k < nodata; k++) z[Math.floor(rng() * z.length)] = NaN;
  return z;
}

describe('fillDepressions (priority-flood)', () => {
  it('equals an independent brute-force fill on seeded random DEMs, with and without NoData', () => {
    for (let seed = 1; seed <= 12; seed++) {
      const width = 8 + seed * 3;
      const height = 30 - seed;
      const z = randomDem(seed, width, height, seed % 3 === 0 ? 0 : seed * 2);
      const { filledZ, raisedCells } = fillDepressions(makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: 1, dy: -1 } }));
      const expected = bruteForceFill(z, width, height);
      expect(Array.from(filledZ)).toEqual(Array.from(expected));
      let raised = 0;
      for (let i = 0; i < z.length; i++) if ((filledZ[i] ?? 0) > (z[i] ?? 0)) raised++;
      expect(raisedCells).toBe(raised);
      expect(raised).toBeGreaterThan(0);
    }
  });

  it('fills a single pit to the lowest rim cell and never lowers a cell', () => {
    // 5 × 5 bowl: rim 10 with one notch at 7; centre 3, inner ring 5 → fills to 7.
    const z = Float32Array.from([
      10, 10, 10, 10, 10,
      10, 5, 5, 5, 10,
      10, 5, 3, 5, 7,
      10, 5, 5, 5, 10,
      10, 10, 10, 10, 10,
    ]);
    const { filledZ } = fillDepressions(makeGrid({ width: 5, height: 5, z, transform: { x0: 0, y0: 0, dx: 1, dy: -1 } }));
    expect(filledZ[12]).toBe(7);
    expect(filledZ[6]).toBe(7);
    expect(filledZ[0]).toBe(10);
    for (let i = 0; i < z.length; i++) expect(filledZ[i]).toBeGreaterThanOrEqual(z[i] ?? 0);
  });
});
