/**
 * The network: for a set of active sensors (footprints), per flight level and analysis cell, how many distinct
 * sites see the cell — per kind (primary, secondary, adsb, mlat) and for `any`, which counts RADARS only (a site
 * with a primary or a secondary seeing the cell: shared/sensor-kinds.ts) so that studies written before the
 * receivers keep their numbers — and the network floor (lowest altitude a radar covers). Sensors on one site fail
 * together, so a fold counts sites, not sensors. A receiver kind no sensor of the network has keeps no fold
 * arrays of its own: its folds read as zero.
 *
 * Switching a site on or off updates the counts incrementally from the cached footprints: only that site's
 * sensors are read (a map what-if).
 *
 * Several targets: when the study has volumes with their own target, each footprint carries the same sensor's
 * footprints for those targets (`Footprint.byTarget`); the network then keeps folds per target as extra levels
 * (target t, level f at t·levels + f) and `foldOf(kind, f, t)` reads them. Sites, switches and the floor are shared.
 */
import { InputError } from '../../shared/errors.ts';
import { FOLD_KINDS, isRadarKind, type FoldKind } from '../../shared/sensor-kinds.ts';
import { windowCellCount, type Footprint, type FootprintWindow } from './footprint.ts';

export const KINDS = FOLD_KINDS;
export type { FoldKind } from '../../shared/sensor-kinds.ts';
/** The per-kind accumulators of `applySite`: every kind but 'any', in KINDS order (KINDS[s + 1]). */
const SENSOR_SLOTS = KINDS.length - 1;

type Bits = Uint8Array | Uint16Array | Uint32Array;

/**
 * Flight levels × targets one network keeps: one bit each in a cell's 32-bit word. worker/io/study.ts
 * `checkNetworkLevels` refuses a study beyond it when the scenario loads, before any footprint.
 */
export const MAX_NETWORK_LEVELS = 32;

export class Network {
  /**
   * The folds as they are read: perLevel[kindIndex·L + target·flCount + flIndex][cell] (L = targets·flCount) =
   * distinct sites (exact to 65 535). Made from `cellMajor` at the first read (`fold`); null until then.
   */
  private perLevel: Uint16Array[] | null = null;
  /**
   * The folds while the network is built (its sites added, none read yet): per kind one array, cellMajor[k][cell·L +
   * level], so that a site's levels at one cell are one cache line rather than L arrays apart (3× faster to add a
   * site in a measurement: .scratch-style bench of 1 M cells × 10 levels × 3 kinds). Null for a kind without a
   * sensor, and once the folds are read.
   */
  private cellMajor: (Uint16Array | null)[] | null;
  /** Targets the folds are kept for (1 + the length of each footprint's byTarget). */
  readonly targetCount: number;
  /** The kinds of sensor among the footprints (on or off). */
  readonly kindsPresent: ReadonlySet<string>;
  readonly active: boolean[];
  private readonly bySite = new Map<string, number[]>();
  /**
   * Per footprint, per cell of its bits window (`bitsWindow`: its window joined with its other targets'): bit f
   * set iff the sensor covers the cell at level f. Windowed, so a network costs its sensors' areas, not the study.
   */
  private readonly bits: (Bits | null)[];
  private readonly bitsWindow: FootprintWindow[];
  /** Per footprint whose bits are made: bit f set iff it covers any cell at altitudesM[f]. */
  private readonly anyAt: number[];
  /** Makes a footprint's level bits (and its `anyAt`). */
  private readonly levelBitsOf: (i: number) => Bits;
  /** Scratch for one site's ORed bits over the join of its windows (grown as needed). */
  private scratch = new Uint32Array(0);

  /** The sensors' footprints, in the order the network was given them (site by site when grown: `addSite`). */
  private readonly list: Footprint[];
  /**
   * Sites added with `release` (`addSite`): counted in the folds, their sensors' footprints and level bits let go
   * (`list` keeps each as `released`, a footprint with no cells). Their sensors cannot be switched.
   */
  private readonly releasedSites = new Set<string>();
  /** The released radars' floor (lowest covered altitude per cell), made at the first release; NaN where none. */
  private releasedFloor: Float32Array | null = null;

