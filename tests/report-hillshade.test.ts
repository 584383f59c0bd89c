/**
 * The report's hillshade against the closed form: on a tilted plane, Horn's
 * (1981) finite differences give the plane's exact slope and aspect, so each
 * interior cell's illumination must equal
 *   cos(zenith)·cos(slope) + sin(zenith)·sin(slope)·cos(azimuth − aspect)
 * (the standard hillshade formula; Burrough & McDonnell 1998; GDAL gdaldem
 * hillshade uses the same with azimuth 315°, altitude 45° by default),
 * slope and aspect computed here with trigonometry from the plane's gradient.
 */
import { describe, expect, it } from 'vitest';
import { hornHillshade } from '../src/report/hillshade.js';

const DEG = Math.PI / 180;

/** z = z0 + gx·east + gy·north on a north-up grid; row 0 is the northern edge. */
function plane(width: number, height: number, cellX: number, cellY: number, gx: number, gy: number): Float32Array {
  const z = new Float32Array(width * height);
  for (let row = 0; row < height; row++) {
    const north = (height - row) * cellY;
    for (let col = 0; col < width; col++) z[row * width + col] = 50 + gx * col * cellX + gy * north;
  }
  return z;
}

/** The closed form, slope from the gradient's size and aspect as the compass bearing of steepest descent. */
function closedForm(gx: number, gy: number, azimuthDeg: number, altitudeDeg: number): number {
  const slope = Math.atan(Math.hypot(gx, gy));
  const aspect = Math.atan2(-gx, -gy); // bearing of the downhill direction (east component, north component)
  const zenith = (90 - altitudeDeg) * DEG;
  const v = Math.cos(zenith) * Math.cos(slope) + Math.sin(zenith) * Math.sin(slope) * Math.cos(azimuthDeg * DEG - aspect);
  return Math.max(0, v);
}

describe('Horn hillshade (sun azimuth 315°, altitude 45°)', () => {
  it('gives cos(45°) on flat ground: 180 of 255, the usual flat-terrain grey (GDAL, ESRI)', () => {
    const out = hornHillshade({ width: 5, height: 5, z: new Float32Array(25).fill(12), cellWidthM: 1, cellHeightM: 1 });
    for (const v of out) expect(v).toBeCloseTo(Math.SQRT1_2, 6);
    expect(Math.round(255 * out[12]!)).toBe(180);
  });

  const cases: [string, number, number, number, number][] = [
    // name, gradient east, gradient north, cell x, cell y
    ['facing north-west (toward the sun), 45° slope', 1 / Math.SQRT2, -1 / Math.SQRT2, 1, 1],
    ['facing south-east (away from the sun), gentle', -0.05, 0.08, 2, 2],
    ['facing east, steep, rectangular cells', -0.7, 0, 0.5, 1.5],
    ['facing south, shallow', 0, 0.02, 1, 1],
    ['facing north-east', -0.3, -0.4, 3, 3],
    ['facing west, very steep', 2.5, 0, 1, 1],
  ];
  for (const [name, gx, gy, cx, cy] of cases) {
    it(`equals the closed form on a tilted plane ${name}`, () => {
      const w = 9;
      const h = 7;
      const out = hornHillshade({ width: w, height: h, z: plane(w, h, cx, cy, gx, gy), cellWidthM: cx, cellHeightM: cy });
      const expected = closedForm(gx, gy, 315, 45);
      for (let row = 1; row < h - 1; row++) {
        for (let col = 1; col < w - 1; col++) expect(out[row * w + col]!).toBeCloseTo(expected, 5);
      }
    });
  }

  it('is 1 on a 45° slope facing the sun and 0 on a slope steeper than the sun facing away', () => {
    const toward = hornHillshade({ width: 5, height: 5, z: plane(5, 5, 1, 1, 1 / Math.SQRT2, -1 / Math.SQRT2), cellWidthM: 1, cellHeightM: 1 });
    expect(toward[12]!).toBeCloseTo(1, 5);
    const away = hornHillshade({ width: 5, height: 5, z: plane(5, 5, 1, 1, -2, 2), cellWidthM: 1, cellHeightM: 1 });
    expect(away[12]!).toBe(0);
  });

  it('takes the other sun positions too (azimuth 135°, altitude 30°)', () => {
    const gx = 0.4;
    const gy = 0.25;
    const out = hornHillshade({ width: 5, height: 5, z: plane(5, 5, 1, 1, gx, gy), cellWidthM: 1, cellHeightM: 1 }, { azimuthDeg: 135, altitudeDeg: 30 });
    expect(out[12]!).toBeCloseTo(closedForm(gx, gy, 135, 30), 5);
  });

  it('uses each row\'s own cell width (geographic grids)', () => {
    // A metric plane sampled with a cell width that changes from row to row, as on a lon/lat grid;
    // east distances are measured from the middle column (the meridian the test cell sits on).
    const w = 7;
    const h = 7;
    const widths = new Float64Array(h);
    for (let r = 0; r < h; r++) widths[r] = 0.8 + 0.05 * r;
    const gx = 0.3;
    const gy = -0.1;
    const z = new Float32Array(w * h);
    for (let row = 0; row < h; row++) for (let col = 0; col < w; col++) z[row * w + col] = gx * (col - 3) * widths[row]! + gy * (h - row);
    // Horn weighs the east differences of the rows above and below with the centre row's;
    // with widths changing linearly the weighted mean is the centre row's own.
    const out = hornHillshade({ width: w, height: h, z, cellWidthM: widths, cellHeightM: 1 });
    const row = 3;
    // East difference per row k: 2·gx·widths[k]; Horn's weighted sum over rows 2,3,4 divided by 8·widths[3].
    const p = (2 * gx * widths[2]! + 4 * gx * widths[3]! + 2 * gx * widths[4]!) / (8 * widths[3]!);
    expect(out[row * w + 3]!).toBeCloseTo(closedForm(p, gy, 315, 45), 6);
    expect(p).toBeCloseTo(gx, 9); // widths change linearly, so the weighted mean is the row's own
  });

  it('gives NaN on NoData and fills missing neighbours with the centre value', () => {
    const w = 5;
    const z = plane(w, 5, 1, 1, 0.2, 0.1);
    z[12] = NaN;
    const out = hornHillshade({ width: w, height: 5, z, cellWidthM: 1, cellHeightM: 1 });
    expect(Number.isNaN(out[12]!)).toBe(true);
    // A cell next to the hole still sees a slope, not garbage: within [0, 1].
    expect(out[11]!).toBeGreaterThanOrEqual(0);
    expect(out[11]!).toBeLessThanOrEqual(1);
    expect(Number.isNaN(out[6]!)).toBe(false);
  });
});
