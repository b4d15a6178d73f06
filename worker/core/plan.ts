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
 * Cost: each opened site once (0 for a site marked existing) plus each sensor's type cost (0 for a sensor already
 * standing, `PlanInstance.standing`, whose value the result reports apart as `existingValue`).
 *
 * Stages, one module each under worker/core/plan/ (each imports model.ts and the stages before it, never back):
 * 0. model.ts: the instance and the prepared model's types, the cost of a set.
 * 1. demand.ts, prepare: validate, then aggregate the demand points by partition refinement into groups with identical
 *    (requirements, covering candidates). Every stage below works on groups (tens of thousands instead of
 *    millions of points); a group's weight is the sum of its points' weights. This is exact: points of one
 *    group are covered by the same candidates, so they share every count.
 * 2. greedy.ts: greedy by marginal covered weight per marginal cost (Wolsey's greedy for submodular cover; Chvátal 1979 for
 *    set cover), with lazy evaluation (Minoux 1978) — see `greedyLazyOn` for why laziness stays exact with site
 *    costs. Budget mode (maximal covering, Church & ReVelle 1974): the same ratio among candidates that fit,
 *    then the better of that and the best single candidate (Khuller, Moss & Naor 1999).
 * 3. improve.ts, local search: pruning of redundant picks (most expensive first), then exchanges — one chosen candidate for
 *    one unchosen, all of one site's sensors for one, two for one, one for two — each accepted only when it
 *    keeps the demand met and lowers the cost; iterated to a local optimum within a deterministic work budget.
 *    Budget mode: one-for-one exchanges that raise the covered weight within the budget, each followed by a
 *    greedy refill, then dropping picks that no longer cover anything.
 * 4. lp-bound.ts, bound: LP relaxation with HiGHS over the aggregated rows, a MILP when the instance is small.
 * 5. accuracy.ts, when volumes bound the multilateration accuracy: the fold a fix implies is added to the demand
 *    before stage 1 (exact, so the bound stays valid), and after stage 4 receivers are added greedily until every
 *    bound that the allowed receivers can meet is met, then the ones no longer needed are dropped.
 * solve.ts runs them in order (cover-state.ts holds the exact counts they share).
 *
 * Determinism: ties are broken by index, there is no randomness, the local search stops on a count of
 * operations, and HiGHS on counts of its own (interior-point iterations for the LP, branch-and-bound nodes for the
 * MILP: `solverNodes`) — so the same instance gives the same result on any machine and under any load. The only
 * clock is HiGHS's safety time limit (`timeLimitMs`, generous): when it is reached the log and `solverStop` say
 * so, and the bound — and the plan, if a MILP incumbent found by then beats the heuristic one — may then depend
 * on the machine's speed (never its validity: every MILP plan is re-checked with exact counts before it is used).
 */
export { DEFAULT_SAFETY_TIME_LIMIT_MS, DEFAULT_SOLVER_NODES } from '../../shared/plan-limits.ts';
export type { AccuracyDemand, Kind, DemandKind, PlanInstance, Unmeetable } from './plan/model.ts';
export type { AccuracyResult } from './plan/accuracy.ts';
export { beginPlan, countingKinds, preparePlan, type PlanStream } from './plan/demand.ts';
export { greedyLazy, greedyPlain } from './plan/greedy.ts';
export { SAFETY_LIMIT_NOTE, type HighsInit } from './plan/lp-bound.ts';
export { beginSolve, LP_MAX_ITERATIONS, solvePlan, type PlanOptions, type PlanResult } from './plan/solve.ts';
