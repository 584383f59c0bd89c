/**
 * Block means of the DEM for the report's hillshade, gathered while the
 * estimate reads its windows, so a large DEM is not decoded a second time
 * for the map.
 *
 * Before the estimate, a block grid is laid over the area the estimate will
 * read (the dams grown by the search reach); a DemSource wrapper passes each
 * window read through and adds its cells to the blocks it covers. The
 * estimate's windows never share a cell (pipeline/windows.ts), so a block is
 * complete when the cells it received equal its cells on the DEM; a block
 * that received more (an overlapping read) is treated as incomplete and read
 * again. Blocks the estimate never read are read when the map is built.
 */
import type { Grid } from '../grid/grid.js';
import { xToCol, yToRow } from '../grid/transform.js';
import type { DamInput } from '../inventory.js';
import { cellMetrics, crsUnitM } from '../io/crs.js';
import type { DemSource } from '../io/dem.js';

/** Block sums over a grid of `block` × `block` DEM cells starting at (col0, row0) in full-DEM pixel space. */
export class BlockMeans {
  readonly sums: Float64Array;
  readonly valid: Uint32Array;
  readonly covered: Uint32Array;

  constructor(
    readonly col0: number,
    readonly row0: number,
    readonly block: number,
    readonly cols: number,
    readonly rows: number,
    readonly demWidth: number,
    readonly demHeight: number,
  ) {
    this.sums = new Float64Array(cols * rows);
    this.valid = new Uint32Array(cols * rows);
    this.covered = new Uint32Array(cols * rows);
  }

  /** Adds the cells of a window read (a Grid knows its offset in the DEM). */
  add(grid: Grid): void {
    const f = this.block;
    const colBlock = new Int32Array(grid.width);
    for (let col = 0; col < grid.width; col++) {
      const bc = Math.floor((grid.colOffset + col - this.col0) / f);
      colBlock[col] = bc >= 0 && bc < this.cols ? bc : -1;
    }
    for (let row = 0; row < grid.height; row++) {
      const br = Math.floor((grid.rowOffset + row - this.row0) / f);
      if (br < 0 || br >= this.rows) continue;
      const off = row * grid.width;
      const boff = br * this.cols;
      for (let col = 0; col < grid.width; col++) {
        const bc = colBlock[col]!;
        if (bc < 0) continue;
        const b = boff + bc;
        this.covered[b]!++;
        const v = grid.z[off + col]!;
        if (Number.isNaN(v)) continue;
        this.sums[b]! += v;
        this.valid[b]!++;
      }
    }
  }

  /** Cells of block (bc, br) that lie on the DEM. */
  cellsOnDem(bc: number, br: number): number {
    const c0 = Math.max(0, this.col0 + bc * this.block);
    const c1 = Math.min(this.demWidth, this.col0 + (bc + 1) * this.block);
    const r0 = Math.max(0, this.row0 + br * this.block);
    const r1 = Math.min(this.demHeight, this.row0 + (br + 1) * this.block);
    return Math.max(0, c1 - c0) * Math.max(0, r1 - r0);
  }

  /** Mean elevation of a complete block (NaN when all NoData), or undefined when the block is incomplete. */
  meanOf(bc: number, br: number): number | undefined {
    const b = br * this.cols + bc;
    if (this.covered[b] !== this.cellsOnDem(bc, br)) return undefined;
    return this.valid[b]! > 0 ? this.sums[b]! / this.valid[b]! : NaN;
  }
}

/** A DemSource that passes every read through and adds it to `blocks`. */
export function teeDem(dem: DemSource, blocks: BlockMeans): DemSource {
  return {
    get width() {
      return dem.width;
    },
    get height() {
      return dem.height;
    },
    get transform() {
      return dem.transform;
    },
    get crs() {
      return dem.crs;
    },
    get zUnit() {
      return dem.zUnit;
    },
    get zUnitSource() {
      return dem.zUnitSource;
    },
    get files() {
      return dem.files;
    },
    async readWindow(col0: number, row0: number, cols: number, rows: number): Promise<Grid> {
      const grid = await dem.readWindow(col0, row0, cols, rows);
      blocks.add(grid);
      return grid;
    },
    close: () => dem.close(),
  };
}

/**
 * Lays the block grid over the part of the DEM an estimate reads (every dam
 * grown by `reachM` metres, clipped to the DEM), with blocks as small as keep
 * its longest side within `maxSidePx`.
 */
export function planBlocks(dem: DemSource, dams: readonly DamInput[], reachM: number, maxSidePx: number): BlockMeans {
  const t = dem.transform;
  const mid = cellMetrics(dem.crs, t, Math.floor(dem.height / 2), 1);
  const unitM = crsUnitM(dem.crs);
  const cellM = Math.min(unitM !== null ? Math.abs(t.dx) * unitM : mid.cellWidthM[0]!, mid.cellHeightM);
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  const visit = (x: number, y: number): void => {
    const col = xToCol(t, x);
    const row = yToRow(t, y);
    if (!(col >= 0 && col <= dem.width && row >= 0 && row <= dem.height)) return;
    c0 = Math.min(c0, col);
    c1 = Math.max(c1, col);
    r0 = Math.min(r0, row);
    r1 = Math.max(r1, row);
  };
  for (const d of dams) {
    if (d.geometry.kind === 'point') visit(d.geometry.x, d.geometry.y);
    else for (const line of d.geometry.lines) for (const [x, y] of line) visit(x, y);
  }
  if (!Number.isFinite(c0)) {
    c0 = 0;
    r0 = 0;
    c1 = dem.width;
    r1 = dem.height;
  } else {
    const grow = reachM / cellM;
    c0 = Math.max(0, Math.floor(c0 - grow));
    r0 = Math.max(0, Math.floor(r0 - grow));
    c1 = Math.min(dem.width, Math.ceil(c1 + grow));
    r1 = Math.min(dem.height, Math.ceil(r1 + grow));
  }
  const block = Math.max(1, Math.ceil(Math.max(c1 - c0, r1 - r0) / maxSidePx));
  // Blocks sit on the DEM's own grid of block multiples, as the map's do (map-build.ts).
  c0 = Math.floor(c0 / block) * block;
  r0 = Math.floor(r0 / block) * block;
  return new BlockMeans(c0, r0, block, Math.ceil((c1 - c0) / block), Math.ceil((r1 - r0) / block), dem.width, dem.height);
}
