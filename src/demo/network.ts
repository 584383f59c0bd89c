/**
 * Turns valley axes into built channels: tributaries take their mouth
 * elevation from the parent's floor at the junction, parents fade their
 * meanders where tributaries join, and the band width that makes carving in
 * stretches exact follows from the shared profile.
 */
import { buildChannel, type Channel, type ChannelSpec, type SideProfile, type TopSurface } from './channel.js';
import type { EnvelopeParams } from './envelope.js';

/** A valley axis with where it joins its parent (sample index on the parent), parents before children. */
export interface NetworkEntry {
  spec: ChannelSpec;
  /** Sample of the parent at the junction; null for the trunk. */
  parentSample: number | null;
}

/** Builds every channel; `outletBedM` is the trunk's floor at its mouth. Entries must list parents first. */
export function buildNetwork(
  entries: readonly NetworkEntry[],
  outletBedM: number,
  side: SideProfile,
  top: TopSurface,
): Channel[] {
  const byId = new Map<string, Channel>();
  const out: Channel[] = [];
  for (const entry of entries) {
    const { spec } = entry;
    const junctions = entries
      .filter((e) => e.spec.parentId === spec.id && e.parentSample !== null)
      .map((e) => e.parentSample ?? 0);
    let mouthBedM = outletBedM;
    if (spec.parentId !== null) {
      const parent = byId.get(spec.parentId);
      if (!parent || entry.parentSample === null) throw new Error(`valley ${spec.id} is listed before its parent`);
      mouthBedM = parent.bedM[entry.parentSample]!;
    }
    const ch = buildChannel(spec, mouthBedM, junctions, side, top);
    byId.set(spec.id, ch);
    out.push(ch);
  }
  return out;
}

/** Half-width of the band around a valley beyond which the upland envelope is always lower than the valley's surface, metres. */
export function carveBandM(channels: readonly Channel[], side: SideProfile, envelope: EnvelopeParams): number {
  let maxHalfFloor = 0;
  let maxRun = 0;
  for (const ch of channels) {
    for (let k = 0; k < ch.n; k++) {
      maxHalfFloor = Math.max(maxHalfFloor, ch.halfFloorM[k]!);
      maxRun = Math.max(maxRun, ch.sideRunM[k]!);
    }
  }
  const toTop = maxHalfFloor + side.toeM + maxRun + side.shoulderM;
  // The envelope is blurred and interpolated: allow it to sit this much below the valley sides' top.
  const slackM = 5;
  const gap = envelope.headroomM + envelope.gradient * toTop + slackM;
  return toTop + gap / (side.uplandSlope - envelope.gradient);
}
