/**
 * Depression filling by priority-flood: every cell is raised to the lowest
 * level at which water standing on it could leave the grid (Barnes, Lehman &
 * Mulla 2014, "Priority-Flood: An optimal depression-filling and
 * watershed-labeling algorithm for digital elevation models", Computers &
 * Geosciences 62). Depressions become exactly flat at their spill elevation
 * (no epsilon gradient); {@link flowDirections} routes flow across flats.
 *
 * For speed on large grids the flood runs tile by tile (Barnes 2016,
 * "Parallel Priority-Flood depression filling for trillion cell digital
 * elevation models on desktops or clusters", Computers & Geosciences 96):
 * each tile is flooded from its own edge cells with labels, the labels'
 * meeting elevations form a small graph solved from the outlets, and each
 * cell ends at max(its tile fill, its label's level). A tile fits in cache,
 * where one flood front across the whole grid does not, and tiles are
 * independent, so large grids flood them on several threads. The result is
 * the same as one global flood (tests compare with a brute-force fill and
 * with GRASS GIS r.terraflow, on one thread and on several).
 *
 * Policy: water leaves at the grid edge and at NoData cells, so cells on the
 * edge and cells next to NoData are never raised. NoData stays NaN.
 */
import { availableParallelism } from 'node:os';
import type { Grid } from '../grid/grid.js';
import { floodTiles, labelCount, planTiles } from './fill-plan.js';
import { TileFlood } from './fill-tile.js';
import { directionRows, routeFlats, type FlowDirections } from './d8.js';
import { FillThreads, fillWorkerEntry, finishBand, type RowsGeometry } from './fill-threads.js';
import type { RasterPool } from './raster-pool.js';
import { SpillGraph } from './spill-graph.js';

/** Side of the square tiles the flood works on, cells (a tile's buffers stay in cache). */
export const FILL_TILE_CELLS = 256;
/** Grids smaller than this many cells are filled on one thread (starting workers costs more). */
export const FILL_THREAD_MIN_CELLS = 4_000_000;

/** Options of {@link fillDepressions}. */
export interface FillOptions {
  /** Tile side, cells (tests use small tiles to exercise the seams). Default {@link FILL_TILE_CELLS}. */
  tileCells?: number;
  /** Threads to flood tiles on, this one included. Default: the machine's available parallelism, at most 8. */
  threads?: number;
  /** Smallest grid, in cells, worth more than one thread. Default {@link FILL_THREAD_MIN_CELLS}. */
  minCellsForThreads?: number;
}

/** Result of {@link fillDepressions}. */
export interface FillResult {
  /** Filled elevation, metres; NaN where the input is NoData. */
  readonly filledZ: Float32Array;
  /** Number of cells raised above their input elevation. */
  readonly raisedCells: number;
}

/**
 * Fills every depression of `grid.z` (metres) to its spill elevation; the
 * input is not changed. Large grids are flooded on several threads (same
 * result, see fill-threads.ts). With `pool`, the scratch rasters are given
 * to it when done.
 */
export function fillDepressions(grid: Pick<Grid, 'width' | 'height' | 'z'>, options: FillOptions = {}, pool?: RasterPool): FillResult {
  return fillAndDirect(grid, null, options, pool).fill;
}

/**
 * {@link fillDepressions} followed by d8.ts `flowDirections` on the filled
 * DEM, with the same results; when the fill runs on several threads, its
 * last pass and the D8 pass are split between them by bands of rows too,
 * and a worker then touches the pages of the buffers prepared in `pool`.
 */
export function fillWithDirections(
  grid: Pick<Grid, 'width' | 'height' | 'z' | 'cellWidthM' | 'cellHeightM'>,
  options: FillOptions = {},
  pool?: RasterPool,
): { fill: FillResult; flow: FlowDirections } {
  const { fill, dir, flats } = fillMarkingFlats(grid, options, pool);
  return { fill, flow: routeFlats(grid, fill.filledZ, dir, flats, pool) };
}

/**
 * {@link fillWithDirections} up to the flats: the fill, and D8 directions
 * with the flat cells marked and listed in row-major order, for d8.ts
 * `routeFlats`.
 */
