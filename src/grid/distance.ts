/**
 * Exact Euclidean distance transform on the grid, in metres, with the index of
 * the nearest seed cell (so a caller can read that seed's own attributes, e.g.
 * the water level of the nearest pond cell).
 *
 * Method: Felzenszwalb & Huttenlocher (2012), "Distance transforms of sampled
 * functions", Theory of Computing 8: separable passes, the second one the
 * lower envelope of parabolas. Pass 1 runs down and up the columns (row-major
 * sweeps, so memory is read in order) and finds the nearest seed row in each
 * column; pass 2 takes, per row, the lower envelope of the parabolas
 * (col − c)²·w² + g(c)², where g is the pass-1 vertical distance.
 *
 * Distances are between cell centres. Cell height h is one number for the
 * grid; cell width w is per row. The east–west offset is measured with the
 * width of the target cell's row: exact for projected grids, and for
 * geographic grids an approximation whose relative error is about the change
 * of cos(latitude) between the target and the seed row (negligible over the
 * tens to hundreds of metres this is used for).
 */

/** Just the grid geometry a distance transform needs (a Grid satisfies it). */
export interface DistanceGeometry {
  readonly width: number;
  readonly height: number;
  /** East–west cell size per row, metres. */
  readonly cellWidthM: Float64Array;
  /** North–south cell size, metres. */
  readonly cellHeightM: number;
}

/** Result of {@link distanceTransform}. */
export interface DistanceResult {
  /** Distance from each cell centre to the nearest seed cell centre, metres; Infinity when there is no seed. */
  readonly distanceM: Float32Array;
  /** Flat index of that nearest seed cell, −1 when there is no seed. Seeds point to themselves. */
  readonly nearest: Int32Array;
}

/**
 * Distance in metres from every cell to the nearest seed (a cell where
 * `seeds[i] !== 0`), and which seed it is. Ties go to either seed.
 * Pass `out` to reuse buffers between calls (repeated draws).
 */
export function distanceTransform(
  geometry: DistanceGeometry,
  seeds: Uint8Array,
  out?: DistanceResult,
): DistanceResult {
  const { width, height, cellWidthM, cellHeightM } = geometry;
  const n = width * height;
  if (seeds.length !== n) {
    throw new Error(`seed mask has ${seeds.length} cells; expected ${width} × ${height} = ${n}`);
  }
  const distanceM = out?.distanceM ?? new Float32Array(n);
  const nearest = out?.nearest ?? new Int32Array(n);
  if (distanceM.length !== n || nearest.length !== n) {
    throw new Error(`distance buffers must have ${n} cells`);
  }
  nearestSeedRowInColumn(width, height, seeds, nearest);

  const seedRow = new Int32Array(width);
  const f = new Float64Array(width); // squared vertical distance, in units of (cell widths)²
  const v = new Int32Array(width); // columns of the parabolas in the envelope
  const zb = new Float64Array(width + 1); // boundaries between envelope parabolas, in columns
  for (let r = 0; r < height; r++) {
    const rowStart = r * width;
    const w = cellWidthM[r] ?? 0;
    const hOverW = cellHeightM / w;
    let finite = 0;
    for (let c = 0; c < width; c++) {
      const sr = nearest[rowStart + c] ?? -1;
      seedRow[c] = sr;
      if (sr < 0) {
        f[c] = Infinity;
      } else {
        const dy = (r - sr) * hOverW;
        f[c] = dy * dy;
        finite++;
      }
    }
    if (finite === 0) {
      distanceM.fill(Infinity, rowStart, rowStart + width);
      nearest.fill(-1, rowStart, rowStart + width);
      continue;
    }
    const k = lowerEnvelope(width, f, v, zb);
    let j = 0;
    for (let q = 0; q < width; q++) {
      while (j < k && (zb[j + 1] ?? Infinity) < q) j++;
      const p = v[j] ?? 0;
      const dx = q - p;
      distanceM[rowStart + q] = Math.sqrt(dx * dx + (f[p] ?? 0)) * w;
      nearest[rowStart + q] = (seedRow[p] ?? 0) * width + p;
    }
  }
  return { distanceM, nearest };
}

/**
 * Pass 1: for each cell, the row of the nearest seed in its column (−1 if
 * the column has none), written into `rowOut`. Two row-major sweeps.
 */
