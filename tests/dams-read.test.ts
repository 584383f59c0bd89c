import { readFileSync } from 'node:fs';
import proj4 from 'proj4';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/errors.js';
import { parseCsv, detectDelimiter, CsvSyntaxError } from '../src/io/csv.js';
import { detectDamFormat, parseDams, readDams, type DamReadOptions, type XyTransform } from '../src/io/dams-read.js';
import { parseWkt } from '../src/io/wkt.js';

const FIXTURES = 'fixtures/dams';

function fixture(name: string): { text: string; file: string } {
  return { text: readFileSync(new URL(`../${FIXTURES}/${name}`, import.meta.url), 'utf8'), file: `${FIXTURES}/${name}` };
}

/** A stand-in lon/lat → DEM transform that is easy to invert by eye. */
const fakeLonLat: XyTransform = (x, y) => [x * 1000, y * 1000];
/** A stand-in --dams-crs → DEM transform (a shift). */
const shift: XyTransform = (x, y) => [x + 1, y - 2];
const LONLAT: DamReadOptions = { lonLatToDem: fakeLonLat };
const WITH_CRS: DamReadOptions = { lonLatToDem: fakeLonLat, damsCrs: { toDem: shift, label: 'EPSG:26911' } };

/** The InputError message a call throws (fails the test if it throws anything else or nothing). */
function inputError(f: () => unknown): string {
  try {
    f();
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return (err as InputError).message;
  }
  throw new Error('expected an InputError');
}

describe('RFC 4180 CSV parsing (examples from RFC 4180 §2)', () => {
  it('§2.1–2.2: records separated by line breaks, last one with or without a break', () => {
    expect(parseCsv('aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n', ',').map((r) => r.fields)).toEqual([
      ['aaa', 'bbb', 'ccc'],
      ['zzz', 'yyy', 'xxx'],
    ]);
    expect(parseCsv('aaa,bbb,ccc\r\nzzz,yyy,xxx', ',').map((r) => r.fields)).toEqual([
      ['aaa', 'bbb', 'ccc'],
      ['zzz', 'yyy', 'xxx'],
    ]);
  });
  it('§2.5: fields may be enclosed in double quotes', () => {
    expect(parseCsv('"aaa","bbb","ccc"\r\nzzz,yyy,xxx', ',').map((r) => r.fields)).toEqual([
      ['aaa', 'bbb', 'ccc'],
      ['zzz', 'yyy', 'xxx'],
    ]);
  });
  it('§2.6: quoted fields hold line breaks and commas; the next record starts on the right line', () => {
    const records = parseCsv('"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx', ',');
    expect(records.map((r) => r.fields)).toEqual([
      ['aaa', 'b\r\nbb', 'ccc'],
      ['zzz', 'yyy', 'xxx'],
    ]);
    expect(records.map((r) => r.line)).toEqual([1, 3]);
    expect(parseCsv('a,"b,c",d', ',')[0]?.fields).toEqual(['a', 'b,c', 'd']);
  });
  it('§2.7: a quote inside a quoted field is written twice', () => {
    expect(parseCsv('"aaa","b""bb","ccc"', ',')[0]?.fields).toEqual(['aaa', 'b"bb', 'ccc']);
  });
  it('§2.4: spaces are part of a field; empty fields are kept', () => {
    expect(parseCsv(' a , b ,,', ',')[0]?.fields).toEqual([' a ', ' b ', '', '']);
  });
  it('detects the delimiter from the header, ignoring quoted characters', () => {
    expect(detectDelimiter('id;x;y\n1;2,5;3')).toBe(';');
    expect(detectDelimiter('id,x,y\n1,2,3')).toBe(',');
    expect(detectDelimiter('"a;b;c",x\n')).toBe(',');
  });
  it('rejects an unclosed quote and text after a closing quote, with the line', () => {
    expect(() => parseCsv('a,b\n"open,1\n', ',')).toThrow(/opened on line 2 is never closed/);
    expect(() => parseCsv('a,b\n1,"x"y\n', ',')).toThrow(CsvSyntaxError);
    expect(() => parseCsv('a,b\n1,"x"y\n', ',')).toThrow(/text after a closing quote on line 2; .* two quotes/);
  });
});

