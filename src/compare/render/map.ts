/**
 * The change map as one SVG: the classed cells as an embedded PNG (reduced
 * to at most MAP_MAX_PX on its long side; a map pixel shows the most telling
 * class among its cells) and the dams as vector markers by change class,
 * with a scale bar and a north arrow (the grids are north-up).
 */
import { encode } from 'fast-png';
import { CHANGE_CLASSES, type Backdrop, type ChangeRaster } from '../change-map.js';
import type { DamChange } from '../compare.js';
import { CLASS_PRIORITY, CLASS_RGBA, DAM_MARK, hexOf } from './palette.js';
import { esc, fmt } from './svg.js';

/** Longest side of the map image, pixels. */
export const MAP_MAX_PX = 900;

/** The reduced class image: one class per map pixel, and the reduction factor (cells per pixel). */
export function reduceClasses(raster: ChangeRaster, maxPx = MAP_MAX_PX): { width: number; height: number; factor: number; classes: Uint8Array } {
  const factor = Math.max(1, Math.ceil(Math.max(raster.width, raster.height) / maxPx));
  const width = Math.ceil(raster.width / factor);
  const height = Math.ceil(raster.height / factor);
  const classes = new Uint8Array(width * height);
  for (let row = 0; row < raster.height; row++) {
    const base = Math.floor(row / factor) * width;
    for (let col = 0; col < raster.width; col++) {
      const c = raster.classes[row * raster.width + col]!;
      if (c === 0) continue;
      const o = base + Math.floor(col / factor);
      if (CLASS_PRIORITY[c]! > CLASS_PRIORITY[classes[o]!]!) classes[o] = c;
    }
  }
  return { width, height, factor, classes };
}

/** PNG bytes of a class image (RGBA, dry transparent). */
export function classesPng(img: { width: number; height: number; classes: Uint8Array }): Uint8Array {
  const data = new Uint8Array(img.width * img.height * 4);
  for (let i = 0; i < img.classes.length; i++) {
    const rgba = CLASS_RGBA[img.classes[i]!]!;
    data[i * 4] = rgba[0];
    data[i * 4 + 1] = rgba[1];
    data[i * 4 + 2] = rgba[2];
    data[i * 4 + 3] = rgba[3];
  }
  return encode({ width: img.width, height: img.height, data, channels: 4, depth: 8 });
}

/**
 * The part of the raster worth drawing: the box holding every wet cell and
 * every dam, grown by a tenth of its size (at least MAP_MARGIN_CELLS) and
 * clipped to the raster. The whole raster when nothing is in it.
 */
export function cropToContent(raster: ChangeRaster, dams: readonly DamChange[]): ChangeRaster {
  const { width, height, classes, transform: t } = raster;
  let c0 = width;
  let c1 = -1;
  let r0 = height;
  let r1 = -1;
  for (let row = 0; row < height; row++) {
    const base = row * width;
    for (let col = 0; col < width; col++) {
      if (classes[base + col] === 0) continue;
      if (col < c0) c0 = col;
      if (col > c1) c1 = col;
      if (row < r0) r0 = row;
      if (row > r1) r1 = row;
    }
  }
  for (const d of dams) {
    if (d.crest_x === null || d.crest_y === null) continue;
    const col = Math.floor((d.crest_x - t.x0) / t.dx);
    const row = Math.floor((d.crest_y - t.y0) / t.dy);
    if (col < 0 || row < 0 || col >= width || row >= height) continue;
    c0 = Math.min(c0, col);
    c1 = Math.max(c1, col);
    r0 = Math.min(r0, row);
    r1 = Math.max(r1, row);
  }
  if (c1 < c0 || r1 < r0) return raster;
  const pad = Math.max(MAP_MARGIN_CELLS, Math.ceil(0.1 * Math.max(c1 - c0, r1 - r0)));
  c0 = Math.max(0, c0 - pad);
  r0 = Math.max(0, r0 - pad);
  c1 = Math.min(width - 1, c1 + pad);
  r1 = Math.min(height - 1, r1 + pad);
  const w = c1 - c0 + 1;
  const h = r1 - r0 + 1;
  const out = new Uint8Array(w * h);
  for (let row = 0; row < h; row++) out.set(classes.subarray((row + r0) * width + c0, (row + r0) * width + c0 + w), row * w);
  return { width: w, height: h, transform: { x0: t.x0 + c0 * t.dx, y0: t.y0 + r0 * t.dy, dx: t.dx, dy: t.dy }, crsKey: raster.crsKey, classes: out };
}

/** Cells of margin kept around the drawn content, at least. */
export const MAP_MARGIN_CELLS = 20;

