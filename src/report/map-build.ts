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
import type { BlockMeans } from './shade-blocks.js';

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
/**
 * Collected blocks are used when the map, in those blocks, is at least this
 * share of HILLSHADE_MAX_SIDE_PX on its long side; a map much smaller than the
 * estimate's area is read again at a finer block size.
 */
const MIN_SHARE_OF_COLLECTED = 0.5;
/** Missing blocks fewer than this many cells apart along a strip are read in one window. */
const RUN_JOIN_CELLS = 256;
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
  /** Block means gathered while the estimate read the DEM (shade-blocks.ts); blocks it lacks are read here. */
  collected?: BlockMeans | null;
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
  // Blocks gathered during the estimate serve when the map is not much smaller than the area they cover.
  let blocks = args.collected ?? null;
  if (blocks && Math.max(c1 - c0, r1 - r0) / blocks.block < maxSide * MIN_SHARE_OF_COLLECTED) blocks = null;
  let block: number;
  let gc0: number;
  let gr0: number;
  if (blocks) {
    block = blocks.block;
    gc0 = blocks.col0;
    gr0 = blocks.row0;
    // Snap to the collected grid and stay inside it.
    c0 = Math.max(gc0, gc0 + Math.floor((c0 - gc0) / block) * block);
    r0 = Math.max(gr0, gr0 + Math.floor((r0 - gr0) / block) * block);
    c1 = Math.min(gc0 + blocks.cols * block, gc0 + Math.ceil((c1 - gc0) / block) * block);
    r1 = Math.min(gr0 + blocks.rows * block, gr0 + Math.ceil((r1 - gr0) / block) * block);
  } else {
    block = Math.max(1, Math.ceil(Math.max(c1 - c0, r1 - r0) / maxSide));
    // Whole blocks on the DEM's grid of block multiples (the same grid shade-blocks.ts lays).
    c0 = Math.floor(c0 / block) * block;
    r0 = Math.floor(r0 / block) * block;
    c1 = Math.ceil(c1 / block) * block;
    r1 = Math.ceil(r1 / block) * block;
    gc0 = c0;
    gr0 = r0;
  }
  const wPx = (c1 - c0) / block;
  const hPx = (r1 - r0) / block;

  const means = new Float32Array(wPx * hPx);
  const missing = new Uint8Array(wPx * hPx);
  const bx0 = (c0 - gc0) / block;
  const by0 = (r0 - gr0) / block;
  for (let by = 0; by < hPx; by++) {
    for (let bx = 0; bx < wPx; bx++) {
      const m = blocks ? blocks.meanOf(bx0 + bx, by0 + by) : undefined;
      if (m === undefined) missing[by * wPx + bx] = 1;
      else means[by * wPx + bx] = m;
    }
  }
  await readMissingBlocks(dem, { col0: c0, row0: r0, block, wPx, hPx }, means, missing);
  const shade = shadePng(dem, { row0: r0, block, wPx, hPx }, means);
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
 * Reads the blocks still missing, strip by strip (whole strips of blocks, so
 * tiles are decoded about once), and stores each block's mean of its
 * non-NoData cells (NaN when it has none).
 */
async function readMissingBlocks(
  dem: DemSource,
  g: { col0: number; row0: number; block: number; wPx: number; hPx: number },
  means: Float32Array,
  missing: Uint8Array,
): Promise<void> {
  const { block, wPx, hPx } = g;
  const stripBlocks = Math.max(1, Math.ceil(STRIP_ROWS / block));
  // Runs of block columns closer than this are read as one window.
  const joinGap = Math.max(1, Math.ceil(RUN_JOIN_CELLS / block));
  for (let by0 = 0; by0 < hPx; by0 += stripBlocks) {
    const nb = Math.min(stripBlocks, hPx - by0);
    // Column runs of this strip that hold missing blocks, each with its row span.
    const runs: { lo: number; hi: number; top: number; bottom: number }[] = [];
    for (let bx = 0; bx < wPx; bx++) {
      let top = -1;
      let bottom = -1;
      for (let by = by0; by < by0 + nb; by++) {
        if (!missing[by * wPx + bx]) continue;
        if (top < 0) top = by;
        bottom = by;
      }
      if (top < 0) continue;
      const last = runs[runs.length - 1];
      if (last && bx - last.hi <= joinGap) {
        last.hi = bx;
        last.top = Math.min(last.top, top);
        last.bottom = Math.max(last.bottom, bottom);
      } else {
        runs.push({ lo: bx, hi: bx, top, bottom });
      }
    }
    for (const run of runs) await readBlocks(dem, g, means, missing, run);
  }
}

/** Reads one window of blocks [lo, hi] × [top, bottom] and fills the missing ones. */
async function readBlocks(
  dem: DemSource,
  g: { col0: number; row0: number; block: number; wPx: number },
  means: Float32Array,
  missing: Uint8Array,
  run: { lo: number; hi: number; top: number; bottom: number },
): Promise<void> {
  const { block, wPx } = g;
  const span = run.hi - run.lo + 1;
  const nb = run.bottom - run.top + 1;
  const grid = await dem.readWindow(g.col0 + run.lo * block, g.row0 + run.top * block, span * block, nb * block);
  const sums = new Float64Array(span * nb);
  const counts = new Uint32Array(span * nb);
  const colBlock = new Int32Array(grid.width);
  for (let col = 0; col < grid.width; col++) colBlock[col] = Math.floor((grid.colOffset + col - g.col0) / block) - run.lo;
  for (let row = 0; row < grid.height; row++) {
    const rb = Math.floor((grid.rowOffset + row - g.row0) / block) - run.top;
    if (rb < 0 || rb >= nb) continue;
    const off = row * grid.width;
    for (let col = 0; col < grid.width; col++) {
      const v = grid.z[off + col]!;
      const cb = colBlock[col]!;
      if (Number.isNaN(v) || cb < 0 || cb >= span) continue;
      sums[rb * span + cb]! += v;
      counts[rb * span + cb]!++;
    }
  }
  for (let rb = 0; rb < nb; rb++) {
    for (let cb = 0; cb < span; cb++) {
      const i = (run.top + rb) * wPx + run.lo + cb;
      if (!missing[i]) continue;
      const n = counts[rb * span + cb]!;
      means[i] = n > 0 ? sums[rb * span + cb]! / n : NaN;
      missing[i] = 0;
    }
  }
}

/** Hillshades the block means (cell sizes per block row from the CRS) and encodes them as PNG (base64); null when all NoData. */
function shadePng(dem: DemSource, g: { row0: number; block: number; wPx: number; hPx: number }, means: Float32Array): string | null {
  const { block, wPx, hPx } = g;
  let any = false;
  for (let i = 0; i < means.length; i++) {
    if (!Number.isNaN(means[i]!)) {
      any = true;
      break;
    }
  }
  if (!any) return null;
  const blockWidthM = new Float64Array(hPx);
  let blockHeightM = 0;
  for (let by = 0; by < hPx; by++) {
    const m = cellMetrics(dem.crs, dem.transform, g.row0 + by * block, block);
    let sum = 0;
    for (let k = 0; k < m.cellWidthM.length; k++) sum += m.cellWidthM[k]!;
    blockWidthM[by] = (sum / Math.max(1, m.cellWidthM.length)) * block;
    blockHeightM = m.cellHeightM * block;
  }
  const light = hornHillshade({ width: wPx, height: hPx, z: means, cellWidthM: blockWidthM, cellHeightM: blockHeightM });
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
