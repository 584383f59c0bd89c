/**
 * The report's view model: every value the templates show, already
 * formatted, each figure from summary.json carried as a `<data>` element
 * (format.ts). Sections the run has no data for are null and the templates
 * leave them out.
 */
import { areaVolumeChart, heightsChart, stageStorageChart, storageByWatershedChart } from './charts.js';
import { escapeHtml as escape, figureHtml, figureWithUnit, formatNumber, type DisplayUnit } from './format.js';
import type { ReportMap } from './map-file.js';
import { buildMapFigure, type MapFigure, type MapLayers } from './map-svg.js';
import { methodsOf, type MethodsView } from './methods.js';
import { HEIGHT_SOURCE_STYLE, LIMIT_STYLE, STATUS_STYLE } from './palette.js';
import type { Band, RunSummary } from './run-data.js';
import { legendSwatch } from './svg.js';

/** Everything a report is rendered from. */
export interface ReportInput {
  summary: RunSummary;
  /** report-map.json, or null when the run folder has none. */
  map: ReportMap | null;
  layers: MapLayers;
}

interface Card {
  label: string;
  main: string;
  second: string;
  band: string | null;
  note: string | null;
}

export interface ReportView {
  /** The <title>: at most 70 characters. */
  pageTitle: string;
  title: string;
  subtitle: string;
  toolVersion: string;
  finishedAt: string | null;
  cards: Card[];
  storageSplit: string | null;
  /** A sentence on where the bands come from, when the run has them. */
  bandNote: string | null;
  scenarios: {
    rows: { label: string; dams: string; inundated: string; storage: string; band?: string | null }[];
    /** True when the run has per-draw scenario figures: a 90 % band column on storage. */
    hasBands: boolean;
    drowned: string[];
    leftOut: { id: string; reason: string }[];
  } | null;
  uncertainty: {
    draws: string;
    seed: string | null;
    method: string | null;
    sources: { name: string; enabled: string; distribution: string; basis: string }[];
    approximations: string[];
    standardErrors: string | null;
    tooFewDraws: boolean;
  } | null;
  map: (MapFigure & { caption: string; maxWidthCss: string }) | null;
  mapMissing: string | null;
  watersheds: {
    chart: string | null;
    rows: Record<string, string | null>[];
    hasBands: boolean;
    hasInfluence: boolean;
    hasValley: boolean;
    hasStreams: boolean;
    total: Record<string, string | null>;
  } | null;
  dams: {
    rows: Record<string, string | boolean | null>[];
    hasBands: boolean;
    hasSplit: boolean;
    hasWatershed: boolean;
    hasInfluence: boolean;
    anyStandalone: boolean;
  };
  charts: {
    stage: string | null;
    areaVolume: { svg: string; legend: { swatch: string; label: string }[]; note: string | null } | null;
    heights: { svg: string; legend: { swatch: string; label: string }[] } | null;
  };
  warnings: {
    skipped: { id: string; status: string; reason: string }[];
    groups: { code: string; count: number; items: { dam: string; message: string }[] }[];
    total: number;
  };
  methods: MethodsView & { assumptions: string[]; models: { name: string; detail: string | null }[] };
  inputs: { role: string; path: string; sha256: string }[];
  cautions: string[];
  run: { durationS: string | null; startedAt: string | null };
}

const fig = (value: number, field: string, unit: DisplayUnit, decimals?: number): string =>
  figureHtml(decimals === undefined ? { value, field, unit } : { value, field, unit, decimals });
const figU = (value: number, field: string, unit: DisplayUnit): string => figureWithUnit({ value, field, unit });
/** A figure's 90 % band as a second line under it in a table cell ('' without a band). */
const bandLine = (band: { p05: number; p95: number } | undefined, field: string, unit: DisplayUnit): string =>
  band ? `<span class="cell-band">90 %: ${fig(band.p05, `${field}.p05`, unit)} – ${fig(band.p95, `${field}.p95`, unit)}</span>` : '';

/** A band as "p05 – p95 unit", each end a figure. */
function bandText(band: Band | undefined, field: string, unit: DisplayUnit): string | null {
  if (!band) return null;
  return `${fig(band.p05, `${field}.p05`, unit)} – ${figU(band.p95, `${field}.p95`, unit)}`;
}

