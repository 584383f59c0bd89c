/**
 * The overview map: the hillshade PNG under an SVG of the influence zone,
 * watershed outlines, streams, ponds and dams by status, with coordinate
 * ticks in the DEM's CRS, a scale bar in metres and feet, and a north arrow.
 *
 * Drawn in the DEM's CRS, scaled to metres on both axes (for a geographic
 * DEM, degrees of longitude are shortened by the cosine of the map's centre
 * latitude), so the hillshade and every vector share one frame.
 */
import { WGS84, makeTransform, type Crs } from '../io/crs.js';
import { FOOT_M } from '../units.js';
import { escapeHtml, formatNumber } from './format.js';
import type { LayerFeature } from './geojson-layer.js';
import type { ReportMap } from './map-file.js';
import { MAP_STYLE, OKABE_ITO, STATUS_STYLE } from './palette.js';
import type { RunDam } from './run-data.js';
import { c, linesPath, marker, niceBelow, niceTicks, ringsPath, simplify, text } from './svg.js';

/**
 * Size of the map frame in SVG units (the figure adds margins for coordinate
 * labels): 1000 wide, or 780 tall for extents taller than wide, so text keeps
 * about the same size on the page whatever the map's shape.
 */
const FRAME_WIDE = 1000;
const FRAME_TALL = 780;
const MARGIN = { left: 78, right: 14, top: 14, bottom: 52 };
/** Outlines are simplified to this many SVG units (about a third of a pixel on a full-width A4 page). */
const SIMPLIFY_TOLERANCE = 0.35;
/** Largest length of a degree of latitude on the WGS 84 ellipsoid, metres (at the poles; about 111.7 km). */
const METRES_PER_DEGREE_LAT_MAX = 111_700;
/** Largest ponds labelled with their dam id. */
const LABELLED_PONDS = 12;

/** The run's layers for the map; absent layers are null. */
export interface MapLayers {
  ponds: LayerFeature[];
  influence: LayerFeature[] | null;
  watersheds: LayerFeature[] | null;
  streams: LayerFeature[] | null;
}

/** What the legend shows: only the layers and statuses present. */
export interface MapLegendEntry {
  swatch: string;
  label: string;
}

export interface MapFigure {
  /** The SVG overlay (frame, vectors, ticks, scale bar, north arrow). */
  svg: string;
  /** Hillshade PNG as a data URL and where it sits in the SVG frame, in percent of the figure; null without hillshade. */
  image: { src: string; leftPct: number; topPct: number; widthPct: number; heightPct: number; widthPx: number; heightPx: number } | null;
  /** Width ÷ height of the whole figure (for fitting on a page). */
  aspect: number;
  legend: MapLegendEntry[];
  /** Words on scale, CRS and orientation for the caption. */
  crsText: string;
  scaleText: string;
}

