/**
 * The native memory helper (worker/native/memory.c, issue 12): built by `npm install` on Linux (scripts/build-native.mjs)
 * and used by `airshade floor` for its raster: huge pages without a second start of Node, and the raster's pages
 * handed back as they are written. Checked here: it loads; `release` zeroes exactly the whole pages of the range
 * asked and nothing outside it, on a SharedArrayBuffer as on a plain one; bad arguments are refused; a streamed
 * write that hands each written piece back gives the same file; the launcher starts Node once for a large floor when
 * the helper loads; and AIRSHADE_MEMORY_HELPER=0 turns it off.
 */
import { spawnSync } from 'node:child_process';
import {
  copyFileSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadMemoryHelper, MEMORY_HELPER_ENV, MEMORY_HELPER_PATH } from '../bin/native-memory.mjs';
import { HUGE_FLOOR_BYTES, wantsHugePages } from '../bin/huge-pages.mjs';
import { writeFileAtomicStreamed } from '../worker/cli/files.ts';
import { memoryHelper } from '../worker/runtime/native-memory.ts';

const root = resolve(import.meta.dirname, '..');
const dir = mkdtempSync(join(tmpdir(), 'airshade-native-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const PAGE = 4096;
const linux = process.platform === 'linux';

function helperOrFail() {
  const h = loadMemoryHelper(root, {});
  if (h === null) {
    throw new Error(
      `the native memory helper (${MEMORY_HELPER_PATH}) does not load: run \`npm run build:native\`, which says why`,
    );
  }
  return h;
}

describe.runIf(linux)('the native memory helper', () => {
  it('loads, and the CLI finds it; AIRSHADE_MEMORY_HELPER=0 turns it off', () => {
    helperOrFail();
    expect(memoryHelper()).not.toBeNull();
    expect(loadMemoryHelper(root, { [MEMORY_HELPER_ENV]: '0' })).toBeNull();
    expect(loadMemoryHelper(join(dir, 'nowhere'), {})).toBeNull();
  });

  it('hugePages advises the whole pages inside the view and changes no value', () => {
    const h = helperOrFail();
    const v = new Float32Array(new SharedArrayBuffer(8 << 20));
    v[0] = 1.5;
    v[v.length - 1] = -2.5;
    const advised = h.hugePages(v);
    expect(advised).toBeGreaterThanOrEqual(v.byteLength - 2 * PAGE);
    expect(advised).toBeLessThanOrEqual(v.byteLength);
    expect(advised % PAGE).toBe(0);
    expect([v[0], v[v.length - 1]]).toEqual([1.5, -2.5]);
    expect(h.hugePages(new Uint8Array(100))).toBeLessThanOrEqual(0 + PAGE); // nothing whole inside, or one page
  });

  it('hugePages on a shared WebAssembly memory (where the radial kernel keeps a study’s terrain), which still grows', () => {
    const h = helperOrFail();
    const memory = new WebAssembly.Memory({ initial: 64, maximum: 256, shared: true });
    const v = new Float32Array(memory.buffer, 0, (64 * 65536) / 4);
    v.fill(3.25);
    expect(h.hugePages(v)).toBe(64 * 65536);
    expect(v.every((x) => x === 3.25)).toBe(true);
    memory.grow(16);
    const grown = new Float32Array(memory.buffer);
    expect(grown[v.length - 1]).toBe(3.25);
    expect(grown[grown.length - 1]).toBe(0);
  });

  for (const shared of [true, false]) {
    it(`release zeroes exactly the whole pages in [from, to) and nothing else (${shared ? 'shared' : 'plain'} buffer)`, () => {
      const h = helperOrFail();
      const bytes = 3 << 20;
      const buffer = shared ? new SharedArrayBuffer(bytes + 64) : new ArrayBuffer(bytes + 64);
      // A view that starts off any page boundary, as a raster behind a header might.
      const v = new Uint8Array(buffer, 40, bytes);
      v.fill(7);
      const from = 100_000;
      const to = 2_500_000;
      const released = h.release(v, from, to);
      expect(released % PAGE).toBe(0);
      expect(released).toBeGreaterThan(to - from - 2 * PAGE);
      let zeros = 0;
      let others = 0;
      let firstZero = -1;
      let lastZero = -1;
      for (let i = 0; i < v.length; i++) {
        if (v[i] === 0) {
          zeros++;
          if (firstZero < 0) firstZero = i;
          lastZero = i;
        } else if (v[i] !== 7) others++;
      }
      expect(others).toBe(0);
      // `from` is rounded down to its page (the caller has no use for anything before `to`), `to` down to its own.
      expect(zeros).toBe(released);
      expect(lastZero - firstZero + 1).toBe(released);
      expect(firstZero).toBeLessThanOrEqual(from);
      expect(from - firstZero).toBeLessThan(PAGE);
      expect(lastZero).toBeLessThan(to);
      expect(to - lastZero - 1).toBeLessThan(PAGE);
      // Never a byte before the view's first whole page, from 0 as from anywhere.
      const w = new Uint8Array(buffer, 40, bytes);
      w.fill(9);
      const all = h.release(w, 0, w.byteLength);
      const head = new Uint8Array(buffer, 0, 40);
      expect(head.every((x) => x === 0 || x === 9)).toBe(true);
      expect(w[0]).toBe(9);
      expect(all).toBeLessThanOrEqual(w.byteLength - PAGE + 40);
      expect(w.filter((x) => x === 0).length).toBe(all);
    });
  }

  it('refuses what is not a typed array, and ranges outside the view', () => {
    const h = helperOrFail();
    const v = new Float32Array(1024);
    expect(() => h.release(new ArrayBuffer(8) as unknown as Uint8Array, 0, 8)).toThrow(TypeError);
    expect(() => h.release(v, 0, v.byteLength + 1)).toThrow(/to must be a whole byte offset from 0 to 4096/);
    expect(() => h.release(v, 10, 5)).toThrow(/from must be a whole byte offset from 0 to 5/);
    expect(() => h.release(v, 0.5, 5)).toThrow(RangeError);
    expect(() => h.release(v, -1, 5)).toThrow(RangeError);
    expect(() => h.hugePages({} as Uint8Array)).toThrow(TypeError);
    const loose = h as unknown as Record<string, (...a: unknown[]) => number>;
    expect(() => loose.release(v, 0)).toThrow(/release\(view, from, to\)/);
    expect(() => loose.hugePages()).toThrow(/hugePages\(view\)/);
    expect(h.release(v, 0, 0)).toBe(0);
  });

  it('a streamed write that hands each piece back as it goes: the same file, the source released behind it', async () => {
    const h = helperOrFail();
    const head = new Uint8Array(64).fill(3);
    const n = 9 << 20; // three pieces of 4 MiB, the last short
    const pixels = new Uint8Array(new SharedArrayBuffer(n));
    for (let i = 0; i < n; i++) pixels[i] = (i * 2654435761) >>> 24;
    const expected = Buffer.concat([head, Buffer.from(pixels)]);
    const ranges: [number, number][] = [];
    const path = join(dir, 'released.bin');
    await writeFileAtomicStreamed(
      path,
      [pixels],
      'released.bin',
      32 << 20,
      { bytes: head.byteLength, make: async () => head },
      (part, from, to) => {
        expect(part).toBe(pixels);
        ranges.push([from, to]);
        h.release(part, from, to);
      },
    );
    expect(readFileSync(path).equals(expected)).toBe(true);
    // Consecutive pieces of at most 4 MiB covering the part; the memory behind them zeroed.
    expect(ranges[0][0]).toBe(0);
    for (let i = 1; i < ranges.length; i++) expect(ranges[i][0]).toBe(ranges[i - 1][1]);
    expect(ranges.at(-1)![1]).toBe(n);
    expect(Math.max(...ranges.map(([a, b]) => b - a))).toBeLessThanOrEqual(4 << 20);
    expect(pixels.subarray(PAGE, n - PAGE).every((x) => x === 0)).toBe(true);
  });

  it('the launcher starts Node once for a large floor when the helper loads, twice (huge pages) when it does not', () => {
    const at = (memoryHelper: boolean) =>
      wantsHugePages({
        args: ['floor', '--dem', 'big.tif'],
        env: {},
        platform: 'linux',
        glibc: () => '2.36',
        fileSize: () => HUGE_FLOOR_BYTES,
        memoryHelper: () => memoryHelper,
      });
    expect(at(true)).toBe(false);
    expect(at(false)).toBe(true);
    const study = (memoryHelper: boolean) =>
      wantsHugePages({
        args: ['plan', 's.json'],
        env: {},
        platform: 'linux',
        glibc: () => '2.36',
        fileSize: () => 0,
        memoryHelper: () => memoryHelper,
      });
    expect(study(true)).toBe(true);
  });

  it('scripts/build-native.mjs --strict builds it (node-gyp, offline) from the sources, and that build loads', () => {
    // A copy of worker/native/ in a folder of its own: the tests running beside this one keep loading the helper.
    const copy = join(dir, 'worker/native');
    mkdirSync(copy, { recursive: true });
    for (const f of ['memory.c', 'binding.gyp']) copyFileSync(join(root, 'worker/native', f), join(copy, f));
    const r = spawnSync(
      process.execPath,
      [join(root, 'scripts/build-native.mjs'), '--strict', '--directory', copy],
      {
        encoding: 'utf8',
      },
    );
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const built = loadMemoryHelper(dir, {});
    expect(built).not.toBeNull();
    const v = new Uint8Array(3 * PAGE).fill(1);
    expect(built!.release(v, 0, v.byteLength)).toBeGreaterThanOrEqual(2 * PAGE);
    // A source that does not compile: --strict says so, names node-gyp, and leaves no half-built helper.
    writeFileSync(join(copy, 'memory.c'), 'this is not C\n');
    const bad = spawnSync(
      process.execPath,
      [join(root, 'scripts/build-native.mjs'), '--strict', '--directory', copy],
      {
        encoding: 'utf8',
      },
    );
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(
      /the native memory helper \(worker\/native\/\) was not built: node-gyp ended with status/,
    );
    expect(bad.stderr).toMatch(/The CLI works without it/);
    expect(existsSync(join(copy, 'build'))).toBe(false);
    // Without --strict (as `npm install` runs it) the same failure ends with status 0.
    const lenient = spawnSync(
      process.execPath,
      [join(root, 'scripts/build-native.mjs'), '--directory', copy],
      {
        encoding: 'utf8',
      },
    );
    expect(lenient.status).toBe(0);
    expect(lenient.stderr).toMatch(/was not built/);
  }, 120_000);
});
