/**
 * The web app on the demo, in headless Debian chromium (software WebGL, no GPU), as a user meets it: first visit
 * (the app shell, then the demo's 25 tiles fetched and decoded and the relief drawn), coverage of the demo's
 * network from the press of the button to the layer on screen, outage toggles from the click to the redrawn map,
 * a plan over every candidate, and a reload that restores the work from IndexedDB. The main thread's long tasks
 * (> 50 ms, Long Tasks API) are counted in each window; memory of the page and its workers from
 * performance.measureUserAgentSpecificMemory (the page is cross-origin isolated).
 *
 *   npm run build:app && npx tsx bench/app.ts        (writes bench/out/app-results.json)
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { startServer } from '../bin/serve.mjs';
import { launchBrowser, longTasks, watchPage } from '../test/e2e/harness.ts';

const server = await startServer({ root: 'dist/app', dataDir: 'data' });
const b = await launchBrowser({ preserveDrawingBuffer: false });
const watch = await watchPage(b.page);
const page = b.page;
const now = () => page.evaluate('performance.now()') as Promise<number>;
const blocks = async (from: number, to: number) =>
  (await longTasks(page)).filter((t) => t.start >= from && t.start <= to).map((t) => Math.round(t.duration));
const worst = (xs: number[]) => (xs.length ? Math.max(...xs) : 0);
const out: Record<string, unknown> = {};

const t0 = Date.now();
await page.goto(server.url);
await page.waitForSelector('#app[data-ready="true"]', { timeout: 300_000 });
const m = (await page.evaluate('window.airshade.metrics')) as Record<string, unknown>;
out.firstVisit = { readyMs: Date.now() - t0, shellMs: Math.round(m.shellMs as number), demo: m.demoMs };

await page.click('#tab-coverage');
let a = await now();
await page.click('#run-coverage');
await page.waitForSelector('#app[data-coverage="1"]', { timeout: 300_000 });
let z = await now();
out.coverage = { visibleMs: Math.round(z - a), longTasksMs: await blocks(a, z) };

await page.click('#tab-outages');
const ids = (await page.$$eval('[data-fail]', (e) => e.map((x) => x.getAttribute('data-fail')))) as string[];
a = await now();
for (const id of ids) {
  for (let k = 0; k < 2; k++) {
    const n = Number((await page.getAttribute('#app', 'data-outage')) ?? 0);
    await page.click(`[data-fail="${id}"]`);
    await page.waitForSelector(`#app[data-outage="${n + 1}"]`);
  }
}
z = await now();
const redraw = ((await page.evaluate('window.airshade.metrics.outageRedrawMs')) as number[]).map(Math.round);
const sorted = [...redraw].sort((x, y) => x - y);
out.outage = {
  toggles: redraw.length,
  redrawMs: redraw,
  medianMs: sorted[Math.floor(sorted.length / 2)],
  maxMs: worst(redraw),
  longTasksMs: await blocks(a, z),
};

await page.click('#tab-plan');
a = await now();
await page.click('#run-plan');
await page.waitForSelector('#plan-cost', { timeout: 900_000 });
z = await now();
out.plan = {
  ms: Math.round(z - a),
  cost: await page.textContent('#plan-cost'),
  longTasksMs: await blocks(a, z),
};
out.memory = await page.evaluate(`(async () => {
  const r = await performance.measureUserAgentSpecificMemory();
  return { totalMiB: Math.round(r.bytes / 2 ** 20), parts: r.breakdown.filter((x) => x.bytes > 2 ** 20)
    .map((x) => ({ MiB: Math.round(x.bytes / 2 ** 20), where: x.attribution.map((y) => y.scope).join(',') || 'shared' })) };
})()`);

await page.evaluate('new Promise((r) => setTimeout(r, 1000))'); // autosave
const r0 = Date.now();
await page.reload();
await page.waitForSelector('#app[data-ready="true"]', { timeout: 300_000 });
out.reload = {
  readyMs: Date.now() - r0,
  restored: (await page.textContent('#message'))?.includes('Restored'),
};
out.errors = { console: watch.consoleErrors, page: watch.pageErrors };

await b.close();
await server.close();
mkdirSync('bench/out', { recursive: true });
writeFileSync('bench/out/app-results.json', JSON.stringify(out, null, 2) + '\n');
const o = out as Record<string, Record<string, unknown>>;
console.log('web app on the demo (headless chromium, software WebGL):');
console.log(
  `  first visit: app shell ${o.firstVisit.shellMs} ms, demo ready ${o.firstVisit.readyMs} ms`,
  o.firstVisit.demo,
);
console.log(
  `  coverage visible ${o.coverage.visibleMs} ms after run; worst long task ${worst(o.coverage.longTasksMs as number[])} ms`,
);
console.log(
  `  outage redraw: median ${o.outage.medianMs} ms, max ${o.outage.maxMs} ms over ${o.outage.toggles} toggles; worst long task ${worst(o.outage.longTasksMs as number[])} ms`,
);
console.log(
  `  plan over every candidate: ${o.plan.ms} ms, cost ${o.plan.cost}; worst long task ${worst(o.plan.longTasksMs as number[])} ms`,
);
console.log(
  `  memory (page + workers): ${(o.memory as { totalMiB: number }).totalMiB} MiB; reload restored in ${o.reload.readyMs} ms`,
);
