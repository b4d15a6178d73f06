/**
 * Bounds for the plan: the LP relaxation of the site/sensor cover model solved with HiGHS (WebAssembly, the
 * `highs` package), and the exact MILP when the instance is small.
 *
 * Model over the aggregated groups of demand.ts (points with identical requirements and covering candidates share
 * one row — the LP stays small):
 *   x_c ∈ [0,1]  candidate chosen;  y_s ∈ [0,1]  site opened;  x_c ≤ y_s
 *   for a group g and kind k with capped requirement r > 0, per site s with candidates of kind k covering g
 *   (either kind for 'any'): one candidate → the term is x_c; several → a term z_{s,T} ∈ [0,1] with
 *   z ≤ Σ_{c∈T} x_c and z ≤ y_s (shared by every row with the same candidate set T);
 *   cover:  Σ_s term ≥ r,  minimise Σ siteCost·y + Σ typeCost·x.
 *   budget: u_{g,k} ∈ [0,r], u ≤ Σ_s term,  Σ siteCost·y + Σ typeCost·x ≤ B,  maximise Σ W_g·u.
 * Forced candidates have x fixed to 1; excluded sites have no columns at all.
 *
 * The LP relaxation bounds the 0/1 optimum (any OR text). The bound is not read from HiGHS's objective: it is
 * recomputed by weak duality from HiGHS's row duals π (clamped to the sign each row allows), as
 * Σ_i π_i·(bound of row i) + Σ_j min over x_j's box of (c_j − πᵀA_j)·x_j, which is a valid bound for *any* π —
 * so it holds whatever the solver's tolerances, and also when a limit stops it early.
 * If the LP would exceed `lpMaxNonzeros`, it keeps the tightest rows only (fewest spare sites, cover mode; or
 * heaviest, budget mode, the rest counted as fully covered) — a relaxation, hence a weaker but valid bound. A
 * combinatorial bound that needs no solver is always computed too: the cheapest way to meet the single hardest
 * row, on top of the forced sensors.
 *
 * Limits. HiGHS stops on work counts, not on the clock, so the same instance gives the same bound and MILP plan
 * on any machine and under any load: the LP on `lpMaxIterations` interior-point iterations, the MILP on
 * `mipMaxNodes` branch-and-bound nodes (HiGHS's `mip_max_nodes`, which HiGHS's maintainers name as the
 * deterministic stand-in for a time limit, ERGO-Code/HiGHS issue #3133; the work before the first branching is
 * bounded by HiGHS's own effort settings, which count iterations, not seconds). The `highs` package is
 * WebAssembly and single-threaded, so no thread timing enters either; repeated runs, idle and with every core
 * kept busy, gave identical results (test/plan.test.ts). `timeLimitMs` is a safety net only (HiGHS's
 * `time_limit`, LP and MILP together): when it stops a stage the log says so, because that result may differ on
 * another machine.
 */
import loadHighs, { type Highs, type InitOptions, type ModelData } from 'highs';
import { nowMs } from '../clock.ts';
import type { Progress } from '../floor.ts';
import { countsToward, NK, planCost, type PlanModel } from './model.ts';

export type HighsInit = InitOptions;

export interface BoundOptions {
  /** Safety net on the wall clock for the LP and the MILP together (ms); the work limits below come first. */
  timeLimitMs: number;
  /** The MILP's work limit: branch-and-bound nodes (HiGHS `mip_max_nodes`). */
  mipMaxNodes: number;
  /** The LP's work limit: interior-point iterations (HiGHS `ipm_iteration_limit`). */
  lpMaxIterations: number;
  exactMaxCandidates: number;
  exactMaxNonzeros: number;
  lpMaxNonzeros: number;
  highs?: HighsInit;
  onProgress?: Progress;
}

export interface BoundOutcome {
  /** Cover mode: valid lower bound on the cost (−Infinity in budget mode). */
  costLowerBound: number;
  /** Budget mode: valid upper bound on the covered weight (Infinity in cover mode). */
  weightUpperBound: number;
  /** How the bound was obtained, for the plan's `method`. */
  method: string;
  log: string[];
  milpChosen?: number[];
  milpStatus?: 'optimal' | 'incumbent';
  milpOptimal: boolean;
  milpObjective?: number;
  /**
   * What stopped HiGHS short, if anything: a work limit (deterministic) or the safety time limit (the bound and
   * the MILP's plan may then differ on another machine).
   */
  stoppedBy: 'nothing' | 'work limit' | 'safety time limit';
}

