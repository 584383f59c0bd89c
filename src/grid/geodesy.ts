/**
 * Ellipsoid geometry for geographic (lon/lat) grids: exact zone areas between
 * parallels, meridian arc length and radius of a parallel.
 *
 * Formulas: Snyder, J. P. (1987), Map Projections — A Working Manual, USGS
 * Professional Paper 1395, eq. 3-12 (the authalic `q` function) and ch. 4
 * (N·cosφ, the radius of a parallel); the meridian arc is Helmert's series in
 * the third flattening n (accurate to well under 1 mm on the Earth ellipsoids).
 * tests/crs.test.ts checks all three against numerical integration.
 */

/** An ellipsoid of revolution. */
export interface Ellipsoid {
  /** Semi-major axis, metres. */
  readonly aM: number;
  /** Flattening (dimensionless). */
  readonly f: number;
}

/** WGS 84 ellipsoid: a = 6 378 137 m, 1/f = 298.257223563 (NIMA TR8350.2). */
export const WGS84_ELLIPSOID: Ellipsoid = { aM: 6378137, f: 1 / 298.257223563 };

/** Degrees to radians. */
export const DEG_TO_RAD = Math.PI / 180;

/**
 * Snyder's q(φ) (eq. 3-12), dimensionless: a²·q(φ)/2 is the area, in m² per
 * radian of longitude, between the equator and latitude φ.
 */
export function authalicQ(latRad: number, ell: Ellipsoid = WGS84_ELLIPSOID): number {
  const e2 = ell.f * (2 - ell.f);
  const e = Math.sqrt(e2);
  const s = Math.sin(latRad);
  const es = e * s;
  return (1 - e2) * (s / (1 - es * es) - (1 / (2 * e)) * Math.log((1 - es) / (1 + es)));
}

/**
 * Area between two parallels for one radian of longitude, m² (always ≥ 0).
 * Multiply by the longitude extent in radians for a cell's area.
 */
export function zoneAreaPerRadianM2(lat1Rad: number, lat2Rad: number, ell: Ellipsoid = WGS84_ELLIPSOID): number {
  return (0.5 * ell.aM * ell.aM) * Math.abs(authalicQ(lat2Rad, ell) - authalicQ(lat1Rad, ell));
}

/** Radius of the parallel at latitude φ, metres: N·cosφ, N the prime-vertical radius of curvature. */
export function parallelRadiusM(latRad: number, ell: Ellipsoid = WGS84_ELLIPSOID): number {
  const e2 = ell.f * (2 - ell.f);
  const s = Math.sin(latRad);
  return (ell.aM * Math.cos(latRad)) / Math.sqrt(1 - e2 * s * s);
}

/** Length of the meridian arc from the equator to latitude φ, metres (signed, Helmert's series). */
export function meridianArcM(latRad: number, ell: Ellipsoid = WGS84_ELLIPSOID): number {
  const n = ell.f / (2 - ell.f);
  const n2 = n * n;
  const n3 = n2 * n;
  const n4 = n2 * n2;
  const p = latRad;
  return (
    (ell.aM / (1 + n)) *
    ((1 + n2 / 4 + n4 / 64) * p -
      1.5 * (n - n3 / 8) * Math.sin(2 * p) +
      (15 / 16) * (n2 - n4 / 4) * Math.sin(4 * p) -
      (35 / 48) * n3 * Math.sin(6 * p) +
      (315 / 512) * n4 * Math.sin(8 * p))
  );
}
