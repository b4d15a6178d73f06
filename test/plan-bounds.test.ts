/**
 * The planner's bounds with teeth: small LPs solved by hand (with site costs), the bound builders of
 * worker/core/plan/lp-bound.ts tested one by one, and the bound's tightness on seeded instances checked against
 * a brute-force optimum — so that a bound that is valid but weak (an LP that forgets the site costs, say) fails.
 * Also the cost of sensors already standing (they cost nothing new; their value is reported apart).
 *
 * Outside yardsticks:
 * - The LP relaxation bounds the 0/1 optimum from below, and any dual multipliers of the right signs give a lower
 *   bound by weak duality; a primal and a dual solution of equal value are both optimal [pub, any LP text, e.g.
 *   Chvátal, "Linear Programming", Freeman 1983, ch. 5].
 * - The triangle (three points, each covered by two of three sites) has the half-integral LP optimum of vertex
 *   cover on an odd cycle [pub, Nemhauser & Trotter, "Vertex packings: structural properties and algorithms",
 *   Math. Programming 8, 1975]; the values below are worked out by hand in the comments [calc].
 * - Brute force: every subset of the candidates, with the definitions of test/support/plan-check.ts [calc].
 * - A cover row whose candidate set includes another row's, with no larger need, is implied by it (the row-dominance
 *   reduction of set covering [pub, e.g. Garfinkel & Nemhauser, "Integer Programming", Wiley 1972; from memory];
 *   the proof for this model, z columns included, is beside lp-bound.ts `impliedRows`): the LP and MILP optima
 *   without such rows equal those with them [calc: HiGHS on both].
 */
import { describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { preparePlan, solvePlan, type PlanInstance } from '../worker/core/plan.ts';
import {
  boundPlan,
  buildModel,
  dualBound,
  getHighs,
  singleRowBound,
  type BoundOptions,
} from '../worker/core/plan/lp-bound.ts';
import { bruteForceOptimum, newSpend, shortfalls, siteCostInstance } from './support/plan-check.ts';

const INF = 1e30; // any value above every finite bound plays HiGHS's infinity for the builders

/** The LP bound alone: no MILP, no truncation. */
const LP_ONLY: BoundOptions = {
  timeLimitMs: 60_000,
  mipMaxNodes: 0,
  lpMaxIterations: 200,
  exactMaxCandidates: -1,
  exactMaxNonzeros: -1,
  lpMaxNonzeros: 1e9,
};

function points(req: { any?: number[]; primary?: number[]; secondary?: number[] }, n: number) {
  return {
    count: n,
    weight: new Float64Array(n).fill(1),
    reqAny: Uint8Array.from(req.any ?? new Array(n).fill(0)),
    reqPrimary: Uint8Array.from(req.primary ?? new Array(n).fill(0)),
    reqSecondary: Uint8Array.from(req.secondary ?? new Array(n).fill(0)),
  };
}

/**
 * H1, the triangle with site costs. Sites A, B, C cost 2.5, 3.5, 4.5; one secondary sensor each (type cost 1);
 * points p0 ⊂ A∩B, p1 ⊂ B∩C, p2 ⊂ A∩C, each needing secondary ≥ 1.
 *   min 2.5yA + 3.5yB + 4.5yC + xA + xB + xC
 *   s.t. xA − yA ≤ 0, xB − yB ≤ 0, xC − yC ≤ 0          (rows 0–2)
 *        xA + xB ≥ 1 (p0),  xB + xC ≥ 1 (p1),  xA + xC ≥ 1 (p2)   (rows 3–5),  0 ≤ x, y ≤ 1
 * Primal x = y = ½ everywhere: (3.5 + 4.5 + 5.5)/2 = 6.75.
 * Dual π = (−2.5, −3.5, −4.5, 1.25, 3.25, 2.25): every reduced cost is 0 (xA: 1 + 2.5 − 1.25 − 2.25 = 0; yA:
 * 2.5 − 2.5 = 0; xB: 1 + 3.5 − 1.25 − 3.25 = 0; xC: 1 + 4.5 − 3.25 − 2.25 = 0) and Σ π·bound = 1.25 + 3.25 + 2.25
 * = 6.75 — so the LP optimum is 6.75. The 0/1 optimum opens two sites: A+B = 3.5 + 4.5 = 8 (A+C 9, B+C 10).
 * Without the site costs the LP would be 1.5 and the 0/1 optimum 2.
 */
const H1: PlanInstance = {
  sites: [
    { id: 'A', cost: 2.5, existing: false },
    { id: 'B', cost: 3.5, existing: false },
    { id: 'C', cost: 4.5, existing: false },
  ],
  candidates: [
    { siteIndex: 0, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([0, 2]) },
    { siteIndex: 1, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([0, 1]) },
    { siteIndex: 2, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([1, 2]) },
  ],
  points: points({ secondary: [1, 1, 1] }, 3),
};

/**
 * H2, three sites and two types, four points with folds 1–2. Sites N, E, W cost 4, 2, 3; type P (primary) costs
 * 5, S (secondary) 1; E takes S only. Candidates: 0 N/P covers p0 p1; 1 N/S p0 p2; 2 E/S p0 p2 p3; 3 W/P p1;
 * 4 W/S p2 p3. Requirements: p0 any ≥ 2, p1 primary ≥ 1, p2 secondary ≥ 2, p3 secondary ≥ 1.
 * Columns x0…x4, yN yE yW, and z for "site N covers p0" (N has two sensors there: z ≤ x0 + x1, z ≤ yN).
 *   min 4yN + 2yE + 3yW + 5x0 + x1 + x2 + 5x3 + x4
 *   rows 0–4: x0 − yN ≤ 0, x1 − yN ≤ 0, x2 − yE ≤ 0, x3 − yW ≤ 0, x4 − yW ≤ 0
 *   rows 5–6: z − x0 − x1 ≤ 0, z − yN ≤ 0
 *   rows 7–10: z + x2 ≥ 2 (p0), x0 + x3 ≥ 1 (p1), x1 + x2 + x4 ≥ 2 (p2), x2 + x4 ≥ 1 (p3)
 * p0 forces z = x2 = 1, hence yN = yE = 1; p1 is met cheapest by x0 (5 against 5 + 3 for W/P), p2 then by x1.
 * Primal x0 = x1 = x2 = yN = yE = z = 1: 4 + 2 + 5 + 1 + 1 = 13, which is also 0/1.
 * Dual π7 = 4, π8 = 5, π9 = 1, π6 = −4, π2 = −2, the rest 0: reduced costs z 0 − 4 + 4 = 0, yN 4 − 4 = 0,
 * x2 1 − 4 − 1 + 2 = −2 (x2 at its upper bound 1 counts −2), yE 2 − 2 = 0, x0 5 − 5 = 0, x1 1 − 1 = 0, x3 5 − 5
 * = 0, x4 1 − 1 = 0, yW 3; bound 2·4 + 5 + 2·1 − 2 = 13. LP optimum = 0/1 optimum = 13. Without site costs: 7.
 * Single-row bound (cheapest way to meet one row alone, a site priced at its cheapest sensor there plus its
 * cost): p0 needs N (1 + 4) and E (1 + 2) = 8; p1 min(5 + 4, 5 + 3) = 8; p2 3 + 4 = 7; p3 3 → 8.
 */
const H2 = (): PlanInstance => ({
  sites: [
    { id: 'N', cost: 4, existing: false },
    { id: 'E', cost: 2, existing: false },
    { id: 'W', cost: 3, existing: false },
  ],
  candidates: [
    { siteIndex: 0, typeId: 'P', kind: 'primary', cost: 5, covers: Uint32Array.from([0, 1]) },
    { siteIndex: 0, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([0, 2]) },
    { siteIndex: 1, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([0, 2, 3]) },
    { siteIndex: 2, typeId: 'P', kind: 'primary', cost: 5, covers: Uint32Array.from([1]) },
    { siteIndex: 2, typeId: 'S', kind: 'secondary', cost: 1, covers: Uint32Array.from([2, 3]) },
  ],
  points: points({ any: [2, 0, 0, 0], primary: [0, 1, 0, 0], secondary: [0, 0, 2, 1] }, 4),
});

/**
 * H2 with N an existing site whose primary (N/P) stands already and is kept: yN and x0 cost 0, x0 fixed at 1.
 * p0 then needs E (yE + x2 = 3), p1 is met by x0, p2 by x1 (1, N being open) → new spend 2 + 1 + 1 = 4, the
 * value of the standing sensor, 5, reported apart. The LP is 4 too: dual π7 = 2, π9 = 1, π2 = −2, the rest 0;
 * reduced costs z −2 (at its upper bound 1: counts −2), x2 1 − 2 − 1 + 2 = 0, yE 2 − 2 = 0, x1 = x4 = 1 − 1 = 0,
 * x0 0 (fixed at 1), x3 5, yW 3, yN 0; bound 2·2 + 2·1 − 2 = 4. Single-row bound: p0 has N already (the forced
 * sensor), needs E: 3; p2 N/S 1 (N open) + E/S 3 = 4; p3 3 → 4.
 */
const H2_STANDING = (): PlanInstance => {
  const inst = H2();
  inst.sites[0].existing = true;
  inst.forced = [0];
  inst.standing = [0];
  return inst;
};

async function lpBound(inst: PlanInstance): Promise<number> {
  return (await boundPlan(preparePlan(inst), [], LP_ONLY)).costLowerBound;
}

describe('hand-solved LPs with site costs', () => {
  it('H1, the triangle: LP 6.75 (fractional), 0/1 optimum 8', async () => {
    expect(await lpBound(H1)).toBeCloseTo(6.75, 6);
    const r = await solvePlan(H1);
    expect(r.cost).toBe(8);
    expect(r.chosen).toEqual([0, 1]);
    expect(r.lowerBound).toBe(8); // the MILP closes it
    const lpOnly = await solvePlan(H1, { exactMaxCandidates: 0, exactMaxNonzeros: 0 });
    expect(lpOnly.cost).toBe(8);
    expect(lpOnly.lowerBound).toBeCloseTo(6.75, 6); // costs are not integers: no rounding up
  });

  it('H2, 3 sites × 2 types, folds 1–2: LP = 0/1 optimum = 13', async () => {
    expect(await lpBound(H2())).toBeCloseTo(13, 6);
    for (const opts of [{}, { exactMaxCandidates: 0, exactMaxNonzeros: 0 }]) {
      const r = await solvePlan(H2(), opts);
      expect(r.chosen).toEqual([0, 1, 2]);
      expect(r.cost).toBe(13);
      expect(r.lowerBound).toBeCloseTo(13, 6);
      expect(r.chosenCost).toEqual([5 + 4, 1, 1 + 2]); // N's cost with its first sensor, E's with E/S
      expect(r.existingValue).toBe(0);
    }
  });

  it('H2 with a standing sensor on an existing site: new spend 4, its value 5 apart', async () => {
    expect(await lpBound(H2_STANDING())).toBeCloseTo(4, 6);
    const r = await solvePlan(H2_STANDING());
    expect(r.chosen).toEqual([0, 1, 2]);
    expect(r.cost).toBe(4);
    expect(r.lowerBound).toBe(4);
    expect(r.chosenCost).toEqual([0, 1, 3]);
    expect(r.chosenStanding).toEqual([true, false, false]);
    expect(r.existingValue).toBe(5);
    expect(r.log.some((l) => l.startsWith('existing: 1 standing sensors kept, worth 5'))).toBe(true);
    // the same sensor kept but not standing (only its site exists) pays its type: 4 + 5
    const kept = H2_STANDING();
    kept.standing = undefined;
    const k = await solvePlan(kept);
    expect(k.cost).toBe(9);
    expect(k.existingValue).toBe(0);
  });

  it('a standing sensor must stand on an existing site', async () => {
    const bad = H2();
    bad.standing = [3];
    try {
      await solvePlan(bad);
      throw new Error('expected an InputError');
    } catch (e) {
      expect(isInputError(e)).toBe(true);
      expect((e as Error).message).toMatch(/standing.*'W'.*not marked existing/);
    }
  });

  it('budget mode: a standing sensor leaves the whole budget for new spend', async () => {
    // H2 with budget 4: only the standing N/P (0) plus E/S (3) and N/S (1) fit, which meets every unit.
    const inst = { ...H2_STANDING(), budget: 4 };
    const r = await solvePlan(inst);
    // Every unit is met within the budget, so the budget is not binding: the least-cost plan (new spend 4).
    expect(r.mode).toBe('cover');
    expect(r.method).toMatch(/budget 4 not binding/);
    expect(r.cost).toBe(4);
    expect(r.demandMet).toBe(true);
    expect(r.existingValue).toBe(5);
    // without standing, the forced sensor's 5 + N's 4 would exceed the budget at once: one clear message
    const full = { ...inst, standing: undefined };
    await expect(solvePlan(full)).rejects.toThrow(/budget/);
  });
});

describe('the bound builders, one by one', () => {
  it('singleRowBound: 4.5 (H1), 8 (H2), 4 (H2 standing), worked by hand', () => {
    expect(singleRowBound(preparePlan(H1))).toBeCloseTo(4.5, 12);
    expect(singleRowBound(preparePlan(H2()))).toBe(8);
    expect(singleRowBound(preparePlan(H2_STANDING()))).toBe(4);
  });

  it('buildModel (cover): the columns, costs and rows written out for H2', () => {
    const b = buildModel(preparePlan(H2()), INF, 1e9);
    expect(b.numCols).toBe(9); // x0…x4, yN yE yW, one z
    expect(Array.from(b.xCol)).toEqual([0, 1, 2, 3, 4]);
    expect(Array.from(b.yCol)).toEqual([5, 6, 7]);
    expect(b.zDefs).toEqual([{ col: 8, site: 0, cands: [0, 1] }]);
    expect(Array.from(b.colCost)).toEqual([5, 1, 1, 5, 1, 4, 2, 3, 0]);
    expect(Array.from(b.colLower)).toEqual(new Array(9).fill(0));
    expect(Array.from(b.colUpper)).toEqual(new Array(9).fill(1));
    const rows = Array.from({ length: b.rowLower.length }, (_, i) => {
      const terms: string[] = [];
      for (let j = b.starts[i]; j < b.starts[i + 1]; j++) terms.push(`${b.values[j]}·c${b.indices[j]}`);
      const lo = b.rowLower[i] <= -INF ? '' : `${b.rowLower[i]} ≤ `;
      const hi = b.rowUpper[i] >= INF ? '' : ` ≤ ${b.rowUpper[i]}`;
      return `${lo}${terms.join(' + ')}${hi}`;
    });
    expect(rows).toEqual([
      '1·c0 + -1·c5 ≤ 0', // x0 ≤ yN
      '1·c1 + -1·c5 ≤ 0',
      '1·c2 + -1·c6 ≤ 0',
      '1·c3 + -1·c7 ≤ 0',
      '1·c4 + -1·c7 ≤ 0',
      '1·c8 + -1·c0 + -1·c1 ≤ 0', // z ≤ x0 + x1
      '1·c8 + -1·c5 ≤ 0', // z ≤ yN
      '2 ≤ 1·c8 + 1·c2', // p0 any ≥ 2
      '1 ≤ 1·c0 + 1·c3', // p1 primary ≥ 1
      '2 ≤ 1·c1 + 1·c2 + 1·c4', // p2 secondary ≥ 2
      '1 ≤ 1·c2 + 1·c4', // p3 secondary ≥ 1
    ]);
    expect([b.rowsUsed, b.rowsTotal, b.offset]).toEqual([4, 4, 0]);
  });

  it('buildModel: forced sensors are fixed at 1, standing ones cost 0, excluded sites have no columns', () => {
    const b = buildModel(preparePlan(H2_STANDING()), INF, 1e9);
    expect(b.colLower[b.xCol[0]]).toBe(1);
    expect(b.colCost[b.xCol[0]]).toBe(0);
    expect(b.colCost[b.yCol[0]]).toBe(0);
    const ex = buildModel(preparePlan({ ...H2(), excludedSites: [2] }), INF, 1e9, 0);
    expect(ex.xCol[3]).toBe(-1);
    expect(ex.yCol[2]).toBe(-1);
    expect(ex.numCols).toBe(3 + 2 + 1);
  });

  it('buildModel: a row implied by another is left out (H2 without W: p0 "any ≥ 2" by p2 "secondary ≥ 2")', () => {
    // Without W, p0 counts N/P, N/S, E/S toward 'any' (need 2) and p2 counts N/S, E/S toward 'secondary' (need 2):
    // {1, 2} ⊆ {0, 1, 2} with the same need, so any plan meeting p2 meets p0, and p0's row and its z go. p1 ({N/P},
    // need 1) and p3 ({E/S}, need 1) lie in p0's and p2's sets but need less: they stay.
    const m = preparePlan({ ...H2(), excludedSites: [2] });
    const all = buildModel(m, INF, 1e9, 0);
    const cut = buildModel(m, INF, 1e9);
    expect([all.rowsUsed, all.rowsImplied, all.rowsTotal]).toEqual([4, 0, 4]);
    expect([cut.rowsUsed, cut.rowsImplied, cut.rowsTotal, cut.impliedComplete]).toEqual([3, 1, 4, true]);
    expect(cut.numCols).toBe(3 + 2); // no z: only p0 needed one
    expect(Array.from(cut.rowLower.slice(-3))).toEqual([1, 2, 1]); // p1, p2, p3
    // The same search stopped by its work budget drops nothing more than it found, and says so.
    const stopped = buildModel(m, INF, 1e9, 1);
    expect(stopped.impliedComplete).toBe(false);
    expect(stopped.rowsImplied).toBeLessThanOrEqual(1);
  });

  it('buildModel: over the nonzero limit it keeps the tightest rows (fewest spare sites) and says so', () => {
    // spare sites per row: p0 2 − 2 = 0, p1 2 − 1 = 1, p2 3 − 2 = 1, p3 2 − 1 = 1
    const m = preparePlan(H2());
    expect(buildModel(m, INF, 2).rowsUsed).toBe(1);
    const four = buildModel(m, INF, 4);
    expect([four.rowsUsed, four.rowsTotal]).toEqual([2, 4]);
    expect(Array.from(four.rowLower.slice(-2))).toEqual([2, 1]); // p0 and p1 kept, in order
  });

  it('buildModel (budget): u columns worth −weight, capped at the requirement; one budget row of the costs', () => {
    const b = buildModel(preparePlan({ ...H2(), budget: 10 }), INF, 1e9);
    expect(b.uDefs.map((u) => [u.g, u.k])).toEqual([
      [0, 0],
      [1, 1],
      [2, 2],
      [3, 2],
    ]);
    expect(b.uDefs.map((u) => [b.colCost[u.col], b.colUpper[u.col]])).toEqual([
      [-1, 2],
      [-1, 1],
      [-1, 2],
      [-1, 1],
    ]);
    const last = b.rowLower.length - 1;
    expect(b.rowUpper[last]).toBe(10);
    const coef = new Map<number, number>();
    for (let j = b.starts[last]; j < b.starts[last + 1]; j++) coef.set(b.indices[j], b.values[j]);
    expect([...coef.entries()].sort((a, c) => a[0] - c[0])).toEqual([
      [0, 5],
      [1, 1],
      [2, 1],
      [3, 5],
      [4, 1],
      [5, 4],
      [6, 2],
      [7, 3],
    ]);
    // x and y carry no objective in budget mode
    expect(Array.from(b.colCost.slice(0, 8))).toEqual(new Array(8).fill(0));
  });

  it('dualBound: the hand duals give the hand optima; zero duals give the forced cost; wrong signs are ignored', () => {
    const b1 = buildModel(preparePlan(H1), INF, 1e9);
    expect(dualBound(b1, Float64Array.from([-2.5, -3.5, -4.5, 1.25, 3.25, 2.25]), INF)).toBeCloseTo(6.75, 6);
    const b2 = buildModel(preparePlan(H2()), INF, 1e9);
    const pi2 = new Float64Array(11);
    pi2[7] = 4;
    pi2[8] = 5;
    pi2[9] = 1;
    pi2[6] = -4;
    pi2[2] = -2;
    expect(dualBound(b2, pi2, INF)).toBeCloseTo(13, 6);
    expect(dualBound(b2, new Float64Array(11), INF)).toBeCloseTo(0, 9);
    const bs = buildModel(preparePlan(H2_STANDING()), INF, 1e9);
    const piS = new Float64Array(11);
    piS[7] = 2;
    piS[9] = 1;
    piS[2] = -2;
    expect(dualBound(bs, piS, INF)).toBeCloseTo(4, 6);
    expect(dualBound(bs, new Float64Array(bs.rowLower.length), INF)).toBeCloseTo(0, 9); // standing: free
    const forcedW = buildModel(preparePlan({ ...H2(), forced: [3] }), INF, 1e9);
    expect(dualBound(forcedW, new Float64Array(forcedW.rowLower.length), INF)).toBeCloseTo(5, 6); // x3 at 1
    // a multiplier of the wrong sign (a ≥ row with π < 0, a ≤ row with π > 0) counts as 0
    const wrong = Float64Array.from([5, 5, 5, -1, -1, -1]);
    expect(dualBound(b1, wrong, INF)).toBeCloseTo(0, 9);
  });

  it('dualBound: any multipliers bound the LP optimum from below (weak duality), 2 000 seeded draws', () => {
    let s = 7;
    const rnd = () => ((s = (s * 1_103_515_245 + 12_345) % 2 ** 31) / 2 ** 31) * 12 - 4;
    for (const [b, opt] of [
      [buildModel(preparePlan(H1), INF, 1e9), 6.75],
      [buildModel(preparePlan(H2()), INF, 1e9), 13],
    ] as const) {
      for (let i = 0; i < 1000; i++) {
        const pi = Float64Array.from({ length: b.rowLower.length }, rnd);
        expect(dualBound(b, pi, INF)).toBeLessThanOrEqual(opt + 1e-9);
      }
    }
  });

  it('HiGHS solves the built LP to the hand optimum, and the recomputed bound agrees', async () => {
    const highs = await getHighs();
    for (const [inst, opt] of [
      [H1, 6.75],
      [H2(), 13],
      [H2_STANDING(), 4],
    ] as const) {
      const b = buildModel(preparePlan(inst), highs.infinity, 1e9);
      const model = highs.createModel(b.data);
      try {
        model.options.set({ output_flag: false });
        model.run();
        expect(model.getObjectiveValue()).toBeCloseTo(opt, 6);
        expect(dualBound(b, model.getSolution().rowDual, highs.infinity)).toBeCloseTo(opt, 6);
      } finally {
        model.dispose();
      }
    }
  });
});

// ---------------------------------------------------------------------------------------------------------------

/**
 * Tightness on 50 seeded instances where site costs matter (test/support/plan-check.ts, `siteCostInstance`).
 * Measured here (`MEASURE=1 npx vitest run test/plan-bounds.test.ts` prints them): with the LP bound alone (no
 * MILP) the bound equals the brute-force optimum on 46 of 50 and averages 0.9943 of it (47 and 0.9958 before the
 * implied rows were left out: the LP optima are the same, checked below, but the bound is recomputed from the
 * interior point's duals, which moved on three instances, one up, two down); with the default options
 * (the MILP on these small instances) the plan claims optimality (gap 0) on 50 of 50. With the site-cost term of
 * the LP zeroed (`colCost` of the y columns in lp-bound.ts buildModel, tried by hand), those fell to 0 of 50,
 * 0.6403 and 0 of 50. The thresholds sit a little below the measured figures.
 */
describe('tightness against brute force, 50 seeded instances with site costs', () => {
  const N = 50;
  const cases = Array.from({ length: N }, (_, i) => {
    const inst = siteCostInstance(40_000 + i);
    return { inst, opt: bruteForceOptimum(inst).cost };
  });

  it('every instance is feasible and small enough for brute force', () => {
    for (const { opt } of cases) expect(Number.isFinite(opt)).toBe(true);
  });

  it('LP bound alone: ≤ the optimum always, = the optimum on most; plans meet what they claim', async () => {
    let tight = 0;
    let ratio = 0;
    for (const { inst, opt } of cases) {
      const r = await solvePlan(inst, { exactMaxCandidates: 0, exactMaxNonzeros: 0 });
      expect(r.lowerBound).toBeLessThanOrEqual(opt + 1e-9);
      expect(shortfalls(inst, r.chosen)).toEqual([]);
      expect(r.cost).toBeCloseTo(newSpend(inst, r.chosen), 9);
      if (r.gapPct === 0) expect(r.cost).toBeCloseTo(opt, 9);
      if (Math.abs(r.lowerBound - opt) < 1e-6) tight++;
      ratio += opt > 0 ? r.lowerBound / opt : 1;
    }
    if (process.env.MEASURE)
      console.log(`LP only: tight ${tight}/${N}, mean bound/optimum ${(ratio / N).toFixed(4)}`);
    expect(tight).toBeGreaterThanOrEqual(LP_TIGHT_MIN);
    expect(ratio / N).toBeGreaterThanOrEqual(LP_MEAN_MIN);
  });

  it('default (MILP): where the plan claims optimality its cost is the optimum; the bound is never above it', async () => {
    let claimed = 0;
    for (const { inst, opt } of cases) {
      const r = await solvePlan(inst);
      expect(r.lowerBound).toBeLessThanOrEqual(opt + 1e-9);
      expect(shortfalls(inst, r.chosen)).toEqual([]);
      expect(r.cost).toBeCloseTo(newSpend(inst, r.chosen), 9);
      if (r.gapPct === 0) {
        claimed++;
        expect(r.cost).toBeCloseTo(opt, 9);
      }
    }
    if (process.env.MEASURE) console.log(`default: optimality claimed ${claimed}/${N}`);
    expect(claimed).toBeGreaterThanOrEqual(CLAIMED_MIN);
  });
});

describe('implied rows (row dominance of set covering): the same optima without them, 50 seeded instances', () => {
  it('LP and MILP optima equal with and without the implied rows; the smaller MILP’s plan meets every row', async () => {
    const highs = await getHighs();
    const solve = (b: ReturnType<typeof buildModel>, integer: boolean): { obj: number; x: Float64Array } => {
      const integrality = new Int32Array(b.numCols);
      if (integer)
        for (let c = 0; c < b.numCols; c++) integrality[c] = b.zDefs.some((z) => z.col === c) ? 0 : 1;
      const model = highs.createModel(integer ? { ...b.data, integrality } : b.data);
      try {
        model.options.set({ output_flag: false, mip_rel_gap: 0, mip_abs_gap: 0 });
        model.run();
        return { obj: model.getObjectiveValue(), x: Float64Array.from(model.getSolution().colValue) };
      } finally {
        model.dispose();
      }
    };
    let withImplied = 0;
    let dropped = 0;
    let rows = 0;
    for (let i = 0; i < 50; i++) {
      const inst = siteCostInstance(40_000 + i);
      const m = preparePlan(inst);
      const all = buildModel(m, highs.infinity, 1e9, 0);
      const cut = buildModel(m, highs.infinity, 1e9);
      expect(all.rowsImplied).toBe(0);
      expect(cut.rowsUsed + cut.rowsImplied).toBe(cut.rowsTotal);
      if (cut.rowsImplied > 0) withImplied++;
      dropped += cut.rowsImplied;
      rows += cut.rowsTotal;
      expect(solve(cut, false).obj).toBeCloseTo(solve(all, false).obj, 7);
      const milp = solve(cut, true);
      expect(milp.obj).toBeCloseTo(solve(all, true).obj, 7);
      const chosen = Array.from(m.allowedList).filter((c) => milp.x[cut.xCol[c]] > 0.5);
      expect(shortfalls(inst, chosen)).toEqual([]);
    }
    if (process.env.MEASURE) console.log(`implied: ${withImplied}/50 instances, ${dropped} of ${rows} rows`);
    expect(withImplied).toBeGreaterThanOrEqual(IMPLIED_MIN);
  });
});

/**
 * Instances (of the 50) where some row is implied by another: measured 50 (551 of 1005 rows left out); the
 * comparison needs such rows to have teeth. A planted fault that ignores the needs (drops b when r_b > r_a) fails it.
 */
const IMPLIED_MIN = 45;

/** LP bound alone: tight on at least this many of the 50 (measured 46; 0 with the site costs left out). */
const LP_TIGHT_MIN = 45;
/** …and its mean share of the optimum at least this (measured 0.9943; 0.6403 without site costs). */
const LP_MEAN_MIN = 0.99;
/** Default options: optimality claimed (and checked) on at least this many (measured 50; 0 without site costs). */
const CLAIMED_MIN = 48;