/** The words the plan's log uses when the safety time limit stopped a stage. */
export const SAFETY_LIMIT_NOTE = 'stopped by the safety time limit: this plan may differ on another machine';

let highsPromise: Promise<Highs> | null = null;

/** Loads HiGHS once per process/worker (the WebAssembly module takes ~50–100 ms). */
export function getHighs(init?: HighsInit): Promise<Highs> {
  if (!highsPromise) {
    highsPromise = loadHighs(init ?? {}).catch((e: unknown) => {
      highsPromise = null;
      throw e;
    });
  }
  return highsPromise;
}

// ---------------------------------------------------------------------------------------------------------------
// Combinatorial bound

/**
 * max over rows (g, k) of: cost(forced) + the cheapest `need` distinct sites that could add a kind-k cover of g,
 * where need = r − sites the forced sensors already count, and a site's price is its cost unless a forced sensor
 * opened it plus the cheapest such type. Any plan that meets the demand pays at least this for that row alone.
 */
export function singleRowBound(m: PlanModel): number {
  const forcedCost = planCost(m, m.forcedList);
  const siteOpen = new Uint8Array(m.nSites);
  for (const c of m.forcedList) siteOpen[m.candSite[c]] = 1;
  const price = new Float64Array(m.nSites).fill(Infinity);
  const counted = new Uint8Array(m.nSites);
  const touched: number[] = [];
  const prices: number[] = [];
  let best = 0;
  for (let g = 0; g < m.nGroups; g++) {
    for (let k = 0; k < NK; k++) {
      const r = m.gReq[NK * g + k];
      if (r === 0) continue;
      touched.length = 0;
      for (let i = m.sigStart[g]; i < m.sigStart[g + 1]; i++) {
        const c = m.sigCand[i];
        if (!countsToward(m.candKind[c], k)) continue;
        const s = m.candSite[c];
        if (price[s] === Infinity && !counted[s]) touched.push(s);
        if (m.forced[c]) counted[s] = 1;
        const p = m.candCost[c] + (siteOpen[s] ? 0 : m.siteCost[s]);
        if (p < price[s]) price[s] = p;
      }
      let have = 0;
      prices.length = 0;
      for (const s of touched) {
        if (counted[s]) have++;
        else prices.push(price[s]);
      }
      const need = r - have;
      if (need > 0) {
        // The `need` cheapest, added cheapest first (as a sort would give them): a selection, as need is small.
        const take = Math.min(need, prices.length);
        let sum = 0;
        for (let i = 0; i < take; i++) {
          let m = i;
          for (let j = i + 1; j < prices.length; j++) if (prices[j] < prices[m]) m = j;
          const t = prices[i];
          prices[i] = prices[m];
          prices[m] = t;
          sum += prices[i];
        }
        if (sum > best) best = sum;
      }
      for (const s of touched) {
        price[s] = Infinity;
        counted[s] = 0;
      }
    }
  }
  return forcedCost + best;
}

// ---------------------------------------------------------------------------------------------------------------
// Model building

export interface Built {
  data: ModelData;
  numCols: number;
  xCol: Int32Array;
  yCol: Int32Array;
  /** Per z column (from zFirst on): its site and candidate set. */
  zDefs: { col: number; site: number; cands: number[] }[];
  /** Per u column: group, kind, and its row's terms (columns). */
  uDefs: { col: number; g: number; k: number }[];
  /** Demand rows written into the model, of all (`rowsTotal`); `rowsImplied` were left out as implied by others. */
  rowsUsed: number;
  rowsTotal: number;
  rowsImplied: number;
  /** Whether the search for implied rows ran to its end (false: its work budget stopped it; fewer rows dropped). */
  impliedComplete: boolean;
  /** The search did not run: its arrays would have passed the run's memory limit. */
  impliedOverMemory: boolean;
  nonzeros: number;
  /** Budget mode: objective constant of the rows left out (counted as fully covered, negative: minimisation). */
  offset: number;
  rowLower: Float64Array;
  rowUpper: Float64Array;
  colCost: Float64Array;
  colLower: Float64Array;
  colUpper: Float64Array;
  starts: Int32Array;
  indices: Int32Array;
  values: Float64Array;
}

