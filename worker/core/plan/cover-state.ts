/**
 * The coverage state of a chosen set over the prepared model's groups: exact fold counts per group and kind, per
 * opened site the counts that make a removal exact, the unmet requirement units, and the set's cost. Shared by
 * the greedy, the local search and the final check of the solver's plan.
 */
import { canonicalCost, isRadarSlot, NK, NS, otherRadarSlot, type PlanModel } from './model.ts';

/**
 * One opened site's counts: a byte each when no site has more than 255 candidates of one kind (a count never
 * exceeds its site's candidates of the slot's kind), else two. On the national benchmark at 60″ an opened site's
 * counts take 7.8 MB instead of 15.6.
 */
type SiteCounts = Uint8Array | Uint16Array;

/**
 * Counts for a chosen set: per group and kind the distinct sites covering it (NK kind slots, 'any' counting sites
 * with a radar), and per opened site and sensor kind (NS slots) the number of its chosen candidates covering each
 * group (so removing a sensor is exact). `deficit` is the number
 * of unmet capped requirement units (unweighted, an exact integer).
 */
export class CoverState {
  readonly cnt: Uint16Array;
  /** Per site its counts while it has a chosen candidate, else null (the counts are then all 0). */
  readonly siteCnt: (SiteCounts | null)[];
  readonly chosen: Uint8Array;
  readonly siteChosen: Int32Array;
  deficit: number;
  work = 0;
  private readonly zeros: SiteCounts;
  /** Counts of sites closed again, all 0, for the next site opened (no fresh pages). */
  private readonly spare: SiteCounts[] = [];
  private readonly wide: boolean;
  /** Bytes of counts made, counted in the run's memory account (`m.memory`) until `dispose`. */
  private counted: number;
  private cachedCost: number | null = null;

  constructor(readonly m: PlanModel) {
    m.memory?.take(2 * NK * m.nGroups, "the plan's counts per group");
    this.counted = 2 * NK * m.nGroups;
    this.cnt = new Uint16Array(m.nGroups * NK);
    this.siteCnt = new Array<SiteCounts | null>(m.nSites).fill(null);
    this.chosen = new Uint8Array(m.nCand);
    this.siteChosen = new Int32Array(m.nSites);
    const perSlot = new Int32Array(m.nSites * NK);
    let most = 0;
    for (let c = 0; c < m.nCand; c++) most = Math.max(most, ++perSlot[m.candSite[c] * NK + m.candKind[c]]);
    this.wide = most > 255;
    this.zeros = this.newCounts();
    let d = 0;
    for (let i = 0; i < m.nGroups * NK; i++) d += m.gReq[i];
    this.deficit = d;
  }

  private newCounts(): SiteCounts {
    const n = this.m.nGroups * NS;
    this.m.memory?.take(this.wide ? 2 * n : n, "the plan's counts per opened site");
    this.counted += this.wide ? 2 * n : n;
    return this.wide ? new Uint16Array(n) : new Uint8Array(n);
  }

  /** The state is no longer used: its counts are given back to the memory account. */
  dispose(): void {
    this.m.memory?.give(this.counted);
    this.counted = 0;
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
    // A radar also counts toward 'any' where the site's other radar does not already; a receiver never does.
    const radar = isRadarSlot(k);
    const otherOff = radar ? otherRadarSlot(k) : 0;
    let gain = 0;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (sc[NS * g + ownOff] !== 0) continue;
      let u = 0;
      if (cnt[NK * g + k] < req[NK * g + k]) u++;
      if (radar && sc[NS * g + otherOff] === 0 && cnt[NK * g] < req[NK * g]) u++;
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
    if (!sc) sc = this.siteCnt[s] = this.spare.pop() ?? this.newCounts();
    const cnt = this.cnt;
    const req = m.gReq;
    const cov = m.covGroup;
    const ownOff = k - 1;
    // A radar also counts toward 'any' where the site's other radar does not already; a receiver never does.
    const radar = isRadarSlot(k);
    const otherOff = radar ? otherRadarSlot(k) : 0;
    let d = this.deficit;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (sc[NS * g + ownOff]++ !== 0) continue;
      if (cnt[NK * g + k]++ < req[NK * g + k]) d--;
      if (radar && sc[NS * g + otherOff] === 0 && cnt[NK * g]++ < req[NK * g]) d--;
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
    // A radar also counts toward 'any' where the site's other radar does not already; a receiver never does.
    const radar = isRadarSlot(k);
    const otherOff = radar ? otherRadarSlot(k) : 0;
    let d = this.deficit;
    const end = m.covStart[c + 1];
    for (let i = m.covStart[c]; i < end; i++) {
      const g = cov[i];
      if (--sc[NS * g + ownOff] !== 0) continue;
      if (--cnt[NK * g + k] < req[NK * g + k]) d++;
      if (radar && sc[NS * g + otherOff] === 0 && --cnt[NK * g] < req[NK * g]) d++;
    }
    this.deficit = d;
    this.cachedCost = null;
    this.chosen[c] = 0;
    if (--this.siteChosen[s] === 0) {
      // Every count of the site is back to 0: its array serves the next site opened.
      this.siteCnt[s] = null;
      this.spare.push(sc);
    }
    this.work += end - m.covStart[c];
  }

  /** Σ_g w_g Σ_k min(count, capped requirement), recomputed from the counts in group order. */
  coveredWeight(): number {
    const m = this.m;
    let total = 0;
    for (let g = 0; g < m.nGroups; g++) {
      let u = 0;
      for (let k = 0; k < NK; k++) u += Math.min(this.cnt[NK * g + k], m.gReq[NK * g + k]);
      total += u * m.gWeight[g];
    }
    return total;
  }
}
