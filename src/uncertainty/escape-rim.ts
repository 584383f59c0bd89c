/**
 * The way out of a pond that escapes below its crest, found again on the
 * true ground in every draw.
 *
 * Water that leaves round a short crest (or off the reach box, or into a
 * DEM gap) does so at the minimax of the ground between the pond and its
 * ways out: the lowest, over all paths, of the highest cell along the path.
 * A DEM error moves that minimax in two ways: it moves the pass (drawn with
 * the pond, dem-error.ts), and it can raise or lower other cells near the
 * pass so that the highest point of the way out moves along it or across
 * it. The second is not a shift of one cell, so it is not drawn as one: the
 * ground round the pond's edge (the rim) is kept, and every draw floods it
 * again on the true ground, z − e.
 *
 * What is kept, once per such pond, while the DEM is in memory:
 * - the rim: the cells a flood from the pond's seeds reaches below the
 *   draws' top plus a margin (RIM_MARGIN_SDS standard deviations of an
 *   error difference), except the deep water (cells joined more than the
 *   margin below the escape, collapsed into the flood's start: no error can
 *   lift them to the escape) and past the ways out: spill-band cells, the
 *   reach box's edge, cells next to NoData (as the fill, ponds/fill.ts), and
 *   cells beyond a pass lying the margin below it (the water drains from
 *   there; cells the fill with the passes closed reaches are not beyond);
 * - the error of every rim cell as kriged from the dam's jointly drawn
 *   errors [reference, pond mean, passes] (simple kriging: e = C_xv·C_vv⁻¹·v,
 *   so the rim keeps what it shares with the pond, the crest and other
 *   dams), plus, near the passes (RIM_LOCAL_CELLS), the exact Gaussian
 *   conditional variation C_LL − C_Lv·C_vv⁻¹·C_vL (conditioning by kriging,
 *   Journel & Huijbregts 1978, Mining Geostatistics, ch. VII), drawn through
 *   its Cholesky factor. Away from the passes the rim's own variation is left
 *   out: the next ways out stand more than the margin higher.
 *
 * A draw floods the rim (a priority-flood from the deep water's edge, Barnes,
 * Lehman & Mulla 2014) until it pops a way out or rises above the draw's
 * crest: that level is the escape on the true ground. The zero-error flood
 * must give the DEM's escape, or the rim is dropped and the pond keeps the
 * passes' model alone (dem-error.ts).
 */
import type { Grid } from '../grid/grid.js';
import { indexOfSorted, lowerBound } from '../grid/sorted-search.js';
import { MinHeap } from '../grid/priority-queue.js';
import type { CrestSetup } from '../ponds/crest.js';
import { startFlood, type FillScratch, type PondFill, type ReachBox } from '../ponds/fill.js';
import { pointCovariance, pointSupportCovariances, supportCovarianceBlock, supportSize, type ErrorSupport } from './covariance.js';
import { cholesky } from './dem-error.js';

/** The rim's margin in standard deviations of the error difference of two cells (√2·σ at most). */
export const RIM_MARGIN_SDS = 4;
/** Cells within this many cells (Chebyshev) of a pass get their own error variation. */
export const RIM_LOCAL_CELLS = 5;
/** Most rim cells with their own variation (the nearest to a pass). */
export const RIM_MAX_LOCAL = 400;
/** Most cells a rim may hold; beyond, the pond keeps the passes' model. */
export const RIM_MAX_CELLS = 250_000;

const WALL = 0;
const OPEN = 1;
const WAY_OUT = 2;

