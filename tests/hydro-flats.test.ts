import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { flowDirections } from '../src/hydro/d8.js';
import { fillDepressions } from '../src/hydro/fill.js';
import { DIR_COL, DIR_NONE, DIR_OUTLET, DIR_ROW } from '../src/hydro/neighbours.js';
import { createRng } from '../src/uncertainty/random.js';
import { referenceFlowDirections } from './helpers/flow-reference.js';

/** A rough surface quantised to `stepM` (flats and ties everywhere), with a few NoData holes. */
function roughGrid(seed: number, width: number, height: number, stepM: number, cellWidthM: number, cellHeightM: number, holes: number): Grid {
  const rng = createRng(seed);
  const z = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const v = 20 + 0.04 * r + 1.5 * Math.sin(c / 5) * Math.cos(r / 7) + 1.5 * rng();
      z[r * width + c] = Math.round(v / stepM) * stepM;
    }
  }
  for (let k = 0; k < holes; k++) z[Math.floor(rng() * z.length)] = NaN;
  return makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: cellWidthM, dy: -cellHeightM } });
}

describe('flat routing (Barnes, Lehman & Mulla 2014)', () => {
  it('gives the directions of a plain full-grid transcription of D8 and the paper’s flat routing, cell for cell', () => {
    // Reference: tests/helpers/flow-reference.ts (O'Callaghan & Mark 1984 D8; Barnes et al. 2014 flats).
    let flats = 0;
    for (let trial = 0; trial < 8; trial++) {
      const cellW = trial % 3 === 0 ? 2 : 1;
      const cellH = trial % 4 === 1 ? 3 : 1;
      const grid = roughGrid(400 + trial, 37 + 5 * trial, 41 + 3 * trial, trial % 2 === 0 ? 1 : 0.5, cellW, cellH, trial >= 4 ? 40 : 0);
      const { filledZ } = fillDepressions(grid);
      for (const surface of [filledZ, grid.z]) {
        const ours = flowDirections(grid, surface);
        const ref = referenceFlowDirections(grid, surface);
        expect(Array.from(ours.dir)).toEqual(Array.from(ref.dir));
        expect(ours.pitCells).toBe(ref.pits);
        if (surface === filledZ) expect(ours.pitCells).toBe(0);
        flats += ours.flatCells;
      }
    }
    expect(flats).toBeGreaterThan(2000); // the comparison covered many flat cells
  });

  it('on a filled DEM, every flat cell drains to a cell no higher and every path ends at an outlet (the method’s guarantees)', () => {
    const grid = roughGrid(77, 90, 70, 1, 1, 1, 25);
    const { filledZ } = fillDepressions(grid);
    const { dir, flatCells } = flowDirections(grid, filledZ);
    expect(flatCells).toBeGreaterThan(500);
    const { width } = grid;
    for (let i = 0; i < dir.length; i++) {
      const zi = filledZ[i]!;
      if (Number.isNaN(zi)) continue;
      const d = dir[i]!;
      expect(d === DIR_OUTLET || d < 8).toBe(true);
      if (d < 8) expect(filledZ[i + DIR_ROW[d]! * width + DIR_COL[d]!]!).toBeLessThanOrEqual(zi);
      // Follow the path: it ends at an outlet within the number of cells (no cycle).
      let j = i;
      let steps = 0;
      while (dir[j]! < 8 && steps <= dir.length) {
        j += DIR_ROW[dir[j]!]! * width + DIR_COL[dir[j]!]!;
        steps++;
      }
      expect(dir[j]).toBe(DIR_OUTLET);
    }
    expect(dir.every((d, i) => d !== DIR_NONE || Number.isNaN(filledZ[i]!))).toBe(true);
  });
});
