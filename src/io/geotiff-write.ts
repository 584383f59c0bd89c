/**
 * A small little-endian GeoTIFF writer for Float32 rasters (depth, storage,
 * influence maps): tiled or striped, DEFLATE through node:zlib with an
 * optional predictor, GeoKeys for an EPSG-coded CRS, GDAL_NODATA.
 *
 * Layout: header, IFD, long tag values, then the image blocks, so a reader
 * finds all metadata in the first few kilobytes. TIFF 6.0 baseline tags plus
 * TIFF Technical Note 3 (floating-point predictor) and the OGC GeoTIFF 1.1
 * standard (OGC 19-008r4) for the geo tags.
 */
import { open } from 'node:fs/promises';
import { endianness } from 'node:os';
import { promisify } from 'node:util';
import { deflate as deflateCb } from 'node:zlib';
import { InputError } from '../errors.js';
import type { GeoTransform } from '../grid/transform.js';
import type { LinearUnit } from '../units.js';
import type { Crs } from './crs.js';

const deflate = promisify(deflateCb);

/** Options of writeGeoTiff. */
export interface GeoTiffWriteOptions {
  /** Columns and rows. */
  width: number;
  height: number;
  /** Cell values, row-major, length width × height. */
  data: Float32Array;
  /** Pixel-corner transform, CRS units. */
  transform: GeoTransform;
  /** Must carry an EPSG code. */
  crs: Crs;
  /** Value written to GDAL_NODATA (NaN allowed), or null for none. */
  noData: number | null;
  /** Unit of the values, written as VerticalUnitsGeoKey when given. */
  zUnit?: LinearUnit;
  /** Tiles of `blockSize`² cells (default) or strips of whole rows. */
  layout?: 'tiled' | 'striped';
  /** Tile side in cells (multiple of 16, default 256); ignored for strips. */
  blockSize?: number;
  /** DEFLATE (default) or no compression. */
  compression?: 'deflate' | 'none';
  /** TIFF predictor: 1 none, 2 horizontal (on the 32-bit words), 3 floating point (default); compressed files only. */
  predictor?: 1 | 2 | 3;
  /** zlib level 1–9 (default 6). */
  level?: number;
}

const T_ASCII = 2;
const T_SHORT = 3;
const T_LONG = 4;
const T_DOUBLE = 12;
const TYPE_SIZE: Record<number, number> = { [T_ASCII]: 1, [T_SHORT]: 2, [T_LONG]: 4, [T_DOUBLE]: 8 };

interface Entry {
  tag: number;
  type: number;
  count: number;
  /** Encoded values, little-endian. */
  bytes: Buffer;
}

function shorts(tag: number, values: number[]): Entry {
  const b = Buffer.alloc(values.length * 2);
  values.forEach((v, i) => b.writeUInt16LE(v, i * 2));
  return { tag, type: T_SHORT, count: values.length, bytes: b };
}
function longs(tag: number, values: ArrayLike<number>): Entry {
  const b = Buffer.alloc(values.length * 4);
  for (let i = 0; i < values.length; i++) b.writeUInt32LE(values[i] as number, i * 4);
  return { tag, type: T_LONG, count: values.length, bytes: b };
}
function doubles(tag: number, values: number[]): Entry {
  const b = Buffer.alloc(values.length * 8);
  values.forEach((v, i) => b.writeDoubleLE(v, i * 8));
  return { tag, type: T_DOUBLE, count: values.length, bytes: b };
}
function ascii(tag: number, text: string): Entry {
  const b = Buffer.from(`${text}\0`, 'latin1');
  return { tag, type: T_ASCII, count: b.length, bytes: b };
}

/** GDAL_NODATA text: GDAL reads "nan", "inf", "-inf" and decimal numbers. */
function noDataText(v: number): string {
  if (Number.isNaN(v)) return 'nan';
  if (v === Infinity) return 'inf';
  if (v === -Infinity) return '-inf';
  return String(v);
}

const VERTICAL_UNIT_CODE: Record<LinearUnit, number> = { metre: 9001, foot: 9002, 'us-survey-foot': 9003 };

