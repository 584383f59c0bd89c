/**
 * The comparison as the page shows it: every figure formatted once, charts
 * and the map drawn as SVG, ready for the compare.hbs template.
 */
import { CAUTIONS } from '../../pipeline/cautions.js';
import { m2ToAcres, m2ToHectares, m3ToAcreFeet } from '../../units.js';
import type { BandStats } from '../run-record.js';
import type { Backdrop, ChangeRaster } from '../change-map.js';
import type { Comparison, RunOverview } from '../compare.js';
import { DEFAULT_DEM_RMSE_M } from '../lod.js';
import type { DamChangeClass } from '../match.js';
import { changeMapSvg, classLegend, cropToContent, damSwatch } from './map.js';
import { BAR, DAM_MARK } from './palette.js';
import { barChart, fmt, fmtSigned, type Bar } from './svg.js';

/** Everything the template shows. */
export interface CompareView {
  title: string;
  from: string;
  to: string;
  runs: { label: string; dir: string; dem: string; rmse: string; draws: string; storage: string; area: string; dams: string }[];
  headline: { name: string; value: string; sub: string; band: string; verdict: string; verdictClass: string }[];
  bandsNote: string;
  map: { svg: string; legend: { name: string; colour: string }[]; dams: { name: string; swatch: string }[]; caption: string } | null;
  mapNote: string;
  charts: { totals: string; counts: string; topDams: string | null; watersheds: string | null; proposed: string | null };
  damCounts: { name: string; count: number }[];
  watersheds: { id: string; name: string; from: string; to: string; change: string; band: string; verdict: string }[] | null;
  watershedsNote: string;
  normalised: { label: string; perKm: string; perKm2: string; damsPerKm: string; pct: string; streamKm: string; valleyKm2: string }[];
  normalisedNotes: string[];
  proposed: {
    label: string;
    available: boolean;
    note: string;
    existing: string;
    withProposed: string;
    added: string;
    addedBand: string;
    drowned: { id: string; by: string; before: string; after: string }[];
    leftOut: { id: string; reason: string }[];
  }[];
  dams: { id: string; change: string; changeClass: string; matched: string; reasons: string; status: string; height: string; volume: string; delta: string; band: string; detectable: string }[];
  damBands: boolean;
  lod: string;
  method: string[];
  notes: string[];
  cautions: string[];
  pairs: { from: string; to: string; storage: string; band: string; verdict: string }[] | null;
}

const dash = '–';

function bandText(b: BandStats | undefined, digits: number, unit: string): string {
  return b ? `${fmtSigned(b.p05, digits)} to ${fmtSigned(b.p95, digits)} ${unit}`.trim() : 'no band';
}

function verdictOf(detectable: boolean | null | undefined): { verdict: string; verdictClass: string } {
  if (detectable === true) return { verdict: 'detectable', verdictClass: 'yes' };
  if (detectable === false) return { verdict: 'not detectable (band includes zero)', verdictClass: 'no' };
  return { verdict: 'no band: detectability unknown', verdictClass: 'unknown' };
}

