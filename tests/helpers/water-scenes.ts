/**
 * Synthetic ponds that already hold water: a valley, a dam across it, the
 * pond behind the dam flattened into the DEM at a level below the crest (as
 * lidar records water), and optionally the random error of a lidar DEM on
 * every cell (seeded).
 */
import { makeGrid, type Grid } from '../../src/grid/grid.js';
import { rasteriseLines } from '../../src/grid/rasterise-line.js';
import type { DamInput } from '../../src/inventory.js';
import { setupCrest, type CrestSetup } from '../../src/ponds/crest.js';
import { DEFAULT_POND_PARAMS } from '../../src/ponds/params.js';
import { createRng, normal } from '../../src/uncertainty/random.js';
import { sampleGrid, thresholdPond, type ValleyFrame } from './synthetic.js';

/** A DEM with a flattened pond and what is true about it. */
export interface WetScene {
  /** The ground before the pond (no noise). */
  dry: Grid;
  /** The DEM as lidar sees it: the pond flattened at `levelM`, noise added when asked. */
  wet: Grid;
  /** Water cells (flat indices) and their total area, m². */
  waterCells: Set<number>;
  waterAreaM2: number;
  levelM: number;
  /** The dam's setup on the dry ground (crest cells, seeds, bed). */
  setup: CrestSetup;
  dam: DamInput;
}

/** Copies a grid's elevations into a new grid with the same geometry. */
export function copyGrid(g: Grid, z: Float32Array = new Float32Array(g.z)): Grid {
  return makeGrid({ width: g.width, height: g.height, z, transform: g.transform });
}

/** Adds independent normal errors of standard deviation `sigmaM` to every valid cell (seeded). */
export function addNoise(g: Grid, sigmaM: number, seed: number): Grid {
  const rng = createRng(seed);
  const z = new Float32Array(g.z.length);
  for (let i = 0; i < z.length; i++) {
    const v = g.z[i]!;
    z[i] = Number.isNaN(v) ? NaN : v + sigmaM * normal(rng);
  }
  return copyGrid(g, z);
}

/**
 * Floods the dry grid behind the dam at `levelM` (cells below the level
 * connected to the cells upstream of the crest, the crest a wall), sets those
 * cells to the level, and adds noise when `noiseM` > 0.
 */
export function flattenPond(dry: Grid, dam: DamInput, levelM: number, noiseM = 0, seed = 1): WetScene {
  if (dam.geometry.kind !== 'line') throw new Error('line dams only');
  const { cells } = rasteriseLines(dry, dam.geometry.lines);
  const setup = setupCrest(dry, dam, cells, DEFAULT_POND_PARAMS);
  if ('skip' in setup) throw new Error(setup.skip.message);
  const pond = thresholdPond(dry, setup.seedCells, setup.crestCells, levelM);
  const z = new Float32Array(dry.z);
  for (const i of pond.cells) z[i] = levelM;
  const flat = copyGrid(dry, z);
  const wet = noiseM > 0 ? addNoise(flat, noiseM, seed) : flat;
  return { dry, wet, waterCells: pond.cells, waterAreaM2: pond.areaM2, levelM, setup, dam };
}

/**
 * A floodplain valley: a floor `floorM` wide sloping 1:`crossSlope` towards
 * a channel `channelM` wide and `channelDepthM` deep in its middle, sides
 * rising 1:`sideSlope` beyond the floor, falling `floorSlope` down-valley
 * (upstream is north, y > 0; the dam row at y = 0).
 */
export function floodplainValley(
  f: ValleyFrame,
  o: { floorM: number; crossSlope: number; sideSlope: number; floorSlope: number; channelM: number; channelDepthM: number },
): Grid {
  return sampleGrid(f, (x, y) => {
    const ax = Math.abs(x);
    const half = o.floorM / 2;
    const across = ax <= half ? ax / o.crossSlope : half / o.crossSlope + (ax - half) / o.sideSlope;
    const channel = ax < o.channelM / 2 ? -o.channelDepthM * (1 - (2 * ax) / o.channelM) : 0;
    return o.floorSlope * y + across + channel + o.channelDepthM;
  });
}
