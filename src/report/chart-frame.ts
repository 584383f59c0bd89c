/**
 * The frame every chart shares: scales (linear or log10), axes on any side
 * with ticks and titles, and the outer <svg> with an accessible title.
 * SI units on the bottom and left axes, US customary on the top and right.
 */
import { escapeHtml, formatNumber } from './format.js';
import { c, niceTicks, text } from './svg.js';

/** A mapping from data values to SVG units along one axis. */
export interface Scale {
  /** Domain (data units). */
  lo: number;
  hi: number;
  /** Range (SVG units); may run backwards (y axes). */
  from: number;
  to: number;
  log: boolean;
}

/** Position of a value on a scale. */
export function at(s: Scale, v: number): number {
  if (s.log) {
    const a = Math.log10(s.lo);
    const b = Math.log10(s.hi);
    return s.from + ((Math.log10(v) - a) / (b - a)) * (s.to - s.from);
  }
  return s.from + ((v - s.lo) / (s.hi - s.lo)) * (s.to - s.from);
}

/** Tick values of a scale in a unit `factor` × the scale's unit (for the second unit system). */
export function ticksFor(s: Scale, factor: number, count: number): number[] {
  const lo = s.lo * factor;
  const hi = s.hi * factor;
  if (!s.log) return niceTicks(lo, hi, count);
  const out: number[] = [];
  for (let e = Math.ceil(Math.log10(lo) - 1e-9); e <= Math.floor(Math.log10(hi) + 1e-9); e++) out.push(10 ** e);
  return out;
}

/**
 * Label text of a tick value: grouped digits with as many decimals as the
 * tick step needs, or powers of ten written out on log axes.
 */
export function tickLabel(v: number, log: boolean, step: number): string {
  if (log) return v >= 1 ? formatNumber(v, 0) : formatNumber(v, Math.min(6, Math.round(-Math.log10(v))));
  const d = step > 0 && step < 1 ? Math.min(6, -Math.floor(Math.log10(step) + 1e-9)) : 0;
  return formatNumber(Number(v.toFixed(d)), d);
}

export type Side = 'bottom' | 'top' | 'left' | 'right';

/**
 * An axis along one side of the plot box. `factor` converts the scale's
 * unit into the unit shown (1 for SI axes); `at` positions use the scale.
 */
export function axis(options: {
  side: Side;
  scale: Scale;
  /** Position of the axis line across it (y for bottom/top, x for left/right). */
  offset: number;
  title: string;
  factor?: number;
  count?: number;
  /** Grid lines across the plot to this coordinate (only for the primary axes). */
  gridTo?: number;
}): string {
  const { side, scale, offset, title } = options;
  const factor = options.factor ?? 1;
  const ticks = ticksFor(scale, factor, options.count ?? 6);
  const horizontal = side === 'bottom' || side === 'top';
  const dir = side === 'bottom' || side === 'right' ? 1 : -1;
  let out = `<g class="axis axis-${side}">`;
  const a0 = c(scale.from);
  const a1 = c(scale.to);
  out += horizontal
    ? `<path class="axis-line" d="M${a0} ${c(offset)}H${a1}"/>`
    : `<path class="axis-line" d="M${c(offset)} ${a0}V${a1}"/>`;
  const step = ticks.length > 1 ? ticks[1]! - ticks[0]! : 1;
  for (const t of ticks) {
    const p = at(scale, t / factor);
    if (!Number.isFinite(p)) continue;
    const label = tickLabel(t, scale.log, step);
    if (horizontal) {
      if (options.gridTo !== undefined) out += `<path class="grid" d="M${c(p)} ${c(offset)}V${c(options.gridTo)}"/>`;
      out += `<path class="tick" d="M${c(p)} ${c(offset)}v${dir * 5}"/>`;
      out += text(p, offset + dir * (dir > 0 ? 17 : 9), label, { 'text-anchor': 'middle' });
    } else {
      if (options.gridTo !== undefined) out += `<path class="grid" d="M${c(offset)} ${c(p)}H${c(options.gridTo)}"/>`;
      out += `<path class="tick" d="M${c(offset)} ${c(p)}h${dir * 5}"/>`;
      out += text(offset + dir * 8, p + 4, label, { 'text-anchor': dir > 0 ? 'start' : 'end' });
    }
  }
  const mid = (scale.from + scale.to) / 2;
  if (horizontal) {
    out += text(mid, offset + dir * (dir > 0 ? 36 : 26), title, { class: 'axis-title', 'text-anchor': 'middle' });
  } else {
    const x = offset + dir * 54;
    out += `<text class="axis-title" text-anchor="middle" transform="translate(${c(x)} ${c(mid)}) rotate(${dir > 0 ? 90 : -90})">${escapeHtml(title)}</text>`;
  }
  return out + '</g>';
}

/** The outer <svg> of a chart with its accessible name. */
export function chartSvg(options: { width: number; height: number; title: string; desc: string; body: string; className?: string }): string {
  const id = `t${hash(options.title)}`;
  return (
    `<svg class="chart ${options.className ?? ''}" viewBox="0 0 ${options.width} ${options.height}" role="img" aria-labelledby="${id}">` +
    `<title id="${id}">${escapeText(options.title)}</title><desc>${escapeText(options.desc)}</desc>` +
    options.body +
    '</svg>'
  );
}

function escapeText(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** A short stable hash of a string (ids for aria references). */
export function hash(s: string): string {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return (h >>> 0).toString(36);
}
