/**
 * The fill behind one crest: a priority-flood (Barnes, Lehman & Mulla 2014,
 * "Priority-flood: an optimal depression-filling and watershed-labeling
 * algorithm", Computers & Geosciences 62) from the seed cells upstream of
 * the bed, 8-neighbour, with the crest cells as a wall.
 *
 * Each cell comes out of the queue with its join level: max(its elevation,
 * the join level of the cell it was reached from), the lowest water level at
 * which it joins the pond. Cells come out sorted by join level, so running
 * sums of cell area and area × elevation give the pond at any level by
 * binary search (see stage-storage.ts). A cell belongs to the pond at level
 * h when its join level is below h; every pond cell then has depth > 0.
 *
 * Escape: the first popped cell that
 * - is in the crest's spill band (cells within 3 cells of the crest on its
 *   downstream side, round the ends too: the water went round the crest),
 *   → 'spill';
 * - lies on the edge of the reach box (or grid) → 'edge';
 * - is 8-adjacent to NoData → 'nodata' (a pond reaching a DEM gap is
 *   flagged, never silently capped or counted)
 * sets the escape level to its join level and stops the flood; so does a
 * join level above `maxLevelM`. Water level = min(crest, escape level).
 */
import type { Grid } from '../grid/grid.js';
import { MinHeap } from '../grid/priority-queue.js';
import type { CrestSetup } from './crest.js';

/** What set the water level: the crest top, or water escaping below it (spill around the crest, reach edge, NoData), or a breached dam holding nothing. */
export type PondLimit = 'crest' | 'spill' | 'edge' | 'nodata' | 'breach';

/** How water left the pond region before the crest was reached. */
export type EscapeKind = 'spill' | 'edge' | 'nodata';

/** Cells [col0, col1) × [row0, row1) of the grid the flood may enter. */
export interface ReachBox {
  col0: number;
  row0: number;
  col1: number;
  row1: number;
}

/**
 * The result of one flood: the whole stage–area–storage relation of a dam up
 * to `topLevelM`. Its arrays are its own (copied out of the scratch), so a
 * fill stays valid after the scratch serves the next dam.
 */
export interface PondFill {
  /** Flat indices of flooded cells, by non-decreasing join level. */
  order: Int32Array;
  /** Join level of each entry of `order`, m. */
  joinM: Float64Array;
  /** cumAreaM2[k] = Σ cell area of order[0..k], m². */
  cumAreaM2: Float64Array;
  /** cumAreaZ[k] = Σ cell area × (z − zRefM) of order[0..k], m³ (relative to zRefM for precision). */
  cumAreaZ: Float64Array;
  /** Reference elevation of cumAreaZ, m (the bed elevation). */
  zRefM: number;
  /** min(crest elevation, escape level), m; the bed for a breached dam holding nothing. */
  waterLevelM: number;
  limitedBy: PondLimit;
  /** How water escaped, or null when it did not below `topLevelM`. */
  escapeKind: EscapeKind | null;
  /** Join level of the escape cell, m; Infinity when the flood stopped first. */
  escapeLevelM: number;
  /** Flat index of the escape cell, or -1. */
  escapeCell: number;
  /**
   * Flat index of the pass: the cell whose elevation set the escape level
   * (the highest ground on the water's way out; the escape cell itself when
   * it rose above the pond), or -1 without an escape.
   */
  escapePassCell: number;
  /** Highest level (m) the fill answers for: min(maxLevelM, escapeLevelM). */
  topLevelM: number;
  /** Crest cells and crest elevation (m) of the dam, for drowned-dam checks. */
  crestCells: Int32Array;
  crestElevM: number;
  /** Cells taken off the queue (the work done). */
  visitedCount: number;
}

/** Reusable buffers for `fillBehindCrest`: size them once per grid (window) and pass them to every dam. */
export interface FillScratch {
  /** Number of grid cells the stamps cover. */
  readonly cellCount: number;
  /** Current stamp (no clearing per dam): mark[i] = stamp for a visited or crest cell, −stamp for an unvisited spill-band cell. */
  stamp: number;
  readonly mark: Int32Array;
  readonly heap: MinHeap;
  /** FIFO of cells joining at the current level (pits and flats). */
  pit: Int32Array;
  order: Int32Array;
  joinM: Float64Array;
  cumAreaM2: Float64Array;
  cumAreaZ: Float64Array;
}

