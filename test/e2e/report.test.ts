/// <reference lib="dom" />
/**
 * The app's safety-case report (app/report.ts → worker/runtime/engine.ts `report` → io/report-model.ts, io/report-html.ts)
 * against the CLI on the same scenario file (test/e2e/fixture.ts, invented, over the open South Atlantic): coverage
 * and a plan made in the app, its report's per-volume figures equal `airshade coverage`'s summary.json and
 * `airshade report`'s, its N−1 rows `airshade outage`'s outage.json, its plan figures `airshade plan`'s plan.json
 * (the CLI run in-process through its command functions, test/support/run-cli.ts). The print window opens with no
 * request leaving the machine and no Content-Security-Policy refusal, and prints to PDF on A4 and A3. Then a reload
 * brings the coverage back by itself: the same figures on screen.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer } from '../../bin/serve.mjs';
import { CAUTION } from '../../shared/caution.ts';
import { escapeXml } from '../../worker/io/diagram-svg.ts';
import { runCli } from '../support/run-cli.ts';
import { E2E_LAYOUTS, E2E_LAYOUT_NAME, writeE2eData, type E2eData } from './fixture.ts';
import {
  blockOutside,
  launchBrowser,
  saveArtefact,
  watchPage,
  type LaunchedBrowser,
  type OutsideBlock,
  type PageWatch,
} from './harness.ts';

const APP_DIR = new URL('../../dist/app/', import.meta.url).pathname;
const STEP_MS = 180_000;

let data: E2eData;
let outDir: string;
let server: { url: string; close(): Promise<void> };
let b: LaunchedBrowser;
let page: Page;
let watch: PageWatch;
let outside: OutsideBlock;
/** Console errors and page errors of windows the page opens (the print window). */
const popupErrors: string[] = [];

/** The first match of `pattern` in the text (its first group with `group`). */
function element(html: string, pattern: RegExp, group = 0): string {
  const m = pattern.exec(html);
  if (!m) throw new Error(`no match for ${pattern}`);
  return m[group];
}

/** The data-value numbers of the table row `<tr …attrs…>…</tr>`. */
function rowValues(html: string, attrs: string): number[] {
  const row = element(html, new RegExp(`<tr ${attrs}[^>]*>(.*?)</tr>`, 's'));
  return [...row.matchAll(/data-value="([^"]*)"/g)].map((m) => Number(m[1]));
}

/**
 * The same figures, computed by the app in the browser and by the CLI in Node: equal but for the last bits of the
 * engines' Math functions. Chromium 156.0.8078.114's V8 and Node 20's return different last bits for about 4 % of
 * arguments of Math.sin, cos, asin, exp, log … (measured on 20 000 arguments each), which the cell areas' sums
 * carry (11757.556874235064 against 11757.55687423488 km²). Relative 1e-12 is far above that, far below any
 * figure's shown precision.
 */
function expectSameFigures(app: readonly number[], cli: readonly number[], what: string): void {
  expect(app.length, what).toBe(cli.length);
  app.forEach((a, i) => {
    const b = cli[i];
    if (Number.isNaN(b)) expect(a, `${what}[${i}]`).toBeNaN();
    else
      expect(Math.abs(a - b), `${what}[${i}]: ${a} against ${b}`).toBeLessThanOrEqual(
        1e-12 * Math.max(1, Math.abs(b)),
      );
  });
}

const table = (html: string, name: string) =>
  element(html, new RegExp(`<table[^>]*data-table="${name}">.*?</table>`, 's'));
const readJson = (path: string) => JSON.parse(readFileSync(path, 'utf8'));

async function cli(...argv: string[]): Promise<void> {
  const r = await runCli(...argv, '--threads', '0', '--quiet');
  expect(r.err).toBe('');
  expect(r.code).toBe(0);
}

const notBusy = () =>
  page.waitForFunction(() => !document.querySelector('#app')!.hasAttribute('data-busy'), undefined, {
    timeout: STEP_MS,
  });

beforeAll(async () => {
  data = writeE2eData(mkdtempSync(join(tmpdir(), 'airshade-e2e-report-data-')));
  outDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-report-out-'));
  server = await startServer({ root: APP_DIR, dataDir: data.dir });
  b = await launchBrowser({ preserveDrawingBuffer: false });
  page = b.page;
  outside = await blockOutside(b.context);
  watch = await watchPage(page);
  b.context.on('page', (p) => {
    if (p === page) return;
    p.on('console', (m) => {
      if (m.type() === 'error' || m.type() === 'warning') popupErrors.push(`${m.type()}: ${m.text()}`);
    });
    p.on('pageerror', (e) => popupErrors.push(`pageerror: ${e.message}`));
  });
}, STEP_MS);

afterAll(async () => {
  await b?.close();
  await server?.close();
  if (data) rmSync(data.dir, { recursive: true, force: true });
  if (outDir) rmSync(outDir, { recursive: true, force: true });
});

