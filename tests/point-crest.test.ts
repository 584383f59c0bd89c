import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { crestFromPoint, type PointCrest } from '../src/ponds/point-crest.js';
import { createRng, normal } from '../src/uncertainty/random.js';

// Analytic valleys, evaluated at cell centres. All expectations below are
// closed-form geometry of these surfaces, not values produced by the code.

const X0 = 600_000;
const Y0 = 4_300_000;

/** A grid of `size` × `size` cells of `cellM` metres whose elevation is f(x, y) at each cell centre. */
function gridOf(size: number, cellM: number, f: (x: number, y: number) => number, unitM = 1): Grid {
  const z = new Float32Array(size * size);
  const d = cellM / unitM;
  for (let r = 0; r < size; r++) {
    for (let c = 0; c < size; c++) {
      z[r * size + c] = f(X0 + (c + 0.5) * d, Y0 - (r + 0.5) * d);
    }
  }
  return makeGrid({ width: size, height: size, z, transform: { x0: X0, y0: Y0, dx: d, dy: -d }, unitM });
}

/**
 * A V-valley whose floor falls with slope `slope` in the direction `flowDeg`
 * (degrees clockwise from north, i.e. a compass bearing) and whose sides rise
 * 1 m per `m` m across. Returns the elevation and the across-axis offset.
 */
function vValley(opts: { cx: number; cy: number; flowDeg: number; slope: number; m: number; z0?: number; floorHalfWidthM?: number }) {
  const a = (opts.flowDeg * Math.PI) / 180;
  const fe = Math.sin(a); // downstream unit vector, east component
  const fn = Math.cos(a); // north component
  const half = opts.floorHalfWidthM ?? 0;
  const across = (x: number, y: number): number => (x - opts.cx) * fn - (y - opts.cy) * fe;
  const along = (x: number, y: number): number => (x - opts.cx) * fe + (y - opts.cy) * fn;
  const z = (x: number, y: number): number =>
    (opts.z0 ?? 100) - opts.slope * along(x, y) + Math.max(Math.abs(across(x, y)) - half, 0) / opts.m;
  return { z, across, along, flow: [fe, fn] as const };
}

function ok(result: ReturnType<typeof crestFromPoint>): PointCrest {
  if ('skip' in result) throw new Error(`unexpected skip: ${result.skip.message}`);
  return result;
}

/** Angle in degrees between two undirected directions, 0–90. */
function lineAngleDeg(ax: number, ay: number, bx: number, by: number): number {
  const cos = Math.abs(ax * bx + ay * by) / (Math.hypot(ax, ay) * Math.hypot(bx, by));
  return (Math.acos(Math.min(1, cos)) * 180) / Math.PI;
}

