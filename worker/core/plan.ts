/**
 * Plan: pick the (site, sensor type) candidates that meet the demand at least cost (or, with a budget, cover the
 * most demand within it), and report how far from optimal the plan can be.
 *
 * The instance is abstract — sites, candidates with the demand points each covers, demand points with a weight
 * and a required fold per kind — so this module knows nothing of terrain; the lead builds instances from the
 * coverage footprints.
 *
 * Covered value. For a chosen set X, point p and kind k ∈ {any, primary, secondary}: n_k(p) = number of distinct
 * sites with a chosen candidate of kind k (of either kind for 'any') covering p — sensors on one site fail
 * together, so a fold counts sites. The covered value is f(X) = Σ_p w_p Σ_k min(n_k(p), r_k(p)): requirement units
 * met, weighted. f is monotone submodular (a truncated coverage count per point and kind). A requirement above
 * what all allowed candidates together reach is capped at that maximum and reported (`unmeetable`); the demand is
 * met when every capped unit is met. A point of zero weight carries no demand.
 *
 * Stages:
 * 1. prepare: validate, then aggregate the demand points by partition refinement into groups with identical
 *    (requirements, covering candidates). Every stage below works on groups (tens of thousands instead of
 *    millions of points); a group's weight is the sum of its points' weights. This is exact: points of one
 *    group are covered by the same candidates, so they share every count.
 * 2. greedy by marginal covered weight per marginal cost (Wolsey's greedy for submodular cover; Chvátal 1979 for
 *    set cover), with lazy evaluation (Minoux 1978) — see `greedyLazy` for why laziness stays exact with site
 *    costs. Budget mode (maximal covering, Church & ReVelle 1974): the same ratio among candidates that fit,
 *    then the better of that and the best single candidate (Khuller, Moss & Naor 1999).
 * 3. local search: pruning of redundant picks (most expensive first), then exchanges — one chosen candidate for
 *    one unchosen, all of one site's sensors for one, two for one, one for two — each accepted only when it
 *    keeps the demand met and lowers the cost; iterated to a local optimum within a deterministic work budget.
 *    Budget mode: one-for-one exchanges that raise the covered weight within the budget, each followed by a
 *    greedy refill, then dropping picks that no longer cover anything.
 * 4. bound (plan-lp.ts): LP relaxation with HiGHS over the aggregated rows, a MILP when the instance is small.
 *
 * Determinism: ties are broken by index, there is no randomness, the local search stops on a count of
 * operations, and HiGHS on counts of its own (interior-point iterations for the LP, branch-and-bound nodes for the
 * MILP: `solverNodes`) — so the same instance gives the same result on any machine and under any load. The only
 * clock is HiGHS's safety time limit (`timeLimitMs`, generous): when it is reached the log and `solverStop` say
 * so, and the bound — and the plan, if a MILP incumbent found by then beats the heuristic one — may then depend
 * on the machine's speed (never its validity: every MILP plan is re-checked with exact counts before it is used).
 */
import { InputError } from '../../shared/errors.ts';
import { DEFAULT_SAFETY_TIME_LIMIT_MS, DEFAULT_SOLVER_NODES } from '../../shared/plan-limits.ts';
import { nowMs } from './clock.ts';
import type { Progress } from './floor.ts';
import { boundPlan, SAFETY_LIMIT_NOTE, type HighsInit } from './plan-lp.ts';

export { SAFETY_LIMIT_NOTE };

export { DEFAULT_SAFETY_TIME_LIMIT_MS, DEFAULT_SOLVER_NODES };
/** Interior-point iterations allowed to the LP bound (it converges in 13–42 on the demo, cover or budget). */
export const LP_MAX_ITERATIONS = 200;

export type Kind = 'primary' | 'secondary';
export type DemandKind = Kind | 'any';

export interface PlanInstance {
  /** `existing` → the site costs 0 in the plan. */
  sites: { id: string; cost: number; existing: boolean }[];
  candidates: {
    siteIndex: number;
    typeId: string;
    kind: Kind;
    /** Cost of the sensor type (the site's cost is paid once, when its first sensor is chosen). */
    cost: number;
    /** Sorted (strictly increasing) indices of the demand points this candidate covers. */
    covers: Uint32Array;
  }[];
  points: {
    count: number;
    weight: Float64Array;
    reqAny: Uint8Array;
    reqPrimary: Uint8Array;
    reqSecondary: Uint8Array;
  };
  /** Candidate indices that must be in the plan (existing sensors kept by force). */
  forced?: number[];
  /** Site indices never used. */
  excludedSites?: number[];
  /** When set: maximise the covered weight within this budget (maximal covering). */
  budget?: number;
  /**
   * The MILP's work limit in branch-and-bound nodes (default DEFAULT_SOLVER_NODES); 0: the root node only. The
   * same count gives the same plan on any machine.
   */
  solverNodes?: number;
  /**
   * Safety time limit for HiGHS, LP and MILP together (default DEFAULT_SAFETY_TIME_LIMIT_MS). Not meant to be
   * reached: when it is, the result may differ on another machine, and `solverStop` and the log say so.
   */
  timeLimitMs?: number;
}

export interface PlanOptions {
  /** Solve the exact MILP when at most this many candidates are allowed (default 40). */
  exactMaxCandidates?: number;
  /** …or when the aggregated model has at most this many nonzeros (default 20 000). */
  exactMaxNonzeros?: number;
  /** Largest LP handed to HiGHS; above it the LP keeps the tightest rows only (default 400 000 nonzeros). */
  lpMaxNonzeros?: number;
  /** Local-search budget in group visits, a deterministic stand-in for time (default 4e8 ≈ 1–2 s). */
  searchWork?: number;
  onProgress?: Progress;
  /** How to load HiGHS's WebAssembly (in a browser: `{ locateFile: () => wasmUrl }`). */
  highs?: HighsInit;
}

/** Requirement units that no set of allowed candidates can meet, summarised per (kind, required, achievable). */
export interface Unmeetable {
  kind: DemandKind;
  required: number;
  achievable: number;
  /** Number of demand points in this class, their total weight, and the first one (for a message). */
  points: number;
  weight: number;
  firstPoint: number;
}

export interface PlanResult {
  mode: 'cover' | 'budget';
  /** Candidate indices, sorted. */
  chosen: number[];
  /** Site costs (once per opened site, 0 for existing ones) plus sensor type costs. */
  cost: number;
  /**
   * Cover mode: a proven lower bound on the cost of any plan that meets the (capped) demand with the forced
   * sensors in. Budget mode: the cost is not the objective, and this equals `cost`.
   */
  lowerBound: number;
  /** Budget mode: a proven upper bound on the covered weight; cover mode: `achievableWeight`. */
  weightUpperBound: number;
  /** Cover: 100·(cost − lowerBound)/cost (0 when cost = 0). Budget: 100·(weightUpperBound − covered)/bound. */
  gapPct: number;
  /** Σ_p w_p Σ_k min(distinct sites of kind k covering p, capped r_k(p)): requirement units met, weighted. */
  coveredWeight: number;
  /** Σ_p w_p Σ_k r_k(p) as requested (uncapped). */
  totalWeight: number;
  /** The same with requirements capped at what the allowed candidates can reach. */
  achievableWeight: number;
  /** Whether every capped requirement unit is met. */
  demandMet: boolean;
  method: string;
  unmeetable: Unmeetable[];
  /** Groups of points with identical requirements and covering candidates (the size the solvers worked on). */
  groups: number;
  /**
   * What stopped HiGHS short: nothing, a work limit (`solverNodes`, or the LP's iteration limit — the same on any
   * machine), or the safety time limit (this plan may differ on another machine).
   */
  solverStop: 'nothing' | 'work limit' | 'safety time limit';
  /** What each stage did (deterministic: no timings, unless the safety time limit was reached). */
  log: string[];
  /** Wall-clock time per stage — the one field that differs from run to run. */
  stageMs: Record<string, number>;
}

