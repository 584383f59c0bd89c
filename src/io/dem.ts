/**
 * A DEM as one or more GeoTIFF tiles that form a mosaic, read window by window.
 */
import { inflateSync } from 'node:zlib';
import { BaseDecoder, addDecoder, fromFile, type GeoTIFF, type GeoTIFFImage } from 'geotiff';
import type { Grid } from '../grid/grid.js';
import { windowTransform, type GeoTransform } from '../grid/transform.js';
import { InputError } from '../errors.js';
import { metresPer, type LinearUnit } from '../units.js';
import { cellMetrics, crsFromEpsg, verticalUnitFromEpsg, type Crs } from './crs.js';

export interface DemSource {
  /** Full mosaic size in cells. */
  readonly width: number;
  readonly height: number;
  /** Transform of the full mosaic (pixel corner, CRS units). */
  readonly transform: GeoTransform;
  readonly crs: Crs;
  /** Vertical unit of the stored values, and how it was decided. */
  readonly zUnit: LinearUnit;
  readonly zUnitSource: 'geokey' | 'assumed-horizontal' | 'assumed-metre' | 'option';
  /** Paths of the tiles, in the order given. */
  readonly files: readonly string[];
  /**
   * Reads cells [col0, col0+cols) × [row0, row0+rows) of the mosaic, clipped to it,
   * as a Grid in metres with NaN for NoData and for gaps between tiles.
   */
  readWindow(col0: number, row0: number, cols: number, rows: number): Promise<Grid>;
  /** Releases decoders and file handles. */
  close(): Promise<void>;
}

/**
 * DEFLATE through node:zlib (faster than the bundled pure-JS inflate). The
 * floating-point predictor (TIFF Technical Note 3, predictor 3) of 32-bit
 * samples, which GDAL writes by default for Float32 DEMs, is undone here in
 * one typed pass per row; geotiff's generic path copies each row and moves
 * bytes one at a time, which made it the slowest step of reading a large DEM.
 * Other predictors go through geotiff's own code.
 */
class ZlibDecoder extends BaseDecoder {
  override decodeBlock(buffer: ArrayBufferLike): ArrayBufferLike {
    const out = inflateSync(new Uint8Array(buffer));
    if (out.byteOffset === 0 && out.byteLength === out.buffer.byteLength) return out.buffer;
    return out.buffer.slice(out.byteOffset, out.byteOffset + out.byteLength);
  }

  override async decode(buffer: ArrayBufferLike): Promise<ArrayBufferLike> {
    const p = this.parameters as { tileWidth: number; tileHeight: number; predictor: number; bitsPerSample: number | ArrayLike<number>; planarConfiguration: number };
    const bits = typeof p.bitsPerSample === 'number' ? [p.bitsPerSample] : Array.from(p.bitsPerSample);
    if (p.predictor !== 3 || bits.length !== 1 || bits[0] !== 32 || !LITTLE_ENDIAN_MACHINE) return super.decode(buffer);
    return undoFloatPredictor32(new Uint8Array(this.decodeBlock(buffer)), p.tileWidth, p.tileHeight);
  }
}

const LITTLE_ENDIAN_MACHINE = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;

/**
 * Undoes predictor 3 for one-sample 32-bit rows: byte-wise running sums over
 * the row, then the four byte planes (most significant first) re-interleaved
 * into samples, giving the bytes in the file's own order, as geotiff expects.
 */
export function undoFloatPredictor32(bytes: Uint8Array, width: number, height: number): ArrayBuffer {
  const rowBytes = width * 4;
  const rows = Math.min(height, Math.floor(bytes.length / rowBytes));
  const out = new ArrayBuffer(width * height * 4);
  const out32 = new Uint32Array(out);
  for (let r = 0; r < rows; r++) {
    const base = r * rowBytes;
    for (let k = base + 1; k < base + rowBytes; k++) bytes[k] = (bytes[k]! + bytes[k - 1]!) & 0xff;
    const o = r * width;
    for (let i = 0; i < width; i++) {
      out32[o + i] = (bytes[base + i]! << 24) | (bytes[base + width + i]! << 16) | (bytes[base + 2 * width + i]! << 8) | bytes[base + 3 * width + i]!;
    }
  }
  return out;
}
addDecoder([8, 32946], () => Promise.resolve(ZlibDecoder), undefined, false);