/** Builds the view model of a run's report. */
export function buildView(input: ReportInput): ReportView {
  const { summary } = input;
  const t = summary.totals;
  const tb = t.bands ?? {};
  const cards: Card[] = [];
  cards.push({
    label: 'Water stored',
    main: figU(t.storageM3, 'totals.storage_m3', 'm3'),
    second: figU(t.storageM3, 'totals.storage_m3', 'acre_ft'),
    band: tb['storage_m3']
      ? `90 % band ${bandText(tb['storage_m3'], 'totals.bands.storage_m3', 'm3')} (${bandText(tb['storage_m3'], 'totals.bands.storage_m3', 'acre_ft')}), median ${figU(tb['storage_m3'].p50, 'totals.bands.storage_m3.p50', 'm3')}`
      : null,
    note: `in the ponds of ${fig(t.damsInTotals, 'totals.dams_in_totals', 'count')} dams`,
  });
  cards.push({
    label: 'Inundated area',
    main: figU(t.inundatedAreaM2, 'totals.inundated_area_m2', 'ha'),
    second: `${figU(t.inundatedAreaM2, 'totals.inundated_area_m2', 'acres')} · ${figU(t.inundatedAreaM2, 'totals.inundated_area_m2', 'm2')}`,
    band: tb['inundated_area_m2']
      ? `90 % band ${bandText(tb['inundated_area_m2'], 'totals.bands.inundated_area_m2', 'ha')} (${bandText(tb['inundated_area_m2'], 'totals.bands.inundated_area_m2', 'acres')})`
      : null,
    note: 'ponds counted in the totals',
  });
  if (t.influenceAreaM2 !== null) {
    cards.push({
      label: 'Influenced area',
      main: figU(t.influenceAreaM2, 'totals.influence_area_m2', 'ha'),
      second: `${figU(t.influenceAreaM2, 'totals.influence_area_m2', 'acres')} · ${figU(t.influenceAreaM2, 'totals.influence_area_m2', 'm2')}`,
      band: tb['influence_area_m2']
        ? `90 % band ${bandText(tb['influence_area_m2'], 'totals.bands.influence_area_m2', 'ha')} (${bandText(tb['influence_area_m2'], 'totals.bands.influence_area_m2', 'acres')})`
        : null,
      note: 'ponds and their riparian fringe',
    });
  }
  cards.push({
    label: 'Dams',
    main: `${fig(t.damsEstimated, 'totals.dams_estimated', 'count')} <span class="of">of ${fig(t.damCount, 'totals.dam_count', 'count')}</span>`,
    second: `estimated; ${fig(t.damsInTotals, 'totals.dams_in_totals', 'count')} in the totals`,
    band: null,
    note: t.damsSkipped > 0 ? `${fig(t.damsSkipped, 'totals.dams_skipped', 'count')} skipped: see Warnings` : `${fig(t.damsSkipped, 'totals.dams_skipped', 'count')} skipped`,
  });

  const storageSplit =
    t.storageAboveSurfaceM3 !== null && t.storageBelowSurfaceM3 !== null
      ? `Of the storage, ${figU(t.storageBelowSurfaceM3, 'totals.storage_below_surface_m3', 'm3')} (${figU(t.storageBelowSurfaceM3, 'totals.storage_below_surface_m3', 'acre_ft')}) lies below today’s water surfaces and ${figU(t.storageAboveSurfaceM3, 'totals.storage_above_surface_m3', 'm3')} (${figU(t.storageAboveSurfaceM3, 'totals.storage_above_surface_m3', 'acre_ft')}) above them, up to the crests.`
      : null;

  let map: ReportView['map'] = null;
  let mapMissing: string | null = null;
  if (input.map) {
    const m = buildMapFigure(input.map, summary.dams, input.layers);
    const caption = [
      'Overview of the run: ponds filled behind each dam crest on a shaded relief of the DEM.',
      m.crsText,
      m.scaleText,
    ].join(' ');
    // Keep tall maps within a page: the figure's width is capped by its aspect and 82 % of the viewport (or page) height.
    map = { ...m, caption, maxWidthCss: `calc(${m.aspect.toFixed(4)} * 82vh)` };
  } else {
    mapMissing = 'This run folder has no report-map.json (written by pondage estimate), so the overview map is left out. Run the estimate again to get it.';
  }

  const u = summary.uncertainty;
  const bandNote = t.bands
    ? `Bands run from the 5th to the 95th percentile${u ? ` of ${formatNumber(u.draws, 0)} Monte Carlo draws${u.seed !== null ? ` (seed ${u.seed})` : ''}` : ' of the run’s Monte Carlo draws'}; see Methods for their sources.${skewNote(summary)}`
    : null;
  const uncertainty = u
    ? {
        draws: formatNumber(u.draws, 0),
        seed: u.seed !== null ? String(u.seed) : null,
        method: u.method,
        sources: u.sources.map((s) => ({ name: s.name, enabled: s.enabled ? 'on' : 'off', distribution: s.distribution, basis: s.basis })),
        approximations: u.approximations,
        standardErrors: u.p95StandardError.length > 0 ? u.p95StandardError.map(([k, v]) => `${k} ${formatNumber(v)}`).join(', ') : null,
        tooFewDraws: u.tooFewDraws,
      }
    : null;
  const sc = summary.scenarios;
  const scenarios =
    sc && (sc.withProposed.proposedCounted > 0 || sc.proposedLeftOut.length > 0)
      ? {
          rows: [
            { label: 'Existing dams', key: 'existing', f: sc.existing, dams: sc.existing.damsCounted },
            { label: 'With the proposed structures', key: 'with_proposed', f: sc.withProposed, dams: sc.withProposed.damsCounted },
          ]
            .map((r) => ({
              label: r.label,
              dams: fig(r.dams, `scenarios.${r.key}.dams_counted`, 'count'),
              inundated: `${fig(r.f.inundatedAreaM2, `scenarios.${r.key}.inundated_area_m2`, 'ha')} <span class="us">${fig(r.f.inundatedAreaM2, `scenarios.${r.key}.inundated_area_m2`, 'acres')}</span>`,
              storage: `${fig(r.f.storageM3, `scenarios.${r.key}.storage_m3`, 'm3')} <span class="us">${fig(r.f.storageM3, `scenarios.${r.key}.storage_m3`, 'acre_ft')}</span>`,
              band: bandText(r.f.bands?.['storage_m3'], `scenarios.${r.key}.bands.storage_m3`, 'm3'),
            }))
            .concat([
              {
                label: 'Added by the proposed structures',
                dams: fig(sc.withProposed.proposedCounted, 'scenarios.with_proposed.proposed_counted', 'count'),
                inundated: `${fig(sc.added.inundatedAreaM2, 'scenarios.added.inundated_area_m2', 'ha')} <span class="us">${fig(sc.added.inundatedAreaM2, 'scenarios.added.inundated_area_m2', 'acres')}</span>`,
                storage: `${fig(sc.added.storageM3, 'scenarios.added.storage_m3', 'm3')} <span class="us">${fig(sc.added.storageM3, 'scenarios.added.storage_m3', 'acre_ft')}</span>`,
                band: bandText(sc.added.bands?.['storage_m3'], 'scenarios.added.bands.storage_m3', 'm3'),
              },
            ]),
          hasBands: Boolean(sc.withProposed.bands?.['storage_m3']),
          drowned: sc.drownedByProposed.map(
            (d) =>
              `${escape(d.id)} would stand under the pond of proposed ${escape(d.drownedBy)}: the water it holds goes from ${figU(d.volumeExistingM3, `scenarios.drowned_by_proposed[${d.index}].volume_existing_m3`, 'm3')} to ${figU(d.volumeWithProposedM3, `scenarios.drowned_by_proposed[${d.index}].volume_with_proposed_m3`, 'm3')}.`,
          ),
          leftOut: sc.proposedLeftOut,
        }
      : null;

  const watersheds = summary.watersheds && summary.watersheds.length > 0 ? watershedView(summary) : null;
  const damsView = damRows(summary);
  const av = areaVolumeChart(summary.dams);
  const limitsUsed = new Set(summary.dams.filter((d) => d.estimated && d.standaloneAreaM2 > 0 && d.standaloneVolumeM3 > 0).map((d) => d.limitedBy ?? 'crest'));
  const heightSvg = heightsChart(summary.dams, {
    typicalMaxM: numParam(summary, 'typical_max_height_m'),
    maxM: numParam(summary, 'max_height_m'),
  });
  const sourcesUsed = new Set(summary.dams.filter((d) => d.heightM !== null).map((d) => d.heightSource ?? ''));

  const skipped = summary.dams
    .filter((d) => !d.estimated)
    .map((d) => ({ id: d.id, status: d.status, reason: d.skipReason ?? 'no reason recorded' }));
  const groupsMap = new Map<string, { dam: string; message: string }[]>();
  for (const w of summary.warnings) {
    const list = groupsMap.get(w.code) ?? [];
    list.push({ dam: w.damId ?? '', message: w.message });
    groupsMap.set(w.code, list);
  }
  const groups = [...groupsMap.entries()].sort((a, b) => b[1].length - a[1].length || a[0].localeCompare(b[0])).map(([code, items]) => ({ code, count: items.length, items }));

  const firstInput = summary.inputs.find((i) => i.role === 'dem');
  const pageTitle = `pondage report: ${formatNumber(t.damCount, 0)} dams${firstInput ? `, ${baseName(firstInput.path)}` : ''}`;
  return {
    pageTitle: pageTitle.length > 70 ? `${pageTitle.slice(0, 69)}…` : pageTitle,
    title: 'Water stored behind beaver dams',
    subtitle: `${formatNumber(t.damCount, 0)} dams${firstInput ? ` on ${baseName(firstInput.path)}` : ''} · ${summary.dem.crsName}`,
    toolVersion: `${summary.tool.name} ${summary.tool.version}`,
    finishedAt: summary.run.finishedAt,
    cards,
    storageSplit,
    bandNote,
    scenarios,
    uncertainty,
    map,
    mapMissing,
    watersheds,
    dams: damsView,
    charts: {
      stage: stageStorageChart(summary.dams),
      areaVolume: av
        ? {
            svg: av.svg,
            legend: [...Object.entries(LIMIT_STYLE)]
              .filter(([k]) => limitsUsed.has(k))
              .map(([, s]) => ({ swatch: legendSwatch(s.shape, s.shape === 'cross' ? 'none' : s.colour, s.shape === 'cross' ? s.colour : '#fff'), label: s.label }))
              .concat(summary.dams.some((d) => d.estimated && !d.inTotals && d.standaloneVolumeM3 > 0) ? [{ swatch: legendSwatch('circle', '#fff', '#555'), label: 'hollow: not in the totals' }] : []),
            note: av.omitted > 0 ? `${av.omitted} estimated ${av.omitted === 1 ? 'dam holds' : 'dams hold'} no water and ${av.omitted === 1 ? 'is' : 'are'} not plotted.` : null,
          }
        : null,
      heights: heightSvg
        ? {
            svg: heightSvg,
            legend: Object.entries(HEIGHT_SOURCE_STYLE)
              .filter(([k]) => sourcesUsed.has(k))
              .map(([, s]) => ({ swatch: legendSwatch(s.shape, s.colour, '#fff'), label: s.label })),
          }
        : null,
    },
    warnings: { skipped, groups, total: summary.warnings.length },
    methods: {
      ...methodsOf(summary, input.map?.hillshade ?? null),
      assumptions: summary.assumptions,
      models: summary.models,
    },
    inputs: summary.inputs,
    cautions: summary.cautions,
    run: {
      durationS: summary.run.durationS !== null ? formatNumber(summary.run.durationS) : null,
      startedAt: summary.run.startedAt,
    },
  };
}

