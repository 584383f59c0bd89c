import { booleanPointInPolygon } from '@turf/boolean-point-in-polygon';
import { describe, expect, it } from 'vitest';
import {
  findSelfIntersection,
  rasterisePolygons,
  type AreaFeature,
  type PolygonCoords,
  type Ring,
} from '../src/grid/rasterise-polygon.js';
import type { GeoTransform } from '../src/grid/transform.js';
import { createRng, type Rng } from '../src/uncertainty/random.js';

/** A star-shaped (hence simple) closed ring around (cx, cy) with radii in [rMin, rMax]. */
function starRing(rng: Rng, cx: number, cy: number, rMin: number, rMax: number, vertices: number, clockwise: boolean): number[][] {
  const ring: number[][] = [];
  for (let k = 0; k < vertices; k++) {
    const a = ((clockwise ? -1 : 1) * 2 * Math.PI * (k + 0.2 + 0.6 * rng())) / vertices;
    const r = rMin + (rMax - rMin) * rng();
    ring.push([cx + r * Math.cos(a), cy + r * Math.sin(a)]);
  }
  const first = ring[0] ?? [0, 0];
  ring.push([first[0] ?? 0, first[1] ?? 0]);
  return ring;
}

const t: GeoTransform = { x0: 1000, y0: 5000, dx: 2, dy: -2 }; // 2 m cells, north-up
const width = 90;
const height = 70;

