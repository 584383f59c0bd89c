/**
 * The demo's dam inventory as a table: where each dam sits (valley and
 * distance from that valley's mouth, as a fraction of the valley's length, so
 * reduced grids keep the arrangement), its true height, and what a dam file
 * says about it. Each special case is one row with a role.
 *
 * The story: a 2019 survey mapped the dams then standing; a 2024 survey added
 * new dams, found MS-04 breached (its height_m is the breach invert), and a
 * detector run on 2024 imagery proposed candidates (points MS-02, MS-11,
 * TA-06 and TB-02, and lines); three structures are planned for a
 * restoration scenario (MS-13, TA-09, TB-09). On the main stem the new, tall
 * MS-05 of 2024 drowns the older MS-06 just upstream; MS-08's crest was drawn
 * short of the left valley side, so its pond spills around that end. The
 * ponds of MS-05, TA-03 and TB-05 hold water in the 2024 lidar (`wet`: the
 * scene flattens them into the DEM); each spreads beyond the incised channel,
 * wide enough for the water-surface detector's 5 × 5 window. A pond filling
 * only the channel (a few metres wide, a couple of decimetres below its
 * banks) is not told from dry ground in 10 cm lidar noise, so no such pond
 * is wet here.
 */
import type { DamStatus } from '../inventory.js';
import type { DemoDamRole } from './types.js';

/** One dam of the demo. Heights in metres. */
export interface DemoDamRow {
  id: string;
  channel: 'MS' | 'TA' | 'TB';
  /** Distance from the valley's mouth at the default grid size, metres (scaled with the valley's length). */
  fromMouthM: number;
  kind: 'line' | 'point';
  status: DamStatus;
  /** True crest height above the bed (proposed: design height; breached: the breach invert). */
  heightM: number;
  /** Whether the dam file gives the height (`height_m`). */
  measured: boolean;
  confidence?: number;
  year: number;
  observer?: string;
  note?: string;
  roles?: DemoDamRole[];
  /**
   * Flattened into the DEM as standing water when the scene is built with
   * water surfaces. Only for ponds wider than the detector's window (they
   * spread beyond the incised channel); see the file comment.
   */
  wet?: boolean;
  /** Height the line's ends are drawn to (defaults: see inventory.ts). */
  reachM?: number;
}

/** Valley lengths the `fromMouthM` figures were laid out on (default grid), metres. */
export const LAYOUT_LENGTH_M = { MS: 1764, TA: 838, TB: 840 } as const;

