/**
 * File access for the CLI: reading DEM tiles and writing outputs, with messages that name the file. Every file read
 * here is hashed (SHA-256) for the outputs' provenance (`digestOfRead`): from the very bytes read, or — where a
 * read hands its digest on (`deferDigest`, the floor's DEM) — by another read of the same, unchanged file
 * (`settleDeferredDigests`).
 */
import { createHash, randomBytes } from 'node:crypto';
import {
  accessSync,
  closeSync,
  constants as fsConstants,
  fdatasync,
  existsSync,
  fstatSync,
  fsyncSync,
  lstatSync,
  mkdirSync,
  openSync,
  readdirSync,
  readFileSync,
  readSync,
  renameSync,
  rmSync,
  statfsSync,
  statSync,
  writeSync,
} from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { promisify } from 'node:util';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { readDemTile, type TileBytes } from '../io/geotiff-read.ts';
import type { DemTile } from '../core/terrain.ts';
import {
  digestFile,
  identityOfFd,
  sameIdentity,
  type ChunkedDigest,
  type FileIdentity,
} from './file-digest.ts';

const fdatasyncAsync = promisify(fdatasync);

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

/**
 * A file opened for random reads (`TileBytes`), as `readFileChecked` would read it: same checks, same messages. The
 * SHA-256 is taken from the very bytes read, as long as they run front to back from byte 0 (the sequential pixel
 * pass of worker/io/geotiff-read.ts reads every byte that way); `close` finishes the hash if the reads stopped short
 * and records it for `digestOfRead`.
 */
export interface CheckedFile extends TileBytes {
  /** Closes the file; with `finishHash` (the default) first reads what the hash still lacks and records it. */
  close(finishHash?: boolean): void;
  /**
   * Hands this file's SHA-256 to another reader (`settleDeferredDigests`): the reads from now on are not hashed,
   * and closing records the file's identity instead of a digest. Refused (false: hashing goes on here) when the
   * file changed less than `minAgeMs` (default DEFER_MIN_AGE_MS) before it was opened, is not on a local file
   * system (LOCAL_FILE_SYSTEMS, Linux only), or is closed already.
   */
  deferDigest(minAgeMs?: number): boolean;
  /** Whether `deferDigest` would hand the digest on (nothing changes). */
  canDeferDigest(minAgeMs?: number): boolean;
}

/**
 * How long before its opening a file must have last changed for its digest to be taken apart from the read
 * (`deferDigest`): a change after the opening then moves its change time past the one recorded at the opening,
 * even where file times are coarse (the file systems of LOCAL_FILE_SYSTEMS keep the kernel's clock tick, a few
 * milliseconds; the margin is wide on purpose).
 */
const DEFER_MIN_AGE_MS = 2500;

/**
 * The file systems (Linux statfs magic numbers) on which a digest may be handed on: local ones, whose file times
 * are the kernel's own. A network file system may show cached, then fresh times of an unchanged file and so refuse
 * it; there the digest is taken as the file is read, as before. ext2/3/4, XFS, Btrfs, tmpfs, overlayfs, ZFS, F2FS.
 */
const LOCAL_FILE_SYSTEMS = new Set([
  0xef53, 0x58465342, 0x9123683e, 0x01021994, 0x794c7630, 0x2fc12fc1, 0xf2f52010,
]);

/** Whether a statfs type is one of LOCAL_FILE_SYSTEMS. */
export function localFileSystem(type: number | bigint): boolean {
  return LOCAL_FILE_SYSTEMS.has(Number(type));
}

/** Files whose digest was handed on (`deferDigest`), by absolute path: their identity at opening and closing. */
const deferredDigests = new Map<string, { opened: FileIdentity; closed: FileIdentity; what: string }>();

