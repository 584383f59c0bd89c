/**
 * Invariants on every pond fixture: depth ≥ 0; volume = Σ depth × cell
 * area; a constant elevation offset changes no volume; a quarter turn of
 * the DEM and the dams changes no volume; the stage–storage curve is
 * monotone and ends at the reported volume; per-dam shares add up to the
 * total. (Physical invariants of the water-surface definition.)
 */
import { describe, expect, it } from 'vitest';
import type { Grid } from '../src/grid/grid.js';
import type { DamInput } from '../src/inventory.js';
import { combinePonds } from '../src/ponds/combine.js';
import type { PondLimit } from '../src/ponds/fill.js';
import { pondAt, stageStorage } from '../src/ponds/stage-storage.js';
import {
  fillDam,
  makeDam,
  offsetGrid,
  rectValley,
  rotateGrid90,
  sampleGrid,
  vValley,
  valueNoise,
  type ValleyFrame,
} from './helpers/synthetic.js';

interface Fixture {
  name: string;
  grid: Grid;
  dams: DamInput[];
  /** What limits each dam's pond. */
  limits: PondLimit[];
}

const v: ValleyFrame = { width: 61, height: 241, cellM: 0.5, damRow: 220 };
const zV = (x: number, y: number): number => 0.01 * y + Math.abs(x) / 10;
const rough: ValleyFrame = { width: 81, height: 161, cellM: 1, damRow: 140 };
const noise = valueNoise(rough.width, rough.height, 8, 3, 7);
const across = (y: number, half = 14): [number, number][][] => [[[-half, y], [half, y]]];

const fixtures: Fixture[] = [
  { name: 'V valley', grid: vValley(v, 10, 0.01), dams: [makeDam({ id: 'v', lines: across(0), upstream: 'left' })], limits: ['crest'] },
  {
    name: 'rectangular valley',
    grid: rectValley({ width: 40, height: 240, cellM: 0.5, damRow: 220 }, 10, 0.01),
    dams: [makeDam({ id: 'r', lines: across(0, 8), heightM: 1, upstream: 'left' })],
    limits: ['crest'],
  },
  { name: 'spill', grid: vValley(v, 10, 0.01), dams: [makeDam({ id: 's', lines: across(0, 5), upstream: 'left' })], limits: ['spill'] },
  {
    name: 'edge',
    grid: vValley({ width: 61, height: 120, cellM: 0.5, damRow: 100 }, 10, 0.01),
    dams: [makeDam({ id: 'e', lines: across(0), upstream: 'left' })],
    limits: ['edge'],
  },
  {
    name: 'nodata',
    grid: sampleGrid(v, (x, y) => (Math.abs(x) <= 1 && y >= 60 && y <= 62 ? NaN : zV(x, y))),
    dams: [makeDam({ id: 'n', lines: across(0), upstream: 'left' })],
    limits: ['nodata'],
  },
  {
    name: 'cascade',
    grid: vValley(v, 10, 0.01),
    dams: [
      makeDam({ id: 'lo', lines: across(0), heightM: 1.0, upstream: 'left' }),
      makeDam({ id: 'hi', lines: across(30), heightM: 0.5, upstream: 'left' }),
    ],
    limits: ['crest', 'crest'],
  },
  {
    name: 'rough valley',
    grid: sampleGrid(rough, (x, y) => {
      const col = Math.floor(x + rough.width / 2);
      const row = rough.damRow - Math.round(y);
      return 0.01 * y + Math.abs(x) / 8 + 0.4 * noise[row * rough.width + col]!;
    }),
    dams: [
      makeDam({ id: 'a', lines: [[[-35, 0], [35, 0]]], heightM: 1.1, upstream: 'left' }),
      makeDam({ id: 'b', lines: [[[-30, 50.5], [-2, 52], [30, 50.5]]], upstream: 'left' }),
    ],
    limits: ['crest', 'edge'],
  },
];

/** Volumes and levels of each dam's pond, and the combined total. */
function evaluate(grid: Grid, dams: DamInput[]) {
  const ponds = dams.map((d) => fillDam(grid, d));
  const combined = combinePonds(
    grid,
    ponds.map((p) => ({ fill: p.fill, waterLevelM: p.fill.waterLevelM })),
  );
  return { ponds, combined };
}

const relDiff = (a: number, b: number): number => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b)));

