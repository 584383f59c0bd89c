/**
 * The demo valley's watersheds as a mapped layer a user would bring: the
 * catchments above the three sub-valley pour points the generator knows
 * (main stem above tributary A, tributary A, tributary B) and the rest of
 * the valley (the main stem below tributary A with the slopes draining to
 * it), traced on the generated DEM by D8 flow on the depression-filled
 * surface (hydro/). `pondage demo` writes them as GeoJSON and passes them
 * with --watersheds, as a user with mapped catchments would.
 */
import { makeGrid } from '../grid/grid.js';
import { flowAccumulationM2 } from '../hydro/accumulation.js';
import { flowDirections } from '../hydro/d8.js';
import { fillDepressions } from '../hydro/fill.js';
import { DIR_NONE, neighbourOffsets } from '../hydro/neighbours.js';
import { flowOrder } from '../hydro/order.js';
import type { DemoScene } from './types.js';

/** Radius searched around a pour point for the stream cell with the largest contributing area, metres. */
const POUR_SNAP_M = 5;

/** A watershed of the demo. */
export interface DemoWatershed {
  id: string;
  name: string;
}

/** Id of the rest of the valley (below tributary A's junction). */
export const DEMO_LOWER_ID = 'main-lower';

/** Labels (1 + index into `units`, 0 on NoData) of the demo's watersheds on the scene's grid. */
export function demoWatershedLabels(scene: DemoScene): { labels: Int32Array; units: DemoWatershed[] } {
  const subs = scene.subWatersheds ?? [];
  const { width, height, z, transform } = scene;
  const grid = makeGrid({ width, height, z, transform });
  const filled = fillDepressions(grid).filledZ;
  const { dir } = flowDirections(grid, filled);
  const order = flowOrder(dir, filled, width);
  const acc = flowAccumulationM2(grid, dir, order);

  const labels = new Int32Array(width * height);
  const units: DemoWatershed[] = subs.map((s) => ({ id: s.id, name: s.name }));
  const reach = Math.ceil(POUR_SNAP_M / scene.cellM);
  subs.forEach((s, k) => {
    const pc = Math.floor((s.pourPoint.x - transform.x0) / transform.dx);
    const pr = Math.floor((s.pourPoint.y - transform.y0) / transform.dy);
    let best = -1;
    for (let r = Math.max(0, pr - reach); r <= Math.min(height - 1, pr + reach); r++) {
      for (let c = Math.max(0, pc - reach); c <= Math.min(width - 1, pc + reach); c++) {
        const i = r * width + c;
        if (best < 0 || acc[i]! > acc[best]!) best = i;
      }
    }
    if (best >= 0) labels[best] = k + 1;
  });
  // Downstream first: a cell takes the label of the cell it drains to, unless it is a pour cell.
  const off = neighbourOffsets(width);
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k]!;
    if (labels[i] !== 0) continue;
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) labels[i] = labels[i + off[d]!]!;
  }
  const lower = units.length + 1;
  units.push({ id: DEMO_LOWER_ID, name: 'main stem below tributary A, and the slopes draining to it' });
  for (let i = 0; i < labels.length; i++) if (labels[i] === 0 && z[i] === z[i]) labels[i] = lower;
  return { labels, units };
}
