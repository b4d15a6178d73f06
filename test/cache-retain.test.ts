/**
 * With a footprint cache (`--cache`), the sites computed in this run are handed on one site at a time and kept only
 * as the caller asks: the pool's own list must keep none of them. It kept every one before (the national box at 15″:
 * `airshade coverage --cache` peaked at 16.5 GiB under `--max-memory 16G`, against 3.4 GiB without the cache). The
 * pool's options are read at the one place they are passed, core/coverage.ts `computeFootprints`.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { Footprint } from '../worker/core/footprint.ts';
import { allCandidates, footprintsFor, KEEP_NONE, openSession } from '../worker/cli/session.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

const passed = vi.hoisted(() => [] as { retain?: (fp: Footprint) => boolean }[]);

vi.mock('../worker/core/coverage.ts', async (importOriginal) => {
  const orig = await importOriginal<typeof import('../worker/core/coverage.ts')>();
  return {
    ...orig,
    computeFootprints: (...args: Parameters<typeof orig.computeFootprints>) => {
      passed.push({ retain: args[3]?.retain });
      return orig.computeFootprints(...args);
    },
  };
});

describe('footprintsFor with a cache keeps no computed footprint beyond what the caller keeps', () => {
  let fx: Fixture;
  beforeAll(() => {
    fx = writeScenarioFixture();
  });
  afterAll(() => fx.cleanup());

  it('computing into the cache: the pool keeps none; each site still reaches onSite; all read back later', async () => {
    const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    const candidates = allCandidates(session);
    const cached = { ...session, cacheDir: join(fx.dir, 'cache') };
    const handed: Footprint[] = [];
    passed.length = 0;
    const kept = await footprintsFor(cached, candidates, {
      retain: KEEP_NONE,
      onSite: (fps) => handed.push(...fps),
    });
    expect(kept).toEqual([]);
    expect(handed.map((f) => `${f.siteId}/${f.typeId}`)).toEqual(
      candidates.map((c) => `${c.site.id}/${c.model.spec.id}`),
    );
    expect(passed).toHaveLength(1);
    const retain = passed[0].retain;
    expect(retain).toBeTypeOf('function');
    expect(handed.filter((f) => retain!(f))).toEqual([]);
    // The caller asking for every footprint still gets every one (from the cache now: the pool is not asked).
    passed.length = 0;
    const all = await footprintsFor(cached, candidates);
    expect(passed).toHaveLength(0);
    expect(all.map((f) => `${f.siteId}/${f.typeId}`)).toEqual(handed.map((f) => `${f.siteId}/${f.typeId}`));
  });
});
