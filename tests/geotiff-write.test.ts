import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { fromFile } from 'geotiff';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.js';
import { parseCrsText } from '../src/io/crs.js';
import { describeDem, openDem } from '../src/io/dem.js';
import { writeGeoTiff } from '../src/io/geotiff-write.js';
import { metresPer } from '../src/units.js';
import { gdalChecksum } from '../fixtures/geotiff/gdal-checksum.js';
import { SAMPLE_CELLS, excerptOf, writeCases, type WrittenExcerpt } from '../fixtures/geotiff/written-depth.js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
mkdirSync(join(ROOT, 'out'), { recursive: true });
const OUT = mkdtempSync(join(ROOT, 'out', 'geotiff-write-'));
afterAll(() => rmSync(OUT, { recursive: true, force: true }));

// What GDAL 3.6 reported about these files when they were first written (expect-written.ts).
const EXPECTED = JSON.parse(
  readFileSync(join(ROOT, 'fixtures', 'geotiff', 'written-expected.json'), 'utf8'),
) as Record<string, WrittenExcerpt>;
const CASES = Object.entries(writeCases());

const hasGdal = ((): boolean => {
  try {
    execFileSync('gdalinfo', ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
})();

describe('writeGeoTiff', () => {
  it.each(CASES)('%s reads back through openDem cell for cell', async (name, options) => {
    const path = join(OUT, name);
    await writeGeoTiff(path, options);
    const dem = await openDem([path]);
    try {
      expect([dem.width, dem.height]).toEqual([options.width, options.height]);
      expect(dem.transform).toEqual(options.transform);
      expect(dem.crs.epsg).toBe(options.crs.epsg);
      expect(dem.zUnitSource).toBe(options.zUnit === undefined ? 'assumed-horizontal' : 'geokey');
      if (options.zUnit !== undefined) expect(dem.zUnit).toBe(options.zUnit);
      const d = describeDem(dem);
      expect(d.noData).toBe(options.noData); // Object.is: NaN matches NaN
      // Read in metres: compare with the written values in the file's own unit.
      const g = await dem.readWindow(0, 0, dem.width, dem.height);
      const scale = metresPer(options.zUnit ?? 'metre');
      let mismatches = 0;
      for (let i = 0; i < g.z.length; i++) {
        const want = options.data[i] as number;
        const got = g.z[i] as number;
        const wantNaN = Number.isNaN(want) || want === options.noData;
        if (wantNaN ? !Number.isNaN(got) : got !== Math.fround(want * scale)) mismatches++;
      }
      expect(mismatches).toBe(0);
    } finally {
      await dem.close();
    }
  });

  it.each(CASES)('%s matches the GDAL report recorded for it', async (name, options) => {
    const e = EXPECTED[name];
    if (e === undefined) throw new Error(`no recorded GDAL report for ${name}`);
    const path = join(OUT, `recorded-${name}`);
    await writeGeoTiff(path, options);
    const tiff = await fromFile(path);
    try {
      const image = await tiff.getImage();
      expect([image.getWidth(), image.getHeight()]).toEqual(e.size);
      expect([image.getTileWidth(), image.getTileHeight()]).toEqual(e.block);
      const compression = image.fileDirectory.getValue('Compression');
      expect(compression === 8 ? 'DEFLATE' : null).toBe(e.compression);
      const predictor: unknown = (image.fileDirectory as unknown as { getValue(name: string): unknown }).getValue('Predictor');
      expect(predictor === undefined || predictor === 1 ? null : String(predictor)).toBe(e.predictor);
    } finally {
      await tiff.close();
    }
    const t = options.transform;
    const gt = e.geoTransform;
    for (const [ours, gdal] of [[t.x0, gt[0]], [t.dx, gt[1]], [t.y0, gt[3]], [t.dy, gt[5]]] as const) {
      expect(Math.abs(ours - (gdal ?? NaN))).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(gdal ?? 0)));
    }
    expect(options.crs.epsg).toBe(e.epsg);
    expect(e.dataType).toBe('Float32');
    expect(gdalChecksum(options.data, true)).toBe(e.checksum);
    for (const [c, r, v] of e.values) {
      const want = options.data[r * options.width + c] as number;
      if (v === 'nan') expect(want).toBeNaN();
      else expect(want).toBe(Math.fround(v));
    }
  });

  it.skipIf(!hasGdal).each(CASES)('%s: gdalinfo today agrees with the recorded report', async (name, options) => {
    const path = join(OUT, `gdal-${name}`);
    await writeGeoTiff(path, options);
    const env = { ...process.env, GTIFF_REPORT_COMPD_CS: 'NO' };
    const info: unknown = JSON.parse(execFileSync('gdalinfo', ['-json', '-checksum', path], { env, encoding: 'utf8' }));
    const raw = execFileSync('gdallocationinfo', ['-valonly', path], {
      env,
      encoding: 'utf8',
      input: SAMPLE_CELLS.map(([c, r]) => `${c} ${r}`).join('\n') + '\n',
    });
    const values = raw
      .trim()
      .split('\n')
      .map((v, i): [number, number, number | 'nan'] => {
        const [c, r] = SAMPLE_CELLS[i] ?? [NaN, NaN];
        return [c, r, /^-?nan$/i.test(v) ? 'nan' : Number(v)];
      });
    expect(excerptOf(info, values)).toEqual(EXPECTED[name]);
  });

  it('refuses a CRS without an EPSG code, and data of the wrong size', async () => {
    const custom = parseCrsText('+proj=utm +zone=11 +datum=WGS84 +units=m', '--dem-crs');
    const base = { width: 2, height: 2, transform: { x0: 0, y0: 0, dx: 1, dy: -1 }, noData: null };
    await expect(
      writeGeoTiff(join(OUT, 'custom.tif'), { ...base, crs: custom, data: new Float32Array(4) }),
    ).rejects.toThrow(InputError);
    await expect(
      writeGeoTiff(join(OUT, 'short.tif'), { ...base, crs: parseCrsText('EPSG:32611', '--dem-crs'), data: new Float32Array(3) }),
    ).rejects.toThrow(/3 cells; expected 2 × 2 = 4/);
  });
});
