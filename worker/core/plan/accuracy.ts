/**
 * The plan's multilateration accuracy requirement (issue 14): a volume may bound the 1σ horizontal DRMS of the
 * multilateration fix (`requiredMlatAccuracyM`). Unlike a fold, the DRMS of a point depends on which receivers see
 * it together, not on how many: it is not a sum over candidates, and the covering model (demand.ts, the greedy, the
 * LP) cannot carry it. It enters the plan in two steps.
 *
 * 1. A fold it implies (`withImpliedMlatFolds`): a fix needs at least `minReceivers` receivers at distinct places
 *    (4 unaided, 3 with the altitude known: mlat.ts). Two receivers on one site sit at one place and give one row
 *    of the least-squares design matrix twice, which adds no rank; so a point with a bound needs an `mlat` fold of
 *    at least `minReceivers` distinct sites. Raising the point's `mlat` requirement to that is exact (every plan
 *    that meets the bound meets it), so the covering stages place the fix's receivers and the LP's lower bound
 *    stays a lower bound on the cost of any plan that meets the bound (the bound only adds constraints).
 * 2. A repair after the covering solve (`repairAccuracy`): per point with a bound, the DRMS of the chosen `mlat`
 *    receivers that cover it (the same model and geometry as the accuracy map, mlat-map.ts: Torrieri 1984, TOA
 *    least squares with the emission time unknown, exact WGS84 earth-centred geometry rotated into the target's
 *    east-north-up frame). While some point that all allowed receivers together could satisfy fails, add the
 *    allowed `mlat` candidate with the largest weighted progress per marginal cost (ties: lowest index), then drop
 *    any non-forced `mlat` sensor, dearest first, whose removal keeps every fold and every met bound. Progress per
 *    point is φ = 1 when met, ½ + ½·bound/DRMS with a fix that misses, ½·n/(n+1) without a fix from n receivers:
 *    adding a receiver never loses a fix or raises the DRMS (the normal matrix only grows), so φ never falls.
 *
 * A point whose bound no set of allowed receivers meets (the DRMS with all of them that see it is above the bound,
 * or there is no fix) is capped as folds are: counted as `unmeetable`, not chased. The repair is a heuristic; the
 * plan's gap is still measured against the covering LP's bound, which step 1 makes valid for the accuracy too.
 */
import { InputError } from '../../../shared/errors.ts';
import { mlatMinReceivers } from '../../../shared/sensor-kinds.ts';
import { mlatHorizontalDrmsFlat, toEcef } from '../mlat.ts';
import { DEG_TO_RAD } from '../../../shared/units.ts';
import type { CoverState } from './cover-state.ts';
import { K_MLAT, type PlanInstance, type PlanModel } from './model.ts';

export type { AccuracyDemand } from './model.ts';

/** The accuracy figures of a plan. */
export interface AccuracyResult {
  /** Points with a bound and their weight. */
  points: number;
  weight: number;
  /** Those the plan meets. */
  metPoints: number;
  metWeight: number;
  /** Those some set of allowed receivers could meet that the plan does not (0 when the repair succeeded). */
  shortPoints: number;
  shortWeight: number;
  /** Those no set of allowed receivers can meet (capped, not chased). */
  unmeetablePoints: number;
  unmeetableWeight: number;
  /** Candidates the repair added (in order), and the ones it dropped after. */
  added: number[];
  dropped: number[];
}

/** The bounded points with their covering allowed `mlat` candidates, as receiver offsets in the target's frame. */
export interface AccuracyModel {
  n: number;
  point: Uint32Array;
  weight: Float64Array;
  bound: Float64Array;
  /** Point → entries [start[i], start[i + 1]): candidate, (e, n, u) of the receiver from the target, σ (s). */
  start: Uint32Array;
  cand: Int32Array;
  enu: Float64Array;
  sigma: Float64Array;
  /** Candidate → the bounded points it covers, CSR by candidate. */
  candStart: Uint32Array;
  candPoint: Uint32Array;
  meetable: Uint8Array;
  altitudeKnown: boolean;
  minReceivers: number;
}

