/**
 * The generated demo valley and bench landscape: repeatable from the seed, and
 * shaped the way the README and the pipeline's checks rely on.
 */
import { createHash } from 'node:crypto';
import { beforeAll, describe, expect, it } from 'vitest';
import { generateBenchScene, generateDemoValley, type DemoDam, type DemoScene } from '../src/demo/index.js';
import { addGaussianNoise, normalQuantile } from '../src/demo/lattice.js';
import { DEMO_DAM_ROWS } from '../src/demo/dam-table.js';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { MinHeap } from '../src/grid/priority-queue.js';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import type { DamInput } from '../src/inventory.js';
import { setupCrest } from '../src/ponds/crest.js';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { DEFAULT_WATER_PARAMS, detectWaterSurface } from '../src/ponds/water-surface.js';
import { createRng } from '../src/uncertainty/random.js';

const SMALL = { width: 800, height: 640 } as const;

function zHash(scene: DemoScene): string {
  return createHash('sha256').update(Buffer.from(scene.z.buffer, scene.z.byteOffset, scene.z.byteLength)).digest('hex');
}

function cellOf(s: DemoScene, x: number, y: number): number {
  const c = Math.floor((x - s.transform.x0) / s.cellM);
  const r = Math.floor((s.transform.y0 - y) / s.cellM);
  if (c < 0 || c >= s.width || r < 0 || r >= s.height) throw new Error(`(${x}, ${y}) is off the grid`);
  return r * s.width + c;
}

function zAt(s: DemoScene, x: number, y: number): number {
  return s.z[cellOf(s, x, y)]!;
}

/** Mean of the 3 × 3 cells around (x, y): the lidar noise shrinks by 3. */
function mean3(s: DemoScene, x: number, y: number): number {
  let sum = 0;
  for (let dy = -1; dy <= 1; dy++) for (let dx = -1; dx <= 1; dx++) sum += zAt(s, x + dx * s.cellM, y + dy * s.cellM);
  return sum / 9;
}

/** Lowest cell the crest crosses (4-connected supercover, the pond engine's rule), and its centre. */
function lineLowest(s: DemoScene, lines: [number, number][][]): { z: number; x: number; y: number } {
  let best = { z: Infinity, x: 0, y: 0 };
  for (const i of rasteriseLines(s, lines).cells) {
    const z = s.z[i]!;
    const c = i % s.width;
    const r = (i - c) / s.width;
    if (z < best.z) best = { z, x: s.transform.x0 + (c + 0.5) * s.cellM, y: s.transform.y0 - (r + 0.5) * s.cellM };
  }
  return best;
}

/** Lowest cell centre within `r` metres of (x, y). */
function lowestNear(s: DemoScene, x: number, y: number, r: number): { z: number; x: number; y: number } {
  let best = { z: Infinity, x, y };
  for (let dy = -r; dy <= r; dy += s.cellM) {
    for (let dx = -r; dx <= r; dx += s.cellM) {
      if (dx * dx + dy * dy > r * r) continue;
      const z = zAt(s, x + dx, y + dy);
      if (z < best.z) best = { z, x: x + dx, y: y + dy };
    }
  }
  return best;
}

/** The dam's bed: lowest cell on its crest line, or in the stream within 5 m of a point. */
function bedOf(s: DemoScene, dam: DemoDam): { z: number; x: number; y: number } {
  return dam.geometry.kind === 'line' ? lineLowest(s, dam.geometry.lines) : lowestNear(s, dam.geometry.x, dam.geometry.y, 5);
}

/** Height the dam's crest stands at: the file's height, else the generator's true height. */
function heightOf(dam: DemoDam): number {
  return dam.properties.height_m ?? dam.truth.heightM;
}

/**
 * 4-connected flood over cells below `level`, starting 3 m upstream of the
 * dam's stream crossing, with the dam's own crest cells as walls; limited to
 * `radiusM` around the dam.
 */
function flood(s: DemoScene, dam: DemoDam, level: number, radiusM = 800): Uint8Array {
  const { width, height } = s;
  const wet = new Uint8Array(width * height);
  if (dam.geometry.kind === 'line') for (const c of rasteriseLines(s, dam.geometry.lines).cells) wet[c] = 2;
  const [px, py] = dam.truth.streamPoint;
  const [tx, ty] = dam.truth.valleyTangent;
  const c0 = Math.floor((px - s.transform.x0) / s.cellM);
  const r0 = Math.floor((s.transform.y0 - py) / s.cellM);
  const reach = Math.round(radiusM / s.cellM);
  const stack: number[] = [cellOf(s, px - 3 * tx, py - 3 * ty)];
  while (stack.length > 0) {
    const i = stack.pop()!;
    if (wet[i] !== 0 || !(s.z[i]! < level)) continue;
    wet[i] = 1;
    const c = i % width;
    const r = (i - c) / width;
    if (Math.abs(c - c0) > reach || Math.abs(r - r0) > reach) continue;
    if (c > 0) stack.push(i - 1);
    if (c < width - 1) stack.push(i + 1);
    if (r > 0) stack.push(i - width);
    if (r < height - 1) stack.push(i + width);
  }
  return wet;
}

