/**
 * What the demo and bench generators return: a DEM in metres on a north-up
 * UTM grid, the dam inventory in the same CRS, and the facts that describe
 * them. Pure data; writing files is the caller's job.
 */
import type { GeoTransform } from '../grid/transform.js';
import type { DamGeometry, DamStatus } from '../inventory.js';

/** Properties of a generated dam, as a dam file carries them. */
export type DemoDamProperties = {
  id: string;
  /** Measured crest height above the bed, metres; absent when not measured. For proposed structures, the design height. */
  height_m?: number;
  status: DamStatus;
  /** Detector or reviewer confidence, 0–1; absent for structures nobody had to guess about. */
  confidence?: number;
  /** Survey year in which the dam was first seen (proposed: year of the design). */
  year: number;
  /** Fictional initials of the person who mapped it; absent for detector output. */
  observer?: string;
  /** Free text for the odd cases. */
  note?: string;
};

/** Why a dam is in the demo, beyond being one more dam. */
export type DemoDamRole = 'cascade-lower' | 'cascade-drowned' | 'spill' | 'detector-point';

/** What the generator knows about a dam that a dam file does not say. */
export interface DemoDamTruth {
  /** Valley the dam sits in (channel id). */
  channelId: string;
  /** Distance from that valley's head along its axis, metres. */
  distanceFromHeadM: number;
  /** Lowest ground cell on the crest line (lines) or in the stream next to the point (points), metres. */
  bedZM: number;
  /** True crest height above the bed, metres (equals `height_m` when measured). */
  heightM: number;
  /** bedZM + heightM, metres. */
  crestZM: number;
  /** Downstream direction of the valley axis at the dam, unit vector in map coordinates. */
  valleyTangent: [number, number];
  /** Stream centre where the dam crosses it, map coordinates (a point dam lies a few metres from it). */
  streamPoint: [number, number];
  /** Height the crest line's ends were built to reach, metres above the bed (lower on one side for the spill case). */
  lineReachM: number;
  roles: DemoDamRole[];
  /** Water level flattened into the DEM when the scene was built with `waterSurfaces`, metres. */
  waterLevelM?: number;
  /** Area of that flattened water surface, m². */
  waterAreaM2?: number;
}

/** One generated dam. */
export interface DemoDam {
  id: string;
  /** Crest line or detector point, in the scene's CRS (metres). */
  geometry: DamGeometry;
  properties: DemoDamProperties;
  truth: DemoDamTruth;
}

/** A generated valley, for maps, sub-watersheds and checks. */
export interface DemoChannel {
  id: string;
  name: string;
  /** 1 for the trunk, 2 for its tributaries, 3 for theirs. */
  order: number;
  parentId: string | null;
  lengthM: number;
  /** Stream centreline from head to mouth, map coordinates, about every 5 m. */
  thalweg: [number, number][];
  /** Valley-floor slope range, percent. */
  slopePct: [number, number];
  /** Valley-floor width range, metres. */
  floorWidthM: [number, number];
  /** Stream depth range below the floor, metres. */
  streamDepthM: [number, number];
  /** Stream top width range, metres. */
  streamWidthM: [number, number];
}

/** A sub-valley of the demo with the point it drains through. */
export interface DemoSubWatershed {
  id: 'main-upper' | 'trib-a' | 'trib-b';
  name: string;
  channelId: string;
  /** On the stream, a short way above the junction it drains to, map coordinates. */
  pourPoint: { x: number; y: number };
}

/** Numbers and sentences about a scene that a README or report can quote. */
export interface DemoFacts {
  summary: string;
  seed: number;
  widthCells: number;
  heightCells: number;
  cellM: number;
  extentM: { x: number; y: number };
  epsg: number;
  /** Lowest and highest elevation of the DEM, metres. */
  zRangeM: [number, number];
  /** Random vertical error added to every cell, metres RMSE, and where the figure comes from. */
  lidarRmseM: number;
  lidarRmseSource: string;
  channels: { id: string; name: string; lengthM: number; slopePct: [number, number]; floorWidthM: [number, number] }[];
  dams: {
    total: number;
    byStatus: Record<DamStatus, number>;
    lines: number;
    points: number;
    measuredHeights: number;
    unmeasuredHeights: number;
    byYear: Record<string, number>;
  };
  /** Ids of the dams that show one behaviour each (the bench has no cascade, spill, proposed or water cases). */
  cases: {
    cascade: { lower: string; drowned: string }[];
    spill: string[];
    breached: string[];
    proposed: string[];
    candidates: string[];
    points: string[];
    waterSurfaces: string[];
  };
}

/** A generated landscape and its dams. */
export interface DemoScene {
  width: number;
  height: number;
  cellM: number;
  /** North-up: dy = −cellM. */
  transform: GeoTransform;
  epsg: number;
  seed: number;
  /** Bare-earth elevation, metres, row-major (i = row · width + col), no NoData. Dams are not in it. */
  z: Float32Array;
  dams: DemoDam[];
  channels: DemoChannel[];
  /** Where the trunk leaves the grid, map coordinates. */
  outlet: { x: number; y: number };
  subWatersheds?: DemoSubWatershed[];
  facts: DemoFacts;
}