/** Checks the accuracy demand against the instance (one message naming the field) before any work. */
export function checkAccuracy(inst: PlanInstance): void {
  const a = inst.accuracy;
  if (a === undefined) return;
  const n = inst.points.count;
  const nCand = inst.candidates.length;
  const where = 'plan: accuracy';
  const lengths: [string, ArrayLike<number>, number][] = [
    ['boundM', a.boundM, a.points.length],
    ['target', a.target, 3 * a.points.length],
    ['antenna', a.antenna, 3 * nCand],
    ['timingErrorNs', a.timingErrorNs, nCand],
  ];
  for (const [name, arr, len] of lengths) {
    if (arr?.length !== len) {
      throw new InputError(`${where}.${name}`, `${arr?.length} entries`, `${len} entries`);
    }
  }
  for (let i = 0; i < a.points.length; i++) {
    if (a.points[i] >= n || (i > 0 && a.points[i] <= a.points[i - 1])) {
      throw new InputError(
        `${where}.points[${i}]`,
        String(a.points[i]),
        `strictly increasing point indices below points.count = ${n}`,
      );
    }
    if (!(a.boundM[i] > 0 && Number.isFinite(a.boundM[i]))) {
      throw new InputError(`${where}.boundM[${i}]`, String(a.boundM[i]), 'a bound in metres > 0');
    }
  }
  inst.candidates.forEach((c, j) => {
    if (c.kind !== 'mlat') return;
    const s = a.timingErrorNs[j];
    if (!(s > 0 && Number.isFinite(s))) {
      throw new InputError(`${where}.timingErrorNs[${j}]`, String(s), 'an arrival-time error in ns > 0');
    }
    if (![0, 1, 2].every((k) => Number.isFinite(a.antenna[3 * j + k]))) {
      throw new InputError(`${where}.antenna[${j}]`, 'a missing coordinate', 'longitude, latitude, altitude');
    }
  });
}

/**
 * The instance with each bounded point's `mlat` requirement raised to the fix's least receivers (step 1 of the
 * module comment); the instance itself when it has no accuracy demand.
 */
export function withImpliedMlatFolds(inst: PlanInstance): PlanInstance {
  const a = inst.accuracy;
  if (a === undefined || a.points.length === 0) return inst;
  const need = mlatMinReceivers(a.altitudeKnown);
  const req = inst.points.reqMlat ? inst.points.reqMlat.slice() : new Uint8Array(inst.points.count);
  for (let i = 0; i < a.points.length; i++) if (req[a.points[i]] < need) req[a.points[i]] = need;
  return { ...inst, points: { ...inst.points, reqMlat: req } };
}

/** Builds the accuracy model: per bounded point its covering allowed `mlat` candidates in its own frame. */
export function prepareAccuracy(inst: PlanInstance, m: PlanModel): AccuracyModel | null {
  const a = inst.accuracy;
  if (a === undefined || a.points.length === 0) return null;
  const n = a.points.length;
  const mlatCands: number[] = [];
  for (let c = 0; c < m.nCand; c++) if (m.allowed[c] && m.candKind[c] === K_MLAT) mlatCands.push(c);
  // Merge each candidate's cover (sorted) with the bounded points (sorted): count, then fill.
  const count = new Uint32Array(n + 1);
  const hits: Uint32Array[] = [];
  for (const c of mlatCands) {
    const cv = inst.candidates[c].covers;
    const list: number[] = [];
    let i = 0;
    for (let k = 0; k < cv.length && i < n; k++) {
      const p = cv[k];
      while (i < n && a.points[i] < p) i++;
      if (i < n && a.points[i] === p) {
        list.push(i);
        count[i]++;
      }
    }
    hits.push(Uint32Array.from(list));
  }
  const start = new Uint32Array(n + 1);
  for (let i = 0; i < n; i++) start[i + 1] = start[i] + count[i];
  const total = start[n];
  const cand = new Int32Array(total);
  const enu = new Float64Array(3 * total);
  const sigma = new Float64Array(total);
  const fill = start.slice(0, n);
  const candStart = new Uint32Array(m.nCand + 1);
  const candPoint = new Uint32Array(total);
  // Targets in earth-centred coordinates with their frames' rotation (sin/cos of geodetic latitude, longitude).
  const tx = new Float64Array(4 * n);
  const trig = new Float64Array(4 * n);
  for (let i = 0; i < n; i++) {
    const lon = a.target[3 * i];
    const lat = a.target[3 * i + 1];
    const [x, y, z] = toEcef(lon, lat, a.target[3 * i + 2]);
    tx[4 * i] = x;
    tx[4 * i + 1] = y;
    tx[4 * i + 2] = z;
    trig[4 * i] = Math.sin(lat * DEG_TO_RAD);
    trig[4 * i + 1] = Math.cos(lat * DEG_TO_RAD);
    trig[4 * i + 2] = Math.sin(lon * DEG_TO_RAD);
    trig[4 * i + 3] = Math.cos(lon * DEG_TO_RAD);
  }
  const hitsOf = new Map<number, Uint32Array>();
  mlatCands.forEach((c, j) => hitsOf.set(c, hits[j]));
  let q = 0;
  for (let c = 0; c < m.nCand; c++) {
    candStart[c] = q;
    const list = hitsOf.get(c);
    if (!list) continue;
    const [rx, ry, rz] = toEcef(a.antenna[3 * c], a.antenna[3 * c + 1], a.antenna[3 * c + 2]);
    const s = a.timingErrorNs[c] * 1e-9;
    for (const i of list) {
      const e = fill[i]++;
      const dx = rx - tx[4 * i];
      const dy = ry - tx[4 * i + 1];
      const dz = rz - tx[4 * i + 2];
      const [sinLat, cosLat, sinLon, cosLon] = trig.subarray(4 * i, 4 * i + 4);
      enu[3 * e] = -sinLon * dx + cosLon * dy;
      enu[3 * e + 1] = -sinLat * cosLon * dx - sinLat * sinLon * dy + cosLat * dz;
      enu[3 * e + 2] = cosLat * cosLon * dx + cosLat * sinLon * dy + sinLat * dz;
      sigma[e] = s;
      cand[e] = c;
      candPoint[q] = i;
      q++;
    }
  }
  candStart[m.nCand] = q;
  const weight = new Float64Array(n);
  for (let i = 0; i < n; i++) weight[i] = inst.points.weight[a.points[i]];
  const model: AccuracyModel = {
    n,
    point: a.points,
    weight,
    bound: a.boundM,
    start,
    cand,
    enu,
    sigma,
    candStart,
    candPoint,
    meetable: new Uint8Array(n),
    altitudeKnown: a.altitudeKnown,
    minReceivers: mlatMinReceivers(a.altitudeKnown),
  };
  const all = m.allowed;
  for (let i = 0; i < n; i++) {
    const d = pointDrms(model, i, all, -1);
    model.meetable[i] = weight[i] > 0 && d <= model.bound[i] ? 1 : 0;
  }
  return model;
}

