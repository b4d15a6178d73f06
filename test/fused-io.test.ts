/**
 * The floor's fused I/O (issue 12): tiles decoded straight into a window of one buffer, the mosaic built that way,
 * outputs written as header + buffer, the files hashed from the bytes read, and the huge-pages launcher. Every check
 * compares the fused path with the plain one it replaces (readDemTile + Terrain.fromTiles, encodeGeoTiff, SHA-256
 * of the whole file), bit for bit. Fixtures: invented terrain over the open South Atlantic.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Terrain, type PendingTile } from '../worker/core/terrain.ts';
import { decodeDemTileInto, fillVoids, openDemTile, readDemTile } from '../worker/io/geotiff-read.ts';
import { encodeGeoTiff, encodeGeoTiffParts } from '../worker/io/geotiff-write.ts';
import { readTerrainWithin } from '../worker/cli/dem-open.ts';
import {
  digestOfRead,
  localFileSystem,
  openFileChecked,
  settleDeferredDigests,
  writeFileAtomic,
  writeFileAtomicStreamed,
} from '../worker/cli/files.ts';
import { digestFile } from '../worker/cli/file-digest.ts';
import { InputError } from '../shared/errors.ts';
import { bumpyDem } from './support/bumps.ts';
import {
  CHILD_MARK,
  HUGE_COMMANDS,
  HUGE_FLOOR_BYTES,
  HUGE_TUNABLE,
  wantsHugePages,
} from '../bin/huge-pages.mjs';
import { encodeTiff, type TiffSpec } from './support/tiff-encoder.ts';

const dir = mkdtempSync(join(tmpdir(), 'airshade-fused-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function geographic(width: number, height: number, originX: number, originY: number, px: number): GridGeo {
  return { width, height, originX, originY, pixelX: px, pixelY: -px, crs: WGS84_GEOGRAPHIC };
}

/** Bitwise equality of two Float32Arrays (NaN equal to NaN, 0 apart from -0). */
function sameBits(a: Float32Array, b: Float32Array): boolean {
  if (a.length !== b.length) return false;
  const x = new Uint32Array(a.buffer, a.byteOffset, a.length);
  const y = new Uint32Array(b.buffer, b.byteOffset, b.length);
  for (let i = 0; i < x.length; i++) if (x[i] !== y[i]) return false;
  return true;
}

/** A PendingTile over an in-memory file, as the CLI builds one over a file descriptor. */
async function pendingOf(bytes: ArrayBuffer, name: string): Promise<PendingTile> {
  const t = await openDemTile(bytes, name);
  return { name, geo: t.geo, decodeInto: (dst, offset, stride) => decodeDemTileInto(t, dst, offset, stride) };
}

