/**
 * The upland envelope: a smooth surface that rises gently away from the
 * valley network and caps every valley's own field. Far from the valleys it
 * is the ground; near them the valley fields dip below it. Because it takes
 * over within a bounded distance, each valley's field only needs computing
 * in a band around its axis (see field.ts), and the result stays continuous.
 *
 * Built on a coarse lattice (16 m): the nearest valley sample of every node
 * (one distance transform), the valley-side top (floor + relief) of that
 * sample blurred over about 200 m, plus `headroomM`, plus `gradient` × the
 * distance to the network.
 */
import { distanceTransform } from '../grid/distance.js';
import type { Channel } from './channel.js';
import { makeLattice, type Lattice } from './lattice.js';

/** Shape of the envelope. */
export interface EnvelopeParams {
  /** Height of the envelope above the valley sides' top next to a valley, metres. */
  headroomM: number;
  /** Rise of the envelope per metre of distance from the nearest valley axis, m/m. */
  gradient: number;
}

/** Lattice node spacing, metres. */
const NODE_M = 16;
/** Box-blur radius in nodes and number of passes (three passes approximate a Gaussian). */
const BLUR_RADIUS = 6;
const BLUR_PASSES = 3;

/** The envelope on a coarse lattice over a width × height grid of `cellM` cells. */
export function envelopeLattice(
  width: number,
  height: number,
  cellM: number,
  channels: readonly Channel[],
  params: EnvelopeParams,
): Lattice {
  const spacing = Math.max(1, Math.round(NODE_M / cellM));
  const lattice = makeLattice(width, height, spacing);
  const { nx, ny } = lattice;
  const nodeM = spacing * cellM;
  const seeds = new Uint8Array(nx * ny);
  const seedTop = new Float64Array(nx * ny);
  const seedX = new Float64Array(nx * ny);
  const seedY = new Float64Array(nx * ny);
  for (const ch of channels) {
    for (let k = 0; k < ch.n; k++) {
      const i = clampIndex(Math.round((ch.x[k]! - 0.5 * cellM) / nodeM), nx);
      const j = clampIndex(Math.round((ch.y[k]! - 0.5 * cellM) / nodeM), ny);
      const node = j * nx + i;
      seeds[node] = 1;
      seedTop[node] = ch.bedM[k]! + ch.reliefM[k]!;
      seedX[node] = ch.x[k]!;
      seedY[node] = ch.y[k]!;
    }
  }
  const geometry = { width: nx, height: ny, cellWidthM: new Float64Array(ny).fill(nodeM), cellHeightM: nodeM };
  const { nearest } = distanceTransform(geometry, seeds);
  const top = new Float64Array(nx * ny);
  const dist = new Float64Array(nx * ny);
  for (let j = 0; j < ny; j++) {
    const y = j * nodeM + 0.5 * cellM;
    for (let i = 0; i < nx; i++) {
      const node = j * nx + i;
      const s = nearest[node]!;
      top[node] = seedTop[s]!;
      dist[node] = Math.hypot(i * nodeM + 0.5 * cellM - seedX[s]!, y - seedY[s]!);
    }
  }
  boxBlur(top, nx, ny, BLUR_RADIUS, BLUR_PASSES);
  const v = lattice.values;
  for (let node = 0; node < v.length; node++) {
    v[node] = top[node]! + params.headroomM + params.gradient * dist[node]!;
  }
  return lattice;
}

function clampIndex(i: number, n: number): number {
  return i < 0 ? 0 : i >= n ? n - 1 : i;
}

/** Separable box blur with edge clamping, in place. */
function boxBlur(values: Float64Array, nx: number, ny: number, radius: number, passes: number): void {
  const line = new Float64Array(Math.max(nx, ny));
  const out = new Float64Array(Math.max(nx, ny));
  for (let p = 0; p < passes; p++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) line[i] = values[j * nx + i]!;
      blurLine(line, out, nx, radius);
      for (let i = 0; i < nx; i++) values[j * nx + i] = out[i]!;
    }
    for (let i = 0; i < nx; i++) {
      for (let j = 0; j < ny; j++) line[j] = values[j * nx + i]!;
      blurLine(line, out, ny, radius);
      for (let j = 0; j < ny; j++) values[j * nx + i] = out[j]!;
    }
  }
}

function blurLine(line: Float64Array, out: Float64Array, n: number, radius: number): void {
  const w = 2 * radius + 1;
  let sum = 0;
  for (let k = -radius; k <= radius; k++) sum += line[clampIndex(k, n)]!;
  for (let i = 0; i < n; i++) {
    out[i] = sum / w;
    sum += line[clampIndex(i + radius + 1, n)]! - line[clampIndex(i - radius, n)]!;
  }
}
