/**
 * `generateBenchScene`: a large synthetic landscape for timing the pipeline.
 *
 * Approach: a dendritic valley network (bench-network.ts) is grown from an
 * outlet on the east edge; each valley gets the demo's cross-section (floor,
 * incised stream, hillslopes) with order-dependent slopes and widths, and is
 * carved into the DEM in 400 m stretches, each within a bounded band of its
 * axis (one exact distance transform per band, so cost grows with valley
 * length, not grid area squared). Hillslope texture and lidar-like error are
 * added row by row. Dams are spaced along the valleys so that each pond
 * mostly stands clear of the next dam up (spacing ≥ height / slope), then
 * crest lines are drawn on the finished DEM exactly as for the demo.
 */
import type { GeoTransform } from '../grid/transform.js';
import { nearestSample, type ChannelSpec } from './channel.js';
import type { CrestDem } from './crest.js';
import { countDams, describeChannel, idsWhere } from './describe.js';
import { ENVELOPE, LIDAR_RMSE_M, SIDE_PROFILE, TEXTURE_OCTAVES, DEMO_EPSG } from './layout.js';
import { buildNetwork, carveBandM, type NetworkEntry } from './network.js';
import { growNetwork } from './bench-network.js';
import { splinePath } from './path.js';
import { STREAM, streamRng } from './seeds.js';
import { buildTerrain } from './terrain.js';
import type { DemoScene } from './types.js';
import { placeBenchDams } from './bench-dams.js';

/** Options of `generateBenchScene`. */
export interface BenchOptions {
  seed: number;
  /** Grid size in cells. */
  width: number;
  height: number;
  /** Number of dams to place. */
  damCount: number;
  /** Cell size, metres (default 1). */
  cellM?: number;
}

/** Upper-left corner of the bench grid, EPSG:32612 metres (a different tile from the demo's). */
const BENCH_ORIGIN = { x0: 402000, y0: 4930000 } as const;
const OUTLET_BED_M = 1420;

/** Valley profile by order (1 trunk, 2, 3, 4). */
const ORDER_PROFILE = {
  1: { slopeHead: 0.0055, slopeMouth: 0.003, hwHead: 30, hwMouth: 40, dHead: 0.55, dMouth: 0.75, wHead: 3, wMouth: 4, meander: 440 },
  2: { slopeHead: 0.015, slopeMouth: 0.008, hwHead: 10, hwMouth: 22, dHead: 0.35, dMouth: 0.55, wHead: 2, wMouth: 3, meander: 200 },
  3: { slopeHead: 0.02, slopeMouth: 0.012, hwHead: 10, hwMouth: 14, dHead: 0.3, dMouth: 0.4, wHead: 2, wMouth: 2.5, meander: 160 },
  4: { slopeHead: 0.02, slopeMouth: 0.015, hwHead: 10, hwMouth: 12, dHead: 0.3, dMouth: 0.35, wHead: 2, wMouth: 2.2, meander: 140 },
} as const;