/** Checks every dam of a scene against the terrain; returns one message per failure. */
function terrainProblems(s: DemoScene): string[] {
  const problems: string[] = [];
  for (const dam of s.dams) {
    const bed = bedOf(s, dam);
    let ux: number;
    let uy: number;
    if (dam.geometry.kind === 'line') {
      const [[ax, ay], [bx, by]] = dam.geometry.lines[0] as [[number, number], [number, number]];
      const len = Math.hypot(bx - ax, by - ay);
      ux = (bx - ax) / len;
      uy = (by - ay) / len;
      const [tx, ty] = dam.truth.valleyTangent;
      if (Math.abs(ux * tx + uy * ty) > 0.02) problems.push(`${dam.id}: crest not perpendicular to the valley axis`);
      const reach = bed.z + heightOf(dam);
      const low = [zAt(s, ax, ay), zAt(s, bx, by)].filter((z) => z < reach).length;
      const spill = dam.truth.roles.includes('spill');
      if (!spill && low > 0) problems.push(`${dam.id}: a crest end stands below bed + height`);
      if (spill && low !== 1) problems.push(`${dam.id}: the spill case should have exactly one low end, has ${low}`);
    } else {
      const [tx, ty] = dam.truth.valleyTangent;
      ux = -ty;
      uy = tx;
      const [sx, sy] = dam.truth.streamPoint;
      if (Math.hypot(dam.geometry.x - sx, dam.geometry.y - sy) > 5) problems.push(`${dam.id}: point more than 5 m from the stream`);
    }
    for (const side of [-1, 1]) {
      const ground = mean3(s, bed.x + side * 30 * ux, bed.y + side * 30 * uy);
      if (!(bed.z < ground - 0.1)) problems.push(`${dam.id}: bed ${bed.z.toFixed(2)} not below the ground 30 m to the side (${ground.toFixed(2)})`);
    }
  }
  return problems;
}

describe('demo valley: repeatable from its seed', () => {
  it('gives identical bytes and dams for the same seed, and different ones for another', () => {
    const a = generateDemoValley({ seed: 7, ...SMALL });
    const b = generateDemoValley({ seed: 7, ...SMALL });
    const c = generateDemoValley({ seed: 8, ...SMALL });
    expect(zHash(a)).toBe(zHash(b));
    expect(a.dams).toEqual(b.dams);
    expect(zHash(c)).not.toBe(zHash(a));
    expect(c.dams.map((d) => d.geometry)).not.toEqual(a.dams.map((d) => d.geometry));
    // Same ids and attributes: only the terrain and geometry depend on the seed.
    expect(c.dams.map((d) => d.properties)).toEqual(a.dams.map((d) => d.properties));
  });

  it('rejects grids too small for the layout', () => {
    expect(() => generateDemoValley({ width: 300, height: 300 })).toThrow(/at least 500 m/);
    expect(() => generateDemoValley({ seed: 1.5, ...SMALL })).toThrow(/integer/);
  });

  it('keeps every dam on its valley floor at a reduced size', () => {
    const s = generateDemoValley(SMALL);
    expect(s.dams).toHaveLength(generateDemoValley({ seed: 99, ...SMALL }).dams.length);
    expect(terrainProblems(s)).toEqual([]);
  });
});

