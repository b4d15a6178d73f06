/**
 * The footprint cache (worker/io/footprint-file.ts, worker/cli/footprint-cache.ts, `airshade footprints`):
 * files read back to the same footprints; the content key follows every input a site's footprints depend on and
 * nothing else; a cut-short or corrupt file is reported and computed again; and a study run in shards by an
 * outside batch runner (`xargs -P 2`, two processes at once over one folder) gives the same layers, byte for byte,
 * as a run in one process without the cache. No physics is checked here: the claim is identity with the
 * uncached path, whose physics the other suites check.
 */
import { execFileSync } from 'node:child_process';
import { readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { NO_COVER_LO, type Footprint } from '../worker/core/footprint.ts';
import {
  canonicalJson,
  decodeFootprintFile,
  encodeFootprintFile,
  FootprintFileError,
} from '../worker/io/footprint-file.ts';
import {
  footprintInputs,
  footprintKey,
  readCachedSite,
  sha256Parts,
  siteGroups,
} from '../worker/cli/footprint-cache.ts';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  allCandidates,
  checkStudyWork,
  footprintsFor,
  KEEP_NONE,
  openSession,
} from '../worker/cli/session.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import { runCli } from './support/run-cli.ts';
import { gridFootprint } from './support/footprints.ts';
import {
  DEFAULT_SITES,
  DEFAULT_VOLUMES,
  FIXTURE_PRIMARY,
  FIXTURE_SECONDARY,
  ring,
  writeScenarioFixture,
  type Fixture,
  type FixtureOptions,
} from './support/scenario-fixture.ts';

/** An array's own bytes (a footprint read from a file is a view of the file's buffer). */
const bytesOf = (a: Uint16Array): Buffer => Buffer.from(a.buffer, a.byteOffset, a.byteLength);

const ROOT = resolve(__dirname, '..');

/** The default fixture plus a volume with its own target, so that footprints carry `byTarget` (some shared). */
const OPTIONS: FixtureOptions = {
  volumes: [
    ...DEFAULT_VOLUMES,
    {
      id: 'small',
      name: 'Small-target block',
      polygon: { type: 'Polygon', coordinates: [ring(-30.5, -41.5, -30, -41)] },
      flMin: 50,
      flMax: 200,
      requiredFold: { any: 1 },
      targetRcsM2: 0.5,
    },
  ],
};

function fp(
  siteId: string,
  typeId: string,
  cells: number,
  width: number,
  window?: Footprint['window'],
): Footprint {
  const lo = new Uint16Array(cells).fill(NO_COVER_LO);
  const hi = new Uint16Array(cells);
  for (let i = 0; i < cells; i++) {
    const r = Math.floor(i / width);
    const c = i % width;
    const inside = !window || (r >= window.row0 && r < window.row1 && c >= window.col0 && c < window.col1);
    if (inside && (i * 7) % 5 !== 0) {
      lo[i] = (i * 37) % 3000;
      hi[i] = lo[i] + ((i * 11) % 9000);
    }
  }
  return gridFootprint({ siteId, typeId, kind: 'primary' }, lo, hi, width, cells / width, window);
}