/** Builds the overview map of a run. */
export function buildMapFigure(map: ReportMap, dams: readonly RunDam[], layers: MapLayers): MapFigure {
  const { extent } = map;
  const widthM = (extent.xmax - extent.xmin) * map.metresPerUnitX;
  const heightM = (extent.ymax - extent.ymin) * map.metresPerUnitY;
  const tall = heightM > widthM;
  const k = tall ? FRAME_TALL / heightM : FRAME_WIDE / widthM; // SVG units per metre
  const MAP_WIDTH = widthM * k;
  const mapH = heightM * k;
  const totalW = MAP_WIDTH + MARGIN.left + MARGIN.right;
  const totalH = mapH + MARGIN.top + MARGIN.bottom;
  const ox = MARGIN.left;
  const oy = MARGIN.top;
  const sx = (x: number): number => ox + (x - extent.xmin) * map.metresPerUnitX * k;
  const sy = (y: number): number => oy + (extent.ymax - y) * map.metresPerUnitY * k;
  const crs: Crs = {
    epsg: map.crs.epsg,
    name: map.crs.name,
    proj4: map.crs.proj4,
    geographic: map.crs.geographic,
    linearUnit: map.crs.unit === 'foot' || map.crs.unit === 'us-survey-foot' || map.crs.unit === 'metre' ? map.crs.unit : null,
  };
  const fromLonLat = makeTransform(WGS84, crs);
  // Outlines are thinned in lon/lat first (to a tolerance that is smaller on the ground than the
  // map's in every direction: a degree of longitude is never longer than one of latitude), so
  // only the vertices that can show are projected.
  const preToleranceDeg = (SIMPLIFY_TOLERANCE / k) / 2 / METRES_PER_DEGREE_LAT_MAX;
  const project = (pts: readonly [number, number][]): [number, number][] => {
    const thin = pts.length > 8 ? simplify(pts as [number, number][], preToleranceDeg) : pts;
    const out: [number, number][] = new Array(thin.length);
    for (let i = 0; i < thin.length; i++) {
      const [x, y] = fromLonLat(thin[i]![0], thin[i]![1]);
      out[i] = [sx(x), sy(y)];
    }
    return out;
  };
  const polygonsPath = (features: readonly LayerFeature[]): string => {
    let d = '';
    for (const f of features) for (const p of f.polygons) d += ringsPath(p.map((ring) => simplifyRing(project(ring))));
    return d;
  };

  const legend: MapLegendEntry[] = [];
  let body = `<defs><clipPath id="map-clip"><rect x="${c(ox)}" y="${c(oy)}" width="${c(MAP_WIDTH)}" height="${c(mapH)}"/></clipPath>`;
  body += `<pattern id="map-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><path d="M0 0V6" stroke="${MAP_STYLE.water}" stroke-width="2.2"/></pattern></defs>`;
  body += `<g clip-path="url(#map-clip)">`;

  if (layers.influence && layers.influence.length > 0) {
    body += `<path class="influence" d="${polygonsPath(layers.influence)}" fill="${MAP_STYLE.influence}" fill-opacity="${MAP_STYLE.influenceOpacity}" fill-rule="evenodd"/>`;
    legend.push({ swatch: boxSwatch(MAP_STYLE.influence, MAP_STYLE.influenceOpacity, 'none'), label: 'influence zone (ponds and riparian fringe)' });
  }
  if (layers.streams && layers.streams.length > 0) {
    let d = '';
    for (const f of layers.streams) d += linesPath(f.lines.map((l) => simplify(project(l), SIMPLIFY_TOLERANCE)));
    body += `<path class="stream" d="${d}" stroke="${MAP_STYLE.stream}"/>`;
    legend.push({ swatch: lineSwatch(MAP_STYLE.stream, ''), label: 'streams' });
  }
  const watershedLabels: string[] = [];
  if (layers.watersheds && layers.watersheds.length > 0) {
    body += `<path class="watershed" d="${polygonsPath(layers.watersheds)}" stroke="${MAP_STYLE.watershed}"/>`;
    for (const f of layers.watersheds) {
      const id = f.properties['id'] ?? f.properties['watershed'] ?? f.properties['name'];
      const label = labelPoint(f.polygons.map((p) => p.map((r) => project(r))));
      if (label && (typeof id === 'string' || typeof id === 'number')) watershedLabels.push(text(label[0], label[1], String(id), { class: 'map-label watershed-label', 'text-anchor': 'middle' }));
    }
    legend.push({ swatch: lineSwatch(MAP_STYLE.watershed, '7 4'), label: 'watershed outlines' });
  }

  const attributed = layers.ponds.filter((f) => f.properties['pond_kind'] !== 'standalone');
  const standalone = layers.ponds.filter((f) => f.properties['pond_kind'] === 'standalone');
  if (standalone.length > 0) {
    body += `<path class="pond-standalone" d="${polygonsPath(standalone)}" fill="url(#map-hatch)" stroke="${MAP_STYLE.water}" fill-rule="evenodd"/>`;
  }
  if (attributed.length > 0) {
    body += `<path class="pond" d="${polygonsPath(attributed)}" fill="${MAP_STYLE.water}" fill-opacity="${MAP_STYLE.waterOpacity}" stroke="${MAP_STYLE.water}" fill-rule="evenodd"/>`;
    legend.push({ swatch: boxSwatch(MAP_STYLE.water, MAP_STYLE.waterOpacity, MAP_STYLE.water), label: 'ponds counted in the totals' });
  }
  if (standalone.length > 0) {
    legend.push({ swatch: hatchSwatch(), label: 'ponds of dams outside the totals (proposed, low-confidence candidates)' });
  }

  // Dams: crest lines, then one marker each by status; skipped dams as crosses.
  const byId = new Map<string, RunDam>();
  for (const d of dams) if (!byId.has(d.id)) byId.set(d.id, d);
  const sameOrder = map.dams.length === dams.length && map.dams.every((m, i) => m.id === dams[i]!.id);
  let crestD = '';
  let markers = '';
  const statuses = new Set<string>();
  let skippedShown = false;
  const anchors = new Map<string, [number, number]>();
  map.dams.forEach((m, i) => {
    const dam = sameOrder ? dams[i]! : byId.get(m.id);
    let at: [number, number];
    if (m.kind === 'point') {
      at = [sx(m.point[0]), sy(m.point[1])];
    } else {
      const lines = m.lines.map((l) => l.map(([x, y]) => [sx(x), sy(y)] as [number, number]));
      crestD += linesPath(lines);
      at = midpoint(lines[0] ?? []);
    }
    if (!inside(at, ox, oy, MAP_WIDTH, mapH)) return;
    anchors.set(m.id, at);
    if (dam && !dam.estimated) {
      skippedShown = true;
      markers += marker('cross', at[0], at[1], 5, { class: 'dam-skipped', stroke: OKABE_ITO.black });
      return;
    }
    const status = dam?.status ?? 'confirmed';
    const style = STATUS_STYLE[status] ?? STATUS_STYLE['confirmed']!;
    statuses.add(STATUS_STYLE[status] ? status : 'confirmed');
    markers += marker(style.shape, at[0], at[1], 4.6, { fill: style.colour, stroke: '#fff', 'stroke-width': 1.3, class: 'dam' });
  });
  if (crestD) body += `<path class="crest-casing" d="${crestD}"/><path class="crest" d="${crestD}" stroke="${MAP_STYLE.crest}"/>`;
  body += markers;
  if (crestD) legend.push({ swatch: lineSwatch(MAP_STYLE.crest, ''), label: 'dam crests' });
  for (const s of Object.keys(STATUS_STYLE)) {
    if (!statuses.has(s)) continue;
    const st = STATUS_STYLE[s]!;
    legend.push({ swatch: markerSwatch(st.shape, st.colour, '#fff'), label: `dam, ${st.label}` });
  }
  if (skippedShown) legend.push({ swatch: markerSwatch('cross', 'none', OKABE_ITO.black), label: 'dam skipped (see Warnings)' });

  // Labels of the largest ponds' dams, then watershed names.
  const largest = dams
    .filter((d) => d.estimated && d.inTotals && d.volumeM3 > 0 && anchors.has(d.id))
    .sort((a, b) => b.volumeM3 - a.volumeM3)
    .slice(0, LABELLED_PONDS);
  for (const d of largest) {
    const [x, y] = anchors.get(d.id)!;
    body += text(x + 7, y - 6, d.id, { class: 'map-label' });
  }
  body += watershedLabels.join('');
  body += '</g>';
  body += `<rect class="map-frame" x="${c(ox)}" y="${c(oy)}" width="${c(MAP_WIDTH)}" height="${c(mapH)}"/>`;
  body += coordinateTicks(map, sx, sy, ox, oy, MAP_WIDTH, mapH);
  const scale = scaleBar(ox + 12, oy + mapH - 12, k, widthM);
  body += scale.svg;
  body += northArrow(ox + MAP_WIDTH - 30, oy + 34);

  const svg =
    `<svg class="map-svg" viewBox="0 0 ${c(totalW)} ${c(totalH)}" role="img" aria-labelledby="map-title">` +
    `<title id="map-title">Overview map of the dams, ponds and layers of this run</title>${body}</svg>`;
  const image = map.hillshade
    ? {
        src: `data:image/png;base64,${map.hillshade.pngBase64}`,
        leftPct: (ox / totalW) * 100,
        topPct: (oy / totalH) * 100,
        widthPct: (MAP_WIDTH / totalW) * 100,
        heightPct: (mapH / totalH) * 100,
        widthPx: map.hillshade.widthPx,
        heightPx: map.hillshade.heightPx,
      }
    : null;
  const unitWord = unitName(map.crs.unit);
  return {
    svg,
    image,
    aspect: totalW / totalH,
    legend,
    crsText: `Coordinates in ${map.crs.name}${map.crs.epsg !== null ? ` (EPSG:${map.crs.epsg})` : ''}, ${unitWord}; north is up (grid north).`,
    scaleText: scale.text,
  };
}

