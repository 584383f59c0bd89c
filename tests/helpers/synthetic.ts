/**
 * Synthetic DEMs for the pond tests: analytic valleys with closed-form pond
 * sizes, and a seeded noisy valley for the GRASS r.lake reference.
 *
 * Map frame: x east, y north, metres, y = 0 on the dam row's cell centres,
 * upstream is north (y > 0). Elevations are rounded to 2^-12 m so adding a
 * power-of-two offset keeps every value exact in Float32.
 */
import { makeGrid, type Grid } from '../../src/grid/grid.js';
import { colToX, rowToY, xToCol, yToRow, type GeoTransform } from '../../src/grid/transform.js';
import type { DamInput, DamStatus } from '../../src/inventory.js';
import { createRng } from '../../src/uncertainty/random.js';
import { rasteriseLines } from '../../src/grid/rasterise-line.js';
import { setupCrest, type CrestSetup } from '../../src/ponds/crest.js';
import { fillBehindCrest, type FillOptions, type PondFill } from '../../src/ponds/fill.js';
import { DEFAULT_POND_PARAMS, type PondParams } from '../../src/ponds/params.js';

/** Elevation quantum, m (2^-12). */
export const Z_QUANTUM_M = 1 / 4096;

/** A grid whose cell (col, row) centre is at map (x, y) with x = (col + 0.5)·cell + x0, y as below. */
export interface ValleyFrame {
  width: number;
  height: number;
  cellM: number;
  /** Row whose cell centres lie on y = 0 (the dam row). */
  damRow: number;
}

/** Transform of a valley frame: column centres symmetric about x = 0, row `damRow` centred on y = 0. */
export function valleyTransform(f: ValleyFrame): GeoTransform {
  return { x0: (-f.width * f.cellM) / 2, y0: (f.damRow + 0.5) * f.cellM, dx: f.cellM, dy: -f.cellM };
}

/** A grid sampling `zAt(x, y)` at cell centres (quantised), NaN allowed. */
export function sampleGrid(f: ValleyFrame, zAt: (x: number, y: number) => number): Grid {
  const transform = valleyTransform(f);
  const z = new Float32Array(f.width * f.height);
  for (let row = 0; row < f.height; row++) {
    const y = rowToY(transform, row + 0.5);
    for (let col = 0; col < f.width; col++) {
      const v = zAt(colToX(transform, col + 0.5), y);
      z[row * f.width + col] = Number.isNaN(v) ? NaN : Math.round(v / Z_QUANTUM_M) * Z_QUANTUM_M;
    }
  }
  return makeGrid({ width: f.width, height: f.height, z, transform });
}

/** V-shaped valley: z = z0 + S·y + |x|/m (side slope m horizontal : 1 vertical, floor slope S). */
export function vValley(f: ValleyFrame, sideSlope: number, floorSlope: number, z0 = 0): Grid {
  return sampleGrid(f, (x, y) => z0 + floorSlope * y + Math.abs(x) / sideSlope);
}

/** Rectangular valley: floor z0 + S·y for |x| < W/2, walls `wallM` higher outside. */
export function rectValley(f: ValleyFrame, widthM: number, floorSlope: number, wallM = 50, z0 = 0): Grid {
  return sampleGrid(f, (x, y) => z0 + floorSlope * y + (Math.abs(x) < widthM / 2 ? 0 : wallM));
}

/** A dam record as the inventory reader would build it. */
export function makeDam(options: {
  id: string;
  lines: [number, number][][];
  heightM?: number | null;
  status?: DamStatus;
  upstream?: 'left' | 'right' | null;
  index?: number;
}): DamInput {
  return {
    id: options.id,
    index: options.index ?? 0,
    geometry: { kind: 'line', lines: options.lines },
    heightM: options.heightM ?? null,
    status: options.status ?? 'confirmed',
    confidence: null,
    year: null,
    upstream: options.upstream ?? null,
    extra: {},
  };
}

/** A grid with `offsetM` added to every elevation. */
export function offsetGrid(grid: Grid, offsetM: number): Grid {
  const z = new Float32Array(grid.z.length);
  for (let i = 0; i < z.length; i++) z[i] = grid.z[i]! + offsetM;
  return makeGrid({ width: grid.width, height: grid.height, z, transform: grid.transform });
}

/**
 * The grid turned a quarter turn clockwise in pixel space (cell (col, row)
 * goes to (height − 1 − row, col)), same transform; and the matching map
 * point mapping for crest vertices. A proper rotation: left stays left.
 */
