/**
 * Plain-data descriptions of a generated scene: channels as map polylines
 * with their profile ranges, and the counts and sentences of its facts.
 */
import { DAM_STATUSES, type DamStatus } from '../inventory.js';
import type { GeoTransform } from '../grid/transform.js';
import type { Channel } from './channel.js';
import type { DemoChannel, DemoDam, DemoFacts } from './types.js';

/** Spacing of the published stream centrelines, metres. */
const THALWEG_STEP_M = 5;

/** Position of the stream centre at sample k, map coordinates. */
export function streamPointAt(ch: Channel, k: number, t: GeoTransform): [number, number] {
  const x = ch.x[k]! - ch.ty[k]! * ch.meanderM[k]!;
  const y = ch.y[k]! + ch.tx[k]! * ch.meanderM[k]!;
  return [t.x0 + x, t.y0 - y];
}

/** A built channel as published in the scene. */
export function describeChannel(ch: Channel, t: GeoTransform): DemoChannel {
  const every = Math.max(1, Math.round(THALWEG_STEP_M / ch.stepM));
  const thalweg: [number, number][] = [];
  for (let k = 0; k < ch.n; k += every) thalweg.push(streamPointAt(ch, k, t));
  if ((ch.n - 1) % every !== 0) thalweg.push(streamPointAt(ch, ch.n - 1, t));
  return {
    id: ch.spec.id,
    name: ch.spec.name,
    order: ch.spec.order,
    parentId: ch.spec.parentId,
    lengthM: round((ch.n - 1) * ch.stepM, 1),
    thalweg,
    slopePct: range(ch.slope, 100, 2),
    floorWidthM: range(ch.halfFloorM, 2, 1),
    streamDepthM: range(ch.depthM, 1, 2),
    streamWidthM: range(ch.halfWidthM, 2, 1),
  };
}

function range(values: Float64Array, scale: number, digits: number): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return [round(lo * scale, digits), round(hi * scale, digits)];
}

function round(v: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}

/** Counts of a dam list, as the facts report them. */
export function countDams(dams: readonly DemoDam[]): DemoFacts['dams'] {
  const byStatus = Object.fromEntries(DAM_STATUSES.map((s) => [s, 0])) as Record<DamStatus, number>;
  const byYear: Record<string, number> = {};
  let lines = 0;
  let measured = 0;
  for (const d of dams) {
    byStatus[d.properties.status] += 1;
    byYear[String(d.properties.year)] = (byYear[String(d.properties.year)] ?? 0) + 1;
    if (d.geometry.kind === 'line') lines++;
    if (d.properties.height_m !== undefined) measured++;
  }
  return {
    total: dams.length,
    byStatus,
    lines,
    points: dams.length - lines,
    measuredHeights: measured,
    unmeasuredHeights: dams.length - measured,
    byYear,
  };
}

/** Lowest and highest value, metres. */
export function zRange(z: Float32Array): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < z.length; i++) {
    const v = z[i]!;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return [round(lo, 2), round(hi, 2)];
}

/** Ids of the dams with a role or status, in inventory order. */
export function idsWhere(dams: readonly DemoDam[], keep: (d: DemoDam) => boolean): string[] {
  return dams.filter(keep).map((d) => d.id);
}
