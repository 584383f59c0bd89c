/**
 * Numbers as the report shows them, and the machine-readable form beside
 * them: every figure taken from summary.json is written as
 *   <data value="SI value" data-field="path in summary.json" data-unit="shown unit">shown text</data>
 * so a reader (or a test) can check the page against the run.
 */
import { ACRE_FOOT_M3, ACRE_M2, FOOT_M, HECTARE_M2 } from '../units.js';

/** Units a figure can be shown in; each names the SI unit it converts from. */
export const DISPLAY_UNITS = {
  m3: { from: 'm3', factor: 1, symbol: 'm³' },
  acre_ft: { from: 'm3', factor: 1 / ACRE_FOOT_M3, symbol: 'acre-ft' },
  m2: { from: 'm2', factor: 1, symbol: 'm²' },
  ha: { from: 'm2', factor: 1 / HECTARE_M2, symbol: 'ha' },
  acres: { from: 'm2', factor: 1 / ACRE_M2, symbol: 'acres' },
  m: { from: 'm', factor: 1, symbol: 'm' },
  ft: { from: 'm', factor: 1 / FOOT_M, symbol: 'ft' },
  km: { from: 'm', factor: 1 / 1000, symbol: 'km' },
  mi: { from: 'm', factor: 1 / (5280 * FOOT_M), symbol: 'mi' },
  count: { from: 'count', factor: 1, symbol: '' },
  ratio: { from: 'ratio', factor: 1, symbol: '' },
} as const;
export type DisplayUnit = keyof typeof DISPLAY_UNITS;

/** Converts an SI value to a display unit. */
export function toUnit(value: number, unit: DisplayUnit): number {
  return value * DISPLAY_UNITS[unit].factor;
}

/** Decimal places the report uses for a value: whole numbers from 100 up, else three significant digits (at most 6 places). */
export function decimalsFor(value: number): number {
  const a = Math.abs(value);
  if (a === 0 || a >= 100) return 0;
  return Math.min(6, Math.max(0, 2 - Math.floor(Math.log10(a))));
}

/** One formatter per number of decimals (building an Intl.NumberFormat per call is slow). */
const FORMATTERS = new Map<number, Intl.NumberFormat>();

/** A number with thousands separators and the report's precision (or the given decimals). */
export function formatNumber(value: number, decimals?: number): string {
  if (!Number.isFinite(value)) return '–';
  const d = decimals ?? decimalsFor(value);
  let f = FORMATTERS.get(d);
  if (!f) {
    f = new Intl.NumberFormat('en-US', { minimumFractionDigits: d, maximumFractionDigits: d });
    FORMATTERS.set(d, f);
  }
  const text = f.format(value);
  return text === '-0' ? '0' : text;
}

/** Escapes text for HTML and SVG content and attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (ch) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[ch]!);
}

/** A figure from summary.json: SI value, where it came from, and how to show it. */
export interface Figure {
  /** Value in SI units, exactly as in summary.json. */
  value: number;
  /** Path in summary.json, e.g. `totals.storage_m3`, `dams[3].volume_m3`, `totals.bands.storage_m3.p05`. */
  field: string;
  unit: DisplayUnit;
  /** Fixed decimals (else the report's precision). */
  decimals?: number;
}

/** The `<data>` element of a figure (text shown in the display unit, no unit symbol). */
export function figureHtml(f: Figure): string {
  const shown = formatNumber(toUnit(f.value, f.unit), f.decimals ?? (f.unit === 'count' ? 0 : undefined));
  return `<data value="${String(f.value)}" data-field="${escapeHtml(f.field)}" data-unit="${f.unit}">${shown}</data>`;
}

/** A figure followed by its unit symbol, e.g. "7,071 m³". */
export function figureWithUnit(f: Figure): string {
  const sym = DISPLAY_UNITS[f.unit].symbol;
  return sym ? `${figureHtml(f)}&#8239;${escapeHtml(sym)}` : figureHtml(f);
}

/** Plain text of a value in a unit, with the symbol (for SVG labels). */
export function plainWithUnit(valueSi: number, unit: DisplayUnit, decimals?: number): string {
  const sym = DISPLAY_UNITS[unit].symbol;
  const n = formatNumber(toUnit(valueSi, unit), decimals);
  return sym ? `${n} ${sym}` : n;
}