describe('decodeDemTileInto: a tile decoded into a window of a larger raster', () => {
  const w = 37;
  const h = 29;
  const values = Array.from(bumpyDem(4, w, h), (v) => Math.round(v));
  // A few voids (the nodata value) so that the window's void filling runs too.
  for (const i of [0, 1, 40, 41, 42, 300, w * h - 1]) values[i] = -32768;
  const georef = { x0: -28, y0: -40, dx: 0.01, dy: 0.01 };
  const specs: [string, Partial<TiffSpec>][] = [
    ['int16 strips', { sampleType: 'int16', layout: { kind: 'strips', rowsPerStrip: 5 } }],
    ['int16 tiles', { sampleType: 'int16', layout: { kind: 'tiles', tileWidth: 16, tileHeight: 16 } }],
    ['int16 big-endian', { sampleType: 'int16', bigEndian: true }],
    ['float32 tiles deflate', { sampleType: 'float32', compression: 'deflate', predictor: 3 }],
    ['int32 strips lzw', { sampleType: 'int32', compression: 'lzw', predictor: 2 }],
  ];
  it.each(specs)(
    '%s: the same values as readDemTile, nothing outside the window touched',
    async (_l, spec) => {
      const buf = encodeTiff({
        sampleType: 'int16',
        ...spec,
        width: w,
        height: h,
        values,
        georef,
        nodata: '-32768',
      } as TiffSpec);
      const plain = await readDemTile(buf, 'w.tif');
      expect(plain.voidsFilled).toBe(7);
      const stride = w + 11;
      const offset = 3 * stride + 5;
      const big = new Float32Array(stride * (h + 6)).fill(-1234.5);
      const decoded = await decodeDemTileInto(await openDemTile(buf, 'w.tif'), big, offset, stride);
      expect(decoded.voidsFilled).toBe(plain.voidsFilled);
      expect(decoded.warnings).toEqual(plain.warnings);
      const window = new Float32Array(w * h);
      for (let r = 0; r < h; r++)
        window.set(big.subarray(offset + r * stride, offset + r * stride + w), r * w);
      expect(sameBits(window, plain.data)).toBe(true);
      let outside = 0;
      for (let i = 0; i < big.length; i++) {
        const r = Math.floor((i - offset) / stride);
        const c = i - offset - r * stride;
        const inside = i >= offset && r < h && c >= 0 && c < w;
        if (!inside && big[i] !== -1234.5) outside++;
      }
      expect(outside).toBe(0);
    },
  );

  it('fillVoids on a window equals fillVoids on the tile alone', () => {
    const tw = 23;
    const th = 17;
    const tile = bumpyDem(5, tw, th);
    for (let i = 0; i < tile.length; i += 7) tile[i] = NaN;
    for (let c = 3; c < 12; c++) tile[8 * tw + c] = NaN;
    const stride = tw + 4;
    const offset = 2 * stride + 3;
    const big = new Float32Array(stride * (th + 4)).fill(NaN);
    for (let r = 0; r < th; r++) big.set(tile.subarray(r * tw, (r + 1) * tw), offset + r * stride);
    const alone = tile.slice();
    expect(fillVoids(big, tw, th, offset, stride)).toBe(fillVoids(alone, tw, th));
    const back = new Float32Array(tw * th);
    for (let r = 0; r < th; r++)
      back.set(big.subarray(offset + r * stride, offset + r * stride + tw), r * tw);
    expect(sameBits(back, alone)).toBe(true);
  });
});

describe('Terrain.fromPendingTiles: the same mosaic as Terrain.fromTiles', () => {
  const px = 1 / 120;
  const tif = (geo: GridGeo, seed: number, voids = false): ArrayBuffer => {
    const data = bumpyDem(seed, geo.width, geo.height);
    if (voids) for (let i = 5; i < data.length; i += 97) data[i] = NaN;
    return encodeGeoTiff({ geo, data, nodata: NaN });
  };
  const cases: [string, ArrayBuffer[]][] = [
    ['one tile with voids', [tif(geographic(60, 50, -30, -40, px), 1, true)]],
    [
      'two aligned tiles, the second overlapping and below-left',
      [tif(geographic(60, 50, -30, -40, px), 2), tif(geographic(40, 40, -30.2, -40.3, px), 3, true)],
    ],
    [
      'a second tile on another lattice (resampled)',
      [tif(geographic(60, 50, -30, -40, px), 4), tif(geographic(30, 30, -29.6, -40.35, px * 1.37), 5)],
    ],
    [
      'tiles either side of the antimeridian',
      [tif(geographic(40, 40, 179.8, -40, px), 6), tif(geographic(40, 40, -180, -40, px), 7)],
    ],
  ];
  it.each(cases)('%s', async (_l, files) => {
    for (const shared of [false, true]) {
      const plain = Terrain.fromTiles(await Promise.all(files.map((b, i) => readDemTile(b, `t${i}.tif`))), {
        shared,
      });
      const fused = await Terrain.fromPendingTiles(
        await Promise.all(files.map((b, i) => pendingOf(b, `t${i}.tif`))),
        { shared },
      );
      expect(fused.geo).toEqual(plain.geo);
      expect(fused.warnings).toEqual(plain.warnings);
      expect(fused.sources).toEqual(plain.sources);
      expect(sameBits(fused.data, plain.data)).toBe(true);
      expect(fused.data.buffer instanceof SharedArrayBuffer).toBe(shared);
    }
  });
});

