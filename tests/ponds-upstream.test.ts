/**
 * Upstream side and DEM-visible dams on noisy lidar-like ground: a gentle
 * V-shaped valley with white noise of 0.10 m RMSE per cell (USGS Lidar Base
 * Specification QL2 vertical accuracy, RMSEz 10 cm) and no dam in the DEM.
 * The terrain probe alone cannot tell the sides apart at a 0.3 % slope; the
 * water each side holds can.
 */
import { describe, expect, it } from 'vitest';
import { rasteriseLines } from '../src/grid/rasterise-line.js';
import { createFillScratch } from '../src/ponds/fill.js';
import { DEFAULT_POND_PARAMS } from '../src/ponds/params.js';
import { pondAt } from '../src/ponds/stage-storage.js';
import { setupAndFill } from '../src/ponds/upstream-by-fill.js';
import { createRng, normal } from '../src/uncertainty/random.js';
import { makeDam, sampleGrid, type ValleyFrame } from './helpers/synthetic.js';

const frame: ValleyFrame = { width: 81, height: 500, cellM: 1, damRow: 420 };
const M = 10; // side slope, horizontal : vertical
const S = 0.003; // floor slope: 0.3 %
const H = 0.8;
const across: [number, number][][] = [[[-30, 0], [30, 0]]]; // north (upstream, y > 0) is on the left

function noisyValley(seed: number) {
  const rng = createRng(seed);
  return sampleGrid(frame, (x, y) => S * y + Math.abs(x) / M + 0.1 * normal(rng));
}

describe('upstream side by the water each side holds', () => {
  it('finds the upstream side on ten noisy gentle valleys and never takes noise for a dam in the DEM', () => {
    for (let seed = 1; seed <= 10; seed++) {
      const grid = noisyValley(seed);
      const dam = makeDam({ id: `n${seed}`, lines: across, heightM: H });
      const cells = rasteriseLines(grid, across).cells;
      const out = setupAndFill(grid, dam, cells, DEFAULT_POND_PARAMS, {}, createFillScratch(grid.width * grid.height));
      if ('skip' in out) throw new Error(out.skip.message);
      expect(out.setup.upstreamSide).toBe('left');
      expect(out.setup.upstreamSource).toBe('terrain');
      expect(out.setup.demVisible).toBe(false);
      expect(out.fill.limitedBy).toBe('crest');
      // Analytic V-valley pond V = m·h³/(3S) at h = level above the valley's bottom line (the
      // bed is a noisy cell; common practice: noise averages out over the pond to a few %).
      const h = out.fill.waterLevelM;
      const analytic = (M * h ** 3) / (3 * S);
      expect(Math.abs(pondAt(out.fill, out.fill.waterLevelM).volumeM3 / analytic - 1)).toBeLessThan(0.15);
    }
  });

  it('keeps the inventory\'s upstream property even when the water says otherwise', () => {
    const grid = noisyValley(3);
    const dam = makeDam({ id: 'p', lines: across, heightM: H, upstream: 'right' });
    const out = setupAndFill(grid, dam, rasteriseLines(grid, across).cells, DEFAULT_POND_PARAMS, {}, createFillScratch(grid.width * grid.height));
    if ('skip' in out) throw new Error(out.skip.message);
    expect(out.setup.upstreamSide).toBe('right');
    expect(out.setup.upstreamSource).toBe('property');
    // Water on the downstream side runs off down the valley: it escapes far below the crest.
    expect(out.fill.limitedBy).not.toBe('crest');
    expect(out.fill.waterLevelM).toBeLessThan(out.setup.crestElevM - 0.3);
  });
});