export function rotateGrid90(grid: Grid): { grid: Grid; point: (p: [number, number]) => [number, number] } {
  const { width, height, transform: t } = grid;
  const z = new Float32Array(width * height);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      z[col * height + (height - 1 - row)] = grid.z[row * width + col]!;
    }
  }
  const rotated = makeGrid({ width: height, height: width, z, transform: t });
  const point = ([x, y]: [number, number]): [number, number] => {
    const c = xToCol(t, x);
    const r = yToRow(t, y);
    return [colToX(t, height - r), rowToY(t, c)];
  };
  return { grid: rotated, point };
}

/** Cell index of (col, row) after `rotateGrid90` of a grid `height` rows tall. */
export function rotatedCell(i: number, width: number, height: number): number {
  const col = i % width;
  const row = (i - col) / width;
  return col * height + (height - 1 - row);
}

/**
 * Smooth seeded noise in [-1, 1]: bilinear interpolation of a random lattice
 * with `spacing` cells, summed over `octaves` halving spacing and amplitude.
 */
export function valueNoise(width: number, height: number, spacing: number, octaves: number, seed: number): Float64Array {
  const rng = createRng(seed);
  const out = new Float64Array(width * height);
  let amp = 1;
  let total = 0;
  let sp = spacing;
  for (let o = 0; o < octaves; o++) {
    const lw = Math.ceil(width / sp) + 2;
    const lh = Math.ceil(height / sp) + 2;
    const lattice = new Float64Array(lw * lh);
    for (let k = 0; k < lattice.length; k++) lattice[k] = rng() * 2 - 1;
    for (let row = 0; row < height; row++) {
      const fy = row / sp;
      const y0 = Math.floor(fy);
      const ty = fy - y0;
      for (let col = 0; col < width; col++) {
        const fx = col / sp;
        const x0 = Math.floor(fx);
        const tx = fx - x0;
        const a = lattice[y0 * lw + x0]!;
        const b = lattice[y0 * lw + x0 + 1]!;
        const c = lattice[(y0 + 1) * lw + x0]!;
        const d = lattice[(y0 + 1) * lw + x0 + 1]!;
        out[row * width + col]! += amp * ((a * (1 - tx) + b * tx) * (1 - ty) + (c * (1 - tx) + d * tx) * ty);
      }
    }
    total += amp;
    amp /= 2;
    sp = Math.max(1, sp / 2);
  }
  for (let i = 0; i < out.length; i++) out[i]! /= total;
  return out;
}

/**
 * Flooded cells at level h by plain threshold flood fill (8-neighbour, depth
 * > 0, crest cells as walls) from the seed cells: an independent, simple
 * reference for the priority-flood. Returns Σ area and Σ area × depth.
 */
export function thresholdPond(
  grid: Grid,
  seedCells: Int32Array,
  crestCells: Int32Array,
  levelM: number,
): { cellCount: number; areaM2: number; volumeM3: number; cells: Set<number> } {
  const { width, height, z } = grid;
  const wall = new Set(crestCells);
  const cells = new Set<number>();
  const stack: number[] = [];
  for (const s of seedCells) {
    if (z[s]! < levelM && !cells.has(s)) {
      cells.add(s);
      stack.push(s);
    }
  }
  let areaM2 = 0;
  let volumeM3 = 0;
  while (stack.length > 0) {
    const i = stack.pop()!;
    const col = i % width;
    const row = (i - col) / width;
    const a = grid.cellAreaM2[row]!;
    areaM2 += a;
    volumeM3 += a * (levelM - z[i]!);
    for (let dr = -1; dr <= 1; dr++) {
      for (let dc = -1; dc <= 1; dc++) {
        const c = col + dc;
        const r = row + dr;
        if (c < 0 || c >= width || r < 0 || r >= height) continue;
        const j = r * width + c;
        if (cells.has(j) || wall.has(j) || !(z[j]! < levelM)) continue;
        cells.add(j);
        stack.push(j);
      }
    }
  }
  return { cellCount: cells.size, areaM2, volumeM3, cells };
}

/** Rasterises, sets up and fills one dam; throws if the dam is skipped. */
export function fillDam(
  grid: Grid,
  dam: DamInput,
  options: FillOptions = {},
  params: PondParams = DEFAULT_POND_PARAMS,
): { setup: CrestSetup; fill: PondFill } {
  if (dam.geometry.kind !== 'line') throw new Error('line dams only');
  const { cells } = rasteriseLines(grid, dam.geometry.lines);
  const setup = setupCrest(grid, dam, cells, params);
  if ('skip' in setup) throw new Error(setup.skip.message);
  return { setup, fill: fillBehindCrest(grid, setup, options) };
}