function nearestSeedRowInColumn(width: number, height: number, seeds: Uint8Array, rowOut: Int32Array): void {
  const last = new Int32Array(width).fill(-1);
  for (let r = 0; r < height; r++) {
    const rowStart = r * width;
    for (let c = 0; c < width; c++) {
      const i = rowStart + c;
      if (seeds[i] !== 0) last[c] = r;
      rowOut[i] = last[c] ?? -1;
    }
  }
  last.fill(-1);
  for (let r = height - 1; r >= 0; r--) {
    const rowStart = r * width;
    for (let c = 0; c < width; c++) {
      const i = rowStart + c;
      if (seeds[i] !== 0) last[c] = r;
      const below = last[c] ?? -1;
      if (below < 0) continue;
      const above = rowOut[i] ?? -1;
      if (above < 0 || below - r < r - above) rowOut[i] = below;
    }
  }
}

/**
 * Lower envelope of the parabolas y = (x − q)² + f[q] over the columns q with
 * finite f (Felzenszwalb & Huttenlocher 2012, algorithm DT(f)). Fills `v`
 * with the parabolas' columns and `zb` with the boundaries between them;
 * returns the index of the last parabola (count − 1).
 */
function lowerEnvelope(width: number, f: Float64Array, v: Int32Array, zb: Float64Array): number {
  let k = -1;
  for (let q = 0; q < width; q++) {
    const fq = f[q] ?? Infinity;
    if (fq === Infinity) continue;
    if (k < 0) {
      k = 0;
      v[0] = q;
      zb[0] = -Infinity;
      zb[1] = Infinity;
      continue;
    }
    const base = fq + q * q;
    let p = v[k] ?? 0;
    let s = (base - ((f[p] ?? 0) + p * p)) / (2 * (q - p));
    while (s <= (zb[k] ?? -Infinity)) {
      k--;
      p = v[k] ?? 0;
      s = (base - ((f[p] ?? 0) + p * p)) / (2 * (q - p));
    }
    k++;
    v[k] = q;
    zb[k] = s;
    zb[k + 1] = Infinity;
  }
  return k;
}

/** Stands for "no seed" in a column's nearest rows above and below (far beyond any grid). */
const FAR_ROW = 1 << 29;

/**
 * The nearest seed within a reach, one row at a time, for few seeds on a
 * large grid (pond cells on a DEM): the same two passes as
 * {@link distanceTransform} (nearest seed row per column, then the lower
 * envelope of parabolas along the row, Felzenszwalb & Huttenlocher 2012),
 * but pass 1 keeps, per column, the nearest seed rows above and below the
 * current row (updated only at rows that hold seeds) and ignores seeds more
 * than the reach away vertically, and each row is computed on its own into
 * row-sized buffers. Rows with no seed within reach cost next to nothing.
 * Cells within `reachM` get the same distance and nearest seed as
 * {@link distanceTransform} on the same grid and seeds.
 */
export class NearestSeedSweep {
  private readonly width: number;
  private readonly height: number;
  private readonly cellWidthM: Float64Array;
  private readonly cellHeightM: number;
  private readonly reachM: number;
  /** Seeds more rows away than this cannot be within reach. */
  private readonly capRows: number;
  /** Seeds as slots, column by column and down each column: row, column and index in the caller's list. */
  private readonly slotRow: Int32Array;
  private readonly slotCol: Int32Array;
  private readonly slotSeed: Int32Array;
  /** Slots row by row: rowStart[r] … rowStart[r + 1] − 1 index `rowSlots`. */
  private readonly rowStart: Int32Array;
  private readonly rowSlots: Int32Array;
  /** Per column: nearest seed row at or above the current row and its slot; the same below it. */
  private readonly aboveRow: Int32Array;
  private readonly aboveSlot: Int32Array;
  private readonly belowRow: Int32Array;
  private readonly belowSlot: Int32Array;
  private readonly f: Float64Array;
  private readonly fSlot: Int32Array;
  private readonly v: Int32Array;
  private readonly zb: Float64Array;
  /** Columns with a seed within reach vertically, in the current row. */
  private readonly active: Int32Array;
  private lastRow = -1;

