/**
 * Where a dam is, as one point per dam: the midpoint along its crest line as
 * the inventory drew it (half the total length of its lines from the first
 * vertex), or the dam point itself. Written into summary.json so that two runs
 * can be matched dam by dam when their ids differ (`pondage compare`).
 */
import type { DamGeometry } from '../inventory.js';

/** A dam's crest location: map coordinates in the DEM's CRS units and WGS 84 degrees. */
export interface CrestLocation {
  /** Map x and y in the DEM's CRS (its own units). */
  crest_x: number;
  crest_y: number;
  /** WGS 84 longitude and latitude, degrees; null when the DEM's CRS cannot be converted. */
  crest_lon: number | null;
  crest_lat: number | null;
}

/**
 * The midpoint along a crest geometry, in the geometry's map units: for lines,
 * the point at half the summed length of all lines (walked line after line);
 * for a point, the point. A line set of zero length gives its first vertex.
 */
export function crestMidpoint(geometry: DamGeometry): [number, number] {
  if (geometry.kind === 'point') return [geometry.x, geometry.y];
  let total = 0;
  for (const line of geometry.lines) {
    for (let k = 0; k + 1 < line.length; k++) total += segmentLength(line[k]!, line[k + 1]!);
  }
  const first = geometry.lines[0]?.[0] ?? [NaN, NaN];
  if (!(total > 0)) return [first[0], first[1]];
  let remaining = total / 2;
  for (const line of geometry.lines) {
    for (let k = 0; k + 1 < line.length; k++) {
      const a = line[k]!;
      const b = line[k + 1]!;
      const len = segmentLength(a, b);
      if (remaining <= len && len > 0) {
        const t = remaining / len;
        return [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
      }
      remaining -= len;
    }
  }
  const lastLine = geometry.lines[geometry.lines.length - 1]!;
  const last = lastLine[lastLine.length - 1]!;
  return [last[0], last[1]];
}

/**
 * The crest location of a dam; `toLonLat` converts DEM map coordinates to WGS 84
 * (it may throw when a datum grid is missing: lon/lat are then null).
 */
export function crestLocation(geometry: DamGeometry, toLonLat: (x: number, y: number) => [number, number]): CrestLocation {
  const [x, y] = crestMidpoint(geometry);
  let lon: number | null = null;
  let lat: number | null = null;
  try {
    const [a, b] = toLonLat(x, y);
    if (Number.isFinite(a) && Number.isFinite(b)) {
      lon = Number(a.toFixed(8));
      lat = Number(b.toFixed(8));
    }
  } catch {
    // No datum grid: the map coordinates still match runs on the same CRS.
  }
  return { crest_x: x, crest_y: y, crest_lon: lon, crest_lat: lat };
}

function segmentLength(a: [number, number], b: [number, number]): number {
  return Math.hypot(b[0] - a[0], b[1] - a[1]);
}