// ---------------------------------------------------------------------------------------------------------------
// The prepared model (shared with plan-lp.ts)

/** Kind slots: requirement and count arrays hold 3 entries per group in this order. */
export const K_ANY = 0;
export const K_PRIMARY = 1;
export const K_SECONDARY = 2;
const KIND_NAMES: DemandKind[] = ['any', 'primary', 'secondary'];

export interface PlanModel {
  nSites: number;
  /** Effective site cost: 0 for an existing site. */
  siteCost: Float64Array;
  nCand: number;
  candSite: Int32Array;
  /** K_PRIMARY or K_SECONDARY. */
  candKind: Uint8Array;
  candCost: Float64Array;
  allowed: Uint8Array;
  forced: Uint8Array;
  allowedList: Int32Array;
  forcedList: Int32Array;
  /** Per site: its allowed candidates, ascending. */
  siteCands: Int32Array[];
  nGroups: number;
  gWeight: Float64Array;
  gPoints: Uint32Array;
  gRep: Uint32Array;
  /** 3 per group (any, primary, secondary), capped at what the allowed candidates reach. */
  gReq: Uint8Array;
  /** Group → covering allowed candidates (CSR, ascending). */
  sigStart: Uint32Array;
  sigCand: Uint32Array;
  /** Candidate → covered groups (CSR, ascending); empty for candidates that are not allowed. */
  covStart: Uint32Array;
  covGroup: Uint32Array;
  budget: number | undefined;
  integerCosts: boolean;
  totalWeight: number;
  achievableWeight: number;
  demandUnits: number;
  unmeetable: Unmeetable[];
  pointCount: number;
  names: { site: string[]; cand: string[] };
}

function describeCand(inst: PlanInstance, c: number): string {
  const cand = inst.candidates[c];
  const site = inst.sites[cand.siteIndex];
  return `candidate ${c} (site '${site ? site.id : '?'}', type '${cand.typeId}')`;
}

function checkCost(where: string, v: unknown): void {
  if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) {
    throw new InputError(where, String(v), 'a finite cost ≥ 0');
  }
}

function checkIndexList(where: string, list: unknown, n: number, what: string): number[] {
  if (list === undefined) return [];
  if (!Array.isArray(list)) throw new InputError(where, typeof list, `an array of ${what} indices`);
  list.forEach((v, i) => {
    if (!Number.isInteger(v) || v < 0 || v >= n) {
      throw new InputError(
        `${where}[${i}]`,
        String(v),
        n > 0 ? `a known ${what} index 0…${n - 1}` : `no ${what} reference (there are no ${what}s)`,
      );
    }
  });
  return [...new Set(list as number[])].sort((a, b) => a - b);
}

