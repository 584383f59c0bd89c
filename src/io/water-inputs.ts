/**
 * The two optional inputs about standing water, read window by window on the
 * DEM's grid:
 *
 * - a water mask (`--water-mask`): a GeoTIFF whose non-zero cells are water
 *   (NoData is dry), or GeoJSON polygons of water (RFC 7946 lon/lat, or the
 *   EPSG code of a GeoJSON 2008 `crs` member). Polygons are burnt at cell
 *   centres (grid/rasterise-polygon.ts); a raster mask is sampled at the DEM's
 *   cell centres, nearest cell.
 * - a bed DEM (`--bed-dem`): a DEM from before the dams, from a drained year,
 *   or a surveyed bathymetry grid, in metres after its own vertical unit.
 *   On the DEM's grid it is read as is; on another grid it is interpolated
 *   bilinearly at the DEM's cell centres from the four bed cells around each
 *   (the nearest bed cell where one of the four is NoData).
 *
 * A raster in another CRS is sampled the same way, each DEM cell centre
 * carried into the raster's CRS (proj4, io/crs.ts makeTransform): the
 * horizontal positions are converted, the elevations are not (the bed DEM
 * must share the DEM's vertical datum; a datum-offset check on the pond's dry
 * ground warns otherwise). Where the conversion would need a datum grid
 * pondage does not ship, the raster is refused with the gdalwarp command that
 * puts it on the DEM's grid.
 */