function numParam(summary: RunSummary, name: string): number | null {
  const v = summary.parameters.find(([k]) => k === name)?.[1];
  return typeof v === 'number' ? v : null;
}

function baseName(path: string): string {
  const parts = path.split(/[\\/]/);
  return parts[parts.length - 1] ?? path;
}

function damRows(summary: RunSummary): ReportView['dams'] {
  const hasBands = summary.dams.some((d) => d.bands?.['volume_m3']);
  const hasSplit = summary.dams.some((d) => d.volumeBelowSurfaceM3 !== null);
  const hasWatershed = summary.dams.some((d) => d.watershed !== null);
  const hasInfluence = summary.dams.some((d) => d.influenceAreaM2 !== null);
  let anyStandalone = false;
  const rows = summary.dams.map((d) => {
    const f = `dams[${d.index}]`;
    const status = STATUS_STYLE[d.status];
    const own = d.estimated && !d.inTotals;
    if (own) anyStandalone = true;
    const area = own ? fig(d.standaloneAreaM2, `${f}.standalone_area_m2`, 'm2') : fig(d.areaM2, `${f}.area_m2`, 'm2');
    const areaUs = own ? fig(d.standaloneAreaM2, `${f}.standalone_area_m2`, 'acres') : fig(d.areaM2, `${f}.area_m2`, 'acres');
    const vol = own ? fig(d.standaloneVolumeM3, `${f}.standalone_volume_m3`, 'm3') : fig(d.volumeM3, `${f}.volume_m3`, 'm3');
    const volUs = own ? fig(d.standaloneVolumeM3, `${f}.standalone_volume_m3`, 'acre_ft') : fig(d.volumeM3, `${f}.volume_m3`, 'acre_ft');
    // Short notes; the full text of skip reasons and warnings is in the Warnings section.
    const notes: string[] = [];
    if (!d.estimated) notes.push('skipped: see <a href="#warnings">Warnings</a>');
    if (own) notes.push('own pond, not in the totals');
    if (d.drownedBy) notes.push(`under the pond of ${escape(d.drownedBy)}`);
    const otherWarnings = d.warnings.filter((w) => !w.startsWith('crest under the pond of')).length;
    if (otherWarnings > 0) notes.push(`${otherWarnings} warning${otherWarnings > 1 ? 's' : ''}`);
    const volBand = own ? d.bands?.['standalone_volume_m3'] : d.bands?.['volume_m3'];
    const bandField = own ? `${f}.bands.standalone_volume_m3` : `${f}.bands.volume_m3`;
    return {
      id: escape(d.id),
      anchor: `dam-${slug(d.id)}`,
      status: escape(d.status),
      statusSwatch: status ? legendSwatch(status.shape, status.colour, '#fff') : '',
      estimated: d.estimated,
      standalone: own,
      height: d.heightM !== null ? fig(d.heightM, `${f}.height_m`, 'm', 2) : '–',
      heightFt: d.heightM !== null ? fig(d.heightM, `${f}.height_m`, 'ft', 1) : '',
      heightSource: d.heightSource ? escape(HEIGHT_SOURCE_STYLE[d.heightSource]?.label ?? d.heightSource) : '',
      limitedBy: d.estimated ? escape(d.limitedBy ?? '') : 'skipped',
      area: d.estimated ? area : '–',
      areaUs: d.estimated ? areaUs : '',
      volume: d.estimated ? vol : '–',
      volumeUs: d.estimated ? volUs : '',
      band: volBand ? `${fig(volBand.p05, `${bandField}.p05`, 'm3')} – ${fig(volBand.p95, `${bandField}.p95`, 'm3')}` : '–',
      below: d.volumeBelowSurfaceM3 !== null ? fig(d.volumeBelowSurfaceM3, `${f}.volume_below_surface_m3`, 'm3') : null,
      influence: d.influenceAreaM2 !== null ? fig(d.influenceAreaM2, `${f}.influence_area_m2`, 'ha') + bandLine(d.bands?.['influence_area_m2'], `${f}.bands.influence_area_m2`, 'ha') : null,
      watershed: d.watershed !== null ? escape(d.watershed) : null,
      notes: notes.join('; '),
    };
  });
  return { rows, hasBands, hasSplit, hasWatershed, hasInfluence, anyStandalone };
}

