import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { flowAccumulationM2 } from '../src/hydro/accumulation.js';
import { flowDirections } from '../src/hydro/d8.js';
import { fillDepressions } from '../src/hydro/fill.js';
import { DIR_COL, DIR_NONE, DIR_OUTLET, DIR_ROW } from '../src/hydro/neighbours.js';
import { flowOrder } from '../src/hydro/order.js';
import { createRng } from '../src/uncertainty/random.js';

function gridOf(width: number, height: number, cellM: number, f: (r: number, c: number) => number): Grid {
  const z = new Float32Array(width * height);
  for (let r = 0; r < height; r++) for (let c = 0; c < width; c++) z[r * width + c] = f(r, c);
  return makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: cellM, dy: -cellM } });
}

/** Follows D8 from every valid cell; returns how many reach an outlet (not a pit, no cycle). */
function cellsReachingOutlet(dir: Uint8Array, z: Float32Array, width: number): number {
  let ok = 0;
  for (let start = 0; start < dir.length; start++) {
    if (Number.isNaN(z[start] ?? NaN)) continue;
    let i = start;
    for (let steps = 0; steps <= dir.length; steps++) {
      const d = dir[i] ?? DIR_NONE;
      if (d === DIR_OUTLET) {
        ok++;
        break;
      }
      if (d >= 8) break;
      i += (DIR_ROW[d] ?? 0) * width + (DIR_COL[d] ?? 0);
    }
  }
  return ok;
}

function run(grid: Grid) {
  const { filledZ } = fillDepressions(grid);
  const flow = flowDirections(grid, filledZ);
  const order = flowOrder(flow.dir, filledZ, grid.width);
  const acc = flowAccumulationM2(grid, flow.dir, order);
  return { filledZ, ...flow, order, acc };
}

