/// <reference lib="dom" />
/**
 * The side panels (app/panels/) that the other browser tests leave alone, and what changed when they were split
 * into one file each, in headless Debian chromium (playwright-core) on the small invented scenario of
 * test/e2e/fixture.ts served as the demo:
 * - Sites: the hint names the map's "Move sites" switch;
 * - Sensor types: JSON that does not parse is refused with a message naming the field; a type added from the
 *   editor shows in the table and can be removed again;
 * - Plan: the result shows the new spend (the same figure as the cost) and, apart, the value of the kept sensors
 *   already standing, and marks those entries; its N−1 button fills the Outages panel's table;
 * - Files: the summary's plan carries newSpend and existingValue, as plan.json does;
 * - Profile: the saved SVG carries its provenance and the caution;
 * - Layouts: two saved layouts compared;
 * - Airspace: a volume drawn on the map, its typed name kept while the panel is rebuilt after each click (the
 *   fields marked data-keep, app/panels/kit.ts).
 *
 * The plan's figures are the fixture's own: the kept sensors standing at the two existing sites are the layout
 * "existing network" (a compact primary at 5 M, and two compact secondaries at 2.5 M each), worth 10 M.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { CAUTION } from '../../shared/caution.ts';
import { E2E_LAYOUTS, E2E_PRIMARY, E2E_SECONDARY, E2E_VOLUMES, writeE2eData } from './fixture.ts';
import {
  blockOutside,
  launchBrowser,
  saveArtefact,
  watchPage,
  type LaunchedBrowser,
  type PageWatch,
} from './harness.ts';

const APP_DIR = new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 180_000;

let dataDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;

async function panel(id: string): Promise<void> {
  await page.click(`#tab-${id}`);
}

async function idle(): Promise<void> {
  await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'), undefined, {
    timeout: STEP_MS,
  });
}

/** The text of a download started by clicking `selector`. */
async function downloaded(selector: string): Promise<{ name: string; text: string }> {
  const [d] = await Promise.all([page.waitForEvent('download', { timeout: STEP_MS }), page.click(selector)]);
  return { name: d.suggestedFilename(), text: readFileSync((await d.path())!, 'utf8') };
}

beforeAll(async () => {
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-panels-'));
  writeE2eData(dataDir);
  server = await startServer({ root: APP_DIR, dataDir });
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  await blockOutside(b.context);
  watch = await watchPage(page);
  await page.goto(server.url);
  await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
}, STEP_MS);

afterAll(async () => {
  await b?.close();
  await server?.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
});

