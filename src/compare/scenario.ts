/**
 * The proposed-structures scenario of one run, as compare reports it:
 * existing, existing plus proposed, and what the design adds (with its band
 * when the run has per-draw scenario figures: both scenarios come from the
 * same draws, so the added figure is differenced draw by draw).
 */
import { bandOf, excludesZero, pairedDifferenceBand, quadratureDifferenceBand, type BandMethod } from './bands.js';
import { drawSeries, type DrawTable } from './draws.js';
import type { Bands, RunRecord, RunScenarios } from './run-record.js';

/** compare.json `runs[].proposed`. */
export interface ProposedScenario {
  available: boolean;
  note: string;
  existing: { dams_counted: number; storage_m3: number; inundated_area_m2: number; bands: Bands | null } | null;
  with_proposed: { dams_counted: number; proposed_counted: number; storage_m3: number; inundated_area_m2: number; bands: Bands | null } | null;
  added: {
    storage_m3: number;
    inundated_area_m2: number;
    bands: Bands | null;
    band_method: BandMethod;
    /** Whether the added storage's band excludes zero (null without a band). */
    detectable: boolean | null;
  } | null;
  drowned_by_proposed: RunScenarios['drowned_by_proposed'];
  proposed_left_out: RunScenarios['proposed_left_out'];
}

const FIGURES = ['storage_m3', 'inundated_area_m2'] as const;

/** The scenario section of one run. */
export function proposedScenario(run: RunRecord, draws: DrawTable | null): ProposedScenario {
  const s = run.scenarios;
  if (!s) {
    return {
      available: false,
      note: `${run.label} has no scenarios section (a run from before scenarios were written); rerun the estimate to see what proposed structures add.`,
      existing: null,
      with_proposed: null,
      added: null,
      drowned_by_proposed: [],
      proposed_left_out: [],
    };
  }
  const bands: Bands = {};
  let method: BandMethod = 'none';
  for (const f of FIGURES) {
    const ex = drawSeries(draws, 'scenario', 'existing', f);
    const wp = drawSeries(draws, 'scenario', 'with_proposed', f);
    if (ex && wp && ex.length === wp.length) {
      bands[f] = pairedDifferenceBand(ex, wp);
      method = 'paired';
      continue;
    }
    const be = s.existing.bands?.[f];
    const bw = s.with_proposed.bands?.[f];
    if (be && bw) {
      bands[f] = quadratureDifferenceBand(be, bw);
      if (method === 'none') method = 'quadrature';
    }
  }
  const existingBands = s.existing.bands ?? seriesBands(draws, 'existing');
  const withBands = s.with_proposed.bands ?? seriesBands(draws, 'with_proposed');
  const storageBand = bands['storage_m3'];
  const proposedCount = s.with_proposed.proposed_counted;
  return {
    available: true,
    note:
      proposedCount === 0
        ? `${run.label} has no proposed structure with a design height: both scenarios are the existing dams.`
        : `${proposedCount} proposed structures added to the ${s.existing.dams_counted} existing dams${method === 'none' ? '; no bands (the run has no per-draw scenario figures)' : method === 'quadrature' ? '; bands from the two scenarios’ bands in quadrature, wider than the draw-by-draw band because both scenarios share their errors' : ''}.`,
    existing: { ...s.existing, bands: existingBands },
    with_proposed: { ...s.with_proposed, bands: withBands },
    added: {
      storage_m3: s.with_proposed.storage_m3 - s.existing.storage_m3,
      inundated_area_m2: s.with_proposed.inundated_area_m2 - s.existing.inundated_area_m2,
      bands: Object.keys(bands).length > 0 ? bands : null,
      band_method: method,
      detectable: storageBand ? excludesZero(storageBand) : null,
    },
    drowned_by_proposed: s.drowned_by_proposed,
    proposed_left_out: s.proposed_left_out,
  };
}

/** Bands of a scenario from its per-draw figures, when the run has them. */
function seriesBands(draws: DrawTable | null, id: string): Bands | null {
  const out: Bands = {};
  for (const f of FIGURES) {
    const v = drawSeries(draws, 'scenario', id, f);
    if (v) out[f] = bandOf(v);
  }
  return Object.keys(out).length > 0 ? out : null;
}
