/**
 * pondage against GRASS GIS r.lake (version in fixtures/reference/rlake-reference.json),
 * a general-purpose lake-filling tool, on a seeded synthetic valley with
 * three dams. r.lake was seeded upstream of each crest (raised 100 m as a
 * wall) at the water level pondage finds; it floods 8-connected cells below
 * that level, as pondage does. GRASS is not needed here: its answers are
 * committed; fixtures/reference/make-rlake.sh regenerates them.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { combinePonds } from '../src/ponds/combine.js';
import { pondAt } from '../src/ponds/stage-storage.js';
import { fillDam, parseAsciiGrid, referenceDams, referenceValley } from './helpers/synthetic.js';

interface ReferencePond {
  id: string;
  waterLevelM: number;
  limitedBy: string;
  cellCount: number;
  areaM2: number;
  volumeM3: number;
}
interface Reference {
  dams: unknown[];
  ponds: ReferencePond[];
  union: { cellCount: number; areaM2: number; volumeM3: number };
}

const read = (name: string): string => readFileSync(new URL(`../fixtures/reference/${name}`, import.meta.url), 'utf8');
const grid = parseAsciiGrid(read('rlake-valley.asc'));
const reference = JSON.parse(read('rlake-reference.json')) as Reference;
const dams = referenceDams();
const ponds = dams.map((d) => fillDam(grid, d));
const rel = (a: number, b: number): number => Math.abs(a / b - 1);

describe('GRASS r.lake reference', () => {
  it('the committed valley and dams are the ones the seeded generator makes', () => {
    expect(Array.from(grid.z)).toEqual(Array.from(referenceValley().z));
    expect(JSON.parse(JSON.stringify(dams.map((d) => ({ id: d.id, geometry: d.geometry, heightM: d.heightM, upstream: d.upstream }))))).toEqual(
      reference.dams,
    );
  });

  it('covers a crest-limited pond, a drowned upper dam and a spill-limited pond', () => {
    expect(reference.ponds.map((p) => p.limitedBy)).toEqual(['crest', 'crest', 'spill']);
    expect(ponds.map((p) => p.fill.limitedBy)).toEqual(['crest', 'crest', 'spill']);
  });

  for (const [k, dam] of dams.entries()) {
    it(`dam ${dam.id}: same water level; area and volume within 0.5 % of r.lake`, () => {
      const ref = reference.ponds[k]!;
      expect(ref.id).toBe(dam.id);
      const { fill } = ponds[k]!;
      expect(fill.waterLevelM).toBeCloseTo(ref.waterLevelM, 9);
      const pond = pondAt(fill, fill.waterLevelM);
      expect(rel(pond.areaM2, ref.areaM2)).toBeLessThan(0.005);
      expect(rel(pond.volumeM3, ref.volumeM3)).toBeLessThan(0.005);
      // Same connectivity and level rule: the very same cells (r.lake stores depths as Float32, hence volume rounding).
      expect(pond.cellCount).toBe(ref.cellCount);
    });
  }

  it('combined water surface: total within 0.5 % of the union of the r.lake lakes', () => {
    const c = combinePonds(
      grid,
      ponds.map((p) => ({ fill: p.fill, waterLevelM: p.fill.waterLevelM })),
    );
    expect(rel(c.totalAreaM2, reference.union.areaM2)).toBeLessThan(0.005);
    expect(rel(c.totalVolumeM3, reference.union.volumeM3)).toBeLessThan(0.005);
    expect(c.perPond[1]!.drownedBy).toBe(0);
  });
});
