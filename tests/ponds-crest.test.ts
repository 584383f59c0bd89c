/**
 * Crest setup rules (src/ponds/crest.ts): bed, upstream side, DEM-visible
 * dams, heights, breached dams, skips. Expected values are read off the
 * analytic valleys' formulas, not from the code under test.
 */
import { describe, expect, it } from 'vitest';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import { rowToY } from '../src/grid/transform.js';
import { setupCrest, type CrestSetup } from '../src/ponds/crest.js';
import { fillBehindCrest } from '../src/ponds/fill.js';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { pondAt } from '../src/ponds/stage-storage.js';
import type { DamInput } from '../src/inventory.js';
import type { Grid } from '../src/grid/grid.js';
import { Z_QUANTUM_M, makeDam, sampleGrid, vValley, type ValleyFrame } from './helpers/synthetic.js';

const frame: ValleyFrame = { width: 61, height: 120, cellM: 0.5, damRow: 100 };
const across: [number, number][][] = [[[-14, 0], [14, 0]]]; // drawn west → east: north (upstream) is on the left
const q = (v: number): number => Math.round(v / Z_QUANTUM_M) * Z_QUANTUM_M;

function setup(grid: Grid, dam: DamInput): CrestSetup | { skip: { code: string; message: string } } {
  if (dam.geometry.kind !== 'line') throw new Error('line only');
  return setupCrest(grid, dam, rasteriseLines(grid, dam.geometry.lines).cells, DEFAULT_POND_PARAMS);
}
function ok(s: ReturnType<typeof setup>): CrestSetup {
  if ('skip' in s) throw new Error(`unexpected skip: ${s.skip.message}`);
  return s;
}
function skipCode(s: ReturnType<typeof setup>): string {
  return 'skip' in s ? s.skip.code : 'none';
}
const rowY = (grid: Grid, i: number): number => rowToY(grid.transform, Math.floor(i / grid.width) + 0.5);

describe('bed and crest elevation', () => {
  const grid = vValley(frame, 10, 0.01);
  it('bed = lowest crest cell (the channel), crest = bed + measured height', () => {
    const s = ok(setup(grid, makeDam({ id: 'a', lines: across, heightM: 0.8, upstream: 'left' })));
    expect(s.bedCell).toBe(frame.damRow * frame.width + 30);
    expect(s.bedElevM).toBe(0);
    expect(s.crestElevM).toBe(0.8);
    expect(s.heightSource).toBe('measured');
    expect(s.demVisible).toBe(false);
  });
  it('no height and not visible in the DEM: the documented default height (1.0 m)', () => {
    const s = ok(setup(grid, makeDam({ id: 'b', lines: across, upstream: 'left' })));
    expect(DEFAULT_POND_PARAMS.defaultHeightM).toBe(1.0);
    expect(s.crestElevM).toBe(1.0);
    expect(s.heightSource).toBe('default');
  });
  it('seeds lie next to the bed on the upstream side; the spill band lies within 3 cells on the other side', () => {
    const s = ok(setup(grid, makeDam({ id: 'c', lines: across, upstream: 'left' })));
    expect(s.seedCells.length).toBe(3);
    for (const i of s.seedCells) expect(rowY(grid, i)).toBe(0.5);
    const rows = new Set(Array.from(s.downstreamCells, (i) => rowY(grid, i)));
    expect([...rows].sort((a, b) => a - b)).toEqual([-1.5, -1, -0.5]);
  });
  it('the spill band wraps round the crest ends on the downstream side only', () => {
    const short = ok(setup(grid, makeDam({ id: 'e', lines: [[[-5, 0], [5, 0]]], upstream: 'left' })));
    const t = grid.transform;
    const band = new Set(short.downstreamCells);
    const cellAt = (x: number, y: number): number =>
      Math.floor((y - t.y0) / t.dy) * grid.width + Math.floor((x - t.x0) / t.dx);
    expect(band.has(cellAt(6, -0.5))).toBe(true); // beyond the east end, downstream
    expect(band.has(cellAt(-6, -1))).toBe(true); // beyond the west end, downstream
    expect(band.has(cellAt(6, 0))).toBe(false); // on the crest line extended
    expect(band.has(cellAt(6, 0.5))).toBe(false); // beyond the end, upstream
  });
});

describe('upstream side', () => {
  const steep = vValley(frame, 10, 0.05);
  it('from the terrain: the side whose channel is higher, whichever way the line is drawn', () => {
    const we = ok(setup(steep, makeDam({ id: 'we', lines: across })));
    expect(we.upstreamSide).toBe('left');
    expect(we.upstreamSource).toBe('terrain');
    expect(we.warnings).toEqual([]);
    const ew = ok(setup(steep, makeDam({ id: 'ew', lines: [[[14, 0], [-14, 0]]] })));
    expect(ew.upstreamSide).toBe('right');
    // Either way the flood starts north of the crest.
    for (const i of ew.seedCells) expect(rowY(steep, i)).toBeGreaterThan(0);
  });
  it('from the property, with a warning when the terrain clearly says otherwise', () => {
    const s = ok(setup(steep, makeDam({ id: 'p', lines: across, upstream: 'right' })));
    expect(s.upstreamSide).toBe('right');
    expect(s.upstreamSource).toBe('property');
    expect(s.warnings.map((w) => w.code)).toEqual(['upstream-disagrees']);
  });
  it('flat ground: flagged ambiguous', () => {
    const flat = vValley(frame, 10, 0);
    const s = ok(setup(flat, makeDam({ id: 'f', lines: across })));
    expect(s.upstreamSource).toBe('terrain');
    expect(s.warnings.map((w) => w.code)).toContain('upstream-ambiguous');
  });
});

