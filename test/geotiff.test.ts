import { fromArrayBuffer } from 'geotiff';
import proj4 from 'proj4';
import { describe, expect, it } from 'vitest';
import { InputError, isInputError } from '../shared/errors.ts';
import { WGS84_GEOGRAPHIC, type Crs, type GridGeo } from '../worker/core/grid.ts';
import geokeysToProj4 from 'geotiff-geokeys-to-proj4';
import { commonCrsProj4, fillVoids, readDemTile } from '../worker/io/geotiff-read.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import {
  corruptIfdOffset,
  encodeTiff,
  overwrite,
  truncate,
  type SampleType,
  type TiffSpec,
} from './support/tiff-encoder.ts';

const UTM24S: Crs = { kind: 'projected', proj4: '', epsg: 32724, label: 'EPSG:32724' };
/** UTM zone 24 south on WGS84, written out from the UTM definition (k0 0.9996, lon0 -39°, FN 10 000 km). */
const UTM24S_PROJ4 = '+proj=utm +zone=24 +south +datum=WGS84 +units=m +no_defs';

/** Seeded generator (mulberry32) for reproducible test rasters. */
function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Invented hilly terrain: integers in metres, some below sea level. */
function terrainValues(width: number, height: number, seed: number): number[] {
  const r = rng(seed);
  const out: number[] = [];
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      out.push(Math.round(800 * Math.sin(x / 9) * Math.cos(y / 7) + 400 + 60 * r() - 120));
    }
  }
  return out;
}

function geographic(width: number, height: number, originX: number, originY: number, px: number): GridGeo {
  return { width, height, originX, originY, pixelX: px, pixelY: -px, crs: WGS84_GEOGRAPHIC };
}

async function expectInputError(p: Promise<unknown>, name: string, found: RegExp, expected: RegExp) {
  let err: unknown;
  try {
    await p;
  } catch (e) {
    err = e;
  }
  expect(isInputError(err), `expected an InputError, got ${String(err)}`).toBe(true);
  const ie = err as InputError;
  expect(ie.where).toBe(name);
  expect(ie.found).toMatch(found);
  expect(ie.expected).toMatch(expected);
  expect(ie.message.startsWith(`${name}: found `)).toBe(true);
}

