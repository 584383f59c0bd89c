/**
 * Collects what is wrong with a dam inventory, each problem with its place,
 * so the user sees all of them in one InputError instead of one per run.
 */
import { InputError } from '../errors.js';

/** Problems listed in full before the message says "and N more". */
export const MAX_LISTED_PROBLEMS = 20;

/** Where a problem sits in the inventory file. */
export interface DamPlace {
  /** 1-based feature (GeoJSON) or data row (CSV) number. */
  feature: number;
  /** 1-based line of the file where the CSV record starts. */
  line?: number;
  /** The dam's id when it has one. */
  id?: string | null;
  /** The property or column concerned. */
  property?: string;
}

/** Describes a place for a message: `feature 3 (line 4, id "dam-a")`, property `status`. */
export function describePlace(place: DamPlace): string {
  const details: string[] = [];
  if (place.line !== undefined) details.push(`line ${place.line}`);
  if (place.id !== undefined && place.id !== null) details.push(`id "${place.id}"`);
  let text = `feature ${place.feature}`;
  if (details.length > 0) text += ` (${details.join(', ')})`;
  if (place.property !== undefined) text += `, ${place.property}`;
  return text;
}

/** A growing list of located problems for one file. */
export class DamProblems {
  private readonly items: string[] = [];

  constructor(
    /** The inventory file as the user named it. */
    readonly file: string,
  ) {}

  /** Records a problem; `message` says what is wrong and how to fix it. */
  add(place: DamPlace | null, message: string): void {
    this.items.push(place === null ? message : `${describePlace(place)}: ${message}`);
  }

  /** Number of problems recorded so far. */
  get count(): number {
    return this.items.length;
  }

  /** Throws one InputError listing every problem (the first MAX_LISTED_PROBLEMS, then a count), if there are any. */
  throwIfAny(): void {
    if (this.items.length === 0) return;
    const n = this.items.length;
    const listed = this.items.slice(0, MAX_LISTED_PROBLEMS).map((p) => `  - ${p}`);
    if (n > MAX_LISTED_PROBLEMS) listed.push(`  and ${n - MAX_LISTED_PROBLEMS} more`);
    const head = `${this.file}: ${n} problem${n === 1 ? '' : 's'} in the dam inventory; fix ${n === 1 ? 'it' : 'them'} and run again:`;
    throw new InputError([head, ...listed].join('\n'));
  }
}
