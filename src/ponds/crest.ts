/**
 * From a crest line on the DEM to what the fill needs: bed and crest
 * elevations, where the water starts, and which side is upstream.
 *
 * Rules, in order:
 * 1. The crest must lie on valid DEM cells: any NoData crest cell skips the
 *    dam (`crest-over-nodata`), fewer than 2 crest cells skips it
 *    (`crest-too-short`), a point geometry skips it (`crest-needs-line`).
 * 2. The bed cell is the crest's lowest DEM cell (the channel at the dam;
 *    first along the line on ties); the bed elevation is its elevation.
 * 3. The upstream side is the dam's `upstream` property when set. Otherwise
 *    the lowest ground within `probeM` of the bed cell is compared on the
 *    two sides of the line (a half-disc each side, so an oblique channel is
 *    still met): the higher side is upstream (the stream falls through the
 *    dam). A difference under `upstreamToleranceM` is flagged
 *    `upstream-ambiguous`.
 * 4. DEM-visible dams: when the bed cell stands at least `demVisibleMinM`
 *    above the lowest ground within `probeM` downstream, AND the crest's
 *    valley-floor cells stand, by their median, at least `demVisibleMinM`
 *    above the ground `probeM` straight downstream of each (a ridge across
 *    the valley, not one noisy low cell), the dam shows in the DEM; the bed
 *    becomes that downstream toe. The median keeps cell-to-cell lidar noise
 *    (QL2: 10 cm RMSEz) from passing for a dam.
 * 5. Crest elevation: bed + measured height ('measured'); else for a
 *    DEM-visible dam the crest's lowest DEM point ('dem'); else bed +
 *    `defaultHeightM` ('default').
 * 6. Breached dams store water only up to the breach: a measured height is
 *    the breach invert above the bed ('measured'); without one the dam holds
 *    no water (`holdsWater` false, water level = bed, heightSource 'breach').
 * 7. Heights (measured or from the DEM): ≤ 0 or not finite skips
 *    (`height-invalid`; 0 is allowed for a breached dam and means no
 *    storage), above `maxHeightM` skips (`height-implausible`), above
 *    `typicalMaxHeightM` warns (`height-high`).
 */
import type { Grid } from '../grid/grid.js';
import { colToX, rowToY } from '../grid/transform.js';
import type { Warning } from '../errors.js';
import type { DamInput } from '../inventory.js';
import type { PondParams } from './params.js';
import { LEFT, NEITHER, RIGHT, crestSegments, nearestSegment, sideOf, type CrestSegments } from './crest-side.js';

/** Where a crest elevation came from. */
export type HeightSource = 'measured' | 'dem' | 'default' | 'breach';

/** Everything the fill needs about one dam, in grid cells and metres. */
export interface CrestSetup {
  damId: string;
  /** Crest cells (flat indices), walls for this dam's fill. */
  crestCells: Int32Array;
  /** The spill band: non-crest cells within SPILL_BAND_CELLS of the crest on its downstream side; water reaching one has gone round the crest. */
  downstreamCells: Int32Array;
  /** Lowest crest cell (flat index): where the channel crosses the dam. */
  bedCell: number;
  /** Bed elevation, m: the bed cell's elevation, or the downstream toe for a DEM-visible dam. */
  bedElevM: number;
  /** Lowest DEM elevation along the crest, m. */
  crestLowM: number;
  /** Elevation of the crest top (or breach invert), m. */
  crestElevM: number;
  /** crestElevM − bedElevM, m. */
  heightM: number;
  heightSource: HeightSource;
  /** False for a breached dam without a breach height: no pond. */
  holdsWater: boolean;
  /** True when the dam stands out in the DEM (rule 4). */
  demVisible: boolean;
  /** min(crest's lowest DEM point − downstream toe, ridge height) − the rule's threshold, m (≥ 0: visible; NaN: no toe found). */
  visibilityMarginM: number;
  /** The downstream toe (flat index): the lowest cell within the probe downstream, or −1. */
  toeCell: number;
  /** Non-crest cells next to the bed cell on the upstream side: the flood starts there. */
  seedCells: Int32Array;
  upstreamSide: 'left' | 'right';
  upstreamSource: 'property' | 'terrain';
  /** Lowest ground within the probe on the upstream and downstream sides, m (NaN when none). */
  probeUpM: number;
  probeDownM: number;
  /**
   * The cells whose lowest DEM elevation the crest elevation is measured
   * from (the crest cells, or the downstream probe's cells when the bed is
   * a DEM-visible dam's toe), and that lowest cell. A DEM error changes
   * which of them is lowest; the draws take that into account.
   */
  levelCells: Int32Array;
  levelRefCell: number;
  warnings: Warning[];
}

