/** The shape of a valley across its axis, shared by every valley of a scene. */
import type { SideProfile } from './channel.js';

/**
 * Height of the valley cross-section above the floor's axis at lateral
 * distance `d` (metres): the floor's gentle cross slope, then a concave toe,
 * a straight hillslope of length `runM`, a convex shoulder and the uplands.
 */
export function crossSection(side: SideProfile, d: number, hw: number, runM: number, reliefM: number): number {
  const fs = side.floorCrossSlope;
  const u = d - hw;
  if (u <= 0) return fs * d;
  const toe = side.toeM;
  const s = side.sideSlope;
  const base = fs * hw;
  if (u < toe) return base + (s * u * u) / (2 * toe);
  if (u < toe + runM) return base + (s * toe) / 2 + s * (u - toe);
  const v = u - toe - runM;
  const shoulder = side.shoulderM;
  if (v < shoulder) return base + (s * toe) / 2 + s * runM + s * v - ((s - side.uplandSlope) * v * v) / (2 * shoulder);
  return base + reliefM + side.uplandSlope * (v - shoulder);
}