describe('D8 flow directions and accumulation', () => {
  it('on a plane tilted east, each cell gathers the cells west of it in its row: (col + 1) · cell area (analytic)', () => {
    const cellM = 2;
    const grid = gridOf(12, 7, cellM, (_r, c) => 100 - 0.5 * c);
    const { acc, dir } = run(grid);
    for (let r = 0; r < 7; r++) {
      for (let c = 0; c < 12; c++) {
        expect(acc[r * 12 + c]).toBeCloseTo((c + 1) * cellM * cellM, 9);
        expect(dir[r * 12 + c]).toBe(c === 11 ? DIR_OUTLET : 2); // E, and out at the east edge
      }
    }
  });

  it('on a plane tilted south-east, each cell gathers its upslope diagonal: (min(row, col) + 1) · cell area (analytic)', () => {
    // Off the east and south edges (where cells with a lower neighbour run along the edge, by policy).
    const grid = gridOf(9, 13, 1, (r, c) => 50 - r - c);
    const { acc } = run(grid);
    for (let r = 0; r < 12; r++) {
      for (let c = 0; c < 8; c++) expect(acc[r * 9 + c]).toBeCloseTo(Math.min(r, c) + 1, 9);
    }
    expect(acc[13 * 9 - 1]).toBeCloseTo(9 * 13, 9); // the south-east corner drains the whole plane
  });

  it('uses real distances for slopes on anisotropic cells (steepest descent per metre, O’Callaghan & Mark 1984)', () => {
    // Falls 1 m per cell both east and south, but cells are 1 m wide and 4 m tall: east is steeper.
    const grid = makeGrid({
      width: 3,
      height: 3,
      z: Float32Array.from([10, 9, 8, 9, 8, 7, 8, 7, 6]),
      transform: { x0: 0, y0: 0, dx: 1, dy: -4 },
    });
    const { dir } = flowDirections(grid, grid.z);
    expect(dir[4]).toBe(2); // E (slope 1/1) beats SE (2/√17) and S (1/4)
  });

  it('on an inverted cone, the area leaving any circle equals the cells inside it (conservation; πR² analytic within discretisation)', () => {
    const n = 81;
    const mid = 40;
    const grid = gridOf(n, n, 1, (r, c) => 100 - Math.hypot(r - mid, c - mid));
    const { acc, dir } = run(grid);
    for (const radius of [10, 20, 30]) {
      let leaving = 0;
      let inside = 0;
      for (let r = 0; r < n; r++) {
        for (let c = 0; c < n; c++) {
          const i = r * n + c;
          const d = dir[i] ?? DIR_NONE;
          if (Math.hypot(r - mid, c - mid) > radius) continue;
          inside++;
          const rr = r + (DIR_ROW[d] ?? 0);
          const cc = c + (DIR_COL[d] ?? 0);
          if (Math.hypot(rr - mid, cc - mid) > radius) leaving += acc[i] ?? 0;
        }
      }
      expect(leaving).toBeCloseTo(inside, 9);
      expect(Math.abs(inside - Math.PI * radius * radius) / (Math.PI * radius * radius)).toBeLessThan(0.02);
    }
    // Flow never turns inwards on a cone.
    for (let r = 0; r < n; r++) {
      for (let c = 0; c < n; c++) {
        const d = dir[r * n + c] ?? DIR_NONE;
        if (d >= 8) continue;
        const rr = r + (DIR_ROW[d] ?? 0);
        const cc = c + (DIR_COL[d] ?? 0);
        expect(Math.hypot(rr - mid, cc - mid)).toBeGreaterThan(Math.hypot(r - mid, c - mid));
      }
    }
  });

  it('after filling, every cell drains to an outlet, including filled pits and wide flats (Barnes et al. 2014 flat routing)', () => {
    const rng = createRng(99);
    for (let trial = 0; trial < 6; trial++) {
      const w = 40 + trial * 7;
      const h = 35;
      const grid = gridOf(w, h, 1, (r, c) => {
        const v = 20 + 0.05 * r + 2 * Math.sin(c / 4) * Math.sin(r / 5) + rng();
        return trial % 2 === 0 ? Math.round(v) : v; // whole metres: many flats
      });
      if (trial >= 4) for (let k = 0; k < 60; k++) grid.z[Math.floor(rng() * grid.z.length)] = NaN;
      const { dir, pitCells, flatCells, filledZ, acc } = run(grid);
      let valid = 0;
      let totalOut = 0;
      for (let i = 0; i < dir.length; i++) {
        if (Number.isNaN(filledZ[i] ?? NaN)) continue;
        valid++;
        if (dir[i] === DIR_OUTLET) totalOut += acc[i] ?? 0;
      }
      expect(pitCells).toBe(0);
      if (trial % 2 === 0) expect(flatCells).toBeGreaterThan(50);
      expect(cellsReachingOutlet(dir, filledZ, w)).toBe(valid);
      expect(totalOut).toBeCloseTo(valid, 6); // all area leaves through outlets
    }
  });

  it('routes a flat valley floor away from its higher rim and out through its outlet', () => {
    // A 9-wide flat floor at 5 m between walls, closed at the north, open (edge) at the south.
    const grid = gridOf(11, 12, 1, (r, c) => (c === 0 || c === 10 || r === 0 ? 9 : 5));
    const { dir, pitCells, acc } = run(grid);
    expect(pitCells).toBe(0);
    // The outlet row gathers the floor; the centre line carries the most (away from the walls).
    let bestCol = -1;
    let best = 0;
    for (let c = 1; c < 10; c++) {
      const a = acc[10 * 11 + c] ?? 0;
      if (a > best) {
        best = a;
        bestCol = c;
      }
    }
    expect(bestCol).toBeGreaterThanOrEqual(4);
    expect(bestCol).toBeLessThanOrEqual(6);
    expect(dir[11 * 11 + 5]).toBe(DIR_OUTLET);
  });

  it('leaves pits of an unfilled DEM as DIR_NONE and counts them', () => {
    const grid = gridOf(5, 5, 1, (r, c) => (r === 2 && c === 2 ? 1 : 5 + r));
    const { dir, pitCells } = flowDirections(grid, grid.z);
    expect(dir[12]).toBe(DIR_NONE);
    expect(pitCells).toBe(1);
  });
});
