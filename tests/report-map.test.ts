/**
 * report-map.json: the hillshade built from blocks gathered during the
 * estimate's window reads equals the one read afresh from the DEM; the
 * mapped extent holds every dam and pond; the file reads back as written.
 */
import { decode } from 'fast-png';
import { describe, expect, it } from 'vitest';
import { makeGrid, type Grid } from '../src/grid/grid.js';
import { colToX, rowToY } from '../src/grid/transform.js';
import type { DamInput } from '../src/inventory.js';
import { cellMetrics, crsFromEpsg } from '../src/io/crs.js';
import type { DemSource } from '../src/io/dem.js';
import { InputError } from '../src/errors.js';
import { buildReportMap } from '../src/report/map-build.js';
import { buildMapFigure } from '../src/report/map-svg.js';
import { parseReportMap } from '../src/report/map-file.js';
import { planBlocks, teeDem } from '../src/report/shade-blocks.js';
import { createRng } from '../src/uncertainty/random.js';

const W = 900;
const H = 700;
const transform = { x0: 400_000, y0: 5_000_000, dx: 1, dy: -1 };

/** A DEM held in memory: rolling seeded terrain, a NoData hole, read by windows like a GeoTIFF. */
function memoryDem(): { dem: DemSource; reads: number[] } {
  const rng = createRng(99);
  const z = new Float32Array(W * H);
  const a = rng() * 6;
  for (let row = 0; row < H; row++) {
    for (let col = 0; col < W; col++) {
      z[row * W + col] = 200 + 12 * Math.sin(col / 90 + a) * Math.cos(row / 70) + 0.02 * row + (rng() - 0.5) * 0.05;
    }
  }
  for (let row = 300; row < 330; row++) for (let col = 400; col < 440; col++) z[row * W + col] = NaN;
  const full: Grid = makeGrid({ width: W, height: H, z, transform });
  const reads: number[] = [];
  const crs = crsFromEpsg(32612);
  const dem: DemSource = {
    width: W,
    height: H,
    transform,
    crs,
    zUnit: 'metre',
    zUnitSource: 'geokey',
    files: ['memory'],
    async readWindow(col0, row0, cols, rows) {
      const c0 = Math.max(0, col0);
      const r0 = Math.max(0, row0);
      const c1 = Math.min(W, col0 + cols);
      const r1 = Math.min(H, row0 + rows);
      const w = c1 - c0;
      const h = r1 - r0;
      const out = new Float32Array(w * h);
      for (let r = 0; r < h; r++) out.set(full.z.subarray((r0 + r) * W + c0, (r0 + r) * W + c1), r * w);
      reads.push(w * h);
      return makeGrid({ width: w, height: h, z: out, transform: { ...transform, x0: colToX(transform, c0), y0: rowToY(transform, r0) }, colOffset: c0, rowOffset: r0 });
    },
    async close() {},
  };
  return { dem, reads };
}

function dam(id: string, col: number, row: number): DamInput {
  const x = colToX(transform, col);
  const y = rowToY(transform, row);
  return { id, index: 0, geometry: { kind: 'line', lines: [[[x - 10, y], [x + 10, y]]] }, heightM: 1, status: 'confirmed', confidence: null, year: null, upstream: null, extra: {} };
}

const dams = [dam('a', 300, 250), dam('b', 520, 420), dam('c', 610, 380)];
const pond = [{ polygons: [[[[280, 150], [340, 150], [340, 240], [280, 240], [280, 150]]] as [number, number][][]] }];