describe('voids of Float32 metres found in place, by their bits', () => {
  // The in-place test (uncompressed little-endian Float32 strips) against the conversion every other layout takes
  // (deflate: geotiff.js decodes, then each value is compared as a number): the same voids, the same filled tile.
  // 63 × 3 samples a strip: the in-place pass's groups of four end with a sample of its own in every strip.
  const w = 63;
  const h = 48;
  const f = (x: number) => Math.fround(x);
  const below = (x: number) => {
    const b = new Float32Array([x]);
    new Int32Array(b.buffer)[0]--;
    return b[0];
  };
  const specials = [
    NaN,
    Infinity,
    -Infinity,
    f(1e30),
    -f(1e30),
    below(f(1e30)),
    -below(f(1e30)),
    -3.4028234663852886e38,
    0,
    -0,
    -9999,
    -9999.5,
    -32768,
    f(0.1),
    1e-45,
  ];
  it.each([
    ['none', undefined],
    ['-9999', -9999],
    ['0', 0],
    ['-32768', -32768],
    ['0.1', f(0.1)],
    ['nan', NaN],
  ])('nodata %s', async (label, nodata) => {
    const values = Array.from(bumpyDem(5, w, h), (v) => v);
    for (let i = 0; i < values.length; i += 7) values[i] = specials[(i / 7) % specials.length];
    // And the last sample of every strip, which no group of four holds.
    for (let k = 0, i = 3 * w - 1; i < values.length; k++, i += 3 * w)
      values[i] = specials[k % specials.length];
    const spec = {
      width: w,
      height: h,
      values,
      sampleType: 'float32' as const,
      layout: { kind: 'strips' as const, rowsPerStrip: 3 },
      georef: { x0: -27, y0: -41, dx: 0.01, dy: 0.01 },
      ...(nodata === undefined ? {} : { nodata: String(nodata) }),
    };
    const inPlace = await readDemTile(encodeTiff(spec), `a-${label}.tif`);
    const converted = await readDemTile(
      encodeTiff({ ...spec, compression: 'deflate', predictor: 3 }),
      `a-${label}.tif`,
    );
    expect(inPlace.voidsFilled).toBeGreaterThan(0);
    expect(inPlace.voidsFilled).toBe(converted.voidsFilled);
    expect(sameBits(inPlace.data, converted.data)).toBe(true);
  });
});

