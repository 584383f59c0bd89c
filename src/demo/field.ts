/**
 * Carves one stretch of a valley into the terrain: within a band around the
 * stretch's axis, every cell takes the lower of its current elevation and the
 * valley's own surface (floor, incised stream, hillslope, uplands). Taking the
 * minimum keeps the terrain continuous where valleys meet, and ridges form
 * where neighbouring valleys' surfaces cross.
 *
 * Finding the nearest axis sample: an exact distance transform on a coarse
 * copy of the band (4 m nodes) gives a first guess per node, which slides
 * along the axis by its offset along the tangent (a few projection steps) to
 * the foot of the perpendicular from the node's centre; each cell of the node
 * then takes one more step from there. Bands are sausages
 * around the axis: nodes farther than the band (plus a node's diagonal) are
 * skipped whole.
 *
 * The surface at a cell: its offset along and across the local tangent gives
 * the floor elevation (bed − slope × along) and the cross-section height at
 * that lateral distance. Past the head the valley closes in a rounded head
 * (radial distance, no stream); past the outlet it runs on straight; past any
 * other stretch end the cell is left to the next stretch or the parent valley.
 *
 * Known limit: inside a bend tighter than the band, the nearest axis point
 * jumps where the cell is equidistant from both arms, and the surface can step
 * there by the floor's fall between them (about a metre on a spur ridge, far
 * above any floor).
 */
import { distanceTransform } from '../grid/distance.js';
import type { Channel, SideProfile } from './channel.js';
import { crossSection } from './cross-section.js';

/** Node spacing of the coarse nearest-sample search, metres. */
const COARSE_M = 4;
/**
 * A node is skipped when the surface at its centre stands clear above all its
 * cells: by the most the surface can fall over half a node's diagonal (it
 * rises at most about 0.5 m/m) plus the deepest stream cut (0.8 m).
 */
function nodeSlack(nodeM: number): number {
  return 0.5 * Math.SQRT1_2 * nodeM + 1;
}
/** Most projection steps from the coarse guess to the foot of the perpendicular. */
const PROJECTION_STEPS = 6;

/** Reusable buffers for `carveStretch`, sized for the largest band. */
export class BandBuffers {
  seeds: Uint8Array = new Uint8Array(0);
  sampleAt: Int32Array = new Int32Array(0);
  distanceM: Float32Array = new Float32Array(0);
  nearest: Int32Array = new Int32Array(0);

  /** Grows the buffers to hold `nodes` coarse nodes. */
  ensure(nodes: number): void {
    if (this.seeds.length >= nodes) return;
    this.seeds = new Uint8Array(nodes);
    this.sampleAt = new Int32Array(nodes);
    this.distanceM = new Float32Array(nodes);
    this.nearest = new Int32Array(nodes);
  }
}

/** The terrain being built: elevations and, per cell, the distance above the toe of the winning hillslope. */
export interface TerrainTarget {
  width: number;
  height: number;
  cellM: number;
  /** Elevation, metres. */
  z: Float32Array;
  /** Distance from the floor edge up the hillslope of the surface that set z, metres (0 on floors). */
  slopeRunM: Float32Array;
}

/**
 * Lowers `target` to the surface of samples k0..k1 of `ch` within `bandM`
 * metres of their axis.
 */