/** Validates the instance and builds the aggregated model. Throws InputError with a clear message. */
export function preparePlan(inst: PlanInstance): PlanModel {
  const nSites = inst.sites?.length ?? 0;
  const nCand = inst.candidates?.length ?? 0;
  if (!Array.isArray(inst.sites)) throw new InputError('plan: sites', typeof inst.sites, 'an array of sites');
  if (!Array.isArray(inst.candidates)) {
    throw new InputError('plan: candidates', typeof inst.candidates, 'an array of candidates');
  }
  const pts = inst.points;
  const n = pts?.count;
  if (!Number.isInteger(n) || n < 0) throw new InputError('plan: points.count', String(n), 'an integer ≥ 0');
  for (const [name, arr, Ctor] of [
    ['weight', pts.weight, Float64Array],
    ['reqAny', pts.reqAny, Uint8Array],
    ['reqPrimary', pts.reqPrimary, Uint8Array],
    ['reqSecondary', pts.reqSecondary, Uint8Array],
  ] as const) {
    if (!(arr instanceof Ctor) || arr.length !== n) {
      throw new InputError(
        `plan: points.${name}`,
        arr instanceof Ctor ? `${arr.length} entries` : String(arr && arr.constructor?.name),
        `a ${Ctor.name} of points.count = ${n} entries`,
      );
    }
  }
  if (nSites > 65_535) throw new InputError('plan: sites', `${nSites} sites`, 'at most 65 535 sites');
  const siteCost = new Float64Array(nSites);
  let integerCosts = true;
  inst.sites.forEach((s, i) => {
    checkCost(`plan: sites[${i}].cost ('${s?.id}')`, s?.cost);
    siteCost[i] = s.existing ? 0 : s.cost;
    if (!Number.isInteger(siteCost[i])) integerCosts = false;
  });
  const candSite = new Int32Array(nCand);
  const candKind = new Uint8Array(nCand);
  const candCost = new Float64Array(nCand);
  inst.candidates.forEach((c, j) => {
    if (!Number.isInteger(c?.siteIndex) || c.siteIndex < 0 || c.siteIndex >= nSites) {
      throw new InputError(
        `plan: candidates[${j}].siteIndex`,
        String(c?.siteIndex),
        nSites > 0 ? `a known site index 0…${nSites - 1}` : 'a site (there are none)',
      );
    }
    if (c.kind !== 'primary' && c.kind !== 'secondary') {
      throw new InputError(`plan: candidates[${j}].kind`, JSON.stringify(c.kind), "'primary' or 'secondary'");
    }
    checkCost(`plan: candidates[${j}].cost (${describeCand(inst, j)})`, c.cost);
    if (!(c.covers instanceof Uint32Array)) {
      throw new InputError(
        `plan: candidates[${j}].covers`,
        String(c.covers),
        'a Uint32Array of point indices',
      );
    }
    const cv = c.covers;
    for (let i = 0; i < cv.length; i++) {
      if (cv[i] >= n || (i > 0 && cv[i] <= cv[i - 1])) {
        throw new InputError(
          `plan: candidates[${j}].covers[${i}]`,
          String(cv[i]),
          `strictly increasing point indices below points.count = ${n}`,
        );
      }
    }
    candSite[j] = c.siteIndex;
    candKind[j] = c.kind === 'primary' ? K_PRIMARY : K_SECONDARY;
    candCost[j] = c.cost;
    if (!Number.isInteger(c.cost)) integerCosts = false;
  });
  for (let p = 0; p < n; p++) {
    const w = pts.weight[p];
    if (!Number.isFinite(w) || w < 0)
      throw new InputError(`plan: points.weight[${p}]`, String(w), 'a finite weight ≥ 0');
  }
  const forcedList = checkIndexList('plan: forced', inst.forced, nCand, 'candidate');
  const excludedList = checkIndexList('plan: excludedSites', inst.excludedSites, nSites, 'site');
  const excluded = new Uint8Array(nSites);
  for (const s of excludedList) excluded[s] = 1;
  const forced = new Uint8Array(nCand);
  for (const c of forcedList) {
    if (excluded[candSite[c]]) {
      throw new InputError(
        `plan: forced (${describeCand(inst, c)})`,
        `a forced sensor on excluded site '${inst.sites[candSite[c]].id}'`,
        'forced sensors only on sites that are not excluded',
      );
    }
    forced[c] = 1;
  }
  const allowed = new Uint8Array(nCand);
  const allowedArr: number[] = [];
  const siteLists: number[][] = Array.from({ length: nSites }, () => []);
  for (let c = 0; c < nCand; c++) {
    if (!excluded[candSite[c]]) {
      allowed[c] = 1;
      allowedArr.push(c);
      siteLists[candSite[c]].push(c);
    }
  }
  let budget: number | undefined;
  if (inst.budget !== undefined) {
    if (typeof inst.budget !== 'number' || !Number.isFinite(inst.budget) || inst.budget < 0) {
      throw new InputError('plan: budget', String(inst.budget), 'a finite budget ≥ 0');
    }
    budget = inst.budget;
    const fc = canonicalCost(siteCost, candSite, candCost, forcedList);
    if (fc > budget) {
      throw new InputError(
        'plan: budget',
        String(budget),
        `at least ${fc}, the cost of the ${forcedList.length} forced sensor(s) and their sites`,
      );
    }
  }
  if (inst.timeLimitMs !== undefined && !(Number.isFinite(inst.timeLimitMs) && inst.timeLimitMs > 0)) {
    throw new InputError('plan: timeLimitMs', String(inst.timeLimitMs), 'a time limit > 0 ms');
  }
  if (
    inst.solverNodes !== undefined &&
    !(Number.isInteger(inst.solverNodes) && inst.solverNodes >= 0 && inst.solverNodes <= 2 ** 31 - 1)
  ) {
    throw new InputError('plan: solverNodes', String(inst.solverNodes), 'a whole number of nodes ≥ 0');
  }

  // Partition refinement: start from classes of equal requirements, split by each allowed candidate's cover.
  const cls = new Int32Array(n).fill(-1);
  const reqKey = new Map<number, number>();
  let nCls = 0;
  for (let p = 0; p < n; p++) {
    const a = pts.reqAny[p];
    const pr = pts.reqPrimary[p];
    const se = pts.reqSecondary[p];
    if (pts.weight[p] > 0 && (a | pr | se) !== 0) {
      const key = (a << 16) | (pr << 8) | se;
      let id = reqKey.get(key);
      if (id === undefined) {
        id = nCls++;
        reqKey.set(key, id);
      }
      cls[p] = id;
    }
  }
  let cap = Math.max(1024, nCls * 2);
  let size = new Int32Array(cap);
  let touched = new Int32Array(cap);
  let stamp = new Int32Array(cap).fill(-1);
  let child = new Int32Array(cap);
  for (let p = 0; p < n; p++) if (cls[p] >= 0) size[cls[p]]++;
  for (const c of allowedArr) {
    const cv = inst.candidates[c].covers;
    for (let i = 0; i < cv.length; i++) {
      const k = cls[cv[i]];
      if (k < 0) continue;
      if (stamp[k] !== c) {
        stamp[k] = c;
        touched[k] = 0;
      }
      touched[k]++;
    }
    for (let i = 0; i < cv.length; i++) {
      const p = cv[i];
      const k = cls[p];
      if (k < 0) continue;
      if (stamp[k] === c) {
        // first visit of class k in this pass: decide split or not
        stamp[k] = -2 - c;
        if (touched[k] === size[k]) {
          child[k] = k;
        } else {
          if (nCls === cap) {
            cap *= 2;
            const grow = (a: Int32Array<ArrayBuffer>, fill?: number): Int32Array<ArrayBuffer> => {
              const b = new Int32Array(cap);
              if (fill !== undefined) b.fill(fill);
              b.set(a);
              return b;
            };
            size = grow(size);
            touched = grow(touched);
            stamp = grow(stamp, -1);
            child = grow(child);
          }
          child[k] = nCls;
          size[nCls] = touched[k];
          size[k] -= touched[k];
          stamp[nCls] = -1;
          nCls++;
        }
      }
      cls[p] = child[k];
    }
  }
  // Renumber classes by first point; groups are in point order.
  const renum = new Int32Array(nCls).fill(-1);
  let nAll = 0;
  for (let p = 0; p < n; p++) {
    const k = cls[p];
    if (k < 0) continue;
    if (renum[k] < 0) renum[k] = nAll++;
    cls[p] = renum[k];
  }
  const allRep = new Uint32Array(nAll);
  const allPoints = new Uint32Array(nAll);
  const allWeight = new Float64Array(nAll);
  {
    const seen = new Uint8Array(nAll);
    for (let p = 0; p < n; p++) {
      const g = cls[p];
      if (g < 0) continue;
      if (!seen[g]) {
        seen[g] = 1;
        allRep[g] = p;
      }
      allPoints[g]++;
      allWeight[g] += pts.weight[p];
    }
  }
  // Signatures of all groups (from the representative points), CSR ascending by candidate.
  const allSigStart = new Uint32Array(nAll + 1);
  for (const c of allowedArr) {
    const cv = inst.candidates[c].covers;
    for (let i = 0; i < cv.length; i++) {
      const g = cls[cv[i]];
      if (g >= 0 && allRep[g] === cv[i]) allSigStart[g + 1]++;
    }
  }
  for (let g = 0; g < nAll; g++) allSigStart[g + 1] += allSigStart[g];
  const allSig = new Uint32Array(allSigStart[nAll]);
  {
    const fill = allSigStart.slice(0, nAll);
    for (const c of allowedArr) {
      const cv = inst.candidates[c].covers;
      for (let i = 0; i < cv.length; i++) {
        const g = cls[cv[i]];
        if (g >= 0 && allRep[g] === cv[i]) allSig[fill[g]++] = c;
      }
    }
  }
  // Achievable fold per kind = distinct sites in the signature; cap, summarise what cannot be met.
  const siteSeen = new Int32Array(nSites * 3).fill(-1);
  const unmet = new Map<string, Unmeetable>();
  const allReq = new Uint8Array(nAll * 3);
  let totalWeight = 0;
  let achievableWeight = 0;
  let demandUnits = 0;
  let live = 0;
  const liveOf = new Int32Array(nAll).fill(-1);
  const ach = [0, 0, 0];
  for (let g = 0; g < nAll; g++) {
    ach[0] = ach[1] = ach[2] = 0;
    for (let i = allSigStart[g]; i < allSigStart[g + 1]; i++) {
      const c = allSig[i];
      const s = candSite[c];
      const k = candKind[c];
      if (siteSeen[s * 3 + K_ANY] !== g) {
        siteSeen[s * 3 + K_ANY] = g;
        ach[K_ANY]++;
      }
      if (siteSeen[s * 3 + k] !== g) {
        siteSeen[s * 3 + k] = g;
        ach[k]++;
      }
    }
    const rep = allRep[g];
    const req = [pts.reqAny[rep], pts.reqPrimary[rep], pts.reqSecondary[rep]];
    let any = false;
    for (let k = 0; k < 3; k++) {
      totalWeight += allWeight[g] * req[k];
      const r = Math.min(req[k], ach[k]);
      if (r < req[k]) {
        const key = `${k}/${req[k]}/${ach[k]}`;
        const u = unmet.get(key);
        if (u) {
          u.points += allPoints[g];
          u.weight += allWeight[g];
          u.firstPoint = Math.min(u.firstPoint, rep);
        } else {
          unmet.set(key, {
            kind: KIND_NAMES[k],
            required: req[k],
            achievable: ach[k],
            points: allPoints[g],
            weight: allWeight[g],
            firstPoint: rep,
          });
        }
      }
      allReq[g * 3 + k] = r;
      achievableWeight += allWeight[g] * r;
      demandUnits += r * allPoints[g];
      if (r > 0) any = true;
    }
    if (any) liveOf[g] = live++;
  }
  // Keep live groups only.
  const gWeight = new Float64Array(live);
  const gPoints = new Uint32Array(live);
  const gRep = new Uint32Array(live);
  const gReq = new Uint8Array(live * 3);
  const sigStart = new Uint32Array(live + 1);
  for (let g = 0; g < nAll; g++) {
    const l = liveOf[g];
    if (l < 0) continue;
    gWeight[l] = allWeight[g];
    gPoints[l] = allPoints[g];
    gRep[l] = allRep[g];
    gReq.set(allReq.subarray(g * 3, g * 3 + 3), l * 3);
    sigStart[l + 1] = sigStart[l] + (allSigStart[g + 1] - allSigStart[g]);
  }
  const sigCand = new Uint32Array(sigStart[live]);
  for (let g = 0; g < nAll; g++) {
    const l = liveOf[g];
    if (l >= 0) sigCand.set(allSig.subarray(allSigStart[g], allSigStart[g + 1]), sigStart[l]);
  }
  const covStart = new Uint32Array(nCand + 1);
  for (let i = 0; i < sigCand.length; i++) covStart[sigCand[i] + 1]++;
  for (let c = 0; c < nCand; c++) covStart[c + 1] += covStart[c];
  const covGroup = new Uint32Array(sigCand.length);
  {
    const fill = covStart.slice(0, nCand);
    for (let g = 0; g < live; g++) {
      for (let i = sigStart[g]; i < sigStart[g + 1]; i++) covGroup[fill[sigCand[i]]++] = g;
    }
  }
  const order: DemandKind[] = ['any', 'primary', 'secondary'];
  const unmeetable = [...unmet.values()].sort(
    (a, b) =>
      order.indexOf(a.kind) - order.indexOf(b.kind) || a.required - b.required || a.achievable - b.achievable,
  );
  return {
    nSites,
    siteCost,
    nCand,
    candSite,
    candKind,
    candCost,
    allowed,
    forced,
    allowedList: Int32Array.from(allowedArr),
    forcedList: Int32Array.from(forcedList),
    siteCands: siteLists.map((l) => Int32Array.from(l)),
    nGroups: live,
    gWeight,
    gPoints,
    gRep,
    gReq,
    sigStart,
    sigCand,
    covStart,
    covGroup,
    budget,
    integerCosts,
    totalWeight,
    achievableWeight,
    demandUnits,
    unmeetable,
    pointCount: n,
    names: {
      site: inst.sites.map((s) => s.id),
      cand: inst.candidates.map((c, j) => `${inst.sites[candSite[j]].id}/${c.typeId}`),
    },
  };
}

