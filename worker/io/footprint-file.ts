/**
 * One site's footprints as a file (the footprint cache, worker/cli/footprint-cache.ts): pure encoder and decoder,
 * bytes in and out, no I/O.
 *
 * A file holds every footprint of one site's sensors as `computeFootprints` makes them together (the site's
 * floor is swept once for all its types, out to the farthest of them, so a site's footprints belong together).
 *
 *   bytes 0–7    magic "AIRSHFP\n"
 *   bytes 8–11   header length H (uint32, little-endian)
 *   H bytes      header: UTF-8 JSON (`FootprintFileHeader`): format, key, the keyed inputs for a human reader,
 *                the footprints (site, type, kind, window) and how the candidates' entries refer to them, the
 *                payload's size and SHA-256
 *   0–7 zeros    to a multiple of 8 bytes
 *   payload      per stored footprint: lo then hi (uint16, little-endian) of the cells of its window, row by row
 *                (every cell when it has none, in files of this format written before footprints kept only
 *                their window); cells outside the window have no cover
 *
 * Decoding checks the magic, the format, the key, the grid's cell count and width, every window, the payload's
 * size and (through the caller's digest) its SHA-256, and throws `FootprintFileError` saying what was wrong.
 */
import { wholeWindow, windowCellCount, type Footprint, type FootprintWindow } from '../core/footprint.ts';
import type { SensorKind } from '../../shared/sensor-kinds.ts';

/** Bumped whenever the bytes a footprint file holds, or what they mean, change. */
export const FOOTPRINT_FORMAT = 1;

const MAGIC = 'AIRSHFP\n';
const PREFIX_BYTES = 12;

/** A footprint as the file stores it (its arrays in the payload, in this order). */
export interface StoredFootprint {
  siteId: string;
  typeId: string;
  kind: SensorKind;
  window: FootprintWindow | null;
}

export interface FootprintFileHeader {
  format: number;
  /** SHA-256 (hex) of the canonical JSON of `inputs`: the file's name in the cache. */
  key: string;
  /** Everything the footprints' bytes depend on (for a human reader; the key is its digest). */
  inputs: unknown;
  /** Cells of the analysis grid (every array spans them all). */
  cells: number;
  gridWidth: number;
  stored: StoredFootprint[];
  /** Per candidate of the site, in order: its footprint and its other targets' (indices into `stored`). */
  entries: { main: number; byTarget?: number[] }[];
  payloadBytes: number;
  payloadSha256: string;
}

/** What was wrong with a footprint file (the caller names the file). */
export class FootprintFileError extends Error {
  override name = 'FootprintFileError';
}

/** SHA-256 (lowercase hex) of byte pieces taken in order (node:crypto in the CLI, injected to keep this pure). */
export type Digest = (parts: readonly Uint8Array[]) => string;

/**
 * JSON with object keys sorted at every depth and no spaces: one text for one value, whatever order its keys were
 * built in. Numbers print as JSON.stringify prints them (the shortest text that reads back to the same double).
 * Undefined members are left out, as JSON.stringify does; a non-finite number is refused (it has no JSON text).
 */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value === 'boolean' || typeof value === 'string') return JSON.stringify(value);
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new Error(`canonicalJson: ${value} has no JSON text`);
    return JSON.stringify(value);
  }
  if (Array.isArray(value))
    return `[${value.map((v) => (v === undefined ? 'null' : canonicalJson(v))).join(',')}]`;
  if (typeof value === 'object') {
    const obj = value as Record<string, unknown>;
    const keys = Object.keys(obj)
      .filter((k) => obj[k] !== undefined)
      .sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson(obj[k])}`).join(',')}}`;
  }
  throw new Error(`canonicalJson: a ${typeof value} has no JSON text`);
}

const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

function windowCells(w: FootprintWindow | null, cells: number): number {
  return w === null ? cells : (w.row1 - w.row0) * (w.col1 - w.col0);
}

/**
 * A footprint's array (its window's cells, row by row) as little-endian bytes: on a little-endian machine the array's
 * own bytes (the file is written before anything changes them), else a swapped copy.
 */
