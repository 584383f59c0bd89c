import { describe, expect, it } from 'vitest';
import { makeGrid } from '../src/grid/grid.js';
import { DIR_OUTLET } from '../src/hydro/neighbours.js';
import { flowOrder } from '../src/hydro/order.js';
import { streamLengthM } from '../src/hydro/stream-length.js';
import { streamPolylines } from '../src/hydro/stream-lines.js';
import { streamLinks, streamMask } from '../src/hydro/streams.js';
import { analyseTerrain } from '../src/hydro/terrain.js';
import { mergeWatersheds, subWatersheds } from '../src/hydro/watersheds.js';

// Hand-worked example, 5 × 4 cells of 1 m (D8 codes: 0 N, 1 NE, 2 E, 3 SE, 4 S, 5 SW, 6 W, 7 NW):
//   row 0:  S  S  S  S  S      streams: (0,0)→(1,0)→(2,1)→(2,2)  link 1 (west tributary)
//   row 1:  SE S  S  S  SW              (0,4)→(1,4)→(2,3)→(2,2)  link 2 (east tributary)
//   row 2:  S  E  S  W  S               (2,2) junction → (3,2)   link 3 (main stem, leaves the grid)
//   row 3:  out everywhere
const W = 5;
const H = 4;
const S = 4;
const dir = Uint8Array.from([
  S, S, S, S, S,
  3, S, S, S, 5,
  S, 2, S, 6, S,
  DIR_OUTLET, DIR_OUTLET, DIR_OUTLET, DIR_OUTLET, DIR_OUTLET,
]);
const stream = Uint8Array.from([
  1, 0, 0, 0, 1,
  1, 0, 0, 0, 1,
  0, 1, 1, 1, 0,
  0, 0, 1, 0, 0,
]);
const ones = new Float32Array(W * H).fill(1);
const grid = makeGrid({ width: W, height: H, z: ones, transform: { x0: 100, y0: 50, dx: 1, dy: -1 } });
const cell = (r: number, c: number): number => r * W + c;