export function fillMarkingFlats(
  grid: Pick<Grid, 'width' | 'height' | 'z' | 'cellWidthM' | 'cellHeightM'>,
  options: FillOptions = {},
  pool?: RasterPool,
): { fill: FillResult; dir: Uint8Array; flats: Int32Array } {
  const { fill, dir, flats } = fillAndDirect(grid, grid, options, pool);
  return { fill, dir: dir!, flats: flats! };
}

/** The fill, and with `geometry` the D8 pass with flat cells marked and listed (not routed yet). */
function fillAndDirect(
  grid: Pick<Grid, 'width' | 'height' | 'z'>,
  geometry: RowsGeometry | null,
  options: FillOptions,
  pool: RasterPool | undefined,
): { fill: FillResult; dir: Uint8Array | null; flats: Int32Array | null } {
  const { width, height, z } = grid;
  const n = width * height;
  const plan = planTiles(width, height, Math.floor(options.tileCells ?? FILL_TILE_CELLS));
  const threads = Math.max(1, Math.min(options.threads ?? Math.min(8, availableParallelism()), plan.tileRows));
  const entry = threads > 1 && n >= (options.minCellsForThreads ?? FILL_THREAD_MIN_CELLS) ? fillWorkerEntry() : null;
  const graph = new SpillGraph();
  let run: FillThreads | null = null;
  let filled: Float32Array;
  let label: Int32Array;
  if (entry !== null) {
    run = FillThreads.flood(z, plan, threads, graph, entry, geometry !== null);
    ({ filled, label } = run);
  } else {
    filled = new Float32Array(n);
    label = new Int32Array(n);
    floodTiles(z, plan, 0, 1, new TileFlood(plan.tile, plan.tile), filled, label, graph);
  }
  try {
    linkTiles(z, width, height, plan.tile, label, graph);
    const level = graph.solve(labelCount(plan));
    let raisedCells: number;
    let dir: Uint8Array | null = null;
    let flats: Int32Array | null = null;
    if (run !== null && geometry !== null) {
      dir = new Uint8Array(new SharedArrayBuffer(n));
      ({ raised: raisedCells, flats } = run.finishRows(z, level, geometry, dir, pool?.untouched() ?? []));
    } else {
      raisedCells = finishBand(z, filled, label, level, 0, n);
      if (geometry !== null) {
        dir = new Uint8Array(n);
        flats = directionRows(geometry, filled, dir, 0, height);
      }
    }
    // A lost worker may still read the label and z copies: only then are they not reused.
    if (!(run?.anyLost ?? false)) pool?.release(label, run?.sharedZ);
    return { fill: { filledZ: filled, raisedCells }, dir, flats };
  } finally {
    run?.close();
  }
}

/** Adds a graph edge for every pair of neighbouring cells in different tiles (both are tile-edge seeds). */
function linkTiles(z: Float32Array, width: number, height: number, tile: number, label: Int32Array, graph: SpillGraph): void {
  const link = (a: number, b: number): void => {
    const za = z[a] ?? NaN;
    const zb = z[b] ?? NaN;
    if (Number.isNaN(za) || Number.isNaN(zb)) return;
    const la = label[a] ?? 0;
    const lb = label[b] ?? 0;
    if (la !== lb) graph.add(la, lb, za > zb ? za : zb);
  };
  for (let cRight = tile; cRight < width; cRight += tile) {
    for (let r = 0; r < height; r++) {
      const a = r * width + cRight - 1;
      for (let dr = -1; dr <= 1; dr++) {
        const rb = r + dr;
        if (rb >= 0 && rb < height) link(a, rb * width + cRight);
      }
    }
  }
  for (let rBelow = tile; rBelow < height; rBelow += tile) {
    for (let c = 0; c < width; c++) {
      const a = (rBelow - 1) * width + c;
      for (let dc = -1; dc <= 1; dc++) {
        const cb = c + dc;
        if (cb >= 0 && cb < width) link(a, rBelow * width + cb);
      }
    }
  }
}

/** True for a valid cell on the grid edge or next to a NoData cell (neighbours.ts; kept here for callers of this module). */
export { isEdgeCell } from './neighbours.js';
