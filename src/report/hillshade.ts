/**
 * Hillshade of a DEM grid for the report's overview map.
 *
 * Slope and aspect from Horn's (1981) weighted 3 × 3 finite differences,
 * illumination as the cosine of the angle between the surface normal and the
 * sun:  cos(zenith)·cos(slope) + sin(zenith)·sin(slope)·cos(azimuth − aspect),
 * with the sun at azimuth 315° (north-west) and altitude 45°, the usual
 * defaults (as in GDAL's gdaldem hillshade). Written without per-cell trig:
 * with p = ∂z/∂east and q = ∂z/∂north the same value is
 *   (cos zenith − sin zenith · (p·sin az + q·cos az)) / √(1 + p² + q²).
 *
 * Edge and NoData policy: a neighbour outside the grid or NoData takes the
 * centre cell's value (so the slope is measured from the cells that exist);
 * a NoData centre gives NaN.
 */

/** Sun azimuth of the report's hillshade, degrees clockwise from north. */
export const HILLSHADE_AZIMUTH_DEG = 315;
/** Sun altitude of the report's hillshade, degrees above the horizon. */
export const HILLSHADE_ALTITUDE_DEG = 45;

/** A grid of elevations for hillshading: row-major, north-up, metres, NaN = NoData. */
export interface ShadeInput {
  width: number;
  height: number;
  /** Elevations, metres; length width × height. */
  z: Float32Array;
  /** East–west cell size per row, metres (length height), or one value for every row. */
  cellWidthM: Float64Array | number;
  /** North–south cell size, metres. */
  cellHeightM: number;
}

/**
 * Illumination in [0, 1] per cell (0 facing away from the sun, 1 facing it;
 * flat ground gives cos(zenith) = sin(altitude)); NaN where the DEM has NoData.
 */
export function hornHillshade(
  grid: ShadeInput,
  options: { azimuthDeg?: number; altitudeDeg?: number; zFactor?: number } = {},
): Float32Array {
  const { width, height, z, cellHeightM } = grid;
  const az = ((options.azimuthDeg ?? HILLSHADE_AZIMUTH_DEG) * Math.PI) / 180;
  const zenith = ((90 - (options.altitudeDeg ?? HILLSHADE_ALTITUDE_DEG)) * Math.PI) / 180;
  const zFactor = options.zFactor ?? 1;
  const cosZen = Math.cos(zenith);
  const sinZen = Math.sin(zenith);
  const sinAz = Math.sin(az);
  const cosAz = Math.cos(az);
  const out = new Float32Array(width * height);
  const rowWidths = typeof grid.cellWidthM === 'number' ? null : grid.cellWidthM;
  const fixedWidth = typeof grid.cellWidthM === 'number' ? grid.cellWidthM : 0;
  const invNs = zFactor / (8 * cellHeightM);
  for (let row = 0; row < height; row++) {
    const rowN = row > 0 ? row - 1 : row;
    const rowS = row < height - 1 ? row + 1 : row;
    const offN = rowN * width;
    const offS = rowS * width;
    const off = row * width;
    const invEw = zFactor / (8 * (rowWidths ? rowWidths[row]! : fixedWidth));
    const hasN = row > 0;
    const hasS = row < height - 1;
    for (let col = 0; col < width; col++) {
      const e = z[off + col]!;
      if (Number.isNaN(e)) {
        out[off + col] = NaN;
        continue;
      }
      const hasW = col > 0;
      const hasE = col < width - 1;
      const cW = hasW ? col - 1 : col;
      const cE = hasE ? col + 1 : col;
      // a b c / d e f / g h i, row above = north.
      let a = hasN && hasW ? z[offN + cW]! : e;
      let b = hasN ? z[offN + col]! : e;
      let c = hasN && hasE ? z[offN + cE]! : e;
      let d = hasW ? z[off + cW]! : e;
      let f = hasE ? z[off + cE]! : e;
      let g = hasS && hasW ? z[offS + cW]! : e;
      let h = hasS ? z[offS + col]! : e;
      let i = hasS && hasE ? z[offS + cE]! : e;
      if (Number.isNaN(a)) a = e;
      if (Number.isNaN(b)) b = e;
      if (Number.isNaN(c)) c = e;
      if (Number.isNaN(d)) d = e;
      if (Number.isNaN(f)) f = e;
      if (Number.isNaN(g)) g = e;
      if (Number.isNaN(h)) h = e;
      if (Number.isNaN(i)) i = e;
      const p = (c + 2 * f + i - (a + 2 * d + g)) * invEw;
      const q = (a + 2 * b + c - (g + 2 * h + i)) * invNs;
      const v = (cosZen - sinZen * (p * sinAz + q * cosAz)) / Math.sqrt(1 + p * p + q * q);
      out[off + col] = v > 0 ? v : 0;
    }
  }
  return out;
}
