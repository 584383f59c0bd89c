/**
 * Writes a generated scene as the inputs a user would bring: the DEM as a
 * GeoTIFF and the dam inventory as RFC 7946 GeoJSON (WGS 84 lon/lat).
 */
import { mkdir } from 'node:fs/promises';
import { join } from 'node:path';
import type { GeoTransform } from '../grid/transform.js';
import type { DamGeometry } from '../inventory.js';
import { crsFromEpsg } from './crs.js';
import { writeDamsGeoJson } from './write-dams.js';
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
  await writeDamsGeoJson(damsPath, scene.epsg, scene.dams);
  return { demPath, damsPath };
}