/** GeoKeyDirectory for an EPSG-coded CRS, PixelIsArea. */
function geoKeyDirectory(crs: Crs, zUnit: LinearUnit | undefined): number[] {
  const keys: [number, number][] = [
    [1024, crs.geographic ? 2 : 1], // GTModelTypeGeoKey
    [1025, 1], // GTRasterTypeGeoKey = RasterPixelIsArea
    [crs.geographic ? 2048 : 3072, crs.epsg ?? 0], // GeographicTypeGeoKey / ProjectedCSTypeGeoKey
  ];
  if (zUnit !== undefined) keys.push([4099, VERTICAL_UNIT_CODE[zUnit]]); // VerticalUnitsGeoKey
  keys.sort((a, b) => a[0] - b[0]);
  const dir = [1, 1, 0, keys.length];
  for (const [id, value] of keys) dir.push(id, 0, 1, value);
  return dir;
}

/** Applies a predictor in place to `rows` rows of `w` samples held in `block`. */
function predict(block: Float32Array, w: number, rows: number, predictor: 1 | 2 | 3, scratch: Uint8Array): void {
  if (predictor === 1) return;
  if (predictor === 2) {
    const u = new Uint32Array(block.buffer, block.byteOffset, block.length);
    for (let r = 0; r < rows; r++) {
      const start = r * w;
      for (let i = start + w - 1; i > start; i--) u[i] = ((u[i] as number) - (u[i - 1] as number)) >>> 0;
    }
    return;
  }
  const bytes = new Uint8Array(block.buffer, block.byteOffset, block.length * 4);
  const n = w * 4;
  for (let r = 0; r < rows; r++) {
    const base = r * n;
    // Byte-plane shuffle, most significant bytes first (Technical Note 3), then byte differences.
    for (let i = 0; i < w; i++) {
      const s = base + i * 4;
      scratch[i] = bytes[s + 3] as number;
      scratch[w + i] = bytes[s + 2] as number;
      scratch[2 * w + i] = bytes[s + 1] as number;
      scratch[3 * w + i] = bytes[s] as number;
    }
    for (let k = n - 1; k > 0; k--) scratch[k] = ((scratch[k] as number) - (scratch[k - 1] as number)) & 0xff;
    bytes.set(scratch.subarray(0, n), base);
  }
}

/**
 * Writes a single-band Float32 GeoTIFF. The CRS must have an EPSG code
 * (InputError otherwise). Resolves when the file is completely written.
 */