describe('the panels', () => {
  it('Sites: the hint says sites can be moved from any panel with the map’s switch', async () => {
    await panel('sites');
    const hint = await page.textContent('#panel .hint');
    expect(hint).toContain('“Move sites”');
    expect(await page.textContent('#move-sites')).toBe('Move sites');
  });

  it(
    'Sensor types: refuses text that is not JSON, adds a type from the editor, removes it',
    async () => {
      await panel('types');
      const rows = () => page.$$eval('#type-table tbody tr', (r) => r.length);
      expect(await rows()).toBe(2);
      // The editor starts with a copy of the first type.
      const template = JSON.parse(await page.inputValue('#type-json'));
      expect(template.id).toBe(`${E2E_PRIMARY.id}-copy`);
      await page.fill('#type-json', '{ "id": ');
      await page.click('#type-apply');
      expect(await page.textContent('#message')).toMatch(
        /^sensor type: found text that is not JSON \(.+\); expected one sensor type object/,
      );
      expect(await page.getAttribute('#type-json', 'class')).toContain('invalid');
      await page.fill('#type-json', JSON.stringify(template));
      await page.click('#type-apply');
      await expect.poll(rows).toBe(3);
      expect(await page.inputValue(`[aria-label="name of ${E2E_PRIMARY.id}-copy"]`)).toBe(
        `${E2E_PRIMARY.name} (copy)`,
      );
      await page.click(`[aria-label="remove ${E2E_PRIMARY.id}-copy"]`);
      await expect.poll(rows).toBe(2);
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'Plan: new spend, the kept sensors already standing shown apart and marked, and the N−1 table',
    async () => {
      await panel('plan');
      expect(await page.isChecked('#plan-keep')).toBe(true);
      await page.click('#run-plan');
      await page.waitForSelector('#plan-cost', { timeout: STEP_MS });
      await idle();
      const cost = await page.textContent('#plan-cost');
      expect(cost).toMatch(/^\d+(\.\d+)? M$/);
      expect(await page.textContent('#plan-new-spend')).toBe(cost);
      // The layout "existing network", kept: one primary and two secondaries at the fixture's type costs.
      const standing = E2E_LAYOUTS[0].sensors;
      const value = standing.reduce(
        (a, r) => a + Number(r.typeId === E2E_PRIMARY.id ? E2E_PRIMARY.cost : E2E_SECONDARY.cost),
        0,
      );
      expect(value).toBe(10);
      expect(await page.textContent('#plan-existing-value')).toBe(`${value} M`);
      expect(await page.textContent('#plan-result')).toContain(
        'Existing sensors kept (value, not in the cost)',
      );
      const marked = await page.$$eval('#plan-entries tbody tr', (rows) =>
        rows.filter((r) => r.textContent!.includes('already standing')).map((r) => r.textContent!),
      );
      expect(marked.length).toBe(standing.length);
      saveArtefact('plan-panel.png', await page.screenshot());
      await page.click('#plan-n1');
      await page.waitForSelector('#n1-table', { timeout: STEP_MS });
      await idle();
      expect(await page.getAttribute('#tab-outages', 'aria-pressed')).toBe('true');
      expect(await page.$$eval('#n1-table tbody tr', (r) => r.length)).toBeGreaterThan(0);
    },
    STEP_MS,
  );

  it('Files: the summary’s plan carries newSpend and existingValue', async () => {
    await panel('files');
    const { name, text } = await downloaded('#export-summary');
    expect(name).toBe('airshade-summary.json');
    const summary = JSON.parse(text);
    expect(summary.caution).toBe(CAUTION);
    expect(summary.plan.newSpend).toBe(summary.plan.cost);
    expect(summary.plan.existingValue).toBe(10);
    expect(summary.plan.entries.filter((e: { existingSensor: boolean }) => e.existingSensor).length).toBe(3);
  });

  it(
    'Profile: the saved diagram carries its provenance and the caution',
    async () => {
      await panel('profile');
      await page.selectOption('#profile-site', 'halvoran-north');
      await page.selectOption('#profile-type', E2E_PRIMARY.id);
      await page.fill('#profile-az', '45');
      await page.click('#profile-draw');
      await page.waitForSelector('#export-diagram', { timeout: STEP_MS });
      const { name, text } = await downloaded('#export-diagram');
      expect(name).toBe(`profile-halvoran-north-${E2E_PRIMARY.id}-45.svg`);
      // XML text: the five predefined entities (XML 1.0, section 4.6) read back.
      const unescape = (s: string) =>
        s
          .replace(/&quot;/g, '"')
          .replace(/&apos;/g, "'")
          .replace(/&lt;/g, '<')
          .replace(/&gt;/g, '>')
          .replace(/&amp;/g, '&');
      const desc = text.match(/<desc id="airshade-desc-[^"]*">([^<]*)<\/desc>/);
      expect(unescape(desc![1])).toBe(CAUTION);
      const meta = text.match(/<metadata id="airshade-provenance-[^"]*">([^<]*)<\/metadata>/);
      expect(meta).not.toBeNull();
      const p = JSON.parse(unescape(meta![1]));
      expect(p.tool).toBe('airshade');
      expect(p.command).toBe('app diagram');
      expect(p.options).toEqual({
        site: 'halvoran-north',
        type: E2E_PRIMARY.id,
        azimuth: '45',
        units: 'aviation',
      });
      expect(p.scenario.sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(p.terrain.length).toBe(2);
      for (const t of p.terrain) expect(t.sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(p.flightLevels.map((l: { flightLevel: number }) => l.flightLevel)).toEqual([50, 100, 200]);
      expect(p.createdUtc).toMatch(/^\d{4}-\d\d-\d\dT/);
      // The diagram shown in the panel is drawn without it (it is not a saved file).
      expect((await page.evaluate('window.airshade.diagramSvg')) as string).not.toContain('<metadata');
    },
    STEP_MS,
  );

  it(
    'Layouts: compares two saved layouts',
    async () => {
      await panel('layouts');
      await page.selectOption('#compare-a', E2E_LAYOUTS[0].name);
      await page.selectOption('#compare-b', E2E_LAYOUTS[1].name);
      await page.click('#run-compare');
      await page.waitForSelector('#compare-result', { timeout: STEP_MS });
      await idle();
      const text = await page.textContent('#compare-result');
      expect(text).toContain(`${E2E_LAYOUTS[1].name} gains`);
      expect(text).toContain(`against ${E2E_LAYOUTS[0].name}`);
      expect(await page.$$eval('#compare-result tbody tr', (r) => r.length)).toBeGreaterThan(0);
    },
    STEP_MS,
  );

  it(
    'Airspace: draws a volume on the map, keeping its typed name while the panel is rebuilt',
    async () => {
      await panel('volumes');
      const rows = () => page.$$eval('#volume-table tbody tr', (r) => r.length);
      expect(await rows()).toBe(E2E_VOLUMES.length);
      await page.fill('#volume-name', 'Drawn block');
      await page.click('#draw-volume');
      // Inside the study area, away from the sites and the legend box.
      const corners: [number, number][] = [
        [-30.4, -41.2],
        [-29.9, -41.2],
        [-30.0, -40.7],
      ];
      for (const [lon, lat] of corners) {
        const at = await page.evaluate(
          ([x, y]) => {
            const app = (
              window as unknown as {
                airshade: { map: { map: { project(p: [number, number]): { x: number; y: number } } } };
              }
            ).airshade;
            const p = app.map.map.project([x, y]);
            const r = document.querySelector('#map')!.getBoundingClientRect();
            return { x: p.x + r.left, y: p.y + r.top };
          },
          [lon, lat],
        );
        await page.mouse.click(at.x, at.y);
      }
      await expect.poll(() => page.textContent('#draw-volume')).toContain('Drawing: 3 points');
      expect(await page.inputValue('#volume-name')).toBe('Drawn block');
      await page.click('#finish-volume');
      await expect.poll(rows).toBe(E2E_VOLUMES.length + 1);
      const names = await page.$$eval('#volume-table tbody tr input[type="text"]', (els) =>
        els.map((e) => (e as HTMLInputElement).value),
      );
      expect(names).toContain('Drawn block');
      expect(watch.pageErrors).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
    },
    STEP_MS,
  );
});