  /**
   * `seeds`: flat indices of the seed cells (any order; a cell listed more
   * than once counts once, as its last entry); `reachM`: the distance that
   * matters, metres.
   */
  constructor(geometry: DistanceGeometry, seeds: Int32Array, reachM: number) {
    const { width, height, cellHeightM } = geometry;
    if (!(reachM >= 0)) throw new Error(`reach must be ≥ 0 m; got ${reachM}`);
    this.width = width;
    this.height = height;
    this.cellWidthM = geometry.cellWidthM;
    this.cellHeightM = cellHeightM;
    this.reachM = reachM;
    this.capRows = Math.min(height, Math.ceil(reachM / cellHeightM) + 1);
    const count = seeds.length;
    // Counting sort by row, then a stable one by column: column-major, rows ascending, ties in input order.
    const byRowStart = new Int32Array(height + 1);
    for (let k = 0; k < count; k++) {
      const s = seeds[k]!;
      if (!(s >= 0 && s < width * height)) throw new Error(`seed ${s} lies off the ${width} × ${height} grid`);
      const r = ((s / width) | 0) + 1;
      byRowStart[r] = byRowStart[r]! + 1;
    }
    for (let r = 0; r < height; r++) byRowStart[r + 1] = byRowStart[r + 1]! + byRowStart[r]!;
    const byRow = new Int32Array(count);
    const next = byRowStart.slice(0, height);
    for (let k = 0; k < count; k++) {
      const r = (seeds[k]! / width) | 0;
      const at = next[r]!;
      byRow[at] = k;
      next[r] = at + 1;
    }
    const colStart = new Int32Array(width + 1);
    for (let k = 0; k < count; k++) {
      const c = (seeds[k]! % width) + 1;
      colStart[c] = colStart[c]! + 1;
    }
    for (let c = 0; c < width; c++) colStart[c + 1] = colStart[c + 1]! + colStart[c]!;
    const fillAt = colStart.slice(0, width);
    const slotRow = new Int32Array(count);
    const slotSeed = new Int32Array(count);
    for (let j = 0; j < count; j++) {
      const k = byRow[j]!;
      const s = seeds[k]!;
      const c = s % width;
      const r = (s / width) | 0;
      const at = fillAt[c]!;
      if (at > colStart[c]! && slotRow[at - 1] === r) {
        slotSeed[at - 1] = k; // the same cell again: the last entry counts
        continue;
      }
      slotRow[at] = r;
      slotSeed[at] = k;
      fillAt[c] = at + 1;
    }
    // Close the gaps duplicates left, note each slot's column, and start each column at its first seed.
    const slotCol = new Int32Array(count);
    const aboveRow = new Int32Array(width).fill(-FAR_ROW);
    const aboveSlot = new Int32Array(width).fill(-1);
    const belowRow = new Int32Array(width).fill(FAR_ROW);
    const belowSlot = new Int32Array(width).fill(-1);
    let slots = 0;
    for (let c = 0; c < width; c++) {
      const from = colStart[c]!;
      const to = fillAt[c]!;
      if (to > from) {
        belowRow[c] = slotRow[from]!;
        belowSlot[c] = slots;
      }
      for (let j = from; j < to; j++) {
        slotRow[slots] = slotRow[j]!;
        slotSeed[slots] = slotSeed[j]!;
        slotCol[slots] = c;
        slots++;
      }
    }
    // Slots row by row (counting sort; within a row, columns ascending).
    const rowStart = new Int32Array(height + 1);
    for (let j = 0; j < slots; j++) {
      const r = slotRow[j]! + 1;
      rowStart[r] = rowStart[r]! + 1;
    }
    for (let r = 0; r < height; r++) rowStart[r + 1] = rowStart[r + 1]! + rowStart[r]!;
    const rowSlots = new Int32Array(slots);
    const put = rowStart.slice(0, height);
    for (let j = 0; j < slots; j++) {
      const r = slotRow[j]!;
      const at = put[r]!;
      rowSlots[at] = j;
      put[r] = at + 1;
    }
    this.slotRow = slotRow;
    this.slotCol = slotCol;
    this.slotSeed = slotSeed;
    this.rowStart = rowStart;
    this.rowSlots = rowSlots;
    this.aboveRow = aboveRow;
    this.aboveSlot = aboveSlot;
    this.belowRow = belowRow;
    this.belowSlot = belowSlot;
    this.f = new Float64Array(width);
    this.fSlot = new Int32Array(width);
    this.v = new Int32Array(width);
    this.zb = new Float64Array(width + 1);
    this.active = new Int32Array(width);
  }

