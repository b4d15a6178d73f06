/**
 * Stage 2 of the plan, the greedy: by marginal covered weight per marginal cost (Wolsey's greedy for submodular
 * cover; Chvátal 1979 for set cover), with lazy evaluation (Minoux 1978) — see `greedyLazyOn` for why laziness
 * stays exact with site costs. Budget mode (maximal covering, Church & ReVelle 1974): the same ratio among
 * candidates that fit (the solver then compares with the best single candidate, Khuller, Moss & Naor 1999).
 */
import { CoverState } from './cover-state.ts';
import { preparePlan } from './demand.ts';
import type { PlanInstance, PlanModel } from './model.ts';

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

/** A fresh state with the forced sensors in. */
export function stateWithForced(m: PlanModel): CoverState {
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
