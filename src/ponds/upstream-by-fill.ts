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
 */
import type { Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import type { DamInput } from '../inventory.js';
import { setupCrest, type CrestSetup } from './crest.js';
import { fillBehindCrest, type FillOptions, type FillScratch, type PondFill } from './fill.js';
import type { PondParams } from './params.js';
import { pondAt } from './stage-storage.js';

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
  const firstFill = fillBehindCrest(grid, first, fillOptions, scratch);
  if (first.upstreamSource === 'property' || !first.holdsWater) return { setup: first, fill: firstFill };

  const other = setupCrest(grid, { ...dam, upstream: first.upstreamSide === 'left' ? 'right' : 'left' }, crestCells, params);
  if ('skip' in other) return { setup: first, fill: firstFill };
  const otherFill = fillBehindCrest(grid, other, fillOptions, scratch);

  const gap = otherFill.waterLevelM - firstFill.waterLevelM;
  const tie = Math.abs(gap) <= LEVEL_TIE_M;
  const otherWins = tie ? pondAt(otherFill, otherFill.waterLevelM).volumeM3 > pondAt(firstFill, firstFill.waterLevelM).volumeM3 : gap > 0;
  const setup = otherWins ? other : first;
  const fill = otherWins ? otherFill : firstFill;
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
