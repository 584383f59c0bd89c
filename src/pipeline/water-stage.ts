/**
 * The water-surface stage of one run: ponds that already hold water.
 *
 * Per window group, after each dam's crest is set up and filled on the DEM
 * as read:
 * 1. `detect`: each dam counted in the totals gets its water surface, from
 *    the DEM (ponds/water-surface.ts) or from a water mask. A dam whose
 *    crest stands in another dam's water (the lowest crest cell, where the
 *    channel crosses, and a cell just upstream of it both in that surface:
 *    one level on both sides of the crest) holds no water of its own today:
 *    its crest is at or below that level and its bed, under the water, is
 *    not in the DEM. It gets no pond of its own, a crest at that level (an
 *    upper bound) and is drowned by that dam. A dam whose lowest crest cell
 *    alone lies in another dam's water is warned that its bed is that
 *    water's surface. Two dams that otherwise find the same water share it
 *    out cell by cell: the larger surface keeps a cell (ties: the dam listed
 *    first), so no water is counted twice. With a bed DEM, a cell whose bed
 *    stands at or above the water level is not water.
 *    Each dam's cells are then set to its water level in the window (the
 *    lidar noise on a water surface is no ground relief), and the caller
 *    fills every dam again on that surface: the fill's volume is then the
 *    capacity above today's water, its area the pond at the crest.
 * 2. `below`: after the group's ponds are combined, each dam's water below
 *    its surface comes from the bed DEM where it has data and from the
 *    chosen model elsewhere (ponds/below-surface.ts, bed-reconstruct.ts);
 *    volume_m3 becomes above + below. Per-dam rows still sum exactly to the
 *    totals: each total is the sum of its own column.
 *
 * depth.tif: where a bed is known cell by cell (reconstructed model or bed
 * DEM) the depth below today's surface is added, so depth = water level −
 * bed; under the power law (one volume per pond, no bed per cell) the
 * depth is that above today's surface only.
 */
import type { Warning } from '../errors.js';
import type { Grid } from '../grid/grid.js';
import type { DamInput } from '../inventory.js';
import { BELOW_MODELS, POWER_P_MEDIAN, areaAtDepth, volumeBelow, type BelowModel } from '../ponds/below-surface.js';
import { DEFAULT_RECONSTRUCT_PARAMS, reconstructBed, type ReconstructParams } from '../ponds/bed-reconstruct.js';
import type { CrestSetup } from '../ponds/crest.js';
import type { PondFill } from '../ponds/fill.js';
import { floodedCount } from '../ponds/stage-storage.js';
import {
  DEFAULT_WATER_PARAMS,
  createWaterScratch,
  detectWaterSurface,
  waterFromMask,
  waterToleranceM,
  type WaterOutcome,
  type WaterParams,
  type WaterSurface,
} from '../ponds/water-surface.js';
import type { BedSource, DamResult, StageRow } from './result.js';
import type { CellBox } from './windows.js';
import { cellBounds } from '../grid/cell-bounds.js';

/** Run parameters of the water stage. */
export interface WaterRunParams {
  /** Look for water surfaces in the DEM (a water mask, when given, replaces the detection). */
  detect: boolean;
  water: WaterParams;
  /** Model for the water below today's surface where no bed DEM has data. */
  belowModel: BelowModel;
  /** Exponent p of the area–depth power law (dimensionless). */
  powerP: number;
  reconstruct: ReconstructParams;
}

/** Defaults: detection on, QL2 noise, the power law at the beaver-pond median p = 0.91 (Karran et al. 2017). */
export function defaultWaterRunParams(): WaterRunParams {
  return {
    detect: true,
    water: { ...DEFAULT_WATER_PARAMS },
    belowModel: 'power-law',
    powerP: POWER_P_MEDIAN,
    reconstruct: { ...DEFAULT_RECONSTRUCT_PARAMS },
  };
}

export { BELOW_MODELS };

