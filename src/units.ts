/**
 * Unit constants: the one place each is defined.
 *
 * Sources: NIST Special Publication 811 (2008), Appendix B; Federal Register
 * 85 FR 62698 (2020) for the US survey foot (1200/3937 m exactly).
 */

/** International foot in metres (exact, NIST SP 811). */
export const FOOT_M = 0.3048;
/** US survey foot in metres (exact, 1200/3937; 85 FR 62698). */
export const US_SURVEY_FOOT_M = 1200 / 3937;
/** Acre in square metres: 43 560 international square feet (NIST SP 811). */
export const ACRE_M2 = 43560 * FOOT_M * FOOT_M; // 4046.8564224
/** Acre-foot in cubic metres: one acre one international foot deep (NIST SP 811). */
export const ACRE_FOOT_M3 = ACRE_M2 * FOOT_M; // 1233.48183754752
/** Hectare in square metres. */
export const HECTARE_M2 = 10000;
/** Statute mile in metres: 5280 international feet (NIST SP 811). */
export const MILE_M = 5280 * FOOT_M; // 1609.344

/** Linear units a DEM or a dam file may use. */
export type LinearUnit = 'metre' | 'us-survey-foot' | 'foot';

/** Metres per one of the given linear unit. */
export function metresPer(unit: LinearUnit): number {
  switch (unit) {
    case 'metre':
      return 1;
    case 'us-survey-foot':
      return US_SURVEY_FOOT_M;
    case 'foot':
      return FOOT_M;
  }
}

/** Parses a unit name as a user may write it on the command line. Returns null when unknown. */
export function parseLinearUnit(text: string): LinearUnit | null {
  const t = text.trim().toLowerCase().replace(/[\s_]+/g, '-');
  if (['m', 'metre', 'metres', 'meter', 'meters'].includes(t)) return 'metre';
  if (['us-ft', 'ftus', 'us-survey-foot', 'us-survey-feet', 'survey-foot', 'survey-feet', 'usft'].includes(t)) {
    return 'us-survey-foot';
  }
  if (['ft', 'foot', 'feet', 'international-foot', 'international-feet', 'intl-ft'].includes(t)) return 'foot';
  return null;
}

/** Square metres to acres. */
export const m2ToAcres = (areaM2: number): number => areaM2 / ACRE_M2;
/** Square metres to hectares. */
export const m2ToHectares = (areaM2: number): number => areaM2 / HECTARE_M2;
/** Cubic metres to acre-feet. */
export const m3ToAcreFeet = (volumeM3: number): number => volumeM3 / ACRE_FOOT_M3;
/** Metres to statute miles. */
export const mToMiles = (lengthM: number): number => lengthM / MILE_M;
/** Metres to international feet. */
export const mToFeet = (lengthM: number): number => lengthM / FOOT_M;