describe('rasterisePolygons', () => {
  it("agrees with turf's booleanPointInPolygon (general-purpose reference library) at every cell centre of seeded random polygons with holes and multipolygons", () => {
    const rng = createRng(7);
    let inside = 0;
    for (let trial = 0; trial < 12; trial++) {
      const polygons: number[][][][] = [];
      const parts = 1 + (trial % 3);
      for (let p = 0; p < parts; p++) {
        const cx = 1000 + 30 + 120 * rng();
        const cy = 5000 - 30 - 80 * rng();
        const outer = starRing(rng, cx, cy, 12, 40, 6 + Math.floor(rng() * 30), false);
        const rings = [outer];
        if (trial % 2 === 0) rings.push(starRing(rng, cx, cy, 2, 10, 5 + Math.floor(rng() * 8), true));
        polygons.push(rings);
      }
      // Keep only parts that do not overlap earlier parts (a valid MultiPolygon); checked by turf itself.
      const valid: number[][][][] = [];
      for (const poly of polygons) {
        const clash = valid.some((q) =>
          (poly[0] ?? []).some((pt) => booleanPointInPolygon(pt, { type: 'Polygon', coordinates: q })) ||
          (q[0] ?? []).some((pt) => booleanPointInPolygon(pt, { type: 'Polygon', coordinates: poly })),
        );
        if (!clash) valid.push(poly);
      }
      const feature: AreaFeature = { id: `t${trial}`, polygons: valid };
      const { labels, warnings } = rasterisePolygons({ width, height, transform: t }, [feature]);
      expect(warnings.filter((w) => w.code === 'self-intersecting-ring')).toEqual([]);
      const geometry = { type: 'MultiPolygon' as const, coordinates: valid };
      for (let r = 0; r < height; r++) {
        for (let c = 0; c < width; c++) {
          const x = t.x0 + (c + 0.5) * t.dx;
          const y = t.y0 + (r + 0.5) * t.dy;
          const expected = booleanPointInPolygon([x, y], geometry);
          expect(labels[r * width + c] === 1, `trial ${trial} cell (${c},${r})`).toBe(expected);
          if (expected) inside++;
        }
      }
    }
    expect(inside).toBeGreaterThan(1000); // the comparison covered many inside cells too
  });

  it('gives the exact area of a cell-aligned rectangle (width × height)', () => {
    // 40 m × 60 m rectangle on cell boundaries of 2 m cells: 20 × 30 = 600 cells = 2400 m².
    const rect: PolygonCoords = [[[1010, 4990], [1050, 4990], [1050, 4930], [1010, 4930], [1010, 4990]]];
    const { cellCounts } = rasterisePolygons({ width, height, transform: t }, [{ id: 'r', polygons: [rect] }]);
    expect((cellCounts[0] ?? 0) * 4).toBe(40 * 60);
  });

  it('gives the exact area of a right triangle with cell-aligned legs (½ · base · height)', () => {
    // Legs 2L and L cells along cell edges; the hypotenuse never passes through a cell centre,
    // and per row the centre rule is exact, so the count is (2L · L) / 2 = L² cells.
    const L = 25;
    const x0 = 1010;
    const y0 = 4990;
    const tri: PolygonCoords = [[[x0, y0], [x0 + 2 * L * 2, y0], [x0, y0 - L * 2], [x0, y0]]];
    const { cellCounts } = rasterisePolygons({ width, height, transform: t }, [{ id: 'tri', polygons: [tri] }]);
    expect((cellCounts[0] ?? 0) * 4).toBe((2 * L * 2 * (L * 2)) / 2);
  });

  it('cuts holes, whatever the ring orientation (even–odd rule)', () => {
    const outer: Ring = [[1010, 4990], [1050, 4990], [1050, 4950], [1010, 4950]];
    const holeSameWinding: Ring = [[1020, 4980], [1040, 4980], [1040, 4960], [1020, 4960]];
    const { cellCounts } = rasterisePolygons({ width, height, transform: t }, [
      { id: 'h', polygons: [[outer, holeSameWinding]] },
    ]);
    expect(cellCounts[0]).toBe(20 * 20 - 10 * 10);
  });

  it('lets the first polygon keep overlapped cells, counts them and warns', () => {
    const a: PolygonCoords = [[[1010, 4990], [1030, 4990], [1030, 4970], [1010, 4970]]]; // 10 × 10 cells
    const b: PolygonCoords = [[[1020, 4980], [1040, 4980], [1040, 4960], [1020, 4960]]]; // overlaps a on 5 × 5
    const res = rasterisePolygons({ width, height, transform: t }, [
      { id: 'a', polygons: [a] },
      { id: 'b', polygons: [b] },
    ]);
    expect(res.overlapCells).toBe(25);
    expect(Array.from(res.cellCounts)).toEqual([100, 75]);
    expect(res.labels[Math.floor((5000 - 4975) / 2) * width + Math.floor((1025 - 1000) / 2)]).toBe(1);
    expect(res.warnings.map((w) => w.code)).toEqual(['overlapping-polygons']);
  });

  it('shares no cell between polygons with a common edge (half-open boundary rule)', () => {
    const a: PolygonCoords = [[[1011, 4990], [1031, 4990], [1031, 4970], [1011, 4970]]]; // edges through centres
    const b: PolygonCoords = [[[1031, 4990], [1051, 4990], [1051, 4970], [1031, 4970]]];
    const res = rasterisePolygons({ width, height, transform: t }, [
      { id: 'a', polygons: [a] },
      { id: 'b', polygons: [b] },
    ]);
    expect(res.overlapCells).toBe(0);
    expect((res.cellCounts[0] ?? 0) + (res.cellCounts[1] ?? 0)).toBe(20 * 10);
  });

  it('warns about a feature that covers no cell of the grid', () => {
    const far: PolygonCoords = [[[0, 0], [10, 0], [10, 10], [0, 10]]];
    const res = rasterisePolygons({ width, height, transform: t }, [{ id: 'far', polygons: [far] }]);
    expect(res.cellCounts[0]).toBe(0);
    expect(res.warnings.map((w) => w.code)).toEqual(['polygon-outside-grid']);
  });

  it('detects self-intersecting rings (bowtie, hole crossing its outer ring) and passes simple ones', () => {
    const bowtie: PolygonCoords = [[[0, 0], [10, 10], [10, 0], [0, 10], [0, 0]]];
    expect(findSelfIntersection(bowtie)).toBe(true);
    const crossingHole: PolygonCoords = [
      [[0, 0], [10, 0], [10, 10], [0, 10]],
      [[5, 5], [15, 5], [15, 6], [5, 6]],
    ];
    expect(findSelfIntersection(crossingHole)).toBe(true);
    const backtrack: PolygonCoords = [[[0, 0], [10, 0], [5, 0], [5, 5]]]; // collinear overlap
    expect(findSelfIntersection(backtrack)).toBe(true);
    const withHole: PolygonCoords = [
      [[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]],
      [[2, 2], [4, 2], [4, 4], [2, 4], [2, 2]],
    ];
    expect(findSelfIntersection(withHole)).toBe(false);
    const rng = createRng(3);
    expect(findSelfIntersection([starRing(rng, 0, 0, 5, 9, 200, false)])).toBe(false);
    const res = rasterisePolygons({ width, height, transform: t }, [
      { id: 'bow', polygons: [[[[1010, 4990], [1050, 4950], [1050, 4990], [1010, 4950]]]] },
    ]);
    expect(res.warnings.map((w) => w.code)).toContain('self-intersecting-ring');
  });
});
