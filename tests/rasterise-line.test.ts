import { describe, expect, it } from 'vitest';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import type { GeoTransform } from '../src/grid/transform.js';
import { createRng } from '../src/uncertainty/random.js';

// A north-up grid with 2 m cells and a fictional projected origin.
const W = 40;
const H = 30;
const T: GeoTransform = { x0: 1000, y0: 5000, dx: 2, dy: -2 };
const grid = { width: W, height: H, transform: T };
/** Map point of a fractional pixel position. */
const at = (col: number, row: number): [number, number] => [T.x0 + col * T.dx, T.y0 + row * T.dy];

/**
 * Segment–square intersection by the separating axis theorem (analytic
 * geometry, e.g. Ericson, Real-Time Collision Detection, 2005, §5.2):
 * closed square [col, col+1] × [row, row+1] against segment (c0,r0)–(c1,r1).
 */
function segmentTouchesCell(c0: number, r0: number, c1: number, r1: number, col: number, row: number): boolean {
  if (Math.max(c0, c1) < col || Math.min(c0, c1) > col + 1) return false;
  if (Math.max(r0, r1) < row || Math.min(r0, r1) > row + 1) return false;
  // Axis normal to the segment: the square's corners must not all lie strictly on one side.
  const nx = -(r1 - r0);
  const ny = c1 - c0;
  let pos = false;
  let neg = false;
  for (const [x, y] of [
    [col, row],
    [col + 1, row],
    [col, row + 1],
    [col + 1, row + 1],
  ] as const) {
    const s = nx * (x - c0) + ny * (y - r0);
    if (s >= 0) pos = true;
    if (s <= 0) neg = true;
  }
  return pos && neg;
}

/** True when the cell set is connected through edge-sharing (4-) neighbours (breadth-first search). */
function fourConnected(cells: Int32Array): boolean {
  const set = new Set(cells);
  const first = cells[0];
  if (first === undefined) return true;
  const seen = new Set([first]);
  const stack = [first];
  while (stack.length > 0) {
    const i = stack.pop()!;
    const col = i % W;
    for (const j of [i - W, i + W, col > 0 ? i - 1 : -1, col < W - 1 ? i + 1 : -1]) {
      if (set.has(j) && !seen.has(j)) {
        seen.add(j);
        stack.push(j);
      }
    }
  }
  return seen.size === set.size;
}

