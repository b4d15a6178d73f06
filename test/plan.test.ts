/**
 * The planner (worker/core/plan.ts, worker/core/plan-lp.ts) against an exhaustive search written here from the
 * definitions (every subset of the candidates, for instances of at most 14), on seeded random instances.
 *
 * Outside yardsticks, each named beside its check:
 * - Greedy weighted set cover and the toy instance where it pays 3 against an optimum of 2: Chvátal, "A greedy
 *   heuristic for the set-covering problem", Math. Oper. Res. 4(3), 1979 [pub]; the toy's values [calc].
 * - Lazy evaluation picks exactly what plain greedy picks: Minoux, "Accelerated greedy algorithms for
 *   maximizing submodular set functions" (1978) [memory].
 * - Budgeted variant (maximal covering location problem): Church & ReVelle, Papers Reg. Sci. Assoc. 32, 1974
 *   [pub].
 * - The LP relaxation bounds the 0/1 optimum from below (above, for a maximisation) [pub, any OR text].
 * - "Covered by ≥ 2 distinct sites" ⇔ "still covered after any one site fails"; sensors on one site fail
 *   together (test/REFERENCES.md, [calc]).
 */
import { once } from 'node:events';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  greedyLazy,
  greedyPlain,
  solvePlan,
  type Kind,
  type PlanInstance,
  type PlanResult,
} from '../worker/core/plan.ts';
import { mulberry32 } from './support/bumps.ts';

// ---------------------------------------------------------------------------------------------------------------
// Seeded instances and the exhaustive reference

interface GenOpts {
  candidates: [number, number];
  points: [number, number];
  budget?: boolean;
}

function randomInstance(seed: number, o: GenOpts): PlanInstance {
  const r = mulberry32(seed);
  const ri = (a: number, b: number): number => a + Math.floor(r() * (b - a + 1));
  const nS = ri(3, 8);
  const nC = ri(o.candidates[0], o.candidates[1]);
  const n = ri(o.points[0], o.points[1]);
  const sites = Array.from({ length: nS }, (_, i) => ({
    id: `s${i}`,
    cost: ri(0, 10),
    existing: r() < 0.15,
  }));
  const candidates = Array.from({ length: nC }, (_, j) => {
    const covers: number[] = [];
    const density = 0.2 + 0.35 * r();
    for (let p = 0; p < n; p++) if (r() < density) covers.push(p);
    return {
      siteIndex: j < nS ? j : ri(0, nS - 1),
      typeId: `t${j}`,
      kind: (r() < 0.5 ? 'primary' : 'secondary') as Kind,
      cost: ri(1, 12),
      covers: Uint32Array.from(covers),
    };
  });
  const inst: PlanInstance = {
    sites,
    candidates,
    points: {
      count: n,
      weight: new Float64Array(n).map(() => (r() < 0.05 ? 0 : ri(1, 5))),
      reqAny: new Uint8Array(n).map(() => (r() < 0.15 ? ri(1, 2) : 0)),
      reqPrimary: new Uint8Array(n).map(() => (r() < 0.4 ? ri(1, 2) : 0)),
      reqSecondary: new Uint8Array(n).map(() => (r() < 0.5 ? ri(1, 3) : 0)),
    },
  };
  if (r() < 0.3) inst.forced = [ri(0, nC - 1)];
  if (r() < 0.3) {
    const s = ri(0, nS - 1);
    if (!inst.forced?.some((c) => candidates[c].siteIndex === s)) inst.excludedSites = [s];
  }
  if (o.budget) {
    const total = sites.reduce((a, s) => a + s.cost, 0) + candidates.reduce((a, c) => a + c.cost, 0);
    inst.budget = ri(Math.round(total * 0.15), Math.round(total * 0.5));
    if (inst.forced) {
      const c = candidates[inst.forced[0]];
      const s = sites[c.siteIndex];
      inst.budget = Math.max(inst.budget, c.cost + (s.existing ? 0 : s.cost));
    }
  }
  return inst;
}

