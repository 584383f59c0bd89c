/** The bounding box of a set of cells, in cells. */

/** Inclusive column and row bounds of flat cell indices on a grid `width` wide; empty sets give c0 > c1. */
export interface CellBounds {
  c0: number;
  c1: number;
  r0: number;
  r1: number;
}

/** Bounds of `cells` (flat indices `row * width + col`). */
export function cellBounds(cells: ArrayLike<number>, width: number): CellBounds {
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  for (let k = 0; k < cells.length; k++) {
    const i = cells[k]!;
    const col = i % width;
    const row = (i - col) / width;
    if (col < c0) c0 = col;
    if (col > c1) c1 = col;
    if (row < r0) r0 = row;
    if (row > r1) r1 = row;
  }
  return { c0, c1, r0, r1 };
}
