/**
 * The plan's model: the instance a caller hands in, the prepared (aggregated) model every stage works on, and the
 * cost of a set of candidates. Every other planner module imports this one; it imports none of them.
 *
 * Covered value. For a chosen set X, point p and kind k ∈ {any, primary, secondary, adsb, mlat}: n_k(p) = number
 * of distinct sites with a chosen candidate of kind k (a radar, primary or secondary, for 'any': receivers never
 * count toward it) covering p — sensors on one site fail together, so a fold counts sites. The receiver kinds
 * (adsb, mlat) are folds of distinct sites per kind exactly as the radar kinds are. The covered value is f(X) = Σ_p w_p Σ_k min(n_k(p), r_k(p)): requirement units
 * met, weighted. f is monotone submodular (a truncated coverage count per point and kind). A requirement above
 * what all allowed candidates together reach is capped at that maximum and reported (`unmeetable`); the demand is
 * met when every capped unit is met. A point of zero weight carries no demand.
 *
 * Cost. Each distinct site of the set once (0 for a site marked existing), plus each candidate's type cost (0 for
 * a sensor already standing, see `PlanInstance.standing`): what the plan spends anew, the objective.
 */
import { FOLD_KINDS, type FoldKind, type SensorKind } from '../../../shared/sensor-kinds.ts';
import type { MemoryAccount } from '../memory-estimate.ts';

export type Kind = SensorKind;
export type DemandKind = FoldKind;

export interface PlanInstance {
  /** `existing` → the site costs 0 in the plan. */
  sites: { id: string; cost: number; existing: boolean }[];
  candidates: {
    siteIndex: number;
    typeId: string;
    kind: Kind;
    /** Cost of the sensor type (the site's cost is paid once, when its first sensor is chosen). */
    cost: number;
    /**
     * Sorted (strictly increasing) indices of the demand points this candidate covers. Points none of whose
     * requirements its kind counts toward (`countsToward`) may be left out: they are ignored.
     */
    covers: Uint32Array;
  }[];
  points: {
    count: number;
    weight: Float64Array;
    reqAny: Uint8Array;
    reqPrimary: Uint8Array;
    reqSecondary: Uint8Array;
    /** Receiver requirements (absent: none). */
    reqAdsb?: Uint8Array;
    reqMlat?: Uint8Array;
  };
  /**
   * Points whose multilateration fix must meet a 1σ horizontal DRMS bound (volumes' `requiredMlatAccuracyM`), with
   * where the targets and the antennas are: accuracy.ts. Absent: no bound.
   */
  accuracy?: AccuracyDemand;
  /** Candidate indices that must be in the plan (existing sensors kept by force). */
  forced?: number[];
  /**
   * Candidate indices of sensors already standing (an existing network's sensors kept on sites marked existing):
   * nothing new is spent on them, so their type cost counts 0 in the plan's cost (the objective, and what a
   * budget limits); the plan reports their value (their type costs) apart, as `existingValue`. Each must be on a
   * site marked existing.
   */
  standing?: number[];
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

/** What the plan needs to check a multilateration accuracy bound (accuracy.ts): the bounded points, where the
 * targets and antennas are. */
export interface AccuracyDemand {
  /** Demand point indices with a bound, strictly increasing. */
  points: Uint32Array;
  /** Per listed point: its bound, the 1σ horizontal DRMS in metres (> 0). */
  boundM: Float64Array;
  /** Per listed point: the target's longitude, latitude (degrees) and altitude (m AMSL): 3 numbers. */
  target: Float64Array;
  /** Per candidate: its antenna's longitude, latitude (degrees) and altitude (m AMSL): 3 numbers. */
  antenna: Float64Array;
  /** Per candidate: its 1σ arrival-time error (ns) when it is an `mlat` receiver; ignored for other kinds. */
  timingErrorNs: Float64Array;
  /** The target reports its pressure altitude (3 receivers make a fix, not 4). */
  altitudeKnown: boolean;
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

/** Kind slots: requirement and count arrays hold NK entries per group in this order (shared FOLD_KINDS). */
export const K_ANY = 0;
export const K_PRIMARY = 1;
export const K_SECONDARY = 2;
export const K_ADSB = 3;
export const K_MLAT = 4;
export const KIND_NAMES: DemandKind[] = [...FOLD_KINDS];
/** Kind slots per group (any + the sensor kinds). */
export const NK = KIND_NAMES.length;
/** Per-site slots per group in CoverState (the sensor kinds: slot k − 1 for kind slot k). */
export const NS = NK - 1;

/** Whether a kind slot is a radar's (counts toward 'any'). */
export function isRadarSlot(k: number): boolean {
  return k === K_PRIMARY || k === K_SECONDARY;
}

/** Whether a candidate of kind slot `cand` counts toward a requirement of kind slot `k` ('any': radars only). */
export function countsToward(cand: number, k: number): boolean {
  return k === K_ANY ? isRadarSlot(cand) : cand === k;
}

/** The other radar's per-site slot (see NS) for a radar kind slot; −1 for a receiver (it has no 'any' share). */
export function otherRadarSlot(k: number): number {
  return k === K_PRIMARY ? K_SECONDARY - 1 : k === K_SECONDARY ? K_PRIMARY - 1 : -1;
}

export interface PlanModel {
  /** The run's memory account, when it has one: the later stages count their large arrays in it. */
  memory?: MemoryAccount;
  nSites: number;
  /** Effective site cost: 0 for an existing site. */
  siteCost: Float64Array;
  nCand: number;
  candSite: Int32Array;
  /** K_PRIMARY, K_SECONDARY, K_ADSB or K_MLAT. */
  candKind: Uint8Array;
  /** Type cost as the plan pays it: 0 for a standing sensor. */
  candCost: Float64Array;
  /** 1 for a sensor already standing (`PlanInstance.standing`). */
  standing: Uint8Array;
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
  /** NK per group (any, primary, secondary, adsb, mlat), capped at what the allowed candidates reach. */
  gReq: Uint8Array;
  /**
   * Group → covering allowed candidates whose kind counts toward one of the group's requirements (`countsToward`;
   * before capping), CSR, ascending. A candidate of another kind is left out: it changes no count the value reads.
   */
  sigStart: Uint32Array;
  sigCand: Uint32Array;
  /** Candidate → covered groups it counts toward (the signatures' transpose, CSR, ascending); empty for candidates that are not allowed. */
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

/** Cost of a set of candidates: each distinct site once (ascending), then the sensor types (ascending). */
export function canonicalCost(
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

/** a < b by more than a relative 1e-9 (costs compared across float sums in different orders). */
export function relLess(a: number, b: number): boolean {
  return a < b - 1e-9 * Math.max(1, Math.abs(b));
}