/** The change map SVG, cropped to its content; `unitM` is metres per map unit of the rasters' CRS (null: no scale bar). */
export function changeMapSvg(full: ChangeRaster, dams: readonly DamChange[], unitM: number | null, backdrop: Backdrop | null = null): string {
  const raster = cropToContent(full, dams);
  const img = reduceClasses(raster);
  const png = Buffer.from(classesPng(img)).toString('base64');
  const { width: w, height: h, factor } = img;
  const t = raster.transform;
  const r = Math.max(3, Math.max(w, h) / 140);
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${w} ${h}" class="map" role="img" aria-label="Change map">`);
  parts.push(`<rect x="0" y="0" width="${w}" height="${h}" class="map-ground"/>`);
  if (backdrop) {
    // The relief under the water, placed by its extent in the same CRS (the SVG clips it to the map).
    const bx = (backdrop.extent.xmin - t.x0) / t.dx / factor;
    const by = (backdrop.extent.ymax - t.y0) / t.dy / factor;
    const bw = (backdrop.extent.xmax - backdrop.extent.xmin) / Math.abs(t.dx) / factor;
    const bh = (backdrop.extent.ymax - backdrop.extent.ymin) / Math.abs(t.dy) / factor;
    parts.push(`<image x="${bx.toFixed(2)}" y="${by.toFixed(2)}" width="${bw.toFixed(2)}" height="${bh.toFixed(2)}" preserveAspectRatio="none" opacity="0.55" href="data:image/png;base64,${backdrop.pngBase64}"/>`);
  }
  parts.push(`<image x="0" y="0" width="${w}" height="${h}" preserveAspectRatio="none" style="image-rendering:pixelated" href="data:image/png;base64,${png}"/>`);
  for (const d of dams) {
    if (d.crest_x === null || d.crest_y === null) continue;
    const px = (d.crest_x - t.x0) / t.dx / factor;
    const py = (d.crest_y - t.y0) / t.dy / factor;
    if (px < 0 || py < 0 || px > w || py > h) continue;
    parts.push(marker(d, px, py, r));
  }
  if (unitM !== null) parts.push(scaleBar(w, h, Math.abs(t.dx) * factor * unitM, r));
  parts.push(northArrow(w, r));
  parts.push('</svg>');
  return parts.join('');
}

/** Legend entries of the map's cell classes (name and CSS colour), dry left out. */
export function classLegend(): { name: string; colour: string }[] {
  return CHANGE_CLASSES.map((name, k) => ({ name, colour: hexOf(CLASS_RGBA[k]!) })).filter((_, k) => k !== 0);
}

/** A legend swatch: the class's marker in a small inline SVG. */
export function damSwatch(change: DamChange['change']): string {
  const shape = markShape(change, 7, 7, 5, '');
  return `<svg class="swatch" width="14" height="14" viewBox="0 0 14 14" aria-hidden="true">${shape}</svg>`;
}

/** A dam marker: shape and colour by class, with its id and change as a tooltip. */
export function marker(d: DamChange, x: number, y: number, r: number): string {
  const title = `<title>${esc(`${d.id}: ${d.change}${d.reasons.length > 0 ? ` (${d.reasons.join(', ')})` : ''}`)}</title>`;
  return markShape(d.change, x, y, r, title);
}

function markShape(change: DamChange['change'], x: number, y: number, r: number, title: string): string {
  const m = DAM_MARK[change];
  const style = `fill="${m.colour}" stroke="#ffffff" stroke-width="${(r / 4).toFixed(2)}"`;
  const f = (v: number): string => v.toFixed(1);
  switch (m.shape) {
    case 'triangle':
      return `<path d="M${f(x)} ${f(y - r * 1.2)}L${f(x + r)} ${f(y + r * 0.8)}L${f(x - r)} ${f(y + r * 0.8)}Z" ${style}>${title}</path>`;
    case 'diamond':
      return `<path d="M${f(x)} ${f(y - r * 1.2)}L${f(x + r)} ${f(y)}L${f(x)} ${f(y + r * 1.2)}L${f(x - r)} ${f(y)}Z" ${style}>${title}</path>`;
    case 'cross':
      return `<path d="M${f(x - r)} ${f(y - r)}L${f(x + r)} ${f(y + r)}M${f(x + r)} ${f(y - r)}L${f(x - r)} ${f(y + r)}" stroke="${m.colour}" stroke-width="${(r / 2).toFixed(2)}" fill="none">${title}</path>`;
    default:
      return `<circle cx="${f(x)}" cy="${f(y)}" r="${f(r * 0.8)}" ${style}>${title}</circle>`;
  }
}

/** A scale bar of a round length near a fifth of the map's width, bottom left. */
function scaleBar(w: number, h: number, pixelM: number, r: number): string {
  const target = (w / 5) * pixelM;
  const mag = 10 ** Math.floor(Math.log10(target));
  const lengthM = [1, 2, 5, 10].map((k) => k * mag).filter((v) => v <= target).pop() ?? mag;
  const len = lengthM / pixelM;
  const x = r * 3;
  const y = h - r * 3;
  const label = lengthM >= 1000 ? `${fmt(lengthM / 1000, lengthM % 1000 === 0 ? 0 : 1)} km` : `${fmt(lengthM, 0)} m`;
  return (
    `<g class="scale"><rect x="${(x - r).toFixed(1)}" y="${(y - r * 3.2).toFixed(1)}" width="${(len + 2 * r).toFixed(1)}" height="${(r * 4.4).toFixed(1)}" class="map-label-bg"/>` +
    `<path d="M${x.toFixed(1)} ${(y - r).toFixed(1)}V${y.toFixed(1)}H${(x + len).toFixed(1)}V${(y - r).toFixed(1)}" fill="none" stroke="#222" stroke-width="${(r / 3).toFixed(2)}"/>` +
    `<text x="${(x + len / 2).toFixed(1)}" y="${(y - r * 1.4).toFixed(1)}" text-anchor="middle" font-size="${(r * 2).toFixed(1)}">${label}</text></g>`
  );
}

function northArrow(w: number, r: number): string {
  const x = w - r * 4;
  const y = r * 3;
  return (
    `<g class="north"><path d="M${x.toFixed(1)} ${y.toFixed(1)}l${r.toFixed(1)} ${(r * 3).toFixed(1)}h${(-2 * r).toFixed(1)}Z" fill="#222"/>` +
    `<text x="${x.toFixed(1)}" y="${(y + r * 5.5).toFixed(1)}" text-anchor="middle" font-size="${(r * 2).toFixed(1)}">N</text></g>`
  );
}
