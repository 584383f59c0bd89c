/**
 * Draws a crest line the way a careful mapper would: straight across the
 * valley, perpendicular to its axis, through the stream, out to where the
 * ground on each side stands above the crest, plus a short tie-in. The bed is
 * the lowest DEM cell the line crosses (the pond engine's own rule), found
 * with the same rasteriser the engine uses.
 *
 * Works in the generator's internal frame (metres from the grid's upper-left
 * corner, x east, y south) and returns map coordinates.
 */
import { rasteriseLines } from '../grid/rasterise-line.js';
import type { GeoTransform } from '../grid/transform.js';

/** The DEM a crest is drawn on. */
export interface CrestDem {
  width: number;
  height: number;
  cellM: number;
  transform: GeoTransform;
  z: Float32Array;
}

/** Where and how far to draw. Lengths and heights in metres. */
export interface CrestRequest {
  /** Stream centre at the dam, internal frame. */
  x: number;
  y: number;
  /** Downstream unit tangent of the valley axis, internal frame. */
  tx: number;
  ty: number;
  /** The line ends where the ground first stands this far above the bed, plus `tieInM` further on. */
  reachM: number;
  /**
   * For a deliberately short line: the side (+1 to the right of the
   * downstream direction, −1 to the left) that stops where the ground first
   * reaches `shortReachM` above the bed, with no tie-in.
   */
  short?: { side: -1 | 1; reachM: number };
}

/** A drawn crest. */
export interface CrestLine {
  /** Two vertices in map coordinates, ordered so the upstream side is on the left walking from the first to the second. */
  line: [number, number][];
  /** Lowest DEM cell crossed, metres. */
  bedZM: number;
  /** Ground elevation at the first and second vertex, metres. */
  endZM: [number, number];
}

/** Extra rise above the target the walk must see before it stops, metres (clears the 0.1 m lidar noise). */
const MARGIN_M = 0.25;
/** How far the line runs on into the valley side once it has reached the target, metres. */
const TIE_IN_M = 2;
/** No crest is longer than twice this, metres. */
const MAX_HALF_LENGTH_M = 600;

/** Draws the crest line for `req` on `dem`. Throws if the valley sides never rise high enough (a generator bug). */
export function drawCrest(dem: CrestDem, req: CrestRequest): CrestLine {
  const nx = -req.ty;
  const ny = req.tx;
  // The bed is the lowest cell on the line, and the ends depend on the bed. Walking with a bed no
  // higher than the line's lowest cell is enough; a longer line holds the shorter one's cells, so a
  // second walk with the first line's lowest cell settles it.
  let bed = lowestNear(dem, req.x, req.y, 3);
  let left = 0;
  let right = 0;
  for (let pass = 0; ; pass++) {
    right = walk(dem, req, nx, ny, 1, bed);
    left = walk(dem, req, nx, ny, -1, bed);
    const lowest = lowestOnLine(dem, req.x - left * nx, req.y - left * ny, req.x + right * nx, req.y + right * ny);
    if (lowest <= bed || pass === 3) {
      bed = lowest;
      break;
    }
    bed = lowest;
  }
  let a = toMap(dem, req.x - left * nx, req.y - left * ny);
  let b = toMap(dem, req.x + right * nx, req.y + right * ny);
  let za = groundAt(dem, req.x - left * nx, req.y - left * ny);
  let zb = groundAt(dem, req.x + right * nx, req.y + right * ny);
  // Map frame is y-up: the tangent (tx, ty) of the internal frame is (tx, −ty) there; upstream is its opposite.
  const ux = -req.tx;
  const uy = req.ty;
  if ((b[0] - a[0]) * uy - (b[1] - a[1]) * ux < 0) {
    [a, b] = [b, a];
    [za, zb] = [zb, za];
  }
  return { line: [a, b], bedZM: bed, endZM: [za, zb] };
}

/** Distance from the stream centre to the line's end on `side`, metres. */
function walk(dem: CrestDem, req: CrestRequest, nx: number, ny: number, side: -1 | 1, bed: number): number {
  const step = dem.cellM / 4;
  const isShort = req.short !== undefined && req.short.side === side;
  const target = bed + (isShort ? (req.short?.reachM ?? 0) : req.reachM + MARGIN_M);
  let t = 0;
  while (groundAt(dem, req.x + side * t * nx, req.y + side * t * ny) < target) {
    t += step;
    if (t > MAX_HALF_LENGTH_M) throw new Error(`valley side never reaches ${target.toFixed(2)} m`);
  }
  if (isShort) return t;
  t += TIE_IN_M;
  // The tie-in must still stand on ground at or above the target height.
  while (groundAt(dem, req.x + side * t * nx, req.y + side * t * ny) < bed + req.reachM + 0.1) {
    t += step;
    if (t > MAX_HALF_LENGTH_M) throw new Error('valley side falls away past the crest end');
  }
  return t;
}

/** Ground elevation of the cell holding internal point (x, y), metres. */
export function groundAt(dem: CrestDem, x: number, y: number): number {
  const c = Math.floor(x / dem.cellM);
  const r = Math.floor(y / dem.cellM);
  if (c < 0 || c >= dem.width || r < 0 || r >= dem.height) throw new Error('crest walks off the grid');
  return dem.z[r * dem.width + c]!;
}

/** Lowest cell whose centre lies within `radiusM` of internal point (x, y), metres. */
export function lowestNear(dem: CrestDem, x: number, y: number, radiusM: number): number {
  const rc = Math.ceil(radiusM / dem.cellM);
  const c0 = Math.floor(x / dem.cellM);
  const r0 = Math.floor(y / dem.cellM);
  let lowest = Infinity;
  for (let r = r0 - rc; r <= r0 + rc; r++) {
    for (let c = c0 - rc; c <= c0 + rc; c++) {
      if (c < 0 || c >= dem.width || r < 0 || r >= dem.height) continue;
      const d = Math.hypot((c + 0.5) * dem.cellM - x, (r + 0.5) * dem.cellM - y);
      if (d <= radiusM) lowest = Math.min(lowest, dem.z[r * dem.width + c]!);
    }
  }
  return lowest;
}

function lowestOnLine(dem: CrestDem, x0: number, y0: number, x1: number, y1: number): number {
  const { cells } = rasteriseLines(dem, [[toMap(dem, x0, y0), toMap(dem, x1, y1)]]);
  let lowest = Infinity;
  for (const i of cells) lowest = Math.min(lowest, dem.z[i]!);
  return lowest;
}

/** Internal point to map coordinates. */
export function toMap(dem: { transform: GeoTransform }, x: number, y: number): [number, number] {
  return [dem.transform.x0 + x, dem.transform.y0 - y];
}