/** Sets up one dam for filling, or says why it is skipped. */
export function setupCrest(
  grid: Grid,
  dam: DamInput,
  crestCells: Int32Array,
  params: PondParams,
): CrestSetup | { skip: Warning } {
  const skip = (code: string, message: string): { skip: Warning } => ({
    skip: { code, message: `dam ${dam.id}: ${message}`, damId: dam.id },
  });
  if (dam.geometry.kind !== 'line') {
    return skip('crest-needs-line', 'the crest is a point; draw it as a line across the channel');
  }
  const { width, z } = grid;
  let nodata = 0;
  let bedCell = -1;
  let crestLowM = Infinity;
  for (let k = 0; k < crestCells.length; k++) {
    const i = crestCells[k]!;
    const zi = z[i]!;
    if (Number.isNaN(zi)) nodata++;
    else if (zi < crestLowM) {
      crestLowM = zi;
      bedCell = i;
    }
  }
  if (nodata > 0) {
    return skip(
      'crest-over-nodata',
      `${nodata} of ${crestCells.length} crest cells are NoData in the DEM; move the crest onto valid ground or fill the DEM gap`,
    );
  }
  if (crestCells.length < 2) {
    return skip(
      'crest-too-short',
      `the crest covers ${crestCells.length} DEM cell(s); it needs at least 2 on the grid (check its CRS and extent)`,
    );
  }

  const segs = crestSegments(dam.geometry.lines);
  const warnings: Warning[] = [];
  const warn = (code: string, message: string): void => {
    warnings.push({ code, message: `dam ${dam.id}: ${message}`, damId: dam.id });
  };
  const bedCol = bedCell % width;
  const bedRow = (bedCell - bedCol) / width;
  const probe = probeSides(grid, segs, crestCells, bedCol, bedRow, params.probeM);

  // Rule 3: upstream side.
  let upstreamSide: 'left' | 'right';
  let upstreamSource: 'property' | 'terrain';
  const terrainSide = Number.isNaN(probe.leftM) || Number.isNaN(probe.rightM) ? null : probe.leftM > probe.rightM ? 'left' : 'right';
  const sideGapM = Math.abs(probe.leftM - probe.rightM);
  if (dam.upstream !== null) {
    upstreamSide = dam.upstream;
    upstreamSource = 'property';
    if (terrainSide !== null && terrainSide !== upstreamSide && sideGapM >= params.upstreamToleranceM) {
      warn(
        'upstream-disagrees',
        `upstream is given as ${upstreamSide} but the ground is ${sideGapM.toFixed(2)} m higher on the ${terrainSide}; check the line's direction or the upstream property`,
      );
    }
  } else if (terrainSide === null) {
    return skip(
      'upstream-unknown',
      'no valid ground on one side of the crest to tell upstream from downstream; set the upstream property (left or right of the line as drawn)',
    );
  } else {
    upstreamSide = terrainSide;
    upstreamSource = 'terrain';
    if (sideGapM < params.upstreamToleranceM) {
      warn(
        'upstream-ambiguous',
        `the ground on the two sides of the crest differs by only ${sideGapM.toFixed(3)} m; upstream taken as ${upstreamSide}, set the upstream property to be sure`,
      );
    }
  }
  const upCode = upstreamSide === 'left' ? LEFT : RIGHT;
  const probeUpM = upCode === LEFT ? probe.leftM : probe.rightM;
  const probeDownM = upCode === LEFT ? probe.rightM : probe.leftM;

  // Rule 4: DEM-visible dam.
  // How far the dam stands above (or short of) that rule's threshold: the smaller of its rise over the toe and its ridge.
  const visibilityMarginM = Number.isNaN(probeDownM)
    ? NaN
    : Math.min(crestLowM - probeDownM, ridgeHeightM(grid, segs, crestCells, crestLowM, -upCode, params.probeM)) - params.demVisibleMinM;
  const demVisible = visibilityMarginM >= 0;
  // The downstream toe: the lowest probed cell downstream (−1: none).
  let toeCell = -1;
  if (!Number.isNaN(probeDownM)) {
    for (const i of probe.cells[upCode === LEFT ? 1 : 0]) if (z[i]! === probeDownM) {
      toeCell = i;
      break;
    }
  }
  const bedElevM = demVisible ? probeDownM : crestLowM;

  // Rules 5–7: crest elevation.
  const breached = dam.status === 'breached';
  let heightSource: HeightSource;
  let heightM: number;
  if (dam.heightM !== null) {
    heightM = dam.heightM;
    heightSource = 'measured';
  } else if (breached) {
    heightM = 0;
    heightSource = 'breach';
  } else if (demVisible) {
    heightM = crestLowM - bedElevM;
    heightSource = 'dem';
  } else {
    heightM = params.defaultHeightM;
    heightSource = 'default';
  }
  const what = heightSource === 'dem' ? 'height seen in the DEM' : 'height_m';
  if (!Number.isFinite(heightM) || heightM < 0 || (heightM === 0 && !breached)) {
    return skip('height-invalid', `${what} is ${heightM}; it must be a positive number of metres`);
  }
  if (heightM > params.maxHeightM) {
    return skip(
      'height-implausible',
      `${what} is ${heightM.toFixed(2)} m; beaver dams rarely exceed ${params.typicalMaxHeightM} m and about ${params.maxHeightM} m at most: check units (feet?) or the crest position`,
    );
  }
  if (heightM > params.typicalMaxHeightM) {
    warn('height-high', `${what} is ${heightM.toFixed(2)} m, above the usual ${params.typicalMaxHeightM} m for beaver dams; kept`);
  }
  const holdsWater = heightM > 0;
  if (breached && !holdsWater) {
    warn('breached-no-storage', 'breached with no breach height above the bed: counted as holding no water');
  }

  // The crest elevation hangs on the lowest of these cells: the downstream toe for a DEM-visible dam whose height is given, else the crest.
  const fromToe = demVisible && heightSource !== 'dem';
  const levelCells = fromToe ? Int32Array.from(probe.cells[upCode === LEFT ? 1 : 0]) : crestCells;
  let levelRefCell = bedCell;
  if (fromToe) {
    for (let k = 0; k < levelCells.length; k++) if (z[levelCells[k]!]! === bedElevM) {
      levelRefCell = levelCells[k]!;
      break;
    }
  }
  const seedCells = findSeeds(grid, segs, crestCells, bedCol, bedRow, upCode, probe.nearestCell[upCode === LEFT ? 0 : 1]!);
  if (seedCells.length === 0 && holdsWater) {
    return skip('no-upstream-cell', 'no valid DEM cell next to the crest on its upstream side; extend the DEM or move the crest');
  }
  return {
    damId: dam.id,
    crestCells,
    downstreamCells: sideCells(grid, segs, crestCells, -upCode),
    bedCell,
    bedElevM,
    crestLowM,
    crestElevM: bedElevM + heightM,
    heightM,
    heightSource,
    holdsWater,
    demVisible,
    visibilityMarginM,
    toeCell,
    seedCells,
    upstreamSide,
    upstreamSource,
    probeUpM,
    probeDownM,
    levelCells,
    levelRefCell,
    warnings,
  };
}

