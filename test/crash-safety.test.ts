/**
 * Crash-safe outputs. The CLI is started as a user starts it (`node bin/airshade.mjs …`) and killed with SIGKILL
 * at random moments — and at the moment a temporary output file appears, i.e. in the middle of a write — during
 * `floor`, `coverage` and `demo-data`. Afterwards every final file must be whole (it parses: GeoTIFF through our
 * reader and geotiff.js, JSON and GeoJSON through JSON.parse) or absent; temporary files may remain, under their
 * own names only. A run after the kills finishes the job, and `demo-data` repairs damaged tiles from its
 * manifest. The run folder: stale files of an earlier run are removed only when the earlier manifest lists them and
 * their bytes are unchanged; other files are left alone.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  truncateSync,
  watch,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fromArrayBuffer } from 'geotiff';
import { runCli } from './support/run-cli.ts';
import { bumpyDem, mulberry32 } from './support/bumps.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import { readDemTile } from '../worker/io/geotiff-read.ts';
import { WGS84_GEOGRAPHIC } from '../worker/core/grid.ts';
import { RUN_MANIFEST } from '../worker/cli/files.ts';

const BIN = resolve('bin/airshade.mjs');
const rnd = mulberry32(13);
let dir: string;
let fixture: Fixture;

/** Runs the CLI and kills it with SIGKILL after `afterMs`, or as soon as a `.tmp` file appears in `watchDir`. */
function runAndKill(
  args: string[],
  opts: { afterMs?: number; onTempIn?: string; env?: Record<string, string> },
): Promise<{ killed: boolean; code: number | null }> {
  return new Promise((done) => {
    const child = spawn(process.execPath, [BIN, ...args], {
      stdio: 'ignore',
      env: { ...process.env, ...opts.env },
    });
    let killed = false;
    const kill = () => {
      if (!killed && child.exitCode === null) {
        killed = child.kill('SIGKILL');
      }
    };
    const timer = opts.afterMs !== undefined ? setTimeout(kill, opts.afterMs) : undefined;
    const watcher = opts.onTempIn
      ? watch(opts.onTempIn, (_e, name) => {
          if (name && String(name).endsWith('.tmp')) kill();
        })
      : undefined;
    child.on('exit', (code) => {
      clearTimeout(timer);
      watcher?.close();
      done({ killed, code });
    });
  });
}

const ab = (b: Buffer): ArrayBuffer =>
  b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;

/** Every non-temporary file in `folder` parses whole; returns their names. */
async function expectWholeFiles(folder: string): Promise<string[]> {
  if (!existsSync(folder)) return [];
  const names = readdirSync(folder).filter((n) => !n.endsWith('.tmp'));
  for (const n of names) {
    const path = join(folder, n);
    const bytes = readFileSync(path);
    if (n.endsWith('.tif')) {
      const tile = await readDemTile(ab(bytes), path);
      expect(tile.geo.width).toBeGreaterThan(0);
      const img = await (await fromArrayBuffer(ab(bytes))).getImage();
      const [data] = (await img.readRasters()) as unknown as Float32Array[];
      expect(data.length).toBe(img.getWidth() * img.getHeight());
    } else if (n.endsWith('.json') || n.endsWith('.geojson')) {
      expect(() => JSON.parse(bytes.toString('utf8')), path).not.toThrow();
    } else {
      throw new Error(`unexpected file ${path}`);
    }
  }
  for (const n of readdirSync(folder).filter((x) => x.endsWith('.tmp'))) {
    expect(n, 'a temporary file is hidden and named after its final file').toMatch(
      /^\..+\.[0-9a-f]{12}\.tmp$/,
    );
  }
  return names;
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-crash-'));
  // A DEM big enough that writing the floor takes a moment: 1500 × 1500 Float32 (9 MB) over the open South Atlantic.
  const n = 1500;
  const geo = {
    width: n,
    height: n,
    originX: -30.5,
    originY: -40.5,
    pixelX: 0.6 / n,
    pixelY: -0.6 / n,
    crs: WGS84_GEOGRAPHIC,
  };
  writeFileSync(join(dir, 'dem.tif'), new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(9, n, n) })));
  fixture = writeScenarioFixture({ flightLevels: [50, 100, 200, 245], cellArcSec: 30 });
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
  fixture.cleanup();
});