/**
 * Work budget of `impliedRows`, in rows looked at: a count, not a clock, so the same instance drops the same rows on
 * any machine and under any load. The demo needs about 1 % of it (all its implied rows found, 55 ms); the national
 * benchmark at 60″ (1 956 048 rows) reaches it after 858 623 were found: 11–12 s measured with a row's length and
 * need read from three arrays (a budget of 3e7 took as long and found 693 482), about 5 s less since they are
 * packed in one word (the solver stage's difference, one run each).
 */
export const DOMINANCE_WORK = 100_000_000;

/**
 * Cover rows implied by another (cover mode): row b (group g_b, kind k_b, need r_b) is left out when a kept row a
 * has r_a ≥ r_b and every candidate that counts toward a's kind for g_a also counts toward b's for g_b (L_a ⊆ L_b).
 * Why this drops no solution and no bound: given any (x, y) of the model without b, raise each z to
 * min(1, Σ_T x, y_s), its largest allowed value (z costs nothing and appears with +1 in ≥ rows only, so every kept
 * row still holds). Then b's term at a site s is at least a's there (C_a,s ⊆ C_b,s; a single x_c ≤ min(1, y_s)),
 * so Σ b ≥ Σ a ≥ r_a ≥ r_b: the LP and the MILP have the same optimum with or without b, and every (x, y) of the
 * smaller model meets b. This is the classical row-dominance reduction of set covering (a row whose columns include
 * another row's can be deleted: e.g. Garfinkel & Nemhauser, Integer Programming, Wiley 1972 — reference from memory;
 * the proof above is self-contained), applied to the rows' candidate sets with their needs.
 *
 * Search: rows by length (then need, largest first, then index); each row a not yet dropped scans the rows holding its rarest
 * candidate and drops those its set is a subset of (a 64-bit mask first, then a merge of the sorted lists). Rows
 * with the same set and need keep the first. Stops at `work` rows looked at (`complete` false): the rows not yet
 * dropped stay, which only leaves the model larger.
 */
export function impliedRows(
  m: PlanModel,
  rowG: readonly number[],
  rowK: readonly number[],
  work: number,
): { dropped: Uint8Array; complete: boolean; overMemory?: boolean } {
  const nRows = rowG.length;
  const dropped = new Uint8Array(nRows);
  // A row's length is packed with its need below (length · 256 in an Int32): beyond 2^23 candidates, no search.
  if (m.nCand >= 1 << 23) return { dropped, complete: false };
  const start = new Int32Array(nRows + 1);
  for (let id = 0; id < nRows; id++) {
    const g = rowG[id];
    const k = rowK[id];
    let n = 0;
    for (let i = m.sigStart[g]; i < m.sigStart[g + 1]; i++)
      if (countsToward(m.candKind[m.sigCand[i]], k)) n++;
    start[id + 1] = start[id] + n;
  }
  // Its arrays below (two Int32 per list entry, 25 bytes per row, 8 per candidate): when the run's memory account
  // cannot hold them, no search (the model is only larger), and the log says why.
  const bytes = 8 * start[nRows] + 25 * nRows + 8 * m.nCand;
  if (m.memory && !m.memory.fits(bytes)) return { dropped, complete: false, overMemory: true };
  m.memory?.take(bytes, 'the search for implied rows');
  try {
    return searchImplied(m, rowG, rowK, work, start, dropped);
  } finally {
    m.memory?.give(bytes);
  }
}

