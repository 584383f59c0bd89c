import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import {
  DEFAULT_RIPARIAN_DISTANCE_M,
  DEFAULT_RIPARIAN_RISE_M,
  INFLUENCE_INUNDATED,
  INFLUENCE_RIPARIAN,
  influenceZone,
  influenceZoneOfCells,
} from '../src/influence/zone.js';
import { createRng } from '../src/uncertainty/random.js';

/** A square grid of `n` cells of `cellM` metres with the centre of cell (mid, mid) at map (0, 0). */
function centredGrid(n: number, cellM: number, zOf: (x: number, y: number) => number): { grid: Grid; xs: Float64Array; ys: Float64Array } {
  const mid = (n - 1) / 2;
  const z = new Float32Array(n * n);
  const xs = new Float64Array(n * n);
  const ys = new Float64Array(n * n);
  for (let r = 0; r < n; r++) {
    for (let c = 0; c < n; c++) {
      const i = r * n + c;
      xs[i] = (c - mid) * cellM;
      ys[i] = (mid - r) * cellM;
      z[i] = zOf(xs[i] ?? 0, ys[i] ?? 0);
    }
  }
  const half = (n / 2) * cellM;
  return { grid: makeGrid({ width: n, height: n, z, transform: { x0: -half, y0: half, dx: cellM, dy: -cellM } }), xs, ys };
}

