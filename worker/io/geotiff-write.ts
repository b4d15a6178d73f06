/**
 * Minimal GeoTIFF writer for our own rasters (floor maps, coverage grids, test fixtures).
 *
 * Hand-written on purpose, for speed: geotiff.js's `writeArrayBuffer` converts every value through a
 * per-value JavaScript loop and puts the whole image in one strip; an 8192 x 8192 Float32 raster takes
 * seconds that way. Here the pixel block is the typed array's own bytes, written after a small header
 * (`encodeGeoTiffParts`; no copy of the raster), and the image is cut into ~256 KiB strips (readers can then fetch and decode strip by
 * strip). Output: little-endian classic TIFF, uncompressed, one band, chunky, with the GeoTIFF tags
 * (ModelPixelScale + ModelTiepoint, or ModelTransformation for a south-up raster), a GeoKeyDirectory
 * (model type, RasterPixelIsArea, and the CRS: WGS84 lon/lat, the source file's own geokeys, an EPSG code, or
 * user-defined keys — `crsGeoKeys` below — with GeoDoubleParams and GeoAsciiParams as needed), the GDAL_NODATA tag (42113) read by GDAL and geotiff.js, and an
 * optional ImageDescription (270; printable ASCII, as TIFF 6.0 asks of ASCII fields), where results carry the caution
 * followed by their provenance (io/provenance.ts: ` Provenance: ` and the JSON, non-ASCII characters \u-escaped).
 *
 * The georeferencing follows grid.ts: pixel-is-area, (originX, originY) is the outer corner of pixel (0, 0).
 */
import { InputError } from '../../shared/errors.ts';
import proj4 from 'proj4';
import type { Crs, GeoKeyEntry, GridGeo } from '../core/grid.ts';
import { describeWithProvenance, type Provenance } from './provenance.ts';

export interface GeoTiffRaster {
  geo: GridGeo;
  data: Float32Array | Int16Array | Int32Array;
  /** Written as the GDAL_NODATA tag; NaN is written as "nan". */
  nodata?: number;
  /** Written as the ImageDescription tag (270); printable ASCII only (e.g. shared/caution.ts's CAUTION). */
  description?: string;
  /** Written into the ImageDescription after `description` (io/provenance.ts's `describeWithProvenance`). */
  provenance?: Provenance;
}

// TIFF field types.
const ASCII = 2;
const SHORT = 3;
const LONG = 4;
const DOUBLE = 12;
const TYPE_SIZE: Record<number, number> = { [ASCII]: 1, [SHORT]: 2, [LONG]: 4, [DOUBLE]: 8 };

/** Target strip size; a few hundred KiB is the usual compromise between seek count and memory. */
const STRIP_BYTES = 256 * 1024;
/** Classic TIFF addresses bytes with 32-bit offsets. */
const MAX_CLASSIC_TIFF_BYTES = 0xffff_fff0;

const HOST_IS_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

interface Entry {
  tag: number;
  type: number;
  /** Numbers for SHORT/LONG/DOUBLE; a string (NUL appended on write) for ASCII. */
  values: number[] | string;
}

function entryCount(e: Entry): number {
  return typeof e.values === 'string' ? e.values.length + 1 : e.values.length;
}

function align(n: number, to: number): number {
  return Math.ceil(n / to) * to;
}

/** The whole GeoTIFF in one ArrayBuffer (the header of `encodeGeoTiffParts` followed by a copy of the pixels). */
export function encodeGeoTiff(r: GeoTiffRaster): ArrayBuffer {
  const [header, pixels] = encodeGeoTiffParts(r);
  const out = new Uint8Array(header.byteLength + pixels.byteLength);
  out.set(header);
  out.set(pixels, header.byteLength);
  return out.buffer;
}

/**
 * The GeoTIFF as two parts to write one after the other: the header (TIFF header, IFD, tag values, padding up to
 * the pixel block) and the pixel block — on a little-endian host a view of `r.data`'s own bytes, not a copy. Write
 * them with worker/cli/files.ts `writeFileAtomic(path, parts)`.
 */
