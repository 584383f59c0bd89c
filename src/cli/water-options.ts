/** The flags of ponds that already hold water: the model of the water below a surface, and detection on or off. */
import type { Command } from 'commander';
import { InputError } from '../errors.js';
import { BELOW_MODELS, POWER_P_MEDIAN, type BelowModel } from '../ponds/below-surface.js';
import type { EstimateParams } from '../pipeline/estimate.js';
import { defaultWaterRunParams, type WaterRunParams } from '../pipeline/water-stage.js';
import { parseNumber } from './options.js';

/** Flags as commander hands them over. */
export interface WaterModelFlags {
  belowModel?: string;
  powerP?: string;
  /** False with --no-water-detection. */
  waterDetection?: boolean;
}

/** Adds the model flags (estimate and demo). */
export function addWaterModelOptions(cmd: Command): Command {
  return cmd
    .option(
      '--below-model <model>',
      `water below a pond's surface where no bed DEM has data: ${BELOW_MODELS.join(' or ')} (power-law: V = A·h/(1 + 2/p), Hayashi & van der Kamp 2000; reconstructed: the bed rebuilt from the dry channel and banks)`,
      'power-law',
    )
    .option('--power-p <p>', `exponent p of the power law (1 a cone, 2 a paraboloid); default: the beaver-pond median of Karran et al. (2017)`, `${POWER_P_MEDIAN}`)
    .option('--no-water-detection', 'do not look for water surfaces in the DEM: take it as bare ground everywhere');
}

/**
 * The stage's parameters from the flags. The DEM's vertical RMSE, which sets
 * the detection tolerance, is the run's one DEM RMSE (the uncertainty
 * settings' value, taken when the run starts: see effectiveWaterParams).
 */
export function waterParamsFromFlags(flags: WaterModelFlags, _params: EstimateParams): WaterRunParams {
  const p = defaultWaterRunParams();
  if (flags.belowModel !== undefined) {
    if (!(BELOW_MODELS as readonly string[]).includes(flags.belowModel)) {
      throw new InputError(`--below-model "${flags.belowModel}" is not a model pondage knows; use ${BELOW_MODELS.join(' or ')}`);
    }
    p.belowModel = flags.belowModel as BelowModel;
  }
  if (flags.powerP !== undefined) p.powerP = parseNumber(flags.powerP, '--power-p', { min: 0.05, max: 50 });
  if (flags.waterDetection === false) p.detect = false;
  return p;
}