/** Sample types pondage reads (band 1). */
export type DemSampleType = 'UInt8' | 'Int8' | 'UInt16' | 'Int16' | 'UInt32' | 'Int32' | 'Float32' | 'Float64';

const SAMPLE_TYPES: Record<string, DemSampleType> = {
  '1/8': 'UInt8',
  '2/8': 'Int8',
  '1/16': 'UInt16',
  '2/16': 'Int16',
  '1/32': 'UInt32',
  '2/32': 'Int32',
  '3/32': 'Float32',
  '3/64': 'Float64',
};

/** EPSG unit-of-measure codes used by VerticalUnitsGeoKey. */
const EPSG_UNITS: Record<number, LinearUnit> = { 9001: 'metre', 9002: 'foot', 9003: 'us-survey-foot' };

const GEOKEY = {
  modelType: 1024,
  rasterType: 1025,
  geographicType: 2048,
  projectedType: 3072,
  projLinearUnits: 3076,
  verticalType: 4096,
  verticalUnits: 4099,
} as const;
const USER_DEFINED = 32767;

/** One opened tile, with everything checked and parsed. */
interface Tile {
  path: string;
  tiff: GeoTIFF;
  image: GeoTIFFImage;
  width: number;
  height: number;
  transform: GeoTransform;
  crs: Crs;
  zUnit: LinearUnit;
  zUnitSource: DemSource['zUnitSource'];
  noData: number | null;
  sampleType: DemSampleType;
  /** Position of the tile's cell (0,0) in the mosaic. */
  colOffset: number;
  rowOffset: number;
}

/** Facts kept for describeDem, not part of the DemSource shape. */
const facts = new WeakMap<DemSource, { noData: (number | null)[]; sampleTypes: DemSampleType[] }>();

function toNumbers(v: unknown): number[] | null {
  if (v === undefined || v === null) return null;
  if (typeof v === 'number') return [v];
  if (Array.isArray(v) || ArrayBuffer.isView(v)) return Array.from(v as ArrayLike<unknown>, (x) => Number(x));
  return null;
}

/** Short-valued GeoKeys (stored in the directory itself), by key id. */
function parseGeoKeys(dir: number[] | null): Map<number, number> {
  const keys = new Map<number, number>();
  if (dir === null || dir.length < 4) return keys;
  const count = dir[3] ?? 0;
  for (let k = 0; k < count; k++) {
    const base = 4 + 4 * k;
    const id = dir[base];
    const location = dir[base + 1];
    const value = dir[base + 3];
    if (id !== undefined && location === 0 && value !== undefined) keys.set(id, value);
  }
  return keys;
}

async function tagNumbers(image: GeoTIFFImage, tag: number): Promise<number[] | null> {
  if (!image.fileDirectory.hasTag(tag)) return null;
  return toNumbers(await image.fileDirectory.loadValue(tag));
}

