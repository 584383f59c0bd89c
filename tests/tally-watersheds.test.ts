/**
 * Tallies by watershed on hand-made dam records: what each row counts, the
 * `outside` row and its name, influence only for water that counts, and
 * the US customary units beside the SI ones (NIST SP 811).
 */
import { describe, expect, it } from 'vitest';
import type { DamResult } from '../src/pipeline/result.js';
import { OUTSIDE_ID, tallyWatersheds, type TallyUnit } from '../src/tally/watersheds.js';

/** A dam record with only what the tally reads filled in. */
function dam(id: string, over: Partial<DamResult>): DamResult {
  return {
    id,
    status: 'confirmed',
    confidence: null,
    year: null,
    crest_geometry: 'line',
    in_totals: true,
    estimated: true,
    skip_reason: null,
    crest_elev_m: null,
    bed_elev_m: null,
    height_m: null,
    height_source: null,
    upstream_side: null,
    upstream_source: null,
    water_level_m: null,
    limited_by: null,
    area_m2: 0,
    volume_m3: 0,
    max_depth_m: 0,
    mean_depth_m: 0,
    standalone_area_m2: 0,
    standalone_volume_m3: 0,
    drowned_by: null,
    crest_length_m: null,
    cells_visited: 0,
    stage_storage: [],
    warnings: [],
    properties: {},
    ...over,
  };
}

const units: TallyUnit[] = [
  { id: 'north', name: 'North fork', source: 'polygon', areaM2: 4_046_856.4224, streamLengthM: 1609.344, valleyBottomAreaM2: 20_000 },
  { id: 'outside', name: null, source: 'polygon', areaM2: 1e6, streamLengthM: 0, valleyBottomAreaM2: 0 },
];

describe('tallyWatersheds', () => {
  const dams = [
    dam('a', { area_m2: 100, volume_m3: 1233.48183754752, volume_above_surface_m3: 1000, volume_below_surface_m3: 233.48183754752 }),
    dam('b', { status: 'proposed', in_totals: false, standalone_area_m2: 50, standalone_volume_m3: 20 }),
    dam('c', { status: 'candidate', area_m2: 30, volume_m3: 10 }),
    dam('far', { estimated: false, in_totals: false }),
  ];
  const t = tallyWatersheds(dams, units, Int32Array.of(0, 0, 1, -1), Float64Array.of(900, 500, 70, 0), 'the test polygons');

  it('gives each dam its watershed and its influence: its water plus the fringe nearest it, nothing for water not counted', () => {
    expect(dams.map((d) => d.watershed)).toEqual(['north', 'north', 'outside', 'outside-watersheds']);
    expect(dams.map((d) => d.influence_area_m2)).toEqual([1000, 0, 100, 0]);
    expect(dams.map((d) => d.riparian_area_m2)).toEqual([900, 0, 70, 0]);
  });

  it('names the row of dams in no watershed, avoiding a polygon called "outside", and warns naming the dam', () => {
    expect(t.rows.map((r) => r.id)).toEqual(['north', 'outside', `${OUTSIDE_ID}-watersheds`]);
    expect(t.rows[2]!.source).toBe('outside');
    expect(t.rows[2]!.stream_length_m).toBeNull();
    expect(t.warnings).toHaveLength(1);
    expect(t.warnings[0]!.message).toContain('1 of 4 dams');
    expect(t.warnings[0]!.message).toContain('far');
    expect(t.warnings[0]!.message).toContain('the test polygons');
  });

  it('counts dams by status and sums their figures; rows add up to the totals', () => {
    const north = t.rows[0]!;
    expect(north).toMatchObject({ dam_count: 2, dams_in_totals: 1, dams_confirmed: 1, dams_proposed: 1, dams_candidate: 0, inundated_area_m2: 100, influence_area_m2: 1000, storage_m3: 1233.48183754752 });
    expect(north.storage_above_surface_m3 + north.storage_below_surface_m3).toBe(north.storage_m3);
    expect(t.rows.reduce((s, r) => s + r.dam_count, 0)).toBe(4);
    expect(t.rows.reduce((s, r) => s + r.influence_area_m2, 0)).toBe(t.totals.influence_area_m2);
    expect(t.totals.riparian_area_m2).toBe(970);
    expect(t.totals.stream_length_m).toBe(1609.344);
    expect(t.totals.watershed_count).toBe(3);
  });

  it('gives acres, acre-feet and miles beside m², m³ and m (NIST SP 811: acre 4046.8564224 m², acre-foot 1233.48183754752 m³, mile 1609.344 m)', () => {
    const north = t.rows[0]!;
    expect(north.area_acres).toBeCloseTo(1000, 9);
    expect(north.storage_acre_ft).toBeCloseTo(1, 12);
    expect(north.stream_length_mi).toBeCloseTo(1, 12);
    expect(north.stream_length_km).toBeCloseTo(1.609344, 12);
    expect(north.dams_per_stream_km).toBeCloseTo(1 / 1.609344, 12);
    expect(north.valley_bottom_influenced_pct).toBeCloseTo(5, 12);
  });
});
