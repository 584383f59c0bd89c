/**
 * Ground-metre geometry around one cell: offsets east/north in metres ↔
 * fractional pixel coordinates, and bilinear elevation sampling between cell
 * centres. Works for geographic grids through the grid's per-row cell sizes
 * (the anchor row's width is used throughout; over the ±100 m a crest spans
 * the change is far below a millimetre per metre).
 */
import type { Grid } from '../grid/grid.js';

/** Fractional pixel position of a cell's centre and pixel steps per ground metre. */
export interface MetricFrame {
  /** Fractional column and row of the anchor (a cell centre). */
  readonly col0: number;
  readonly row0: number;
  /** Columns per metre east (negative if columns run west). */
  readonly colPerEastM: number;
  /** Rows per metre north (negative for north-up rasters). */
  readonly rowPerNorthM: number;
}

/** The frame anchored at the centre of cell (col, row). */
export function frameAt(grid: Grid, col: number, row: number): MetricFrame {
  const widthM = grid.cellWidthM[row] ?? grid.cellHeightM;
  return {
    col0: col + 0.5,
    row0: row + 0.5,
    colPerEastM: Math.sign(grid.transform.dx) / widthM,
    rowPerNorthM: Math.sign(grid.transform.dy) / grid.cellHeightM,
  };
}

/** True when the fractional pixel position lies on the grid. */
export function onGrid(grid: Grid, colF: number, rowF: number): boolean {
  return colF >= 0 && colF < grid.width && rowF >= 0 && rowF < grid.height;
}

/**
 * Elevation (m) at a fractional pixel position: bilinear between the four
 * surrounding cell centres; the containing cell's value when one of them is
 * NoData; NaN off the grid or on NoData.
 */
export function sampleZ(grid: Grid, colF: number, rowF: number): number {
  const { width, height, z } = grid;
  if (!(colF >= 0 && colF < width && rowF >= 0 && rowF < height)) return NaN;
  const u = Math.min(Math.max(colF - 0.5, 0), width - 1);
  const v = Math.min(Math.max(rowF - 0.5, 0), height - 1);
  const c0 = Math.floor(u);
  const r0 = Math.floor(v);
  const c1 = Math.min(c0 + 1, width - 1);
  const r1 = Math.min(r0 + 1, height - 1);
  const fx = u - c0;
  const fy = v - r0;
  const z00 = z[r0 * width + c0] ?? NaN;
  const z10 = z[r0 * width + c1] ?? NaN;
  const z01 = z[r1 * width + c0] ?? NaN;
  const z11 = z[r1 * width + c1] ?? NaN;
  if (Number.isNaN(z00) || Number.isNaN(z10) || Number.isNaN(z01) || Number.isNaN(z11)) {
    return z[Math.floor(rowF) * width + Math.floor(colF)] ?? NaN;
  }
  const top = z00 + (z10 - z00) * fx;
  const bottom = z01 + (z11 - z01) * fx;
  return top + (bottom - top) * fy;
}
