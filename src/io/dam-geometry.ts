/**
 * Untyped GeoJSON-shaped geometry (from a GeoJSON file or parsed WKT) → a
 * crest geometry in the file's coordinates, or the reason it cannot be one.
 */
import type { DamGeometry } from '../inventory.js';

/** A crest geometry, or why the input is not one (a sentence with the fix). */
export type GeometryResult = { ok: true; geometry: DamGeometry } | { ok: false; reason: string };

const USE = 'give a LineString or MultiLineString along the crest, or a Point at the dam';

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** A GeoJSON position → [x, y] (a third or fourth ordinate is ignored), or null. */
function position(v: unknown): [number, number] | null {
  if (!Array.isArray(v) || v.length < 2) return null;
  const x: unknown = v[0];
  const y: unknown = v[1];
  if (typeof x !== 'number' || typeof y !== 'number' || !Number.isFinite(x) || !Number.isFinite(y)) return null;
  return [x, y];
}

/** A polyline with consecutive repeated vertices dropped, or the reason it is unusable. */
function polyline(v: unknown, what: string): { ok: true; line: [number, number][] } | { ok: false; reason: string } {
  if (!Array.isArray(v)) return { ok: false, reason: `${what} coordinates are not an array of positions` };
  const line: [number, number][] = [];
  for (let k = 0; k < v.length; k++) {
    const p = position(v[k]);
    if (p === null) return { ok: false, reason: `${what} vertex ${k + 1} is not a pair of finite numbers` };
    const last = line[line.length - 1];
    if (last === undefined || last[0] !== p[0] || last[1] !== p[1]) line.push(p);
  }
  const distinct = new Set(line.map((p) => `${p[0]} ${p[1]}`)).size;
  if (distinct < 2) {
    const vertexWord = distinct === 1 ? 'vertex' : 'vertices';
    return {
      ok: false,
      reason: `${what} has ${distinct} distinct ${vertexWord}; needs at least 2 (draw it across the channel, or give a Point if only the dam location is known)`,
    };
  }
  return { ok: true, line };
}

/** Checks a GeoJSON-shaped geometry object and converts it to a DamGeometry. */
export function crestGeometry(g: unknown): GeometryResult {
  if (g === null || g === undefined) return { ok: false, reason: `has no geometry; ${USE}` };
  if (!isRecord(g) || typeof g['type'] !== 'string') return { ok: false, reason: `geometry is not a GeoJSON geometry object; ${USE}` };
  const type = g['type'];
  const coords = g['coordinates'];
  switch (type) {
    case 'Point': {
      const p = position(coords);
      if (p === null) return { ok: false, reason: 'Point coordinates are not a pair of finite numbers' };
      return { ok: true, geometry: { kind: 'point', x: p[0], y: p[1] } };
    }
    case 'MultiPoint': {
      if (!Array.isArray(coords) || coords.length !== 1) {
        const n = Array.isArray(coords) ? coords.length : 0;
        return {
          ok: false,
          reason: `MultiPoint has ${n} points; a dam is one point, so give a Point (or split it into ${n} features)`,
        };
      }
      const p = position(coords[0]);
      if (p === null) return { ok: false, reason: 'MultiPoint coordinates are not a pair of finite numbers' };
      return { ok: true, geometry: { kind: 'point', x: p[0], y: p[1] } };
    }
    case 'LineString': {
      const r = polyline(coords, 'LineString');
      return r.ok ? { ok: true, geometry: { kind: 'line', lines: [r.line] } } : r;
    }
    case 'MultiLineString': {
      if (!Array.isArray(coords) || coords.length === 0) {
        return { ok: false, reason: 'MultiLineString has no lines; give at least one line of 2 or more vertices' };
      }
      const lines: [number, number][][] = [];
      for (let k = 0; k < coords.length; k++) {
        const r = polyline(coords[k], `MultiLineString part ${k + 1}`);
        if (!r.ok) return r;
        lines.push(r.line);
      }
      return { ok: true, geometry: { kind: 'line', lines } };
    }
    default:
      return { ok: false, reason: `${type} is not a crest geometry; ${USE}` };
  }
}

/** Every [x, y] of a geometry, for range checks. */
export function* vertices(g: DamGeometry): Generator<[number, number]> {
  if (g.kind === 'point') {
    yield [g.x, g.y];
    return;
  }
  for (const line of g.lines) yield* line;
}

/** The same geometry with every vertex passed through `f` (a CRS transform). */
export function mapGeometry(g: DamGeometry, f: (x: number, y: number) => [number, number]): DamGeometry {
  if (g.kind === 'point') {
    const [x, y] = f(g.x, g.y);
    return { kind: 'point', x, y };
  }
  return { kind: 'line', lines: g.lines.map((line) => line.map(([x, y]) => f(x, y))) };
}
