/**
 * Monte Carlo bands of the watershed rows. A row's figure in draw k is the
 * sum of its dams' figures in draw k (pipeline/draws.ts `sumByGroup`, in
 * dam-row order), and its band is taken over those per-draw sums: never a
 * sum of the dams' percentiles. Storage, inundated area and the dams that
 * count get bands; the influence and land figures are not drawn.
 *
 * Dams the inventory missed (`--recall`) are in the totals' bands only.
 */
import { sumByGroup } from '../pipeline/draws.js';
import { bandsOf, mapBand, type Bands } from '../uncertainty/bands.js';
import type { DrawOutcome } from '../uncertainty/engine.js';
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../units.js';

/** Per-draw figures of each watershed row, keyed as the totals' per-draw figures are (draws.csv). */
export type WatershedDraws = Record<'storage_m3' | 'inundated_area_m2' | 'dams_in_totals', Float64Array>[];

/** Per-draw sums by row; `rowOfDam[d]` is dam row d's watershed row. */
export function watershedDraws(outcome: DrawOutcome, rowOfDam: Int32Array, rowCount: number): WatershedDraws {
  const N = outcome.draws;
  const included = new Float64Array(outcome.included.length);
  for (let i = 0; i < included.length; i++) included[i] = outcome.included[i]!;
  const storage = sumByGroup(outcome.damVolumeM3, N, rowOfDam, rowCount);
  const area = sumByGroup(outcome.damAreaM2, N, rowOfDam, rowCount);
  const counted = sumByGroup(included, N, rowOfDam, rowCount);
  return storage.map((s, r) => ({ storage_m3: s, inundated_area_m2: area[r]!, dams_in_totals: counted[r]! }));
}

/** Bands of each row, with the unit conversions the row carries (acre-feet, ha, acres). */
export function watershedBands(draws: WatershedDraws): Bands[] {
  const scratch = new Float64Array(draws[0]?.storage_m3.length ?? 0);
  return draws.map((figures) => {
    const b = bandsOf(figures, scratch);
    return {
      ...b,
      storage_acre_ft: mapBand(b['storage_m3']!, m3ToAcreFeet),
      inundated_area_ha: mapBand(b['inundated_area_m2']!, m2ToHectares),
      inundated_area_acres: mapBand(b['inundated_area_m2']!, m2ToAcres),
    };
  });
}