/** Cost of a set of candidates: each distinct site once (ascending), then the sensor types (ascending). */
function canonicalCost(
  siteCost: Float64Array,
  candSite: Int32Array,
  candCost: Float64Array,
  sortedCands: ArrayLike<number>,
): number {
  const sites: number[] = [];
  for (let i = 0; i < sortedCands.length; i++) sites.push(candSite[sortedCands[i]]);
  sites.sort((a, b) => a - b);
  let siteSum = 0;
  for (let i = 0; i < sites.length; i++)
    if (i === 0 || sites[i] !== sites[i - 1]) siteSum += siteCost[sites[i]];
  let typeSum = 0;
  for (let i = 0; i < sortedCands.length; i++) typeSum += candCost[sortedCands[i]];
  return siteSum + typeSum;
}

export function planCost(m: PlanModel, cands: ArrayLike<number>): number {
  return canonicalCost(
    m.siteCost,
    m.candSite,
    m.candCost,
    Array.from(cands).sort((a, b) => a - b),
  );
}

// ---------------------------------------------------------------------------------------------------------------
// Coverage state over groups

/**
 * Counts for a chosen set: per group and kind the distinct sites covering it, and per opened site and kind the
 * number of its chosen candidates covering each group (so removing a sensor is exact). `deficit` is the number
 * of unmet capped requirement units (unweighted, an exact integer).
 */
export class CoverState {
  readonly cnt: Uint16Array;
  readonly siteCnt: (Uint16Array | null)[];
  readonly chosen: Uint8Array;
  readonly siteChosen: Int32Array;
  deficit: number;
  work = 0;
  private readonly zeros: Uint16Array;
  private cachedCost: number | null = null;

  constructor(readonly m: PlanModel) {
    this.cnt = new Uint16Array(m.nGroups * 3);
    this.siteCnt = new Array<Uint16Array | null>(m.nSites).fill(null);
    this.chosen = new Uint8Array(m.nCand);
    this.siteChosen = new Int32Array(m.nSites);
    this.zeros = new Uint16Array(m.nGroups * 2);
    let d = 0;
    for (let g = 0; g < m.nGroups; g++) d += m.gReq[g * 3] + m.gReq[g * 3 + 1] + m.gReq[g * 3 + 2];
    this.deficit = d;
  }

  chosenList(): number[] {
    const out: number[] = [];
    for (let c = 0; c < this.m.nCand; c++) if (this.chosen[c]) out.push(c);
    return out;
  }

  /** Canonical cost of the chosen set (cached until the set changes). */
  cost(): number {
    if (this.cachedCost === null) {
      this.cachedCost = canonicalCost(this.m.siteCost, this.m.candSite, this.m.candCost, this.chosenList());
    }
    return this.cachedCost;
  }

  /**
   * Cost of the chosen set with `drop` (chosen) removed and `add` (unchosen) added, as the current cost plus
   * the change — fast, for comparisons. `fits` gives the exact canonical answer near a budget.
   */
  costWith(add: readonly number[], drop: readonly number[] = []): number {
    const m = this.m;
    let delta = 0;
    for (let i = 0; i < drop.length; i++) {
      const s = m.candSite[drop[i]];
      delta -= m.candCost[drop[i]];
      let first = true;
      for (let j = 0; j < i; j++) if (m.candSite[drop[j]] === s) first = false;
      if (!first) continue;
      let k = 0;
      for (let j = 0; j < drop.length; j++) if (m.candSite[drop[j]] === s) k++;
      if (this.siteChosen[s] === k) delta -= m.siteCost[s];
    }
    for (let i = 0; i < add.length; i++) {
      const s = m.candSite[add[i]];
      delta += m.candCost[add[i]];
      let left = this.siteChosen[s];
      for (let j = 0; j < drop.length; j++) if (m.candSite[drop[j]] === s) left--;
      for (let j = 0; j < i; j++) if (m.candSite[add[j]] === s) left++;
      if (left === 0) delta += m.siteCost[s];
    }
    return this.cost() + delta;
  }

