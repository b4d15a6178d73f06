/**
 * Minimal GeoTIFF writer for our own rasters (floor maps, coverage grids, test fixtures).
 *
 * Hand-written on purpose, for speed: geotiff.js's `writeArrayBuffer` converts every value through a
 * per-value JavaScript loop and puts the whole image in one strip; an 8192 x 8192 Float32 raster takes
 * seconds that way. Here the pixel block is one bulk `Uint8Array.set` of the typed array's bytes into a
 * pre-sized buffer, and the image is cut into ~256 KiB strips (readers can then fetch and decode strip by
 * strip). Output: little-endian classic TIFF, uncompressed, one band, chunky, with the GeoTIFF tags
 * (ModelPixelScale + ModelTiepoint, or ModelTransformation for a south-up raster), a GeoKeyDirectory
 * (model type, RasterPixelIsArea, EPSG code), the GDAL_NODATA tag (42113) read by GDAL and geotiff.js, and an
 * optional ImageDescription (270; printable ASCII, as TIFF 6.0 asks of ASCII fields), where results carry the caution
 * followed by their provenance (io/provenance.ts: ` Provenance: ` and the JSON, non-ASCII characters \u-escaped).
 *
 * The georeferencing follows grid.ts: pixel-is-area, (originX, originY) is the outer corner of pixel (0, 0).
 */
import { InputError } from '../../shared/errors.ts';
import type { GridGeo } from '../core/grid.ts';
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

export function encodeGeoTiff(r: GeoTiffRaster): ArrayBuffer {
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

  // GeoKeyDirectory: header (version 1, revision 1.0, key count) then sorted (id, location, count, value).
  const keys: [number, number][] = [];
  if (geo.crs.kind === 'geographic') {
    keys.push([1024, 2]); // GTModelTypeGeoKey = ModelTypeGeographic
    keys.push([1025, 1]); // GTRasterTypeGeoKey = RasterPixelIsArea
    keys.push([2048, 4326]); // GeographicTypeGeoKey: our geographic CRS is always WGS84 lon/lat
  } else {
    const epsg = geo.crs.epsg;
    if (epsg === undefined || !Number.isInteger(epsg) || epsg <= 0 || epsg >= 32767) {
      throw new Error(
        `encodeGeoTiff: the projected CRS "${geo.crs.label}" has no EPSG code; ` +
          'a GeoTIFF can only be written for a projected CRS with an EPSG code',
      );
    }
    keys.push([1024, 1]); // GTModelTypeGeoKey = ModelTypeProjected
    keys.push([1025, 1]); // GTRasterTypeGeoKey = RasterPixelIsArea
    keys.push([3072, epsg]); // ProjectedCSTypeGeoKey
  }
  const geoKeyDirectory = [1, 1, 0, keys.length];
  for (const [id, value] of keys) geoKeyDirectory.push(id, 0, 1, value);

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
  if (geo.pixelY < 0) {
    // North-up: ModelPixelScale holds |pixelY|, raster row index grows southward.
    entries.push({ tag: 33550, type: DOUBLE, values: [geo.pixelX, -geo.pixelY, 0] });
    entries.push({ tag: 33922, type: DOUBLE, values: [0, 0, 0, geo.originX, geo.originY, 0] });
  } else {
    // South-up cannot be said with a positive ModelPixelScale: write the full affine matrix.
    entries.push({
      tag: 34264,
      type: DOUBLE,
      values: [geo.pixelX, 0, 0, geo.originX, 0, geo.pixelY, 0, geo.originY, 0, 0, 0, 0, 0, 0, 0, 1],
    });
  }
  entries.push({ tag: 34735, type: SHORT, values: geoKeyDirectory });
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

  const buffer = new ArrayBuffer(totalBytes);
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

  const src = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  if (HOST_IS_LITTLE_ENDIAN) {
    new Uint8Array(buffer, dataOffset, imageBytes).set(src);
  } else {
    // Big-endian hosts are rare; byte-swap through a DataView there.
    for (let i = 0; i < data.length; i++) {
      const at = dataOffset + i * bytesPerSample;
      if (data instanceof Float32Array) view.setFloat32(at, data[i], true);
      else if (data instanceof Int16Array) view.setInt16(at, data[i], true);
      else view.setInt32(at, data[i], true);
    }
  }
  return buffer;
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