/** impliedRows' search, over each row's candidate count (`start`, CSR offsets); marks the rows it drops. */
function searchImplied(
  m: PlanModel,
  rowG: readonly number[],
  rowK: readonly number[],
  work: number,
  start: Int32Array,
  dropped: Uint8Array,
): { dropped: Uint8Array; complete: boolean } {
  const nRows = rowG.length;
  const list = new Int32Array(start[nRows]);
  const maskLo = new Int32Array(nRows);
  const maskHi = new Int32Array(nRows);
  const postCount = new Int32Array(m.nCand + 1);
  for (let id = 0; id < nRows; id++) {
    const g = rowG[id];
    const k = rowK[id];
    let at = start[id];
    for (let i = m.sigStart[g]; i < m.sigStart[g + 1]; i++) {
      const c = m.sigCand[i];
      if (!countsToward(m.candKind[c], k)) continue;
      list[at++] = c;
      postCount[c + 1]++;
      if (c & 32) maskHi[id] |= 1 << (c & 31);
      else maskLo[id] |= 1 << (c & 31);
    }
  }
  for (let c = 0; c < m.nCand; c++) postCount[c + 1] += postCount[c];
  const post = new Int32Array(start[nRows]);
  const fill = postCount.slice(0, m.nCand);
  for (let id = 0; id < nRows; id++)
    for (let i = start[id]; i < start[id + 1]; i++) post[fill[list[i]]++] = id;
  // Per row its length and need in one word (length · 256 + need), so that a row looked at costs one read.
  const info = new Int32Array(nRows);
  for (let id = 0; id < nRows; id++)
    info[id] = (start[id + 1] - start[id]) * 256 + m.gReq[NK * rowG[id] + rowK[id]];
  const need = (id: number): number => info[id] & 255;
  const len = (id: number): number => info[id] >>> 8;
  // By length, then need (largest first), then row: one exact key per row (length < 2^12 candidates, need < 2^8,
  // row < 2^32: 52 bits), sorted as numbers.
  const key = new Float64Array(nRows);
  for (let id = 0; id < nRows; id++)
    key[id] = (Math.min(len(id), 4095) * 256 + (255 - need(id))) * 2 ** 32 + id;
  key.sort();
  let looked = 0;
  for (let o = 0; o < nRows; o++) {
    const a = key[o] % 2 ** 32;
    if (dropped[a]) continue;
    const la = len(a);
    if (la === 0) continue;
    let rare = list[start[a]];
    for (let i = start[a] + 1; i < start[a + 1]; i++) {
      const c = list[i];
      if (postCount[c + 1] - postCount[c] < postCount[rare + 1] - postCount[rare]) rare = c;
    }
    const ra = need(a);
    const p0 = postCount[rare];
    const p1 = postCount[rare + 1];
    if (looked + (p1 - p0) > work) return { dropped, complete: false };
    looked += p1 - p0;
    for (let q = p0; q < p1; q++) {
      const b = post[q];
      if (b === a || dropped[b]) continue;
      const ib = info[b];
      const nb = ib & 255;
      const lb = ib >>> 8;
      if (nb > ra || lb < la || (maskLo[a] & ~maskLo[b]) !== 0 || (maskHi[a] & ~maskHi[b]) !== 0) continue;
      // The same set and need: the row first in the order stays (it is looked at before the other).
      if (lb === la && nb === ra && b < a) continue;
      let j = start[b];
      const jEnd = start[b + 1];
      let subset = true;
      for (let i = start[a]; i < start[a + 1]; i++) {
        const c = list[i];
        while (j < jEnd && list[j] < c) j++;
        if (j === jEnd || list[j] !== c) {
          subset = false;
          break;
        }
        j++;
      }
      if (subset) dropped[b] = 1;
    }
  }
  return { dropped, complete: true };
}

