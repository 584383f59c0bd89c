/**
 * Smooth valley axes: a Catmull–Rom spline through control points, resampled
 * at equal arc-length steps, with unit tangents. Positions are in the
 * generator's internal frame: metres from the grid's upper-left corner, X east,
 * Y south (row direction).
 */

/** An axis sampled every `stepM` metres, from its first control point to its last. */
export interface AxisPath {
  readonly n: number;
  /** Distance between consecutive samples, metres (the requested step, adjusted so the last sample is the end point). */
  readonly stepM: number;
  readonly x: Float64Array;
  readonly y: Float64Array;
  /** Unit tangent, pointing from the first control point towards the last. */
  readonly tx: Float64Array;
  readonly ty: Float64Array;
}

/** Total length of the path in metres. */
export function pathLengthM(path: AxisPath): number {
  return (path.n - 1) * path.stepM;
}

/**
 * Samples a uniform Catmull–Rom spline through `points` (≥ 2, metres) every
 * `stepM` metres of arc length.
 */
export function splinePath(points: readonly (readonly [number, number])[], stepM: number): AxisPath {
  if (points.length < 2) throw new Error('a valley axis needs at least 2 control points');
  const dense = denseSpline(points, stepM / 4);
  return resample(dense.x, dense.y, dense.n, stepM);
}

function denseSpline(points: readonly (readonly [number, number])[], maxStepM: number) {
  const m = points.length;
  const px = (i: number): number => pointAt(points, i, 0);
  const py = (i: number): number => pointAt(points, i, 1);
  const xs: number[] = [px(0)];
  const ys: number[] = [py(0)];
  for (let i = 0; i + 1 < m; i++) {
    const x0 = px(i - 1);
    const y0 = py(i - 1);
    const x1 = px(i);
    const y1 = py(i);
    const x2 = px(i + 1);
    const y2 = py(i + 1);
    const x3 = px(i + 2);
    const y3 = py(i + 2);
    const steps = Math.max(4, Math.ceil(Math.hypot(x2 - x1, y2 - y1) / maxStepM));
    for (let s = 1; s <= steps; s++) {
      const t = s / steps;
      xs.push(catmullRom(x0, x1, x2, x3, t));
      ys.push(catmullRom(y0, y1, y2, y3, t));
    }
  }
  return { x: Float64Array.from(xs), y: Float64Array.from(ys), n: xs.length };
}

/** Control point i, reflected past either end so the spline starts and ends on the first and last points. */
function pointAt(points: readonly (readonly [number, number])[], i: number, axis: 0 | 1): number {
  const m = points.length;
  if (i < 0) return 2 * points[0]![axis] - points[1]![axis];
  if (i >= m) return 2 * points[m - 1]![axis] - points[m - 2]![axis];
  return points[i]![axis];
}

function catmullRom(p0: number, p1: number, p2: number, p3: number, t: number): number {
  const t2 = t * t;
  const t3 = t2 * t;
  return 0.5 * (2 * p1 + (p2 - p0) * t + (2 * p0 - 5 * p1 + 4 * p2 - p3) * t2 + (3 * p1 - p0 - 3 * p2 + p3) * t3);
}

/** Resamples a dense polyline at equal arc-length steps (≈ stepM) that end exactly on its last vertex. */
export function resample(xs: Float64Array, ys: Float64Array, count: number, stepM: number): AxisPath {
  let total = 0;
  for (let i = 1; i < count; i++) total += Math.hypot(xs[i]! - xs[i - 1]!, ys[i]! - ys[i - 1]!);
  const segments = Math.max(1, Math.round(total / stepM));
  const step = total / segments;
  const n = segments + 1;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  x[0] = xs[0]!;
  y[0] = ys[0]!;
  let k = 1;
  let walked = 0;
  for (let i = 1; i < count && k < n - 1; i++) {
    const ax = xs[i - 1]!;
    const ay = ys[i - 1]!;
    const len = Math.hypot(xs[i]! - ax, ys[i]! - ay);
    while (k < n - 1 && k * step <= walked + len) {
      const f = len > 0 ? (k * step - walked) / len : 0;
      x[k] = ax + (xs[i]! - ax) * f;
      y[k] = ay + (ys[i]! - ay) * f;
      k++;
    }
    walked += len;
  }
  x[n - 1] = xs[count - 1]!;
  y[n - 1] = ys[count - 1]!;
  const tx = new Float64Array(n);
  const ty = new Float64Array(n);
  for (let k2 = 0; k2 < n; k2++) {
    const a = Math.max(0, k2 - 1);
    const b = Math.min(n - 1, k2 + 1);
    const dx = x[b]! - x[a]!;
    const dy = y[b]! - y[a]!;
    const len = Math.hypot(dx, dy) || 1;
    tx[k2] = dx / len;
    ty[k2] = dy / len;
  }
  return { n, stepM: step, x, y, tx, ty };
}