  constructor(
    readonly cells: number,
    readonly altitudesM: readonly number[],
    footprints: readonly Footprint[],
    active?: readonly boolean[],
    /**
     * Per target t ≥ 1 (index t − 1), a bit mask of the levels its folds are needed at (the bands of the volumes
     * that study it); default every level. Bits outside stay zero, which saves the work of unused levels.
     */
    targetLevels?: readonly number[],
    /**
     * For a network grown site by site (`addSite`, e.g. while the pool sweeps the next sites): the kinds of sensor
     * and the number of targets its footprints will bring, so that its fold arrays exist from the start.
     */
    grown?: { kinds: ReadonlySet<string>; targets: number },
  ) {
    if (new Set(footprints.map((f) => f.siteId)).size > 65_535) {
      throw new InputError(
        'sites',
        `${new Set(footprints.map((f) => f.siteId)).size} sites`,
        'at most 65 535 sites in one network',
      );
    }
    this.list = [...footprints];
    const nT = grown?.targets ?? 1 + (footprints[0]?.byTarget?.length ?? 0);
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
    const make = (n: number): Bits =>
      levels <= 8 ? new Uint8Array(n) : levels <= 16 ? new Uint16Array(n) : new Uint32Array(n);
    this.kindsPresent = new Set([...footprints.map((f) => f.kind), ...(grown?.kinds ?? [])]);
    // Kinds without a sensor keep no folds (read as one shared array of zeros: applySite adds only where a sensor is).
    const radars = [...this.kindsPresent].some((k) => isRadarKind(k as Footprint['kind']));
    this.cellMajor = KINDS.map((k) => {
      const kept = k === 'any' ? radars || this.kindsPresent.size === 0 : this.kindsPresent.has(k);
      return kept ? new Uint16Array(cells * levels) : null;
    });
    this.active = footprints.map((_, i) => active?.[i] ?? true);
    this.bitsWindow = footprints.map(bitsWindowOf);
    this.bits = footprints.map(() => null);
    this.anyAt = footprints.map(() => 0);
    const tables = levelTables(altitudesM);
    this.levelBitsOf = (i: number): Bits => {
      const fp = this.list[i];
      const win = this.bitsWindow[i];
      const b = make(windowCellCount(win));
      let seen = levelBits(fp, altitudesM, tables, b, win, 0, -1);
      fp.byTarget?.forEach((other, t) => {
        const all = altitudesM.length >= 32 ? -1 : (1 << altitudesM.length) - 1;
        const mask = (targetLevels?.[t] ?? -1) & all;
        const shift = (t + 1) * altitudesM.length;
        if (mask === 0) return;
        // A target this sensor does not tell apart shares its footprint: its bits are the base bits, shifted.
        seen |=
          other === fp
            ? shiftBits(b, shift, mask)
            : levelBits(other, altitudesM, tables, b, win, shift, mask);
      });
      this.anyAt[i] = seen;
      return b;
    };
    footprints.forEach((f, i) => {
      const list = this.bySite.get(f.siteId) ?? [];
      list.push(i);
      this.bySite.set(f.siteId, list);
    });
    for (const site of this.bySite.keys()) this.applySite(site, +1);
  }

  /** The sensors' footprints, in the network's order. */
  get footprints(): readonly Footprint[] {
    return this.list;
  }

