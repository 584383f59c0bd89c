/**
 * The combined water surface kept after the ponds stage, for the stages
 * that need it over a larger extent than one window (the influence zone):
 * per window group, the cells that hold water counted in the totals, their
 * water level and the dam that owns them.
 *
 * Only wet cells are kept (ponds are a small part of a DEM), so a run holds
 * this whatever the DEM's size. Groups never share a cell (pipeline/windows.ts).
 */
import type { CombinedPonds } from '../ponds/combine.js';
import type { CellBox } from './windows.js';
import type { PondCells } from '../influence/zone.js';

/** The wet cells of one window group. */
export interface PondWaterGroup {
  /** The group's window in full-DEM pixel space. */
  box: CellBox;
  /** Flat indices in the window (row · window width + col), bucketed by dam. */
  cells: Int32Array;
  /** Dam row (index into the run's dams) of each cell. */
  dam: Int32Array;
  /** Water level of each cell, m. */
  levelM: Float32Array;
}

/** The combined water surface of a run, group by group. */
export interface PondWater {
  groups: PondWaterGroup[];
  /** Wet cells over all groups. */
  cellCount: number;
}

/** Collects groups as the estimate combines them. */
export class PondWaterCollector {
  private readonly groups: PondWaterGroup[] = [];
  private count = 0;

  /**
   * Adds one group's combined surface: `cells` are its wet window cells
   * bucketed by pond (`starts[p]` … `starts[p + 1]`), `damOfPond[p]` the dam
   * row of pond p, levels from `combined.levelM`.
   */
  add(box: CellBox, combined: Pick<CombinedPonds, 'levelM'>, cells: Int32Array, starts: Int32Array, damOfPond: readonly number[]): void {
    const n = cells.length;
    const dam = new Int32Array(n);
    const levelM = new Float32Array(n);
    for (let p = 0; p < damOfPond.length; p++) {
      const d = damOfPond[p]!;
      for (let k = starts[p]!; k < starts[p + 1]!; k++) {
        dam[k] = d;
        levelM[k] = combined.levelM[cells[k]!]!;
      }
    }
    this.groups.push({ box, cells: Int32Array.from(cells), dam, levelM });
    this.count += n;
  }

  finish(): PondWater {
    return { groups: this.groups, cellCount: this.count };
  }
}

/** Bounding box of the wet cells in full-DEM pixel space, or null when there are none. */
export function pondWaterBox(water: PondWater): CellBox | null {
  let col0 = Infinity;
  let row0 = Infinity;
  let col1 = -Infinity;
  let row1 = -Infinity;
  for (const g of water.groups) {
    const w = g.box.col1 - g.box.col0;
    for (let k = 0; k < g.cells.length; k++) {
      const i = g.cells[k]!;
      const r = (i / w) | 0;
      const c = i - r * w;
      col0 = Math.min(col0, c + g.box.col0);
      col1 = Math.max(col1, c + g.box.col0 + 1);
      row0 = Math.min(row0, r + g.box.row0);
      row1 = Math.max(row1, r + g.box.row0 + 1);
    }
  }
  return Number.isFinite(col0) ? { col0, row0, col1, row1 } : null;
}

/**
 * The wet cells on the analysis window `box` (full-DEM pixel space) as a
 * list: flat index in the window, water level, owner (dam row + 1); cells
 * off the window are left out (the influence zone takes a cell listed
 * twice at its last entry). A list, not rasters of the window's size.
 */
export function pondCellsOn(water: PondWater, box: CellBox): PondCells {
  const w = box.col1 - box.col0;
  const h = box.row1 - box.row0;
  const cells = new Int32Array(water.cellCount);
  const levelM = new Float32Array(water.cellCount);
  const owner = new Int32Array(water.cellCount);
  let count = 0;
  for (const g of water.groups) {
    const gw = g.box.col1 - g.box.col0;
    for (let k = 0; k < g.cells.length; k++) {
      const i = g.cells[k]!;
      const gr = (i / gw) | 0;
      const r = gr + g.box.row0 - box.row0;
      const c = i - gr * gw + g.box.col0 - box.col0;
      if (r < 0 || r >= h || c < 0 || c >= w) continue;
      cells[count] = r * w + c;
      levelM[count] = g.levelM[k]!;
      owner[count] = g.dam[k]! + 1;
      count++;
    }
  }
  return { cells: cells.subarray(0, count), levelM: levelM.subarray(0, count), owner: owner.subarray(0, count) };
}