/** Generates the bench landscape and `damCount` dams on its valley floors. */
export function generateBenchScene(options: BenchOptions): DemoScene {
  const { seed, width, height, damCount } = options;
  const cellM = options.cellM ?? 1;
  if (!Number.isInteger(seed) || !Number.isInteger(width) || !Number.isInteger(height) || !Number.isInteger(damCount)) {
    throw new Error('bench seed, size and dam count must be integers');
  }
  if (width * cellM < 1500 || height * cellM < 1500) throw new Error(`bench grid must be at least 1500 m on each side, got ${width * cellM} × ${height * cellM} m`);
  const wM = width * cellM;
  const hM = height * cellM;
  const rng = streamRng(seed, STREAM.network);
  const outletY = hM * (0.4 + 0.2 * rng());
  const grown = growNetwork(wM, hM, outletY, rng);

  const entries: NetworkEntry[] = [];
  for (const g of grown) {
    const p = ORDER_PROFILE[Math.min(4, g.order) as 1 | 2 | 3 | 4];
    const path = splinePath(g.points, cellM / 2);
    const parent = g.parent >= 0 ? entries[g.parent] : undefined;
    const mouth = g.points[g.points.length - 1]!;
    const spec: ChannelSpec = {
      id: g.id,
      name: g.order === 1 ? 'trunk' : `order-${g.order} valley ${g.id}`,
      order: g.order,
      parentId: parent ? parent.spec.id : null,
      mouth: parent ? 'junction' : 'outlet',
      path,
      slopeHead: p.slopeHead,
      slopeMouth: p.slopeMouth,
      halfFloorHeadM: p.hwHead,
      halfFloorMouthM: p.hwMouth,
      depthHeadM: p.dHead,
      depthMouthM: p.dMouth,
      widthHeadM: p.wHead,
      widthMouthM: p.wMouth,
      meanderWavelengthM: p.meander,
      meanderPhase: 2 * Math.PI * rng(),
    };
    entries.push({ spec, parentSample: parent ? nearestSample(parent.spec.path, mouth[0], mouth[1]) : null });
  }
  const outlet = { x: wM, y: outletY };
  const top = { baseM: OUTLET_BED_M + 30, gradient: 0.01, ...outlet };
  const channels = buildNetwork(entries, OUTLET_BED_M, SIDE_PROFILE, top);
  const { z, zMinM, zMaxM } = buildTerrain({
    width,
    height,
    cellM,
    channels,
    side: SIDE_PROFILE,
    envelope: ENVELOPE,
    outlet: { edge: 'east', alongM: outletY, halfGapM: 60 },
    rimM: 8,
    rimWidthM: 150,
    octaves: TEXTURE_OCTAVES,
    textureFadeM: 60,
    lidarSigmaM: LIDAR_RMSE_M,
    stretchM: 1000,
    bandM: carveBandM(channels, SIDE_PROFILE, ENVELOPE),
    noiseRng: streamRng(seed, STREAM.hillNoise),
    lidarRng: streamRng(seed, STREAM.lidarNoise),
  });
  const transform: GeoTransform = { x0: BENCH_ORIGIN.x0, y0: BENCH_ORIGIN.y0, dx: cellM, dy: -cellM };
  const dem: CrestDem = { width, height, cellM, transform, z };
  const dams = placeBenchDams(dem, channels, damCount, streamRng(seed, STREAM.dams));
  const described = channels.map((c) => describeChannel(c, transform));
  const counts = countDams(dams);
  const totalKm = described.reduce((a, c) => a + c.lengthM, 0) / 1000;
  const zr: [number, number] = [Math.round(zMinM * 100) / 100, Math.round(zMaxM * 100) / 100];
  return {
    width,
    height,
    cellM,
    transform,
    epsg: DEMO_EPSG,
    seed,
    z,
    dams,
    channels: described,
    outlet: { x: transform.x0 + outlet.x, y: transform.y0 - outlet.y },
    facts: {
      summary:
        `A synthetic bench landscape of ${width} × ${height} cells of ${cellM} m with a dendritic network of ` +
        `${channels.length} valleys (${totalKm.toFixed(1)} km) draining east, and ${counts.total} dams on the valley floors. Seed ${seed}.`,
      seed,
      widthCells: width,
      heightCells: height,
      cellM,
      extentM: { x: wM, y: hM },
      epsg: DEMO_EPSG,
      zRangeM: zr,
      lidarRmseM: LIDAR_RMSE_M,
      lidarRmseSource: 'USGS Lidar Base Specification (Techniques and Methods 11-B4), quality level 2: 10 cm RMSEz',
      channels: described.map((c) => ({ id: c.id, name: c.name, lengthM: c.lengthM, slopePct: c.slopePct, floorWidthM: c.floorWidthM })),
      dams: counts,
      cases: {
        cascade: [],
        spill: [],
        breached: idsWhere(dams, (d) => d.properties.status === 'breached'),
        proposed: [],
        candidates: idsWhere(dams, (d) => d.properties.status === 'candidate'),
        points: idsWhere(dams, (d) => d.geometry.kind === 'point'),
        waterSurfaces: [],
      },
    },
  };
}
