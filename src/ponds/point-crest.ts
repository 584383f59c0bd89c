/**
 * A crest line for a dam known only as a point (a detector's output).
 *
 * 1. Channel: the lowest valid cell within `snapRadiusM` (default 10 m) of
 *    the point, ties to the nearest. On a sloping reach this is the
 *    downstream end of the search disc, i.e. the toe of the dam in a DEM
 *    flown after it was built; the crest is placed there.
 * 2. Flow direction: a directional profile search through the channel cell
 *    (point-crest-axis.ts) at two scales: the channel's, over ±`flowReachM`
 *    (default 20 m, at least 5 cells), and the valley's, over half the crest
 *    cap (the reach a crest may span: ±75 m by default).
 * 3. Crest, for each of the two directions: the channel is the lowest cell
 *    on the cross-section through the point (step 2b below), and a straight
 *    line through its centre, perpendicular to the flow, is walked out on
 *    both banks at half-cell steps (in ground metres) until the ground
 *    reaches bed + heightM and stays there for two cells further (the end is
 *    where it rose, interpolated between the two samples around it), the
 *    grid edge, or until the whole line reaches
 *    `maxCrestLengthM` (default 150 m total: crests over 100 m long occur,
 *    common practice). NoData samples are stepped over and counted.
 * 4. Of the two crests, the shorter of those that reach the crest elevation
 *    on both banks is kept (a dam closes its valley along the shortest
 *    crossing; a line oblique to the valley is longer); when neither does,
 *    the channel-scale one. On a floor wider than ±`flowReachM` with a
 *    narrow, meandering channel, the channel-scale profiles see neither the
 *    valley sides nor a straight channel and can point across the valley;
 *    the valley-scale profiles see its sides.
 *
 * The line runs from the right bank to the left bank (looking downstream),
 * so upstream lies to the left of the line as drawn.
 */