function simplifyRing(ring: [number, number][]): [number, number][] {
  return ring.length > 8 ? simplify(ring, SIMPLIFY_TOLERANCE) : ring;
}

function inside(p: [number, number], ox: number, oy: number, w: number, h: number): boolean {
  return p[0] >= ox && p[0] <= ox + w && p[1] >= oy && p[1] <= oy + h;
}

/** The point halfway along a polyline. */
function midpoint(line: readonly [number, number][]): [number, number] {
  if (line.length === 0) return [NaN, NaN];
  let total = 0;
  for (let i = 1; i < line.length; i++) total += Math.hypot(line[i]![0] - line[i - 1]![0], line[i]![1] - line[i - 1]![1]);
  let walked = 0;
  for (let i = 1; i < line.length; i++) {
    const seg = Math.hypot(line[i]![0] - line[i - 1]![0], line[i]![1] - line[i - 1]![1]);
    if (walked + seg >= total / 2 && seg > 0) {
      const t = (total / 2 - walked) / seg;
      return [line[i - 1]![0] + t * (line[i]![0] - line[i - 1]![0]), line[i - 1]![1] + t * (line[i]![1] - line[i - 1]![1])];
    }
    walked += seg;
  }
  return line[0]!;
}

/** A label position for a polygon set: the area-weighted centroid of its largest outer ring. */
function labelPoint(polygons: [number, number][][][]): [number, number] | null {
  let best: [number, number] | null = null;
  let bestArea = 0;
  for (const p of polygons) {
    const ring = p[0];
    if (!ring || ring.length < 3) continue;
    let a = 0;
    let cx = 0;
    let cy = 0;
    for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
      const f = ring[j]![0] * ring[i]![1] - ring[i]![0] * ring[j]![1];
      a += f;
      cx += (ring[j]![0] + ring[i]![0]) * f;
      cy += (ring[j]![1] + ring[i]![1]) * f;
    }
    if (Math.abs(a) > bestArea) {
      bestArea = Math.abs(a);
      best = [cx / (3 * a), cy / (3 * a)];
    }
  }
  return best;
}