/** Scratch for one point's receivers. */
let rxScratch = new Float64Array(48);
let sigScratch = new Float64Array(16);

/** Receivers of point i among `inSet` (candidate → nonzero), plus candidate `extra` (−1: none). */
function pointCount(a: AccuracyModel, i: number, inSet: Uint8Array, extra: number): number {
  let k = 0;
  for (let e = a.start[i]; e < a.start[i + 1]; e++) if (inSet[a.cand[e]] || a.cand[e] === extra) k++;
  return k;
}

/** The DRMS (m) at point i from the receivers of `inSet` covering it, plus `extra`; NaN without a fix. */
export function pointDrms(a: AccuracyModel, i: number, inSet: Uint8Array, extra: number): number {
  const e0 = a.start[i];
  const e1 = a.start[i + 1];
  if (rxScratch.length < 3 * (e1 - e0)) {
    rxScratch = new Float64Array(3 * (e1 - e0));
    sigScratch = new Float64Array(e1 - e0);
  }
  let k = 0;
  for (let e = e0; e < e1; e++) {
    const c = a.cand[e];
    if (!inSet[c] && c !== extra) continue;
    rxScratch[3 * k] = a.enu[3 * e];
    rxScratch[3 * k + 1] = a.enu[3 * e + 1];
    rxScratch[3 * k + 2] = a.enu[3 * e + 2];
    sigScratch[k] = a.sigma[e];
    k++;
  }
  if (k < a.minReceivers) return NaN;
  return mlatHorizontalDrmsFlat(rxScratch, k, 0, 0, 0, sigScratch, a.altitudeKnown);
}

/** Progress of point i toward its bound (module comment): 1 met, (½, 1) a fix that misses, [0, ½) no fix. */
function progress(a: AccuracyModel, i: number, inSet: Uint8Array, extra: number): number {
  const d = pointDrms(a, i, inSet, extra);
  if (d === d) return d <= a.bound[i] ? 1 : 0.5 + (0.5 * a.bound[i]) / d;
  const k = pointCount(a, i, inSet, extra);
  return (0.5 * k) / (k + 1);
}

/** The meetable bounded points that `inSet` does not meet. */
function failingPoints(a: AccuracyModel, inSet: Uint8Array): number[] {
  const out: number[] = [];
  for (let i = 0; i < a.n; i++) {
    if (!a.meetable[i]) continue;
    const d = pointDrms(a, i, inSet, -1);
    if (!(d <= a.bound[i])) out.push(i);
  }
  return out;
}

