/**
 * The network: for a set of active sensors (footprints), per flight level and analysis cell, how many distinct
 * sites see the cell — for any kind, primary only and secondary only — and the network floor (lowest covered
 * altitude). Sensors on one site fail together, so a fold counts sites, not sensors.
 *
 * Switching a site on or off updates the counts incrementally from the cached footprints: only that site's
 * sensors are read (a map what-if).
 *
 * Several targets: when the study has volumes with their own target, each footprint carries the same sensor's
 * footprints for those targets (`Footprint.byTarget`); the network then keeps folds per target as extra levels
 * (target t, level f at t·levels + f) and `foldOf(kind, f, t)` reads them. Sites, switches and the floor are shared.
 */
import { InputError } from '../../shared/errors.ts';
import type { Footprint, FootprintWindow } from './footprint.ts';

export const KINDS = ['any', 'primary', 'secondary'] as const;
export type FoldKind = (typeof KINDS)[number];

type Bits = Uint8Array | Uint16Array | Uint32Array;

/**
 * Flight levels × targets one network keeps: one bit each in a cell's 32-bit word. worker/io/study.ts
 * `checkNetworkLevels` refuses a study beyond it when the scenario loads, before any footprint.
 */
export const MAX_NETWORK_LEVELS = 32;

export class Network {
  /** fold[kindIndex·L + target·flCount + flIndex][cell] (L = targets·flCount) = distinct sites (exact to 65 535). */
  readonly fold: Uint16Array[];
  /** Targets the folds are kept for (1 + the length of each footprint's byTarget). */
  readonly targetCount: number;
  readonly active: boolean[];
  private readonly bySite = new Map<string, number[]>();
  /** Per footprint, per cell: bit f set iff the sensor covers the cell at altitudesM[f]. */
  private readonly bits: Bits[];
  /** Per footprint: bit f set iff it covers any cell at altitudesM[f]. */
  private readonly anyAt: number[];
  private readonly reachCache = new Map<string, Int32Array>();

  constructor(
    readonly cells: number,
    readonly altitudesM: readonly number[],
    readonly footprints: readonly Footprint[],
    active?: readonly boolean[],
    /**
     * Per target t ≥ 1 (index t − 1), a bit mask of the levels its folds are needed at (the bands of the volumes
     * that study it); default every level. Bits outside stay zero, which saves the work of unused levels.
     */
    targetLevels?: readonly number[],
  ) {
    if (new Set(footprints.map((f) => f.siteId)).size > 65_535) {
      throw new InputError(
        'sites',
        `${new Set(footprints.map((f) => f.siteId)).size} sites`,
        'at most 65 535 sites in one network',
      );
    }
    const nT = 1 + (footprints[0]?.byTarget?.length ?? 0);
    if (footprints.some((f) => 1 + (f.byTarget?.length ?? 0) !== nT)) {
      throw new Error('Network: every footprint must carry the same targets');
    }
    const levels = nT * altitudesM.length;
    if (levels > MAX_NETWORK_LEVELS) {
      throw new InputError(
        'flightLevels',
        `${altitudesM.length} levels${nT > 1 ? ` × ${nT} targets (the scenario's and the volumes' own)` : ''}`,
        `at most ${MAX_NETWORK_LEVELS} flight levels (times targets) in one network`,
      );
    }
    this.targetCount = nT;
    const make = (): Bits =>
      levels <= 8 ? new Uint8Array(cells) : levels <= 16 ? new Uint16Array(cells) : new Uint32Array(cells);
    this.fold = Array.from({ length: KINDS.length * levels }, () => new Uint16Array(cells));
    this.active = footprints.map((_, i) => active?.[i] ?? true);
    this.anyAt = [];
    this.bits = footprints.map((fp) => {
      const b = make();
      const win = fp.window ?? null;
      let seen = levelBits(fp, altitudesM, b, 0, -1, win);
      fp.byTarget?.forEach((other, t) => {
        const all = altitudesM.length >= 32 ? -1 : (1 << altitudesM.length) - 1;
        const mask = (targetLevels?.[t] ?? -1) & all;
        const shift = (t + 1) * altitudesM.length;
        if (mask === 0) return;
        // A target this sensor does not tell apart shares its footprint: its bits are the base bits, shifted.
        seen |=
          other === fp
            ? shiftBits(b, shift, mask, win)
            : levelBits(other, altitudesM, b, shift, mask, other.window ?? null);
      });
      this.anyAt.push(seen);
      return b;
    });
    footprints.forEach((f, i) => {
      const list = this.bySite.get(f.siteId) ?? [];
      list.push(i);
      this.bySite.set(f.siteId, list);
    });
    for (const site of this.bySite.keys()) this.applySite(site, +1);
  }

