/**
 * `airshade report` on the small invented scenario over the open South Atlantic (test/support/scenario-fixture.ts),
 * with names that hold markup: one HTML file that is well-formed (checked as XML by fast-xml-parser), loads
 * nothing (every src/href/url() a PNG data URI or a fragment, a CSP that allows nothing else), holds the caution
 * on its cover and in its footer, the scenario file's SHA-256 (computed here with node:crypto), a map per flight
 * level (PNG decoded with fast-png, on the analysis grid), the per-volume figures of `airshade coverage`'s
 * summary.json and the losses of `airshade outage`'s outage.json for the same network, a plan of this scenario's
 * and not another's; and the map geometry — Mercator scale against @turf/distance, base64 against Node's.
 */
import { createHash } from 'node:crypto';
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { distance } from '@turf/turf';
import { decode } from 'fast-png';
import { XMLValidator } from 'fast-xml-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../shared/caution.ts';
import { FOLD_COLORS } from '../worker/io/render.ts';
import { escapeXml } from '../worker/io/diagram-svg.ts';
import { base64, mapFrame, niceBelow, scaleBar, unitsPerKm } from '../worker/io/report-html.ts';
import { runCli, runQuiet } from './support/run-cli.ts';
import {
  DEFAULT_SITES,
  DEFAULT_VOLUMES,
  writeScenarioFixture,
  type Fixture,
} from './support/scenario-fixture.ts';

const sha256 = (path: string) => createHash('sha256').update(readFileSync(path)).digest('hex');
const readJson = (path: string) => JSON.parse(readFileSync(path, 'utf8'));

/** The first match of `pattern` in the HTML text (its first group with `group`). */
function element(html: string, pattern: RegExp, group = 0): string {
  const m = pattern.exec(html);
  if (!m) throw new Error(`no match for ${pattern}`);
  return m[group];
}

/** The fill picture of a map section, decoded. */
function fillPng(section: string) {
  const b64 = element(section, /<image class="cells fill" href="data:image\/png;base64,([^"]+)"/, 1);
  return decode(Buffer.from(b64, 'base64'));
}

/** The data-value numbers of a table row `<tr …attrs…>…</tr>`. */
function rowValues(html: string, attrs: string): number[] {
  const row = element(html, new RegExp(`<tr ${attrs}[^>]*>(.*?)</tr>`, 's'));
  return [...row.matchAll(/data-value="([^"]*)"/g)].map((m) => Number(m[1]));
}

const MARKUP_NAME = 'Report fixture <script>alert("x")</script> & <b>bold</b> (invented)';
const MARKUP_SITE = 'Alder <img src=x onerror=alert(1)> Knoll';
const MARKUP_VOLUME = 'Inner <i>terminal</i> block';

