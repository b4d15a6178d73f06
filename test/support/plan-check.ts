/**
 * Checks of a plan against its instance, written from the definitions (worker/core/plan/model.ts, "Covered
 * value" and "Cost") and sharing no code with the planner: a point's fold of a kind is the number of distinct
 * sites with a chosen sensor of that kind covering it ('any': of either radar kind, primary or secondary; the
 * receiver kinds adsb and mlat never count toward it); a requirement above what every
 * allowed sensor together reaches is capped there (and is what the plan lists as unmeetable); the cost is each
 * opened site once (0 when existing) plus each sensor's type cost (0 when already standing).
 *
 * Also a seeded generator of small instances with real site costs (several sensors per site, so opening a site
 * is a shared cost) and the brute-force optimum over every subset, for instances of at most ~14 free candidates.
 */
import type { Kind, PlanInstance } from '../../worker/core/plan.ts';
import { mulberry32 } from './bumps.ts';

const KINDS = ['any', 'primary', 'secondary', 'adsb', 'mlat'] as const;
/** Kind slots per point. */
const NK = KINDS.length;

export interface Shortfall {
  point: number;
  kind: (typeof KINDS)[number];
  required: number;
  found: number;
}

/** Folds (any, primary, secondary, adsb, mlat) at every point for a set of candidates: distinct sites per kind. */
export function foldsOf(inst: PlanInstance, set: readonly number[]): Int32Array {
  const n = inst.points.count;
  const out = new Int32Array(NK * n);
  const seen = new Map<string, true>();
  for (const c of set) {
    const cand = inst.candidates[c];
    const k = KINDS.indexOf(cand.kind);
    const radar = cand.kind === 'primary' || cand.kind === 'secondary';
    for (const p of cand.covers) {
      for (const slot of radar ? [0, k] : [k]) {
        const key = `${p}/${slot}/${cand.siteIndex}`;
        if (seen.has(key)) continue;
        seen.set(key, true);
        out[NK * p + slot]++;
      }
    }
  }
  return out;
}

/** The candidates a plan may use: those not on an excluded site. */
export function allowedOf(inst: PlanInstance): number[] {
  const ex = new Set(inst.excludedSites ?? []);
  return inst.candidates.map((_, c) => c).filter((c) => !ex.has(inst.candidates[c].siteIndex));
}

/** Requirement per point and kind (NK per point), capped at what every allowed candidate together reaches. */
export function cappedRequirements(inst: PlanInstance): { capped: Int32Array; uncapped: Int32Array } {
  const P = inst.points;
  const reach = foldsOf(inst, allowedOf(inst));
  const capped = new Int32Array(NK * P.count);
  const uncapped = new Int32Array(NK * P.count);
  for (let p = 0; p < P.count; p++) {
    const req = [P.reqAny[p], P.reqPrimary[p], P.reqSecondary[p], P.reqAdsb?.[p] ?? 0, P.reqMlat?.[p] ?? 0];
    for (let k = 0; k < NK; k++) {
      const r = P.weight[p] > 0 ? req[k] : 0;
      uncapped[NK * p + k] = r;
      capped[NK * p + k] = Math.min(r, reach[NK * p + k]);
    }
  }
  return { capped, uncapped };
}

/** Every point and kind where the chosen set falls short of the capped requirement (empty: the demand is met). */
export function shortfalls(inst: PlanInstance, chosen: readonly number[]): Shortfall[] {
  const f = foldsOf(inst, chosen);
  const { capped } = cappedRequirements(inst);
  const out: Shortfall[] = [];
  for (let p = 0; p < inst.points.count; p++) {
    for (let k = 0; k < NK; k++) {
      if (f[NK * p + k] < capped[NK * p + k]) {
        out.push({ point: p, kind: KINDS[k], required: capped[NK * p + k], found: f[NK * p + k] });
      }
    }
  }
  return out;
}

/** New spend of a set: opened sites once (0 if existing) plus type costs (0 for a standing sensor). */
export function newSpend(inst: PlanInstance, set: readonly number[]): number {
  const standing = new Set(inst.standing ?? []);
  let t = 0;
  for (const s of new Set(set.map((c) => inst.candidates[c].siteIndex))) {
    t += inst.sites[s].existing ? 0 : inst.sites[s].cost;
  }
  for (const c of set) t += standing.has(c) ? 0 : inst.candidates[c].cost;
  return t;
}

/** Covered weight Σ_p w_p Σ_k min(fold, capped requirement). */
export function coveredWeight(inst: PlanInstance, set: readonly number[]): number {
  const f = foldsOf(inst, set);
  const { capped } = cappedRequirements(inst);
  let w = 0;
  for (let p = 0; p < inst.points.count; p++) {
    for (let k = 0; k < NK; k++) w += inst.points.weight[p] * Math.min(f[NK * p + k], capped[NK * p + k]);
  }
  return w;
}