export function encodeGeoTiffParts(r: GeoTiffRaster): [header: Uint8Array, pixels: Uint8Array] {
  const { geo, data } = r;
  const { width, height } = geo;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
    throw new Error(`encodeGeoTiff: width and height must be positive integers, got ${width} x ${height}`);
  }
  if (data.length !== width * height) {
    throw new Error(
      `encodeGeoTiff: data has ${data.length} values but the grid is ${width} x ${height} = ` +
        `${width * height}`,
    );
  }
  if (!(geo.pixelX > 0) || !Number.isFinite(geo.pixelY) || geo.pixelY === 0) {
    throw new Error(
      `encodeGeoTiff: pixelX must be > 0 and pixelY non-zero, got ${geo.pixelX}, ${geo.pixelY}`,
    );
  }
  if (!Number.isFinite(geo.originX) || !Number.isFinite(geo.originY)) {
    throw new Error(`encodeGeoTiff: origin must be finite, got ${geo.originX}, ${geo.originY}`);
  }

  let bitsPerSample: number;
  let sampleFormat: number; // 1 = unsigned int, 2 = signed int, 3 = IEEE float
  if (data instanceof Float32Array) {
    bitsPerSample = 32;
    sampleFormat = 3;
  } else if (data instanceof Int16Array) {
    bitsPerSample = 16;
    sampleFormat = 2;
  } else if (data instanceof Int32Array) {
    bitsPerSample = 32;
    sampleFormat = 2;
  } else {
    throw new Error('encodeGeoTiff: data must be a Float32Array, Int16Array or Int32Array');
  }
  const bytesPerSample = bitsPerSample / 8;

  const keys = crsGeoKeys(geo.crs);
  // Georeferencing in the file's own units when the CRS came with geokeys in feet or the like.
  const [sx, sy] = geo.crs.geoKeysScale ?? [1, 1];
  const fileGeo =
    geo.crs.geoKeys !== undefined && (sx !== 1 || sy !== 1)
      ? {
          ...geo,
          originX: geo.originX / sx,
          originY: geo.originY / sy,
          pixelX: geo.pixelX / sx,
          pixelY: geo.pixelY / sy,
        }
      : geo;
  const { geoKeyDirectory, doubles, ascii } = geoKeyTags(keys);

  const rowBytes = width * bytesPerSample;
  const rowsPerStrip = Math.max(1, Math.min(height, Math.floor(STRIP_BYTES / rowBytes)));
  const stripCount = Math.ceil(height / rowsPerStrip);
  const imageBytes = data.length * bytesPerSample;

  const entries: Entry[] = [
    { tag: 256, type: LONG, values: [width] }, // ImageWidth
    { tag: 257, type: LONG, values: [height] }, // ImageLength
    { tag: 258, type: SHORT, values: [bitsPerSample] }, // BitsPerSample
    { tag: 259, type: SHORT, values: [1] }, // Compression = none
    { tag: 262, type: SHORT, values: [1] }, // PhotometricInterpretation = BlackIsZero
    { tag: 273, type: LONG, values: new Array<number>(stripCount).fill(0) }, // StripOffsets (filled below)
    { tag: 277, type: SHORT, values: [1] }, // SamplesPerPixel
    { tag: 278, type: LONG, values: [rowsPerStrip] }, // RowsPerStrip
    { tag: 279, type: LONG, values: new Array<number>(stripCount).fill(0) }, // StripByteCounts
    { tag: 284, type: SHORT, values: [1] }, // PlanarConfiguration = chunky
    { tag: 339, type: SHORT, values: [sampleFormat] }, // SampleFormat
  ];
  const fg = fileGeo;
  if (fg.pixelY < 0) {
    // North-up: ModelPixelScale holds |pixelY|, raster row index grows southward.
    entries.push({ tag: 33550, type: DOUBLE, values: [fg.pixelX, -fg.pixelY, 0] });
    entries.push({ tag: 33922, type: DOUBLE, values: [0, 0, 0, fg.originX, fg.originY, 0] });
  } else {
    // South-up cannot be said with a positive ModelPixelScale: write the full affine matrix.
    entries.push({
      tag: 34264,
      type: DOUBLE,
      values: [fg.pixelX, 0, 0, fg.originX, 0, fg.pixelY, 0, fg.originY, 0, 0, 0, 0, 0, 0, 0, 1],
    });
  }
  entries.push({ tag: 34735, type: SHORT, values: geoKeyDirectory });
  if (doubles.length > 0) entries.push({ tag: 34736, type: DOUBLE, values: doubles });
  if (ascii.length > 0) entries.push({ tag: 34737, type: ASCII, values: ascii });
  if (r.nodata !== undefined) {
    const nd = r.nodata;
    const text = Number.isNaN(nd) ? 'nan' : sampleFormat === 2 ? String(Math.round(nd)) : String(nd);
    entries.push({ tag: 42113, type: ASCII, values: text });
  }
  if (r.description !== undefined || r.provenance !== undefined) {
    const text = r.description ?? '';
    if (!/^[\x20-\x7e]*$/.test(text)) {
      throw new InputError(
        'GeoTIFF ImageDescription',
        JSON.stringify(text.slice(0, 60)),
        'printable ASCII text (a TIFF ASCII field)',
      );
    }
    const values = r.provenance ? describeWithProvenance(text, r.provenance) : text;
    entries.push({ tag: 270, type: ASCII, values });
  }
  entries.sort((a, b) => a.tag - b.tag);

  // Layout: header | IFD | out-of-line tag values | pixel data (8-byte aligned).
  const ifdOffset = 8;
  const ifdBytes = 2 + entries.length * 12 + 4;
  let cursor = ifdOffset + ifdBytes;
  const valueOffsets: number[] = [];
  for (const e of entries) {
    const bytes = entryCount(e) * TYPE_SIZE[e.type];
    if (bytes > 4) {
      cursor = align(cursor, 8);
      valueOffsets.push(cursor);
      cursor += bytes;
    } else {
      valueOffsets.push(-1);
    }
  }
  const dataOffset = align(cursor, 8);
  const totalBytes = dataOffset + imageBytes;
  if (totalBytes > MAX_CLASSIC_TIFF_BYTES) {
    throw new Error(`encodeGeoTiff: ${totalBytes} bytes exceed the 4 GiB limit of a classic TIFF`);
  }

  const offsets = entries.find((e) => e.tag === 273)!.values as number[];
  const counts = entries.find((e) => e.tag === 279)!.values as number[];
  for (let s = 0; s < stripCount; s++) {
    const rows = Math.min(rowsPerStrip, height - s * rowsPerStrip);
    offsets[s] = dataOffset + s * rowsPerStrip * rowBytes;
    counts[s] = rows * rowBytes;
  }

  const buffer = new ArrayBuffer(dataOffset);
  const view = new DataView(buffer);
  view.setUint8(0, 0x49); // 'I'
  view.setUint8(1, 0x49); // 'I'
  view.setUint16(2, 42, true);
  view.setUint32(4, ifdOffset, true);

  view.setUint16(ifdOffset, entries.length, true);
  for (let i = 0; i < entries.length; i++) {
    const e = entries[i];
    const at = ifdOffset + 2 + i * 12;
    const count = entryCount(e);
    view.setUint16(at, e.tag, true);
    view.setUint16(at + 2, e.type, true);
    view.setUint32(at + 4, count, true);
    let p = at + 8;
    if (valueOffsets[i] >= 0) {
      view.setUint32(at + 8, valueOffsets[i], true);
      p = valueOffsets[i];
    }
    writeValues(view, p, e);
  }
  view.setUint32(ifdOffset + 2 + entries.length * 12, 0, true); // no next IFD

  if (HOST_IS_LITTLE_ENDIAN) {
    return [new Uint8Array(buffer), new Uint8Array(data.buffer, data.byteOffset, data.byteLength)];
  }
  // Big-endian hosts are rare; byte-swap into a copy through a DataView there.
  const swapped = new DataView(new ArrayBuffer(imageBytes));
  for (let i = 0; i < data.length; i++) {
    const at = i * bytesPerSample;
    if (data instanceof Float32Array) swapped.setFloat32(at, data[i], true);
    else if (data instanceof Int16Array) swapped.setInt16(at, data[i], true);
    else swapped.setInt32(at, data[i], true);
  }
  return [new Uint8Array(buffer), new Uint8Array(swapped.buffer)];
}