/** Pixel-corner transform from ModelPixelScale + ModelTiepoint or ModelTransformation. */
async function readTransform(path: string, image: GeoTIFFImage, keys: Map<number, number>): Promise<GeoTransform> {
  const scale = await tagNumbers(image, 33550);
  const tie = await tagNumbers(image, 33922);
  const matrix = await tagNumbers(image, 34264);
  let t: { x0: number; y0: number; dx: number; dy: number };
  if (matrix !== null && matrix.length >= 16) {
    const [a = 0, b = 0, , d = 0, e = 0, f = 0, , h = 0] = matrix;
    if (b !== 0 || e !== 0) {
      throw new InputError(
        `DEM file "${path}" has a rotated or sheared geotransform; pondage needs a north-up grid: warp it first (gdalwarp without -to/-order options makes one)`,
      );
    }
    t = { x0: d, y0: h, dx: a, dy: f };
  } else if (scale !== null && tie !== null && tie.length === 6 && scale.length >= 2) {
    const [i = 0, j = 0, , x = 0, y = 0] = tie;
    const sx = scale[0] ?? 0;
    const sy = scale[1] ?? 0;
    t = { x0: x - i * sx, y0: y + j * sy, dx: sx, dy: -sy };
  } else {
    throw new InputError(
      `DEM file "${path}" has no georeferencing (no ModelPixelScale/ModelTiepoint or ModelTransformation tags); ` +
        'give a georeferenced GeoTIFF (gdal_translate -a_ullr ... -a_srs EPSG:NNNN adds it)',
    );
  }
  if (!(t.dx > 0) || !(t.dy < 0) || !Number.isFinite(t.x0) || !Number.isFinite(t.y0)) {
    throw new InputError(
      `DEM file "${path}" is not a north-up grid (cell size ${t.dx} × ${t.dy}); warp it to north-up with gdalwarp`,
    );
  }
  if (keys.get(GEOKEY.rasterType) === 2) {
    // PixelIsPoint: the tie point is the centre of pixel (0,0); move to its corner.
    t = { x0: t.x0 - t.dx / 2, y0: t.y0 - t.dy / 2, dx: t.dx, dy: t.dy };
  }
  return t;
}

function crsFromKeys(path: string, keys: Map<number, number>): Crs {
  const model = keys.get(GEOKEY.modelType);
  const code = model === 2 ? keys.get(GEOKEY.geographicType) : keys.get(GEOKEY.projectedType);
  const fix = `give the DEM's CRS with --dem-crs EPSG:NNNN`;
  if (model !== 1 && model !== 2) {
    throw new InputError(`DEM file "${path}" has no projected or geographic CRS in its GeoKeys; ${fix}`);
  }
  if (code === undefined || code === USER_DEFINED) {
    throw new InputError(`DEM file "${path}" has a user-defined CRS with no EPSG code; ${fix}`);
  }
  let crs: Crs;
  try {
    crs = crsFromEpsg(code);
  } catch (e) {
    if (e instanceof InputError) throw new InputError(`DEM file "${path}": ${e.message}`);
    throw e;
  }
  const unitCode = keys.get(GEOKEY.projLinearUnits);
  if (model === 1 && unitCode !== undefined && EPSG_UNITS[unitCode] !== undefined && EPSG_UNITS[unitCode] !== crs.linearUnit) {
    throw new InputError(
      `DEM file "${path}" says EPSG:${code} (${crs.linearUnit ?? '?'}) but its ProjLinearUnitsGeoKey says ${EPSG_UNITS[unitCode]}; ${fix} naming the CRS that matches the coordinates`,
    );
  }
  return crs;
}

function zUnitFromKeys(path: string, keys: Map<number, number>): LinearUnit | null {
  const unitCode = keys.get(GEOKEY.verticalUnits);
  if (unitCode !== undefined && unitCode !== USER_DEFINED) {
    const unit = EPSG_UNITS[unitCode];
    if (unit === undefined) {
      throw new InputError(
        `DEM file "${path}" stores elevations in unit code ${unitCode}, which pondage does not support; give the vertical unit with --z-units (m, ft or us-ft)`,
      );
    }
    return unit;
  }
  const vcs = keys.get(GEOKEY.verticalType);
  if (vcs !== undefined && vcs !== USER_DEFINED) return verticalUnitFromEpsg(vcs);
  return null;
}