/** The least new spend of a set that keeps the forced sensors and meets the capped demand (every subset). */
export function bruteForceOptimum(inst: PlanInstance): { cost: number; set: number[] } {
  const forced = [...new Set(inst.forced ?? [])];
  const free = allowedOf(inst).filter((c) => !forced.includes(c));
  if (free.length > 16) throw new Error(`brute force over ${free.length} candidates: at most 16`);
  let best = { cost: Infinity, set: [] as number[] };
  for (let mask = 0; mask < 1 << free.length; mask++) {
    const set = [...forced];
    for (let i = 0; i < free.length; i++) if (mask & (1 << i)) set.push(free[i]);
    const cost = newSpend(inst, set);
    if (cost < best.cost && shortfalls(inst, set).length === 0)
      best = { cost, set: set.sort((a, b) => a - b) };
  }
  return best;
}

/**
 * A small seeded instance where site costs matter: 3–5 sites (cost 2–10, one in five existing), 7–12
 * candidates spread over them (so most sites carry two or three sensors and opening one is a shared cost), type
 * costs 1–6, 12–30 points with folds 1–2. Sometimes one forced sensor, standing when its site exists.
 */
export function siteCostInstance(seed: number): PlanInstance {
  const r = mulberry32(seed);
  const ri = (a: number, b: number): number => a + Math.floor(r() * (b - a + 1));
  const nS = ri(3, 5);
  const nC = ri(7, 12);
  const n = ri(12, 30);
  const sites = Array.from({ length: nS }, (_, i) => ({ id: `s${i}`, cost: ri(2, 10), existing: r() < 0.2 }));
  const candidates = Array.from({ length: nC }, (_, j) => {
    const covers: number[] = [];
    const density = 0.25 + 0.35 * r();
    for (let p = 0; p < n; p++) if (r() < density) covers.push(p);
    return {
      siteIndex: j < nS ? j : ri(0, nS - 1),
      typeId: `t${j}`,
      kind: (r() < 0.45 ? 'primary' : 'secondary') as Kind,
      cost: ri(1, 6),
      covers: Uint32Array.from(covers),
    };
  });
  const inst: PlanInstance = {
    sites,
    candidates,
    points: {
      count: n,
      weight: new Float64Array(n).map(() => ri(1, 4)),
      reqAny: new Uint8Array(n).map(() => (r() < 0.3 ? ri(1, 2) : 0)),
      reqPrimary: new Uint8Array(n).map(() => (r() < 0.3 ? ri(1, 2) : 0)),
      reqSecondary: new Uint8Array(n).map(() => (r() < 0.4 ? ri(1, 2) : 0)),
    },
  };
  if (r() < 0.3) {
    const c = ri(0, nC - 1);
    inst.forced = [c];
    if (sites[candidates[c].siteIndex].existing) inst.standing = [c];
  }
  return inst;
}

/**
 * A small seeded instance mixing radars and receivers: as `siteCostInstance`, with each candidate one of the four
 * kinds and requirements per point for any (radars), primary, secondary, adsb and mlat (folds 1–2; mlat up to 3).
 */
export function mixedKindInstance(seed: number): PlanInstance {
  const r = mulberry32(seed);
  const ri = (a: number, b: number): number => a + Math.floor(r() * (b - a + 1));
  const nS = ri(4, 6);
  const nC = ri(8, 13);
  const n = ri(12, 30);
  const kinds: Kind[] = ['primary', 'secondary', 'adsb', 'mlat'];
  const sites = Array.from({ length: nS }, (_, i) => ({ id: `s${i}`, cost: ri(1, 8), existing: r() < 0.15 }));
  const candidates = Array.from({ length: nC }, (_, j) => {
    const covers: number[] = [];
    const density = 0.3 + 0.4 * r();
    for (let p = 0; p < n; p++) if (r() < density) covers.push(p);
    return {
      siteIndex: j < nS ? j : ri(0, nS - 1),
      typeId: `t${j}`,
      kind: kinds[ri(0, 3)],
      cost: ri(1, 6),
      covers: Uint32Array.from(covers),
    };
  });
  const req = (p: number, top: number) => new Uint8Array(n).map(() => (r() < p ? ri(1, top) : 0));
  return {
    sites,
    candidates,
    points: {
      count: n,
      weight: new Float64Array(n).map(() => ri(1, 4)),
      reqAny: req(0.25, 2),
      reqPrimary: req(0.2, 1),
      reqSecondary: req(0.2, 1),
      reqAdsb: req(0.3, 2),
      reqMlat: req(0.3, 3),
    },
  };
}