describe('encodeGeoTiff -> readDemTile round trip', () => {
  it('Float32 geographic: same values and geotransform', async () => {
    const values = terrainValues(50, 40, 1).map((v) => v + 0.375);
    const geo = geographic(50, 40, -31.5, -12.25, 1 / 120);
    const tile = await readDemTile(encodeGeoTiff({ geo, data: Float32Array.from(values) }), 'a.tif');
    expect(tile.name).toBe('a.tif');
    expect(tile.geo).toEqual(geo);
    expect(Array.from(tile.data)).toEqual(values);
    expect(tile.voidsFilled).toBe(0);
    expect(tile.warnings).toEqual([]);
  });

  it('Int16 projected EPSG:32724 with nodata -32768', async () => {
    const values = terrainValues(30, 20, 2);
    values[45] = -32768;
    // Near 45.1° S 39.2° W (zone 24 south): open South Atlantic.
    const geo: GridGeo = {
      width: 30,
      height: 20,
      originX: 480000,
      originY: 5010000,
      pixelX: 30,
      pixelY: -30,
      crs: UTM24S,
    };
    const tile = await readDemTile(
      encodeGeoTiff({ geo, data: Int16Array.from(values), nodata: -32768 }),
      'u.tif',
    );
    expect(tile.geo.crs.kind).toBe('projected');
    expect(tile.geo.crs.epsg).toBe(32724);
    expect(tile.geo.crs.label).toContain('EPSG:32724');
    expect(tile.geo).toMatchObject({
      width: 30,
      height: 20,
      originX: 480000,
      originY: 5010000,
      pixelX: 30,
      pixelY: -30,
    });
    expect(tile.voidsFilled).toBe(1);
    for (let i = 0; i < values.length; i++) if (i !== 45) expect(tile.data[i]).toBe(values[i]);
  });

  it('Int32 geographic', async () => {
    const values = terrainValues(17, 9, 3).map((v) => v * 1000);
    const geo = geographic(17, 9, 160, 40, 0.5); // open North Pacific, 160–168.5° E, 35.5–40° N
    const tile = await readDemTile(encodeGeoTiff({ geo, data: Int32Array.from(values) }), 'i.tif');
    expect(Array.from(tile.data)).toEqual(values);
    expect(tile.geo).toEqual(geo);
  });

  it('NaN nodata: written as "nan", NaN in geotiff.js, filled and counted by readDemTile', async () => {
    const values = terrainValues(20, 20, 4);
    const data = Float32Array.from(values);
    const voids = [0, 21, 210, 399];
    for (const i of voids) data[i] = NaN;
    // 5° E 5° S: open Gulf of Guinea, about 400 km from the nearest island.
    const buf = encodeGeoTiff({ geo: geographic(20, 20, 5, -5, 0.01), data, nodata: NaN });
    const image = await (await fromArrayBuffer(buf)).getImage();
    expect(String(image.getFileDirectory().getValue('GDAL_NODATA'))).toMatch(/^nan\0?$/);
    const raw = (await image.readRasters({ interleave: true })) as unknown as Float32Array;
    for (const i of voids) expect(raw[i]).toBeNaN();
    const tile = await readDemTile(buf, 'n.tif');
    expect(tile.voidsFilled).toBe(voids.length);
    expect(tile.warnings.join('\n')).toMatch(/n\.tif: filled 4 void/);
    for (let i = 0; i < values.length; i++) {
      if (voids.includes(i)) expect(Number.isFinite(tile.data[i])).toBe(true);
      else expect(tile.data[i]).toBe(values[i]);
    }
  });

  it('cuts large rasters into several strips of about 256 KiB', async () => {
    const w = 700;
    const h = 200;
    const data = new Float32Array(w * h);
    for (let i = 0; i < data.length; i++) data[i] = (i % 977) - 100;
    const buf = encodeGeoTiff({ geo: geographic(w, h, 0, 1, 1 / 3600), data });
    const image = await (await fromArrayBuffer(buf)).getImage();
    const rowsPerStrip = Number(image.getFileDirectory().getValue('RowsPerStrip'));
    expect(rowsPerStrip).toBe(Math.floor((256 * 1024) / (w * 4)));
    const counts = (await image.getFileDirectory().loadValue('StripByteCounts')) as ArrayLike<number>;
    expect(counts.length).toBe(Math.ceil(h / rowsPerStrip));
    const tile = await readDemTile(buf, 'big.tif');
    let mismatches = 0;
    for (let i = 0; i < data.length; i++) if (tile.data[i] !== data[i]) mismatches++;
    expect(mismatches).toBe(0);
  });

  it('south-up raster (positive pixelY) round-trips through ModelTransformation', async () => {
    const values = terrainValues(6, 5, 5);
    const geo: GridGeo = {
      width: 6,
      height: 5,
      originX: 1,
      originY: -2,
      pixelX: 0.25,
      pixelY: 0.25,
      crs: WGS84_GEOGRAPHIC,
    };
    const tile = await readDemTile(encodeGeoTiff({ geo, data: Float32Array.from(values) }), 's.tif');
    expect(tile.geo).toEqual(geo);
    expect(Array.from(tile.data)).toEqual(values);
  });

  it('writes a projected CRS without an EPSG code as user-defined keys, and refuses one it cannot spell', () => {
    // (test/crs-roundtrip.test.ts reads such files back, with GDAL too.)
    const crs: Crs = { kind: 'projected', proj4: '+proj=tmerc +lon_0=-20', label: 'custom TM' };
    const geo: GridGeo = { width: 2, height: 2, originX: 0, originY: 0, pixelX: 1, pixelY: -1, crs };
    expect(() => encodeGeoTiff({ geo, data: new Float32Array(4) })).not.toThrow();
    const odd: Crs = { kind: 'projected', proj4: '+proj=robin +lon_0=-20', label: 'custom world' };
    expect(() => encodeGeoTiff({ geo: { ...geo, crs: odd }, data: new Float32Array(4) })).toThrow(
      /custom world.*no EPSG code/,
    );
  });
});