  /**
   * Row `r` (rows in increasing order): lists the cells of the row within
   * the reach of a seed, by column ascending. For the m-th such cell,
   * `cols[m]` is its column, `distanceM[m]` the distance from its centre to
   * the nearest seed centre, metres (as a Float32, as
   * {@link distanceTransform} stores it), and `nearest[m]` the index in
   * `seeds` of that seed. Each array needs room for a row. Returns the
   * number of cells listed.
   */
  row(r: number, cols: Int32Array, distanceM: Float32Array, nearest: Int32Array): number {
    if (r <= this.lastRow || r >= this.height) throw new Error(`rows must be asked in increasing order on the grid; got ${r} after ${this.lastRow}`);
    const { width, height, capRows, slotRow, slotCol, slotSeed, rowStart, rowSlots, aboveRow, aboveSlot, belowRow, belowSlot, f, fSlot, v, zb, active } = this;
    // Seeds of the rows passed become the nearest above in their column; the next one down, the nearest below.
    for (let j = rowStart[this.lastRow + 1]!; j < rowStart[r + 1]!; j++) {
      const slot = rowSlots[j]!;
      const c = slotCol[slot]!;
      aboveRow[c] = slotRow[slot]!;
      aboveSlot[c] = slot;
      const below = slot + 1;
      if (below < slotRow.length && slotCol[below] === c) {
        belowRow[c] = slotRow[below]!;
        belowSlot[c] = below;
      } else {
        belowRow[c] = FAR_ROW;
        belowSlot[c] = -1;
      }
    }
    this.lastRow = r;
    if (rowStart[Math.min(height, r + capRows + 1)]! - rowStart[Math.max(0, r - capRows)]! === 0) return 0;
    const w = this.cellWidthM[r]!;
    const hOverW = this.cellHeightM / w;
    let actives = 0;
    for (let c = 0; c < width; c++) {
      // Nearest seed row in the column: the one below only when strictly nearer (ties: above, as distanceTransform).
      const up = r - aboveRow[c]!;
      const down = belowRow[c]! - r;
      const rows = down < up ? down : up;
      if (rows > capRows) continue;
      const dy = rows * hOverW;
      f[c] = dy * dy;
      fSlot[c] = down < up ? belowSlot[c]! : aboveSlot[c]!;
      active[actives++] = c;
    }
    if (actives === 0) return 0;
    const k = lowerEnvelopeOf(active, actives, f, v, zb);
    // Parabola j is the nearest on columns zb[j] < q ≤ zb[j + 1] (as in distanceTransform); only
    // columns within `span` of its own column can be within reach.
    const reachM = this.reachM;
    const span = Math.floor((reachM * (1 + 1e-6)) / w) + 1;
    let m = 0;
    for (let j = 0; j <= k; j++) {
      const p = v[j]!;
      const lo = Math.max(0, p - span, Math.floor(zb[j]!) + 1);
      const hi = Math.min(width - 1, p + span, Math.floor(zb[j + 1]!));
      const fp = f[p]!;
      const seed = slotSeed[fSlot[p]!]!;
      for (let q = lo; q <= hi; q++) {
        const dx = q - p;
        const d = Math.fround(Math.sqrt(dx * dx + fp) * w);
        if (!(d <= reachM)) continue;
        cols[m] = q;
        distanceM[m] = d;
        nearest[m] = seed;
        m++;
      }
    }
    return m;
  }
}

/**
 * {@link lowerEnvelope} over the columns `cols[0 … count − 1]` (ascending,
 * each with a finite f) only: the same envelope, without visiting the
 * columns whose f is infinite.
 */
function lowerEnvelopeOf(cols: Int32Array, count: number, f: Float64Array, v: Int32Array, zb: Float64Array): number {
  let k = 0;
  v[0] = cols[0]!;
  zb[0] = -Infinity;
  zb[1] = Infinity;
  for (let m = 1; m < count; m++) {
    const q = cols[m]!;
    const base = f[q]! + q * q;
    let p = v[k]!;
    let s = (base - (f[p]! + p * p)) / (2 * (q - p));
    while (s <= zb[k]!) {
      k--;
      p = v[k]!;
      s = (base - (f[p]! + p * p)) / (2 * (q - p));
    }
    k++;
    v[k] = q;
    zb[k] = s;
    zb[k + 1] = Infinity;
  }
  return k;
}