describe('stream links, lengths, sub-watersheds and polylines (hand-worked example)', () => {
  const order = flowOrder(dir, ones, W);
  const links = streamLinks(dir, order, stream, W);

  it('splits the network at the junction: two tributaries flowing into a main stem', () => {
    expect(links.count).toBe(3);
    const west = links.link[cell(0, 0)] ?? 0;
    const east = links.link[cell(0, 4)] ?? 0;
    const main = links.link[cell(2, 2)] ?? 0;
    expect(new Set([west, east, main]).size).toBe(3);
    expect(links.link[cell(2, 1)]).toBe(west);
    expect(links.link[cell(2, 3)]).toBe(east);
    expect(links.link[cell(3, 2)]).toBe(main);
    expect(links.downstream[west]).toBe(main);
    expect(links.downstream[east]).toBe(main);
    expect(links.downstream[main]).toBe(0);
    expect(Array.from(links.junctions)).toEqual([cell(2, 2)]);
    expect(links.firstCell[main]).toBe(cell(2, 2));
    expect(links.lastCell[main]).toBe(cell(3, 2));
    expect(main).toBeGreaterThan(Math.max(west, east)); // ids run upstream first
  });

  it('carries D8 link lengths: 1 m cardinal, √2 m diagonal, 0 where the stream leaves the grid', () => {
    const len = streamLengthM(grid, dir, stream);
    expect(len[cell(1, 0)]).toBeCloseTo(Math.SQRT2, 6);
    expect(len[cell(2, 1)]).toBe(1);
    expect(len[cell(3, 2)]).toBe(0);
    expect(len[cell(0, 1)]).toBe(0); // not a stream
    const total = Array.from(len).reduce((a, b) => a + b, 0);
    expect(total).toBeCloseTo(5 + 2 * Math.SQRT2, 5);
  });

  it('labels each cell with the link it first drains into; cells that reach no stream get 0', () => {
    const ws = subWatersheds(dir, order, links, W);
    const west = links.link[cell(0, 0)] ?? -1;
    const east = links.link[cell(0, 4)] ?? -1;
    const main = links.link[cell(2, 2)] ?? -1;
    expect([ws[cell(0, 1)], ws[cell(1, 1)]]).toEqual([west, west]);
    expect([ws[cell(0, 2)], ws[cell(1, 2)]]).toEqual([main, main]);
    expect([ws[cell(0, 3)], ws[cell(1, 3)]]).toEqual([east, east]);
    expect([ws[cell(2, 0)], ws[cell(3, 0)], ws[cell(3, 4)]]).toEqual([0, 0, 0]);

    // Areas: west 5, east 5, main 4, none 6 cells. Merging below 6 m² folds both tributaries into the main stem.
    const merged = mergeWatersheds(grid, ws, links, 6);
    expect(merged.count).toBe(1);
    expect(Array.from(merged.areaM2)).toEqual([6, 14]);
    const kept = mergeWatersheds(grid, ws, links, 5);
    expect(kept.count).toBe(3);
    expect(Array.from(kept.areaM2).sort((a, b) => a - b)).toEqual([4, 5, 5, 6]);
  });

  it('draws each link as a line of cell centres ending on the junction it flows into', () => {
    const lines = streamPolylines(grid, dir, links);
    const byFirst = new Map(lines.map((l) => [Array.from(l.xy.slice(0, 2)).join(','), l]));
    // Cell (r, c) has its centre at x = 100 + c + 0.5, y = 50 − r − 0.5.
    expect(Array.from(byFirst.get('100.5,49.5')?.xy ?? [])).toEqual([100.5, 49.5, 100.5, 48.5, 101.5, 47.5, 102.5, 47.5]);
    expect(Array.from(byFirst.get('104.5,49.5')?.xy ?? [])).toEqual([104.5, 49.5, 104.5, 48.5, 103.5, 47.5, 102.5, 47.5]);
    expect(Array.from(byFirst.get('102.5,47.5')?.xy ?? [])).toEqual([102.5, 47.5, 102.5, 46.5]);
    expect(byFirst.get('102.5,47.5')?.downstreamLinkId).toBe(0);
  });
});

describe('analyseTerrain on a synthetic valley with two branches', () => {
  // Fictional terrain: two side valleys joining a main valley that leaves through the south edge.
  const width = 61;
  const height = 80;
  const z = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const main = Math.abs(c - 30) * 0.4 + (height - r) * 0.05;
      const branch = r < 40 ? Math.min(Math.abs(c - 15), Math.abs(c - 45)) * 0.4 + (40 - r) * 0.1 + 2 : Infinity;
      z[r * width + c] = 100 + Math.min(main + 3, branch) + 0.001 * ((c * 7 + r * 3) % 11);
    }
  }
  const g = makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: 5, dy: -5 } });
  const t = analyseTerrain(g, { streamThresholdM2: 40 * 25 });

  it('finds a connected network whose stream cells drain to stream cells, with watersheds covering the area', () => {
    expect(t.stats.pitCells).toBe(0);
    expect(t.links.count).toBeGreaterThanOrEqual(3);
    expect(t.links.junctions.length).toBeGreaterThanOrEqual(1);
    const mask = streamMask(t.accumulationM2, 40 * 25);
    expect(Array.from(mask)).toEqual(Array.from(t.stream));
    let labelled = 0;
    for (let i = 0; i < width * height; i++) {
      if ((t.watershed[i] ?? 0) > 0) labelled++;
      if (t.stream[i] === 1) expect(t.watershed[i]).toBe(t.links.link[i]);
    }
    // Everything except a few edge cells drains to a stream before leaving the grid.
    expect(labelled / (width * height)).toBeGreaterThan(0.9);
    // Per-watershed areas sum to the labelled area, whatever the merge.
    const merged = mergeWatersheds(g, t.watershed, t.links, 1e5);
    const sum = Array.from(merged.areaM2).reduce((a, b) => a + b, 0);
    expect(sum).toBeCloseTo(width * height * 25, 6);
    expect(merged.areaM2[0]).toBeCloseTo((width * height - labelled) * 25, 6);
  });
});