/**
 * The water parameters a run uses: its own, or the defaults, with the DEM's
 * vertical RMSE taken from the run's uncertainty settings when it has them
 * (one DEM RMSE per run: `--dem-rmse` / the DEM's quality level).
 */
export function effectiveWaterParams(run: { water?: WaterRunParams; uncertainty?: { demRmseM: number } }): WaterRunParams {
  const p = run.water ?? defaultWaterRunParams();
  return run.uncertainty ? { ...p, water: { ...p.water, rmseZM: run.uncertainty.demRmseM } } : p;
}

/** The stage's parameters as summary.json lists them (units in the names). */
export function waterParameters(p: WaterRunParams): Record<string, number | string> {
  return {
    water_detection: p.detect ? 'on' : 'off',
    water_dem_rmse_m: p.water.rmseZM,
    water_smooth_radius_cells: p.water.smoothRadiusCells,
    water_tolerance_k: p.water.toleranceK,
    water_tolerance_m: waterToleranceM(p.water),
    water_min_area_m2: p.water.minAreaM2,
    water_min_noisy_cells: p.water.minNoisyCells,
    water_min_depth_m: p.water.minDepthM,
    below_model: p.belowModel,
    power_p: p.powerP,
    bed_side_probe_m: p.reconstruct.sideProbeM,
  };
}

/** Plain sentences for summary.json about the water below today's surfaces. */
export function waterAssumptions(p: WaterRunParams): string[] {
  const model =
    p.belowModel === 'power-law'
      ? `the area–depth power law V = A·h/(1 + 2/p) of Hayashi & van der Kamp (2000) with p = ${p.powerP}${p.powerP === POWER_P_MEDIAN ? ' (the median for beaver ponds of Karran et al. 2017)' : ''}, A today's water-surface area and h its depth at the dam`
      : "a bed rebuilt from the dry channel below the dam to the water's upstream end and from the valley sides at the shore";
  return [
    `Lidar does not see through water: where a pond holds water today (found in the DEM${p.detect ? ` as a flat within the noise of a ${p.water.rmseZM} m RMSE DEM` : ''}, or from a water mask), the water below its surface comes from a bed DEM where one is given and has data, else from ${model}. volume_m3 = volume_above_surface_m3 + volume_below_surface_m3.`,
    p.belowModel === 'power-law'
      ? 'depth.tif holds the depth above today\'s water surface where the power law gives the water below it (one volume per pond, no depth per cell); where a bed DEM has data, depth = water level − bed.'
      : 'depth.tif holds the depth down to the rebuilt (or bed-DEM) bed: depth = water level − bed, below today\'s surface too.',
  ];
}

/** Extra rasters on one window: a water-mask label per cell (0 = dry) and a bed per cell (NaN = no data). */
export interface WaterWindow {
  maskLabels: Int32Array | null;
  bedZ: Float32Array | null;
}

/** Where the water mask and the bed DEM come from, window by window (io/water-inputs.ts). */
export interface WaterWindowSource {
  readonly hasMask: boolean;
  readonly hasBed: boolean;
  /** The window [col0, col1) × [row0, row1) of the DEM, on the DEM's grid. */
  readWindow(box: CellBox): Promise<WaterWindow>;
  /** Warnings for water-mask features that no dam's water touched, given the labels that were used. */
  unusedMaskWarnings(used: ReadonlySet<number>): Warning[];
}

/** A dam as the stage sees it (the pipeline's working record has these). */
export interface WaterMember {
  dam: DamInput;
  result: DamResult;
  box: CellBox | null;
  setup?: CrestSetup;
  fill?: PondFill;
}

/** What the stage keeps about one dam between `detect` and `below`. */
interface Found {
  member: WaterMember;
  surface: WaterSurface;
  /** The cells this dam keeps after sharing, and their count. */
  cells: Int32Array;
}