/** The ground round a pond's ways out, as the draws flood it (see the file comment). */
export interface EscapeRim {
  /** Window of the rim (a border of walls round it), cells. */
  width: number;
  height: number;
  /** Per window cell: 0 wall (or deep water), 1 open ground, 2 a way out. */
  kind: Uint8Array;
  /** Window cell → rim row (−1: wall or deep water). */
  row: Int32Array;
  /** Per rim row: DEM elevation (m, the DEM's float32 value) and flat index in the grid the rim was built on. */
  zM: Float32Array;
  gridCells: Int32Array;
  /** Flat offsets of a window cell's 8 neighbours. */
  offsets: Int32Array;
  /** Window cells the flood starts from (the deep water's edge, or the seeds). */
  start: Int32Array;
  /**
   * Jointly drawn errors per dam (supportSize); the kriging weights on them
   * of the rows within the error's range of the support (m per row, from
   * weightAt[row]; −1: all zero), and the largest Σ|weights| of a row.
   */
  m: number;
  weights: Float64Array;
  weightAt: Int32Array;
  weightReach: number;
  /** Rim rows with their own variation (ascending), each row's place among them (−1: none), and the lower Cholesky factor of its covariance given the joint errors. */
  localRows: Int32Array;
  localOf: Int32Array;
  localLower: Float64Array;
  /** The escape level of the zero-error flood (the DEM's), m. */
  escapeM: number;
  /** Per rim row: cell area (m²), and 1 where the cell is in the deterministic pond (joined below the DEM's escape). */
  areaM2: Float64Array;
  inPond: Uint8Array;
  /** Σ area × kriging weights over the rim's part of the deterministic pond (m), and its local rows. */
  pondWeights: Float64Array;
  pondLocalRows: Int32Array;
  /** Area of the deep water (m²), Σ area × elevation over it (m³), and the deterministic pond's area (deep water and the rim's part of it), m². */
  deepAreaM2: number;
  deepAreaZ: number;
  pondAreaM2: number;
  /** Per rim row: sd of its error not carried by the kriged and local draws, m (0 near the passes). */
  residualSdM: Float32Array;
  /** Rim rows on the pond's side of its ways out (cells the fill with the passes closed reaches), open ground, by ground elevation (m); their largest residual sd, m. */
  pondSideRows: Int32Array;
  pondSideZM: Float64Array;
  pondSideMaxSdM: number;
  /**
   * Per rim row: for cells no drawn error reaches (the DEM's ground in every
   * draw), the lowest level (m) at which water leaves from them through such
   * cells alone; Infinity elsewhere. A draw's flood leaves at a cell whose
   * level is already that high: what lies beyond is the same in every draw.
   */
  farExitM: Float32Array;
}

/** Reusable buffers for flooding one rim. */
export interface RimWork {
  heap: MinHeap;
  mark: Int32Array;
  stamp: number;
  /** The current draw's error per rim row (m), valid where `known` holds the draw's stamp (or everywhere when `given`). */
  errorM: Float64Array;
  known: Int32Array;
  drawStamp: number;
  given: boolean;
  /** The draw's joint errors (m), local variation per local row (m), and a bound on any row's kriged error (m). */
  joint: Float64Array;
  localM: Float64Array;
  krigedBoundM: number;
  /** Standard normals for the local variation, one per local row (filled by the caller). */
  normals: Float64Array;
  /** Rim rows the last flood took below its escape (the pond's rim cells), in order, and their ground on the true ground (m); `taken` of them. */
  takenRows: Int32Array;
  takenGroundM: Float64Array;
  taken: number;
  /** Stamps marking the taken rows per draw. */
  takenMark: Int32Array;
  takenStamp: number;
  /** The last pond's water level on the true ground, m. */
  waterM: number;
}

/** Buffers for `rim`. */
export function createRimWork(rim: EscapeRim): RimWork {
  return {
    heap: new MinHeap(256),
    mark: new Int32Array(rim.width * rim.height),
    stamp: 0,
    errorM: new Float64Array(rim.zM.length),
    known: new Int32Array(rim.zM.length),
    drawStamp: 0,
    given: false,
    joint: new Float64Array(rim.m),
    localM: new Float64Array(rim.localRows.length),
    krigedBoundM: 0,
    normals: new Float64Array(rim.localRows.length),
    takenRows: new Int32Array(rim.zM.length),
    takenGroundM: new Float64Array(rim.zM.length),
    taken: 0,
    takenMark: new Int32Array(rim.zM.length),
    takenStamp: 0,
    waterM: NaN,
  };
}

