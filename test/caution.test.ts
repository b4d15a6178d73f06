/**
 * The caution (shared/caution.ts) is said by every command and carried by every file a command writes: each
 * command run in-process on a small invented scenario over the open South Atlantic (test/support/
 * scenario-fixture.ts), its screen output ending with CAUTION (once, also under --quiet), and every JSON, GeoJSON,
 * SVG and GeoTIFF it wrote holding CAUTION whole. bin/serve.mjs keeps a copy of the text (it runs without a
 * TypeScript loader): checked identical here. The --weather help of each command says what the option does.
 */
import { readdirSync, readFileSync, writeFileSync, type PathLike } from 'node:fs';
import { join } from 'node:path';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { fromArrayBuffer } from 'geotiff';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { CAUTION as SERVE_CAUTION } from '../bin/serve.mjs';
import { CAUTION, CAUTION_SHORT } from '../shared/caution.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import { bumpyDem } from './support/bumps.ts';
import { runCli } from './support/run-cli.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

/** How often `needle` occurs in `text`. */
const count = (text: string, needle: string) => text.split(needle).length - 1;

/** The screen output says the caution once, as its last line. */
function expectCautionLast(out: string): void {
  expect(count(out, CAUTION)).toBe(1);
  expect(out.trimEnd().split('\n').at(-1)).toBe(CAUTION);
}

function expectJsonCaution(path: string): void {
  expect(JSON.parse(readFileSync(path, 'utf8')).caution).toBe(CAUTION);
}

/** Every .geojson file of the folder (at least one) is a FeatureCollection whose `caution` member is CAUTION. */
function expectGeoJsonCautions(dir: string, prefix: string): void {
  const files = readdirSync(dir).filter((f) => f.startsWith(prefix) && f.endsWith('.geojson'));
  expect(files.length).toBeGreaterThan(0);
  for (const f of files) {
    const fc = JSON.parse(readFileSync(join(dir, f), 'utf8'));
    expect(fc.type).toBe('FeatureCollection');
    expect(fc.caution).toBe(CAUTION);
  }
}

/**
 * The GeoTIFF's ImageDescription (as geotiff.js reads it) starts with CAUTION, whole in its bytes; the provenance
 * follows it (test/provenance.test.ts checks that part).
 */
async function expectTiffCaution(path: string): Promise<void> {
  const buf = readFileSync(path);
  expect(buf.includes(Buffer.from(CAUTION + ' Provenance: {', 'ascii'))).toBe(true);
  const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
  const img = await tiff.getImage();
  const desc = String(await img.getFileDirectory().loadValue('ImageDescription')).replace(/\0$/, '');
  expect(desc.startsWith(CAUTION + ' Provenance: {')).toBe(true);
}

describe('the caution text', () => {
  it('is one ASCII sentence pair with the meaning the README gives; the short form is shorter', () => {
    // Printable ASCII: it goes into TIFF ASCII fields as it is.
    expect(CAUTION).toMatch(/^[\x20-\x7e]+$/);
    for (const part of [
      'not a certified or flight-inspected result',
      'terrain data',
      'refraction',
      "local authority's standards",
      'licensed engineering practice',
    ]) {
      expect(CAUTION).toContain(part);
    }
    expect(CAUTION_SHORT.length).toBeLessThan(CAUTION.length / 2);
  });

  it('bin/serve.mjs prints the same text as shared/caution.ts', () => {
    expect(SERVE_CAUTION).toBe(CAUTION);
  });
});

