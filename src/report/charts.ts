/**
 * The report's charts as inline SVG: storage by watershed with bands,
 * stage–storage curves of the largest ponds, pond area against volume, and
 * dam heights by where they came from. Each returns null when the run has
 * nothing to draw, so its section is left out.
 */
import { ACRE_FOOT_M3, ACRE_M2, FOOT_M } from '../units.js';
import { at, axis, chartSvg, type Scale } from './chart-frame.js';
import { plainWithUnit } from './format.js';
import { HEIGHT_SOURCE_STYLE, LIMIT_STYLE, OKABE_ITO, SERIES, SERIES_DASH } from './palette.js';
import type { RunDam, RunWatershed } from './run-data.js';
import { c, marker, text } from './svg.js';

const WIDTH = 720;
const M3_TO_AF = 1 / ACRE_FOOT_M3;
const M2_TO_ACRES = 1 / ACRE_M2;
const M_TO_FT = 1 / FOOT_M;

/** Storage per watershed as horizontal bars, with the p05–p95 band as a whisker where the run has bands. */
export function storageByWatershedChart(watersheds: readonly RunWatershed[], maxRows = 30): string | null {
  if (watersheds.length === 0) return null;
  const rows = [...watersheds].sort((a, b) => b.storageM3 - a.storageM3 || a.id.localeCompare(b.id)).slice(0, maxRows);
  const rowH = 24;
  const left = 130;
  const right = 150;
  const top = 46;
  const bottom = 50;
  const height = top + bottom + rows.length * rowH;
  let max = 0;
  for (const w of rows) max = Math.max(max, w.storageM3, w.bands?.['storage_m3']?.p95 ?? 0);
  if (!(max > 0)) max = 1;
  const x: Scale = { lo: 0, hi: max * 1.04, from: left, to: WIDTH - right, log: false };
  const plotBottom = top + rows.length * rowH;
  let body = axis({ side: 'bottom', scale: x, offset: plotBottom, title: 'storage, m³', gridTo: top });
  body += axis({ side: 'top', scale: x, offset: top, title: 'storage, acre-feet', factor: M3_TO_AF });
  rows.forEach((w, k) => {
    const y = top + k * rowH + rowH / 2;
    const band = w.bands?.['storage_m3'] ?? null;
    body += text(left - 8, y + 4, truncate(w.id, 18), { 'text-anchor': 'end', class: 'row-label' });
    body += `<rect class="bar" x="${c(x.from)}" y="${c(y - 7)}" width="${c(Math.max(0.5, at(x, w.storageM3) - x.from))}" height="14" fill="${OKABE_ITO.blue}"/>`;
    let labelX = at(x, w.storageM3);
    if (band) {
      const a = at(x, band.p05);
      const b = at(x, band.p95);
      body += `<path class="whisker" d="M${c(a)} ${c(y)}H${c(b)}M${c(a)} ${c(y - 6)}V${c(y + 6)}M${c(b)} ${c(y - 6)}V${c(y + 6)}"/>`;
      body += marker('diamond', at(x, band.p50), y, 3.2, { fill: '#fff', stroke: OKABE_ITO.black, 'stroke-width': 1 });
      labelX = Math.max(labelX, b);
    }
    body += text(labelX + 6, y + 4, `${plainWithUnit(w.storageM3, 'm3')} · ${plainWithUnit(w.storageM3, 'acre_ft')}`, { class: 'value-label' });
  });
  const anyBand = rows.some((w) => w.bands?.['storage_m3']);
  return chartSvg({
    width: WIDTH,
    height,
    title: 'Storage by watershed',
    desc: `Horizontal bars of water storage for ${rows.length} watersheds${anyBand ? ', with whiskers from the 5th to the 95th percentile and a diamond at the median' : ''}.`,
    body,
  });
}