describe('crestFromPoint on an analytic V-valley', () => {
  const cellM = 1;
  const size = 200;
  // Thalweg through the centres of column 100 so the channel cell sits on the axis.
  const cx = X0 + 100.5;
  const cy = Y0 - 100.5;
  const m = 4; // 4 horizontal : 1 vertical
  const slope = 0.01;
  const heightM = 1.5;
  const valley = vValley({ cx, cy, flowDeg: 180, slope, m });
  const grid = gridOf(size, cellM, valley.z);
  const crest = ok(crestFromPoint(grid, cx + 3, cy, { heightM }));

  it('finds the channel on the thalweg, on the cross-section through the point (not downstream of it)', () => {
    const col = crest.channelCell % size;
    const row = Math.floor(crest.channelCell / size);
    expect(col).toBe(100);
    // The point (cx + 3, cy) is 3 m off the thalweg; the cross-section through it,
    // perpendicular to the southward flow, meets the thalweg at (cx, cy): row 100.
    // The lowest cell of the whole 10 m disc would lie 9 rows further south.
    expect(row).toBe(100);
    expect(crest.bedElevM).toBeCloseTo(valley.z(cx, cy), 4);
  });

  it('flows downstream along the valley axis (south)', () => {
    expect(crest.flowDirection[0]).toBeCloseTo(0, 2);
    expect(crest.flowDirection[1]).toBeCloseTo(-1, 3);
  });

  it('is perpendicular to the axis, crosses the channel, and ends at crest elevation', () => {
    const [a, b] = crest.line as [[number, number], [number, number]];
    expect(lineAngleDeg(b[0] - a[0], b[1] - a[1], valley.flow[0], valley.flow[1])).toBeGreaterThan(88);
    // The two ends lie on opposite banks.
    expect(Math.sign(valley.across(a[0], a[1]))).toBe(-Math.sign(valley.across(b[0], b[1])));
    // Ground at each end within half a cell × side slope of bed + H.
    const tol = (0.5 * cellM) / m;
    expect(Math.abs(valley.z(a[0], a[1]) - (crest.bedElevM + heightM))).toBeLessThanOrEqual(tol);
    expect(Math.abs(valley.z(b[0], b[1]) - (crest.bedElevM + heightM))).toBeLessThanOrEqual(tol);
    expect(crest.reachedBothSides).toBe(true);
    expect(crest.warnings).toEqual([]);
  });

  it('has the analytic width 2·m·H of a V at height H', () => {
    // Width of a V-section at depth H with side slopes m:1 is 2·m·H (trapezoid with zero base).
    const [a, b] = crest.line as [[number, number], [number, number]];
    const lengthM = Math.hypot(b[0] - a[0], b[1] - a[1]);
    expect(Math.abs(lengthM - 2 * m * heightM)).toBeLessThanOrEqual(cellM);
    expect(crest.lengthM).toBeCloseTo(lengthM, 6);
  });

  it('runs from the right bank to the left bank, so upstream is on its left', () => {
    const [a, b] = crest.line as [[number, number], [number, number]];
    // Looking downstream (south) the right bank is west.
    expect(a[0]).toBeLessThan(b[0]);
    // Left normal of the walking direction points against the flow.
    const leftE = -(b[1] - a[1]);
    const leftN = b[0] - a[0];
    expect(leftE * crest.flowDirection[0] + leftN * crest.flowDirection[1]).toBeLessThan(0);
  });
});

describe('crestFromPoint follows the valley when it is rotated', () => {
  const cx = X0 + 100.5;
  const cy = Y0 - 100.5;
  const m = 4;
  const heightM = 1.5;
  for (const flowDeg of [180, 210, 150, 120]) {
    it(`valley flowing on bearing ${flowDeg}°: the crest turns with it`, () => {
      const valley = vValley({ cx, cy, flowDeg, slope: 0.01, m });
      const crest = ok(crestFromPoint(gridOf(200, 1, valley.z), cx + 2, cy - 1, { heightM }));
      const [a, b] = crest.line as [[number, number], [number, number]];
      const bearing = (Math.atan2(crest.flowDirection[0], crest.flowDirection[1]) * 180) / Math.PI;
      expect(Math.abs(((bearing - flowDeg + 540) % 360) - 180)).toBeLessThan(2);
      expect(lineAngleDeg(b[0] - a[0], b[1] - a[1], valley.flow[0], valley.flow[1])).toBeGreaterThan(88);
      // The channel cell centre may sit up to half a cell diagonal (δ) off the
      // axis; then the crest spans 2·m·H + 2·δ.
      const col = crest.channelCell % 200;
      const row = Math.floor(crest.channelCell / 200);
      const delta = Math.abs(valley.across(X0 + col + 0.5, Y0 - row - 0.5));
      expect(delta).toBeLessThanOrEqual(Math.SQRT1_2);
      expect(Math.abs(crest.lengthM - (2 * m * heightM + 2 * delta))).toBeLessThan(0.25);
    });
  }
});

describe('crestFromPoint on a wide flat-bottomed valley', () => {
  const cx = X0 + 150.5;
  const cy = Y0 - 150.5;
  it('stops at the 150 m default cap and reports it', () => {
    // Floor 400 m wide: the ground never reaches bed + H within 75 m of the channel.
    const valley = vValley({ cx, cy, flowDeg: 180, slope: 0.005, m: 4, floorHalfWidthM: 200 });
    const crest = ok(crestFromPoint(gridOf(300, 1, valley.z), cx, cy, { heightM: 1 }));
    expect(crest.flowDirection[1]).toBeCloseTo(-1, 3);
    expect(crest.lengthM).toBeCloseTo(150, 6);
    expect(crest.reachedBothSides).toBe(false);
    const capped = crest.warnings.filter((w) => w.code === 'crest-length-capped');
    expect(capped).toHaveLength(2);
  });

  it('reaches both valley walls of a trapezoid narrower than the cap: floor width + 2·m·H', () => {
    // Trapezoidal section: top width = base width + 2·m·H.
    const valley = vValley({ cx, cy, flowDeg: 180, slope: 0.005, m: 3, floorHalfWidthM: 30 });
    const crest = ok(crestFromPoint(gridOf(300, 1, valley.z), cx, cy, { heightM: 2 }));
    expect(crest.reachedBothSides).toBe(true);
    expect(Math.abs(crest.lengthM - (60 + 2 * 3 * 2))).toBeLessThanOrEqual(1);
  });

  it('honours a smaller cap given in the options', () => {
    const valley = vValley({ cx, cy, flowDeg: 180, slope: 0.005, m: 4, floorHalfWidthM: 200 });
    const crest = ok(crestFromPoint(gridOf(300, 1, valley.z), cx, cy, { heightM: 1, maxCrestLengthM: 40 }));
    expect(crest.lengthM).toBeCloseTo(40, 6);
  });
});

