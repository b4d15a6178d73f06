/**
 * Stage 3 of the plan, the improvement (local search). Cover mode: pruning of redundant picks (most expensive
 * first), then exchanges — one chosen candidate for one unchosen, all of one site's sensors for one, two for one,
 * one for two — each accepted only when it keeps the demand met and lowers the cost; iterated to a local optimum
 * within a deterministic work budget (a count of group visits, `CoverState.work`). Budget mode: one-for-one
 * exchanges that raise the covered weight within the budget, each followed by a greedy refill, then dropping
 * picks that no longer cover anything.
 */
import type { CoverState } from './cover-state.ts';
import { greedyLazyOn } from './greedy.ts';
import { isRadarSlot, K_ANY, NK, NS, otherRadarSlot, relLess } from './model.ts';

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
        for (let k = 0; k < NK; k++) {
          const short = m.gReq[NK * g + k] - st.cnt[NK * g + k];
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
      for (let k = 0; k < NK; k++) if (m.gReq[NK * g + k] > st.cnt[NK * g + k]) f |= 1 << k;
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
  // d can meet deficits of its own kind, and of 'any' when it is a radar: any other flag rules it out.
  const radar = isRadarSlot(k);
  const otherSlot = radar ? otherRadarSlot(k) : 0;
  const foreign = ~((1 << k) | (radar ? 1 << K_ANY : 0));
  for (let i = 0; i < D.n; i++) {
    const f = D.flags[i];
    if (f & foreign) {
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
      const own = sc[NS * g + k - 1];
      const other = radar ? sc[NS * g + otherSlot] : 0;
      if ((f & (1 << k) && own !== 0) || (f & 1 && (own !== 0 || other !== 0))) {
        st.work += i + 1;
        return false;
      }
    }
  }
  st.work += D.n;
  return true;
}

/** The local search's state, work limit (in `CoverState.work` units) and what it did. */
export interface SearchCtx {
  st: CoverState;
  workLimit: number;
  counts: { prune: number; swap11: number; site1: number; swap21: number; swap12: number };
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

/** Cover mode: prune, then exchanges, to a local optimum or the work limit. */
export function localSearchCover(ctx: SearchCtx): void {
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
// Budget mode

/** Budget mode: exchanges that raise the covered weight within the budget, then drops of idle picks. */
export function localSearchBudget(ctx: SearchCtx, budget: number): void {
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