describe('outputs as header + buffer; inputs hashed from the bytes read', () => {
  const geo = geographic(300, 200, -25, -41, 1 / 240);
  const data = bumpyDem(9, geo.width, geo.height);
  data[17] = NaN;

  it('encodeGeoTiffParts: header + the raster’s own bytes, the same file as encodeGeoTiff', () => {
    const r = { geo, data, nodata: NaN, description: 'test raster' };
    const [header, pixels] = encodeGeoTiffParts(r);
    expect(pixels.buffer).toBe(data.buffer); // a view, not a copy
    const whole = new Uint8Array(encodeGeoTiff(r));
    expect(Buffer.compare(Buffer.concat([header, pixels]), whole)).toBe(0);
    const path = join(dir, 'parts.tif');
    writeFileAtomic(path, [header, pixels]);
    expect(Buffer.compare(readFileSync(path), whole)).toBe(0);
  });

  it('streamed (flushed as it goes): the same bytes, across parts and flush boundaries, no temporary file left', async () => {
    const shared = new Float32Array(new SharedArrayBuffer(data.byteLength));
    shared.set(data);
    const parts = encodeGeoTiffParts({ geo, data: shared, nodata: NaN });
    const whole = new Uint8Array(encodeGeoTiff({ geo, data, nodata: NaN }));
    const sub = join(dir, 'streamed');
    const path = join(sub, 'floor.tif');
    // A flush every 1000 bytes: many flushes, one across the header's end, and a short tail.
    await writeFileAtomicStreamed(path, parts, 'floor.tif', 1000);
    expect(Buffer.compare(readFileSync(path), whole)).toBe(0);
    // Written again over itself: replaced whole; only the output is in its folder.
    await writeFileAtomicStreamed(path, parts, 'floor.tif', 7777);
    expect(Buffer.compare(readFileSync(path), whole)).toBe(0);
    expect(readdirSync(sub)).toEqual(['floor.tif']);
    // Into a folder that is a file: refused naming the output, and nothing left behind.
    const blocked = join(sub, 'floor.tif', 'x.tif');
    await expect(writeFileAtomicStreamed(blocked, parts, '--out x.tif', 1000)).rejects.toThrow(/--out x.tif/);
    expect(() => writeFileAtomic(blocked, parts, '--out x.tif')).toThrow(/--out x.tif/);
    expect(readdirSync(sub)).toEqual(['floor.tif']);
  });

  it('a raster on a SharedArrayBuffer is written from that buffer', () => {
    const shared = new Float32Array(new SharedArrayBuffer(data.byteLength));
    shared.set(data);
    const path = join(dir, 'shared.tif');
    writeFileAtomic(path, encodeGeoTiffParts({ geo, data: shared, nodata: NaN }));
    expect(
      Buffer.compare(readFileSync(path), new Uint8Array(encodeGeoTiff({ geo, data, nodata: NaN }))),
    ).toBe(0);
  });

  it.each([
    ['uncompressed (read block by block)', { compression: 'none' as const }],
    ['deflate (read whole)', { compression: 'deflate' as const, predictor: 2 as const }],
  ])('the terrain file is hashed from the very bytes read: %s', async (_l, spec) => {
    const values = Array.from(bumpyDem(11, 90, 70), (v) => Math.round(v));
    const bytes = encodeTiff({
      width: 90,
      height: 70,
      values,
      sampleType: 'int16',
      layout: { kind: 'strips', rowsPerStrip: 3 },
      georef: { x0: -26, y0: -39, dx: 0.01, dy: 0.01 },
      ...spec,
    });
    const path = join(dir, `hash-${spec.compression}.tif`);
    writeFileSync(path, new Uint8Array(bytes));
    const { terrain } = await readTerrainWithin([path], 2 ** 30);
    expect(digestOfRead(path)).toBe(createHash('sha256').update(new Uint8Array(bytes)).digest('hex'));
    expect(Array.from(terrain.data)).toEqual(values);
  });
});