function packCells(a: Uint16Array): Uint8Array {
  if (LITTLE_ENDIAN) return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  const out = a.slice();
  swapBytes(out);
  return new Uint8Array(out.buffer, 0, out.byteLength);
}

function swapBytes(a: Uint16Array): void {
  for (let i = 0; i < a.length; i++) a[i] = ((a[i] & 0xff) << 8) | (a[i] >> 8);
}

/**
 * A site's footprints (the candidates' in order, each with its `byTarget`) as the pieces of one file, to be
 * written one after the other. Footprints shared between entries (a type that cannot tell two targets apart) are
 * stored once and shared again on reading.
 */
export function encodeFootprintFile(
  key: string,
  inputs: unknown,
  footprints: readonly Footprint[],
  grid: { width: number; height: number },
  digest: Digest,
): Uint8Array[] {
  const cells = grid.width * grid.height;
  const index = new Map<Footprint, number>();
  const stored: StoredFootprint[] = [];
  const payload: Uint8Array[] = [];
  const store = (fp: Footprint): number => {
    const known = index.get(fp);
    if (known !== undefined) return known;
    const n = windowCellCount(fp.window);
    if (fp.lo.length !== n || fp.hi.length !== n || fp.window.width !== grid.width) {
      throw new Error(
        `footprint file: ${fp.siteId}/${fp.typeId} has ${fp.lo.length} cells, its window ${n} on a grid ${grid.width} wide`,
      );
    }
    stored.push({ siteId: fp.siteId, typeId: fp.typeId, kind: fp.kind, window: fp.window });
    payload.push(packCells(fp.lo), packCells(fp.hi));
    index.set(fp, stored.length - 1);
    return stored.length - 1;
  };
  const entries = footprints.map((fp) => {
    const main = store(fp);
    return fp.byTarget === undefined ? { main } : { main, byTarget: fp.byTarget.map(store) };
  });
  const payloadBytes = payload.reduce((s, p) => s + p.byteLength, 0);
  const header: FootprintFileHeader = {
    format: FOOTPRINT_FORMAT,
    key,
    inputs,
    cells,
    gridWidth: grid.width,
    stored,
    entries,
    payloadBytes,
    payloadSha256: digest(payload),
  };
  const json = new TextEncoder().encode(JSON.stringify(header));
  const pad = (8 - ((PREFIX_BYTES + json.byteLength) % 8)) % 8;
  const prefix = new Uint8Array(PREFIX_BYTES);
  prefix.set(new TextEncoder().encode(MAGIC));
  new DataView(prefix.buffer).setUint32(8, json.byteLength, true);
  return [prefix, json, new Uint8Array(pad), ...payload];
}

/**
 * Reads a footprint file written by `encodeFootprintFile`, checking it against what the caller expects: the key
 * (the file's name), the grid's cells and width. Throws `FootprintFileError` saying what was found instead.
 */
