/**
 * Writes a generated scene as the inputs a user would bring: the DEM as a
 * GeoTIFF and the dam inventory as RFC 7946 GeoJSON (WGS 84 lon/lat).
 */
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { GeoTransform } from '../grid/transform.js';
import type { DamGeometry } from '../inventory.js';
import { WGS84, crsFromEpsg, makeTransform } from './crs.js';
import { writeGeoTiff } from './geotiff-write.js';

/** What a generated scene must offer to be written out. */
export interface SceneForFiles {
  width: number;
  height: number;
  transform: GeoTransform;
  epsg: number;
  z: Float32Array;
  dams: { geometry: DamGeometry; properties: Record<string, unknown> }[];
}

/** Writes `dem.tif` and `dams.geojson` into `dir`; returns their paths. */
export async function writeSceneInputs(dir: string, scene: SceneForFiles, names = { dem: 'dem.tif', dams: 'dams.geojson' }): Promise<{ demPath: string; damsPath: string }> {
  await mkdir(dir, { recursive: true });
  const crs = crsFromEpsg(scene.epsg);
  const demPath = join(dir, names.dem);
  const damsPath = join(dir, names.dams);
  await writeGeoTiff(demPath, { width: scene.width, height: scene.height, data: scene.z, transform: scene.transform, crs, noData: -9999, zUnit: 'metre' });
  const toLonLat = makeTransform(crs, WGS84);
  const ll = (x: number, y: number): [number, number] => {
    const [lon, lat] = toLonLat(x, y);
    return [Number(lon.toFixed(8)), Number(lat.toFixed(8))];
  };
  const features = scene.dams.map((d) => ({
    type: 'Feature',
    properties: d.properties,
    geometry:
      d.geometry.kind === 'point'
        ? { type: 'Point', coordinates: ll(d.geometry.x, d.geometry.y) }
        : d.geometry.lines.length === 1
          ? { type: 'LineString', coordinates: d.geometry.lines[0]!.map(([x, y]) => ll(x, y)) }
          : { type: 'MultiLineString', coordinates: d.geometry.lines.map((line) => line.map(([x, y]) => ll(x, y))) },
  }));
  await writeFile(damsPath, JSON.stringify({ type: 'FeatureCollection', features }, null, 1) + '\n');
  return { demPath, damsPath };
}
