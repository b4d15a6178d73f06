/**
 * Bad and unusual inputs (issue 13): each gives one message naming the input, what was found and what was
 * expected, before any long work, with exit status 2 and no stack trace — or a correct result. The inputs are
 * invented and sit over open ocean (test/support/scenario-fixture.ts).
 */
import { createHash } from 'node:crypto';
import {
  mkdirSync,
  readFileSync,
  symlinkSync,
  writeFileSync,
  closeSync,
  openSync,
  ftruncateSync,
  readdirSync,
  utimesSync,
} from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './support/run-cli.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import { encodeTiff } from './support/tiff-encoder.ts';
import { estimateRun, horizonSamples, memoryLimitArg, type RunShape } from '../worker/cli/budget-check.ts';
import { parseArgs } from '../worker/cli/args.ts';
import {
  checkWork,
  DEFAULT_MAX_WORK_MIN,
  estimateWork,
  workLimitArg,
  type WorkShape,
} from '../worker/cli/work-check.ts';

let fx: Fixture;
const SITE = '-30.35,-40.8'; // alder, on the fixture's terrain

beforeAll(() => {
  fx = writeScenarioFixture();
});
afterAll(() => fx.cleanup());

function variant(name: string, edit: (s: Record<string, unknown>) => void): string {
  const s = JSON.parse(JSON.stringify(fx.scenario)) as Record<string, unknown>;
  edit(s);
  const path = join(fx.dir, name);
  writeFileSync(path, JSON.stringify(s));
  return path;
}

/** One refusal: status 2, one line on stderr with one prefix, naming `where`, and no stack trace. */
async function refused(where: RegExp | string, ...argv: string[]): Promise<string> {
  const r = await runCli(...argv);
  const line = r.err
    .split(`\r${String.fromCharCode(27)}[K`)
    .join('')
    .trim();
  expect(r.code, line).toBe(2);
  expect(line.split('\n').length, line).toBe(1);
  expect(line).not.toMatch(/\n\s+at /);
  expect(line.startsWith(`airshade ${argv[0]}: `), line).toBe(true);
  expect(line.slice(`airshade ${argv[0]}: `.length)).not.toMatch(/^airshade /);
  expect(line).toMatch(where);
  return line;
}

const floor = (...more: string[]) => [
  'floor',
  '--dem',
  fx.demPath,
  '--site',
  SITE,
  '--mast-m',
  '10',
  '--quiet',
  '--threads',
  '0',
  ...more,
];

