/**
 * File access for the CLI: reading DEM tiles and writing outputs, with messages that name the file. Every file read
 * here is hashed (SHA-256) from the very bytes read, for the outputs' provenance (`digestOfRead`).
 */
import { createHash, randomBytes } from 'node:crypto';
import { mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { InputError } from '../../shared/errors.ts';
import { readDemTile } from '../io/geotiff-read.ts';
import type { DemTile } from '../core/terrain.ts';

/** SHA-256 (hex) of the bytes last read through `readFileChecked`, by absolute path. */
const readDigests = new Map<string, string>();

/** The SHA-256 (lowercase hex) of a file's bytes as this process last read them, or undefined if not read. */
export function digestOfRead(path: string): string | undefined {
  return readDigests.get(resolve(path));
}

export function readFileChecked(path: string, what: string): ArrayBuffer {
  let st;
  try {
    st = statSync(path);
  } catch {
    throw new InputError(path, 'no such file', what);
  }
  if (st.isDirectory()) throw new InputError(path, 'a directory', what);
  let buf: Buffer;
  try {
    buf = readFileSync(path);
  } catch (e) {
    throw new InputError(
      path,
      `a file that cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
      what,
    );
  }
  readDigests.set(resolve(path), createHash('sha256').update(buf).digest('hex'));
  // A Buffer may sit inside a larger pooled ArrayBuffer: hand out exactly its bytes.
  return buf.byteOffset === 0 && buf.byteLength === buf.buffer.byteLength
    ? (buf.buffer as ArrayBuffer)
    : (buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength) as ArrayBuffer);
}

export async function readTiles(paths: readonly string[]): Promise<DemTile[]> {
  const tiles: DemTile[] = [];
  for (const p of paths) {
    tiles.push(await readDemTile(readFileChecked(p, 'a GeoTIFF elevation tile (DEM)'), p));
  }
  return tiles;
}

/**
 * Writes a file whole or not at all: the bytes go to a temporary file beside it, which is then renamed into place
 * (a rename within one folder replaces the old file in one step), so a reader never sees half a file.
 */
export function writeFileAtomic(path: string, data: ArrayBuffer | string, what = path): void {
  const tmp = join(dirname(resolve(path)), `.${basename(path)}.${randomBytes(6).toString('hex')}.tmp`);
  try {
    mkdirSync(dirname(resolve(path)), { recursive: true });
    writeFileSync(tmp, typeof data === 'string' ? data : new Uint8Array(data));
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw new InputError(
      what,
      `a path that cannot be written (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
      'a writable output path',
    );
  }
}