describe('influenceZone', () => {
  it('defaults to 50 m (Lowry 1993) and 1.0 m (Westbrook et al. 2006)', () => {
    expect(DEFAULT_RIPARIAN_DISTANCE_M).toBe(50);
    expect(DEFAULT_RIPARIAN_RISE_M).toBe(1.0);
  });

  it('on flat ground, a circular pond of radius r with reach D influences π(r + D)² within 1% (circle area)', () => {
    const r = 30;
    const D = 50;
    const { grid, xs, ys } = centredGrid(201, 1, () => 100);
    const level = new Float32Array(grid.z.length).fill(NaN);
    for (let i = 0; i < level.length; i++) if (Math.hypot(xs[i] ?? 0, ys[i] ?? 0) <= r) level[i] = 100.4;
    const res = influenceZone(grid, level, { distanceM: D, riseM: 1 });
    expect(Math.abs(res.inundatedAreaM2 - Math.PI * r * r) / (Math.PI * r * r)).toBeLessThan(0.01);
    const full = Math.PI * (r + D) ** 2;
    expect(Math.abs(res.influenceAreaM2 - full) / full).toBeLessThan(0.01);
    expect(res.influenceAreaM2).toBe(res.inundatedAreaM2 + res.riparianAreaM2);
  });

  it('on a cone z = s·ρ, the rise limit gives the analytic ring r0 < ρ ≤ r0 + Δz/s (annulus area)', () => {
    const s = 0.05;
    const r0 = 20; // pond up to ρ = 20 m: level = 1 m
    const rise = 1; // riparian up to z = 2 m: ρ ≤ 40 m, inside the 50 m reach
    const { grid, xs, ys } = centredGrid(161, 1, (x, y) => s * Math.hypot(x, y));
    const level = new Float32Array(grid.z.length).fill(NaN);
    for (let i = 0; i < level.length; i++) if ((grid.z[i] ?? 0) <= s * r0) level[i] = s * r0;
    const res = influenceZone(grid, level, { distanceM: 50, riseM: rise });
    const ring = Math.PI * ((r0 + rise / s) ** 2 - r0 * r0);
    expect(Math.abs(res.riparianAreaM2 - ring) / ring).toBeLessThan(0.01);
    // A cell just inside the limit is riparian, one just outside is not.
    const at = (x: number): number => res.classes[xs.findIndex((v, i) => v === x && ys[i] === 0)] ?? -1;
    expect(at(39)).toBe(INFLUENCE_RIPARIAN);
    expect(at(41)).toBe(0);
    expect(at(10)).toBe(INFLUENCE_INUNDATED);
  });

  it('on a gentle cone the distance limit binds instead: π((r0 + D)² − r0²)', () => {
    const s = 0.001;
    const r0 = 20;
    const D = 30;
    const { grid } = centredGrid(161, 1, (x, y) => s * Math.hypot(x, y));
    const level = new Float32Array(grid.z.length).fill(NaN);
    for (let i = 0; i < level.length; i++) if ((grid.z[i] ?? 0) <= s * r0) level[i] = s * r0;
    const res = influenceZone(grid, level, { distanceM: D, riseM: 1 });
    const ring = Math.PI * ((r0 + D) ** 2 - r0 * r0);
    expect(Math.abs(res.riparianAreaM2 - ring) / ring).toBeLessThan(0.01);
  });

  it('judges each cell against the water level of its nearest pond, not any pond', () => {
    // Ground at 11.5 m. West pond level 10 m (needs z ≤ 11: fails), east pond level 12 m (z ≤ 13: passes).
    const { grid, xs, ys } = centredGrid(120, 1, () => 11.5);
    const level = new Float32Array(grid.z.length).fill(NaN);
    for (let i = 0; i < level.length; i++) {
      if (Math.hypot((xs[i] ?? 0) + 20.5, ys[i] ?? 0) <= 5) level[i] = 10;
      if (Math.hypot((xs[i] ?? 0) - 20.5, ys[i] ?? 0) <= 5) level[i] = 12;
    }
    const res = influenceZone(grid, level, { distanceM: 40 });
    for (let i = 0; i < level.length; i++) {
      if (res.classes[i] !== INFLUENCE_RIPARIAN) continue;
      expect(xs[i]).toBeGreaterThan(0); // every riparian cell is nearer the east pond
    }
    expect(res.riparianAreaM2).toBeGreaterThan(1000);
  });

  it('splits riparian cells between owners by nearest pond; per-owner areas sum to the totals', () => {
    // Two equal ponds mirrored about x = 0, which runs along cell edges: the split is exactly even.
    const { grid, xs, ys } = centredGrid(120, 1, () => 5);
    const level = new Float32Array(grid.z.length).fill(NaN);
    const owner = new Int32Array(grid.z.length);
    for (let i = 0; i < level.length; i++) {
      if (Math.hypot((xs[i] ?? 0) + 12.5, ys[i] ?? 0) <= 6) {
        level[i] = 5.2;
        owner[i] = 1;
      }
      if (Math.hypot((xs[i] ?? 0) - 12.5, ys[i] ?? 0) <= 6) {
        level[i] = 5.2;
        owner[i] = 2;
      }
    }
    const res = influenceZone(grid, level, { distanceM: 25, owner });
    const by = res.byOwner;
    expect(by).toBeDefined();
    if (by === undefined || res.cellOwner === undefined) return;
    expect(by.riparianAreaM2[1]).toBe(by.riparianAreaM2[2]);
    expect(by.inundatedAreaM2[1]).toBe(by.inundatedAreaM2[2]);
    const sum = (a: Float64Array): number => a.reduce((x, y) => x + y, 0);
    expect(sum(by.riparianAreaM2)).toBe(res.riparianAreaM2);
    expect(sum(by.inundatedAreaM2)).toBe(res.inundatedAreaM2);
    for (let i = 0; i < level.length; i++) {
      if (res.classes[i] === 0) continue;
      expect(res.cellOwner[i]).toBe((xs[i] ?? 0) < 0 ? 1 : 2);
    }
  });

  it('keeps riparian cells inside the valley-bottom mask and never marks NoData', () => {
    const { grid, xs, ys } = centredGrid(80, 1, () => 1);
    const level = new Float32Array(grid.z.length).fill(NaN);
    const valley = new Uint8Array(grid.z.length);
    for (let i = 0; i < level.length; i++) {
      if (Math.hypot(xs[i] ?? 0, ys[i] ?? 0) <= 4) level[i] = 1.1;
      if (Math.abs(ys[i] ?? 0) <= 10) valley[i] = 1; // a 21 m wide valley floor
      if ((xs[i] ?? 0) === 15) grid.z[i] = NaN;
    }
    const res = influenceZone(grid, level, { distanceM: 30, valleyBottom: valley });
    let riparian = 0;
    for (let i = 0; i < level.length; i++) {
      if (res.classes[i] !== INFLUENCE_RIPARIAN) continue;
      riparian++;
      expect(Math.abs(ys[i] ?? 0)).toBeLessThanOrEqual(10);
      expect(xs[i]).not.toBe(15);
    }
    expect(riparian).toBeGreaterThan(500);
  });

  it('returns nothing when no cell is wet', () => {
    const { grid } = centredGrid(10, 1, () => 0);
    const res = influenceZone(grid, new Float32Array(100).fill(NaN));
    expect(res.influenceAreaM2).toBe(0);
    expect(res.classes.every((v) => v === 0)).toBe(true);
  });
});