describe('every command says the caution and writes it into every file', () => {
  let fx: Fixture;
  const out = (name: string) => join(fx.dir, name);
  beforeAll(() => {
    // Small: one flight level, 2′ analysis cells.
    fx = writeScenarioFixture({ flightLevels: [100], cellArcSec: 120 });
  });
  afterAll(() => fx.cleanup());

  const common = ['--threads', '0', '--quiet'];

  it('coverage: summary.json, the layers and network-floor.tif', async () => {
    const r = await runCli('coverage', fx.scenarioPath, '--out', out('cov'), ...common);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expectCautionLast(r.out);
    expectJsonCaution(join(out('cov'), 'summary.json'));
    expectGeoJsonCautions(out('cov'), 'coverage-');
    await expectTiffCaution(join(out('cov'), 'network-floor.tif'));
  });

  it('plan: plan.json and its layers', async () => {
    const r = await runCli('plan', fx.scenarioPath, '--out', out('plan'), ...common);
    expect(r.code).toBe(0);
    expectCautionLast(r.out);
    expectJsonCaution(join(out('plan'), 'plan.json'));
    expectGeoJsonCautions(out('plan'), 'plan-coverage-');
  });

  it('outage: outage.json and the lost layers', async () => {
    const r = await runCli('outage', fx.scenarioPath, '--layout', 'pair', '--out', out('outage'), ...common);
    expect(r.code).toBe(0);
    expectCautionLast(r.out);
    expectJsonCaution(join(out('outage'), 'outage.json'));
    expectGeoJsonCautions(out('outage'), 'outage-');
  });

  it('compare: compare.json and the gained/lost layers', async () => {
    const r = await runCli(
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
    expect(r.code).toBe(0);
    expectCautionLast(r.out);
    expectJsonCaution(join(out('compare'), 'compare.json'));
    expectGeoJsonCautions(out('compare'), 'compare-');
  });

  it('diagram: the SVG holds the caution whole in <desc> and in its caption', async () => {
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
    expectCautionLast(r.out);
    const svg = readFileSync(svgPath, 'utf8');
    expect(XMLValidator.validate(svg)).toBe(true);
    const doc = new XMLParser({ ignoreAttributes: false }).parse(svg);
    expect(doc.svg.desc['#text']).toBe(CAUTION);
    // The caption wraps it into lines of <text>; joined, they give it back.
    const caption = [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]).join(' ');
    expect(caption.replaceAll('&apos;', "'")).toContain(CAUTION);
  });

  it('floor: the screen and the GeoTIFF', async () => {
    const W = 81;
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
    writeFileSync(dem, new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(5, W, W) })));
    const tif = out('floor.tif');
    const r = await runCli(
      'floor',
      '--dem',
      dem,
      '--site',
      '-29.5,-41.5',
      '--mast-m',
      '20',
      '--out',
      tif,
      ...common,
    );
    expect(r.code).toBe(0);
    expectCautionLast(r.out);
    await expectTiffCaution(tif);
  });

  it('demo: said once, after its closing lines (coverage holds its own back)', async () => {
    // The demo on the fixture instead of the demo region: its terrain is taken as present and its coverage
    // run goes to the fixture scenario; everything the demo itself prints is real.
    const calls: { argv: readonly string[]; caution: boolean | undefined }[] = [];
    vi.resetModules();
    vi.doMock('node:fs', async (importOriginal) => {
      const fs = await importOriginal<typeof import('node:fs')>();
      const existsSync = (p: PathLike) => /[\\/]demo[\\/]terrain[\\/]/.test(String(p)) || fs.existsSync(p);
      return { ...fs, existsSync, default: { ...fs, existsSync } };
    });
    vi.doMock('../worker/cli/coverage.ts', async (importOriginal) => {
      const real = await importOriginal<typeof import('../worker/cli/coverage.ts')>();
      return {
        ...real,
        coverageCommand: (
          argv: readonly string[],
          log: (s: string) => void,
          opts?: { caution?: boolean },
        ) => {
          calls.push({ argv, caution: opts?.caution });
          return real.coverageCommand([fx.scenarioPath, '--out', out('demo'), ...common], log, opts);
        },
      };
    });
    try {
      const { demoCommand } = await import('../worker/cli/demo.ts');
      let text = '';
      const code = await demoCommand(['--out', out('demo'), '--threads', '0', '--quiet'], (s) => {
        text += s.endsWith('\n') ? s : s + '\n';
      });
      expect(code).toBe(0);
      expect(calls).toHaveLength(1);
      expect(calls[0].argv[0]).toMatch(/demo-scenario\.json$/);
      expect(calls[0].caution).toBe(false);
      expect(text).toContain('Next:');
      expectCautionLast(text);
      expectJsonCaution(join(out('demo'), 'summary.json'));
      expectGeoJsonCautions(out('demo'), 'coverage-');
    } finally {
      vi.doUnmock('node:fs');
      vi.doUnmock('../worker/cli/coverage.ts');
      vi.resetModules();
    }
  });
});

describe('--weather help', () => {
  it.each(['coverage', 'plan', 'outage', 'compare', 'diagram'])(
    '%s says what weather mode does',
    async (cmd) => {
      const r = await runCli(cmd, '--help');
      expect(r.code).toBe(0);
      const help = r.out.replace(/\s+/g, ' ');
      expect(help).toContain(
        "--weather weather mode: each primary's detection range is reduced by its type's two-way weather loss weatherLossDb",
      );
      expect(help).toContain('circular polarization in heavy rain');
      expect(help).toContain('secondaries are unaffected');
      expect(help).not.toContain('primaries lose their weather loss');
    },
  );
});