/** Crest cells up to this far (m) above the crest's lowest point count as its valley-floor section. */
const FLOOR_BAND_M = 0.5;

/**
 * Median, over the crest's valley-floor cells, of the crest cell's elevation
 * minus the ground `probeM` straight downstream of it (along the local normal
 * of the crest), in metres; NaN when no such pair exists.
 */
function ridgeHeightM(grid: Grid, segs: CrestSegments, crestCells: Int32Array, crestLowM: number, downCode: number, probeM: number): number {
  const { width, height, transform: t, z } = grid;
  const crest = new Set<number>(crestCells);
  const diffs: number[] = [];
  for (let k = 0; k < crestCells.length; k++) {
    const i = crestCells[k]!;
    const zi = z[i]!;
    if (!(zi <= crestLowM + FLOOR_BAND_M)) continue;
    const col = i % width;
    const row = (i - col) / width;
    const x = colToX(t, col + 0.5);
    const y = rowToY(t, row + 0.5);
    const seg = nearestSegment(segs, x, y);
    if (seg < 0) continue;
    // The segment's direction in metres on the grid, then its normal in cells.
    const cellW = grid.cellWidthM[row]!;
    const cellH = grid.cellHeightM;
    const ex = ((segs.bx[seg]! - segs.ax[seg]!) / t.dx) * cellW;
    const ey = ((segs.by[seg]! - segs.ay[seg]!) / t.dy) * cellH;
    const len = Math.hypot(ex, ey);
    if (!(len > 0)) continue;
    const stepC = ((-ey / len) * probeM) / cellW;
    const stepR = ((ex / len) * probeM) / cellH;
    for (const sign of [1, -1]) {
      const c2 = Math.floor(col + 0.5 + sign * stepC);
      const r2 = Math.floor(row + 0.5 + sign * stepR);
      if (c2 < 0 || c2 >= width || r2 < 0 || r2 >= height) continue;
      const j = r2 * width + c2;
      const zj = z[j]!;
      if (crest.has(j) || Number.isNaN(zj)) continue;
      if (sideOf(segs, colToX(t, c2 + 0.5), rowToY(t, r2 + 0.5)) !== downCode) continue;
      diffs.push(zi - zj);
      break;
    }
  }
  if (diffs.length === 0) return NaN;
  diffs.sort((a, b) => a - b);
  const mid = diffs.length >> 1;
  return diffs.length % 2 === 1 ? diffs[mid]! : (diffs[mid - 1]! + diffs[mid]!) / 2;
}

