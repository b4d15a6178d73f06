/// <reference lib="dom" />
/**
 * The web app end to end, in headless Debian chromium (playwright-core), on the small invented scenario of
 * test/e2e/fixture.ts served as the app's demo: first visit, terrain and sites loaded from files, coverage,
 * an outage, a plan, a GeoJSON export checked with a GeoJSON checker, reload and restore, a bad file.
 *
 * The steps share one page and run in order. Figures (time to first coverage, outage redraw, long tasks of the
 * main thread during the runs) are written to test-output/e2e/metrics.json and printed, not asserted: speed is
 * reported, never a pass/fail condition.
 */
import { check as checkGeoJson } from '@placemarkio/check-geojson';
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
import { basename, dirname, join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { fmtCost, fmtPct } from '../../app/units.ts';
import { formatFl } from '../../shared/units.ts';
import { runCli } from '../support/run-cli.ts';
import { E2E_SITES, E2E_TERRAIN_FILES, writeE2eData } from './fixture.ts';
import {
  blockOutside,
  canvasNonBlank,
  launchBrowser,
  longTasks,
  saveArtefact,
  watchPage,
  type LaunchedBrowser,
  type OutsideBlock,
  type PageWatch,
} from './harness.ts';

const APP_DIR = new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 180_000;

let dataDir: string;
let filesDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;
let outside: OutsideBlock;
const metrics: Record<string, unknown> = {};

/** Long tasks (main thread blocked > 50 ms) that started between two page times. */
async function blocksBetween(from: number, to: number) {
  const tasks = (await longTasks(page)).filter((t) => t.start >= from && t.start <= to);
  const frames = (await page.evaluate('window.__frames')) as {
    start: number;
    duration: number;
    renderMs: number;
    layoutMs: number;
    scripts: unknown[];
  }[];
  return tasks.map((t) => {
    const during = frames.filter((f) => f.start <= t.start + t.duration && f.start + f.duration >= t.start);
    return {
      startMs: Math.round(t.start - from),
      ms: Math.round(t.duration),
      frames: during.map((f) => ({ ms: Math.round(f.duration), renderMs: f.renderMs, layoutMs: f.layoutMs })),
      scripts: during.flatMap((f) => f.scripts),
    };
  });
}

const now = () => page.evaluate(() => performance.now());

async function panel(id: string): Promise<void> {
  await page.click(`#tab-${id}`);
}

async function siteRows(): Promise<string[]> {
  await panel('sites');
  return page.$$eval('#site-table tbody tr', (rows) => rows.map((r) => r.getAttribute('data-row') ?? ''));
}

beforeAll(async () => {
  if (!existsSync(join(APP_DIR, 'index.html')))
    throw new Error(
      `dist/app/index.html is missing: build the app first (npm run build:app; npm test does it)`,
    );
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-data-'));
  writeE2eData(dataDir);
  // Files a user would pick: the tiles and a sites file with one site more than the demo's.
  filesDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-files-'));
  const sites = JSON.parse(readFileSync(join(dataDir, 'sites.geojson'), 'utf8'));
  sites.features.push({
    type: 'Feature',
    geometry: { type: 'Point', coordinates: [-29.9, -40.9] },
    properties: {
      id: 'moss-knoll',
      name: 'Moss Knoll <b>not bold</b>',
      mastHeightM: 25,
      siteCost: 3,
      existing: false,
    },
  });
  writeFileSync(join(filesDir, 'more-sites.geojson'), JSON.stringify(sites));
  writeFileSync(join(filesDir, 'broken.scenario.json'), '{ "name": "broken", "terrain": { "files": [ }');
  server = await startServer({ root: APP_DIR, dataDir });
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  outside = await blockOutside(b.context);
  watch = await watchPage(page);
  // Long animation frames name the scripts that ran in them: what a long task was spent on.
  await b.context.addInitScript(`window.__frames = [];
    new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__frames.push({ start: e.startTime,
      duration: e.duration, renderMs: e.renderStart ? Math.round(e.startTime + e.duration - e.renderStart) : 0,
      layoutMs: e.styleAndLayoutStart ? Math.round(e.startTime + e.duration - e.styleAndLayoutStart) : 0, scripts: e.scripts.map((s) => ({ ms: Math.round(s.duration), invoker: s.invoker,
      source: (s.sourceURL || '').split('/').pop() + ':' + s.sourceCharPosition, fn: s.sourceFunctionName })) }); })
      .observe({ type: 'long-animation-frame', buffered: true });`);
}, STEP_MS);

afterAll(async () => {
  saveArtefact('metrics.json', JSON.stringify(metrics, null, 2) + '\n');
  console.log('e2e figures:', JSON.stringify(metrics));
  await b?.close();
  await server?.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  if (filesDir) rmSync(filesDir, { recursive: true, force: true });
});

describe('the web app', () => {
  it(
    'loads the demo on first visit with no console errors, nothing from outside, and a drawn map',
    async () => {
      const t0 = Date.now();
      await page.goto(server.url);
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      metrics.firstVisitReadyMs = Date.now() - t0;
      expect(await page.evaluate(() => crossOriginIsolated)).toBe(true);
      // The demo's sites are on the map as markers (text labels), and its name is in the top bar.
      const labels = await page.$$eval('.site-label', (els) => els.map((e) => e.textContent));
      expect(labels.sort()).toEqual(E2E_SITES.map((s) => s.name).sort());
      await expect.poll(() => page.$$eval('.overlay-relief', (els) => els.length)).toBe(1);
      // The map area shows the relief image and the canvas draws the volume outlines.
      const shot = await canvasNonBlank(page, '#map', { via: 'screenshot' });
      expect(shot.nonUniform).toBe(true);
      expect(shot.distinctColours).toBeGreaterThan(50);
      const canvas = await canvasNonBlank(page, '.maplibregl-canvas', { via: 'screenshot' });
      expect(canvas.nonUniform).toBe(true);
      // The cautions are in the app.
      await page.click('#about-open');
      const about = await page.textContent('#about');
      expect(about).toContain('not a certified or flight-inspected result');
      expect(about).toContain('refraction');
      expect(about).toContain('local authority');
      // What "seen" means (the engine's text) and that flight levels are pressure altitudes taken on the day.
      expect(about).toContain('What “seen” means');
      expect(await page.textContent('#about-seen')).toMatch(
        /^A primary detects the target with its type’s Pd/,
      );
      expect(about).toContain('Flight levels are pressure altitudes');
      expect(await page.textContent('#about-day')).toContain('ISA standard day');
      await page.click('#about button');
      expect(watch.consoleErrors).toEqual([]);
      expect(watch.pageErrors).toEqual([]);
      expect(watch.httpErrors).toEqual([]);
      expect(outside.blocked).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'loads terrain tiles and a sites file picked by the user, and shows what was read',
    async () => {
      await panel('ground');
      await page.setInputFiles(
        '#terrain-files',
        E2E_TERRAIN_FILES.map((f) => join(dataDir, f)),
      );
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      await page.waitForSelector('#tile-table');
      const rows = await page.$$eval('#tile-table tbody tr', (r) => r.map((x) => x.textContent ?? ''));
      expect(rows).toHaveLength(2);
      expect(rows[0]).toContain('e2e-west.tif');
      expect(rows[0]).toContain('30.00 × 30.00 ″');
      // A tile dropped on the panel (added to the loaded ones: it takes the place of its namesake).
      await page.uncheck('#terrain-replace');
      await page.click('#message .close'); // the picker's message goes: the next one is the drop's
      await page.evaluate(`(async () => {
        const blob = await (await fetch('data/terrain/e2e-west.tif')).blob();
        const dt = new DataTransfer();
        dt.items.add(new File([blob], 'e2e-west.tif', { type: 'image/tiff' }));
        document.querySelector('#panel .drop').dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
      })()`);
      await page.waitForSelector('#message .msg.info');
      expect(await page.textContent('#message')).toContain('2 tile(s) loaded');
      expect(await page.$$eval('#tile-table tbody tr', (r) => r.length)).toBe(2);
      await panel('sites');
      await page.setInputFiles('#sites-file', join(filesDir, 'more-sites.geojson'));
      await expect.poll(siteRows).toContain('moss-knoll');
      // Imported text is shown as text, never as markup.
      const label = await page.$eval('[data-site-id="moss-knoll"] .site-label', (e) => ({
        text: e.textContent,
        bold: e.querySelector('b') !== null,
      }));
      expect(label).toEqual({ text: 'Moss Knoll <b>not bold</b>', bold: false });
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'computes coverage and draws the layer',
    async () => {
      await panel('coverage');
      const t0 = await now();
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      const t1 = await now();
      metrics.firstCoverageMs = Math.round(t1 - t0);
      metrics.coverageLongTasks = await blocksBetween(t0, t1);
      await page.waitForSelector('#coverage-table');
      const cells = await page.$$eval('#coverage-table tbody tr', (r) => r.map((x) => x.textContent ?? ''));
      expect(cells.length).toBeGreaterThan(0);
      expect(cells.join(' ')).toMatch(/Halvoran/);
      const fold = await page.$eval('.overlay-fold', (e) => ({
        w: (e as HTMLCanvasElement).width,
        shown: getComputedStyle(e).display !== 'none',
      }));
      expect(fold.w).toBeGreaterThan(0);
      expect(fold.shown).toBe(true);
      saveArtefact('main-screen.png', await page.screenshot());
    },
    STEP_MS,
  );

  it(
    'fails a site by clicking it on the map and shows the loss at once',
    async () => {
      await panel('outages');
      const t0 = await now();
      await page.click('[data-site-id="halvoran-north"] .site-dot');
      await page.waitForSelector('#app[data-outage="1"]', { timeout: STEP_MS });
      const t1 = await now();
      const text = await page.textContent('#outage-loss');
      expect(text).toMatch(/down:/);
      expect(await page.$eval('[data-site-id="halvoran-north"]', (e) => e.classList.contains('failed'))).toBe(
        true,
      );
      expect(await page.$$eval('.overlay-loss', (e) => e.length)).toBe(1);
      metrics.outageRedrawMs = await page.evaluate(
        () =>
          (window as unknown as { airshade: { metrics: { outageRedrawMs: number[] } } }).airshade.metrics
            .outageRedrawMs,
      );
      metrics.outageLongTasks = await blocksBetween(t0, t1);
      // Back up again: the loss layer empties.
      await page.click('[data-fail="halvoran-north"]');
      await page.waitForSelector('#app[data-outage="2"]', { timeout: STEP_MS });
      expect(await page.textContent('#outage-loss')).toContain('No site failed');
    },
    STEP_MS,
  );

  it(
    'recomputes only the site that was dragged to a new place',
    async () => {
      await panel('sites');
      const dot = (await page.$('[data-site-id="halvoran-north"] .site-dot'))!;
      const box = (await dot.boundingBox())!;
      const before = await page.$eval(
        '[aria-label="lon of halvoran-north"]',
        (e) => (e as HTMLInputElement).value,
      );
      await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
      await page.mouse.down();
      await page.mouse.move(box.x + 60, box.y + 30, { steps: 6 });
      await page.mouse.up();
      await page.waitForSelector('#app[data-coverage="2"]', { timeout: STEP_MS });
      const after = await page.$eval(
        '[aria-label="lon of halvoran-north"]',
        (e) => (e as HTMLInputElement).value,
      );
      expect(Number(after)).toBeGreaterThan(Number(before));
      await panel('coverage');
      const text = (await page.textContent('#coverage-summary'))!;
      const [, sensors, computed, cached] = text
        .match(/(\d+) sensors; (\d+) footprints computed, (\d+) from the cache/)!
        .map(Number);
      // The layout has sensors on halvoran-north and elsewhere: only halvoran-north's were computed again.
      const atSite = ((await page.evaluate('window.airshade.state.network')) as { siteId: string }[]).filter(
        (r) => r.siteId === 'halvoran-north',
      ).length;
      expect(computed).toBe(atSite);
      expect(cached).toBe(sensors - atSite);
      expect(cached).toBeGreaterThan(0);
    },
    STEP_MS,
  );

  it(
    'states the target, the day and k after a run; the cold-day switch lowers the levels and changes the coverage',
    async () => {
      await panel('coverage');
      const conventions = (await page.textContent('#coverage-conventions'))!;
      expect(conventions).toContain('Target: 2 m² Swerling 1, transponder ≥ 70 W');
      expect(conventions).toContain('Day: ISA standard day');
      expect(conventions).toContain('k = 1.3333');
      // The fixture's primary still carries its own targetRcsM2: the model's warning is shown.
      expect(await page.textContent('#coverage-warnings')).toContain('targetRcsM2');
      const levelText = () => page.$eval('#view-fl option[value="50"]', (e) => e.textContent ?? '');
      const shares = () =>
        page.$$eval('#coverage-table tbody tr', (rows) =>
          rows.map((r) =>
            [...r.querySelectorAll('td')]
              .slice(3)
              .map((td) => td.textContent)
              .join(' | '),
          ),
        );
      expect(await levelText()).toBe('FL050 (5,000 ft)');
      const before = await shares();
      await page.check('#day-cold');
      await page.waitForSelector('#app[data-coverage="3"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      // FL050 is a pressure altitude: on QNH 980 hPa and ISA −20 °C it lies well below 5,000 ft.
      const cold = await levelText();
      const ft = Number(cold.match(/FL050 \(([\d,]+) ft\)/)![1].replace(/,/g, ''));
      expect(ft).toBeGreaterThan(3000);
      expect(ft).toBeLessThan(4500);
      expect(await page.textContent('#level-altitudes')).toContain(`FL050 ${cold.slice(7, -1)}`);
      expect(await page.textContent('#coverage-conventions')).toContain('Day: QNH 980 hPa, ISA −20 °C');
      expect(await page.textContent('#coverage-table')).toContain(cold.slice(7, -1));
      // The cursor read-out gives the shown level at its altitude on the day.
      const map = (await (await page.$('#map'))!.boundingBox())!;
      await page.mouse.move(map.x + map.width * 0.45, map.y + map.height * 0.5);
      await expect.poll(() => page.textContent('#readout')).toContain(`sites at ${cold}`);
      const after = await shares();
      expect(after).not.toEqual(before);
      expect(after).toHaveLength(before.length);
      await page.click('#about-open');
      expect(await page.textContent('#about-day')).toContain('QNH 980 hPa, ISA −20 °C');
      await page.click('#about button');
      saveArtefact('cold-day.png', await page.screenshot());
      // Off again: the standard day's altitudes and figures come back.
      await page.uncheck('#day-cold');
      await page.waitForSelector('#app[data-coverage="4"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      expect(await levelText()).toBe('FL050 (5,000 ft)');
      expect(await shares()).toEqual(before);
      // A day outside the limits is refused, named, and left in its field.
      await page.fill('#day-qnh', '800');
      await page.press('#day-qnh', 'Enter');
      await page.waitForSelector('#message .msg.error');
      expect(await page.textContent('#message')).toContain('day.qnhHpa');
      expect(await page.inputValue('#day-qnh')).toBe('800');
      await page.click('#message .close');
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'sets the study’s target and a volume’s own, and the next run states them',
    async () => {
      await panel('volumes');
      expect(
        await page.$eval('#target-fluctuation', (e) => (e as HTMLSelectElement).selectedOptions[0].text),
      ).toBe('Swerling 1 (fluctuates scan to scan)');
      await page.fill('#target-rcs', '0.5');
      await page.press('#target-rcs', 'Enter');
      await page.waitForSelector('#app[data-coverage="5"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      await page.selectOption('[aria-label="target transponder of halvoran-terminal"]', 'high-power');
      await page.waitForSelector('#app[data-coverage="6"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      // A refused RCS stays in its field with the message.
      await page.fill('#target-rcs', '-1');
      await page.press('#target-rcs', 'Enter');
      await page.waitForSelector('#message .msg.error');
      expect(await page.textContent('#message')).toContain('targetRcsM2');
      expect(await page.textContent('#message')).toContain('a radar cross-section > 0 m²');
      expect(await page.inputValue('#target-rcs')).toBe('-1');
      await page.click('#message .close');
      await panel('coverage');
      const text = (await page.textContent('#coverage-conventions'))!;
      expect(text).toContain('Target: 0.5 m² Swerling 1, transponder ≥ 70 W');
      expect(text).toContain(
        'Halvoran terminal area: its own target, 0.5 m² Swerling 1, transponder ≥ 125 W',
      );
      const doc = (await page.evaluate('window.airshade.state.doc')) as {
        targetRcsM2: number;
        volumes: { id: string; targetTransponder?: string }[];
      };
      expect(doc.targetRcsM2).toBe(0.5);
      expect(doc.volumes.find((v) => v.id === 'halvoran-terminal')!.targetTransponder).toBe('high-power');
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'tilts a site in the Sites table, and its profile for a typed azimuth states target, tilt and day',
    async () => {
      await panel('sites');
      await page.fill('[aria-label="tilt of halvoran-north"]', '2');
      await page.press('[aria-label="tilt of halvoran-north"]', 'Enter');
      await page.waitForSelector('#app[data-coverage="7"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      await panel('profile');
      await page.selectOption('#profile-site', 'halvoran-north');
      await page.selectOption('#profile-type', 'psr-compact');
      await page.fill('#profile-az', '135');
      await page.click('#profile-draw');
      await page.waitForSelector('#diagram');
      const svg = (await page.evaluate('window.airshade.diagramSvg')) as string;
      const words = svg.replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ');
      expect(words).toContain('azimuth 135.0°');
      expect(words).toContain('tilt 2°');
      expect(words).toContain('Target: 0.5 m² Swerling 1');
      expect(words).toContain('ISA standard day');
      saveArtefact('profile.png', await page.screenshot());
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'makes a plan whose cost, lower bound, gap and per-volume table are those of airshade plan on the same scenario',
    async () => {
      await panel('plan');
      // The same measure over a quiet second with nothing running: what the browser itself costs.
      const q0 = await now();
      await page.evaluate(() => new Promise((r) => setTimeout(r, 1500)));
      metrics.idleLongTasks = await blocksBetween(q0, await now());
      // No budget: the least cost meeting every volume, with its lower bound (the budget's goal shows no bound).
      await page.fill('#plan-budget', '');
      const t0 = await now();
      await page.click('#run-plan');
      await page.waitForSelector('#plan-cost', { timeout: STEP_MS });
      const t1 = await now();
      metrics.planMs = Math.round(t1 - t0);
      metrics.planLongTasks = await blocksBetween(t0, t1);
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      // The CLI on the same scenario: the file the app saves (with the edits of the steps before), on the same
      // tiles, the sensors the panel kept (the network's on existing sites) as a layout, no budget.
      type Ref = { siteId: string; typeId: string };
      const keep = (await page.evaluate(`(() => {
        const s = window.airshade.state;
        return s.network.filter((r) => s.doc.sites.features.find((f) => f.properties.id === r.siteId)?.properties.existing);
      })()`)) as Ref[];
      expect(keep.length).toBeGreaterThan(0);
      await panel('files');
      const [saved] = await Promise.all([page.waitForEvent('download'), page.click('#save-scenario')]);
      const doc = JSON.parse(readFileSync((await saved.path())!, 'utf8'));
      doc.layouts = [...(doc.layouts ?? []), { name: 'kept by the plan panel', sensors: keep }];
      const planDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-plan-'));
      try {
        for (const f of doc.terrain.files as string[]) {
          mkdirSync(dirname(join(planDir, f)), { recursive: true });
          copyFileSync(join(dataDir, 'terrain', basename(f)), join(planDir, f));
        }
        const scenarioPath = join(planDir, 'app.scenario.json');
        writeFileSync(scenarioPath, JSON.stringify(doc));
        const r = await runCli(
          'plan',
          scenarioPath,
          '--keep',
          'kept by the plan panel',
          '--budget',
          'none',
          '--out',
          join(planDir, 'out'),
          '--threads',
          '0',
          '--quiet',
        );
        expect(r.err).toBe('');
        expect(r.code).toBe(0);
        const plan = JSON.parse(readFileSync(join(planDir, 'out', 'plan.json'), 'utf8'));
        expect(plan.mode).toBe('cover');
        // The engine's figures are plan.json's.
        const mine = (await page.evaluate('window.airshade.plan')) as {
          cost: number;
          lowerBound: number;
          gapPct: number;
          entries: Ref[];
          volumes: { volumeId: string; flightLevel: number; meetsRequirementPct: number }[];
        };
        expect([mine.cost, mine.lowerBound, mine.gapPct]).toEqual([plan.cost, plan.lowerBound, plan.gapPct]);
        expect(mine.entries.map((e) => [e.siteId, e.typeId])).toEqual(
          plan.entries.map((e: Ref) => [e.siteId, e.typeId]),
        );
        // And what the panel shows: cost, lower bound, gap, and each volume's share meeting its requirement.
        await panel('plan');
        const facts = await page.$$eval('#plan-result dt', (dts) =>
          Object.fromEntries(dts.map((dt) => [dt.textContent, dt.nextElementSibling?.textContent ?? ''])),
        );
        expect(facts['Cost']).toBe(fmtCost(plan.cost));
        expect(facts['Lower bound']).toBe(fmtCost(plan.lowerBound));
        expect(facts['Gap']).toBe(fmtPct(plan.gapPct));
        expect(await page.$$eval('#plan-entries tbody tr', (r) => r.length)).toBe(plan.entries.length);
        const rows = await page.$$eval('#plan-result ~ table.wide tbody tr', (trs) =>
          trs.map((tr) => [...tr.querySelectorAll('td')].map((td) => td.textContent ?? '')),
        );
        const names = new Map((doc.volumes as { id: string; name: string }[]).map((v) => [v.id, v.name]));
        expect(plan.volumes.length).toBeGreaterThan(0);
        expect(rows).toEqual(
          plan.volumes.map((v: { volumeId: string; flightLevel: number; meetsRequirementPct: number }) => [
            names.get(v.volumeId),
            formatFl(v.flightLevel),
            fmtPct(v.meetsRequirementPct),
          ]),
        );
      } finally {
        rmSync(planDir, { recursive: true, force: true });
      }
    },
    STEP_MS,
  );

  it(
    'exports a coverage layer as GeoJSON that a GeoJSON checker accepts',
    async () => {
      await panel('files');
      const [download] = await Promise.all([page.waitForEvent('download'), page.click('#export-layer')]);
      const path = await download.path();
      const text = readFileSync(path!, 'utf8');
      saveArtefact(download.suggestedFilename(), text);
      const fc = checkGeoJson(text); // throws with the first problem (RFC 7946: winding, rings, coordinates)
      expect(fc.type).toBe('FeatureCollection');
      const features = (fc as GeoJSON.FeatureCollection).features;
      expect(features.length).toBeGreaterThan(0);
      // The summary JSON states what the figures mean, as the CLI's summary.json does.
      const [sum] = await Promise.all([page.waitForEvent('download'), page.click('#export-summary')]);
      const summary = JSON.parse(readFileSync((await sum.path())!, 'utf8'));
      expect(summary.conventions.target.text).toMatch(/^0\.5 m² Swerling 1/);
      expect(summary.conventions.day.text).toBe('ISA standard day (QNH 1013.25 hPa, ISA +0 °C)');
      expect(summary.conventions.levels.map((l: { flightLevel: number }) => l.flightLevel)).toEqual([
        50, 100, 200,
      ]);
      expect(summary.conventions.seen).toMatch(/^seen = /);
      expect(summary.warnings.join(' ')).toContain('targetRcsM2');
      for (const f of features) {
        expect(f.properties).toHaveProperty('flightLevel');
        expect(f.properties).toHaveProperty('altitudeM');
        expect(f.properties).toHaveProperty('fold');
        expect(f.properties).toHaveProperty('kind');
        expect(f.properties).toHaveProperty('siteIds');
      }
    },
    STEP_MS,
  );

  it(
    'adds a site by clicking the map, then finds the work restored after a reload',
    async () => {
      await panel('sites');
      await page.click('#add-site');
      const box = (await page.$('#map'))!.boundingBox();
      const bb = (await box)!;
      await page.mouse.click(bb.x + bb.width * 0.55, bb.y + bb.height * 0.45);
      await expect.poll(siteRows).toHaveLength(E2E_SITES.length + 2);
      const before = await siteRows();
      const figures = async () => {
        await panel('coverage');
        return page.$$eval('#coverage-table tbody tr', (rows) => rows.map((r) => r.textContent ?? ''));
      };
      const coverage = await figures();
      expect(coverage.length).toBeGreaterThan(0);
      await page.evaluate(() => new Promise((r) => setTimeout(r, 800))); // autosave is debounced
      await page.reload();
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      expect(await page.textContent('#message')).toContain('Restored');
      // The coverage computed before the reload is computed again by itself: the same figures come back.
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      expect(await page.textContent('#message')).toContain('and its coverage, computed again');
      expect(await figures()).toEqual(coverage);
      expect(await siteRows()).toEqual(before);
      await panel('ground');
      expect(await page.$$eval('#tile-table tbody tr', (r) => r.length)).toBe(2);
    },
    STEP_MS,
  );

  it(
    'says what is wrong with a bad scenario file and keeps the work',
    async () => {
      const before = await siteRows();
      await panel('files');
      await page.setInputFiles('#scenario-file', join(filesDir, 'broken.scenario.json'));
      await page.waitForSelector('#message .msg.error');
      const msg = await page.textContent('#message');
      expect(msg).toContain('broken.scenario.json');
      expect(msg).toMatch(/line 1, column \d+/);
      expect(msg).toContain('your work is unchanged');
      expect(await siteRows()).toEqual(before);
      // A bad value typed in a table is refused, named, and left in its field.
      const mast = await page.$('[aria-label="mast of halvoran-north"]');
      await mast!.fill('-5');
      await mast!.press('Enter');
      await page.waitForSelector('#message .msg.error');
      expect(await page.textContent('#message')).toContain('mastHeightM');
      expect(await mast!.inputValue()).toBe('-5');
      expect(await mast!.evaluate((e) => e.classList.contains('invalid'))).toBe(true);
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'saves the scenario file and opens it again on the loaded terrain',
    async () => {
      const before = await siteRows();
      await panel('files');
      const [download] = await Promise.all([page.waitForEvent('download'), page.click('#save-scenario')]);
      const text = readFileSync((await download.path())!, 'utf8');
      const doc = JSON.parse(text);
      // The working network travels as a layout (a saved one when it is the same set), so opening the file
      // brings it back.
      type Ref = { siteId: string; typeId: string };
      const key = (l: Ref[]) =>
        l
          .map((r) => `${r.siteId}/${r.typeId}`)
          .sort()
          .join(' ');
      const network = (await page.evaluate('window.airshade.state.network')) as Ref[];
      expect(doc.layouts.map((l: { sensors: Ref[] }) => key(l.sensors))).toContain(key(network));
      const saved = join(filesDir, 'saved.scenario.json');
      writeFileSync(saved, text);
      await page.setInputFiles('#scenario-file', saved);
      await page.waitForSelector('#message .msg.info');
      expect(await page.textContent('#message')).toContain('Loaded saved.scenario.json');
      expect(await siteRows()).toEqual(before);
      expect(watch.pageErrors).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'flight levels typed and Compute pressed with the cursor still in the field: the run uses what was typed',
    async () => {
      await panel('coverage');
      const before = Number(await page.getAttribute('#app', 'data-coverage'));
      const old = (await page.evaluate('window.airshade.state.doc.flightLevels')) as number[];
      const typed = [...old, 120].sort((a, b) => a - b);
      await page.fill('#fl-list', typed.join(', ')); // focus stays in the field: no change event yet
      await page.getByRole('button', { name: 'Compute coverage', exact: true }).click();
      await page.waitForFunction(
        (n) => Number(document.querySelector('#app')!.getAttribute('data-coverage')) > n,
        before,
        { timeout: STEP_MS },
      );
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      expect(await page.evaluate('window.airshade.state.doc.flightLevels')).toEqual(typed);
      expect(await page.evaluate('window.airshade.coverage.flightLevels')).toEqual(typed);
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );
});
