/**
 * The demo valley's fixed design: where the three valleys run (as fractions
 * of the grid's extent, so a smaller grid gets the same landscape, smaller),
 * their profiles, and the shared cross-section shape. Physical sizes (floor
 * widths, stream size, relief) stay in metres at every grid size.
 */
import type { SideProfile } from './channel.js';
import type { EnvelopeParams } from './envelope.js';

/** A valley of the demo: control points as fractions of the grid extent (x east, y south). */
export interface DemoValleyDesign {
  id: 'MS' | 'TA' | 'TB';
  name: string;
  /** Head first. Tributaries end where they join the main stem (`joinNear`). */
  points: [number, number][];
  /** For tributaries: the main-stem point nearest to this fraction is the junction. */
  joinNear?: [number, number];
  slopeHead: number;
  slopeMouth: number;
  halfFloorHeadM: number;
  halfFloorMouthM: number;
  depthHeadM: number;
  depthMouthM: number;
  widthHeadM: number;
  widthMouthM: number;
  meanderWavelengthM: number;
}

/** Main stem first; it leaves the grid through the east edge. */
export const DEMO_VALLEYS: readonly DemoValleyDesign[] = [
  {
    id: 'MS',
    name: 'main stem',
    points: [
      [0.13, 0.43],
      [0.3, 0.465],
      [0.48, 0.47],
      [0.66, 0.505],
      [0.84, 0.56],
      [1.0, 0.555],
    ],
    slopeHead: 0.0058,
    slopeMouth: 0.0032,
    halfFloorHeadM: 29,
    halfFloorMouthM: 39,
    depthHeadM: 0.55,
    depthMouthM: 0.75,
    widthHeadM: 3,
    widthMouthM: 4,
    meanderWavelengthM: 420,
  },
  {
    id: 'TA',
    name: 'tributary A',
    points: [
      [0.27, 0.12],
      [0.33, 0.2],
      [0.42, 0.27],
      [0.5, 0.37],
    ],
    joinNear: [0.55, 0.48],
    slopeHead: 0.016,
    slopeMouth: 0.009,
    halfFloorHeadM: 10,
    halfFloorMouthM: 19,
    depthHeadM: 0.35,
    depthMouthM: 0.5,
    widthHeadM: 2,
    widthMouthM: 3,
    meanderWavelengthM: 170,
  },
  {
    id: 'TB',
    name: 'tributary B',
    points: [
      [0.45, 0.89],
      [0.53, 0.82],
      [0.62, 0.76],
      [0.7, 0.66],
    ],
    joinNear: [0.77, 0.555],
    slopeHead: 0.019,
    slopeMouth: 0.011,
    halfFloorHeadM: 11,
    halfFloorMouthM: 22,
    depthHeadM: 0.3,
    depthMouthM: 0.45,
    widthHeadM: 2,
    widthMouthM: 3,
    meanderWavelengthM: 190,
  },
];

/** Cross-section shape of every demo and bench valley. */
export const SIDE_PROFILE: SideProfile = {
  floorCrossSlope: 0.006,
  toeM: 25,
  shoulderM: 40,
  sideSlope: 0.35,
  uplandSlope: 0.18,
  reliefMinM: 16,
  reliefMaxM: 60,
};

/** Upland envelope of every demo and bench scene. */
export const ENVELOPE: EnvelopeParams = { headroomM: -5, gradient: 0.05 };

/** Valley floor elevation at the outlet, metres. */
export const DEMO_OUTLET_BED_M = 1763;

/** Valley-side tops: this far above the outlet floor there, rising this much per metre away from it. */
export const DEMO_TOP = { aboveOutletM: 28, gradient: 0.012 };

/** Hillslope texture: value-noise octaves (metres). */
export const TEXTURE_OCTAVES = [
  { wavelengthM: 800, amplitudeM: 10 },
  { wavelengthM: 400, amplitudeM: 6 },
  { wavelengthM: 200, amplitudeM: 3 },
  { wavelengthM: 100, amplitudeM: 1.5 },
  { wavelengthM: 50, amplitudeM: 0.6 },
] as const;

/**
 * Random vertical error of every cell, metres: the 10 cm RMSEz of quality
 * level 2 lidar (USGS Lidar Base Specification, Techniques and Methods 11-B4,
 * QL2 non-vegetated vertical accuracy).
 */
export const LIDAR_RMSE_M = 0.1;

/** CRS of the demo and bench grids: EPSG:32612 (WGS 84 / UTM zone 12N, metres). */
export const DEMO_EPSG = 32612;
/** Upper-left corner of the demo grid, EPSG:32612 metres (an arbitrary, sparsely settled spot; no place is meant). */
export const DEMO_ORIGIN = { x0: 318000, y0: 4974000 } as const;
