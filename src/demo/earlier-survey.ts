/**
 * The demo's earlier survey. The generated inventory is the later survey
 * (2024: dams first seen in 2024, a breach, detector candidates, proposed
 * structures); the earlier one (2019) is derived from it:
 *
 * - a dam first seen after the earlier year is absent (built later, or
 *   mapped later: the 2024 detector's candidates, the 2024 designs);
 * - a dam breached by the later survey was standing in the earlier one: it
 *   is `confirmed`, with the height its crest line was drawn to (the crest
 *   it had before the breach), measured;
 * - every other dam is as the later survey has it.
 *
 * Ids and crest lines are the same in both surveys, so the comparison
 * matches them by id.
 */
import type { DemoDam } from './types.js';

/** Year of the demo's earlier survey. */
export const EARLIER_SURVEY_YEAR = 2019;

/** Year of the demo's later survey (the generated inventory). */
export const LATER_SURVEY_YEAR = 2024;

/** The inventory as the earlier survey mapped it (see the file comment). */
export function earlierSurvey(dams: readonly DemoDam[], year: number = EARLIER_SURVEY_YEAR): DemoDam[] {
  const out: DemoDam[] = [];
  for (const d of dams) {
    if (d.properties.year > year) continue;
    if (d.properties.status !== 'breached') {
      out.push(d);
      continue;
    }
    const { note: _laterNote, ...rest } = d.properties;
    out.push({
      ...d,
      properties: {
        ...rest,
        status: 'confirmed',
        height_m: Math.round(d.truth.lineReachM * 100) / 100,
        note: `standing in ${year}; breached by ${LATER_SURVEY_YEAR}`,
      },
    });
  }
  return out;
}
