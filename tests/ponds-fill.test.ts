/**
 * The priority-flood against a plain threshold flood fill on rough seeded
 * terrain: for every level, the cells whose join level is below h must be
 * exactly the cells a flood fill reaches through ground below h (the
 * definition of the join level, Barnes, Lehman & Mulla 2014).
 */
import { describe, expect, it } from 'vitest';
import { MinHeap } from '../src/grid/priority-queue.js';
import { createFillScratch, fillBehindCrest } from '../src/ponds/fill.js';
import { pondAt } from '../src/ponds/stage-storage.js';
import { createRng } from '../src/uncertainty/random.js';
import { fillDam, makeDam, sampleGrid, thresholdPond, valueNoise, type ValleyFrame } from './helpers/synthetic.js';

const frame: ValleyFrame = { width: 81, height: 161, cellM: 1, damRow: 140 };
const noise = valueNoise(frame.width, frame.height, 8, 3, 42);
// A 1 % valley with side slope 8:1 and ±0.4 m of smooth seeded roughness: pits, saddles, side pockets.
const grid = sampleGrid(frame, (x, y) => {
  const col = Math.floor(x + frame.width / 2);
  const row = frame.damRow - Math.round(y);
  return 0.01 * y + Math.abs(x) / 8 + 0.4 * noise[row * frame.width + col]!;
});
const dam = makeDam({ id: 'r', lines: [[[-35, 0], [35, 0]]], heightM: 1.2, upstream: 'left' });

describe('priority-flood fill', () => {
  it('cells come out sorted by join level, each at or above its own elevation', () => {
    const { fill } = fillDam(grid, dam, { maxLevelM: 2.5 });
    expect(fill.order.length).toBeGreaterThan(1000);
    for (let k = 0; k < fill.order.length; k++) {
      expect(fill.joinM[k]!).toBeGreaterThanOrEqual(grid.z[fill.order[k]!]!);
      if (k > 0) expect(fill.joinM[k]!).toBeGreaterThanOrEqual(fill.joinM[k - 1]!);
    }
  });

  it('the pond at any level, up to the flood top, equals a threshold flood fill of that level', () => {
    const { setup, fill } = fillDam(grid, dam, { maxLevelM: 2.5 });
    const top = Math.min(fill.topLevelM, 2.5);
    for (let k = 0; k <= 40; k++) {
      const h = setup.bedElevM - 0.3 + (k / 40) * (top - setup.bedElevM + 0.3);
      const pond = pondAt(fill, h);
      const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, h);
      expect(pond.cellCount).toBe(ref.cellCount);
      if (ref.volumeM3 > 0) expect(Math.abs(pond.volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
      else expect(pond.volumeM3).toBe(0);
      expect(pond.areaM2).toBe(ref.areaM2);
    }
  });

  it('flooding higher for later draws leaves the pond at the crest unchanged', () => {
    const { setup, fill: atCrest } = fillDam(grid, dam);
    const high = fillBehindCrest(grid, setup, { maxLevelM: setup.crestElevM + 1 });
    expect(atCrest.waterLevelM).toBe(high.waterLevelM);
    expect(pondAt(high, atCrest.waterLevelM)).toEqual(pondAt(atCrest, atCrest.waterLevelM));
    expect(high.order.length).toBeGreaterThan(atCrest.order.length);
  });

  it('a reused scratch (stamps, no clearing) gives the same fills as fresh buffers', () => {
    const scratch = createFillScratch(grid.width * grid.height);
    const { setup } = fillDam(grid, dam);
    const other = fillDam(grid, makeDam({ id: 'u', lines: [[[-30, 60], [30, 60]]], heightM: 0.7, upstream: 'left' })).setup;
    const fresh = fillBehindCrest(grid, setup, { maxLevelM: 2 });
    for (let round = 0; round < 3; round++) {
      fillBehindCrest(grid, other, {}, scratch);
      const again = fillBehindCrest(grid, setup, { maxLevelM: 2 }, scratch);
      expect(Array.from(again.order)).toEqual(Array.from(fresh.order));
      expect(Array.from(again.cumAreaZ)).toEqual(Array.from(fresh.cumAreaZ));
    }
  });
});

describe('MinHeap', () => {
  it('pops ids in the order of a stable sort by priority (ties compared as priority sets)', () => {
    const rng = createRng(99);
    const heap = new MinHeap(4); // forces growth
    const prios: number[] = [];
    for (let i = 0; i < 5000; i++) {
      const p = Math.floor(rng() * 500) / 10;
      prios.push(p);
      heap.push(i, p);
    }
    const popped: number[] = [];
    while (heap.size > 0) {
      const id = heap.pop();
      expect(heap.lastPriority).toBe(prios[id]);
      popped.push(heap.lastPriority);
    }
    expect(popped).toEqual([...prios].sort((a, b) => a - b));
    expect(heap.pop()).toBe(-1);
  });
});
