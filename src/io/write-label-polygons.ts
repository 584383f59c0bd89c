/**
 * Writes a label raster's areas as a GeoJSON polygon layer (RFC 7946, WGS 84
 * lon/lat), one MultiPolygon feature per label with its `id` and `name`:
 * the demo's watersheds, as a user's mapped watersheds would come.
 */
import { writeFile } from 'node:fs/promises';
import type { GeoTransform } from '../grid/transform.js';
import type { Crs } from './crs.js';
import { bucketLabels, cornerToLonLat, outlineLonLat } from './outlines.js';

/** Writes `labels` (1 + index into `units`, 0 none) of a `width`-wide grid at `transform` in `crs` to `path`. */
export async function writeLabelPolygons(
  path: string,
  layer: { labels: Int32Array; width: number; transform: GeoTransform; crs: Crs; units: readonly { id: string; name: string }[] },
): Promise<void> {
  const toLonLat = cornerToLonLat(layer.transform, layer.crs);
  const { cells, start } = bucketLabels(layer.labels, layer.units.length);
  const features = layer.units.flatMap((u, k) => {
    const own = cells.subarray(start[k]!, start[k + 1]!);
    if (own.length === 0) return [];
    return [{ type: 'Feature', properties: { id: u.id, name: u.name }, geometry: { type: 'MultiPolygon', coordinates: outlineLonLat(own, layer.width, toLonLat) } }];
  });
  await writeFile(path, JSON.stringify({ type: 'FeatureCollection', features }) + '\n');
}