/**
 * Step 2 of the module comment on `st` (the covering solve's plan, every fold met or not): adds receivers until
 * every meetable bounded point is met (within `budget` when one is set), then drops the ones no longer needed.
 * Returns the figures; `st` holds the new set.
 */
export function repairAccuracy(
  a: AccuracyModel,
  st: CoverState,
  budget: number | undefined,
  log: string[],
): AccuracyResult {
  const m = st.m;
  const inSet = st.chosen;
  let failing = failingPoints(a, inSet);
  const isFailing = new Uint8Array(a.n);
  for (const i of failing) isFailing[i] = 1;
  const added: number[] = [];
  while (failing.length > 0) {
    let best = -1;
    let bestRatio = 0;
    for (let c = 0; c < m.nCand; c++) {
      if (inSet[c] || !m.allowed[c] || m.candKind[c] !== K_MLAT) continue;
      if (a.candStart[c + 1] === a.candStart[c]) continue;
      if (budget !== undefined && !st.fits(c, budget)) continue;
      let gain = 0;
      for (let q = a.candStart[c]; q < a.candStart[c + 1]; q++) {
        const i = a.candPoint[q];
        if (!isFailing[i]) continue;
        gain += a.weight[i] * (progress(a, i, inSet, c) - progress(a, i, inSet, -1));
      }
      if (!(gain > 0)) continue;
      const cost = st.marginalCost(c);
      const ratio = cost > 0 ? gain / cost : Infinity;
      if (ratio > bestRatio) {
        best = c;
        bestRatio = ratio;
      }
    }
    if (best < 0) break;
    st.add(best);
    added.push(best);
    const still: number[] = [];
    for (const i of failing) {
      if (pointDrms(a, i, inSet, -1) <= a.bound[i]) isFailing[i] = 0;
      else still.push(i);
    }
    failing = still;
  }
  if (added.length > 0) {
    log.push(
      `accuracy: added ${added.length} multilateration receiver(s) (${added.join(', ')}), cost ${st.cost()}; ` +
        `${failing.length} meetable bounded point(s) still fail`,
    );
  }
  // Drop what is no longer needed: dearest first (ties: highest index), keeping every fold and every met bound.
  const metBefore = new Uint8Array(a.n);
  for (let i = 0; i < a.n; i++) if (pointDrms(a, i, inSet, -1) <= a.bound[i]) metBefore[i] = 1;
  const removable = st
    .chosenList()
    .filter((c) => !m.forced[c] && m.candKind[c] === K_MLAT)
    .sort((x, y) => saving(st, y) - saving(st, x) || y - x);
  const dropped: number[] = [];
  for (const c of removable) {
    const deficit = st.deficit;
    st.remove(c);
    let keep = st.deficit > deficit;
    for (let q = a.candStart[c]; !keep && q < a.candStart[c + 1]; q++) {
      const i = a.candPoint[q];
      if (metBefore[i] && !(pointDrms(a, i, inSet, -1) <= a.bound[i])) keep = true;
    }
    if (keep) st.add(c);
    else dropped.push(c);
  }
  if (dropped.length > 0)
    log.push(`accuracy: dropped ${dropped.length} receiver(s) no longer needed (${dropped.join(', ')})`);
  return accuracyFigures(a, inSet, added, dropped);
}

/** What removing chosen candidate c saves: its type's cost, and its site's when it is the site's only sensor. */
function saving(st: CoverState, c: number): number {
  const s = st.m.candSite[c];
  return st.m.candCost[c] + (st.siteChosen[s] === 1 ? st.m.siteCost[s] : 0);
}

/** The accuracy figures of the set `inSet`. */
export function accuracyFigures(
  a: AccuracyModel,
  inSet: Uint8Array,
  added: number[] = [],
  dropped: number[] = [],
): AccuracyResult {
  const r: AccuracyResult = {
    points: a.n,
    weight: 0,
    metPoints: 0,
    metWeight: 0,
    shortPoints: 0,
    shortWeight: 0,
    unmeetablePoints: 0,
    unmeetableWeight: 0,
    added,
    dropped,
  };
  for (let i = 0; i < a.n; i++) {
    r.weight += a.weight[i];
    if (!a.meetable[i]) {
      r.unmeetablePoints++;
      r.unmeetableWeight += a.weight[i];
    }
    if (pointDrms(a, i, inSet, -1) <= a.bound[i]) {
      r.metPoints++;
      r.metWeight += a.weight[i];
    } else if (a.meetable[i]) {
      r.shortPoints++;
      r.shortWeight += a.weight[i];
    }
  }
  return r;
}
