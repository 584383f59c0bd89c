import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { flowAccumulationM2 } from '../src/hydro/accumulation.js';
import { flowDirections } from '../src/hydro/d8.js';
import { drainageRasters } from '../src/hydro/drainage.js';
import { fillDepressions } from '../src/hydro/fill.js';
import { heightAboveDrainage } from '../src/hydro/hand.js';
import { flowOrder, flowRouting } from '../src/hydro/order.js';
import { streamCellLengthsM, streamLengthM } from '../src/hydro/stream-length.js';
import { streamLinks, streamMask } from '../src/hydro/streams.js';
import { analyseTerrain } from '../src/hydro/terrain.js';
import { valleyBottom } from '../src/hydro/valley-bottom.js';
import { subWatersheds } from '../src/hydro/watersheds.js';
import { createRng } from '../src/uncertainty/random.js';

// The terrain step walks the flow order once for order, contributing area and streams
// (order.ts flowRouting) and once back for HAND, link watersheds and valley bottom
// (drainage.ts). The separate functions are the references: each is checked against
// analytic solutions in hydro-flow, hydro-hand and hydro-streams tests.

/** Hills, a tilt and noise, some NoData; rows of unequal width on request (geographic-style grids). */
function hillyGrid(seed: number, width: number, height: number, geographic: boolean): Grid {
  const rng = createRng(seed);
  const z = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      z[r * width + c] = 50 + 0.03 * r + 0.02 * c + 3 * Math.sin(c / 9) * Math.sin(r / 11) + 0.8 * rng();
    }
  }
  for (let k = 0; k < 30; k++) z[Math.floor(rng() * z.length)] = NaN;
  const grid = makeGrid({ width, height, z, transform: { x0: 0, y0: 0, dx: 2, dy: -2 } });
  if (!geographic) return grid;
  const cellWidthM = Float64Array.from({ length: height }, (_, r) => 2 * Math.cos((50 + r * 0.01) * (Math.PI / 180)));
  const cellAreaM2 = cellWidthM.map((w) => w * 2);
  return { ...grid, cellWidthM, cellAreaM2 };
}

describe('one walk for order, contributing area and streams', () => {
  it('equals flowOrder, flowAccumulationM2 and streamMask value for value, and lists the stream cells in order', () => {
    for (let trial = 0; trial < 4; trial++) {
      const grid = hillyGrid(700 + trial, 60 + 10 * trial, 50 + 7 * trial, trial % 2 === 1);
      const { filledZ } = fillDepressions(grid);
      const { dir } = flowDirections(grid, filledZ);
      const thresholdM2 = 150;
      const routed = flowRouting(grid, dir, filledZ, thresholdM2);
      const order = flowOrder(dir, filledZ, grid.width);
      const acc = flowAccumulationM2(grid, dir, order);
      expect(Array.from(routed.order)).toEqual(Array.from(order));
      expect(Array.from(routed.accumulationM2)).toEqual(Array.from(acc));
      const stream = streamMask(acc, thresholdM2);
      expect(Array.from(routed.stream)).toEqual(Array.from(stream));
      const streamCells = Array.from(order).filter((i) => stream[i] === 1);
      expect(streamCells.length).toBeGreaterThan(20);
      expect(Array.from(routed.streamCells)).toEqual(streamCells);
      // Links from the stream cells alone equal links from the whole order.
      const fromAll = streamLinks(dir, order, stream, grid.width);
      const fromStreams = streamLinks(dir, routed.streamCells, stream, grid.width);
      expect(fromStreams).toEqual(fromAll);
    }
  });

  it('on a plane tilted east, each cell gathers the cells west of it in its row: (col + 1) · cell area (analytic)', () => {
    const width = 12;
    const z = new Float32Array(width * 7);
    for (let i = 0; i < z.length; i++) z[i] = 100 - 0.5 * (i % width);
    const grid = makeGrid({ width, height: 7, z, transform: { x0: 0, y0: 0, dx: 2, dy: -2 } });
    const { dir } = flowDirections(grid, z);
    const { accumulationM2, stream } = flowRouting(grid, dir, z, 8 * 4);
    for (let i = 0; i < z.length; i++) {
      expect(accumulationM2[i]).toBe(((i % width) + 1) * 4);
      expect(stream[i]).toBe(i % width >= 7 ? 1 : 0);
    }
  });

  it('refuses a threshold that is not a positive area', () => {
    expect(() => flowRouting(hillyGrid(1, 5, 5, false), new Uint8Array(25), new Float32Array(25), 0)).toThrow(/positive area/);
  });
});

