/**
 * A plan's arrays counted against the run's memory limit as their sizes become known (worker/core/memory-estimate.ts
 * `MemoryLedger`, worker/core/plan): with room to spare the plan is the same as without an account; with a limit
 * just short of what one of its takes raised the count to, it stops with the refusal naming what would have passed
 * the limit — or, when that was the optional search for implied rows, plans without the search: the same plan, and
 * a valid bound.
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError, isInputError } from '../shared/errors.ts';
import { MemoryLedger, OVERHEAD } from '../worker/core/memory-estimate.ts';
import { solvePlan, type PlanInstance, type PlanResult } from '../worker/core/plan.ts';
import { mixedKindInstance, shortfalls, siteCostInstance } from './support/plan-check.ts';
import { runCli } from './support/run-cli.ts';

/** A copy whose cover lists the solve may let go. */
function copyOf(inst: PlanInstance): PlanInstance {
  return { ...inst, candidates: inst.candidates.map((c) => ({ ...c, covers: c.covers.slice() })) };
}

/** A ledger that starts where the caller has counted the covers, and keeps each take's count. */
function ledger(inst: PlanInstance, limit: number) {
  const steps: { what: string; held: number }[] = [];
  const l = new MemoryLedger({ held: 0, limit, where: 'plan test', knob: 'the test' });
  const take = l.take.bind(l);
  l.take = (bytes: number, what: string) => {
    take(bytes, what);
    steps.push({ what, held: l.bytes });
  };
  for (const c of inst.candidates) l.take(c.covers.byteLength, 'covers');
  return { l, steps };
}

const opts = { releaseCovers: true, exactMaxCandidates: 0, exactMaxNonzeros: 0, lpMaxNonzeros: 1e9 };

function same(r: PlanResult): unknown {
  const { stageMs: _t, log, ...rest } = r;
  return { ...rest, log: log.filter((l) => !l.startsWith('LP:')) };
}

