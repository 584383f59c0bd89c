/**
 * The demo's dams, placed on the generated terrain: crest lines drawn across
 * the valley floor from the DEM itself (crest.ts), detector points dropped a
 * few metres off the stream.
 */
import type { Rng } from '../uncertainty/random.js';
import type { Channel } from './channel.js';
import { drawCrest, lowestNear, toMap, type CrestDem } from './crest.js';
import { DEMO_DAM_ROWS, LAYOUT_LENGTH_M, type DemoDamRow } from './dam-table.js';
import type { DemoDam, DemoDamProperties } from './types.js';

/** Crest lines of dams whose height nobody measured reach at least this high, metres: the mapper traced the whole visible structure. */
export const UNMEASURED_REACH_M = 1.2;
/** The spill case's short end stops where the ground reaches this fraction of the crest height. */
const SPILL_FRACTION = 0.5;

/** Builds the demo's dams on `dem` from the table in dam-table.ts. */
export function placeDemoDams(dem: CrestDem, channels: readonly Channel[], rng: Rng): DemoDam[] {
  const byId = new Map(channels.map((ch) => [ch.spec.id, ch]));
  return DEMO_DAM_ROWS.map((row) => {
    const ch = byId.get(row.channel);
    if (!ch) throw new Error(`dam ${row.id} names an unknown valley ${row.channel}`);
    return placeDam(dem, ch, row, rng);
  });
}

/** Sample of `ch` at `fromMouthM` (at the layout's valley length) from its mouth, scaled to the built length. */
function sampleFor(ch: Channel, row: DemoDamRow): number {
  const lengthM = (ch.n - 1) * ch.stepM;
  const fromMouthM = (row.fromMouthM * lengthM) / LAYOUT_LENGTH_M[row.channel];
  return Math.max(0, Math.min(ch.n - 1, Math.round((lengthM - fromMouthM) / ch.stepM)));
}

function placeDam(dem: CrestDem, ch: Channel, row: DemoDamRow, rng: Rng): DemoDam {
  const k = sampleFor(ch, row);
  const tx = ch.tx[k]!;
  const ty = ch.ty[k]!;
  const sx = ch.x[k]! - ty * ch.meanderM[k]!;
  const sy = ch.y[k]! + tx * ch.meanderM[k]!;
  const properties = propertiesOf(row);
  const roles = row.roles ?? [];
  const base = {
    channelId: ch.spec.id,
    distanceFromHeadM: k * ch.stepM,
    heightM: row.heightM,
    valleyTangent: [tx, -ty] as [number, number],
    streamPoint: toMap(dem, sx, sy),
    roles,
  };
  if (row.kind === 'point') {
    const angle = 2 * Math.PI * rng();
    const offsetM = 1 + 3 * rng();
    const [x, y] = toMap(dem, sx + offsetM * Math.cos(angle), sy + offsetM * Math.sin(angle));
    const bedZM = lowestNear(dem, sx, sy, 2);
    return {
      id: row.id,
      geometry: { kind: 'point', x, y },
      properties,
      truth: { ...base, bedZM, crestZM: bedZM + row.heightM, lineReachM: 0 },
    };
  }
  const reachM = row.reachM ?? (row.measured ? row.heightM : Math.max(row.heightM, UNMEASURED_REACH_M));
  const spill = roles.includes('spill');
  const crest = drawCrest(dem, {
    x: sx,
    y: sy,
    tx,
    ty,
    reachM,
    ...(spill ? { short: { side: -1 as const, reachM: SPILL_FRACTION * row.heightM } } : {}),
  });
  return {
    id: row.id,
    geometry: { kind: 'line', lines: [crest.line] },
    properties,
    truth: { ...base, bedZM: crest.bedZM, crestZM: crest.bedZM + row.heightM, lineReachM: reachM },
  };
}

function propertiesOf(row: DemoDamRow): DemoDamProperties {
  return {
    id: row.id,
    ...(row.measured ? { height_m: row.heightM } : {}),
    status: row.status,
    ...(row.confidence !== undefined ? { confidence: row.confidence } : {}),
    year: row.year,
    ...(row.observer !== undefined ? { observer: row.observer } : {}),
    ...(row.note !== undefined ? { note: row.note } : {}),
  };
}