describe.each(fixtures)('invariants: $name', ({ grid, dams, limits }) => {
  const { ponds, combined } = evaluate(grid, dams);

  it('the fixture exercises the intended limit, with water behind every dam', () => {
    expect(ponds.map((p) => p.fill.limitedBy)).toEqual(limits);
    for (const { fill } of ponds) expect(pondAt(fill, fill.waterLevelM).volumeM3).toBeGreaterThan(10);
  });

  it('depth ≥ 0 and volume = Σ depth × cell area, per pond and combined', () => {
    for (const { fill } of ponds) {
      const h = fill.waterLevelM;
      const pond = pondAt(fill, h);
      let sum = 0;
      let negative = 0;
      for (let k = 0; k < pond.cellCount; k++) {
        const i = fill.order[k]!;
        const depth = h - grid.z[i]!;
        if (!(depth > 0)) negative++;
        sum += depth * grid.cellAreaM2[Math.floor(i / grid.width)]!;
      }
      expect(negative).toBe(0);
      expect(relDiff(pond.volumeM3, sum)).toBeLessThan(1e-9);
    }
    let sum = 0;
    let negative = 0;
    for (let i = 0; i < combined.owner.length; i++) {
      if (combined.owner[i]! < 0) continue;
      const h = ponds[combined.owner[i]!]!.fill.waterLevelM;
      if (!(h - grid.z[i]! > 0)) negative++;
      sum += (h - grid.z[i]!) * grid.cellAreaM2[Math.floor(i / grid.width)]!;
    }
    expect(negative).toBe(0);
    expect(relDiff(combined.totalVolumeM3, sum)).toBeLessThan(1e-9);
    expect(combined.perPond.reduce((s, p) => s + p.volumeM3, 0)).toBe(combined.totalVolumeM3);
  });

  it('a constant elevation offset (1024 m, exact in Float32) changes no volume and shifts levels by it', () => {
    const shifted = evaluate(offsetGrid(grid, 1024), dams);
    ponds.forEach(({ fill }, k) => {
      const other = shifted.ponds[k]!.fill;
      expect(other.waterLevelM).toBe(fill.waterLevelM + 1024);
      expect(other.limitedBy).toBe(fill.limitedBy);
      expect(relDiff(pondAt(other, other.waterLevelM).volumeM3, pondAt(fill, fill.waterLevelM).volumeM3)).toBeLessThan(1e-12);
    });
    expect(relDiff(shifted.combined.totalVolumeM3, combined.totalVolumeM3)).toBeLessThan(1e-9);
  });

  it('turning the DEM and the dams a quarter turn changes no volume', () => {
    const turn = rotateGrid90(grid);
    const turned = dams.map((d) =>
      d.geometry.kind === 'line' ? { ...d, geometry: { kind: 'line' as const, lines: d.geometry.lines.map((l) => l.map(turn.point)) } } : d,
    );
    const rotated = evaluate(turn.grid, turned);
    ponds.forEach(({ fill }, k) => {
      const other = rotated.ponds[k]!.fill;
      expect(other.waterLevelM).toBe(fill.waterLevelM);
      expect(other.limitedBy).toBe(fill.limitedBy);
      const a = pondAt(fill, fill.waterLevelM);
      const b = pondAt(other, other.waterLevelM);
      expect(b.cellCount).toBe(a.cellCount);
      expect(relDiff(b.volumeM3, a.volumeM3)).toBeLessThan(1e-9);
    });
    expect(relDiff(rotated.combined.totalVolumeM3, combined.totalVolumeM3)).toBeLessThan(1e-9);
  });

  it('the stage–storage curve is monotone and ends at the reported volume', () => {
    for (const { setup, fill } of ponds) {
      const rows = stageStorage(fill, setup.bedElevM, 0.1);
      for (let k = 1; k < rows.length; k++) {
        expect(rows[k]![0]).toBeGreaterThan(rows[k - 1]![0]);
        expect(rows[k]![1]).toBeGreaterThanOrEqual(rows[k - 1]![1]);
        expect(rows[k]![2]).toBeGreaterThanOrEqual(rows[k - 1]![2]);
      }
      const last = rows[rows.length - 1]!;
      expect(last[0]).toBe(fill.waterLevelM);
      expect(last[2]).toBe(pondAt(fill, fill.waterLevelM).volumeM3);
    }
  });
});