export function carveStretch(
  target: TerrainTarget,
  ch: Channel,
  k0: number,
  k1: number,
  bandM: number,
  side: SideProfile,
  buffers: BandBuffers,
): void {
  const { width, height, cellM, z, slopeRunM } = target;
  const g = Math.max(1, Math.round(COARSE_M / cellM));
  const nodeM = g * cellM;
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  for (let k = k0; k <= k1; k++) {
    minX = Math.min(minX, ch.x[k]!);
    maxX = Math.max(maxX, ch.x[k]!);
    minY = Math.min(minY, ch.y[k]!);
    maxY = Math.max(maxY, ch.y[k]!);
  }
  const c0 = Math.max(0, Math.floor((minX - bandM) / cellM));
  const c1 = Math.min(width - 1, Math.floor((maxX + bandM) / cellM));
  const r0 = Math.max(0, Math.floor((minY - bandM) / cellM));
  const r1 = Math.min(height - 1, Math.floor((maxY + bandM) / cellM));
  if (c1 < c0 || r1 < r0) return;
  const nw = Math.ceil((c1 - c0 + 1) / g);
  const nh = Math.ceil((r1 - r0 + 1) / g);
  const nodes = nw * nh;
  buffers.ensure(nodes);
  const seeds = buffers.seeds.subarray(0, nodes);
  const sampleAt = buffers.sampleAt;
  seeds.fill(0);
  for (let k = k0; k <= k1; k++) seedSample(ch, k, c0, r0, cellM, g, nw, nh, seeds, sampleAt);
  // Several samples share a node; the end samples must own theirs so nodes past an end start from the end.
  seedSample(ch, k0, c0, r0, cellM, g, nw, nh, seeds, sampleAt);
  seedSample(ch, k1, c0, r0, cellM, g, nw, nh, seeds, sampleAt);
  const geometry = { width: nw, height: nh, cellWidthM: new Float64Array(nh).fill(nodeM), cellHeightM: nodeM };
  const { distanceM, nearest } = distanceTransform(geometry, seeds, {
    distanceM: buffers.distanceM.subarray(0, nodes),
    nearest: buffers.nearest.subarray(0, nodes),
  });

  const reach = bandM + nodeM;
  const headOpen = k0 === 0;
  const mouthOpen = k1 === ch.n - 1 && ch.spec.mouth === 'outlet';
  const step = ch.stepM;
  const xs = ch.x;
  const ys = ch.y;
  const txs = ch.tx;
  const tys = ch.ty;
  const scratch = new Float64Array(1);
  const nodeSlackM = nodeSlack(nodeM);
  const halfDiagonalM = Math.SQRT1_2 * nodeM;
  for (let nr = 0; nr < nh; nr++) {
    const rStart = r0 + nr * g;
    const rEnd = Math.min(r1 + 1, rStart + g);
    for (let nc = 0; nc < nw; nc++) {
      const node = nr * nw + nc;
      if (!(distanceM[node]! <= reach)) continue;
      const cStart = c0 + nc * g;
      const cEnd = Math.min(c1 + 1, cStart + g);
      // Slide the node's guess to the foot of the perpendicular from the node's centre.
      const xn = (0.5 * (cStart + cEnd)) * cellM;
      const yn = (0.5 * (rStart + rEnd)) * cellM;
      let kn = sampleAt[nearest[node]!]!;
      for (let it = 0; it < PROJECTION_STEPS; it++) {
        const along = (xn - xs[kn]!) * txs[kn]! + (yn - ys[kn]!) * tys[kn]!;
        const next = clampIndex(kn + Math.round(along / step), k0, k1);
        if (next === kn) break;
        kn = next;
      }
      // Skip the node when it lies wholly past a closed end of the stretch.
      if ((kn === k0 && !headOpen) || (kn === k1 && !mouthOpen)) {
        const along = (xn - xs[kn]!) * txs[kn]! + (yn - ys[kn]!) * tys[kn]!;
        if ((kn === k0 ? -along : along) > halfDiagonalM) continue;
      }
      // Skip it when the valley surface at its centre stands clearly above every cell of it.
      const centre = surfaceAt(ch, kn, xn, yn, k0, k1, headOpen, mouthOpen, bandM, side, scratch);
      if (centre < Infinity && centre - nodeSlackM > maxOver(z, width, rStart, rEnd, cStart, cEnd)) continue;
      const tnx = txs[kn]!;
      const tny = tys[kn]!;
      for (let r = rStart; r < rEnd; r++) {
        const y = (r + 0.5) * cellM;
        for (let c = cStart; c < cEnd; c++) {
          const x = (c + 0.5) * cellM;
          // One more projection step per cell, from the node's foot.
          const k = clampIndex(kn + Math.round(((x - xs[kn]!) * tnx + (y - ys[kn]!) * tny) / step), k0, k1);
          const cand = surfaceAt(ch, k, x, y, k0, k1, headOpen, mouthOpen, bandM, side, scratch);
          const gi = r * width + c;
          if (cand < z[gi]!) {
            z[gi] = cand;
            slopeRunM[gi] = scratch[0]!;
          }
        }
      }
    }
  }
}