  /** Whether the chosen set with c added costs at most `budget` (canonical sum when it is close). */
  fits(c: number, budget: number, drop: readonly number[] = []): boolean {
    const fast = this.costWith([c], drop);
    if (fast <= budget - 1e-9 * Math.max(1, budget)) return true;
    if (fast > budget + 1e-9 * Math.max(1, budget)) return false;
    const list = this.chosenList().filter((x) => !drop.includes(x));
    list.push(c);
    list.sort((a, b) => a - b);
    return canonicalCost(this.m.siteCost, this.m.candSite, this.m.candCost, list) <= budget;
  }

  /** Marginal cost of adding c now (the site's cost if it is not open yet). */
  marginalCost(c: number): number {
    const s = this.m.candSite[c];
    return this.m.candCost[c] + (this.siteChosen[s] === 0 ? this.m.siteCost[s] : 0);
  }

  /** Weighted requirement units that adding c would meet. */
  gain(c: number): number {
    const m = this.m;
    const k = m.candKind[c];
    const sc = this.siteCnt[m.candSite[c]] ?? this.zeros;
    const cnt = this.cnt;
    const req = m.gReq;
    const w = m.gWeight;
    const cov = m.covGroup;
    const ownOff = k - 1;
    const otherOff = 2 - k;
    let gain = 0;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (sc[2 * g + ownOff] !== 0) continue;
      let u = 0;
      if (cnt[3 * g + k] < req[3 * g + k]) u++;
      if (sc[2 * g + otherOff] === 0 && cnt[3 * g] < req[3 * g]) u++;
      gain += u * w[g];
    }
    this.work += end - m.covStart[c];
    return gain;
  }

  add(c: number): void {
    const m = this.m;
    const s = m.candSite[c];
    const k = m.candKind[c];
    let sc = this.siteCnt[s];
    if (!sc) sc = this.siteCnt[s] = new Uint16Array(m.nGroups * 2);
    const cnt = this.cnt;
    const req = m.gReq;
    const cov = m.covGroup;
    const ownOff = k - 1;
    const otherOff = 2 - k;
    let d = this.deficit;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (sc[2 * g + ownOff]++ !== 0) continue;
      if (cnt[3 * g + k]++ < req[3 * g + k]) d--;
      if (sc[2 * g + otherOff] === 0 && cnt[3 * g]++ < req[3 * g]) d--;
    }
    this.deficit = d;
    this.cachedCost = null;
    this.chosen[c] = 1;
    this.siteChosen[s]++;
    this.work += end - m.covStart[c];
  }

  remove(c: number): void {
    const m = this.m;
    const s = m.candSite[c];
    const k = m.candKind[c];
    const sc = this.siteCnt[s]!;
    const cnt = this.cnt;
    const req = m.gReq;
    const cov = m.covGroup;
    const ownOff = k - 1;
    const otherOff = 2 - k;
    let d = this.deficit;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (--sc[2 * g + ownOff] !== 0) continue;
      if (--cnt[3 * g + k] < req[3 * g + k]) d++;
      if (sc[2 * g + otherOff] === 0 && --cnt[3 * g] < req[3 * g]) d++;
    }
    this.deficit = d;
    this.cachedCost = null;
    this.chosen[c] = 0;
    this.siteChosen[s]--;
    this.work += end - m.covStart[c];
  }

  /** Σ_g w_g Σ_k min(count, capped requirement), recomputed from the counts in group order. */
  coveredWeight(): number {
    const m = this.m;
    let total = 0;
    for (let g = 0; g < m.nGroups; g++) {
      let u = 0;
      for (let k = 0; k < 3; k++) u += Math.min(this.cnt[3 * g + k], m.gReq[3 * g + k]);
      total += u * m.gWeight[g];
    }
    return total;
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Greedy

/** Max-heap of (key, candidate) with ties to the lower index; stale entries are skipped by a version stamp. */
class KeyHeap {
  private key: number[] = [];
  private cand: number[] = [];
  private ver: number[] = [];

  get size(): number {
    return this.key.length;
  }

  private before(i: number, j: number): boolean {
    return this.key[i] > this.key[j] || (this.key[i] === this.key[j] && this.cand[i] < this.cand[j]);
  }

  private swap(i: number, j: number): void {
    [this.key[i], this.key[j]] = [this.key[j], this.key[i]];
    [this.cand[i], this.cand[j]] = [this.cand[j], this.cand[i]];
    [this.ver[i], this.ver[j]] = [this.ver[j], this.ver[i]];
  }

  push(key: number, cand: number, ver: number): void {
    this.key.push(key);
    this.cand.push(cand);
    this.ver.push(ver);
    let i = this.key.length - 1;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!this.before(i, parent)) break;
      this.swap(i, parent);
      i = parent;
    }
  }

  /** Removes the top; returns [cand, ver] or undefined. */
  pop(): [number, number] | undefined {
    const n = this.key.length;
    if (n === 0) return undefined;
    const top: [number, number] = [this.cand[0], this.ver[0]];
    this.swap(0, n - 1);
    this.key.pop();
    this.cand.pop();
    this.ver.pop();
    let i = 0;
    const len = n - 1;
    while (true) {
      const l = 2 * i + 1;
      const r = l + 1;
      let best = i;
      if (l < len && this.before(l, best)) best = l;
      if (r < len && this.before(r, best)) best = r;
      if (best === i) break;
      this.swap(i, best);
      i = best;
    }
    return top;
  }
}

const NO_GAIN = -1;
const NO_FIT = -2;

/**
 * Ratio key of candidate c in the current state: marginal covered weight / marginal cost (Infinity at zero
 * cost), NO_GAIN when it adds nothing, NO_FIT in budget mode when it would exceed the budget.
 */
function ratioKey(st: CoverState, c: number, budget: number | undefined): number {
  const gain = st.gain(c);
  if (!(gain > 0)) return NO_GAIN;
  if (budget !== undefined && !st.fits(c, budget)) return NO_FIT;
  const mc = st.marginalCost(c);
  return mc > 0 ? gain / mc : Infinity;
}

function stateWithForced(m: PlanModel): CoverState {
  const st = new CoverState(m);
  for (const c of m.forcedList) st.add(c);
  return st;
}

function greedyDone(st: CoverState, budget: number | undefined): boolean {
  return budget === undefined && st.deficit === 0;
}

/**
 * Plain greedy: at every step evaluate every allowed unchosen candidate and take the best ratio (ties: lowest
 * index). Continues from `st` (forced sensors already in). Returns the picks in order. Reference for the lazy one.
 */
export function greedyPlainOn(st: CoverState, budget: number | undefined): number[] {
  const m = st.m;
  const picks: number[] = [];
  while (!greedyDone(st, budget)) {
    let best = -1;
    let bestKey = -1;
    for (let i = 0; i < m.allowedList.length; i++) {
      const c = m.allowedList[i];
      if (st.chosen[c]) continue;
      const key = ratioKey(st, c, budget);
      if (key >= 0 && key > bestKey) {
        bestKey = key;
        best = c;
      }
    }
    if (best < 0) break;
    st.add(best);
    picks.push(best);
  }
  return picks;
}

