/// <reference lib="dom" />
/**
 * The multilateration accuracy layer in the app (issue 14), on test/e2e/fixture.ts's invented scenario with four
 * invented `mlat` receiver buoys added round a point of its open sea and in the starting network: the Coverage
 * panel offers the layer only once a network with receivers is computed; switched on, the map draws it, the legend
 * has its own block with the metre bands, and the cursor read-out gives the DRMS under the cursor.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { siteFeature, type FixtureSensorType } from '../support/scenario-fixture.ts';
import { E2E_LAYOUT_NAME, writeE2eData } from './fixture.ts';
import { blockOutside, launchBrowser, saveArtefact, watchPage, type LaunchedBrowser } from './harness.ts';

const APP_DIR = process.env.AIRSHADE_E2E_APP_DIR ?? new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 180_000;
const CENTRE: [number, number] = [-30, -41];

const MLAT = (
  JSON.parse(
    readFileSync(join(import.meta.dirname, '..', '..', 'data', 'catalog', 'receiver-types.json'), 'utf8'),
  ) as FixtureSensorType[]
).find((t) => t.kind === 'mlat')!;

let dataDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;

beforeAll(async () => {
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-accuracy-'));
  const data = writeE2eData(dataDir);
  const buoys = [
    [0.2, 0.15],
    [-0.2, 0.15],
    [-0.2, -0.15],
    [0.2, -0.15],
  ].map(([dx, dy], i) => ({
    id: `buoy-${i + 1}`,
    name: `Buoy ${i + 1}`,
    lon: CENTRE[0] + dx,
    lat: CENTRE[1] + dy,
    mastHeightM: 10,
    siteCost: 0.5,
    existing: true,
    allowedTypes: [MLAT.id],
  }));
  writeFileSync(
    data.sitesPath,
    JSON.stringify({ ...data.sites, features: [...data.sites.features, ...buoys.map(siteFeature)] }, null, 2),
  );
  const s = data.scenario as { sensorTypes: unknown[]; layouts: { name: string; sensors: unknown[] }[] };
  const layouts = s.layouts.map((l) =>
    l.name === E2E_LAYOUT_NAME
      ? { ...l, sensors: [...l.sensors, ...buoys.map((x) => ({ siteId: x.id, typeId: MLAT.id }))] }
      : l,
  );
  writeFileSync(
    data.scenarioPath,
    JSON.stringify({ ...s, sensorTypes: [...s.sensorTypes, MLAT], layouts }, null, 2),
  );
  server = await startServer({ root: APP_DIR, dataDir });
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  await blockOutside(b.context);
  await watchPage(page);
  await page.goto(server.url);
  await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
}, STEP_MS);

afterAll(async () => {
  await b?.close();
  await server?.close();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
});

describe('the multilateration accuracy layer', () => {
  it(
    'is offered once a network with receivers is computed; drawn, explained in the legend and read out',
    async () => {
      await page.click('#tab-coverage');
      expect(await page.$$('#layer-accuracy')).toHaveLength(0); // no coverage yet
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      await page.check('#layer-accuracy');
      await expect.poll(() => page.$$eval('.overlay-accuracy', (e) => e.length)).toBe(1);
      await expect
        .poll(() => page.textContent('#legend-accuracy'))
        .toMatch(/Multilateration accuracy at FL\d+[\s\S]*1σ horizontal[\s\S]*≤ 50 m[\s\S]*> 1,000 m/);
      // The cursor over the buoys' centre: the read-out names the DRMS there.
      const at = await page.evaluate((c) => {
        const app = (
          window as unknown as {
            airshade: { map: { map: { project(p: [number, number]): { x: number; y: number } } } };
          }
        ).airshade;
        const p = app.map.map.project(c);
        const r = document.querySelector('#map')!.getBoundingClientRect();
        return { x: p.x + r.left, y: p.y + r.top };
      }, CENTRE);
      await page.mouse.move(at.x, at.y);
      await expect
        .poll(() => page.textContent('#readout'))
        .toMatch(/multilateration accuracy [\d.,]+ m \(1σ horizontal\)/);
      saveArtefact('accuracy-layer.png', await page.screenshot());
    },
    STEP_MS,
  );
});