describe('footprint file', () => {
  const grid = { width: 7, height: 5 };
  const cells = 35;
  const key = 'a'.repeat(64);
  it('round trip: the same arrays, windows, kinds and byTarget, shared footprints shared again', () => {
    const a = fp('s1', 'psr', cells, 7, { row0: 1, row1: 4, col0: 2, col1: 6, width: 7 });
    const b = fp('s1', 'ssr', cells, 7);
    const a2 = fp('s1', 'psr', cells, 7, { row0: 0, row1: 2, col0: 0, col1: 3, width: 7 });
    a.byTarget = [a, a2];
    b.byTarget = [b, b];
    const bytes = Buffer.concat(encodeFootprintFile(key, { any: 'inputs' }, [a, b], grid, sha256Parts));
    const { header, footprints } = decodeFootprintFile(bytes, { key, ...grid }, sha256Parts);
    expect(header.inputs).toEqual({ any: 'inputs' });
    expect(header.stored).toHaveLength(3); // a, a2, b: the shared ones once
    expect(footprints).toHaveLength(2);
    const [ra, rb] = footprints;
    for (const [x, y] of [
      [ra, a],
      [rb, b],
      [ra.byTarget![1], a2],
    ] as const) {
      expect(x.siteId).toBe(y.siteId);
      expect(x.typeId).toBe(y.typeId);
      expect(x.kind).toBe(y.kind);
      expect(x.window).toEqual(y.window);
      expect(bytesOf(x.lo).equals(bytesOf(y.lo))).toBe(true);
      expect(bytesOf(x.hi).equals(bytesOf(y.hi))).toBe(true);
    }
    expect(ra.byTarget![0]).toBe(ra);
    expect(rb.byTarget![0]).toBe(rb);
    // Read without a copy on a little-endian machine: the arrays are views of the file's bytes (written so too).
    if (new Uint8Array(new Uint16Array([1]).buffer)[0] === 1) {
      for (const x of [ra, rb, ra.byTarget![1]]) {
        expect(x.lo.buffer).toBe(bytes.buffer);
        expect(x.hi.buffer).toBe(bytes.buffer);
      }
      const parts = encodeFootprintFile(key, { any: 'inputs' }, [a], grid, sha256Parts);
      expect(parts.some((p) => p.buffer === a.lo.buffer)).toBe(true);
    }
    expect(rb.byTarget![1]).toBe(rb);
  });

  it('refuses a file cut short, a flipped payload byte, another key, another grid, and not a footprint file', () => {
    const a = fp('s1', 'psr', cells, 7, { row0: 1, row1: 4, col0: 2, col1: 6, width: 7 });
    const bytes = Buffer.concat(encodeFootprintFile(key, {}, [a], grid, sha256Parts));
    const bad = (b: Uint8Array, exp = { key, ...grid }) => {
      try {
        decodeFootprintFile(b, exp, sha256Parts);
      } catch (e) {
        expect(e).toBeInstanceOf(FootprintFileError);
        return (e as Error).message;
      }
      return 'no error';
    };
    expect(bad(bytes.subarray(0, bytes.length - 3))).toMatch(/cut short/);
    expect(bad(bytes.subarray(0, 20))).toMatch(/cut short/);
    const flipped = Buffer.from(bytes);
    flipped[flipped.length - 5] ^= 0x10;
    expect(bad(flipped)).toMatch(/corrupt/);
    expect(bad(bytes, { key: 'b'.repeat(64), ...grid })).toMatch(/expected the key b{64}/);
    expect(bad(bytes, { key, width: 5, height: 7 })).toMatch(
      /35 cells, 7 wide; expected the study's 35 cells, 5/,
    );
    expect(bad(Buffer.from('hello, this is not one'))).toMatch(/signature/);
  });

  it('canonical JSON: key order does not matter, values do', () => {
    expect(canonicalJson({ b: 1, a: [1, { d: 2, c: 'x' }] })).toBe('{"a":[1,{"c":"x","d":2}],"b":1}');
    expect(canonicalJson({ a: 1, b: undefined })).toBe(canonicalJson({ a: 1 }));
    expect(canonicalJson({ a: 0.1 + 0.2 })).not.toBe(canonicalJson({ a: 0.3 }));
    expect(() => canonicalJson({ a: NaN })).toThrow();
  });
});