/** The demo's dams, per valley from the mouth up; ids number upstream. */
export const DEMO_DAM_ROWS: readonly DemoDamRow[] = [
  { id: 'MS-01', channel: 'MS', fromMouthM: 90, kind: 'line', status: 'confirmed', heightM: 0.6, measured: true, confidence: 1, year: 2019, observer: 'K.R.' },
  { id: 'MS-02', channel: 'MS', fromMouthM: 180, kind: 'point', status: 'candidate', heightM: 0.5, measured: false, confidence: 0.41, year: 2024, roles: ['detector-point'] },
  { id: 'MS-03', channel: 'MS', fromMouthM: 250, kind: 'line', status: 'confirmed', heightM: 0.7, measured: false, confidence: 0.95, year: 2019, observer: 'J.T.' },
  {
    id: 'MS-04',
    channel: 'MS',
    fromMouthM: 400,
    kind: 'line',
    status: 'breached',
    heightM: 0.3,
    measured: true,
    confidence: 1,
    year: 2019,
    observer: 'K.R.',
    note: 'breached between the surveys; height_m is the breach invert, the crest stood about 1.1 m',
    reachM: 1.1,
  },
  { id: 'MS-05', channel: 'MS', fromMouthM: 545, kind: 'line', status: 'confirmed', heightM: 1.4, measured: true, confidence: 1, year: 2024, observer: 'M.O.', roles: ['cascade-lower'], wet: true },
  {
    id: 'MS-06',
    channel: 'MS',
    fromMouthM: 610,
    kind: 'line',
    status: 'confirmed',
    heightM: 0.5,
    measured: true,
    confidence: 1,
    year: 2019,
    observer: 'K.R.',
    note: 'under the pond of MS-05 since that dam was built',
    roles: ['cascade-drowned'],
  },
  { id: 'MS-07', channel: 'MS', fromMouthM: 840, kind: 'line', status: 'candidate', heightM: 0.8, measured: false, confidence: 0.64, year: 2024 },
  {
    id: 'MS-08',
    channel: 'MS',
    fromMouthM: 1010,
    kind: 'line',
    status: 'confirmed',
    heightM: 0.9,
    measured: true,
    confidence: 1,
    year: 2019,
    observer: 'A.V.',
    note: 'crest drawn short of the left valley side; water passes around that end',
    roles: ['spill'],
  },
  { id: 'MS-09', channel: 'MS', fromMouthM: 1150, kind: 'line', status: 'confirmed', heightM: 1.0, measured: false, confidence: 0.9, year: 2019, observer: 'J.T.' },
  { id: 'MS-10', channel: 'MS', fromMouthM: 1290, kind: 'line', status: 'confirmed', heightM: 0.8, measured: true, confidence: 1, year: 2024, observer: 'M.O.' },
  { id: 'MS-11', channel: 'MS', fromMouthM: 1420, kind: 'point', status: 'candidate', heightM: 0.6, measured: false, confidence: 0.55, year: 2024, roles: ['detector-point'] },
  { id: 'MS-12', channel: 'MS', fromMouthM: 1530, kind: 'line', status: 'confirmed', heightM: 0.7, measured: true, confidence: 1, year: 2019, observer: 'A.V.' },
  { id: 'MS-13', channel: 'MS', fromMouthM: 1660, kind: 'line', status: 'proposed', heightM: 1.2, measured: true, year: 2024, note: 'planned structure; height_m is the design height' },

  { id: 'TA-01', channel: 'TA', fromMouthM: 110, kind: 'line', status: 'confirmed', heightM: 1.2, measured: true, confidence: 1, year: 2019, observer: 'J.T.' },
  { id: 'TA-02', channel: 'TA', fromMouthM: 200, kind: 'line', status: 'confirmed', heightM: 0.9, measured: false, confidence: 0.95, year: 2019, observer: 'J.T.' },
  { id: 'TA-03', channel: 'TA', fromMouthM: 290, kind: 'line', status: 'confirmed', heightM: 1.4, measured: true, confidence: 1, year: 2019, observer: 'K.R.', wet: true },
  { id: 'TA-04', channel: 'TA', fromMouthM: 385, kind: 'line', status: 'candidate', heightM: 0.6, measured: false, confidence: 0.35, year: 2024 },
  { id: 'TA-05', channel: 'TA', fromMouthM: 460, kind: 'line', status: 'confirmed', heightM: 0.9, measured: true, confidence: 1, year: 2024, observer: 'M.O.' },
  { id: 'TA-06', channel: 'TA', fromMouthM: 530, kind: 'point', status: 'candidate', heightM: 0.7, measured: false, confidence: 0.88, year: 2024, roles: ['detector-point'] },
  { id: 'TA-07', channel: 'TA', fromMouthM: 600, kind: 'line', status: 'confirmed', heightM: 1.0, measured: false, confidence: 0.9, year: 2019, observer: 'A.V.' },
  { id: 'TA-08', channel: 'TA', fromMouthM: 680, kind: 'line', status: 'confirmed', heightM: 0.4, measured: true, confidence: 1, year: 2019, observer: 'A.V.' },
  { id: 'TA-09', channel: 'TA', fromMouthM: 760, kind: 'line', status: 'proposed', heightM: 1.5, measured: true, year: 2024, note: 'planned structure; height_m is the design height' },

  { id: 'TB-01', channel: 'TB', fromMouthM: 120, kind: 'line', status: 'confirmed', heightM: 1.1, measured: true, confidence: 1, year: 2019, observer: 'M.O.' },
  { id: 'TB-02', channel: 'TB', fromMouthM: 190, kind: 'point', status: 'candidate', heightM: 0.6, measured: false, confidence: 0.72, year: 2024, roles: ['detector-point'] },
  { id: 'TB-03', channel: 'TB', fromMouthM: 260, kind: 'line', status: 'confirmed', heightM: 0.8, measured: false, confidence: 0.95, year: 2019, observer: 'K.R.' },
  { id: 'TB-04', channel: 'TB', fromMouthM: 340, kind: 'line', status: 'confirmed', heightM: 0.6, measured: true, confidence: 1, year: 2024, observer: 'J.T.' },
  { id: 'TB-05', channel: 'TB', fromMouthM: 420, kind: 'line', status: 'confirmed', heightM: 1.3, measured: true, confidence: 1, year: 2019, observer: 'J.T.', wet: true },
  { id: 'TB-06', channel: 'TB', fromMouthM: 500, kind: 'line', status: 'candidate', heightM: 0.7, measured: false, confidence: 0.47, year: 2024 },
  { id: 'TB-07', channel: 'TB', fromMouthM: 580, kind: 'line', status: 'confirmed', heightM: 0.8, measured: true, confidence: 1, year: 2024, observer: 'M.O.' },
  { id: 'TB-08', channel: 'TB', fromMouthM: 660, kind: 'line', status: 'confirmed', heightM: 1.0, measured: false, confidence: 0.9, year: 2019, observer: 'K.R.' },
  { id: 'TB-09', channel: 'TB', fromMouthM: 750, kind: 'line', status: 'proposed', heightM: 1.4, measured: true, year: 2024, note: 'planned structure; height_m is the design height' },
];