function watershedView(summary: RunSummary): NonNullable<ReportView['watersheds']> {
  const ws = summary.watersheds ?? [];
  const hasBands = ws.some((w) => w.bands?.['storage_m3']);
  const hasInfluence = ws.some((w) => w.influenceAreaM2 !== null);
  const hasValley = ws.some((w) => w.valleyBottomAreaM2 !== null);
  const hasStreams = ws.some((w) => w.streamLengthM !== null);
  const rows = ws.map((w) => {
    const f = `watersheds[${w.index}]`;
    const band = w.bands?.['storage_m3'];
    const pct = w.influenceAreaM2 !== null && w.valleyBottomAreaM2 !== null && w.valleyBottomAreaM2 > 0 ? formatNumber((100 * w.influenceAreaM2) / w.valleyBottomAreaM2) : null;
    return {
      id: escape(w.id),
      dams: w.damCount !== null ? fig(w.damCount, `${f}.dam_count`, 'count') : '–',
      stream: w.streamLengthM !== null ? `${fig(w.streamLengthM, `${f}.stream_length_m`, 'km')} <span class="us">${fig(w.streamLengthM, `${f}.stream_length_m`, 'mi')}</span>` : '–',
      perKm: w.damCount !== null && w.streamLengthM !== null && w.streamLengthM > 0 ? formatNumber(w.damCount / (w.streamLengthM / 1000)) : null,
      inundated:
        w.inundatedAreaM2 !== null
          ? `${fig(w.inundatedAreaM2, `${f}.inundated_area_m2`, 'ha')} <span class="us">${fig(w.inundatedAreaM2, `${f}.inundated_area_m2`, 'acres')}</span>` +
            bandLine(w.bands?.['inundated_area_m2'], `${f}.bands.inundated_area_m2`, 'ha')
          : '–',
      influence:
        w.influenceAreaM2 !== null
          ? `${fig(w.influenceAreaM2, `${f}.influence_area_m2`, 'ha')} <span class="us">${fig(w.influenceAreaM2, `${f}.influence_area_m2`, 'acres')}</span>` +
            bandLine(w.bands?.['influence_area_m2'], `${f}.bands.influence_area_m2`, 'ha')
          : '–',
      valley: w.valleyBottomAreaM2 !== null ? `${fig(w.valleyBottomAreaM2, `${f}.valley_bottom_area_m2`, 'ha')} <span class="us">${fig(w.valleyBottomAreaM2, `${f}.valley_bottom_area_m2`, 'acres')}</span>` : '–',
      pct,
      storage: `${fig(w.storageM3, `${f}.storage_m3`, 'm3')} <span class="us">${fig(w.storageM3, `${f}.storage_m3`, 'acre_ft')}</span>`,
      band: band ? `${fig(band.p05, `${f}.bands.storage_m3.p05`, 'm3')} – ${fig(band.p95, `${f}.bands.storage_m3.p95`, 'm3')}` : null,
    };
  });
  const t = summary.totals;
  const total = {
    storage: `${fig(t.storageM3, 'totals.storage_m3', 'm3')} <span class="us">${fig(t.storageM3, 'totals.storage_m3', 'acre_ft')}</span>`,
    inundated:
      `${fig(t.inundatedAreaM2, 'totals.inundated_area_m2', 'ha')} <span class="us">${fig(t.inundatedAreaM2, 'totals.inundated_area_m2', 'acres')}</span>` +
      bandLine(t.bands?.['inundated_area_m2'], 'totals.bands.inundated_area_m2', 'ha'),
    influence:
      t.influenceAreaM2 !== null
        ? `${fig(t.influenceAreaM2, 'totals.influence_area_m2', 'ha')} <span class="us">${fig(t.influenceAreaM2, 'totals.influence_area_m2', 'acres')}</span>` +
          bandLine(t.bands?.['influence_area_m2'], 'totals.bands.influence_area_m2', 'ha')
        : '–',
    band: t.bands?.['storage_m3'] ? `${fig(t.bands['storage_m3'].p05, 'totals.bands.storage_m3.p05', 'm3')} – ${fig(t.bands['storage_m3'].p95, 'totals.bands.storage_m3.p95', 'm3')}` : null,
  };
  return { chart: storageByWatershedChart(ws), rows, hasBands, hasInfluence, hasValley, hasStreams, total };
}