describe('crestFromPoint with lidar noise', () => {
  // USGS Lidar Base Specification, Quality Level 2: non-vegetated vertical
  // accuracy RMSEz = 10 cm. Seeded Gaussian noise of that size.
  const cx = X0 + 100.5;
  const cy = Y0 - 100.5;
  for (const [seed, flowDeg] of [
    [1, 180],
    [2, 210],
    [3, 135],
    [4, 200],
    [5, 170],
  ] as const) {
    it(`seed ${seed}, bearing ${flowDeg}°: the flow direction stays within 10°`, () => {
      const valley = vValley({ cx, cy, flowDeg, slope: 0.01, m: 4 });
      const rng = createRng(seed);
      const grid = gridOf(200, 1, valley.z);
      let sumSq = 0;
      for (let i = 0; i < grid.z.length; i++) {
        const e = 0.1 * normal(rng);
        sumSq += e * e;
        grid.z[i] = (grid.z[i] ?? 0) + e;
      }
      expect(Math.sqrt(sumSq / grid.z.length)).toBeCloseTo(0.1, 2);
      const crest = ok(crestFromPoint(grid, cx + 3, cy, { heightM: 1.5 }));
      const [a, b] = crest.line as [[number, number], [number, number]];
      const bearing = (Math.atan2(crest.flowDirection[0], crest.flowDirection[1]) * 180) / Math.PI;
      expect(Math.abs(((bearing - flowDeg + 540) % 360) - 180)).toBeLessThan(10);
      expect(lineAngleDeg(b[0] - a[0], b[1] - a[1], valley.flow[0], valley.flow[1])).toBeGreaterThan(80);
    });
  }

  for (const [seed, flowDeg, floorHalfWidthM] of [
    [11, 180, 60],
    [12, 210, 60],
    [13, 135, 8],
  ] as const) {
    it(`seed ${seed}, flat floor ${2 * floorHalfWidthM} m wide, bearing ${flowDeg}°: within 10°`, () => {
      const fx = X0 + 150.5;
      const fy = Y0 - 150.5;
      const valley = vValley({ cx: fx, cy: fy, flowDeg, slope: 0.005, m: 4, floorHalfWidthM });
      const rng = createRng(seed);
      const grid = gridOf(300, 1, valley.z);
      for (let i = 0; i < grid.z.length; i++) grid.z[i] = (grid.z[i] ?? 0) + 0.1 * normal(rng);
      const crest = ok(crestFromPoint(grid, fx + 3, fy, { heightM: 1 }));
      const bearing = (Math.atan2(crest.flowDirection[0], crest.flowDirection[1]) * 180) / Math.PI;
      expect(Math.abs(((bearing - flowDeg + 540) % 360) - 180)).toBeLessThan(10);
    });
  }
});

