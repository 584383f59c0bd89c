import { describe, expect, it } from 'vitest';
import {
  ACRE_FOOT_M3,
  ACRE_M2,
  FOOT_M,
  HECTARE_M2,
  US_SURVEY_FOOT_M,
  m2ToAcres,
  m3ToAcreFeet,
  metresPer,
  parseLinearUnit,
} from '../src/units.js';

describe('unit constants', () => {
  it('feet: international 0.3048 m and US survey 1200/3937 m, both exact', () => {
    // NIST SP 811 (2008), Appendix B.8: foot = 3.048 E-01 m exactly; US survey foot = 1200/3937 m
    // (definition restated in Federal Register 85 FR 62698, 2020).
    expect(FOOT_M).toBe(0.3048);
    expect(US_SURVEY_FOOT_M).toBe(1200 / 3937);
    // NIST SP 811 B.8 rounds the survey foot to 3.048 006 E-01 m.
    expect(US_SURVEY_FOOT_M).toBeCloseTo(0.3048006, 7);
    // The two differ by 2 parts per million (85 FR 62698).
    expect((US_SURVEY_FOOT_M - FOOT_M) / FOOT_M).toBeCloseTo(2e-6, 8);
  });

  it('acre 4046.8564224 m² and acre-foot 1233.48183754752 m³ (international foot)', () => {
    // 43 560 ft² with the international foot (NIST SP 811; 85 FR 62698 retires the survey-foot acre).
    expect(ACRE_M2).toBeCloseTo(4046.8564224, 9);
    expect(ACRE_FOOT_M3).toBeCloseTo(1233.48183754752, 9);
    expect(m2ToAcres(4046.8564224)).toBeCloseTo(1, 12);
    expect(m3ToAcreFeet(1233.48183754752 * 250)).toBeCloseTo(250, 9);
    // NIST SP 811 B.8 lists the survey-foot acre as 4.046 873 E+03 m² and the survey-foot
    // acre-foot as 1.233 489 E+03 m³: the survey foot gives those, our constants do not.
    expect(43560 * US_SURVEY_FOOT_M ** 2).toBeCloseTo(4046.873, 3);
    expect(43560 * US_SURVEY_FOOT_M ** 3).toBeCloseTo(1233.489, 3);
    expect(Math.abs(ACRE_M2 - 4046.873)).toBeGreaterThan(0.01);
    expect(HECTARE_M2).toBe(10000);
  });

  it('metresPer follows the constants', () => {
    expect(metresPer('metre')).toBe(1);
    expect(metresPer('foot')).toBe(0.3048);
    expect(metresPer('us-survey-foot')).toBe(1200 / 3937);
  });
});

describe('parseLinearUnit', () => {
  it('accepts the usual spellings', () => {
    for (const t of ['m', 'metre', 'Meters', ' METRES ']) expect(parseLinearUnit(t)).toBe('metre');
    for (const t of ['us-ft', 'ftUS', 'US survey foot', 'us_survey_feet', 'usft']) {
      expect(parseLinearUnit(t)).toBe('us-survey-foot');
    }
    for (const t of ['ft', 'Foot', 'feet', 'international foot', 'intl-ft']) expect(parseLinearUnit(t)).toBe('foot');
  });

  it('returns null for anything else', () => {
    for (const t of ['', 'km', 'yard', 'furlong', 'm2', 'feets']) expect(parseLinearUnit(t)).toBeNull();
  });
});
