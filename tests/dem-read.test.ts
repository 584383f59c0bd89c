import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.js';
import { cellMetrics, crsFromEpsg } from '../src/io/crs.js';
import { describeDem, openDem } from '../src/io/dem.js';
import { US_SURVEY_FOOT_M, metresPer } from '../src/units.js';
import { gdalChecksum } from '../fixtures/geotiff/gdal-checksum.js';

// Fixtures and what GDAL reported about them (fixtures/geotiff/make.sh, expect.mjs).
const DIR = fileURLToPath(new URL('../fixtures/geotiff/', import.meta.url));
const fx = (name: string): string => join(DIR, name);

interface Expected {
  readable: boolean;
  size: [number, number];
  dataType: string;
  geoTransform: [number, number, number, number, number, number] | null;
  epsg: number | null;
  areaOrPoint: string | null;
  noData: number | 'NaN' | null;
  zUnit: string | null;
  checksum: number | null;
  values: [number, number, number | 'nan'][];
}
const EXPECTED = JSON.parse(readFileSync(join(DIR, 'expected.json'), 'utf8')) as Record<string, Expected>;
const exp = (name: string): Expected => {
  const e = EXPECTED[name];
  if (e === undefined) throw new Error(`no expectation for ${name}`);
  return e;
};

/** True when GDAL's reported value is NoData for this file. */
function isNoData(e: Expected, v: number | 'nan'): boolean {
  if (v === 'nan') return true;
  if (e.noData === null) return false;
  if (e.noData === 'NaN') return Number.isNaN(v);
  // gdalinfo prints the NoData value rounded; Float32 data hold the single-precision value.
  return e.dataType === 'Float32' ? Math.fround(v) === Math.fround(e.noData) : v === e.noData;
}

/** The stored values behind a grid read in metres: NaN cells back to the file's NoData value. */
function storedValues(z: Float32Array, scale: number, e: Expected): Float64Array {
  const nd = e.noData === null || e.noData === 'NaN' ? NaN : e.dataType === 'Float32' ? Math.fround(e.noData) : e.noData;
  return Float64Array.from(z, (v) => (Number.isNaN(v) ? nd : v / scale));
}
const isFloat = (e: Expected): boolean => e.dataType.startsWith('Float');

/** Every directly readable fixture, read by pondage and compared with GDAL's report. */
const READABLE = [
  'f32-deflate-p3-tiled.tif',
  'i16-lzw-p2-striped.tif',
  'u16-deflate.tif',
  'i32-deflate-p2-tiled.tif',
  'f64-lzw-p3-striped.tif',
  'f32-nodata-fltmin.tif',
  'f32-nodata-nan.tif',
  'wa-ftus-vunits.tif',
  'wa-ftus-navd88.tif',
  'geographic-4269.tif',
  'pixel-is-point.tif',
  'mosaic-nw.tif',
];

describe('openDem against GDAL (gdalinfo -json, gdallocationinfo)', () => {
  it.each(READABLE)('%s: size, geotransform, CRS, NoData and cell values', async (name) => {
    const e = exp(name);
    const dem = await openDem([fx(name)]);
    try {
      expect([dem.width, dem.height]).toEqual(e.size);
      const gt = e.geoTransform;
      if (gt === null) throw new Error('fixture lacks a geotransform');
      const t = dem.transform;
      // gdalinfo -json prints 16 significant digits.
      for (const [ours, gdal] of [[t.x0, gt[0]], [t.dx, gt[1]], [t.y0, gt[3]], [t.dy, gt[5]]] as const) {
        expect(Math.abs(ours - gdal)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(gdal)));
      }
      expect(dem.crs.epsg).toBe(e.epsg);
      const d = describeDem(dem);
      if (e.noData === null) expect(d.noData).toBeNull();
      else if (e.noData === 'NaN') expect(d.noData).toBeNaN();
      else expect(Math.fround(d.noData ?? 0)).toBe(Math.fround(e.noData));
      expect(d.sampleTypes[0]).toBe(e.dataType);

      const scale = metresPer(dem.zUnit);
      const g = await dem.readWindow(0, 0, dem.width, dem.height);
      for (const [c, r, v] of e.values) {
        const z = g.z[r * g.width + c];
        if (isNoData(e, v)) expect(z, `cell ${c},${r}`).toBeNaN();
        else expect(z, `cell ${c},${r}`).toBe(Math.fround(Math.fround(v as number) * scale));
      }
      // Every cell, at GDAL's checksum resolution.
      expect(gdalChecksum(storedValues(g.z, scale, e), isFloat(e))).toBe(e.checksum);
    } finally {
      await dem.close();
    }
  });

  it('PixelIsPoint: origin moved half a cell to the pixel corner, as GDAL reports it', async () => {
    expect(exp('pixel-is-point.tif').areaOrPoint).toBe('Point');
    const dem = await openDem([fx('pixel-is-point.tif')]);
    expect(dem.transform).toEqual({ x0: 512000, y0: 4281015, dx: 1, dy: -1 });
    await dem.close();
  });
});