describe('rasteriseLines', () => {
  it('a line along a row of cell centres covers exactly that row between its ends', () => {
    const { cells, outside } = rasteriseLines(grid, [[at(3.5, 7.5), at(12.5, 7.5)]]);
    expect(outside).toBe(0);
    expect(Array.from(cells)).toEqual(Array.from({ length: 10 }, (_, k) => 7 * W + 3 + k));
  });

  it('a 45° line through cell corners keeps both cells at each corner (4-connected, no diagonal gap)', () => {
    const { cells } = rasteriseLines(grid, [[at(2, 2), at(6, 6)]]);
    // Diagonal cells (2,2)…(6,6) (the end vertex sits on the corner of (6,6), so that cell is touched too)
    // plus the two cells beside each of the 4 corners passed at (3,3)…(6,6).
    expect(cells.length).toBe(5 + 2 * 4);
    expect(fourConnected(cells)).toBe(true);
    expect(new Set(cells).has(2 * W + 3)).toBe(true);
    expect(new Set(cells).has(3 * W + 2)).toBe(true);
  });

  it('random segments: every crossed cell, only crossed cells, unique, 4-connected, ordered along the line', () => {
    const rng = createRng(20240611);
    for (let trial = 0; trial < 200; trial++) {
      const c0 = 1 + rng() * (W - 2);
      const r0 = 1 + rng() * (H - 2);
      const c1 = 1 + rng() * (W - 2);
      const r1 = 1 + rng() * (H - 2);
      const { cells, outside } = rasteriseLines(grid, [[at(c0, r0), at(c1, r1)]]);
      expect(outside).toBe(0);
      expect(new Set(cells).size).toBe(cells.length);
      expect(fourConnected(cells)).toBe(true);
      const set = new Set(cells);
      // Dense samples along the segment all fall in listed cells.
      let missed = 0;
      for (let s = 0; s <= 2000; s++) {
        const t = s / 2000;
        const col = Math.floor(c0 + t * (c1 - c0));
        const row = Math.floor(r0 + t * (r1 - r0));
        if (!set.has(row * W + col)) missed++;
      }
      expect(missed).toBe(0);
      // Every listed cell touches the segment, and cells come in order of their projection on it.
      let lastProj = -Infinity;
      for (const i of cells) {
        const col = i % W;
        const row = (i - col) / W;
        expect(segmentTouchesCell(c0, r0, c1, r1, col, row)).toBe(true);
        const proj = (col + 0.5 - c0) * (c1 - c0) + (row + 0.5 - r0) * (r1 - r0);
        const cellSpan = Math.abs(c1 - c0) + Math.abs(r1 - r0);
        expect(proj).toBeGreaterThanOrEqual(lastProj - cellSpan);
        lastProj = Math.max(lastProj, proj);
      }
    }
  });

  it('a crest is a wall: an 8-neighbour flood from one side never reaches the other', () => {
    const rng = createRng(7);
    for (let trial = 0; trial < 50; trial++) {
      // A line from the left edge to the right edge at random heights.
      const rA = 2 + rng() * (H - 4);
      const rB = 2 + rng() * (H - 4);
      const { cells } = rasteriseLines(grid, [[at(0, rA), at(W / 2, (rA + rB) / 2 + 0.37), at(W, rB)]]);
      const wall = new Set(cells);
      const seen = new Uint8Array(W * H);
      const stack = [0]; // top-left corner: above the line
      seen[0] = 1;
      while (stack.length > 0) {
        const i = stack.pop()!;
        const col = i % W;
        const row = (i - col) / W;
        for (let dr = -1; dr <= 1; dr++) {
          for (let dc = -1; dc <= 1; dc++) {
            const c = col + dc;
            const r = row + dr;
            if (c < 0 || c >= W || r < 0 || r >= H) continue;
            const j = r * W + c;
            if (seen[j] === 1 || wall.has(j)) continue;
            seen[j] = 1;
            stack.push(j);
          }
        }
      }
      expect(seen[(H - 1) * W + W - 1]).toBe(0);
      expect(seen[(H - 1) * W]).toBe(0);
    }
  });

  it('counts off-grid vertices and clips the segments to the grid', () => {
    const partly = rasteriseLines(grid, [[at(-5.5, 4.5), at(3.5, 4.5)]]);
    expect(partly.outside).toBe(1);
    expect(Array.from(partly.cells)).toEqual([4 * W, 4 * W + 1, 4 * W + 2, 4 * W + 3]);
    const off = rasteriseLines(grid, [[at(-50, -50), at(-10, -3)]]);
    expect(off.outside).toBe(2);
    expect(off.cells.length).toBe(0);
    // Far off (a wrong CRS): clipped, no long walk.
    const far = rasteriseLines(grid, [[at(-1e9, 3.5), at(1e9, 3.5)]]);
    expect(far.outside).toBe(2);
    expect(far.cells.length).toBe(W);
  });

  it('joins several polylines without repeating shared cells', () => {
    const { cells } = rasteriseLines(grid, [
      [at(2.5, 2.5), at(6.5, 2.5)],
      [at(6.5, 2.5), at(6.5, 5.5)],
    ]);
    expect(Array.from(cells)).toEqual([
      2 * W + 2,
      2 * W + 3,
      2 * W + 4,
      2 * W + 5,
      2 * W + 6,
      3 * W + 6,
      4 * W + 6,
      5 * W + 6,
    ]);
  });
});
