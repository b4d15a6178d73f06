/// <reference lib="dom" />
/**
 * The app's display, checked by figures on screen (headless Debian chromium through playwright-core), on the small
 * invented scenario of test/e2e/fixture.ts served as the demo:
 * - at the first view the legend box leaves the study area's south-east corner clear, every site symbol is centred
 *   on its site, no two site labels overlap, and the legend explains the site symbols;
 * - the cursor read-out gives the exact network floor of the cell — the value of that cell in the network-floor
 *   GeoTIFF that `airshade coverage` writes for the same network, an independent run — names the floor map's step
 *   it falls in, and that step's legend colour is what the map shows under the cursor; the units switch rewrites it;
 * - the vertical coverage diagram's text is at least 10 px on screen, and a typed azimuth is drawn on the map;
 * - the outage panel's figures agree: no level loses more area than all levels together, and the N−1 table's row
 *   for the failed site repeats the panel's total;
 * - with "Move sites" on, a site can be dragged on the map from a panel other than Sites.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fromArrayBuffer } from 'geotiff';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { runCli } from '../support/run-cli.ts';
import { E2E_LAYOUT_NAME, writeE2eData } from './fixture.ts';
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
/** 1 ft = 0.3048 m exactly (test/REFERENCES.md, units). */
const FT_M = 0.3048;

let dataDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;
/** The CLI's network floor of the app's first network (m AMSL per cell, NaN unseen) and its georeferencing. */
let cliFloor: {
  data: Float32Array;
  width: number;
  originX: number;
  originY: number;
  resX: number;
  resY: number;
};

type Box = { left: number; top: number; right: number; bottom: number };
/** The few members of the page's App (window.airshade) these checks read. */
interface PageSite {
  properties: { id: string };
  geometry: { coordinates: [number, number] };
}
interface PageApp {
  map: {
    map: {
      project(p: [number, number]): { x: number; y: number };
      unproject(p: [number, number]): { lng: number; lat: number };
      getSource(id: string): { getData(): Promise<GeoJSON.FeatureCollection> };
    };
  };
  terrain: { bounds: { west: number; south: number; east: number; north: number } };
  state: { doc: { sites: { features: PageSite[] } } };
  engine: { probe(lon: number, lat: number): Promise<{ floorM: number; floorStep: string }> };
  diagramSvg: string;
}
const overlaps = (a: Box, c: Box) =>
  a.left < c.right && c.left < a.right && a.top < c.bottom && c.top < a.bottom;

/** RGB of the pixels of a small square of the screen around (x, y), decoded in the page. */
async function pixels(x: number, y: number, half = 2): Promise<number[][]> {
  const png = (
    await page.screenshot({ clip: { x: x - half, y: y - half, width: 2 * half + 1, height: 2 * half + 1 } })
  ).toString('base64');
  return page.evaluate(async (data) => {
    const img = document.createElement('img');
    img.src = `data:image/png;base64,${data}`;
    await img.decode();
    const c = document.createElement('canvas');
    c.width = img.naturalWidth;
    c.height = img.naturalHeight;
    const ctx = c.getContext('2d', { willReadFrequently: true })!;
    ctx.drawImage(img, 0, 0);
    const d = ctx.getImageData(0, 0, c.width, c.height).data;
    const out: number[][] = [];
    for (let i = 0; i < d.length; i += 4) out.push([d[i], d[i + 1], d[i + 2]]);
    return out;
  }, png);
}

const rgbOfCss = (css: string) => (css.match(/\d+/g) ?? []).slice(0, 3).map(Number);