describe('refuse before allocating', () => {
  it('a grid of 0.01″ and of 0.1″ is refused at once, naming grid.cellArcSec and --max-memory', async () => {
    for (const cell of [0.01, 0.1]) {
      const sc = variant(`cell-${cell}.json`, (s) => (s.grid = { cellArcSec: cell }));
      const msg = await refused(
        /grid\.cellArcSec .*--max-memory/,
        'coverage',
        sc,
        '--out',
        join(fx.dir, 'o1'),
      );
      expect(msg).toContain(`${cell}″`);
    }
  });

  it('a tile too large for the limit is refused from its size on disk, before it is read', async () => {
    // A sparse file: 12 000 × 12 000 int16 pixels declared, nothing written (common practice: "sparse" GeoTIFFs).
    const path = join(fx.dir, 'sparse.tif');
    const head = encodeTiff({
      width: 2,
      height: 2,
      values: [0, 0, 0, 0],
      sampleType: 'int16',
      georef: { x0: -31, y0: -40, dx: 0.001, dy: 0.001 },
    });
    writeFileSync(path, new Uint8Array(head));
    const fd = openSync(path, 'r+');
    ftruncateSync(fd, 12_000 * 12_000 * 2);
    closeSync(fd);
    await refused(
      /sparse\.tif: found a file of .*--max-memory/,
      'floor',
      ...floor('--dem', path).slice(1),
      '--max-memory',
      '256M',
      '--out',
      join(fx.dir, 's.tif'),
    );
  });

  it('absurd dimensions in a small TIFF are refused at its header', async () => {
    const path = join(fx.dir, 'huge-header.tif');
    const small = encodeTiff({
      width: 20_000,
      height: 1,
      values: new Int16Array(20_000),
      sampleType: 'int16',
      compression: 'deflate',
      georef: { x0: -31, y0: -40, dx: 0.0001, dy: 0.0001 },
    });
    // Height 1 → 40 000 (ImageLength is the second entry of the IFD, tag 257, a SHORT or LONG value).
    const bytes = new Uint8Array(small);
    const dv = new DataView(small);
    const ifd = dv.getUint32(4, true);
    const n = dv.getUint16(ifd, true);
    for (let i = 0; i < n; i++) {
      const at = ifd + 2 + 12 * i;
      if (dv.getUint16(at, true) === 257) {
        if (dv.getUint16(at + 2, true) === 3) dv.setUint16(at + 8, 20_000, true);
        else dv.setUint32(at + 8, 20_000, true);
      }
    }
    writeFileSync(path, bytes);
    await refused(
      /huge-header\.tif: found a tile of 20000 × 20000 pixels.*--max-memory/,
      'floor',
      ...floor().slice(1),
      '--dem',
      path,
      '--out',
      join(fx.dir, 'h.tif'),
    );
  });

  it('the estimate grows with cells × pairs and with the horizon (range² over pixel × arc)', () => {
    const base: RunShape = {
      terrainPixels: 1e6,
      cells: 1e5,
      sites: 10,
      pairs: 20,
      levels: 5,
      targets: 1,
      volumes: 2,
      reachM: 100_000,
      rangeStepM: 90,
      arcStepM: 700,
      horizonsInFlight: 2,
    };
    const e = estimateRun(base);
    // Footprints: per pair and cell of its window (here every pair over the whole grid) two Uint16
    // (worker/core/footprint.ts) and the network's level bits, one byte for 5 levels (worker/core/network.ts).
    expect(e.parts.footprints).toBe(1e5 * 20 * (4 + 1));
    expect(estimateRun({ ...base, pairs: 40 }).parts.footprints).toBe(2 * e.parts.footprints);
    // Windows: the pairs' window cells, not the grid, set the footprints' part.
    expect(estimateRun({ ...base, pairWindowCells: 1e5 * 5 }).parts.footprints).toBe(e.parts.footprints / 4);
    // 1.5·π R² / (step · arc) samples (arcs between ½ and 1 arc step, a last level cut short) and the antenna's
    // first level: at least the disc's area in step × arc pieces; ten times finer arcs, 8–10 times the samples
    // (the first level, 512 radials at least, does not scale with the arc). test/app-memory.test.ts checks the
    // bound against planHorizon's layouts.
    expect(horizonSamples(100_000, 90, 700)).toBeGreaterThan((1.5 * Math.PI * 1e10) / (90 * 700));
    const ratio = estimateRun({ ...base, arcStepM: 70 }).parts.horizons / e.parts.horizons;
    expect(ratio).toBeGreaterThan(8);
    expect(ratio).toBeLessThan(10);
  });

  it('--max-memory takes 1.5G, 800M, 2GiB and refuses what is not a size or passes the machine', () => {
    const p = (v: string) => parseArgs(['--max-memory', v], { 'max-memory': { value: true } }, 'floor');
    const machine = { totalBytes: 8 * 2 ** 30 };
    expect(memoryLimitArg(p('1.5G'), machine)).toBe(1.5 * 2 ** 30);
    expect(memoryLimitArg(p('800M'), machine)).toBe(800 * 2 ** 20);
    expect(memoryLimitArg(p('2GiB'), machine)).toBe(2 * 2 ** 30);
    for (const bad of ['lots', '-1G', '0', '100M', '9G', '1e3G']) {
      expect(() => memoryLimitArg(p(bad), machine), bad).toThrow(
        /--max-memory: found .*expected a memory size/,
      );
    }
    // Default: the smaller of half the machine and 2 GiB.
    expect(memoryLimitArg(parseArgs([], {}, 'floor'), machine)).toBe(2 * 2 ** 30);
    expect(memoryLimitArg(parseArgs([], {}, 'floor'), { totalBytes: 2 ** 31 })).toBe(2 ** 30);
  });
});

