/**
 * Provenance (DESIGN §5): every file the CLI writes says which tool and version made it, from which files (their
 * SHA-256, computed here with node:crypto from the files on disk), with which options and under which conventions.
 * Each command runs in-process on the small invented scenario over the open South Atlantic
 * (test/support/scenario-fixture.ts); the JSON documents, GeoJSON layers, SVG <metadata> and GeoTIFF
 * ImageDescription are read back and checked against the hashes and against each other.
 */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { fromArrayBuffer } from 'geotiff';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../shared/caution.ts';
import { DEFAULT_K_FACTOR } from '../shared/units.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { featureCollection, stringifyGeoJson } from '../worker/io/geojson.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import {
  provenanceAscii,
  provenanceOfDescription,
  undated,
  type Provenance,
} from '../worker/io/provenance.ts';
import { bumpyDem } from './support/bumps.ts';
import { runCli } from './support/run-cli.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

const sha256 = (path: string) => createHash('sha256').update(readFileSync(path)).digest('hex');
const readJson = (path: string) => JSON.parse(readFileSync(path, 'utf8'));
const packageVersion = (readJson(join(import.meta.dirname, '..', 'package.json')) as { version: string })
  .version;

/** Every number rounded to 6 decimals, as the GeoJSON layer writer writes them (worker/io/geojson.ts). */
function rounded6<T>(v: T): T {
  if (typeof v === 'number') return (Math.round(v * 1e6) / 1e6) as T;
  if (Array.isArray(v)) return v.map(rounded6) as T;
  if (v !== null && typeof v === 'object')
    return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, rounded6(x)])) as T;
  return v;
}

/** The ImageDescription of a GeoTIFF as geotiff.js reads it (trailing NUL dropped). */
async function imageDescription(path: string): Promise<string> {
  const buf = readFileSync(path);
  const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
  const img = await tiff.getImage();
  return String(await img.getFileDirectory().loadValue('ImageDescription')).replace(/\0$/, '');
}

/** The GeoJSON layers of a folder whose names start with `prefix` (at least one). */
function layers(dir: string, prefix: string): { name: string; text: string; fc: Record<string, unknown> }[] {
  const names = readdirSync(dir).filter((f) => f.startsWith(prefix) && f.endsWith('.geojson'));
  expect(names.length).toBeGreaterThan(0);
  return names.map((name) => {
    const text = readFileSync(join(dir, name), 'utf8');
    return { name, text, fc: JSON.parse(text) };
  });
}