function writeValues(view: DataView, at: number, e: Entry): void {
  if (typeof e.values === 'string') {
    for (let i = 0; i < e.values.length; i++) view.setUint8(at + i, e.values.charCodeAt(i) & 0x7f);
    view.setUint8(at + e.values.length, 0);
    return;
  }
  const v = e.values;
  for (let i = 0; i < v.length; i++) {
    if (e.type === SHORT) view.setUint16(at + i * 2, v[i], true);
    else if (e.type === LONG) view.setUint32(at + i * 4, v[i], true);
    else view.setFloat64(at + i * 8, v[i], true);
  }
}

// ---- the CRS as geokeys ---------------------------------------------------------------------------------------

/** Geokey ids (OGC 19-008r4 / GeoTIFF 1.0 §6.2) used below. */
const K = {
  model: 1024,
  rasterType: 1025,
  citation: 1026,
  geographicType: 2048,
  geodeticDatum: 2050,
  primeMeridian: 2051,
  angularUnits: 2054,
  ellipsoid: 2056,
  semiMajor: 2057,
  invFlattening: 2059,
  primeMeridianLong: 2061,
  toWgs84: 2062,
  projectedType: 3072,
  projection: 3074,
  coordTrans: 3075,
  linearUnits: 3076,
  stdParallel1: 3078,
  stdParallel2: 3079,
  natOriginLong: 3080,
  natOriginLat: 3081,
  falseEasting: 3082,
  falseNorthing: 3083,
  falseOriginLong: 3084,
  falseOriginLat: 3085,
  falseOriginEasting: 3086,
  falseOriginNorthing: 3087,
  centerLong: 3088,
  centerLat: 3089,
  scaleAtNatOrigin: 3092,
  straightVertPoleLong: 3095,
} as const;
const USER_DEFINED = 32767;