describe('DEM-visible dam', () => {
  // A 0.6 m mound three rows wide on the crest (y = −0.5, 0, 0.5) of a 1 % valley.
  const grid = sampleGrid(frame, (x, y) => 0.01 * y + Math.abs(x) / 10 + (Math.abs(y) <= 0.5 ? 0.6 : 0));
  // Lowest ground within the 3 m probe straight downstream of the bed cell: the channel 3 m below the crest.
  const toeM = q(0.01 * -3);
  it('bed at the downstream toe; crest at the crest\'s lowest DEM point when no height is given', () => {
    const s = ok(setup(grid, makeDam({ id: 'v', lines: across })));
    expect(s.demVisible).toBe(true);
    expect(s.upstreamSide).toBe('left');
    expect(s.crestLowM).toBe(q(0.6));
    expect(s.bedElevM).toBe(toeM);
    expect(s.crestElevM).toBe(q(0.6));
    expect(s.heightM).toBeCloseTo(q(0.6) - toeM, 12);
    expect(s.heightSource).toBe('dem');
    // The crest elevation hangs on the crest's own cells.
    expect(s.levelCells).toBe(s.crestCells);
    expect(s.levelRefCell).toBe(s.bedCell);
  });
  it('a measured height counts from the toe', () => {
    const s = ok(setup(grid, makeDam({ id: 'm', lines: across, heightM: 1.0 })));
    expect(s.bedElevM).toBe(toeM);
    expect(s.crestElevM).toBeCloseTo(toeM + 1.0, 12);
    expect(s.heightSource).toBe('measured');
    // ...so the crest elevation hangs on the downstream probe's cells, the lowest of them the toe.
    expect(s.levelCells).not.toBe(s.crestCells);
    expect(grid.z[s.levelRefCell]).toBe(toeM);
    for (const i of s.levelCells) {
      expect(grid.z[i]!).toBeGreaterThanOrEqual(toeM);
      expect(s.crestCells.includes(i)).toBe(false);
    }
  });
  it('a mound lower than 0.3 m is not taken as the dam', () => {
    const low = sampleGrid(frame, (x, y) => 0.01 * y + Math.abs(x) / 10 + (Math.abs(y) <= 0.5 ? 0.2 : 0));
    const s = ok(setup(low, makeDam({ id: 'l', lines: across })));
    expect(s.demVisible).toBe(false);
    expect(s.heightSource).toBe('default');
  });
});

describe('breached dams', () => {
  const grid = vValley(frame, 10, 0.01);
  it('without a height: no water, volume 0, a note', () => {
    const s = ok(setup(grid, makeDam({ id: 'x', lines: across, status: 'breached', upstream: 'left' })));
    expect(s.holdsWater).toBe(false);
    expect(s.heightSource).toBe('breach');
    expect(s.crestElevM).toBe(s.bedElevM);
    expect(s.warnings.map((w) => w.code)).toContain('breached-no-storage');
    const fill = fillBehindCrest(grid, s);
    expect(fill.limitedBy).toBe('breach');
    expect(fill.waterLevelM).toBe(s.bedElevM);
    expect(pondAt(fill, fill.waterLevelM).volumeM3).toBe(0);
  });
  it('with a height: water up to the breach invert', () => {
    const s = ok(setup(grid, makeDam({ id: 'y', lines: across, status: 'breached', heightM: 0.4, upstream: 'left' })));
    expect(s.holdsWater).toBe(true);
    expect(s.crestElevM).toBe(0.4);
    expect(s.heightSource).toBe('measured');
    expect(pondAt(fillBehindCrest(grid, s), 0.4).volumeM3).toBeGreaterThan(0);
  });
});

describe('heights and skips', () => {
  const grid = vValley(frame, 10, 0.01);
  // Beaver dams rarely exceed 1.5 m and exceptionally reach about 3 m (Burchsted & Daniels 2014; from memory).
  it('zero, negative or non-finite heights skip the dam', () => {
    for (const h of [0, -0.5, NaN, Infinity]) {
      expect(skipCode(setup(grid, makeDam({ id: 'h', lines: across, heightM: h, upstream: 'left' })))).toBe('height-invalid');
    }
  });
  it('above 3 m skips as implausible; between 1.5 and 3 m warns and keeps', () => {
    expect(skipCode(setup(grid, makeDam({ id: 'h', lines: across, heightM: 3.5, upstream: 'left' })))).toBe('height-implausible');
    const high = ok(setup(grid, makeDam({ id: 'h', lines: across, heightM: 2.0, upstream: 'left' })));
    expect(high.warnings.map((w) => w.code)).toEqual(['height-high']);
    expect(high.crestElevM).toBe(2.0);
  });
  it('a crest over NoData, a one-cell crest or a point dam is skipped with a reason naming the dam', () => {
    const holed = sampleGrid(frame, (x, y) => (Math.abs(x) < 1 && Math.abs(y) < 1 ? NaN : 0.01 * y + Math.abs(x) / 10));
    const s = setup(holed, makeDam({ id: 'dam-7', lines: across }));
    expect(skipCode(s)).toBe('crest-over-nodata');
    expect('skip' in s && s.skip.message).toContain('dam-7');
    expect(skipCode(setup(grid, makeDam({ id: 'o', lines: [[[0.1, 0.1], [0.2, 0.1]]] })))).toBe('crest-too-short');
    const point: DamInput = { ...makeDam({ id: 'pt', lines: across }), geometry: { kind: 'point', x: 0, y: 0 } };
    expect(skipCode(setupCrest(grid, point, new Int32Array(0), DEFAULT_POND_PARAMS))).toBe('crest-needs-line');
  });
});
