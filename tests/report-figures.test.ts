/**
 * The report says what the run says: every figure written as a <data>
 * element carries the exact value of summary.json at its data-field, and its
 * shown text is that value in the shown unit, to the shown precision.
 * Optional sections appear exactly when summary.json has their fields.
 */
import { cp, readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { parse, type DefaultTreeAdapterMap } from 'parse5';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeReport } from '../src/report/write.js';
import { enrichSummary, makeValleyRun, type ValleyRun } from './report-valley.js';

type Node = DefaultTreeAdapterMap['node'];
type Element = DefaultTreeAdapterMap['element'];

// Unit definitions from NIST SP 811 (2008), Appendix B, written out here so
// the check does not lean on the project's own constants.
const NIST = {
  m3: 1,
  acre_ft: 1 / 1233.48183754752,
  m2: 1,
  ha: 1 / 10000,
  acres: 1 / 4046.8564224,
  m: 1,
  ft: 1 / 0.3048,
  km: 1 / 1000,
  mi: 1 / 1609.344,
  count: 1,
  ratio: 1,
} as const;

interface DataFigure {
  value: string;
  field: string;
  unit: string;
  text: string;
}

function walk(node: Node, visit: (el: Element) => void): void {
  if ('tagName' in node) visit(node);
  const children = 'childNodes' in node ? node.childNodes : [];
  for (const child of children) walk(child, visit);
  if ('content' in node && node.content) walk(node.content as Node, visit);
}

function textOf(node: Node): string {
  if (node.nodeName === '#text' && 'value' in node) return node.value;
  return ('childNodes' in node ? node.childNodes : []).map(textOf).join('');
}

function attr(el: Element, name: string): string | undefined {
  return el.attrs.find((a) => a.name === name)?.value;
}

function figuresOf(html: string): { figures: DataFigure[]; ids: Set<string>; images: number } {
  const doc = parse(html);
  const figures: DataFigure[] = [];
  const ids = new Set<string>();
  let images = 0;
  walk(doc as unknown as Node, (el) => {
    const id = attr(el, 'id');
    if (id) ids.add(id);
    if (el.tagName === 'img') images++;
    if (el.tagName === 'data') {
      figures.push({ value: attr(el, 'value') ?? '', field: attr(el, 'data-field') ?? '', unit: attr(el, 'data-unit') ?? '', text: textOf(el) });
    }
  });
  return { figures, ids, images };
}

/** The value at a path such as `dams[3].bands.volume_m3.p05` in parsed JSON. */
function at(json: unknown, path: string): unknown {
  let cur: unknown = json;
  for (const part of path.split('.')) {
    const m = /^([^[\]]+)(?:\[(\d+)\])?$/.exec(part);
    if (!m || typeof cur !== 'object' || cur === null) return undefined;
    cur = (cur as Record<string, unknown>)[m[1]!];
    if (m[2] !== undefined) cur = Array.isArray(cur) ? cur[Number(m[2])] : undefined;
  }
  return cur;
}

function checkFigures(figures: DataFigure[], summary: unknown): void {
  expect(figures.length).toBeGreaterThan(0);
  for (const f of figures) {
    const expected = at(summary, f.field);
    expect(typeof expected, `${f.field} should be a number in summary.json`).toBe('number');
    // Exactly the summary's number, at full precision.
    expect(Number(f.value), f.field).toBe(expected);
    const factor = NIST[f.unit as keyof typeof NIST];
    expect(factor, `unit ${f.unit}`).toBeDefined();
    const shown = Number(f.text.replace(/,/g, ''));
    expect(Number.isFinite(shown), `${f.field} shows "${f.text}"`).toBe(true);
    const decimals = f.text.includes('.') ? f.text.length - f.text.indexOf('.') - 1 : 0;
    const converted = (expected as number) * factor;
    // Shown value rounds the converted one to the shown decimals (half a unit in the last place, plus float slack).
    expect(Math.abs(shown - converted), `${f.field} in ${f.unit}: shown ${f.text}, value ${converted}`).toBeLessThanOrEqual(0.5 * 10 ** -decimals * (1 + 1e-9) + 1e-12);
  }
}

let run: ValleyRun;
let html: string;
let summary: Record<string, unknown>;

beforeAll(async () => {
  run = await makeValleyRun();
  html = await readFile(join(run.outDir, 'report.html'), 'utf8');
  summary = JSON.parse(run.summaryText) as Record<string, unknown>;
});

afterAll(async () => {
  await rm(run.dir, { recursive: true, force: true });
});