/** Folds (any, primary, secondary) at point p: distinct sites among `set` covering p, per kind. */
function folds(inst: PlanInstance, coverSets: Set<number>[], set: readonly number[], p: number): number[] {
  const any = new Set<number>();
  const pri = new Set<number>();
  const sec = new Set<number>();
  for (const j of set) {
    if (!coverSets[j].has(p)) continue;
    const c = inst.candidates[j];
    any.add(c.siteIndex);
    (c.kind === 'primary' ? pri : sec).add(c.siteIndex);
  }
  return [any.size, pri.size, sec.size];
}

interface Reference {
  allowed: number[];
  coverSets: Set<number>[];
  /** Requirement per point and kind, capped at what all allowed candidates reach. */
  capped: number[][];
  cost(set: readonly number[]): number;
  meets(set: readonly number[]): boolean;
  covered(set: readonly number[]): number;
}

function reference(inst: PlanInstance): Reference {
  const excluded = new Set(inst.excludedSites ?? []);
  const allowed = inst.candidates.map((_, j) => j).filter((j) => !excluded.has(inst.candidates[j].siteIndex));
  const coverSets = inst.candidates.map((c) => new Set(c.covers));
  const P = inst.points;
  const capped = Array.from({ length: P.count }, (_, p) => {
    const ach = folds(inst, coverSets, allowed, p);
    const req = [P.reqAny[p], P.reqPrimary[p], P.reqSecondary[p]];
    return req.map((r, k) => (P.weight[p] > 0 ? Math.min(r, ach[k]) : 0));
  });
  return {
    allowed,
    coverSets,
    capped,
    cost(set) {
      let t = 0;
      for (const s of new Set(set.map((j) => inst.candidates[j].siteIndex))) {
        t += inst.sites[s].existing ? 0 : inst.sites[s].cost;
      }
      for (const j of set) t += inst.candidates[j].cost;
      return t;
    },
    meets(set) {
      for (let p = 0; p < P.count; p++) {
        const f = folds(inst, coverSets, set, p);
        for (let k = 0; k < 3; k++) if (f[k] < capped[p][k]) return false;
      }
      return true;
    },
    covered(set) {
      let w = 0;
      for (let p = 0; p < P.count; p++) {
        const f = folds(inst, coverSets, set, p);
        for (let k = 0; k < 3; k++) w += P.weight[p] * Math.min(f[k], capped[p][k]);
      }
      return w;
    },
  };
}

/** Exhaustive optimum over every subset of the allowed, non-forced candidates (forced ones always in). */
function exhaustive(inst: PlanInstance, ref: Reference): { cost: number; covered: number } {
  const forced = [...new Set(inst.forced ?? [])];
  const free = ref.allowed.filter((j) => !forced.includes(j));
  let bestCost = Infinity;
  let bestCovered = -Infinity;
  for (let mask = 0; mask < 1 << free.length; mask++) {
    const set = [...forced];
    for (let i = 0; i < free.length; i++) if (mask & (1 << i)) set.push(free[i]);
    const cost = ref.cost(set);
    if (inst.budget === undefined) {
      if (cost < bestCost && ref.meets(set)) bestCost = cost;
    } else if (cost <= inst.budget) {
      bestCovered = Math.max(bestCovered, ref.covered(set));
    }
  }
  return { cost: bestCost, covered: bestCovered };
}

function withoutTimings(r: PlanResult): string {
  const { stageMs: _t, ...rest } = r;
  return JSON.stringify(rest);
}

// ---------------------------------------------------------------------------------------------------------------

