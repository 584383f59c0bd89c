/**
 * The methods and assumptions section, generated from the run: what each
 * parameter means (with its source where it has one), and sentences that
 * state the method with the run's own values. Parameters this file does not
 * know (added by later stages) are still listed, by their names.
 */
import { ACRE_FOOT_M3, ACRE_M2 } from '../units.js';
import { formatNumber } from './format.js';
import type { RunSummary } from './run-data.js';

/** Meaning and source of the parameters pondage writes into summary.json. */
export const PARAMETER_NOTES: Record<string, { meaning: string; source?: string }> = {
  default_height_m: {
    meaning: 'crest height above the bed for dams with no measured height that do not stand out in the DEM, m',
    source: 'a typical beaver dam height (common practice; within the range of Burchsted & Daniels 2014)',
  },
  typical_max_height_m: { meaning: 'heights above this draw a warning, m', source: 'beaver dams rarely exceed 1.5 m (Burchsted & Daniels 2014)' },
  max_height_m: { meaning: 'dams higher than this are skipped as implausible, m', source: 'about the largest beaver dams reach (Burchsted & Daniels 2014)' },
  dem_visible_min_m: {
    meaning: 'a crest standing this far above the ground downstream is taken as visible in the DEM, m',
    source: 'three times the 10 cm RMSEz of USGS 3DEP quality level 2 lidar (USGS Lidar Base Specification)',
  },
  probe_m: { meaning: 'radius around the bed within which the ground on each side of the crest is sampled, m', source: 'project choice' },
  stage_step_m: { meaning: 'level step of the stage–area–storage curves, m' },
  max_reach_m: { meaning: 'largest distance a pond may reach from its crest; ponds reaching it are lower bounds, m', source: 'project choice (beaver ponds are mostly tens to a few hundred metres long)' },
  snap_radius_m: { meaning: 'search radius for the channel around a dam given as a point, m' },
  max_crest_length_m: { meaning: 'cap on crest lines built from dam points, m', source: 'common practice: crests over 100 m occur' },
  min_confidence: { meaning: 'candidates count in the totals from this confidence up (0–1)', source: 'project choice: more likely than not' },
};

export interface MethodsView {
  paragraphs: string[];
  parameters: { name: string; value: string; meaning: string; source: string }[];
}

/** Builds the methods text and parameter table of a run. */
export function methodsOf(summary: RunSummary, hillshade: { blockCells: number; azimuthDeg: number; altitudeDeg: number } | null): MethodsView {
  const p = new Map(summary.parameters);
  const n = (key: string): string | null => {
    const v = p.get(key);
    return typeof v === 'number' ? formatNumber(v, decimalsOfParameter(v)) : null;
  };
  const paragraphs: string[] = [];
  const dem = summary.dem;
  if (dem.widthCells !== null && dem.heightCells !== null) {
    const cell = dem.cellWidthM !== null ? `${formatNumber(dem.cellWidthM)} m` : 'unknown';
    paragraphs.push(
      `The DEM has ${formatNumber(dem.widthCells, 0)} × ${formatNumber(dem.heightCells, 0)} cells of about ${cell}` +
        `${dem.fileCount !== null && dem.fileCount > 1 ? ` in ${dem.fileCount} tiles` : ''}, in ${dem.crsName}` +
        `${dem.epsg !== null ? ` (EPSG:${dem.epsg})` : ''}. Ponds were filled on windows of it around the dams.`,
    );
  }
  let fill =
    'Each dam’s crest is drawn on the DEM as a wall, and the pond behind it is filled by a priority-flood from the crest’s upstream face: ' +
    'cells join the pond in order of the lowest water level at which they connect to it, so one flood gives the whole stage–area–storage curve. ' +
    'The water level is the crest elevation (the bed, the lowest DEM point along the crest, plus the dam height) unless water escapes first ' +
    'around the end of the crest (spill), at the edge of the DEM or of the maximum reach (edge), or into NoData; edge and NoData ponds are lower bounds.';
  if (n('stage_step_m')) fill += ` Stage–storage curves are tabulated every ${n('stage_step_m')} m.`;
  if (n('max_reach_m')) fill += ` Ponds may reach ${n('max_reach_m')} m from their crest.`;
  paragraphs.push(fill);
  let heights = 'Heights come from the inventory where measured.';
  if (n('dem_visible_min_m') && n('default_height_m')) {
    heights += ` Otherwise a crest standing at least ${n('dem_visible_min_m')} m above the ground just downstream is taken from the DEM; any other dam gets the default height of ${n('default_height_m')} m.`;
  }
  if (n('typical_max_height_m') && n('max_height_m')) {
    heights += ` Heights above ${n('typical_max_height_m')} m draw a warning and dams above ${n('max_height_m')} m are skipped (beaver dams rarely exceed 1.5 m and exceptionally reach about 3 m: Burchsted & Daniels 2014).`;
  }
  paragraphs.push(heights);
  let combine =
    'Where ponds of several dams overlap, each cell takes the highest water level that reaches it and its water belongs to the dam that sets that level, so cascades are counted once and per-dam figures add up exactly to the totals.';
  if (n('min_confidence')) combine += ` Proposed dams, and candidates below a confidence of ${n('min_confidence')}, are left out of the totals; the pond each would hold on its own is still reported.`;
  paragraphs.push(combine);
  if (hillshade) {
    paragraphs.push(
      `The map’s shaded relief is a hillshade of the DEM averaged over blocks of ${hillshade.blockCells} × ${hillshade.blockCells} cells: ` +
        `slope and aspect by Horn’s (1981) finite differences, sun at azimuth ${formatNumber(hillshade.azimuthDeg, 0)}° and altitude ${formatNumber(hillshade.altitudeDeg, 0)}°.`,
    );
  }
  if (summary.totals.bands) {
    paragraphs.push('Bands give the 5th and 95th percentiles (and median) of each figure over the run’s Monte Carlo draws; totals are summed within each draw before percentiles are taken.');
  }
  paragraphs.push(
    `Units: areas in m², hectares and acres (1 acre = ${formatNumber(ACRE_M2, 7)} m²), volumes in m³ and acre-feet (1 acre-foot = ${formatNumber(ACRE_FOOT_M3, 11)} m³), lengths in metres and international feet (NIST SP 811).`,
  );
  const parameters = summary.parameters.map(([name, value]) => {
    const note = PARAMETER_NOTES[name];
    return {
      name,
      value: typeof value === 'number' ? formatNumber(value, decimalsOfParameter(value)) : String(value),
      meaning: note?.meaning ?? '',
      source: note?.source ?? '',
    };
  });
  return { paragraphs, parameters };
}

function decimalsOfParameter(v: number): number {
  if (Number.isInteger(v)) return 0;
  const s = String(v);
  const dot = s.indexOf('.');
  return dot < 0 ? 0 : Math.min(6, s.length - dot - 1);
}