  /**
   * Adds one site's sensors, all on (a network built site by site while the pool sweeps the next sites: the same
   * folds, bits and order as a network given the same footprints at once). The site must be new to the network and
   * its sensors of kinds and targets the network was made for. With `release`, the site's footprints and level
   * bits are let go once counted (`release`): the folds, floor and contributing sites are the same, but the site
   * can no longer be switched (that throws).
   */
  addSite(footprints: readonly Footprint[], opts: { release?: boolean } = {}): void {
    if (footprints.length === 0) return;
    const site = footprints[0].siteId;
    if (this.bySite.has(site)) throw new Error(`Network.addSite: site '${site}' is in the network already`);
    if (this.bySite.size >= 65_535) {
      throw new InputError('sites', `${this.bySite.size + 1} sites`, 'at most 65 535 sites in one network');
    }
    const members: number[] = [];
    for (const fp of footprints) {
      if (fp.siteId !== site) throw new Error('Network.addSite: footprints of more than one site');
      if (!this.kindsPresent.has(fp.kind) || 1 + (fp.byTarget?.length ?? 0) !== this.targetCount) {
        throw new Error('Network.addSite: a sensor of a kind or targets the network was not made for');
      }
      members.push(this.list.length);
      this.list.push(fp);
      this.active.push(true);
      this.bitsWindow.push(bitsWindowOf(fp));
      this.bits.push(null);
      this.anyAt.push(0);
    }
    this.bySite.set(site, members);
    this.applySite(site, +1);
    if (opts.release) this.release(site, members);
  }

  /**
   * Lets go of a site's footprints and level bits once its folds are counted (`addSite` with `release`): a run that
   * only reads the folds, the floor and which sites contribute (`airshade coverage`) then holds one site's arrays at
   * a time, not every sensor's. Each sensor keeps its kind, ids and `anyAt`; the radars' floor is lowered first.
   */
  private release(site: string, members: readonly number[]): void {
    for (const i of members) {
      const fp = this.list[i];
      if (isRadarKind(fp.kind))
        lowerFloor((this.releasedFloor ??= new Float32Array(this.cells).fill(NaN)), fp);
      // Its anyAt stays: applySite has just made its bits (every member is on), and with them the levels it reaches.
      this.bits[i] = null;
      this.list[i] = released(fp);
    }
    this.releasedSites.add(site);
  }

  /** Throws when `siteId`'s arrays were let go (`addSite` with `release`): what needs them cannot be answered. */
  private heldSite(siteId: string, what: string): void {
    if (this.releasedSites.has(siteId)) {
      throw new Error(`Network: ${what} of site '${siteId}', whose footprints were let go once counted`);
    }
  }

  /**
   * A footprint's level bits, made when the sensor is first on: a network of many candidates of which few are on
   * (a plan's) makes the bits of those few only.
   */
  private bitsFor(i: number): Bits {
    return (this.bits[i] ??= this.levelBitsOf(i));
  }

  /** Bit f set iff footprint i covers any cell at altitudesM[f] (its bits made first; a released sensor's kept). */
  private anyAtOf(i: number): number {
    if (!this.releasedSites.has(this.list[i].siteId)) this.bitsFor(i);
    return this.anyAt[i];
  }

  get flCount(): number {
    return this.altitudesM.length;
  }

  /** Folds of a kind at level index f, for target t (0 = the study's target; t ≥ 1 a volume's own). */
  foldOf(kind: FoldKind, flIndex: number, target = 0): Uint16Array {
    const n = this.altitudesM.length;
    return this.fold[KINDS.indexOf(kind) * n * this.targetCount + target * n + flIndex];
  }

  /**
   * Every fold array, fold[kindIndex·L + target·flCount + flIndex][cell] (L = targets·flCount). The first read turns
   * the build's cell-major arrays into one array per level, kind by kind (so at most one kind's arrays are held
   * twice), in blocks of cells that stay in cache; from then on a switch updates these arrays.
   */
  /** Makes the folds' arrays per level now (`fold`), e.g. before timing a switch as the app's what-ifs make it. */
  readyToRead(): void {
    void this.fold;
  }

  get fold(): Uint16Array[] {
    if (this.perLevel !== null) return this.perLevel;
    const L = this.altitudesM.length * this.targetCount;
    const cells = this.cells;
    const majors = this.cellMajor!;
    let zeros: Uint16Array | null = null;
    const out: Uint16Array[] = [];
    for (let k = 0; k < KINDS.length; k++) {
      const m = majors[k];
      if (m === null) {
        zeros ??= new Uint16Array(cells);
        for (let f = 0; f < L; f++) out.push(zeros);
        continue;
      }
      const levels = Array.from({ length: L }, () => new Uint16Array(cells));
      const BLOCK = 4096;
      for (let c0 = 0; c0 < cells; c0 += BLOCK) {
        const c1 = Math.min(cells, c0 + BLOCK);
        for (let f = 0; f < L; f++) {
          const a = levels[f];
          for (let c = c0, j = c0 * L + f; c < c1; c++, j += L) a[c] = m[j];
        }
      }
      majors[k] = null;
      out.push(...levels);
    }
    this.cellMajor = null;
    this.perLevel = out;
    return out;
  }

