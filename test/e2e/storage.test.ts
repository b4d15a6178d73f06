/// <reference lib="dom" />
/**
 * The app's storage, its Content-Security-Policy and its own refusals (issue 13, items 7 and 2), end to end in
 * headless Debian chromium (playwright-core) on the invented open-ocean scenario of test/e2e/fixture.ts:
 * - a load raises no CSP violation, in the page or in any of its workers. The app is served through a small
 *   proxy that adds `report-uri` to the server's policy, so every violation — a worker's too, which the page
 *   cannot listen for — is posted back here; a deliberate `new Function` in the page and in a worker afterwards
 *   checks that this watch does see violations;
 * - a full storage (IndexedDB's put made to throw QuotaExceededError) says why, and its buttons download the
 *   scenario (with the caution, loadable again) and the results (the layers zip);
 * - restored work says how old it is and which data it used (scenario, terrain tiles), and is marked when older
 *   than a day;
 * - a scenario whose analysis grid would not fit (grid.cellArcSec 0.5″) is refused at once with one message naming
 *   grid.cellArcSec and the cell size that would fit; the work stays as it was.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, request, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { unzipSync } from 'fflate';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { CAUTION } from '../../shared/caution.ts';
import { parseScenario } from '../../shared/scenario.ts';
import { E2E_TERRAIN_FILES, writeE2eData } from './fixture.ts';
import { blockOutside, launchBrowser, watchPage, type LaunchedBrowser, type PageWatch } from './harness.ts';

const APP_DIR = new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 180_000;
const REPORT_PATH = '/__csp-report';
const TILE_NAMES = E2E_TERRAIN_FILES.map((f) => f.split('/').pop()!);

let dataDir: string;
let filesDir: string;
let server: { url: string; close(): Promise<void> };
let proxy: Server;
let url: string;
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;
/** The CSP violation reports posted by the browser (page and workers). */
const reports: { 'csp-report'?: Record<string, unknown> }[] = [];
let savedScenario = '';

/**
 * A pass-through to the app's server that adds `report-uri` to its Content-Security-Policy header (the page's and
 * each worker script's policy) and collects the reports.
 */
function startProxy(target: string): Promise<{ server: Server; url: string }> {
  const to = new URL(target);
  const s = createServer((req, res) => {
    if (req.method === 'POST' && req.url === REPORT_PATH) {
      const chunks: Buffer[] = [];
      req.on('data', (c: Buffer) => chunks.push(c));
      req.on('end', () => {
        try {
          reports.push(JSON.parse(Buffer.concat(chunks).toString('utf8')));
        } catch {
          reports.push({ 'csp-report': { unreadable: Buffer.concat(chunks).toString('utf8') } });
        }
        res.writeHead(204).end();
      });
      return;
    }
    const up = request(
      { host: to.hostname, port: to.port, path: req.url, method: req.method, headers: req.headers },
      (r) => {
        const headers = { ...r.headers };
        const csp = headers['content-security-policy'];
        if (typeof csp === 'string') headers['content-security-policy'] = `${csp}; report-uri ${REPORT_PATH}`;
        res.writeHead(r.statusCode ?? 502, headers);
        r.pipe(res);
      },
    );
    up.on('error', () => res.writeHead(502).end());
    req.pipe(up);
  });
  return new Promise((ok) =>
    s.listen(0, '127.0.0.1', () =>
      ok({ server: s, url: `http://127.0.0.1:${(s.address() as { port: number }).port}/` }),
    ),
  );
}

const message = async () => (await page.textContent('#message')) ?? '';
const notBusy = () =>
  page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'), undefined, {
    timeout: STEP_MS,
  });
async function siteRows(): Promise<string[]> {
  await page.click('#tab-sites');
  return page.$$eval('#site-table tbody tr', (rows) => rows.map((r) => r.getAttribute('data-row') ?? ''));
}
const violations = () => reports.map((r) => JSON.stringify(r['csp-report'] ?? r));

