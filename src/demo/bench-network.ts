/**
 * A dendritic valley network for the bench landscape, grown from the outlet
 * upstream: a trunk across the grid, and valleys of orders 2 to 4 branching
 * off their parents at about regular spacing on alternate sides.
 * Each valley grows in 10 m steps with a gently wandering heading and stops
 * at its target length, near the grid edge, or where it would come too close
 * to another valley (a coarse occupancy grid keeps ridges between them).
 *
 * Positions are in the generator's internal frame (metres, x east, y south).
 */
import type { Rng } from '../uncertainty/random.js';

/** A grown valley axis, head first, before smoothing. */
export interface GrownValley {
  id: string;
  order: number;
  /** Index of the parent in the list, −1 for the trunk. */
  parent: number;
  /** Control points every 10 m, head first; the last one is the mouth. */
  points: [number, number][];
}

/** Growth step, metres. */
const STEP_M = 10;
/** Occupancy cell, metres. */
const OCC_M = 20;
/** Valleys keep their axes this far apart, metres. */
const CLEARANCE_M = 200;
/** Axes stay this far inside the grid edges (except the trunk's outlet end), metres. */
const EDGE_M = 260;
/** Shortest valley worth keeping, metres. */
const MIN_LENGTH_M = 250;

/**
 * How valleys of each order branch: first branch this far above the mouth,
 * then about every `everyM`, none within `stopM` of the head; branches grow
 * up to `maxLengthM`.
 */
const BRANCHING: Record<number, { firstM: number; everyM: number; stopM: number; maxLengthM: number }> = {
  1: { firstM: 400, everyM: 420, stopM: 400, maxLengthM: 2600 },
  2: { firstM: 300, everyM: 380, stopM: 300, maxLengthM: 1400 },
  3: { firstM: 250, everyM: 360, stopM: 250, maxLengthM: 700 },
};

class Occupancy {
  readonly nx: number;
  readonly ny: number;
  readonly owner: Int32Array;
  constructor(widthM: number, heightM: number) {
    this.nx = Math.ceil(widthM / OCC_M) + 1;
    this.ny = Math.ceil(heightM / OCC_M) + 1;
    this.owner = new Int32Array(this.nx * this.ny).fill(-1);
  }
  mark(x: number, y: number, id: number): void {
    const i = Math.floor(x / OCC_M);
    const j = Math.floor(y / OCC_M);
    if (i >= 0 && i < this.nx && j >= 0 && j < this.ny) this.owner[j * this.nx + i] = id;
  }
  /** True when a cell within the clearance belongs to a valley other than `self` (and other than `parent`, when `ignoreParent`). */
  blocked(x: number, y: number, self: number, parent: number, ignoreParent: boolean): boolean {
    const r = Math.ceil(CLEARANCE_M / OCC_M);
    const i0 = Math.floor(x / OCC_M);
    const j0 = Math.floor(y / OCC_M);
    for (let j = j0 - r; j <= j0 + r; j++) {
      if (j < 0 || j >= this.ny) continue;
      for (let i = i0 - r; i <= i0 + r; i++) {
        if (i < 0 || i >= this.nx) continue;
        const o = this.owner[j * this.nx + i]!;
        if (o < 0 || o === self || (ignoreParent && o === parent)) continue;
        const dx = (i + 0.5) * OCC_M - x;
        const dy = (j + 0.5) * OCC_M - y;
        if (dx * dx + dy * dy <= CLEARANCE_M * CLEARANCE_M) return true;
      }
    }
    return false;
  }
}

interface Growth {
  start: [number, number];
  heading: number;
  maxLengthM: number;
  self: number;
  parent: number;
  /** The start lies on the grid edge (the trunk): the edge rule applies only after this distance. */
  edgeFreeM: number;
}