describe('the classic greedy trap (Chvátal 1979)', () => {
  // U = {1..6}, S1 = {1,2,3,4}, S2 = {1,3,5}, S3 = {2,4,6}, unit costs — test/REFERENCES.md [calc]: greedy 3, optimum 2.
  // Points 0…5 stand for 1…6; each set is a candidate on its own free site; every point needs one cover.
  const u = (a: number[]): Uint32Array => Uint32Array.from(a.map((x) => x - 1));
  const toy: PlanInstance = {
    sites: ['a', 'b', 'c'].map((id) => ({ id, cost: 0, existing: false })),
    candidates: [
      { siteIndex: 0, typeId: 'S1', kind: 'secondary', cost: 1, covers: u([1, 2, 3, 4]) },
      { siteIndex: 1, typeId: 'S2', kind: 'secondary', cost: 1, covers: u([1, 3, 5]) },
      { siteIndex: 2, typeId: 'S3', kind: 'secondary', cost: 1, covers: u([2, 4, 6]) },
    ],
    points: {
      count: 6,
      weight: new Float64Array(6).fill(1),
      reqAny: new Uint8Array(6).fill(1),
      reqPrimary: new Uint8Array(6),
      reqSecondary: new Uint8Array(6),
    },
  };

  it('plain greedy pays 3: it takes S1 first', () => {
    expect(greedyPlain(toy)).toEqual([0, 1, 2]);
  });

  it('the planner returns 2 (S2 + S3), also without the MILP, with a matching bound', async () => {
    for (const opts of [{}, { exactMaxCandidates: 0, exactMaxNonzeros: 0 }]) {
      const r = await solvePlan(toy, opts);
      expect(r.chosen).toEqual([1, 2]);
      expect(r.cost).toBe(2);
      expect(r.lowerBound).toBe(2);
      expect(r.gapPct).toBe(0);
      expect(r.demandMet).toBe(true);
    }
  });
});

describe('random small instances against exhaustive search', () => {
  const N = 150;
  /**
   * The bound must be tight, not only valid: instances whose bound equals the exhaustive optimum, at least. Measured
   * here (MEASURE=1 prints them): 150 of 150 with the MILP, 143 of 150 with the LP bound alone; with the LP's
   * site-cost term zeroed (tried by hand) both fell to 1 of 150 while every validity check above still passed.
   */
  const PROVEN_MIN: Record<string, number> = {
    'default (MILP on small instances)': 145,
    'heuristic with the LP bound only': 135,
  };
  const cases = Array.from({ length: N }, (_, i) => {
    const inst = randomInstance(1000 + i, { candidates: [6, 14], points: [15, 45] });
    const ref = reference(inst);
    return { inst, ref, opt: exhaustive(inst, ref).cost };
  });

  for (const [label, opts] of [
    ['default (MILP on small instances)', {}],
    ['heuristic with the LP bound only', { exactMaxCandidates: 0, exactMaxNonzeros: 0 }],
  ] as const) {
    it(`${label}: optimal on ≥ 95 %, never below the bound, bound never above the optimum`, async () => {
      let optimal = 0;
      let proven = 0;
      for (const { inst, ref, opt } of cases) {
        const r = await solvePlan(inst, opts);
        // the plan meets the capped demand, keeps the forced sensors and avoids the excluded sites
        expect(ref.meets(r.chosen)).toBe(true);
        expect(r.demandMet).toBe(true);
        for (const c of inst.forced ?? []) expect(r.chosen).toContain(c);
        for (const c of r.chosen)
          expect(inst.excludedSites ?? []).not.toContain(inst.candidates[c].siteIndex);
        expect(r.cost).toBeCloseTo(ref.cost(r.chosen), 9);
        expect(r.cost).toBeGreaterThanOrEqual(opt);
        expect(r.lowerBound).toBeLessThanOrEqual(opt + 1e-9);
        expect(r.lowerBound).toBeLessThanOrEqual(r.cost + 1e-9);
        expect(r.coveredWeight).toBeCloseTo(ref.covered(r.chosen), 9);
        if (r.cost === opt) optimal++;
        if (Math.abs(r.lowerBound - opt) < 1e-9) proven++;
      }
      if (process.env.MEASURE)
        console.log(`${label}: optimal ${optimal}/${N}, bound = optimum ${proven}/${N}`);
      expect(optimal / N).toBeGreaterThanOrEqual(0.95);
      expect(proven).toBeGreaterThanOrEqual(PROVEN_MIN[label]);
    });
  }

  it('a truncated LP (tightest rows only) still gives a valid bound', async () => {
    let weaker = 0;
    for (const { inst, opt } of cases.slice(0, 40)) {
      const r = await solvePlan(inst, { exactMaxCandidates: 0, exactMaxNonzeros: 0, lpMaxNonzeros: 6 });
      expect(r.lowerBound).toBeLessThanOrEqual(opt + 1e-9);
      if (r.log.some((l) => l.includes('weaker but valid'))) weaker++;
    }
    expect(weaker).toBeGreaterThan(20);
  });
});

