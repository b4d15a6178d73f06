/**
 * Test-only TIFF/GeoTIFF encoder, so tests can generate every input variant the DEM reader must accept
 * (and the broken ones it must reject) without GDAL and without committed fixtures.
 *
 * Follows the TIFF 6.0 specification (Adobe, 1992): sections 2 (structure), 13 (LZW), 14 (predictor 2),
 * 15 (tiles); Adobe Photoshop TIFF Technical Note 3 (floating-point predictor 3); Adobe deflate
 * (compression 8, a zlib stream); and GeoTIFF 1.0 / OGC 19-008r4 for the geokeys and model tags.
 * Written for clarity, not speed: test rasters are small.
 */
import { deflateSync } from 'node:zlib';

export type SampleType = 'uint8' | 'int16' | 'uint16' | 'int32' | 'float32' | 'float64';

export interface TiffSpec {
  width: number;
  height: number;
  /** Row-major sample values; with samplesPerPixel > 1, interleaved (chunky). */
  values: ArrayLike<number>;
  sampleType: SampleType;
  samplesPerPixel?: number;
  /** Written instead of the sample type's SampleFormat (e.g. 6 = complex float) to build bad files. */
  sampleFormatOverride?: number;
  /** Default 1 (BlackIsZero); 2 = RGB. */
  photometric?: number;
  /** Default: strips of 8 rows. */
  layout?:
    { kind: 'strips'; rowsPerStrip: number } | { kind: 'tiles'; tileWidth: number; tileHeight: number };
  compression?: 'none' | 'deflate' | 'lzw';
  /** 1 none, 2 horizontal differencing (integers), 3 floating point (floats). */
  predictor?: 1 | 2 | 3;
  /** Big-endian ("MM") file; only with predictor 1. */
  bigEndian?: boolean;
  /**
   * Georeferencing as written in the file: model coordinates of raster point (0, 0) — the outer corner of
   * the first pixel for pixel-is-area, its centre for pixel-is-point — and the pixel size (both > 0 for a
   * north-up raster). Omit for a plain TIFF without georeferencing.
   */
  georef?: {
    x0: number;
    y0: number;
    dx: number;
    dy: number;
    /** 'tiepoint' (ModelTiepoint + ModelPixelScale, default) or 'transform' (ModelTransformation). */
    tags?: 'tiepoint' | 'transform';
    /** Row/column terms of the ModelTransformation (rotation/shear); default 0. */
    rotation?: [number, number];
  };
  /** CRS: an EPSG code, or raw geokeys (id -> SHORT value). Default EPSG:4326. */
  crs?: { kind: 'geographic' | 'projected'; epsg: number } | { keys: Record<number, number> } | 'none';
  rasterType?: 'area' | 'point';
  /** GDAL_NODATA text, e.g. '-32768' or 'nan'. */
  nodata?: string;
}

const TYPE_INFO: Record<SampleType, { bytes: number; format: number }> = {
  uint8: { bytes: 1, format: 1 },
  int16: { bytes: 2, format: 2 },
  uint16: { bytes: 2, format: 1 },
  int32: { bytes: 4, format: 2 },
  float32: { bytes: 4, format: 3 },
  float64: { bytes: 8, format: 3 },
};

// TIFF field types
const ASCII = 2;
const SHORT = 3;
const LONG = 4;
const DOUBLE = 12;
const TYPE_SIZE: Record<number, number> = { [ASCII]: 1, [SHORT]: 2, [LONG]: 4, [DOUBLE]: 8 };

interface Entry {
  tag: number;
  type: number;
  values: number[] | string;
}

