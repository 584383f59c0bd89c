/**
 * The influence zone's limits as uncertainty sources: the riparian distance
 * D and rise Δz are drawn once per draw for the whole run (they define the
 * zone, so every dam sees the same D_k and Δz_k), each from its own stream
 * keyed by the run's seed and the source's name, so two runs with the same
 * seed draw the same limits (paired comparisons pair).
 *
 * Distributions (params.ts has the defaults and their basis):
 * - D ~ Triangular(D₀(1 − s), D₀, D₀(1 + s)), s = --riparian-distance-spread
 *   (default 0.5: 25–75 m around 50 m);
 * - Δz ~ Triangular(0.9·Δz₀, Δz₀, 1.2·Δz₀) (0.9–1.2 m around 1.0 m).
 * A switched-off source keeps the run's value in every draw.
 */
import { RIPARIAN_RISE_FACTORS, type UncertaintyParams } from './params.js';
import { createRng, deriveSeed, type Rng } from './random.js';
import type { SourceRecord } from './describe.js';

/** Lowest, deterministic and highest value a limit can take in a draw, m. */
export interface LimitRange {
  lowM: number;
  modeM: number;
  highM: number;
}

/** The ranges D and Δz can take (equal low, mode and high for a source that is off). */
export function riparianRanges(u: UncertaintyParams, distanceM: number, riseM: number): { distance: LimitRange; rise: LimitRange } {
  const s = u.riparianDistanceDraws ? u.riparianDistanceSpread : 0;
  const f = RIPARIAN_RISE_FACTORS;
  return {
    distance: { lowM: distanceM * (1 - s), modeM: distanceM, highM: distanceM * (1 + s) },
    rise: u.riparianRiseDraws ? { lowM: riseM * f.low, modeM: riseM * f.mode, highM: riseM * f.high } : { lowM: riseM, modeM: riseM, highM: riseM },
  };
}

/**
 * A Triangular(low, mode, high) deviate by inversion of its CDF (e.g.
 * Kotz & van Dorp 2004, "Beyond Beta", ch. 1; from memory): F(mode) =
 * (mode − low)/(high − low). Returns `mode` exactly when low = high.
 */
export function triangular(rng: Rng, r: LimitRange): number {
  const { lowM: a, modeM: c, highM: b } = r;
  const u = rng();
  if (!(b > a)) return c;
  const fc = (c - a) / (b - a);
  return u < fc ? a + Math.sqrt(u * (b - a) * (c - a)) : b - Math.sqrt((1 - u) * (b - a) * (b - c));
}

/** The limits of every draw, m (length = draws). */
export function drawRiparianLimits(u: UncertaintyParams, distanceM: number, riseM: number): { distanceM: Float64Array; riseM: Float64Array } {
  const N = u.draws;
  const ranges = riparianRanges(u, distanceM, riseM);
  const d = new Float64Array(N).fill(distanceM);
  const z = new Float64Array(N).fill(riseM);
  if (ranges.distance.highM > ranges.distance.lowM) {
    const rng = createRng(deriveSeed(u.seed, 'riparian-distance'));
    for (let k = 0; k < N; k++) d[k] = triangular(rng, ranges.distance);
  }
  if (ranges.rise.highM > ranges.rise.lowM) {
    const rng = createRng(deriveSeed(u.seed, 'riparian-rise'));
    for (let k = 0; k < N; k++) z[k] = triangular(rng, ranges.rise);
  }
  return { distanceM: d, riseM: z };
}

/** summary.json `uncertainty.sources` records of the two limits. */
export function riparianSourceRecords(u: UncertaintyParams, distanceM: number, riseM: number): SourceRecord[] {
  const r = riparianRanges(u, distanceM, riseM);
  const f = RIPARIAN_RISE_FACTORS;
  return [
    {
      name: 'riparian_distance',
      enabled: r.distance.highM > r.distance.lowM,
      distribution: `Triangular(${r.distance.lowM}, ${r.distance.modeM}, ${r.distance.highM}) m, one value per draw for every dam (--riparian-distance ± ${u.riparianDistanceSpread * 100} %, --riparian-distance-spread)`,
      basis:
        'Lowry (1993) found the steep water-table gradient around beaver ponds within about 50 m of the pond (from memory); the spread is a project choice, since that figure is read from a few transects and is not a sharp limit.',
    },
    {
      name: 'riparian_rise',
      enabled: r.rise.highM > r.rise.lowM,
      distribution: `Triangular(${r.rise.lowM}, ${r.rise.modeM}, ${r.rise.highM}) m, one value per draw for every dam (${f.low}, ${f.mode} and ${f.high} × --riparian-rise)`,
      basis:
        'Westbrook, Cooper & Baker (2006) report summer water-table declines of about 0.9–1.2 m prevented near dams (range from memory); the mode at the run\'s rise is a project choice.',
    },
  ];
}

/** summary.json `uncertainty.approximations` entry of the influence bands. */
export const RIPARIAN_APPROXIMATION =
  "Influence bands: a draw's influence area is the water its dams own in that draw plus the riparian cells within that draw's distance and rise limits, read from per-dam summed-area tables of the riparian candidates (distance × rise, 128 bins between the lowest and highest limit; exact at the run's own limits, bilinear between bin edges, error at most the area of the cells in the bins the limits fall in). The fringe is measured from the deterministic ponds (their extents and nearest pond cells), not from each draw's pond; a dam that does not count in a draw has no influence area in it and its fringe is not handed to neighbours; a dam whose water is not counted in the deterministic run (e.g. a candidate below --min-confidence) has no fringe in any draw, only its water; dams the inventory missed (--recall) are not in the influence bands.";