describe('vertical units', () => {
  it('reads VerticalUnitsGeoKey and an EPSG vertical CRS as US survey feet (GDAL: "US survey foot")', async () => {
    for (const name of ['wa-ftus-vunits.tif', 'wa-ftus-navd88.tif']) {
      expect(exp(name).zUnit).toBe('US survey foot');
      const dem = await openDem([fx(name)]);
      expect([dem.zUnit, dem.zUnitSource]).toEqual(['us-survey-foot', 'geokey']);
      const g = await dem.readWindow(0, 0, 1, 1);
      expect(g.z[0]).toBe(Math.fround(1200 * US_SURVEY_FOOT_M));
      expect(g.cellWidthM[0]).toBe(3 * US_SURVEY_FOOT_M);
      await dem.close();
    }
  });

  it('assumes the horizontal unit, metre for geographic, and lets options override', async () => {
    const utm = await openDem([fx('i16-lzw-p2-striped.tif')]);
    expect([utm.zUnit, utm.zUnitSource]).toEqual(['metre', 'assumed-horizontal']);
    await utm.close();
    const geo = await openDem([fx('geographic-4269.tif')]);
    expect([geo.zUnit, geo.zUnitSource]).toEqual(['metre', 'assumed-metre']);
    await geo.close();
    const ft = await openDem([fx('no-crs.tif')], { crs: crsFromEpsg(2927) });
    expect([ft.zUnit, ft.zUnitSource, ft.crs.epsg]).toEqual(['us-survey-foot', 'assumed-horizontal', 2927]);
    await ft.close();
    const opt = await openDem([fx('wa-ftus-vunits.tif')], { zUnit: 'metre' });
    expect([opt.zUnit, opt.zUnitSource]).toEqual(['metre', 'option']);
    expect((await opt.readWindow(0, 0, 1, 1)).z[0]).toBe(1200);
    await opt.close();
  });
});

describe('windows and cell metrics', () => {
  it('clips windows to the raster and reports where they sit', async () => {
    const dem = await openDem([fx('f32-deflate-p3-tiled.tif')]);
    const full = await dem.readWindow(0, 0, 20, 15);
    const w = await dem.readWindow(14, 9, 10, 10);
    expect([w.width, w.height, w.colOffset, w.rowOffset]).toEqual([6, 6, 14, 9]);
    expect(w.transform).toEqual({ x0: 512014, y0: 4281006, dx: 1, dy: -1 });
    for (let r = 0; r < 6; r++) {
      for (let c = 0; c < 6; c++) expect(w.z[r * 6 + c]).toBe(full.z[(9 + r) * 20 + 14 + c]);
    }
    const neg = await dem.readWindow(-3, -2, 5, 5);
    expect([neg.width, neg.height, neg.colOffset, neg.rowOffset]).toEqual([2, 3, 0, 0]);
    const outside = await dem.readWindow(30, 30, 5, 5);
    expect([outside.width, outside.height]).toEqual([0, 0]);
    expect(w.cellAreaM2).toEqual(new Float64Array(6).fill(1));
    await dem.close();
  });

  it('geographic windows carry per-row ellipsoid areas for their own rows', async () => {
    const dem = await openDem([fx('geographic-4269.tif')]);
    const w = await dem.readWindow(0, 5, 20, 4);
    const m = cellMetrics(dem.crs, dem.transform, 5, 4);
    expect(w.cellAreaM2).toEqual(m.cellAreaM2);
    expect(w.cellWidthM).toEqual(m.cellWidthM);
    // One arc-second of latitude is about 30.9 m (common knowledge, from memory): a 1/3 arc-second
    // cell near 46.25°N is about 10.3 m north–south and 10.3·cos 46.25° ≈ 7.1 m east–west.
    expect(w.cellHeightM).toBeGreaterThan(10.2);
    expect(w.cellHeightM).toBeLessThan(10.4);
    expect(w.cellWidthM[0]).toBeGreaterThan(7.0);
    expect(w.cellWidthM[0]).toBeLessThan(7.2);
    const d = describeDem(dem);
    expect(d.crsUnit).toBe('degree');
    expect(d.cellSizeX).toBeCloseTo(1 / 10800, 15);
    await dem.close();
  });
});