  siteIds(): string[] {
    return [...this.bySite.keys()];
  }

  /** Sets one sensor on or off; returns whether anything changed. */
  setSensor(index: number, on: boolean): boolean {
    if (this.active[index] === on) return false;
    const site = this.footprints[index].siteId;
    this.heldSite(site, 'switching a sensor');
    this.applySite(site, -1);
    this.active[index] = on;
    this.applySite(site, +1);
    return true;
  }

  /** Cells where any active sensor of the site covers some flight level (the only cells its outage can change). */
  siteCells(siteId: string): Int32Array {
    this.heldSite(siteId, 'the cells');
    const list = (this.bySite.get(siteId) ?? []).filter((i) => this.active[i]);
    const out: number[] = [];
    this.orSite(list, (cell) => {
      out.push(cell);
    });
    return Int32Array.from(out);
  }

  /** Whether any sensor of the site is on. */
  isSiteActive(siteId: string): boolean {
    return (this.bySite.get(siteId) ?? []).some((i) => this.active[i]);
  }

  /** Sets every sensor of a site on or off (a site outage or its return). */
  setSite(siteId: string, on: boolean): void {
    const list = this.bySite.get(siteId);
    if (!list) return;
    this.heldSite(siteId, 'switching');
    this.applySite(siteId, -1);
    for (const i of list) this.active[i] = on;
    this.applySite(siteId, +1);
  }

  /**
   * Adds (+1) or removes (−1) one site's contribution with its sensors' current active flags: the OR of its
   * sensors' level bits per kind, over the join of their windows, in one pass (a site counts once per cell).
   */
  private applySite(siteId: string, sign: 1 | -1): void {
    const list = (this.bySite.get(siteId) ?? []).filter((i) => this.active[i]);
    if (list.length === 0) return;
    const join = joinWindows(list.map((i) => this.bitsWindow[i]));
    const n = windowCellCount(join);
    if (n === 0) return;
    // Per sensor kind (KINDS but 'any') an accumulator over the join; 'any' is the OR of the radar kinds'.
    const NS = SENSOR_SLOTS;
    if (this.scratch.length < NS * n) this.scratch = new Uint32Array(NS * n);
    const acc = this.scratch;
    let used = 0;
    for (const i of list) used |= 1 << (KINDS.indexOf(this.footprints[i].kind) - 1);
    // The radar pass below reads both radar accumulators: clear both when either is used.
    const radarBits = (1 << (KINDS.indexOf('primary') - 1)) | (1 << (KINDS.indexOf('secondary') - 1));
    if (used & radarBits) used |= radarBits;
    for (let slot = 0; slot < NS; slot++) if ((used >>> slot) & 1) acc.fill(0, slot * n, (slot + 1) * n);
    const jw = join.col1 - join.col0;
    for (const i of list) {
      const w = this.bitsWindow[i];
      const b = this.bitsFor(i);
      const ww = w.col1 - w.col0;
      const off = (KINDS.indexOf(this.footprints[i].kind) - 1) * n;
      for (let r = w.row0; r < w.row1; r++) {
        const src = (r - w.row0) * ww;
        const dst = off + (r - join.row0) * jw + (w.col0 - join.col0);
        for (let c = 0; c < ww; c++) acc[dst + c] |= b[src + c];
      }
    }
    const nFl = this.altitudesM.length * this.targetCount;
    if (this.cellMajor !== null) {
      this.addCellMajor(acc, n, join, used, sign);
      return;
    }
    const fold = this.fold;
    const anyBase = KINDS.indexOf('any') * nFl;
    const pSlot = KINDS.indexOf('primary') - 1;
    const sSlot = KINDS.indexOf('secondary') - 1;
    const primaryBase = (pSlot + 1) * nFl;
    const secondaryBase = (sSlot + 1) * nFl;
    const W = join.width;
    // The radars in one pass ('any' is their OR), as before the receivers; then each receiver kind present.
    if ((used & ((1 << pSlot) | (1 << sSlot))) !== 0) {
      const pOff = pSlot * n;
      const sOff = sSlot * n;
      for (let r = join.row0; r < join.row1; r++) {
        const local = (r - join.row0) * jw;
        const cell0 = r * W + join.col0;
        for (let c = 0; c < jw; c++) {
          const bp = acc[pOff + local + c];
          const bs = acc[sOff + local + c];
          if ((bp | bs) === 0) continue;
          const cell = cell0 + c;
          addBits(fold, anyBase, cell, bp | bs, sign);
          if (bp !== 0) addBits(fold, primaryBase, cell, bp, sign);
          if (bs !== 0) addBits(fold, secondaryBase, cell, bs, sign);
        }
      }
    }
    for (let slot = 0; slot < NS; slot++) {
      if (slot === pSlot || slot === sSlot || ((used >>> slot) & 1) === 0) continue;
      const base = (slot + 1) * nFl;
      const off = slot * n;
      for (let r = join.row0; r < join.row1; r++) {
        const local = off + (r - join.row0) * jw;
        const cell0 = r * W + join.col0;
        for (let c = 0; c < jw; c++) {
          const b = acc[local + c];
          if (b !== 0) addBits(fold, base, cell0 + c, b, sign);
        }
      }
    }
  }

