/**
 * Bands of a change: percentiles, paired against independent draws,
 * quadrature, the LoD95 formula, the draws.csv reader and the change map.
 */
import { describe, expect, it } from 'vitest';
import { bandOf, bandWidth, excludesZero, independentDifferenceBand, pairedDifferenceBand, quadratureDifferenceBand, quantileSorted } from '../src/compare/bands.js';
import { changeMap, type DepthRaster } from '../src/compare/change-map.js';
import { drawSeries } from '../src/compare/draws.js';
import { lod95M } from '../src/compare/lod.js';
import { normalisedOf } from '../src/compare/normalise.js';
import { parseRunSummary } from '../src/compare/run-record.js';
import { InputError } from '../src/errors.js';
import { parseDrawsCsv } from '../src/io/compare-inputs.js';
import { createRng, normal } from '../src/uncertainty/random.js';

describe('percentiles', () => {
  it('interpolate linearly between order statistics (NumPy percentile default: 1…10 → p05 1.45, p50 5.5, p95 9.55)', () => {
    const v = Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
    expect(quantileSorted(v, 0.05)).toBeCloseTo(1.45, 12);
    expect(quantileSorted(v, 0.5)).toBeCloseTo(5.5, 12);
    expect(quantileSorted(v, 0.95)).toBeCloseTo(9.55, 12);
    expect(bandOf(Float64Array.from([10, 1, 7, 3])).mean).toBe(5.25);
  });
});

describe('paired and independent bands', () => {
  // Two runs share a DEM error e_k (σ 50 m³) and each has its own error (σ 5 m³).
  const rng = createRng(11);
  const n = 1000;
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const shared = 50 * normal(rng);
    a[k] = 1000 + shared + 5 * normal(rng);
    b[k] = 1030 + shared + 5 * normal(rng);
  }

  it('pairing cancels the shared error: its band is much narrower than the independent one', () => {
    const paired = pairedDifferenceBand(a, b);
    const indep = independentDifferenceBand(a, b);
    expect(bandWidth(paired)).toBeLessThan(bandWidth(indep) / 5);
    // Normal theory: B − A paired ~ N(30, 5√2); 90 % band 30 ± 1.645·7.07 = 18.4 … 41.6.
    expect(paired.p05).toBeGreaterThan(18.4 - 2);
    expect(paired.p05).toBeLessThan(18.4 + 2);
    expect(paired.p95).toBeGreaterThan(41.6 - 2);
    expect(paired.p95).toBeLessThan(41.6 + 2);
    expect(excludesZero(paired)).toBe(true);
    // Independent: N(30, √(2·(50² + 5²)) = 71.1); the band holds zero.
    expect(bandWidth(indep) / (2 * 1.645 * 71.06)).toBeGreaterThan(0.9);
    expect(bandWidth(indep) / (2 * 1.645 * 71.06)).toBeLessThan(1.1);
    expect(excludesZero(indep)).toBe(false);
  });

  it('takes every pair of draws when independent, so a constant run gives the other run’s band shifted', () => {
    const constant = new Float64Array(50).fill(100);
    const other = Float64Array.from({ length: 40 }, (_, k) => k);
    const band = independentDifferenceBand(constant, other);
    const direct = bandOf(other);
    expect(band.p05).toBeCloseTo(direct.p05 - 100, 9);
    expect(band.p95).toBeCloseTo(direct.p95 - 100, 9);
  });

  it('combines half-widths in quadrature when only the runs’ bands are known', () => {
    const q = quadratureDifferenceBand({ p05: 90, p50: 100, p95: 130, mean: 105 }, { p05: 130, p50: 150, p95: 160, mean: 148 });
    expect(q.p50).toBe(50);
    expect(q.p05).toBeCloseTo(50 - Math.hypot(20, 30), 12); // B's lower 20, A's upper 30
    expect(q.p95).toBeCloseTo(50 + Math.hypot(10, 10), 12); // B's upper 10, A's lower 10
    expect(q.mean).toBe(43);
  });
});

describe('LoD95 of a DEM difference', () => {
  it('is 1.96·√(σ₁² + σ₂²) (Lane et al. 2003; Brasington et al. 2003)', () => {
    // σ₁ = 0.10 m, σ₂ = 0.15 m: √(0.0325) = 0.180278 m, × 1.96 = 0.353344 m (by hand).
    expect(lod95M(0.1, 0.15)).toBeCloseTo(0.353344, 6);
    // Two QL2 DEMs (USGS Lidar Base Specification, 10 cm RMSEz): 1.96·0.1·√2 = 0.277186 m.
    expect(lod95M(0.1, 0.1)).toBeCloseTo(0.277186, 6);
    expect(lod95M(0, 0)).toBe(0);
  });
});

