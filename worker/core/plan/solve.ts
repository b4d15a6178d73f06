/**
 * The solver entry: the stages in order — demand (demand.ts), greedy (greedy.ts), improvement (improve.ts), bound
 * (lp-bound.ts) — then the MILP's plan checked with exact counts, and the result with its gap. The pipeline, its
 * sources and its determinism are described in worker/core/plan.ts, the planner's public face.
 */
import { DEFAULT_SAFETY_TIME_LIMIT_MS, DEFAULT_SOLVER_NODES } from '../../../shared/plan-limits.ts';
import { nowMs } from '../clock.ts';
import type { Progress } from '../floor.ts';
import {
  checkAccuracy,
  prepareAccuracy,
  repairAccuracy,
  withImpliedMlatFolds,
  type AccuracyResult,
} from './accuracy.ts';
import { CoverState } from './cover-state.ts';
import { beginPlan, preparePlan } from './demand.ts';
import { greedyLazyOn, stateWithForced } from './greedy.ts';
import { localSearchBudget, localSearchCover, type SearchCtx } from './improve.ts';
import { boundPlan, SAFETY_LIMIT_NOTE, type HighsInit } from './lp-bound.ts';
import type { MemoryAccount } from '../memory-estimate.ts';
import { relLess, type PlanInstance, type PlanModel, type Unmeetable } from './model.ts';

/** Interior-point iterations allowed to the LP bound (it converges in 13–42 on the demo, cover or budget). */
export const LP_MAX_ITERATIONS = 200;

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
  /**
   * Let go of the instance's cover lists as soon as the model no longer reads them (each candidate's `covers`
   * becomes an empty array; preparePlan's `releaseCovers`): the caller gives them up, and the solve's peak memory
   * drops by their size — on the national benchmark at 60″ about 2 GiB. Nothing after the model reads them (a
   * budget plan's least-cost re-solve reuses the model).
   */
  releaseCovers?: boolean;
  /**
   * The run's memory account (worker/core/memory-estimate.ts): the stages count their large arrays in it and stop
   * with its refusal before one would pass the limit. The caller has counted the cover lists in it.
   */
  memory?: MemoryAccount;
}