beforeAll(async () => {
  dataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-storage-data-'));
  filesDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-storage-files-'));
  writeE2eData(dataDir);
  server = await startServer({ root: APP_DIR, dataDir });
  ({ server: proxy, url } = await startProxy(server.url));
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  await blockOutside(b.context);
  watch = await watchPage(page);
  await b.context.addInitScript(`window.__cspEvents = [];
    document.addEventListener('securitypolicyviolation', (e) =>
      window.__cspEvents.push(e.violatedDirective + ' ' + e.blockedURI + ' ' + e.sourceFile + ':' + e.lineNumber));`);
}, STEP_MS);

afterAll(async () => {
  await b?.close();
  await new Promise((ok) => (proxy ? proxy.close(() => ok(undefined)) : ok(undefined)));
  await server?.close();
  for (const d of [dataDir, filesDir]) if (d) rmSync(d, { recursive: true, force: true });
});

describe("the app's storage, CSP and refusals", () => {
  it(
    'loads and computes with no Content-Security-Policy violation, in the page or its workers',
    async () => {
      await page.goto(url);
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      await page.click('#tab-coverage');
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await notBusy();
      // Reports are posted by the browser shortly after the violation.
      await page.waitForTimeout(1500);
      expect(violations()).toEqual([]);
      expect(await page.evaluate('window.__cspEvents')).toEqual([]);
      expect(watch.consoleErrors.filter((m) => /Content Security Policy|unsafe-eval/i.test(m))).toEqual([]);

      // The watch sees what it should: a string handed to setTimeout, in the page and in a worker, is code from a
      // string like zod's probe, and is reported. (Code evaluated through the debugger itself is exempt from CSP.)
      const workers = page.workers().filter((w) => /engine-worker/.test(w.url()));
      expect(workers).toHaveLength(1);
      await page.evaluate(() => setTimeout('void 0', 0));
      await workers[0].evaluate(() => setTimeout('void 0', 0));
      await expect
        .poll(
          () =>
            reports.map((r) => String(r['csp-report']?.['source-file'] ?? r['csp-report']?.['document-uri'])),
          {
            timeout: 10_000,
          },
        )
        .toEqual(expect.arrayContaining([expect.stringContaining('engine-worker')]));
      expect(reports.length).toBeGreaterThanOrEqual(2);
      expect(reports.every((r) => r['csp-report']?.['violated-directive'] === 'script-src')).toBe(true);
      reports.length = 0;
    },
    STEP_MS,
  );

  it(
    'a full storage says why and offers the scenario and the results as files, which load again',
    async () => {
      const before = await siteRows();
      // Every IndexedDB write of the page now fails as a full storage does.
      await page.evaluate(() => {
        const w = window as unknown as { __realPut?: unknown };
        w.__realPut = IDBObjectStore.prototype.put;
        IDBObjectStore.prototype.put = function () {
          throw new DOMException('The quota has been exceeded.', 'QuotaExceededError');
        };
      });
      await page.selectOption('#units', 'metric'); // a change: the work is saved
      await page.waitForSelector('#message .msg.error', { timeout: 10_000 });
      const text = await message();
      expect(text).toContain(
        'Your work could not be saved in this browser: its storage for this site is full',
      );
      expect(text).toContain('QuotaExceededError');
      expect(text).toContain('Nothing is lost while this page stays open');
      expect(await page.isVisible('#unsaved')).toBe(true);
      expect(await page.getAttribute('#app', 'data-unsaved')).toBe('quota');

      const [scenarioFile] = await Promise.all([
        page.waitForEvent('download'),
        page.click('#message button:has-text("Download the scenario")'),
      ]);
      savedScenario = readFileSync((await scenarioFile.path())!, 'utf8');
      const doc = JSON.parse(savedScenario);
      expect(doc.caution).toBe(CAUTION);
      expect(doc.provenance).toBeTruthy();
      // What the planner entered is all in it: the sites, and the file loads as a scenario.
      const s = parseScenario(doc, scenarioFile.suggestedFilename());
      expect(s.sites.map((f) => f.properties.id).sort()).toEqual([...before].sort());

      const [zipFile] = await Promise.all([
        page.waitForEvent('download'),
        page.click('#message button:has-text("Download the results")'),
      ]);
      const zip = unzipSync(new Uint8Array(readFileSync((await zipFile.path())!)));
      const names = Object.keys(zip);
      expect(names.filter((n) => /^coverage-FL\d{3}\.geojson$/.test(n)).length).toBe(s.flightLevels.length);
      expect(names).toContain('summary.json');
      const summary = JSON.parse(new TextDecoder().decode(zip['summary.json']));
      expect(summary.caution).toBe(CAUTION);

      // The header's button brings the offer back after the message has gone; a save that works again clears it.
      await page.click('#message .close');
      await page.click('#unsaved');
      await page.waitForSelector('#message button:has-text("Download the scenario")');
      await page.evaluate(() => {
        IDBObjectStore.prototype.put = (
          window as unknown as { __realPut: typeof IDBObjectStore.prototype.put }
        ).__realPut;
      });
      await page.selectOption('#units', 'aviation');
      await page.waitForSelector('#unsaved', { state: 'hidden', timeout: 10_000 });
      expect(await page.getAttribute('#app', 'data-unsaved')).toBeNull();
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'restored work says how old it is and which data it used, and is marked when older than a day',
    async () => {
      await page.evaluate(() => new Promise((r) => setTimeout(r, 800))); // autosave is debounced
      await page.reload();
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      const name = JSON.parse(savedScenario).name as string;
      let text = await message();
      expect(text).toContain(`Restored your work from the last visit (${name})`);
      expect(text).toMatch(
        /Saved less than a minute ago \(\d{4}-\d\d-\d\d \d\d:\d\d UTC\); scenario from demo-scenario\.json/,
      );
      expect(text).toContain(`on 2 terrain tiles: ${TILE_NAMES.join(', ')}`);
      expect(text).not.toContain('more than a day old');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await notBusy();
      expect(await message()).toContain('and its coverage, computed again');
      expect(await message()).toContain('Saved less than a minute ago');

      // The same work, as if saved three days ago.
      await page.evaluate(() => new Promise((r) => setTimeout(r, 800)));
      const threeDaysAgo = new Date(Date.now() - 3 * 86400_000 - 60_000).toISOString();
      await page.evaluate(
        (at) =>
          new Promise<void>((done, fail) => {
            const open = indexedDB.open('keyval-store');
            open.onerror = () => fail(open.error);
            open.onsuccess = () => {
              const store = open.result.transaction('keyval', 'readwrite').objectStore('keyval');
              const get = store.get('airshade-work');
              get.onsuccess = () => {
                const put = store.put({ ...get.result, savedAt: at }, 'airshade-work');
                put.onsuccess = () => done();
                put.onerror = () => fail(put.error);
              };
            };
          }),
        threeDaysAgo,
      );
      await page.reload();
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      text = await message();
      expect(await page.getAttribute('#app', 'data-restored-at')).toBe(threeDaysAgo);
      expect(text).toContain('Saved 3 days ago');
      expect(text).toContain('This work is more than a day old: check that its scenario and terrain');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await notBusy();
      expect(await message()).toContain('Saved 3 days ago');
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'a scenario with a tiny grid.cellArcSec is refused at once, naming the field and what fits; the work stays',
    async () => {
      const before = await siteRows();
      const tiny = JSON.parse(savedScenario);
      tiny.name = 'Tiny cells (refused)';
      tiny.grid = { ...tiny.grid, cellArcSec: 0.5 };
      delete tiny.provenance;
      const path = join(filesDir, 'tiny-cells.scenario.json');
      writeFileSync(path, JSON.stringify(tiny, null, 2));
      await page.click('#tab-files');
      await page.setInputFiles('#scenario-file', path);
      await page.waitForSelector('#message .msg.error', { timeout: 30_000 });
      const text = await message();
      expect(text).toContain('The scenario was not loaded; your work is unchanged.');
      expect(text).toMatch(/grid\.cellArcSec \(0\.5″: 10800 × 7200 cells\)/);
      expect(text).toMatch(/found a run that needs about \d+\.\d GiB/);
      expect(text).toMatch(/grid\.cellArcSec of \d+″ or coarser would fit/);
      expect(await page.textContent('#scenario-name')).not.toContain('Tiny cells');
      expect(await siteRows()).toEqual(before);
      expect(watch.pageErrors).toEqual([]);
      expect(violations()).toEqual([]);
    },
    STEP_MS,
  );
});