describe('budget mode (maximal covering, Church & ReVelle 1974)', () => {
  const N = 60;
  const cases = Array.from({ length: N }, (_, i) => {
    const inst = randomInstance(5000 + i, { candidates: [5, 12], points: [10, 35], budget: true });
    const ref = reference(inst);
    return { inst, ref, opt: exhaustive(inst, ref).covered };
  });

  for (const [label, opts, share] of [
    ['default', {}, 0.95],
    ['heuristic only', { exactMaxCandidates: 0, exactMaxNonzeros: 0 }, 0.8],
  ] as const) {
    it(`${label}: within budget, forced in, excluded out, covered ≤ optimum ≤ upper bound`, async () => {
      let optimal = 0;
      for (const { inst, ref, opt } of cases) {
        const r = await solvePlan(inst, opts);
        // A budget that meets every requirement is not binding: the result is then the least-cost plan.
        if (r.mode === 'cover') expect(r.demandMet).toBe(true);
        else expect(r.mode).toBe('budget');
        expect(ref.cost(r.chosen)).toBeLessThanOrEqual(inst.budget!);
        expect(r.cost).toBeLessThanOrEqual(inst.budget!);
        for (const c of inst.forced ?? []) expect(r.chosen).toContain(c);
        for (const c of r.chosen)
          expect(inst.excludedSites ?? []).not.toContain(inst.candidates[c].siteIndex);
        expect(r.coveredWeight).toBeCloseTo(ref.covered(r.chosen), 9);
        expect(r.coveredWeight).toBeLessThanOrEqual(opt + 1e-9);
        expect(r.weightUpperBound).toBeGreaterThanOrEqual(opt - 1e-9);
        if (Math.abs(r.coveredWeight - opt) < 1e-9) optimal++;
      }
      expect(optimal / N).toBeGreaterThanOrEqual(share);
    });
  }

  it('a budget that is not binding gives the least-cost plan, not one that spends the budget', async () => {
    let checked = 0;
    for (let i = 0; i < 40; i++) {
      const inst = randomInstance(7000 + i, { candidates: [5, 10], points: [10, 30] });
      const ref = reference(inst);
      const least = exhaustive(inst, ref).cost;
      if (!Number.isFinite(least)) continue;
      // Everything allowed fits: a budget far above the least cost.
      inst.budget =
        ref.allowed.reduce((a, c) => a + inst.candidates[c].cost, 0) +
        inst.sites.reduce((a, x) => a + x.cost, 0);
      const r = await solvePlan(inst);
      expect(r.demandMet).toBe(true);
      expect(r.mode).toBe('cover');
      expect(r.method).toMatch(/not binding/);
      expect(r.cost).toBeCloseTo(ref.cost(r.chosen), 9);
      expect(r.cost).toBeGreaterThanOrEqual(least - 1e-9);
      expect(r.lowerBound).toBeLessThanOrEqual(least + 1e-9);
      if (r.gapPct === 0) expect(r.cost).toBeCloseTo(least, 9);
      // The least-cost re-solve reuses the budget solve's model: the same plan, bound and log as a solve of the
      // instance without a budget; and with the covers let go after the model is built, the same result again.
      const fresh = await solvePlan({ ...inst, budget: undefined });
      expect([r.chosen, r.cost, r.lowerBound, r.log.slice(-fresh.log.length)]).toEqual([
        fresh.chosen,
        fresh.cost,
        fresh.lowerBound,
        fresh.log.map((l) => `least cost: ${l}`),
      ]);
      const copy = { ...inst, candidates: inst.candidates.map((c) => ({ ...c, covers: c.covers.slice() })) };
      const released = await solvePlan(copy, { releaseCovers: true });
      expect(withoutTimings(released)).toBe(withoutTimings(r));
      expect(copy.candidates.every((c) => c.covers.length === 0)).toBe(true);
      checked++;
    }
    expect(checked).toBeGreaterThanOrEqual(20);
  });
});