export interface PlanResult {
  mode: 'cover' | 'budget';
  /** Candidate indices, sorted. */
  chosen: number[];
  /**
   * What the plan spends anew (the objective, and what a budget limits): site costs (once per opened site, 0 for
   * existing ones) plus sensor type costs (0 for a sensor already standing, `PlanInstance.standing`).
   */
  cost: number;
  /**
   * Per chosen candidate (same order as `chosen`): its share of `cost` — its type cost (0 when standing) plus its
   * site's cost on the site's first chosen candidate (0 for an existing site). They sum to `cost`.
   */
  chosenCost: number[];
  /** Per chosen candidate: whether it is a sensor already standing (it costs nothing new). */
  chosenStanding: boolean[];
  /** The standing sensors in the plan at their type costs: their value, shown apart, not part of `cost`. */
  existingValue: number;
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
  /** Whether every capped requirement unit is met, and every meetable accuracy bound. */
  demandMet: boolean;
  /** The multilateration accuracy bounds, when the instance has any (accuracy.ts). */
  accuracy?: AccuracyResult;
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
// The whole solve

export async function solvePlan(inst: PlanInstance, opts: PlanOptions = {}): Promise<PlanResult> {
  const t = nowMs();
  (opts.onProgress ?? (() => {}))(0, 'prepare');
  checkAccuracy(inst);
  return solveModel(inst, preparePlan(withImpliedMlatFolds(inst), opts.releaseCovers, opts.memory), opts, t);
}

/** The accuracy model (it reads the receivers' covers, which are let go after it with `releaseCovers`), then the stages. */
function solveModel(inst: PlanInstance, m: PlanModel, opts: PlanOptions, t: number): Promise<PlanResult> {
  const acc = prepareAccuracy(inst, m);
  if (opts.releaseCovers) {
    for (const c of inst.candidates) {
      opts.memory?.give(c.covers.byteLength);
      c.covers = new Uint32Array(0);
    }
  }
  return solvePrepared(inst, m, acc, opts, t);
}

/**
 * `solvePlan` with the demand grouped as each candidate's covers come (demand.ts `beginPlan`): the instance is
 * checked now, before any cover exists (its candidates' `covers` are not read, but a multilateration receiver's when
 * the instance bounds accuracy: the caller sets those before `solve`). `add` each allowed candidate's covers (in any
 * order; they are not kept), then `solve`. The same result as `solvePlan` on the instance with those covers.
 */
export function beginSolve(
  inst: PlanInstance,
  opts: PlanOptions = {},
): { allowedList: Int32Array; add(c: number, covers: Uint32Array): void; solve(): Promise<PlanResult> } {
  checkAccuracy(inst);
  const stream = beginPlan(withImpliedMlatFolds(inst), opts.memory);
  return {
    allowedList: stream.allowedList,
    add: (c, covers) => stream.add(c, covers),
    solve: () => {
      const t = nowMs();
      (opts.onProgress ?? (() => {}))(0, 'prepare');
      return solveModel(inst, stream.finish(), opts, t);
    },
  };
}

/**
 * The stages after the demand, on its model `m` (and `acc`, the accuracy model): `inst` gives the costs and the
 * solver's limits only, never its cover lists. `t` is when the preparation started (its stage's time).
 */
async function solvePrepared(
  inst: PlanInstance,
  m: PlanModel,
  acc: ReturnType<typeof prepareAccuracy>,
  opts: PlanOptions,
  t: number,
): Promise<PlanResult> {
  const log: string[] = [];
  const progress = opts.onProgress ?? (() => {});
  const stageMs: Record<string, number> = {};
  const lap = (stage: string): void => {
    const now = nowMs();
    stageMs[stage] = Math.round(now - t);
    t = now;
  };
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
  // The greedy and the local search in their own function: their state (per opened site a count per group) is
  // let go before the bound's model is built.
  const heuristic = heuristicPlan(m, opts, log, lap, progress);
  let method = heuristic.method;
  progress(0.5, 'bound');
  let chosen = heuristic.chosen;
  const heuristicCost = heuristic.cost;
  const heuristicWeight = heuristic.weight;
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
    check.dispose();
  }
  method += bound.method ? `, ${bound.method}` : '';
  const final = new CoverState(m);
  for (const c of chosen) final.add(c);
  let accuracy: AccuracyResult | undefined;
  if (acc) {
    const before = final.cost();
    accuracy = repairAccuracy(acc, final, m.budget, log);
    chosen = final.chosenList();
    if (accuracy.added.length > 0 || accuracy.dropped.length > 0) {
      method += ', accuracy repair';
      log.push(`accuracy: cost ${before} → ${final.cost()}`);
    }
    log.push(
      `accuracy: ${accuracy.metPoints} of ${accuracy.points} bounded points met; ` +
        `${accuracy.unmeetablePoints} beyond what the allowed receivers can reach`,
    );
  }
  const accuracyMet = accuracy === undefined || accuracy.shortPoints === 0;
  const cost = final.cost();
  const { chosenCost, chosenStanding, existingValue } = shares(inst, m, chosen);
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
  if (chosenStanding.some((x) => x)) {
    log.push(
      `existing: ${chosenStanding.filter((x) => x).length} standing sensors kept, worth ${existingValue} ` +
        '(not in the cost: nothing new is spent on them)',
    );
  }
  log.push(
    `result: cost ${cost}, lower bound ${lowerBound}, gap ${gapPct.toFixed(3)} %` +
      (bound.stoppedBy === 'safety time limit' ? `; ${SAFETY_LIMIT_NOTE}` : ''),
  );
  if (m.budget !== undefined && final.deficit === 0 && accuracyMet) {
    // The budget is not binding: every requirement is met within it. Spending the rest of the budget buys nothing,
    // so plan for least cost instead (with its lower bound), and keep the budget plan only if that costs more.
    log.push(`budget: every requirement met at cost ${cost} ≤ budget ${m.budget}; planning for least cost`);
    // The same model without the budget (preparePlan builds it alike, the budget apart): no second pass over the
    // covers, which the caller may have let go (`releaseCovers`).
    const least = await solvePrepared(
      { ...inst, budget: undefined },
      { ...m, budget: undefined },
      acc,
      opts,
      nowMs(),
    );
    if (least.demandMet && !relLess(cost, least.cost)) {
      return {
        ...least,
        method: `${least.method}; budget ${m.budget} not binding`,
        log: [...log, ...least.log.map((l) => `least cost: ${l}`)],
        stageMs: {
          ...stageMs,
          ...Object.fromEntries(Object.entries(least.stageMs).map(([k, v]) => [`leastCost.${k}`, v])),
        },
      };
    }
    log.push(`budget: the least-cost search found no cheaper plan (${least.cost}); the budget plan stands`);
  }
  progress(1, 'done');
  return {
    mode,
    chosen,
    cost,
    chosenCost,
    chosenStanding,
    existingValue,
    lowerBound,
    weightUpperBound,
    gapPct,
    coveredWeight,
    totalWeight: m.totalWeight,
    achievableWeight: m.achievableWeight,
    demandMet: final.deficit === 0 && accuracyMet,
    ...(accuracy ? { accuracy } : {}),
    method,
    unmeetable: m.unmeetable,
    groups: m.nGroups,
    solverStop: bound.stoppedBy,
    log,
    stageMs,
  };
}

/** The greedy, then the local search, from the forced set: the heuristic plan, with their lines in `log`. */
function heuristicPlan(
  m: PlanModel,
  opts: PlanOptions,
  log: string[],
  lap: (stage: string) => void,
  progress: Progress,
): { chosen: number[]; cost: number; weight: number; method: string } {
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
    base.dispose();
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
  const result = { chosen: st.chosenList(), cost: st.cost(), weight: st.coveredWeight(), method };
  st.dispose();
  return result;
}

/**
 * Each chosen candidate's share of the cost (ascending candidates: a site's cost goes with its first one) and the
 * value of the standing sensors among them (their type costs as the instance gives them).
 */
function shares(
  inst: PlanInstance,
  m: PlanModel,
  chosen: readonly number[],
): Pick<PlanResult, 'chosenCost' | 'chosenStanding' | 'existingValue'> {
  const opened = new Uint8Array(m.nSites);
  const chosenCost: number[] = [];
  const chosenStanding: boolean[] = [];
  let existingValue = 0;
  for (const c of chosen) {
    const s = m.candSite[c];
    chosenCost.push(m.candCost[c] + (opened[s] ? 0 : m.siteCost[s]));
    opened[s] = 1;
    chosenStanding.push(m.standing[c] === 1);
    if (m.standing[c]) existingValue += inst.candidates[c].cost;
  }
  return { chosenCost, chosenStanding, existingValue };
}
