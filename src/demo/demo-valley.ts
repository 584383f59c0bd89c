/**
 * `generateDemoValley`: the fictional valley the README and `pondage demo`
 * run on. Deterministic: the same options give the same bytes.
 */
import type { GeoTransform } from '../grid/transform.js';
import type { Channel } from './channel.js';
import type { CrestDem } from './crest.js';
import { countDams, describeChannel, idsWhere, streamPointAt, zRange } from './describe.js';
import { placeDemoDams } from './inventory.js';
import { DEMO_EPSG, DEMO_ORIGIN, LIDAR_RMSE_M } from './layout.js';
import { STREAM, streamRng } from './seeds.js';
import type { DemoDam, DemoFacts, DemoScene, DemoSubWatershed } from './types.js';
import { buildDemoTerrain } from './valley.js';
import { flattenPonds } from './water.js';
import { DEMO_DAM_ROWS } from './dam-table.js';

/** Options of `generateDemoValley`. */
export interface DemoValleyOptions {
  /** Seed of every random choice (default 20261201). */
  seed?: number;
  /** Grid size in cells (default 2000 × 1600). The landscape scales with the grid; floor widths, stream size and relief stay in metres. */
  width?: number;
  height?: number;
  /** Cell size, metres (default 1). */
  cellM?: number;
  /** Flatten the ponds of a few existing dams into the DEM as standing water (default false: dry ground everywhere). */
  waterSurfaces?: boolean;
}

/** Defaults of `generateDemoValley`. */
export const DEMO_DEFAULTS = { seed: 20261201, width: 2000, height: 1600, cellM: 1 } as const;

/** Smallest grid the demo layout fits on, cells of 1 m (the valleys need room for their sides). */
const MIN_EXTENT_M = 500;

/** Distance of a sub-watershed's pour point above its junction, metres. */
const POUR_POINT_ABOVE_M = 20;

/**
 * Generates the demo scene: a hilly landscape with a main stem and two
 * tributaries draining to one outlet on the east edge, a lidar-like bare-earth
 * DEM (metres, EPSG:32612, 0.10 m random error) and the fictional dams of
 * dam-table.ts.
 */
export function generateDemoValley(options: DemoValleyOptions = {}): DemoScene {
  const seed = options.seed ?? DEMO_DEFAULTS.seed;
  const width = options.width ?? DEMO_DEFAULTS.width;
  const height = options.height ?? DEMO_DEFAULTS.height;
  const cellM = options.cellM ?? DEMO_DEFAULTS.cellM;
  if (!Number.isInteger(seed)) throw new Error(`seed must be an integer, got ${seed}`);
  if (!(Number.isInteger(width) && Number.isInteger(height)) || width * cellM < MIN_EXTENT_M || height * cellM < MIN_EXTENT_M) {
    throw new Error(`demo grid must be whole cells and at least ${MIN_EXTENT_M} m on each side, got ${width} × ${height} cells of ${cellM} m`);
  }
  if (!(cellM > 0 && cellM <= 5)) throw new Error(`demo cell size must be in (0, 5] m, got ${cellM}`);

  const terrain = buildDemoTerrain(seed, width, height, cellM);
  const transform: GeoTransform = { x0: DEMO_ORIGIN.x0, y0: DEMO_ORIGIN.y0, dx: cellM, dy: -cellM };
  const dem: CrestDem = { width, height, cellM, transform, z: terrain.z };
  const dams = placeDemoDams(dem, terrain.channels, streamRng(seed, STREAM.dams));
  const wet = new Set(DEMO_DAM_ROWS.filter((r) => r.wet).map((r) => r.id));
  const flattened = options.waterSurfaces
    ? flattenPonds(dem, dams, wet, LIDAR_RMSE_M, streamRng(seed, STREAM.water)).flattened
    : [];
  const byId = new Map(terrain.channels.map((c) => [c.spec.id, c]));
  const subWatersheds = describeSubWatersheds(byId, terrain.junctionSample, transform);
  const outlet = { x: transform.x0 + terrain.outlet.x, y: transform.y0 - terrain.outlet.y };
  const channels = terrain.channels.map((c) => describeChannel(c, transform));
  const range = options.waterSurfaces ? zRange(terrain.z) : terrain.zRangeM;
  const facts = demoFacts({ seed, width, height, cellM, zRangeM: range, dams, channels, flattened });
  return { width, height, cellM, transform, epsg: DEMO_EPSG, seed, z: terrain.z, dams, channels, outlet, subWatersheds, facts };
}