/**
 * Builds the rim of a pond whose water escapes below its crest, or null
 * when it would hold more than RIM_MAX_CELLS cells or its zero-error flood
 * misses the DEM's escape. `fill` is the dam's fill (its escape is the
 * DEM's), `closed` the fill with the passes `passCells` closed; `support`
 * holds the dam's jointly drawn errors (passes in the same order).
 */
export function buildEscapeRim(args: {
  grid: Grid;
  setup: CrestSetup;
  fill: PondFill;
  closed: PondFill;
  support: ErrorSupport;
  floodTopM: number;
  reachBox: ReachBox | undefined;
  sigmaM: number;
  rangeM: number;
  scratch: FillScratch | undefined;
}): EscapeRim | null {
  const { grid, setup, fill, closed, support, floodTopM, reachBox, sigmaM, rangeM } = args;
  const { width, z } = grid;
  const escapeM = fill.escapeLevelM;
  if (!(sigmaM > 0) || fill.escapeKind === null || !Number.isFinite(escapeM)) return null;
  const marginM = RIM_MARGIN_SDS * Math.SQRT2 * sigmaM;
  const limitM = Math.max(floodTopM, fill.topLevelM) + marginM;
  const { scratch: s, stamp, band, col0, row0, lastCol, lastRow } = startFlood(grid, setup, reachBox, undefined, args.scratch);
  const mark = s.mark;
  const heap = s.heap;
  const pondSide = Int32Array.from(closed.order).sort();
  const offsets = [-width - 1, -width, -width + 1, -1, 1, width - 1, width, width + 1];
  // The flood from the seeds: each popped cell is deep water, open ground or a way out.
  const cells: number[] = [];
  const kinds: number[] = [];
  const joins: number[] = [];
  const deep: number[] = [];
  let deepAreaM2 = 0;
  let deepAreaZ = 0;
  let level = -Infinity;
  while (heap.size > 0) {
    let i = heap.pop();
    if (heap.lastPriority > level) level = heap.lastPriority;
    if (level > limitM) break;
    const inBand = i < 0;
    if (inBand) i = ~i;
    const col = i % width;
    const row = (i - col) / width;
    let kind = OPEN;
    if (inBand || col === col0 || col === lastCol || row === row0 || row === lastRow) kind = WAY_OUT;
    else {
      for (let k = 0; k < 8; k++) {
        const zj = z[i + offsets[k]!]!;
        if (zj !== zj) kind = WAY_OUT;
      }
    }
    if (kind === OPEN && level < escapeM - marginM) {
      deep.push(i);
      deepAreaM2 += grid.cellAreaM2[row]!;
      deepAreaZ += grid.cellAreaM2[row]! * z[i]!;
    } else {
      // Beyond a pass and well below it: the water drains away from here.
      if (kind === OPEN && level >= escapeM && z[i]! <= level - marginM && indexOfSorted(pondSide, i) < 0) kind = WAY_OUT;
      cells.push(i);
      kinds.push(kind);
      joins.push(level);
      if (cells.length > RIM_MAX_CELLS) return null;
      if (kind === WAY_OUT) continue;
    }
    for (let k = 0; k < 8; k++) {
      const j = i + offsets[k]!;
      const m = mark[j]!;
      if (m === stamp) continue;
      mark[j] = stamp;
      heap.push(m === band ? ~j : j, z[j]!);
    }
  }
  if (cells.length === 0) return null;

  // The window: the rim's box with a border of walls.
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  for (const i of cells) {
    const col = i % width;
    const row = (i - col) / width;
    c0 = Math.min(c0, col);
    c1 = Math.max(c1, col);
    r0 = Math.min(r0, row);
    r1 = Math.max(r1, row);
  }
  c0 -= 1;
  r0 -= 1;
  const ww = c1 - c0 + 2;
  const wh = r1 - r0 + 2;
  const toWindow = (i: number): number => {
    const col = i % width;
    const row = (i - col) / width;
    return (row - r0) * ww + (col - c0);
  };
  const kind = new Uint8Array(ww * wh);
  const rowOf = new Int32Array(ww * wh).fill(-1);
  const n = cells.length;
  const zM = new Float32Array(n);
  const gridCells = Int32Array.from(cells);
  const areaM2 = new Float64Array(n);
  const inPond = new Uint8Array(n);
  let pondAreaM2 = deepAreaM2;
  for (let r = 0; r < n; r++) {
    const w = toWindow(cells[r]!);
    kind[w] = kinds[r]!;
    rowOf[w] = r;
    zM[r] = z[cells[r]!]!;
    areaM2[r] = grid.cellAreaM2[Math.floor(cells[r]! / width)]!;
    // As the fill's pond at its level: cells joined below it (ponds/stage-storage.ts).
    if (kinds[r] === OPEN && joins[r]! < fill.waterLevelM) {
      inPond[r] = 1;
      pondAreaM2 += areaM2[r]!;
    }
  }
  // The flood starts next to the deep water (or at the seeds when there is none).
  const start: number[] = [];
  const deepSet = Int32Array.from(deep).sort();
  const seeds = Int32Array.from(setup.seedCells).sort();
  for (let r = 0; r < n; r++) {
    const i = cells[r]!;
    let next = indexOfSorted(seeds, i) >= 0;
    for (let k = 0; k < 8 && !next; k++) if (indexOfSorted(deepSet, i + offsets[k]!) >= 0) next = true;
    if (next) start.push(toWindow(i));
  }

  // Kriging weights on the joint errors and what they leave of each cell's error; the local variation near the passes.
  const m = supportSize(support);
  const sill = sigmaM * sigmaM;
  const cvv = supportCovarianceBlock(support, support, sill, rangeM, true);
  const lvv = cholesky(cvv, m).lower;
  // Dense while building (freed after), packed to the rows within range below.
  const weights = new Float64Array(n * m);
  const residualSdM = new Float32Array(n);
  const cxv = new Float64Array(m);
  const colOf = (r: number): number => (cells[r]! % width) + grid.colOffset;
  const rowOfCell = (r: number): number => Math.floor(cells[r]! / width) + grid.rowOffset;
  let weightReach = 0;
  // Beyond the range of the support's box no covariance is left: weights 0, the whole error residual.
  const reachCols = rangeM / support.cellWM;
  const reachRows = rangeM / support.cellHM;
  for (let r = 0; r < n; r++) {
    const c = colOf(r);
    const q = rowOfCell(r);
    if (c < support.col0 - reachCols || c > support.col1 + reachCols || q < support.row0 - reachRows || q > support.row1 + reachRows) {
      residualSdM[r] = sigmaM;
      continue;
    }
    pointSupportCovariances(support, c, q, sill, rangeM, cxv);
    const wr = weights.subarray(r * m, (r + 1) * m);
    solveInto(lvv, m, cxv, wr);
    let explained = 0;
    let reach = 0;
    for (let j = 0; j < m; j++) {
      explained += wr[j]! * cxv[j]!;
      reach += Math.abs(wr[j]!);
    }
    residualSdM[r] = Math.sqrt(Math.max(0, sill - explained));
    weightReach = Math.max(weightReach, reach);
  }
  const passes: [number, number][] = [];
  for (let j = 0; j < support.pointCol.length; j++) if (Number.isFinite(support.passDeltaM[j]!)) passes.push([support.pointCol[j]!, support.pointRow[j]!]);
  const near: { r: number; d: number }[] = [];
  for (let r = 0; r < n; r++) {
    let d = Infinity;
    for (const [pc, pr] of passes) d = Math.min(d, Math.max(Math.abs(colOf(r) - pc), Math.abs(rowOfCell(r) - pr)));
    if (d <= RIM_LOCAL_CELLS) near.push({ r, d });
  }
  near.sort((a, b) => a.d - b.d || a.r - b.r);
  const localRows = Int32Array.from(near.slice(0, RIM_MAX_LOCAL), (x) => x.r).sort();
  const nl = localRows.length;
  const localOf = new Int32Array(n).fill(-1);
  for (let a = 0; a < nl; a++) localOf[localRows[a]!] = a;
  const cov = new Float64Array(nl * nl);
  const cLv = new Float64Array(nl * m);
  for (let a = 0; a < nl; a++) pointSupportCovariances(support, colOf(localRows[a]!), rowOfCell(localRows[a]!), sill, rangeM, cLv.subarray(a * m, (a + 1) * m));
  for (let a = 0; a < nl; a++) {
    const ra = localRows[a]!;
    residualSdM[ra] = 0;
    for (let b = 0; b <= a; b++) {
      const rb = localRows[b]!;
      let c = pointCovariance(support, colOf(ra), rowOfCell(ra), colOf(rb), rowOfCell(rb), sill, rangeM);
      for (let j = 0; j < m; j++) c -= weights[ra * m + j]! * cLv[b * m + j]!;
      cov[a * nl + b] = c;
      cov[b * nl + a] = c;
    }
  }
  const localLower = cholesky(cov, nl).lower;
  // The rim's part of the deterministic pond, as Σ area × error: kriged weights summed, plus its local rows.
  const pondWeights = new Float64Array(m);
  const pondLocal: number[] = [];
  for (let r = 0; r < n; r++) {
    if (inPond[r] !== 1) continue;
    for (let j = 0; j < m; j++) pondWeights[j]! += areaM2[r]! * weights[r * m + j]!;
    if (localOf[r]! >= 0) pondLocal.push(r);
  }
  // The pond's side of its ways out, by ground elevation (the draws look at the cells near the water's edge only).
  const side: number[] = [];
  let sideSd = 0;
  for (let r = 0; r < n; r++) {
    if (kinds[r] !== OPEN || indexOfSorted(pondSide, cells[r]!) < 0) continue;
    side.push(r);
    sideSd = Math.max(sideSd, residualSdM[r]!);
  }
  side.sort((x, y) => zM[x]! - zM[y]! || x - y);

  // Cells out of reach of every drawn error (all kriging weights zero, no variation of their own) keep the DEM's
  // ground in a draw: from each, the lowest way out through such cells alone (a flood back from the ways out).
  const farExitM = new Float32Array(n).fill(Infinity);
  const far = new Uint8Array(n);
  for (let r = 0; r < n; r++) {
    if (localOf[r]! >= 0) continue;
    let zero = true;
    for (let j = 0; j < m && zero; j++) zero = weights[r * m + j] === 0;
    if (zero) far[r] = 1;
  }
  const back = new MinHeap(256);
  for (let r = 0; r < n; r++) {
    if (far[r] === 1 && kinds[r] === WAY_OUT) {
      farExitM[r] = zM[r]!;
      back.push(r, zM[r]!);
    }
  }
  const wOffsets = [-ww - 1, -ww, -ww + 1, -1, 1, ww - 1, ww, ww + 1];
  while (back.size > 0) {
    const r = back.pop();
    const at = back.lastPriority;
    if (at > farExitM[r]!) continue;
    const wc = toWindow(cells[r]!);
    for (let k = 0; k < 8; k++) {
      const q = rowOf[wc + wOffsets[k]!]!;
      if (q < 0 || far[q] !== 1 || kinds[q] !== OPEN) continue;
      const via = Math.max(at, zM[q]!);
      if (via < farExitM[q]!) {
        farExitM[q] = via;
        back.push(q, via);
      }
    }
  }

  const weightAt = new Int32Array(n).fill(-1);
  let packedRows = 0;
  for (let r = 0; r < n; r++) {
    let zero = true;
    for (let j = 0; j < m && zero; j++) zero = weights[r * m + j] === 0;
    if (!zero) weightAt[r] = m * packedRows++;
  }
  const packed = new Float64Array(packedRows * m);
  for (let r = 0; r < n; r++) if (weightAt[r]! >= 0) packed.set(weights.subarray(r * m, (r + 1) * m), weightAt[r]!);

  const rim: EscapeRim = {
    width: ww,
    height: wh,
    offsets: Int32Array.of(-ww - 1, -ww, -ww + 1, -1, 1, ww - 1, ww, ww + 1),
    kind,
    row: rowOf,
    zM,
    gridCells,
    start: Int32Array.from(start),
    m,
    weights: packed,
    weightAt,
    weightReach,
    localRows,
    localOf,
    localLower,
    escapeM,
    areaM2,
    inPond,
    pondWeights,
    pondLocalRows: Int32Array.from(pondLocal),
    deepAreaM2,
    deepAreaZ,
    pondAreaM2,
    residualSdM,
    pondSideRows: Int32Array.from(side),
    pondSideZM: Float64Array.from(side, (r) => zM[r]!),
    pondSideMaxSdM: sideSd,
    farExitM,
  };
  // The zero-error flood must find the DEM's escape.
  const work = createRimWork(rim);
  setRimErrors(rim, new Float64Array(n), work);
  return Math.abs(rimEscapeM(rim, Infinity, work) - escapeM) <= 1e-9 * Math.max(1, Math.abs(escapeM)) ? rim : null;
}