describe('mosaics', () => {
  const tiles = ['mosaic-nw.tif', 'mosaic-ne.tif', 'mosaic-sw.tif'];

  /** The synthetic surface of make.sh at global cell (c, r), as stored in Float32 from three decimals. */
  const surface = (c: number, r: number): number =>
    Math.fround(Number((1200 + 1.25 * r + 0.5 * c - (c === 10 ? 3 : 0) + 0.001 * ((7 * c + 3 * r) % 997)).toFixed(3)));

  it('joins aligned tiles in any order, with NaN in the gap', async () => {
    for (const order of [tiles, [...tiles].reverse()]) {
      const dem = await openDem(order.map(fx));
      expect([dem.width, dem.height]).toEqual([40, 30]);
      expect(dem.transform).toEqual({ x0: 512000, y0: 4281015, dx: 1, dy: -1 });
      const g = await dem.readWindow(0, 0, 40, 30);
      for (let r = 0; r < 30; r++) {
        for (let c = 0; c < 40; c++) {
          const z = g.z[r * 40 + c];
          if (r >= 15 && c >= 20) expect(z).toBeNaN();
          else expect(z, `cell ${c},${r}`).toBe(surface(c, r));
        }
      }
      // GDAL's values for the north-east tile land at its place in the mosaic.
      for (const [c, r, v] of exp('mosaic-ne.tif').values) expect(g.z[r * 40 + 20 + c]).toBe(Math.fround(v as number));
      const straddle = await dem.readWindow(18, 13, 4, 4);
      expect(Array.from(straddle.z.subarray(0, 4))).toEqual([18, 19, 20, 21].map((c) => surface(c, 13)));
      expect(straddle.z[3 * 4 + 3]).toBeNaN(); // cell (21, 16) is in the gap
      expect(describeDem(dem).fileCount).toBe(3);
      // Each tile's part of the mosaic has the checksum GDAL gave that tile.
      for (const [name, c0, r0] of [['mosaic-nw.tif', 0, 0], ['mosaic-ne.tif', 20, 0], ['mosaic-sw.tif', 0, 15]] as const) {
        const part = await dem.readWindow(c0, r0, 20, 15);
        expect(gdalChecksum(part.z, true), name).toBe(exp(name).checksum);
      }
      await dem.close();
    }
  });

  it('names the tile that does not fit, and how', async () => {
    const nw = fx('mosaic-nw.tif');
    await expect(openDem([nw, fx('mosaic-misaligned.tif')])).rejects.toThrow(
      /mosaic-misaligned\.tif" is not aligned .* off by 0\.5000 cell east–west and 0\.0000 cell north–south/,
    );
    await expect(openDem([nw, fx('mosaic-coarse.tif')])).rejects.toThrow(/mosaic-coarse\.tif" has cells of 2 × 2 .* 1 × 1/);
    await expect(openDem([nw, fx('mosaic-other-crs.tif')])).rejects.toThrow(
      /mosaic-other-crs\.tif" is in EPSG:32612 .* EPSG:32611/,
    );
    await expect(openDem([nw, fx('wa-ftus-vunits.tif')])).rejects.toThrow(InputError);
  });
});

describe('files pondage cannot use', () => {
  it.each([
    ['no-crs.tif', /no-crs\.tif" has no projected or geographic CRS.*--dem-crs EPSG:NNNN/],
    ['no-georef.tif', /no-georef\.tif" has no georeferencing/],
    ['rotated.tif', /rotated\.tif" has a rotated or sheared geotransform/],
    ['not-a-tiff.tif', /cannot read DEM file ".*not-a-tiff\.tif"/],
    ['missing.tif', /cannot read DEM file ".*missing\.tif"/],
  ])('%s → InputError naming the file and the fix', async (name, message) => {
    if (name !== 'missing.tif') expect(EXPECTED[name]).toBeDefined();
    if (name === 'not-a-tiff.tif') expect(exp(name).readable).toBe(false); // GDAL cannot open it either
    if (name === 'rotated.tif') expect(exp(name).geoTransform?.[2]).not.toBe(0); // GDAL: rotation term
    if (name === 'no-georef.tif') expect(exp(name).geoTransform).toBeNull(); // GDAL: no geotransform
    const err = await openDem([fx(name)]).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(message);
  });
});
