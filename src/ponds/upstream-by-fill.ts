/**
 * Upstream side by the water each side holds.
 *
 * The terrain probe next to the bed compares ground a few metres either side
 * of the crest; on a gentle channel under lidar noise the two sides can differ
 * by less than the noise. So when the inventory does not say which side is
 * upstream, both sides are flooded: on the downstream side water runs away
 * down the valley at about the bed's level, while on the upstream side the
 * crest holds it. The side whose water stands higher is upstream (a tie goes
 * to the side holding more water, and is flagged). The crest's own property
 * (`upstream`) always wins when given.
 *
 * The two trial floods are confined to a box reaching DECISION_REACH_M
 * beyond the crest: downstream, water reaches that box's edge at about the
 * bed's level, upstream it must first rise by the channel's fall over that
 * distance (or to the crest). Flooding the whole downstream valley below the
 * bed, which is all an unconfined downstream flood would do, is avoided.
 */
import type { Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import type { DamInput } from '../inventory.js';
import { setupCrest, type CrestSetup } from './crest.js';
import { fillBehindCrest, type FillOptions, type FillScratch, type PondFill } from './fill.js';
import type { PondParams } from './params.js';
import { pondAt } from './stage-storage.js';
import { cellBounds } from '../grid/cell-bounds.js';

/** Trial floods reach at most this far beyond the crest's extent, metres. */
export const DECISION_REACH_M = 100;
/** Two water levels closer than this (m) are a tie. */
const LEVEL_TIE_M = 1e-6;
/** Probe codes superseded by the flood's verdict. */
const PROBE_CODES = new Set(['upstream-ambiguous', 'upstream-disagrees']);

/** Sets up and fills one dam, choosing the upstream side by flooding both when the inventory leaves it open. */
export function setupAndFill(
  grid: Grid,
  dam: DamInput,
  crestCells: Int32Array,
  params: PondParams,
  fillOptions: FillOptions,
  scratch: FillScratch,
): { setup: CrestSetup; fill: PondFill } | { skip: Warning } {
  const first = setupCrest(grid, dam, crestCells, params);
  if ('skip' in first) return first;
  if (first.upstreamSource === 'property' || !first.holdsWater) {
    return { setup: first, fill: fillBehindCrest(grid, first, fillOptions, scratch) };
  }
  const other = setupCrest(grid, { ...dam, upstream: first.upstreamSide === 'left' ? 'right' : 'left' }, crestCells, params);
  if ('skip' in other) return { setup: first, fill: fillBehindCrest(grid, first, fillOptions, scratch) };

  const trial = { ...fillOptions, reachBox: decisionBox(grid, crestCells, fillOptions.reachBox) };
  const firstTrial = fillBehindCrest(grid, first, trial, scratch);
  const otherTrial = fillBehindCrest(grid, other, trial, scratch);
  const gap = otherTrial.waterLevelM - firstTrial.waterLevelM;
  const tie = Math.abs(gap) <= LEVEL_TIE_M;
  const otherWins = tie ? pondAt(otherTrial, otherTrial.waterLevelM).volumeM3 > pondAt(firstTrial, firstTrial.waterLevelM).volumeM3 : gap > 0;
  const setup = otherWins ? other : first;
  const fill = fillBehindCrest(grid, setup, fillOptions, scratch);
  const warnings = setup.warnings.filter((w) => !PROBE_CODES.has(w.code));
  if (tie) {
    warnings.push({
      code: 'upstream-ambiguous',
      damId: dam.id,
      message: `dam ${dam.id}: water stands at the same level on both sides of the crest; upstream taken as the ${setup.upstreamSide} (the side holding more water); set the upstream property to be sure`,
    });
  }
  return { setup: { ...setup, upstreamSource: 'terrain', warnings }, fill };
}

/** The crest's cell extent grown by DECISION_REACH_M, within the caller's reach box and the grid. */
function decisionBox(grid: Grid, crestCells: Int32Array, outer: FillOptions['reachBox']): NonNullable<FillOptions['reachBox']> {
  const { width, height } = grid;
  const { c0, c1, r0, r1 } = cellBounds(crestCells, width);
  const midRow = Math.min(height - 1, (r0 + r1) >> 1);
  const dc = Math.ceil(DECISION_REACH_M / grid.cellWidthM[midRow]!);
  const dr = Math.ceil(DECISION_REACH_M / grid.cellHeightM);
  return {
    col0: Math.max(outer?.col0 ?? 0, c0 - dc),
    row0: Math.max(outer?.row0 ?? 0, r0 - dr),
    col1: Math.min(outer?.col1 ?? width, c1 + 1 + dc),
    row1: Math.min(outer?.row1 ?? height, r1 + 1 + dr),
  };
}