  get flCount(): number {
    return this.altitudesM.length;
  }

  /** Folds of a kind at level index f, for target t (0 = the study's target; t ≥ 1 a volume's own). */
  foldOf(kind: FoldKind, flIndex: number, target = 0): Uint16Array {
    const n = this.altitudesM.length;
    return this.fold[KINDS.indexOf(kind) * n * this.targetCount + target * n + flIndex];
  }

  siteIds(): string[] {
    return [...this.bySite.keys()];
  }

  /** Sets one sensor on or off; returns whether anything changed. */
  setSensor(index: number, on: boolean): boolean {
    if (this.active[index] === on) return false;
    const site = this.footprints[index].siteId;
    this.applySite(site, -1);
    this.active[index] = on;
    this.applySite(site, +1);
    return true;
  }

  /** Cells where any active sensor of the site covers some flight level (the only cells its outage can change). */
  siteCells(siteId: string): Int32Array {
    const list = (this.bySite.get(siteId) ?? []).filter((i) => this.active[i]);
    return cellsWithBits(
      list.map((i) => this.bits[i]),
      this.cells,
      list.map((i) => this.footprints[i]),
    );
  }

  /** Whether any sensor of the site is on. */
  isSiteActive(siteId: string): boolean {
    return (this.bySite.get(siteId) ?? []).some((i) => this.active[i]);
  }

  /** Sets every sensor of a site on or off (a site outage or its return). */
  setSite(siteId: string, on: boolean): void {
    const list = this.bySite.get(siteId);
    if (!list) return;
    this.applySite(siteId, -1);
    for (const i of list) this.active[i] = on;
    this.applySite(siteId, +1);
  }

  /** Adds (+1) or removes (−1) one site's contribution with its sensors' current active flags. */
  private applySite(siteId: string, sign: 1 | -1): void {
    const list = (this.bySite.get(siteId) ?? []).filter((i) => this.active[i]);
    if (list.length === 0) return;
    const nFl = this.altitudesM.length * this.targetCount;
    const cells = this.reach(siteId);
    for (let k = 0; k < KINDS.length; k++) {
      const kind = KINDS[k];
      const members = kind === 'any' ? list : list.filter((i) => this.footprints[i].kind === kind);
      if (members.length === 0) continue;
      addSiteBits(
        this.fold,
        k * nFl,
        cells,
        members.map((i) => this.bits[i]),
        sign,
      );
    }
  }

  /** Cells any sensor of the site (on or off) covers at some level: all its updates stay within them. */
  private reach(siteId: string): Int32Array {
    let r = this.reachCache.get(siteId);
    if (!r) {
      const list = this.bySite.get(siteId) ?? [];
      r = cellsWithBits(
        list.map((i) => this.bits[i]),
        this.cells,
        list.map((i) => this.footprints[i]),
      );
      this.reachCache.set(siteId, r);
    }
    return r;
  }

  /** Lowest covered altitude (m AMSL) per cell over the active sensors; NaN where none covers. */
  networkFloor(): Float32Array {
    const out = new Float32Array(this.cells).fill(NaN);
    this.footprints.forEach((fp, i) => {
      if (!this.active[i]) return;
      lowerFloor(out, fp);
    });
    return out;
  }

  /** Sites with any active sensor of `kind` covering at least one cell at flight level index f. */
  contributingSites(kind: FoldKind, flIndex: number): string[] {
    const out: string[] = [];
    for (const [site, list] of this.bySite) {
      const ok = list.some(
        (i) =>
          this.active[i] &&
          (kind === 'any' || this.footprints[i].kind === kind) &&
          (this.anyAt[i] >>> flIndex) & 1,
      );
      if (ok) out.push(site);
    }
    return out;
  }
}

/**
 * The cell spans [from, to) to visit for a footprint's window, as pairs (one per row, or one for full rows); the
 * whole raster without a window.
 */