/** Highest value of z over rows [r0, r1) and columns [c0, c1). */
function maxOver(z: Float32Array, width: number, r0: number, r1: number, c0: number, c1: number): number {
  let m = -Infinity;
  for (let r = r0; r < r1; r++) {
    const rs = r * width;
    for (let c = c0; c < c1; c++) {
      const v = z[rs + c]!;
      if (v > m) m = v;
    }
  }
  return m;
}

/**
 * The valley's surface at internal point (x, y) seen from axis sample k,
 * metres; +Infinity where this stretch does not reach. Writes the distance
 * up the hillslope from the floor edge into scratch[0].
 */
function surfaceAt(
  ch: Channel,
  k: number,
  x: number,
  y: number,
  k0: number,
  k1: number,
  headOpen: boolean,
  mouthOpen: boolean,
  bandM: number,
  side: SideProfile,
  scratch: Float64Array,
): number {
  const dx = x - ch.x[k]!;
  const dy = y - ch.y[k]!;
  const tx = ch.tx[k]!;
  const ty = ch.ty[k]!;
  const along = dx * tx + dy * ty;
  const lateral = dy * tx - dx * ty;
  const step = ch.stepM;
  let floorM: number;
  let d: number;
  let stream = true;
  if (k === k1 && along > 0 && !mouthOpen) return Infinity;
  if (k === k0 && along < 0) {
    if (!headOpen) return Infinity;
    floorM = ch.bedM[k]!;
    d = Math.sqrt(dx * dx + dy * dy);
    stream = false;
  } else {
    floorM = ch.bedM[k]! - ch.slope[k]! * along;
    // Off the foot (near a bend's centre the steps may not settle): the true distance to the sample.
    d = along > step || along < -step ? Math.sqrt(dx * dx + dy * dy) : lateral < 0 ? -lateral : lateral;
  }
  if (d > bandM) return Infinity;
  const hw = ch.halfFloorM[k]!;
  const run = d - hw;
  scratch[0] = run > 0 ? run : 0;
  let z = floorM + crossSection(side, d, hw, ch.sideRunM[k]!, ch.reliefM[k]!);
  if (stream) {
    const off = lateral - ch.meanderM[k]!;
    const hwS = ch.halfWidthM[k]!;
    if (off > -hwS && off < hwS) {
      const q = off / hwS;
      z -= ch.depthM[k]! * (1 - q * q);
    }
  }
  return z;
}

function clampIndex(k: number, lo: number, hi: number): number {
  return k < lo ? lo : k > hi ? hi : k;
}

/** Marks the coarse node holding sample k as a seed owned by k. */
function seedSample(
  ch: Channel,
  k: number,
  c0: number,
  r0: number,
  cellM: number,
  g: number,
  nw: number,
  nh: number,
  seeds: Uint8Array,
  sampleAt: Int32Array,
): void {
  const nc = Math.floor((ch.x[k]! / cellM - c0) / g);
  const nr = Math.floor((ch.y[k]! / cellM - r0) / g);
  if (nc < 0 || nc >= nw || nr < 0 || nr >= nh) return;
  seeds[nr * nw + nc] = 1;
  sampleAt[nr * nw + nc] = k;
}