/** Stage–storage curves (volume against water level above the bed) of the `count` largest ponds. */
export function stageStorageChart(dams: readonly RunDam[], count = 6): string | null {
  const ponds = dams
    .filter((d) => d.estimated && d.bedElevM !== null && d.stageStorage.length >= 2 && d.standaloneVolumeM3 > 0)
    .sort((a, b) => b.standaloneVolumeM3 - a.standaloneVolumeM3 || a.id.localeCompare(b.id))
    .slice(0, count);
  if (ponds.length === 0) return null;
  const left = 76;
  const right = 150;
  const top = 50;
  const bottom = 56;
  const height = 400;
  let maxStage = 0;
  let maxVol = 0;
  for (const d of ponds) {
    for (const [level, , vol] of d.stageStorage) {
      maxStage = Math.max(maxStage, level - d.bedElevM!);
      maxVol = Math.max(maxVol, vol);
    }
  }
  const x: Scale = { lo: 0, hi: maxStage * 1.03 || 1, from: left, to: WIDTH - right, log: false };
  const y: Scale = { lo: 0, hi: maxVol * 1.05 || 1, from: height - bottom, to: top, log: false };
  let body = axis({ side: 'bottom', scale: x, offset: y.from, title: 'water level above the bed, m', gridTo: y.to });
  body += axis({ side: 'top', scale: x, offset: y.to, title: 'water level above the bed, ft', factor: M_TO_FT });
  body += axis({ side: 'left', scale: y, offset: x.from, title: 'storage, m³', gridTo: x.to });
  body += axis({ side: 'right', scale: y, offset: x.to, title: 'storage, acre-feet', factor: M3_TO_AF });
  const ends: { y: number; label: string; colour: string }[] = [];
  ponds.forEach((d, k) => {
    const colour = SERIES[k % SERIES.length]!;
    const dash = SERIES_DASH[k % SERIES_DASH.length]!;
    let path = '';
    d.stageStorage.forEach(([level, , vol], i) => {
      path += `${i === 0 ? 'M' : 'L'}${c(at(x, level - d.bedElevM!))} ${c(at(y, vol))}`;
    });
    body += `<path class="series" d="${path}" stroke="${colour}"${dash ? ` stroke-dasharray="${dash}"` : ''}/>`;
    const last = d.stageStorage[d.stageStorage.length - 1]!;
    const ex = at(x, last[0] - d.bedElevM!);
    const ey = at(y, last[2]);
    body += marker('circle', ex, ey, 3.5, { fill: colour, stroke: '#fff', 'stroke-width': 1 });
    ends.push({ y: ey, label: d.id, colour });
  });
  // End labels in the right margin, spread so they never overlap.
  ends.sort((a, b) => a.y - b.y);
  for (let k = 1; k < ends.length; k++) if (ends[k]!.y < ends[k - 1]!.y + 13) ends[k]!.y = ends[k - 1]!.y + 13;
  body += `<g class="legend-inline">`;
  ponds.forEach((d, k) => {
    const colour = SERIES[k % SERIES.length]!;
    const dash = SERIES_DASH[k % SERIES_DASH.length]!;
    const ly = top + 8 + k * 16;
    const lx = left + 12;
    body += `<path class="series" d="M${c(lx)} ${c(ly)}h22" stroke="${colour}"${dash ? ` stroke-dasharray="${dash}"` : ''}/>`;
    body += text(lx + 28, ly + 4, `${d.id}: ${plainWithUnit(d.standaloneVolumeM3, 'm3')}`, { class: 'legend-text' });
  });
  body += '</g>';
  return chartSvg({
    width: WIDTH,
    height,
    title: `Stage–storage curves of the ${ponds.length} largest ponds`,
    desc: `Storage volume against water level above the bed for dams ${ponds.map((d) => d.id).join(', ')}; each curve ends at the pond's water level.`,
    body,
  });
}

/**
 * Each estimated pond's own area against its own volume (log–log), marked by
 * what set its water level, over lines of equal mean depth (volume = area × depth).
 */