/**
 * The bed at the dam under today's water, m: the setup's bed (the dry
 * channel just below a dam that stands out in the DEM, else the lowest crest
 * cell); for a dam that stands out and has a measured height, the crest seen
 * in the DEM minus that height when lower (the channel below may itself lie
 * under a lower pond's water).
 */
export function bedAtDam(setup: CrestSetup): number {
  if (setup.demVisible && setup.heightSource === 'measured') return Math.min(setup.bedElevM, setup.crestLowM - setup.heightM);
  return setup.bedElevM;
}

/**
 * Fewest cells, and share of the pond at the water level, whose ground
 * stands more than 3σ below the level before a found flat is taken for dry
 * ground (noise puts 0.13 % of a water surface's cells there).
 */
const GROUND_BELOW_CELLS = 5;
const GROUND_BELOW_SHARE = 0.01;

/**
 * True when the dam's own pond at `levelM` (its fill, on the DEM as read)
 * holds ground clearly below that level: a channel running under a dry
 * floodplain flat. Over water the DEM is the surface, and only noise lies
 * below it.
 */
function groundBelow(grid: Grid, fill: PondFill, levelM: number, sigmaM: number): boolean {
  const n = floodedCount(fill, levelM);
  const lowM = levelM - 3 * sigmaM;
  let low = 0;
  for (let k = 0; k < n; k++) if (grid.z[fill.order[k]!]! < lowM) low++;
  return low > Math.max(GROUND_BELOW_CELLS, GROUND_BELOW_SHARE * n);
}

/** The power-law part of a pond's water below the surface: the area it covers, the depth at the dam, p. */
interface PowerRest {
  areaM2: number;
  depthM: number;
  p: number;
}

/**
 * The water below today's surface when the level stands at hM (below the
 * surface): cell by cell where the bed is known, by the power law's
 * stage–area relation A(y) = A·(y/h)^(2/p) elsewhere.
 */
function belowAt(
  hM: number,
  grid: Grid,
  cells: Int32Array,
  perCell: Float32Array | null,
  levelM: number,
  bedAtDamM: number,
  power: PowerRest | null,
): { areaM2: number; volumeM3: number } {
  let areaM2 = 0;
  let volumeM3 = 0;
  if (perCell) {
    const { width } = grid;
    for (let j = 0; j < cells.length; j++) {
      const b = perCell[j]!;
      if (!(b < hM)) continue;
      const i = cells[j]!;
      const a = grid.cellAreaM2[(i - (i % width)) / width]!;
      areaM2 += a;
      volumeM3 += a * (Math.min(hM, levelM) - b);
    }
  }
  if (power && power.areaM2 > 0) {
    const y = hM - bedAtDamM;
    const a = areaAtDepth(power.areaM2, power.depthM, y, power.p);
    areaM2 += a;
    volumeM3 += volumeBelow(a, Math.min(y, power.depthM), power.p);
  }
  return { areaM2, volumeM3 };
}

/** Warnings of a dam's own fill that lose their meaning once it stands in another dam's water (estimate.ts limitWarning). */
const FILL_LIMIT_CODES: ReadonlySet<string> = new Set(['spills-around-crest', 'reaches-edge', 'reaches-nodata']);

/**
 * For each member whose lowest crest cell lies in another member's found
 * water surface (`candidates`, largest first: the larger keeps a cell found
 * twice): the candidate holding it, and whether a cell just upstream of the
 * crest lies in it too (the water stands on both sides: drowned). A member
 * that stands out in the DEM (its crest a ridge, not water) is left out, and
 * so is a holder that itself stands in a third dam's water (the third holds
 * both).
 */