/** Lowest ground on each side of the crest near the bed cell, and the nearest valid cell on each side. */
interface Probe {
  leftM: number;
  rightM: number;
  /** Nearest valid non-crest cell to the bed cell on the left and on the right, or -1. */
  nearestCell: Int32Array;
  /** The probed cells on the left and on the right (flat indices). */
  cells: [number[], number[]];
}

/**
 * Looks at every valid non-crest cell whose centre lies within `probeM`
 * (never less than 1.5 cells) of the bed cell's centre, on either side of
 * the line: a half-disc each side, so an oblique channel is still found.
 */
function probeSides(
  grid: Grid,
  segs: CrestSegments,
  crestCells: Int32Array,
  bedCol: number,
  bedRow: number,
  probeM: number,
): Probe {
  const { width, height, transform: t, z } = grid;
  const crest = new Set<number>(crestCells);
  const cellW = grid.cellWidthM[bedRow]!;
  const cellH = grid.cellHeightM;
  const reachM = Math.max(probeM, 1.5 * Math.max(cellW, cellH));
  const dCols = Math.ceil(reachM / cellW);
  const dRows = Math.ceil(reachM / cellH);
  const low = [NaN, NaN];
  const nearD2 = [Infinity, Infinity];
  const nearestCell = new Int32Array([-1, -1]);
  const cells: [number[], number[]] = [[], []];
  for (let row = Math.max(0, bedRow - dRows); row <= Math.min(height - 1, bedRow + dRows); row++) {
    for (let col = Math.max(0, bedCol - dCols); col <= Math.min(width - 1, bedCol + dCols); col++) {
      const ex = (col - bedCol) * cellW;
      const ey = (row - bedRow) * cellH;
      const d2 = ex * ex + ey * ey;
      if (d2 > reachM * reachM) continue;
      const i = row * width + col;
      const zi = z[i]!;
      if (crest.has(i) || Number.isNaN(zi)) continue;
      const side = sideOf(segs, colToX(t, col + 0.5), rowToY(t, row + 0.5));
      if (side === NEITHER) continue;
      const k = side === LEFT ? 0 : 1;
      cells[k].push(i);
      if (!(zi >= low[k]!)) low[k] = zi;
      if (d2 < nearD2[k]!) {
        nearD2[k] = d2;
        nearestCell[k] = i;
      }
    }
  }
  return { leftM: low[0]!, rightM: low[1]!, nearestCell, cells };
}