function unitName(unit: string): string {
  return unit === 'metre' ? 'metres' : unit === 'foot' ? 'international feet' : unit === 'us-survey-foot' ? 'US survey feet' : 'degrees';
}

/** Ticks and labels along the bottom and left edges, in the DEM CRS's own units. */
function coordinateTicks(map: ReportMap, sx: (x: number) => number, sy: (y: number) => number, ox: number, oy: number, mapW: number, mapH: number): string {
  const { extent } = map;
  const geographic = map.crs.unit === 'degree';
  const xt = niceTicks(extent.xmin, extent.xmax, Math.max(3, Math.round(mapW / 160)));
  const yt = niceTicks(extent.ymin, extent.ymax, Math.max(3, Math.round(mapH / 160)));
  const step = (t: number[]): number => (t.length > 1 ? t[1]! - t[0]! : 1);
  const label = (v: number, s: number): string => {
    if (!geographic) return formatNumber(v, 0);
    const d = Math.max(0, Math.min(8, Math.ceil(-Math.log10(s))));
    return `${v.toFixed(d)}°`;
  };
  let out = '<g class="coords">';
  const bottom = oy + mapH;
  for (const v of xt) {
    const x = sx(v);
    if (x < ox + 30 || x > ox + mapW - 30) continue;
    out += `<path class="tick" d="M${c(x)} ${c(bottom)}v5"/>`;
    out += text(x, bottom + 17, label(v, step(xt)), { 'text-anchor': 'middle' });
  }
  for (const v of yt) {
    const y = sy(v);
    if (y < oy + 36 || y > bottom - 36) continue;
    out += `<path class="tick" d="M${c(ox)} ${c(y)}h-5"/>`;
    out += `<text text-anchor="middle" transform="translate(${c(ox - 10)} ${c(y)}) rotate(-90)">${escapeHtml(label(v, step(yt)))}</text>`;
  }
  const unit = geographic ? '°' : map.crs.unit === 'metre' ? 'm' : map.crs.unit === 'foot' ? 'ft' : 'US survey ft';
  out += text(ox + mapW / 2, bottom + 40, geographic ? 'longitude, °' : `easting, ${unit}`, { class: 'axis-title', 'text-anchor': 'middle' });
  out += `<text class="axis-title" text-anchor="middle" transform="translate(${c(ox - 44)} ${c(oy + mapH / 2)}) rotate(-90)">${geographic ? 'latitude, °' : `northing, ${unit}`}</text>`;
  return out + '</g>';
}