/** Size, transform and seed of the GRASS r.lake reference valley (fictional coordinates). */
export const REFERENCE_VALLEY = {
  width: 200,
  height: 300,
  transform: { x0: 412000, y0: 5268300, dx: 1, dy: -1 } as GeoTransform,
  seed: 20240611,
};

/**
 * The seeded valley of the GRASS r.lake reference: a meandering channel
 * falling 0.8 % to the south, a gently sloping floodplain (1:15) 25 m each
 * side, steeper valley walls (1:3), an incised thalweg and ±0.25 m of smooth
 * roughness. Elevations rounded to 0.01 m, as written to the ASCII grid.
 */
export function referenceValley(): Grid {
  const { width, height, transform, seed } = REFERENCE_VALLEY;
  const noise = valueNoise(width, height, 16, 3, seed);
  const z = new Float32Array(width * height);
  for (let row = 0; row < height; row++) {
    const centre = referenceChannelCol(row);
    for (let col = 0; col < width; col++) {
      const d = Math.abs(col + 0.5 - centre);
      const across = d < 25 ? d / 15 : 25 / 15 + (d - 25) / 3;
      const v = 40 + 0.008 * (height - row - 0.5) + across - 0.3 * Math.exp(-((d / 1.5) ** 2)) + 0.25 * noise[row * width + col]!;
      z[row * width + col] = Math.round(v * 100) / 100;
    }
  }
  return makeGrid({ width, height, z, transform });
}

/** Fractional column of the reference valley's channel centre in a row. */
export function referenceChannelCol(row: number): number {
  return 100 + 18 * Math.sin((2 * Math.PI * row) / 170) + 6 * Math.sin((2 * Math.PI * row) / 53);
}

/**
 * Dams of the reference valley: a lower dam with a measured height, an
 * upper dam it drowns, and a short crest far upstream that spills around
 * its ends (its upstream side left to the terrain). Crest lines run
 * west → east, so north (upstream) is on the left.
 */
export function referenceDams(): DamInput[] {
  const t = REFERENCE_VALLEY.transform;
  const across = (row: number, halfM: number): [number, number][][] => {
    const x = colToX(t, referenceChannelCol(row));
    const y = rowToY(t, row + 0.5);
    return [[[x - halfM, y], [x + halfM, y]]];
  };
  return [
    makeDam({ id: 'lower', index: 0, lines: across(250, 45), heightM: 1.237, upstream: 'left' }),
    makeDam({ id: 'upper', index: 1, lines: across(215, 45), heightM: 0.583, upstream: 'left' }),
    makeDam({ id: 'short', index: 2, lines: across(60, 4) }),
  ];
}

/** An ESRI ASCII grid (AAIGrid) of a north-up grid, elevations with `decimals` places, NaN as -9999. */
export function toAsciiGrid(grid: Grid, decimals: number): string {
  const { width, height, transform: t } = grid;
  const lines = [
    `ncols ${width}`,
    `nrows ${height}`,
    `xllcorner ${t.x0}`,
    `yllcorner ${t.y0 + height * t.dy}`,
    `cellsize ${t.dx}`,
    'NODATA_value -9999',
  ];
  for (let row = 0; row < height; row++) {
    const vals: string[] = [];
    for (let col = 0; col < width; col++) {
      const v = grid.z[row * width + col]!;
      vals.push(Number.isNaN(v) ? '-9999' : v.toFixed(decimals));
    }
    lines.push(vals.join(' '));
  }
  return lines.join('\n') + '\n';
}

/** Parses an ESRI ASCII grid with square cells (corner-registered) into a Grid; NODATA_value cells become NaN. */
export function parseAsciiGrid(text: string): Grid {
  const tokens = text.split(/\s+/).filter((s) => s.length > 0);
  const header = new Map<string, number>();
  let k = 0;
  while (k + 1 < tokens.length && /^[a-z_]+$/i.test(tokens[k]!)) {
    header.set(tokens[k]!.toLowerCase(), Number(tokens[k + 1]));
    k += 2;
  }
  const width = header.get('ncols')!;
  const height = header.get('nrows')!;
  const cell = header.get('cellsize')!;
  const nodata = header.get('nodata_value');
  const z = new Float32Array(width * height);
  for (let i = 0; i < width * height; i++) {
    const v = Number(tokens[k + i]);
    z[i] = v === nodata ? NaN : v;
  }
  const x0 = header.get('xllcorner')!;
  const y0 = header.get('yllcorner')! + height * cell;
  return makeGrid({ width, height, z, transform: { x0, y0, dx: cell, dy: -cell } });
}
