/**
 * `airshade plan` on a small scenario: plan.json per the DESIGN contract, the same bytes on a second run, the
 * budget respected, forced and excluded sites honoured, unmeetable requirements reported by volume name, and the
 * plan handed to `airshade outage`. Figures, not shape: the plan's cost is recomputed from the scenario's costs,
 * and every demand point the plan claims met is checked for its required folds from the plan's sensors
 * (test/support/plan-check.ts, written from the definitions).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { levelAltitudesM } from '../worker/io/study.ts';
import { allCandidates, footprintsFor, openSession } from '../worker/cli/session.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import { buildDemand, coveredPoints } from '../worker/io/study.ts';
import type { PlanInstance } from '../worker/core/plan.ts';
import { cappedRequirements, shortfalls } from './support/plan-check.ts';
import { runCli } from './support/run-cli.ts';
import {
  DEFAULT_VOLUMES,
  writeScenarioFixture,
  type Fixture,
  type FixtureSensorType,
} from './support/scenario-fixture.ts';

interface PlanEntry {
  siteId: string;
  typeId: string;
  cost: number;
}

/**
 * The plan's instance rebuilt here from the scenario (demand points, every allowed sensor and the points it
 * covers, as the core's study defines them), so that a plan.json can be checked against it point by point.
 */
async function instanceOf(fx: Fixture): Promise<{ inst: PlanInstance; index: Map<string, number> }> {
  const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
  const s = session.loaded.scenario;
  const candidates = allCandidates(session);
  const footprints = await footprintsFor(session, candidates);
  const demand = buildDemand(session, s.flightLevels);
  const altitudes = levelAltitudesM(s, s.flightLevels);
  const siteIndex = new Map(s.sites.map((f, i) => [f.properties.id, i]));
  const inst: PlanInstance = {
    sites: s.sites.map((f) => ({
      id: f.properties.id,
      cost: f.properties.siteCost,
      existing: f.properties.existing,
    })),
    candidates: candidates.map((c, i) => ({
      siteIndex: siteIndex.get(c.site.id)!,
      typeId: c.model.spec.id,
      kind: c.model.kind,
      cost: c.model.spec.cost,
      covers: coveredPoints(footprints[i], demand, altitudes),
    })),
    points: demand.instancePoints,
  };
  return { inst, index: new Map(candidates.map((c, i) => [`${c.site.id}/${c.model.spec.id}`, i])) };
}

/**
 * The cost a plan must report, from the scenario as written: each entry's sensor type cost (0 for a sensor kept
 * on a site marked existing: it stands already), plus each distinct site's cost unless the site is existing.
 */
function statedCost(
  fx: Fixture,
  entries: PlanEntry[],
  kept: { siteId: string; typeId: string }[] = [],
): number {
  const types = fx.scenario.sensorTypes as FixtureSensorType[];
  const site = (id: string) => fx.sites.find((x) => x.id === id)!;
  let cost = 0;
  for (const e of entries) {
    const standing =
      kept.some((k) => k.siteId === e.siteId && k.typeId === e.typeId) && site(e.siteId).existing;
    if (!standing) cost += types.find((t) => t.id === e.typeId)!.cost as number;
  }
  for (const id of new Set(entries.map((e) => e.siteId)))
    if (!site(id).existing) cost += site(id).siteCost ?? 0;
  return cost;
}

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

  it('figures: the cost is the scenario’s costs summed, and every point it claims met has its folds', async () => {
    const { inst: all, index } = await instanceOf(fx);
    /** (point, kind) pairs whose requirement no allowed sensor set can meet: what plan.json lists as unmeetable. */
    const cappedPairs = (inst: PlanInstance): number => {
      const { capped, uncapped } = cappedRequirements(inst);
      let n = 0;
      for (let i = 0; i < capped.length; i++) if (capped[i] < uncapped[i]) n++;
      return n;
    };
    expect(all.points.count).toBeGreaterThan(100);
    for (const [out, extra] of [
      ['f1', []],
      ['f2', ['--keep', 'pair']],
      ['f3', ['--exclude', 'alder']],
    ] as const) {
      const r = await plan(out, ...extra);
      expect(r.code).toBe(0);
      const d = r.doc;
      const entries = d.entries as PlanEntry[];
      const chosen = entries.map((e) => index.get(`${e.siteId}/${e.typeId}`)!);
      expect(chosen.every((c) => c !== undefined)).toBe(true);
      const alder = all.sites.findIndex((x) => x.id === 'alder');
      const inst = extra[0] === '--exclude' ? { ...all, excludedSites: [alder] } : all;
      expect(d.demandMet).toBe(true);
      expect(shortfalls(inst, chosen)).toEqual([]);
      if (extra[0] !== '--keep') {
        // the checker has teeth: with positive costs an optimal plan has no idle sensor, so dropping any one
        // leaves some point short
        for (let j = 0; j < chosen.length; j++) {
          expect(
            shortfalls(
              inst,
              chosen.filter((_, i) => i !== j),
            ).length,
          ).toBeGreaterThan(0);
        }
      }
      const listed = d.unmeetable.reduce((a: number, u: { points: number }) => a + u.points, 0);
      expect(listed).toBe(cappedPairs(inst));
      const kept =
        extra[0] === '--keep'
          ? [
              { siteId: 'alder', typeId: 'psr-t' },
              { siteId: 'brook', typeId: 'ssr-t' },
            ]
          : [];
      const cost = statedCost(fx, entries, kept);
      expect(d.cost).toBeCloseTo(cost, 9);
      expect(d.newSpend).toBeCloseTo(cost, 9);
      expect(entries.reduce((a, e) => a + e.cost, 0)).toBeCloseTo(cost, 9);
      expect(d.lowerBound).toBeLessThanOrEqual(d.cost + 1e-9);
      if (extra[0] === '--keep') {
        // alder is an existing site and its primary stands already: it costs nothing new, its value (6) apart
        expect(d.existingSensors).toEqual([{ siteId: 'alder', typeId: 'psr-t', value: 6 }]);
        expect(d.existingValue).toBe(6);
        expect(entries.find((e) => e.siteId === 'alder' && e.typeId === 'psr-t')!.cost).toBe(0);
        expect(r.out).toMatch(/existing sensors kept: 1, worth 6\.00/);
        expect(r.out).toMatch(/psr-t\s+0\.00 {2}already standing \(worth 6\.00\)/);
      } else {
        expect(d.existingSensors).toEqual([]);
        expect(d.existingValue).toBe(0);
      }
    }
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