export function buildModel(
  m: PlanModel,
  inf: number,
  lpMaxNonzeros: number,
  dominanceWork = DOMINANCE_WORK,
): Built {
  const budgetMode = m.budget !== undefined;
  const colCost: number[] = [];
  const colLower: number[] = [];
  const colUpper: number[] = [];
  const xCol = new Int32Array(m.nCand).fill(-1);
  const yCol = new Int32Array(m.nSites).fill(-1);
  for (let i = 0; i < m.allowedList.length; i++) {
    const c = m.allowedList[i];
    xCol[c] = colCost.length;
    colCost.push(budgetMode ? 0 : m.candCost[c]);
    colLower.push(m.forced[c] ? 1 : 0);
    colUpper.push(1);
  }
  for (let s = 0; s < m.nSites; s++) {
    if (m.siteCands[s].length === 0) continue;
    yCol[s] = colCost.length;
    colCost.push(budgetMode ? 0 : m.siteCost[s]);
    colLower.push(0);
    colUpper.push(1);
  }
  const starts: number[] = [0];
  const indices: number[] = [];
  const values: number[] = [];
  const rowLower: number[] = [];
  const rowUpper: number[] = [];
  const endRow = (lo: number, hi: number): void => {
    rowLower.push(lo);
    rowUpper.push(hi);
    starts.push(indices.length);
  };
  // x_c ≤ y_s
  for (let i = 0; i < m.allowedList.length; i++) {
    const c = m.allowedList[i];
    indices.push(xCol[c], yCol[m.candSite[c]]);
    values.push(1, -1);
    endRow(-inf, 0);
  }
  // Enumerate the demand rows with their number of terms (distinct sites).
  const siteMark = new Int32Array(m.nSites).fill(-1);
  const rowG: number[] = [];
  const rowK: number[] = [];
  const rowTerms: number[] = [];
  let totalTerms = 0;
  for (let g = 0; g < m.nGroups; g++) {
    for (let k = 0; k < NK; k++) {
      const r = m.gReq[NK * g + k];
      if (r === 0) continue;
      const id = rowG.length;
      let t = 0;
      for (let i = m.sigStart[g]; i < m.sigStart[g + 1]; i++) {
        const c = m.sigCand[i];
        if (!countsToward(m.candKind[c], k)) continue;
        const s = m.candSite[c];
        if (siteMark[s] !== id) {
          siteMark[s] = id;
          t++;
        }
      }
      rowG.push(g);
      rowK.push(k);
      rowTerms.push(t);
      totalTerms += t + (budgetMode ? 1 : 0);
    }
  }
  const rowsTotal = rowG.length;
  const implied = budgetMode ? null : impliedRows(m, rowG, rowK, dominanceWork);
  let selected: number[] = [];
  let rowsImplied = 0;
  totalTerms = 0;
  for (let id = 0; id < rowsTotal; id++) {
    if (implied !== null && implied.dropped[id]) rowsImplied++;
    else {
      selected.push(id);
      totalTerms += rowTerms[id] + (budgetMode ? 1 : 0);
    }
  }
  if (totalTerms > lpMaxNonzeros) {
    if (!budgetMode) {
      // tightest first: fewest spare sites, then fewest terms
      selected.sort(
        (a, b) =>
          rowTerms[a] - m.gReq[NK * rowG[a] + rowK[a]] - (rowTerms[b] - m.gReq[NK * rowG[b] + rowK[b]]) ||
          rowTerms[a] - rowTerms[b] ||
          a - b,
      );
    } else {
      selected.sort(
        (a, b) =>
          m.gWeight[rowG[b]] * m.gReq[NK * rowG[b] + rowK[b]] -
            m.gWeight[rowG[a]] * m.gReq[NK * rowG[a] + rowK[a]] || a - b,
      );
    }
    let used = 0;
    let n = 0;
    while (n < selected.length && used + rowTerms[selected[n]] <= lpMaxNonzeros)
      used += rowTerms[selected[n++]];
    selected = selected.slice(0, n).sort((a, b) => a - b);
  }
  const keep = new Uint8Array(rowsTotal);
  for (const i of selected) keep[i] = 1;
  let offset = 0;
  const zKey = new Map<string, number>();
  const zDefs: Built['zDefs'] = [];
  const uDefs: Built['uDefs'] = [];
  const siteSlot = new Int32Array(m.nSites).fill(-1);
  const siteList: number[] = [];
  const siteCands: number[][] = [];
  const term: number[] = [];
  for (let id = 0; id < rowsTotal; id++) {
    const g = rowG[id];
    const k = rowK[id];
    const r = m.gReq[NK * g + k];
    if (!keep[id]) {
      if (budgetMode) offset -= m.gWeight[g] * r;
      continue;
    }
    siteList.length = 0;
    for (let i = m.sigStart[g]; i < m.sigStart[g + 1]; i++) {
      const c = m.sigCand[i];
      if (!countsToward(m.candKind[c], k)) continue;
      const s = m.candSite[c];
      if (siteSlot[s] < 0) {
        siteSlot[s] = siteList.length;
        siteList.push(s);
        if (siteCands.length < siteList.length) siteCands.push([]);
        siteCands[siteSlot[s]].length = 0;
      }
      siteCands[siteSlot[s]].push(c);
    }
    term.length = 0;
    for (let j = 0; j < siteList.length; j++) {
      const s = siteList[j];
      const cands = siteCands[j];
      siteSlot[s] = -1;
      if (cands.length === 1) {
        term.push(xCol[cands[0]]);
        continue;
      }
      const key = cands.join(',');
      let col = zKey.get(key);
      if (col === undefined) {
        col = colCost.length;
        zKey.set(key, col);
        zDefs.push({ col, site: s, cands: [...cands] });
        colCost.push(0);
        colLower.push(0);
        colUpper.push(1);
        // z ≤ Σ x_c
        indices.push(col);
        values.push(1);
        for (const c of cands) {
          indices.push(xCol[c]);
          values.push(-1);
        }
        endRow(-inf, 0);
        // z ≤ y_s
        indices.push(col, yCol[s]);
        values.push(1, -1);
        endRow(-inf, 0);
      }
      term.push(col);
    }
    if (!budgetMode) {
      for (const col of term) {
        indices.push(col);
        values.push(1);
      }
      endRow(r, inf);
    } else {
      const u = colCost.length;
      uDefs.push({ col: u, g, k });
      colCost.push(-m.gWeight[g]);
      colLower.push(0);
      colUpper.push(r);
      indices.push(u);
      values.push(1);
      for (const col of term) {
        indices.push(col);
        values.push(-1);
      }
      endRow(-inf, 0);
    }
  }
  if (budgetMode) {
    for (let i = 0; i < m.allowedList.length; i++) {
      const c = m.allowedList[i];
      if (m.candCost[c] !== 0) {
        indices.push(xCol[c]);
        values.push(m.candCost[c]);
      }
    }
    for (let s = 0; s < m.nSites; s++) {
      if (yCol[s] >= 0 && m.siteCost[s] !== 0) {
        indices.push(yCol[s]);
        values.push(m.siteCost[s]);
      }
    }
    endRow(-inf, m.budget!);
  }
  const numCols = colCost.length;
  const numRows = rowLower.length;
  const built = {
    numCols,
    xCol,
    yCol,
    zDefs,
    uDefs,
    rowsUsed: selected.length,
    rowsTotal,
    rowsImplied,
    impliedComplete: implied === null || implied.complete,
    impliedOverMemory: implied?.overMemory === true,
    nonzeros: indices.length,
    offset,
    rowLower: Float64Array.from(rowLower),
    rowUpper: Float64Array.from(rowUpper),
    colCost: Float64Array.from(colCost),
    colLower: Float64Array.from(colLower),
    colUpper: Float64Array.from(colUpper),
    starts: Int32Array.from(starts),
    indices: Int32Array.from(indices),
    values: Float64Array.from(values),
  };
  return {
    ...built,
    data: {
      numCols,
      numRows,
      colCost: built.colCost,
      colLower: built.colLower,
      colUpper: built.colUpper,
      rowLower: built.rowLower,
      rowUpper: built.rowUpper,
      matrix: {
        format: 'csr',
        numRows,
        numCols,
        starts: built.starts,
        indices: built.indices,
        values: built.values,
      },
    },
  };
}