/**
 * Starts a draw of the rim's error from the dam's joint errors
 * `joint[o .. o + m)` and `work.normals` (standard normals, one per local
 * row): the local variation near the passes is drawn now, each cell's
 * kriged part when it is first read (errorAt).
 */
export function drawRimErrors(rim: EscapeRim, joint: ArrayLike<number>, o: number, work: RimWork): void {
  const { localLower } = rim;
  const nl = rim.localRows.length;
  const zs = work.normals;
  for (let a = 0; a < nl; a++) {
    let s = 0;
    const row = a * nl;
    for (let b = 0; b <= a; b++) s += localLower[row + b]! * zs[b]!;
    work.localM[a] = s;
  }
  let vMax = 0;
  for (let j = 0; j < rim.m; j++) {
    work.joint[j] = joint[o + j]!;
    vMax = Math.max(vMax, Math.abs(joint[o + j]!));
  }
  work.krigedBoundM = rim.weightReach * vMax;
  work.given = false;
  nextDraw(work);
}

/** Gives the whole error per rim row (m), as the tests against re-flooding do: nothing is kriged or integrated out. */
export function setRimErrors(rim: EscapeRim, errorM: ArrayLike<number>, work: RimWork): void {
  for (let r = 0; r < rim.zM.length; r++) work.errorM[r] = errorM[r]!;
  work.given = true;
  nextDraw(work);
}

