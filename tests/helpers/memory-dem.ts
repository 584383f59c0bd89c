/**
 * An in-memory DEM source (projected, metres) over a Grid, read window by
 * window like a GeoTIFF mosaic, for pipeline tests that need no files.
 */
import { makeGrid, type Grid } from '../../src/grid/grid.js';
import { windowTransform } from '../../src/grid/transform.js';
import { crsFromEpsg } from '../../src/io/crs.js';
import type { DemSource } from '../../src/io/dem.js';

/** A DemSource serving `grid`'s cells in EPSG `epsg` (default UTM 12N). */
export function memoryDem(grid: Grid, epsg = 32612): DemSource {
  return {
    width: grid.width,
    height: grid.height,
    transform: grid.transform,
    crs: crsFromEpsg(epsg),
    zUnit: 'metre',
    zUnitSource: 'geokey',
    files: [],
    async readWindow(col0, row0, cols, rows) {
      const c0 = Math.max(0, col0);
      const r0 = Math.max(0, row0);
      const c1 = Math.min(grid.width, col0 + cols);
      const r1 = Math.min(grid.height, row0 + rows);
      const w = c1 - c0;
      const z = new Float32Array(w * (r1 - r0));
      for (let r = r0; r < r1; r++) z.set(grid.z.subarray(r * grid.width + c0, r * grid.width + c1), (r - r0) * w);
      return makeGrid({ width: w, height: r1 - r0, z, transform: windowTransform(grid.transform, c0, r0), colOffset: c0, rowOffset: r0 });
    },
    async close() {},
  };
}