beforeAll(async () => {
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-display-'));
  const data = writeE2eData(dataDir);
  // The network the app starts with is the layout whose name says "existing" (app/state.ts): the CLI computes it.
  const out = join(dataDir, 'cli-coverage');
  const cli = await runCli(
    'coverage',
    data.scenarioPath,
    '--layout',
    E2E_LAYOUT_NAME,
    '--out',
    out,
    '--threads',
    '0',
    '--quiet',
  );
  if (cli.code !== 0) throw new Error(`airshade coverage failed: ${cli.err}`);
  const bytes = readFileSync(join(out, 'network-floor.tif'));
  const tiff = await fromArrayBuffer(
    bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength),
  );
  const image = await tiff.getImage();
  const [originX, originY] = image.getOrigin();
  const [resX, resY] = image.getResolution();
  const raster = (await image.readRasters({ interleave: true })) as unknown as Float32Array;
  cliFloor = { data: Float32Array.from(raster), width: image.getWidth(), originX, originY, resX, resY };
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

describe('the display', () => {
  it(
    'fits the study area beside the legend, centres each site symbol on its site, keeps labels apart',
    async () => {
      // Wait for the relief, whose arrival redraws the legend, then for the view to settle.
      await expect.poll(() => page.$$eval('.overlay-relief', (e) => e.length)).toBe(1);
      await page.waitForTimeout(300);
      const v = await page.evaluate(() => {
        const app = (window as unknown as { airshade: PageApp }).airshade;
        const map = app.map.map;
        const at = (lon: number, lat: number) => {
          const p = map.project([lon, lat]);
          const r = document.querySelector('#map')!.getBoundingClientRect();
          return { x: p.x + r.left, y: p.y + r.top };
        };
        const bounds = app.terrain.bounds;
        const box = (e: Element) => {
          const r = e.getBoundingClientRect();
          return { left: r.left, top: r.top, right: r.right, bottom: r.bottom };
        };
        const sites: { id: string; at: { x: number; y: number }; dot: Box; label: Box; shown: boolean }[] =
          app.state.doc.sites.features.map((f: PageSite) => {
            const el = document.querySelector(`[data-site-id="${f.properties.id}"]`)!;
            const dot = box(el.querySelector('.site-dot')!);
            const label = el.querySelector('.site-label')!;
            return {
              id: f.properties.id,
              at: at(f.geometry.coordinates[0], f.geometry.coordinates[1]),
              dot,
              label: box(label),
              shown: getComputedStyle(label).visibility !== 'hidden',
            };
          });
        return {
          se: at(bounds.east, bounds.south),
          legend: box(document.querySelector('#legend')!),
          sites,
          sitesKey: document.querySelector('#legend-sites')?.textContent ?? '',
        };
      });
      saveArtefact('display-first-view.png', await page.screenshot());
      // The study area's south-east corner lies outside the legend box (with a margin of 4 px).
      const corner = { left: v.se.x - 4, top: v.se.y - 4, right: v.se.x + 4, bottom: v.se.y + 4 };
      expect(overlaps(corner, v.legend)).toBe(false);
      for (const s of v.sites) {
        expect(Math.abs((s.dot.left + s.dot.right) / 2 - s.at.x)).toBeLessThan(1);
        expect(Math.abs((s.dot.top + s.dot.bottom) / 2 - s.at.y)).toBeLessThan(1);
      }
      const shown = v.sites.filter((s) => s.shown);
      expect(shown.length).toBeGreaterThan(0);
      for (const [i, s] of shown.entries())
        for (const o of shown.slice(i + 1))
          expect(overlaps(s.label, o.label), `${s.id} / ${o.id}`).toBe(false);
      // The legend says what the site symbols mean.
      expect(v.sitesKey).toContain('existing');
      expect(v.sitesKey).toContain('candidate');
      expect(v.sitesKey).toContain('in the network');
    },
    STEP_MS,
  );

  it(
    'reads out the exact network floor of the cell, names its step, and the map shows that step there',
    async () => {
      await page.click('#tab-coverage');
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      // The floor map alone, fully opaque, over the map's plain background.
      for (const id of ['relief', 'fold', 'gap', 'sites', 'volumes']) await page.uncheck(`#layer-${id}`);
      await page.check('#layer-floor');
      await page.evaluate(() => {
        const r = document.querySelector('[aria-label="Network floor opacity"]') as HTMLInputElement;
        r.value = '1';
        r.dispatchEvent(new Event('change'));
      });
      await expect.poll(() => page.$$eval('#legend-floor .swatch', (e) => e.length)).toBeGreaterThan(1);
      await page.waitForTimeout(500);
      const mapBox = (await page.locator('#map').boundingBox())!;
      let checked = 0;
      // Points across the map until one sits inside a step (not on the edge between two).
      for (let k = 0; k < 40 && checked === 0; k++) {
        const x = Math.round(mapBox.x + mapBox.width * (0.3 + 0.4 * ((k * 0.37) % 1)));
        const y = Math.round(mapBox.y + mapBox.height * (0.3 + 0.4 * ((k * 0.61) % 1)));
        const px = await pixels(x, y);
        const uniform = px.every((p) => p.every((c, j) => Math.abs(c - px[0][j]) <= 1));
        if (!uniform) continue;
        await page.mouse.move(x, y);
        const lonLat = await page.evaluate(
          ([cx, cy]) => {
            const app = (window as unknown as { airshade: PageApp }).airshade;
            const r = document.querySelector('#map')!.getBoundingClientRect();
            const p = app.map.map.unproject([cx - r.left, cy - r.top]);
            return [p.lng, p.lat];
          },
          [x, y],
        );
        await expect.poll(() => page.textContent('#readout')).toContain(lonLat[1] < 0 ? 'S ' : 'N ');
        await page.waitForTimeout(300);
        const text = (await page.textContent('#readout')) ?? '';
        const m = text.match(/network floor ([\d,]+) ft \(map step ([^)]+)\)/);
        if (!m) continue; // not seen here
        const probe = await page.evaluate(
          ([lon, lat]) => (window as unknown as { airshade: PageApp }).airshade.engine.probe(lon, lat),
          lonLat,
        );
        // The read-out's floor is the cell's exact floor, as the CLI computed it (whole metres in both: the
        // footprints keep whole metres), not the altitude of the level it is first seen at.
        const col = Math.floor((lonLat[0] - cliFloor.originX) / cliFloor.resX);
        const row = Math.floor((lonLat[1] - cliFloor.originY) / cliFloor.resY);
        const cliM = cliFloor.data[row * cliFloor.width + col];
        expect(Number.isFinite(cliM)).toBe(true);
        expect(Math.abs(Number(m[1].replace(/,/g, '')) - cliM / FT_M)).toBeLessThanOrEqual(0.5);
        expect(m[2]).toBe(probe.floorStep);
        // The map under the cursor has the colour the legend gives that step.
        const legendRgb = await page.$$eval(
          '#legend-floor .swatch',
          (els, step) => {
            const s = els.find((e) => e.textContent === step);
            return s ? getComputedStyle(s.querySelector('i')!).backgroundColor : '';
          },
          m[2],
        );
        expect(legendRgb).not.toBe('');
        const want = rgbOfCss(legendRgb);
        for (const j of [0, 1, 2]) expect(Math.abs(px[12][j] - want[j])).toBeLessThanOrEqual(2);
        // The units switch writes the read-out again, in metres, from the same figures.
        await page.selectOption('#units', 'metric');
        await expect
          .poll(() => page.textContent('#readout'))
          .toContain(`network floor ${Math.round(cliM).toLocaleString('en')} m (map step ${m[2]})`);
        await page.selectOption('#units', 'aviation');
        checked++;
      }
      expect(checked).toBe(1);
      for (const id of ['relief', 'fold', 'gap', 'sites', 'volumes']) await page.check(`#layer-${id}`);
    },
    STEP_MS,
  );

  it(
    'draws the vertical coverage diagram with text of 10 px or more, and a typed azimuth on the map',
    async () => {
      await page.click('#tab-profile');
      await page.selectOption('#profile-site', 'halvoran-north');
      await page.selectOption('#profile-type', 'psr-compact');
      await page.fill('#profile-az', '90');
      await page.click('#profile-draw');
      await page.waitForSelector('#diagram');
      await page.waitForFunction(() => (document.querySelector('#diagram') as HTMLImageElement).complete);
      const d = await page.evaluate(async () => {
        const app = (window as unknown as { airshade: PageApp }).airshade;
        const svg: string = app.diagramSvg;
        const width = Number(svg.match(/<svg[^>]* width="([\d.]+)"/)![1]);
        const sizes = [...svg.matchAll(/font-size="([\d.]+)"/g)].map((x) => Number(x[1]));
        const shownPx = document.querySelector('#diagram')!.getBoundingClientRect().width;
        const line = (await app.map.map.getSource('azimuth').getData()) as GeoJSON.FeatureCollection;
        const site = app.state.doc.sites.features.find(
          (f: PageSite) => f.properties.id === 'halvoran-north',
        )!;
        return {
          minTextPx: (Math.min(...sizes) * shownPx) / width,
          line: line.features.map((f) => (f.geometry as GeoJSON.LineString).coordinates),
          site: site.geometry.coordinates as [number, number],
        };
      });
      saveArtefact('display-profile.png', await page.screenshot());
      expect(d.minTextPx).toBeGreaterThanOrEqual(10);
      expect(d.line).toHaveLength(1);
      const pts = d.line[0];
      expect(pts[0][0]).toBeCloseTo(d.site[0], 6);
      expect(pts[0][1]).toBeCloseTo(d.site[1], 6);
      // Azimuth 90°: the line heads east (at 41° S a great circle due east bends slightly south).
      const end = pts[pts.length - 1];
      expect(end[0]).toBeGreaterThan(d.site[0] + 0.5);
      expect(Math.abs(end[1] - d.site[1])).toBeLessThan(0.2);
    },
    STEP_MS,
  );

  it(
    'shows outage figures that agree: per level, over all levels, and in the N−1 table',
    async () => {
      await page.click('#tab-outages');
      await page.check('[data-fail="halvoran-north"]');
      await page.waitForSelector('#app[data-outage="1"]', { timeout: STEP_MS });
      await page.click('#run-n1');
      await page.waitForSelector('#n1-table', { timeout: STEP_MS });
      await page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'));
      const num = (t: string) => Number((t.match(/([\d,]+) NM²/) ?? ['', 'NaN'])[1].replace(/,/g, ''));
      const total = num((await page.textContent('#outage-loss')) ?? '');
      const levels = (
        await page.$$eval('#outage-levels tbody tr td:nth-child(2)', (e) => e.map((x) => x.textContent ?? ''))
      ).map(num);
      const n1 = await page.$$eval('#n1-table tbody tr', (rows) =>
        rows.map((r) => [...r.querySelectorAll('td')].map((c) => c.textContent ?? '')),
      );
      const mine = n1.find((r) => r[0] === 'Halvoran North Beacon')!;
      expect(total).toBeGreaterThan(0);
      expect(levels.length).toBeGreaterThan(0);
      for (const a of levels) expect(a).toBeLessThanOrEqual(total);
      expect(Math.max(...levels)).toBeGreaterThan(0);
      expect(num(mine[1])).toBe(total);
      expect(await page.textContent('#outage-weight')).toContain(mine[2]);
      expect(mine[2]).toMatch(/of all demand/);
      await page.uncheck('[data-fail="halvoran-north"]');
      await page.waitForSelector('#app[data-outage="2"]', { timeout: STEP_MS });
    },
    STEP_MS,
  );

  it(
    'moves a site on the map from the Coverage panel with "Move sites" on',
    async () => {
      await page.click('#tab-coverage');
      const before = await page.evaluate(
        () =>
          (window as unknown as { airshade: PageApp }).airshade.state.doc.sites.features.find(
            (f: PageSite) => f.properties.id === 'fell-west',
          )!.geometry.coordinates as number[],
      );
      expect(await page.$eval('[data-site-id="fell-west"]', (e) => e.classList.contains('movable'))).toBe(
        false,
      );
      await page.click('#move-sites');
      expect(await page.isVisible('#move-hint')).toBe(true);
      const box = (await page.locator('[data-site-id="fell-west"] .site-dot').boundingBox())!;
      const x = box.x + box.width / 2;
      const y = box.y + box.height / 2;
      await page.mouse.move(x, y);
      await page.mouse.down();
      await page.mouse.move(x + 15, y + 10, { steps: 5 });
      await page.mouse.move(x + 30, y + 20, { steps: 5 });
      await page.mouse.up();
      await expect
        .poll(() =>
          page.evaluate(
            () =>
              (window as unknown as { airshade: PageApp }).airshade.state.doc.sites.features.find(
                (f: PageSite) => f.properties.id === 'fell-west',
              )!.geometry.coordinates[0] as number,
          ),
        )
        .toBeGreaterThan(before[0]);
      await page.click('#move-sites');
      expect(await page.isVisible('#move-hint')).toBe(false);
      expect(await page.$eval('[data-site-id="fell-west"]', (e) => e.classList.contains('movable'))).toBe(
        false,
      );
      expect(watch.pageErrors).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
    },
    STEP_MS,
  );
});