async function openTile(path: string, options: { crs?: Crs | undefined; zUnit?: LinearUnit | undefined }): Promise<Tile> {
  let tiff: GeoTIFF;
  let image: GeoTIFFImage;
  try {
    tiff = await fromFile(path);
  } catch (e) {
    throw new InputError(`cannot read DEM file "${path}" (${(e as Error).message}); give a GeoTIFF elevation raster`);
  }
  try {
    image = await tiff.getImage(0);
  } catch (e) {
    await tiff.close();
    throw new InputError(`DEM file "${path}" is not a readable GeoTIFF (${(e as Error).message}); give a GeoTIFF elevation raster`);
  }
  try {
    const samples = image.getSamplesPerPixel();
    if (samples !== 1) {
      throw new InputError(
        `DEM file "${path}" has ${samples} bands; pondage reads single-band elevation rasters: extract one with gdal_translate -b 1`,
      );
    }
    const format = (await tagNumbers(image, 339))?.[0] ?? 1;
    const bits = (await tagNumbers(image, 258))?.[0] ?? 1;
    const sampleType = SAMPLE_TYPES[`${format}/${bits}`];
    if (sampleType === undefined) {
      throw new InputError(
        `DEM file "${path}" stores ${bits}-bit samples of format ${format}, which pondage cannot read; convert it with gdal_translate -ot Float32`,
      );
    }
    const keys = parseGeoKeys(await tagNumbers(image, 34735));
    const transform = await readTransform(path, image, keys);
    const crs = options.crs ?? crsFromKeys(path, keys);
    let zUnit: LinearUnit;
    let zUnitSource: DemSource['zUnitSource'];
    const keyUnit = options.zUnit === undefined ? zUnitFromKeys(path, keys) : null;
    if (options.zUnit !== undefined) {
      zUnit = options.zUnit;
      zUnitSource = 'option';
    } else if (keyUnit !== null) {
      zUnit = keyUnit;
      zUnitSource = 'geokey';
    } else if (crs.linearUnit !== null && !crs.geographic) {
      zUnit = crs.linearUnit;
      zUnitSource = 'assumed-horizontal';
    } else {
      zUnit = 'metre';
      zUnitSource = 'assumed-metre';
    }
    return {
      path,
      tiff,
      image,
      width: image.getWidth(),
      height: image.getHeight(),
      transform,
      crs,
      zUnit,
      zUnitSource,
      noData: image.getGDALNoData(),
      sampleType,
      colOffset: 0,
      rowOffset: 0,
    };
  } catch (e) {
    await tiff.close();
    if (e instanceof InputError) throw e;
    throw new InputError(`DEM file "${path}" could not be read (${(e as Error).message}); give a valid GeoTIFF elevation raster`);
  }
}

const sameCrs = (a: Crs, b: Crs): boolean => (a.epsg !== null && b.epsg !== null ? a.epsg === b.epsg : a.proj4 === b.proj4);
const crsLabel = (c: Crs): string => (c.epsg !== null ? `EPSG:${c.epsg} (${c.name})` : c.name);

/** Checks tile `t` against the first tile and sets its offsets in the reference tile's pixel space. */
function placeTile(ref: Tile, t: Tile): void {
  const r = ref.transform;
  const tt = t.transform;
  const relTol = 1e-9;
  if (!sameCrs(ref.crs, t.crs)) {
    throw new InputError(
      `DEM tile "${t.path}" is in ${crsLabel(t.crs)} but "${ref.path}" is in ${crsLabel(ref.crs)}; reproject the tiles to one CRS (gdalwarp -t_srs)`,
    );
  }
  if (Math.abs(tt.dx - r.dx) > relTol * Math.abs(r.dx) || Math.abs(tt.dy - r.dy) > relTol * Math.abs(r.dy)) {
    throw new InputError(
      `DEM tile "${t.path}" has cells of ${tt.dx} × ${-tt.dy} but "${ref.path}" has ${r.dx} × ${-r.dy} (CRS units); resample it to the same cell size (gdalwarp -tr ${r.dx} ${-r.dy} -tap)`,
    );
  }
  const col = (tt.x0 - r.x0) / r.dx;
  const row = (tt.y0 - r.y0) / r.dy;
  const offCol = col - Math.round(col);
  const offRow = row - Math.round(row);
  if (Math.abs(offCol) > 1e-6 || Math.abs(offRow) > 1e-6) {
    const frac = (v: number): string => (v - Math.floor(v)).toFixed(4);
    throw new InputError(
      `DEM tile "${t.path}" is not aligned with the grid of "${ref.path}": its origin is off by ${frac(col)} cell east–west and ${frac(row)} cell north–south; ` +
        `resample it onto the same grid (gdalwarp -tr ${r.dx} ${-r.dy} -tap)`,
    );
  }
  if (t.zUnit !== ref.zUnit) {
    throw new InputError(
      `DEM tile "${t.path}" stores elevations in ${t.zUnit} (${t.zUnitSource}) but "${ref.path}" in ${ref.zUnit} (${ref.zUnitSource}); ` +
        'convert the tiles to one vertical unit or give it with --z-units',
    );
  }
  t.colOffset = Math.round(col);
  t.rowOffset = Math.round(row);
}