describe('kill -9 never leaves a partial final file', () => {
  it('floor', async () => {
    const outDir = join(dir, 'floor');
    const args = ['floor', '--dem', join(dir, 'dem.tif'), '--site=-30.2,-40.8', '--mast-m', '20'];
    args.push('--out', join(outDir, 'floor.tif'), '--threads', '1', '--quiet');
    // A first whole run, so that later kills can also hit an overwrite of an existing file.
    expect(spawnSync(process.execPath, [BIN, ...args]).status).toBe(0);
    const first = readFileSync(join(outDir, 'floor.tif'));
    let killed = 0;
    for (let i = 0; i < 6; i++) {
      const r = await runAndKill(args, i % 2 === 0 ? { onTempIn: outDir } : { afterMs: 1200 + rnd() * 2500 });
      if (r.killed) killed++;
      expect(await expectWholeFiles(outDir)).toEqual(['floor.tif']);
      // Same inputs, same bytes: whatever survived is either run's whole output.
      expect(readFileSync(join(outDir, 'floor.tif')).equals(first)).toBe(true);
    }
    expect(killed).toBeGreaterThan(2);
  }, 120_000);

  it('coverage (and the run manifest stays readable)', async () => {
    const outDir = join(dir, 'coverage');
    const args = ['coverage', fixture.scenarioPath, '--out', outDir, '--threads', '1', '--quiet'];
    // A whole run first, into a folder of its own, to time the kills: the built CLI runs the fixture in about 2 s
    // and the sources through tsx take longer, and a kill after the end kills nothing.
    const started = Date.now();
    const whole = [
      'coverage',
      fixture.scenarioPath,
      '--out',
      join(dir, 'coverage-timed'),
      '--threads',
      '1',
      '--quiet',
    ];
    expect(spawnSync(process.execPath, [BIN, ...whole]).status).toBe(0);
    const wholeMs = Date.now() - started;
    let killed = 0;
    for (let i = 0; i < 5; i++) {
      const at = wholeMs * (0.25 + 0.6 * rnd());
      const r = await runAndKill(args, i % 2 === 0 ? { afterMs: at } : { onTempIn: dir });
      if (r.killed) killed++;
      await expectWholeFiles(outDir);
    }
    expect(killed).toBeGreaterThan(2);
    // A run to the end afterwards: complete manifest, whole files, no temporary file left of a listed name.
    expect(spawnSync(process.execPath, [BIN, ...args]).status).toBe(0);
    const names = await expectWholeFiles(outDir);
    const m = JSON.parse(readFileSync(join(outDir, RUN_MANIFEST), 'utf8')) as {
      runs: { coverage: { state: string; files: { name: string }[] } };
    };
    expect(m.runs.coverage.state).toBe('complete');
    expect(m.runs.coverage.files.map((f) => f.name).sort()).toEqual(
      names.filter((n) => n !== RUN_MANIFEST).sort(),
    );
    expect(readdirSync(outDir).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  }, 120_000);

  it('demo-data (in a scratch folder), and a later run repairs a damaged tile', async () => {
    const demoDir = join(dir, 'demo-terrain');
    const env = { AIRSHADE_DEMO_TERRAIN_DIR: demoDir };
    // A whole run first, into a folder of its own, to time the kills. A run after a killed one writes only the
    // tiles still missing, so half the kills come as soon as a tile's temporary file appears (never after the end)
    // and the others early in a whole run's time.
    const started = Date.now();
    const timed = spawnSync(process.execPath, [BIN, 'demo-data', '--quiet'], {
      env: { ...process.env, AIRSHADE_DEMO_TERRAIN_DIR: join(dir, 'demo-terrain-timed') },
    });
    expect(timed.status).toBe(0);
    const wholeMs = Date.now() - started;
    mkdirSync(demoDir, { recursive: true });
    let killed = 0;
    for (let i = 0; i < 4; i++) {
      const r = await runAndKill(
        ['demo-data', '--quiet'],
        i % 2 === 0 ? { onTempIn: demoDir, env } : { afterMs: wholeMs * (0.1 + 0.3 * rnd()), env },
      );
      if (r.killed) killed++;
      await expectWholeFiles(demoDir);
    }
    expect(killed).toBeGreaterThan(1);
    const finish = spawnSync(process.execPath, [BIN, 'demo-data', '--quiet'], {
      env: { ...process.env, ...env },
    });
    expect(finish.status).toBe(0);
    const tiles = (await expectWholeFiles(demoDir)).filter((n) => n.endsWith('.tif'));
    expect(tiles.length).toBe(25);
    expect(readdirSync(demoDir).filter((n) => n.endsWith('.tmp'))).toEqual([]);
    // A tile cut short (as an old non-atomic write could leave it) is found by its size and made whole again.
    const victim = join(demoDir, tiles[7]);
    const whole = readFileSync(victim);
    truncateSync(victim, 100_000);
    const again = spawnSync(process.execPath, [BIN, 'demo-data', '--quiet'], {
      env: { ...process.env, ...env },
      encoding: 'utf8',
    });
    expect(again.status).toBe(0);
    expect(again.stdout).toContain(`${tiles[7]} (100000 bytes, expected ${whole.byteLength}) was damaged`);
    expect(readFileSync(victim).equals(whole)).toBe(true);
  }, 180_000);
});

describe('run folders', () => {
  it('a reused --out loses the earlier run’s stale layers, and nothing Airshade did not write', async () => {
    const outDir = join(dir, 'reuse');
    const run = (fl: string) =>
      runCli('coverage', fixture.scenarioPath, '--fl', fl, '--out', outDir, '--threads', '0', '--quiet');
    expect((await run('50,100,200')).code).toBe(0);
    writeFileSync(join(outDir, 'notes.txt'), 'the planner’s own file');
    writeFileSync(join(outDir, 'coverage-FL300.geojson'), '{"mine": true}'); // never listed by Airshade
    // An earlier output the planner has since edited: listed, but its bytes changed — left alone.
    writeFileSync(join(outDir, 'coverage-FL200.geojson'), '{"edited": true}');
    const r = await run('100');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/removed 1 file\(s\) of the earlier coverage run .*coverage-FL050\.geojson/);
    expect(r.out).toMatch(/coverage-FL200\.geojson was written by an earlier coverage run but has changed/);
    expect(readdirSync(outDir).sort()).toEqual(
      [
        RUN_MANIFEST,
        'coverage-FL100.geojson',
        'coverage-FL200.geojson',
        'coverage-FL300.geojson',
        'network-floor.tif',
        'notes.txt',
        'summary.json',
      ].sort(),
    );
    // A manifest naming a file outside its folder is not obeyed.
    const m = JSON.parse(readFileSync(join(outDir, RUN_MANIFEST), 'utf8')) as {
      runs: { coverage: { files: { name: string; bytes: number; sha256: string }[] } };
    };
    m.runs.coverage.files.push({ name: '../outside.txt', bytes: 3, sha256: 'x' });
    writeFileSync(join(dir, 'outside.txt'), 'abc');
    writeFileSync(join(outDir, RUN_MANIFEST), JSON.stringify(m));
    expect((await run('100')).code).toBe(0);
    expect(existsSync(join(dir, 'outside.txt'))).toBe(true);
  }, 60_000);

  it('an --out that is a file is refused before any work', async () => {
    const file = join(dir, 'a-file');
    writeFileSync(file, 'x');
    const r = await runCli('coverage', fixture.scenarioPath, '--out', file, '--threads', '0', '--quiet');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--out .*a-file: found an existing file; expected a folder/);
  });
});