describe('lazy greedy (Minoux 1978)', () => {
  it('picks exactly what plain greedy picks, in the same order, cover and budget mode', () => {
    let picks = 0;
    for (let i = 0; i < 80; i++) {
      const inst = randomInstance(9000 + i, { candidates: [10, 60], points: [50, 400], budget: i % 2 === 1 });
      // shared sites: many candidates per site, so opening a site makes its other candidates cheaper
      inst.candidates.forEach((c, j) => (c.siteIndex = j % Math.max(1, Math.floor(inst.sites.length / 2))));
      inst.excludedSites = undefined;
      if (inst.budget !== undefined && inst.forced) {
        const c = inst.candidates[inst.forced[0]];
        inst.budget = Math.max(inst.budget, c.cost + inst.sites[c.siteIndex].cost);
      }
      const plain = greedyPlain(inst);
      expect(greedyLazy(inst)).toEqual(plain);
      picks += plain.length;
    }
    expect(picks).toBeGreaterThan(200);
  });
});

describe('requirement semantics', () => {
  it('"≥ 2 distinct sites" keeps every point covered after any single site failure', async () => {
    for (let i = 0; i < 30; i++) {
      const inst = randomInstance(12_000 + i, { candidates: [8, 30], points: [40, 200] });
      inst.points.reqAny.fill(0);
      inst.points.reqPrimary.fill(0);
      inst.points.reqSecondary.fill(2);
      inst.points.weight.fill(1);
      const ref = reference(inst);
      const r = await solvePlan(inst, { exactMaxCandidates: 0 });
      const sites = [...new Set(r.chosen.map((c) => inst.candidates[c].siteIndex))];
      for (const lost of sites) {
        const left = r.chosen.filter((c) => inst.candidates[c].siteIndex !== lost);
        for (let p = 0; p < inst.points.count; p++) {
          if (ref.capped[p][2] === 2)
            expect(folds(inst, ref.coverSets, left, p)[2]).toBeGreaterThanOrEqual(1);
        }
      }
    }
  });

  it('two sensors on one site count once', async () => {
    const all = Uint32Array.from([0, 1, 2]);
    const inst: PlanInstance = {
      sites: [
        { id: 'hill', cost: 1, existing: false },
        { id: 'cape', cost: 50, existing: false },
      ],
      candidates: [
        { siteIndex: 0, typeId: 'ssr-a', kind: 'secondary', cost: 1, covers: all },
        { siteIndex: 0, typeId: 'ssr-b', kind: 'secondary', cost: 2, covers: all },
        { siteIndex: 1, typeId: 'ssr-a', kind: 'secondary', cost: 1, covers: all },
      ],
      points: {
        count: 3,
        weight: new Float64Array(3).fill(1),
        reqAny: new Uint8Array(3),
        reqPrimary: new Uint8Array(3),
        reqSecondary: new Uint8Array(3).fill(2),
      },
    };
    const r = await solvePlan(inst);
    expect(r.chosen).toEqual([0, 2]);
    expect(r.cost).toBe(53);
  });

  it('duplicated points aggregate: same plan, same groups, weights add', async () => {
    const inst = randomInstance(777, { candidates: [12, 12], points: [30, 30] });
    const n = inst.points.count;
    const twice: PlanInstance = {
      ...inst,
      candidates: inst.candidates.map((c) => ({
        ...c,
        covers: Uint32Array.from([...c.covers, ...Array.from(c.covers, (p) => p + n)]),
      })),
      points: {
        count: 2 * n,
        weight: Float64Array.from([...inst.points.weight, ...inst.points.weight]),
        reqAny: Uint8Array.from([...inst.points.reqAny, ...inst.points.reqAny]),
        reqPrimary: Uint8Array.from([...inst.points.reqPrimary, ...inst.points.reqPrimary]),
        reqSecondary: Uint8Array.from([...inst.points.reqSecondary, ...inst.points.reqSecondary]),
      },
    };
    const a = await solvePlan(inst);
    const b = await solvePlan(twice);
    expect(b.chosen).toEqual(a.chosen);
    expect(b.groups).toBe(a.groups);
    expect(b.coveredWeight).toBeCloseTo(2 * a.coveredWeight, 9);
  });
});