/** Builds the page's view of a comparison; `raster` is the change raster of the first→last pair, `unitM` metres per CRS unit. */
export function compareView(c: Comparison, raster: ChangeRaster | null, unitM: number | null, backdrop: Backdrop | null = null): CompareView {
  const t = c.totals;
  const from = c.runs[0]!.label;
  const to = c.runs[c.runs.length - 1]!.label;
  const headline: CompareView['headline'] = [
    {
      name: 'Storage',
      value: `${fmtSigned(t.storage_change_m3)} m³`,
      sub: `${fmtSigned(t.storage_change_acre_ft, 2)} acre-ft · ${fmt(t.from.storage_m3 ?? 0)} → ${fmt(t.to.storage_m3 ?? 0)} m³`,
      band: bandText(t.bands?.['storage_change_m3'], 0, 'm³'),
      ...verdictOf(t.detectable['storage_change_m3']),
    },
    {
      name: 'Inundated area',
      value: `${fmtSigned(t.inundated_area_change_ha, 3)} ha`,
      sub: `${fmtSigned(t.inundated_area_change_acres, 2)} acres · ${fmtSigned(t.inundated_area_change_m2)} m²`,
      band: bandText(t.bands?.['inundated_area_change_m2'], 0, 'm²'),
      ...verdictOf(t.detectable['inundated_area_change_m2']),
    },
    t.influence_area_change_m2 === null
      ? { name: 'Influence area', value: 'not available', sub: 'the runs report no influence zone', band: 'no band', verdict: 'not available', verdictClass: 'unknown' }
      : {
          name: 'Influence area',
          value: `${fmtSigned(m2ToHectares(t.influence_area_change_m2), 3)} ha`,
          sub: `${fmtSigned(m2ToAcres(t.influence_area_change_m2), 2)} acres`,
          band: bandText(t.bands?.['influence_area_change_m2'], 0, 'm²'),
          ...verdictOf(t.detectable['influence_area_change_m2']),
        },
  ];

  const runs = c.runs.map((r) => ({
    label: r.label,
    dir: r.dir,
    dem: `${r.dem.crsName}${r.dem.epsg ? ` (EPSG:${r.dem.epsg})` : ''}, ${r.dem.widthCells} × ${r.dem.heightCells} cells, SHA-256 ${r.dem.sha256.map((h) => h.slice(0, 12)).join(', ') || dash}`,
    rmse: r.dem_rmse_m === null ? `not stated (${DEFAULT_DEM_RMSE_M} m assumed)` : `${r.dem_rmse_m} m`,
    draws: r.has_draws ? `${r.draw_count ?? '?'} draws${r.seed !== null ? `, seed ${r.seed}` : ''}` : r.totals.bands ? 'bands only' : 'none',
    storage: `${fmt(r.totals.storage_m3)} m³ (${fmt(m3ToAcreFeet(r.totals.storage_m3), 2)} acre-ft)`,
    area: `${fmt(m2ToHectares(r.totals.inundated_area_m2), 3)} ha`,
    dams: `${r.totals.dams_in_totals} of ${r.totals.dam_count}`,
  }));

  const totalsBars: Bar[] = c.runs.map((r) => {
    const b = r.totals.bands?.['storage_m3'];
    return { label: r.label, value: r.totals.storage_m3, band: b ? { lo: b.p05, hi: b.p95 } : null, colour: BAR.neutral };
  });
  const classes: DamChangeClass[] = ['new', 'gone', 'changed', 'persisting'];
  const countBars: Bar[] = classes.map((k) => ({ label: k, value: c.dam_counts[k], colour: DAM_MARK[k].colour }));
  const top = [...c.dams].filter((d) => d.volume_change_m3 !== 0).sort((x, y) => Math.abs(y.volume_change_m3) - Math.abs(x.volume_change_m3) || (x.id < y.id ? -1 : 1)).slice(0, 12);
  const wsBars: Bar[] | null = c.watersheds
    ? c.watersheds
        .filter((w) => w.storage_change_m3 !== null)
        .map((w) => {
          const b = w.bands?.['storage_change_m3'];
          return { label: w.name ?? w.id, value: w.storage_change_m3!, band: b ? { lo: b.p05, hi: b.p95 } : null, colour: w.storage_change_m3! >= 0 ? BAR.up : BAR.down };
        })
    : null;
  const proposedBars: Bar[] = [];
  for (const r of c.runs) {
    if (!r.proposed.available || !r.proposed.existing || !r.proposed.with_proposed) continue;
    const be = r.proposed.existing.bands?.['storage_m3'];
    const bw = r.proposed.with_proposed.bands?.['storage_m3'];
    proposedBars.push({ label: `${r.label} existing`, value: r.proposed.existing.storage_m3, band: be ? { lo: be.p05, hi: be.p95 } : null, colour: BAR.neutral });
    proposedBars.push({ label: `${r.label} + proposed`, value: r.proposed.with_proposed.storage_m3, band: bw ? { lo: bw.p05, hi: bw.p95 } : null, colour: BAR.proposed });
  }

  const relief = backdrop && raster && backdrop.crsKey === raster.crsKey ? backdrop : null;
  const map = raster ? { svg: changeMapSvg(raster, c.dams, unitM, relief), legend: classLegend(), dams: classes.map((k) => ({ name: DAM_MARK[k].label, swatch: damSwatch(k) })), caption: mapCaption(c, cropToContent(raster, c.dams)) } : null;

  return {
    title: `pondage comparison: ${from} → ${to}`,
    from,
    to,
    runs,
    headline,
    bandsNote: t.bands_note,
    map,
    mapNote: c.change_map.available ? '' : c.change_map.note,
    charts: {
      totals: barChart(totalsBars, { title: 'Storage of each run (whiskers: 5th–95th percentile when the run has bands)', unit: 'm³' }),
      counts: barChart(countBars, { title: `Dams by change, ${from} → ${to}`, unit: 'dams' }),
      topDams: top.length > 0 ? barChart(top.map((d) => ({ label: d.id, value: d.volume_change_m3, colour: d.volume_change_m3 >= 0 ? BAR.up : BAR.down, note: d.change })), { title: 'Largest changes of counted storage, by dam', unit: 'm³', signed: true }) : null,
      watersheds: wsBars && wsBars.length > 0 ? barChart(wsBars, { title: 'Storage change by watershed (whiskers: band)', unit: 'm³', signed: true }) : null,
      proposed: proposedBars.length > 0 ? barChart(proposedBars, { title: 'Existing dams, and with the proposed structures', unit: 'm³' }) : null,
    },
    damCounts: classes.map((k) => ({ name: k, count: c.dam_counts[k] })),
    watersheds: c.watersheds
      ? c.watersheds.map((w) => ({
          id: w.id,
          name: w.name ?? '',
          from: w.from.storage_m3 === null ? dash : fmt(w.from.storage_m3),
          to: w.to.storage_m3 === null ? dash : fmt(w.to.storage_m3),
          change: w.storage_change_m3 === null ? 'in one run only' : fmtSigned(w.storage_change_m3),
          band: bandText(w.bands?.['storage_change_m3'], 0, 'm³'),
          verdict: verdictOf(w.detectable['storage_change_m3']).verdict,
        }))
      : null,
    watershedsNote: c.watersheds_note,
    normalised: c.runs.map(normalisedRow),
    normalisedNotes: c.runs.map((r) => r.normalised.note),
    proposed: c.runs.map(proposedRow),
    dams: c.dams.map((d) => ({
      id: d.id === d.id_from || d.id_from === null ? d.id : `${d.id} (was ${d.id_from})`,
      change: d.change,
      changeClass: d.change,
      matched: d.matched_by === null ? dash : d.matched_by === 'id' ? 'id' : `proximity, ${d.distance_m === null ? '?' : fmt(d.distance_m, 1)} m`,
      reasons: d.reasons.join(', ') || dash,
      status: d.status_from === d.status_to ? (d.status_to ?? dash) : `${d.status_from ?? dash} → ${d.status_to ?? dash}`,
      height: `${d.height_from_m === null ? dash : fmt(d.height_from_m, 2)} → ${d.height_to_m === null ? dash : fmt(d.height_to_m, 2)}`,
      volume: `${fmt(d.volume_from_m3, 1)} → ${fmt(d.volume_to_m3, 1)}`,
      delta: fmtSigned(d.volume_change_m3, 1),
      band: d.volume_change_band ? `${fmtSigned(d.volume_change_band.p05, 0)} … ${fmtSigned(d.volume_change_band.p95, 0)}` : dash,
      detectable: d.volume_change_detectable === null ? dash : d.volume_change_detectable ? 'yes' : 'no',
    })),
    damBands: c.dams.some((d) => d.volume_change_band !== null),
    lod: c.dem_difference.note + ` σ = ${c.dem_difference.sigma_from_m} m (${c.dem_difference.sigma_from_source}) and ${c.dem_difference.sigma_to_m} m (${c.dem_difference.sigma_to_source}).`,
    method: methodLines(c),
    notes: c.notes,
    cautions: CAUTIONS,
    pairs:
      c.pairs.length > 1
        ? c.pairs.map((p) => ({
            from: p.from,
            to: p.to,
            storage: `${fmtSigned(p.totals.storage_change_m3)} m³`,
            band: bandText(p.totals.bands?.['storage_change_m3'], 0, 'm³'),
            verdict: verdictOf(p.totals.detectable['storage_change_m3']).verdict,
          }))
        : null,
  };
}