describe('footprint key', () => {
  const fixtures: Fixture[] = [];
  afterAll(() => fixtures.forEach((f) => f.cleanup()));
  /** Each site's key (all allowed sensors) for a fixture, with `edit` applied to its files first. */
  const keys = async (opts: FixtureOptions = {}, edit?: (fx: Fixture) => void) => {
    const fx = writeScenarioFixture({ ...OPTIONS, ...opts });
    fixtures.push(fx);
    edit?.(fx);
    const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    const s = session.loaded.scenario;
    const job = { kFactor: s.earth.kFactor, maxRangeM: 400_000, weather: false, multipath: true };
    const out: Record<string, string> = {};
    for (const g of siteGroups(allCandidates(session)))
      out[g[0].site.id] = footprintKey(footprintInputs(session, g, job));
    return out;
  };
  let base: Record<string, string>;
  beforeAll(async () => {
    base = await keys();
  });

  it('is the same for the same inputs, in another folder, and with changes that do not reach a footprint', async () => {
    expect(Object.keys(base)).toEqual(['alder', 'brook', 'cinder']);
    expect(await keys()).toEqual(base);
    const sites = DEFAULT_SITES.map((s) => ({ ...s, name: `${s.name} renamed`, siteCost: 99 }));
    expect(await keys({ name: 'Another name', sites })).toEqual(base);
  });

  it('changes with the mast, the tilt, k, a DEM byte and a type parameter — for the sites they reach', async () => {
    const changed = (k: Record<string, string>) => Object.keys(base).filter((id) => k[id] !== base[id]);
    const taller = DEFAULT_SITES.map((s) =>
      s.id === 'alder' ? { ...s, mastHeightM: s.mastHeightM + 1 } : s,
    );
    expect(changed(await keys({ sites: taller }))).toEqual(['alder']);
    const tilted = await keys({}, (fx) => {
      const doc = JSON.parse(readFileSync(fx.sitesPath!, 'utf8'));
      doc.features[2].properties.tiltDeg = 0.5;
      writeFileSync(fx.sitesPath!, JSON.stringify(doc));
    });
    expect(changed(tilted)).toEqual(['cinder']);
    expect(changed(await keys({ kFactor: 1 }))).toEqual(['alder', 'brook', 'cinder']);
    const demByte = await keys({}, (fx) => {
      const b = readFileSync(fx.demPath);
      // The last pixel's lowest mantissa byte (the striped writer puts the pixels after the header).
      b[b.length - 4] ^= 1;
      writeFileSync(fx.demPath, b);
    });
    expect(changed(demByte)).toEqual(['alder', 'brook', 'cinder']);
    const psr = { ...FIXTURE_PRIMARY, weatherLossDb: 4 };
    expect(changed(await keys({ sensorTypes: [psr, FIXTURE_SECONDARY] }))).toEqual(['alder', 'cinder']);
  });
});

