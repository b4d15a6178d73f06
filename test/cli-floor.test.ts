/**
 * `airshade floor` as a user meets it: a run on a generated tile (negative coordinates in both spellings),
 * the GeoTIFF it writes read back with geotiff.js, the worker pool giving the same bytes as the inline path,
 * and one test per bad input: each ends with one message naming the file or argument, what was found and what
 * was expected, and a non-zero exit status, without a stack trace.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { fromArrayBuffer } from 'geotiff';
import { runCli } from './support/run-cli.ts';
import { NodePool } from '../worker/runtime/node-pool.ts';
import { bootFloorWorkersEarly, closeEarlyWorkers, takeEarlyWorkers } from '../worker/cli/floor-early.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { corruptIfdOffset, encodeTiff, truncate } from './support/tiff-encoder.ts';
import { bumpyDem } from './support/bumps.ts';

let dir: string;
let dem: string;
const W = 121;
// A 0.1° tile of invented hills over the open South Atlantic (3″ cells).
const geo: GridGeo = {
  width: W,
  height: W,
  originX: -29.55,
  originY: -41.45,
  pixelX: 0.1 / W,
  pixelY: -0.1 / W,
  crs: WGS84_GEOGRAPHIC,
};

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-cli-'));
  dem = join(dir, 'hills.tif');
  writeFileSync(dem, new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(3, W, W) })));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const run = runCli;

const SITE = '-29.5,-41.5';

describe('airshade floor', () => {
  it('runs with --site VALUE and --site=VALUE alike and writes a GeoTIFF geotiff.js reads back', async () => {
    const a = join(dir, 'a.tif');
    const b = join(dir, 'b.tif');
    const r1 = await run(
      'floor',
      '--dem',
      dem,
      '--site',
      SITE,
      '--mast-m',
      '20',
      '--out',
      a,
      '--threads',
      '0',
    );
    const r2 = await run('floor', '--dem', dem, `--site=${SITE}`, '--mast-m=20', `--out=${b}`, '--threads=0');
    expect(r1.code).toBe(0);
    expect(r2.code).toBe(0);
    expect(r1.out).toMatch(/floor written to/);
    expect(readFileSync(a).equals(readFileSync(b))).toBe(true);
    const buf = readFileSync(a);
    const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
    const img = await tiff.getImage();
    expect(img.getWidth()).toBe(W);
    expect(img.getHeight()).toBe(W);
    expect(img.getBitsPerSample()).toBe(32);
    expect(img.getSampleFormat()).toBe(3); // IEEE float
    expect(img.getGDALNoData()).toBeNaN();
    const [ox, oy] = img.getOrigin();
    expect(ox).toBeCloseTo(geo.originX, 10);
    expect(oy).toBeCloseTo(geo.originY, 10);
    const [floor] = (await img.readRasters()) as unknown as Float32Array[];
    const ground = bumpyDem(3, W, W);
    let valued = 0;
    for (let i = 0; i < floor.length; i++) {
      if (floor[i] === floor[i]) {
        valued++;
        expect(floor[i]).toBeGreaterThanOrEqual(ground[i] - 1e-3);
      }
    }
    expect(valued).toBe(W * W);
  });

  /** `airshade floor` as a real process (12 m mast, the test's DEM and site) into `out`; the file's bytes. */
  const floorProcess = (
    out: string,
    extra: string[],
    env: Record<string, string> = {},
    demPath = dem,
  ): Buffer => {
    const bin = join(import.meta.dirname, '..', 'bin', 'airshade.mjs');
    const args = [
      'floor',
      '--dem',
      demPath,
      '--site',
      SITE,
      '--mast-m',
      '12',
      '--out',
      out,
      ...extra,
      '--quiet',
    ];
    execFileSync(process.execPath, [bin, ...args], { env: { ...process.env, ...env } });
    return readFileSync(out);
  };

  it('with the native memory helper (huge pages, pages handed back as written) and without it: the same bytes', () => {
    // 1210² cells: the raster (5.6 MiB) is written in two pieces, the first handed back before the second goes in.
    const n = 1210;
    const big = join(dir, 'hills-1210.tif');
    const bigGeo = { ...geo, width: n, height: n, pixelX: 0.1 / n, pixelY: -0.1 / n };
    writeFileSync(big, new Uint8Array(encodeGeoTiff({ geo: bigGeo, data: bumpyDem(3, n, n) })));
    for (const threads of ['2', '0']) {
      const extra = ['--threads', threads];
      const plain = floorProcess(
        join(dir, `plain-${threads}.tif`),
        extra,
        { AIRSHADE_MEMORY_HELPER: '0' },
        big,
      );
      const helped = floorProcess(join(dir, `helped-${threads}.tif`), extra, {}, big);
      expect(helped.equals(plain)).toBe(true);
    }
    // The floor is not empty (a raster handed back before it was written would read as zeros).
    const floor = new Float32Array(readFileSync(join(dir, 'helped-2.tif')).buffer.slice(-4 * n * n));
    expect(floor.some((x) => x > 0)).toBe(true);
    expect(floor.filter((x) => x === 0).length).toBeLessThan(n);
  });

  it('the worker pool (a real process, two threads) writes exactly what the inline path writes', async () => {
    const inline = join(dir, 'inline.tif');
    const pooled = join(dir, 'pooled.tif');
    await run('floor', '--dem', dem, '--site', SITE, '--mast-m', '12', '--out', inline, '--threads', '0');
    expect(readFileSync(inline).equals(floorProcess(pooled, ['--threads', '2']))).toBe(true);
  });

  it('the sweep over the cells with this thread as a lane (1 and 2 threads) writes what the inline path writes', () => {
    const floorFile = (threads: string) =>
      floorProcess(join(dir, `cells-${threads}.tif`), ['--sweep', 'cells', '--threads', threads]);
    const inline = floorFile('0');
    expect(inline.equals(floorFile('2'))).toBe(true);
    expect(inline.equals(floorFile('1'))).toBe(true);
  });

  it('a DEM unchanged for seconds: its digest is taken on the worker while the floor is written; the same bytes', async () => {
    // The read hands the digest on only for a file last changed 2.5 s or more before it is opened (files.ts).
    const old = join(dir, 'settled.tif');
    writeFileSync(old, readFileSync(dem));
    await new Promise((r) => setTimeout(r, 2600));
    const inline = join(dir, 'settled-inline.tif');
    const args = ['floor', '--dem', old, '--site', SITE, '--mast-m', '12', '--sweep', 'cells'];
    const r = await run(...args, '--out', inline, '--threads', '0');
    expect(r.code).toBe(0);
    const bin = join(import.meta.dirname, '..', 'bin', 'airshade.mjs');
    for (const threads of ['2', '1']) {
      const out = join(dir, `settled-${threads}.tif`);
      execFileSync(process.execPath, [bin, ...args, '--out', out, '--threads', threads, '--quiet']);
      // The provenance in the header names the DEM's SHA-256: the same header, the same floor.
      expect(readFileSync(out).equals(readFileSync(inline))).toBe(true);
    }
    expect(readFileSync(inline).includes(createHash('sha256').update(readFileSync(old)).digest('hex'))).toBe(
      true,
    );
  });

  it('--help prints the usage and exits 0', async () => {
    const r = await run('floor', '--help');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Usage:\n {2}airshade floor --dem/);
  });

  it('--sweep: cells and radials both run and say which ran; anything else is refused naming --sweep', async () => {
    const floorWith = (sweep: string, threads: string[] = ['--threads', '0']) =>
      run(
        'floor',
        '--dem',
        dem,
        '--site',
        SITE,
        '--mast-m',
        '20',
        '--out',
        join(dir, `${sweep}.tif`),
        ...threads,
        '--sweep',
        sweep,
      );
    const cells = await floorWith('cells');
    const radials = await floorWith('radials');
    expect(cells.code).toBe(0);
    expect(radials.code).toBe(0);
    expect(cells.out).toMatch(/sampling {5}the DEM's own cells/);
    expect(radials.out).toMatch(/sampling {5}\d+ geodesic radials/);
    const bad = await floorWith('fast', []);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--sweep: found "fast"; expected "auto", "cells" or "radials"/);
  });

  it('a run refused after its workers started (one DEM: they start while it is read) closes them', async () => {
    // Two threads on one DEM: the workers start from its header; the work limit refuses the run after the read.
    const r = await run(
      'floor',
      '--dem',
      dem,
      '--site',
      SITE,
      '--mast-m',
      '20',
      '--out',
      join(dir, 'refused.tif'),
      '--threads',
      '2',
      '--max-work-min',
      '0.000001',
    );
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--max-work-min/);
    expect(existsSync(join(dir, 'refused.tif'))).toBe(false);
    expect(NodePool.running).toBe(0); // left running, they would hold the process open
  });

  it('workers start early for a large DEM; taken when the floor wants as many, else closed; none left after', async () => {
    // A sparse file of 64 MiB: large enough to start them, and no GeoTIFF (the floor refuses it after they start).
    const big = join(dir, 'large.tif');
    writeFileSync(big, '');
    truncateSync(big, 64 * 1024 * 1024);
    const want = NodePool.defaultSize() - 1;
    const args = ['--dem', big, '--site', SITE, '--mast-m', '20', '--out', join(dir, 'x.tif')];
    bootFloorWorkersEarly(args);
    expect(NodePool.running).toBe(want);
    const taken = takeEarlyWorkers(want);
    expect(taken?.size ?? 0).toBe(want);
    await taken?.close();
    bootFloorWorkersEarly(args);
    expect(takeEarlyWorkers(want + 1)).toBeNull(); // not as many: closed
    await closeEarlyWorkers();
    await vi.waitFor(() => expect(NodePool.running).toBe(0));
    // Not the plain case: none start.
    const small = [...args];
    small[1] = dem;
    for (const a of [small, [...args, '--threads', '2'], [...args, '--sweep=radials'], [...args, '--help']]) {
      bootFloorWorkersEarly(a);
      expect(NodePool.running).toBe(0);
    }
    bootFloorWorkersEarly([...args, '--dem', dem]);
    expect(NodePool.running).toBe(0);
    // Through the command: refused (no GeoTIFF), one message, and the early workers closed with it.
    const r = await run('floor', ...args);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/large\.tif/);
    expect(NodePool.running).toBe(0);
  });

  it('a bad input in a real process prints one line and no stack trace', () => {
    const bin = join(import.meta.dirname, '..', 'bin', 'airshade.mjs');
    const r = spawnSync(
      process.execPath,
      [
        bin,
        'floor',
        '--dem',
        join(dir, 'missing.tif'),
        '--site',
        SITE,
        '--mast-m',
        '20',
        '--out',
        join(dir, 'x.tif'),
      ],
      { encoding: 'utf8' },
    );
    expect(r.status).not.toBe(0);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/missing\.tif: found no such file; expected a GeoTIFF elevation tile/);
    expect(r.stderr).not.toMatch(/at .*\.ts:\d+/);
  });
});