describe('arguments', () => {
  it('--threads: a whole number within the machine', async () => {
    for (const t of ['64', '2.5', '-1', 'two', '1e1']) {
      const argv = floor('--out', join(fx.dir, 't.tif'));
      argv[argv.indexOf('--threads') + 1] = t;
      await refused(/--threads: found .*whole number of worker threads from 0 to \d+/, ...argv);
    }
  });

  it('--k: the effective-earth model holds for 0.2 ≤ k ≤ 20 (ITU-R P.452 eq. (5)); beyond, ducting or worse', async () => {
    await refused(
      /--k: found 1e-300; expected .*k < 0\.2/,
      ...floor('--k', '1e-300', '--out', join(fx.dir, 'k.tif')),
    );
    await refused(/--k: found 25; expected .*ducting/, ...floor('--k', '25', '--out', join(fx.dir, 'k.tif')));
    await refused(/--k: found -1; expected .*ducting/, ...floor('--k', '-1', '--out', join(fx.dir, 'k.tif')));
  });

  it('a site off the DEM blames --site, and --max-range-km 0 asks for more than 0', async () => {
    await refused(
      /--site: found 10,10, outside the DEM tiles/,
      'floor',
      '--dem',
      fx.demPath,
      '--site',
      '10,10',
      '--mast-m',
      '5',
      '--out',
      join(fx.dir, 'x.tif'),
      '--threads',
      '0',
    );
    await refused(
      /--max-range-km: found 0; expected a range in km, more than 0/,
      ...floor('--max-range-km', '0', '--out', join(fx.dir, 'x.tif')),
    );
  });

  it('one prefix per message: unknown options, single dashes, stray arguments', async () => {
    await refused(
      /^airshade floor: --bogus: found an option that airshade floor does not have/,
      'floor',
      '--bogus',
    );
    await refused(/^airshade floor: argument -x: found an option with one dash/, 'floor', '-x');
    await refused(
      /^airshade coverage: the scenario argument: found no scenario file/,
      'coverage',
      '--out',
      'x',
    );
  });

  it('--out is checked before the work: unwritable, a folder, or an input of the run', async () => {
    const blocker = join(fx.dir, 'a-file');
    writeFileSync(blocker, 'x');
    await refused(
      /--out: found .*under .*a-file, which is a file/,
      ...floor('--out', join(blocker, 'f.tif')),
    );
    await refused(/--out: found .*, a folder/, ...floor('--out', fx.dir));
    const before = createHash('sha256').update(readFileSync(fx.demPath)).digest('hex');
    await refused(/--out: found .*also an input of this run/, ...floor('--out', fx.demPath));
    expect(createHash('sha256').update(readFileSync(fx.demPath)).digest('hex')).toBe(before);
    await refused(
      /--out.*: found .*an existing file/,
      'coverage',
      fx.scenarioPath,
      '--out',
      blocker,
      '--threads',
      '0',
    );
  });
});

