/**
 * Builds report-map.json's content at the end of an estimate, while the DEM
 * is open: the mapped extent (dams and ponds with a margin), a block-mean
 * downsampled hillshade of it, and the dams' positions in the DEM's CRS.
 */
import { encode } from 'fast-png';
import { colToX, rowToY, xToCol, yToRow } from '../grid/transform.js';
import type { DamInput } from '../inventory.js';
import { cellMetrics, crsUnitM } from '../io/crs.js';
import type { DemSource } from '../io/dem.js';
import { HILLSHADE_ALTITUDE_DEG, HILLSHADE_AZIMUTH_DEG, hornHillshade } from './hillshade.js';
import { REPORT_MAP_FORMAT, REPORT_MAP_VERSION, type MapDam, type ReportMap } from './map-file.js';

/**
 * Longest side of the hillshade in pixels: a block of n × n DEM cells becomes
 * one pixel, n the smallest whole number that keeps both sides at or under this.
 * 1600 px keeps the PNG near 1–2 MB and is sharp on an A4 page at 200 dpi.
 */
export const HILLSHADE_MAX_SIDE_PX = 1600;
/** Margin around the dams and ponds: this share of the larger side of their extent… */
const MARGIN_SHARE = 0.12;
/** …and at least this many metres. */
const MARGIN_MIN_M = 60;
/** Narrow side of the mapped extent at least this share of the long side, where the DEM reaches. */
const MIN_ASPECT = 0.6;
/** Rows of DEM cells read at a time (rounded up to whole blocks), so large DEMs never sit whole in memory. */
const STRIP_ROWS = 512;

/** Outline rings in full-DEM pixel-corner coordinates, as the estimate returns them. */
export type PixelPolygons = readonly { polygons: [number, number][][][] }[];

/** Builds the overview map's data for a run; reads the DEM over the mapped extent only. */
export async function buildReportMap(args: {
  dem: DemSource;
  dams: readonly DamInput[];
  outlines: PixelPolygons;
  maxSidePx?: number;
}): Promise<ReportMap> {
  const { dem } = args;
  const t = dem.transform;
  const centre = cellMetrics(dem.crs, t, Math.floor(dem.height / 2), 1);
  const unitM = crsUnitM(dem.crs);
  const metresPerUnitX = unitM ?? centre.cellWidthM[0]! / Math.abs(t.dx);
  const metresPerUnitY = unitM ?? centre.cellHeightM / Math.abs(t.dy);
  const cellM = Math.min(Math.abs(t.dx) * metresPerUnitX, Math.abs(t.dy) * metresPerUnitY);

  // Extent in pixel space: every dam vertex and pond ring vertex on the DEM, plus a margin.
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  const visit = (col: number, row: number): void => {
    if (!(col >= 0 && col <= dem.width && row >= 0 && row <= dem.height)) return;
    if (col < c0) c0 = col;
    if (col > c1) c1 = col;
    if (row < r0) r0 = row;
    if (row > r1) r1 = row;
  };
  for (const d of args.dams) {
    if (d.geometry.kind === 'point') visit(xToCol(t, d.geometry.x), yToRow(t, d.geometry.y));
    else for (const line of d.geometry.lines) for (const [x, y] of line) visit(xToCol(t, x), yToRow(t, y));
  }
  for (const o of args.outlines) for (const polygon of o.polygons) for (const ring of polygon) for (const [c, r] of ring) visit(c, r);
  if (!Number.isFinite(c0)) {
    c0 = 0;
    r0 = 0;
    c1 = dem.width;
    r1 = dem.height;
  } else {
    const margin = Math.max(MARGIN_SHARE * Math.max(c1 - c0, r1 - r0), MARGIN_MIN_M / cellM);
    c0 -= margin;
    r0 -= margin;
    c1 += margin;
    r1 += margin;
    // No sliver maps: widen the narrow side (in metres) to at least MIN_ASPECT of the long one.
    const wM = (c1 - c0) * Math.abs(t.dx) * metresPerUnitX;
    const hM = (r1 - r0) * Math.abs(t.dy) * metresPerUnitY;
    if (wM < MIN_ASPECT * hM) {
      const grow = (MIN_ASPECT * hM - wM) / (Math.abs(t.dx) * metresPerUnitX) / 2;
      c0 -= grow;
      c1 += grow;
    } else if (hM < MIN_ASPECT * wM) {
      const grow = (MIN_ASPECT * wM - hM) / (Math.abs(t.dy) * metresPerUnitY) / 2;
      r0 -= grow;
      r1 += grow;
    }
    c0 = Math.max(0, Math.floor(c0));
    r0 = Math.max(0, Math.floor(r0));
    c1 = Math.min(dem.width, Math.ceil(c1));
    r1 = Math.min(dem.height, Math.ceil(r1));
  }
  const maxSide = args.maxSidePx ?? HILLSHADE_MAX_SIDE_PX;
  const block = Math.max(1, Math.ceil(Math.max(c1 - c0, r1 - r0) / maxSide));
  // Whole blocks only: grow the extent, within the DEM where it can.
  const wPx = Math.ceil((c1 - c0) / block);
  const hPx = Math.ceil((r1 - r0) / block);
  c0 = Math.max(0, Math.min(c0, c1 - wPx * block));
  r0 = Math.max(0, Math.min(r0, r1 - hPx * block));
  c1 = c0 + wPx * block;
  r1 = r0 + hPx * block;

  const shade = await shadeExtent(dem, c0, r0, wPx, hPx, block);
  return {
    format: REPORT_MAP_FORMAT,
    version: REPORT_MAP_VERSION,
    crs: {
      name: dem.crs.name,
      epsg: dem.crs.epsg,
      proj4: dem.crs.proj4,
      geographic: dem.crs.geographic,
      unit: dem.crs.geographic || dem.crs.linearUnit === null ? 'degree' : dem.crs.linearUnit,
    },
    extent: {
      xmin: Math.min(colToX(t, c0), colToX(t, c1)),
      xmax: Math.max(colToX(t, c0), colToX(t, c1)),
      ymin: Math.min(rowToY(t, r0), rowToY(t, r1)),
      ymax: Math.max(rowToY(t, r0), rowToY(t, r1)),
    },
    metresPerUnitX,
    metresPerUnitY,
    hillshade: shade
      ? { widthPx: wPx, heightPx: hPx, blockCells: block, azimuthDeg: HILLSHADE_AZIMUTH_DEG, altitudeDeg: HILLSHADE_ALTITUDE_DEG, pngBase64: shade }
      : null,
    dams: args.dams.map((d): MapDam => {
      const digits = dem.crs.geographic ? 8 : 3;
      const r = (v: number): number => Number(v.toFixed(digits));
      return d.geometry.kind === 'point'
        ? { id: d.id, kind: 'point', point: [r(d.geometry.x), r(d.geometry.y)] }
        : { id: d.id, kind: 'line', lines: d.geometry.lines.map((l) => l.map(([x, y]) => [r(x), r(y)] as [number, number])) };
    }),
  };
}