function normalisedRow(r: RunOverview): CompareView['normalised'][number] {
  const n = r.normalised.total;
  const show = (v: number | null, digits: number): string => (v === null ? 'not available' : fmt(v, digits));
  return {
    label: r.label,
    perKm: show(n.storage_per_stream_km_m3, 0),
    perKm2: show(n.storage_per_valley_bottom_km2_m3, 0),
    damsPerKm: show(n.dams_per_stream_km, 1),
    pct: show(n.valley_bottom_influenced_pct, 1),
    streamKm: show(n.stream_length_km, 2),
    valleyKm2: show(n.valley_bottom_area_km2, 3),
  };
}

function proposedRow(r: RunOverview): CompareView['proposed'][number] {
  const p = r.proposed;
  const b = p.added?.bands?.['storage_m3'];
  return {
    label: r.label,
    available: p.available,
    note: p.note,
    existing: p.existing ? `${fmt(p.existing.storage_m3)} m³ · ${fmt(m2ToHectares(p.existing.inundated_area_m2), 3)} ha (${p.existing.dams_counted} dams)` : dash,
    withProposed: p.with_proposed ? `${fmt(p.with_proposed.storage_m3)} m³ · ${fmt(m2ToHectares(p.with_proposed.inundated_area_m2), 3)} ha (${p.with_proposed.dams_counted} dams, ${p.with_proposed.proposed_counted} proposed)` : dash,
    added: p.added ? `${fmtSigned(p.added.storage_m3)} m³ (${fmtSigned(m3ToAcreFeet(p.added.storage_m3), 2)} acre-ft) · ${fmtSigned(m2ToHectares(p.added.inundated_area_m2), 3)} ha` : dash,
    addedBand: b ? `${bandText(b, 0, 'm³')}, ${verdictOf(p.added?.detectable).verdict}` : 'no band',
    drowned: p.drowned_by_proposed.map((d) => ({ id: d.id, by: d.drowned_by, before: fmt(d.volume_existing_m3, 1), after: fmt(d.volume_with_proposed_m3, 1) })),
    leftOut: p.proposed_left_out,
  };
}