function windowSpans(win: FootprintWindow | null, cells: number): number[] {
  if (win === null) return [0, cells];
  const W = win.width;
  if (win.col0 === 0 && win.col1 === W) return [win.row0 * W, win.row1 * W];
  const out: number[] = [];
  for (let r = win.row0; r < win.row1; r++) out.push(r * W + win.col0, r * W + win.col1);
  return out;
}

/**
 * ORs the level bits of one footprint into `out`, level f at bit f + shift, for the levels in `mask` (bit f);
 * returns the bits set anywhere. Only the footprint's window is read (no cover outside it).
 */
function levelBits(
  fp: Footprint,
  altitudesM: readonly number[],
  out: Bits,
  shift: number,
  mask: number,
  win: FootprintWindow | null,
): number {
  const spans = windowSpans(win, out.length);
  let seen = 0;
  for (let k = 0; k < spans.length; k += 2)
    seen |= levelBitsRun(fp.lo, fp.hi, altitudesM, out, shift, mask, spans[k], spans[k + 1]);
  return seen;
}

function levelBitsRun(
  lo: Uint16Array,
  hi: Uint16Array,
  altitudesM: readonly number[],
  out: Bits,
  shift: number,
  mask: number,
  from: number,
  to: number,
): number {
  const n = altitudesM.length;
  let seen = 0;
  for (let c = from; c < to; c++) {
    const l = lo[c];
    const h = hi[c];
    if (l > h) continue;
    let b = 0;
    for (let f = 0; f < n; f++) {
      const a = altitudesM[f];
      if (l <= a && a <= h && (mask >>> f) & 1) b |= 1 << (f + shift);
    }
    out[c] |= b;
    seen |= b;
  }
  return seen;
}

/**
 * ORs each cell's base bits (those in `mask`) shifted by `shift` into the same cell, within the window; returns
 * the bits set.
 */
function shiftBits(out: Bits, shift: number, mask: number, win: FootprintWindow | null): number {
  const spans = windowSpans(win, out.length);
  let seen = 0;
  for (let k = 0; k < spans.length; k += 2) {
    for (let c = spans[k]; c < spans[k + 1]; c++) {
      const b = (out[c] & mask) << shift;
      if (b === 0) continue;
      out[c] |= b;
      seen |= b;
    }
  }
  return seen;
}

/**
 * Cells (ascending) where any of `bits` is set. When every footprint (and each of its other targets') carries a
 * window, only the rows those windows span are read (no cell outside has a bit).
 */
function cellsWithBits(bits: Bits[], cells: number, fps: readonly Footprint[]): Int32Array {
  let from = 0;
  let to = cells;
  // A footprint's bits hold its other targets' too: their windows count.
  const all = fps.flatMap((f) => [f, ...(f.byTarget ?? [])]);
  if (all.length > 0 && all.every((f) => f.window !== undefined)) {
    const W = all[0].window!.width;
    from = Math.min(...all.map((f) => f.window!.row0)) * W;
    to = Math.max(from, Math.max(...all.map((f) => f.window!.row1)) * W);
  }
  const out: number[] = [];
  const n = bits.length;
  for (let c = from; c < to; c++) {
    for (let m = 0; m < n; m++) {
      if (bits[m][c] !== 0) {
        out.push(c);
        break;
      }
    }
  }
  return Int32Array.from(out);
}

/** For each cell of `cells`: the OR of the members' level bits, added (or removed) level by level. */
function addSiteBits(
  fold: Uint16Array[],
  base: number,
  cells: Int32Array,
  members: Bits[],
  sign: 1 | -1,
): void {
  const n = members.length;
  for (let k = 0; k < cells.length; k++) {
    const c = cells[k];
    let b = 0;
    for (let m = 0; m < n; m++) b |= members[m][c];
    while (b !== 0) {
      const f = 31 - Math.clz32(b & -b);
      fold[base + f][c] += sign;
      b &= b - 1;
    }
  }
}

function lowerFloor(out: Float32Array, fp: Footprint): void {
  const lo = fp.lo;
  const hi = fp.hi;
  const spans = windowSpans(fp.window ?? null, out.length);
  for (let k = 0; k < spans.length; k += 2) {
    for (let c = spans[k]; c < spans[k + 1]; c++) {
      const l = lo[c];
      if (l <= hi[c] && !(out[c] <= l)) out[c] = l;
    }
  }
}
