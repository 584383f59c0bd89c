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
