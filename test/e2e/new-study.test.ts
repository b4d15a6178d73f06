/// <reference lib="dom" />
/**
 * A new study from the planner's own data, end to end in headless Debian chromium (playwright-core): a DEM tile
 * in a projected CRS (UTM zone 26 south, EPSG:32726) over open ocean, written here from our seeded landscape
 * generator, and a sites CSV with invented names. The app is served with test/e2e/fixture.ts's small scenario as
 * its demo (the work a planner has before starting anew).
 *
 * Steps, in order on one page: a site outside the tile is refused, naming it and the DEM's extent, and the work
 * stays; the new study is created (after the question that protects the present work) and keeps nothing of the
 * demo; coverage runs, and a volume's share seen at FL030 on screen equals `airshade init` + `airshade coverage`
 * on the same files; every level is exported in one zip whose files carry the provenance (the tile's SHA-256 as
 * read here, the scenario's as saved); sites are replaced from a CSV while a saved layout names a site the file
 * lacks (the question with its counts; "keep"); a CSV with a bad cell is refused by row and column.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { unzipSync, strFromU8 } from 'fflate';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { loadScenario } from '../../worker/cli/scenario.ts';
import { encodeGeoTiff } from '../../worker/io/geotiff-write.ts';
import { bumpyDem } from '../support/bumps.ts';
import { runCli } from '../support/run-cli.ts';
import { E2E_SITES, writeE2eData } from './fixture.ts';
import { launchBrowser, saveArtefact, watchPage, type LaunchedBrowser, type PageWatch } from './harness.ts';

const APP_DIR = new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 240_000;

/** UTM zone 26 south: central meridian 27° W. */
const UTM26S = {
  kind: 'projected' as const,
  proj4: '+proj=utm +zone=26 +south +datum=WGS84 +units=m +no_defs',
  epsg: 32726,
  label: 'EPSG:32726',
};
/** 64 km × 48 km of 200 m pixels, north-west corner at (468 000 E, 5 540 000 N): about 40.5° S, 27.4° W. */
const TILE = { width: 320, height: 240, originX: 468_000, originY: 5_540_000, pixelM: 200 };
const TILE_NAME = 'ocean-utm26s.tif';

/** Invented sites on the tile, each existing with one allowed type (so the app's network is the CLI's default). */
const SITES_CSV = [
  'lon,lat,id,name,mastHeightM,siteCost,existing,allowedTypes',
  '-27.22,-40.47,brannock-rise,Brannock Rise,18,2,true,ssr-short',
  '-26.93,-40.62,ollith-knap,Ollith Knap,25,1.5,true,psr-s-gapfiller',
  '-27.05,-40.35,sorrel-tump,Sorrel Tump,15,1,true,ssr-short',
].join('\n');

let dir: string;
let dataDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;
let tileBytes: Buffer;

const idle = () =>
  page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'), undefined, {
    timeout: STEP_MS,
  });
const panel = (id: string) => page.click(`#tab-${id}`);
const message = async () => (await page.textContent('#message')) ?? '';
const sha256 = (b: Uint8Array | string) => createHash('sha256').update(b).digest('hex');

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-e2e-new-'));
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-new-data-'));
  writeE2eData(dataDir);
  const data = bumpyDem(4077, TILE.width, TILE.height);
  tileBytes = Buffer.from(
    encodeGeoTiff({
      geo: {
        width: TILE.width,
        height: TILE.height,
        originX: TILE.originX,
        originY: TILE.originY,
        pixelX: TILE.pixelM,
        pixelY: -TILE.pixelM,
        crs: UTM26S,
      },
      data,
    }),
  );
  writeFileSync(join(dir, TILE_NAME), tileBytes);
  writeFileSync(join(dir, 'own-sites.csv'), SITES_CSV + '\n');
  writeFileSync(
    join(dir, 'sites-one-outside.csv'),
    SITES_CSV + '\n-25.40,-40.50,far-skerry,Far Skerry,10,1,true,ssr-short\n',
  );
  // Replacement sites: sorrel-tump left out (the saved layout names it), one new site.
  writeFileSync(
    join(dir, 'fewer-sites.csv'),
    [...SITES_CSV.split('\n').slice(0, 3), '-27.15,-40.55,wend-hollow,Wend Hollow,20,1,false,ssr-short'].join(
      '\n',
    ) + '\n',
  );
  writeFileSync(join(dir, 'bad-sites.csv'), SITES_CSV.replace('Ollith Knap,25', 'Ollith Knap,tall') + '\n');
  server = await startServer({ root: APP_DIR, dataDir });
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  watch = await watchPage(page);
  await page.goto(server.url);
  await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
}, STEP_MS);

