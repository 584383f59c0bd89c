/**
 * The recognised dam properties (id, height_m, status, confidence, year,
 * upstream), read from untyped values into typed ones. Property names match
 * case-insensitively; every other property goes to `extra` untouched.
 */
import { DAM_STATUSES, type DamStatus } from '../inventory.js';
import type { DamPlace, DamProblems } from './dam-problems.js';

/** The recognised property names, lower case. */
export const DAM_FIELD_NAMES = ['id', 'height_m', 'status', 'confidence', 'year', 'upstream'] as const;
type FieldName = (typeof DAM_FIELD_NAMES)[number];

/** Typed recognised properties of one dam, plus the rest. */
export interface DamFields {
  /** Explicit id, or null when the feature has none. */
  id: string | null;
  /** Crest height above the bed, metres, or null. */
  heightM: number | null;
  status: DamStatus;
  /** Confidence as a fraction 0–1, or null. */
  confidence: number | null;
  year: number | null;
  upstream: 'left' | 'right' | null;
  /** Every other property, as given. */
  extra: Record<string, unknown>;
}

/** How to read number-like text. */
export interface FieldOptions {
  /** Accept `1,5` for 1.5 (semicolon-delimited CSV, where the comma is free to be a decimal mark). */
  decimalComma: boolean;
}

const NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;

type Num = { kind: 'empty' } | { kind: 'number'; value: number } | { kind: 'bad'; text: string };

function isEmpty(v: unknown): boolean {
  return v === null || v === undefined || (typeof v === 'string' && v.trim() === '');
}

/** Reads a number from a JSON number or a numeric string. */
function readNumber(v: unknown, options: FieldOptions): Num {
  if (isEmpty(v)) return { kind: 'empty' };
  if (typeof v === 'number') return Number.isFinite(v) ? { kind: 'number', value: v } : { kind: 'bad', text: String(v) };
  if (typeof v !== 'string') return { kind: 'bad', text: JSON.stringify(v) };
  let s = v.trim();
  if (options.decimalComma && /^[-+]?\d+,\d+$/.test(s)) s = s.replace(',', '.');
  return NUMBER.test(s) ? { kind: 'number', value: Number(s) } : { kind: 'bad', text: v };
}

function show(v: unknown): string {
  return typeof v === 'string' ? `"${v}"` : JSON.stringify(v) ?? String(v);
}

/**
 * Reads the recognised properties of one feature from its (name, value) pairs.
 * Problems are added to `problems` with `place`; the returned record then holds
 * defaults for the bad values (the caller throws before using it).
 */
export function readDamFields(
  pairs: [string, unknown][],
  place: DamPlace,
  problems: DamProblems,
  options: FieldOptions,
): DamFields {
  const found = new Map<FieldName, { key: string; value: unknown }>();
  const extra: Record<string, unknown> = {};
  for (const [key, value] of pairs) {
    const name = key.trim().toLowerCase();
    const field = DAM_FIELD_NAMES.find((f) => f === name);
    if (field === undefined) {
      extra[key] = value;
      continue;
    }
    const earlier = found.get(field);
    if (earlier !== undefined) {
      problems.add({ ...place, property: key }, `"${earlier.key}" and "${key}" both give ${field}; keep one of them`);
      continue;
    }
    found.set(field, { key, value });
  }
  const at = (field: FieldName): DamPlace => ({ ...place, property: found.get(field)?.key ?? field });
  const raw = (field: FieldName): unknown => found.get(field)?.value;

  // id first, so later messages can name it.
  let id: string | null = null;
  const idValue = raw('id');
  if (typeof idValue === 'string' && idValue.trim() !== '') id = idValue.trim();
  else if (typeof idValue === 'number' && Number.isFinite(idValue)) id = String(idValue);
  else if (!isEmpty(idValue)) problems.add(at('id'), `${show(idValue)} is not usable as an id; give a text or a number, or leave it empty to have one generated`);
  const here = (field: FieldName): DamPlace => ({ ...at(field), id });

  let heightM: number | null = null;
  const h = readNumber(raw('height_m'), options);
  if (h.kind === 'bad') {
    const unit = /^\s*[-+.\d]+\s*(m|ft|feet|')\s*$/i.exec(h.text);
    const fix = unit === null ? 'give the crest height above the bed in metres, or leave it empty' : 'write the number alone, in metres (1 ft = 0.3048 m)';
    problems.add(here('height_m'), `${show(h.text)} is not a number; ${fix}`);
  } else if (h.kind === 'number' && h.value < 0) {
    problems.add(here('height_m'), `${h.value} is negative; give the crest height above the bed in metres (0 or more), or leave it empty`);
  } else if (h.kind === 'number') heightM = h.value;

  let status: DamStatus = 'confirmed';
  const s = raw('status');
  if (typeof s === 'string' && s.trim() !== '') {
    const lower = s.trim().toLowerCase();
    const known = DAM_STATUSES.find((x) => x === lower);
    if (known === undefined) problems.add(here('status'), `${show(s)} is not a status; use one of ${DAM_STATUSES.join(', ')} (or leave it empty for confirmed)`);
    else status = known;
  } else if (!isEmpty(s)) {
    problems.add(here('status'), `${show(s)} is not a status; use one of ${DAM_STATUSES.join(', ')} (or leave it empty for confirmed)`);
  }

  let confidence: number | null = null;
  const cRaw = raw('confidence');
  const pct = typeof cRaw === 'string' ? /^\s*([-+]?(?:\d+\.?\d*|\.\d+))\s*%\s*$/.exec(cRaw) : null;
  const c = readNumber(cRaw, options);
  if (pct !== null) {
    const asFraction = Number(pct[1]) / 100;
    problems.add(here('confidence'), `${show(cRaw)} is a percentage; write it as a fraction from 0 to 1 (${asFraction})`);
  } else if (c.kind === 'bad') {
    problems.add(here('confidence'), `${show(c.text)} is not a number; give a fraction from 0 to 1, or leave it empty`);
  } else if (c.kind === 'number' && c.value > 1 && c.value <= 100) {
    problems.add(here('confidence'), `${c.value} looks like a percentage; write it as a fraction from 0 to 1 (${c.value / 100})`);
  } else if (c.kind === 'number' && (c.value < 0 || c.value > 1)) {
    problems.add(here('confidence'), `${c.value} is outside 0 to 1; give a fraction from 0 to 1, or leave it empty`);
  } else if (c.kind === 'number') confidence = c.value;

  let year: number | null = null;
  const y = readNumber(raw('year'), options);
  if (y.kind === 'bad' || (y.kind === 'number' && !Number.isInteger(y.value))) {
    const text = y.kind === 'bad' ? show(y.text) : String(y.value);
    problems.add(here('year'), `${text} is not a whole year; give a year such as 2019, or leave it empty`);
  } else if (y.kind === 'number') year = y.value;

  let upstream: 'left' | 'right' | null = null;
  const u = raw('upstream');
  const uText = typeof u === 'string' ? u.trim().toLowerCase() : null;
  if (uText === 'left' || uText === 'right') upstream = uText;
  else if (!isEmpty(u)) {
    problems.add(here('upstream'), `${show(u)} is not a side; use left or right (of the line walked from its first to its last vertex), or leave it empty to infer it from the terrain`);
  }

  return { id, heightM, status, confidence, year, upstream, extra };
}
