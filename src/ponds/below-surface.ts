/**
 * Water below today's surface: what lidar does not see.
 *
 * Topographic lidar (near-infrared) does not enter water, so inside a pond
 * that already holds water the DEM is the water surface. The fill behind the
 * crest then measures only the capacity above that surface; the water under
 * it comes from a model of the bed:
 *
 * - `power-law` (the default): the area–depth relation of Hayashi & van der
 *   Kamp (2000, "Simple equations to represent the volume–area–depth
 *   relations of shallow wetlands in small topographic depressions", Journal
 *   of Hydrology 237: 74–85). A pond whose area grows with depth as
 *   A(h) = A₀·(h/h₀)^(2/p) holds V = A₀·h₀/(1 + 2/p) at depth h₀: p = 1 is a
 *   cone, p = 2 a paraboloid, p → ∞ a flat-bottomed box. A is today's water
 *   surface area and h the water depth at the dam (today's surface minus the
 *   bed at the dam).
 * - `reconstructed`: the pre-dam bed interpolated under the pond
 *   (bed-reconstruct.ts), depth = surface − bed, summed cell by cell.
 * - a bed DEM (`--bed-dem`), used cell by cell where it has data.
 *
 * p for beaver ponds: Karran et al. (2017, "Rapid surface-water volume
 * estimations in beaver ponds", Hydrology and Earth System Sciences 21:
 * 1039–1050) fitted p on surveyed beaver ponds; their median, 0.91 (from
 * memory: the paper could not be consulted while this was written, so the
 * value is not re-checked), is the default here.
 */

/** Which model gives the water below today's surface. */
export type BelowModel = 'power-law' | 'reconstructed';

/** The models a user can choose, in the order the CLI lists them. */
export const BELOW_MODELS: readonly BelowModel[] = ['power-law', 'reconstructed'];

/**
 * Default shape exponent p of the area–depth power law (dimensionless):
 * 0.91, the median over beaver ponds of Karran et al. (2017) (from memory, not re-checked).
 */
export const POWER_P_MEDIAN = 0.91;

/**
 * Range of p a user or an uncertainty draw may use (dimensionless). The lower
 * end, 0.5, is a pond whose sides steepen towards the shore (a narrow incised
 * channel flooded over a flat floor); the upper end, 3, is close to a
 * flat-bottomed basin. These bounds are a project choice that brackets the
 * shapes the model is meant for, not a published spread: Karran et al.
 * (2017) report p per pond, and their spread should be taken from the paper
 * (not restated here; not checked).
 */
export const POWER_P_RANGE: readonly [number, number] = [0.5, 3];

/**
 * Volume held below a water surface by the area–depth power law of Hayashi &
 * van der Kamp (2000): V = A·h/(1 + 2/p), in m³.
 *
 * @param areaM2 water-surface area today, m²
 * @param depthM water depth at the deepest point (the dam), m; ≤ 0 gives 0
 * @param p shape exponent (dimensionless, > 0): 1 cone, 2 paraboloid
 */
export function volumeBelow(areaM2: number, depthM: number, p: number): number {
  if (!(p > 0) || !Number.isFinite(p)) throw new Error(`power-law exponent p must be a positive number; got ${p}`);
  if (!(areaM2 > 0) || !(depthM > 0)) return 0;
  return (areaM2 * depthM) / (1 + 2 / p);
}

/**
 * The power law's water-surface area at a level y above the bed,
 * A(y) = A·(y/h)^(2/p), in m²: the stage–area relation the model implies
 * under today's surface (A at y = h).
 *
 * @param areaM2 area at the full depth h, m²
 * @param fullDepthM h, m
 * @param depthAboveBedM y, 0 ≤ y ≤ h, m
 * @param p shape exponent
 */
export function areaAtDepth(areaM2: number, fullDepthM: number, depthAboveBedM: number, p: number): number {
  if (!(fullDepthM > 0) || !(depthAboveBedM > 0)) return 0;
  const y = Math.min(depthAboveBedM, fullDepthM);
  return areaM2 * Math.pow(y / fullDepthM, 2 / p);
}