  /**
   * `applySite`'s counts while the network is built (`cellMajor`): per cell of the join, the site's levels per kind
   * (its accumulators in `acc`, slot s for KINDS[s + 1]; 'any' the OR of the radars') added to one cache line each.
   */
  private addCellMajor(acc: Uint32Array, n: number, join: FootprintWindow, used: number, sign: 1 | -1): void {
    const L = this.altitudesM.length * this.targetCount;
    const majors = this.cellMajor!;
    const jw = join.col1 - join.col0;
    const W = join.width;
    const pSlot = KINDS.indexOf('primary') - 1;
    const sSlot = KINDS.indexOf('secondary') - 1;
    if ((used & ((1 << pSlot) | (1 << sSlot))) !== 0) {
      const anyM = majors[KINDS.indexOf('any')]!;
      const pM = majors[pSlot + 1];
      const sM = majors[sSlot + 1];
      const pOff = pSlot * n;
      const sOff = sSlot * n;
      for (let r = join.row0; r < join.row1; r++) {
        const local = (r - join.row0) * jw;
        const cell0 = r * W + join.col0;
        for (let c = 0; c < jw; c++) {
          const bp = acc[pOff + local + c];
          const bs = acc[sOff + local + c];
          if ((bp | bs) === 0) continue;
          const base = (cell0 + c) * L;
          addRun(anyM, base, bp | bs, sign);
          if (bp !== 0) addRun(pM!, base, bp, sign);
          if (bs !== 0) addRun(sM!, base, bs, sign);
        }
      }
    }
    for (let slot = 0; slot < SENSOR_SLOTS; slot++) {
      if (slot === pSlot || slot === sSlot || ((used >>> slot) & 1) === 0) continue;
      const m = majors[slot + 1]!;
      const off = slot * n;
      for (let r = join.row0; r < join.row1; r++) {
        const local = off + (r - join.row0) * jw;
        const cell0 = r * W + join.col0;
        for (let c = 0; c < jw; c++) {
          const b = acc[local + c];
          if (b !== 0) addRun(m, (cell0 + c) * L, b, sign);
        }
      }
    }
  }