describe('crestFromPoint on a wide floor with a narrow meandering channel', () => {
  // A trapezoidal valley flowing east: a floor W wide rising 1:cs from its axis to sides of 1:m,
  // falling S down-valley, with a channel chW wide and D deep (parabolic section) meandering
  // about the axis (amplitude A, wavelength L), and QL2 noise (USGS Lidar Base Specification:
  // RMSEz 10 cm). The ±20 m profiles of the channel's scale see neither the valley sides nor a
  // straight channel. Analytic: a crest across the valley at elevation Zc reaches the ground
  // where floor + side rise = Zc − (axis floor): |x| = W/2 + m·(f − cs·W/2), f = Zc − floor at
  // the axis (valley sides are planes, so the length is 2|x| wherever the channel lies).
  const cellM = 1;
  const size = 300;
  const W = 70;
  const cs = 0.006;
  const m = 3;
  const S = 0.003;
  const D = 0.7;
  const chW = 4;
  const A = 12;
  const L = 150;
  const ax0 = X0 + 150.5;
  const ay0 = Y0 - 150.5;
  const channelY = (x: number): number => ay0 + A * Math.sin((2 * Math.PI * (x - ax0)) / L);
  const axisFloor = (x: number): number => 100 - S * (x - ax0) + D;
  const z = (x: number, y: number): number => {
    const across = Math.abs(y - ay0);
    const rise = across <= W / 2 ? across * cs : (W / 2) * cs + (across - W / 2) / m;
    const d = Math.abs(y - channelY(x));
    const channel = d < chW / 2 ? -D * (1 - ((2 * d) / chW) ** 2) : 0;
    return axisFloor(x) + rise + channel;
  };
  /** Half the width of the section at elevation zc over the axis floor zf: on the floor when it is reached there, else on the side. */
  const halfWidth = (zc: number, zf: number): number => {
    const f = zc - zf;
    return f <= (W / 2) * cs ? f / cs : W / 2 + m * (f - (W / 2) * cs);
  };
  const noisyGrid = (seed: number): Grid => {
    const rng = createRng(seed);
    const grid = gridOf(size, cellM, z);
    for (let i = 0; i < grid.z.length; i++) grid.z[i] = (grid.z[i] ?? 0) + 0.1 * normal(rng);
    return grid;
  };
  for (const seed of [1, 2, 3, 4]) {
    for (const alongM of [0, 20, 40]) {
      it(`seed ${seed}, ${alongM} m down the meander: the crest crosses the valley, as long as the section at its elevation`, () => {
        const grid = noisyGrid(seed);
        const px = ax0 + alongM;
        const crest = ok(crestFromPoint(grid, px, channelY(px) + 2, { heightM: 1.5 }));
        // Flow east (bearing 90°) within 2°, the crest perpendicular to it.
        const bearing = (Math.atan2(crest.flowDirection[0], crest.flowDirection[1]) * 180) / Math.PI;
        expect(Math.abs(bearing - 90)).toBeLessThan(2);
        const [a, b] = crest.line as [[number, number], [number, number]];
        expect(lineAngleDeg(b[0] - a[0], b[1] - a[1], 1, 0)).toBeGreaterThan(88);
        // The bed is the channel, on the cross-section through the point.
        const col = crest.channelCell % size;
        const row = Math.floor(crest.channelCell / size);
        const cx = X0 + (col + 0.5) * cellM;
        expect(Math.abs(Y0 - (row + 0.5) * cellM - channelY(cx))).toBeLessThanOrEqual(chW / 2 + cellM);
        expect(Math.abs(cx - px)).toBeLessThanOrEqual(cellM);
        // Length: the analytic section width at the crest elevation, within a metre and a half (noise at the ends).
        expect(crest.reachedBothSides).toBe(true);
        expect(Math.abs(crest.lengthM - 2 * halfWidth(crest.crestElevM, axisFloor(cx)))).toBeLessThan(1.5);
      });
    }
  }

  for (const seed of [1, 2, 3, 5, 6, 8]) {
    it(`seed ${seed}: a crest just above the floor is not ended by a noisy cell on it (within 10 % of the section width)`, () => {
      // 1.0 m above the lowest cell: the crest stands a few centimetres over the floor's edges, where one
      // cell of noise reaches it; the ground must stay at the crest elevation for two cells to end the line.
      const grid = noisyGrid(seed);
      const crest = ok(crestFromPoint(grid, ax0, channelY(ax0) + 2, { heightM: 1 }));
      const cx = X0 + ((crest.channelCell % size) + 0.5) * cellM;
      const width = 2 * halfWidth(crest.crestElevM, axisFloor(cx));
      expect(crest.reachedBothSides).toBe(true);
      expect(Math.abs(crest.lengthM / width - 1)).toBeLessThan(0.1);
    });
  }
});

