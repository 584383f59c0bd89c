/**
 * Writes a dam inventory alone as RFC 7946 GeoJSON (WGS 84 lon/lat), for a
 * scene whose DEM is already written (the demo's earlier survey).
 */
import { writeFile } from 'node:fs/promises';
import type { DamGeometry } from '../inventory.js';
import { WGS84, crsFromEpsg, makeTransform } from './crs.js';

/** Writes `dams` (geometries in EPSG:`epsg` map units) to `path` as a FeatureCollection. */
export async function writeDamsGeoJson(path: string, epsg: number, dams: readonly { geometry: DamGeometry; properties: Record<string, unknown> }[]): Promise<void> {
  const toLonLat = makeTransform(crsFromEpsg(epsg), WGS84);
  const ll = (x: number, y: number): [number, number] => {
    const [lon, lat] = toLonLat(x, y);
    return [Number(lon.toFixed(8)), Number(lat.toFixed(8))];
  };
  const features = dams.map((d) => ({
    type: 'Feature',
    properties: d.properties,
    geometry:
      d.geometry.kind === 'point'
        ? { type: 'Point', coordinates: ll(d.geometry.x, d.geometry.y) }
        : d.geometry.lines.length === 1
          ? { type: 'LineString', coordinates: d.geometry.lines[0]!.map(([x, y]) => ll(x, y)) }
          : { type: 'MultiLineString', coordinates: d.geometry.lines.map((line) => line.map(([x, y]) => ll(x, y))) },
  }));
  await writeFile(path, JSON.stringify({ type: 'FeatureCollection', features }, null, 1) + '\n');
}