function describeSubWatersheds(
  byId: ReadonlyMap<string, Channel>,
  junctionSample: Record<string, number>,
  t: GeoTransform,
): DemoSubWatershed[] {
  const ms = byId.get('MS');
  const ta = byId.get('TA');
  const tb = byId.get('TB');
  const ja = junctionSample['TA'];
  if (!ms || !ta || !tb || ja === undefined) throw new Error('demo valleys missing');
  const above = (ch: Channel, k: number): number => Math.max(0, k - Math.round(POUR_POINT_ABOVE_M / ch.stepM));
  const at = (ch: Channel, k: number): { x: number; y: number } => {
    const [x, y] = streamPointAt(ch, above(ch, k), t);
    return { x, y };
  };
  return [
    { id: 'main-upper', name: 'main stem above tributary A', channelId: 'MS', pourPoint: at(ms, ja) },
    { id: 'trib-a', name: 'tributary A', channelId: 'TA', pourPoint: at(ta, ta.n - 1) },
    { id: 'trib-b', name: 'tributary B', channelId: 'TB', pourPoint: at(tb, tb.n - 1) },
  ];
}

function demoFacts(s: {
  seed: number;
  width: number;
  height: number;
  cellM: number;
  zRangeM: [number, number];
  dams: DemoDam[];
  channels: DemoScene['channels'];
  flattened: string[];
}): DemoFacts {
  const counts = countDams(s.dams);
  const hasRole = (role: string) => (d: DemoDam) => d.truth.roles.some((r) => r === role);
  const lower = idsWhere(s.dams, hasRole('cascade-lower'));
  const drowned = idsWhere(s.dams, hasRole('cascade-drowned'));
  const cascade = lower.map((id, i) => ({ lower: id, drowned: drowned[i] ?? '' }));
  const z = s.zRangeM.map((v) => Math.round(v * 100) / 100) as [number, number];
  const extent = { x: s.width * s.cellM, y: s.height * s.cellM };
  const channels = s.channels.map((c) => ({ id: c.id, name: c.name, lengthM: c.lengthM, slopePct: c.slopePct, floorWidthM: c.floorWidthM }));
  const total = channels.reduce((a, c) => a + c.lengthM, 0);
  const b = counts.byStatus;
  const summary =
    `A fictional, generated landscape of ${(extent.x / 1000).toFixed(1)} × ${(extent.y / 1000).toFixed(1)} km ` +
    `(${s.width} × ${s.height} cells of ${s.cellM} m, EPSG:${DEMO_EPSG}, elevations ${z[0].toFixed(0)}–${z[1].toFixed(0)} m): ` +
    `a main stem and two tributaries (${(total / 1000).toFixed(1)} km of valley floor, ` +
    `${Math.min(...channels.map((c) => c.floorWidthM[0])).toFixed(0)}–${Math.max(...channels.map((c) => c.floorWidthM[1])).toFixed(0)} m wide) ` +
    `draining to one outlet on the east edge. The DEM is bare earth as lidar sees it, with ${LIDAR_RMSE_M.toFixed(2)} m RMSE random error. ` +
    `The inventory holds ${counts.total} dams: ${b.confirmed} confirmed, ${b.candidate} candidates, ${b.breached} breached and ${b.proposed} proposed; ` +
    `${counts.lines} crest lines and ${counts.points} detector points; ${counts.measuredHeights} with a height and ${counts.unmeasuredHeights} without. ` +
    `Seed ${s.seed}.`;
  return {
    summary,
    seed: s.seed,
    widthCells: s.width,
    heightCells: s.height,
    cellM: s.cellM,
    extentM: extent,
    epsg: DEMO_EPSG,
    zRangeM: z,
    lidarRmseM: LIDAR_RMSE_M,
    lidarRmseSource: 'USGS Lidar Base Specification (Techniques and Methods 11-B4), quality level 2: 10 cm RMSEz',
    channels,
    dams: counts,
    cases: {
      cascade,
      spill: idsWhere(s.dams, hasRole('spill')),
      breached: idsWhere(s.dams, (d) => d.properties.status === 'breached'),
      proposed: idsWhere(s.dams, (d) => d.properties.status === 'proposed'),
      candidates: idsWhere(s.dams, (d) => d.properties.status === 'candidate'),
      points: idsWhere(s.dams, (d) => d.geometry.kind === 'point'),
      waterSurfaces: s.flattened,
    },
  };
}
