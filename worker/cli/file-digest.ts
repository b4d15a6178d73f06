/**
 * A file's SHA-256 read on its own, in pieces through one small buffer, with the file's identity (device, inode,
 * size, modification and change times in nanoseconds) taken before and after — so that a digest taken apart from
 * the read that fed the computation can be trusted for the same bytes (files.ts `deferDigest`). Node only, and no
 * other module of the CLI: the floor's worker thread loads it (worker/runtime/node.ts) to hash the DEM while the
 * main thread writes the floor.
 */
import { createHash } from 'node:crypto';
import { closeSync, fstatSync, openSync, readSync, type BigIntStats } from 'node:fs';

/** What identifies a file's content without reading it; strings where the numbers pass 2⁵³. */
export interface FileIdentity {
  dev: string;
  ino: string;
  size: string;
  mtimeNs: string;
  ctimeNs: string;
}

export function identityOf(st: BigIntStats): FileIdentity {
  return {
    dev: String(st.dev),
    ino: String(st.ino),
    size: String(st.size),
    mtimeNs: String(st.mtimeNs),
    ctimeNs: String(st.ctimeNs),
  };
}

/** The identity of an open file. */
export function identityOfFd(fd: number): FileIdentity {
  return identityOf(fstatSync(fd, { bigint: true }));
}

export function sameIdentity(a: FileIdentity, b: FileIdentity): boolean {
  return (
    a.dev === b.dev &&
    a.ino === b.ino &&
    a.size === b.size &&
    a.mtimeNs === b.mtimeNs &&
    a.ctimeNs === b.ctimeNs
  );
}

export interface ChunkedDigest {
  /** SHA-256, lowercase hex. */
  sha256: string;
  /** The file's identity when it was opened, and after its last byte was read. */
  before: FileIdentity;
  after: FileIdentity;
}

/** Bytes per read: small enough to stay in the caches, large enough that the calls cost nothing. */
const PIECE_BYTES = 4 * 1024 * 1024;

/** Reads `path` front to back and hashes it (see the file note). Throws the file system's error as it comes. */
export function digestFile(path: string): ChunkedDigest {
  const fd = openSync(path, 'r');
  try {
    const before = identityOfFd(fd);
    const hash = createHash('sha256');
    const piece = Buffer.allocUnsafe(PIECE_BYTES);
    for (let at = 0; ;) {
      const n = readSync(fd, piece, 0, PIECE_BYTES, at);
      if (n === 0) break;
      hash.update(n === PIECE_BYTES ? piece : piece.subarray(0, n));
      at += n;
    }
    return { sha256: hash.digest('hex'), before, after: identityOfFd(fd) };
  } finally {
    closeSync(fd);
  }
}
