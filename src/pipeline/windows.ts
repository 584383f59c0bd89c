/**
 * Which parts of the DEM each dam needs, and which dams share a read.
 *
 * A dam's search box is its crest's extent grown by the maximum pond reach on
 * every side. Dams whose boxes overlap are processed together on one window
 * (their ponds may meet); dams whose boxes don't overlap can never share a
 * cell, so each group is read, flooded and released on its own. Memory and
 * time grow with the dams, not with the DEM's area.
 */

/** A rectangle of DEM cells [col0, col1) × [row0, row1), in full-DEM pixel space. */
export interface CellBox {
  col0: number;
  row0: number;
  col1: number;
  row1: number;
}

/** Grows a box of map-space extent into DEM cells, clipped to the DEM; null when it misses the DEM. */
export function clipBox(box: CellBox, width: number, height: number): CellBox | null {
  const col0 = Math.max(0, box.col0);
  const row0 = Math.max(0, box.row0);
  const col1 = Math.min(width, box.col1);
  const row1 = Math.min(height, box.row1);
  return col1 > col0 && row1 > row0 ? { col0, row0, col1, row1 } : null;
}

/** True when two boxes share at least one cell. */
export function boxesOverlap(a: CellBox, b: CellBox): boolean {
  return a.col0 < b.col1 && b.col0 < a.col1 && a.row0 < b.row1 && b.row0 < a.row1;
}

/** The smallest box holding both. */
export function unionBox(a: CellBox, b: CellBox): CellBox {
  return {
    col0: Math.min(a.col0, b.col0),
    row0: Math.min(a.row0, b.row0),
    col1: Math.max(a.col1, b.col1),
    row1: Math.max(a.row1, b.row1),
  };
}

/** A set of dams read and flooded together, and the window that holds all their boxes. */
export interface DamGroup {
  members: number[];
  box: CellBox;
}

/**
 * Groups boxes transitively by overlap (a union-find over a sweep in column
 * order). Groups whose windows overlap after union are merged again, so no
 * two groups' windows share a cell. Members keep input order.
 */
export function groupBoxes(boxes: readonly (CellBox | null)[]): DamGroup[] {
  let groups: DamGroup[] = [];
  boxes.forEach((box, k) => {
    if (box) groups.push({ members: [k], box: { ...box } });
  });
  let merged = true;
  while (merged) {
    merged = false;
    groups.sort((a, b) => a.box.col0 - b.box.col0);
    const next: DamGroup[] = [];
    for (const g of groups) {
      // Only groups still open in the sweep can overlap g.
      let target: DamGroup | undefined;
      for (let j = next.length - 1; j >= 0; j--) {
        const h = next[j]!;
        if (boxesOverlap(h.box, g.box)) {
          target = h;
          break;
        }
      }
      if (target) {
        target.members.push(...g.members);
        target.box = unionBox(target.box, g.box);
        merged = true;
      } else {
        next.push(g);
      }
    }
    groups = next;
  }
  for (const g of groups) g.members.sort((a, b) => a - b);
  groups.sort((a, b) => a.members[0]! - b.members[0]!);
  return groups;
}