describe('draws.csv', () => {
  it('reads totals, watersheds and scenarios by draw, in the documented format', () => {
    const t = parseDrawsCsv(
      'draw,scope,id,storage_m3,inundated_area_m2\n1,total,,12,120\n0,total,,10,100\n0,watershed,w1,4,40\n1,watershed,w1,5,\n0,scenario,with_proposed,15,150\n1,scenario,with_proposed,16,160\n',
      'draws.csv',
    );
    expect(t.count).toBe(2);
    expect(Array.from(drawSeries(t, 'total', '', 'storage_m3')!)).toEqual([10, 12]);
    expect(Array.from(drawSeries(t, 'scenario', 'with_proposed', 'inundated_area_m2')!)).toEqual([150, 160]);
    expect(drawSeries(t, 'watershed', 'w1', 'inundated_area_m2')).toBeNull(); // draw 1 lacks it
    expect(drawSeries(t, 'total', '', 'influence_area_m2')).toBeNull();
  });
  it('reads a totals-only file without scope and id columns', () => {
    const t = parseDrawsCsv('draw,storage_m3\n0,1\n1,2\n2,3\n', 'draws.csv');
    expect(Array.from(drawSeries(t, 'total', '', 'storage_m3')!)).toEqual([1, 2, 3]);
  });
  it('names the file, line and fix for bad rows', () => {
    expect(() => parseDrawsCsv('storage_m3\n1\n', 'run/draws.csv')).toThrow(/run\/draws.csv: no "draw" column/);
    expect(() => parseDrawsCsv('draw,storage_m3\nx,1\n', 'run/draws.csv')).toThrow(InputError);
    expect(() => parseDrawsCsv('draw,scope,storage_m3\n0,valley,1\n', 'run/draws.csv')).toThrow(/line 2: scope "valley"/);
  });
});

describe('change map', () => {
  const frame = (x0: number, y0: number, w: number, h: number, data: number[]): DepthRaster => ({
    width: w,
    height: h,
    transform: { x0, y0, dx: 1, dy: -1 },
    crsKey: 'utm',
    cellAreaM2: new Float64Array(h).fill(1),
    data: Float32Array.from(data),
  });

  it('aligns rasters a whole number of cells apart and classes every cell', () => {
    // A: 2×2 at origin (0, 2); B: 2×2 one cell east. NaN is dry.
    const a = frame(0, 2, 2, 2, [0.5, 0.5, NaN, 1.0]);
    const b = frame(1, 2, 2, 2, [0.9, 0.2, 0.5, NaN]);
    const m = changeMap(a, b, 0.3);
    if (!m.available) throw new Error(m.note);
    expect([m.raster.width, m.raster.height]).toEqual([3, 2]);
    // Union cells: (c0,r0) A 0.5 → gone; (c1,r0) A 0.5, B 0.9: +0.4 deeper; (c2,r0) B 0.2 new but under 0.3: no detectable change;
    // (c1,r1) A 1.0, B 0.5: −0.5 shallower; (c2,r1) dry.
    expect(Array.from(m.raster.classes)).toEqual([2, 3, 5, 0, 4, 0]);
    expect(m.figures.storage_change_m3).toBeCloseTo(-0.5 + 0.4 + 0.2 - 0.5, 6);
    expect(m.figures.storage_change_above_threshold_m3).toBeCloseTo(-0.5 + 0.4 - 0.5, 6);
    expect(m.figures.inundated_area_change_m2).toBe(0);
  });

  it('says why there is no map for grids that do not align', () => {
    const a = frame(0, 2, 2, 2, [1, 1, 1, 1]);
    const b = frame(0.5, 2, 2, 2, [1, 1, 1, 1]);
    const m = changeMap(a, b, 0);
    expect(m.available).toBe(false);
    if (!m.available) expect(m.note).toMatch(/not aligned/);
    const other = changeMap(a, { ...b, transform: a.transform, crsKey: 'lonlat' }, 0);
    expect(!other.available && other.note).toMatch(/different CRSs/);
  });
});

describe('normalised figures and older runs', () => {
  it('divides by km of stream and km² of valley bottom', () => {
    const n = normalisedOf({ storageM3: 5000, damCount: 12, streamLengthM: 2500, valleyBottomAreaM2: 400_000, influenceAreaM2: 100_000 });
    expect(n.storage_per_stream_km_m3).toBe(2000);
    expect(n.storage_per_valley_bottom_km2_m3).toBe(12_500);
    expect(n.dams_per_stream_km).toBeCloseTo(4.8, 12);
    expect(n.valley_bottom_influenced_pct).toBe(25);
    const none = normalisedOf({ storageM3: 5000, damCount: 12, streamLengthM: null, valleyBottomAreaM2: null, influenceAreaM2: null });
    expect(none.storage_per_stream_km_m3).toBeNull();
    expect(none.valley_bottom_influenced_pct).toBeNull();
  });

  it('reads a summary without crest locations, scenarios, bands or watersheds, and refuses what is not a run', () => {
    const old = {
      tool: { name: 'pondage', version: '0.0.9' },
      inputs: [{ role: 'dem', path: 'dem.tif', sha256: 'ab' }],
      dem: { widthCells: 10, heightCells: 10, cellSizeX: 1, cellSizeY: 1, crsName: 'x', epsg: null, crsUnit: 'metre' },
      parameters: {},
      totals: { dam_count: 1, dams_in_totals: 1, storage_m3: 5, inundated_area_m2: 9 },
      dams: [{ id: 'd', status: 'confirmed', in_totals: true, estimated: true, height_m: 1, volume_m3: 5, area_m2: 9 }],
    };
    const r = parseRunSummary(old, 'old/summary.json', 'old', 'old');
    expect(r.dams[0]!.crest).toBeNull();
    expect(r.scenarios).toBeNull();
    expect(r.watersheds).toBeNull();
    expect(r.totals.bands).toBeNull();
    expect(r.dem.crsUnitM).toBe(1);
    expect(() => parseRunSummary({ tool: { name: 'other' } }, 'x/summary.json', 'x', 'x')).toThrow(/x\/summary.json: not a pondage run summary/);
  });
});