describe('airshade report', () => {
  let fx: Fixture;
  let other: Fixture;
  let html: string;
  let run: Awaited<ReturnType<typeof runCli>>;
  beforeAll(async () => {
    fx = writeScenarioFixture({
      name: MARKUP_NAME,
      sites: DEFAULT_SITES.map((s) => (s.id === 'alder' ? { ...s, name: MARKUP_SITE } : s)),
      volumes: DEFAULT_VOLUMES.map((v) => (v.id === 'inner' ? { ...v, name: MARKUP_VOLUME } : v)),
    });
    other = writeScenarioFixture({ name: 'Another invented fixture' });
    run = await runCli(
      'report',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--out',
      join(fx.dir, 'r'), // a folder: the design note's --out DIR, written as DIR/report.html
      '--threads',
      '0',
      '--quiet',
    );
    html = run.code === 0 ? readFileSync(join(fx.dir, 'r', 'report.html'), 'utf8') : '';
  }, 120_000);
  afterAll(() => {
    fx.cleanup();
    other.cleanup();
  });

  it('writes one well-formed file with the caution on the cover, in the footer and on screen', () => {
    expect(run.err).toBe('');
    expect(run.code).toBe(0);
    expect(XMLValidator.validate(html)).toBe(true);
    expect(html.startsWith('<!DOCTYPE html>')).toBe(true);
    const caution = escapeXml(CAUTION);
    expect(element(html, /<div class="caution" id="caution-cover">.*?<\/div>/s)).toContain(caution);
    expect(element(html, /<footer[^>]*id="caution-footer">.*?<\/footer>/s)).toContain(caution);
    // The print footer of every page (an @page margin box) holds it too.
    expect(html).toMatch(/@bottom-left \{\s*content: "A planning aid, not a certified/);
    expect(run.out.trim().endsWith(CAUTION)).toBe(true);
    expect(run.out).toMatch(/written to .*report\.html \(\d+\.\d MiB, A4\)/);
    // Written whole through a temporary file beside it: nothing else is left in the folder.
    expect(readdirSync(join(fx.dir, 'r'))).toEqual(['report.html']);
  });

  it('loads nothing from outside: a CSP that allows only inline data, every reference a data URI or fragment', () => {
    expect(html).toContain(
      `<meta http-equiv="Content-Security-Policy" content="default-src 'none'; img-src data:; style-src 'unsafe-inline'"/>`,
    );
    const refs = [
      ...[...html.matchAll(/\b(?:src|href|xlink:href)\s*=\s*"([^"]*)"/g)].map((m) => m[1]),
      ...[...html.matchAll(/url\(\s*([^)]*)\)/g)].map((m) => m[1]),
    ];
    expect(refs.length).toBeGreaterThan(10);
    for (const r of refs) expect(r).toMatch(/^(data:image\/png;base64,[A-Za-z0-9+/]+=*|#[A-Za-z0-9-]+)$/);
    expect(html).not.toMatch(/https?:/i);
    expect(html).not.toMatch(/<(script|link|iframe|object|embed)\b/i);
    expect(html).not.toMatch(/@import|@font-face/i);
  });

  it('escapes every name taken from the input', () => {
    expect(html).not.toMatch(/<script|<img|<b>|<i>/i);
    expect(html).toContain(escapeXml(MARKUP_NAME));
    expect(html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;');
    expect(html).toContain(escapeXml(MARKUP_SITE));
    expect(html).toContain(escapeXml(MARKUP_VOLUME));
  });

  it("holds the scenario file's SHA-256 and the provenance of every file read", () => {
    const sha = sha256(fx.scenarioPath);
    expect(element(html, /<code class="sha" id="scenario-sha256">[0-9a-f]{64}<\/code>/)).toContain(sha);
    expect(html).toContain(`<meta name="airshade-scenario-sha256" content="${sha}"/>`);
    expect(html).toContain(sha256(fx.demPath));
    expect(html).toContain(sha256(fx.sitesPath!));
  });

  it('draws one map per flight level, on the analysis grid, with key, scale bars and north arrow', () => {
    const fls = fx.scenario.flightLevels as number[];
    const sections = [
      ...html.matchAll(
        /<section class="map-page" data-map="([^"]+)"(?: data-level="(\d+)")?>(.*?)<\/section>/gs,
      ),
    ];
    expect(sections.map((m) => m[2] && Number(m[2])).filter(Boolean)).toEqual(fls);
    expect(sections.map((m) => m[1])).toEqual([
      ...fls.map((fl) => `FL${String(fl).padStart(3, '0')}`),
      'floor',
    ]);
    // 60″ cells over the fixture's 2.5° × 2° terrain: 150 × 120 cells, one image pixel per cell and row.
    for (const [, , , body] of sections) {
      const png = fillPng(body);
      expect([png.width, png.height, png.channels]).toEqual([150, 120, 4]);
      expect(body).toContain('<g class="scale"');
      expect(body).toContain('<g class="north">');
      expect(body).toMatch(/<ul class="key">.*not seen, sea.*volume <code>inner<\/code>/s);
      expect(body).toContain('<use href="#as-volumes"/>');
    }
    // The first level's map shows fold colours where the pair of sites sees the fixture's terrain.
    const png = fillPng(sections[0][3]);
    const data = png.data as Uint8Array;
    let folded = 0;
    for (let o = 0; o < data.length; o += 4)
      if (FOLD_COLORS.some((c) => c[0] === data[o] && c[1] === data[o + 1] && c[2] === data[o + 2])) folded++;
    expect(folded).toBeGreaterThan(0);
    expect(folded).toBeLessThan(150 * 120);
  });

  it('hatches a level exactly when `airshade coverage` writes gap features there, and its table equals summary.json', async () => {
    const out = join(fx.dir, 'cov');
    const cov = await runCli(
      'coverage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(cov.code).toBe(0);
    const summary = readJson(join(out, 'summary.json'));
    for (const fl of fx.scenario.flightLevels as number[]) {
      const tag = `FL${String(fl).padStart(3, '0')}`;
      const layers = readJson(join(out, `coverage-${tag}.geojson`));
      const gaps = layers.features.filter(
        (f: { properties: { layer: string } }) => f.properties.layer === 'gap',
      );
      const section = element(
        html,
        new RegExp(`<section class="map-page" data-map="${tag}".*?</section>`, 's'),
      );
      expect(section.includes('mask="url(#as-unmet-'), tag).toBe(gaps.length > 0);
    }
    expect(summary.volumes.length).toBeGreaterThan(0);
    expect(html.match(/<tr data-volume=/g)).toHaveLength(summary.volumes.length);
    for (const s of summary.volumes) {
      const v = rowValues(html, `data-volume="${s.volumeId}" data-level="${s.flightLevel}"`);
      expect(v.slice(0, 4)).toEqual([s.areaKm2, s.coveredPct, s.meetsRequirementPct, s.meetsRequirementKm2]);
      expect(v[4]).toBeCloseTo(s.areaKm2 - s.meetsRequirementKm2, 9);
    }
  }, 120_000);

  it('holds the N−1 table of `airshade outage` for the same network', async () => {
    const out = join(fx.dir, 'out');
    const r = await runCli(
      'outage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    const losses = readJson(join(out, 'outage.json')).losses as {
      siteId: string;
      demandWeightLost: number;
      areaKm2Lost: number;
    }[];
    const table = element(html, /<table class="grid" data-table="outage">.*?<\/table>/s);
    const order = [...table.matchAll(/<tr data-site="([^"]+)"/g)].map((m) => m[1]);
    expect(order).toEqual(losses.map((l) => l.siteId));
    for (const l of losses)
      expect(rowValues(table, `data-site="${l.siteId}"`)).toEqual([l.demandWeightLost, l.areaKm2Lost]);
  }, 120_000);

  it("includes a plan of this scenario and refuses another scenario's, naming the file", async () => {
    // One site excluded, so that the plan's network differs from "every allowed site and type".
    const mine = await runCli(
      'plan',
      fx.scenarioPath,
      '--exclude',
      'cinder',
      '--out',
      join(fx.dir, 'plan'),
      '--threads',
      '0',
      '--quiet',
    );
    expect(mine.code).toBe(0);
    const planPath = join(fx.dir, 'plan', 'plan.json');
    const plan = readJson(planPath);
    const out = join(fx.dir, 'r2', 'with-plan.html');
    const ok = await runCli(
      'report',
      fx.scenarioPath,
      '--plan',
      planPath,
      '--paper',
      'a3',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(ok.err).toBe('');
    expect(ok.code).toBe(0);
    const doc = readFileSync(out, 'utf8');
    expect(XMLValidator.validate(doc)).toBe(true);
    expect(doc).toContain('size: A3 portrait');
    const entries = element(doc, /<table[^>]*data-table="plan-entries">.*?<\/table>/s);
    expect(
      [...entries.matchAll(/<tr data-site="([^"]+)" data-type="([^"]+)"/g)].map((m) => [m[1], m[2]]),
    ).toEqual(plan.entries.map((e: { siteId: string; typeId: string }) => [e.siteId, e.typeId]));
    expect(doc).toContain(`<span data-value="${plan.cost}">`);
    expect(doc).toContain(`<span data-value="${plan.gapPct}">`);
    // With --plan and no --layout the network mapped (and taken out site by site) is the plan's.
    const sitesTable = element(doc, /<table class="grid" data-table="sites">.*?<\/table>/s);
    expect([...sitesTable.matchAll(/<tr data-site="([^"]+)"/g)].map((m) => m[1]).sort()).toEqual(
      [...new Set(plan.entries.map((e: { siteId: string }) => e.siteId))].sort(),
    );
    const planTable = element(doc, /<table class="grid stats" data-table="plan-volumes">.*?<\/table>/s);
    for (const s of plan.volumes)
      expect(
        rowValues(planTable, `data-volume="${s.volumeId}" data-level="${s.flightLevel}"`).slice(0, 4),
      ).toEqual([s.areaKm2, s.coveredPct, s.meetsRequirementPct, s.meetsRequirementKm2]);

    const theirs = await runQuiet('plan', other.scenarioPath, join(other.dir, 'plan'));
    expect(theirs.code).toBe(0);
    const foreign = join(other.dir, 'plan', 'plan.json');
    const refused = await runCli(
      'report',
      fx.scenarioPath,
      '--plan',
      foreign,
      '--out',
      join(fx.dir, 'r3', 'x.html'),
      '--threads',
      '0',
      '--quiet',
    );
    expect(refused.code).toBe(2);
    expect(refused.err.trim().split('\n')).toHaveLength(1);
    expect(refused.err).toContain(
      `${foreign}: provenance.scenario.sha256: found ${sha256(other.scenarioPath)}`,
    );
    expect(refused.err).toContain(`expected ${sha256(fx.scenarioPath)}`);

    // A plan.json with no provenance at all, and one that is not JSON.
    const bare = join(fx.dir, 'bare-plan.json');
    writeFileSync(bare, JSON.stringify({ ...plan, provenance: undefined }));
    const noProv = await runCli(
      'report',
      fx.scenarioPath,
      '--plan',
      bare,
      '--out',
      join(fx.dir, 'r3', 'y.html'),
      '--threads',
      '0',
    );
    expect(noProv.err).toMatch(
      /bare-plan\.json: provenance\.scenario\.sha256: found nothing; expected the SHA-256/,
    );
    const junk = join(fx.dir, 'junk-plan.json');
    writeFileSync(junk, '{ not json');
    const notJson = await runCli(
      'report',
      fx.scenarioPath,
      '--plan',
      junk,
      '--out',
      join(fx.dir, 'r3', 'z.html'),
      '--threads',
      '0',
    );
    expect(notJson.err).toMatch(/junk-plan\.json: found text that is not JSON/);
  }, 240_000);

  it('refuses bad arguments with one line before any work', async () => {
    mkdirSync(join(fx.dir, 'a-folder.html'), { recursive: true });
    const dir = await runCli(
      'report',
      fx.scenarioPath,
      '--out',
      join(fx.dir, 'a-folder.html'),
      '--threads',
      '0',
    );
    expect(dir.code).toBe(2);
    expect(dir.err).toMatch(/--out: found .*a-folder\.html, a folder; expected the HTML file to write/);
    const paper = await runCli(
      'report',
      fx.scenarioPath,
      '--paper',
      'letter',
      '--out',
      join(fx.dir, 'p.html'),
    );
    expect(paper.err).toMatch(/--paper: found "letter"; expected A4 or A3/);
    const layout = await runCli(
      'report',
      fx.scenarioPath,
      '--layout',
      'nothing',
      '--out',
      join(fx.dir, 'p.html'),
      '--threads',
      '0',
    );
    expect(layout.err).toMatch(/--layout: found "nothing"; expected the name of a layout/);
  });
});

describe('report map geometry', () => {
  // The default fixture's extent, open South Atlantic.
  const bounds = { west: -31.25, east: -28.75, north: -40, south: -42 };

  it('scales along a parallel as the sphere does (Mercator scale sec φ; Snyder 1987, USGS PP 1395 §7)', () => {
    const f = mapFrame(bounds);
    for (const lat of [-40.2, -41, -41.9]) {
      // Two points 0.01° apart on the parallel: their great-circle distance by @turf/distance (haversine, the
      // same mean radius) is the parallel's arc to 1e-8.
      const km = distance([-30, lat], [-29.99, lat], { units: 'kilometers' });
      const units = f.x(-29.99) - f.x(-30);
      expect(units / km).toBeCloseTo(unitsPerKm(f, lat), 6);
    }
    // Conformal: a small step of equal angle north and east is sec φ times longer northward on the map.
    const mid = -41;
    const dy = f.y(mid - 0.001) - f.y(mid + 0.001);
    const dx = f.x(-30.001) - f.x(-29.999);
    expect((dy * Math.cos((mid * Math.PI) / 180)) / Math.abs(dx)).toBeCloseTo(1, 5);
  });

  it('picks round bar lengths that fit their box, and says where the scale holds', () => {
    expect([7.3, 20, 99, 0.31].map(niceBelow)).toEqual([5, 20, 50, 0.2]);
    const f = mapFrame(bounds);
    const s = scaleBar(f);
    const perKm = unitsPerKm(f, s.latDeg);
    expect(s.kmLength * perKm).toBeLessThanOrEqual(380 - 110);
    expect(s.kmLength * perKm).toBeGreaterThan((380 - 110) / 5);
    expect(s.nmLength * 1.852 * perKm).toBeLessThanOrEqual(380 - 110);
    expect(s.latDeg).toBeLessThan(-41.5); // near the foot of the map
    expect(s.svg).toContain(`scale true at ${Math.abs(+s.latDeg.toFixed(1))}° S`);
  });

  it('encodes base64 as Node does (RFC 4648)', () => {
    for (const n of [0, 1, 2, 3, 4, 5, 1000, 20_001]) {
      const bytes = new Uint8Array(n);
      for (let i = 0; i < n; i++) bytes[i] = (i * 7919 + 13) & 255;
      expect(base64(bytes)).toBe(Buffer.from(bytes).toString('base64'));
    }
  });
});