/** Grows one valley from its mouth upstream; returns points mouth first. */
function grow(g: Growth, occ: Occupancy, widthM: number, heightM: number, rng: Rng): [number, number][] {
  const pts: [number, number][] = [g.start];
  const a1 = 0.22 + 0.1 * rng();
  const l1 = 700 + 800 * rng();
  const p1 = 2 * Math.PI * rng();
  const a2 = 0.1 + 0.05 * rng();
  const l2 = 250 + 200 * rng();
  const p2 = 2 * Math.PI * rng();
  let x = g.start[0];
  let y = g.start[1];
  for (let s = STEP_M; s <= g.maxLengthM; s += STEP_M) {
    const h =
      g.heading + a1 * (Math.sin((2 * Math.PI * s) / l1 + p1) - Math.sin(p1)) + a2 * (Math.sin((2 * Math.PI * s) / l2 + p2) - Math.sin(p2));
    const nx = x + STEP_M * Math.cos(h);
    const ny = y + STEP_M * Math.sin(h);
    if (s > g.edgeFreeM && (nx < EDGE_M || ny < EDGE_M || nx > widthM - EDGE_M || ny > heightM - EDGE_M)) break;
    if (occ.blocked(nx, ny, g.self, g.parent, s < 2 * CLEARANCE_M)) break;
    x = nx;
    y = ny;
    pts.push([x, y]);
  }
  return pts;
}

/**
 * Grows the network on a grid `widthM` × `heightM` metres; the trunk's mouth
 * is on the east edge at `outletY`. Returns valleys parents first.
 */
export function growNetwork(widthM: number, heightM: number, outletY: number, rng: Rng): GrownValley[] {
  const occ = new Occupancy(widthM, heightM);
  const out: GrownValley[] = [];
  const keep = (id: string, order: number, parent: number, mouthFirst: [number, number][]): number => {
    const index = out.length;
    for (const [x, y] of mouthFirst) occ.mark(x, y, index);
    out.push({ id, order, parent, points: mouthFirst.slice().reverse() });
    return index;
  };
  const trunk = grow(
    { start: [widthM, outletY], heading: Math.PI, maxLengthM: widthM - 2 * EDGE_M, self: 0, parent: -1, edgeFreeM: 2 * EDGE_M },
    occ,
    widthM,
    heightM,
    rng,
  );
  keep('T', 1, -1, trunk);

  // Branch every valley in turn (parents before children), alternating sides.
  for (let v = 0; v < out.length; v++) {
    const valley = out[v]!;
    const rule = BRANCHING[valley.order];
    if (!rule) continue;
    const lengthM = (valley.points.length - 1) * STEP_M;
    let side = rng() < 0.5 ? 1 : -1;
    let count = 0;
    for (let s = rule.firstM * (1 + 0.4 * rng()); s < lengthM - rule.stopM; s += rule.everyM * (0.85 + 0.4 * rng())) {
      const branch = branchFrom(out, v, Math.round(s / STEP_M), side, 0.85 + 0.35 * rng(), rule.maxLengthM, occ, widthM, heightM, rng);
      side = -side;
      if (!branch) continue;
      count++;
      const id = valley.order === 1 ? `T${String(count).padStart(2, '0')}` : `${valley.id}-${count}`;
      keep(id, valley.order + 1, v, branch);
    }
  }
  return out;
}

/**
 * Grows a branch off valley `parent` at its point `kFromMouth` (counted from
 * the mouth), turning `angle` radians from the parent's upstream heading
 * towards `side`. Null when it comes out too short.
 */
function branchFrom(
  out: readonly GrownValley[],
  parent: number,
  kFromMouth: number,
  side: number,
  angle: number,
  maxLengthM: number,
  occ: Occupancy,
  widthM: number,
  heightM: number,
  rng: Rng,
): [number, number][] | null {
  const pts = out[parent]!.points;
  const n = pts.length;
  const k = n - 1 - kFromMouth;
  if (k < 2 || k > n - 3) return null;
  const [x, y] = pts[k]!;
  const [ux, uy] = pts[k - 2]!;
  const upstream = Math.atan2(uy - y, ux - x);
  const branch = grow(
    { start: [x, y], heading: upstream + side * angle, maxLengthM: maxLengthM * (0.7 + 0.3 * rng()), self: out.length, parent, edgeFreeM: 0 },
    occ,
    widthM,
    heightM,
    rng,
  );
  return (branch.length - 1) * STEP_M >= MIN_LENGTH_M ? branch : null;
}
