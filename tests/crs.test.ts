import { describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.js';
import {
  WGS84,
  baseGeographic,
  cellMetrics,
  crsFromEpsg,
  makeTransform,
  parseCrsText,
  verticalUnitFromEpsg,
} from '../src/io/crs.js';
import {
  DEG_TO_RAD,
  WGS84_ELLIPSOID,
  meridianArcM,
  parallelRadiusM,
} from '../src/grid/geodesy.js';
import { FOOT_M, US_SURVEY_FOOT_M } from '../src/units.js';

/** Composite Simpson's rule: an integrator independent of the closed forms under test. */
function simpson(f: (x: number) => number, a: number, b: number, n: number): number {
  const h = (b - a) / n;
  let s = f(a) + f(b);
  for (let i = 1; i < n; i++) s += (i % 2 === 1 ? 4 : 2) * f(a + i * h);
  return (s * h) / 3;
}

const { aM: A, f: F } = WGS84_ELLIPSOID;
const E2 = F * (2 - F);
/** Meridian radius of curvature M(φ) and prime-vertical radius N(φ), the textbook definitions. */
const M = (phi: number): number => (A * (1 - E2)) / Math.pow(1 - E2 * Math.sin(phi) ** 2, 1.5);
const N = (phi: number): number => A / Math.sqrt(1 - E2 * Math.sin(phi) ** 2);
/** Area of a cell by numerical integration of the ellipsoid area element M·N·cosφ dφ dλ. */
const integratedArea = (lat1Deg: number, lat2Deg: number, dLonDeg: number): number =>
  dLonDeg * DEG_TO_RAD * simpson((p) => M(p) * N(p) * Math.cos(p), lat1Deg * DEG_TO_RAD, lat2Deg * DEG_TO_RAD, 2000);

describe('EPSG registry and CRS text', () => {
  it('reads projected, geographic and vertical CRSs with their units', () => {
    const utm = crsFromEpsg(32611);
    expect(utm).toMatchObject({ epsg: 32611, name: 'WGS 84 / UTM zone 11N', geographic: false, linearUnit: 'metre' });
    expect(utm.proj4).not.toContain('+type=crs');
    expect(crsFromEpsg(2927).linearUnit).toBe('us-survey-foot');
    expect(crsFromEpsg(2222).linearUnit).toBe('foot');
    expect(crsFromEpsg(4269)).toMatchObject({ geographic: true, linearUnit: null });
    expect(verticalUnitFromEpsg(6360)).toBe('us-survey-foot'); // NAVD88 height (ftUS)
    expect(verticalUnitFromEpsg(5703)).toBe('metre'); // NAVD88 height
    expect(verticalUnitFromEpsg(32611)).toBeNull();
  });

  it('rejects unknown codes and non-horizontal CRSs with the fix in the message', () => {
    expect(() => crsFromEpsg(999999)).toThrow(InputError);
    expect(() => crsFromEpsg(999999)).toThrow(/EPSG:999999.*--dem-crs EPSG:NNNN/);
    expect(() => crsFromEpsg(5703)).toThrow(/VERTCRS/);
  });

  it('parses EPSG:NNNN, NNNN and proj4 strings, naming the flag on errors', () => {
    expect(parseCrsText('EPSG:32611', '--dem-crs').epsg).toBe(32611);
    expect(parseCrsText(' epsg:2927 ', '--dams-crs').linearUnit).toBe('us-survey-foot');
    expect(parseCrsText('26910', '--dem-crs').epsg).toBe(26910);
    const custom = parseCrsText('+proj=utm +zone=11 +datum=WGS84 +units=us-ft', '--dem-crs');
    expect(custom).toMatchObject({ epsg: null, geographic: false, linearUnit: 'us-survey-foot' });
    expect(parseCrsText('+proj=tmerc +lon_0=-75 +to_meter=0.3048', '--dem-crs').linearUnit).toBe('foot');
    expect(parseCrsText('+proj=longlat +ellps=GRS80', '--dams-crs').geographic).toBe(true);
    expect(() => parseCrsText('EPSG:999999', '--dams-crs')).toThrow(/--dams-crs EPSG:999999/);
    expect(() => parseCrsText('UTM 11', '--dem-crs')).toThrow(/--dem-crs "UTM 11" is not a CRS/);
    expect(() => parseCrsText('+proj=utm +zone=11 +units=km', '--dem-crs')).toThrow(/linear unit "km"/);
  });
});

describe('projection worked examples', () => {
  it('IOGP Guidance Note 7-2, Transverse Mercator (EPSG:27700): 50°30′N 0°30′E → E 577274.99, N 69740.50 to 1 cm', () => {
    // IOGP Publication 373-7-2 (Geomatics Guidance Note 7, part 2), Transverse Mercator worked example.
    const bng = crsFromEpsg(27700);
    const forward = makeTransform(baseGeographic(bng), bng);
    const [e, n] = forward(0.5, 50.5);
    expect(Math.abs(e - 577274.99)).toBeLessThan(0.01);
    expect(Math.abs(n - 69740.5)).toBeLessThan(0.01);
    const [lon, lat] = makeTransform(bng, baseGeographic(bng))(e, n);
    expect(Math.abs(lon - 0.5)).toBeLessThan(1e-9);
    expect(Math.abs(lat - 50.5)).toBeLessThan(1e-9);
  });

  it('Snyder 1987 (USGS PP 1395) p. 269, ellipsoidal Transverse Mercator on Clarke 1866, to 0.1 m', () => {
    // φ = 40°30′N, λ = 73°30′W, φ0 = 0, λ0 = 75°W, k0 = 0.9996 → x = 127 106.5 m, y = 4 484 124.4 m.
    const tm = parseCrsText('+proj=tmerc +lat_0=0 +lon_0=-75 +k=0.9996 +x_0=0 +y_0=0 +ellps=clrk66 +units=m', '--dem-crs');
    const [x, y] = makeTransform(baseGeographic(tm), tm)(-73.5, 40.5);
    expect(Math.abs(x - 127106.5)).toBeLessThan(0.1);
    expect(Math.abs(y - 4484124.4)).toBeLessThan(0.1);
  });

  it('State Plane in US survey feet (EPSG:2927) agrees with PROJ and round-trips', () => {
    // Reference: PROJ 9 via `gdaltransform -s_srs EPSG:4152 -t_srs EPSG:2927`, computed once:
    // (-122.5, 46.5) → 1136822.54756257, 431825.423989559 ftUS.
    const wa = crsFromEpsg(2927);
    const geo = baseGeographic(wa);
    const [x, y] = makeTransform(geo, wa)(-122.5, 46.5);
    expect(Math.abs(x - 1136822.54756257)).toBeLessThan(1e-4);
    expect(Math.abs(y - 431825.423989559)).toBeLessThan(1e-4);
    const [lon, lat] = makeTransform(wa, geo)(x, y);
    expect(Math.abs(lon + 122.5)).toBeLessThan(1e-10);
    expect(Math.abs(lat - 46.5)).toBeLessThan(1e-10);
  });

  it('feet and metre variants of one zone differ by the unit factor', () => {
    // Arizona East: EPSG:2222 (international ft) and EPSG:26948 (m), same false easting 213 360 m.
    // PROJ (gdaltransform from EPSG:4269), computed once: (-110.5, 33.25) → 598097.484742567,
    // 818651.505924678 ft and 182300.113349534, 249524.979005842 m.
    const p = [-110.5, 33.25] as const;
    const azFt = crsFromEpsg(2222);
    const azM = crsFromEpsg(26948);
    const [xf, yf] = makeTransform(baseGeographic(azFt), azFt)(...p);
    const [xm, ym] = makeTransform(baseGeographic(azM), azM)(...p);
    expect(Math.abs(xf - 598097.484742567)).toBeLessThan(1e-4);
    expect(Math.abs(xm - 182300.113349534)).toBeLessThan(1e-4);
    expect(Math.abs(xf * FOOT_M - xm)).toBeLessThan(1e-9 * xm);
    expect(Math.abs(yf * FOOT_M - ym)).toBeLessThan(1e-9 * ym);
    // Washington South: EPSG:2927 (ftUS, false easting 1 640 416.667 ftUS = 500 000.0001016 m)
    // and EPSG:2856 (m, false easting 500 000 m): equal after the unit factor and that 0.1016 mm.
    const waFt = crsFromEpsg(2927);
    const waM = crsFromEpsg(2856);
    const [xu, yu] = makeTransform(baseGeographic(waFt), waFt)(-122.5, 46.5);
    const [xw, yw] = makeTransform(baseGeographic(waM), waM)(-122.5, 46.5);
    expect(Math.abs(yu * US_SURVEY_FOOT_M - yw)).toBeLessThan(1e-9 * yw);
    expect(Math.abs(xu * US_SURVEY_FOOT_M - 0.0001016 - xw)).toBeLessThan(1e-6);
  });

  it('transforms between datums without grids, and refuses ones that need a missing grid', () => {
    const [x, y] = makeTransform(WGS84, crsFromEpsg(32611))(-117, 0);
    expect(x).toBeCloseTo(500000, 6); // central meridian on the equator: false easting, by definition of UTM
    expect(y).toBeCloseTo(0, 6);
    const needsGrid = makeTransform(WGS84, crsFromEpsg(27700)); // building it is harmless
    expect(() => needsGrid(-1, 52)).toThrow(InputError);
    expect(() => needsGrid(-1, 52)).toThrow(/OSTN15_NTv2_OSGBtoETRS\.gsb.*--dams-crs EPSG:27700/);
  });
});

describe('cell metrics on the ellipsoid', () => {
  it('1° × 1° cell at the equator matches numerical integration of M·N·cosφ', () => {
    const m = cellMetrics(WGS84, { x0: 0, y0: 1, dx: 1, dy: -1 }, 0, 1);
    const area = m.cellAreaM2[0] as number;
    expect(Math.abs(area - integratedArea(0, 1, 1))).toBeLessThan(1e-9 * area);
    // ≈ 12 308.8 km² had been quoted from memory; the exact formula and the integration both give 12 308.46 km².
    expect(area / 1e6).toBeCloseTo(12308.46, 2);
    // Width at the row's centre (0.5°N): radius of the parallel from its definition N·cosφ.
    expect(m.cellWidthM[0]).toBeCloseTo(N(0.5 * DEG_TO_RAD) * Math.cos(0.5 * DEG_TO_RAD) * DEG_TO_RAD, 6);
    // Height: meridian arc 0–1°, integrated from M(φ).
    expect(Math.abs(m.cellHeightM - simpson(M, 0, DEG_TO_RAD, 2000))).toBeLessThan(1e-4);
  });

  it('a 1/3 arc-second cell at 45°N matches numerical integration', () => {
    const d = 1 / 10800;
    const m = cellMetrics(WGS84, { x0: -100, y0: 45 + d, dx: d, dy: -d }, 0, 1);
    const area = m.cellAreaM2[0] as number;
    expect(Math.abs(area - integratedArea(45, 45 + d, d))).toBeLessThan(1e-8 * area);
    expect(area).toBeGreaterThan(50); // about 7.3 m × 10.3 m
    expect(area).toBeLessThan(80);
  });

  it('global sums and lengths match published WGS 84 figures', () => {
    // Surface area 510 065 621.7 km² and authalic radius R2 = 6 371 007.1809 m (NIMA TR8350.2, table 3;
    // from memory). Quarter meridian 10 001 965.729 m and one degree of longitude at the equator
    // 111 319.491 m (common geodesy tables; from memory).
    const g = cellMetrics(WGS84, { x0: -180, y0: 90, dx: 1, dy: -1 }, 0, 180);
    let total = 0;
    for (const a of g.cellAreaM2) total += 360 * a;
    expect(Math.abs(total / 1e6 - 510065621.7)).toBeLessThan(0.1);
    expect(Math.sqrt(total / (4 * Math.PI))).toBeCloseTo(6371007.1809, 3);
    expect(meridianArcM(Math.PI / 2)).toBeCloseTo(10001965.729, 3);
    expect(parallelRadiusM(0) * DEG_TO_RAD).toBeCloseTo(111319.491, 3);
  });

  it('window rows use their offset; projected metrics scale with the unit', () => {
    const t = { x0: -118.5, y0: 46.25, dx: 1 / 10800, dy: -1 / 10800 };
    const all = cellMetrics(crsFromEpsg(4269), t, 0, 15);
    const part = cellMetrics(crsFromEpsg(4269), t, 10, 3);
    expect(part.cellAreaM2[0]).toBe(all.cellAreaM2[10]);
    expect(part.cellWidthM[2]).toBe(all.cellWidthM[12]);
    expect(all.cellAreaM2[14] as number).toBeGreaterThan(all.cellAreaM2[0] as number); // wider cells further south
    const ft = cellMetrics(crsFromEpsg(2927), { x0: 0, y0: 0, dx: 3, dy: -3 }, 0, 2);
    expect(ft.cellWidthM[1]).toBe(3 * US_SURVEY_FOOT_M);
    expect(ft.cellHeightM).toBe(3 * US_SURVEY_FOOT_M);
    expect(ft.cellAreaM2[0]).toBeCloseTo(9 * US_SURVEY_FOOT_M * US_SURVEY_FOOT_M, 14);
  });
});
