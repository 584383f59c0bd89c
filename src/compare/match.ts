/**
 * Matching the dams of two runs, and classing each as new, gone, persisting
 * or changed.
 *
 * 1. By id: a dam of A and a dam of B with the same id are the same dam,
 *    unless both crests are located and lie more than `idConflictM` apart
 *    (ids that a reader generated from feature order, `dam-<n>`, or reused
 *    ids): then they are left for step 2 and a note says so.
 * 2. By proximity: the remaining dams are paired closest first (greedy over
 *    all pairs sorted by distance, ties by input order) when their crest
 *    midpoints lie within `toleranceM` of each other. Distance is the
 *    great-circle distance between the crests' WGS 84 positions (sphere of
 *    the mean Earth radius, 6 371 008.8 m, IUGG), or the map distance when
 *    both runs share a CRS and lon/lat is missing.
 * 3. Whatever is left is gone (only in A) or new (only in B).
 *
 * A matched pair is `changed` when any of these hold, else `persisting`:
 * - the status differs (e.g. confirmed → breached);
 * - both heights are known and differ by at least `heightChangeM`;
 * - whether the dam counts in the totals differs;
 * - the dam's counted water (its attributed volume when it counts in the
 *   totals, its own pond when not) differs by at least `volumeChangeFraction`
 *   of the larger and at least `volumeChangeMinM3`;
 * - the dam that drowns it differs.
 */
import type { CrestPoint, RunDam } from './run-record.js';

/** The four classes of a dam between two runs (names fixed by the output format). */
export type DamChangeClass = 'new' | 'gone' | 'persisting' | 'changed';

/** Why a matched dam is `changed`. */
export type ChangeReason = 'status' | 'height' | 'in_totals' | 'volume' | 'drowned_by';

/** Thresholds of matching and classing (defaults: DEFAULT_MATCH). */
export interface MatchOptions {
  /** Largest distance between crest midpoints of one dam in two runs, metres. */
  toleranceM: number;
  /** Same id but crests farther apart than this: not the same dam, metres. */
  idConflictM: number;
  /** Smallest height difference called a change, metres. */
  heightChangeM: number;
  /** Smallest relative volume difference called a change (of the larger volume). */
  volumeChangeFraction: number;
  /** Smallest absolute volume difference called a change, m³. */
  volumeChangeMinM3: number;
}

/**
 * Defaults, project choices:
 * - 10 m tolerance: above the few metres by which two mappings of one crest
 *   differ (handheld GNSS and imagery digitising, common practice), below
 *   the spacing of most neighbouring dams in a complex;
 * - 100 m before one id is doubted;
 * - 0.10 m of height: the vertical error of a QL2 lidar DEM (USGS Lidar Base
 *   Specification, 10 cm RMSEz), the scale at which DEM-derived heights differ
 *   without any change on the ground;
 * - 10 % and 1 m³ of volume: below the spread of a pond's volume from DEM
 *   error alone (common practice for small ponds).
 */
export const DEFAULT_MATCH: MatchOptions = {
  toleranceM: 10,
  idConflictM: 100,
  heightChangeM: 0.1,
  volumeChangeFraction: 0.1,
  volumeChangeMinM3: 1,
};

/** Mean Earth radius, metres (IUGG: R1 = 6 371 008.8 m). */
export const EARTH_MEAN_RADIUS_M = 6_371_008.8;

/** One row of the match: indices into A's and B's dams (null for unmatched). */
export interface DamMatch {
  a: number | null;
  b: number | null;
  by: 'id' | 'proximity' | null;
  /** Crest-to-crest distance, metres; null when a side is missing or unlocated. */
  distanceM: number | null;
  change: DamChangeClass;
  reasons: ChangeReason[];
}

/** How two runs' crest points are compared: lon/lat always; map x/y when both share a CRS of known unit. */
export interface DistanceFrame {
  /** Metres per map unit when both runs share one projected CRS, else null. */
  sharedCrsUnitM: number | null;
}