describe('readDemTile: every encoding variant reads to the same values', () => {
  const w = 37;
  const h = 29;
  const ints = terrainValues(w, h, 6);
  const floats = ints.map((v) => v + 0.5);
  const georef = { x0: -28, y0: -9, dx: 0.01, dy: 0.01 };
  const cases: { label: string; spec: Omit<TiffSpec, 'width' | 'height' | 'values' | 'georef'> }[] = [];
  const layouts = [
    { kind: 'strips', rowsPerStrip: 5 },
    { kind: 'tiles', tileWidth: 16, tileHeight: 16 },
  ] as const;
  for (const sampleType of ['int16', 'int32', 'float32'] as const) {
    for (const layout of layouts) {
      for (const compression of ['none', 'deflate', 'lzw'] as const) {
        const predictors = compression === 'none' ? [1] : [1, sampleType === 'float32' ? 3 : 2];
        for (const predictor of predictors as (1 | 2 | 3)[]) {
          cases.push({
            label: `${sampleType} ${layout.kind} ${compression} predictor ${predictor}`,
            spec: { sampleType, layout, compression, predictor },
          });
        }
      }
    }
  }
  cases.push({
    label: 'uint16 strips deflate predictor 2',
    spec: { sampleType: 'uint16', compression: 'deflate', predictor: 2 },
  });
  cases.push({
    label: 'float64 tiles lzw predictor 3',
    spec: { sampleType: 'float64', compression: 'lzw', predictor: 3, layout: layouts[1] },
  });
  cases.push({ label: 'int16 big-endian', spec: { sampleType: 'int16', bigEndian: true } });
  cases.push({ label: 'float32 big-endian', spec: { sampleType: 'float32', bigEndian: true } });

  it.each(cases)('$label', async ({ spec }) => {
    const unsigned = spec.sampleType === 'uint16';
    const values = spec.sampleType.startsWith('float') ? floats : unsigned ? ints.map((v) => v + 1000) : ints;
    const buf = encodeTiff({ ...spec, width: w, height: h, values, georef });
    const tile = await readDemTile(buf, 'v.tif');
    expect(Array.from(tile.data)).toEqual(values);
    expect(tile.geo).toEqual(geographic(w, h, -28, -9, 0.01));
  });

  it('ModelTransformation without rotation gives the same grid as tie point + scale', async () => {
    const buf = encodeTiff({
      width: w,
      height: h,
      values: ints,
      sampleType: 'int16',
      georef: { ...georef, tags: 'transform' },
    });
    const tile = await readDemTile(buf, 't.tif');
    expect(tile.geo).toEqual(geographic(w, h, -28, -9, 0.01));
  });

  it('an LZW strip long enough to grow the code width to 12 bits and emit Clear codes', async () => {
    // Random 16-bit noise compresses badly: the string table fills up several times.
    const r = rng(7);
    const noise = Array.from({ length: 200 * 150 }, () => Math.floor(r() * 20000) - 5000);
    const spec = { width: 200, height: 150, values: noise, sampleType: 'int16' as SampleType, georef };
    const tile = await readDemTile(
      encodeTiff({ ...spec, compression: 'lzw', layout: { kind: 'strips', rowsPerStrip: 150 } }),
      'l.tif',
    );
    expect(Array.from(tile.data)).toEqual(noise);
  });
});

