/**
 * One valley of a synthetic landscape: its axis samples and, per sample, the
 * valley-floor elevation and slope, floor width, side relief, and the small
 * incised stream that meanders across the floor.
 *
 * Samples run from the head (k = 0) to the mouth (k = n − 1): a junction with
 * the parent valley, or the outlet. Lengths and elevations are metres; slopes
 * are m/m.
 */
import type { AxisPath } from './path.js';

/** Cross-section shape shared by all valleys of a scene. */
export interface SideProfile {
  /** Rise of the valley floor away from its axis, m/m (floors are nearly flat across). */
  floorCrossSlope: number;
  /** Width of the concave toe where the hillslope steepens from 0 to `sideSlope`, metres. */
  toeM: number;
  /** Width of the convex shoulder where it eases from `sideSlope` to `uplandSlope`, metres. */
  shoulderM: number;
  /** Steepest hillslope gradient, m/m. */
  sideSlope: number;
  /** Gradient of the uplands beyond the shoulder, m/m. */
  uplandSlope: number;
  /** Allowed rise of the valley sides above the floor edge, metres. */
  reliefMinM: number;
  reliefMaxM: number;
}

/** The regional surface the valley sides rise to: `baseM` + `gradient` × distance from (x, y), metres. */
export interface TopSurface {
  baseM: number;
  gradient: number;
  x: number;
  y: number;
}

/** What a valley looks like from head to mouth; values between are linear in distance. */
export interface ChannelSpec {
  id: string;
  name: string;
  /** 1 for the trunk, 2 for its tributaries, ... */
  order: number;
  parentId: string | null;
  /**
   * What the last sample is: a junction with the parent (the valley stops at the
   * junction's cross-line) or the outlet on the grid edge (the valley runs on
   * straight past it, off the grid).
   */
  mouth: 'junction' | 'outlet';
  path: AxisPath;
  /** Valley-floor slope at the head and at the mouth, m/m. */
  slopeHead: number;
  slopeMouth: number;
  /** Half the valley-floor width at the head and at the mouth, metres. */
  halfFloorHeadM: number;
  halfFloorMouthM: number;
  /** Stream depth below the floor, metres. */
  depthHeadM: number;
  depthMouthM: number;
  /** Stream top width, metres. */
  widthHeadM: number;
  widthMouthM: number;
  /** Meander wavelength along the valley, metres, and phase, radians. */
  meanderWavelengthM: number;
  meanderPhase: number;
}

/** A valley with its per-sample profiles (see module comment). */
export interface Channel {
  readonly spec: ChannelSpec;
  readonly n: number;
  readonly stepM: number;
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly tx: Float64Array;
  readonly ty: Float64Array;
  /** Valley-floor elevation on the axis, metres. */
  readonly bedM: Float64Array;
  /** Floor slope (drop per metre downstream), m/m. */
  readonly slope: Float64Array;
  readonly halfFloorM: Float64Array;
  /** Rise of each side above the floor edge before the uplands, metres. */
  readonly reliefM: Float64Array;
  /** Length of the straight part of the hillslope, metres (from the relief and the profile). */
  readonly sideRunM: Float64Array;
  /** Offset of the stream centre from the axis, metres, positive to the right looking downstream. */
  readonly meanderM: Float64Array;
  readonly depthM: Float64Array;
  readonly halfWidthM: Float64Array;
}

/** Distance over which meanders fade out next to a junction or the mouth, metres. */
const MEANDER_FADE_M = 60;

/**
 * Builds the profiles of one valley. `mouthBedM` is the floor elevation at the
 * mouth; `junctionSamples` are the samples where tributaries join (meanders
 * fade out there so the tributary streams meet this one).
 */
export function buildChannel(
  spec: ChannelSpec,
  mouthBedM: number,
  junctionSamples: readonly number[],
  side: SideProfile,
  top: TopSurface,
): Channel {
  const { path } = spec;
  const n = path.n;
  const step = path.stepM;
  const bedM = new Float64Array(n);
  const slope = new Float64Array(n);
  const halfFloorM = new Float64Array(n);
  const reliefM = new Float64Array(n);
  const sideRunM = new Float64Array(n);
  const meanderM = new Float64Array(n);
  const depthM = new Float64Array(n);
  const halfWidthM = new Float64Array(n);
  const last = Math.max(1, n - 1);
  for (let k = 0; k < n; k++) {
    const t = k / last;
    slope[k] = lerp(spec.slopeHead, spec.slopeMouth, t);
    halfFloorM[k] = lerp(spec.halfFloorHeadM, spec.halfFloorMouthM, t);
    depthM[k] = lerp(spec.depthHeadM, spec.depthMouthM, t);
    halfWidthM[k] = lerp(spec.widthHeadM, spec.widthMouthM, t) / 2;
  }
  bedM[n - 1] = mouthBedM;
  for (let k = n - 2; k >= 0; k--) bedM[k] = bedM[k + 1]! + 0.5 * (slope[k]! + slope[k + 1]!) * step;

  const { toeM: a, shoulderM: c, sideSlope: s, uplandSlope: u } = side;
  const fixedRise = (s * a) / 2 + ((s + u) * c) / 2;
  const minRelief = Math.max(side.reliefMinM, fixedRise);
  for (let k = 0; k < n; k++) {
    const topM = top.baseM + top.gradient * Math.hypot(path.x[k]! - top.x, path.y[k]! - top.y);
    const r = Math.min(side.reliefMaxM, Math.max(minRelief, topM - bedM[k]!));
    reliefM[k] = r;
    sideRunM[k] = (r - fixedRise) / s;
  }

  const twoPi = 2 * Math.PI;
  for (let k = 0; k < n; k++) {
    const sM = k * step;
    const room = Math.max(0, halfFloorM[k]! - halfWidthM[k]! - 2);
    let fade = smoothstep(sM / MEANDER_FADE_M) * smoothstep(((n - 1 - k) * step) / MEANDER_FADE_M);
    for (const j of junctionSamples) fade *= smoothstep(Math.abs(k - j) * step / MEANDER_FADE_M);
    const wave =
      Math.sin((twoPi * sM) / spec.meanderWavelengthM + spec.meanderPhase) +
      0.3 * Math.sin((twoPi * sM) / (spec.meanderWavelengthM * 0.43) + 2 * spec.meanderPhase);
    meanderM[k] = (0.45 / 1.3) * room * wave * fade;
  }
  return {
    spec,
    n,
    stepM: step,
    x: path.x,
    y: path.y,
    tx: path.tx,
    ty: path.ty,
    bedM,
    slope,
    halfFloorM,
    reliefM,
    sideRunM,
    meanderM,
    depthM,
    halfWidthM,
  };
}

/** Index of the sample of `channel` nearest to (x, y), metres. */
export function nearestSample(channel: { n: number; x: Float64Array; y: Float64Array }, x: number, y: number): number {
  let best = 0;
  let bestD2 = Infinity;
  for (let k = 0; k < channel.n; k++) {
    const dx = channel.x[k]! - x;
    const dy = channel.y[k]! - y;
    const d2 = dx * dx + dy * dy;
    if (d2 < bestD2) {
      bestD2 = d2;
      best = k;
    }
  }
  return best;
}

function lerp(a: number, b: number, t: number): number {
  return a + (b - a) * t;
}

/** 0 below 0, 1 above 1, smooth between. */
export function smoothstep(t: number): number {
  if (t <= 0) return 0;
  if (t >= 1) return 1;
  return t * t * (3 - 2 * t);
}