function standingIn(
  grid: Grid,
  members: readonly WaterMember[],
  candidates: readonly { member: WaterMember; surface: WaterSurface }[],
): Map<WaterMember, { candidate: number; drowned: boolean }> {
  const n = grid.width * grid.height;
  const label = candidates.length < 0xffff ? new Uint16Array(n) : new Int32Array(n);
  candidates.forEach((c, k) => {
    const cells = c.surface.cells;
    for (let j = 0; j < cells.length; j++) if (label[cells[j]!] === 0) label[cells[j]!] = k + 1;
  });
  const holds = (m: WaterMember, k: number): boolean => {
    const seeds = m.setup!.seedCells;
    for (let j = 0; j < seeds.length; j++) if (label[seeds[j]!] === k + 1) return true;
    return false;
  };
  const out = new Map<WaterMember, { candidate: number; drowned: boolean }>();
  for (const m of members) {
    const setup = m.setup;
    if (!setup || !setup.holdsWater || setup.demVisible || !m.result.in_totals || m.result.status === 'proposed') continue;
    const k = label[setup.bedCell]! - 1;
    if (k < 0 || candidates[k]!.member === m) continue;
    out.set(m, { candidate: k, drowned: holds(m, k) });
  }
  // A holder drowned in turn passes its dams on to its own holder; a loop of holders (no dam above the others) drowns none of them.
  for (const [m, hold] of out) {
    let k = hold.candidate;
    const seen = new Set<number>([k]);
    for (;;) {
      const up = out.get(candidates[k]!.member);
      if (!up || !up.drowned) break;
      if (seen.has(up.candidate)) {
        k = -1;
        break;
      }
      seen.add(up.candidate);
      k = up.candidate;
    }
    if (k < 0 || candidates[k]!.member === m) out.delete(m);
    else hold.candidate = k;
  }
  return out;
}

/** The water-surface stage of one run (see the file comment). */
export class WaterStage {
  private readonly usedLabels = new Set<number>();
  private found: Found[] = [];
  /** Window cells set to a water level by the last `detect`. */
  private changed: Int32Array = new Int32Array(0);
  /** Dams of the last `detect` standing in another dam's water, with that dam; their fills are final. */
  private drowned: { member: WaterMember; holder: WaterMember }[] = [];
  private settled = new Set<PondFill>();

  constructor(
    readonly params: WaterRunParams,
    private readonly source: WaterWindowSource | null,
  ) {}

  /** True when the stage has anything to do. */
  get active(): boolean {
    return this.params.detect || (this.source?.hasMask ?? false);
  }

  /** Reads the mask and bed for a window (nothing when neither was given). */
  async window(box: CellBox): Promise<WaterWindow> {
    if (!this.source) return { maskLabels: null, bedZ: null };
    return this.source.readWindow(box);
  }