describe('readDemTile: georeferencing', () => {
  it('pixel-is-point: the origin moves half a pixel out to the outer corner', async () => {
    const values = terrainValues(11, 11, 8);
    const spec = { width: 11, height: 11, values, sampleType: 'int16' as SampleType };
    // 35° W 21° N: open North Atlantic.
    const point = await readDemTile(
      encodeTiff({ ...spec, rasterType: 'point', georef: { x0: -35, y0: 21, dx: 0.1, dy: 0.1 } }),
      'p.tif',
    );
    expect(point.geo.originX).toBeCloseTo(-35.05, 12);
    expect(point.geo.originY).toBeCloseTo(21.05, 12);
    expect(point.geo.pixelX).toBe(0.1);
    expect(point.geo.pixelY).toBe(-0.1);
    const area = await readDemTile(
      encodeTiff({ ...spec, rasterType: 'area', georef: { x0: -35, y0: 21, dx: 0.1, dy: 0.1 } }),
      'a.tif',
    );
    expect(area.geo.originX).toBe(-35);
    expect(area.geo.originY).toBe(21);
  });

  it('projected EPSG:32724: proj4 string without +axis agrees with the UTM definition', async () => {
    const values = terrainValues(10, 10, 9);
    const tile = await readDemTile(
      encodeTiff({
        width: 10,
        height: 10,
        values,
        sampleType: 'float32',
        crs: { kind: 'projected', epsg: 32724 },
        georef: { x0: 495000, y0: 5100000, dx: 90, dy: 90 }, // near 44.3° S 39.1° W: open South Atlantic
      }),
      'utm.tif',
    );
    expect(tile.geo.crs.kind).toBe('projected');
    expect(tile.geo.crs.proj4).not.toMatch(/\+axis/);
    // proj4 reference: the string from the geokeys and the textbook UTM 24S definition agree.
    const ours = proj4(tile.geo.crs.proj4, WGS84_GEOGRAPHIC.proj4);
    const ref = proj4(UTM24S_PROJ4, WGS84_GEOGRAPHIC.proj4);
    for (const [x, y] of [
      [495000, 5100000],
      [500000, 5099100],
      [495900, 5099100],
    ]) {
      const a = ours.forward([x, y]);
      const b = ref.forward([x, y]);
      expect(a[0]).toBeCloseTo(b[0], 9);
      expect(a[1]).toBeCloseTo(b[1], 9);
    }
    // On the central meridian (easting 500 000 m) the longitude is -39° (UTM zone 24: 42°W..36°W).
    expect(ours.forward([500000, 5099100])[0]).toBeCloseTo(-39, 9);
  });

  it('a WGS84-equivalent geographic CRS (EPSG:4269, GRS80) is read as WGS84 with a warning', async () => {
    const tile = await readDemTile(
      encodeTiff({
        width: 4,
        height: 4,
        values: new Array(16).fill(5),
        sampleType: 'int16',
        crs: { kind: 'geographic', epsg: 4269 },
        georef: { x0: 0, y0: 0, dx: 1, dy: 1 },
      }),
      'nad83.tif',
    );
    expect(tile.geo.crs).toBe(WGS84_GEOGRAPHIC);
    expect(tile.warnings).toEqual([
      expect.stringMatching(/^nad83\.tif: geographic CRS EPSG:4269 read as WGS84/),
    ]);
  });
});

describe('readDemTile: units and datum notes', () => {
  const georef = { x0: 0, y0: 0, dx: 1, dy: 1 };

  it('heights in feet (VerticalUnitsGeoKey 9002) become metres (1 ft = 0.3048 m, exact)', async () => {
    const tile = await readDemTile(
      encodeTiff({
        width: 2,
        height: 1,
        values: [1000, -50],
        sampleType: 'int16',
        georef,
        crs: { keys: { 1024: 2, 2048: 4326, 4099: 9002 } },
      }),
      'ft.tif',
    );
    expect(tile.data[0]).toBeCloseTo(304.8, 4);
    expect(tile.data[1]).toBeCloseTo(-15.24, 4);
    expect(tile.warnings).toEqual(['ft.tif: heights converted from foot to metres']);
  });

  it('a projected CRS on another datum without a datum shift is read, with a warning', async () => {
    const tile = await readDemTile(
      encodeTiff({
        width: 2,
        height: 1,
        values: [1, 2],
        sampleType: 'int16',
        // West of the grid's false origin: about 49.7° N 8.9° W, open Atlantic ~190 km from the nearest land.
        georef: { ...georef, x0: -100000, y0: 0 },
        crs: { kind: 'projected', epsg: 27700 },
      }),
      'osgb.tif',
    );
    expect(tile.geo.crs.epsg).toBe(27700);
    expect(tile.warnings).toEqual([
      expect.stringMatching(/^osgb\.tif: projected CRS EPSG:27700 is on a non-WGS84 datum/),
    ]);
  });
});

