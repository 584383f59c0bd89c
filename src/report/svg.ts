/**
 * Small SVG building blocks for the report's charts and map: numbers for
 * coordinates, marker shapes, path data from rings, nice axis ticks, and
 * Douglas–Peucker simplification for outlines drawn at map scale.
 */
import { escapeHtml } from './format.js';
import type { MarkerShape } from './palette.js';

/** A coordinate rounded to 0.1 SVG unit, without trailing zeros. */
export function c(v: number): string {
  const r = Math.round(v * 10) / 10;
  return Object.is(r, -0) ? '0' : String(r);
}

/** A text element; `attrs` are written as given (values escaped). */
export function text(x: number, y: number, content: string, attrs: Record<string, string | number> = {}): string {
  return `<text x="${c(x)}" y="${c(y)}"${attrString(attrs)}>${escapeHtml(content)}</text>`;
}

/** Attributes as ` k="v"` pairs, values escaped. */
export function attrString(attrs: Record<string, string | number>): string {
  let out = '';
  for (const [k, v] of Object.entries(attrs)) out += ` ${k}="${escapeHtml(String(v))}"`;
  return out;
}

/** A marker of the given shape centred on (x, y), radius r. */
export function marker(shape: MarkerShape, x: number, y: number, r: number, attrs: Record<string, string | number>): string {
  const a = attrString(attrs);
  switch (shape) {
    case 'circle':
      return `<circle cx="${c(x)}" cy="${c(y)}" r="${c(r)}"${a}/>`;
    case 'square': {
      const s = r * 0.9;
      return `<rect x="${c(x - s)}" y="${c(y - s)}" width="${c(2 * s)}" height="${c(2 * s)}"${a}/>`;
    }
    case 'diamond': {
      const s = r * 1.25;
      return `<path d="M${c(x)} ${c(y - s)}L${c(x + s)} ${c(y)}L${c(x)} ${c(y + s)}L${c(x - s)} ${c(y)}Z"${a}/>`;
    }
    case 'triangle': {
      const s = r * 1.25;
      return `<path d="M${c(x)} ${c(y - s)}L${c(x + s * 0.95)} ${c(y + s * 0.7)}L${c(x - s * 0.95)} ${c(y + s * 0.7)}Z"${a}/>`;
    }
    case 'cross': {
      const s = r * 0.9;
      return `<path d="M${c(x - s)} ${c(y - s)}L${c(x + s)} ${c(y + s)}M${c(x + s)} ${c(y - s)}L${c(x - s)} ${c(y + s)}"${a}/>`;
    }
  }
}

/** A small standalone SVG of one marker, for legends. */
export function legendSwatch(shape: MarkerShape, fill: string, stroke: string): string {
  return `<svg class="swatch" viewBox="0 0 16 16" width="16" height="16" aria-hidden="true">${marker(shape, 8, 8, 5, { fill, stroke, 'stroke-width': 1.2 })}</svg>`;
}

/** Path data of closed rings (already in SVG units). */
export function ringsPath(rings: readonly (readonly [number, number][])[]): string {
  let d = '';
  for (const ring of rings) {
    if (ring.length < 3) continue;
    d += `M${c(ring[0]![0])} ${c(ring[0]![1])}`;
    for (let k = 1; k < ring.length; k++) d += `L${c(ring[k]![0])} ${c(ring[k]![1])}`;
    d += 'Z';
  }
  return d;
}

/** Path data of open lines (already in SVG units). */
export function linesPath(lines: readonly (readonly [number, number][])[]): string {
  let d = '';
  for (const line of lines) {
    if (line.length < 2) continue;
    d += `M${c(line[0]![0])} ${c(line[0]![1])}`;
    for (let k = 1; k < line.length; k++) d += `L${c(line[k]![0])} ${c(line[k]![1])}`;
  }
  return d;
}

/**
 * Douglas–Peucker simplification of a polyline or ring (Douglas & Peucker
 * 1973), iterative with an explicit stack; keeps the first and last points.
 * Tolerance in the points' own units.
 */
export function simplify(points: readonly [number, number][], tolerance: number): [number, number][] {
  const n = points.length;
  if (n <= 3) return points.slice();
  const keep = new Uint8Array(n);
  keep[0] = 1;
  keep[n - 1] = 1;
  const stack: number[] = [0, n - 1];
  const tol2 = tolerance * tolerance;
  while (stack.length > 0) {
    const hi = stack.pop()!;
    const lo = stack.pop()!;
    const [ax, ay] = points[lo]!;
    const [bx, by] = points[hi]!;
    const dx = bx - ax;
    const dy = by - ay;
    const len2 = dx * dx + dy * dy;
    let worst = -1;
    let worstD2 = tol2;
    for (let k = lo + 1; k < hi; k++) {
      const [px, py] = points[k]!;
      let d2: number;
      if (len2 === 0) {
        d2 = (px - ax) ** 2 + (py - ay) ** 2;
      } else {
        const cross = (px - ax) * dy - (py - ay) * dx;
        d2 = (cross * cross) / len2;
      }
      if (d2 > worstD2) {
        worstD2 = d2;
        worst = k;
      }
    }
    if (worst >= 0) {
      keep[worst] = 1;
      stack.push(lo, worst, worst, hi);
    }
  }
  const out: [number, number][] = [];
  for (let k = 0; k < n; k++) if (keep[k]) out.push(points[k]!);
  return out;
}

/** "Nice" tick values covering [lo, hi], about `count` of them (steps of 1, 2 or 5 × 10ⁿ). */
export function niceTicks(lo: number, hi: number, count: number): number[] {
  if (!(hi > lo)) return [lo];
  const step = niceStep((hi - lo) / Math.max(1, count));
  const first = Math.ceil(lo / step - 1e-9) * step;
  const out: number[] = [];
  for (let v = first; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : Number(v.toPrecision(12)));
  return out;
}

/** The 1, 2 or 5 × 10ⁿ step nearest above a raw step. */
export function niceStep(raw: number): number {
  const p = 10 ** Math.floor(Math.log10(raw));
  const f = raw / p;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * p;
}

/** The largest 1, 2 or 5 × 10ⁿ not above a value (scale bar lengths). */
export function niceBelow(value: number): number {
  const p = 10 ** Math.floor(Math.log10(value));
  const f = value / p;
  return (f >= 5 ? 5 : f >= 2 ? 2 : 1) * p;
}