/** Scratch buffers for grids of up to `cellCount` cells. */
export function createFillScratch(cellCount: number): FillScratch {
  const n = 4096;
  return {
    cellCount,
    stamp: 0,
    mark: new Int32Array(cellCount),
    heap: new MinHeap(n),
    pit: new Int32Array(n),
    order: new Int32Array(n),
    joinM: new Float64Array(n),
    cumAreaM2: new Float64Array(n),
    cumAreaZ: new Float64Array(n),
  };
}

/** Options of `fillBehindCrest`. */
export interface FillOptions {
  /** Flood up to this level (m) so later draws can raise the crest; never below the crest elevation (the default). */
  maxLevelM?: number;
  /** Cells the flood may enter (default: the whole grid); its edge counts as an escape. */
  reachBox?: ReachBox;
  /** Cells that are walls besides the crest (flat indices): closes escape routes to find the next one. */
  wallCells?: Int32Array;
}

/** Floods behind one crest (see the file comment). */
export function fillBehindCrest(grid: Grid, setup: CrestSetup, options: FillOptions = {}, scratch?: FillScratch): PondFill {
  const { width, z, cellAreaM2 } = grid;
  const crestElevM = setup.crestElevM;
  if (!setup.holdsWater) return emptyFill(setup);
  const maxLevelM = Math.max(options.maxLevelM ?? crestElevM, crestElevM);
  const { scratch: s, stamp, band, col0, row0, lastCol, lastRow } = startFlood(grid, setup, options.reachBox, options.wallCells, scratch);
  const mark = s.mark;
  const heap = s.heap;
  if (heap.size === 0) throw new Error(`fill of dam ${setup.damId}: the reach box holds none of its seed cells`);

  const offsets = new Int32Array([-width - 1, -width, -width + 1, -1, 1, width - 1, width, width + 1]);
  const zRefM = setup.bedElevM;
  let count = 0;
  let popped = 0;
  let sumA = 0;
  let sumAZ = 0;
  let escapeLevelM = Infinity;
  let escapeCell = -1;
  let escapePassCell = -1;
  // The cell that last raised the level (came off the heap): the pass once the water escapes.
  let levelCell = -1;
  let escapeKind: EscapeKind | null = null;
  // Improved priority-flood (Barnes et al. 2014, Algorithm 3): a neighbour at or below the current
  // level joins at that level, so it goes to a plain FIFO queue served before the heap.
  // Spill-band cells travel through both queues as ~index (negative), so no second lookup is needed.
  let pit = s.pit;
  let pitHead = 0;
  let pitTail = 0;
  let order = s.order;
  let joinM = s.joinM;
  let cumA = s.cumAreaM2;
  let cumZ = s.cumAreaZ;
  let level = -Infinity;
  for (;;) {
    let i: number;
    if (pitHead < pitTail) {
      i = pit[pitHead++]!;
    } else {
      if (heap.size === 0) break;
      pitHead = 0;
      pitTail = 0;
      i = heap.pop();
      level = heap.lastPriority;
      if (level > maxLevelM) break;
      levelCell = i < 0 ? ~i : i;
    }
    popped++;
    const inBand = i < 0;
    if (inBand) i = ~i;
    const col = i % width;
    const row = (i - col) / width;
    if (inBand) escapeKind = 'spill';
    else if (col === col0 || col === lastCol || row === row0 || row === lastRow) escapeKind = 'edge';
    else {
      // Interior of the box: all 8 neighbours exist. Queue them, watching for NoData.
      for (let k = 0; k < 8; k++) {
        const j = i + offsets[k]!;
        const zj = z[j]!;
        if (zj !== zj) {
          escapeKind = 'nodata';
          break;
        }
        const m = mark[j]!;
        if (m === stamp) continue;
        mark[j] = stamp;
        const id = m === band ? ~j : j;
        if (zj <= level) {
          if (pitTail === pit.length) pit = growPit(s);
          pit[pitTail++] = id;
        } else {
          heap.push(id, zj);
        }
      }
    }
    if (escapeKind !== null) {
      escapeLevelM = level;
      escapeCell = i;
      escapePassCell = levelCell;
      break;
    }
    if (count === order.length) {
      growOutputs(s);
      order = s.order;
      joinM = s.joinM;
      cumA = s.cumAreaM2;
      cumZ = s.cumAreaZ;
    }
    const a = cellAreaM2[row]!;
    sumA += a;
    sumAZ += a * (z[i]! - zRefM);
    order[count] = i;
    joinM[count] = level;
    cumA[count] = sumA;
    cumZ[count] = sumAZ;
    count++;
  }

  const limited = escapeKind !== null && escapeLevelM < crestElevM;
  return {
    order: order.slice(0, count),
    joinM: joinM.slice(0, count),
    cumAreaM2: cumA.slice(0, count),
    cumAreaZ: cumZ.slice(0, count),
    zRefM,
    waterLevelM: limited ? escapeLevelM : crestElevM,
    limitedBy: limited && escapeKind !== null ? escapeKind : 'crest',
    escapeKind,
    escapeLevelM,
    escapeCell,
    escapePassCell,
    topLevelM: Math.min(maxLevelM, escapeLevelM),
    crestCells: setup.crestCells,
    crestElevM,
    visitedCount: popped,
  };
}