/**
 * Takes the SHA-256 of each of `paths` whose digest was handed on (`deferDigest`; the others are left as they
 * are) and records it for `digestOfRead`:
 * `digestOf` gives a digest taken elsewhere (a worker thread reading the file while this one writes), or null, and
 * then this thread reads the file again itself. Either way the digest stands for the bytes the computation read
 * only if the file is the same one, unchanged, from this process's opening to the digest's last read (device,
 * inode, size, modification and change times; see DEFER_MIN_AGE_MS); otherwise the file is refused, naming it.
 */
export async function settleDeferredDigests(
  paths: readonly string[],
  digestOf: (path: string) => Promise<ChunkedDigest | null>,
): Promise<void> {
  for (const path of paths.map((p) => resolve(p))) {
    const handed = deferredDigests.get(path);
    if (handed === undefined) continue;
    const { opened, closed, what } = handed;
    let d = await digestOf(path).catch(() => null);
    if (d === null) {
      try {
        d = digestFile(path);
      } catch (e) {
        throw new InputError(
          path,
          `a file that cannot be read again for its digest (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
          what,
        );
      }
    }
    if (![closed, d.before, d.after].every((id) => sameIdentity(opened, id))) {
      throw new InputError(
        path,
        'a file that changed while this run used it (its size, times or inode differ from when it was opened)',
        `${what}, left unchanged until the output is written`,
      );
    }
    readDigests.set(path, d.sha256);
    deferredDigests.delete(path);
  }
}

export function openFileChecked(path: string, what: string): CheckedFile {
  let st;
  try {
    st = statSync(path);
  } catch {
    throw new InputError(path, 'no such file', what);
  }
  if (st.isDirectory()) throw new InputError(path, 'a directory', what);
  const cannot = (e: unknown) =>
    new InputError(
      path,
      `a file that cannot be read (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
      what,
    );
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    throw cannot(e);
  }
  const byteLength = fstatSync(fd).size;
  const openedAt = Date.now();
  const opened = identityOfFd(fd);
  let local = false;
  try {
    local = process.platform === 'linux' && localFileSystem(statfsSync(path).type);
  } catch {
    // no statfs here: the digest is taken as the file is read
  }
  const hash = createHash('sha256');
  let hashed = 0;
  let open = true;
  let deferred = false;
  const read = (offset: number, into: Uint8Array): number => {
    const want = Math.max(0, Math.min(into.length, byteLength - offset));
    let got = 0;
    try {
      while (got < want) {
        const n = readSync(fd, into, got, want - got, offset + got);
        if (n === 0) break;
        got += n;
      }
    } catch (e) {
      throw cannot(e);
    }
    // The part of this read that extends the hashed prefix [0, hashed).
    if (!deferred && offset <= hashed && offset + got > hashed) {
      hash.update(into.subarray(hashed - offset, got));
      hashed = offset + got;
    }
    return got;
  };
  return {
    byteLength,
    sequential: true,
    read,
    canDeferDigest(minAgeMs = DEFER_MIN_AGE_MS): boolean {
      return open && local && Number(BigInt(opened.ctimeNs) / 1_000_000n) <= openedAt - minAgeMs;
    },
    deferDigest(minAgeMs = DEFER_MIN_AGE_MS): boolean {
      if (!this.canDeferDigest(minAgeMs)) return false;
      deferred = true;
      return true;
    },
    close(finishHash = true): void {
      if (!open) return;
      try {
        if (!finishHash) return;
        if (deferred) {
          deferredDigests.set(resolve(path), { opened, closed: identityOfFd(fd), what });
          return;
        }
        const rest = new Uint8Array(Math.min(WRITE_CHUNK_BYTES, Math.max(1, byteLength - hashed)));
        while (hashed < byteLength) {
          if (read(hashed, rest.subarray(0, Math.min(rest.length, byteLength - hashed))) === 0) break;
        }
        readDigests.set(resolve(path), hash.digest('hex'));
      } finally {
        open = false;
        closeSync(fd);
      }
    },
  };
}

export async function readTiles(paths: readonly string[]): Promise<DemTile[]> {
  const tiles: DemTile[] = [];
  for (const p of paths) {
    tiles.push(await readDemTile(readFileChecked(p, 'a GeoTIFF elevation tile (DEM)'), p));
  }
  return tiles;
}

/** Bytes per write call: well under the 2 GiB a single write may take. */
const WRITE_CHUNK_BYTES = 256 * 1024 * 1024;

/**
 * Writes a file whole or not at all: the bytes go to a temporary file beside it (`.NAME.<12 hex>.tmp`), are flushed
 * to the disk (fsync), and the temporary file is renamed into place (a rename within one folder replaces the old
 * file in one step), then the folder itself is flushed so that the rename survives a power cut. A reader — or a
 * process killed at any moment — never sees half a file under the final name.
 */
export function writeFileAtomic(
  path: string,
  data: ArrayBuffer | string | readonly Uint8Array[],
  what = path,
  /** false: no fsync of the file and its folder (a run's own scratch, read back and removed by the same run). */
  durable = true,
): void {
  const { dir, tmp } = tempBeside(path);
  try {
    mkdirSync(dir, { recursive: true });
    const fd = openSync(tmp, 'w');
    try {
      for (const bytes of partsOf(data)) {
        let at = 0;
        while (at < bytes.byteLength) {
          at += writeSync(fd, bytes, at, Math.min(bytes.byteLength - at, WRITE_CHUNK_BYTES));
        }
      }
      if (durable) fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    renameSync(tmp, path);
  } catch (e) {
    throw cannotWrite(tmp, what, e);
  }
  if (durable) syncFolder(dir);
}

/** Bytes between the flushes `writeFileAtomicStreamed` starts while it writes on. */
const STREAM_SYNC_BYTES = 32 * 1024 * 1024;
/**
 * Bytes per write when the parts written are handed back as they go (`releasePart`): each write's page cache then
 * takes the pages the one before handed back, and only the first write's are fresh memory.
 */
const RELEASE_CHUNK_BYTES = 4 * 1024 * 1024;

/**
 * `writeFileAtomic` for large files (a floor raster): the same temporary file, flush and rename, but the disk is
 * flushed as the bytes go in. After every STREAM_SYNC_BYTES written, an fdatasync of what is written so far starts
 * on libuv's thread pool (once the one before has ended), while this thread writes on; the last fsync then has
 * only the tail left. A 256 MiB file: write, flushes and rename took 0.63–0.78 s against 0.83–0.98 s written first
 * and flushed at the end (scratch script, three runs each, chunks of 8–64 MiB alike).
 */
export async function writeFileAtomicStreamed(
  path: string,
  data: ArrayBuffer | string | readonly Uint8Array[],
  what = path,
  /** Bytes between flushes (tests take a few). */
  syncEvery = STREAM_SYNC_BYTES,
  /**
   * A head made last: `data` goes in after its `bytes` bytes, and `make` (awaited once the rest is written) gives
   * exactly that many, written at the start — a header that waits for a digest taken meanwhile. An InputError from
   * `make` comes out as it is (the temporary file removed), not as a path that cannot be written.
   */
  headLast?: { bytes: number; make: () => Promise<Uint8Array> },
  /**
   * Called after each write of a part with the bytes of it now in the file, [from, to): the caller may hand that
   * memory back (the native helper's `release`), and nothing in the part before `to` is read again. Writes then go
   * in RELEASE_CHUNK_BYTES pieces.
   */
  releasePart?: (part: Uint8Array, from: number, to: number) => void,
): Promise<void> {
  const { dir, tmp } = tempBeside(path);
  const piece = releasePart === undefined ? syncEvery : Math.min(syncEvery, RELEASE_CHUNK_BYTES);
  let pending: Promise<void> | null = null;
  try {
    mkdirSync(dir, { recursive: true });
    const fd = openSync(tmp, 'w');
    try {
      let unsynced = 0;
      let position = headLast?.bytes ?? 0;
      for (const bytes of partsOf(data)) {
        let at = 0;
        while (at < bytes.byteLength) {
          const n = writeSync(
            fd,
            bytes,
            at,
            Math.min(bytes.byteLength - at, syncEvery - unsynced, piece),
            position,
          );
          releasePart?.(bytes, at, at + n);
          at += n;
          position += n;
          unsynced += n;
          if (unsynced >= syncEvery) {
            await pending;
            pending = fdatasyncAsync(fd);
            unsynced = 0;
          }
        }
      }
      if (headLast !== undefined) {
        const head = await headLast.make();
        if (head.byteLength !== headLast.bytes) {
          throw new Error(
            `writeFileAtomicStreamed: a head of ${head.byteLength} bytes for ${headLast.bytes}`,
          );
        }
        for (let at = 0; at < head.byteLength;) at += writeSync(fd, head, at, head.byteLength - at, at);
      }
      await pending;
      pending = null;
      fsyncSync(fd);
    } finally {
      // A flush still running when a write failed ends before the file is closed (its failure is not the one told).
      await pending?.catch(() => {});
      closeSync(fd);
    }
    renameSync(tmp, path);
  } catch (e) {
    if (e instanceof InputError) {
      rmSync(tmp, { force: true });
      throw e;
    }
    throw cannotWrite(tmp, what, e);
  }
  syncFolder(dir);
}

/** The temporary file `writeFileAtomic` writes beside `path`, and their folder. */
function tempBeside(path: string): { dir: string; tmp: string } {
  const dir = dirname(resolve(path));
  return { dir, tmp: join(dir, `.${basename(path)}.${randomBytes(6).toString('hex')}.tmp`) };
}

/**
 * The bytes to write, as parts written one after the other (e.g. a GeoTIFF's header and its pixel buffer), never
 * concatenated.
 */
function partsOf(data: ArrayBuffer | string | readonly Uint8Array[]): readonly Uint8Array[] {
  return typeof data === 'string'
    ? [Buffer.from(data, 'utf8')]
    : data instanceof ArrayBuffer
      ? [new Uint8Array(data)]
      : data;
}

/** Removes the temporary file of a write that failed, and names what could not be written. */
function cannotWrite(tmp: string, what: string, e: unknown): InputError {
  try {
    rmSync(tmp, { force: true });
  } catch {
    // never made (e.g. its folder is a file: ENOTDIR); the message below is the one to tell
  }
  return new InputError(
    what,
    `a path that cannot be written (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
    'a writable output path',
  );
}

/** Flushes a folder's entries (a rename) to the disk; not every platform allows it, and then it is skipped. */
function syncFolder(dir: string): void {
  let fd: number | undefined;
  try {
    fd = openSync(dir, 'r');
    fsyncSync(fd);
  } catch {
    // e.g. Windows cannot open a folder for fsync; the rename itself is still atomic
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}

/** SHA-256 (lowercase hex) of bytes or text. */
export function sha256(data: ArrayBuffer | Uint8Array | string): string {
  return createHash('sha256')
    .update(typeof data === 'string' ? data : data instanceof Uint8Array ? data : new Uint8Array(data))
    .digest('hex');
}

/** The temporary files `writeFileAtomic` leaves beside NAME when killed mid-write. */
export function isTempOf(entry: string, name: string): boolean {
  return (
    entry.length === name.length + 18 &&
    entry.startsWith(`.${name}.`) &&
    /^\.[0-9a-f]{12}\.tmp$/.test(entry.slice(name.length + 1))
  );
}

/**
 * Writes a single-file output (`writeFileAtomic`), then removes the temporary files an earlier run killed mid-write
 * left beside it: only names of `writeFileAtomic`'s own pattern for this very output (`isTempOf`), only plain files,
 * and only those last written before this process started — a run writing the same output at this moment has a
 * newer one, which is left alone. Returns the names removed.
 */
export function writeOutputFile(
  path: string,
  data: ArrayBuffer | string | readonly Uint8Array[],
  what = path,
): string[] {
  writeFileAtomic(path, data, what);
  return removeStaleTemps(path);
}

/**
 * `writeOutputFile` for a large output, flushed as it is written (`writeFileAtomicStreamed`, with its `headLast` and
 * `releasePart`).
 */
export async function writeLargeOutputFile(
  path: string,
  data: ArrayBuffer | string | readonly Uint8Array[],
  what = path,
  headLast?: { bytes: number; make: () => Promise<Uint8Array> },
  releasePart?: (part: Uint8Array, from: number, to: number) => void,
): Promise<string[]> {
  await writeFileAtomicStreamed(path, data, what, STREAM_SYNC_BYTES, headLast, releasePart);
  return removeStaleTemps(path);
}

/** The temporary files of `path` an earlier run left (`writeOutputFile`), removed; their names. */
function removeStaleTemps(path: string): string[] {
  const dir = dirname(resolve(path));
  const name = basename(path);
  const removed: string[] = [];
  let entries: string[];
  try {
    entries = readdirSync(dir);
  } catch {
    return removed;
  }
  for (const entry of entries) {
    if (!isTempOf(entry, name)) continue;
    const tmp = join(dir, entry);
    try {
      const st = lstatSync(tmp);
      if (!st.isFile() || st.mtimeMs >= performance.timeOrigin) continue;
      rmSync(tmp, { force: true });
      removed.push(entry);
    } catch {
      // gone meanwhile, or not ours to remove
    }
  }
  return removed;
}

// ---- run folders -------------------------------------------------------------------------------------------------

/** The manifest in every output folder: which files each command's last run wrote there. */
export const RUN_MANIFEST = 'airshade-run.json';

/** Said in the help of every command that writes a folder. */
export const RUN_FOLDER_HELP =
  `The folder gets ${RUN_MANIFEST}, listing the files of this command's run with their sizes and SHA-256. ` +
  'Files that an earlier run of the same command wrote there and this run did not are removed at the end — ' +
  'only files that manifest lists and whose bytes are still the ones Airshade wrote; any other file is left alone. ' +
  'Each file is written whole under a temporary name and then renamed; while a run is writing, its entry says ' +
  '"writing".';

/** RUN_FOLDER_HELP as a help paragraph, wrapped at 110 columns. */
export function runFolderHelp(): string {
  const lines = ['Output folder:'];
  let line = ' ';
  for (const word of RUN_FOLDER_HELP.split(' ')) {
    if (line.length + word.length + 1 > 110) {
      lines.push(line);
      line = ' ';
    }
    line += ' ' + word;
  }
  lines.push(line);
  return lines.join('\n') + '\n';
}

export interface RunFile {
  name: string;
  bytes: number;
  sha256: string;
}

interface RunEntry {
  state: 'writing' | 'complete';
  started: string;
  finished?: string;
  files: RunFile[];
  /** While writing: the files of the run before, still in the folder until this run completes. */
  earlier?: RunFile[];
  /** While writing: names about to be written (so a kill leaves no temporary file unaccounted for). */
  pending?: string[];
  provenance?: unknown;
}

interface RunManifest {
  about: string;
  caution: string;
  runs: Record<string, RunEntry>;
}

/**
 * A command's output folder. `RunFolder.open` checks the folder before any long work (nothing is written yet);
 * `write` writes one output atomically and records it in the manifest; `finish` marks the run complete and removes
 * the files of the command's earlier run that this run did not write — only those the earlier manifest lists, whose
 * size and SHA-256 still match (a file changed or put there by anyone else is never deleted).
 */
export class RunFolder {
  readonly dir: string;
  private readonly command: string;
  private readonly what: string;
  private readonly earlier: RunFile[];
  private readonly earlierPending: string[];
  private readonly started = new Date().toISOString();
  private readonly files: RunFile[] = [];
  private provenance: unknown;
  private begun = false;

  private constructor(dir: string, command: string, what: string, earlier: RunFile[], pending: string[]) {
    this.dir = dir;
    this.command = command;
    this.what = what;
    this.earlier = earlier;
    this.earlierPending = pending;
  }

  /** Checks DIR (a folder, or a path where one can be made) and reads its manifest; writes nothing. */
  static open(dir: string, command: string, what = '--out'): RunFolder {
    const abs = resolve(dir);
    let st;
    try {
      st = statSync(abs);
    } catch {
      st = undefined;
    }
    if (st && !st.isDirectory()) {
      throw new InputError(
        `${what} ${dir}`,
        'an existing file',
        'a folder for the outputs (existing or new)',
      );
    }
    if (st) {
      try {
        accessSync(abs, fsConstants.W_OK);
      } catch {
        throw new InputError(`${what} ${dir}`, 'a folder that cannot be written', 'a writable folder');
      }
    } else {
      // The nearest existing parent must be a writable folder.
      let parent = dirname(abs);
      while (!existsSync(parent) && dirname(parent) !== parent) parent = dirname(parent);
      try {
        if (!statSync(parent).isDirectory()) throw new Error('not a folder');
        accessSync(parent, fsConstants.W_OK);
      } catch {
        throw new InputError(
          `${what} ${dir}`,
          `a path under ${parent}, which cannot be written`,
          'a writable folder',
        );
      }
    }
    const before = readManifest(abs)?.runs[command];
    const earlier = before ? [...before.files, ...(before.earlier ?? [])] : [];
    return new RunFolder(abs, command, what, earlier, before?.pending ?? []);
  }

  /** The run's provenance, written into its manifest entry. */
  setProvenance(p: unknown): void {
    this.provenance = p;
  }

  /** Writes DIR/NAME whole (temporary file, fsync, rename) and records it. */
  write(name: string, data: ArrayBuffer | string): void {
    if (!isPlainName(name) || name === RUN_MANIFEST)
      throw new Error(`RunFolder.write: bad file name "${name}"`);
    if (!this.begun) this.begin();
    this.saveManifest('writing', [name]);
    writeFileAtomic(join(this.dir, name), data, `${this.what} ${join(this.dir, name)}`);
    const entry: RunFile = {
      name,
      bytes: typeof data === 'string' ? Buffer.byteLength(data, 'utf8') : data.byteLength,
      sha256: sha256(data),
    };
    const at = this.files.findIndex((f) => f.name === name);
    if (at >= 0) this.files[at] = entry;
    else this.files.push(entry);
    this.saveManifest('writing');
  }

  /**
   * Marks the run complete and removes the earlier run's files that this run did not write (see the class note).
   * Returns the names removed and those left alone because their bytes changed since Airshade wrote them.
   */
  finish(): { removed: string[]; leftAlone: string[] } {
    if (!this.begun) this.begin();
    const now = new Set(this.files.map((f) => f.name));
    const removed: string[] = [];
    const leftAlone: string[] = [];
    const seen = new Set<string>();
    for (const f of this.earlier) {
      if (now.has(f.name) || seen.has(f.name) || !isPlainName(f.name) || f.name === RUN_MANIFEST) continue;
      seen.add(f.name);
      const path = join(this.dir, f.name);
      if (!existsSync(path)) continue;
      if (unchanged(path, f)) {
        rmSync(path, { force: true });
        removed.push(f.name);
      } else {
        leftAlone.push(f.name);
      }
    }
    this.saveManifest('complete');
    return { removed, leftAlone };
  }

  private begin(): void {
    this.begun = true;
    mkdirSync(this.dir, { recursive: true });
    // Temporary files of an earlier run of this command killed mid-write (only names it said it was writing).
    const names = new Set([...this.earlier.map((f) => f.name), ...this.earlierPending, RUN_MANIFEST]);
    for (const entry of readdirSync(this.dir)) {
      if (!entry.endsWith('.tmp')) continue;
      for (const n of names) {
        if (isTempOf(entry, n)) {
          rmSync(join(this.dir, entry), { force: true });
          break;
        }
      }
    }
  }

  private saveManifest(state: RunEntry['state'], pending: string[] = []): void {
    const path = join(this.dir, RUN_MANIFEST);
    const m: RunManifest = readManifest(this.dir) ?? {
      about: 'the files Airshade wrote in this folder, per command (its last run)',
      caution: CAUTION,
      runs: {},
    };
    const entry: RunEntry = { state, started: this.started, files: this.files };
    if (state === 'complete') {
      entry.finished = new Date().toISOString();
    } else {
      const mine = new Set(this.files.map((f) => f.name));
      entry.earlier = this.earlier.filter((f) => !mine.has(f.name));
      const stillPending = [...new Set([...pending, ...this.earlierPending])].filter((n) => !mine.has(n));
      if (stillPending.length > 0) entry.pending = stillPending;
    }
    if (this.provenance !== undefined) entry.provenance = this.provenance;
    m.caution = CAUTION;
    m.runs[this.command] = entry;
    writeFileAtomic(path, JSON.stringify(m, null, 2) + '\n', `${this.what} ${path}`);
  }
}

/** Finishes a run (`RunFolder.finish`) and says what was tidied: the lines to print. */
export function finishRun(run: RunFolder, command: string, outDir: string): string[] {
  const tidy = run.finish();
  const lines: string[] = [];
  if (tidy.removed.length > 0) {
    lines.push(
      `removed ${tidy.removed.length} file(s) of the earlier ${command} run in ${outDir}: ${tidy.removed.join(', ')}`,
    );
  }
  for (const f of tidy.leftAlone) {
    lines.push(
      `warning: ${join(outDir, f)} was written by an earlier ${command} run but has changed since; left alone`,
    );
  }
  return lines;
}

/** A file name with no folder part (a manifest is only trusted for names inside its own folder). */
function isPlainName(name: unknown): name is string {
  return (
    typeof name === 'string' &&
    name !== '' &&
    name !== '.' &&
    name !== '..' &&
    !name.includes('/') &&
    !name.includes('\\') &&
    !name.includes('\0')
  );
}

/** True when the file still has the size and SHA-256 the manifest recorded. */
function unchanged(path: string, f: RunFile): boolean {
  try {
    const st = lstatSync(path);
    if (!st.isFile() || st.size !== f.bytes) return false;
    return sha256(readFileSync(path)) === f.sha256;
  } catch {
    return false;
  }
}

/** The folder's manifest, or undefined when absent or not ours (an unreadable one is ignored, never trusted). */
function readManifest(dir: string): RunManifest | undefined {
  let text: string;
  try {
    text = readFileSync(join(dir, RUN_MANIFEST), 'utf8');
  } catch {
    return undefined;
  }
  try {
    const m = JSON.parse(text) as RunManifest;
    if (typeof m !== 'object' || m === null || typeof m.runs !== 'object' || m.runs === null)
      return undefined;
    const runs: Record<string, RunEntry> = {};
    for (const [cmd, e] of Object.entries(m.runs)) {
      if (typeof e !== 'object' || e === null) continue;
      const list = (v: unknown): RunFile[] =>
        Array.isArray(v)
          ? v.filter(
              (f): f is RunFile =>
                typeof f === 'object' &&
                f !== null &&
                isPlainName((f as RunFile).name) &&
                typeof (f as RunFile).bytes === 'number' &&
                typeof (f as RunFile).sha256 === 'string',
            )
          : [];
      runs[cmd] = {
        ...e,
        files: list(e.files),
        earlier: list(e.earlier),
        pending: Array.isArray(e.pending) ? e.pending.filter(isPlainName) : [],
      };
    }
    return { ...m, runs };
  } catch {
    return undefined;
  }
}
