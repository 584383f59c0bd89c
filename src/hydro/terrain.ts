/**
 * The terrain step in one call: fill, D8 with flats routed, flow order,
 * contributing area, streams, links, sub-watersheds, HAND and the valley
 * bottom. Each piece is also exported on its own.
 */
import type { Grid } from '../grid/grid.js';
import { drainageRasters } from './drainage.js';
import { routeFlats } from './d8.js';
import { fillMarkingFlats, type FillOptions } from './fill.js';
import type { HandResult } from './hand.js';
import { flowRouting } from './order.js';
import { RasterPool } from './raster-pool.js';
import { streamCellLengthsM, streamLengthM, type StreamCellLengths } from './stream-length.js';
import { DEFAULT_STREAM_THRESHOLD_M2, streamLinks, type StreamLinks } from './streams.js';
import type { ValleyBottomOptions } from './valley-bottom.js';

/** Options of {@link analyseTerrain}. */
export interface TerrainOptions {
  /** Contributing area that starts a stream, m². Default {@link DEFAULT_STREAM_THRESHOLD_M2}. */
  streamThresholdM2?: number;
  /** Valley-bottom threshold rule; see valley-bottom.ts. */
  valleyBottom?: ValleyBottomOptions;
  /** HAND from the original DEM (default, keeps real depressions) or the filled one. */
  handSurface?: 'original' | 'filled';
  /** Tiling and threads of the depression fill; see fill.ts. */
  fill?: FillOptions;
}

/** Everything the terrain step derives from a DEM; all rasters on `grid`, flat-indexed. */
export interface Terrain {
  /** Depression-filled elevation, m. */
  readonly filledZ: Float32Array;
  /** D8 direction codes (see neighbours.ts). */
  readonly dir: Uint8Array;
  /** Valid cells, upstream before downstream. */
  readonly order: Int32Array;
  /** Contributing area, m². */
  readonly accumulationM2: Float64Array;
  /** 1 on stream cells. */
  readonly stream: Uint8Array;
  /** Stream links. */
  readonly links: StreamLinks;
  /** Stream length carried by each cell, m (the raster is built when first read). */
  readonly streamLengthM: Float32Array;
  /** The same for the stream cells only, as lists in row-major order. */
  readonly streamCellLengths: StreamCellLengths;
  /** Link each cell drains into (0: reaches no stream). */
  readonly watershed: Int32Array;
  /** Height above nearest drainage (its raster is built when first read). */
  readonly hand: HandResult;
  /** 1 in the valley bottom. */
  readonly valleyBottom: Uint8Array;
  /** Counts worth reporting: raised cells, routed flat cells, pits left. */
  readonly stats: { raisedCells: number; flatCells: number; pitCells: number };
  /** Wall time of each part, seconds (for the bench): fill with D8, flat routing, order with contributing area and streams, links and lengths, HAND with watersheds and valley bottom. */
  readonly timingsS: { fillS: number; flatsS: number; routingS: number; linksS: number; drainageS: number };
}

/** Runs the whole terrain step on `grid` (elevations in metres, NaN for NoData). */
export function analyseTerrain(grid: Grid, options: TerrainOptions = {}): Terrain {
  const pool = new RasterPool(); // scratch rasters of one step reused by the next (raster-pool.ts)
  // Rasters of the later steps, prepared now so a fill worker can take their page faults meanwhile:
  // contributing area, donor counts and stream mask (flowRouting), links, drainage cells and link watersheds.
  const n = grid.width * grid.height;
  pool.prepare([8 * n, n, n, 4 * n, 4 * n]);
  let t = performance.now();
  const lap = (): number => {
    const now = performance.now();
    const s = (now - t) / 1000;
    t = now;
    return s;
  };
  // Fill and D8 together: on several threads the fill's last pass and the D8 pass are split by rows.
  const marked = fillMarkingFlats(grid, options.fill, pool);
  const { fill } = marked;
  const fillS = lap();
  const flow = routeFlats(grid, fill.filledZ, marked.dir, marked.flats, pool);
  const flatsS = lap();
  // Order, contributing area and stream mask in one walk; links from the stream cells alone.
  const routing = flowRouting(grid, flow.dir, fill.filledZ, options.streamThresholdM2 ?? DEFAULT_STREAM_THRESHOLD_M2, pool);
  const { order, accumulationM2, stream } = routing;
  const routingS = lap();
  const links = streamLinks(flow.dir, routing.streamCells, stream, grid.width, pool);
  const lengths = streamCellLengthsM(grid, flow.dir, routing.streamCells);
  const linksS = lap();
  const handZ = options.handSurface === 'filled' ? fill.filledZ : grid.z;
  // HAND, link watersheds and valley bottom in one pass up the order.
  let lengthRaster: Float32Array | null = null;
  const drained = drainageRasters(handZ, flow.dir, order, stream, routing.streamCells, links.link, accumulationM2, grid.width, options.valleyBottom, pool);
  const drainageS = lap();
  return {
    filledZ: fill.filledZ,
    dir: flow.dir,
    order,
    accumulationM2,
    stream,
    links,
    streamCellLengths: lengths,
    get streamLengthM(): Float32Array {
      lengthRaster ??= streamLengthM(grid, flow.dir, stream); // built when first read
      return lengthRaster;
    },
    watershed: drained.watershed,
    get hand(): HandResult {
      return drained.hand; // built when first read
    },
    valleyBottom: drained.valleyBottom,
    stats: { raisedCells: fill.raisedCells, flatCells: flow.flatCells, pitCells: flow.pitCells },
    timingsS: { fillS, flatsS, routingS, linksS, drainageS },
  };
}