/**
 * Weak-duality bound of min cᵀx s.t. L ≤ Ax ≤ U, l ≤ x ≤ u from any row multipliers π (HiGHS convention: the
 * reduced cost is c − Aᵀπ; π ≥ 0 pairs with the lower row bound, π ≤ 0 with the upper). A multiplier whose row
 * bound on that side is infinite is set to 0. The float sums are widened by a relative 1e-9 of their magnitude.
 */
export function dualBound(b: Built, rowDual: Float64Array, inf: number): number {
  const nRows = b.rowLower.length;
  const d = Float64Array.from(b.colCost);
  let sum = 0;
  let mag = 0;
  for (let i = 0; i < nRows; i++) {
    let pi = rowDual[i];
    if (!Number.isFinite(pi)) pi = 0;
    if (pi > 0 && !(b.rowLower[i] > -inf)) pi = 0;
    if (pi < 0 && !(b.rowUpper[i] < inf)) pi = 0;
    if (pi === 0) continue;
    const t = pi > 0 ? pi * b.rowLower[i] : pi * b.rowUpper[i];
    sum += t;
    mag += Math.abs(t);
    for (let j = b.starts[i]; j < b.starts[i + 1]; j++) d[b.indices[j]] -= pi * b.values[j];
  }
  for (let j = 0; j < b.numCols; j++) {
    const t = d[j] > 0 ? d[j] * b.colLower[j] : d[j] < 0 ? d[j] * b.colUpper[j] : 0;
    if (!Number.isFinite(t)) return -Infinity;
    sum += t;
    mag += Math.abs(t);
  }
  return sum - 1e-9 * mag - 1e-12;
}

/** Column values of a 0/1 plan in the model (z and u at their best values given x). */
function startValues(m: PlanModel, b: Built, chosen: readonly number[]): Float64Array {
  const v = new Float64Array(b.numCols);
  const isChosen = new Uint8Array(m.nCand);
  for (const c of chosen) {
    isChosen[c] = 1;
    v[b.xCol[c]] = 1;
    v[b.yCol[m.candSite[c]]] = 1;
  }
  for (const z of b.zDefs) v[z.col] = z.cands.some((c) => isChosen[c]) ? 1 : 0;
  if (b.uDefs.length > 0) {
    // u = min(r, Σ terms): recompute from the row (u − Σ terms ≤ 0), whose first entry is u itself
    const rowOfU = new Map<number, number>();
    for (let i = 0; i < b.rowLower.length; i++) {
      const first = b.indices[b.starts[i]];
      if (b.starts[i + 1] > b.starts[i]) rowOfU.set(first, i);
    }
    for (const u of b.uDefs) {
      const i = rowOfU.get(u.col)!;
      let s = 0;
      for (let j = b.starts[i] + 1; j < b.starts[i + 1]; j++) s += v[b.indices[j]];
      v[u.col] = Math.min(b.colUpper[u.col], s);
    }
  }
  return v;
}

