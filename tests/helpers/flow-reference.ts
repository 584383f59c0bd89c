/**
 * Reference D8 directions with flats routed, written as plainly as the
 * published methods read, over full-grid rasters and with no attention to
 * speed: steepest descent per metre to one of the eight neighbours, ties to
 * the first direction clockwise from north (O'Callaghan & Mark 1984, "The
 * extraction of drainage networks from digital elevation data", Computer
 * Vision, Graphics, and Image Processing 28), and flats routed by the
 * integer surface of Barnes, Lehman & Mulla (2014), "An efficient
 * assignment of drainage direction over flat surfaces in raster digital
 * elevation models", Computers & Geosciences 62: label the flats, count
 * steps from higher ground and towards lower ground breadth-first, combine
 * them as 2 × towards + (largest away − away), and descend that surface.
 *
 * Policies as in src/hydro/d8.ts: a cell on the grid edge or next to NoData
 * with no lower neighbour drains out; a flat with no way out keeps DIR_NONE.
 */
import type { Grid } from '../../src/grid/grid.js';
import { DIR_COL, DIR_NONE, DIR_OUTLET, DIR_ROW, neighbourDistancesM } from '../../src/hydro/neighbours.js';

const FLAT = 254;

/** Directions (codes of src/hydro/neighbours.ts) and the number of flat cells left without a drain. */
export function referenceFlowDirections(grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>, z: Float32Array): { dir: Uint8Array; pits: number } {
  const { width, height } = grid;
  const n = width * height;
  const at = (r: number, c: number): number => (r < 0 || c < 0 || r >= height || c >= width ? NaN : z[r * width + c]!);
  const dir = new Uint8Array(n);
  const dist = new Float64Array(8);
  for (let r = 0; r < height; r++) {
    neighbourDistancesM(grid.cellWidthM, grid.cellHeightM, r, dist);
    for (let c = 0; c < width; c++) {
      const zi = at(r, c);
      if (Number.isNaN(zi)) {
        dir[r * width + c] = DIR_NONE;
        continue;
      }
      let best = 0;
      let bestDir = -1;
      let nearOut = r === 0 || c === 0 || r === height - 1 || c === width - 1;
      for (let d = 0; d < 8; d++) {
        const zn = at(r + DIR_ROW[d]!, c + DIR_COL[d]!);
        if (Number.isNaN(zn)) {
          nearOut = true;
          continue;
        }
        const slope = (zi - zn) * (1 / dist[d]!);
        if (slope > best) {
          best = slope;
          bestDir = d;
        }
      }
      dir[r * width + c] = bestDir >= 0 ? bestDir : nearOut ? DIR_OUTLET : FLAT;
    }
  }
  return { dir, pits: routeFlats(grid, z, dir) };
}

function routeFlats(grid: Pick<Grid, 'width' | 'height' | 'cellWidthM' | 'cellHeightM'>, z: Float32Array, dir: Uint8Array): number {
  const { width, height } = grid;
  const n = width * height;
  const neighbours = (i: number): number[] => {
    const r = Math.floor(i / width);
    const c = i % width;
    const out: number[] = [];
    for (let d = 0; d < 8; d++) {
      const rr = r + DIR_ROW[d]!;
      const cc = c + DIR_COL[d]!;
      out.push(rr < 0 || cc < 0 || rr >= height || cc >= width ? -1 : rr * width + cc);
    }
    return out;
  };
  const drains = (i: number): boolean => dir[i] !== FLAT && dir[i] !== DIR_NONE;
  // Flat labels: connected flat cells of one elevation.
  const label = new Int32Array(n);
  let labels = 0;
  for (let i = 0; i < n; i++) {
    if (dir[i] !== FLAT || label[i] !== 0) continue;
    label[i] = ++labels;
    const stack = [i];
    while (stack.length > 0) {
      const cell = stack.pop()!;
      for (const nb of neighbours(cell)) {
        if (nb >= 0 && dir[nb] === FLAT && label[nb] === 0 && z[nb] === z[cell]) {
          label[nb] = labels;
          stack.push(nb);
        }
      }
    }
  }
  const higherEdge: number[] = [];
  const lowerEdge: number[] = [];
  for (let i = 0; i < n; i++) {
    if (dir[i] !== FLAT) continue;
    let higher = false;
    let lower = false;
    for (const nb of neighbours(i)) {
      if (nb < 0) continue;
      if (z[nb]! > z[i]!) higher = true;
      else if (z[nb] === z[i] && drains(nb)) lower = true;
    }
    if (higher) higherEdge.push(i);
    if (lower) lowerEdge.push(i);
  }
  // Steps from higher ground.
  const away = new Int32Array(n);
  const maxAway = new Int32Array(labels + 1);
  for (const i of higherEdge) away[i] = 1;
  for (let q = [...higherEdge], head = 0; head < q.length; head++) {
    const cell = q[head]!;
    maxAway[label[cell]!] = Math.max(maxAway[label[cell]!]!, away[cell]!);
    for (const nb of neighbours(cell)) {
      if (nb >= 0 && label[nb] === label[cell] && away[nb] === 0) {
        away[nb] = away[cell]! + 1;
        q.push(nb);
      }
    }
  }
  // Steps towards lower ground, and the combined surface.
  const towards = new Int32Array(n);
  for (const i of lowerEdge) towards[i] = 1;
  for (let q = [...lowerEdge], head = 0; head < q.length; head++) {
    const cell = q[head]!;
    for (const nb of neighbours(cell)) {
      if (nb >= 0 && label[nb] === label[cell] && towards[nb] === 0) {
        towards[nb] = towards[cell]! + 1;
        q.push(nb);
      }
    }
  }
  const surface = (i: number): number => 2 * towards[i]! + maxAway[label[i]!]! - away[i]!;
  // Steepest descent on the surface, to a flat neighbour or to a draining cell at the flat's elevation (value 0).
  const dist = new Float64Array(8);
  let pits = 0;
  for (let i = 0; i < n; i++) {
    if (dir[i] !== FLAT) continue;
    if (towards[i] === 0) {
      dir[i] = DIR_NONE;
      pits++;
      continue;
    }
    neighbourDistancesM(grid.cellWidthM, grid.cellHeightM, Math.floor(i / width), dist);
    const m = surface(i);
    let best = 0;
    let bestDir: number = DIR_NONE;
    neighbours(i).forEach((nb, d) => {
      let value: number;
      if (nb < 0) return;
      if (label[nb] === label[i]) value = surface(nb);
      else if (label[nb] === 0 && z[nb] === z[i] && drains(nb)) value = 0;
      else return;
      const slope = (m - value) / dist[d]!;
      if (slope > best) {
        best = slope;
        bestDir = d;
      }
    });
    dir[i] = bestDir;
    if (bestDir === DIR_NONE) pits++;
  }
  return pits;
}