/**
 * Lazy greedy (Minoux 1978): a heap of ratio keys that are upper bounds of the current ratios. Covered gains
 * only shrink as the set grows (submodularity), and a floating-point sum of the same per-group terms in the same
 * order shrinks with them, so a key evaluated earlier bounds today's ratio as long as the candidate's marginal
 * cost has not changed. The one way a cost changes is a site opening: its other candidates lose the site cost
 * and their ratio can rise, so they are re-evaluated at once and re-queued with fresh keys (old entries are
 * invalidated by a version stamp). With every key an upper bound, a popped entry that was evaluated in the
 * current step beats every other candidate's true ratio under the same (ratio, lower index) order that plain
 * greedy uses — so both pick the same candidate at every step. In budget mode a candidate that does not fit
 * never fits later (the cost of the set only grows, by at least the site cost it would have saved).
 */
export function greedyLazyOn(st: CoverState, budget: number | undefined): number[] {
  const m = st.m;
  const picks: number[] = [];
  const heap = new KeyHeap();
  const ver = new Int32Array(m.nCand);
  const evalStep = new Int32Array(m.nCand).fill(-1);
  const dead = new Uint8Array(m.nCand);
  let step = 0;
  const evaluate = (c: number): void => {
    const key = ratioKey(st, c, budget);
    evalStep[c] = step;
    ver[c]++;
    if (key >= 0) heap.push(key, c, ver[c]);
    else dead[c] = 1;
  };
  for (let i = 0; i < m.allowedList.length; i++) {
    const c = m.allowedList[i];
    if (!st.chosen[c]) evaluate(c);
  }
  while (!greedyDone(st, budget)) {
    const top = heap.pop();
    if (!top) break;
    const [c, v] = top;
    if (v !== ver[c] || st.chosen[c] || dead[c]) continue;
    if (evalStep[c] !== step) {
      evaluate(c);
      continue;
    }
    st.add(c);
    picks.push(c);
    step++;
    ver[c]++;
    const s = m.candSite[c];
    if (st.siteChosen[s] === 1) {
      const mates = m.siteCands[s];
      for (let i = 0; i < mates.length; i++) {
        const d = mates[i];
        if (!st.chosen[d] && !dead[d]) evaluate(d);
      }
    }
  }
  return picks;
}

/** Plain greedy from the forced sensors; returns the picks in order (for the Minoux equivalence test). */
export function greedyPlain(inst: PlanInstance): number[] {
  const m = preparePlan(inst);
  return greedyPlainOn(stateWithForced(m), m.budget);
}

/** Lazy greedy from the forced sensors; returns the picks in order. */
export function greedyLazy(inst: PlanInstance): number[] {
  const m = preparePlan(inst);
  return greedyLazyOn(stateWithForced(m), m.budget);
}

// ---------------------------------------------------------------------------------------------------------------
// Local search (cover mode)

/** Deficient groups after a removal: the group and a bit per deficient kind; `hopeless` when a unit is short 2+. */
class Deficits {
  groups: Int32Array;
  flags: Uint8Array;
  n = 0;
  hopeless = false;

  constructor(capacity: number) {
    this.groups = new Int32Array(capacity);
    this.flags = new Uint8Array(capacity);
  }

  /** Collects the deficits among the groups covered by `cands` (each group once, ascending). */
  collect(st: CoverState, cands: readonly number[], mark: Int32Array): void {
    const m = st.m;
    const id = ++markCounter.id;
    this.n = 0;
    this.hopeless = false;
    for (const c of cands) {
      for (let i = m.covStart[c]; i < m.covStart[c + 1]; i++) {
        const g = m.covGroup[i];
        if (mark[g] === id) continue;
        mark[g] = id;
        let f = 0;
        for (let k = 0; k < 3; k++) {
          const short = m.gReq[3 * g + k] - st.cnt[3 * g + k];
          if (short > 0) {
            f |= 1 << k;
            if (short > 1) this.hopeless = true;
          }
        }
        if (f) {
          this.groups[this.n] = g;
          this.flags[this.n++] = f;
        }
      }
      st.work += m.covStart[c + 1] - m.covStart[c];
    }
    if (cands.length > 1 && this.n > 1) {
      // ascending order for the walks in `restores` (several candidates' groups were appended in turn)
      const idx = Array.from({ length: this.n }, (_, i) => i).sort((a, b) => this.groups[a] - this.groups[b]);
      const g2 = idx.map((i) => this.groups[i]);
      const f2 = idx.map((i) => this.flags[i]);
      this.groups.set(g2);
      this.flags.set(f2);
    }
  }

  /** The deficits of `from` that remain in the current state (after adding a candidate). */
  remaining(st: CoverState, from: Deficits): void {
    const m = st.m;
    this.n = 0;
    this.hopeless = from.hopeless;
    for (let i = 0; i < from.n; i++) {
      const g = from.groups[i];
      let f = 0;
      for (let k = 0; k < 3; k++) if (m.gReq[3 * g + k] > st.cnt[3 * g + k]) f |= 1 << k;
      if (f) {
        this.groups[this.n] = g;
        this.flags[this.n++] = f;
      }
    }
    st.work += from.n;
  }
}

const markCounter = { id: 0 };

/**
 * Whether d covers every deficient group with a kind that can meet it (`exact` = false: ignoring whether d's
 * site already covers the group — a necessary condition that does not depend on the state), or, `exact` = true,
 * whether adding d would meet every deficit (each short by one unit at most: a removal of one candidate, or of
 * one site's sensors, lowers each count by one at most, and adding d raises it by one at most).
 */
function restores(st: CoverState, d: number, D: Deficits, exact = true): boolean {
  if (D.hopeless) return false;
  const m = st.m;
  const k = m.candKind[d];
  const sc = exact ? st.siteCnt[m.candSite[d]] : null;
  const cov = m.covGroup;
  let lo = m.covStart[d];
  const hi = m.covStart[d + 1];
  const otherBit = 1 << (3 - k);
  for (let i = 0; i < D.n; i++) {
    const f = D.flags[i];
    if (f & otherBit) {
      st.work += i + 1;
      return false;
    }
    const g = D.groups[i];
    let a = lo;
    let b = hi;
    while (a < b) {
      const mid = (a + b) >> 1;
      if (cov[mid] < g) a = mid + 1;
      else b = mid;
    }
    if (a >= hi || cov[a] !== g) {
      st.work += i + 1;
      return false;
    }
    lo = a + 1;
    if (sc) {
      const own = sc[2 * g + k - 1];
      const other = sc[2 * g + 2 - k];
      if ((f & (1 << k) && own !== 0) || (f & 1 && (own !== 0 || other !== 0))) {
        st.work += i + 1;
        return false;
      }
    }
  }
  st.work += D.n;
  return true;
}

interface SearchCtx {
  st: CoverState;
  workLimit: number;
  counts: { prune: number; swap11: number; site1: number; swap21: number; swap12: number };
}

function relLess(a: number, b: number): boolean {
  return a < b - 1e-9 * Math.max(1, Math.abs(b));
}

/** Candidates chosen and not forced, most expensive removal first (ties: lower index). */
function removable(st: CoverState): { c: number; saving: number }[] {
  const m = st.m;
  const base = st.cost();
  return st
    .chosenList()
    .filter((c) => !m.forced[c])
    .map((c) => ({ c, saving: base - st.costWith([], [c]) }))
    .sort((a, b) => b.saving - a.saving || a.c - b.c);
}

