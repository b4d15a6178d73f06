/**
 * Stage 1 of the plan, the demand: validate the instance, then aggregate the demand points by partition
 * refinement into groups with identical (requirements, covering candidates that count toward them). Every later
 * stage works on groups (tens of thousands instead of millions of points); a group's weight is the sum of its
 * points' weights. This is exact: points of one group are covered by the same counting candidates, so they share
 * every count the covered value reads (model.ts: a count of a kind the group does not require is capped at 0).
 * A group's signature lists only those counting candidates, so the stages after never see a candidate where it
 * changes nothing. Requirements above what the allowed candidates together reach are capped there and
 * summarised as `unmeetable`.
 */
import { InputError } from '../../../shared/errors.ts';
import type { MemoryAccount } from '../memory-estimate.ts';
import {
  canonicalCost,
  countsToward,
  isRadarSlot,
  K_ANY,
  KIND_NAMES,
  NK,
  type DemandKind,
  type PlanInstance,
  type PlanModel,
  type Unmeetable,
} from './model.ts';

/**
 * The kind slots (bit 1 << slot) of the candidates that count toward a requirement `req` (NK entries, kind slot
 * order): each kind required, and both radar kinds when 'any' is (model.ts `countsToward`).
 */
export function countingKinds(req: ArrayLike<number>): number {
  let bits = 0;
  for (let k = 0; k < NK; k++) {
    if (req[k] === 0) continue;
    for (let c = 1; c < NK; c++) if (countsToward(c, k)) bits |= 1 << c;
  }
  return bits;
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

/**
 * Validates the instance and builds the aggregated model. Throws InputError with a clear message. `releaseCovers`:
 * the caller gives up the cover lists, and each candidate's `covers` becomes an empty array as soon as the grouping
 * has read it — but a multilateration receiver's when the instance bounds accuracy (accuracy.ts reads them next).
 * `memory`: the run's account, where the grouping counts its arrays (and gives back the covers it lets go); the
 * model keeps it for the later stages. The same model as `beginPlan` fed each allowed candidate's covers in turn.
 */
export function preparePlan(inst: PlanInstance, releaseCovers = false, memory?: MemoryAccount): PlanModel {
  const stream = beginPlan(inst, memory);
  // The allowed candidates' covers are checked as they are added; the others' here.
  const allowed = new Set(stream.allowedList);
  inst.candidates.forEach((c, j) => {
    if (!allowed.has(j)) checkCovers(j, c.covers, inst.points.count);
  });
  const keepMlat = (inst.accuracy?.points.length ?? 0) > 0;
  for (const c of stream.allowedList) {
    const cand = inst.candidates[c];
    stream.add(c, cand.covers);
    if (releaseCovers && !(keepMlat && cand.kind === 'mlat')) {
      memory?.give(cand.covers.byteLength);
      cand.covers = new Uint32Array(0);
    }
  }
  if (releaseCovers) {
    // Those of candidates not allowed, never read.
    for (const cand of inst.candidates) {
      if (keepMlat && cand.kind === 'mlat') continue;
      memory?.give(cand.covers.byteLength);
      cand.covers = new Uint32Array(0);
    }
  }
  return stream.finish();
}

/** Throws InputError unless `cv` holds strictly increasing point indices below `n`. */
function checkCovers(j: number, cv: unknown, n: number): void {
  if (!(cv instanceof Uint32Array)) {
    throw new InputError(`plan: candidates[${j}].covers`, String(cv), 'a Uint32Array of point indices');
  }
  for (let i = 0; i < cv.length; i++) {
    if (cv[i] >= n || (i > 0 && cv[i] <= cv[i - 1])) {
      throw new InputError(
        `plan: candidates[${j}].covers[${i}]`,
        String(cv[i]),
        `strictly increasing point indices below points.count = ${n}`,
      );
    }
  }
}

/**
 * The demand's grouping fed one candidate's covers at a time: `add` refines the groups with the allowed candidate
 * `c`'s covers (read once, not kept: the caller may make each as its footprints come and let both go), `finish`
 * builds the model. `allowedList` are the candidates to add, each once; any order gives the same model.
 */
export interface PlanStream {
  readonly allowedList: Int32Array;
  add(c: number, covers: Uint32Array): void;
  finish(): PlanModel;
}

/**
 * Validates the instance but its cover lists (never read: `add` is handed them) and starts the grouping. Throws
 * InputError with a clear message.
 */
export function beginPlan(inst: PlanInstance, memory?: MemoryAccount): PlanStream {
  const nSites = inst.sites?.length ?? 0;
  const nCand = inst.candidates?.length ?? 0;
  if (!Array.isArray(inst.sites)) throw new InputError('plan: sites', typeof inst.sites, 'an array of sites');
  if (!Array.isArray(inst.candidates)) {
    throw new InputError('plan: candidates', typeof inst.candidates, 'an array of candidates');
  }
  const pts = inst.points;
  const n = pts?.count;
  if (!Number.isInteger(n) || n < 0) throw new InputError('plan: points.count', String(n), 'an integer ≥ 0');
  // Receiver requirements are optional in an instance (absent: none).
  const reqAdsb = pts.reqAdsb ?? new Uint8Array(n);
  const reqMlat = pts.reqMlat ?? new Uint8Array(n);
  for (const [name, arr, Ctor] of [
    ['weight', pts.weight, Float64Array],
    ['reqAny', pts.reqAny, Uint8Array],
    ['reqPrimary', pts.reqPrimary, Uint8Array],
    ['reqSecondary', pts.reqSecondary, Uint8Array],
    ['reqAdsb', reqAdsb, Uint8Array],
    ['reqMlat', reqMlat, Uint8Array],
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
    const kindSlot = KIND_NAMES.indexOf(c.kind);
    if (kindSlot <= K_ANY) {
      throw new InputError(
        `plan: candidates[${j}].kind`,
        JSON.stringify(c.kind),
        KIND_NAMES.slice(1)
          .map((k) => `'${k}'`)
          .join(', '),
      );
    }
    checkCost(`plan: candidates[${j}].cost (${describeCand(inst, j)})`, c.cost);
    candSite[j] = c.siteIndex;
    candKind[j] = kindSlot;
    candCost[j] = c.cost;
  });
  for (let p = 0; p < n; p++) {
    const w = pts.weight[p];
    if (!Number.isFinite(w) || w < 0)
      throw new InputError(`plan: points.weight[${p}]`, String(w), 'a finite weight ≥ 0');
  }
  const forcedList = checkIndexList('plan: forced', inst.forced, nCand, 'candidate');
  const standingList = checkIndexList('plan: standing', inst.standing, nCand, 'candidate');
  const standing = new Uint8Array(nCand);
  for (const c of standingList) {
    if (!inst.sites[candSite[c]].existing) {
      throw new InputError(
        `plan: standing (${describeCand(inst, c)})`,
        `a standing sensor on site '${inst.sites[candSite[c]].id}', which is not marked existing`,
        'sensors already standing only on sites marked existing',
      );
    }
    standing[c] = 1;
    candCost[c] = 0; // nothing new is spent on it
  }
  for (let c = 0; c < nCand; c++) if (!Number.isInteger(candCost[c])) integerCosts = false;
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

  // Partition refinement: start from classes of equal requirements, split by each allowed candidate's cover where
  // the candidate's kind counts toward a requirement of the class (a candidate of another kind changes no count the
  // covered value reads: min(n_k, 0) = 0). Points that differ only in such candidates share one group; on the
  // national benchmark the primaries' covers split the upper airspace, which asks for secondaries only.
  // Per point its class: an Int32, given back when the model is built.
  memory?.take(4 * n, 'grouping the demand points');
  let cls = new Int32Array(n).fill(-1);
  const reqKey = new Map<number, number>();
  /** Per requirement class: the kind slots of the candidates that count toward it (bit 1 << slot). */
  const classKinds: number[] = [];
  let nCls = 0;
  for (let p = 0; p < n; p++) {
    const a = pts.reqAny[p];
    const pr = pts.reqPrimary[p];
    const se = pts.reqSecondary[p];
    const ad = reqAdsb[p];
    const ml = reqMlat[p];
    if (pts.weight[p] > 0 && (a | pr | se | ad | ml) !== 0) {
      // Five bytes: beyond 32 bits, so the key is a float (exact below 2^53).
      const key = ((a << 24) | (pr << 16) | (se << 8) | ad) * 256 + ml;
      let id = reqKey.get(key);
      if (id === undefined) {
        id = nCls++;
        reqKey.set(key, id);
        classKinds.push(countingKinds([a, pr, se, ad, ml]));
      }
      cls[p] = id;
    }
  }
  // Per class, packed in one array so that a cover entry touches one cache line: the candidate that last stamped
  // it (ST), how many of its points that candidate covers (TOUCHED), its size (SIZE), the class its covered points
  // go to (CHILD), the head of its list of covering candidates (HEAD: a node below, −1 for none) and the kind
  // slots that count toward it (KINDS: the requirement class's, inherited by every class split from it). On the
  // national benchmark's 4.8 M points the fields in arrays apart were mostly cache misses.
  const ST = 0;
  const TOUCHED = 1;
  const SIZE = 2;
  const CHILD = 3;
  const HEAD = 4;
  const KINDS = 5;
  const F = 6;
  let cap = Math.max(16, nCls * 2);
  const stateBytes = () => 4 * F * cap;
  memory?.take(stateBytes(), 'grouping the demand points');
  let state = new Int32Array(cap * F);
  for (let k = 0; k < cap; k++) {
    state[k * F + ST] = -1;
    state[k * F + HEAD] = -1;
  }
  for (let k = 0; k < nCls; k++) state[k * F + KINDS] = classKinds[k];
  for (let p = 0; p < n; p++) if (cls[p] >= 0) state[cls[p] * F + SIZE]++;
  // The classes' lists of covering candidates, as they are refined: node i is (candidate nodes[2i], next nodes[2i + 1]).
  // A class covered whole by c gets a node in front of its list; the part split off gets a node in front of its
  // parent's list, which it shares. Each node is in the list of at least one class at the end, so there are at
  // most as many nodes as the groups' lists have entries in all.
  let nodes = new Int32Array(0);
  let nNodes = 0;
  const push = (c: number, next: number): number => {
    if (2 * nNodes === nodes.length) {
      const more = Math.max(64, nodes.length);
      memory?.take(4 * more, "the demand groups' lists of candidates");
      const bigger = new Int32Array(nodes.length + more);
      bigger.set(nodes);
      nodes = bigger;
    }
    nodes[2 * nNodes] = c;
    nodes[2 * nNodes + 1] = next;
    return nNodes++;
  };
  const added = new Uint8Array(nCand);
  let lastAdded = -1;
  let ascending = true;
  let finished = false;

  const add = (c: number, cv: Uint32Array): void => {
    if (finished) throw new Error('plan: a candidate added after the model was built');
    if (!allowed[c] || added[c]) throw new Error(`plan: candidate ${c} added twice or not allowed`);
    checkCovers(c, cv, n);
    added[c] = 1;
    if (c < lastAdded) ascending = false;
    lastAdded = c;
    const bit = 1 << candKind[c];
    for (let i = 0; i < cv.length; i++) {
      const q = cls[cv[i]] * F;
      if (q < 0 || (state[q + KINDS] & bit) === 0) continue;
      if (state[q + ST] !== c) {
        state[q + ST] = c;
        state[q + TOUCHED] = 0;
      }
      state[q + TOUCHED]++;
    }
    for (let i = 0; i < cv.length; i++) {
      const p = cv[i];
      const k = cls[p];
      if (k < 0) continue;
      const q = k * F;
      if ((state[q + KINDS] & bit) === 0) continue;
      if (state[q + ST] === c) {
        // first visit of class k in this pass: decide split or not
        state[q + ST] = -2 - c;
        const touched = state[q + TOUCHED];
        if (touched === state[q + SIZE]) {
          state[q + CHILD] = k;
          state[q + HEAD] = push(c, state[q + HEAD]);
        } else {
          if (nCls === cap) {
            memory?.take(stateBytes(), 'grouping the demand points');
            cap *= 2;
            const bigger = new Int32Array(cap * F);
            bigger.set(state);
            for (let j = nCls; j < cap; j++) {
              bigger[j * F + ST] = -1;
              bigger[j * F + HEAD] = -1;
            }
            state = bigger;
          }
          const kid = nCls++;
          const r = kid * F;
          state[q + CHILD] = kid;
          state[r + SIZE] = touched;
          state[q + SIZE] -= touched;
          state[r + ST] = -1;
          state[r + KINDS] = state[q + KINDS];
          state[r + HEAD] = push(c, state[q + HEAD]);
        }
      }
      cls[p] = state[q + CHILD];
    }
  };

  const finish = (): PlanModel => {
    if (finished) throw new Error('plan: the model was built already');
    finished = true;
    for (const c of allowedArr) {
      if (!added[c]) throw new Error(`plan: candidate ${c} (allowed) was never added`);
    }
    // Renumber classes by first point; groups are in point order.
    const renum = new Int32Array(nCls).fill(-1);
    const classOf = new Int32Array(nCls);
    let nAll = 0;
    for (let p = 0; p < n; p++) {
      const k = cls[p];
      if (k < 0) continue;
      if (renum[k] < 0) {
        classOf[nAll] = k;
        renum[k] = nAll++;
      }
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
    // Each group's list of candidates (its class's head); then the classes and each point's class are let go.
    const head = new Int32Array(nAll);
    for (let g = 0; g < nAll; g++) head[g] = state[classOf[g] * F + HEAD];
    memory?.give(state.byteLength + cls.byteLength);
    state = new Int32Array(0);
    cls = new Int32Array(0);
    // Signatures of all groups, CSR ascending by candidate, from the lists (newest first: reversed).
    const allSigStart = new Uint32Array(nAll + 1);
    for (let g = 0; g < nAll; g++) {
      let len = 0;
      for (let i = head[g]; i >= 0; i = nodes[2 * i + 1]) len++;
      allSigStart[g + 1] = allSigStart[g] + len;
    }
    // The signatures, and per group about 60 bytes of counts, requirements and offsets: known now, before they are made.
    memory?.take(4 * allSigStart[nAll] + 60 * nAll, "the demand groups' lists of candidates");
    const allSig = new Uint32Array(allSigStart[nAll]);
    for (let g = 0; g < nAll; g++) {
      let at = allSigStart[g + 1];
      for (let i = head[g]; i >= 0; i = nodes[2 * i + 1]) allSig[--at] = nodes[2 * i];
      if (!ascending) allSig.subarray(allSigStart[g], allSigStart[g + 1]).sort();
    }
    memory?.give(nodes.byteLength);
    nodes = new Int32Array(0);
    return buildModel(nAll, allRep, allPoints, allWeight, allSigStart, allSig);
  };
  return { allowedList: Int32Array.from(allowedArr), add, finish };

  function buildModel(
    nAll: number,
    allRep: Uint32Array,
    allPoints: Uint32Array,
    allWeight: Float64Array,
    allSigStart: Uint32Array,
    allSig: Uint32Array,
  ): PlanModel {
    // Achievable fold per kind = distinct sites in the signature; cap, summarise what cannot be met.
    const siteSeen = new Int32Array(nSites * NK).fill(-1);
    const unmet = new Map<string, Unmeetable>();
    const allReq = new Uint8Array(nAll * NK);
    let totalWeight = 0;
    let achievableWeight = 0;
    let demandUnits = 0;
    let live = 0;
    const liveOf = new Int32Array(nAll).fill(-1);
    const ach = new Array<number>(NK).fill(0);
    const req = new Array<number>(NK).fill(0);
    for (let g = 0; g < nAll; g++) {
      ach.fill(0);
      for (let i = allSigStart[g]; i < allSigStart[g + 1]; i++) {
        const c = allSig[i];
        const s = candSite[c];
        const k = candKind[c];
        if (isRadarSlot(k) && siteSeen[s * NK + K_ANY] !== g) {
          siteSeen[s * NK + K_ANY] = g;
          ach[K_ANY]++;
        }
        if (siteSeen[s * NK + k] !== g) {
          siteSeen[s * NK + k] = g;
          ach[k]++;
        }
      }
      const rep = allRep[g];
      req[0] = pts.reqAny[rep];
      req[1] = pts.reqPrimary[rep];
      req[2] = pts.reqSecondary[rep];
      req[3] = reqAdsb[rep];
      req[4] = reqMlat[rep];
      let any = false;
      for (let k = 0; k < NK; k++) {
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
        allReq[g * NK + k] = r;
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
    const gReq = new Uint8Array(live * NK);
    const sigStart = new Uint32Array(live + 1);
    for (let g = 0; g < nAll; g++) {
      const l = liveOf[g];
      if (l < 0) continue;
      gWeight[l] = allWeight[g];
      gPoints[l] = allPoints[g];
      gRep[l] = allRep[g];
      gReq.set(allReq.subarray(g * NK, g * NK + NK), l * NK);
      sigStart[l + 1] = sigStart[l] + (allSigStart[g + 1] - allSigStart[g]);
    }
    // The live groups' signatures moved down in place (a live group's new start is never after its old one), so the
    // signatures are held once, not twice (on the national benchmark at 60″ they are the model's largest array).
    for (let g = 0; g < nAll; g++) {
      const l = liveOf[g];
      if (l >= 0 && sigStart[l] !== allSigStart[g])
        allSig.copyWithin(sigStart[l], allSigStart[g], allSigStart[g + 1]);
    }
    // A view when little is left behind; a copy of its own otherwise.
    const view = sigStart[live] >= allSig.length - (allSig.length >>> 3);
    if (!view) memory?.take(4 * sigStart[live], "the demand groups' lists of candidates");
    const sigCand = view ? allSig.subarray(0, sigStart[live]) : allSig.slice(0, sigStart[live]);
    const covStart = new Uint32Array(nCand + 1);
    for (let i = 0; i < sigCand.length; i++) covStart[sigCand[i] + 1]++;
    for (let c = 0; c < nCand; c++) covStart[c + 1] += covStart[c];
    // Each candidate's live groups, ascending: the signatures' transpose, read in group order.
    memory?.take(4 * sigCand.length, "each candidate's list of demand groups");
    const covGroup = new Uint32Array(sigCand.length);
    {
      const at = covStart.slice(0, nCand);
      for (let g = 0; g < live; g++)
        for (let i = sigStart[g]; i < sigStart[g + 1]; i++) covGroup[at[sigCand[i]]++] = g;
    }
    const order: DemandKind[] = KIND_NAMES;
    const unmeetable = [...unmet.values()].sort(
      (a, b) =>
        order.indexOf(a.kind) - order.indexOf(b.kind) ||
        a.required - b.required ||
        a.achievable - b.achievable,
    );
    // The signatures' first array when they were copied out of it.
    if (!view) memory?.give(allSig.byteLength);
    return {
      memory,
      nSites,
      siteCost,
      nCand,
      candSite,
      candKind,
      candCost,
      standing,
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
}
