/**
 * Matching dams between runs: by id, by crest proximity when ids differ
 * (jittered positions, shuffled ids), and the classing thresholds.
 */
import { describe, expect, it } from 'vitest';
import { changeReasons, DEFAULT_MATCH, greatCircleM, matchDams } from '../src/compare/match.js';
import type { RunDam } from '../src/compare/run-record.js';
import { createRng } from '../src/uncertainty/random.js';

const M_PER_DEG_LAT = (Math.PI / 180) * 6_371_008.8;

function dam(id: string, lon: number, lat: number, extra: Partial<RunDam> = {}): RunDam {
  return {
    id,
    status: 'confirmed',
    in_totals: true,
    estimated: true,
    height_m: 1,
    volume_m3: 100,
    area_m2: 300,
    standalone_volume_m3: 100,
    standalone_area_m2: 300,
    drowned_by: null,
    year: null,
    watershed: null,
    crest: { x: 0, y: 0, lon, lat },
    bands: null,
    ...extra,
  };
}

describe('great-circle distance', () => {
  it('gives 1/360 of the mean-sphere circumference for one degree along a meridian (2πR/360, R = 6 371 008.8 m, IUGG)', () => {
    expect(greatCircleM(10, 45, 10, 46)).toBeCloseTo((2 * Math.PI * 6_371_008.8) / 360, 6);
  });
  it('shrinks east–west distances by cos(latitude) (spherical geometry)', () => {
    const d = greatCircleM(10, 60, 10.001, 60);
    expect(d / (0.001 * M_PER_DEG_LAT * Math.cos((60 * Math.PI) / 180))).toBeCloseTo(1, 6);
  });
});

describe('matching by crest proximity with jittered ids', () => {
  // 200 dams 40 m apart along a winding line; the later survey maps each again
  // up to 4 m away in a random direction under a new, shuffled id.
  const rng = createRng(2024);
  const lat0 = 44.5;
  const cosLat = Math.cos((lat0 * Math.PI) / 180);
  const a: RunDam[] = [];
  const b: RunDam[] = [];
  const truth = new Map<string, string>();
  for (let k = 0; k < 200; k++) {
    const xM = 40 * k;
    const yM = 150 * Math.sin(k / 9);
    a.push(dam(`A${k}`, -110 + xM / (M_PER_DEG_LAT * cosLat), lat0 + yM / M_PER_DEG_LAT));
  }
  const order = a.map((_, k) => k);
  for (let k = order.length - 1; k > 0; k--) {
    const j = Math.floor(rng() * (k + 1));
    [order[k], order[j]] = [order[j]!, order[k]!];
  }
  for (const [n, k] of order.entries()) {
    const src = a[k]!;
    const r = 4 * Math.sqrt(rng());
    const th = 2 * Math.PI * rng();
    const id = `S${1000 + n * 7}`;
    b.push(dam(id, src.crest!.lon! + (r * Math.cos(th)) / (M_PER_DEG_LAT * cosLat), src.crest!.lat! + (r * Math.sin(th)) / M_PER_DEG_LAT));
    truth.set(id, src.id);
  }

  it('pairs every dam with its own earlier mapping', () => {
    const { matches } = matchDams(a, b, { sharedCrsUnitM: null });
    expect(matches).toHaveLength(200);
    for (const m of matches) {
      expect(m.by).toBe('proximity');
      expect(a[m.a!]!.id).toBe(truth.get(b[m.b!]!.id));
      expect(m.distanceM!).toBeLessThanOrEqual(4.0001);
      expect(m.change).toBe('persisting');
    }
  });

  it('finds nothing within a tolerance below the jitter of every dam', () => {
    const { matches } = matchDams(a, b, { sharedCrsUnitM: null }, { ...DEFAULT_MATCH, toleranceM: 0.001 });
    expect(matches.filter((m) => m.change === 'new')).toHaveLength(200);
    expect(matches.filter((m) => m.change === 'gone')).toHaveLength(200);
  });
});

describe('matching by id', () => {
  it('prefers ids, doubts an id whose crests lie far apart, and then matches by proximity', () => {
    const a = [dam('x', -110, 45), dam('y', -110.01, 45)];
    // x moved 500 m: the same id, not the same dam; y is the dam 3 m off under the id x2.
    const b = [dam('x', -110 + 500 / (M_PER_DEG_LAT * Math.cos((45 * Math.PI) / 180)), 45), dam('x2', -110.01, 45 + 3 / M_PER_DEG_LAT)];
    const { matches, notes } = matchDams(a, b, { sharedCrsUnitM: null });
    expect(matches.map((m) => [m.a, m.b, m.by, m.change])).toEqual([
      [null, 0, null, 'new'],
      [1, 1, 'proximity', 'persisting'],
      [0, null, null, 'gone'],
    ]);
    expect(notes.join(' ')).toMatch(/id x .* 500 m apart/);
  });

  it('matches by id alone when runs carry no crest location, and says so', () => {
    const a = [{ ...dam('p', 0, 0), crest: null }];
    const b = [{ ...dam('p', 0, 0), crest: null }, { ...dam('q', 0, 0), crest: null }];
    const { matches, notes } = matchDams(a, b, { sharedCrsUnitM: null });
    expect(matches.map((m) => [m.by, m.change])).toEqual([['id', 'persisting'], [null, 'new']]);
    expect(notes.join(' ')).toMatch(/no crest location/);
  });

  it('uses map distance in a shared projected CRS when lon/lat is missing', () => {
    const a = [{ ...dam('p', 0, 0), crest: { x: 1000, y: 2000, lon: null, lat: null } }];
    const b = [{ ...dam('q', 0, 0), crest: { x: 1006, y: 2008, lon: null, lat: null } }];
    const { matches } = matchDams(a, b, { sharedCrsUnitM: 1 });
    expect(matches[0]!.by).toBe('proximity');
    expect(matches[0]!.distanceM).toBe(10); // 6-8-10 right triangle
  });
});

describe('classing a matched dam', () => {
  const base = dam('d', 0, 0);
  it('calls a height change of 0.1 m or more a change, not less', () => {
    expect(changeReasons(base, { ...base, height_m: 1.1 })).toEqual(['height']);
    expect(changeReasons(base, { ...base, height_m: 1.09 })).toEqual([]);
  });
  it('calls a volume change of at least 10 % of the larger volume and 1 m³ a change', () => {
    expect(changeReasons(base, { ...base, volume_m3: 112 })).toEqual(['volume']); // 12 ≥ 11.2
    expect(changeReasons(base, { ...base, volume_m3: 111 })).toEqual([]); // 11 < 11.1
    expect(changeReasons(base, { ...base, volume_m3: 109 })).toEqual([]);
    const small = { ...base, volume_m3: 2 };
    expect(changeReasons(small, { ...small, volume_m3: 2.9 })).toEqual([]); // +45 % but under 1 m³
  });
  it('names status, totals and drowning changes', () => {
    expect(changeReasons(base, { ...base, status: 'breached', in_totals: true })).toEqual(['status']);
    expect(changeReasons(base, { ...base, in_totals: false })).toEqual(['in_totals']);
    expect(changeReasons(base, { ...base, volume_m3: 0, drowned_by: 'e' })).toEqual(['volume', 'drowned_by']);
  });
});