export function encodeTiff(spec: TiffSpec): ArrayBuffer {
  const { width, height, sampleType } = spec;
  const spp = spec.samplesPerPixel ?? 1;
  const info = TYPE_INFO[sampleType];
  const predictor = spec.predictor ?? 1;
  const le = !spec.bigEndian;
  if (spec.values.length !== width * height * spp) throw new Error('encodeTiff: values length mismatch');
  if (!le && predictor !== 1) throw new Error('encodeTiff: big-endian only with predictor 1');
  if (predictor === 2 && info.format === 3) throw new Error('encodeTiff: predictor 2 is for integers');
  if (predictor === 3 && info.format !== 3) throw new Error('encodeTiff: predictor 3 is for floats');
  if (predictor !== 1 && (spec.compression ?? 'none') === 'none') {
    // libtiff (and so GDAL) applies a predictor only inside the LZW/deflate codecs.
    throw new Error('encodeTiff: a predictor needs LZW or deflate compression');
  }
  const layout = spec.layout ?? { kind: 'strips', rowsPerStrip: 8 };

  // Cut the image into blocks of (bw x bh) pixels; tiles are padded to full size, strips are not.
  const blocks: Uint8Array[] = [];
  const bw = layout.kind === 'tiles' ? layout.tileWidth : width;
  const bhFull = layout.kind === 'tiles' ? layout.tileHeight : Math.min(layout.rowsPerStrip, height);
  const across = Math.ceil(width / bw);
  const down = Math.ceil(height / bhFull);
  for (let by = 0; by < down; by++) {
    for (let bx = 0; bx < across; bx++) {
      const bh = layout.kind === 'tiles' ? bhFull : Math.min(bhFull, height - by * bhFull);
      const raw = encodeBlock(spec, info, spp, bx * bw, by * bhFull, bw, bh, le, predictor);
      blocks.push(compress(raw, spec.compression ?? 'none'));
    }
  }

  const entries: Entry[] = [
    { tag: 256, type: LONG, values: [width] },
    { tag: 257, type: LONG, values: [height] },
    { tag: 258, type: SHORT, values: new Array<number>(spp).fill(info.bytes * 8) },
    { tag: 259, type: SHORT, values: [{ none: 1, lzw: 5, deflate: 8 }[spec.compression ?? 'none']] },
    { tag: 262, type: SHORT, values: [spec.photometric ?? 1] },
    { tag: 277, type: SHORT, values: [spp] },
    { tag: 284, type: SHORT, values: [1] },
    { tag: 339, type: SHORT, values: new Array<number>(spp).fill(spec.sampleFormatOverride ?? info.format) },
  ];
  if (predictor !== 1) entries.push({ tag: 317, type: SHORT, values: [predictor] });
  const offsetsEntry: Entry = { tag: 0, type: LONG, values: new Array<number>(blocks.length).fill(0) };
  const countsEntry: Entry = { tag: 0, type: LONG, values: blocks.map((b) => b.length) };
  if (layout.kind === 'tiles') {
    entries.push({ tag: 322, type: LONG, values: [layout.tileWidth] });
    entries.push({ tag: 323, type: LONG, values: [layout.tileHeight] });
    offsetsEntry.tag = 324;
    countsEntry.tag = 325;
  } else {
    entries.push({ tag: 278, type: LONG, values: [bhFull] });
    offsetsEntry.tag = 273;
    countsEntry.tag = 279;
  }
  entries.push(offsetsEntry, countsEntry);

  const g = spec.georef;
  if (g) {
    if ((g.tags ?? 'tiepoint') === 'tiepoint') {
      entries.push({ tag: 33550, type: DOUBLE, values: [g.dx, g.dy, 0] });
      entries.push({ tag: 33922, type: DOUBLE, values: [0, 0, 0, g.x0, g.y0, 0] });
    } else {
      const [b, e] = g.rotation ?? [0, 0];
      entries.push({
        tag: 34264,
        type: DOUBLE,
        values: [g.dx, b, 0, g.x0, e, -g.dy, 0, g.y0, 0, 0, 0, 0, 0, 0, 0, 1],
      });
    }
  }
  const crs = spec.crs ?? { kind: 'geographic', epsg: 4326 };
  if (crs !== 'none') {
    const keys: Record<number, number> = {};
    if ('keys' in crs) Object.assign(keys, crs.keys);
    else if (crs.kind === 'geographic') Object.assign(keys, { 1024: 2, 2048: crs.epsg });
    else Object.assign(keys, { 1024: 1, 3072: crs.epsg });
    if (!('keys' in crs) || !(1025 in keys)) keys[1025] = spec.rasterType === 'point' ? 2 : 1;
    const ids = Object.keys(keys)
      .map(Number)
      .sort((a, b) => a - b);
    const dir = [1, 1, 0, ids.length];
    for (const id of ids) dir.push(id, 0, 1, keys[id]);
    entries.push({ tag: 34735, type: SHORT, values: dir });
  }
  if (spec.nodata !== undefined) entries.push({ tag: 42113, type: ASCII, values: spec.nodata });
  entries.sort((a, b) => a.tag - b.tag);

  // Layout: header | IFD | out-of-line values | blocks.
  const ifdBytes = 2 + entries.length * 12 + 4;
  let cursor = 8 + ifdBytes;
  const valueAt = entries.map((e) => {
    const bytes = count(e) * TYPE_SIZE[e.type];
    if (bytes <= 4) return -1;
    cursor += cursor % 2; // word alignment (TIFF 6.0 section 2)
    const at = cursor;
    cursor += bytes;
    return at;
  });
  const offsets = offsetsEntry.values as number[];
  for (let i = 0; i < blocks.length; i++) {
    cursor += cursor % 2;
    offsets[i] = cursor;
    cursor += blocks[i].length;
  }
  const out = new ArrayBuffer(cursor);
  const view = new DataView(out);
  const bytes = new Uint8Array(out);
  if (le) bytes.set([0x49, 0x49], 0);
  else bytes.set([0x4d, 0x4d], 0);
  view.setUint16(2, 42, le);
  view.setUint32(4, 8, le);
  view.setUint16(8, entries.length, le);
  entries.forEach((e, i) => {
    const at = 10 + i * 12;
    view.setUint16(at, e.tag, le);
    view.setUint16(at + 2, e.type, le);
    view.setUint32(at + 4, count(e), le);
    let p = at + 8;
    if (valueAt[i] >= 0) {
      view.setUint32(p, valueAt[i], le);
      p = valueAt[i];
    }
    if (typeof e.values === 'string') {
      for (let k = 0; k < e.values.length; k++) bytes[p + k] = e.values.charCodeAt(k);
      bytes[p + e.values.length] = 0;
    } else {
      e.values.forEach((v, k) => {
        if (e.type === SHORT) view.setUint16(p + 2 * k, v, le);
        else if (e.type === LONG) view.setUint32(p + 4 * k, v, le);
        else view.setFloat64(p + 8 * k, v, le);
      });
    }
  });
  view.setUint32(10 + entries.length * 12, 0, le);
  blocks.forEach((b, i) => bytes.set(b, offsets[i]));
  return out;
}