afterAll(async () => {
  await b?.close();
  await server?.close();
  for (const d of [dir, dataDir]) if (d) rmSync(d, { recursive: true, force: true });
});

/** Drops files (from `dir`) on an element of the page, as a file manager would. */
async function dropFiles(selector: string, names: string[]): Promise<void> {
  const files = names.map((n) => ({ name: n, b64: readFileSync(join(dir, n)).toString('base64') }));
  await page.evaluate(
    `(() => {
      const dt = new DataTransfer();
      for (const f of ${JSON.stringify(files)}) {
        const bytes = Uint8Array.from(atob(f.b64), (c) => c.charCodeAt(0));
        dt.items.add(new File([bytes], f.name));
      }
      document.querySelector(${JSON.stringify(selector)}).dispatchEvent(
        new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
    })()`,
  );
}

/** Picks the files into the New study form (unless already picked) and answers "Start the new study". */
async function newStudy(sitesFile?: string): Promise<void> {
  await panel('files');
  if (sitesFile) {
    await page.setInputFiles('#new-study-tiles', join(dir, TILE_NAME));
    await page.setInputFiles('#new-study-sites', join(dir, sitesFile));
  }
  expect(await page.textContent('#new-study-picked')).toContain(TILE_NAME);
  await page.click('#new-study-create');
  await page.waitForSelector('#new-study-confirm', { timeout: STEP_MS });
  expect(await page.textContent('#new-study-confirm')).toContain('will be replaced by the new study');
  await page.click('#new-study-go');
  // The outcome is said in the message area once every check has run.
  await page.waitForSelector('#message .msg', { timeout: STEP_MS });
  await idle();
}

