/**
 * Local flow direction at a channel cell, by a directional profile search.
 *
 * For each direction θ over the half circle (0.5° steps) the terrain is
 * sampled along a straight line through the channel cell, ±reach metres at
 * half-cell steps, and a straight line z = a + b·t is fitted to the profile;
 * rms(θ) is the root-mean-square residual, b(θ) the fitted slope.
 *
 * - Along a valley axis the profile is straight (the floor slope), so its
 *   residual is only noise; across a V or trough it bends at the thalweg and
 *   the residual is large. rms(θ) is symmetric about the axis, so the axis is
 *   the minimum of its second angular harmonic A2·cos(2θ − ψ): θ = (ψ + π)/2.
 *   This holds for V and trapezoidal sections, and for a channel cell that
 *   sits off the thalweg (the offset only shifts each profile).
 * - When A2 is below max(0.02 m, 10 % of the mean rms), the terrain within
 *   reach is planar (a floor wider than the profiles) and has no axis to
 *   find: the flow runs down its gradient, fitted by least squares from the
 *   b(θ) of all directions (b(θ) = g·u(θ) on a plane).
 *
 * Each profile averages ~80 samples and both estimates pool all directions,
 * so cell-scale noise (lidar RMSEz ~0.1 m) moves the direction by a degree or
 * two, where tracing steepest descent cell by cell would stall in the first
 * noise pit. The sign of the slope along the chosen direction gives the
 * downstream sense.
 */
import type { Grid } from '../grid/grid.js';
import { type MetricFrame, sampleZ } from './point-crest-frame.js';

/** A flow direction in ground metres. */
export interface FlowAxis {
  /** Unit vector pointing downstream: east and north components. */
  east: number;
  north: number;
  /** Fitted fall of the profile along the downstream direction, m per m (≥ 0). */
  slope: number;
  /** Root-mean-square residual of the profile about its straight-line fit, m. */
  residualM: number;
}

interface ProfileFit {
  b: number;
  rms: number;
}

const STEP_DEG = 0.5;
const DIRECTIONS = 360;
/** Smallest second-harmonic amplitude of rms(θ) that counts as a valley axis: absolute (m) and relative to the mean rms. */
const AXIS_MIN_A2_M = 0.02;
const AXIS_MIN_A2_REL = 0.1;

/** Fits z = a + b·t along direction θ (radians, in ground metres) through the frame's anchor; null when fewer than half the samples are valid. */
function fitProfile(grid: Grid, frame: MetricFrame, theta: number, stepM: number, nHalf: number, z0: number): ProfileFit | null {
  const ce = Math.cos(theta) * frame.colPerEastM;
  const rn = Math.sin(theta) * frame.rowPerNorthM;
  let n = 0;
  let st = 0;
  let sz = 0;
  let stt = 0;
  let stz = 0;
  let szz = 0;
  for (let k = -nHalf; k <= nHalf; k++) {
    const t = k * stepM;
    const z = sampleZ(grid, frame.col0 + t * ce, frame.row0 + t * rn) - z0;
    if (Number.isNaN(z)) continue;
    n++;
    st += t;
    sz += z;
    stt += t * t;
    stz += t * z;
    szz += z * z;
  }
  if (n < Math.max(5, nHalf + 1)) return null;
  const ctt = stt - (st * st) / n;
  const ctz = stz - (st * sz) / n;
  const czz = szz - (sz * sz) / n;
  if (ctt <= 0) return null;
  const b = ctz / ctt;
  return { b, rms: Math.sqrt(Math.max(czz - b * ctz, 0) / n) };
}

/**
 * Estimates the downstream direction at a channel cell from profiles of
 * ±reachM metres sampled every stepM metres. Returns null when too little of
 * the terrain around it is on the grid and valid.
 */
export function estimateFlowAxis(grid: Grid, frame: MetricFrame, reachM: number, stepM: number): FlowAxis | null {
  const nHalf = Math.max(2, Math.ceil(reachM / stepM));
  const z0 = sampleZ(grid, frame.col0, frame.row0);
  if (Number.isNaN(z0)) return null;
  const rms = new Float64Array(DIRECTIONS).fill(NaN);
  const slope = new Float64Array(DIRECTIONS).fill(NaN);
  let valid = 0;
  let a0 = 0;
  let c2 = 0;
  let s2 = 0;
  let ge = 0;
  let gn = 0;
  for (let k = 0; k < DIRECTIONS; k++) {
    const theta = (k * STEP_DEG * Math.PI) / 180;
    const fit = fitProfile(grid, frame, theta, stepM, nHalf, z0);
    if (fit === null) continue;
    valid++;
    a0 += fit.rms;
    c2 += fit.rms * Math.cos(2 * theta);
    s2 += fit.rms * Math.sin(2 * theta);
    ge += fit.b * Math.cos(theta);
    gn += fit.b * Math.sin(theta);
  }
  if (valid < DIRECTIONS / 2) return null;
  a0 /= valid;
  const a2 = (2 * Math.hypot(c2, s2)) / valid;

  let east: number;
  let north: number;
  if (a2 >= Math.max(AXIS_MIN_A2_M, AXIS_MIN_A2_REL * a0)) {
    const axis = (Math.atan2(s2, c2) + Math.PI) / 2;
    east = Math.cos(axis);
    north = Math.sin(axis);
  } else {
    const g = Math.hypot(ge, gn);
    if (g === 0) return null;
    east = -ge / g;
    north = -gn / g;
  }
  const along = fitProfile(grid, frame, Math.atan2(north, east), stepM, nHalf, z0);
  if (along === null) return null;
  const sense = along.b > 0 ? -1 : 1;
  return { east: sense * east, north: sense * north, slope: Math.abs(along.b), residualM: along.rms };
}