describe('provenance in every output of the CLI', () => {
  let fx: Fixture;
  const out = (name: string) => join(fx.dir, name);
  const common = ['--threads', '0', '--quiet'];
  /** The provenance every scenario command must give for the fixture's files. */
  const expectFiles = (p: Provenance) => {
    expect(p.tool).toBe('airshade');
    expect(p.version).toBe(packageVersion);
    if (p.commit !== undefined) expect(p.commit).toMatch(/^[0-9a-f]{40}([0-9a-f]{24})?$/);
    expect(p.scenario).toEqual({ file: resolve(fx.scenarioPath), sha256: sha256(fx.scenarioPath) });
    expect(p.sites).toEqual({ file: resolve(fx.sitesPath!), sha256: sha256(fx.sitesPath!) });
    expect(p.sensorTypes).toBeUndefined(); // inline in the fixture
    expect(p.terrain).toEqual([{ file: resolve(fx.demPath), sha256: sha256(fx.demPath) }]);
  };

  beforeAll(() => {
    fx = writeScenarioFixture({ flightLevels: [50, 100], cellArcSec: 120 });
  });
  afterAll(() => fx.cleanup());

  it('coverage: summary.json, k-sweep.json, every layer and network-floor.tif carry the same provenance', async () => {
    const before = Date.now();
    const r = await runCli(
      'coverage',
      fx.scenarioPath,
      '--out',
      out('cov'),
      '--weather',
      '--cold-day',
      '--k-sweep',
      '1',
      ...common,
    );
    const after = Date.now();
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const summary = readJson(join(out('cov'), 'summary.json'));
    const p = summary.provenance as Provenance;
    expectFiles(p);
    expect(p.command).toBe('coverage');
    // Only what can change the result: not --out, --threads or --quiet.
    expect(p.options).toEqual({ 'cold-day': true, 'k-sweep': '1', weather: true });
    const created = Date.parse(p.createdUtc!);
    expect(p.createdUtc).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/);
    expect(created).toBeGreaterThanOrEqual(before);
    expect(created).toBeLessThanOrEqual(after);
    // The conventions are the ones the summary states (the cold day in place of the scenario's).
    const c = summary.conventions;
    expect(p.kFactor).toBe(4 / 3);
    expect(p.target).toEqual(c.target);
    expect(p.day).toEqual(c.day);
    expect(p.day!.qnhHpa).not.toBe(1013.25);
    expect(p.flightLevels).toEqual(c.levels);
    expect(p.flightLevels!.map((l) => l.flightLevel)).toEqual([50, 100]);
    expect(p.multipath).toBe(c.multipath);
    expect(readJson(join(out('cov'), 'k-sweep.json')).provenance).toEqual(p);

    // Layers: the same without the date (their bytes stay the same for the same inputs), numbers to 6 decimals
    // as everywhere in a layer file, and `provenance` among the foreign members in alphabetical order.
    for (const l of layers(out('cov'), 'coverage-')) {
      expect(l.fc.provenance, l.name).toEqual(rounded6(undated(p)));
      expect((l.fc.provenance as Provenance).scenario!.sha256).toBe(sha256(fx.scenarioPath));
      expect(Object.keys(l.fc)).toEqual(['type', 'caution', 'metadata', 'provenance', 'features']);
      expect(l.text.split('"provenance":')).toHaveLength(2);
    }

    // The raster: the caution, then the provenance as printable-ASCII JSON, numbers exact.
    const desc = await imageDescription(join(out('cov'), 'network-floor.tif'));
    expect(desc).toMatch(/^[\x20-\x7e]+$/);
    expect(desc.startsWith(`${CAUTION} Provenance: {`)).toBe(true);
    expect(provenanceOfDescription(desc)).toEqual(undated(p));
  });

  it('diagram: the SVG holds the provenance as JSON in <metadata>', async () => {
    const svgPath = out('alder.svg');
    const r = await runCli(
      'diagram',
      fx.scenarioPath,
      '--site',
      'alder',
      '--type',
      'psr-t',
      '--azimuth',
      '120',
      '--max-range-km',
      '40',
      '--out',
      svgPath,
    );
    expect(r.code).toBe(0);
    const svg = readFileSync(svgPath, 'utf8');
    expect(XMLValidator.validate(svg)).toBe(true);
    const doc = new XMLParser({ ignoreAttributes: false }).parse(svg);
    const p = JSON.parse(doc.svg.metadata['#text']) as Provenance;
    expectFiles(p);
    expect(p.command).toBe('diagram');
    expect(p.options).toEqual({ azimuth: '120', 'max-range-km': '40', site: 'alder', type: 'psr-t' });
    expect(p.createdUtc).toBeDefined();
    expect(p.day!.qnhHpa).toBe(1013.25);
  });

  it('floor: the ImageDescription holds the DEM hash, the antenna and k; a changed DEM gives its new hash', async () => {
    const W = 61;
    const geo: GridGeo = {
      width: W,
      height: W,
      originX: -29.55,
      originY: -41.45,
      pixelX: 0.1 / W,
      pixelY: -0.1 / W,
      crs: WGS84_GEOGRAPHIC,
    };
    const dem = out('hills.tif');
    const tif = out('floor.tif');
    const floor = () =>
      runCli('floor', '--dem', dem, '--site', '-29.5,-41.5', '--mast-m', '20', '--out', tif, ...common);
    writeFileSync(dem, new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(5, W, W) })));
    expect((await floor()).code).toBe(0);
    const first = sha256(dem);
    const desc = await imageDescription(tif);
    expect(desc).toContain(first);
    const p = provenanceOfDescription(desc)!;
    expect(p.command).toBe('floor');
    expect(p.terrain).toEqual([{ file: resolve(dem), sha256: first }]);
    expect(p.scenario).toBeUndefined();
    expect(p.antenna).toEqual({ lon: -29.5, lat: -41.5, mastM: 20 });
    expect(p.kFactor).toBe(DEFAULT_K_FACTOR);
    expect(p.options).toEqual({ 'mast-m': '20', site: '-29.5,-41.5' });
    expect(p.createdUtc).toBeUndefined();

    // Other terrain in the same file: the hash of the bytes read this time.
    writeFileSync(dem, new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(6, W, W) })));
    expect((await floor()).code).toBe(0);
    const second = provenanceOfDescription(await imageDescription(tif))!;
    expect(second.terrain[0].sha256).toBe(sha256(dem));
    expect(second.terrain[0].sha256).not.toBe(first);
  });

  it('plan: plan.json and its layers carry the provenance without a date; two runs give the same bytes', async () => {
    const plan = (dir: string) => runCli('plan', fx.scenarioPath, '--out', out(dir), ...common);
    expect((await plan('plan1')).code).toBe(0);
    expect((await plan('plan2')).code).toBe(0);
    const a = readFileSync(join(out('plan1'), 'plan.json'));
    expect(a.equals(readFileSync(join(out('plan2'), 'plan.json')))).toBe(true);
    const p = JSON.parse(a.toString('utf8')).provenance as Provenance;
    expectFiles(p);
    expect(p.command).toBe('plan');
    expect(p.createdUtc).toBeUndefined();
    for (const l of layers(out('plan1'), 'plan-coverage-'))
      expect(l.fc.provenance, l.name).toEqual(rounded6(p));
  });

  it('outage and compare: their JSON documents (dated) and layers (undated) carry it', async () => {
    const o = await runCli('outage', fx.scenarioPath, '--layout', 'pair', '--out', out('outage'), ...common);
    expect(o.code).toBe(0);
    const po = readJson(join(out('outage'), 'outage.json')).provenance as Provenance;
    expectFiles(po);
    expect(po.options).toEqual({ layout: 'pair' });
    expect(po.createdUtc).toBeDefined();
    for (const l of layers(out('outage'), 'outage-'))
      expect(l.fc.provenance, l.name).toEqual(rounded6(undated(po)));

    const c = await runCli(
      'compare',
      fx.scenarioPath,
      '--a',
      'east only',
      '--b',
      'pair',
      '--out',
      out('compare'),
      ...common,
    );
    expect(c.code).toBe(0);
    const pc = readJson(join(out('compare'), 'compare.json')).provenance as Provenance;
    expectFiles(pc);
    expect(pc.options).toEqual({ a: 'east only', b: 'pair' });
    for (const l of layers(out('compare'), 'compare-'))
      expect(l.fc.provenance, l.name).toEqual(rounded6(undated(pc)));
  });
});

