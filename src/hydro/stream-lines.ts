/**
 * Stream links as polylines of cell-centre map coordinates (the grid's CRS),
 * following D8 links from each link's first cell to its last; a link that
 * flows into another ends on that link's first cell (the junction), so the
 * lines join. For GeoJSON LineStrings (reproject to lon/lat when writing).
 */
import type { Grid } from '../grid/grid.js';
import { colToX, rowToY } from '../grid/transform.js';
import { DIR_NONE, neighbourOffsets } from './neighbours.js';
import type { StreamLinks } from './streams.js';

/** One stream link as a line. */
export interface StreamPolyline {
  /** Link id (see streamLinks). */
  readonly linkId: number;
  /** Link it flows into, 0 at an outlet. */
  readonly downstreamLinkId: number;
  /** Interleaved x, y of cell centres in the grid's CRS, upstream to downstream. */
  readonly xy: Float64Array;
}

/** Polylines of all links, in link-id order. */
export function streamPolylines(
  grid: Pick<Grid, 'width' | 'transform'>,
  dir: Uint8Array,
  links: StreamLinks,
): StreamPolyline[] {
  const { width, transform } = grid;
  const off = neighbourOffsets(width);
  const lines: StreamPolyline[] = [];
  let buffer = new Float64Array(256);
  for (let id = 1; id <= links.count; id++) {
    let cell = links.firstCell[id] ?? -1;
    let used = 0;
    while (cell >= 0) {
      if (used + 2 > buffer.length) {
        const bigger = new Float64Array(buffer.length * 2);
        bigger.set(buffer);
        buffer = bigger;
      }
      const r = (cell / width) | 0;
      buffer[used++] = colToX(transform, cell - r * width + 0.5);
      buffer[used++] = rowToY(transform, r + 0.5);
      if ((links.link[cell] ?? 0) !== id) break; // the junction cell of the downstream link
      const d = dir[cell] ?? DIR_NONE;
      cell = d < 8 ? cell + (off[d] ?? 0) : -1;
    }
    lines.push({ linkId: id, downstreamLinkId: links.downstream[id] ?? 0, xy: buffer.slice(0, used) });
  }
  return lines;
}
