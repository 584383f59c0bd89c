/**
 * D8 direction codes and neighbour offsets, the one definition shared by the
 * hydrology modules.
 *
 * Codes 0–7 go clockwise from north: N, NE, E, SE, S, SW, W, NW (row grows
 * southwards on a north-up grid). Two special codes: `DIR_OUTLET` for a cell
 * that drains off the grid or into NoData, `DIR_NONE` for NoData and for a
 * cell with nowhere to drain (a pit, only possible on an unfilled DEM).
 */

/** Row step of each direction code. */
export const DIR_ROW: Int8Array = Int8Array.of(-1, -1, 0, 1, 1, 1, 0, -1);
/** Column step of each direction code. */
export const DIR_COL: Int8Array = Int8Array.of(0, 1, 1, 1, 0, -1, -1, -1);
/** The cell drains off the grid edge or into a NoData cell. */
export const DIR_OUTLET = 8;
/** NoData, or a pit with no lower neighbour and no outlet. */
export const DIR_NONE = 255;
/** Marks a flat cell between the D8 pass and flat routing; never left in a finished direction raster. */
export const DIR_FLAT = 254;

/** Flat-index offset of each direction on a grid `width` columns wide. */
export function neighbourOffsets(width: number): Int32Array {
  const off = new Int32Array(8);
  for (let d = 0; d < 8; d++) off[d] = (DIR_ROW[d] ?? 0) * width + (DIR_COL[d] ?? 0);
  return off;
}

/**
 * Centre-to-centre distance of each direction in row `row`, metres, written
 * into `out` (length 8). Diagonals use √(w² + h²) with this row's width.
 */
export function neighbourDistancesM(cellWidthM: Float64Array, cellHeightM: number, row: number, out: Float64Array): void {
  const w = cellWidthM[row] ?? 0;
  const diag = Math.sqrt(w * w + cellHeightM * cellHeightM);
  for (let d = 0; d < 8; d++) {
    const dr = DIR_ROW[d] ?? 0;
    const dc = DIR_COL[d] ?? 0;
    out[d] = dr === 0 ? w : dc === 0 ? cellHeightM : diag;
  }
}

/** True for a valid cell on the grid edge or next to a NoData cell (where water can leave). */
export function isEdgeCell(z: Float32Array, width: number, height: number, r: number, c: number): boolean {
  if (r === 0 || c === 0 || r === height - 1 || c === width - 1) return true;
  const i = r * width + c;
  return (
    Number.isNaN(z[i - width - 1] ?? 0) ||
    Number.isNaN(z[i - width] ?? 0) ||
    Number.isNaN(z[i - width + 1] ?? 0) ||
    Number.isNaN(z[i - 1] ?? 0) ||
    Number.isNaN(z[i + 1] ?? 0) ||
    Number.isNaN(z[i + width - 1] ?? 0) ||
    Number.isNaN(z[i + width] ?? 0) ||
    Number.isNaN(z[i + width + 1] ?? 0)
  );
}
