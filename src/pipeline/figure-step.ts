/** The step per-dam areas and volumes are kept on, so any grouping of them sums exactly. */

/**
 * Step of every per-dam area and volume, m² or m³: 2^-20 (about 1e-6). Sums
 * of whole multiples of a power of two are exact in any order while they stay
 * below 2^53 steps (here 8.6e9 m³), so totals, watershed rows and any other
 * grouping of the dams add up to the same double, not merely to within
 * rounding. The step is far below any figure's meaning.
 */
export const FIGURE_STEP = 2 ** -20;

/** `v` on the nearest whole multiple of FIGURE_STEP. */
export const onStep = (v: number): number => Math.round(v / FIGURE_STEP) * FIGURE_STEP;