export async function writeGeoTiff(path: string, options: GeoTiffWriteOptions): Promise<void> {
  const { width, height, data, transform: t, crs, noData } = options;
  if (endianness() !== 'LE') throw new Error('the GeoTIFF writer supports little-endian hosts only');
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
    throw new Error(`GeoTIFF size must be positive integers, got ${width} × ${height}`);
  }
  if (data.length !== width * height) {
    throw new Error(`GeoTIFF data has ${data.length} cells; expected ${width} × ${height} = ${width * height}`);
  }
  if (crs.epsg === null) {
    throw new InputError(
      `cannot write "${path}": its CRS (${crs.name}) has no EPSG code; give the DEM's CRS as --dem-crs EPSG:NNNN`,
    );
  }
  const tiled = (options.layout ?? 'tiled') === 'tiled';
  const compress = (options.compression ?? 'deflate') === 'deflate';
  // TIFF readers apply a predictor only to compressed data.
  const predictor = compress ? (options.predictor ?? 3) : 1;
  const level = options.level ?? 6;
  const blockW = tiled ? (options.blockSize ?? 256) : width;
  if (tiled && (blockW <= 0 || blockW % 16 !== 0)) throw new Error(`tile size ${blockW} is not a positive multiple of 16`);
  const blockH = tiled ? blockW : Math.max(1, Math.min(height, Math.floor(262144 / (width * 4))));
  const across = tiled ? Math.ceil(width / blockW) : 1;
  const down = Math.ceil(height / blockH);
  const nBlocks = across * down;

  // Encode blocks; a few deflates run at once on the libuv thread pool.
  const blocks: Buffer[] = new Array<Buffer>(nBlocks);
  const pending = new Set<Promise<void>>();
  const scratch = new Uint8Array(blockW * 4);
  for (let b = 0; b < nBlocks; b++) {
    const bx = (b % across) * blockW;
    const by = Math.floor(b / across) * blockH;
    const rows = tiled ? blockH : Math.min(blockH, height - by);
    const cols = Math.min(blockW, width - bx);
    const block = new Float32Array(blockW * rows);
    for (let r = 0; r < rows && by + r < height; r++) {
      const src = (by + r) * width + bx;
      block.set(data.subarray(src, src + cols), r * blockW);
    }
    predict(block, blockW, rows, predictor, scratch);
    const raw = Buffer.from(block.buffer, block.byteOffset, block.byteLength);
    if (!compress) {
      blocks[b] = raw;
      continue;
    }
    const p: Promise<void> = deflate(raw, { level }).then((out) => {
      blocks[b] = out;
      pending.delete(p);
    });
    pending.add(p);
    if (pending.size >= 4) await Promise.race(pending);
  }
  await Promise.all(pending);

  const byteCounts = blocks.map((x) => x.length);
  const entries: Entry[] = [
    longs(256, [width]),
    longs(257, [height]),
    shorts(258, [32]),
    shorts(259, [compress ? 8 : 1]),
    shorts(262, [1]),
    shorts(277, [1]),
    shorts(284, [1]),
    shorts(339, [3]),
    doubles(33550, [t.dx, -t.dy, 0]),
    doubles(33922, [0, 0, 0, t.x0, t.y0, 0]),
    shorts(34735, geoKeyDirectory(crs, options.zUnit)),
  ];
  if (predictor !== 1) entries.push(shorts(317, [predictor]));
  if (noData !== null) entries.push(ascii(42113, noDataText(noData)));
  const offsetsTag = tiled ? 324 : 273;
  entries.push(longs(offsetsTag, new Array<number>(nBlocks).fill(0)), longs(tiled ? 325 : 279, byteCounts));
  if (tiled) entries.push(longs(322, [blockW]), longs(323, [blockH]));
  else entries.push(longs(278, [blockH]));
  entries.sort((a, b) => a.tag - b.tag);

  // Layout: header(8) | IFD | long values | blocks.
  const ifdSize = 2 + 12 * entries.length + 4;
  let cursor = 8 + ifdSize;
  const valueOffsets = entries.map((e) => {
    if (e.bytes.length <= 4) return -1;
    const at = cursor;
    cursor += e.bytes.length + (e.bytes.length % 2);
    return at;
  });
  const dataStart = cursor;
  const offsets = new Array<number>(nBlocks);
  let pos = dataStart;
  for (let b = 0; b < nBlocks; b++) {
    offsets[b] = pos;
    pos += byteCounts[b] as number;
  }
  if (pos > 0xffffffff) throw new Error(`GeoTIFF "${path}" would exceed 4 GiB; BigTIFF is not supported`);
  const offsetsEntry = entries.find((e) => e.tag === offsetsTag) as Entry;
  offsetsEntry.bytes = longs(offsetsTag, offsets).bytes;

  const head = Buffer.alloc(dataStart);
  head.write('II', 0, 'latin1');
  head.writeUInt16LE(42, 2);
  head.writeUInt32LE(8, 4);
  head.writeUInt16LE(entries.length, 8);
  entries.forEach((e, i) => {
    const at = 10 + 12 * i;
    head.writeUInt16LE(e.tag, at);
    head.writeUInt16LE(e.type, at + 2);
    head.writeUInt32LE(e.count, at + 4);
    const vo = valueOffsets[i] as number;
    if (vo < 0) e.bytes.copy(head, at + 8);
    else {
      head.writeUInt32LE(vo, at + 8);
      e.bytes.copy(head, vo);
    }
    if (e.bytes.length !== e.count * (TYPE_SIZE[e.type] ?? 1)) throw new Error(`bad TIFF entry for tag ${e.tag}`);
  });
  head.writeUInt32LE(0, 8 + ifdSize - 4); // no next IFD

  const fh = await open(path, 'w');
  try {
    await fh.write(head);
    for (let b = 0; b < nBlocks; b += 512) await fh.writev(blocks.slice(b, b + 512));
  } finally {
    await fh.close();
  }
}
