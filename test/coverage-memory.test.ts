/**
 * `airshade coverage` holds one site's footprints at a time: its network counts each site's sensors and lets their
 * arrays go (worker/core/network.ts `addSite` with `release`; test/network.test.ts checks the folds, floor and
 * contributing sites against a network that keeps them), and its memory estimate counts what it holds
 * (worker/core/memory-estimate.ts `FootprintHold`): the first site's footprints (kept for the what-if figure), the
 * largest site's (in flight), and the multilateration receivers' (kept for their accuracy maps). `airshade plan`
 * keeps every footprint when they fit under --max-memory, else it too holds one site's at a time (its covers are
 * made and grouped as each site's footprints come, worker/core/plan/demand.ts `beginPlan`) and computes its chosen
 * sites' again for its layers. The commands that keep every footprint (outage, compare, the app) are still counted
 * for every pair.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { pairWindowCells } from '../worker/core/memory-estimate.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { analysisGrid } from '../worker/io/study.ts';
import { runCli } from './support/run-cli.ts';

describe('the footprints a coverage run holds', () => {
  it('one site: the first site, the largest site and the other sites’ multilateration receivers, from the per-pair count', async () => {
    for (const file of ['data/demo-scenario.json', 'data/demo-receivers-scenario.json']) {
      const loaded = await loadScenario(file, {});
      const s = loaded.scenario;
      const grid = analysisGrid(loaded, null);
      const all = s.sensorTypes.map((t) => t.id);
      const mlat = new Set(s.sensorTypes.filter((t) => t.kind === 'mlat').map((t) => t.id));
      // Each site alone, and its receivers alone, counted the every-pair way.
      const alone = s.sites.map((f) => pairWindowCells({ ...s, sites: [f] }, grid));
      const receivers = s.sites.map((f) => {
        const types = (f.properties.allowedTypes ?? all).filter((id) => mlat.has(id));
        const only = { ...f, properties: { ...f.properties, allowedTypes: types } };
        return types.length === 0 ? 0 : pairWindowCells({ ...s, sites: [only] }, grid);
      });
      const every = pairWindowCells(s, grid);
      const held = pairWindowCells(s, grid, 'one site');
      expect(every).toBe(alone.reduce((a, b) => a + b, 0));
      const expected = alone[0] + Math.max(...alone) + receivers.slice(1).reduce((a, b) => a + b, 0);
      expect(held).toBe(Math.min(every, expected));
      // The demos have sites enough that holding one at a time is far less.
      expect(held).toBeLessThan(every / 3);
      if (mlat.size > 0) expect(receivers.slice(1).some((n) => n > 0)).toBe(true);
    }
  });
});

describe('airshade coverage under a limit that every footprint at once would pass', () => {
  const dir = mkdtempSync(join(tmpdir(), 'airshade-coverage-memory-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('the demo at 750M: coverage runs, and so does plan, one site at a time, with the plan and layers of a run with room', async () => {
    const cov = await runCli(
      'coverage',
      'data/demo-scenario.json',
      '--out',
      join(dir, 'c'),
      '--max-memory',
      '750M',
      '--quiet',
    );
    expect(cov.err).not.toMatch(/expected at most/);
    expect(cov.code).toBe(0);
    const summary = JSON.parse(readFileSync(join(dir, 'c', 'summary.json'), 'utf8'));
    // Every sensor is listed, though their footprints were let go; the what-if figure is still measured.
    expect(summary.network.sensors).toHaveLength(165);
    expect(summary.timingsMs.siteToggle).toBeGreaterThanOrEqual(0);
    // The plan under the same limit holds one site's footprints at a time (each candidate's covers made and handed
    // to the grouping as they come), keeps what fits, and computes the other chosen sites' again for the layers;
    // with room it keeps them all.
    const args = ['plan', 'data/demo-scenario.json', '--budget', 'none'];
    // By default every site's footprints go to a spill folder in the output folder as they come, and the chosen
    // sites' are read back from it; with AIRSHADE_DISK_SPILL=0 they are swept again. Both leave nothing behind.
    // A spill folder left by a run killed before its end (its process gone) is removed by the next.
    const stale = join(dir, 'p1', '.airshade-spill-99999999');
    mkdirSync(stale, { recursive: true });
    writeFileSync(join(stale, 'x.footprints'), 'left behind');
    const held = await runCli(...args, '--out', join(dir, 'p1'), '--max-memory', '750M');
    expect(held.err).not.toMatch(/expected at most/);
    expect(held.code).toBe(0);
    expect(held.out).toMatch(
      /memory: the footprints of \d+ of the \d+ chosen sites were not kept in memory \(they would have passed --max-memory\); every site's were written to a spill folder in the output folder as they came \([1-9][\d.]* GiB|0\.\d*[1-9]\d* GiB\), the chosen read back for the layers, and the folder removed/,
    );
    process.env.AIRSHADE_DISK_SPILL = '0';
    let swept: Awaited<ReturnType<typeof runCli>>;
    try {
      swept = await runCli(...args, '--out', join(dir, 'p3'), '--max-memory', '750M');
    } finally {
      delete process.env.AIRSHADE_DISK_SPILL;
    }
    expect(swept.code).toBe(0);
    expect(swept.out).toMatch(
      /memory: the footprints of \d+ of the \d+ chosen sites were not kept \(they would have passed --max-memory\) and were computed again for the layers/,
    );
    const roomy = await runCli(...args, '--out', join(dir, 'p2'), '--quiet');
    expect(roomy.code).toBe(0);
    expect(roomy.out).not.toMatch(/spill/);
    const files = readdirSync(join(dir, 'p2')).filter((f) => f.endsWith('.json') || f.endsWith('.geojson'));
    expect(files).toContain('plan.json');
    for (const run of ['p1', 'p3']) {
      expect(readdirSync(join(dir, run)).filter((f) => f.startsWith('.'))).toEqual([]);
      expect(readdirSync(join(dir, run)).sort()).toEqual(readdirSync(join(dir, 'p2')).sort());
    }
    for (const f of files.filter((x) => !x.startsWith('airshade-run'))) {
      const read = (d: string) => {
        const { provenance: _p, ...rest } = JSON.parse(readFileSync(join(dir, d, f), 'utf8'));
        return rest;
      };
      expect(read('p1'), f).toEqual(read('p2'));
      expect(read('p3'), f).toEqual(read('p2'));
    }
  }, 180_000);

  it('airshade footprints fills a cache under the same limit; coverage reads it site by site into the same layers', async () => {
    const cache = join(dir, 'cache');
    const shard = await runCli(
      'footprints',
      'data/demo-scenario.json',
      '--cache',
      cache,
      '--max-memory',
      '750M',
      '--quiet',
    );
    expect(shard.err).not.toMatch(/expected at most/);
    expect(shard.code).toBe(0);
    expect(readdirSync(cache).filter((f) => f.endsWith('.footprints'))).toHaveLength(33);
    const cov = await runCli(
      'coverage',
      'data/demo-scenario.json',
      '--out',
      join(dir, 'cc'),
      '--cache',
      cache,
      '--max-memory',
      '750M',
      '--quiet',
    );
    expect(cov.code).toBe(0);
    // The same features as the run without the cache (the test before), level by level.
    const features = (d: string, name: string) =>
      JSON.parse(readFileSync(join(dir, d, name), 'utf8')).features;
    const levels = readdirSync(join(dir, 'c')).filter((f) => /^coverage-FL\d+\.geojson$/.test(f));
    expect(levels.length).toBeGreaterThan(0);
    for (const name of levels) expect(features('cc', name), name).toEqual(features('c', name));
  }, 120_000);
});
