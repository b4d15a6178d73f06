/**
 * `airshade plan` on a small scenario: plan.json per the DESIGN contract, the same bytes on a second run, the
 * budget respected, forced and excluded sites honoured, unmeetable requirements reported by volume name, and the
 * plan handed to `airshade outage`.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './support/run-cli.ts';
import { DEFAULT_VOLUMES, writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

const run = runCli;

describe('airshade plan', () => {
  let fx: Fixture;
  beforeAll(() => {
    fx = writeScenarioFixture();
  });
  afterAll(() => fx.cleanup());
  const plan = async (out: string, ...extra: string[]) => {
    const r = await run(
      'plan',
      fx.scenarioPath,
      '--out',
      join(fx.dir, out),
      '--threads',
      '0',
      '--quiet',
      ...extra,
    );
    return {
      ...r,
      doc: r.code === 0 ? JSON.parse(readFileSync(join(fx.dir, out, 'plan.json'), 'utf8')) : null,
      path: join(fx.dir, out, 'plan.json'),
    };
  };

  it('writes plan.json with cost, lowerBound, gapPct, entries and volumes; the same bytes twice', async () => {
    const a = await plan('p1');
    expect(a.code).toBe(0);
    const d = a.doc;
    expect(typeof d.cost).toBe('number');
    expect(d.lowerBound).toBeLessThanOrEqual(d.cost + 1e-9);
    expect(d.gapPct).toBeGreaterThanOrEqual(0);
    expect(d.entries.length).toBeGreaterThan(0);
    for (const e of d.entries) expect(Object.keys(e).sort()).toEqual(['cost', 'siteId', 'typeId']);
    expect(d.entries.reduce((s: number, e: { cost: number }) => s + e.cost, 0)).toBeCloseTo(d.cost, 9);
    expect(Array.isArray(d.volumes)).toBe(true);
    const b = await plan('p2');
    expect(readFileSync(b.path).equals(readFileSync(a.path))).toBe(true);
  });

  it('a budget is never exceeded; a budget below the forced sensors gives one message', async () => {
    const full = (await plan('p3')).doc;
    const budget = Math.max(0, full.cost - 0.5);
    const r = await plan('p4', '--budget', String(budget));
    expect(r.code).toBe(0);
    expect(r.doc.mode).toBe('budget');
    expect(r.doc.cost).toBeLessThanOrEqual(budget + 1e-9);
    const tight = await plan('p5', '--keep', 'pair', '--budget', '0.1');
    expect(tight.code).not.toBe(0);
    expect(tight.err.trim().split('\n')).toHaveLength(1);
    expect(tight.err).toMatch(/budget/i);
  });

  it('forced sensors are in, excluded sites are out, contradictions give one message', async () => {
    const kept = (await plan('p6', '--keep', 'pair')).doc;
    const has = (d: { entries: { siteId: string; typeId: string }[] }, s: string, t: string) =>
      d.entries.some((e) => e.siteId === s && e.typeId === t);
    expect(has(kept, 'alder', 'psr-t') && has(kept, 'brook', 'ssr-t')).toBe(true);
    const ex = (await plan('p7', '--exclude', 'cinder')).doc;
    expect(ex.entries.some((e: { siteId: string }) => e.siteId === 'cinder')).toBe(false);
    const both = await plan('p8', '--keep', 'pair', '--exclude', 'brook');
    expect(both.code).not.toBe(0);
    expect(both.err.trim().split('\n')).toHaveLength(1);
    const unknown = await plan('p9', '--exclude', 'nowhere');
    expect(unknown.err).toMatch(/--exclude: found "nowhere"; expected the id of a site/);
  });

  it('a requirement no candidate set can meet is reported by volume name, and the rest is planned', async () => {
    const hard = writeScenarioFixture({
      volumes: [
        ...DEFAULT_VOLUMES,
        { ...DEFAULT_VOLUMES[0], id: 'impossible', name: 'Quintuple block', requiredFold: { secondary: 5 } },
      ],
    });
    try {
      const r = await run(
        'plan',
        hard.scenarioPath,
        '--out',
        join(hard.dir, 'p'),
        '--threads',
        '0',
        '--quiet',
      );
      expect(r.code).toBe(0);
      const doc = JSON.parse(readFileSync(join(hard.dir, 'p', 'plan.json'), 'utf8'));
      expect(
        doc.unmeetable.some(
          (u: { volumeName: string; required: number }) =>
            u.volumeName === 'Quintuple block' && u.required === 5,
        ),
      ).toBe(true);
      expect(r.out).toMatch(/Quintuple block needs secondary fold 5 where at most \d is possible/);
      expect(doc.entries.length).toBeGreaterThan(0);
    } finally {
      hard.cleanup();
    }
  });

  it('--solver-nodes: 0 skips the exact search; the safety time limit leaves the plan alone; a bad count gives one message', async () => {
    // plan.json without its provenance (which lists the options given)
    const body = (d: Record<string, unknown>): string => JSON.stringify({ ...d, provenance: undefined });
    const def = await plan('n1');
    expect(def.code).toBe(0);
    expect(def.doc.solverStop).toBe('nothing');
    expect(def.doc.log.some((l: string) => /^MILP: \w+ after \d+ of at most \d+ nodes/.test(l))).toBe(true);
    const longer = await plan('n2', '--time-limit-s', '600');
    expect(body(longer.doc)).toBe(body(def.doc));
    const none = await plan('n3', '--solver-nodes', '0');
    expect(none.code).toBe(0);
    expect(none.doc.log).toContain('MILP: not run (node limit 0)');
    expect(none.doc.solverStop).toBe('work limit');
    expect(none.out).toMatch(/stopped at its work limit \(--solver-nodes\)/);
    expect(none.doc.cost).toBeGreaterThanOrEqual(def.doc.cost - 1e-9);
    for (const bad of ['2.5', '-1', 'many']) {
      const r = await plan('n4', '--solver-nodes', bad);
      expect(r.code).not.toBe(0);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(/--solver-nodes: found .*; expected a whole number of nodes/);
    }
  });

  it('the plan feeds airshade outage', async () => {
    const p = await plan('p10');
    const r = await run(
      'outage',
      fx.scenarioPath,
      '--plan',
      p.path,
      '--out',
      join(fx.dir, 'o'),
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    const doc = JSON.parse(readFileSync(join(fx.dir, 'o', 'outage.json'), 'utf8'));
    expect(doc.sensors).toEqual(
      p.doc.entries.map((e: { siteId: string; typeId: string }) => ({ siteId: e.siteId, typeId: e.typeId })),
    );
  });
});