describe('the digest handed on: taken apart from the read, trusted only for the same, unchanged file', () => {
  const sha = (b: Uint8Array | Buffer) => createHash('sha256').update(b).digest('hex');

  /** A file of `n` bytes, opened and read through once with its digest handed on (min age 0), then closed. */
  const readDeferred = (name: string, n: number, seed = 1): { path: string; bytes: Buffer } => {
    const path = join(dir, name);
    const bytes = Buffer.from(Array.from({ length: n }, (_, i) => (i * 31 + seed) & 255));
    writeFileSync(path, bytes);
    const f = openFileChecked(path, 'a test tile');
    expect(f.deferDigest(0)).toBe(true);
    const into = new Uint8Array(1000);
    for (let at = 0; at < n; at += into.length) f.read(at, into);
    f.close(true);
    return { path, bytes };
  };

  it('a digest from elsewhere (here: digestFile, as the worker runs it) is recorded for the provenance', async () => {
    const { path, bytes } = readDeferred('deferred.bin', 12_345);
    expect(digestOfRead(path)).toBeUndefined(); // nothing hashed while reading
    await settleDeferredDigests([path], async (p) => digestFile(p));
    expect(digestOfRead(path)).toBe(sha(bytes));
  });

  it('no digest from elsewhere: this thread reads the file again', async () => {
    const { path, bytes } = readDeferred('deferred-here.bin', 9_001, 2);
    await settleDeferredDigests([path], async () => null);
    expect(digestOfRead(path)).toBe(sha(bytes));
    // A failed digest elsewhere counts as none.
    const again = readDeferred('deferred-failed.bin', 700, 3);
    await settleDeferredDigests([again.path], () => Promise.reject(new Error('worker gone')));
    expect(digestOfRead(again.path)).toBe(sha(again.bytes));
  });

  it('a file changed after it was read is refused, naming it, and no digest is recorded', async () => {
    const { path } = readDeferred('deferred-changed.bin', 5_000, 4);
    // Rewritten with other bytes of the same length: the change time moves (2 ms: past a coarse clock's tick).
    await new Promise((r) => setTimeout(r, 20));
    writeFileSync(path, Buffer.alloc(5_000, 7));
    const settled = settleDeferredDigests([path], async (p) => digestFile(p));
    await expect(settled).rejects.toBeInstanceOf(InputError);
    await expect(settleDeferredDigests([path], async (p) => digestFile(p))).rejects.toThrow(
      /changed while this run used it/,
    );
    expect(digestOfRead(path)).toBeUndefined();
  });

  it('a file changed just before it was opened keeps its digest here; other paths are left alone', async () => {
    const path = join(dir, 'fresh.bin');
    const bytes = Buffer.from('fresh bytes, written a moment ago');
    writeFileSync(path, bytes);
    const f = openFileChecked(path, 'a test tile');
    expect(f.canDeferDigest()).toBe(false); // default: changed less than 2.5 s ago
    expect(f.deferDigest()).toBe(false);
    f.read(0, new Uint8Array(bytes.length));
    f.close(true);
    expect(digestOfRead(path)).toBe(sha(bytes));
    const other = readDeferred('deferred-other.bin', 100, 5);
    await settleDeferredDigests([path], async () => {
      throw new Error('not asked: nothing of this path was handed on');
    });
    expect(digestOfRead(other.path)).toBeUndefined();
  });

  it('only on a local file system (Linux statfs types): not over a network one', () => {
    expect([0xef53, 0x58465342, 0x01021994, 0x794c7630].every((t) => localFileSystem(t))).toBe(true);
    // NFS, SMB/CIFS, FUSE (sshfs and the like), 9p
    expect([0x6969, 0xfe534d42, 0x65735546, 0x01021997].some((t) => localFileSystem(t))).toBe(false);
  });

  it('writeFileAtomicStreamed with a head made last: the same file; a head that fails leaves nothing', async () => {
    const geo = geographic(64, 50, -25, -41, 1 / 240);
    const data = bumpyDem(12, geo.width, geo.height);
    const [header, pixels] = encodeGeoTiffParts({ geo, data, nodata: NaN });
    const sub = join(dir, 'head-last');
    const path = join(sub, 'floor.tif');
    let madeAfter = -1;
    await writeFileAtomicStreamed(path, [pixels], 'floor.tif', 1000, {
      bytes: header.byteLength,
      make: async () => {
        madeAfter = readdirSync(sub).length; // the temporary file is there, the output not yet
        return header;
      },
    });
    expect(madeAfter).toBe(1);
    expect(Buffer.compare(readFileSync(path), Buffer.concat([header, pixels]))).toBe(0);
    // An InputError from the head comes out as it is; a head of the wrong length is an error too; neither leaves
    // a file behind nor touches the output already there.
    const refused = new InputError('dem.tif', 'a file that changed', 'an unchanged DEM');
    await expect(
      writeFileAtomicStreamed(path, [pixels], 'floor.tif', 1000, {
        bytes: header.byteLength,
        make: () => Promise.reject(refused),
      }),
    ).rejects.toBe(refused);
    await expect(
      writeFileAtomicStreamed(path, [pixels], 'floor.tif', 1000, {
        bytes: header.byteLength,
        make: async () => header.subarray(1),
      }),
    ).rejects.toThrow(/floor.tif/);
    expect(readdirSync(sub)).toEqual(['floor.tif']);
    expect(Buffer.compare(readFileSync(path), Buffer.concat([header, pixels]))).toBe(0);
  });
});

