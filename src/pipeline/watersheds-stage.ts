/**
 * Watersheds on the analysis grid: a label per cell (1 + unit index, 0 in
 * no watershed) from the user's polygons or derived from the DEM.
 *
 * Polygons (`--watersheds FILE --watershed-field NAME`): burnt at cell
 * centres by the scanline fill of grid/rasterise-polygon.ts (holes and
 * multipolygons by the even–odd rule). Features sharing an id form one
 * watershed. Overlaps: the feature listed first keeps the cells, and each
 * later feature that also covers cells of another watershed draws a
 * warning with the area it loses. Self-intersecting rings draw a warning.
 * Polygons that cover no cell centre of the DEM are an error.
 *
 * Derived (no polygons): sub-watersheds at stream junctions (every cell
 * labelled with the stream link it first drains into) merged downstream
 * into units of at least `minAreaM2` (hydro/watersheds.ts), named `ws-1`,
 * `ws-2`, … in the order of their most upstream link. Cells whose flow
 * leaves the DEM (its edge or NoData) before meeting a stream belong to no
 * link; they form one more watershed, `edge`, so every valid DEM cell lies
 * in exactly one watershed. NoData cells are in none.
 */
import { InputError, type Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import { rasterisePolygons, type AreaFeature } from '../grid/rasterise-polygon.js';
import { windowTransform, xToCol, yToRow } from '../grid/transform.js';
import type { StreamLinks } from '../hydro/streams.js';
import { mergeWatersheds } from '../hydro/watersheds.js';
import type { AreaLayer } from '../io/area-layer.js';
import type { CellBox } from './windows.js';

/** One watershed. */
export interface WatershedUnit {
  /** Its id in every output (the polygon's id, or `ws-N` / `edge` when derived). */
  id: string;
  /** The polygon's `name` property, or a description for derived units; null when none. */
  name: string | null;
  /** Where it came from. */
  source: 'polygon' | 'derived' | 'edge';
}

/** Watershed labels on the analysis grid. */
export interface WatershedLabels {
  /** Per cell: 1 + index into `units`, 0 in no watershed. */
  labels: Int32Array;
  units: WatershedUnit[];
  warnings: Warning[];
}

/** Id of the derived watershed of cells that drain off the DEM before meeting a stream. */
export const EDGE_WATERSHED_ID = 'edge';

/** Derived watersheds (see the file comment) from the terrain's link watersheds. */
export function derivedWatersheds(grid: Pick<Grid, 'width' | 'z' | 'cellAreaM2'>, linkLabels: Int32Array, links: StreamLinks, minAreaM2: number): WatershedLabels & { unitOfLink: Int32Array } {
  const merged = mergeWatersheds(grid, linkLabels, links, minAreaM2);
  const labels = merged.unit;
  const units: WatershedUnit[] = [];
  for (let u = 1; u <= merged.count; u++) units.push({ id: `ws-${u}`, name: null, source: 'derived' });
  const edge = merged.count + 1;
  let edgeCells = 0;
  const z = grid.z;
  for (let i = 0; i < labels.length; i++) {
    if (labels[i] === 0 && z[i] === z[i]) {
      labels[i] = edge;
      edgeCells++;
    }
  }
  if (edgeCells > 0) units.push({ id: EDGE_WATERSHED_ID, name: 'cells draining off the DEM before meeting a stream', source: 'edge' });
  return { labels, units, warnings: [], unitOfLink: merged.unitOfLink };
}

/**
 * The user's watershed polygons burnt on the analysis grid `grid`, whose
 * cell (0, 0) is cell (`box.col0`, `box.row0`) of the DEM.
 */
export function polygonWatersheds(grid: Pick<Grid, 'width' | 'height' | 'transform' | 'cellAreaM2'>, layer: AreaLayer): WatershedLabels {
  const where = `watersheds file "${layer.path}"`;
  const units: WatershedUnit[] = [];
  const unitOf = new Map<string, number>();
  const featureUnit: number[] = [];
  for (const f of layer.features) {
    let u = unitOf.get(f.id);
    if (u === undefined) {
      u = units.length;
      unitOf.set(f.id, u);
      units.push({ id: f.id, name: f.name, source: 'polygon' });
    } else if (units[u]!.name === null && f.name !== null) {
      units[u]!.name = f.name;
    }
    featureUnit.push(u);
  }
  const features: AreaFeature[] = layer.features.map((f) => ({ id: f.id, polygons: f.polygons }));
  const burnt = rasterisePolygons(grid, features);
  const warnings: Warning[] = [];
  for (const w of burnt.warnings) {
    if (w.code === 'self-intersecting-ring') warnings.push({ code: w.code, message: `${where}: ${w.message}` });
  }
  const labels = burnt.labels;
  if (burnt.overlapCells > 0) warnings.push(...overlapWarnings(grid, features, featureUnit, labels, where));
  // Feature labels (1 + feature) to watershed labels (1 + unit).
  const map = Int32Array.from([0, ...featureUnit.map((u) => u + 1)]);
  let labelled = 0;
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i]!;
    if (l !== 0) {
      labels[i] = map[l]!;
      labelled++;
    }
  }
  if (labelled === 0) {
    throw new InputError(
      `${where}: none of its ${layer.features.length} polygons covers a cell centre of the DEM; the polygons and the DEM do not overlap. ` +
        `Check the polygons' CRS (read as ${layer.crsLabel}; name a projected CRS with --watersheds-crs) and that the DEM covers them`,
    );
  }
  const empty = layer.features.filter((_, k) => burnt.cellCounts[k] === 0).map((f) => f.id);
  const emptyUnits = units.filter((_, u) => !layer.features.some((f, k) => featureUnit[k] === u && burnt.cellCounts[k]! > 0)).map((u) => u.id);
  if (empty.length > 0) {
    const shown = empty.slice(0, 10).map((id) => `'${id}'`).join(', ');
    warnings.push({
      code: 'watershed-without-cells',
      message:
        `${where}: ${empty.length} polygon features (${shown}${empty.length > 10 ? ', …' : ''}) cover no cell centre of the DEM that an earlier polygon did not take; ` +
        `${emptyUnits.length > 0 ? `watersheds ${emptyUnits.map((id) => `'${id}'`).join(', ')} are reported with no area. ` : ''}Check that they lie over the DEM`,
    });
  }
  return { labels, units, warnings };
}