function nextDraw(work: RimWork): void {
  if (work.drawStamp >= 0x7ffffffe) {
    work.known.fill(0);
    work.drawStamp = 0;
  }
  work.drawStamp++;
}

/** The error at rim row r in the current draw, m. */
export function errorAt(rim: EscapeRim, work: RimWork, r: number): number {
  if (work.given || work.known[r] === work.drawStamp) return work.errorM[r]!;
  const m = rim.m;
  const w = rim.weights;
  const o = rim.weightAt[r]!;
  let e = 0;
  if (o >= 0) for (let j = 0; j < m; j++) e += w[o + j]! * work.joint[j]!;
  const a = rim.localOf[r]!;
  if (a >= 0) e += work.localM[a]!;
  work.errorM[r] = e;
  work.known[r] = work.drawStamp;
  return e;
}

/**
 * The escape level on the true ground z − e (m; the current draw's error):
 * the level at which a flood of the rim from the deep water pops a way out,
 * or Infinity when it rises above `stopM` (the water is held by the crest)
 * or finds none. The rim rows below the water (the escape, or `stopM` when
 * held) are left in `work.takenRows[0 .. work.taken)`.
 */
export function rimEscapeM(rim: EscapeRim, stopM: number, work: RimWork): number {
  const { offsets, kind, row, zM, start, farExitM } = rim;
  // With the whole error given (tests), no cell keeps the DEM's ground: no shortcut.
  const given = work.given;
  const mark = work.mark;
  if (work.stamp >= 0x7ffffffe) {
    mark.fill(0);
    work.stamp = 0;
  }
  const stamp = ++work.stamp;
  const heap = work.heap;
  heap.clear();
  for (let k = 0; k < start.length; k++) {
    const w = start[k]!;
    if (mark[w] === stamp) continue;
    mark[w] = stamp;
    const r = row[w]!;
    heap.push(w, zM[r]! - errorAt(rim, work, r));
  }
  let level = -Infinity;
  let taken = 0;
  // Cells taken before the level last rose: the pond at the escape (those after it are beyond the pass).
  let beforeRise = 0;
  work.taken = 0;
  while (heap.size > 0) {
    const w = heap.pop();
    if (heap.lastPriority > level) {
      level = heap.lastPriority;
      beforeRise = taken;
    }
    if (level > stopM) {
      work.taken = taken;
      return Infinity;
    }
    if (kind[w] === WAY_OUT || (!given && farExitM[row[w]!]! <= level)) {
      work.taken = beforeRise;
      return level;
    }
    work.takenRows[taken] = row[w]!;
    work.takenGroundM[taken++] = heap.lastPriority;
    for (let k = 0; k < 8; k++) {
      const v = w + offsets[k]!;
      if (kind[v] === WALL || mark[v] === stamp) continue;
      mark[v] = stamp;
      const r = row[v]!;
      heap.push(v, zM[r]! - errorAt(rim, work, r));
    }
  }
  work.taken = taken;
  return Infinity;
}

