/**
 * `airshade coverage` holds one site's footprints at a time: its network counts each site's sensors and lets their
 * arrays go (worker/core/network.ts `addSite` with `release`; test/network.test.ts checks the folds, floor and
 * contributing sites against a network that keeps them), and its memory estimate counts what it holds
 * (worker/core/memory-estimate.ts `FootprintHold`): the first site's footprints (kept for the what-if figure), the
 * largest site's (in flight), and the multilateration receivers' (kept for their accuracy maps). The commands that
 * keep every footprint (plan, outage, compare, the app) are still counted for every pair.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
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

  it('the demo at 750M: coverage runs, while plan (every footprint held) is refused before any sweep', async () => {
    const plan = await runCli(
      'plan',
      'data/demo-scenario.json',
      '--out',
      join(dir, 'p'),
      '--max-memory',
      '750M',
      '--quiet',
    );
    expect(plan.code).toBe(2);
    expect(plan.err).toMatch(
      /mostly the footprints \(each sensor's window of cells\).*expected at most 750 MiB/,
    );
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
  }, 120_000);

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