/** Copies a tile window into the mosaic window, NoData → left NaN, scaled to metres; fills only cells still NaN. */
function copyInto(
  z: Float32Array,
  zWidth: number,
  dstCol: number,
  dstRow: number,
  src: ArrayLike<number>,
  w: number,
  h: number,
  noData: number,
  scale: number,
): void {
  for (let r = 0; r < h; r++) {
    let s = r * w;
    let d = (dstRow + r) * zWidth + dstCol;
    for (let c = 0; c < w; c++, s++, d++) {
      const v = src[s] as number;
      if (v !== v || v === noData || z[d] === z[d]) continue;
      z[d] = v * scale;
    }
  }
}

/**
 * Opens one GeoTIFF or several tiles of one mosaic (same CRS, same cell size,
 * origins on one grid). Tiles may leave gaps (read as NaN) or overlap (the
 * first tile in `paths` with data wins). `options.crs` replaces the files' CRS;
 * `options.zUnit` replaces their vertical unit. Throws InputError naming the
 * offending file for anything pondage cannot read.
 */
export async function openDem(paths: string[], options: { crs?: Crs; zUnit?: LinearUnit } = {}): Promise<DemSource> {
  if (paths.length === 0) throw new InputError('no DEM file given; pass at least one GeoTIFF with --dem');
  const tiles: Tile[] = [];
  try {
    for (const p of paths) {
      const tile = await openTile(p, options);
      tiles.push(tile);
      const ref = tiles[0] as Tile;
      if (tile !== ref) placeTile(ref, tile);
    }
  } catch (e) {
    await Promise.all(tiles.map((t) => t.tiff.close()));
    throw e;
  }
  const ref = tiles[0] as Tile;
  let minCol = Infinity;
  let minRow = Infinity;
  let maxCol = -Infinity;
  let maxRow = -Infinity;
  for (const t of tiles) {
    minCol = Math.min(minCol, t.colOffset);
    minRow = Math.min(minRow, t.rowOffset);
    maxCol = Math.max(maxCol, t.colOffset + t.width);
    maxRow = Math.max(maxRow, t.rowOffset + t.height);
  }
  for (const t of tiles) {
    t.colOffset -= minCol;
    t.rowOffset -= minRow;
  }
  const width = maxCol - minCol;
  const height = maxRow - minRow;
  const transform = windowTransform(ref.transform, minCol, minRow);
  const crs = ref.crs;
  const scale = metresPer(ref.zUnit);

  const source: DemSource = {
    width,
    height,
    transform,
    crs,
    zUnit: ref.zUnit,
    zUnitSource: ref.zUnitSource,
    files: [...paths],
    async readWindow(col0: number, row0: number, cols: number, rows: number): Promise<Grid> {
      const c0 = Math.min(width, Math.max(0, Math.floor(col0)));
      const r0 = Math.min(height, Math.max(0, Math.floor(row0)));
      const c1 = Math.min(width, Math.max(c0, Math.floor(col0 + cols)));
      const r1 = Math.min(height, Math.max(r0, Math.floor(row0 + rows)));
      const w = c1 - c0;
      const h = r1 - r0;
      const z = new Float32Array(w * h).fill(NaN);
      for (const t of tiles) {
        const tc0 = Math.max(c0, t.colOffset);
        const tr0 = Math.max(r0, t.rowOffset);
        const tc1 = Math.min(c1, t.colOffset + t.width);
        const tr1 = Math.min(r1, t.rowOffset + t.height);
        if (tc1 <= tc0 || tr1 <= tr0) continue;
        const x0 = tc0 - t.colOffset;
        const y0 = tr0 - t.rowOffset;
        const data = await t.image.readRasters({
          window: [x0, y0, x0 + (tc1 - tc0), y0 + (tr1 - tr0)],
          samples: [0],
          interleave: true,
        });
        const nd = t.noData === null ? NaN : t.sampleType === 'Float32' ? Math.fround(t.noData) : t.noData;
        copyInto(z, w, tc0 - c0, tr0 - r0, data, tc1 - tc0, tr1 - tr0, nd, scale);
      }
      const m = cellMetrics(crs, transform, r0, h);
      return {
        width: w,
        height: h,
        transform: windowTransform(transform, c0, r0),
        z,
        cellAreaM2: m.cellAreaM2,
        cellWidthM: m.cellWidthM,
        cellHeightM: m.cellHeightM,
        colOffset: c0,
        rowOffset: r0,
      };
    },
    async close(): Promise<void> {
      await Promise.all(tiles.map((t) => t.tiff.close()));
    },
  };
  facts.set(source, { noData: tiles.map((t) => t.noData), sampleTypes: tiles.map((t) => t.sampleType) });
  return source;
}

