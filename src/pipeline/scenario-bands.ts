/**
 * Bands on the proposed-structures scenario: after the draws, combine each
 * draw's ponds a second time with the designed proposed structures in
 * (uncertainty/scenario-draws.ts) and put `bands` on summary.json's
 * `scenarios.existing`, `.with_proposed` and `.added`. The per-draw figures
 * go to draws.csv as `scenario` rows (io/draws-csv.ts).
 */
import { runScenarioDraws, scenarioBands, type ScenarioDrawOutcome, type ScenarioShare } from '../uncertainty/scenario-draws.js';
import type { RunDraws } from './draws.js';
import type { EstimateResult } from './estimate.js';

/**
 * Runs the scenario pass on a run's draws and attaches the bands to
 * `result.scenarios`; returns the per-draw figures, or null when the run has
 * no draws or no scenarios section.
 */
export function addScenarioBands(result: EstimateResult, draws: RunDraws | null): ScenarioDrawOutcome | null {
  const s = result.scenarios;
  if (!draws || !s || !result.drawInputs) return null;
  const rowOf = new Map(result.dams.map((d, i) => [d.id, i]));
  const shares: ScenarioShare[] = new Array<ScenarioShare>(result.dams.length).fill(null);
  for (const row of s.with_proposed.dams) {
    const i = rowOf.get(row.id);
    if (i !== undefined) shares[i] = { areaM2: row.area_m2, volumeM3: row.volume_m3 };
  }
  const out = runScenarioDraws({ inputs: result.drawInputs, dams: result.dams, outcome: draws.outcome, shares });
  s.existing.bands = scenarioBands(out.existing);
  s.with_proposed.bands = scenarioBands(out.with_proposed);
  s.added.bands = scenarioBands(out.added);
  return out;
}