describe('a new study from the planner’s own data', () => {
  it(
    'refuses a site outside the DEM, naming the site and the DEM’s extent, and keeps the work',
    async () => {
      const before = await page.textContent('#scenario-name');
      // A tile and a sites file dropped on the side panel are not a scenario: the app offers a new study.
      await dropFiles('#panel', [TILE_NAME, 'sites-one-outside.csv']);
      await page.waitForSelector('#message .msg.error');
      expect(await message()).toContain('no scenario file among them');
      await page.click('#message .msg button.small');
      await expect.poll(() => page.textContent('#new-study-picked')).toContain('sites-one-outside.csv');
      await newStudy();
      const text = await message();
      expect(text).toContain('The new study was not started; your work is unchanged.');
      expect(text).toMatch(
        /sites-one-outside\.csv: row 5: found site "far-skerry" at lon -25\.4, lat -40\.5, outside the DEM; expected a site on the terrain: the DEM \(ocean-utm26s\.tif\) covers lon -27\.\d+…-26\.\d+, lat -40\.\d+…-40\.\d+/,
      );
      expect(await page.textContent('#scenario-name')).toBe(before);
      const labels = await page.$$eval('.site-label', (els) => els.map((e) => e.textContent));
      expect(labels.sort()).toEqual(E2E_SITES.map((s) => s.name).sort());
      saveArtefact('new-study/refused.png', await page.screenshot());
      await page.click('#message .close');
    },
    STEP_MS,
  );

  it(
    'creates the study from the tile and the CSV, keeping nothing of the demo',
    async () => {
      await newStudy('own-sites.csv');
      const text = await message();
      expect(text).toMatch(/New study “Study of the sites in own-sites\.csv on ocean-utm26s\.tif”: 3 sites/);
      expect(text).toContain('in cells of 10″'); // 200 m = 6.5″ of latitude → the next plain cell, 10″
      const labels = await page.$$eval('.site-label', (els) => els.map((e) => e.textContent));
      expect(labels.sort()).toEqual(['Brannock Rise', 'Ollith Knap', 'Sorrel Tump']);
      const doc = (await page.evaluate('window.airshade.state.doc')) as {
        name: string;
        layouts: unknown[];
        volumes: { id: string; name: string }[];
        terrain: { files: string[] };
      };
      expect(doc.layouts).toEqual([]);
      expect(doc.volumes.map((v) => v.id)).toEqual(['study-area']);
      expect(doc.terrain.files).toEqual([TILE_NAME]);
      expect(JSON.stringify(doc)).not.toMatch(/halvoran|glimmerback|oskerfell|demo/i);
      saveArtefact('new-study/created.png', await page.screenshot());
      await page.click('#message .close');
    },
    STEP_MS,
  );

  it(
    'shows, at FL030, the share of the study area that `airshade init` + `airshade coverage` compute',
    async () => {
      await panel('coverage');
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await idle();
      const rows = await page.$$eval('#coverage-table tbody tr', (r) =>
        r.map((x) => [...x.querySelectorAll('td')].map((td) => td.textContent ?? '')),
      );
      // The study-area volume (clipped to the tile: a UTM tile does not fill its lon/lat box).
      const fl030 = rows.find((r) => r[0].startsWith('Study area') && r[1].startsWith('FL030'));
      expect(fl030, JSON.stringify(rows)).toBeDefined();
      const seenOnScreen = fl030![3];
      saveArtefact('new-study/coverage.png', await page.screenshot());

      // The same computation through the command line, on the same files.
      const study = join(dir, 'study.json');
      const init = await runCli(
        'init',
        '--dem',
        join(dir, TILE_NAME),
        '--sites',
        join(dir, 'own-sites.csv'),
        '--out',
        study,
        '--quiet',
      );
      expect(init.code, init.err).toBe(0);
      const out = join(dir, 'cli-out');
      const cov = await runCli('coverage', study, '--fl', '30', '--threads', '0', '--out', out, '--quiet');
      expect(cov.code, cov.err).toBe(0);
      const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8')) as {
        volumes: { volumeId: string; flightLevel: number; coveredPct: number }[];
      };
      const v = summary.volumes.find((x) => x.volumeId === 'study-area' && x.flightLevel === 30)!;
      expect(seenOnScreen).toBe(`${v.coveredPct.toFixed(1)} %`);
      // Not a trivial figure: part of the area is seen at FL030, not all of it.
      expect(v.coveredPct).toBeGreaterThan(1);
      expect(v.coveredPct).toBeLessThan(99.9);
      // The app's study is the one init writes (the same builder), but for where the tile is named from.
      const cli = (await loadScenario(study)).scenario;
      const app = (await page.evaluate('window.airshade.state.doc')) as Record<string, unknown>;
      expect(app.grid).toEqual(cli.grid);
      expect(app.flightLevels).toEqual(cli.flightLevels);
      expect(app.volumes).toEqual(cli.volumes);
    },
    STEP_MS,
  );

  it(
    'exports every level in one zip, each file with its provenance: the tile’s SHA-256, the scenario’s, k, the levels, the date',
    async () => {
      await panel('files');
      const [download] = await Promise.all([
        page.waitForEvent('download', { timeout: STEP_MS }),
        page.click('#export-all-levels'),
      ]);
      const zip = unzipSync(new Uint8Array(readFileSync((await download.path())!)));
      saveArtefact(
        `new-study/${download.suggestedFilename()}`,
        Buffer.from(readFileSync((await download.path())!)),
      );
      const names = Object.keys(zip).sort();
      const levels = (await page.evaluate('window.airshade.coverage.flightLevels')) as number[];
      const scenarioName = names.find((n) => n.endsWith('.scenario.json'))!;
      expect(names).toEqual(
        [
          ...levels.map((fl) => `coverage-FL${String(fl).padStart(3, '0')}.geojson`),
          'summary.json',
          scenarioName,
        ].sort(),
      );
      const scenarioText = strFromU8(zip[scenarioName]);
      const version = JSON.parse(readFileSync('package.json', 'utf8')).version;
      for (const n of names.filter((x) => x.endsWith('.geojson'))) {
        const fc = JSON.parse(strFromU8(zip[n]));
        expect(fc.type).toBe('FeatureCollection');
        expect(fc.caution).toMatch(/^A planning aid/);
        const p = fc.provenance;
        expect(p.tool).toBe('airshade');
        expect(p.version).toBe(version);
        expect(p.terrain).toEqual([{ file: TILE_NAME, sha256: sha256(tileBytes) }]);
        expect(p.scenario).toEqual({ file: scenarioName, sha256: sha256(scenarioText) });
        expect(p.kFactor).toBeCloseTo(4 / 3, 5);
        expect(p.target.text).toMatch(/^2 m² Swerling 1/);
        expect(p.flightLevels.map((l: { flightLevel: number }) => l.flightLevel)).toEqual(levels);
        expect(Date.parse(p.createdUtc)).toBeGreaterThan(Date.now() - 3_600_000);
      }
      const summary = JSON.parse(strFromU8(zip['summary.json']));
      expect(summary.provenance.terrain[0].sha256).toBe(sha256(tileBytes));
      expect(summary.caution).toMatch(/^A planning aid/);
      // The scenario as saved: its own provenance (no date, no digest of itself), and it opens in the CLI.
      const saved = JSON.parse(scenarioText);
      expect(saved.provenance.terrain).toEqual([{ file: TILE_NAME, sha256: sha256(tileBytes) }]);
      expect(saved.provenance.createdUtc).toBeUndefined();
      writeFileSync(join(dir, 'saved.scenario.json'), scenarioText);
      const loaded = await loadScenario(join(dir, 'saved.scenario.json'));
      expect(loaded.scenario.sites.map((f) => f.properties.id)).toEqual([
        'brannock-rise',
        'ollith-knap',
        'sorrel-tump',
      ]);
      // The single-level file carries the same provenance.
      const [one] = await Promise.all([page.waitForEvent('download'), page.click('#export-layer')]);
      const fc = JSON.parse(readFileSync((await one.path())!, 'utf8'));
      expect(fc.provenance.scenario.sha256).toBe(sha256(scenarioText));
    },
    STEP_MS,
  );

  it(
    'replaces the sites while a saved layout names one the file lacks: asks with the counts, keeps the layout',
    async () => {
      await panel('layouts');
      await page.fill('#layout-name', 'Three radars');
      await page.click('#save-layout');
      await expect.poll(() => page.textContent('#layout-table')).toContain('3 sensors');
      // A bad cell first: refused by row and column, nothing changed.
      await panel('sites');
      await page.setInputFiles('#sites-file', join(dir, 'bad-sites.csv'));
      await page.waitForSelector('#message .msg.error');
      expect(await message()).toContain(
        'bad-sites.csv: row 3, column "mastHeightM": found "tall"; expected a number ≥ 0',
      );
      await page.click('#message .close');
      await page.setInputFiles('#sites-file', join(dir, 'fewer-sites.csv'));
      await page.waitForSelector('#sites-layouts-question', { timeout: STEP_MS });
      const question = (await page.textContent('#sites-layouts-question'))!;
      expect(question).toContain(
        '1 of 1 saved layout names sites that fewer-sites.csv does not have (1 sensor entry): Three radars.',
      );
      expect(question).toContain('1 site of the scenario is not in the file: sorrel-tump.');
      saveArtefact('new-study/layouts-question.png', await page.screenshot());
      await page.click('#sites-keep-layouts');
      await page.waitForSelector('#message .msg.info');
      expect(await message()).toMatch(/Sites: 3 read from fewer-sites\.csv; 1 saved layout/);
      const layouts = (await page.evaluate('window.airshade.state.doc.layouts')) as {
        name: string;
        sensors: { siteId: string }[];
      }[];
      expect(layouts.map((l) => [l.name, l.sensors.map((s) => s.siteId).sort()])).toEqual([
        ['Three radars', ['brannock-rise', 'ollith-knap']],
      ]);
    },
    STEP_MS,
  );

  it(
    'brings the new study back after a reload: its terrain tile was kept in the browser',
    async () => {
      // The autosave (idb-keyval's default store) holds the replaced sites before the page goes.
      const savedSites = `new Promise((done) => {
        const open = indexedDB.open('keyval-store');
        open.onsuccess = () => {
          const get = open.result.transaction('keyval').objectStore('keyval').get('airshade-work');
          get.onsuccess = () => done((get.result?.state?.doc?.sites?.features ?? []).map((f) => f.properties.id).sort());
        };
      })`;
      await expect
        .poll(() => page.evaluate(savedSites))
        .toEqual(['brannock-rise', 'ollith-knap', 'wend-hollow']);
      await page.reload();
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      expect(await message()).toContain(
        'Restored your work from the last visit (Study of the sites in own-sites.csv on ocean-utm26s.tif)',
      );
      const labels = await page.$$eval('.site-label', (els) => els.map((e) => e.textContent));
      expect(labels.sort()).toEqual(['Brannock Rise', 'Ollith Knap', 'Wend Hollow']);
      await panel('ground');
      expect(await page.textContent('#tile-table')).toContain(TILE_NAME);
      expect(watch.pageErrors).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
    },
    STEP_MS,
  );
});