describe('report-map.json', () => {
  // The estimate reads up to 200 m around the dams: blocks of 4 cells keep that area within 200 px.
  // A fresh map limited to 120 px gets the same 4-cell blocks, so the two compare pixel for pixel.
  async function compareWithFresh(windows: [number, number, number, number][]): Promise<{ extraCells: number }> {
    const fresh = memoryDem();
    const direct = await buildReportMap({ dem: fresh.dem, dams, outlines: pond, maxSidePx: 120 });
    expect(direct.hillshade!.blockCells).toBe(4);
    const tee = memoryDem();
    const blocks = planBlocks(tee.dem, dams, 200, 200);
    expect(blocks.block).toBe(4);
    const source = teeDem(tee.dem, blocks);
    for (const [c, r, w, h] of windows) await source.readWindow(c, r, w, h);
    const before = tee.reads.length;
    const collected = await buildReportMap({ dem: tee.dem, dams, outlines: pond, maxSidePx: 200, collected: blocks });
    expect(collected.extent).toEqual(direct.extent);
    expect(collected.hillshade!.blockCells).toBe(4);
    const a = decode(Buffer.from(direct.hillshade!.pngBase64, 'base64'));
    const b = decode(Buffer.from(collected.hillshade!.pngBase64, 'base64'));
    expect([b.width, b.height, b.channels]).toEqual([a.width, a.height, a.channels]);
    let worst = 0;
    for (let i = 0; i < a.data.length; i++) worst = Math.max(worst, Math.abs(a.data[i]! - b.data[i]!));
    expect(worst).toBeLessThanOrEqual(1); // block sums added in another order may round one grey level apart
    return { extraCells: tee.reads.slice(before).reduce((s, n) => s + n, 0) };
  }

  it('builds the hillshade from the estimate\'s reads alone when they cover the map, as a fresh read would', async () => {
    // Two disjoint windows, as the estimate's groups are, together covering the mapped extent; a block straddles both.
    const { extraCells } = await compareWithFresh([
      [150, 40, 301, 560],
      [451, 40, 400, 560],
    ]);
    expect(extraCells).toBe(0);
  });

  it('reads only what the estimate did not, and still matches a fresh read', async () => {
    const { extraCells } = await compareWithFresh([
      [150, 100, 260, 240],
      [410, 250, 300, 260],
    ]);
    expect(extraCells).toBeGreaterThan(0);
  });

  it('maps every dam and pond, with transparent pixels over NoData', async () => {
    const { dem } = memoryDem();
    const map = await buildReportMap({ dem, dams, outlines: pond, maxSidePx: 200 });
    const { xmin, xmax, ymin, ymax } = map.extent;
    for (const d of dams) {
      if (d.geometry.kind !== 'line') continue;
      for (const [x, y] of d.geometry.lines[0]!) {
        expect(x).toBeGreaterThan(xmin);
        expect(x).toBeLessThan(xmax);
        expect(y).toBeGreaterThan(ymin);
        expect(y).toBeLessThan(ymax);
      }
    }
    expect(rowToY(transform, 150)).toBeLessThan(ymax);
    const png = decode(Buffer.from(map.hillshade!.pngBase64, 'base64'));
    expect(png.channels).toBe(2); // grey + alpha: the DEM has a NoData hole in the extent
    let transparent = 0;
    for (let i = 1; i < png.data.length; i += 2) if (png.data[i] === 0) transparent++;
    expect(transparent).toBeGreaterThan(0);
    expect(Math.max(png.width, png.height)).toBeLessThanOrEqual(200);
  });

  it('reads back as written, and refuses a file that is not one', async () => {
    const { dem } = memoryDem();
    const map = await buildReportMap({ dem, dams, outlines: pond, maxSidePx: 100 });
    expect(parseReportMap(JSON.stringify(map), 'report-map.json')).toEqual(map);
    expect(() => parseReportMap('{"format":"something-else"}', 'x/report-map.json')).toThrow(InputError);
    expect(() => parseReportMap('{"format":"something-else"}', 'x/report-map.json')).toThrow(/x\/report-map\.json/);
  });

  it('draws a geographic DEM in metres: the frame\'s width to height is a degree of longitude to one of latitude', async () => {
    // 0.01° × 0.01° of lon/lat at 60° N. Lengths of a degree on WGS 84 at 60°: longitude 55.800 km,
    // latitude 111.412 km (standard geodetic tables; from memory), ratio 0.5008.
    const n = 400;
    const t = { x0: -110, y0: 60.005, dx: 0.01 / n, dy: -0.01 / n };
    const z = new Float32Array(n * n);
    for (let i = 0; i < z.length; i++) z[i] = 500 + (i % n) * 0.01;
    const crs = crsFromEpsg(4326);
    const dem: DemSource = {
      width: n,
      height: n,
      transform: t,
      crs,
      zUnit: 'metre',
      zUnitSource: 'assumed-metre',
      files: ['memory'],
      async readWindow(col0, row0, cols, rows) {
        const c0 = Math.max(0, col0);
        const r0 = Math.max(0, row0);
        const w = Math.min(n, col0 + cols) - c0;
        const h = Math.min(n, row0 + rows) - r0;
        const out = new Float32Array(w * h);
        for (let r = 0; r < h; r++) out.set(z.subarray((r0 + r) * n + c0, (r0 + r) * n + c0 + w), r * w);
        const m = cellMetrics(crs, t, r0, h);
        return { width: w, height: h, transform: { ...t, x0: colToX(t, c0), y0: rowToY(t, r0) }, z: out, cellAreaM2: m.cellAreaM2, cellWidthM: m.cellWidthM, cellHeightM: m.cellHeightM, colOffset: c0, rowOffset: r0 };
      },
      async close() {},
    };
    const map = await buildReportMap({ dem, dams: [], outlines: [] });
    expect(map.crs.unit).toBe('degree');
    expect(map.extent.xmax - map.extent.xmin).toBeCloseTo(0.01, 9);
    const figure = buildMapFigure(map, [], { ponds: [], influence: null, watersheds: null, streams: null });
    const frame = /<rect class="map-frame" x="[^"]+" y="[^"]+" width="([^"]+)" height="([^"]+)"/.exec(figure.svg);
    expect(frame).not.toBeNull();
    const ratio = Number(frame![1]) / Number(frame![2]);
    expect(Math.abs(ratio / (55.8 / 111.412) - 1)).toBeLessThan(0.005);
    expect(figure.crsText).toContain('degrees');
  });
});