describe('demo valley at the default size', () => {
  let s: DemoScene;
  beforeAll(() => {
    s = generateDemoValley();
  });

  it('is the documented grid: 2000 × 1600 cells of 1 m, north-up UTM 12N', () => {
    expect([s.width, s.height, s.cellM, s.epsg, s.seed]).toEqual([2000, 1600, 1, 32612, 20261201]);
    expect(s.z).toHaveLength(2000 * 1600);
    expect(s.transform.dx).toBe(1);
    expect(s.transform.dy).toBe(-1);
    expect(s.z.every((v) => Number.isFinite(v))).toBe(true);
  });

  it('holds the dams the README counts', () => {
    const f = s.facts.dams;
    const status = (st: string): number => s.dams.filter((d) => d.properties.status === st).length;
    expect(s.dams.length).toBeGreaterThanOrEqual(30);
    expect(status('breached')).toBeGreaterThanOrEqual(1);
    expect(status('candidate')).toBeGreaterThanOrEqual(3);
    expect(status('proposed')).toBeGreaterThanOrEqual(2);
    expect(s.dams.filter((d) => d.geometry.kind === 'point').length).toBeGreaterThanOrEqual(2);
    const measured = s.dams.filter((d) => d.properties.height_m !== undefined);
    expect(measured.length).toBeGreaterThan(0);
    expect(measured.length).toBeLessThan(s.dams.length);
    for (const d of measured) {
      if (d.properties.status === 'confirmed') expect(d.properties.height_m).toSatisfy((h: number) => h >= 0.4 && h <= 1.6);
    }
    for (const d of s.dams.filter((x) => x.properties.status === 'candidate')) {
      expect(d.properties.confidence).toSatisfy((c: number) => c >= 0.3 && c <= 0.9);
    }
    expect(new Set(s.dams.map((d) => d.properties.year))).toEqual(new Set([2019, 2024]));
    expect(new Set(s.dams.map((d) => d.id)).size).toBe(s.dams.length);
    // The facts are counted from the list, and the summary quotes them.
    expect(f.total).toBe(s.dams.length);
    expect(f.byStatus.candidate).toBe(status('candidate'));
    expect(f.measuredHeights).toBe(measured.length);
    expect(f.lines + f.points).toBe(f.total);
    expect(s.facts.summary).toContain(`${f.total} dams: ${f.byStatus.confirmed} confirmed, ${f.byStatus.candidate} candidates`);
  });

  it('puts every bed on the valley floor and every crest end above the crest, except the spill case', () => {
    expect(terrainProblems(s)).toEqual([]);
    expect(s.facts.cases.spill).toHaveLength(1);
  });

  it('has valleys in the ranges the brief sets', () => {
    for (const c of s.channels) {
      expect(c.slopePct[0]).toBeGreaterThanOrEqual(0.3);
      expect(c.slopePct[1]).toBeLessThanOrEqual(2);
      expect(c.floorWidthM[0]).toBeGreaterThanOrEqual(20);
      expect(c.floorWidthM[1]).toBeLessThanOrEqual(80);
      expect(c.streamDepthM[0]).toBeGreaterThanOrEqual(0.3);
      expect(c.streamDepthM[1]).toBeLessThanOrEqual(0.8);
      expect(c.streamWidthM[0]).toBeGreaterThanOrEqual(2);
      expect(c.streamWidthM[1]).toBeLessThanOrEqual(4);
    }
    const [main, ...tribs] = s.channels;
    for (const t of tribs) expect(main!.slopePct[1]).toBeLessThan(t.slopePct[0]);
  });

  it('drains the main stem to the outlet: the smoothed stream profile never rises downstream', () => {
    const onGrid = ([x, y]: [number, number]): boolean => x < s.transform.x0 + s.width * s.cellM && y > s.transform.y0 - s.height * s.cellM;
    const thalweg = s.channels.find((c) => c.id === 'MS')!.thalweg.filter(onGrid);
    expect(thalweg.length).toBeGreaterThan(300);
    const z = thalweg.map(([x, y]) => zAt(s, x, y));
    const half = 5; // 11 samples, 5 m apart
    const smooth = z.map((_, i) => {
      const a = Math.max(0, i - half);
      const b = Math.min(z.length, i + half + 1);
      return z.slice(a, b).reduce((p, q) => p + q, 0) / (b - a);
    });
    for (let i = 0; i + 10 < smooth.length; i += 10) expect(smooth[i + 10]!).toBeLessThan(smooth[i]!);
    // The lowest cell of the grid's edge is where the main stem leaves it.
    let low = { z: Infinity, x: 0, y: 0 };
    for (let c = 0; c < s.width; c++) {
      for (const r of c === 0 || c === s.width - 1 ? Array.from({ length: s.height }, (_, k) => k) : [0, s.height - 1]) {
        const v = s.z[r * s.width + c]!;
        if (v < low.z) low = { z: v, x: s.transform.x0 + c + 0.5, y: s.transform.y0 - r - 0.5 };
      }
    }
    expect(Math.hypot(low.x - s.outlet.x, low.y - s.outlet.y)).toBeLessThan(40);
  });

  it('drowns the cascade dam in the taller pond below it, and spills around the short crest', () => {
    const byId = new Map(s.dams.map((d) => [d.id, d]));
    const [pair] = s.facts.cases.cascade;
    const lower = byId.get(pair!.lower)!;
    const drowned = byId.get(pair!.drowned)!;
    const lowerCrest = bedOf(s, lower).z + heightOf(lower);
    expect(bedOf(s, drowned).z + heightOf(drowned)).toBeLessThan(lowerCrest - 0.3);
    const pond = flood(s, lower, lowerCrest);
    expect(pond[cellOf(s, ...drowned.truth.streamPoint)]).toBe(1);

    for (const dam of s.dams.filter((d) => d.geometry.kind === 'line')) {
      const [px, py] = dam.truth.streamPoint;
      const [tx, ty] = dam.truth.valleyTangent;
      const wet = flood(s, dam, bedOf(s, dam).z + heightOf(dam));
      const below = wet[cellOf(s, px + 5 * tx, py + 5 * ty)] === 1;
      expect([dam.id, below]).toEqual([dam.id, dam.truth.roles.includes('spill')]);
    }
  });

  it('lets no existing dam stand in the pond below it, except the documented cascade', () => {
    const existing = s.dams.filter((d) => d.properties.status !== 'proposed' && d.properties.status !== 'breached');
    const drowned = new Set(s.facts.cases.cascade.map((c) => c.drowned));
    for (const channel of s.channels) {
      const here = existing.filter((d) => d.truth.channelId === channel.id).sort((a, b) => b.truth.distanceFromHeadM - a.truth.distanceFromHeadM);
      for (let i = 0; i + 1 < here.length; i++) {
        const down = here[i]!;
        const up = here[i + 1]!;
        if (drowned.has(up.id)) continue;
        expect([up.id, up.truth.crestZM > down.truth.crestZM]).toEqual([up.id, true]);
      }
    }
  });

  it('describes three sub-valleys whose pour points sit on their streams', () => {
    expect(s.subWatersheds?.map((w) => w.id)).toEqual(['main-upper', 'trib-a', 'trib-b']);
    for (const w of s.subWatersheds ?? []) {
      const thalweg = s.channels.find((c) => c.id === w.channelId)!.thalweg;
      const nearest = Math.min(...thalweg.map(([x, y]) => Math.hypot(x - w.pourPoint.x, y - w.pourPoint.y)));
      expect(nearest).toBeLessThan(3);
    }
  });

  it('drains (almost) every cell through the outlet after depression filling', () => {
    // Priority-flood from the grid edge (Barnes, Lehman & Mulla 2014, Computers & Geosciences 62):
    // each cell inherits the edge cell its water leaves by once depressions are filled.
    const small = generateDemoValley(SMALL);
    const { width, height, z } = small;
    const label = new Uint8Array(width * height);
    const heap = new MinHeap(4 * (width + height));
    const oc = Math.min(width - 1, Math.floor(small.outlet.x - small.transform.x0));
    const or = Math.floor(small.transform.y0 - small.outlet.y);
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) {
        if (r > 0 && r < height - 1 && c > 0 && c < width - 1) continue;
        const i = r * width + c;
        label[i] = Math.hypot(c - oc, r - or) <= 60 ? 1 : 2;
        heap.push(i, z[i]!);
      }
    }
    while (heap.size > 0) {
      const i = heap.pop();
      const level = heap.lastPriority;
      const c = i % width;
      for (const j of [c > 0 ? i - 1 : -1, c < width - 1 ? i + 1 : -1, i - width, i + width]) {
        if (j < 0 || j >= width * height || label[j] !== 0) continue;
        label[j] = label[i]!;
        heap.push(j, Math.max(z[j]!, level));
      }
    }
    const toOutlet = label.reduce((n, v) => n + (v === 1 ? 1 : 0), 0) / label.length;
    expect(toOutlet).toBeGreaterThan(0.99);
  });
});

