/**
 * The demo landscape: a main stem and two tributaries (layout.ts) built into
 * channels and carved into a DEM.
 */
import type { Rng } from '../uncertainty/random.js';
import { nearestSample, type Channel, type ChannelSpec } from './channel.js';
import {
  DEMO_OUTLET_BED_M,
  DEMO_TOP,
  DEMO_VALLEYS,
  ENVELOPE,
  LIDAR_RMSE_M,
  SIDE_PROFILE,
  TEXTURE_OCTAVES,
} from './layout.js';
import { buildNetwork, carveBandM, type NetworkEntry } from './network.js';
import { splinePath } from './path.js';
import { STREAM, streamRng } from './seeds.js';
import { buildTerrain } from './terrain.js';

/** The built valleys and the bare-earth DEM of the demo scene. */
export interface DemoTerrain {
  channels: Channel[];
  /** Elevation, metres, row-major. */
  z: Float32Array;
  /** Lowest and highest elevation, metres. */
  zRangeM: [number, number];
  /** Outlet: where the main stem leaves the grid, internal metres (x east, y south of the upper-left corner). */
  outlet: { x: number; y: number };
  /** Main-stem sample where each tributary joins, by tributary id. */
  junctionSample: Record<string, number>;
}

/** Builds the demo's valleys and DEM for a width × height grid of `cellM` metre cells. */
export function buildDemoTerrain(seed: number, width: number, height: number, cellM: number): DemoTerrain {
  const wM = width * cellM;
  const hM = height * cellM;
  const stepM = cellM / 2;
  const layoutRng = streamRng(seed, STREAM.layout);
  const entries: NetworkEntry[] = [];
  const junctionSample: Record<string, number> = {};
  let main: ReturnType<typeof splinePath> | null = null;
  for (const design of DEMO_VALLEYS) {
    const points = design.points.map(([fx, fy]) => jitter([fx * wM, fy * hM], layoutRng, design.id === 'MS'));
    let parentSample: number | null = null;
    if (design.joinNear && main) {
      parentSample = nearestSample(main, design.joinNear[0] * wM, design.joinNear[1] * hM);
      junctionSample[design.id] = parentSample;
      points.push([main.x[parentSample]!, main.y[parentSample]!]);
    }
    const path = splinePath(points, stepM);
    if (design.id === 'MS') main = path;
    const spec: ChannelSpec = {
      id: design.id,
      name: design.name,
      order: design.id === 'MS' ? 1 : 2,
      parentId: design.id === 'MS' ? null : 'MS',
      mouth: design.id === 'MS' ? 'outlet' : 'junction',
      path,
      slopeHead: design.slopeHead,
      slopeMouth: design.slopeMouth,
      halfFloorHeadM: design.halfFloorHeadM,
      halfFloorMouthM: design.halfFloorMouthM,
      depthHeadM: design.depthHeadM,
      depthMouthM: design.depthMouthM,
      widthHeadM: design.widthHeadM,
      widthMouthM: design.widthMouthM,
      meanderWavelengthM: design.meanderWavelengthM,
      meanderPhase: 2 * Math.PI * layoutRng(),
    };
    entries.push({ spec, parentSample });
  }
  const mainPath = entries[0]!.spec.path;
  const outlet = { x: mainPath.x[mainPath.n - 1]!, y: mainPath.y[mainPath.n - 1]! };
  const top = { baseM: DEMO_OUTLET_BED_M + DEMO_TOP.aboveOutletM, gradient: DEMO_TOP.gradient, ...outlet };
  const channels = buildNetwork(entries, DEMO_OUTLET_BED_M, SIDE_PROFILE, top);
  const built = buildTerrain({
    width,
    height,
    cellM,
    channels,
    side: SIDE_PROFILE,
    envelope: ENVELOPE,
    outlet: { edge: 'east', alongM: outlet.y, halfGapM: 60 },
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
  return { channels, z: built.z, zRangeM: [built.zMinM, built.zMaxM], outlet, junctionSample };
}

/**
 * Moves a control point by up to 15 m each way (seeded), so different seeds
 * give different valleys. Main-stem points move only north–south, so its
 * last point stays on the east edge.
 */
function jitter(p: [number, number], rng: Rng, keepX: boolean): [number, number] {
  const dx = (rng() - 0.5) * 30;
  const dy = (rng() - 0.5) * 30;
  return [keepX ? p[0] : p[0] + dx, p[1] + dy];
}