/** Drops redundant picks, most expensive first, until none can go. Returns the number dropped. */
function prune(ctx: SearchCtx): number {
  const { st } = ctx;
  let dropped = 0;
  let again = true;
  while (again) {
    again = false;
    for (const { c, saving } of removable(st)) {
      if (!(saving > 0)) continue;
      st.remove(c);
      if (st.deficit === 0) {
        dropped++;
        again = true;
      } else st.add(c);
    }
  }
  ctx.counts.prune += dropped;
  return dropped;
}

interface Removal {
  c: number;
  saving: number;
  /** Unchosen candidates that cover every group left short by removing c alone (kind-compatible). */
  match: number[];
}

/**
 * Replaces the chosen set `drop` (no forced sensor among them) by one of `pool` — the cheapest that keeps the
 * demand met and costs less. Returns whether it did.
 */
function replaceByOne(
  st: CoverState,
  drop: readonly number[],
  pool: readonly number[],
  D: Deficits,
  mark: Int32Array,
): boolean {
  const before = st.cost();
  const reps = pool
    .filter((d) => !st.chosen[d] && !drop.includes(d))
    .map((d) => ({ d, cost: st.costWith([d], drop) }))
    .filter((r) => relLess(r.cost, before))
    .sort((a, b) => a.cost - b.cost || a.d - b.d);
  if (reps.length === 0) return false;
  for (const c of drop) st.remove(c);
  D.collect(st, drop, mark);
  for (const { d } of reps) {
    if (restores(st, d, D)) {
      st.add(d);
      return true;
    }
  }
  for (const c of drop) st.add(c);
  return false;
}

/**
 * Replaces chosen c by two unchosen candidates that together keep the demand met, for less. The first must
 * meet the first deficient group, the second what the first leaves; both checks are exact (the first is added
 * for real while the second is tried). Returns whether it did.
 */
function replaceByTwo(ctx: SearchCtx, c: number, D: Deficits, rest: Deficits, mark: Int32Array): boolean {
  const { st } = ctx;
  const m = st.m;
  const before = st.cost();
  st.remove(c);
  D.collect(st, [c], mark);
  if (D.n === 0 || D.hopeless) {
    st.add(c);
    return false;
  }
  const head = new Deficits(1);
  head.groups[0] = D.groups[0];
  head.flags[0] = D.flags[0];
  head.n = 1;
  const firsts: { d: number; cost: number }[] = [];
  for (let i = 0; i < m.allowedList.length; i++) {
    const d = m.allowedList[i];
    if (st.chosen[d] || d === c) continue;
    const cost = st.costWith([d]);
    if (relLess(cost, before) && restores(st, d, head)) firsts.push({ d, cost });
  }
  firsts.sort((a, b) => a.cost - b.cost || a.d - b.d);
  let best: [number, number] | null = null;
  let bestCost = before;
  for (const { d: d1, cost: cost1 } of firsts) {
    if (st.work > ctx.workLimit || !relLess(cost1, bestCost)) break;
    st.add(d1);
    rest.remaining(st, D);
    if (rest.n === 0) {
      best = [d1, -1];
      bestCost = cost1;
    } else {
      for (let i = 0; i < m.allowedList.length; i++) {
        const d2 = m.allowedList[i];
        if (st.chosen[d2] || d2 === c) continue;
        const cost = st.costWith([d2]);
        if (relLess(cost, bestCost) && restores(st, d2, rest)) {
          best = [d1, d2];
          bestCost = cost;
        }
      }
    }
    st.remove(d1);
  }
  if (best) {
    st.add(best[0]);
    if (best[1] >= 0) st.add(best[1]);
    return true;
  }
  st.add(c);
  return false;
}

