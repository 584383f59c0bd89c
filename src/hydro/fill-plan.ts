/**
 * How the tiled fill cuts the grid: square tiles in row-major order, each
 * with its own block of seed labels (so tiles can be flooded in any order,
 * or on several threads, and still get the same labels).
 */
import type { TileFlood } from './fill-tile.js';
import { OUTLET_LABEL, type SpillGraph } from './spill-graph.js';

/** The grid and its tiling. */
export interface TilePlan {
  width: number;
  height: number;
  /** Tile side, cells. */
  tile: number;
  tileRows: number;
  tileCols: number;
  /** Labels reserved per tile (its largest possible number of edge cells). */
  labelsPerTile: number;
}

/** Plans square tiles of side `tile` over a `width` × `height` grid. */
export function planTiles(width: number, height: number, tile: number): TilePlan {
  const side = Math.max(3, Math.min(tile, Math.max(width, height)));
  return {
    width,
    height,
    tile: side,
    tileRows: Math.ceil(height / side),
    tileCols: Math.ceil(width / side),
    labelsPerTile: 4 * side,
  };
}

/** One past the largest label the plan can hand out. */
export function labelCount(plan: TilePlan): number {
  return OUTLET_LABEL + 1 + plan.tileRows * plan.tileCols * plan.labelsPerTile;
}

/** Floods the tile rows first, first + stride, … of the plan (all rows with stride 1). */
export function floodTiles(
  z: Float32Array,
  plan: TilePlan,
  first: number,
  stride: number,
  flood: TileFlood,
  filled: Float32Array,
  label: Int32Array,
  graph: SpillGraph,
): void {
  const { width, height, tile } = plan;
  for (let tr = first; tr < plan.tileRows; tr += stride) {
    for (let tc = 0; tc < plan.tileCols; tc++) {
      const r0 = tr * tile;
      const c0 = tc * tile;
      const bounds = { r0, c0, rows: Math.min(tile, height - r0), cols: Math.min(tile, width - c0) };
      const base = OUTLET_LABEL + 1 + (tr * plan.tileCols + tc) * plan.labelsPerTile;
      flood.run(z, width, height, bounds, filled, label, base, graph);
    }
  }
}
