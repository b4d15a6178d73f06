/**
 * Benchmark of the planner (worker/core/plan.ts) on a synthetic instance of the size the issue names: 200
 * candidates × 1 000 000 demand points. Seeded, so every run solves the same instance:
 * - demand points are the cells of a 1000 × 1000 grid; weight = cell area (shrinking slowly with the row, as
 *   cells of a lon/lat grid do) × volume weight;
 * - an en-route volume over the whole grid asks secondary ≥ 2; three terminal discs ask primary ≥ 1 and
 *   secondary ≥ 2 with weight 3; a diagonal corridor asks any ≥ 1, primary ≥ 2 and secondary ≥ 2 (weight 2);
 * - 100 sites at seeded positions (10 existing, cost 0), each offering a primary (radius 90–140 cells) and a
 *   secondary (radius 150–230 cells) type: 200 candidates, each covering the disc of cells around its site;
 * - the existing sites' secondary sensors are forced in.
 * Each run is a child process (so each peak memory is its own): it builds the instance, then times solvePlan.
 * Prints every run, then the best and mean ± sd, and whether every run gave the same plan (the planner stops on
 * work counts, not on the clock, so it should, however busy the machine).
 *
 *   npx tsx bench/plan.ts                 (2 runs, cover mode)
 *   npx tsx bench/plan.ts --runs 3
 *   npx tsx bench/plan.ts --budget 400    (budget mode: the most demand within 400)
 *   npx tsx bench/plan.ts --load 2        (odd runs with 2 threads spinning beside the solver: the same plan?)
 */
import { spawnSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { resolve } from 'node:path';
import { Worker } from 'node:worker_threads';
import { solvePlan, type PlanInstance } from '../worker/core/plan.ts';
import { mulberry32 } from '../test/support/bumps.ts';

const GRID = 1000;

function disc(cx: number, cy: number, r: number): Uint32Array {
  const out: number[] = [];
  const r2 = r * r;
  for (let y = Math.max(0, Math.ceil(cy - r)); y <= Math.min(GRID - 1, Math.floor(cy + r)); y++) {
    const dy = y - cy;
    const half = Math.sqrt(Math.max(0, r2 - dy * dy));
    const x0 = Math.max(0, Math.ceil(cx - half));
    const x1 = Math.min(GRID - 1, Math.floor(cx + half));
    for (let x = x0; x <= x1; x++) out.push(y * GRID + x);
  }
  return Uint32Array.from(out);
}

export function benchInstance(seed = 20_240_611): PlanInstance {
  const rnd = mulberry32(seed);
  const n = GRID * GRID;
  const weight = new Float64Array(n);
  const reqAny = new Uint8Array(n);
  const reqPrimary = new Uint8Array(n);
  const reqSecondary = new Uint8Array(n).fill(2);
  const terminals = [0, 1, 2].map(() => ({ x: 150 + 700 * rnd(), y: 150 + 700 * rnd(), r: 60 + 40 * rnd() }));
  for (let y = 0; y < GRID; y++) {
    const area = Math.cos(((40 + (y / GRID) * 8) * Math.PI) / 180); // cell area ∝ cos(latitude)
    for (let x = 0; x < GRID; x++) {
      const p = y * GRID + x;
      let w = 1;
      for (const t of terminals) {
        if ((x - t.x) ** 2 + (y - t.y) ** 2 <= t.r ** 2) {
          reqPrimary[p] = 1;
          w = 3;
        }
      }
      if (Math.abs(y - 0.6 * x - 200) < 25) {
        reqAny[p] = 1;
        reqPrimary[p] = 2;
        w = Math.max(w, 2);
      }
      weight[p] = area * w;
    }
  }
  const sites: PlanInstance['sites'] = [];
  const candidates: PlanInstance['candidates'] = [];
  const forced: number[] = [];
  for (let s = 0; s < 100; s++) {
    const x = GRID * rnd();
    const y = GRID * rnd();
    const existing = s % 10 === 0;
    sites.push({ id: `site-${String(s).padStart(3, '0')}`, cost: Math.round(5 + 15 * rnd()), existing });
    candidates.push({
      siteIndex: s,
      typeId: 'primary-a',
      kind: 'primary',
      cost: Math.round(8 + 7 * rnd()),
      covers: disc(x, y, 90 + 50 * rnd()),
    });
    if (existing) forced.push(candidates.length);
    candidates.push({
      siteIndex: s,
      typeId: 'secondary-a',
      kind: 'secondary',
      cost: Math.round(3 + 3 * rnd()),
      covers: disc(x, y, 150 + 80 * rnd()),
    });
  }
  return {
    sites,
    candidates,
    points: { count: n, weight, reqAny, reqPrimary, reqSecondary },
    forced,
  };
}

interface Run {
  planS: number;
  buildS: number;
  rssBeforeMiB: number;
  peakRssMiB: number;
  result: {
    cost: number;
    lowerBound: number;
    gapPct: number;
    coveredWeight: number;
    weightUpperBound: number;
    chosen: number;
    chosenList: string;
    groups: number;
    method: string;
    solverStop: string;
  };
  busyThreads: number;
  stageMs: Record<string, number>;
  log: string[];
}

async function child(): Promise<void> {
  const t0 = performance.now();
  const inst = benchInstance();
  const b = process.argv.indexOf('--budget');
  if (b > 0) inst.budget = Number(process.argv[b + 1]);
  const buildS = (performance.now() - t0) / 1000;
  const rssBeforeMiB = process.memoryUsage().rss / 2 ** 20;
  const l = process.argv.indexOf('--busy');
  const busy = Array.from(
    { length: l > 0 ? Number(process.argv[l + 1]) : 0 },
    () => new Worker('for (;;) {}', { eval: true }),
  );
  const t1 = performance.now();
  const r = await solvePlan(inst);
  const planS = (performance.now() - t1) / 1000;
  await Promise.all(busy.map((w) => w.terminate()));
  const run: Run = {
    planS,
    buildS,
    rssBeforeMiB,
    peakRssMiB: process.resourceUsage().maxRSS / 1024,
    result: {
      cost: r.cost,
      lowerBound: r.lowerBound,
      gapPct: r.gapPct,
      coveredWeight: r.coveredWeight,
      weightUpperBound: r.weightUpperBound,
      chosen: r.chosen.length,
      chosenList: r.chosen.join(','),
      groups: r.groups,
      method: r.method,
      solverStop: r.solverStop,
    },
    busyThreads: busy.length,
    stageMs: r.stageMs,
    log: r.log,
  };
  process.stdout.write(JSON.stringify(run));
}

function main(): void {
  const runsArg = process.argv.indexOf('--runs');
  const runs = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 2;
  const budgetArg = process.argv[process.argv.indexOf('--budget') + 1];
  const loadArg = process.argv.indexOf('--load');
  const load = loadArg > 0 ? Number(process.argv[loadArg + 1]) : 0;
  const covers = benchInstance().candidates.reduce((a, c) => a + c.covers.length, 0);
  process.stderr.write(
    `plan bench: 200 candidates × 1 000 000 points (${covers} cover entries), ${runs} runs, ` +
      `load average ${loadavg()[0].toFixed(2)}\n`,
  );
  const all: Run[] = [];
  for (let i = 0; i < runs; i++) {
    const extra = process.argv.includes('--budget') ? ['--budget', budgetArg] : [];
    if (load > 0 && i % 2 === 0) extra.push('--busy', String(load));
    const r = spawnSync(process.execPath, [...process.execArgv, import.meta.filename, '--child', ...extra], {
      encoding: 'utf8',
      maxBuffer: 1 << 26,
    });
    if (r.status !== 0) throw new Error(`bench child failed: ${r.stderr}`);
    const run = JSON.parse(r.stdout) as Run;
    all.push(run);
    if (i === 0) for (const line of run.log) process.stdout.write(`  ${line}\n`);
    process.stdout.write(
      `run ${i + 1}${run.busyThreads ? ` (${run.busyThreads} threads spinning)` : ''}: plan ${run.planS.toFixed(2)} s (stages ms ${JSON.stringify(run.stageMs)}), ` +
        `instance build ${run.buildS.toFixed(2)} s, RSS before plan ${run.rssBeforeMiB.toFixed(0)} MiB, ` +
        `peak RSS ${run.peakRssMiB.toFixed(0)} MiB; cost ${run.result.cost}, lower bound ` +
        `${run.result.lowerBound}, gap ${run.result.gapPct.toFixed(2)} %, ${run.result.chosen} sensors, ` +
        `${run.result.groups} groups, covered weight ${run.result.coveredWeight.toFixed(0)} ` +
        `(upper bound ${run.result.weightUpperBound.toFixed(0)}), ${run.result.method}; solver stop: ` +
        `${run.result.solverStop}\n`,
    );
  }
  const t = all.map((r) => r.planS);
  const mean = t.reduce((a, b) => a + b, 0) / t.length;
  const sd = Math.sqrt(t.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(1, t.length - 1));
  const same = all.every((r) => JSON.stringify(r.result) === JSON.stringify(all[0].result));
  process.stdout.write(
    `plan time: best ${Math.min(...t).toFixed(2)} s, mean ${mean.toFixed(2)} ± ${sd.toFixed(2)} s; ` +
      `peak RSS max ${Math.max(...all.map((r) => r.peakRssMiB)).toFixed(0)} MiB; ` +
      `same plan every run: ${same}\n`,
  );
}

if (process.argv.includes('--child')) await child();
else if (process.argv[1] && resolve(process.argv[1]) === import.meta.filename) main();