describe('determinism', () => {
  it('same input → same result, byte for byte (timings aside)', async () => {
    for (const [seed, budget] of [
      [31, false],
      [32, true],
    ] as const) {
      const make = (): PlanInstance =>
        randomInstance(seed, { candidates: [60, 60], points: [2000, 2000], budget });
      const a = await solvePlan(make());
      const b = await solvePlan(make());
      expect(withoutTimings(b)).toBe(withoutTimings(a));
      expect(a.chosen.length).toBeGreaterThan(0);
    }
  });

  // A seeded instance whose MILP needs more branch-and-bound nodes than it is given (89 when unlimited, measured
  // here), so the node limit — not the clock — is what stops it.
  const branching = (extra: Partial<PlanInstance> = {}): PlanInstance => ({
    ...randomInstance(36, { candidates: [60, 60], points: [2000, 2000] }),
    solverNodes: 20,
    ...extra,
  });
  const withMilp = { exactMaxCandidates: 1000 };

  it('a MILP stopped by its node limit: the same plan twice, and the log and solverStop say where it stopped', async () => {
    const a = await solvePlan(branching(), withMilp);
    const b = await solvePlan(branching(), withMilp);
    expect(withoutTimings(b)).toBe(withoutTimings(a));
    expect(a.solverStop).toBe('work limit');
    expect(a.log.some((l) => l.startsWith('MILP: solutionLimit after 20 of at most 20 nodes'))).toBe(true);
    expect(a.log.join('\n')).not.toMatch(/safety time limit/);
    // A MILP that stops short leaves the bound to the LP, run after it.
    const milpAt = a.log.findIndex((l) => l.startsWith('MILP: '));
    const lpAt = a.log.findIndex((l) => /^LP: \w+ after \d+ iterations/.test(l));
    expect(lpAt).toBeGreaterThan(milpAt);
  });

  it('the same plan while other threads keep every core busy', async () => {
    const quiet = await solvePlan(branching(), withMilp);
    const busy = Array.from(
      { length: availableParallelism() },
      () => new Worker('for (;;) {}', { eval: true }),
    );
    try {
      await Promise.all(busy.map((w) => once(w, 'online')));
      const loaded = await solvePlan(branching(), withMilp);
      expect(withoutTimings(loaded)).toBe(withoutTimings(quiet));
    } finally {
      await Promise.all(busy.map((w) => w.terminate()));
    }
  });

  it('the safety time limit, when it is not reached, leaves the plan alone; more nodes never raise the cost', async () => {
    const short = await solvePlan(branching({ timeLimitMs: 60_000 }), withMilp);
    const long = await solvePlan(branching({ timeLimitMs: 600_000 }), withMilp);
    expect(withoutTimings(long)).toBe(withoutTimings(short));
    const more = await solvePlan(branching({ solverNodes: 200 }), withMilp);
    expect(more.log.some((l) => /^MILP: optimal after \d+ of at most 200 nodes/.test(l))).toBe(true);
    expect(more.solverStop).toBe('nothing');
    expect(more.cost).toBeLessThanOrEqual(short.cost);
    expect(more.lowerBound).toBeGreaterThanOrEqual(short.lowerBound);
    // Proved optimal: the plan's cost is its bound, and the LP, which could only give a weaker one, is not run.
    expect(more.lowerBound).toBe(more.cost);
    expect(more.log).toContain('LP: not run (the MILP proved its plan optimal)');
    expect(more.log.some((l) => /^LP: \w+ after/.test(l))).toBe(false);
    const none = await solvePlan(branching({ solverNodes: 0 }), withMilp);
    expect(none.log).toContain('MILP: not run (node limit 0)');
    expect(none.solverStop).toBe('work limit');
    expect(none.method).not.toMatch(/MILP/);
  });

  it('reports progress from 0 to 1', async () => {
    const seen: number[] = [];
    await solvePlan(randomInstance(5, { candidates: [10, 10], points: [20, 20] }), {
      onProgress: (f) => seen.push(f),
    });
    expect(seen[0]).toBe(0);
    expect(seen.at(-1)).toBe(1);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
  });
});