describe('void filling', () => {
  it('fills a void block with values between its neighbours and counts it', async () => {
    const w = 12;
    const h = 10;
    const values: number[] = [];
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) values.push(100 + 7 * x + 3 * y);
    const voids = new Set<number>();
    for (let y = 3; y < 6; y++) for (let x = 4; x < 8; x++) voids.add(y * w + x);
    const withVoids = values.map((v, i) => (voids.has(i) ? -9999 : v));
    const tile = await readDemTile(
      encodeTiff({
        width: w,
        height: h,
        values: withVoids,
        sampleType: 'int16',
        nodata: '-9999',
        georef: { x0: 0, y0: 0, dx: 1, dy: 1 },
      }),
      'v.tif',
    );
    expect(tile.voidsFilled).toBe(12);
    expect(tile.warnings).toEqual([expect.stringMatching(/^v\.tif: filled 12 void cell\(s\)/)]);
    // Ring of valid cells around the block: rows 2..6, columns 3..8.
    let lo = Infinity;
    let hi = -Infinity;
    for (let y = 2; y <= 6; y++) {
      for (let x = 3; x <= 8; x++) {
        if (!voids.has(y * w + x)) {
          lo = Math.min(lo, values[y * w + x]);
          hi = Math.max(hi, values[y * w + x]);
        }
      }
    }
    for (const i of voids) {
      expect(tile.data[i]).toBeGreaterThanOrEqual(lo);
      expect(tile.data[i]).toBeLessThanOrEqual(hi);
    }
    for (let i = 0; i < values.length; i++) if (!voids.has(i)) expect(tile.data[i]).toBe(values[i]);
  });

  it('a single void on a plane gets the plane value (mean of 8 symmetric neighbours)', () => {
    const w = 5;
    const data = new Float32Array(25);
    for (let y = 0; y < 5; y++) for (let x = 0; x < w; x++) data[y * w + x] = 10 + 2 * x - 5 * y;
    data[12] = NaN;
    expect(fillVoids(data, 5, 5)).toBe(1);
    expect(data[12]).toBeCloseTo(10 + 4 - 10, 5);
  });

  it('voids in a corner and along an edge fill inward layer by layer', () => {
    const data = new Float32Array(6 * 4).fill(50);
    for (const i of [0, 1, 2, 6, 7, 12, 5, 11]) data[i] = NaN;
    expect(fillVoids(data, 6, 4)).toBe(8);
    for (const v of data) expect(v).toBe(50);
  });
});