/** Facts about a DEM for the run summary. */
export interface DemDescription {
  /** Mosaic size in cells. */
  widthCells: number;
  heightCells: number;
  /** Number of files in the mosaic. */
  fileCount: number;
  /** Cell size in CRS units (degrees for geographic CRSs), both positive. */
  cellSizeX: number;
  cellSizeY: number;
  /** Unit of cellSizeX/Y. */
  crsUnit: LinearUnit | 'degree';
  /** Cell size in metres (at the mosaic's centre row for geographic CRSs). */
  cellWidthM: number;
  cellHeightM: number;
  crsName: string;
  epsg: number | null;
  zUnit: LinearUnit;
  zUnitSource: DemSource['zUnitSource'];
  /** NoData value of the first file, in stored units (null when none is declared). */
  noData: number | null;
  /** NoData value of each file, in the order of `files`. */
  noDataByFile: (number | null)[];
  /** Sample type of each file (null when the source was not opened by openDem). */
  sampleTypes: (DemSampleType | null)[];
}

/** Summarises a DEM source (cheap: reads no cells). */
export function describeDem(src: DemSource): DemDescription {
  const f = facts.get(src);
  const mid = Math.floor(src.height / 2);
  const m = cellMetrics(src.crs, src.transform, mid, 1);
  const noDataByFile = f?.noData ?? src.files.map(() => null);
  return {
    widthCells: src.width,
    heightCells: src.height,
    fileCount: src.files.length,
    cellSizeX: Math.abs(src.transform.dx),
    cellSizeY: Math.abs(src.transform.dy),
    crsUnit: src.crs.geographic || src.crs.linearUnit === null ? 'degree' : src.crs.linearUnit,
    cellWidthM: m.cellWidthM[0] ?? NaN,
    cellHeightM: m.cellHeightM,
    crsName: src.crs.name,
    epsg: src.crs.epsg,
    zUnit: src.zUnit,
    zUnitSource: src.zUnitSource,
    noData: noDataByFile[0] ?? null,
    noDataByFile,
    sampleTypes: f?.sampleTypes ?? src.files.map(() => null),
  };
}