export function decodeFootprintFile(
  bytes: Uint8Array,
  expected: { key: string; width: number; height: number },
  digest: Digest,
): { header: FootprintFileHeader; footprints: Footprint[] } {
  const fail = (found: string, wanted: string): never => {
    throw new FootprintFileError(`found ${found}; expected ${wanted}`);
  };
  if (bytes.byteLength < PREFIX_BYTES)
    fail(`${bytes.byteLength} bytes`, 'a footprint file (at least 12 bytes)');
  if (new TextDecoder().decode(bytes.subarray(0, 8)) !== MAGIC) {
    fail('no footprint-file signature', `a file starting with ${JSON.stringify(MAGIC)}`);
  }
  const h = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(8, true);
  if (PREFIX_BYTES + h > bytes.byteLength) {
    fail(
      `a header of ${h} bytes in a file of ${bytes.byteLength}`,
      'the whole header (the file is cut short)',
    );
  }
  let header: FootprintFileHeader;
  try {
    header = JSON.parse(new TextDecoder('utf-8', { fatal: true }).decode(bytes.subarray(12, 12 + h)));
  } catch {
    return fail('a header that is not valid JSON', 'the JSON header of a footprint file');
  }
  if (header === null || typeof header !== 'object') fail('a header that is not an object', 'a JSON object');
  if (header.format !== FOOTPRINT_FORMAT) {
    fail(`format ${JSON.stringify(header.format)}`, `format ${FOOTPRINT_FORMAT} (this version of Airshade)`);
  }
  if (header.key !== expected.key) fail(`the key ${String(header.key)}`, `the key ${expected.key}`);
  const cells = expected.width * expected.height;
  if (header.cells !== cells || header.gridWidth !== expected.width) {
    fail(
      `a grid of ${header.cells} cells, ${header.gridWidth} wide`,
      `the study's ${cells} cells, ${expected.width} wide`,
    );
  }
  if (!Array.isArray(header.stored) || !Array.isArray(header.entries)) {
    fail('a header without its footprint lists', 'stored and entries lists');
  }
  let need = 0;
  for (const s of header.stored) {
    const w = s?.window;
    if (w !== null && !validWindow(w, expected.width, expected.height)) {
      fail(`the window ${JSON.stringify(w)} of ${s?.siteId}/${s?.typeId}`, 'a window inside the grid');
    }
    need += 4 * windowCells(w, cells);
  }
  const start = PREFIX_BYTES + h + ((8 - ((PREFIX_BYTES + h) % 8)) % 8);
  if (header.payloadBytes !== need) fail(`${header.payloadBytes} payload bytes declared`, `${need}`);
  if (bytes.byteLength !== start + need) {
    fail(
      `${bytes.byteLength} bytes`,
      `${start + need} (header and ${need} payload bytes)${bytes.byteLength < start + need ? ': the file is cut short' : ''}`,
    );
  }
  const payload = bytes.subarray(start);
  if (digest([payload]) !== header.payloadSha256) {
    fail(
      'a payload whose SHA-256 differs from the header’s',
      'the bytes that were written (the file is corrupt)',
    );
  }
  const arrays: Footprint[] = [];
  let at = 0;
  for (const s of header.stored) {
    const window = s.window ?? wholeWindow(expected.width, expected.height);
    const n = windowCellCount(window);
    const lo = unpackCells(payload, at, n);
    at += 2 * n;
    const hi = unpackCells(payload, at, n);
    at += 2 * n;
    arrays.push({ siteId: s.siteId, typeId: s.typeId, kind: s.kind, lo, hi, window });
  }
  const pick = (i: unknown): Footprint => {
    if (typeof i !== 'number' || !(i >= 0 && i < arrays.length) || !Number.isInteger(i)) {
      return fail(`an entry referring to footprint ${JSON.stringify(i)}`, `an index below ${arrays.length}`);
    }
    return arrays[i];
  };
  // An entry's main footprint carries its byTarget list (a shared one is the same object in both places).
  const footprints = header.entries.map((e) => {
    const fp = pick(e?.main);
    if (e.byTarget !== undefined) fp.byTarget = e.byTarget.map(pick);
    return fp;
  });
  return { header, footprints };
}

function validWindow(w: FootprintWindow, width: number, height: number): boolean {
  const ints = [w?.row0, w?.row1, w?.col0, w?.col1].every((v) => Number.isInteger(v));
  return (
    ints &&
    w.width === width &&
    w.row0 >= 0 &&
    w.row0 <= w.row1 &&
    w.row1 <= height &&
    w.col0 >= 0 &&
    w.col0 <= w.col1 &&
    w.col1 <= width
  );
}

/**
 * `n` cells (a footprint's window, row by row) from `payload[at…]`: on a little-endian machine a view of the file's
 * bytes where they lie on a 2-byte boundary (the footprints of a file then share its buffer, as they are let go
 * together), else a copy.
 */
function unpackCells(payload: Uint8Array, at: number, n: number): Uint16Array {
  const offset = payload.byteOffset + at;
  if (LITTLE_ENDIAN && offset % 2 === 0) return new Uint16Array(payload.buffer, offset, n);
  const out = new Uint16Array(n);
  new Uint8Array(out.buffer).set(payload.subarray(at, at + 2 * n));
  if (!LITTLE_ENDIAN) swapBytes(out);
  return out;
}
