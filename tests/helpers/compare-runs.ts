/**
 * Runs on an analytic V-shaped valley for the compare tests: one DEM GeoTIFF,
 * several dam inventories (survey years, proposals), one run folder each.
 *
 * Valley: z = 100 + S·y' + |x'|/M in local metres (x' across, y' up-valley),
 * placed in UTM zone 12N. A dam of height H at y' = y0 whose crest spans the
 * valley holds a pond of A = M·H²/S and V = M·H³/(3S) (analytic; see
 * estimate-run.test.ts), reaching H/S upstream.
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import proj4 from 'proj4';
import { crsFromEpsg } from '../../src/io/crs.js';
import { writeGeoTiff } from '../../src/io/geotiff-write.js';
import { defaultParams, runEstimate } from '../../src/pipeline/run.js';
import type { Summary } from '../../src/pipeline/summary.js';

export const VALLEY = {
  epsg: 32612,
  x0: 500_000,
  y0: 4_400_000,
  cellM: 0.5,
  sideSlope: 10,
  floorSlope: 0.01,
  /** Local y' of the first and last row centres, metres. */
  yMinM: -80,
  yMaxM: 300,
  widthM: 60,
} as const;

const toLonLat = proj4(crsFromEpsg(VALLEY.epsg).proj4, 'EPSG:4326');

/** Local valley metres to WGS 84 lon/lat. */
export function local(xl: number, yl: number): [number, number] {
  const [lon, lat] = toLonLat.forward([VALLEY.x0 + xl, VALLEY.y0 + yl]);
  return [lon!, lat!];
}

/** A crest line across the valley at y' = yl (±halfWidth metres), as a GeoJSON feature. */
export function crest(id: string, yl: number, props: Record<string, unknown>, halfWidth = 25, shiftX = 0): object {
  return {
    type: 'Feature',
    properties: { id, ...props },
    geometry: { type: 'LineString', coordinates: [local(-halfWidth + shiftX, yl), local(halfWidth + shiftX, yl)] },
  };
}

/** Writes the valley DEM (`dem.tif`, optional per-cell offset in metres) into `dir`; returns its path. */
export async function writeValleyDem(dir: string, name = 'dem.tif', offset?: (col: number, row: number) => number): Promise<string> {
  const v = VALLEY;
  const width = Math.round(v.widthM / v.cellM);
  const height = Math.round((v.yMaxM - v.yMinM) / v.cellM) + 1;
  const z = new Float32Array(width * height);
  for (let row = 0; row < height; row++) {
    const yl = v.yMaxM - row * v.cellM;
    for (let col = 0; col < width; col++) {
      const xl = (col + 0.5) * v.cellM - v.widthM / 2;
      z[row * width + col] = 100 + v.floorSlope * yl + Math.abs(xl) / v.sideSlope + (offset ? offset(col, row) : 0);
    }
  }
  const transform = { x0: v.x0 - v.widthM / 2, y0: v.y0 + v.yMaxM + v.cellM / 2, dx: v.cellM, dy: -v.cellM };
  const path = join(dir, name);
  await writeGeoTiff(path, { width, height, data: z, transform, crs: crsFromEpsg(v.epsg), noData: -9999, zUnit: 'metre' });
  return path;
}

/** Writes an inventory and runs the estimate into `dir/outName`; returns the run folder and its summary. */
export async function runValley(dir: string, demPath: string, outName: string, features: object[]): Promise<{ runDir: string; summary: Summary }> {
  const damsPath = join(dir, `${outName}.geojson`);
  await writeFile(damsPath, JSON.stringify({ type: 'FeatureCollection', features }));
  const runDir = join(dir, outName);
  const { summary } = await runEstimate({ demPaths: [demPath], damsPath, outDir: runDir, params: defaultParams() });
  return { runDir, summary };
}

/** Analytic pond volume of a full-width dam of water depth h above the valley line, m³ (V = M·h³/(3S)). */
export function analyticVolumeM3(h: number): number {
  return (VALLEY.sideSlope * h ** 3) / (3 * VALLEY.floorSlope);
}