import type { Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import { colToX, rowToY, xToCol, yToRow } from '../grid/transform.js';
import { estimateFlowAxis, type FlowAxis } from './point-crest-axis.js';
import { frameAt, onGrid, sampleZ } from './point-crest-frame.js';

/** Default search radius for the channel around a dam point, metres. */
export const DEFAULT_SNAP_RADIUS_M = 10;
/** Default cap on the whole crest length, metres (common practice: crests over 100 m occur). */
export const DEFAULT_MAX_CREST_LENGTH_M = 150;
/** Default half-length of the profiles used to find the flow direction, metres. */
export const DEFAULT_FLOW_REACH_M = 20;
/**
 * A crest ends where the ground rises to its elevation and stays there for
 * this many cells further: one noisy cell (QL2 lidar: 10 cm RMSEz) on a
 * floor just below the crest does not end it short of the valley side. Two:
 * a project choice.
 */
const END_HOLD_CELLS = 2;
/** A profile fall below this over the whole profile leaves the downstream sense in doubt, metres (USGS Lidar Base Specification QL2 RMSEz 10 cm). */
export const FLOW_SENSE_MIN_DROP_M = 0.1;

/** Options of crestFromPoint. */
export interface PointCrestOptions {
  /** Crest height above the channel bed, metres (> 0). */
  heightM: number;
  /** Search radius for the channel cell, metres (default 10). */
  snapRadiusM?: number;
  /** Cap on the whole crest length, metres (default 150). */
  maxCrestLengthM?: number;
  /** Half-length of the flow-direction profiles, metres (default 20, at least 5 cells). */
  flowReachM?: number;
  /** Dam id for warnings. */
  damId?: string;
}

/** A crest built from a point. */
export interface PointCrest {
  /** Straight crest, [[x, y], [x, y]] in the grid's map units, right bank → left bank. */
  line: [number, number][];
  /** Flat index of the channel cell in this grid. */
  channelCell: number;
  /** Ground elevation of the channel cell, metres. */
  bedElevM: number;
  /** Crest elevation, bed + heightM, metres. */
  crestElevM: number;
  /** Unit vector pointing downstream, [east, north] in ground metres. */
  flowDirection: [number, number];
  /** Crest length, metres. */
  lengthM: number;
  /** Distance from the given point to the channel cell centre, metres. */
  snapDistanceM: number;
  /** True when the ground reached the crest elevation on both banks. */
  reachedBothSides: boolean;
  warnings: Warning[];
}

function warn(code: string, message: string, damId: string | undefined): Warning {
  return damId === undefined ? { code, message } : { code, message: `dam ${damId}: ${message}`, damId };
}

/**
 * Builds the crest line of a point dam on `grid` at map position (x, y).
 * Returns `{ skip }` when the point is off the grid, on NoData, or the flow
 * direction cannot be found.
 */
export function crestFromPoint(grid: Grid, x: number, y: number, options: PointCrestOptions): PointCrest | { skip: Warning } {
  const damId = options.damId;
  const snapRadiusM = options.snapRadiusM ?? DEFAULT_SNAP_RADIUS_M;
  const maxLengthM = options.maxCrestLengthM ?? DEFAULT_MAX_CREST_LENGTH_M;
  const heightM = options.heightM;
  if (!(heightM > 0) || !Number.isFinite(heightM)) {
    return { skip: warn('crest-height-invalid', `crest height ${heightM} m is not a positive number; no crest was built`, damId) };
  }
  const { width, height, z } = grid;
  const colF = xToCol(grid.transform, x);
  const rowF = yToRow(grid.transform, y);
  if (!onGrid(grid, colF, rowF)) {
    return { skip: warn('point-off-grid', `point (${x}, ${y}) lies outside the DEM; check the dam's coordinates and CRS`, damId) };
  }
  const pc = Math.floor(colF);
  const pr = Math.floor(rowF);
  if (Number.isNaN(z[pr * width + pc] ?? NaN)) {
    return { skip: warn('point-on-nodata', `point (${x}, ${y}) falls on a NoData cell of the DEM; move it onto valid ground`, damId) };
  }

  // 1. Channel cell: lowest valid cell within the snap radius (ties: nearest).
  const cwM = grid.cellWidthM[pr] ?? grid.cellHeightM;
  const chM = grid.cellHeightM;
  const dCol = Math.ceil(snapRadiusM / cwM);
  const dRow = Math.ceil(snapRadiusM / chM);
  let channel = pr * width + pc;
  let bed = z[channel] ?? NaN;
  let bestD2 = Infinity;
  for (let r = Math.max(0, pr - dRow); r <= Math.min(height - 1, pr + dRow); r++) {
    const ey = (r + 0.5 - rowF) * chM;
    for (let c = Math.max(0, pc - dCol); c <= Math.min(width - 1, pc + dCol); c++) {
      const ex = (c + 0.5 - colF) * cwM;
      const d2 = ex * ex + ey * ey;
      if (d2 > snapRadiusM * snapRadiusM && !(r === pr && c === pc)) continue;
      const zc = z[r * width + c] ?? NaN;
      if (Number.isNaN(zc)) continue;
      if (zc < bed || (zc === bed && d2 < bestD2)) {
        bed = zc;
        bestD2 = d2;
        channel = r * width + c;
      }
    }
  }
  const stepM = 0.5 * Math.min(cwM, chM);
  const walk: CrestWalk = { colF, rowF, pc, pr, snapRadiusM, heightM, maxLengthM, stepM, damId, channel, bedM: bed, snapDistanceM: Math.sqrt(bestD2) };
  const anchor = frameAt(grid, channel % width, Math.floor(channel / width));

  // 2. Flow direction at the channel's scale, then at the valley's; 3–4. the crest along each, the shorter closed one kept.
  const reachM = Math.max(options.flowReachM ?? DEFAULT_FLOW_REACH_M, 5 * Math.max(cwM, chM));
  const channelAxis = estimateFlowAxis(grid, anchor, reachM, stepM);
  if (channelAxis === null) {
    return { skip: warn('flow-direction-unknown', `too little valid DEM within ${reachM} m of the channel to tell the flow direction; give the crest as a line`, damId) };
  }
  const first = crestAlong(grid, channelAxis, reachM, walk);
  const valleyReachM = maxLengthM / 2;
  if (!(valleyReachM > reachM)) return first;
  const valleyAxis = estimateFlowAxis(grid, anchor, valleyReachM, stepM);
  if (valleyAxis === null) return first;
  const second = crestAlong(grid, valleyAxis, valleyReachM, walk);
  if (!second.reachedBothSides) return first;
  return first.reachedBothSides && first.lengthM <= second.lengthM ? first : second;
}

/** What `crestAlong` needs besides the flow axis: the point, step 1's channel cell, the crest's height and cap. Lengths in metres. */
interface CrestWalk {
  /** The point as fractional column and row, and the cell it falls in. */
  colF: number;
  rowF: number;
  pc: number;
  pr: number;
  snapRadiusM: number;
  heightM: number;
  maxLengthM: number;
  /** Walking step, m. */
  stepM: number;
  damId: string | undefined;
  /** Step 1's channel cell (flat index), its elevation (m) and its distance from the point (m). */
  channel: number;
  bedM: number;
  snapDistanceM: number;
}

/**
 * The crest perpendicular to `axis` (found over ±`axisReachM` metres):
 * the channel on the cross-section through the point (2b), then both banks
 * walked to the crest elevation (3).
 */
function crestAlong(grid: Grid, axis: FlowAxis, axisReachM: number, w: CrestWalk): PointCrest {
  const { width, height, z } = grid;
  const { colF, rowF, pc, pr, snapRadiusM, heightM, maxLengthM, stepM, damId } = w;
  let channel = w.channel;
  let bed = w.bedM;
  const warnings: Warning[] = [];

  // 2b. The dam stands where the point says, not where the search disc is lowest: on a
  // sloping stream that is its downstream rim. Take the lowest cell on the cross-section
  // through the point (perpendicular to the flow, within the snap radius) as the channel.
  {
    const f = frameAt(grid, pc, pr);
    let best = Infinity;
    for (let t = -snapRadiusM; t <= snapRadiusM + 1e-9; t += stepM) {
      const c = Math.floor(colF + t * -axis.north * f.colPerEastM);
      const r = Math.floor(rowF + t * axis.east * f.rowPerNorthM);
      if (c < 0 || c >= width || r < 0 || r >= height) continue;
      const zc = z[r * width + c] ?? NaN;
      if (zc < best) {
        best = zc;
        channel = r * width + c;
      }
    }
    if (best < Infinity) bed = best;
  }
  const frame = frameAt(grid, channel % width, Math.floor(channel / width));
  if (axis.slope * 2 * axisReachM < FLOW_SENSE_MIN_DROP_M) {
    warnings.push(
      warn('flow-sense-uncertain', `the channel falls only ${(axis.slope * 2 * axisReachM).toFixed(2)} m over ${2 * axisReachM} m, so which side is upstream is uncertain; set "upstream" or give the crest as a line`, damId),
    );
  }

  // 3. Crest: walk both banks in turn from the channel cell.
  const leftE = -axis.north;
  const leftN = axis.east;
  const crestElevM = bed + heightM;
  const dc = leftE * frame.colPerEastM;
  const dr = leftN * frame.rowPerNorthM;
  const holdM = END_HOLD_CELLS * 2 * stepM;
  const reach = [0, 0]; // metres from the channel where the line ends: [left bank, right bank]
  const walked = [0, 0]; // metres walked from the channel
  const riseAt = [NaN, NaN]; // where the ground last rose to the crest elevation, metres (NaN: below it now)
  const prevZ = [bed, bed];
  const done = [false, false];
  const reached = [false, false];
  const edge = [false, false];
  let nodataM = 0;
  while (!done[0] || !done[1]) {
    for (let s = 0; s < 2; s++) {
      if (done[s]) continue;
      const sign = s === 0 ? 1 : -1;
      const here = walked[s] ?? 0;
      const other = walked[1 - s] ?? 0;
      const t = Math.min(here + stepM, maxLengthM - other);
      const offGrid = !(t > here) || !onGrid(grid, frame.col0 + sign * t * dc, frame.row0 + sign * t * dr);
      if (offGrid) {
        // The cap or the grid's edge: the line ends here, or where the ground last rose to the crest elevation.
        done[s] = true;
        const rise = riseAt[s] ?? NaN;
        if (rise === rise) {
          reach[s] = rise;
          reached[s] = true;
        } else {
          reach[s] = here;
          edge[s] = t > here;
        }
        continue;
      }
      const zs = sampleZ(grid, frame.col0 + sign * t * dc, frame.row0 + sign * t * dr);
      walked[s] = t;
      if (Number.isNaN(zs)) {
        nodataM += t - here;
        continue;
      }
      const zp = prevZ[s] ?? bed;
      prevZ[s] = zs;
      if (zs < crestElevM) {
        riseAt[s] = NaN;
        continue;
      }
      let rise = riseAt[s] ?? NaN;
      if (rise !== rise) {
        rise = zs > zp && zp < crestElevM ? here + ((crestElevM - zp) / (zs - zp)) * (t - here) : t;
        riseAt[s] = rise;
      }
      if (t - rise >= holdM) {
        reach[s] = rise;
        done[s] = true;
        reached[s] = true;
      }
    }
  }

  const tL = reach[0] ?? 0;
  const tR = reach[1] ?? 0;
  const toMap = (t: number): [number, number] => [colToX(grid.transform, frame.col0 + t * dc), rowToY(grid.transform, frame.row0 + t * dr)];
  const bank = ['left', 'right'];
  for (let s = 0; s < 2; s++) {
    if (reached[s]) continue;
    if (edge[s]) {
      warnings.push(warn('crest-reaches-grid-edge', `the ${bank[s]} bank meets the DEM's edge before the ground reaches the crest elevation ${crestElevM.toFixed(2)} m; use a larger DEM window`, damId));
    } else {
      warnings.push(
        warn('crest-length-capped', `the ground on the ${bank[s]} bank stays below the crest elevation ${crestElevM.toFixed(2)} m within the ${maxLengthM} m crest cap; the pond will spill around that end`, damId),
      );
    }
  }
  if (nodataM > 0) {
    warnings.push(warn('crest-crosses-nodata', `the crest crosses ${nodataM.toFixed(1)} m of NoData; its ends there are uncertain`, damId));
  }
  return {
    line: [toMap(-tR), toMap(tL)],
    channelCell: channel,
    bedElevM: bed,
    crestElevM,
    flowDirection: [axis.east, axis.north],
    lengthM: tL + tR,
    snapDistanceM: w.snapDistanceM,
    reachedBothSides: reached[0] === true && reached[1] === true,
    warnings,
  };
}