function slug(s: string): string {
  return s.replace(/[^A-Za-z0-9_-]+/g, '_');
}

/**
 * Why the estimate can sit low in its band: the estimate takes each unmeasured
 * dam at the typical (median) height, and a pond's volume grows about with the
 * cube of its height, so the draws' storage is skewed upwards. Said only when
 * the estimate lies below the band's median.
 */
function skewNote(summary: RunSummary): string {
  const t = summary.totals;
  let note = '';
  const p50 = t.bands?.['storage_m3']?.p50;
  if (p50 !== undefined && t.storageM3 < p50) {
    note += ' The storage estimate lies below the band’s median: it takes unmeasured dams at the typical height, and a pond’s volume grows about with the cube of its height, so taller draws add more than shorter ones take away.';
  }
  const areaP50 = t.bands?.['inundated_area_m2']?.p50;
  const escaping = summary.dams.filter((d) => d.estimated && d.inTotals && (d.limitedBy === 'spill' || d.limitedBy === 'edge' || d.limitedBy === 'nodata')).length;
  const above = [p50 !== undefined && t.storageM3 > p50 ? 'storage' : null, areaP50 !== undefined && t.inundatedAreaM2 > areaP50 ? 'inundated-area' : null].filter((x) => x !== null);
  if (escaping > 0 && above.length > 0) {
    note += ` The ${above.join(' and ')} estimate${above.length > 1 ? 's lie' : ' lies'} above the band’s median: ${formatNumber(escaping, 0)} of the ponds counted are held not by their crest but by the lowest way out round it (limited by spill, edge or NoData), and where several ways out stand nearly as low in the DEM, the lowest of them on the true ground is likely lower than the DEM shows, so the draws hold less water there.`;
  }
  return note;
}
