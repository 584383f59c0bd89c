/**
 * Sub-watersheds at stream junctions: every cell is labelled with the stream
 * link it first drains into, so each link owns the area draining directly to
 * it (its reach plus the hillslopes beside it; the watershed of a
 * tributary link ends at the junction). Cells whose flow path leaves the grid
 * or ends in a pit before meeting a stream get 0 (edge slivers).
 *
 * {@link mergeWatersheds} then groups links into larger units.
 */
import type { Grid } from '../grid/grid.js';
import { DIR_NONE, neighbourOffsets } from './neighbours.js';
import type { StreamLinks } from './streams.js';

/** Per cell: the id of the link it drains into (0 if none), by one pass down the reversed flow order. */
export function subWatersheds(dir: Uint8Array, order: Int32Array, links: StreamLinks, width: number): Int32Array {
  const off = neighbourOffsets(width);
  const label = new Int32Array(dir.length);
  const link = links.link;
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k] ?? 0;
    const own = link[i] ?? 0;
    if (own !== 0) {
      label[i] = own;
      continue;
    }
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) label[i] = label[i + (off[d] ?? 0)] ?? 0;
  }
  return label;
}

/** Result of {@link mergeWatersheds}. */
export interface MergedWatersheds {
  /** Per cell: unit id 1…count, 0 where the input label is 0. */
  readonly unit: Int32Array;
  /** Number of units. */
  readonly count: number;
  /** Per link id: the unit it belongs to. */
  readonly unitOfLink: Int32Array;
  /** Per unit id (index 0: unlabelled cells): area, m². */
  readonly areaM2: Float64Array;
}

/**
 * Groups link watersheds into units of at least `minAreaM2` (m²): going
 * downstream, a unit still smaller than that joins the unit of the link it
 * flows into. Units that reach the grid edge may stay smaller. Every unit is
 * one connected piece of the catchment.
 */
export function mergeWatersheds(
  grid: Pick<Grid, 'width' | 'cellAreaM2'>,
  labels: Int32Array,
  links: StreamLinks,
  minAreaM2: number,
): MergedWatersheds {
  const { width, cellAreaM2 } = grid;
  const height = labels.length / width;
  const count = links.count;
  const linkArea = new Float64Array(count + 1);
  for (let r = 0; r < height; r++) {
    const a = cellAreaM2[r]!;
    for (let i = r * width; i < (r + 1) * width; i++) {
      const l = labels[i]!;
      linkArea[l] = linkArea[l]! + a;
    }
  }
  // Union–find over links; link ids are upstream before downstream (see streamLinks).
  const parent = new Int32Array(count + 1);
  for (let l = 0; l <= count; l++) parent[l] = l;
  const find = (l: number): number => {
    let root = l;
    while (parent[root] !== root) root = parent[root] ?? root;
    while (parent[l] !== root) {
      const next = parent[l] ?? root;
      parent[l] = root;
      l = next;
    }
    return root;
  };
  const rootArea = Float64Array.from(linkArea);
  for (let l = 1; l <= count; l++) {
    const root = find(l);
    const down = links.downstream[l] ?? 0;
    if (down === 0 || (rootArea[root] ?? 0) >= minAreaM2) continue;
    const downRoot = find(down);
    parent[root] = downRoot;
    rootArea[downRoot] = (rootArea[downRoot] ?? 0) + (rootArea[root] ?? 0);
  }
  const unitOfLink = new Int32Array(count + 1);
  const unitOfRoot = new Int32Array(count + 1);
  let units = 0;
  for (let l = 1; l <= count; l++) {
    const root = find(l);
    if (unitOfRoot[root] === 0) unitOfRoot[root] = ++units;
    unitOfLink[l] = unitOfRoot[root] ?? 0;
  }
  const unit = new Int32Array(labels.length);
  const areaM2 = new Float64Array(units + 1);
  for (let r = 0; r < height; r++) {
    const a = cellAreaM2[r]!;
    for (let i = r * width; i < (r + 1) * width; i++) {
      const u = unitOfLink[labels[i]!]!;
      unit[i] = u;
      areaM2[u] = areaM2[u]! + a;
    }
  }
  return { unit, count: units, unitOfLink, areaM2 };
}