describe('influenceZoneOfCells (pond cells as a list)', () => {
  /** A rough valley with a few ponds of their own levels and owners. */
  function scene(seed: number): { grid: Grid; level: Float32Array; owner: Int32Array; valley: Uint8Array } {
    const rng = createRng(seed);
    const n = 90;
    const { grid, xs, ys } = centredGrid(n, 1, (x, y) => 10 + 0.02 * Math.abs(x) + 0.01 * y + 0.5 * Math.sin(x / 3) * Math.cos(y / 4));
    for (let i = 0; i < grid.z.length; i++) grid.z[i] = grid.z[i]! + 0.3 * rng();
    const level = new Float32Array(grid.z.length).fill(NaN);
    const owner = new Int32Array(grid.z.length);
    const valley = new Uint8Array(grid.z.length);
    for (let p = 1; p <= 4; p++) {
      const cx = (rng() - 0.5) * 60;
      const cy = (rng() - 0.5) * 60;
      const rad = 3 + rng() * 6;
      const lev = 10 + rng();
      for (let i = 0; i < level.length; i++) {
        if (Math.hypot(xs[i]! - cx, ys[i]! - cy) <= rad) {
          level[i] = lev;
          owner[i] = p;
        }
      }
    }
    for (let i = 0; i < valley.length; i++) valley[i] = Math.abs(xs[i]!) < 35 ? 1 : 0;
    grid.z[5 * n + 7] = NaN;
    return { grid, level, owner, valley };
  }

  it('classifies each dry cell by its brute-force nearest pond cell: within D, at most Δz above its level, in the valley bottom', () => {
    // Reference: the definition, with the nearest pond cell found by trying every pond cell.
    for (let trial = 0; trial < 3; trial++) {
      const { grid, level, owner, valley } = scene(60 + trial);
      const D = 14;
      const rise = 0.6;
      const res = influenceZone(grid, level, { distanceM: D, riseM: rise, valleyBottom: valley, owner });
      const wet: number[] = [];
      for (let i = 0; i < level.length; i++) if (!Number.isNaN(level[i]!)) wet.push(i);
      const n = grid.width;
      let riparian = 0;
      let checked = 0;
      for (let i = 0; i < level.length; i++) {
        if (!Number.isNaN(level[i]!)) {
          expect(res.classes[i]).toBe(INFLUENCE_INUNDATED);
          expect(res.cellOwner?.[i]).toBe(owner[i]);
          continue;
        }
        let best = Infinity;
        for (const s of wet) best = Math.min(best, Math.hypot((i % n) - (s % n), Math.floor(i / n) - Math.floor(s / n)));
        const nearestCells = wet.filter((s) => Math.hypot((i % n) - (s % n), Math.floor(i / n) - Math.floor(s / n)) - best < 1e-9);
        const seed = nearestCells[0]!;
        // Equally near pond cells of different levels or owners: either may count (ties go to either seed).
        if (nearestCells.some((s) => level[s] !== level[seed])) continue;
        checked++;
        const expected = best <= D && grid.z[i]! <= level[seed]! + rise && valley[i] === 1 ? INFLUENCE_RIPARIAN : 0;
        expect(res.classes[i]).toBe(expected);
        if (expected === INFLUENCE_RIPARIAN) {
          riparian++;
          if (nearestCells.every((s) => owner[s] === owner[seed])) expect(res.cellOwner?.[i]).toBe(owner[seed]);
        }
      }
      expect(checked).toBeGreaterThan(7000);
      expect(riparian).toBeGreaterThan(100);
    }
  });

  it('equals the raster form for cells in any order; a cell listed twice counts once, as its last entry', () => {
    const { grid, level, owner, valley } = scene(9);
    const raster = influenceZone(grid, level, { distanceM: 12, riseM: 0.8, valleyBottom: valley, owner, candidates: { distanceMaxM: 16, riseMaxM: 1 } });
    const wet: number[] = [];
    for (let i = 0; i < level.length; i++) if (!Number.isNaN(level[i]!)) wet.push(i);
    const rng = createRng(3);
    const shuffled = wet.map((i) => ({ i, key: rng() })).sort((a, b) => a.key - b.key).map((e) => e.i);
    // A decoy entry for the first cell, overridden by the real one listed after it.
    const cells = Int32Array.from([shuffled[0]!, ...shuffled]);
    const levelM = Float32Array.from(cells, (i, k) => (k === 0 ? level[i]! - 5 : level[i]!));
    const owners = Int32Array.from(cells, (i, k) => (k === 0 ? 99 : owner[i]!));
    const list = influenceZoneOfCells(grid, { cells, levelM, owner: owners }, { distanceM: 12, riseM: 0.8, valleyBottom: valley, candidates: { distanceMaxM: 16, riseMaxM: 1 } });
    expect(Array.from(list.classes)).toEqual(Array.from(raster.classes));
    expect(Array.from(list.cellOwner!)).toEqual(Array.from(raster.cellOwner!));
    expect(list.riparianAreaM2).toBe(raster.riparianAreaM2);
    expect(list.inundatedAreaM2).toBe(raster.inundatedAreaM2);
    expect(Array.from(list.byOwner!.riparianAreaM2.subarray(0, 5))).toEqual(Array.from(raster.byOwner!.riparianAreaM2));
    expect(list.byOwner!.riparianAreaM2[99]).toBe(0);
    expect(list.candidates!.count).toBe(raster.candidates!.count);
    expect(Array.from(list.candidates!.cell.subarray(0, list.candidates!.count))).toEqual(Array.from(raster.candidates!.cell.subarray(0, raster.candidates!.count)));
    expect(raster.riparianAreaM2).toBeGreaterThan(100);
  });
});
