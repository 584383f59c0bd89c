import { describe, expect, it } from 'vitest';
import { makeGrid } from '../src/grid/grid.js';
import { analyseTerrain } from '../src/hydro/terrain.js';
import { valleyBottom, valleyBottomThresholdM } from '../src/hydro/valley-bottom.js';

// A V-shaped valley: side slopes of 0.5 (1 m per 2 m cell) towards the centre column, which falls
// 0.01 per metre southwards and leaves through the south edge. Crossing the valley is steeper than
// any diagonal (1 m / 2 m vs (1 + 0.02) m / 2.83 m), so hillslope cells drain straight to the
// channel cell in their own row.
const mid = 20;
const width = 2 * mid + 1;
const height = 50;
const cellM = 2;
const z = new Float32Array(width * height);
for (let r = 0; r < height; r++) {
  for (let c = 0; c < width; c++) z[r * width + c] = 100 + 0.5 * Math.abs(c - mid) * cellM + 0.01 * (height - r) * cellM;
}
const grid = makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: cellM, dy: -cellM } });
// The channel cell of row 0 gathers its whole row (41 cells); a hillslope cell at most 20: the threshold
// between them makes exactly the centre column a stream.
const t = analyseTerrain(grid, { streamThresholdM2: (mid + 1) * cellM * cellM });

describe('HAND (Rennó et al. 2008) on a V-valley', () => {
  it('marks exactly the centre column as stream', () => {
    for (let r = 0; r < height; r++) for (let c = 0; c < width; c++) expect(t.stream[r * width + c]).toBe(c === mid ? 1 : 0);
  });

  it('equals the analytic height above the channel, side slope × distance = 0.5 × |c − mid| × 2 m', () => {
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) {
        const i = r * width + c;
        expect(t.hand.heightM[i]).toBeCloseTo(Math.abs(c - mid), 4);
        expect(t.hand.drainCell[i]).toBe(r * width + mid);
      }
    }
  });

  it('gives a valley bottom that widens downstream as the drainage area grows (threshold rule by hand)', () => {
    // Channel drainage area at row r: (r + 1) rows × 41 cells × 4 m².
    // Rule with base 1 m, coefficient 20 m, exponent 0.5, cap 6 m:
    //   row 0:  A = 164 m²  = 0.000164 km² → 1 + 20 × 0.0128 = 1.256 m → |c − mid| ≤ 1
    //   row 49: A = 8200 m² = 0.0082 km²   → 1 + 20 × 0.0906 = 2.811 m → |c − mid| ≤ 2
    const options = { baseM: 1, coefficientM: 20, exponent: 0.5, maxM: 6 };
    expect(valleyBottomThresholdM(164, options)).toBeCloseTo(1.256, 3);
    expect(valleyBottomThresholdM(8200, options)).toBeCloseTo(2.811, 3);
    const vb = valleyBottom(t.hand, t.accumulationM2, options);
    const widthOf = (r: number): number => {
      let n = 0;
      for (let c = 0; c < width; c++) n += vb[r * width + c] ?? 0;
      return n;
    };
    expect(widthOf(0)).toBe(3);
    expect(widthOf(49)).toBe(5);
    // The cap holds whatever the area.
    expect(valleyBottomThresholdM(1e12, options)).toBe(6);
  });

  it('uses the documented defaults: 1.5 m at 1 km² (1 + 0.5 × 1^0.4)', () => {
    expect(valleyBottomThresholdM(1e6)).toBeCloseTo(1.5, 12);
    expect(valleyBottomThresholdM(0)).toBe(1);
  });
});

describe('HAND surface policy', () => {
  it('keeps a real depression below its drainage as negative HAND on the original DEM, not on the filled one', () => {
    // The V-valley again with one hillslope cell, 3 cells from the channel, dug 1 m below the channel beside it.
    const dug = Float32Array.from(z);
    const r = 25;
    const i = r * width + mid + 3;
    dug[i] = (z[r * width + mid] ?? 0) - 1;
    const g = makeGrid({ width, height, z: dug, transform: { x0: 0, y0: 0, dx: cellM, dy: -cellM } });
    // 60 cells: the channel from row 1 on (82 cells and more) is stream, the pit's small catchment is not.
    const threshold = 60 * cellM * cellM;
    const original = analyseTerrain(g, { streamThresholdM2: threshold });
    const filled = analyseTerrain(g, { streamThresholdM2: threshold, handSurface: 'filled' });
    expect(original.stream[i]).toBe(0);
    const drain = original.hand.drainCell[i] ?? -1;
    expect(drain % width).toBe(mid);
    expect(filled.hand.drainCell[i]).toBe(drain);
    expect(original.hand.heightM[i]).toBeCloseTo((dug[i] ?? 0) - (dug[drain] ?? 0), 5);
    expect(original.hand.heightM[i]).toBeLessThan(-0.5);
    expect(filled.hand.heightM[i]).toBeCloseTo((filled.filledZ[i] ?? 0) - (filled.filledZ[drain] ?? 0), 5);
    expect(filled.hand.heightM[i]).toBeGreaterThan(0);
  });
});