describe('readDemTile: bad input gives one clear InputError', () => {
  const good = (): TiffSpec => ({
    width: 8,
    height: 8,
    values: terrainValues(8, 8, 10),
    sampleType: 'int16',
    georef: { x0: 1, y0: 2, dx: 0.1, dy: 0.1 },
  });

  it('not a TIFF at all', async () => {
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]).buffer;
    await expectInputError(
      readDemTile(png, 'photo.png'),
      'photo.png',
      /not a TIFF \(a PNG image\)/,
      /GeoTIFF/,
    );
  });

  it('truncated file (cut inside the pixel data)', async () => {
    const buf = encodeTiff(good());
    await expectInputError(
      readDemTile(truncate(buf, buf.byteLength - 20), 'cut.tif'),
      'cut.tif',
      /truncated file \(\d+ bytes, but strip \d+ ends at byte \d+\)/,
      /complete, readable GeoTIFF/,
    );
  });

  it('too short to hold a TIFF header', async () => {
    await expectInputError(
      readDemTile(truncate(encodeTiff(good()), 5), 'tiny.tif'),
      'tiny.tif',
      /5 bytes, too short/,
      /GeoTIFF/,
    );
  });

  it('corrupt header (directory offset past the end)', async () => {
    await expectInputError(
      readDemTile(corruptIfdOffset(encodeTiff(good())), 'bad.tif'),
      'bad.tif',
      /truncated or corrupt TIFF/,
      /complete, readable GeoTIFF/,
    );
  });

  it('corrupt compressed data', async () => {
    const buf = encodeTiff({
      ...good(),
      compression: 'deflate',
      layout: { kind: 'strips', rowsPerStrip: 8 },
    });
    // The only strip starts after the header and tags; scramble the zlib stream behind its 2-byte header.
    const image = await (await fromArrayBuffer(buf)).getImage();
    const offset = Number(
      ((await image.getFileDirectory().loadValue('StripOffsets')) as ArrayLike<number>)[0],
    );
    const broken = overwrite(buf, offset, [0x78, 0x9c, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff]);
    await expectInputError(
      readDemTile(broken, 'z.tif'),
      'z.tif',
      /pixel data that cannot be decoded \(compression 8/,
      /readable GeoTIFF/,
    );
  });

  it('TIFF without georeferencing', async () => {
    const { georef: _omit, ...plain } = good();
    await expectInputError(
      readDemTile(encodeTiff({ ...plain, crs: 'none' }), 'scan.tif'),
      'scan.tif',
      /TIFF without georeferencing/,
      /places the raster on the earth/,
    );
  });

  it('georeferenced but no GeoKeyDirectory (CRS unknown)', async () => {
    await expectInputError(
      readDemTile(encodeTiff({ ...good(), crs: 'none' }), 'nokeys.tif'),
      'nokeys.tif',
      /no coordinate reference system/,
      /EPSG:4326/,
    );
  });

  it('user-defined projected CRS without parameters', async () => {
    await expectInputError(
      readDemTile(encodeTiff({ ...good(), crs: { keys: { 1024: 1, 3072: 32767 } } }), 'user.tif'),
      'user.tif',
      /projected CRS user-defined \(32767\) without projection parameters/,
      /projected CRS that proj4 can build/,
    );
  });

  it('unknown EPSG code', async () => {
    await expectInputError(
      readDemTile(encodeTiff({ ...good(), crs: { kind: 'projected', epsg: 12345 } }), 'code.tif'),
      'code.tif',
      /projected CRS EPSG:12345 with an unknown CRS code 12345/,
      /EPSG:4326 or another WGS84-equivalent/,
    );
  });

  it('geographic CRS on a datum that is not WGS84-equivalent (NAD27, Clarke 1866)', async () => {
    await expectInputError(
      readDemTile(encodeTiff({ ...good(), crs: { kind: 'geographic', epsg: 4267 } }), 'nad27.tif'),
      'nad27.tif',
      /geographic CRS EPSG:4267 on a datum that is not WGS84-equivalent/,
      /reproject the tile to EPSG:4326/,
    );
  });

  it('unsupported sample format: 8-bit RGB', async () => {
    const rgb: TiffSpec = {
      ...good(),
      values: new Array(8 * 8 * 3).fill(7),
      sampleType: 'uint8',
      samplesPerPixel: 3,
      photometric: 2,
    };
    await expectInputError(
      readDemTile(encodeTiff(rgb), 'rgb.tif'),
      'rgb.tif',
      /^3 bands of 8-bit unsigned integers$/,
      /one band of 16- or 32-bit/,
    );
  });

  it('unsupported sample format: single-band 8-bit', async () => {
    const byte: TiffSpec = { ...good(), sampleType: 'uint8', values: new Array(64).fill(3) };
    await expectInputError(
      readDemTile(encodeTiff(byte), 'byte.tif'),
      'byte.tif',
      /^1 band of 8-bit unsigned integers$/,
      /one band/,
    );
  });

  it('unsupported sample format: complex floats', async () => {
    const cplx: TiffSpec = { ...good(), sampleType: 'float64', sampleFormatOverride: 6 };
    await expectInputError(
      readDemTile(encodeTiff(cplx), 'c.tif'),
      'c.tif',
      /^1 band of 64-bit complex floats$/,
      /one band/,
    );
  });

  it('unsupported sample format: two bands', async () => {
    const two: TiffSpec = { ...good(), values: new Array(128).fill(1), samplesPerPixel: 2 };
    await expectInputError(
      readDemTile(encodeTiff(two), 'two.tif'),
      'two.tif',
      /^2 bands of 16-bit signed integers$/,
      /one band/,
    );
  });

  it('rotated transform', async () => {
    const rot: TiffSpec = {
      ...good(),
      georef: { x0: 1, y0: 2, dx: 0.1, dy: 0.1, tags: 'transform', rotation: [0.02, 0.01] },
    };
    await expectInputError(
      readDemTile(encodeTiff(rot), 'rot.tif'),
      'rot.tif',
      /rotated or sheared ModelTransformation/,
      /north-up raster without rotation/,
    );
  });

  it('a tile that is entirely nodata', async () => {
    const empty: TiffSpec = { ...good(), values: new Array(64).fill(-32768), nodata: '-32768' };
    await expectInputError(
      readDemTile(encodeTiff(empty), 'void.tif'),
      'void.tif',
      /only nodata values \(8 x 8 pixels, nodata = -32768\)/,
      /at least one valid elevation/,
    );
  });

  it('errors are InputError instances naming the file in the message', async () => {
    const err = await readDemTile(new ArrayBuffer(100), 'dir/zero.tif').catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(
      /^dir\/zero\.tif: found a file that is not a TIFF .*; expected a GeoTIFF file/,
    );
  });
});