/** Two scale bars, metres over feet (or miles), about a fifth of the map wide, each labelled at its end. */
function scaleBar(x0: number, yBottom: number, k: number, widthM: number): { svg: string; text: string } {
  const lengthM = niceBelow(widthM * 0.22);
  const feetTotal = (widthM * 0.22) / FOOT_M;
  const useMiles = feetTotal >= 5280;
  const lengthUs = useMiles ? niceBelow(feetTotal / 5280) : niceBelow(feetTotal);
  const usM = useMiles ? lengthUs * 5280 * FOOT_M : lengthUs * FOOT_M;
  const wM = lengthM * k;
  const wUs = usM * k;
  const whole = (v: number): string => formatNumber(v, v >= 1 ? 0 : Math.ceil(-Math.log10(v)));
  const siLabel = lengthM >= 1000 ? `${whole(lengthM / 1000)} km` : `${whole(lengthM)} m`;
  const usLabel = useMiles ? `${whole(lengthUs)} mi` : `${whole(lengthUs)} ft`;
  const boxW = Math.max(wM, wUs) + 86;
  const y1 = yBottom - 34;
  const y2 = yBottom - 14;
  const bar = (y: number, w: number, label: string): string =>
    `<rect class="sb-dark" x="${c(x0 + 10)}" y="${c(y)}" width="${c(w / 2)}" height="5"/>` +
    `<rect class="sb-light" x="${c(x0 + 10 + w / 2)}" y="${c(y)}" width="${c(w / 2)}" height="5"/>` +
    text(x0 + 16 + w, y + 6, label, {});
  const svg =
    `<g class="scale-bar"><rect class="sb-box" x="${c(x0)}" y="${c(y1 - 12)}" width="${c(boxW)}" height="${c(yBottom - y1 + 16)}" rx="3"/>` +
    bar(y1, wM, siLabel) +
    bar(y2, wUs, usLabel) +
    '</g>';
  return { svg, text: `Scale bars: ${siLabel} and ${usLabel}.` };
}

function northArrow(x: number, y: number): string {
  return (
    `<g class="north-arrow" transform="translate(${c(x)} ${c(y)})">` +
    '<rect class="na-bg" x="-16" y="-30" width="32" height="56" rx="3"/>' +
    '<text class="na-n" x="0" y="-12" text-anchor="middle">N</text>' +
    '<path class="na-arrow" d="M0 -6L8 20L0 14L-8 20Z"/></g>'
  );
}

function boxSwatch(fill: string, opacity: number, stroke: string): string {
  return `<svg class="swatch" viewBox="0 0 16 16" width="16" height="16" aria-hidden="true"><rect x="1.5" y="3" width="13" height="10" fill="${fill}" fill-opacity="${opacity}" stroke="${stroke}"/></svg>`;
}
function hatchSwatch(): string {
  return `<svg class="swatch" viewBox="0 0 16 16" width="16" height="16" aria-hidden="true"><rect x="1.5" y="3" width="13" height="10" fill="#fff" stroke="${MAP_STYLE.water}"/><path d="M2 9L6 4M5 13L12 4M10 13L14 8" stroke="${MAP_STYLE.water}" stroke-width="1.6"/></svg>`;
}
function lineSwatch(stroke: string, dash: string): string {
  return `<svg class="swatch" viewBox="0 0 16 16" width="16" height="16" aria-hidden="true"><path d="M1 8H15" stroke="${stroke}" stroke-width="2"${dash ? ` stroke-dasharray="${dash === '7 4' ? '4 2' : dash}"` : ''}/></svg>`;
}
function markerSwatch(shape: Parameters<typeof marker>[0], fill: string, stroke: string): string {
  return `<svg class="swatch" viewBox="0 0 16 16" width="16" height="16" aria-hidden="true">${marker(shape, 8, 8, 5, { fill, stroke, 'stroke-width': shape === 'cross' ? 2 : 1.2 })}</svg>`;
}