function localSearchCover(ctx: SearchCtx): void {
  const { st } = ctx;
  const m = st.m;
  const D = new Deficits(m.nGroups);
  const rest = new Deficits(m.nGroups);
  const mark = new Int32Array(m.nGroups).fill(-1);
  markCounter.id = 0;
  const over = (): boolean => st.work > ctx.workLimit;
  prune(ctx);
  while (!over()) {
    // Removal table: for each removable pick, the unchosen candidates that could replace it alone.
    const table: Removal[] = [];
    for (const { c, saving } of removable(st)) {
      st.remove(c);
      D.collect(st, [c], mark);
      const match: number[] = [];
      for (let i = 0; i < m.allowedList.length; i++) {
        const d = m.allowedList[i];
        if (!st.chosen[d] && d !== c && restores(st, d, D, false)) match.push(d);
      }
      st.add(c);
      table.push({ c, saving, match });
    }
    let moved = false;
    // one for one
    for (const r of table) {
      if (over()) break;
      if (replaceByOne(st, [r.c], r.match, D, mark)) {
        ctx.counts.swap11++;
        moved = true;
        break;
      }
    }
    // one site's sensors for one
    for (let s = 0; s < m.nSites && !moved && !over(); s++) {
      if (st.siteChosen[s] < 2) continue;
      const drop = Array.from(m.siteCands[s]).filter((c) => st.chosen[c]);
      const rows = drop.map((c) => table.find((r) => r.c === c));
      if (rows.some((r) => !r)) continue; // a forced sensor is there
      const pool = rows[0]!.match.filter((d) => rows.every((r) => r!.match.includes(d)));
      if (pool.length > 0 && replaceByOne(st, drop, pool, D, mark)) {
        ctx.counts.site1++;
        moved = true;
      }
    }
    // two for one
    outer: for (let i = 0; i < table.length && !moved; i++) {
      for (let j = i + 1; j < table.length; j++) {
        if (over()) break outer;
        const pool = table[i].match.filter((d) => table[j].match.includes(d));
        if (pool.length === 0) continue;
        const drop = [table[i].c, table[j].c].sort((a, b) => a - b);
        if (replaceByOne(st, drop, pool, D, mark)) {
          ctx.counts.swap21++;
          moved = true;
          break outer;
        }
      }
    }
    // one for two
    for (const r of table) {
      if (moved || over()) break;
      if (replaceByTwo(ctx, r.c, D, rest, mark)) {
        ctx.counts.swap12++;
        moved = true;
      }
    }
    if (!moved) break;
    prune(ctx);
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Local search (budget mode)

function localSearchBudget(ctx: SearchCtx, budget: number): void {
  const { st } = ctx;
  const m = st.m;
  let improved = true;
  while (improved && st.work <= ctx.workLimit) {
    improved = false;
    for (const c of st.chosenList()) {
      if (m.forced[c] || st.work > ctx.workLimit) continue;
      st.remove(c);
      const lost = st.gain(c);
      let best = -1;
      let bestGain = lost;
      for (let i = 0; i < m.allowedList.length; i++) {
        const d = m.allowedList[i];
        if (st.chosen[d] || d === c) continue;
        const gain = st.gain(d);
        if (gain > bestGain * (1 + 1e-12) && st.fits(d, budget)) {
          best = d;
          bestGain = gain;
        }
      }
      if (best >= 0) {
        st.add(best);
        greedyLazyOn(st, budget);
        ctx.counts.swap11++;
        improved = true;
        break;
      }
      st.add(c);
    }
  }
  // Drop picks that cover nothing any more (cheaper, same coverage), most expensive first.
  for (const { c, saving } of removable(st)) {
    if (!(saving > 0)) continue;
    st.remove(c);
    if (st.gain(c) === 0) ctx.counts.prune++;
    else st.add(c);
  }
}

// ---------------------------------------------------------------------------------------------------------------
// The whole solve

export async function solvePlan(inst: PlanInstance, opts: PlanOptions = {}): Promise<PlanResult> {
  const log: string[] = [];
  const progress = opts.onProgress ?? (() => {});
  const stageMs: Record<string, number> = {};
  let t = nowMs();
  const lap = (stage: string): void => {
    const now = nowMs();
    stageMs[stage] = Math.round(now - t);
    t = now;
  };
  progress(0, 'prepare');
  const m = preparePlan(inst);
  const mode = m.budget === undefined ? 'cover' : 'budget';
  log.push(
    `prepare: ${m.pointCount} points → ${m.nGroups} groups with demand; ${m.allowedList.length} of ${m.nCand} ` +
      `candidates allowed, ${m.forcedList.length} forced; mode ${mode}`,
  );
  for (const u of m.unmeetable) {
    log.push(
      `unmeetable: ${u.points} points (first #${u.firstPoint}) require ${u.kind} ≥ ${u.required}, ` +
        `at most ${u.achievable} reachable — capped`,
    );
  }
  lap('prepare');
  progress(0.1, 'greedy');
  const st = stateWithForced(m);
  const picks = greedyLazyOn(st, m.budget);
  let method = 'greedy';
  if (m.budget !== undefined) {
    // Khuller, Moss & Naor (1999): compare with the best single candidate that fits.
    const greedyW = st.coveredWeight();
    const base = stateWithForced(m);
    let best = -1;
    let bestGain = -1;
    for (let i = 0; i < m.allowedList.length; i++) {
      const c = m.allowedList[i];
      if (base.chosen[c]) continue;
      const g = base.gain(c);
      if (g > bestGain && base.fits(c, m.budget)) {
        best = c;
        bestGain = g;
      }
    }
    if (best >= 0) {
      base.add(best);
      if (base.coveredWeight() > greedyW) {
        for (const c of st.chosenList()) if (!m.forced[c]) st.remove(c);
        st.add(best);
        greedyLazyOn(st, m.budget);
        log.push(`greedy: the best single candidate ${best} beat the greedy set`);
      }
    }
  }
  log.push(`greedy: ${picks.length} picks, cost ${st.cost()}, deficit ${st.deficit} units`);
  lap('greedy');
  progress(0.3, 'local search');
  const ctx: SearchCtx = {
    st,
    workLimit: st.work + (opts.searchWork ?? 4e8),
    counts: { prune: 0, swap11: 0, site1: 0, swap21: 0, swap12: 0 },
  };
  if (m.budget === undefined) localSearchCover(ctx);
  else localSearchBudget(ctx, m.budget);
  const cnt = ctx.counts;
  method += '+prune+swap';
  log.push(
    `local search: dropped ${cnt.prune}, swaps 1→1 ${cnt.swap11}, site→1 ${cnt.site1}, 2→1 ${cnt.swap21}, ` +
      `1→2 ${cnt.swap12}${st.work > ctx.workLimit ? ' (work budget reached)' : ' (local optimum)'}; ` +
      `cost ${st.cost()}`,
  );
  lap('localSearch');
  progress(0.5, 'bound');
  let chosen = st.chosenList();
  const heuristicCost = st.cost();
  const heuristicWeight = st.coveredWeight();
  const bound = await boundPlan(m, chosen, {
    timeLimitMs: inst.timeLimitMs ?? DEFAULT_SAFETY_TIME_LIMIT_MS,
    mipMaxNodes: inst.solverNodes ?? DEFAULT_SOLVER_NODES,
    lpMaxIterations: LP_MAX_ITERATIONS,
    exactMaxCandidates: opts.exactMaxCandidates ?? 40,
    exactMaxNonzeros: opts.exactMaxNonzeros ?? 20_000,
    lpMaxNonzeros: opts.lpMaxNonzeros ?? 400_000,
    highs: opts.highs,
    onProgress: (f, stage) => progress(0.5 + 0.5 * f, stage),
  });
  lap('bound');
  log.push(...bound.log);
  if (bound.milpChosen) {
    // Verify the MILP's set with our own exact counts before using it.
    const check = new CoverState(m);
    for (const c of bound.milpChosen) check.add(c);
    const okForced = m.forcedList.every((c) => check.chosen[c]);
    const cost = check.cost();
    if (m.budget === undefined) {
      if (okForced && check.deficit === 0 && relLess(cost, heuristicCost)) {
        chosen = check.chosenList();
        method = `MILP ${bound.milpStatus}`;
        log.push(`MILP: its plan (cost ${cost}) replaces the heuristic one (cost ${heuristicCost})`);
      }
    } else {
      const w = check.coveredWeight();
      if (okForced && cost <= m.budget && w > heuristicWeight * (1 + 1e-12)) {
        chosen = check.chosenList();
        method = `MILP ${bound.milpStatus}`;
        log.push(`MILP: its plan (weight ${w}) replaces the heuristic one (weight ${heuristicWeight})`);
      }
    }
    if (!method.startsWith('MILP')) method += `, MILP ${bound.milpStatus}`;
  }
  method += bound.method ? `, ${bound.method}` : '';
  const final = new CoverState(m);
  for (const c of chosen) final.add(c);
  const cost = final.cost();
  const coveredWeight = final.coveredWeight();
  let lowerBound: number;
  let weightUpperBound: number;
  let gapPct: number;
  if (m.budget === undefined) {
    lowerBound = Math.min(cost, bound.costLowerBound);
    if (bound.milpOptimal && bound.milpObjective !== undefined && !relLess(bound.milpObjective, cost)) {
      lowerBound = cost; // HiGHS proved this cost optimal (relative gap 0), within its tolerances
    }
    weightUpperBound = m.achievableWeight;
    gapPct = cost > 0 ? (100 * (cost - lowerBound)) / cost : 0;
  } else {
    lowerBound = cost;
    weightUpperBound = Math.max(coveredWeight, Math.min(m.achievableWeight, bound.weightUpperBound));
    if (
      bound.milpOptimal &&
      bound.milpObjective !== undefined &&
      !relLess(coveredWeight, bound.milpObjective)
    ) {
      weightUpperBound = coveredWeight;
    }
    gapPct = weightUpperBound > 0 ? (100 * (weightUpperBound - coveredWeight)) / weightUpperBound : 0;
  }
  log.push(
    `result: cost ${cost}, lower bound ${lowerBound}, gap ${gapPct.toFixed(3)} %` +
      (bound.stoppedBy === 'safety time limit' ? `; ${SAFETY_LIMIT_NOTE}` : ''),
  );
  progress(1, 'done');
  return {
    mode,
    chosen,
    cost,
    lowerBound,
    weightUpperBound,
    gapPct,
    coveredWeight,
    totalWeight: m.totalWeight,
    achievableWeight: m.achievableWeight,
    demandMet: final.deficit === 0,
    method,
    unmeetable: m.unmeetable,
    groups: m.nGroups,
    solverStop: bound.stoppedBy,
    log,
    stageMs,
  };
}
