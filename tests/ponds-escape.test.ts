/**
 * Where water escapes below the crest: around a short crest (spill), off
 * the DEM or reach box (edge), into a NoData gap (nodata). Each expected
 * level is derived from the valley's geometry in the comments.
 */
import { describe, expect, it } from 'vitest';
import { pondAt } from '../src/ponds/stage-storage.js';
import { fillDam, makeDam, sampleGrid, thresholdPond, vValley, type ValleyFrame } from './helpers/synthetic.js';

// V valley z = 0.01·y + |x|/10 on 0.5 m cells; the default 1.0 m dam would pond 100 m upstream, 10 m each side.
const frame: ValleyFrame = { width: 61, height: 241, cellM: 0.5, damRow: 220 };
const zAt = (x: number, y: number): number => 0.01 * y + Math.abs(x) / 10;

describe('spill around the end of the crest', () => {
  it('a crest shorter than the valley: the level is the lowest ground just past the crest ends', () => {
    const grid = vValley(frame, 10, 0.01);
    // The crest covers |x| ≤ 5 m of the dam row. Any path from the pond to the downstream side must
    // cross the dam row (8-neighbour moves change the row by at most one), and outside the crest
    // the lowest dam-row cells are at x = ±5.5 m: z = 0.55 m. That is the spill level.
    const { setup, fill } = fillDam(grid, makeDam({ id: 's', lines: [[[-5, 0], [5, 0]]], upstream: 'left' }));
    const rowStart = frame.damRow * frame.width;
    let lowest = Infinity;
    const crest = new Set(setup.crestCells);
    for (let col = 0; col < frame.width; col++) {
      if (!crest.has(rowStart + col)) lowest = Math.min(lowest, grid.z[rowStart + col]!);
    }
    expect(lowest).toBeCloseTo(0.55, 3);
    expect(fill.limitedBy).toBe('spill');
    expect(fill.escapeLevelM).toBe(lowest);
    expect(fill.waterLevelM).toBe(lowest);
    // Nothing past the crest is counted: the pond equals a plain flood fill below the spill level.
    const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, lowest);
    const pond = pondAt(fill, fill.waterLevelM);
    expect(pond.cellCount).toBe(ref.cellCount);
    expect(Math.abs(pond.volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
  });

  it('a crest ending in the channel spills at once, round its end', () => {
    const grid = vValley(frame, 10, 0.01);
    // Crest over x ≤ 0 only; the dam-row cell just east of its end (x = 0.5 m) has z = 0.05 m.
    const { fill } = fillDam(grid, makeDam({ id: 'h', lines: [[[-14, 0], [0, 0]]], upstream: 'left' }));
    expect(fill.limitedBy).toBe('spill');
    expect(fill.waterLevelM).toBe(grid.z[frame.damRow * frame.width + 31]);
    expect(fill.waterLevelM).toBeCloseTo(zAt(0.5, 0), 3);
  });

  it('a bent (chevron) crest, pointing either way, holds to its crest: same pond as a plain flood fill', () => {
    const grid = vValley(frame, 10, 0.01);
    for (const lines of [
      [[[-14, 0], [0, 4], [14, 0]]],
      [[[-14, 4], [0, 0], [14, 4]]],
    ] as [number, number][][][]) {
      const { setup, fill } = fillDam(grid, makeDam({ id: 'c', lines, heightM: 0.9, upstream: 'left' }));
      expect(fill.limitedBy).toBe('crest');
      const ref = thresholdPond(grid, setup.seedCells, setup.crestCells, fill.waterLevelM);
      const pond = pondAt(fill, fill.waterLevelM);
      expect(pond.cellCount).toBe(ref.cellCount);
      expect(Math.abs(pond.volumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
      // Every seed is north of the crest, every spill-band cell south of it.
      for (const i of setup.seedCells) expect(ref.cells.has(i)).toBe(true);
      for (const i of setup.downstreamCells) expect(ref.cells.has(i)).toBe(false);
    }
  });

  it('a crest reaching above the water on both valley sides does not spill', () => {
    const grid = vValley(frame, 10, 0.01);
    const { fill } = fillDam(grid, makeDam({ id: 'w', lines: [[[-12, 0], [12, 0]]], upstream: 'left' }));
    expect(fill.limitedBy).toBe('crest');
    expect(fill.escapeLevelM).toBe(Infinity);
  });
});

describe('edge of the DEM or of the reach box', () => {
  it('a pond running off the top of the DEM: limited by the edge at the lowest edge cell', () => {
    // Only 50 m of valley upstream: the channel cell of the top row (y = 50 m) has z = 0.5 m < 1 m.
    const short: ValleyFrame = { width: 61, height: 120, cellM: 0.5, damRow: 100 };
    const grid = vValley(short, 10, 0.01);
    const { fill } = fillDam(grid, makeDam({ id: 'e', lines: [[[-14, 0], [14, 0]]], upstream: 'left' }));
    expect(fill.limitedBy).toBe('edge');
    expect(fill.waterLevelM).toBe(zAt(0, 50));
    expect(fill.escapeCell).toBe(30); // row 0, centre column
    // The pass is the cell whose elevation set the escape level (here the escape cell itself).
    expect(grid.z[fill.escapePassCell]).toBe(fill.escapeLevelM);
  });

  it('closing the pass with a wall sends the water out by the next lowest way, no lower than the first', () => {
    const short: ValleyFrame = { width: 61, height: 120, cellM: 0.5, damRow: 100 };
    const grid = vValley(short, 10, 0.01);
    const dam = makeDam({ id: 'e', lines: [[[-14, 0], [14, 0]]], upstream: 'left' });
    const { setup, fill } = fillDam(grid, dam);
    const again = fillDam(grid, dam, { wallCells: Int32Array.of(fill.escapePassCell) }).fill;
    expect(again.escapePassCell).not.toBe(fill.escapePassCell);
    expect(grid.z[again.escapePassCell]).toBe(again.escapeLevelM);
    // On a V-valley the next edge cells of the top row flank the channel cell, 0.1 m per metre across (slope 1:10), 0.5 m out.
    expect(again.escapeLevelM).toBeCloseTo(fill.escapeLevelM + 0.05, 4); // elevations are float32
    expect(setup.levelRefCell).toBe(setup.bedCell);
  });

  it('a reach box stops the flood the same way', () => {
    const grid = vValley(frame, 10, 0.01);
    // Box rows 120…240: the box's top row is at y = (220 − 120)·0.5 = 50 m.
    const box = { col0: 0, row0: 120, col1: frame.width, row1: frame.height };
    const { fill } = fillDam(grid, makeDam({ id: 'b', lines: [[[-14, 0], [14, 0]]], upstream: 'left' }), { reachBox: box });
    expect(fill.limitedBy).toBe('edge');
    expect(fill.waterLevelM).toBe(zAt(0, 50));
    for (const i of fill.order) expect(Math.floor(i / frame.width)).toBeGreaterThan(120);
  });
});

describe('NoData under the pond', () => {
  it('water reaching a DEM gap is flagged, at the level of the lowest cell next to the gap', () => {
    // A gap 2 m wide across the channel at 60 m ≤ y ≤ 62 m. The lowest valid cell 8-adjacent to it is
    // the channel cell just downstream (y = 59.5 m, z = 0.595 m); the valley rises monotonically from
    // the dam, so water reaches that cell at its own elevation.
    const grid = sampleGrid(frame, (x, y) => (Math.abs(x) <= 1 && y >= 60 && y <= 62 ? NaN : zAt(x, y)));
    const { fill } = fillDam(grid, makeDam({ id: 'n', lines: [[[-14, 0], [14, 0]]], upstream: 'left' }));
    expect(fill.limitedBy).toBe('nodata');
    expect(fill.waterLevelM).toBeCloseTo(0.595, 3);
    const next = fill.escapeCell;
    expect(grid.z[next]).toBe(fill.waterLevelM);
    // The escape cell does touch the gap.
    const w = frame.width;
    const touches = [-w - 1, -w, -w + 1, -1, 1, w - 1, w, w + 1].some((d) => Number.isNaN(grid.z[next + d]!));
    expect(touches).toBe(true);
  });
});