  /**
   * Finds each member's water surface, shares cells out, sets the water
   * cells of the window to their level. Returns true when any cell was set
   * (the caller then fills the group's dams again).
   */
  detect(grid: Grid, members: WaterMember[], box: CellBox, win: WaterWindow, warnings: Warning[]): boolean {
    this.found = [];
    this.drowned = [];
    this.settled.clear();
    if (!this.active) return false;
    const scratch = createWaterScratch(grid.width * grid.height);
    const candidates: { member: WaterMember; surface: WaterSurface; order: number }[] = [];
    members.forEach((m, order) => {
      const { setup, result } = m;
      if (!setup || !setup.holdsWater || !result.in_totals || result.status === 'proposed' || !m.box) return;
      const reach = { col0: m.box.col0 - box.col0, row0: m.box.row0 - box.row0, col1: m.box.col1 - box.col0, row1: m.box.row1 - box.row0 };
      const outcome: WaterOutcome = win.maskLabels
        ? waterFromMask(grid, setup, win.maskLabels, this.params.water, reach, scratch)
        : detectWaterSurface(grid, setup, this.params.water, reach, scratch);
      let surface = outcome.surface;
      let check: string = outcome.surface ? 'found' : outcome.reason;
      if (surface && surface.source === 'detected' && !surface.interpolated && m.fill && groundBelow(grid, m.fill, surface.levelM, this.params.water.rmseZM)) {
        surface = null;
        check = 'ground-below';
      }
      result.water_surface_check = check;
      if (surface) candidates.push({ member: m, surface, order });
    });
    if (candidates.length === 0) return false;

    // Dams standing in another dam's water: their water is that dam's.
    candidates.sort((a, b) => b.surface.areaM2 - a.surface.areaM2 || a.order - b.order);
    const inWater = standingIn(grid, members, candidates);
    for (const [member, hold] of inWater) {
      const holder = candidates[hold.candidate]!;
      if (hold.drowned) {
        this.drowned.push({ member, holder: holder.member });
      } else {
        const id = member.dam.id;
        const message = `its lowest crest cell lies in the water surface of dam ${holder.member.dam.id}'s pond (${holder.surface.levelM.toFixed(2)} m), which the DEM shows instead of the bed there: its bed, and a crest set from the bed, may stand too high by that water's depth`;
        warnings.push({ code: 'bed-in-standing-water', damId: id, message: `dam ${id}: ${message}` });
        member.result.warnings.push(message);
      }
    }
    const drownedSet = new Set(this.drowned.map((d) => d.member));
    for (let k = candidates.length - 1; k >= 0; k--) if (drownedSet.has(candidates[k]!.member)) candidates.splice(k, 1);
    for (const d of this.drowned) {
      const holder = candidates.find((c) => c.member === d.holder);
      if (holder) this.settle(d.member, holder.surface.levelM, d.holder.dam.id, warnings);
    }
    if (candidates.length === 0) return false;

    // Share: the larger surface keeps a cell (ties: the dam listed first); with a bed DEM, no water where the bed is at or above the level.
    candidates.sort((a, b) => b.surface.areaM2 - a.surface.areaM2 || a.order - b.order);
    const small = candidates.length < 0xffff;
    const owner = small ? new Uint16Array(grid.width * grid.height) : new Int32Array(grid.width * grid.height);
    /** Marks a cell already handed out (above every candidate's k + 1). */
    const taken = small ? 0xffff : 0x7fffffff;
    const bedZ = win.bedZ;
    candidates.forEach((c, k) => {
      const { cells, levelM } = c.surface;
      for (let j = 0; j < cells.length; j++) {
        const i = cells[j]!;
        if (owner[i] !== 0) continue;
        if (bedZ && bedZ[i]! >= levelM) continue;
        owner[i] = k + 1;
      }
    });
    const z = grid.z;
    let changed = false;
    const setCells: number[] = [];
    candidates.forEach((c, k) => {
      const { cells, levelM } = c.surface;
      const mine: number[] = [];
      for (let j = 0; j < cells.length; j++) {
        const i = cells[j]!;
        if (owner[i] !== k + 1) continue;
        owner[i] = taken; // counted once even if listed twice
        mine.push(i);
        if (win.maskLabels) {
          const label = win.maskLabels[i]!;
          if (label > 0) this.usedLabels.add(label);
        }
        if (z[i] !== Math.fround(levelM)) setCells.push(i);
        z[i] = levelM;
        changed = true;
      }
      // Connectors are lowered to the level (never raised), not counted: the water stays one body for the fill.
      const links = c.surface.connectors;
      if (links) {
        for (let j = 0; j < links.length; j++) {
          const i = links[j]!;
          if (owner[i] !== 0 || !(z[i]! > levelM)) continue;
          z[i] = levelM;
          setCells.push(i);
          changed = true;
        }
      }
      this.found.push({ member: c.member, surface: c.surface, cells: Int32Array.from(mine) });
      this.warnAbout(c.member, c.surface, mine.length, warnings);
    });
    this.changed = Int32Array.from(setCells);
    return changed && setCells.length > 0;
  }