describe('WKT parsing (examples from OGC 06-103r4 Simple Feature Access, Table 7, from memory)', () => {
  it('Point (10 10)', () => {
    expect(parseWkt('Point (10 10)')).toEqual({ ok: true, geometry: { type: 'Point', coordinates: [10, 10] } });
  });
  it('LineString ( 10 10, 20 20, 30 40)', () => {
    expect(parseWkt('LineString ( 10 10, 20 20, 30 40)')).toEqual({
      ok: true,
      geometry: { type: 'LineString', coordinates: [[10, 10], [20, 20], [30, 40]] },
    });
  });
  it('MultiLineString ( ( 10 10, 20 20 ), ( 15 15, 30 15 ) )', () => {
    expect(parseWkt('MultiLineString ( ( 10 10, 20 20 ), ( 15 15, 30 15 ) )')).toEqual({
      ok: true,
      geometry: { type: 'MultiLineString', coordinates: [[[10, 10], [20, 20]], [[15, 15], [30, 15]]] },
    });
  });
  it('MultiPoint ((10 10), (20 20)) and the older MultiPoint (10 10, 20 20)', () => {
    const expected = { ok: true, geometry: { type: 'MultiPoint', coordinates: [[10, 10], [20, 20]] } };
    expect(parseWkt('MultiPoint ((10 10), (20 20))')).toEqual(expected);
    expect(parseWkt('MultiPoint (10 10, 20 20)')).toEqual(expected);
  });
  it('Point Z (10 10 5), Point ZM (10 10 5 40), Point M (10 10 40): extra ordinates ignored', () => {
    for (const text of ['Point Z (10 10 5)', 'Point ZM (10 10 5 40)', 'Point M (10 10 40)', 'POINTZ(10 10 5)']) {
      expect(parseWkt(text)).toEqual({ ok: true, geometry: { type: 'Point', coordinates: [10, 10] } });
    }
  });
  it('is case-insensitive and reads signed and exponent numbers', () => {
    expect(parseWkt('linestring(-1.5e2 +2, .5 3.)')).toEqual({
      ok: true,
      geometry: { type: 'LineString', coordinates: [[-150, 2], [0.5, 3]] },
    });
  });
  it('explains what it cannot use', () => {
    const polygon = parseWkt('Polygon ((10 10, 10 20, 20 20, 20 15, 10 10))');
    expect(polygon.ok === false && polygon.reason).toMatch(/POLYGON is not a crest geometry; use POINT, LINESTRING or MULTILINESTRING/);
    const empty = parseWkt('POINT EMPTY');
    expect(empty.ok === false && empty.reason).toMatch(/EMPTY/);
    const broken = parseWkt('LINESTRING (1 2, 3)');
    expect(broken.ok === false && broken.reason).toMatch(/malformed LINESTRING/);
    const junk = parseWkt('LINESTRING (1 2, 3 4) extra');
    expect(junk.ok).toBe(false);
  });
});

describe('format detection', () => {
  it('reads content first, then the extension', () => {
    expect(detectDamFormat('{"type":"FeatureCollection"}', 'dams.txt')).toBe('geojson');
    expect(detectDamFormat('\ufeff  {"type":"Feature"}', 'dams.csv')).toBe('geojson');
    expect(detectDamFormat('id,x,y\n1,2,3\n', 'dams.csv')).toBe('csv');
    expect(detectDamFormat('id;lon;lat\n', 'dams.txt')).toBe('csv');
    expect(detectDamFormat('garbage', 'dams.geojson')).toBe('geojson');
    expect(detectDamFormat('hello world\n', 'dams.txt')).toBeNull();
    expect(detectDamFormat('\u0000\u0000\u0027\u000a', 'dams.shp')).toBeNull();
  });
  it('a file that is neither: InputError naming the file and the accepted formats', () => {
    const msg = inputError(() => parseDams('\u0000\u0000\u0027\u000a', 'survey/dams.shp', LONLAT));
    expect(msg).toContain('survey/dams.shp');
    expect(msg).toMatch(/GeoJSON/);
    expect(msg).toMatch(/CSV/);
    expect(msg).toMatch(/ogr2ogr/);
  });
  it('a file that is not there: InputError naming it', () => {
    const msg = inputError(() => readDams(`${FIXTURES}/no-such-file.geojson`, LONLAT));
    expect(msg).toContain('no-such-file.geojson');
    expect(msg).toMatch(/not found/);
  });
});

