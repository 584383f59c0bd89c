/**
 * Which side of a crest line a point lies on, as the line is drawn.
 *
 * A point takes the side of its nearest crest segment: left when the cross
 * product of the segment direction and the point's offset is positive (map
 * x east, y north). Where the nearest crest point is a bend (an interior
 * vertex), the side is the sign along the sum of the two segments' unit
 * normals (the pseudonormal of Bærentzen & Aanæs 2005), so points outside
 * a sharp bend are not misread. Beyond a crest end the side is that of the
 * end segment's line extended; points on that line (or on the crest) are on
 * neither side (0).
 */

/** Crest segments in map coordinates, flattened for repeated queries. */
export interface CrestSegments {
  ax: Float64Array;
  ay: Float64Array;
  bx: Float64Array;
  by: Float64Array;
  /** 1 when the segment starts a polyline (its `a` end is a crest end). */
  startsLine: Uint8Array;
  /** 1 when the segment ends a polyline (its `b` end is a crest end). */
  endsLine: Uint8Array;
}

/** Side codes: left of the line as drawn, right of it, or beyond an end. */
export const LEFT = 1;
export const RIGHT = -1;
export const NEITHER = 0;

/** Flattens polylines (map units) into segments, dropping zero-length ones. */
export function crestSegments(lines: [number, number][][]): CrestSegments {
  const ax: number[] = [];
  const ay: number[] = [];
  const bx: number[] = [];
  const by: number[] = [];
  const starts: number[] = [];
  const ends: number[] = [];
  for (const line of lines) {
    const first = ax.length;
    for (let k = 0; k + 1 < line.length; k++) {
      const [x0, y0] = line[k]!;
      const [x1, y1] = line[k + 1]!;
      if (x0 === x1 && y0 === y1) continue;
      ax.push(x0);
      ay.push(y0);
      bx.push(x1);
      by.push(y1);
      starts.push(0);
      ends.push(0);
    }
    if (ax.length > first) {
      starts[first] = 1;
      ends[ax.length - 1] = 1;
    }
  }
  return {
    ax: Float64Array.from(ax),
    ay: Float64Array.from(ay),
    bx: Float64Array.from(bx),
    by: Float64Array.from(by),
    startsLine: Uint8Array.from(starts),
    endsLine: Uint8Array.from(ends),
  };
}

/** Index of the segment nearest to (x, y), or -1 when there are none. Ties go to the earlier segment. */
export function nearestSegment(s: CrestSegments, x: number, y: number): number {
  let best = -1;
  let bestD2 = Infinity;
  for (let k = 0; k < s.ax.length; k++) {
    const t = segmentParameter(s, k, x, y);
    const px = s.ax[k]! + t * (s.bx[k]! - s.ax[k]!) - x;
    const py = s.ay[k]! + t * (s.by[k]! - s.ay[k]!) - y;
    const d2 = px * px + py * py;
    if (d2 < bestD2) {
      bestD2 = d2;
      best = k;
    }
  }
  return best;
}

/** Parameter in [0, 1] of the point of segment k nearest to (x, y). */
function segmentParameter(s: CrestSegments, k: number, x: number, y: number): number {
  const dx = s.bx[k]! - s.ax[k]!;
  const dy = s.by[k]! - s.ay[k]!;
  const t = ((x - s.ax[k]!) * dx + (y - s.ay[k]!) * dy) / (dx * dx + dy * dy);
  return t < 0 ? 0 : t > 1 ? 1 : t;
}

/** LEFT, RIGHT or NEITHER (exactly on the crest or on the extension of an end segment) for a point in map units. */
export function sideOf(s: CrestSegments, x: number, y: number): number {
  const k = nearestSegment(s, x, y);
  if (k < 0) return NEITHER;
  const t = segmentParameter(s, k, x, y);
  const dx = s.bx[k]! - s.ax[k]!;
  const dy = s.by[k]! - s.ay[k]!;
  const len = Math.hypot(dx, dy);
  // Unit left normal of segment k.
  let nx = -dy / len;
  let ny = dx / len;
  let px = s.ax[k]!;
  let py = s.ay[k]!;
  const bend = t === 1 && s.endsLine[k] === 0 ? k + 1 : t === 0 && s.startsLine[k] === 0 ? k - 1 : -1;
  if (bend >= 0) {
    const ex = s.bx[bend]! - s.ax[bend]!;
    const ey = s.by[bend]! - s.ay[bend]!;
    const elen = Math.hypot(ex, ey);
    nx += -ey / elen;
    ny += ex / elen;
    px = t === 1 ? s.bx[k]! : s.ax[k]!;
    py = t === 1 ? s.by[k]! : s.ay[k]!;
  }
  const dot = (x - px) * nx + (y - py) * ny;
  return dot > 0 ? LEFT : dot < 0 ? RIGHT : NEITHER;
}