function mapCaption(c: Comparison, raster: ChangeRaster): string {
  const m = c.change_map;
  if (!m.available) return '';
  const t = raster.transform;
  const x1 = t.x0 + raster.width * t.dx;
  const y1 = t.y0 + raster.height * t.dy;
  return (
    `Water depth of ${c.runs[c.runs.length - 1]!.label} against ${c.runs[0]!.label}, cell by cell` +
    (m.threshold_m > 0 ? `; depth changes under ${fmt(m.threshold_m, 3)} m (LoD95) are not called changes` : '') +
    `. Σ depth change × cell area ${fmtSigned(m.storage_change_m3)} m³` +
    (m.threshold_m > 0 ? `, above the LoD ${fmtSigned(m.storage_change_above_threshold_m3)} m³` : '') +
    `. Extent in the DEM's CRS: x ${fmt(Math.min(t.x0, x1), 1)}–${fmt(Math.max(t.x0, x1), 1)}, y ${fmt(Math.min(t.y0, y1), 1)}–${fmt(Math.max(t.y0, y1), 1)}.` +
    (m.note ? ` Note: ${m.note}` : '')
  );
}

function methodLines(c: Comparison): string[] {
  const p = c.parameters;
  return [
    `Dams are matched by id, then by the distance between crest midpoints within ${p.match_tolerance_m} m (closest first); the same id with crests over ${p.id_conflict_m} m apart is treated as two dams.`,
    `A matched dam is changed when its status differs, its height differs by ${p.height_change_m} m or more, it enters or leaves the totals, the dam drowning it differs, or its counted water differs by at least ${p.volume_change_fraction * 100} % and ${p.volume_change_min_m3} m³; otherwise it is persisting. Unmatched dams are new or gone.`,
    'Storage and inundated-area changes are the sums of the per-dam changes of the water counted in each run’s totals, so the dams’ rows add up to the total change.',
    c.totals.bands_note,
    'LoD95 = 1.96·√(σ₁² + σ₂²) for runs on different DEMs (Lane et al. 2003; Brasington et al. 2003), σ from each run’s DEM RMSE, else 0.10 m (USGS Lidar Base Specification QL2).',
  ];
}
