/**
 * Small SVG pieces written as text: escaping, number formatting, nice axis
 * ticks, and a horizontal bar chart with optional band whiskers.
 */

/** Escapes text for SVG/HTML content and attribute values. */
export function esc(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** A number with thousands separators and a fixed number of decimals ("−" for negatives). */
export function fmt(v: number, digits = 0): string {
  const s = Math.abs(v).toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });
  return (v < 0 && Number(s.replace(/,/g, '')) !== 0 ? '−' : '') + s;
}

/** As fmt, with a sign on positive values too. */
export function fmtSigned(v: number, digits = 0): string {
  const s = fmt(v, digits);
  return v > 0 && Number(s.replace(/,/g, '')) !== 0 ? `+${s}` : s;
}

/**
 * About `count` round tick values covering [lo, hi]: steps of 1, 2 or 5 × 10^k
 * (the usual "nice numbers" for axes, common practice).
 */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / Math.max(1, count);
  const mag = 10 ** Math.floor(Math.log10(raw));
  const norm = raw / mag;
  const step = (norm < 1.5 ? 1 : norm < 3 ? 2 : norm < 7 ? 5 : 10) * mag;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

/** One bar: a value, an optional band (p05–p95) and its colour. */
export interface Bar {
  label: string;
  value: number;
  band?: { lo: number; hi: number } | null;
  colour: string;
  /** Text after the value (e.g. "detectable"). */
  note?: string;
}

/** A horizontal bar chart from zero (negative bars go left), whiskers for bands. Returns SVG text. */
export function barChart(bars: readonly Bar[], options: { title: string; unit: string; digits?: number; width?: number; /** Show + on positive values (changes). */ signed?: boolean }): string {
  const width = options.width ?? 640;
  const rowH = 26;
  const labelW = Math.min(200, 12 + 7 * Math.max(4, ...bars.map((b) => b.label.length)));
  const valueW = 170;
  const top = 34;
  const plotW = width - labelW - valueW - 20;
  const height = top + rowH * Math.max(1, bars.length) + 28;
  let lo = 0;
  let hi = 0;
  for (const b of bars) {
    lo = Math.min(lo, b.value, b.band?.lo ?? 0);
    hi = Math.max(hi, b.value, b.band?.hi ?? 0);
  }
  if (lo === hi) hi = lo + 1;
  const ticks = niceTicks(lo, hi, 4);
  lo = Math.min(lo, ticks[0]!);
  hi = Math.max(hi, ticks[ticks.length - 1]!);
  const x = (v: number): number => labelW + ((v - lo) / (hi - lo)) * plotW;
  const digits = options.digits ?? 0;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" aria-label="${esc(options.title)}" class="chart">`);
  parts.push(`<text x="0" y="16" class="axis-title">${esc(options.title)}</text>`);
  for (const t of ticks) {
    parts.push(`<line x1="${x(t).toFixed(1)}" y1="${top - 6}" x2="${x(t).toFixed(1)}" y2="${height - 24}" class="grid"/>`);
    parts.push(`<text x="${x(t).toFixed(1)}" y="${height - 8}" text-anchor="middle" class="value-label">${esc(fmt(t, Math.abs(t) < 10 && t !== Math.round(t) ? 1 : 0))}</text>`);
  }
  parts.push(`<line x1="${x(0).toFixed(1)}" y1="${top - 8}" x2="${x(0).toFixed(1)}" y2="${height - 24}" class="zero"/>`);
  bars.forEach((b, k) => {
    const y = top + k * rowH;
    const x0 = Math.min(x(0), x(b.value));
    const w = Math.max(1, Math.abs(x(b.value) - x(0)));
    parts.push(`<text x="${labelW - 8}" y="${y + 16}" text-anchor="end" class="row-label">${esc(b.label)}</text>`);
    parts.push(`<rect x="${x0.toFixed(1)}" y="${y + 5}" width="${w.toFixed(1)}" height="${rowH - 10}" fill="${b.colour}"><title>${esc(`${b.label}: ${fmt(b.value, digits)} ${options.unit}`)}</title></rect>`);
    if (b.band) {
      const xl = x(b.band.lo).toFixed(1);
      const xh = x(b.band.hi).toFixed(1);
      const ym = y + rowH / 2;
      parts.push(`<path d="M${xl} ${ym}H${xh}M${xl} ${ym - 6}V${ym + 6}M${xh} ${ym - 6}V${ym + 6}" class="whisker"/>`);
    }
    parts.push(`<text x="${labelW + plotW + 10}" y="${y + 16}" class="value-label">${esc(`${options.signed ? fmtSigned(b.value, digits) : fmt(b.value, digits)} ${options.unit}${b.note ? ` ${b.note}` : ''}`)}</text>`);
  });
  parts.push('</svg>');
  return parts.join('');
}