describe('one pass for HAND, link watersheds and valley bottom', () => {
  it('equals heightAboveDrainage, subWatersheds and valleyBottom cell for cell, on the original and the filled DEM', () => {
    for (let trial = 0; trial < 4; trial++) {
      const grid = hillyGrid(900 + trial, 70, 55 + 5 * trial, trial % 2 === 0);
      const { filledZ } = fillDepressions(grid);
      const { dir } = flowDirections(grid, filledZ);
      const { order, accumulationM2, stream, streamCells } = flowRouting(grid, dir, filledZ, 120);
      const links = streamLinks(dir, order, stream, grid.width);
      const options = trial < 2 ? {} : { baseM: 0.5, coefficientM: 3, exponent: 0.5, maxM: 2.5 };
      for (const z of [grid.z, filledZ]) {
        const one = drainageRasters(z, dir, order, stream, streamCells, links.link, accumulationM2, grid.width, options);
        const hand = heightAboveDrainage(z, dir, order, stream, grid.width);
        expect(Array.from(one.hand.heightM)).toEqual(Array.from(hand.heightM));
        expect(Array.from(one.hand.drainCell)).toEqual(Array.from(hand.drainCell));
        expect(Array.from(one.watershed)).toEqual(Array.from(subWatersheds(dir, order, links, grid.width)));
        const valley = valleyBottom(hand, accumulationM2, options);
        expect(Array.from(one.valleyBottom)).toEqual(Array.from(valley));
        expect(valley.reduce((a, b) => a + b, 0)).toBeGreaterThan(50); // the comparison covered valley cells
      }
    }
  });

  it('is what analyseTerrain returns, whose steps reuse each other\'s scratch rasters (one fill thread or several)', () => {
    for (const fill of [{ threads: 1 }, { threads: 2, minCellsForThreads: 0, tileCells: 16 }]) {
      const grid = hillyGrid(47, 90, 70, false);
      const t = analyseTerrain(grid, { streamThresholdM2: 120, fill });
      // References: each step on its own, with rasters of its own.
      const { filledZ } = fillDepressions(grid);
      const { dir } = flowDirections(grid, filledZ);
      const order = flowOrder(dir, filledZ, grid.width);
      const acc = flowAccumulationM2(grid, dir, order);
      const stream = streamMask(acc, 120);
      const links = streamLinks(dir, order, stream, grid.width);
      const hand = heightAboveDrainage(grid.z, dir, order, stream, grid.width);
      expect(Array.from(t.filledZ)).toEqual(Array.from(filledZ));
      expect(Array.from(t.dir)).toEqual(Array.from(dir));
      expect(Array.from(t.order)).toEqual(Array.from(order));
      expect(Array.from(t.accumulationM2)).toEqual(Array.from(acc));
      expect(Array.from(t.stream)).toEqual(Array.from(stream));
      expect(t.links).toEqual(links);
      const lengths = streamLengthM(grid, dir, stream);
      expect(Array.from(t.streamLengthM)).toEqual(Array.from(lengths));
      // The list form: every stream cell in row-major order with its length from the raster.
      const streamCells: number[] = [];
      for (let i = 0; i < stream.length; i++) if (stream[i] === 1) streamCells.push(i);
      expect(Array.from(t.streamCellLengths.cells)).toEqual(streamCells);
      expect(Array.from(t.streamCellLengths.lengthM)).toEqual(streamCells.map((i) => lengths[i]!));
      const shuffled = Int32Array.from(streamCells).reverse();
      const listed = streamCellLengthsM(grid, dir, shuffled);
      expect(Array.from(listed.cells)).toEqual(streamCells);
      expect(Array.from(listed.lengthM)).toEqual(streamCells.map((i) => lengths[i]!));
      expect(Array.from(t.watershed)).toEqual(Array.from(subWatersheds(dir, order, links, grid.width)));
      expect(Array.from(t.valleyBottom)).toEqual(Array.from(valleyBottom(hand, acc)));
      expect(Array.from(t.hand.heightM)).toEqual(Array.from(hand.heightM));
      expect(Array.from(t.hand.drainCell)).toEqual(Array.from(hand.drainCell));
      expect(links.count).toBeGreaterThan(3);
    }
  });

  it('is what analyseTerrain returns', () => {
    const grid = hillyGrid(31, 64, 48, false);
    const t = analyseTerrain(grid, { streamThresholdM2: 120 });
    const hand = heightAboveDrainage(grid.z, t.dir, t.order, t.stream, grid.width);
    expect(Array.from(t.hand.heightM)).toEqual(Array.from(hand.heightM));
    expect(Array.from(t.watershed)).toEqual(Array.from(subWatersheds(t.dir, t.order, t.links, grid.width)));
    expect(Array.from(t.valleyBottom)).toEqual(Array.from(valleyBottom(hand, t.accumulationM2)));
    expect(Array.from(t.accumulationM2)).toEqual(Array.from(flowAccumulationM2(grid, t.dir, t.order)));
  });
});