describe('crestFromPoint units and skips', () => {
  it('works in a US-survey-foot CRS: the length is in metres, the line in feet', () => {
    const usFt = 1200 / 3937; // 85 FR 62698 (2020)
    const cx = X0 + 100.5 * (1 / usFt);
    const cy = Y0 - 100.5 * (1 / usFt);
    const m = 4;
    // Elevations in metres over a plane measured in feet: convert offsets to metres.
    const valley = vValley({ cx: cx * usFt, cy: cy * usFt, flowDeg: 180, slope: 0.01, m });
    const grid = gridOf(200, 1, (x, y) => valley.z(x * usFt, y * usFt), usFt);
    const crest = ok(crestFromPoint(grid, cx, cy, { heightM: 1.5 }));
    const [a, b] = crest.line as [[number, number], [number, number]];
    const lengthMapUnits = Math.hypot(b[0] - a[0], b[1] - a[1]);
    expect(Math.abs(crest.lengthM - 2 * m * 1.5)).toBeLessThanOrEqual(1);
    expect(lengthMapUnits * usFt).toBeCloseTo(crest.lengthM, 6);
  });

  it('works on a geographic grid through its per-row cell sizes in metres', () => {
    // Lon/lat cells of 1e-5°, with east–west and north–south metres per degree
    // given to the grid and used by the analytic surface alike (local plane).
    const size = 200;
    const d = 1e-5;
    const lon0 = -113.5;
    const lat0 = 46.2;
    const kx = 77_000; // m per degree of longitude (round local figure, self-consistent here)
    const ky = 111_000; // m per degree of latitude
    const m = 4;
    const clon = lon0 + 100.5 * d;
    const clat = lat0 - 100.5 * d;
    const valley = vValley({ cx: 0, cy: 0, flowDeg: 200, slope: 0.01, m });
    const z = new Float32Array(size * size);
    for (let r = 0; r < size; r++) {
      for (let c = 0; c < size; c++) {
        z[r * size + c] = valley.z((lon0 + (c + 0.5) * d - clon) * kx, (lat0 - (r + 0.5) * d - clat) * ky);
      }
    }
    const grid: Grid = {
      width: size,
      height: size,
      transform: { x0: lon0, y0: lat0, dx: d, dy: -d },
      z,
      cellAreaM2: new Float64Array(size).fill(d * kx * d * ky),
      cellWidthM: new Float64Array(size).fill(d * kx),
      cellHeightM: d * ky,
      colOffset: 0,
      rowOffset: 0,
    };
    const crest = ok(crestFromPoint(grid, clon + 2 * d, clat, { heightM: 1.5 }));
    const bearing = (Math.atan2(crest.flowDirection[0], crest.flowDirection[1]) * 180) / Math.PI;
    expect(Math.abs(((bearing - 200 + 540) % 360) - 180)).toBeLessThan(2);
    const [a, b] = crest.line as [[number, number], [number, number]];
    const lengthM = Math.hypot((b[0] - a[0]) * kx, (b[1] - a[1]) * ky);
    expect(lengthM).toBeCloseTo(crest.lengthM, 6);
    const col = crest.channelCell % size;
    const row = Math.floor(crest.channelCell / size);
    const delta = Math.abs(valley.across((lon0 + (col + 0.5) * d - clon) * kx, (lat0 - (row + 0.5) * d - clat) * ky));
    expect(Math.abs(crest.lengthM - (2 * m * 1.5 + 2 * delta))).toBeLessThan(0.25);
  });

  it('skips a point off the grid, naming the dam', () => {
    const grid = gridOf(20, 1, () => 10);
    const r = crestFromPoint(grid, X0 - 5, Y0 - 5, { heightM: 1, damId: 'd-9' });
    expect('skip' in r && r.skip.code).toBe('point-off-grid');
    expect('skip' in r && r.skip.damId).toBe('d-9');
  });

  it('skips a point on NoData', () => {
    const grid = gridOf(20, 1, (x) => (x < X0 + 10 ? NaN : 10));
    const r = crestFromPoint(grid, X0 + 5.5, Y0 - 5.5, { heightM: 1 });
    expect('skip' in r && r.skip.code).toBe('point-on-nodata');
  });

  it('reports a crest that meets the edge of the DEM', () => {
    const cx = X0 + 15.5;
    const cy = Y0 - 100.5;
    const valley = vValley({ cx, cy, flowDeg: 180, slope: 0.01, m: 20 });
    const crest = ok(crestFromPoint(gridOf(200, 1, valley.z), cx, cy, { heightM: 2 }));
    expect(crest.reachedBothSides).toBe(false);
    expect(crest.warnings.map((w) => w.code)).toContain('crest-reaches-grid-edge');
  });
});