/**
 * Overlap warnings, one per feature that covers cells an earlier feature of
 * another watershed took, with the area it loses (m², each row's own cell
 * area). Each such feature is burnt again alone over its own bounding box.
 */
function overlapWarnings(grid: Pick<Grid, 'width' | 'height' | 'transform' | 'cellAreaM2'>, features: readonly AreaFeature[], featureUnit: readonly number[], labels: Int32Array, where: string): Warning[] {
  const out: Warning[] = [];
  const { width, height, transform } = grid;
  for (let f = 1; f < features.length; f++) {
    const feature = features[f]!;
    const box = featuresBox([feature], transform, width, height);
    if (!box) continue;
    const w = box.col1 - box.col0;
    const h = box.row1 - box.row0;
    const alone = rasterisePolygons({ width: w, height: h, transform: windowTransform(transform, box.col0, box.row0) }, [feature]).labels;
    let cells = 0;
    let areaM2 = 0;
    const lostTo = new Uint8Array(features.length);
    for (let r = 0; r < h; r++) {
      for (let c = 0; c < w; c++) {
        if (alone[r * w + c] === 0) continue;
        const owner = labels[(r + box.row0) * width + c + box.col0]! - 1;
        if (owner < 0 || owner === f || featureUnit[owner] === featureUnit[f]) continue;
        cells++;
        areaM2 += grid.cellAreaM2[r + box.row0]!;
        lostTo[owner] = 1;
      }
    }
    if (cells === 0) continue;
    const others = new Set<string>();
    for (let k = 0; k < features.length; k++) if (lostTo[k] === 1) others.add(features[k]!.id);
    const names = [...others].slice(0, 5).map((id) => `'${id}'`).join(', ');
    out.push({
      code: 'overlapping-watersheds',
      message:
        `${where}: watershed '${feature.id}' (feature ${f + 1}) overlaps ${names}${others.size > 5 ? ', …' : ''} on ${formatArea(areaM2)} (${cells} cells); ` +
        'those cells stay with the feature listed first (first one wins). Remove the overlap if the cells belong to this watershed',
    });
  }
  return out;
}

/** The bounding box of features' polygons in grid cells, clipped; null when it misses the grid. */
export function featuresBox(features: readonly AreaFeature[], t: Grid['transform'], width: number, height: number): CellBox | null {
  let c0 = Infinity;
  let c1 = -Infinity;
  let r0 = Infinity;
  let r1 = -Infinity;
  for (const feature of features) {
    for (const polygon of feature.polygons) {
      for (const ring of polygon) {
        for (const p of ring) {
          const c = xToCol(t, p[0]!);
          const r = yToRow(t, p[1]!);
          if (c < c0) c0 = c;
          if (c > c1) c1 = c;
          if (r < r0) r0 = r;
          if (r > r1) r1 = r;
        }
      }
    }
  }
  const col0 = Math.max(0, Math.floor(c0));
  const row0 = Math.max(0, Math.floor(r0));
  const col1 = Math.min(width, Math.ceil(c1) + 1);
  const row1 = Math.min(height, Math.ceil(r1) + 1);
  return col1 > col0 && row1 > row0 ? { col0, row0, col1, row1 } : null;
}

function formatArea(areaM2: number): string {
  return areaM2 >= 10_000 ? `${(areaM2 / 10_000).toFixed(2)} ha` : `${areaM2.toFixed(1)} m²`;
}

/** The valley bottom from user polygons: 1 inside any polygon (cell centres), else 0. */
export function polygonValleyBottom(grid: Pick<Grid, 'width' | 'height' | 'transform'>, layer: AreaLayer): { mask: Uint8Array; warnings: Warning[] } {
  const burnt = rasterisePolygons(
    grid,
    layer.features.map((f) => ({ id: f.id, polygons: f.polygons })),
  );
  const mask = new Uint8Array(burnt.labels.length);
  let cells = 0;
  for (let i = 0; i < mask.length; i++) {
    if (burnt.labels[i] !== 0) {
      mask[i] = 1;
      cells++;
    }
  }
  const where = `valley-bottom file "${layer.path}"`;
  const warnings: Warning[] = burnt.warnings.filter((w) => w.code === 'self-intersecting-ring').map((w) => ({ code: w.code, message: `${where}: ${w.message}` }));
  if (cells === 0) {
    throw new InputError(
      `${where}: none of its ${layer.features.length} polygons covers a cell centre of the DEM near the ponds; the polygons and the DEM do not overlap. ` +
        `Check the polygons' CRS (read as ${layer.crsLabel}; name a projected CRS with --valley-bottom-crs)`,
    );
  }
  return { mask, warnings };
}
