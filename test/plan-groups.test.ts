/**
 * The plan's groups of demand points (worker/core/plan/demand.ts `preparePlan`: partition refinement, then each
 * group's covering candidates read from the covers) against their definition, worked out here with plain string
 * keys [calc]: points with the same requirements and the same covering allowed candidates form one group, groups
 * are numbered by their first point, each lists its candidates ascending (`sigCand`), and each candidate lists the
 * groups it covers ascending (`covGroup`, the transpose); with the covers let go while the model is built, the same
 * model.
 */
import { describe, expect, it } from 'vitest';
import { beginPlan, preparePlan, type PlanInstance } from '../worker/core/plan.ts';
import { CoverState } from '../worker/core/plan/cover-state.ts';
import { mulberry32 } from './support/bumps.ts';
import { mixedKindInstance, siteCostInstance } from './support/plan-check.ts';

/**
 * The groups by definition: per point with demand its key (requirements, covering allowed candidates whose kind
 * counts toward one of them: a radar toward 'any' or its own kind, a receiver toward its own kind).
 */
function groupsByDefinition(inst: PlanInstance): { rep: number[]; sig: number[][]; points: number[] } {
  const ex = new Set(inst.excludedSites ?? []);
  const P = inst.points;
  const reqOf = (p: number) => ({
    any: P.reqAny[p],
    primary: P.reqPrimary[p],
    secondary: P.reqSecondary[p],
    adsb: P.reqAdsb?.[p] ?? 0,
    mlat: P.reqMlat?.[p] ?? 0,
  });
  const counts = (kind: string, p: number) => {
    const r = reqOf(p);
    return r[kind as keyof typeof r] > 0 || ((kind === 'primary' || kind === 'secondary') && r.any > 0);
  };
  const covering: number[][] = Array.from({ length: P.count }, () => []);
  inst.candidates.forEach((c, j) => {
    if (!ex.has(c.siteIndex)) for (const p of c.covers) if (counts(c.kind, p)) covering[p].push(j);
  });
  const byKey = new Map<string, number>();
  const rep: number[] = [];
  const sig: number[][] = [];
  const points: number[] = [];
  for (let p = 0; p < P.count; p++) {
    const req = Object.values(reqOf(p));
    if (!(P.weight[p] > 0) || req.every((r) => r === 0)) continue;
    const key = `${req.join(',')}|${covering[p].join(',')}`;
    let g = byKey.get(key);
    if (g === undefined) {
      g = rep.length;
      byKey.set(key, g);
      rep.push(p);
      sig.push(covering[p]);
      points.push(0);
    }
    points[g]++;
  }
  return { rep, sig, points };
}

/** The model's arrays that two ways of building it must give alike. */
const MODEL_ARRAYS = [
  'gRep',
  'gPoints',
  'gWeight',
  'gReq',
  'sigStart',
  'sigCand',
  'covStart',
  'covGroup',
] as const;

/** A mixed instance with zero weights, points without demand and sometimes an excluded site. */
function withGaps(seed: number): PlanInstance {
  const inst = mixedKindInstance(seed);
  const r = mulberry32(seed + 1);
  const P = inst.points;
  P.weight = P.weight.map((w) => (r() < 0.1 ? 0 : w));
  for (let p = 0; p < P.count; p++) {
    if (r() < 0.1) {
      P.reqAny[p] = 0;
      P.reqPrimary[p] = 0;
      P.reqSecondary[p] = 0;
      if (P.reqAdsb) P.reqAdsb[p] = 0;
      if (P.reqMlat) P.reqMlat[p] = 0;
    }
  }
  if (!inst.forced?.length && r() < 0.5) inst.excludedSites = [0];
  return inst;
}

describe('the demand groups', () => {
  it('are those of the definition, with their candidates and the transpose, on 60 seeded instances', () => {
    let groups = 0;
    for (const inst of [
      ...Array.from({ length: 30 }, (_, i) => siteCostInstance(51_000 + i)),
      ...Array.from({ length: 30 }, (_, i) => withGaps(52_000 + i)),
    ]) {
      const m = preparePlan(inst);
      const def = groupsByDefinition(inst);
      // preparePlan keeps the groups with demand left after capping: compare those, in order.
      const kept = new Set(Array.from(m.gRep));
      const live = def.rep
        .map((rep, g) => ({ rep, sig: def.sig[g], points: def.points[g] }))
        .filter((g) => kept.has(g.rep));
      expect(Array.from(m.gRep)).toEqual(live.map((g) => g.rep));
      expect(Array.from(m.gPoints)).toEqual(live.map((g) => g.points));
      live.forEach((g, i) =>
        expect(Array.from(m.sigCand.subarray(m.sigStart[i], m.sigStart[i + 1]))).toEqual(g.sig),
      );
      for (let c = 0; c < m.nCand; c++) {
        const byDef = live.flatMap((g, i) => (g.sig.includes(c) ? [i] : []));
        expect(Array.from(m.covGroup.subarray(m.covStart[c], m.covStart[c + 1]))).toEqual(byDef);
      }
      groups += m.nGroups;
      // With the covers let go as the model is built: the same model, and no cover list left.
      const copy = { ...inst, candidates: inst.candidates.map((c) => ({ ...c, covers: c.covers.slice() })) };
      const r = preparePlan(copy, true);
      for (const key of MODEL_ARRAYS) expect(Array.from(r[key])).toEqual(Array.from(m[key]));
      expect(copy.candidates.every((c) => c.covers.length === 0)).toBe(true);
    }
    expect(groups).toBeGreaterThan(500);
  });
});