describe("the app's report against the CLI's, and results back after a reload", () => {
  let appHtml = '';
  let made: { fileName: string; html: string } = { fileName: '', html: '' };

  it(
    'runs coverage and a plan in the app, and its report holds the figures of airshade coverage, outage, plan and report',
    async () => {
      await page.goto(server.url);
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      // The app starts on the scenario's first layout: the CLI runs the same one by name.
      type Ref = { siteId: string; typeId: string };
      const key = (l: Ref[]) => l.map((r) => `${r.siteId}/${r.typeId}`).sort();
      const network = (await page.evaluate('window.airshade.state.network')) as Ref[];
      expect(key(network)).toEqual(key(E2E_LAYOUTS[0].sensors as Ref[]));
      await page.click('#tab-coverage');
      await page.click('#run-coverage');
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await notBusy();
      // The plan as the Plan panel makes it by default: the scenario's budget, the network's sensors at existing
      // sites kept, the default work limit — `airshade plan --keep LAYOUT` with the scenario's budget.
      await page.click('#tab-plan');
      expect(await page.isChecked('#plan-keep')).toBe(true);
      await page.click('#run-plan');
      await page.waitForSelector('#plan-cost', { timeout: STEP_MS });
      await notBusy();

      const r = (await page.evaluate(
        '(async () => { const r = await window.airshadeReport.make("A4"); return r && { fileName: r.fileName, html: r.html }; })()',
      )) as { fileName: string; html: string } | null;
      expect(r).not.toBeNull();
      made = r!;
      appHtml = made.html;
      saveArtefact('report/app-report.html', appHtml);
      expect(made.fileName).toMatch(/^airshade-end-to-end-demo-[a-z-]*-report\.html$/);
      expect(appHtml.startsWith('<!DOCTYPE html>')).toBe(true);
      expect(appHtml).toContain(escapeXml(CAUTION));
      expect(appHtml).toContain('the web app: report (--paper A4)');
      expect(appHtml).not.toContain('airshade app report');

      const s = data.scenarioPath;
      await cli('coverage', s, '--layout', E2E_LAYOUT_NAME, '--out', join(outDir, 'cov'));
      await cli('outage', s, '--layout', E2E_LAYOUT_NAME, '--out', join(outDir, 'out'));
      await cli('plan', s, '--keep', E2E_LAYOUT_NAME, '--out', join(outDir, 'plan'));
      const planPath = join(outDir, 'plan', 'plan.json');
      await cli(
        'report',
        s,
        '--layout',
        E2E_LAYOUT_NAME,
        '--plan',
        planPath,
        '--out',
        join(outDir, 'r.html'),
      );
      const summary = readJson(join(outDir, 'cov', 'summary.json'));
      const losses = readJson(join(outDir, 'out', 'outage.json')).losses as {
        siteId: string;
        demandWeightLost: number;
        areaKm2Lost: number;
      }[];
      const plan = readJson(planPath);
      const cliHtml = readFileSync(join(outDir, 'r.html'), 'utf8');

      // Per volume and level: area, covered %, meets-requirement % and km², short km².
      const rows = table(appHtml, 'volumes').match(/<tr data-volume=[^>]*>/g)!;
      expect(rows).toHaveLength(summary.volumes.length);
      expect(summary.volumes.length).toBeGreaterThan(0);
      for (const v of summary.volumes) {
        const attrs = `data-volume="${v.volumeId}" data-level="${v.flightLevel}"`;
        const app = rowValues(table(appHtml, 'volumes'), attrs);
        expectSameFigures(
          app.slice(0, 4),
          [v.areaKm2, v.coveredPct, v.meetsRequirementPct, v.meetsRequirementKm2],
          attrs,
        );
        expectSameFigures(app, rowValues(table(cliHtml, 'volumes'), attrs), `report ${attrs}`);
      }
      // N−1: the same sites in the same order, with the same losses.
      const n1 = table(appHtml, 'outage');
      expect([...n1.matchAll(/<tr data-site="([^"]+)"/g)].map((m) => m[1])).toEqual(
        losses.map((l) => l.siteId),
      );
      for (const l of losses)
        expectSameFigures(
          rowValues(n1, `data-site="${l.siteId}"`),
          [l.demandWeightLost, l.areaKm2Lost],
          `N−1 ${l.siteId}`,
        );
      expect(losses.some((l) => l.demandWeightLost > 0)).toBe(true);
      // The plan: cost, lower bound, gap, sensors and the plan's own per-volume coverage.
      const ps = table(appHtml, 'plan-summary');
      const spans = [...ps.matchAll(/<span data-value="([^"]*)">/g)].map((m) => Number(m[1]));
      expect(spans).toEqual([plan.cost, plan.lowerBound, plan.gapPct]);
      expect(
        [...table(appHtml, 'plan-entries').matchAll(/<tr data-site="([^"]+)" data-type="([^"]+)"/g)].map(
          (m) => [m[1], m[2]],
        ),
      ).toEqual(plan.entries.map((e: { siteId: string; typeId: string }) => [e.siteId, e.typeId]));
      for (const v of plan.volumes) {
        const attrs = `data-volume="${v.volumeId}" data-level="${v.flightLevel}"`;
        expectSameFigures(
          rowValues(table(appHtml, 'plan-volumes'), attrs),
          rowValues(table(cliHtml, 'plan-volumes'), attrs),
          `plan ${attrs}`,
        );
      }
      expect(appHtml).toContain('Made in the app&apos;s Plan panel');
      // One map per level and the floor, as the CLI's.
      const maps = (html: string) =>
        [...html.matchAll(/<section class="map-page" data-map="([^"]+)"/g)].map((m) => m[1]);
      expect(maps(appHtml)).toEqual(maps(cliHtml));
      expect(maps(appHtml)).toEqual(['FL050', 'FL100', 'FL200', 'floor']);
      expect(watch.pageErrors).toEqual([]);
    },
    STEP_MS,
  );

  it(
    'saves the report as one file and opens it for printing with nothing from outside and no policy refusal; A4 and A3 PDFs',
    async () => {
      // The block the Files panel will show, put on the page as it is built.
      await page.evaluate(`(() => {
        const box = document.createElement('div');
        box.id = 'report-test-box';
        box.append(window.airshadeReport.section());
        document.body.append(box);
      })()`);
      const [download] = await Promise.all([page.waitForEvent('download'), page.click('#report-save')]);
      expect(download.suggestedFilename()).toBe(made.fileName);
      const saved = readFileSync((await download.path())!, 'utf8');
      // The same document, made again: only the time of the run differs.
      const undated = (x: string) => x.replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, 'T');
      expect(undated(saved)).toBe(undated(appHtml));
      expect(saved).toMatch(/<style>[\s\S]*@page/);

      for (const paper of ['A4', 'A3'] as const) {
        await page.selectOption('#report-paper', paper);
        const [popup] = await Promise.all([b.context.waitForEvent('page'), page.click('#report-print')]);
        await popup.waitForFunction(() => document.adoptedStyleSheets.length === 1, undefined, {
          timeout: STEP_MS,
        });
        expect(popup.url()).toMatch(/^blob:http:\/\/127\.0\.0\.1:\d+\//);
        // The report's rules apply: the title page's caution box and the tables are styled.
        const styled = await popup.evaluate(() => ({
          collapse: getComputedStyle(document.querySelector('table.grid')!).borderCollapse,
          rules: [...document.adoptedStyleSheets[0].cssRules].some((r) => r.cssText.startsWith('@page')),
        }));
        expect(styled).toEqual({ collapse: 'collapse', rules: true });
        const pdf = await popup.pdf({ preferCSSPageSize: true, printBackground: true });
        saveArtefact(`report/app-report-${paper}.pdf`, pdf);
        const text = pdf.toString('latin1');
        expect(text.startsWith('%PDF-')).toBe(true);
        // Page size in points (ISO 216: A4 210 × 297 mm, A3 297 × 420 mm; 1 pt = 25.4/72 mm).
        const box = text.match(/\/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]/)!;
        const mm = [Number(box[1]), Number(box[2])].map((pt) => (pt * 25.4) / 72);
        const want = paper === 'A4' ? [210, 297] : [297, 420];
        expect(mm[0]).toBeCloseTo(want[0], 0);
        expect(mm[1]).toBeCloseTo(want[1], 0);
        const pages = text.match(/\/Type\s*\/Page[^s]/g)!.length;
        expect(pages).toBeGreaterThanOrEqual(6); // cover, assumptions, three levels, the floor, tables
        await popup.close();
      }
      expect(popupErrors).toEqual([]);
      expect(outside.blocked).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
      await page.evaluate(() => document.querySelector('#report-test-box')?.remove());
    },
    STEP_MS,
  );

  it(
    'brings the coverage back after a reload, with progress and a message: the same figures on screen',
    async () => {
      await page.click('#tab-coverage');
      const figures = () =>
        page.$$eval('#coverage-table tbody tr', (rows) => rows.map((r) => r.textContent ?? ''));
      const before = await figures();
      expect(before.length).toBeGreaterThan(0);
      await page.evaluate(() => new Promise((r) => setTimeout(r, 800))); // autosave is debounced
      const t0 = Date.now();
      await page.reload();
      await page.waitForSelector('#app[data-ready="true"]', { timeout: STEP_MS });
      expect(await page.textContent('#message')).toMatch(/Restored your work .* computed again/);
      await page.waitForSelector('#app[data-coverage="1"]', { timeout: STEP_MS });
      await notBusy();
      const restoredMs = Date.now() - t0;
      expect(await page.textContent('#message')).toContain('and its coverage, computed again');
      await page.click('#tab-coverage');
      expect(await figures()).toEqual(before);
      saveArtefact('report/restore.json', JSON.stringify({ reloadToCoverageMs: restoredMs }) + '\n');
      console.log(`reload to restored coverage: ${restoredMs} ms`);
      expect(watch.pageErrors).toEqual([]);
      expect(watch.consoleErrors).toEqual([]);
    },
    STEP_MS,
  );
});