function count(e: Entry): number {
  return typeof e.values === 'string' ? e.values.length + 1 : e.values.length;
}

function encodeBlock(
  spec: TiffSpec,
  info: { bytes: number; format: number },
  spp: number,
  x0: number,
  y0: number,
  bw: number,
  bh: number,
  le: boolean,
  predictor: number,
): Uint8Array {
  const rowSamples = bw * spp;
  const out = new Uint8Array(bh * rowSamples * info.bytes);
  const view = new DataView(out.buffer);
  const row = new Float64Array(rowSamples);
  for (let r = 0; r < bh; r++) {
    // gather the row (zero padding outside the image, as tiles must be full-size)
    for (let c = 0; c < bw; c++) {
      for (let s = 0; s < spp; s++) {
        const x = x0 + c;
        const y = y0 + r;
        row[c * spp + s] =
          x < spec.width && y < spec.height ? Number(spec.values[(y * spec.width + x) * spp + s]) : 0;
      }
    }
    const rowStart = r * rowSamples * info.bytes;
    if (predictor === 2) {
      // TIFF 6.0 section 14: difference each sample from the same component of the previous pixel,
      // modulo 2^bits (done from the end so the originals are still there).
      const mod = 2 ** (info.bytes * 8);
      for (let k = rowSamples - 1; k >= spp; k--) row[k] = (((row[k] - row[k - spp]) % mod) + mod) % mod;
      for (let k = 0; k < rowSamples; k++)
        writeUnsigned(view, rowStart + k * info.bytes, row[k], info.bytes, le);
    } else if (predictor === 3) {
      // Floating-point predictor: bytes of each sample split into planes, most significant first, then
      // byte-wise differencing with a stride of samplesPerPixel.
      const tmp = new Uint8Array(rowSamples * info.bytes);
      const one = new DataView(new ArrayBuffer(8));
      for (let k = 0; k < rowSamples; k++) {
        if (info.bytes === 4) one.setFloat32(0, row[k], false);
        else one.setFloat64(0, row[k], false);
        for (let b = 0; b < info.bytes; b++) tmp[b * rowSamples + k] = one.getUint8(b); // big-endian bytes
      }
      for (let k = tmp.length - 1; k >= spp; k--) tmp[k] = (tmp[k] - tmp[k - spp]) & 0xff;
      out.set(tmp, rowStart);
    } else {
      for (let k = 0; k < rowSamples; k++)
        writeSample(view, rowStart + k * info.bytes, row[k], spec.sampleType, le);
    }
  }
  return out;
}