describe('airshade footprints in shards, then coverage --cache', () => {
  let fx: Fixture;
  const cache = () => join(fx.dir, 'cache');
  beforeAll(() => {
    fx = writeScenarioFixture(OPTIONS);
  });
  afterAll(() => fx.cleanup());

  const coverage = (out: string, ...extra: string[]) =>
    runCli('coverage', fx.scenarioPath, '--out', join(fx.dir, out), '--threads', '0', '--quiet', ...extra);

  /** Every layer of two coverage runs: GeoJSON and GeoTIFF byte for byte, summary.json without its timings. */
  const sameLayers = (a: string, b: string) => {
    const files = readdirSync(join(fx.dir, a)).filter((f) => /\.(geojson|tif)$/.test(f));
    expect(files.filter((f) => f.endsWith('.geojson')).length).toBe(3);
    expect(files).toContain('network-floor.tif');
    expect(readdirSync(join(fx.dir, b)).filter((f) => /\.(geojson|tif)$/.test(f))).toEqual(files);
    for (const f of files) {
      const same = readFileSync(join(fx.dir, a, f)).equals(readFileSync(join(fx.dir, b, f)));
      expect(same, f).toBe(true);
    }
    const summary = (d: string) => {
      const j = JSON.parse(readFileSync(join(fx.dir, d, 'summary.json'), 'utf8'));
      delete j.timingsMs;
      delete j.provenance.createdUtc;
      return j;
    };
    expect(summary(b)).toEqual(summary(a));
  };

  it('two shards at once through xargs -P 2, then the reduce: the same layers as one plain run', async () => {
    const plain = await coverage('plain');
    expect(plain.code, plain.err).toBe(0);
    const cmd =
      `printf '1\\n2..3\\n' | xargs -P 2 -I{} "${process.execPath}" bin/airshade.mjs footprints ` +
      `"${fx.scenarioPath}" --cache "${cache()}" --sites {} --threads 1`;
    const printed = execFileSync('sh', ['-c', cmd], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
    expect(printed).toMatch(/footprints of site 1 of 3/);
    expect(printed).toMatch(/footprints of sites 2\.\.3 of 3/);
    const files = () =>
      readdirSync(cache())
        .sort()
        .map((f) => `${f} ${statSync(join(cache(), f)).mtimeMs}`);
    const before = files();
    expect(before).toHaveLength(3);
    expect(before.every((f) => /^[0-9a-f]{64}\.footprints /.test(f))).toBe(true);
    const cached = await coverage('cached', '--cache', cache());
    expect(cached.code, cached.err).toBe(0);
    expect(cached.err).toBe('');
    expect(files()).toEqual(before); // everything was read, nothing computed again
    sameLayers('plain', 'cached');
    // The same footprints in memory too, from the cache and computed.
    const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    const computed = await footprintsFor(session, allCandidates(session));
    const read = await footprintsFor({ ...session, cacheDir: cache() }, allCandidates(session));
    expect(read.map((f) => `${f.siteId}/${f.typeId}`)).toEqual(
      computed.map((f) => `${f.siteId}/${f.typeId}`),
    );
    expect(read.some((f) => f.byTarget?.some((t) => t !== f))).toBe(true); // the own-target volume's footprints
    for (let i = 0; i < read.length; i++) {
      const pairs = [
        [read[i], computed[i]],
        ...(computed[i].byTarget ?? []).map((t, j) => [read[i].byTarget![j], t]),
      ];
      for (const [x, y] of pairs) {
        expect(bytesOf(x.lo).equals(bytesOf(y.lo))).toBe(true);
        expect(bytesOf(x.hi).equals(bytesOf(y.hi))).toBe(true);
      }
    }
  }, 180_000);

  it('a file cut short or corrupt is reported by name and computed again; the layers stay the same', async () => {
    const names = readdirSync(cache()).sort();
    const short = join(cache(), names[0]);
    const bytes = readFileSync(short);
    writeFileSync(short, bytes.subarray(0, bytes.length - 100));
    const flip = join(cache(), names[1]);
    const other = readFileSync(flip);
    other[other.length - 1] ^= 0xff;
    writeFileSync(flip, other);
    const r = await coverage('again', '--cache', cache());
    expect(r.code, r.err).toBe(0);
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(2);
    expect(lines.find((l) => l.includes(short))).toMatch(/cut short; computing this site again$/);
    expect(lines.find((l) => l.includes(flip))).toMatch(/corrupt\); computing this site again$/);
    sameLayers('plain', 'again');
    // Both were written again, whole.
    for (const f of [short, flip]) {
      const key = f.slice(-'.footprints'.length - 64, -'.footprints'.length);
      const fp = readCachedSite(cache(), key, { width: 150, height: 120 }, () => {});
      expect(fp, f).not.toBeNull();
    }
    expect(readdirSync(cache()).sort()).toEqual(names); // no temporary file left behind
  }, 120_000);

  it('a file that changes while coverage reads the folder site by site: one message naming it, before its footprints are used', async () => {
    // Every site is in the cache now (the tests before). After the first site is handed on, the others' files are
    // rewritten with a flipped byte: the read of the next one, when its turn comes, finds it.
    const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    session.cacheDir = cache();
    const files = readdirSync(cache())
      .filter((f) => f.endsWith('.footprints'))
      .map((f) => join(cache(), f));
    const kept = new Map(files.map((f) => [f, readFileSync(f)]));
    let handed = 0;
    const err = await footprintsFor(session, allCandidates(session), {
      retain: KEEP_NONE,
      onSite: () => {
        if (handed++ > 0) return;
        for (const [f, bytes] of kept) {
          const b = Buffer.from(bytes);
          b[b.length - 1] ^= 0xff;
          writeFileSync(f, b);
        }
      },
    }).then(
      () => null,
      (e: unknown) => e,
    );
    for (const [f, bytes] of kept) writeFileSync(f, bytes);
    expect(handed).toBe(1);
    expect(isInputError(err)).toBe(true);
    const e = err as InputError;
    expect(e.where).toMatch(/^--cache .*\.footprints$/);
    expect(files.map((f) => `--cache ${f}`)).toContain(e.where);
    expect(e.found).toMatch(
      /^a footprint file that changed while this run read it \(.*the file is corrupt\)\)$/,
    );
    expect(e.expected).toBe('a cache folder that nothing else rewrites while a run reads it');
  }, 120_000);

  it('plan --cache gives the same plan and layers as plan without it', async () => {
    const plan = (out: string, ...extra: string[]) =>
      runCli('plan', fx.scenarioPath, '--out', join(fx.dir, out), '--threads', '0', '--quiet', ...extra);
    const a = await plan('plan-plain');
    const b = await plan('plan-cached', '--cache', cache());
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    expect(b.err).toBe('');
    const layers = readdirSync(join(fx.dir, 'plan-plain')).filter((f) => f.endsWith('.geojson'));
    expect(layers.length).toBeGreaterThan(0);
    for (const f of layers) {
      expect(
        readFileSync(join(fx.dir, 'plan-plain', f)).equals(readFileSync(join(fx.dir, 'plan-cached', f))),
      ).toBe(true);
    }
    const doc = (d: string) => {
      const j = JSON.parse(readFileSync(join(fx.dir, d, 'plan.json'), 'utf8'));
      delete j.provenance.createdUtc;
      delete j.timingsMs;
      return j;
    };
    expect(doc('plan-cached')).toEqual(doc('plan-plain'));
  }, 120_000);

  it('the time estimate of a run with --cache counts only the sites it still has to sweep', async () => {
    const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    const all = checkStudyWork(session.loaded, session.terrain, 0, 1e6).seconds;
    const none = checkStudyWork(session.loaded, session.terrain, 0, 1e6, new Set()).seconds;
    expect(none).toBeLessThan(all / 2);
    const limit = ((all + none) / 2 / 60).toFixed(8);
    const plain = await coverage('w-plain', '--max-work-min', limit);
    expect(plain.code).toBe(2);
    expect(plain.err).toMatch(/\(3 sites, each swept/);
    const cached = await coverage('w-cached', '--max-work-min', limit, '--cache', cache());
    expect(cached.code, cached.err).toBe(0);
    const fresh = await coverage('w-fresh', '--max-work-min', limit, '--cache', join(fx.dir, 'empty-cache'));
    expect(fresh.code).toBe(2);
    expect(fresh.err).toMatch(/\(3 sites of 3 not in the footprint cache, each swept/);
  });

  it('--sites out of range or malformed: one message naming --sites, what was found and 1..3', async () => {
    for (const text of ['0..2', '2..4', '3..2', 'a..b', '1-3']) {
      const r = await runCli('footprints', fx.scenarioPath, '--cache', join(fx.dir, 'c2'), '--sites', text);
      expect(r.code, text).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(/^airshade footprints: --sites: found "/);
      if (text === '2..4')
        expect(r.err).toMatch(/found "2\.\.4" \(the scenario has 3 sites\); expected .*1\.\.3/);
    }
    const f = await runCli(
      'coverage',
      fx.scenarioPath,
      '--out',
      join(fx.dir, 'x'),
      '--cache',
      fx.scenarioPath,
    );
    expect(f.code).toBe(2);
    expect(f.err).toMatch(/--cache: found .*scenario\.json, an existing file; expected a folder/);
  });
});
