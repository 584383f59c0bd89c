/**
 * Well-known text (OGC Simple Features, 06-103r4 §7) for the geometry types a
 * crest can have: POINT, MULTIPOINT, LINESTRING, MULTILINESTRING.
 *
 * Keywords are case-insensitive; a Z, M or ZM tag (also glued, as in POINTZ)
 * is accepted and any ordinate after x and y is ignored. The result uses the
 * GeoJSON shapes so both readers share one geometry check.
 */

/** A parsed WKT geometry, x/y only, in the GeoJSON shape of the same type. */
export type WktGeometry =
  | { type: 'Point'; coordinates: [number, number] }
  | { type: 'MultiPoint'; coordinates: [number, number][] }
  | { type: 'LineString'; coordinates: [number, number][] }
  | { type: 'MultiLineString'; coordinates: [number, number][][] };

/** Parse result: the geometry, or why the text is not one pondage can use. */
export type WktResult = { ok: true; geometry: WktGeometry } | { ok: false; reason: string };

const TOKEN = /\s*([A-Za-z]+|[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[(),])/y;
const OTHER_TYPES = /^(POLYGON|MULTIPOLYGON|GEOMETRYCOLLECTION|CIRCULARSTRING|COMPOUNDCURVE|CURVEPOLYGON|TIN|TRIANGLE|POLYHEDRALSURFACE)/;
const USABLE = 'POINT, LINESTRING or MULTILINESTRING';

class WktSyntax extends Error {}

/** Parses one WKT geometry. Never throws; problems come back as a reason. */
export function parseWkt(text: string): WktResult {
  const tokens: string[] = [];
  const src = text.trim();
  TOKEN.lastIndex = 0;
  while (TOKEN.lastIndex < src.length) {
    const at = TOKEN.lastIndex;
    const m = TOKEN.exec(src);
    if (m === null || m[1] === undefined) {
      return { ok: false, reason: `unexpected text "${src.slice(at, at + 12).trim()}" in WKT` };
    }
    tokens.push(m[1]);
  }
  if (tokens.length === 0) return { ok: false, reason: 'empty WKT' };
  const head = (tokens[0] ?? '').toUpperCase();
  const typeMatch = /^(MULTILINESTRING|LINESTRING|MULTIPOINT|POINT)(ZM|Z|M)?$/.exec(head);
  if (typeMatch === null) {
    if (OTHER_TYPES.test(head)) return { ok: false, reason: `${head} is not a crest geometry; use ${USABLE}` };
    return { ok: false, reason: `"${tokens[0] ?? ''}" is not a WKT geometry type; use ${USABLE}` };
  }
  let pos = 1;
  const tag = (tokens[pos] ?? '').toUpperCase();
  if (typeMatch[2] === undefined && (tag === 'Z' || tag === 'M' || tag === 'ZM')) pos++;
  if ((tokens[pos] ?? '').toUpperCase() === 'EMPTY') return { ok: false, reason: `${typeMatch[1]} EMPTY has no coordinates` };

  const expect = (tok: string): void => {
    if (tokens[pos] !== tok) throw new WktSyntax(`expected "${tok}" but found "${tokens[pos] ?? 'end of text'}"`);
    pos++;
  };
  const coord = (): [number, number] => {
    const xy: number[] = [];
    while (pos < tokens.length && /^[-+.\d]/.test(tokens[pos] ?? '')) {
      xy.push(Number(tokens[pos]));
      pos++;
    }
    const [x, y] = xy;
    if (x === undefined || y === undefined || xy.length > 4) {
      throw new WktSyntax(`a coordinate needs 2 to 4 numbers, found ${xy.length}`);
    }
    return [x, y];
  };
  const coordList = (): [number, number][] => {
    expect('(');
    const out = [coord()];
    while (tokens[pos] === ',') {
      pos++;
      out.push(coord());
    }
    expect(')');
    return out;
  };
  try {
    let geometry: WktGeometry;
    switch (typeMatch[1]) {
      case 'POINT': {
        expect('(');
        geometry = { type: 'Point', coordinates: coord() };
        expect(')');
        break;
      }
      case 'LINESTRING':
        geometry = { type: 'LineString', coordinates: coordList() };
        break;
      case 'MULTIPOINT': {
        // Both MULTIPOINT ((1 2), (3 4)) and the older MULTIPOINT (1 2, 3 4).
        expect('(');
        const pts: [number, number][] = [];
        do {
          if (pts.length > 0) pos++;
          if (tokens[pos] === '(') {
            pos++;
            pts.push(coord());
            expect(')');
          } else pts.push(coord());
        } while (tokens[pos] === ',');
        expect(')');
        geometry = { type: 'MultiPoint', coordinates: pts };
        break;
      }
      default: {
        expect('(');
        const lines = [coordList()];
        while (tokens[pos] === ',') {
          pos++;
          lines.push(coordList());
        }
        expect(')');
        geometry = { type: 'MultiLineString', coordinates: lines };
      }
    }
    if (pos < tokens.length) throw new WktSyntax(`unexpected "${tokens[pos] ?? ''}" after the geometry`);
    return { ok: true, geometry };
  } catch (err) {
    if (err instanceof WktSyntax) return { ok: false, reason: `malformed ${typeMatch[1]}: ${err.message}` };
    throw err;
  }
}
