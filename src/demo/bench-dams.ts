/**
 * Dams for the bench landscape: sites spaced along every valley so each pond
 * mostly stands clear of the next dam up (spacing ≥ 1.15 × height / floor
 * slope, at least 45 m), tightened until there are enough, then a seeded
 * choice of the requested number. Crest lines are drawn on the finished DEM
 * exactly as for the demo.
 */
import type { DamStatus } from '../inventory.js';
import type { Rng } from '../uncertainty/random.js';
import type { Channel } from './channel.js';
import { drawCrest, lowestNear, toMap, type CrestDem } from './crest.js';
import { UNMEASURED_REACH_M } from './inventory.js';
import type { DemoDam, DemoDamProperties } from './types.js';

/** Dam heights by valley order, metres: low on the flat trunk so its ponds stay a few thousand m². */
const HEIGHT_RANGE_M: Record<number, [number, number]> = { 1: [0.3, 0.8], 2: [0.4, 1.4], 3: [0.4, 1.6], 4: [0.4, 1.4] };

/** Dams keep this far from a valley's mouth and head, metres. */
const MOUTH_CLEAR_M = 90;
const HEAD_CLEAR_M = 60;

interface Site {
  channel: number;
  k: number;
  heightM: number;
}

/** Spaces dams along every valley, then keeps `damCount` of them (seeded); throws when the valleys cannot hold that many. */
export function placeBenchDams(dem: CrestDem, channels: readonly Channel[], damCount: number, rng: Rng): DemoDam[] {
  let spacing = 1.15;
  let sites: Site[] = [];
  for (let attempt = 0; attempt < 12; attempt++) {
    sites = siteList(channels, spacing, rng);
    if (sites.length >= damCount) break;
    spacing *= 0.8;
  }
  if (sites.length < damCount) throw new Error(`the bench valleys hold only ${sites.length} dams; ask for fewer or a larger grid`);
  for (let i = 0; i < damCount; i++) {
    const j = i + Math.floor(rng() * (sites.length - i));
    const t = sites[i]!;
    sites[i] = sites[j]!;
    sites[j] = t;
  }
  const chosen = sites.slice(0, damCount).sort((a, b) => a.channel - b.channel || b.k - a.k);
  return chosen.map((site, i) => benchDam(dem, channels[site.channel]!, site, i, rng));
}

function siteList(channels: readonly Channel[], spacing: number, rng: Rng): Site[] {
  const sites: Site[] = [];
  channels.forEach((ch, channel) => {
    const [hMin, hMax] = HEIGHT_RANGE_M[Math.min(4, ch.spec.order)] ?? [0.4, 1.4];
    const lengthM = (ch.n - 1) * ch.stepM;
    let fromMouth = MOUTH_CLEAR_M;
    while (fromMouth < lengthM - HEAD_CLEAR_M) {
      const k = Math.round((lengthM - fromMouth) / ch.stepM);
      const heightM = Math.round((hMin + (hMax - hMin) * rng()) * 10) / 10;
      sites.push({ channel, k, heightM });
      fromMouth += Math.max(45, (spacing * heightM) / ch.slope[k]!) + 30 * rng();
    }
  });
  return sites;
}

function benchDam(dem: CrestDem, ch: Channel, site: Site, index: number, rng: Rng): DemoDam {
  const { k, heightM } = site;
  const id = `B-${String(index + 1).padStart(4, '0')}`;
  const tx = ch.tx[k]!;
  const ty = ch.ty[k]!;
  const sx = ch.x[k]! - ty * ch.meanderM[k]!;
  const sy = ch.y[k]! + tx * ch.meanderM[k]!;
  const draw = rng();
  const status: DamStatus = draw < 0.02 ? 'breached' : draw < 0.12 ? 'candidate' : 'confirmed';
  const isPoint = status === 'candidate' && rng() < 0.4;
  const measured = status === 'confirmed' && rng() < 0.85;
  const year = rng() < 0.6 ? 2019 : 2024;
  const properties: DemoDamProperties = {
    id,
    ...(measured ? { height_m: heightM } : {}),
    status,
    ...(status === 'candidate' ? { confidence: Math.round((0.3 + 0.6 * rng()) * 100) / 100 } : {}),
    year,
  };
  const base = {
    channelId: ch.spec.id,
    distanceFromHeadM: k * ch.stepM,
    heightM,
    valleyTangent: [tx, -ty] as [number, number],
    streamPoint: toMap(dem, sx, sy),
    roles: [],
  };
  if (isPoint) {
    const angle = 2 * Math.PI * rng();
    const offsetM = 1 + 3 * rng();
    const [x, y] = toMap(dem, sx + offsetM * Math.cos(angle), sy + offsetM * Math.sin(angle));
    const bedZM = lowestNear(dem, sx, sy, 2);
    return { id, geometry: { kind: 'point', x, y }, properties, truth: { ...base, bedZM, crestZM: bedZM + heightM, lineReachM: 0 } };
  }
  const reachM = measured ? heightM : Math.max(heightM, UNMEASURED_REACH_M);
  const crest = drawCrest(dem, { x: sx, y: sy, tx, ty, reachM });
  return {
    id,
    geometry: { kind: 'line', lines: [crest.line] },
    properties,
    truth: { ...base, bedZM: crest.bedZM, crestZM: crest.bedZM + heightM, lineReachM: reachM },
  };
}