  /**
   * True when the last `detect` changed a cell within one cell of the fill's
   * flooded cells' box (the fill may then differ on the changed window).
   */
  affects(fill: PondFill | undefined, width: number): boolean {
    if (!fill || this.changed.length === 0 || this.settled.has(fill)) return false;
    const order = fill.order;
    if (order.length === 0) return true;
    const { c0, c1, r0, r1 } = cellBounds(order, width);
    for (let k = 0; k < this.changed.length; k++) {
      const i = this.changed[k]!;
      const col = i % width;
      const row = (i - col) / width;
      if (col >= c0 - 1 && col <= c1 + 1 && row >= r0 - 1 && row <= r1 + 1) return true;
    }
    return false;
  }

  /**
   * Water below each found surface, after the group's ponds were combined
   * (fills on the set surface); every member's volume_above_surface_m3.
   */
  below(grid: Grid, members: WaterMember[], box: CellBox, win: WaterWindow, depth: { box: CellBox; data: Float32Array } | null, warnings: Warning[] = []): void {
    const { width } = grid;
    for (const m of members) m.result.volume_above_surface_m3 = m.result.volume_m3;
    // The combined surface names the drowning dam where its level stands above the crest; a holder whose own level does not (overtopped) still drowns it.
    for (const { member, holder } of this.drowned) {
      if (member.result.drowned_by !== null) continue;
      member.result.drowned_by = holder.dam.id;
      member.result.warnings.push(`crest under the pond of dam ${holder.dam.id}; its water is counted there`);
    }
    this.drowned = [];
    for (const f of this.found) {
      const { member, surface, cells } = f;
      const r = member.result;
      const setup = member.setup!;
      const levelM = surface.levelM;
      r.water_surface_elev_m = levelM;
      r.water_surface_source = surface.source;
      r.freeboard_m = r.crest_elev_m === null ? null : r.crest_elev_m - levelM;
      r.depth_at_dam_m = levelM - bedAtDam(setup);
      if (cells.length === 0) continue; // its water is another dam's
      let areaM2 = 0;
      for (let j = 0; j < cells.length; j++) areaM2 += grid.cellAreaM2[(cells[j]! - (cells[j]! % width)) / width]!;
      const bedAtDamM = bedAtDam(setup);
      const depthAtDamM = levelM - bedAtDamM;
      // Cells with a bed from the bed DEM, and the rest.
      const bedZ = win.bedZ;
      let bedDemCells = 0;
      if (bedZ) for (let j = 0; j < cells.length; j++) if (bedZ[cells[j]!] === bedZ[cells[j]!]) bedDemCells++;
      let volumeM3 = 0;
      let maxBelowM = 0;
      let perCell: Float32Array | null = null;
      let powerRest: PowerRest | null = null;
      let source: BedSource;
      if (this.params.belowModel === 'reconstructed' || bedDemCells === cells.length) {
        const bed = reconstructBed(grid, cells, levelM, setup.crestCells, bedAtDamM, this.params.reconstruct, bedZ, setup.downstreamCells);
        volumeM3 = bed.volumeM3;
        maxBelowM = bed.maxDepthM;
        perCell = bed.bedM;
        source = bedDemCells === cells.length && cells.length > 0 ? 'bed-dem' : bedDemCells > 0 ? 'bed-dem+reconstructed' : 'reconstructed';
        r.pond_length_m = bed.lengthM;
        r.side_slope = Number.isFinite(bed.sideSlope) ? bed.sideSlope : null;
      } else {
        // Power law over the cells without a bed-DEM value, the bed DEM cell by cell over the others.
        let restAreaM2 = areaM2;
        if (bedZ && bedDemCells > 0) {
          perCell = new Float32Array(cells.length).fill(NaN);
          for (let j = 0; j < cells.length; j++) {
            const i = cells[j]!;
            const b = bedZ[i]!;
            if (b !== b) continue;
            const a = grid.cellAreaM2[(i - (i % width)) / width]!;
            perCell[j] = b;
            volumeM3 += a * (levelM - b);
            if (levelM - b > maxBelowM) maxBelowM = levelM - b;
            restAreaM2 -= a;
          }
        }
        volumeM3 += volumeBelow(restAreaM2, depthAtDamM, this.params.powerP);
        if (restAreaM2 > 0 && depthAtDamM > maxBelowM) maxBelowM = depthAtDamM;
        source = bedDemCells > 0 ? 'bed-dem+power-law' : 'power-law';
        r.power_p = this.params.powerP;
        powerRest = { areaM2: restAreaM2, depthM: depthAtDamM, p: this.params.powerP };
      }
      if (bedZ && bedDemCells > 0) this.checkDatum(member, grid, bedZ, cells, warnings);
      // The stage–storage curve from the bed: the model's below today's water, the fill's above it plus all the water below.
      r.stage_storage = r.stage_storage.map(([h, a, v]): StageRow => {
        if (h >= levelM) return [h, a, v + volumeM3];
        const below = belowAt(h, grid, cells, perCell, levelM, bedAtDamM, powerRest);
        return [h, below.areaM2, below.volumeM3];
      });
      r.standalone_volume_m3 += volumeM3;
      r.water_surface_area_m2 = areaM2;
      r.bed_source = source;
      const aboveM3 = r.volume_m3;
      r.volume_above_surface_m3 = aboveM3;
      r.volume_below_surface_m3 = volumeM3;
      r.volume_m3 = aboveM3 + volumeM3;
      if (r.area_m2 > 0) r.mean_depth_m = r.volume_m3 / r.area_m2;
      const aboveAtWaterM = r.water_level_m !== null && r.water_level_m > levelM ? r.water_level_m - levelM : 0;
      r.max_depth_m = Math.max(r.max_depth_m, aboveAtWaterM + maxBelowM);

      // Depth below the surface into depth.tif where the bed is known cell by cell.
      if (depth && perCell) {
        const outW = depth.box.col1 - depth.box.col0;
        for (let j = 0; j < cells.length; j++) {
          const b = perCell[j]!;
          if (b !== b || !(levelM > b)) continue;
          const i = cells[j]!;
          const col = i % width;
          const row = (i - col) / width;
          const o = (row + box.row0 - depth.box.row0) * outW + (col + box.col0 - depth.box.col0);
          const above = depth.data[o]!;
          depth.data[o] = (above === above ? above : 0) + (levelM - b);
        }
      }
    }
    this.found = [];
  }