function writeUnsigned(view: DataView, at: number, v: number, bytes: number, le: boolean): void {
  if (bytes === 1) view.setUint8(at, v);
  else if (bytes === 2) view.setUint16(at, v, le);
  else view.setUint32(at, v, le);
}

function writeSample(view: DataView, at: number, v: number, t: SampleType, le: boolean): void {
  switch (t) {
    case 'uint8':
      return view.setUint8(at, v);
    case 'int16':
      return view.setInt16(at, v, le);
    case 'uint16':
      return view.setUint16(at, v, le);
    case 'int32':
      return view.setInt32(at, v, le);
    case 'float32':
      return view.setFloat32(at, v, le);
    case 'float64':
      return view.setFloat64(at, v, le);
  }
}

function compress(raw: Uint8Array, method: 'none' | 'deflate' | 'lzw'): Uint8Array {
  if (method === 'none') return raw;
  if (method === 'deflate') return new Uint8Array(deflateSync(raw));
  return lzwEncode(raw);
}

/**
 * TIFF-flavoured LZW (TIFF 6.0 section 13): codes 256 = Clear, 257 = EndOfInformation, first free 258;
 * 9 to 12 bit codes packed most-significant bit first; "early change": the code width grows as soon as the
 * next free code reaches 2^width (one code earlier than plain LZW), and a Clear is written when the table
 * would reach 4094 entries — as libtiff's encoder does.
 */
export function lzwEncode(input: Uint8Array): Uint8Array {
  const CLEAR = 256;
  const EOI = 257;
  const out: number[] = [];
  let acc = 0;
  let accBits = 0;
  let width = 9;
  const put = (code: number): void => {
    acc = (acc << width) | code;
    accBits += width;
    while (accBits >= 8) {
      accBits -= 8;
      out.push((acc >>> accBits) & 0xff);
    }
    acc &= (1 << accBits) - 1;
  };
  const table = new Map<number, number>();
  let next = 258;
  put(CLEAR);
  if (input.length === 0) {
    put(EOI);
  } else {
    let ent = input[0];
    for (let i = 1; i < input.length; i++) {
      const c = input[i];
      const key = (ent << 8) | c;
      const found = table.get(key);
      if (found !== undefined) {
        ent = found;
        continue;
      }
      put(ent);
      table.set(key, next++);
      ent = c;
      if (next === 4094) {
        put(CLEAR);
        table.clear();
        next = 258;
        width = 9;
      } else if (next >= 1 << width) {
        width++;
      }
    }
    put(ent);
    // The decoder adds one more table entry after reading this last code; follow its width change.
    if (next + 1 >= 1 << width && width < 12) width++;
    put(EOI);
  }
  if (accBits > 0) out.push((acc << (8 - accBits)) & 0xff);
  return Uint8Array.from(out);
}

/** A copy cut to its first `bytes` bytes (a truncated download). */
export function truncate(buf: ArrayBuffer, bytes: number): ArrayBuffer {
  return buf.slice(0, bytes);
}

/** A copy whose first-IFD offset points past the end of the file (a corrupt header). */
export function corruptIfdOffset(buf: ArrayBuffer): ArrayBuffer {
  const copy = buf.slice(0);
  const v = new DataView(copy);
  const le = v.getUint8(0) === 0x49;
  v.setUint32(4, copy.byteLength + 1000, le);
  return copy;
}

/** A copy with `bytes` written at `offset`. */
export function overwrite(buf: ArrayBuffer, offset: number, bytes: ArrayLike<number>): ArrayBuffer {
  const copy = buf.slice(0);
  new Uint8Array(copy).set(Array.from(bytes), offset);
  return copy;
}
