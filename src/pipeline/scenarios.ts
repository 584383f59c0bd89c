/**
 * The proposed-structures scenario: the existing water surface (the run's
 * totals) and the water surface with the proposed structures added, combined
 * over the same fills, so a planner sees what a design adds and which
 * existing ponds a proposed pond would drown.
 *
 * A proposed dam takes part when it was estimated from a design height
 * (`height_m` given, height_source `measured`); a proposed dam without one is
 * left out and named, because a structure that does not stand yet has no
 * height in the DEM and a default height is no design.
 *
 * The existing totals are never changed here: `existing` repeats them, and
 * `with_proposed` is a second combination of the group's ponds.
 */
import type { Grid } from '../grid/grid.js';
import { combinePonds, type PondLayer } from '../ponds/combine.js';
import type { PondFill } from '../ponds/fill.js';
import type { DamStatus } from '../inventory.js';
import type { DamResult, Totals } from './result.js';
import type { Bands } from '../uncertainty/bands.js';
import { onStep } from './figure-step.js';

/** Storage and inundated area of one scenario. */
export interface ScenarioFigures {
  /** Dams whose ponds make up this water surface. */
  dams_counted: number;
  inundated_area_m2: number;
  storage_m3: number;
  /** Bands of the per-draw figures (keys storage_m3, inundated_area_m2), when the run has draws (pipeline/scenario-bands.ts). */
  bands?: Bands;
}

/** One dam's share of the with-proposed water surface. */
export interface ScenarioDam {
  id: string;
  status: DamStatus;
  /** Water this dam owns in the with-proposed surface, m² and m³ (rows sum to the scenario's figures). */
  area_m2: number;
  volume_m3: number;
  /** Id of the dam whose pond covers this dam's crest in this scenario, or null. */
  drowned_by: string | null;
}

/** The `scenarios` section of summary.json. */
export interface Scenarios {
  /** The existing dams: equals the run's totals. */
  existing: ScenarioFigures;
  /** Existing dams plus the proposed structures with a design height. */
  with_proposed: ScenarioFigures & { proposed_counted: number; dams: ScenarioDam[] };
  /** with_proposed minus existing. */
  added: { inundated_area_m2: number; storage_m3: number; bands?: Bands };
  /** Existing dams whose crest a proposed pond covers, with the water they own in each scenario (m³). */
  drowned_by_proposed: { id: string; drowned_by: string; volume_existing_m3: number; volume_with_proposed_m3: number }[];
  /** Proposed dams not in with_proposed, and why. */
  proposed_left_out: { id: string; reason: string }[];
}

/** A member of a DEM window group as the scenario tally sees it. */
export interface ScenarioMember {
  /** Index of the dam in the run's dam list. */
  index: number;
  result: DamResult;
  fill: PondFill | undefined;
}

/** True for a proposed structure estimated from its design height. */
export function isDesignedProposal(d: DamResult): boolean {
  return d.status === 'proposed' && d.estimated && d.height_source === 'measured';
}

/** Collects the with-proposed shares group by group; `finish` builds the summary section. */
export class ScenarioTally {
  private readonly area: Float64Array;
  private readonly volume: Float64Array;
  private readonly drownedBy: (string | null)[];

  /** `damCount`: number of dams in the run. */
  constructor(damCount: number) {
    this.area = new Float64Array(damCount);
    this.volume = new Float64Array(damCount);
    this.drownedBy = new Array<string | null>(damCount).fill(null);
  }

  /**
   * Adds one window group, after its existing ponds were combined (so the
   * members' existing shares are on their results). Call while `grid` is loaded.
   */
  addGroup(grid: Grid, members: readonly ScenarioMember[]): void {
    const counted = members.filter((m) => m.fill !== undefined && (m.result.in_totals || isDesignedProposal(m.result)));
    if (!counted.some((m) => isDesignedProposal(m.result))) {
      // No proposal here: the scenario's surface is the existing one.
      for (const m of counted) {
        this.area[m.index] = m.result.area_m2;
        this.volume[m.index] = m.result.volume_m3;
        this.drownedBy[m.index] = m.result.drowned_by;
      }
      return;
    }
    const layers: PondLayer[] = counted.map((m) => ({ fill: m.fill!, waterLevelM: m.fill!.waterLevelM }));
    const combined = combinePonds(grid, layers);
    combined.perPond.forEach((share, p) => {
      const m = counted[p]!;
      this.area[m.index] = share.areaM2;
      // Water below today's surface (water-stage.ts) stays under either scenario.
      this.volume[m.index] = share.volumeM3 + (m.result.in_totals ? (m.result.volume_below_surface_m3 ?? 0) : 0);
      this.drownedBy[m.index] = share.drownedBy >= 0 ? counted[share.drownedBy]!.result.id : null;
    });
  }

  /** The summary section; `totals` are the run's existing totals. */
  finish(dams: readonly DamResult[], totals: Totals): Scenarios {
    const rows: ScenarioDam[] = [];
    let area = 0;
    let volume = 0;
    let proposed = 0;
    const drowned: Scenarios['drowned_by_proposed'] = [];
    const leftOut: Scenarios['proposed_left_out'] = [];
    const byId = new Map(dams.map((d) => [d.id, d]));
    dams.forEach((d, k) => {
      if (d.status === 'proposed' && !isDesignedProposal(d)) {
        leftOut.push({ id: d.id, reason: d.estimated ? 'no design height (height_m); a structure that does not stand yet needs one' : `skipped: ${d.skip_reason ?? 'not estimated'}` });
        return;
      }
      if (!(d.estimated && (d.in_totals || isDesignedProposal(d)))) return;
      if (isDesignedProposal(d)) proposed++;
      // On the same step as the dams' own figures, so a run without proposals adds exactly nothing.
      const row: ScenarioDam = { id: d.id, status: d.status, area_m2: onStep(this.area[k]!), volume_m3: onStep(this.volume[k]!), drowned_by: this.drownedBy[k] ?? null };
      rows.push(row);
      area += row.area_m2;
      volume += row.volume_m3;
      const by = row.drowned_by === null ? undefined : byId.get(row.drowned_by);
      if (d.in_totals && by && isDesignedProposal(by)) {
        drowned.push({ id: d.id, drowned_by: by.id, volume_existing_m3: d.volume_m3, volume_with_proposed_m3: row.volume_m3 });
      }
    });
    return {
      existing: { dams_counted: totals.dams_in_totals, inundated_area_m2: totals.inundated_area_m2, storage_m3: totals.storage_m3 },
      with_proposed: { dams_counted: rows.length, proposed_counted: proposed, inundated_area_m2: area, storage_m3: volume, dams: rows },
      added: { inundated_area_m2: area - totals.inundated_area_m2, storage_m3: volume - totals.storage_m3 },
      drowned_by_proposed: drowned,
      proposed_left_out: leftOut,
    };
  }
}
