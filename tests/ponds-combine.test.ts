/**
 * Several dams on one valley: the combined water surface counts each cell
 * once, at the highest level reaching it; per-dam shares add up to the total.
 * The reference is the union of the ponds, each computed on its own by a
 * plain threshold flood fill.
 */
import { describe, expect, it } from 'vitest';
import { combinePonds } from '../src/ponds/combine.js';
import type { CrestSetup } from '../src/ponds/crest.js';
import type { PondFill } from '../src/ponds/fill.js';
import type { Grid } from '../src/grid/grid.js';
import { fillDam, makeDam, thresholdPond, vValley, type ValleyFrame } from './helpers/synthetic.js';

// V valley z = 0.01·y + |x|/10, 0.5 m cells, 140 m upstream of the lower dam.
const frame: ValleyFrame = { width: 61, height: 300, cellM: 0.5, damRow: 280 };
const grid = vValley(frame, 10, 0.01);

/** Union of independently computed ponds: per cell the highest level, volume Σ a·(level − z). */
function unionVolume(g: Grid, ponds: { setup: CrestSetup; fill: PondFill }[]): { areaM2: number; volumeM3: number } {
  const level = new Map<number, number>();
  for (const { setup, fill } of ponds) {
    for (const i of thresholdPond(g, setup.seedCells, setup.crestCells, fill.waterLevelM).cells) {
      level.set(i, Math.max(level.get(i) ?? -Infinity, fill.waterLevelM));
    }
  }
  let areaM2 = 0;
  let volumeM3 = 0;
  for (const [i, h] of level) {
    const a = g.cellAreaM2[Math.floor(i / g.width)]!;
    areaM2 += a;
    volumeM3 += a * (h - g.z[i]!);
  }
  return { areaM2, volumeM3 };
}

describe('combinePonds', () => {
  it('cascade: the lower pond drowns the upper dam; total = union of the two ponds, shares add up exactly', () => {
    // Lower dam at y = 0, 1.2 m: water level 1.2 m. Upper dam at y = 30 m (bed 0.3 m), 0.5 m: crest 0.8 m < 1.2 m.
    const lower = fillDam(grid, makeDam({ id: 'lower', lines: [[[-14, 0], [14, 0]]], heightM: 1.2, upstream: 'left' }));
    const upper = fillDam(grid, makeDam({ id: 'upper', lines: [[[-14, 30], [14, 30]]], heightM: 0.5, upstream: 'left' }));
    expect(upper.setup.crestElevM).toBeCloseTo(0.8, 3);
    const both = [lower, upper];
    const c = combinePonds(
      grid,
      both.map((p) => ({ fill: p.fill, waterLevelM: p.fill.waterLevelM })),
    );
    const ref = unionVolume(grid, both);
    expect(Math.abs(c.totalVolumeM3 / ref.volumeM3 - 1)).toBeLessThan(1e-9);
    expect(Math.abs(c.totalAreaM2 / ref.areaM2 - 1)).toBeLessThan(1e-12);
    expect(c.perPond[0]!.volumeM3 + c.perPond[1]!.volumeM3).toBe(c.totalVolumeM3);
    expect(c.perPond[0]!.areaM2 + c.perPond[1]!.areaM2).toBe(c.totalAreaM2);
    // The upper pond lies wholly under the lower one: it owns nothing and is drowned by pond 0.
    expect(c.perPond[1]!.cellCount).toBe(0);
    expect(c.perPond[1]!.drownedBy).toBe(0);
    expect(c.perPond[0]!.drownedBy).toBe(-1);
    // Less than the two ponds added up: the overlap is counted once.
    const upperAlone = thresholdPond(grid, upper.setup.seedCells, upper.setup.crestCells, upper.fill.waterLevelM);
    const lowerAlone = thresholdPond(grid, lower.setup.seedCells, lower.setup.crestCells, lower.fill.waterLevelM);
    expect(upperAlone.volumeM3).toBeGreaterThan(10);
    expect(c.totalVolumeM3).toBeLessThan(lowerAlone.volumeM3 + upperAlone.volumeM3 - 10);
  });

  it('separate ponds: total = sum of each alone; levels and owners set where wet, NaN / -1 where dry', () => {
    const lower = fillDam(grid, makeDam({ id: 'a', lines: [[[-14, 0], [14, 0]]], heightM: 0.3, upstream: 'left' }));
    const upper = fillDam(grid, makeDam({ id: 'b', lines: [[[-14, 60], [14, 60]]], heightM: 0.4, upstream: 'left' }));
    const c = combinePonds(grid, [
      { fill: lower.fill, waterLevelM: lower.fill.waterLevelM },
      { fill: upper.fill, waterLevelM: upper.fill.waterLevelM },
    ]);
    const a = thresholdPond(grid, lower.setup.seedCells, lower.setup.crestCells, lower.fill.waterLevelM);
    const b = thresholdPond(grid, upper.setup.seedCells, upper.setup.crestCells, upper.fill.waterLevelM);
    expect(Math.abs(c.perPond[0]!.volumeM3 / a.volumeM3 - 1)).toBeLessThan(1e-9);
    expect(Math.abs(c.perPond[1]!.volumeM3 / b.volumeM3 - 1)).toBeLessThan(1e-9);
    expect(c.perPond[1]!.drownedBy).toBe(-1);
    let wet = 0;
    let wrong = 0;
    for (let i = 0; i < c.owner.length; i++) {
      const o = c.owner[i]!;
      const lv = c.levelM[i]!;
      if (o < 0) {
        if (!Number.isNaN(lv)) wrong++;
        continue;
      }
      wet++;
      const inOwn = o === 0 ? a.cells.has(i) : b.cells.has(i);
      const h = Math.fround(o === 0 ? lower.fill.waterLevelM : upper.fill.waterLevelM);
      if (!inOwn || lv !== h || !(lv > grid.z[i]!)) wrong++;
    }
    expect(wrong).toBe(0);
    expect(wet).toBe(a.cellCount + b.cellCount);
  });

  it('equal levels over the same cells go to the lower index', () => {
    const p = fillDam(grid, makeDam({ id: 'p', lines: [[[-14, 0], [14, 0]]], heightM: 0.5, upstream: 'left' }));
    const c = combinePonds(grid, [
      { fill: p.fill, waterLevelM: 0.5 },
      { fill: p.fill, waterLevelM: 0.5 },
    ]);
    expect(c.perPond[1]!.cellCount).toBe(0);
    expect(c.perPond[0]!.volumeM3).toBe(c.totalVolumeM3);
  });
});