describe('bad input', () => {
  const base = (): PlanInstance => ({
    sites: [
      { id: 'north-ridge', cost: 10, existing: false },
      { id: 'harbour', cost: 0, existing: true },
    ],
    candidates: [
      { siteIndex: 0, typeId: 'psr-l', kind: 'primary', cost: 5, covers: Uint32Array.from([0, 1]) },
      { siteIndex: 1, typeId: 'ssr-a', kind: 'secondary', cost: 3, covers: Uint32Array.from([1, 2]) },
      { siteIndex: 0, typeId: 'ssr-a', kind: 'secondary', cost: 3, covers: Uint32Array.from([0, 1, 2]) },
    ],
    points: {
      count: 3,
      weight: new Float64Array([1, 1, 1]),
      reqAny: new Uint8Array(3),
      reqPrimary: new Uint8Array([1, 0, 0]),
      reqSecondary: new Uint8Array([1, 2, 2]),
    },
  });

  async function rejects(inst: PlanInstance, where: RegExp, found: RegExp): Promise<InputError> {
    try {
      await solvePlan(inst);
    } catch (e) {
      expect(isInputError(e)).toBe(true);
      const err = e as InputError;
      expect(err.where).toMatch(where);
      expect(err.found).toMatch(found);
      expect(err.expected.length).toBeGreaterThan(5);
      return err;
    }
    throw new Error('expected an InputError');
  }

  it('an unmeetable requirement is capped at what is achievable, reported, and the rest is planned', async () => {
    const inst = base();
    inst.points.reqSecondary[1] = 3; // only two sites cover point 1
    inst.points.reqPrimary[2] = 1; // no primary covers point 2
    const r = await solvePlan(inst);
    expect(r.unmeetable).toEqual([
      { kind: 'primary', required: 1, achievable: 0, points: 1, weight: 1, firstPoint: 2 },
      { kind: 'secondary', required: 3, achievable: 2, points: 1, weight: 1, firstPoint: 1 },
    ]);
    expect(r.demandMet).toBe(true);
    expect(r.chosen).toEqual([0, 1, 2]);
    expect(r.totalWeight).toBe(1 + 1 + 3 + 2 + 1); // p0: P1 S1; p1: S3; p2: S2 P1
    expect(r.achievableWeight).toBe(1 + 1 + 2 + 2);
    expect(r.coveredWeight).toBe(r.achievableWeight);
    expect(r.log.filter((l) => l.startsWith('unmeetable'))).toHaveLength(2);
  });

  it('a budget below the forced sensors’ cost', async () => {
    const inst = base();
    inst.forced = [0];
    inst.budget = 14;
    const e = await rejects(inst, /budget/, /14/);
    expect(e.expected).toMatch(/15/);
  });

  it('a forced sensor on an excluded site', async () => {
    const inst = base();
    inst.forced = [2];
    inst.excludedSites = [0];
    const e = await rejects(inst, /forced/, /excluded site 'north-ridge'/);
    expect(e.message).toMatch(/ssr-a/);
  });

  it('unknown candidate and site indices', async () => {
    await rejects({ ...base(), forced: [0, 7] }, /forced\[1\]/, /^7$/);
    await rejects({ ...base(), excludedSites: [-1] }, /excludedSites\[0\]/, /-1/);
    const inst = base();
    inst.candidates[1].siteIndex = 2;
    await rejects(inst, /candidates\[1\]\.siteIndex/, /^2$/);
  });

  it('malformed covers, weights, costs and kinds', async () => {
    const unsorted = base();
    unsorted.candidates[2].covers = Uint32Array.from([0, 2, 1]);
    await rejects(unsorted, /candidates\[2\]\.covers\[2\]/, /^1$/);
    const outside = base();
    outside.candidates[0].covers = Uint32Array.from([0, 3]);
    await rejects(outside, /candidates\[0\]\.covers\[1\]/, /^3$/);
    const weight = base();
    weight.points.weight[1] = -2;
    await rejects(weight, /points\.weight\[1\]/, /-2/);
    const cost = base();
    cost.sites[0].cost = Number.NaN;
    await rejects(cost, /sites\[0\]\.cost/, /NaN/);
    const kind = base();
    (kind.candidates[0] as { kind: string }).kind = 'weather';
    await rejects(kind, /candidates\[0\]\.kind/, /weather/);
    const short = base();
    short.points.reqPrimary = new Uint8Array(2);
    await rejects(short, /points\.reqPrimary/, /2 entries/);
  });

  it('a node limit that is not a whole number ≥ 0', async () => {
    await rejects({ ...base(), solverNodes: -1 }, /solverNodes/, /^-1$/);
    await rejects({ ...base(), solverNodes: 2.5 }, /solverNodes/, /^2\.5$/);
  });
});