/** Great-circle distance between two WGS 84 points, metres (haversine on the mean sphere). */
export function greatCircleM(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const r = Math.PI / 180;
  const dLat = (lat2 - lat1) * r;
  const dLon = (lon2 - lon1) * r;
  const h = Math.sin(dLat / 2) ** 2 + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.sin(dLon / 2) ** 2;
  return 2 * EARTH_MEAN_RADIUS_M * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** Distance between two crest points, metres, or null when they cannot be compared. */
export function crestDistanceM(p: CrestPoint | null, q: CrestPoint | null, frame: DistanceFrame): number | null {
  if (!p || !q) return null;
  if (p.lon !== null && p.lat !== null && q.lon !== null && q.lat !== null) return greatCircleM(p.lon, p.lat, q.lon, q.lat);
  if (frame.sharedCrsUnitM !== null) return Math.hypot(q.x - p.x, q.y - p.y) * frame.sharedCrsUnitM;
  return null;
}

/** Matches and classes the dams of two runs; notes say what was doubted. */
export function matchDams(
  a: readonly RunDam[],
  b: readonly RunDam[],
  frame: DistanceFrame,
  options: MatchOptions = DEFAULT_MATCH,
): { matches: DamMatch[]; notes: string[] } {
  const notes: string[] = [];
  const takenA = new Uint8Array(a.length);
  const takenB = new Uint8Array(b.length);
  const pairs: { a: number; b: number; by: 'id' | 'proximity'; distanceM: number | null }[] = [];

  const bById = new Map<string, number>();
  b.forEach((d, k) => {
    if (!bById.has(d.id)) bById.set(d.id, k);
  });
  a.forEach((d, j) => {
    const k = bById.get(d.id);
    if (k === undefined || takenB[k]) return;
    const dist = crestDistanceM(d.crest, b[k]!.crest, frame);
    if (dist !== null && dist > options.idConflictM) {
      notes.push(`dam id ${d.id} is in both runs but its crests lie ${dist.toFixed(0)} m apart (more than ${options.idConflictM} m): treated as two different dams`);
      return;
    }
    takenA[j] = 1;
    takenB[k] = 1;
    pairs.push({ a: j, b: k, by: 'id', distanceM: dist });
  });

  for (const c of proximityCandidates(a, b, takenA, takenB, frame, options.toleranceM)) {
    if (takenA[c.a] || takenB[c.b]) continue;
    takenA[c.a] = 1;
    takenB[c.b] = 1;
    pairs.push({ a: c.a, b: c.b, by: 'proximity', distanceM: c.distanceM });
  }

  const unlocated = a.filter((d) => !d.crest).length + b.filter((d) => !d.crest).length;
  if (unlocated > 0) notes.push(`${unlocated} dams have no crest location in their run (runs from before locations were written): they were matched by id only`);

  // Output order: B's dams in B's order (each with its match), then A's dams that are gone.
  const byB = new Map(pairs.map((p) => [p.b, p]));
  const matches: DamMatch[] = [];
  b.forEach((_, k) => {
    const p = byB.get(k);
    if (!p) {
      matches.push({ a: null, b: k, by: null, distanceM: null, change: 'new', reasons: [] });
      return;
    }
    const reasons = changeReasons(a[p.a]!, b[k]!, options);
    matches.push({ a: p.a, b: k, by: p.by, distanceM: p.distanceM, change: reasons.length > 0 ? 'changed' : 'persisting', reasons });
  });
  a.forEach((_, j) => {
    if (!takenA[j]) matches.push({ a: j, b: null, by: null, distanceM: null, change: 'gone', reasons: [] });
  });
  return { matches, notes };
}

/** Water a dam counts: its attributed volume when in the totals, else its own pond, m³. */
export function countedVolumeM3(d: RunDam): number {
  return d.in_totals ? d.volume_m3 : d.standalone_volume_m3;
}

/** The reasons a matched pair differs (empty: persisting). */
export function changeReasons(a: RunDam, b: RunDam, options: MatchOptions = DEFAULT_MATCH): ChangeReason[] {
  const reasons: ChangeReason[] = [];
  if (a.status !== b.status) reasons.push('status');
  if (a.height_m !== null && b.height_m !== null && Math.abs(b.height_m - a.height_m) >= options.heightChangeM) reasons.push('height');
  if (a.in_totals !== b.in_totals) reasons.push('in_totals');
  const va = countedVolumeM3(a);
  const vb = countedVolumeM3(b);
  const dv = Math.abs(vb - va);
  if (dv >= options.volumeChangeMinM3 && dv >= options.volumeChangeFraction * Math.max(Math.abs(va), Math.abs(vb))) reasons.push('volume');
  if (a.drowned_by !== b.drowned_by) reasons.push('drowned_by');
  return reasons;
}

/**
 * Unmatched pairs within `toleranceM`, closest first. Candidates come from a
 * bucket grid of the crests in local metres (equirectangular about the mean
 * latitude), so the work grows with the dams, not with their product.
 */
function proximityCandidates(
  a: readonly RunDam[],
  b: readonly RunDam[],
  takenA: Uint8Array,
  takenB: Uint8Array,
  frame: DistanceFrame,
  toleranceM: number,
): { a: number; b: number; distanceM: number }[] {
  const useLonLat = [...a, ...b].every((d) => !d.crest || (d.crest.lon !== null && d.crest.lat !== null));
  if (!useLonLat && frame.sharedCrsUnitM === null) return [];
  let latSum = 0;
  let latCount = 0;
  for (const d of [...a, ...b]) {
    if (d.crest?.lat != null) {
      latSum += d.crest.lat;
      latCount++;
    }
  }
  const cosLat = Math.cos(((latCount > 0 ? latSum / latCount : 0) * Math.PI) / 180);
  const deg = (Math.PI / 180) * EARTH_MEAN_RADIUS_M;
  const unitM = frame.sharedCrsUnitM ?? 1;
  const localM = (p: CrestPoint): [number, number] =>
    useLonLat ? [p.lon! * deg * cosLat, p.lat! * deg] : [p.x * unitM, p.y * unitM];
  // Buckets a little larger than the tolerance so the equirectangular scale error cannot drop a pair.
  const size = Math.max(toleranceM * 1.5, 1e-6);
  const buckets = new Map<string, number[]>();
  b.forEach((d, k) => {
    if (takenB[k] || !d.crest) return;
    const [x, y] = localM(d.crest);
    const key = `${Math.floor(x / size)},${Math.floor(y / size)}`;
    const list = buckets.get(key);
    if (list) list.push(k);
    else buckets.set(key, [k]);
  });
  const out: { a: number; b: number; distanceM: number }[] = [];
  a.forEach((d, j) => {
    if (takenA[j] || !d.crest) return;
    const [x, y] = localM(d.crest);
    const bx = Math.floor(x / size);
    const by = Math.floor(y / size);
    for (let dy = -1; dy <= 1; dy++) {
      for (let dx = -1; dx <= 1; dx++) {
        for (const k of buckets.get(`${bx + dx},${by + dy}`) ?? []) {
          const dist = crestDistanceM(d.crest, b[k]!.crest, frame);
          if (dist !== null && dist <= toleranceM) out.push({ a: j, b: k, distanceM: dist });
        }
      }
    }
  });
  out.sort((p, q) => p.distanceM - q.distanceM || p.a - q.a || p.b - q.b);
  return out;
}
