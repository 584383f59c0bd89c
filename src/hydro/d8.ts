/**
 * D8 flow directions: each cell drains to the one neighbour of steepest
 * descent (O'Callaghan & Mark 1984, "The extraction of drainage networks
 * from digital elevation data", Computer Vision, Graphics, and Image
 * Processing 28). Slopes use real centre-to-centre distances in metres
 * (anisotropic and geographic cells); ties go to the first direction
 * clockwise from north.
 *
 * Policies:
 * - A cell on the grid edge or next to NoData with no lower neighbour drains
 *   out (`DIR_OUTLET`); with a lower neighbour it drains to it.
 * - Cells with no lower neighbour elsewhere are flats; they are routed by
 *   {@link resolveFlats} (Barnes et al. 2014), so on a filled DEM every cell
 *   drains to an outlet. On an unfilled DEM, cells in pits keep `DIR_NONE`
 *   and are counted in `pitCells`.
 */
import type { Grid } from '../grid/grid.js';
import { resolveFlats } from './flats.js';
import { DIR_COL, DIR_FLAT, DIR_NONE, DIR_OUTLET, DIR_ROW, isEdgeCell, neighbourDistancesM, neighbourOffsets } from './neighbours.js';
import type { RasterPool } from './raster-pool.js';

/** Result of {@link flowDirections}. */
export interface FlowDirections {
  /** Per cell: direction code 0–7, `DIR_OUTLET` or `DIR_NONE` (see neighbours.ts). */
  readonly dir: Uint8Array;
  /** Cells on flats (no lower neighbour) that were routed across the flat. */
  readonly flatCells: number;
  /** Cells left without a drain (pits of an unfilled DEM); 0 on a filled DEM. */
  readonly pitCells: number;
}

/**
 * D8 directions on `filledZ` (metres; normally from {@link fillDepressions}),
 * with the grid's cell sizes for slopes; flat routing takes its scratch
 * rasters from `pool` when given (raster-pool.ts).
 */
export function flowDirections(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  filledZ: Float32Array,
  pool?: RasterPool,
): FlowDirections {
  const { width, height } = grid;
  const n = width * height;
  if (filledZ.length !== n) throw new Error(`elevation has ${filledZ.length} cells; expected ${n}`);
  const dir = new Uint8Array(n);
  const flats = directionRows(grid, filledZ, dir, 0, height);
  return routeFlats(grid, filledZ, dir, flats, pool);
}

/**
 * Routes the flat cells that {@link directionRows} marked and listed
 * (`flats`, row-major over the whole grid) and counts them; `dir` is then
 * the finished direction raster.
 */
export function routeFlats(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  filledZ: Float32Array,
  dir: Uint8Array,
  flats: Int32Array,
  pool?: RasterPool,
): FlowDirections {
  const pitCells = flats.length > 0 ? resolveFlats(grid, filledZ, dir, flats, pool) : 0;
  return { dir, flatCells: flats.length - pitCells, pitCells };
}

/**
 * D8 directions of rows `r0` … `r1` − 1 into `dir` (the rest is not
 * touched; rows r0 − 1 and r1 of `filledZ` are read). Cells with no lower
 * neighbour away from the edge are marked `DIR_FLAT` and returned as a list
 * of flat indices in row-major order, for {@link routeFlats}. Row bands can
 * be done on several threads and their lists joined in row order.
 */
export function directionRows(
  grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>,
  filledZ: Float32Array,
  dir: Uint8Array,
  r0: number,
  r1: number,
): Int32Array<ArrayBuffer> {
  const { width, height } = grid;
  const off = neighbourOffsets(width);
  const dist = new Float64Array(8);
  const invDist = new Float64Array(8);
  let flats: Int32Array<ArrayBuffer> = new Int32Array(1024); // flat cells in row-major order
  let flatCount = 0;
  for (let r = r0; r < r1; r++) {
    neighbourDistancesM(grid.cellWidthM, grid.cellHeightM, r, dist);
    for (let d = 0; d < 8; d++) invDist[d] = 1 / (dist[d] ?? 1);
    const invCardinalN = invDist[0] ?? 0;
    const invCardinalE = invDist[2] ?? 0;
    const invDiagonal = invDist[1] ?? 0;
    const interiorRow = r > 0 && r < height - 1;
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      const zi = filledZ[i] ?? NaN;
      if (Number.isNaN(zi)) {
        dir[i] = DIR_NONE;
        continue;
      }
      let bestDir: number;
      if (interiorRow && c > 0 && c < width - 1) {
        bestDir = steepestInterior(filledZ, i, width, zi, invCardinalN, invCardinalE, invDiagonal);
      } else {
        bestDir = -1;
        let best = 0;
        for (let d = 0; d < 8; d++) {
          const rr = r + (DIR_ROW[d] ?? 0);
          const cc = c + (DIR_COL[d] ?? 0);
          if (rr < 0 || cc < 0 || rr >= height || cc >= width) continue;
          const slope = (zi - (filledZ[i + (off[d] ?? 0)] ?? NaN)) * (invDist[d] ?? 0); // NaN (NoData) compares false
          if (slope > best) {
            best = slope;
            bestDir = d;
          }
        }
      }
      if (bestDir >= 0) {
        dir[i] = bestDir;
      } else if (isEdgeCell(filledZ, width, height, r, c)) {
        dir[i] = DIR_OUTLET;
      } else {
        dir[i] = DIR_FLAT;
        if (flatCount === flats.length) flats = grown(flats);
        flats[flatCount++] = i;
      }
    }
  }
  return flats.slice(0, flatCount);
}

/** The same list with twice the room. */
function grown(list: Int32Array): Int32Array<ArrayBuffer> {
  const out = new Int32Array(list.length * 2);
  out.set(list);
  return out;
}

/**
 * Steepest-descent direction of an interior cell, −1 when no neighbour is
 * lower; the eight neighbours unrolled in code order (ties keep the first).
 */
function steepestInterior(
  z: Float32Array,
  i: number,
  w: number,
  zi: number,
  invN: number,
  invE: number,
  invD: number,
): number {
  let best = 0;
  let dir = -1;
  let s = (zi - (z[i - w] ?? NaN)) * invN;
  if (s > best) {
    best = s;
    dir = 0;
  }
  s = (zi - (z[i - w + 1] ?? NaN)) * invD;
  if (s > best) {
    best = s;
    dir = 1;
  }
  s = (zi - (z[i + 1] ?? NaN)) * invE;
  if (s > best) {
    best = s;
    dir = 2;
  }
  s = (zi - (z[i + w + 1] ?? NaN)) * invD;
  if (s > best) {
    best = s;
    dir = 3;
  }
  s = (zi - (z[i + w] ?? NaN)) * invN;
  if (s > best) {
    best = s;
    dir = 4;
  }
  s = (zi - (z[i + w - 1] ?? NaN)) * invD;
  if (s > best) {
    best = s;
    dir = 5;
  }
  s = (zi - (z[i - 1] ?? NaN)) * invE;
  if (s > best) {
    best = s;
    dir = 6;
  }
  s = (zi - (z[i - w - 1] ?? NaN)) * invD;
  if (s > best) dir = 7;
  return dir;
}
