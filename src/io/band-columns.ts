/**
 * Bands in flat tables: dams.csv gets `<column>_p05`, `_p50`, `_p95` and
 * `_mean` right after each figure's own column, in the same unit and
 * rounding; ponds.geojson gets the same names as flat properties (GIS
 * software reads flat properties, not nested objects).
 */
import type { CsvValue } from './csv-write.js';
import type { Bands } from '../uncertainty/bands.js';
import { m2ToAcres, m2ToHectares, m3ToAcreFeet, mToFeet } from '../units.js';

/** A dams.csv column that carries a band: the band it reads, the unit conversion, the rounding. */
interface BandColumn {
  band: string;
  convert: (v: number) => number;
  digits: number;
}

const same = (v: number): number => v;

/** dams.csv columns that get band columns beside them. */
export const DAM_BAND_COLUMNS: Readonly<Record<string, BandColumn>> = Object.freeze({
  height_m: { band: 'height_m', convert: same, digits: 3 },
  height_ft: { band: 'height_m', convert: mToFeet, digits: 3 },
  water_level_m: { band: 'water_level_m', convert: same, digits: 3 },
  area_m2: { band: 'area_m2', convert: same, digits: 2 },
  area_ha: { band: 'area_m2', convert: m2ToHectares, digits: 5 },
  area_acres: { band: 'area_m2', convert: m2ToAcres, digits: 5 },
  volume_m3: { band: 'volume_m3', convert: same, digits: 3 },
  volume_acre_ft: { band: 'volume_m3', convert: m3ToAcreFeet, digits: 6 },
  max_depth_m: { band: 'max_depth_m', convert: same, digits: 3 },
  max_depth_ft: { band: 'max_depth_m', convert: mToFeet, digits: 3 },
  mean_depth_m: { band: 'mean_depth_m', convert: same, digits: 3 },
  standalone_area_m2: { band: 'standalone_area_m2', convert: same, digits: 2 },
  standalone_volume_m3: { band: 'standalone_volume_m3', convert: same, digits: 3 },
  standalone_volume_acre_ft: { band: 'standalone_volume_m3', convert: m3ToAcreFeet, digits: 6 },
  influence_area_m2: { band: 'influence_area_m2', convert: same, digits: 2 },
  influence_area_ha: { band: 'influence_area_m2', convert: m2ToHectares, digits: 5 },
  influence_area_acres: { band: 'influence_area_m2', convert: m2ToAcres, digits: 5 },
});

const STATS = ['p05', 'p50', 'p95', 'mean'] as const;

/**
 * Inserts band columns after each banded column of a dams.csv table (only
 * when some row has bands). Rows without bands get empty cells.
 */
export function withBandColumns(header: readonly string[], rows: readonly CsvValue[][], bands: readonly (Bands | undefined)[]): { header: string[]; rows: CsvValue[][] } {
  if (!bands.some((b) => b !== undefined)) return { header: [...header], rows: rows.map((r) => [...r]) };
  const outHeader: string[] = [];
  const plan: { from: number; col: BandColumn | null }[] = [];
  header.forEach((name, k) => {
    outHeader.push(name);
    plan.push({ from: k, col: null });
    const col = DAM_BAND_COLUMNS[name];
    if (!col) return;
    for (const stat of STATS) {
      outHeader.push(`${name}_${stat}`);
      plan.push({ from: k, col });
    }
  });
  const outRows = rows.map((row, r) => {
    const b = bands[r];
    let stat = 0;
    return plan.map(({ from, col }) => {
      if (!col) {
        stat = 0;
        return row[from] ?? null;
      }
      const band = b?.[col.band];
      const name = STATS[stat++ % STATS.length]!;
      return band ? Number(col.convert(band[name]).toFixed(col.digits)) : null;
    });
  });
  return { header: outHeader, rows: outRows };
}

/** Flat band properties for a pond feature: `<figure>_<stat>` for the given figures (full precision). */
export function bandProperties(bands: Bands | undefined, figures: readonly string[]): Record<string, number> {
  const out: Record<string, number> = {};
  if (!bands) return out;
  for (const f of figures) {
    const band = bands[f];
    if (!band) continue;
    for (const stat of STATS) out[`${f}_${stat}`] = band[stat];
  }
  return out;
}
