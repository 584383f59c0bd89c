/**
 * Colours and marks of the comparison page, in one place so the page can take
 * the report's design when it has one. Colours are from the Okabe–Ito
 * palette (Okabe & Ito 2008, "Color Universal Design"), which stays
 * distinguishable under the common colour-vision deficiencies; each dam class
 * also has its own marker shape, so nothing depends on colour alone.
 */
import type { DamChangeClass } from '../match.js';

/** Cell classes of the change map (change-map.ts codes 0…5) as RGBA; dry is transparent. */
export const CLASS_RGBA: readonly (readonly [number, number, number, number])[] = [
  [0, 0, 0, 0], // dry
  [0, 114, 178, 255], // new water: blue
  [213, 94, 0, 255], // water gone: vermillion
  [86, 180, 233, 255], // deeper: sky blue
  [230, 159, 0, 255], // shallower: orange
  [95, 110, 125, 255], // wet, no detectable change: slate grey (reads on the relief)
];

/** Drawing priority of the classes when several cells share a map pixel (higher wins). */
export const CLASS_PRIORITY: readonly number[] = [0, 6, 5, 4, 3, 2];

/** Colour and marker of each dam class. */
export const DAM_MARK: Record<DamChangeClass, { colour: string; shape: 'triangle' | 'cross' | 'diamond' | 'circle'; label: string }> = {
  new: { colour: '#0072B2', shape: 'triangle', label: 'new' },
  gone: { colour: '#D55E00', shape: 'cross', label: 'gone' },
  changed: { colour: '#E69F00', shape: 'diamond', label: 'changed' },
  persisting: { colour: '#555555', shape: 'circle', label: 'persisting' },
};

/** Bar colours of the charts: increase, decrease, neutral, and the proposed scenario (the report's colour for proposed structures). */
export const BAR = { up: '#0072B2', down: '#D55E00', neutral: '#6b7b8c', proposed: '#CC79A7' } as const;

/** CSS hex of an RGBA class colour. */
export function hexOf(rgba: readonly [number, number, number, number]): string {
  return '#' + [rgba[0], rgba[1], rgba[2]].map((v) => v.toString(16).padStart(2, '0')).join('');
}
