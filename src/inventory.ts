/**
 * The dam inventory as the pipeline sees it: plain records, already in the
 * DEM's CRS. Readers in io/ build these; ponds/ consumes them.
 */

/** Status vocabulary of a dam record. */
export const DAM_STATUSES = ['confirmed', 'candidate', 'proposed', 'breached'] as const;
export type DamStatus = (typeof DAM_STATUSES)[number];

/** Crest geometry in the DEM's CRS map units. */
export type DamGeometry =
  | { kind: 'line'; /** One or more polylines, each [[x, y], ...] with ≥ 2 vertices. */ lines: [number, number][][] }
  | { kind: 'point'; x: number; y: number };

export interface DamInput {
  /** From the `id` property, else generated (`dam-<n>` from the feature's position, stable across runs). */
  id: string;
  /** Position of the feature in the input file (0-based). */
  index: number;
  geometry: DamGeometry;
  /** Measured crest height above the bed, metres (`height_m`), or null. */
  heightM: number | null;
  status: DamStatus;
  /** Detector or reviewer confidence 0–1, or null when not given. */
  confidence: number | null;
  /** Survey or construction year, or null. */
  year: number | null;
  /** Which side of the line, as drawn, is upstream (`upstream` property), or null to infer from the terrain. */
  upstream: 'left' | 'right' | null;
  /** Every other property of the feature, carried through to outputs untouched. */
  extra: Record<string, unknown>;
}
