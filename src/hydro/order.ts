/**
 * Cells in upstream-to-downstream order along D8 links: every cell comes
 * after all the cells that drain into it (a topological sort by donor
 * counts, as in Kahn's algorithm, emitting whole flow paths at a time). Walking the order forwards accumulates downstream;
 * walking it backwards passes values from the outlets upstream.
 */
import { DIR_NONE, neighbourOffsets } from './neighbours.js';

const EMITTED = 255;

/**
 * Valid cells (z not NaN) ordered so that each follows all its donors.
 * Throws if the directions contain a cycle (a bug, not an input problem).
 */
export function flowOrder(dir: Uint8Array, z: Float32Array, width: number): Int32Array {
  const n = dir.length;
  const off = neighbourOffsets(width);
  const donors = new Uint8Array(n);
  let valid = 0;
  for (let i = 0; i < n; i++) {
    const d = dir[i] ?? DIR_NONE;
    if (d < 8) {
      const r = i + (off[d] ?? 0);
      donors[r] = (donors[r] ?? 0) + 1;
    }
    if (!Number.isNaN(z[i] ?? NaN)) valid++;
  }
  // Scan the grid; from every cell without donors walk downstream as long as
  // each next cell has had all its donors emitted. Walks follow flow paths,
  // so later passes over this order touch memory mostly nearby.
  const order = new Int32Array(valid);
  let tail = 0;
  for (let start = 0; start < n; start++) {
    if (donors[start] !== 0 || Number.isNaN(z[start] ?? NaN)) continue;
    let i = start;
    for (;;) {
      order[tail++] = i;
      const d = dir[i] ?? DIR_NONE;
      if (d >= 8) break;
      const r = i + (off[d] ?? 0);
      const left = (donors[r] ?? 1) - 1;
      if (left !== 0) {
        donors[r] = left;
        break;
      }
      donors[r] = EMITTED; // so the scan does not take it for a cell without donors
      i = r;
    }
  }
  if (tail !== valid) throw new Error(`flow directions contain a cycle: ordered ${tail} of ${valid} cells`);
  return order;
}