/**
 * The pond a draw holds, with its rim kept (the frame of dem-error.ts: the
 * true ground is z − e; the draw's error set by drawRimErrors or
 * setRimErrors). Its water stands at W = min(the crest's level on the true
 * ground, crestM − e_ref; the rim's escape on the true ground,
 * rimEscapeM), written to `work.waterM`. Returns its volume (m³):
 * - the deep water's, A_deep·W − Σ a·z + Σ a·e, where Σ a·e over the deep
 *   water is what the pond's drawn mean error ē leaves once the rim's part
 *   of the deterministic pond is taken out;
 * - and the rim cells' below W, Σ a·(W − z + e).
 * Where the error was drawn (drawRimErrors), each rim cell's error not
 * carried by the draw (the kriging residual away from the passes, sd s) is
 * integrated out: a cell holds E[max(0, d + u)] = d·Φ(d/s) + s·φ(d/s) with
 * d = W − z + e, u ~ N(0, s²), and cells of the pond's side just above W
 * count for what they would hold (the water's edge is as uneven as the
 * ground's error). Where it was given whole (setRimErrors, the tests
 * against re-flooding) the sum is the re-flooded pond's volume.
 */
export function rimPondVolumeM3(rim: EscapeRim, crestM: number, refErrorM: number, meanErrorM: number, work: RimWork): number {
  const heldM = crestM - refErrorM;
  const escapeM = rimEscapeM(rim, heldM, work);
  const w = escapeM < heldM ? escapeM : heldM;
  work.waterM = w;
  const residual = !work.given;
  const { zM, areaM2, residualSdM } = rim;
  let volume = 0;
  if (rim.deepAreaM2 > 0) {
    let rimAreaE = 0;
    if (residual) {
      for (let j = 0; j < rim.m; j++) rimAreaE += rim.pondWeights[j]! * work.joint[j]!;
      const pl = rim.pondLocalRows;
      for (let k = 0; k < pl.length; k++) rimAreaE += areaM2[pl[k]!]! * work.localM[rim.localOf[pl[k]!]!]!;
    } else {
      for (let r = 0; r < zM.length; r++) if (rim.inPond[r] === 1) rimAreaE += areaM2[r]! * work.errorM[r]!;
    }
    volume += rim.deepAreaM2 * w - rim.deepAreaZ + (rim.pondAreaM2 * meanErrorM - rimAreaE);
  }
  const mark = work.takenMark;
  const stamp = ++work.takenStamp;
  for (let t = 0; t < work.taken; t++) {
    const r = work.takenRows[t]!;
    mark[r] = stamp;
    const d = w - work.takenGroundM[t]!;
    volume += areaM2[r]! * (residual ? expectedDepthM(d, residualSdM[r]!) : d > 0 ? d : 0);
  }
  if (residual && rim.pondSideMaxSdM > 0) {
    // Cells of the pond's side just above the water: d = W − z + e in (−4s, 0], so z lies within the kriged part's bound of [W, W + 4s].
    const side = rim.pondSideRows;
    const sideZ = rim.pondSideZM;
    const bound = work.krigedBoundM + 1e-9;
    const top = w + 4 * rim.pondSideMaxSdM + bound;
    for (let k = lowerBound(sideZ, w - bound); k < side.length && sideZ[k]! <= top; k++) {
      const r = side[k]!;
      const sd = residualSdM[r]!;
      if (mark[r] === stamp || !(sd > 0)) continue;
      const d = w - zM[r]! + errorAt(rim, work, r);
      if (d > 0 || d < -4 * sd) continue;
      volume += areaM2[r]! * expectedDepthM(d, sd);
    }
  }
  return volume > 0 ? volume : 0;
}