describe('demo valley with water surfaces', () => {
  it('flattens the wet ponds at their level and changes nothing else', () => {
    const dry = generateDemoValley(SMALL);
    const wet = generateDemoValley({ ...SMALL, waterSurfaces: true });
    const ponds = wet.dams.filter((d) => d.truth.waterLevelM !== undefined);
    expect(ponds.map((d) => d.id)).toEqual(wet.facts.cases.waterSurfaces);
    expect(ponds.length).toBeGreaterThanOrEqual(3);
    let changed = 0;
    let sum = 0;
    let sumSq = 0;
    const levels = ponds.map((d) => d.truth.waterLevelM!);
    for (let i = 0; i < dry.z.length; i++) {
      if (dry.z[i] === wet.z[i]) continue;
      changed++;
      // Every changed cell was ground below a pond's level and now holds that level plus lidar noise.
      let level = NaN;
      for (const l of levels) {
        if (dry.z[i]! < l && !(Math.abs(wet.z[i]! - l) >= Math.abs(wet.z[i]! - level))) level = l;
      }
      expect(level).not.toBeNaN();
      sum += wet.z[i]! - level;
      sumSq += (wet.z[i]! - level) ** 2;
    }
    const area = ponds.reduce((a, d) => a + d.truth.waterAreaM2!, 0);
    expect(changed).toBeGreaterThan(0.99 * area);
    expect(changed).toBeLessThanOrEqual(area);
    expect(Math.abs(sum / changed)).toBeLessThan(0.01);
    expect(Math.sqrt(sumSq / changed)).toBeCloseTo(0.1, 1);
  });
});