describe('the grouping fed one candidate at a time (beginPlan)', () => {
  it('gives the model of preparePlan, the candidates in any order, and refuses misuse', () => {
    for (let i = 0; i < 30; i++) {
      const inst = withGaps(55_000 + i);
      const m = preparePlan(inst);
      const r = mulberry32(56_000 + i);
      const stream = beginPlan({
        ...inst,
        candidates: inst.candidates.map((c) => ({ ...c, covers: new Uint32Array(0) })),
      });
      const order = Array.from(stream.allowedList);
      // A shuffle in every other instance: the lists are then sorted at the end.
      if (i % 2 === 1) order.sort(() => r() - 0.5);
      for (const c of order) stream.add(c, inst.candidates[c].covers);
      expect(() => stream.add(order[0], inst.candidates[order[0]].covers)).toThrow(/added twice/);
      const s = stream.finish();
      for (const key of MODEL_ARRAYS) expect(Array.from(s[key])).toEqual(Array.from(m[key]));
      expect(s.unmeetable).toEqual(m.unmeetable);
      expect(() => stream.finish()).toThrow(/built already/);
    }
    // A candidate left out is an error, not a smaller model.
    const inst = withGaps(57_000);
    const stream = beginPlan(inst);
    stream.add(stream.allowedList[0], inst.candidates[stream.allowedList[0]].covers);
    expect(() => stream.finish()).toThrow(/never added/);
  });
});

describe('the cover state', () => {
  it('after any run of adds and removes (sites closed and opened again) equals a state built afresh', () => {
    let reopened = 0;
    for (let i = 0; i < 30; i++) {
      const inst = withGaps(53_000 + i);
      const m = preparePlan(inst);
      const st = new CoverState(m);
      const r = mulberry32(54_000 + i);
      for (let step = 0; step < 120; step++) {
        const c = m.allowedList[Math.floor(r() * m.allowedList.length)];
        const s = m.candSite[c];
        if (st.chosen[c]) st.remove(c);
        else {
          if (st.siteCnt[s] === null && step > 0) reopened++;
          st.add(c);
        }
        // A closed site holds no counts; an open one holds the counts of its chosen candidates.
        expect(st.siteCnt[s] === null).toBe(st.siteChosen[s] === 0);
        const fresh = new CoverState(m);
        for (const x of st.chosenList()) fresh.add(x);
        expect(st.deficit).toBe(fresh.deficit);
        expect(Array.from(st.cnt)).toEqual(Array.from(fresh.cnt));
        for (const x of m.allowedList) expect(st.gain(x)).toBe(fresh.gain(x));
      }
    }
    expect(reopened).toBeGreaterThan(100);
  });

  it('counts past 255 candidates of one kind on one site (two bytes a count there)', () => {
    // One site, 300 secondary sensors covering the one point, which needs one: each removal but the last keeps it met.
    const inst: PlanInstance = {
      sites: [{ id: 's', cost: 1, existing: false }],
      candidates: Array.from({ length: 300 }, (_, j) => ({
        siteIndex: 0,
        typeId: `t${j}`,
        kind: 'secondary' as const,
        cost: 1,
        covers: Uint32Array.of(0),
      })),
      points: {
        count: 1,
        weight: Float64Array.of(1),
        reqAny: Uint8Array.of(0),
        reqPrimary: Uint8Array.of(0),
        reqSecondary: Uint8Array.of(1),
      },
    };
    const st = new CoverState(preparePlan(inst));
    for (let c = 0; c < 300; c++) st.add(c);
    // One site: a fold of one, for 'any' and for secondary (slots 0 and 2), however many of its sensors cover it.
    expect(Array.from(st.cnt.subarray(0, 3))).toEqual([1, 0, 1]);
    for (let c = 0; c < 299; c++) {
      st.remove(c);
      expect(st.deficit).toBe(0);
    }
    st.remove(299);
    expect(st.deficit).toBe(1);
  });
});