import { readFile } from 'node:fs/promises';
import { extname } from 'node:path';
import { InputError, type Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import { rasterisePolygons, type AreaFeature, type PolygonCoords } from '../grid/rasterise-polygon.js';
import { colToX, rowToY, windowTransform, xToCol, yToRow } from '../grid/transform.js';
import type { InputRecord } from '../pipeline/result.js';
import type { WaterWindow, WaterWindowSource } from '../pipeline/water-stage.js';
import type { CellBox } from '../pipeline/windows.js';
import type { LinearUnit } from '../units.js';
import { WGS84, cellMetrics, makeTransform, parseCrsText, type Crs } from './crs.js';
import { openDem, type DemSource } from './dem.js';
import { sha256File } from './hash.js';

/** Paths as the user gave them. */
export interface WaterInputOptions {
  maskPath?: string | undefined;
  bedDemPath?: string | undefined;
  /** Vertical unit for the bed DEM when `--z-units` was given (it applies to both DEMs). */
  zUnit?: LinearUnit | undefined;
}

/** The opened inputs: a window source for the estimate, plus what summary.json records. */
export interface WaterInputs extends WaterWindowSource {
  readonly inputs: InputRecord[];
  readonly assumptions: string[];
  close(): Promise<void>;
}

/** Opens the water mask and the bed DEM (either may be absent); null when neither was given. */
export async function openWaterInputs(dem: DemSource, options: WaterInputOptions): Promise<WaterInputs | null> {
  if (!options.maskPath && !options.bedDemPath) return null;
  const inputs: InputRecord[] = [];
  const assumptions: string[] = [];
  let bed: RasterOnDem | null = null;
  let mask: MaskSource | null = null;
  try {
    if (options.bedDemPath) {
      const src = await openDem([options.bedDemPath], options.zUnit ? { zUnit: options.zUnit } : {}).catch((e: unknown) => {
        throw e instanceof InputError ? new InputError(`bed DEM (--bed-dem): ${e.message}`) : e;
      });
      bed = new RasterOnDem(src, dem, '--bed-dem', 'bilinear');
      inputs.push({ role: 'bed-dem', path: options.bedDemPath, sha256: await sha256File(options.bedDemPath) });
      assumptions.push(
        `Bed DEM ${options.bedDemPath}: elevations in ${src.zUnit === 'metre' ? 'metres' : src.zUnit} (${src.zUnitSource}), ` +
          (bed.aligned
            ? 'on the DEM\'s grid; '
            : bed.toSource
              ? `in ${crsLabel(src.crs)}, interpolated bilinearly at the DEM's cell centres carried into that CRS (positions converted, elevations not); `
              : 'interpolated bilinearly to the DEM\'s cell centres; ') +
          'used as the bed under today\'s water where it has data. It must share the DEM\'s vertical datum.',
      );
    }
    if (options.maskPath) {
      mask = await openMask(options.maskPath, dem);
      inputs.push({ role: 'water-mask', path: options.maskPath, sha256: await sha256File(options.maskPath) });
      assumptions.push(`Water surfaces come from the water mask ${options.maskPath} (${mask.describe}), not from the DEM.`);
    }
  } catch (e) {
    await bed?.close();
    await mask?.close();
    throw e;
  }
  const bedSource = bed;
  const maskSource = mask;
  return {
    hasMask: maskSource !== null,
    hasBed: bedSource !== null,
    inputs,
    assumptions,
    async readWindow(box: CellBox): Promise<WaterWindow> {
      return {
        maskLabels: maskSource ? await maskSource.labels(box) : null,
        bedZ: bedSource ? await bedSource.read(box) : null,
      };
    },
    unusedMaskWarnings(used: ReadonlySet<number>): Warning[] {
      return maskSource ? maskSource.unused(used) : [];
    },
    async close(): Promise<void> {
      await bedSource?.close();
      await maskSource?.close();
    },
  };
}

const sameCrs = (a: Crs, b: Crs): boolean => (a.epsg !== null && b.epsg !== null ? a.epsg === b.epsg : a.proj4 === b.proj4);
const crsLabel = (c: Crs): string => (c.epsg !== null ? `EPSG:${c.epsg}` : c.name);

/** A raster read on the DEM's grid: directly when aligned, else resampled at the DEM's cell centres (carried into the raster's CRS when it has another). */
class RasterOnDem {
  readonly aligned: boolean;
  /** DEM coordinates to the raster's CRS, or null when they share one. */
  readonly toSource: ((x: number, y: number) => [number, number]) | null;
  private readonly colOffset: number;
  private readonly rowOffset: number;

  constructor(
    private readonly src: DemSource,
    private readonly dem: DemSource,
    flag: string,
    private readonly method: 'bilinear' | 'nearest',
  ) {
    const path = src.files[0] ?? flag;
    this.toSource = null;
    if (!sameCrs(src.crs, dem.crs)) {
      try {
        this.toSource = makeTransform(dem.crs, src.crs);
        this.toSource(dem.transform.x0, dem.transform.y0);
      } catch (e) {
        const d = dem.transform;
        throw new InputError(
          `${flag} file "${path}" is in ${crsLabel(src.crs)} and the DEM in ${crsLabel(dem.crs)}, and pondage cannot convert between them here (${(e as Error).message.split(';')[0]}); put it on the DEM's grid first: ` +
            `gdalwarp -t_srs ${dem.crs.epsg !== null ? `EPSG:${dem.crs.epsg}` : '"<the DEM CRS>"'} -tr ${d.dx} ${-d.dy} -tap -r ${method} "${path}" on-dem-grid.tif`,
        );
      }
      this.aligned = false;
      this.colOffset = 0;
      this.rowOffset = 0;
      return;
    }
    const s = src.transform;
    const d = dem.transform;
    const relTol = 1e-9;
    const col = (s.x0 - d.x0) / d.dx;
    const row = (s.y0 - d.y0) / d.dy;
    this.aligned =
      Math.abs(s.dx - d.dx) <= relTol * Math.abs(d.dx) &&
      Math.abs(s.dy - d.dy) <= relTol * Math.abs(d.dy) &&
      Math.abs(col - Math.round(col)) < 1e-6 &&
      Math.abs(row - Math.round(row)) < 1e-6;
    this.colOffset = Math.round(col);
    this.rowOffset = Math.round(row);
  }

  /** The raster's values (metres; NaN for NoData or outside it) on DEM window `box`. */
  async read(box: CellBox): Promise<Float32Array> {
    const w = box.col1 - box.col0;
    const h = box.row1 - box.row0;
    const out = new Float32Array(w * h).fill(NaN);
    if (this.aligned) {
      // DEM cell (c, r) is source cell (c − colOffset, r − rowOffset).
      const c0 = box.col0 - this.colOffset;
      const r0 = box.row0 - this.rowOffset;
      const g = await this.src.readWindow(c0, r0, w, h);
      copyGrid(g, out, w, g.colOffset - c0, g.rowOffset - r0);
      return out;
    }
    if (this.toSource) return this.readConverted(box, out);
    // Source cells covering the window's cell centres, one cell of margin.
    const d = windowTransform(this.dem.transform, box.col0, box.row0);
    const s = this.src.transform;
    const fx0 = xToCol(s, colToX(d, 0.5)) - 0.5;
    const fx1 = xToCol(s, colToX(d, w - 0.5)) - 0.5;
    const fy0 = yToRow(s, rowToY(d, 0.5)) - 0.5;
    const fy1 = yToRow(s, rowToY(d, h - 0.5)) - 0.5;
    const sc0 = Math.floor(Math.min(fx0, fx1)) - 1;
    const sr0 = Math.floor(Math.min(fy0, fy1)) - 1;
    const sc1 = Math.ceil(Math.max(fx0, fx1)) + 2;
    const sr1 = Math.ceil(Math.max(fy0, fy1)) + 2;
    const g = await this.src.readWindow(sc0, sr0, sc1 - sc0, sr1 - sr0);
    if (g.width === 0 || g.height === 0) return out;
    const gw = g.width;
    const gz = g.z;
    for (let r = 0; r < h; r++) {
      const fy = yToRow(s, rowToY(d, r + 0.5)) - 0.5 - g.rowOffset;
      for (let c = 0; c < w; c++) {
        const fx = xToCol(s, colToX(d, c + 0.5)) - 0.5 - g.colOffset;
        out[r * w + c] = this.method === 'nearest' ? nearestAt(gz, gw, g.height, fx, fy) : bilinearAt(gz, gw, g.height, fx, fy);
      }
    }
    return out;
  }

  /** `read` for a raster in another CRS: each window cell centre carried into it, then sampled. */
  private async readConverted(box: CellBox, out: Float32Array): Promise<Float32Array> {
    const w = box.col1 - box.col0;
    const h = box.row1 - box.row0;
    const d = windowTransform(this.dem.transform, box.col0, box.row0);
    const s = this.src.transform;
    const toSource = this.toSource!;
    // Fractional source cell positions (centre-based) of every window cell centre.
    const fxs = new Float64Array(w * h);
    const fys = new Float64Array(w * h);
    let minX = Infinity;
    let maxX = -Infinity;
    let minY = Infinity;
    let maxY = -Infinity;
    for (let r = 0; r < h; r++) {
      const y = rowToY(d, r + 0.5);
      for (let c = 0; c < w; c++) {
        const [xs, ys] = toSource(colToX(d, c + 0.5), y);
        const fx = xToCol(s, xs) - 0.5;
        const fy = yToRow(s, ys) - 0.5;
        fxs[r * w + c] = fx;
        fys[r * w + c] = fy;
        if (fx < minX) minX = fx;
        if (fx > maxX) maxX = fx;
        if (fy < minY) minY = fy;
        if (fy > maxY) maxY = fy;
      }
    }
    if (!(minX <= maxX && minY <= maxY)) return out;
    const sc0 = Math.max(0, Math.floor(minX) - 1);
    const sr0 = Math.max(0, Math.floor(minY) - 1);
    const sc1 = Math.min(this.src.width, Math.ceil(maxX) + 2);
    const sr1 = Math.min(this.src.height, Math.ceil(maxY) + 2);
    if (sc1 <= sc0 || sr1 <= sr0) return out;
    const g = await this.src.readWindow(sc0, sr0, sc1 - sc0, sr1 - sr0);
    if (g.width === 0 || g.height === 0) return out;
    for (let i = 0; i < w * h; i++) {
      const fx = fxs[i]! - g.colOffset;
      const fy = fys[i]! - g.rowOffset;
      out[i] = this.method === 'nearest' ? nearestAt(g.z, g.width, g.height, fx, fy) : bilinearAt(g.z, g.width, g.height, fx, fy);
    }
    return out;
  }

  close(): Promise<void> {
    return this.src.close();
  }
}

/** Copies grid values into a w-wide window at (dc, dr). */
function copyGrid(g: Grid, out: Float32Array, w: number, dc: number, dr: number): void {
  for (let r = 0; r < g.height; r++) {
    const base = (r + dr) * w + dc;
    for (let c = 0; c < g.width; c++) out[base + c] = g.z[r * g.width + c]!;
  }
}

/** Value of the cell whose centre is nearest to fractional centre coordinates (fx, fy); NaN off the grid. */
function nearestAt(z: Float32Array, w: number, h: number, fx: number, fy: number): number {
  const c = Math.round(fx);
  const r = Math.round(fy);
  return c >= 0 && c < w && r >= 0 && r < h ? z[r * w + c]! : NaN;
}

/** Bilinear interpolation between the four cell centres around (fx, fy); the nearest cell's value when one of them is NoData. */
function bilinearAt(z: Float32Array, w: number, h: number, fx: number, fy: number): number {
  const c = Math.floor(fx);
  const r = Math.floor(fy);
  if (c < 0 || r < 0 || c + 1 >= w || r + 1 >= h) return nearestAt(z, w, h, fx, fy);
  const tx = fx - c;
  const ty = fy - r;
  const a = z[r * w + c]!;
  const b = z[r * w + c + 1]!;
  const cc = z[(r + 1) * w + c]!;
  const dd = z[(r + 1) * w + c + 1]!;
  if (a !== a || b !== b || cc !== cc || dd !== dd) return nearestAt(z, w, h, fx, fy);
  return (a * (1 - tx) + b * tx) * (1 - ty) + (cc * (1 - tx) + dd * tx) * ty;
}

/** A water mask as labels on DEM windows. */
interface MaskSource {
  readonly describe: string;
  /** Labels on window `box`: 0 dry, else a label unique to the water body (raster) or polygon feature. */
  labels(box: CellBox): Promise<Int32Array>;
  unused(used: ReadonlySet<number>): Warning[];
  close(): Promise<void>;
}

async function openMask(path: string, dem: DemSource): Promise<MaskSource> {
  const ext = extname(path).toLowerCase();
  if (ext === '.tif' || ext === '.tiff') return openRasterMask(path, dem);
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(`cannot read the water mask "${path}" (${(e as Error).message}); give a GeoTIFF or a GeoJSON file of water polygons`);
  }
  if (!/^\s*[{[]/.test(text.replace(/^\ufeff/, ''))) {
    throw new InputError(`water mask "${path}" is neither a GeoTIFF (.tif) nor GeoJSON; give a raster whose non-zero cells are water, or water polygons`);
  }
  return polygonMask(path, text, dem);
}

/** A GeoTIFF mask: non-zero, non-NoData cells are water; water bodies are its 8-connected components, window by window. */
async function openRasterMask(path: string, dem: DemSource): Promise<MaskSource> {
  const src = await openDem([path]).catch((e: unknown) => {
    throw e instanceof InputError ? new InputError(`water mask (--water-mask): ${e.message}`) : e;
  });
  const raster = new RasterOnDem(src, dem, '--water-mask', 'nearest');
  let nextLabel = 1;
  const bodies: { areaM2: number }[] = [];
  return {
    describe: `raster, non-zero cells are water${raster.aligned ? '' : `, sampled at the DEM's cell centres (nearest cell${raster.toSource ? `, carried into ${crsLabel(src.crs)}` : ''})`}`,
    async labels(box: CellBox): Promise<Int32Array> {
      const v = await raster.read(box);
      const w = box.col1 - box.col0;
      const h = box.row1 - box.row0;
      const labels = new Int32Array(w * h);
      const stack = new Int32Array(w * h);
      const areaM2 = cellMetrics(dem.crs, dem.transform, box.row0, h).cellAreaM2;
      for (let i = 0; i < w * h; i++) {
        const x = v[i]!;
        if (labels[i] !== 0 || x !== x || x === 0) continue;
        const label = nextLabel++;
        let area = 0;
        let top = 0;
        stack[top++] = i;
        labels[i] = label;
        while (top > 0) {
          const q = stack[--top]!;
          const qc = q % w;
          const qr = (q - qc) / w;
          area += areaM2[qr]!;
          for (let dr = -1; dr <= 1; dr++) {
            const rr = qr + dr;
            if (rr < 0 || rr >= h) continue;
            for (let dc = -1; dc <= 1; dc++) {
              const cc = qc + dc;
              if (cc < 0 || cc >= w) continue;
              const p = rr * w + cc;
              const y = v[p]!;
              if (labels[p] !== 0 || y !== y || y === 0) continue;
              labels[p] = label;
              stack[top++] = p;
            }
          }
        }
        bodies[label] = { areaM2: area };
      }
      return labels;
    },
    unused(used: ReadonlySet<number>): Warning[] {
      let count = 0;
      let area = 0;
      for (let label = 1; label < bodies.length; label++) {
        const b = bodies[label];
        if (!b || used.has(label)) continue;
        count++;
        area += b.areaM2;
      }
      if (count === 0) return [];
      return [
        {
          code: 'water-mask-unused',
          message:
            `${count} water bodies of the water mask "${path}" near the dams (${area.toFixed(0)} m²) touch no pond behind a dam counted in the totals; ` +
            'they are not counted. Check that the mask is on the DEM\'s grid, or that the dams holding them are in the inventory',
        },
      ];
    },
    close: () => raster.close(),
  };
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** GeoJSON water polygons, reprojected once into the DEM's CRS and burnt per window. */
function polygonMask(path: string, text: string, dem: DemSource): MaskSource {
  let root: unknown;
  try {
    root = JSON.parse(text.replace(/^\ufeff/, ''));
  } catch (e) {
    throw new InputError(`water mask "${path}" is not valid JSON (${(e as Error).message}); give a GeoJSON FeatureCollection of water polygons`);
  }
  if (!isRecord(root)) throw new InputError(`water mask "${path}" is not a GeoJSON object; give a FeatureCollection of water polygons`);
  let from: Crs = WGS84;
  const crsMember = root['crs'];
  if (isRecord(crsMember) && isRecord(crsMember['properties']) && typeof crsMember['properties']['name'] === 'string') {
    const m = /EPSG:{1,2}(\d+)$/i.exec(crsMember['properties']['name'].trim());
    if (m) from = parseCrsText(`EPSG:${m[1]}`, `the "crs" member of water mask "${path}"`);
  }
  const toDem = makeTransform(from, dem.crs);
  const rawFeatures: unknown[] =
    root['type'] === 'FeatureCollection' && Array.isArray(root['features'])
      ? root['features']
      : root['type'] === 'Feature'
        ? [root]
        : [{ type: 'Feature', properties: {}, geometry: root }];
  const features: AreaFeature[] = [];
  const skipped: string[] = [];
  rawFeatures.forEach((f, k) => {
    const props = isRecord(f) && isRecord(f['properties']) ? f['properties'] : {};
    const id = typeof props['id'] === 'string' || typeof props['id'] === 'number' ? String(props['id']) : `feature ${k + 1}`;
    const g = isRecord(f) ? f['geometry'] : null;
    const polygons = isRecord(g) ? polygonsOf(g, toDem) : null;
    if (polygons === null || polygons.length === 0) skipped.push(id);
    else features.push({ id, polygons });
  });
  if (features.length === 0) {
    throw new InputError(`water mask "${path}" holds no Polygon or MultiPolygon features; draw the water as polygons (lon/lat, RFC 7946)`);
  }
  const notes = new Set<string>();
  return {
    describe: `${features.length} polygon feature(s), ${from === WGS84 ? 'WGS 84 lon/lat' : crsLabel(from)}${skipped.length > 0 ? `; ${skipped.length} feature(s) without polygons ignored` : ''}`,
    async labels(box: CellBox): Promise<Int32Array> {
      const w = box.col1 - box.col0;
      const h = box.row1 - box.row0;
      const burnt = rasterisePolygons({ width: w, height: h, transform: windowTransform(dem.transform, box.col0, box.row0) }, features);
      for (const wn of burnt.warnings) if (wn.code !== 'polygon-outside-grid') notes.add(`water mask "${path}": ${wn.message}`);
      return burnt.labels;
    },
    unused(used: ReadonlySet<number>): Warning[] {
      const out: Warning[] = [...notes].map((message) => ({ code: 'water-mask-polygon', message }));
      const unusedIds = features.filter((_, k) => !used.has(k + 1)).map((f) => f.id);
      if (unusedIds.length > 0) {
        const shown = unusedIds.slice(0, 10).map((id) => `'${id}'`).join(', ');
        out.push({
          code: 'water-mask-unused',
          message:
            `${unusedIds.length} of ${features.length} water-mask polygons (${shown}${unusedIds.length > 10 ? ', …' : ''}) of "${path}" touch no pond behind a dam counted in the totals; ` +
            'they are not counted. Check the mask\'s coordinates (RFC 7946 lon/lat), or that the dams holding them are in the inventory',
        });
      }
      return out;
    },
    close: () => Promise.resolve(),
  };
}

/** Polygon rings of a GeoJSON Polygon or MultiPolygon in the DEM's CRS; null for other geometries. */
function polygonsOf(g: Record<string, unknown>, toDem: (x: number, y: number) => [number, number]): PolygonCoords[] | null {
  const ring = (r: unknown): [number, number][] =>
    Array.isArray(r)
      ? r.flatMap((p) => (Array.isArray(p) && typeof p[0] === 'number' && typeof p[1] === 'number' ? [toDem(p[0], p[1])] : []))
      : [];
  const polygon = (p: unknown): PolygonCoords => (Array.isArray(p) ? p.map(ring).filter((r) => r.length >= 3) : []);
  if (g['type'] === 'Polygon') return [polygon(g['coordinates'])].filter((p) => p.length > 0);
  if (g['type'] === 'MultiPolygon' && Array.isArray(g['coordinates'])) return g['coordinates'].map(polygon).filter((p) => p.length > 0);
  return null;
}