/** Why a CRS cannot be written as GeoTIFF geokeys, or undefined when it can (check before long work). */
export function geoTiffCrsProblem(crs: Crs): string | undefined {
  try {
    crsGeoKeys(crs);
    return undefined;
  } catch (e) {
    return e instanceof Error ? e.message : String(e);
  }
}

/**
 * The geokeys of a CRS, in this order of preference: the keys the source file gave (any CRS we could read, custom
 * WKT without an EPSG code included, written back as it was); the EPSG code; or user-defined keys built from the
 * proj4 definition for the common projections (GeoTIFF 1.0 §6.3.3.3 coordinate transformation codes).
 */
export function crsGeoKeys(crs: Crs): GeoKeyEntry[] {
  const area: GeoKeyEntry = { id: K.rasterType, value: 1 }; // RasterPixelIsArea
  if (crs.kind === 'geographic') {
    // Our geographic CRS is always WGS84 lon/lat.
    return [{ id: K.model, value: 2 }, area, { id: K.geographicType, value: 4326 }];
  }
  if (crs.geoKeys && crs.geoKeys.length > 0) {
    const kept = crs.geoKeys.filter((k) => k.id !== K.model && k.id !== K.rasterType && k.id < 4096);
    return [{ id: K.model, value: 1 }, area, ...kept];
  }
  if (crs.epsg !== undefined && Number.isInteger(crs.epsg) && crs.epsg > 0 && crs.epsg < USER_DEFINED) {
    return [{ id: K.model, value: 1 }, area, { id: K.projectedType, value: crs.epsg }];
  }
  return [{ id: K.model, value: 1 }, area, ...userDefinedProjected(crs)];
}