  /**
   * A bed DEM on another vertical datum (or from a survey with a shift)
   * shows as an offset on the dry ground the pond covers: the median of DEM
   * minus bed DEM there is warned about beyond 3σ (σ the DEM's RMSE, at
   * least 0.1 m).
   */
  private checkDatum(member: WaterMember, grid: Grid, bedZ: Float32Array, water: Int32Array, warnings: Warning[]): void {
    const fill = member.fill;
    if (!fill) return;
    const isWater = new Set<number>();
    for (let j = 0; j < water.length; j++) isWater.add(water[j]!);
    const diffs: number[] = [];
    for (let k = 0; k < fill.order.length; k++) {
      const i = fill.order[k]!;
      const b = bedZ[i]!;
      if (b !== b || isWater.has(i)) continue;
      diffs.push(grid.z[i]! - b);
    }
    if (diffs.length < 25) return;
    diffs.sort((a, b) => a - b);
    const med = diffs[diffs.length >> 1]!;
    const limitM = 3 * Math.max(0.1, this.params.water.rmseZM);
    if (Math.abs(med) > limitM) {
      const id = member.dam.id;
      const message = `the DEM stands ${med.toFixed(2)} m ${med > 0 ? 'above' : 'below'} the bed DEM on the dry ground of the pond (median of ${diffs.length} cells): check that both use the same vertical datum and units`;
      warnings.push({ code: 'bed-dem-offset', damId: id, message: `dam ${id}: ${message}` });
      member.result.warnings.push(message);
    }
  }