/**
 * Reads the extent strip by strip, averages blocks of `block` × `block` cells
 * (NoData cells left out; an all-NoData block is NoData), hillshades the
 * block grid and encodes it as PNG (base64). Null when every block is NoData.
 */
async function shadeExtent(dem: DemSource, col0: number, row0: number, wPx: number, hPx: number, block: number): Promise<string | null> {
  const z = new Float32Array(wPx * hPx);
  const blockWidthM = new Float64Array(hPx);
  let blockHeightM = 0;
  const sums = new Float64Array(wPx);
  const counts = new Uint32Array(wPx);
  const stripBlocks = Math.max(1, Math.ceil(STRIP_ROWS / block));
  let any = false;
  for (let by0 = 0; by0 < hPx; by0 += stripBlocks) {
    const nb = Math.min(stripBlocks, hPx - by0);
    const grid = await dem.readWindow(col0, row0 + by0 * block, wPx * block, nb * block);
    blockHeightM = grid.cellHeightM * block;
    for (let b = 0; b < nb; b++) {
      sums.fill(0);
      counts.fill(0);
      let widthSum = 0;
      let widthRows = 0;
      for (let rr = b * block; rr < (b + 1) * block && rr < grid.height; rr++) {
        widthSum += grid.cellWidthM[rr]!;
        widthRows++;
        const off = rr * grid.width;
        for (let col = 0; col < grid.width; col++) {
          const v = grid.z[off + col]!;
          if (Number.isNaN(v)) continue;
          const bx = Math.floor(col / block);
          sums[bx]! += v;
          counts[bx]!++;
        }
      }
      const out = (by0 + b) * wPx;
      blockWidthM[by0 + b] = widthRows > 0 ? (widthSum / widthRows) * block : block;
      for (let bx = 0; bx < wPx; bx++) {
        const n = counts[bx]!;
        z[out + bx] = n > 0 ? sums[bx]! / n : NaN;
        if (n > 0) any = true;
      }
    }
  }
  if (!any) return null;
  const light = hornHillshade({ width: wPx, height: hPx, z, cellWidthM: blockWidthM, cellHeightM: blockHeightM });
  let hasNoData = false;
  for (let i = 0; i < light.length; i++) {
    if (Number.isNaN(light[i]!)) {
      hasNoData = true;
      break;
    }
  }
  const channels = hasNoData ? 2 : 1;
  const data = new Uint8Array(wPx * hPx * channels);
  for (let i = 0; i < light.length; i++) {
    const v = light[i]!;
    if (channels === 1) {
      data[i] = Math.round(255 * v);
    } else {
      const nan = Number.isNaN(v);
      data[2 * i] = nan ? 0 : Math.round(255 * v);
      data[2 * i + 1] = nan ? 0 : 255;
    }
  }
  const png = encode({ width: wPx, height: hPx, data, channels, depth: 8 });
  return Buffer.from(png.buffer, png.byteOffset, png.byteLength).toString('base64');
}