describe('demo valley with water surfaces, as the detector sees them', () => {
  // What the demo shows as standing water must be water the pipeline can find (the scene must not pretend):
  // each flattened pond is found by the detector, within 5 % of its area and 2 cm of its level (the
  // detector's documented accuracy on synthetic ponds with QL2 noise, tests/water-detect.test.ts).
  let wet: DemoScene;
  let grid: Grid;
  beforeAll(() => {
    wet = generateDemoValley({ waterSurfaces: true });
    grid = makeGrid({ width: wet.width, height: wet.height, z: wet.z, transform: wet.transform });
  });
  for (const id of DEMO_DAM_ROWS.filter((r) => r.wet).map((r) => r.id)) {
    it(`finds the water behind ${id}`, () => {
      const dam = wet.dams.find((d) => d.id === id)!;
      expect(dam.truth.waterLevelM).toBeDefined();
      if (dam.geometry.kind !== 'line') throw new Error('wet dams are lines');
      const input: DamInput = {
        id: dam.id,
        index: 0,
        geometry: dam.geometry,
        heightM: dam.properties.height_m ?? dam.truth.heightM,
        status: dam.properties.status,
        confidence: dam.properties.confidence ?? null,
        year: dam.properties.year,
        upstream: null,
        extra: {},
      };
      const setup = setupCrest(grid, input, rasteriseLines(grid, dam.geometry.lines).cells, DEFAULT_POND_PARAMS);
      if ('skip' in setup) throw new Error(setup.skip.message);
      const out = detectWaterSurface(grid, setup, DEFAULT_WATER_PARAMS);
      expect(out.surface === null ? out.reason : 'found').toBe('found');
      expect(Math.abs(out.surface!.areaM2 / dam.truth.waterAreaM2! - 1)).toBeLessThan(0.05);
      expect(Math.abs(out.surface!.levelM - dam.truth.waterLevelM!)).toBeLessThan(0.02);
    });
  }
});

describe('lidar noise', () => {
  it('has the QL2 RMSE and a normal shape', () => {
    // USGS Lidar Base Specification (TM 11-B4), QL2: RMSEz 10 cm. Normal probabilities
    // P(|Z| ≤ 1) = 0.6827, P(|Z| ≤ 2) = 0.9545 and z(0.975) = 1.959964 (Abramowitz & Stegun, Table 26.1).
    expect(normalQuantile(0.975)).toBeCloseTo(1.959964, 5);
    expect(normalQuantile(0.5)).toBeCloseTo(0, 12);
    const v = new Float32Array(1_000_000);
    addGaussianNoise(v, 0.1, createRng(5));
    let sumSq = 0;
    let in1 = 0;
    let in2 = 0;
    for (const x of v) {
      sumSq += x * x;
      if (Math.abs(x) <= 0.1) in1++;
      if (Math.abs(x) <= 0.2) in2++;
    }
    expect(Math.sqrt(sumSq / v.length)).toBeCloseTo(0.1, 3);
    expect(in1 / v.length).toBeCloseTo(0.6827, 2);
    expect(in2 / v.length).toBeCloseTo(0.9545, 2);
  });
});

describe('bench scene', () => {
  it('is repeatable and puts the requested dams on valley floors', () => {
    const options = { seed: 3, width: 2000, height: 2000, damCount: 60 };
    const a = generateBenchScene(options);
    const b = generateBenchScene(options);
    expect(zHash(a)).toBe(zHash(b));
    expect(a.dams).toEqual(b.dams);
    expect(a.dams).toHaveLength(60);
    expect(a.facts.dams.total).toBe(60);
    expect(a.channels.length).toBeGreaterThanOrEqual(5);
    expect(new Set(a.channels.map((c) => c.order)).size).toBeGreaterThanOrEqual(3);
    expect(terrainProblems(a)).toEqual([]);
    expect(() => generateBenchScene({ ...options, damCount: 100_000 })).toThrow(/hold only/);
  });
});