  /**
   * A dam standing in another dam's water at `levelM`: no pond of its own
   * (an empty fill, holding no water in the draws either), its crest at
   * that level (an upper bound) and its bed the crest minus its height; the
   * warnings of its own fill (water escaping round a crest set too high)
   * are withdrawn.
   */
  private settle(member: WaterMember, levelM: number, holderId: string, warnings: Warning[]): void {
    const setup = member.setup!;
    const id = member.dam.id;
    const crestElevM = Math.min(setup.crestElevM, levelM);
    const bedElevM = crestElevM - setup.heightM;
    const fill: PondFill = {
      order: new Int32Array(0),
      joinM: new Float64Array(0),
      cumAreaM2: new Float64Array(0),
      cumAreaZ: new Float64Array(0),
      zRefM: bedElevM,
      waterLevelM: levelM,
      limitedBy: 'crest',
      escapeKind: null,
      escapeLevelM: Infinity,
      escapeCell: -1,
      escapePassCell: -1,
      topLevelM: levelM,
      crestCells: setup.crestCells,
      crestElevM,
      visitedCount: 0,
    };
    member.setup = { ...setup, holdsWater: false, crestElevM, bedElevM };
    member.fill = fill;
    this.settled.add(fill);
    const r = member.result;
    const own = r.warnings;
    for (let k = warnings.length - 1; k >= 0; k--) {
      const w = warnings[k]!;
      if (w.damId !== id || !FILL_LIMIT_CODES.has(w.code)) continue;
      const at = own.indexOf(w.message.replace(`dam ${id}: `, ''));
      if (at >= 0) own.splice(at, 1);
      warnings.splice(k, 1);
    }
    Object.assign(r, {
      crest_elev_m: crestElevM,
      bed_elev_m: bedElevM,
      water_level_m: levelM,
      limited_by: 'crest',
      standalone_area_m2: 0,
      standalone_volume_m3: 0,
      stage_storage: [[levelM, 0, 0]],
      water_surface_check: 'drowned',
    } satisfies Partial<DamResult>);
    const message =
      `its crest stands in the water of dam ${holderId}'s pond: the DEM shows that water's surface (${levelM.toFixed(2)} m) on both sides of the crest where the channel crosses it, ` +
      `so the dam holds no water of its own today; its crest is at or below that surface (crest_elev_m is that bound) and its bed, under the water, is not in the DEM`;
    warnings.push({ code: 'crest-in-standing-water', damId: id, message: `dam ${id}: ${message}` });
    r.warnings.push(message);
  }

  /** Run-level warnings once every group is done (mask features no pond touched). */
  finish(): Warning[] {
    return this.source?.hasMask ? this.source.unusedMaskWarnings(this.usedLabels) : [];
  }

  private warnAbout(member: WaterMember, surface: WaterSurface, kept: number, warnings: Warning[]): void {
    const id = member.dam.id;
    const r = member.result;
    const add = (code: string, message: string): void => {
      const full = `dam ${id}: ${message}`;
      warnings.push({ code, damId: id, message: full });
      r.warnings.push(message);
    };
    const crest = member.setup!.crestElevM;
    const tol = waterToleranceM(this.params.water);
    if (surface.levelM > crest + tol) {
      add(
        'water-above-crest',
        `today's water surface (${surface.levelM.toFixed(2)} m) stands ${(surface.levelM - crest).toFixed(2)} m above the crest (${crest.toFixed(2)} m): the dam is overtopped, or its crest height is wrong (check height_m)`,
      );
    }
    if (surface.reachesEdge) {
      add('water-reaches-edge', `the water surface reaches the edge of the search box; its area and the water below it are a lower bound (raise --max-reach)`);
    }
    if (kept === 0) {
      add('water-shared', 'its water surface is part of a larger pond counted for another dam');
    }
  }
}