  /**
   * ORs the level bits of the given footprints cell by cell over the join of their windows and calls `visit` for
   * each grid cell (ascending) where some bit is set — a site's sensors counted once per cell.
   */
  private orSite(members: readonly number[], visit: (cell: number, bits: number) => void): void {
    if (members.length === 0) return;
    const join = joinWindows(members.map((i) => this.bitsWindow[i]));
    const n = windowCellCount(join);
    if (n === 0) return;
    if (this.scratch.length < n) this.scratch = new Uint32Array(n);
    const acc = this.scratch;
    acc.fill(0, 0, n);
    const jw = join.col1 - join.col0;
    for (const i of members) {
      const w = this.bitsWindow[i];
      const b = this.bitsFor(i);
      const ww = w.col1 - w.col0;
      if (ww <= 0) continue;
      for (let r = w.row0; r < w.row1; r++) {
        const src = (r - w.row0) * ww;
        const dst = (r - join.row0) * jw + (w.col0 - join.col0);
        for (let c = 0; c < ww; c++) acc[dst + c] |= b[src + c];
      }
    }
    const W = join.width;
    for (let r = join.row0; r < join.row1; r++) {
      const local = (r - join.row0) * jw;
      const cell = r * W + join.col0;
      for (let c = 0; c < jw; c++) {
        const b = acc[local + c];
        if (b !== 0) visit(cell + c, b);
      }
    }
  }

  /**
   * Lowest altitude (m AMSL) per cell a active radar covers; NaN where none covers. Radars only, as 'any': the
   * floor of studies without receivers does not move, and a receiver's reception is not radar cover.
   */
  networkFloor(): Float32Array {
    const out = this.releasedFloor?.slice() ?? new Float32Array(this.cells).fill(NaN);
    this.footprints.forEach((fp, i) => {
      if (!this.active[i] || !isRadarKind(fp.kind) || this.releasedSites.has(fp.siteId)) return;
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
          (kind === 'any' ? isRadarKind(this.footprints[i].kind) : this.footprints[i].kind === kind) &&
          (this.anyAtOf(i) >>> flIndex) & 1,
      );
      if (ok) out.push(site);
    }
    return out;
  }
}

/** Adds `sign` to a cell-major fold at `base + f` for every level bit f of `b` (one cell's levels). */
function addRun(m: Uint16Array, base: number, b: number, sign: 1 | -1): void {
  while (b !== 0) {
    const f = 31 - Math.clz32(b & -b);
    m[base + f] += sign;
    b &= b - 1;
  }
}

/** Adds `sign` to the folds at `base + f` of `cell` for every level bit f of `b`. */
function addBits(fold: Uint16Array[], base: number, cell: number, b: number, sign: 1 | -1): void {
  while (b !== 0) {
    const f = 31 - Math.clz32(b & -b);
    fold[base + f][cell] += sign;
    b &= b - 1;
  }
}

/** A footprint's ids and kind with no cells (an empty window): what a released network keeps of a sensor. */
function released(fp: Footprint): Footprint {
  const none = new Uint16Array(0);
  const w = { row0: 0, row1: 0, col0: 0, col1: 0, width: fp.window.width };
  return { siteId: fp.siteId, typeId: fp.typeId, kind: fp.kind, lo: none, hi: none, window: w };
}

/** A footprint's bits window: its window joined with its other targets'. */
function bitsWindowOf(fp: Footprint): FootprintWindow {
  return joinWindows([fp, ...(fp.byTarget ?? [])].map((f) => f.window));
}

/** The smallest window holding all of `ws` (an empty window when there is none or all are empty). */
function joinWindows(ws: readonly FootprintWindow[]): FootprintWindow {
  const full = ws.filter((w) => w.row1 > w.row0 && w.col1 > w.col0);
  const width = ws[0]?.width ?? 0;
  if (full.length === 0) return { row0: 0, row1: 0, col0: 0, col1: 0, width };
  return {
    row0: Math.min(...full.map((w) => w.row0)),
    row1: Math.max(...full.map((w) => w.row1)),
    col0: Math.min(...full.map((w) => w.col0)),
    col1: Math.max(...full.map((w) => w.col1)),
    width,
  };
}

/**
 * ORs the level bits of one footprint into `out` (cells of `outWin`, which holds the footprint's window), level f
 * at bit f + shift, for the levels in `mask` (bit f); returns the bits set anywhere.
 */
