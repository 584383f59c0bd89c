/**
 * Valley bottom: cells whose HAND is at most a threshold that grows with the
 * drainage area of the stream cell they drain to:
 *
 *   thresholdM = min(maxM, baseM + coefficientM · (A / 1 km²)^exponent)
 *
 * Defaults (base 1 m, coefficient 0.5 m, exponent 0.4, cap 6 m): the base of
 * 1 m is common practice for the wetted fringe of small streams on lidar
 * DEMs; the growth follows regional hydraulic-geometry curves in which
 * bankfull depth rises with roughly the 0.3–0.4 power of drainage area
 * (Dunne & Leopold 1978, "Water in Environmental Planning", recalled from
 * memory); the coefficient and cap are our own choice, not a published
 * calibration. They give about 1.2 m at 0.1 km², 1.5 m at 1 km², 2.3 m at
 * 10 km² and 4.2 m at 100 km². Every value is an option.
 */
import type { HandResult } from './hand.js';

/** Threshold rule of {@link valleyBottom}; all heights in metres. */
export interface ValleyBottomOptions {
  /** Threshold at zero drainage area, m. Default 1. */
  baseM?: number;
  /** Growth per (km²)^exponent of drainage area, m. Default 0.5. */
  coefficientM?: number;
  /** Power of drainage area (km²). Default 0.4. */
  exponent?: number;
  /** Upper limit of the threshold, m. Default 6. */
  maxM?: number;
}

/** Defaults of {@link ValleyBottomOptions} (see file comment for where they come from). */
export const VALLEY_BOTTOM_DEFAULTS: Required<ValleyBottomOptions> = {
  baseM: 1,
  coefficientM: 0.5,
  exponent: 0.4,
  maxM: 6,
};

/** HAND threshold (m) for a stream cell with drainage area `areaM2` (m²). */
export function valleyBottomThresholdM(areaM2: number, options: ValleyBottomOptions = {}): number {
  const o = { ...VALLEY_BOTTOM_DEFAULTS, ...options };
  return Math.min(o.maxM, o.baseM + o.coefficientM * Math.pow(Math.max(0, areaM2) / 1e6, o.exponent));
}

/**
 * 1 where a cell is in the valley bottom: HAND (from {@link heightAboveDrainage})
 * at most the threshold for the drainage area (`accumulationM2`, m²) of the
 * cell's drainage cell; 0 elsewhere and where HAND is NaN.
 */
export function valleyBottom(hand: HandResult, accumulationM2: Float64Array, options: ValleyBottomOptions = {}): Uint8Array {
  const o = { ...VALLEY_BOTTOM_DEFAULTS, ...options };
  const { heightM, drainCell } = hand;
  const mask = new Uint8Array(heightM.length);
  const scale = 1e-6;
  for (let i = 0; i < mask.length; i++) {
    const h = heightM[i] ?? NaN;
    if (!(h <= o.maxM)) continue; // NaN and cells above any possible threshold
    const a = accumulationM2[drainCell[i] ?? 0] ?? 0;
    const limit = Math.min(o.maxM, o.baseM + o.coefficientM * Math.pow(a * scale, o.exponent));
    if (h <= limit) mask[i] = 1;
  }
  return mask;
}