describe('airshade floor: bad input, one message each', () => {
  const bad = (name: string, bytes: ArrayBuffer | string) => {
    const p = join(dir, name);
    writeFileSync(p, typeof bytes === 'string' ? bytes : new Uint8Array(bytes));
    return p;
  };
  const good = () =>
    encodeTiff({
      width: 8,
      height: 8,
      values: new Array(64).fill(100),
      sampleType: 'int16',
      georef: { x0: -29.6, y0: -41.4, dx: 0.01, dy: 0.01 },
    });
  const floorWith = (demPath: string, ...extra: string[]) =>
    run(
      'floor',
      '--dem',
      demPath,
      '--site',
      SITE,
      '--mast-m',
      '20',
      '--out',
      join(dir, 'o.tif'),
      '--threads',
      '0',
      ...extra,
    );

  const expectMessage = (r: { code: number; err: string }, re: RegExp) => {
    expect(r.code).not.toBe(0);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(re);
  };

  it('a corrupt GeoTIFF', async () => {
    expectMessage(
      await floorWith(bad('corrupt.tif', corruptIfdOffset(good()))),
      /corrupt\.tif: found a truncated or corrupt TIFF .*; expected a complete, readable GeoTIFF/,
    );
  });
  it('a truncated GeoTIFF', async () => {
    expectMessage(
      await floorWith(bad('short.tif', truncate(encodeGeoTiff({ geo, data: bumpyDem(3, W, W) }), 5000))),
      /short\.tif: found .*(truncated|ends|short|cut).*; expected/i,
    );
  });
  it('a file that is not a GeoTIFF', async () => {
    expectMessage(
      await floorWith(bad('notes.tif', 'these are my notes, not a raster')),
      /notes\.tif: found a file that is not a TIFF.*; expected a GeoTIFF/,
    );
  });
  it('a TIFF without georeferencing', async () => {
    const plain = encodeTiff({
      width: 8,
      height: 8,
      values: new Array(64).fill(1),
      sampleType: 'int16',
      crs: 'none',
    });
    expectMessage(
      await floorWith(bad('scan.tif', plain)),
      /scan\.tif: found a TIFF without georeferencing .*; expected a GeoTIFF that places the raster on the earth/,
    );
  });
  it('an unsupported CRS', async () => {
    const t = encodeTiff({
      width: 8,
      height: 8,
      values: new Array(64).fill(1),
      sampleType: 'int16',
      georef: { x0: 500000, y0: 5500000, dx: 30, dy: 30 },
      crs: { kind: 'projected', epsg: 12345 },
    });
    expectMessage(
      await floorWith(bad('code.tif', t)),
      /code\.tif: found projected CRS EPSG:12345 with an unknown CRS code 12345; expected EPSG:4326/,
    );
  });
  it('an unsupported sample format', async () => {
    const rgb = encodeTiff({
      width: 8,
      height: 8,
      values: new Array(192).fill(7),
      sampleType: 'uint8',
      samplesPerPixel: 3,
      photometric: 2,
      georef: { x0: -29.6, y0: -41.4, dx: 0.01, dy: 0.01 },
    });
    expectMessage(
      await floorWith(bad('rgb.tif', rgb)),
      /rgb\.tif: found 3 bands of 8-bit unsigned integers; expected one band of 16- or 32-bit/,
    );
  });
  it('a missing file', async () => {
    expectMessage(
      await floorWith(join(dir, 'nowhere.tif')),
      /nowhere\.tif: found no such file; expected a GeoTIFF elevation tile/,
    );
  });
  it('a site outside every tile', async () => {
    const r = await run(
      'floor',
      '--dem',
      dem,
      '--site',
      '-10,-41.5',
      '--mast-m',
      '20',
      '--out',
      join(dir, 'o.tif'),
      '--threads',
      '0',
    );
    expectMessage(
      r,
      /--site: found -10,-41\.5, outside the DEM tiles .*; expected an antenna position on the loaded terrain/,
    );
  });
  it('a site that is not LON,LAT', async () => {
    expectMessage(
      await floorWith(dem, '--site', 'north'),
      /--site: found the option given twice; expected it once|--site: found "north"/,
    );
  });
  it('a negative antenna height', async () => {
    const r = await run('floor', '--dem', dem, '--site', SITE, '--mast-m', '-5', '--out', join(dir, 'o.tif'));
    expectMessage(r, /--mast-m: found -5; expected an antenna height above ground from 0 to 1000 m/);
  });
  it('an absurd antenna height', async () => {
    const r = await run(
      'floor',
      '--dem',
      dem,
      '--site',
      SITE,
      '--mast-m',
      '25000',
      '--out',
      join(dir, 'o.tif'),
    );
    expectMessage(r, /--mast-m: found 25000; expected an antenna height above ground from 0 to 1000 m/);
  });
  it.each(['0', '-1.3333'])('k = %s', async (k) => {
    const r = await run(
      'floor',
      '--dem',
      dem,
      '--site',
      SITE,
      '--mast-m',
      '20',
      '--k',
      k,
      '--out',
      join(dir, 'o.tif'),
    );
    expectMessage(
      r,
      // k ≤ 0: a refractivity gradient of −157 N/km or steeper ducts (ITU-R P.452 eq. (5): k = 157/(157 − ΔN)).
      new RegExp(
        `--k: found ${k.replace('.', '\\.')}; expected an effective earth radius factor k from 0.2 to 20 .*ducting`,
      ),
    );
  });
  it('an unknown option', async () => {
    expectMessage(
      await floorWith(dem, '--mast', '20'),
      /airshade floor: --mast: found an option that airshade floor does not have; expected one of --dem, --site/,
    );
  });
  it('no --out', async () => {
    const r = await run('floor', '--dem', dem, '--site', SITE, '--mast-m', '20');
    expectMessage(r, /--out: found nothing \(the option is missing\); expected the output GeoTIFF path/);
  });
});