describe('the plan counted in the memory account', () => {
  const cases = [
    ...Array.from({ length: 10 }, (_, i) => siteCostInstance(61_000 + i)),
    ...Array.from({ length: 10 }, (_, i) => mixedKindInstance(62_000 + i)),
  ];

  it('with room to spare: the same plan; the covers given back; just short of each high: the refusal or no search', async () => {
    let refusals = 0;
    let skipped = 0;
    for (const inst of cases) {
      const plain = await solvePlan(copyOf(inst), opts);
      const roomy = ledger(inst, Infinity);
      const covers = roomy.l.bytes;
      const r = await solvePlan(copyOf(inst), { ...opts, memory: roomy.l });
      expect(same(r)).toEqual(same(plain));
      expect(r.log).toEqual(plain.log);
      // The covers were given back, so the plan's stages hold less than the covers and their own arrays together.
      const peak = Math.max(...roomy.steps.map((s) => s.held));
      expect(roomy.l.bytes).toBeLessThan(peak);
      expect(roomy.steps.some((s) => s.what === "the demand groups' lists of candidates")).toBe(true);
      expect(peak).toBeGreaterThan(covers);
      // Each take that raised the most held so far, with a limit just short of it: that take is the first to
      // pass the limit (every one before held less).
      let high = covers;
      for (const at of roomy.steps) {
        if (at.held <= high) continue;
        high = at.held;
        const short = ledger(inst, at.held - 0.01);
        const run = solvePlan(copyOf(inst), { ...opts, memory: short.l });
        if (at.what === 'the search for implied rows') {
          const s = await run;
          expect(s.log.some((l) => l.includes('no search for rows implied by others'))).toBe(true);
          // The same heuristic plan, and a valid bound (read from the duals of HiGHS's solve over more rows, it
          // may come out another value).
          expect([s.cost, s.chosen]).toEqual([r.cost, r.chosen]);
          expect(s.lowerBound).toBeLessThanOrEqual(s.cost);
          expect(shortfalls(inst, s.chosen)).toEqual([]);
          skipped++;
        } else {
          const e = await run.then(
            () => null,
            (x: unknown) => x,
          );
          expect(isInputError(e)).toBe(true);
          expect((e as InputError).where).toBe('plan test');
          expect((e as InputError).found).toContain(`(${at.what}: `);
          expect((e as InputError).expected).toContain('(the test)');
          // Nothing was counted past the take before it.
          expect(short.steps.every((x) => x.held < at.held)).toBe(true);
          refusals++;
        }
      }
    }
    // Both ways are seen.
    expect(refusals).toBeGreaterThan(0);
    expect(skipped).toBeGreaterThan(0);
  });

  it('lets its spill go once, before a refusal, and tries the take again', () => {
    const l = new MemoryLedger({ held: 0, limit: OVERHEAD * 100, where: 'x', knob: 'y' });
    let spills = 0;
    l.take(60, 'kept');
    l.spill = () => {
      spills++;
      return 60;
    };
    l.take(30, 'a'); // fits: no spill
    expect(spills).toBe(0);
    l.take(50, 'b'); // 60 + 30 + 50 > 100: the kept 60 go, then 80 fits
    expect(spills).toBe(1);
    expect(l.bytes).toBe(OVERHEAD * 80);
    expect(l.spill).toBeUndefined();
    expect(() => l.take(21, 'c')).toThrow(/\(c: /);
  });

  it('counts each array times the overhead, and refuses before it passes the limit', () => {
    const l = new MemoryLedger({ held: 1000, limit: 1000 + OVERHEAD * 100, where: 'x', knob: 'y' });
    expect(l.fits(100)).toBe(true);
    expect(l.fits(101)).toBe(false);
    l.take(30, 'a');
    l.take(30, 'a');
    expect(l.bytes).toBe(1000 + OVERHEAD * 60);
    // The refusal names what, with what it took in all.
    expect(() => l.take(41, 'a')).toThrow(
      /^x: found a plan that needs about 1 MiB \(a: 1 MiB\); expected at most 1 MiB \(y\)$/,
    );
    l.give(60);
    expect(l.bytes).toBe(1000);
    expect(l.spec()).toEqual({ held: 1000, limit: 1000 + OVERHEAD * 100, where: 'x', knob: 'y' });
  });
});

/** Every file under a cache folder with its modification time. */
function cacheFiles(root: string): Map<string, number> {
  const out = new Map<string, number>();
  for (const e of readdirSync(root, { recursive: true, withFileTypes: true })) {
    if (e.isFile()) {
      const p = join(e.parentPath ?? (e as { path?: string }).path ?? root, e.name);
      out.set(p, statSync(p).mtimeMs);
    }
  }
  return out;
}

/**
 * The demo with its ranges cut to 80 km, written beside a temporary folder with absolute paths: its horizons are
 * small, so its plan's own arrays (1.1 M demand points) pass a limit its coverage fits.
 */
function shortRangeDemo(dir: string): string {
  const data = resolve('data');
  const s = JSON.parse(readFileSync(join(data, 'demo-scenario.json'), 'utf8'));
  s.terrain.files = s.terrain.files.map((f: string) => join(data, f));
  s.sensorTypes = join(data, s.sensorTypes);
  s.sites = join(data, s.sites);
  s.maxRangeKm = 80;
  const file = join(dir, 'short-range.json');
  writeFileSync(file, JSON.stringify(s));
  return file;
}

/** The MiB a refusal says the run or plan needs, and what it names. */
function refusal(err: string): { mib: number; what: string } {
  const m = /needs about (\d+) MiB \(([^:]+):/.exec(err);
  expect(m, err).not.toBeNull();
  return { mib: Number(m![1]), what: m![2] };
}

describe('airshade plan past --max-memory', () => {
  const dir = mkdtempSync(join(tmpdir(), 'airshade-plan-memory-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const scenario = shortRangeDemo(dir);
  const args = ['plan', scenario, '--allow-outside-paths', '--budget', 'none', '--quiet'];

  it('a plan whose demand points pass a limit its coverage fits: one message, before any sweep, nothing written', async () => {
    // The least the run needs, from the refusal under the smallest limit.
    const first = await runCli(...args, '--out', join(dir, 'o0'), '--max-memory', '256M');
    expect(first.code).toBe(2);
    const least = refusal(first.err).mib;
    const out = join(dir, 'o1');
    const cache = join(dir, 'cache1');
    const r = await runCli(...args, '--out', out, '--cache', cache, '--max-memory', `${least + 1}M`);
    expect(r.code).toBe(2);
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(
      /^airshade plan: .*short-range\.json: grid\.cellArcSec \(30″: 600 × 600 cells\) with 165 \(site, type\) pairs: found a plan that needs about \d+ MiB \(the demand points: \d+ MiB\); expected at most \d+ MiB \(--max-memory; raise it up to this machine's .*fewer sites or sensor types\)$/,
    );
    // Nothing of the plan was written, and no footprint computed.
    expect(existsSync(out) ? readdirSync(out).filter((f) => !f.startsWith('airshade-run')) : []).toEqual([]);
    expect(existsSync(cache) ? [...cacheFiles(cache).keys()] : []).toEqual([]);
  }, 120_000);

  it('with --cache a refusal after the footprints keeps them, and the next run with room plans from them', async () => {
    const cache = join(dir, 'cache2');
    const first = await runCli(...args, '--out', join(dir, 'c0'), '--max-memory', '256M');
    let limit = refusal(first.err).mib + 1;
    // Each refusal's figure + 1 MiB as the next limit, until one comes after the footprints: the layers' own.
    const named: string[] = [];
    const said: string[] = [];
    for (let i = 0; i < 8; i++) {
      const r = await runCli(
        ...args,
        '--out',
        join(dir, `c${i + 1}`),
        '--cache',
        cache,
        '--max-memory',
        `${limit}M`,
      );
      expect(r.code, r.err).toBe(2);
      const { mib, what } = refusal(r.err);
      named.push(what);
      said.push(r.err.trim());
      limit = mib + 1;
      if (what === "the chosen sites' footprints, read back or computed again for the layers") break;
    }
    expect(named[0]).toBe('the demand points');
    expect(named.at(-1)).toBe("the chosen sites' footprints, read back or computed again for the layers");
    // Only a refusal after footprints were computed offers them for the next run.
    expect(said[0]).not.toMatch(/footprints computed/);
    expect(said.at(-1)).toMatch(/; the footprints computed are in the --cache folder for the next run\)$/);
    const kept = cacheFiles(cache);
    expect([...kept.keys()].filter((f) => f.endsWith('.footprints'))).toHaveLength(33);
    // With room for the chosen sites' footprints, one site's at a time still: they are read from the cache again.
    const tight = await runCli(
      ...args,
      '--out',
      join(dir, 'tight'),
      '--cache',
      cache,
      '--max-memory',
      `${limit}M`,
    );
    expect(tight.code, tight.err).toBe(0);
    const next = await runCli(...args, '--out', join(dir, 'room'), '--cache', cache, '--max-memory', '2G');
    expect(next.code).toBe(0);
    expect(existsSync(join(dir, 'room', 'plan.json'))).toBe(true);
    // Read from the cache, not computed again: the same files, none rewritten; the same plan either way.
    expect(cacheFiles(cache)).toEqual(kept);
    const plan = (d: string) => {
      const { provenance: _p, ...rest } = JSON.parse(readFileSync(join(dir, d, 'plan.json'), 'utf8'));
      return rest;
    };
    expect(plan('tight')).toEqual(plan('room'));
  }, 240_000);
});