/** E[max(0, d + u)] for u ~ N(0, s²), m: d·Φ(d/s) + s·φ(d/s) (max(0, d) for s = 0). */
export function expectedDepthM(dM: number, sdM: number): number {
  if (!(sdM > 0)) return dM > 0 ? dM : 0;
  const x = dM / sdM;
  return dM * normalCdf(x) + (sdM * Math.exp(-0.5 * x * x)) / Math.sqrt(2 * Math.PI);
}

/** Standard normal CDF through erf (Abramowitz & Stegun 1964, 7.1.26: |error| < 1.5e-7). */
function normalCdf(x: number): number {
  const t = Math.abs(x) / Math.SQRT2;
  const k = 1 / (1 + 0.3275911 * t);
  const erf = 1 - k * (0.254829592 + k * (-0.284496736 + k * (1.421413741 + k * (-1.453152027 + k * 1.061405429)))) * Math.exp(-t * t);
  return x >= 0 ? 0.5 * (1 + erf) : 0.5 * (1 - erf);
}

/** Solves L·Lᵀ·x = b for x (m unknowns) with a lower factor whose zero pivots (clipped columns) give zero components. */
function solveInto(lower: Float64Array, m: number, b: ArrayLike<number>, x: Float64Array): void {
  const y = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const d = lower[i * m + i]!;
    if (!(d > 0)) continue;
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= lower[i * m + k]! * y[k]!;
    y[i] = s / d;
  }
  for (let i = m - 1; i >= 0; i--) {
    const d = lower[i * m + i]!;
    if (!(d > 0)) {
      x[i] = 0;
      continue;
    }
    let s = y[i]!;
    for (let k = i + 1; k < m; k++) s -= lower[k * m + i]! * x[k]!;
    x[i] = s / d;
  }
}