function statusName(highs: Highs, code: number): string {
  const names = Object.entries(highs.constants.modelStatus).find(([, v]) => v === code);
  return names ? names[0] : String(code);
}

/** HiGHS's model status as a limit: the clock (the safety net), a work count, or none. */
function limitOf(highs: Highs, code: number): 'time' | 'work' | null {
  const st = highs.constants.modelStatus;
  if (code === st.timeLimit) return 'time';
  if (code === st.iterationLimit || code === st.solutionLimit) return 'work';
  return null;
}

export async function boundPlan(
  m: PlanModel,
  heuristic: readonly number[],
  o: BoundOptions,
): Promise<BoundOutcome> {
  const log: string[] = [];
  const budgetMode = m.budget !== undefined;
  const out: BoundOutcome = {
    costLowerBound: budgetMode ? -Infinity : singleRowBound(m),
    weightUpperBound: budgetMode ? m.achievableWeight : Infinity,
    method: budgetMode ? 'trivial bound' : 'single-row bound',
    log,
    milpOptimal: false,
    stoppedBy: 'nothing',
  };
  const stopped = (limit: 'time' | 'work' | null): string => {
    if (limit === 'time') {
      out.stoppedBy = 'safety time limit';
      return ` (${SAFETY_LIMIT_NOTE})`;
    }
    if (limit === 'work') {
      if (out.stoppedBy === 'nothing') out.stoppedBy = 'work limit';
      return ' (work limit reached)';
    }
    return '';
  };
  if (!budgetMode) log.push(`bound: single-row bound ${out.costLowerBound}`);
  if (m.nGroups === 0) {
    out.costLowerBound = budgetMode ? -Infinity : planCost(m, m.forcedList);
    out.weightUpperBound = 0;
    out.method = 'no demand';
    return out;
  }
  let highs: Highs;
  try {
    highs = await getHighs(o.highs);
  } catch (e) {
    log.push(`bound: HiGHS did not load (${(e as Error).message}); keeping the ${out.method}`);
    return out;
  }
  const inf = highs.infinity;
  const deadline = nowMs() + o.timeLimitMs;
  o.onProgress?.(0, 'LP bound');
  const b = buildModel(m, inf, o.lpMaxNonzeros);
  const full = b.rowsUsed + b.rowsImplied === b.rowsTotal;
  const impliedNote = b.impliedOverMemory
    ? '; no search for rows implied by others (its lists would pass the memory limit)'
    : b.rowsImplied > 0 || !b.impliedComplete
      ? `; ${b.rowsImplied} implied by others and left out${b.impliedComplete ? '' : ' (search stopped at its work budget)'}`
      : '';
  log.push(
    `LP: ${b.numCols} columns, ${b.data.numRows} rows (${b.rowsUsed} of ${b.rowsTotal} demand rows${impliedNote}` +
      `${full ? '' : ', tightest kept: a weaker but valid bound'}), ${b.nonzeros} nonzeros`,
  );
  const improve = (v: number, what: string): void => {
    if (!budgetMode && v > out.costLowerBound) {
      out.costLowerBound = v;
      out.method = what;
    } else if (budgetMode && v < out.weightUpperBound) {
      out.weightUpperBound = v;
      out.method = what;
    }
  };
  const runLp = (): void => {
    const lpName = full ? 'LP bound' : `LP bound over ${b.rowsUsed} of ${b.rowsTotal} rows`;
    {
      const model = highs.createModel(b.data);
      try {
        // Interior point without crossover: the bound needs duals only (any π gives a valid bound, see
        // dualBound), and on these models it was 1.5–3× faster than the simplex when tried here.
        model.options.set({
          output_flag: false,
          // What the safety limit leaves after a MILP that stopped short, and never under a tenth of it.
          time_limit: Math.max(0.1 * o.timeLimitMs, deadline - nowMs()) / 1000,
          ipm_iteration_limit: o.lpMaxIterations,
          solver: 'ipm',
          run_crossover: 'off',
        });
        model.run();
        const status = model.getModelStatus();
        const sol = model.getSolution();
        const v = dualBound(b, sol.rowDual, inf) + b.offset;
        const bound = budgetMode ? -v : v;
        const iterations = Number(model.info.get('ipm_iteration_count'));
        log.push(
          `LP: ${statusName(highs, status)} after ${iterations} iterations, objective ${budgetMode ? -model.getObjectiveValue() - b.offset : model.getObjectiveValue()}, ` +
            `dual bound ${bound}${stopped(limitOf(highs, status))}`,
        );
        if (Number.isFinite(bound)) improve(bound, lpName);
      } catch (e) {
        log.push(`LP: HiGHS failed (${(e as Error).message}); keeping the ${out.method}`);
      } finally {
        model.dispose();
      }
    }
  };
  const roundUp = (): void => {
    if (!budgetMode && m.integerCosts) {
      const up = Math.ceil(out.costLowerBound - 1e-6);
      if (up > out.costLowerBound) {
        out.costLowerBound = up;
        log.push(`bound: costs are integers → rounded up to ${up}`);
      }
    }
  };
  const runMilp = (): void => {
    o.onProgress?.(0.5, 'MILP');
    const integrality = new Int32Array(b.numCols);
    for (const c of m.allowedList) integrality[b.xCol[c]] = 1;
    for (let s = 0; s < m.nSites; s++) if (b.yCol[s] >= 0) integrality[b.yCol[s]] = 1;
    const model = highs.createModel({ ...b.data, integrality });
    try {
      const secs = Math.max(0.1 * o.timeLimitMs, deadline - nowMs()) / 1000;
      model.options.set({
        output_flag: false,
        time_limit: secs,
        mip_max_nodes: o.mipMaxNodes,
        mip_rel_gap: 0,
        mip_abs_gap: !budgetMode && m.integerCosts ? 1 - 1e-6 : 0,
      });
      try {
        model.setSolution({ colValue: startValues(m, b, heuristic) });
      } catch {
        // a start the solver rejects is not needed
      }
      model.run();
      const status = model.getModelStatus();
      const feasible = Number(model.info.get('primal_solution_status')) === 2;
      const dual = Number(model.info.get('mip_dual_bound'));
      const optimal = status === highs.constants.modelStatus.optimal;
      const nodes = Number(model.info.get('mip_node_count'));
      log.push(
        `MILP: ${statusName(highs, status)} after ${nodes} of at most ${o.mipMaxNodes} nodes` +
          `${feasible ? `, objective ${budgetMode ? -model.getObjectiveValue() : model.getObjectiveValue()}` : ''}` +
          `, dual bound ${budgetMode ? -dual : dual}${stopped(limitOf(highs, status))}`,
      );
      if (Number.isFinite(dual)) {
        const margin = 1e-9 * Math.max(1, Math.abs(dual));
        if (!budgetMode) {
          const lb = m.integerCosts ? Math.ceil(dual - 1e-6) : dual - margin;
          improve(lb, 'MILP dual bound');
        } else improve(-dual + margin, 'MILP dual bound');
      }
      if (feasible) {
        const x = model.getSolution().colValue;
        out.milpChosen = Array.from(m.allowedList).filter((c) => x[b.xCol[c]] > 0.5);
        out.milpStatus = optimal ? 'optimal' : 'incumbent';
        out.milpOptimal = optimal;
        out.milpObjective = budgetMode ? -model.getObjectiveValue() : model.getObjectiveValue();
      }
    } catch (e) {
      log.push(`MILP: HiGHS failed (${(e as Error).message})`);
    } finally {
      model.dispose();
    }
  };
  const exact = full && (m.allowedList.length <= o.exactMaxCandidates || b.nonzeros <= o.exactMaxNonzeros);
  if (exact && o.mipMaxNodes > 0) {
    // The MILP first: when it proves its plan optimal, the plan's cost is its own lower bound and the LP could only
    // give a weaker one (on the demo 1.3 s of the plan's 20 s), so the LP runs only when the MILP stops short.
    runMilp();
    if (out.milpOptimal) {
      log.push('LP: not run (the MILP proved its plan optimal)');
      return out;
    }
  }
  runLp();
  roundUp();
  if (exact && o.mipMaxNodes === 0) {
    log.push('MILP: not run (node limit 0)');
    out.stoppedBy = 'work limit';
  }
  return out;
}