/** Valid non-crest cells 8-adjacent to the bed cell on the upstream side; falls back to the nearest probed upstream cell. */
function findSeeds(
  grid: Grid,
  segs: CrestSegments,
  crestCells: Int32Array,
  bedCol: number,
  bedRow: number,
  upCode: number,
  fallbackCell: number,
): Int32Array {
  const { width, height, transform: t, z } = grid;
  const crest = new Set<number>(crestCells);
  const seeds: number[] = [];
  for (let dr = -1; dr <= 1; dr++) {
    for (let dc = -1; dc <= 1; dc++) {
      const col = bedCol + dc;
      const row = bedRow + dr;
      if ((dc === 0 && dr === 0) || col < 0 || col >= width || row < 0 || row >= height) continue;
      const i = row * width + col;
      if (crest.has(i) || Number.isNaN(z[i]!)) continue;
      if (sideOf(segs, colToX(t, col + 0.5), rowToY(t, row + 0.5)) === upCode) seeds.push(i);
    }
  }
  if (seeds.length === 0 && fallbackCell >= 0) seeds.push(fallbackCell);
  return Int32Array.from(seeds);
}

/**
 * Radius of the spill band, in cells: valid non-crest cells whose centre is
 * within this many cells of a crest cell's centre, on the downstream side.
 * Water reaching the band has gone round the crest (or through a gap): the
 * fill calls that a spill. 3 cells catches water that rounds a crest end
 * one or two cells out, even diagonally (a project choice).
 */
export const SPILL_BAND_CELLS = 3;

/** Valid non-crest cells within SPILL_BAND_CELLS of a crest cell and on the given side of the line. */
function sideCells(grid: Grid, segs: CrestSegments, crestCells: Int32Array, sideCode: number): Int32Array {
  const { width, height, transform: t, z } = grid;
  const crest = new Set<number>(crestCells);
  const checked = new Set<number>();
  const found: number[] = [];
  const r = SPILL_BAND_CELLS;
  for (let k = 0; k < crestCells.length; k++) {
    const c = crestCells[k]!;
    const col0 = c % width;
    const row0 = (c - col0) / width;
    for (let dr = -r; dr <= r; dr++) {
      for (let dc = -r; dc <= r; dc++) {
        const col = col0 + dc;
        const row = row0 + dr;
        if (dc * dc + dr * dr > r * r || col < 0 || col >= width || row < 0 || row >= height) continue;
        const i = row * width + col;
        if (checked.has(i)) continue;
        checked.add(i);
        if (crest.has(i) || Number.isNaN(z[i]!)) continue;
        if (sideOf(segs, colToX(t, col + 0.5), rowToY(t, row + 0.5)) === sideCode) found.push(i);
      }
    }
  }
  return Int32Array.from(found);
}