/** A flood behind a crest, started: its scratch, stamp and box (see startFlood). */
export interface FloodStart {
  scratch: FillScratch;
  /** mark[i] = stamp for a queued, crest or wall cell; = band (−stamp) for an unqueued spill-band cell. */
  stamp: number;
  band: number;
  /** The box's cells: [col0, lastCol] × [row0, lastRow]. */
  col0: number;
  row0: number;
  lastCol: number;
  lastRow: number;
}

/**
 * Starts a flood behind `setup`'s crest: marks the spill band, the crest
 * and `wallCells` (walls) with a fresh stamp of the scratch (`scratch` when
 * it covers the grid, else a new one), and queues the seed cells inside the
 * reach box at their elevation on the scratch's heap.
 */
export function startFlood(grid: Grid, setup: CrestSetup, reachBox: ReachBox | undefined, wallCells: Int32Array | undefined, scratch: FillScratch | undefined): FloodStart {
  const { width, height, z } = grid;
  const s = scratch !== undefined && scratch.cellCount >= width * height ? scratch : createFillScratch(width * height);
  const col0 = Math.max(0, reachBox?.col0 ?? 0);
  const row0 = Math.max(0, reachBox?.row0 ?? 0);
  const lastCol = Math.min(width, reachBox?.col1 ?? width) - 1;
  const lastRow = Math.min(height, reachBox?.row1 ?? height) - 1;
  const stamp = nextStamp(s);
  const mark = s.mark;
  const band = -stamp;
  for (let k = 0; k < setup.downstreamCells.length; k++) mark[setup.downstreamCells[k]!] = band;
  for (let k = 0; k < setup.crestCells.length; k++) mark[setup.crestCells[k]!] = stamp;
  if (wallCells) for (let k = 0; k < wallCells.length; k++) mark[wallCells[k]!] = stamp;
  const heap = s.heap;
  heap.clear();
  for (let k = 0; k < setup.seedCells.length; k++) {
    const i = setup.seedCells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    if (col < col0 || col > lastCol || row < row0 || row > lastRow || mark[i] === stamp) continue;
    mark[i] = stamp;
    heap.push(i, z[i]!);
  }
  return { scratch: s, stamp, band, col0, row0, lastCol, lastRow };
}

/** The fill of a dam that holds no water: empty, water level at the bed. */
function emptyFill(setup: CrestSetup): PondFill {
  return {
    order: new Int32Array(0),
    joinM: new Float64Array(0),
    cumAreaM2: new Float64Array(0),
    cumAreaZ: new Float64Array(0),
    zRefM: setup.bedElevM,
    waterLevelM: setup.bedElevM,
    limitedBy: 'breach',
    escapeKind: null,
    escapeLevelM: Infinity,
    escapeCell: -1,
    escapePassCell: -1,
    topLevelM: setup.bedElevM,
    crestCells: setup.crestCells,
    crestElevM: setup.crestElevM,
    visitedCount: 0,
  };
}

function nextStamp(s: FillScratch): number {
  if (s.stamp >= 0x7ffffffe) {
    s.mark.fill(0);
    s.stamp = 0;
  }
  s.stamp += 1;
  return s.stamp;
}

function growPit(s: FillScratch): Int32Array {
  const pit = new Int32Array(s.pit.length * 2);
  pit.set(s.pit);
  s.pit = pit;
  return pit;
}

function growOutputs(s: FillScratch): void {
  const n = s.order.length * 2;
  const order = new Int32Array(n);
  order.set(s.order);
  const joinM = new Float64Array(n);
  joinM.set(s.joinM);
  const cumAreaM2 = new Float64Array(n);
  cumAreaM2.set(s.cumAreaM2);
  const cumAreaZ = new Float64Array(n);
  cumAreaZ.set(s.cumAreaZ);
  s.order = order;
  s.joinM = joinM;
  s.cumAreaM2 = cumAreaM2;
  s.cumAreaZ = cumAreaZ;
}