export function areaVolumeChart(dams: readonly RunDam[]): { svg: string; plotted: number; omitted: number } | null {
  const ponds = dams.filter((d) => d.estimated);
  const pts = ponds.filter((d) => d.standaloneAreaM2 > 0 && d.standaloneVolumeM3 > 0);
  if (pts.length === 0) return null;
  const left = 76;
  const right = 76;
  const top = 50;
  const bottom = 56;
  const height = 420;
  let aLo = Infinity;
  let aHi = 0;
  let vLo = Infinity;
  let vHi = 0;
  for (const d of pts) {
    aLo = Math.min(aLo, d.standaloneAreaM2);
    aHi = Math.max(aHi, d.standaloneAreaM2);
    vLo = Math.min(vLo, d.standaloneVolumeM3);
    vHi = Math.max(vHi, d.standaloneVolumeM3);
  }
  const decadeDown = (v: number): number => 10 ** Math.floor(Math.log10(v));
  const decadeUp = (v: number): number => 10 ** Math.ceil(Math.log10(v) + 1e-12);
  const x: Scale = { lo: decadeDown(aLo), hi: decadeUp(aHi), from: left, to: WIDTH - right, log: true };
  const y: Scale = { lo: decadeDown(vLo), hi: decadeUp(vHi), from: height - bottom, to: top, log: true };
  let body = axis({ side: 'bottom', scale: x, offset: y.from, title: 'pond area, m²', gridTo: y.to });
  body += axis({ side: 'top', scale: x, offset: y.to, title: 'pond area, acres', factor: M2_TO_ACRES });
  body += axis({ side: 'left', scale: y, offset: x.from, title: 'storage, m³', gridTo: x.to });
  body += axis({ side: 'right', scale: y, offset: x.to, title: 'storage, acre-feet', factor: M3_TO_AF });
  // Lines of equal mean depth d: V = A·d.
  body += `<defs><clipPath id="av-clip"><rect x="${x.from}" y="${y.to}" width="${x.to - x.from}" height="${y.from - y.to}"/></clipPath></defs>`;
  body += '<g clip-path="url(#av-clip)">';
  for (const depth of [0.1, 0.3, 1]) {
    const a0 = x.lo;
    const a1 = x.hi;
    const x0 = at(x, a0);
    const y0 = at(y, a0 * depth);
    const x1 = at(x, a1);
    const y1 = at(y, a1 * depth);
    body += `<path class="ref-line" d="M${c(x0)} ${c(y0)}L${c(x1)} ${c(y1)}"/>`;
    // Label a little inside the box from where the line enters it, turned along the line.
    const aIn = Math.max(x.lo, y.lo / depth);
    const t0 = (at(x, aIn) - x0) / (x1 - x0);
    const t = Math.min(0.92, t0 + 0.04);
    const lx = x0 + t * (x1 - x0);
    const ly = y0 + t * (y1 - y0);
    if (lx > x.from && lx < x.to - 60 && ly > y.to + 10 && ly < y.from) {
      const angle = (Math.atan2(y1 - y0, x1 - x0) * 180) / Math.PI;
      body += `<text class="ref-label" transform="translate(${c(lx)} ${c(ly - 4)}) rotate(${angle.toFixed(1)})">mean depth ${depth} m</text>`;
    }
  }
  body += '</g>';
  for (const d of pts) {
    const style = LIMIT_STYLE[d.limitedBy ?? 'crest'] ?? LIMIT_STYLE['crest']!;
    const hollow = !d.inTotals;
    body += marker(style.shape, at(x, d.standaloneAreaM2), at(y, d.standaloneVolumeM3), 4, {
      fill: hollow ? '#fff' : style.colour,
      stroke: style.shape === 'cross' || hollow ? style.colour : '#fff',
      'stroke-width': hollow || style.shape === 'cross' ? 1.6 : 0.8,
      class: 'point',
    });
  }
  return {
    svg: chartSvg({
      width: WIDTH,
      height,
      title: 'Pond area against storage',
      desc: `Each of ${pts.length} estimated ponds as a point: its own area against its own volume, on logarithmic axes, marked by what set its water level.`,
      body,
    }),
    plotted: pts.length,
    omitted: ponds.length - pts.length,
  };
}