describe('when the launcher asks for huge pages (bin/huge-pages.mjs)', () => {
  const sizes: Record<string, number> = { 'big.tif': HUGE_FLOOR_BYTES, 'half.tif': HUGE_FLOOR_BYTES / 2 };
  const want = (
    args: string[],
    env: Record<string, string> = {},
    more: { platform?: string; glibc?: string } = {},
  ) =>
    wantsHugePages({
      args,
      env,
      platform: more.platform ?? 'linux',
      glibc: () => more.glibc ?? '2.36',
      fileSize: (p: string) => {
        if (!(p in sizes)) throw new Error(`no ${p}`);
        return sizes[p];
      },
    });
  it('by default for the study commands and for floor on 64 MiB of DEM or more', () => {
    for (const c of HUGE_COMMANDS) expect(want([c, 'study.json', '--out', 'o'])).toBe(true);
    expect(want(['floor', '--dem', 'big.tif', '--site=-27,-40'])).toBe(true);
    expect(want(['floor', '--dem=half.tif', '--dem', 'half.tif'])).toBe(true);
    expect(want(['floor', '--dem', 'half.tif'])).toBe(false);
    expect(want(['floor', '--dem', 'missing.tif', '--dem', 'half.tif'])).toBe(false);
    for (const c of ['diagram', 'init', 'demo-data', 'demo']) expect(want([c, 'x'])).toBe(false);
  });
  it('AIRSHADE_HUGE_PAGES=1 for any command, =0 never; never in the child, with the tunable set, for --help', () => {
    expect(want(['diagram', 'x'], { AIRSHADE_HUGE_PAGES: '1' })).toBe(true);
    expect(want(['plan', 'x'], { AIRSHADE_HUGE_PAGES: '0' })).toBe(false);
    expect(want(['plan', 'x'], { [CHILD_MARK]: '1' })).toBe(false);
    expect(want(['plan', 'x'], { GLIBC_TUNABLES: `glibc.malloc.arena_max=2:${HUGE_TUNABLE}=0` })).toBe(false);
    expect(want(['plan', '--help'])).toBe(false);
    expect(want([])).toBe(false);
  });
  it('only on Linux with glibc 2.35 or later', () => {
    expect(want(['plan', 'x'], {}, { platform: 'darwin' })).toBe(false);
    expect(want(['plan', 'x'], {}, { glibc: '2.34' })).toBe(false);
    expect(want(['plan', 'x'], {}, { glibc: '' })).toBe(false);
    expect(want(['plan', 'x'], {}, { glibc: '3.0' })).toBe(true);
  });
});

describe('bin/airshade.mjs with and without the huge-pages relaunch', () => {
  const bin = resolve('bin/airshade.mjs');
  const run = (env: Record<string, string>, ...args: string[]) =>
    spawnSync(process.execPath, [bin, ...args], {
      encoding: 'utf8',
      env: { ...process.env, AIRSHADE_HUGE_PAGES_CHILD: '', ...env },
      input: 'not read\n',
    });
  it('the same exit status, stdout and stderr, negative coordinates in argv included', () => {
    const args = ['floor', '--dem', join(dir, 'missing.tif'), '--site=-27.5,-40.25', '--mast-m', '20'];
    const relaunched = run(
      { GLIBC_TUNABLES: '', AIRSHADE_HUGE_PAGES: '1' },
      ...args,
      '--out',
      join(dir, 'o.tif'),
    );
    const direct = run({ AIRSHADE_HUGE_PAGES: '0' }, ...args, '--out', join(dir, 'o.tif'));
    expect(relaunched.status).toBe(2);
    expect(relaunched.status).toBe(direct.status);
    expect(relaunched.stdout).toBe(direct.stdout);
    expect(relaunched.stderr).toBe(direct.stderr);
    expect(relaunched.stderr).toMatch(/missing\.tif: found no such file/);
    const ok = run({ GLIBC_TUNABLES: '', AIRSHADE_HUGE_PAGES: '1' }, 'floor', '--help');
    expect(ok.status).toBe(0);
    expect(ok.stdout).toMatch(/^airshade floor/);
  });
});