function levelBits(
  fp: Footprint,
  altitudesM: readonly number[],
  tables: LevelTables | null,
  out: Bits,
  outWin: FootprintWindow,
  shift: number,
  mask: number,
): number {
  const w = fp.window;
  const ww = w.col1 - w.col0;
  const ow = outWin.col1 - outWin.col0;
  let seen = 0;
  if (ww <= 0) return 0;
  for (let r = w.row0; r < w.row1; r++) {
    const src = (r - w.row0) * ww;
    const dst = (r - outWin.row0) * ow + (w.col0 - outWin.col0);
    seen |= levelBitsRun(fp.lo, fp.hi, altitudesM, tables, out, shift, mask, src, dst, ww);
  }
  return seen;
}

/**
 * For levels in ascending altitude, per whole metre v (a footprint's lo and hi are whole metres, 0…65 535): the
 * levels below v (`below[v]`: levels with altitude < v) and up to v (`upTo[v]`: altitude ≤ v). A cell with
 * lo ≤ hi covers exactly the levels [below[lo], upTo[hi]). Null when the altitudes do not ascend.
 */
interface LevelTables {
  below: Uint8Array;
  upTo: Uint8Array;
  /** lowBits[k]: the k lowest bits set (k = 0 … 32). */
  lowBits: Int32Array;
}

function levelTables(altitudesM: readonly number[]): LevelTables | null {
  for (let f = 1; f < altitudesM.length; f++) if (!(altitudesM[f] > altitudesM[f - 1])) return null;
  const below = new Uint8Array(65_536);
  const upTo = new Uint8Array(65_536);
  let b = 0;
  let u = 0;
  for (let v = 0; v < 65_536; v++) {
    while (b < altitudesM.length && altitudesM[b] < v) b++;
    while (u < altitudesM.length && altitudesM[u] <= v) u++;
    below[v] = b;
    upTo[v] = u;
  }
  const lowBits = new Int32Array(33);
  for (let k = 0; k <= 32; k++) lowBits[k] = k >= 32 ? -1 : (1 << k) - 1;
  return { below, upTo, lowBits };
}

/**
 * One row of a footprint's window into `out`: through the tables when there are (two lookups per cell), else a test
 * per level (the same bits).
 */
function levelBitsRun(
  lo: Uint16Array,
  hi: Uint16Array,
  altitudesM: readonly number[],
  tables: LevelTables | null,
  out: Bits,
  shift: number,
  mask: number,
  src: number,
  dst: number,
  count: number,
): number {
  const n = altitudesM.length;
  let seen = 0;
  if (tables !== null) {
    const { below, upTo, lowBits } = tables;
    for (let k = 0; k < count; k++) {
      const l = lo[src + k];
      const h = hi[src + k];
      if (l > h) continue;
      const b = ((lowBits[upTo[h]] & ~lowBits[below[l]] & mask) << shift) | 0;
      if (b === 0) continue;
      out[dst + k] |= b;
      seen |= b;
    }
    return seen;
  }
  for (let k = 0; k < count; k++) {
    const l = lo[src + k];
    const h = hi[src + k];
    if (l > h) continue;
    let b = 0;
    for (let f = 0; f < n; f++) {
      const a = altitudesM[f];
      if (l <= a && a <= h && (mask >>> f) & 1) b |= 1 << (f + shift);
    }
    out[dst + k] |= b;
    seen |= b;
  }
  return seen;
}

/** ORs each cell's base bits (those in `mask`) shifted by `shift` into the same cell; returns the bits set. */
function shiftBits(out: Bits, shift: number, mask: number): number {
  let seen = 0;
  for (let c = 0; c < out.length; c++) {
    const b = (out[c] & mask) << shift;
    if (b === 0) continue;
    out[c] |= b;
    seen |= b;
  }
  return seen;
}

function lowerFloor(out: Float32Array, fp: Footprint): void {
  const { lo, hi, window: w } = fp;
  const ww = w.col1 - w.col0;
  if (ww <= 0) return;
  for (let r = w.row0; r < w.row1; r++) {
    const src = (r - w.row0) * ww;
    const dst = r * w.width + w.col0;
    for (let k = 0; k < ww; k++) {
      const l = lo[src + k];
      if (l <= hi[src + k] && !(out[dst + k] <= l)) out[dst + k] = l;
    }
  }
}