/**
 * Dam heights as dots in one row per source (measured, from the DEM, default,
 * breach invert), with the thresholds of the run marked: measured heights
 * beside the ones pondage had to assume.
 */
export function heightsChart(dams: readonly RunDam[], thresholds: { typicalMaxM: number | null; maxM: number | null }): string | null {
  const withHeight = dams.filter((d) => d.heightM !== null && d.heightSource !== null);
  if (withHeight.length === 0) return null;
  const order = ['measured', 'dem', 'default', 'breach'];
  const sources = order.filter((s) => withHeight.some((d) => d.heightSource === s));
  for (const d of withHeight) if (!sources.includes(d.heightSource!)) sources.push(d.heightSource!);
  const left = 150;
  const right = 40;
  const top = 50;
  const bottom = 56;
  const rowH = 60;
  const height = top + bottom + sources.length * rowH;
  let hi = 0;
  for (const d of withHeight) hi = Math.max(hi, d.heightM!);
  hi = Math.max(hi, thresholds.typicalMaxM ?? 0) * 1.08 || 1;
  const x: Scale = { lo: 0, hi, from: left, to: WIDTH - right, log: false };
  const plotBottom = top + sources.length * rowH;
  let body = axis({ side: 'bottom', scale: x, offset: plotBottom, title: 'dam height above the bed, m', gridTo: top });
  body += axis({ side: 'top', scale: x, offset: top, title: 'dam height above the bed, ft', factor: M_TO_FT });
  const marks: [number | null, string][] = [
    [thresholds.typicalMaxM, 'typical maximum'],
    [thresholds.maxM, 'skipped above'],
  ];
  for (const [v, label] of marks) {
    if (v === null || v > x.hi) continue;
    const px = at(x, v);
    const nearRight = px > x.to - 150;
    body += `<path class="threshold" d="M${c(px)} ${c(top)}V${c(plotBottom)}"/>`;
    body += text(px + (nearRight ? -4 : 4), top + 13, `${label} ${String(v)} m`, { class: 'ref-label', 'text-anchor': nearRight ? 'end' : 'start' });
  }
  sources.forEach((s, k) => {
    const style = HEIGHT_SOURCE_STYLE[s] ?? { colour: OKABE_ITO.black, shape: 'circle' as const, label: s };
    const yMid = top + k * rowH + rowH / 2;
    const list = withHeight.filter((d) => d.heightSource === s).sort((a, b) => a.heightM! - b.heightM! || a.index - b.index);
    body += text(left - 10, yMid + 4, `${style.label} (${list.length})`, { 'text-anchor': 'end', class: 'row-label' });
    // Dots in 7-unit bins stack into a centred column; a long column is squeezed to the row and labelled with its count.
    const bins = new Map<number, number[]>();
    for (const d of list) {
      const bin = Math.round(at(x, d.heightM!) / 7);
      const members = bins.get(bin) ?? [];
      members.push(at(x, d.heightM!));
      bins.set(bin, members);
    }
    for (const members of bins.values()) {
      const n = members.length;
      const spacing = Math.min(7.5, (rowH - 14) / Math.max(1, n - 1));
      members.forEach((px, j) => {
        const py = yMid + (j - (n - 1) / 2) * spacing;
        body += marker(style.shape, px, py, 3.6, { fill: style.colour, stroke: '#fff', 'stroke-width': 0.8, class: 'point' });
      });
      if (n >= 6) body += text(members[0]! + 8, yMid + 4, `×${n}`, { class: 'ref-label' });
    }
  });
  return chartSvg({
    width: WIDTH,
    height,
    title: 'Dam heights: measured and assumed',
    desc: `Dam heights above the bed, one dot per dam, in rows by where the height came from (${sources.join(', ')}).`,
    body,
  });
}

function truncate(s: string, n: number): string {
  return s.length > n ? `${s.slice(0, n - 1)}…` : s;
}