describe('JSON limits and file contents', () => {
  const deep = (n: number) => '['.repeat(n) + '1' + ']'.repeat(n);

  it('deep nesting in the scenario and in a sites GeoJSON is refused with the line and column', async () => {
    const s1 = join(fx.dir, 'deep.json');
    writeFileSync(
      s1,
      JSON.stringify(fx.scenario).replace(
        '"flightLevels":[50,100,200]',
        `"flightLevels":[50,${deep(100_000)}]`,
      ),
    );
    await refused(
      /deep\.json: line 1, column \d+: found lists or objects nested more than 64 levels/,
      'coverage',
      s1,
      '--out',
      join(fx.dir, 'o2'),
    );
    const sites = readFileSync(fx.sitesPath!, 'utf8').replace(
      '"mastHeightM": 25',
      `"mastHeightM": ${deep(50_000)}`,
    );
    writeFileSync(join(fx.dir, 'deep-sites.geojson'), sites);
    const s2 = variant('deep-sites.json', (s) => (s.sites = 'deep-sites.geojson'));
    await refused(
      /deep-sites\.geojson: line \d+, column \d+: found lists or objects nested more than 64/,
      'coverage',
      s2,
      '--out',
      join(fx.dir, 'o3'),
    );
  });

  it('a scenario path outside its folder needs --allow-outside-paths, and the file is never echoed', async () => {
    const secretDir = join(fx.dir, '..', `airshade-secret-${process.pid}`);
    mkdirSync(secretDir, { recursive: true });
    const secret = join(secretDir, 'private.txt');
    writeFileSync(secret, 'VERY-PRIVATE-TOKEN:x:0:0\n');
    const up = variant('outside.json', (s) => (s.sites = `../airshade-secret-${process.pid}/private.txt`));
    const abs = variant('outside-abs.json', (s) => (s.sites = secret));
    for (const sc of [up, abs]) {
      const msg = await refused(
        /sites: found .*outside the scenario's folder.*--allow-outside-paths/,
        'coverage',
        sc,
        '--out',
        join(fx.dir, 'o4'),
      );
      expect(msg).not.toContain('VERY-PRIVATE');
    }
    // A link inside the folder that leads out is outside too.
    symlinkSync(secret, join(fx.dir, 'linked-sites.geojson'));
    const linked = variant('outside-link.json', (s) => (s.sites = 'linked-sites.geojson'));
    await refused(/outside the scenario's folder/, 'coverage', linked, '--out', join(fx.dir, 'o5'));
    // Allowed: read, refused as JSON, and still not echoed.
    const msg = await refused(
      /private\.txt: line 1, column 1: found a letter, which is not valid JSON/,
      'coverage',
      up,
      '--allow-outside-paths',
      '--out',
      join(fx.dir, 'o6'),
    );
    expect(msg).not.toContain('VERY');
    const terr = variant('outside-terrain.json', (s) => (s.terrain = { files: [secret] }));
    await refused(
      /terrain\.files\[0\]: found .*outside the scenario's folder/,
      'coverage',
      terr,
      '--out',
      join(fx.dir, 'o7'),
    );
  });

  it('a file that is not a TIFF is named by kind, never by its bytes', async () => {
    const path = join(fx.dir, 'notes.tif');
    writeFileSync(path, 'PRIVATE NOTES, not a raster\n');
    const msg = await refused(
      /notes\.tif: found a file that is not a TIFF \(it begins with text\)/,
      ...floor('--dem', path, '--out', join(fx.dir, 'n.tif')).filter((_, i) => i !== 1 && i !== 2),
    );
    expect(msg).not.toContain('PRIVATE');
  });
});

describe('refuse what would run for hours (worker/cli/work-check.ts)', () => {
  it('a run estimated past --max-work-min is refused at once, naming the input and the knob', async () => {
    const cov = await refused(
      /(sites\.geojson|grid\.cellArcSec).*estimated at about .*--max-work-min/,
      'coverage',
      fx.scenarioPath,
      '--out',
      join(fx.dir, 'work-out'),
      '--max-work-min',
      '0.00001',
    );
    expect(cov).toMatch(/found a run estimated at about \d+ ms .*expected at most 1 ms \(--max-work-min/);
    await refused(
      /^airshade floor: --dem.*estimated at about/,
      ...floor('--out', join(fx.dir, 'w.tif'), '--max-work-min', '0.00001'),
    );
    await refused(
      /--max-work-min: found "soon"; expected a number of minutes/,
      ...floor('--out', join(fx.dir, 'w.tif'), '--max-work-min', 'soon'),
    );
  });

  it('the estimate tells a careless study (hours) from the demo (seconds)', () => {
    // The demo's shape: 33 sites × 400 km on 3″ terrain (~70 m east–west at 41° S), 60″ cells (~1.4 km), 300 × 300
    // cells, 165 pairs, 9 levels, 5° × 5° of terrain; measured at 11.7–22.9 s (work-check.ts).
    const demoSweep = { reachM: 400_000, rangeStepM: 70, arcStepM: 0.75 * 1400 };
    const demo: WorkShape = {
      sweeps: Array.from({ length: 33 }, () => demoSweep),
      terrainAreaM2: 420e3 * 555e3,
      cells: 300 * 300,
      sites: 33,
      pairs: 165,
      targets: 1,
      levels: 9,
      threads: 0,
    };
    const d = estimateWork(demo);
    expect(d.seconds).toBeGreaterThan(3);
    expect(d.seconds).toBeLessThan(60);
    // 40 000 candidate sites of a 250 NM secondary on 1″ terrain (~23 m) 1.5° square, 90″ cells: hours.
    const careless: WorkShape = {
      ...demo,
      sweeps: Array.from({ length: 40_000 }, () => ({
        reachM: 463_000,
        rangeStepM: 23,
        arcStepM: 0.75 * 2100,
      })),
      terrainAreaM2: 126e3 * 167e3,
      cells: 60 * 60,
      sites: 40_000,
      pairs: 40_000,
      levels: 1,
      threads: 2,
    };
    expect(estimateWork(careless).seconds).toBeGreaterThan(3600);
    expect(() =>
      checkWork(estimateWork(careless), DEFAULT_MAX_WORK_MIN, { sweeps: 'sites.geojson', cells: 'grid' }),
    ).toThrow(
      /^sites\.geojson: found a run estimated at about \d+ min .*expected at most 60 min \(--max-work-min/,
    );
    // On terrain wider than the reach, sweeps grow with range² and shrink with the pool; the cell part grows
    // with levels.
    const one = (reachM: number, threads = 0) =>
      estimateWork({ ...demo, terrainAreaM2: 1e13, sweeps: [{ ...demoSweep, reachM }], threads });
    expect(one(200_000).parts.sweeps).toBeLessThan(one(400_000).parts.sweeps / 3);
    expect(one(400_000, 2).parts.sweeps).toBeCloseTo(one(400_000).parts.sweeps / 2, 12);
    expect(estimateWork({ ...demo, levels: 18 }).parts.cells).toBeGreaterThan(1.8 * d.parts.cells);
    // --max-work-min: minutes, more than 0 and at most a week.
    const p = (v: string) => parseArgs(['--max-work-min', v], { 'max-work-min': { value: true } }, 'floor');
    expect(workLimitArg(p('90'))).toBe(90);
    expect(workLimitArg(p('0.5'))).toBe(0.5);
    expect(workLimitArg(parseArgs([], {}, 'floor'))).toBe(DEFAULT_MAX_WORK_MIN);
    for (const bad of ['0', '-5', 'soon', '1e9', '20000'])
      expect(() => workLimitArg(p(bad)), bad).toThrow(/--max-work-min/);
  });
});

describe('leftovers of a killed run', () => {
  it("the next run of a single-file output removes a killed run's temporary files beside it, and nothing else", async () => {
    const out = join(fx.dir, 'left');
    mkdirSync(out, { recursive: true });
    const hourAgo = new Date(Date.now() - 3600_000);
    const put = (name: string, old: boolean) => {
      writeFileSync(join(out, name), 'partial');
      if (old) utimesSync(join(out, name), hourAgo, hourAgo);
    };
    put('.floor.tif.0123456789ab.tmp', true); // a floor killed mid-write an hour ago: removed
    put('.floor.tif.abcdef012345.tmp', false); // a floor writing now (newer than this process): left alone
    put('.floor.tif.tmp', true); // not our pattern
    put('.floor.tif.0123456789AB.tmp', true); // not our pattern (upper case)
    put('.other.tif.0123456789ab.tmp', true); // another output's
    put('floor.tif.0123456789ab.tmp', true); // no leading dot
    mkdirSync(join(out, '.floor.tif.aaaaaaaaaaaa.tmp')); // a folder
    utimesSync(join(out, '.floor.tif.aaaaaaaaaaaa.tmp'), hourAgo, hourAgo);
    const r = await runCli(...floor('--out', join(out, 'floor.tif')));
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(out).sort()).toEqual(
      [
        '.floor.tif.0123456789AB.tmp',
        '.floor.tif.aaaaaaaaaaaa.tmp',
        '.floor.tif.abcdef012345.tmp',
        '.floor.tif.tmp',
        '.other.tif.0123456789ab.tmp',
        'floor.tif',
        'floor.tif.0123456789ab.tmp',
      ].sort(),
    );
  });
});