describe('GeoJSON inventories', () => {
  const { text, file } = fixture('lines-lonlat.geojson');
  const result = parseDams(text, file, LONLAT);

  it('reads lines, multilines, points and one-point multipoints in order', () => {
    expect(result.format).toBe('geojson');
    expect(result.dams.map((d) => d.geometry.kind)).toEqual(['line', 'line', 'point', 'point']);
    expect(result.dams.map((d) => d.index)).toEqual([0, 1, 2, 3]);
    const multi = result.dams[1]?.geometry;
    expect(multi?.kind === 'line' && multi.lines.length).toBe(2);
  });

  it('transforms every vertex with the lon/lat transform (RFC 7946 default CRS)', () => {
    const first = result.dams[0]?.geometry;
    expect(first?.kind === 'line' && first.lines[0]?.[0]?.[0]).toBeCloseTo(-113501.2, 6);
    expect(first?.kind === 'line' && first.lines[0]?.[0]?.[1]).toBeCloseTo(46203.1, 6);
    const pt = result.dams[2]?.geometry;
    expect(pt?.kind === 'point' && pt.x).toBeCloseTo(-113482.2, 6);
    expect(pt?.kind === 'point' && pt.y).toBeCloseTo(46215, 6);
    expect(result.sourceCrs).toMatch(/WGS84/);
  });

  it('types the recognised properties and carries the rest untouched', () => {
    const d = result.dams[0];
    expect(d).toMatchObject({ id: 'cr-101', heightM: 1.2, status: 'candidate', confidence: 0.8, year: 2021, upstream: 'left' });
    expect(d?.extra).toEqual({ observer: 'crew B', notes: { photo: 3 } });
    expect(result.dams[1]).toMatchObject({ id: '7', heightM: null, status: 'breached', confidence: null, year: null, upstream: null });
    expect(result.dams[2]?.extra).toEqual({ source: 'detector-v0', score_raw: 0.91 });
  });

  it('generates dam-<n> for a feature without id, and uses a Feature id member', () => {
    expect(result.dams[2]?.id).toBe('dam-3');
    expect(result.dams[2]?.status).toBe('confirmed');
    expect(result.dams[3]?.id).toBe('pt-4');
    expect(parseDams(text, file, LONLAT).dams.map((d) => d.id)).toEqual(result.dams.map((d) => d.id));
  });

  it('generated ids skip numbers already taken by explicit ids', () => {
    const fc = {
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', properties: {}, geometry: { type: 'Point', coordinates: [1, 1] } },
        { type: 'Feature', properties: { id: 'dam-1' }, geometry: { type: 'Point', coordinates: [2, 2] } },
        { type: 'Feature', properties: { id: 'dam-4' }, geometry: { type: 'Point', coordinates: [3, 3] } },
        { type: 'Feature', properties: null, geometry: { type: 'Point', coordinates: [4, 4] } },
      ],
    };
    const ids = parseDams(JSON.stringify(fc), 'gen.geojson', LONLAT).dams.map((d) => d.id);
    expect(ids).toEqual(['dam-2', 'dam-1', 'dam-4', 'dam-5']);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it('reads a bare Feature', () => {
    const f = { type: 'Feature', properties: { id: 'solo' }, geometry: { type: 'Point', coordinates: [-113, 46] } };
    const r = parseDams(JSON.stringify(f), 'solo.json', LONLAT);
    expect(r.dams.map((d) => d.id)).toEqual(['solo']);
  });

  it('projected-looking coordinates without --dams-crs: InputError naming the feature and --dams-crs', () => {
    const p = fixture('points-projected.geojson');
    const msg = inputError(() => parseDams(p.text, p.file, LONLAT));
    expect(msg).toContain(p.file);
    expect(msg).toMatch(/feature 2/);
    expect(msg).toMatch(/look projected/);
    expect(msg).toMatch(/--dams-crs/);
  });

  it('with --dams-crs the coordinates go through its transform', () => {
    const p = fixture('points-utm-declared.geojson');
    const r = parseDams(p.text, p.file, WITH_CRS);
    expect(r.dams[0]?.geometry).toEqual({ kind: 'point', x: 512346.5, y: 5012343.5 });
    expect(r.sourceCrs).toBe('EPSG:26911');
    expect(r.declaredCrs).toBe('urn:ogc:def:crs:EPSG::26911');
    expect(r.warnings.map((w) => w.code)).toContain('dams-crs-overrides-file');
  });

  it('honours an old-style crs member through the resolver, and says so when it cannot', () => {
    const p = fixture('points-utm-declared.geojson');
    const seen: string[] = [];
    const r = parseDams(p.text, p.file, {
      lonLatToDem: fakeLonLat,
      resolveDeclaredCrs: (name) => {
        seen.push(name);
        return name.endsWith('26911') ? shift : null;
      },
    });
    expect(seen).toEqual(['urn:ogc:def:crs:EPSG::26911']);
    expect(r.declaredCrs).toBe('urn:ogc:def:crs:EPSG::26911');
    expect(r.dams[1]?.geometry).toEqual({ kind: 'line', lines: [[[512401, 5012398], [512413, 5012403]]] });
    const msg = inputError(() => parseDams(p.text, p.file, LONLAT));
    expect(msg).toContain(p.file);
    expect(msg).toMatch(/EPSG::26911/);
    expect(msg).toMatch(/--dams-crs/);
  });

  it('lon/lat → UTM with proj4 lands where proj4 says, and on the central meridian at 500 000 m', () => {
    // UTM zone 11N, WGS84 (EPSG:32611). proj4 (general-purpose PROJ port) is the reference.
    const utm11 = '+proj=utm +zone=11 +datum=WGS84 +units=m +no_defs';
    const toUtm: XyTransform = (lon, lat) => {
      const [x, y] = proj4('EPSG:4326', utm11, [lon, lat]);
      return [x ?? NaN, y ?? NaN];
    };
    const c = fixture('lonlat.csv');
    const r = parseDams(c.text, c.file, { lonLatToDem: toUtm });
    const expected = proj4('EPSG:4326', utm11).forward([-116.9, 45.1]);
    const p2 = r.dams[1]?.geometry;
    expect(p2?.kind === 'point' && p2.x).toBeCloseTo(expected[0] ?? NaN, 6);
    expect(p2?.kind === 'point' && p2.y).toBeCloseTo(expected[1] ?? NaN, 6);
    // UTM false easting 500 000 m on the zone's central meridian, 117°W for zone 11 (definition of UTM).
    const p1 = r.dams[0]?.geometry;
    expect(p1?.kind === 'point' && p1.x).toBeCloseTo(500000, 3);
    // Northing at 45°N on the central meridian: 0.9996 × meridian arc 4 984 944.38 m (WGS84; value from memory).
    expect(p1?.kind === 'point' && p1.y).toBeCloseTo(0.9996 * 4984944.38, 0);
  });
});

describe('CSV inventories', () => {
  it('x/y with semicolons, decimal commas and RFC 4180 quoting', () => {
    const c = fixture('xy-semicolon.csv');
    const r = parseDams(c.text, c.file, WITH_CRS);
    expect(r.format).toBe('csv');
    expect(r.dams.map((d) => d.id)).toEqual(['sm-1', 'sm-2', 'dam-3']);
    expect(r.dams[0]?.geometry).toEqual({ kind: 'point', x: 512101.5, y: 5012198.25 });
    expect(r.dams[0]?.heightM).toBeCloseTo(1.4, 12);
    expect(r.dams[1]).toMatchObject({ heightM: null, status: 'proposed' });
    expect(r.dams[1]?.extra).toEqual({ notes: 'two; parts' });
    expect(r.dams[2]?.extra).toEqual({ notes: 'line one\r\nline two, with "quotes"' });
    expect(r.dams[2]?.heightM).toBeCloseTo(0.8, 12);
  });

  it('lon/lat columns are always WGS84, even with --dams-crs (which is reported unused)', () => {
    const c = fixture('lonlat.csv');
    const r = parseDams(c.text, c.file, WITH_CRS);
    expect(r.warnings.map((w) => w.code)).toEqual(['dams-crs-unused']);
    expect(r.sourceCrs).toMatch(/WGS84/);
    expect(r.dams[0]?.geometry).toEqual({ kind: 'point', x: -117000, y: 45000 });
    expect(r.dams[0]).toMatchObject({ id: 'll-1', heightM: 1.1, confidence: 0.65 });
    expect(r.dams[1]).toMatchObject({ id: 'll-2', heightM: null, confidence: 1 });
    expect(r.dams[0]?.extra).toEqual({ crew: 'north' });
  });

  it('WKT column: POINT, LINESTRING Z, lower-case MULTILINESTRING', () => {
    const c = fixture('wkt.csv');
    const r = parseDams(c.text, c.file, WITH_CRS);
    expect(r.dams.map((d) => d.geometry.kind)).toEqual(['point', 'line', 'line']);
    expect(r.dams[1]?.geometry).toEqual({ kind: 'line', lines: [[[512201, 5012298], [512211, 5012302]]] });
    const m = r.dams[2]?.geometry;
    expect(m?.kind === 'line' && m.lines.length).toBe(2);
    expect(r.dams[1]?.extra).toEqual({ remark: 'a line, with Z' });
  });

  it('x/y or WKT in projected units without --dams-crs: InputError naming --dams-crs', () => {
    const c = fixture('wkt.csv');
    const msg = inputError(() => parseDams(c.text, c.file, LONLAT));
    expect(msg).toContain(c.file);
    expect(msg).toMatch(/feature 1/);
    expect(msg).toMatch(/--dams-crs/);
    const en = 'id,easting,northing\nq,1,2\n';
    const msg2 = inputError(() => parseDams(en, 'en.csv', LONLAT));
    expect(msg2).toMatch(/en\.csv/);
    expect(msg2).toMatch(/easting\/northing/);
    expect(msg2).toMatch(/--dams-crs/);
  });

  it('both lon/lat and x/y: lon/lat unless --dams-crs is given, and a warning says which', () => {
    const text = 'id,lon,lat,x,y\nb-1,-117,45,500000,4982950\n';
    const a = parseDams(text, 'both.csv', LONLAT);
    expect(a.dams[0]?.geometry).toEqual({ kind: 'point', x: -117000, y: 45000 });
    expect(a.dams[0]?.extra).toEqual({ x: '500000', y: '4982950' });
    expect(a.warnings.map((w) => w.code)).toEqual(['csv-geometry-columns']);
    const b = parseDams(text, 'both.csv', WITH_CRS);
    expect(b.dams[0]?.geometry).toEqual({ kind: 'point', x: 500001, y: 4982948 });
    const w = parseDams('id,wkt,lon,lat\nk,POINT (1 2),-117,45\n', 'wkt-and-lonlat.csv', WITH_CRS);
    expect(w.dams[0]?.geometry).toEqual({ kind: 'point', x: 2, y: 0 });
    expect(w.dams[0]?.extra).toEqual({ lon: '-117', lat: '45' });
    expect(w.warnings.map((x) => x.message)).toEqual(['wkt-and-lonlat.csv: geometry read from column wkt; columns lon, lat kept as properties']);
  });

  it('out-of-range lon/lat columns name the row and the fix', () => {
    const msg = inputError(() => parseDams('id,lon,lat\nz-1,512000,5012000\n', 'll.csv', LONLAT));
    expect(msg).toMatch(/ll\.csv/);
    expect(msg).toMatch(/feature 1 \(line 2, id "z-1"\), geometry/);
    expect(msg).toMatch(/x\/y and pass --dams-crs/);
  });

  it('no geometry column, a missing partner column, ragged rows and bad quoting are InputErrors with the fix', () => {
    expect(inputError(() => parseDams('id,height_m\na,1\n', 'n.csv', LONLAT))).toMatch(/n\.csv.*no geometry column.*accepted names/s);
    expect(inputError(() => parseDams('id,lon\na,1\n', 'h.csv', LONLAT))).toMatch(/h\.csv.*"lon" has no partner.*lat, latitude/s);
    const ragged = inputError(() => parseDams('id,x,y\na,1,2,3\n', 'r.csv', WITH_CRS));
    expect(ragged).toMatch(/r\.csv/);
    expect(ragged).toMatch(/feature 1 \(line 2, id "a"\), row: has 4 fields but the header has 3; quote values/);
    expect(inputError(() => parseDams('id,x,y\n"a,1,2\n', 'q.csv', WITH_CRS))).toMatch(/q\.csv.*line 2.*never closed/s);
  });

  it('header only: empty inventory', () => {
    expect(inputError(() => parseDams('id,x,y\n', 'e.csv', WITH_CRS))).toMatch(/e\.csv: the dam inventory has no data rows; give at least one/);
  });
});

describe('problems are collected and reported together', () => {
  const p = fixture('problems.geojson');
  const msg = inputError(() => parseDams(p.text, p.file, LONLAT));

  it('one message, naming the file and counting the problems', () => {
    expect(msg.split('\n')[0]).toBe(`${p.file}: 12 problems in the dam inventory; fix them and run again:`);
  });
  it.each([
    ['unknown status', /feature 1 \(id "a1"\), status: "active" is not a status; use one of confirmed, candidate, proposed, breached/],
    ['percent sign', /feature 2 \(id "a2"\), confidence: "85%" is a percentage; write it as a fraction from 0 to 1 \(0\.85\)/],
    ['percentage number', /feature 3 \(id "a3"\), confidence: 85 looks like a percentage; write it as a fraction from 0 to 1 \(0\.85\)/],
    ['negative height', /feature 4 \(id "a4"\), height_m: -0\.5 is negative; give the crest height above the bed in metres/],
    ['non-numeric height', /feature 5 \(id "a5"\), height_m: "tall" is not a number; give the crest height/],
    ['one-vertex line', /feature 7 \(id "a7"\), geometry: LineString has 1 distinct vertex; needs at least 2/],
    ['polygon', /feature 8 \(id "a8"\), geometry: Polygon is not a crest geometry; give a LineString/],
    ['multipoint', /feature 9 \(id "a9"\), geometry: MultiPoint has 2 points; a dam is one point/],
    ['fractional year', /feature 10 \(id "a10"\), year: 2019\.5 is not a whole year/],
    ['bad upstream', /feature 10 \(id "a10"\), upstream: "north" is not a side; use left or right/],
    ['no geometry', /feature 10 \(id "a10"\), geometry: has no geometry; give a LineString/],
    ['duplicate ids', /id "a1" is used by features 1, 6; ids must be unique, so rename all but one/],
  ])('%s', (_name, pattern) => {
    expect(msg).toMatch(pattern);
  });

  it('lists the first 20 problems, then "and N more"', () => {
    const features = Array.from({ length: 25 }, (_, k) => ({
      type: 'Feature',
      properties: { id: `s-${k}`, status: 'maybe' },
      geometry: { type: 'Point', coordinates: [0, 0] },
    }));
    const many = inputError(() => parseDams(JSON.stringify({ type: 'FeatureCollection', features }), 'many.geojson', LONLAT));
    const lines = many.split('\n');
    expect(lines[0]).toMatch(/^many\.geojson: 25 problems/);
    expect(lines.filter((l) => l.startsWith('  - '))).toHaveLength(20);
    expect(lines[lines.length - 1]).toBe('  and 5 more');
  });

  it('height given with its unit: the fix says to write the number in metres', () => {
    const fc = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { height_m: '4 ft' }, geometry: { type: 'Point', coordinates: [0, 0] } }] };
    expect(inputError(() => parseDams(JSON.stringify(fc), 'u.geojson', LONLAT))).toMatch(/feature 1, height_m: "4 ft" is not a number; write the number alone, in metres/);
  });

  it('empty FeatureCollection and non-JSON are InputErrors naming the file', () => {
    expect(inputError(() => parseDams('{"type":"FeatureCollection","features":[]}', 'z.geojson', LONLAT))).toMatch(/z\.geojson: the dam inventory has no features/);
    expect(inputError(() => parseDams('{"type":', 'j.geojson', LONLAT))).toMatch(/j\.geojson: 1 problem.*not valid JSON/s);
    expect(inputError(() => parseDams('{"type":"Point","coordinates":[1,2]}', 'g.geojson', LONLAT))).toMatch(/g\.geojson.*a GeoJSON Point; give a FeatureCollection/s);
  });

  it('drops "upstream" on a point dam, with a warning: there is no drawn line for it to refer to', () => {
    const fc = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { id: 'pu', upstream: 'Left' }, geometry: { type: 'Point', coordinates: [0, 0] } }] };
    const r = parseDams(JSON.stringify(fc), 'pu.geojson', LONLAT);
    expect(r.dams[0]?.upstream).toBeNull();
    expect(r.warnings).toEqual([expect.objectContaining({ code: 'upstream-ignored', damId: 'pu' })]);
  });

  it('warns about a height property it does not read', () => {
    const fc = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { height: 1.2 }, geometry: { type: 'Point', coordinates: [0, 0] } }] };
    const r = parseDams(JSON.stringify(fc), 'w.geojson', LONLAT);
    expect(r.warnings.map((w) => w.code)).toEqual(['height-property-ignored']);
    expect(r.dams[0]?.heightM).toBeNull();
    expect(r.dams[0]?.extra).toEqual({ height: 1.2 });
  });
});