describe('report figures against summary.json', () => {
  it('every <data> figure equals summary.json at its field, shown in its unit', () => {
    checkFigures(figuresOf(html).figures, summary);
  });

  it('shows the headline figures in SI and US customary units, and every dam\'s storage', () => {
    const { figures } = figuresOf(html);
    const has = (field: string, unit: string): boolean => figures.some((f) => f.field === field && f.unit === unit);
    expect(has('totals.storage_m3', 'm3')).toBe(true);
    expect(has('totals.storage_m3', 'acre_ft')).toBe(true);
    expect(has('totals.inundated_area_m2', 'ha')).toBe(true);
    expect(has('totals.inundated_area_m2', 'acres')).toBe(true);
    for (const k of ['dam_count', 'dams_estimated', 'dams_skipped', 'dams_in_totals']) expect(has(`totals.${k}`, 'count')).toBe(true);
    const dams = summary['dams'] as { estimated: boolean; in_totals: boolean }[];
    dams.forEach((d, i) => {
      if (!d.estimated) return;
      const field = d.in_totals ? `dams[${i}].volume_m3` : `dams[${i}].standalone_volume_m3`;
      expect(has(field, 'm3'), field).toBe(true);
      expect(has(field, 'acre_ft'), field).toBe(true);
    });
  });

  it('lists the skipped dams with the reason summary.json gives', () => {
    const dams = summary['dams'] as { id: string; estimated: boolean; skip_reason: string | null }[];
    const skipped = dams.filter((d) => !d.estimated);
    expect(skipped.map((d) => d.id).sort()).toEqual(['LV-07', 'LV-08']);
    const escaped = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#x27;');
    for (const d of skipped) expect(html).toContain(escaped(d.skip_reason!));
  });

  it('leaves out the sections the run has no data for, and draws the map', () => {
    const { ids, images, figures } = figuresOf(html);
    expect(ids.has('watersheds')).toBe(false);
    expect(figures.some((f) => f.field.includes('bands'))).toBe(false);
    expect(figures.some((f) => f.field === 'totals.influence_area_m2')).toBe(false);
    expect(ids.has('map-title')).toBe(true);
    expect(images).toBe(1);
  });

  it('renders the same bytes again from the run folder', async () => {
    const again = join(run.dir, 'again.html');
    await writeReport(run.outDir, again);
    expect(await readFile(again, 'utf8')).toBe(html);
  });

  it('shows bands, watersheds, the influence zone and the water-surface split when summary.json has them', async () => {
    const folder = join(run.dir, 'enriched');
    await cp(run.outDir, folder, { recursive: true });
    const rich = enrichSummary(summary);
    await writeFile(join(folder, 'summary.json'), JSON.stringify(rich));
    const { input } = await writeReport(folder);
    expect(input.summary.watersheds).toHaveLength(2);
    const richHtml = await readFile(join(folder, 'report.html'), 'utf8');
    const { figures, ids } = figuresOf(richHtml);
    checkFigures(figures, rich);
    expect(ids.has('watersheds')).toBe(true);
    const fields = new Set(figures.map((f) => f.field));
    for (const f of [
      'totals.bands.storage_m3.p05',
      'totals.bands.storage_m3.p95',
      'totals.influence_area_m2',
      'totals.bands.influence_area_m2.p95',
      'totals.storage_below_surface_m3',
      'totals.storage_above_surface_m3',
      'watersheds[0].storage_m3',
      'watersheds[1].bands.storage_m3.p05',
      'watersheds[1].valley_bottom_area_m2',
      'dams[0].bands.volume_m3.p95',
      'dams[0].volume_below_surface_m3',
      // Bands of the areas too, under each figure in the tables.
      'dams[0].bands.influence_area_m2.p05',
      'watersheds[0].bands.influence_area_m2.p95',
      'watersheds[1].bands.inundated_area_m2.p05',
      'totals.bands.inundated_area_m2.p95',
    ]) {
      expect(fields.has(f), f).toBe(true);
    }
    // The enriched bands put the estimates above their medians (p50 = 0.97 × estimate): said when ponds held by a way out count.
    const dams = rich['dams'] as { estimated: boolean; in_totals: boolean; limited_by: string | null }[];
    const escaping = dams.filter((d) => d.estimated && d.in_totals && ['spill', 'edge', 'nodata'].includes(d.limited_by ?? '')).length;
    expect(escaping).toBeGreaterThan(0);
    expect(richHtml).toContain(`The storage and inundated-area estimates lie above the band’s median: ${escaping} of the ponds counted are held not by their crest`);
  });

  it('shows the bands of a run with Monte Carlo draws, each equal to summary.json', async () => {
    const drawn = await makeValleyRun({ draws: 200 });
    try {
      const text = await readFile(join(drawn.outDir, 'report.html'), 'utf8');
      const json = JSON.parse(drawn.summaryText) as Record<string, unknown>;
      const { figures } = figuresOf(text);
      checkFigures(figures, json);
      const fields = new Set(figures.map((f) => f.field));
      for (const f of ['totals.bands.storage_m3.p05', 'totals.bands.storage_m3.p95', 'totals.bands.storage_m3.p50', 'totals.bands.inundated_area_m2.p05']) {
        expect(fields.has(f), f).toBe(true);
      }
      expect(text).toContain('200 Monte Carlo draws');
    } finally {
      await rm(drawn.dir, { recursive: true, force: true });
    }
  });

  it('leaves the map out with a notice when the run folder has no report-map.json', async () => {
    const folder = join(run.dir, 'nomap');
    await cp(run.outDir, folder, { recursive: true });
    await rm(join(folder, 'report-map.json'));
    const { input } = await writeReport(folder);
    expect(input.map).toBeNull();
    const text = await readFile(join(folder, 'report.html'), 'utf8');
    const { images, ids } = figuresOf(text);
    expect(images).toBe(0);
    expect(ids.has('map-title')).toBe(false);
    expect(text).toContain('has no report-map.json');
  });
});