/** proj4's parsed definition: the fields read below (angles in radians). */
interface ParsedProj {
  projName?: string;
  a: number;
  b?: number;
  rf?: number;
  lat0?: number;
  long0?: number;
  lat1?: number;
  lat2?: number;
  lat_ts?: number;
  k0?: number;
  x0?: number;
  y0?: number;
  to_meter?: number;
  from_greenwich?: number;
  datum_params?: (number | string)[];
}

function userDefinedProjected(crs: Crs): GeoKeyEntry[] {
  let p: ParsedProj;
  try {
    p = proj4.Proj(crs.proj4) as unknown as ParsedProj;
  } catch (e) {
    throw new Error(`the CRS "${crs.label}" (${crs.proj4}) cannot be parsed by proj4: ${String(e)}`);
  }
  const deg = (r: number | undefined) => ((r ?? 0) * 180) / Math.PI;
  const num = (v: number | undefined) => [v ?? 0];
  const keys: GeoKeyEntry[] = [];
  keys.push({ id: K.citation, value: asciiText(crs.label) });
  // The geographic base: WGS84 by code, otherwise its ellipsoid (and datum shift) spelled out.
  const params = (p.datum_params ?? []).map(Number);
  const shift = params.some((v) => v !== 0);
  const rf = p.rf ?? (p.b !== undefined && p.b !== p.a ? p.a / (p.a - p.b) : 0);
  const wgs84 = Math.abs(p.a - 6378137) < 1e-3 && Math.abs(rf - 298.257223563) < 1e-6 && !shift;
  if (p.from_greenwich) throw new Error(`the CRS "${crs.label}" has a prime meridian other than Greenwich`);
  if (wgs84) {
    keys.push({ id: K.geographicType, value: 4326 });
  } else {
    keys.push({ id: K.geographicType, value: USER_DEFINED });
    keys.push({ id: K.geodeticDatum, value: USER_DEFINED });
    keys.push({ id: K.primeMeridian, value: 8901 });
    keys.push({ id: K.angularUnits, value: 9102 });
    keys.push({ id: K.ellipsoid, value: USER_DEFINED });
    keys.push({ id: K.semiMajor, value: [p.a] });
    keys.push({ id: K.invFlattening, value: [rf] });
    if (shift) keys.push({ id: K.toWgs84, value: params });
  }
  if (p.to_meter !== undefined && p.to_meter !== 1) {
    throw new Error(`the CRS "${crs.label}" is not in metres (to_meter ${p.to_meter})`);
  }
  keys.push({ id: K.projectedType, value: USER_DEFINED });
  keys.push({ id: K.projection, value: USER_DEFINED });
  keys.push({ id: K.linearUnits, value: 9001 });
  const fe = { id: K.falseEasting, value: num(p.x0) };
  const fn = { id: K.falseNorthing, value: num(p.y0) };
  switch (p.projName) {
    case 'utm':
    case 'tmerc':
    case 'etmerc':
      keys.push({ id: K.coordTrans, value: 1 }); // CT_TransverseMercator
      keys.push({ id: K.natOriginLong, value: [deg(p.long0)] }, { id: K.natOriginLat, value: [deg(p.lat0)] });
      keys.push({ id: K.scaleAtNatOrigin, value: num(p.k0 ?? 1) }, fe, fn);
      break;
    case 'merc':
      keys.push({ id: K.coordTrans, value: 7 }); // CT_Mercator
      keys.push({ id: K.natOriginLong, value: [deg(p.long0)] }, { id: K.natOriginLat, value: [deg(p.lat0)] });
      if (p.lat_ts) keys.push({ id: K.stdParallel1, value: [deg(p.lat_ts)] });
      else keys.push({ id: K.scaleAtNatOrigin, value: num(p.k0 ?? 1) });
      keys.push(fe, fn);
      break;
    case 'lcc':
      if (p.lat2 !== undefined && p.lat1 !== p.lat2) {
        keys.push({ id: K.coordTrans, value: 8 }); // CT_LambertConfConic_2SP
        keys.push({ id: K.stdParallel1, value: [deg(p.lat1)] }, { id: K.stdParallel2, value: [deg(p.lat2)] });
        keys.push({ id: K.falseOriginLong, value: [deg(p.long0)] });
        keys.push({ id: K.falseOriginLat, value: [deg(p.lat0)] });
        keys.push({ id: K.falseOriginEasting, value: num(p.x0) });
        keys.push({ id: K.falseOriginNorthing, value: num(p.y0) });
      } else {
        keys.push({ id: K.coordTrans, value: 9 }); // CT_LambertConfConic_1SP
        keys.push({ id: K.natOriginLong, value: [deg(p.long0)] });
        keys.push({ id: K.natOriginLat, value: [deg(p.lat1 ?? p.lat0)] });
        keys.push({ id: K.scaleAtNatOrigin, value: num(p.k0 ?? 1) }, fe, fn);
      }
      break;
    case 'laea':
      keys.push({ id: K.coordTrans, value: 10 }); // CT_LambertAzimEqualArea
      keys.push(
        { id: K.centerLong, value: [deg(p.long0)] },
        { id: K.centerLat, value: [deg(p.lat0)] },
        fe,
        fn,
      );
      break;
    case 'aea':
      keys.push({ id: K.coordTrans, value: 11 }); // CT_AlbersEqualArea
      keys.push({ id: K.stdParallel1, value: [deg(p.lat1)] }, { id: K.stdParallel2, value: [deg(p.lat2)] });
      keys.push({ id: K.natOriginLong, value: [deg(p.long0)] }, { id: K.natOriginLat, value: [deg(p.lat0)] });
      keys.push(fe, fn);
      break;
    case 'aeqd':
      keys.push({ id: K.coordTrans, value: 12 }); // CT_AzimuthalEquidistant
      keys.push(
        { id: K.centerLong, value: [deg(p.long0)] },
        { id: K.centerLat, value: [deg(p.lat0)] },
        fe,
        fn,
      );
      break;
    case 'eqc':
      keys.push({ id: K.coordTrans, value: 17 }); // CT_Equirectangular
      keys.push({ id: K.natOriginLong, value: [deg(p.long0)] }, { id: K.natOriginLat, value: [deg(p.lat0)] });
      keys.push({ id: K.stdParallel1, value: [deg(p.lat_ts)] }, fe, fn);
      break;
    default:
      throw new Error(
        `the CRS "${crs.label}" (${crs.proj4}) has no EPSG code, no geokeys from its source file, and a ` +
          `projection (${p.projName ?? 'unknown'}) this writer cannot spell as GeoTIFF keys`,
      );
  }
  return keys;
}

/** Printable ASCII only (TIFF 6.0 ASCII fields). A '|' inside stays: readers take a key's text by its count. */
function asciiText(s: string): string {
  return s.replace(/[^\x20-\x7e]/g, '?');
}

/** The GeoKeyDirectory (sorted by id), GeoDoubleParams and GeoAsciiParams ('|'-terminated) of a key list. */
function geoKeyTags(keys: readonly GeoKeyEntry[]): {
  geoKeyDirectory: number[];
  doubles: number[];
  ascii: string;
} {
  const sorted = [...keys].sort((a, b) => a.id - b.id);
  const dir = [1, 1, 0, sorted.length];
  const doubles: number[] = [];
  let ascii = '';
  for (const k of sorted) {
    if (typeof k.value === 'number') {
      dir.push(k.id, 0, 1, k.value);
    } else if (typeof k.value === 'string') {
      const text = asciiText(k.value);
      dir.push(k.id, 34737, text.length + 1, ascii.length);
      ascii += text + '|';
    } else {
      dir.push(k.id, 34736, k.value.length, doubles.length);
      doubles.push(...k.value);
    }
  }
  return { geoKeyDirectory: dir, doubles, ascii };
}