describe('commonCrsProj4: the common CRSs read without the geokeys library', () => {
  type Keys = Record<string, unknown>;
  const ask = (keys: Keys) =>
    geokeysToProj4.toProj4(keys as unknown as Parameters<typeof geokeysToProj4.toProj4>[0]);
  // Optional keys a writer may add beside the code (GDAL writes citations and the units).
  const extras: Keys[] = [
    {},
    { GTRasterTypeGeoKey: 1 },
    { GTRasterTypeGeoKey: 2, GTCitationGeoKey: 'WGS 84 / UTM zone', GeogCitationGeoKey: 'WGS 84' },
    { GeogAngularUnitsGeoKey: 9102 },
  ];

  it("gives the library's own answer, field by field, for EPSG:4326 and all 120 WGS 84 / UTM zones", () => {
    const codes = [...Array(60).keys()].flatMap((i) => [32601 + i, 32701 + i]);
    let compared = 0;
    for (const extra of extras) {
      const geo = { GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 4326, ...extra };
      expect(commonCrsProj4(geo)).toEqual(ask(geo));
      compared++;
      for (const code of codes) {
        for (const units of [
          {},
          { ProjLinearUnitsGeoKey: 9001 },
          { PCSCitationGeoKey: 'WGS 84 / UTM zone' },
        ]) {
          const keys = { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: code, ...units, ...extra };
          const mine = commonCrsProj4(keys);
          expect(mine, JSON.stringify(keys)).toBeDefined();
          expect(mine, JSON.stringify(keys)).toEqual(ask(keys));
          compared++;
        }
      }
    }
    expect(compared).toBe(extras.length * (1 + 120 * 3));
  });

  it('the UTM definition: zone 24 south puts lon −39°, lat −20° where the written-out UTM string does', () => {
    const mine = commonCrsProj4({ GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32724 })!;
    const [x, y] = proj4(mine.proj4, [-39.5, -20.25]);
    const [ux, uy] = proj4(UTM24S_PROJ4, [-39.5, -20.25]);
    expect(Math.abs(x - ux)).toBeLessThan(1e-6);
    expect(Math.abs(y - uy)).toBeLessThan(1e-6);
  });

  it('leaves everything else to the library', () => {
    const others: Keys[] = [
      { GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 4269 },
      { GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 4326, GeogAngularUnitsGeoKey: 9105 },
      { GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 4326, VerticalUnitsGeoKey: 9002 },
      { GeographicTypeGeoKey: 4326 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32600 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32661 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32761 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 3857 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32724, ProjLinearUnitsGeoKey: 9002 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32724, GeographicTypeGeoKey: 4269 },
      // both codes set: the library answers with the geographic one and flags it
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32724, GeographicTypeGeoKey: 4326 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32767, ProjCoordTransGeoKey: 1 },
      { GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32724, VerticalCSTypeGeoKey: 5773 },
      { GTModelTypeGeoKey: 3 },
    ];
    for (const keys of others) expect(commonCrsProj4(keys), JSON.stringify(keys)).toBeUndefined();
  });
});
