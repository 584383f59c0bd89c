/**
 * GeoJSON dam inventory (RFC 7946): a FeatureCollection or a single Feature,
 * crest lines (LineString, MultiLineString) or dam points (Point, MultiPoint
 * with one point). An old-style `crs` member (GeoJSON 2008) is reported so the
 * caller can honour it.
 */
import type { DamProblems } from './dam-problems.js';
import { crestGeometry } from './dam-geometry.js';
import type { RawDam, RawInventory } from './dam-raw.js';

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** The CRS name of a GeoJSON 2008 `crs` member (`{"type":"name","properties":{"name":...}}`), or null. */
function declaredCrsName(root: Record<string, unknown>): string | null {
  const crs = root['crs'];
  if (!isRecord(crs)) return null;
  const props = crs['properties'];
  if (crs['type'] === 'name' && isRecord(props) && typeof props['name'] === 'string') return props['name'];
  return null;
}

/**
 * Parses GeoJSON text into raw dams. Whole-file problems (not JSON, not a
 * FeatureCollection or Feature) and per-feature geometry problems go to `problems`.
 */
export function parseGeoJsonDams(text: string, problems: DamProblems): RawInventory {
  const inventory: RawInventory = {
    format: 'geojson',
    dams: [],
    coords: { kind: 'file', columns: 'GeoJSON coordinates' },
    declaredCrs: null,
    decimalComma: false,
    warnings: [],
  };
  let root: unknown;
  try {
    root = JSON.parse(text);
  } catch (err) {
    const detail = err instanceof Error ? err.message : String(err);
    problems.add(null, `not valid JSON (${detail}); save the inventory as GeoJSON or CSV`);
    return inventory;
  }
  if (!isRecord(root)) {
    problems.add(null, 'the file is JSON but not a GeoJSON object; give a FeatureCollection of crest lines or dam points');
    return inventory;
  }
  let features: unknown[];
  if (root['type'] === 'FeatureCollection' && Array.isArray(root['features'])) features = root['features'];
  else if (root['type'] === 'Feature') features = [root];
  else {
    const what = typeof root['type'] === 'string' ? `a GeoJSON ${root['type']}` : 'not a GeoJSON FeatureCollection';
    problems.add(null, `the file is ${what}; give a FeatureCollection (or a single Feature) whose features are crest lines or dam points`);
    return inventory;
  }
  inventory.declaredCrs = declaredCrsName(root);

  features.forEach((f, k) => {
    const feature = k + 1;
    if (!isRecord(f) || f['type'] !== 'Feature') {
      problems.add({ feature }, 'is not a GeoJSON Feature; every member of "features" must have "type": "Feature"');
      return;
    }
    const props = f['properties'];
    const properties: [string, unknown][] = isRecord(props) ? Object.entries(props) : [];
    const dam: RawDam = { feature, geometry: null, problems: [], properties, featureId: f['id'] };
    if (props !== null && props !== undefined && !isRecord(props)) {
      dam.problems.push({ property: 'properties', message: 'is not an object; give the properties as a JSON object or null' });
    }
    const g = crestGeometry(f['geometry']);
    if (g.ok) dam.geometry = g.geometry;
    else dam.problems.push({ property: 'geometry', message: g.reason });
    inventory.dams.push(dam);
  });
  return inventory;
}