describe('provenance texts', () => {
  const p: Provenance = {
    tool: 'airshade',
    version: '9.9.9',
    command: 'floor',
    options: { site: '-29.5,-41.5', exclude: ['Åsgard 𝛼', 'b'] },
    terrain: [{ file: '/tmp/tiles/höhe ≥ 0 °.tif', sha256: 'ab'.repeat(32) }],
    kFactor: 4 / 3,
  };

  it('the TIFF form is printable ASCII and parses back to the same object', () => {
    const text = provenanceAscii(p);
    expect(text).toMatch(/^[\x20-\x7e]+$/);
    expect(JSON.parse(text)).toEqual(p);
    expect(provenanceOfDescription(`${CAUTION} Provenance: ${text}`)).toEqual(p);
    expect(provenanceOfDescription(CAUTION)).toBeNull();
  });

  it('a GeoJSON collection writes it with keys sorted and numbers to 6 decimals, like the rest of the file', () => {
    const text = stringifyGeoJson(featureCollection([], undefined, p));
    expect(text).toContain(
      '"provenance":{"command":"floor","kFactor":1.333333,"options":{"exclude":["Åsgard 𝛼","b"],"site":"-29.5,-41.5"},',
    );
    expect(JSON.parse(text).provenance).toEqual(rounded6(p));
  });
});
