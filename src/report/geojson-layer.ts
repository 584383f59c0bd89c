/**
 * The run's GeoJSON layers (ponds, and the influence zone, watersheds and
 * streams where the run has them) read into plain geometry records, in
 * lon/lat as RFC 7946 writes them.
 */
import { InputError } from '../errors.js';

/** One feature's geometry and properties; polygons are rings of [lon, lat]. */
export interface LayerFeature {
  properties: Record<string, unknown>;
  polygons: [number, number][][][];
  lines: [number, number][][];
  points: [number, number][];
}

/** Parses a GeoJSON FeatureCollection's text; throws InputError naming the file when it is not one. */
export function parseGeoJsonLayer(text: string, path: string): LayerFeature[] {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    throw new InputError(`${path} is not valid JSON; rerun pondage estimate to write it again`);
  }
  const fc = rec(raw);
  if (!fc || fc['type'] !== 'FeatureCollection' || !Array.isArray(fc['features'])) {
    throw new InputError(`${path} is not a GeoJSON FeatureCollection; rerun pondage estimate to write it again`);
  }
  const out: LayerFeature[] = [];
  for (const f of fc['features'] as unknown[]) {
    const feature = rec(f);
    if (!feature) continue;
    const item: LayerFeature = { properties: rec(feature['properties']) ?? {}, polygons: [], lines: [], points: [] };
    addGeometry(item, rec(feature['geometry']));
    out.push(item);
  }
  return out;
}

function addGeometry(item: LayerFeature, g: Record<string, unknown> | null): void {
  if (!g) return;
  const coords = g['coordinates'];
  switch (g['type']) {
    case 'Polygon':
      item.polygons.push(rings(coords));
      break;
    case 'MultiPolygon':
      if (Array.isArray(coords)) for (const p of coords) item.polygons.push(rings(p));
      break;
    case 'LineString':
      item.lines.push(positions(coords));
      break;
    case 'MultiLineString':
      if (Array.isArray(coords)) for (const l of coords) item.lines.push(positions(l));
      break;
    case 'Point': {
      const p = position(coords);
      if (p) item.points.push(p);
      break;
    }
    case 'MultiPoint':
      item.points.push(...positions(coords));
      break;
    case 'GeometryCollection':
      if (Array.isArray(g['geometries'])) for (const sub of g['geometries'] as unknown[]) addGeometry(item, rec(sub));
      break;
  }
}

function rings(v: unknown): [number, number][][] {
  return Array.isArray(v) ? v.map(positions).filter((r) => r.length >= 3) : [];
}
function positions(v: unknown): [number, number][] {
  if (!Array.isArray(v)) return [];
  const out: [number, number][] = [];
  for (const p of v) {
    const q = position(p);
    if (q) out.push(q);
  }
  return out;
}
function position(v: unknown): [number, number] | null {
  if (!Array.isArray(v) || typeof v[0] !== 'number' || typeof v[1] !== 'number') return null;
  return Number.isFinite(v[0]) && Number.isFinite(v[1]) ? [v[0], v[1]] : null;
}
function rec(v: unknown): Record<string, unknown> | null {
  return typeof v === 'object' && v !== null && !Array.isArray(v) ? (v as Record<string, unknown>) : null;
}
