/**
 * Builds a synthetic bare-earth DEM from a valley network:
 *   1. the upland envelope (envelope.ts) everywhere;
 *   2. each valley carved in stretches (field.ts), the lower surface winning;
 *   3. a rim that rises towards the grid edges except at the outlet, so the
 *      whole grid drains through the outlet;
 *   4. hillslope texture: multi-octave value noise (non-negative, so it only
 *      adds bumps) summed on a 10 m lattice, faded to zero at the foot of the
 *      hillslopes so floors stay smooth;
 *   5. lidar-like random error on every cell (normal, from the quantile
 *      table of lattice.ts).
 * Steps 3–5 run in one pass over the grid, which also finds the range.
 */
import type { Rng } from '../uncertainty/random.js';
import type { Channel, SideProfile } from './channel.js';
import { envelopeLattice, type EnvelopeParams } from './envelope.js';
import { BandBuffers, carveStretch } from './field.js';
import { LatticeSampler, makeLattice, normalTable, randomLattice, type Lattice } from './lattice.js';

/** Which grid edge the outlet is on, and where along it (metres from the edge's start, i.e. the west or north end). */
export interface OutletSpec {
  edge: 'north' | 'south' | 'east' | 'west';
  alongM: number;
  /** Half-width of the gap left in the rim, metres. */
  halfGapM: number;
}

/** Everything `buildTerrain` needs. Lengths and elevations in metres. */
export interface TerrainSpec {
  width: number;
  height: number;
  cellM: number;
  channels: readonly Channel[];
  side: SideProfile;
  envelope: EnvelopeParams;
  outlet: OutletSpec;
  /** Rim rise at the edge and its width, metres. */
  rimM: number;
  rimWidthM: number;
  /** Value-noise octaves: wavelength (metres) and amplitude (metres) of each. */
  octaves: readonly { wavelengthM: number; amplitudeM: number }[];
  /** Hillslope distance over which the texture fades in from the floor edge, metres. */
  textureFadeM: number;
  /** Random vertical error of every cell, metres (standard deviation). */
  lidarSigmaM: number;
  /** Length of a carved stretch, metres (shorter stretches, smaller bands). */
  stretchM: number;
  /** Band half-width around each stretch, metres (past it the envelope is lower than the valley surface). */
  bandM: number;
  noiseRng: Rng;
  lidarRng: Rng;
}

/** A built DEM. */
export interface BuiltTerrain {
  /** Elevation, metres, row-major; no NoData. */
  z: Float32Array;
  /** Lowest and highest elevation, metres. */
  zMinM: number;
  zMaxM: number;
}

/** The DEM for `spec`. */
export function buildTerrain(spec: TerrainSpec): BuiltTerrain {
  const { width, height, cellM } = spec;
  const z = new Float32Array(width * height);
  const slopeRunM = new Float32Array(width * height).fill(1e6);

  const envelope = new LatticeSampler(envelopeLattice(width, height, cellM, spec.channels, spec.envelope), width, false);
  for (let r = 0; r < height; r++) envelope.addRow(r, z.subarray(r * width, (r + 1) * width), 1);

  const target = { width, height, cellM, z, slopeRunM };
  const buffers = new BandBuffers();
  for (const ch of spec.channels) {
    const per = Math.max(2, Math.round(spec.stretchM / ch.stepM));
    for (let k0 = 0; k0 < ch.n - 1; k0 += per) {
      carveStretch(target, ch, k0, Math.min(ch.n - 1, k0 + per), spec.bandM, spec.side, buffers);
    }
  }

  return { z, ...finish(spec, z, slopeRunM) };
}

/** Adds the rim, the texture and the lidar error in one pass; returns the elevation range. */
function finish(spec: TerrainSpec, z: Float32Array, slopeRunM: Float32Array): { zMinM: number; zMaxM: number } {
  const { width, height, cellM, rimM, rimWidthM, outlet } = spec;
  const edgeRise = (distM: number): number => (distM < rimWidthM ? rimM * (1 - distM / rimWidthM) ** 2 : 0);
  const gap = (alongM: number): number => {
    const t = (Math.abs(alongM - outlet.alongM) - outlet.halfGapM) / 80;
    return t <= 0 ? 0 : t >= 1 ? 1 : t * t * (3 - 2 * t);
  };
  const westCol = new Float32Array(width);
  const eastCol = new Float32Array(width);
  const northTaper = new Float32Array(width).fill(1);
  const southTaper = new Float32Array(width).fill(1);
  for (let c = 0; c < width; c++) {
    const x = (c + 0.5) * cellM;
    westCol[c] = edgeRise(x);
    eastCol[c] = edgeRise(width * cellM - x);
    if (outlet.edge === 'north') northTaper[c] = gap(x);
    if (outlet.edge === 'south') southTaper[c] = gap(x);
  }
  const texture = new LatticeSampler(textureLattice(spec), width, false);
  const textureRow = new Float32Array(width);
  const fade = spec.textureFadeM;
  const normal = normalTable();
  const sigma = spec.lidarSigmaM;
  const rng = spec.lidarRng;
  let spare = -1;
  let lo = Infinity;
  let hi = -Infinity;
  for (let r = 0; r < height; r++) {
    const y = (r + 0.5) * cellM;
    const north = edgeRise(y);
    const south = edgeRise(height * cellM - y);
    const westTaper = outlet.edge === 'west' ? gap(y) : 1;
    const eastTaper = outlet.edge === 'east' ? gap(y) : 1;
    textureRow.fill(0);
    texture.addRow(r, textureRow, 1);
    const rs = r * width;
    for (let c = 0; c < width; c++) {
      const i = rs + c;
      const t = slopeRunM[i]! / fade;
      const w = t >= 1 ? 1 : t * t * (3 - 2 * t);
      const rim = westCol[c]! * westTaper + eastCol[c]! * eastTaper + north * northTaper[c]! + south * southTaper[c]!;
      // One 32-bit draw gives two 16-bit indices into the normal table.
      let index: number;
      if (spare < 0) {
        const bits = Math.floor(rng() * 4294967296);
        index = bits & 0xffff;
        spare = bits >>> 16;
      } else {
        index = spare;
        spare = -1;
      }
      const v = Math.fround(z[i]! + rim + w * textureRow[c]! + sigma * normal[index]!);
      z[i] = v;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return { zMinM: lo, zMaxM: hi };
}

/** Spacing of the lattice the texture octaves are summed on, metres (a fifth of the shortest wavelength keeps it smooth). */
const TEXTURE_NODE_M = 10;

/**
 * The hillslope texture summed over its octaves on one lattice of 10 m
 * nodes, so the full grid needs a single bilinear interpolation per cell.
 * Each octave is smoothstep-interpolated value noise (uniform values in
 * [0, 1) times its amplitude) sampled at the nodes.
 */
function textureLattice(spec: TerrainSpec): Lattice {
  const spacing = Math.max(1, Math.round(TEXTURE_NODE_M / spec.cellM));
  const sum = makeLattice(spec.width, spec.height, spacing);
  const { nx, ny } = sum;
  for (const octave of spec.octaves) {
    const every = Math.max(2, Math.round(octave.wavelengthM / (spacing * spec.cellM)));
    const sampler = new LatticeSampler(randomLattice(nx, ny, every, spec.noiseRng), nx, true);
    for (let j = 0; j < ny; j++) sampler.addRow(j, sum.values.subarray(j * nx, (j + 1) * nx), octave.amplitudeM);
  }
  return sum;
}
