/**
 * Footprints: where one sensor on one site detects a target, as an altitude interval per analysis cell.
 *
 *   lo = max(line-of-sight floor (≥ ground), lowest altitude the sensor's limits allow at that distance)
 *   hi = highest altitude the sensor's limits allow at that distance
 *
 * The sensor's limits at ground distance s depend only on s, the antenna altitude and the sensor (cone of
 * silence, pattern-limited detection range on the effective earth, instrumented and minimum range), so they are
 * tabulated once per (site, type) as a band [bandLo(s), bandHi(s)] and looked up per cell. The band is the first
 * contiguous run of detected altitudes above the ground (a pattern null splitting coverage in two is not
 * represented; the upper part is dropped).
 *
 * Intervals are stored as whole metres in Uint16 (lo rounded up, hi rounded down; 65 535 = none), and only for
 * the cells of the footprint's window (the box its band can reach), to keep a scenario's hundreds of footprints
 * small: memory follows the area a sensor sees, not the study's. An empty cell has lo > hi.
 */
import type { DetectionProfile, SensorModel } from './sensor.ts';
import type { SensorKind } from '../../shared/sensor-kinds.ts';

export const NO_COVER_LO = 65_535;
/** Highest altitude searched: above FL600 with room to spare. */
export const TOP_M = 25_000;
const COARSE_DH_M = 100;

export interface SensorBand {
  readonly stepM: number;
  /** Per ground distance i·stepM: lowest and highest detected altitude (m AMSL); NaN where nothing is detected. */
  readonly lo: Float64Array;
  readonly hi: Float64Array;
}

/** Slant range and elevation of a target at altitude h, ground arc s, from an antenna at altitude ha, earth Re. */
export function slantGeometry(
  s: number,
  h: number,
  ha: number,
  re: number,
  out: { rangeM: number; elevationRad: number },
): void {
  const a = re + ha;
  const b = re + h;
  const th = s / re;
  const c = Math.cos(th);
  const r2 = a * a + b * b - 2 * a * b * c;
  const r = Math.sqrt(Math.max(r2, 0));
  out.rangeM = r;
  out.elevationRad = r > 0 ? Math.asin(Math.max(-1, Math.min(1, (b * c - a) / r))) : Math.PI / 2;
}

/**
 * Over-sea lobing for the band's detection test: a factor F (0…1) on the detection range at a target altitude, from
 * the two-ray model (multipath.ts). Applied where the caller knows the reflection point lies over sea.
 */
export type LobingFactor = (groundRangeM: number, altitudeM: number) => number;

/**
 * Whether the sensor's own limits (not terrain) let it detect a target at (s, h): slant range at least the minimum
 * range and at most the profile's range at the elevation (`slantGeometry`'s), times the lobing factor over sea.
 * One distance is asked many altitudes in a row (sensorBand asks 30–80), so the distance's cosine is kept while it
 * stays; the arithmetic is slantGeometry's, in its order.
 */
class Prober {
  private s = NaN;
  private c = NaN;
  private readonly a: number;
  constructor(
    private readonly profile: DetectionProfile,
    ha: number,
    private readonly re: number,
    private readonly lobing: LobingFactor | undefined,
  ) {
    this.a = re + ha;
  }

  private readonly bounds = [0, 0];

  det(s: number, h: number): boolean {
    this.at(s);
    const a = this.a;
    const b = this.re + h;
    const c = this.c;
    const r2 = a * a + b * b - 2 * a * b * c;
    const r = Math.sqrt(Math.max(r2, 0));
    const p = this.profile;
    if (r < p.minRangeM) return false;
    const e = r > 0 ? Math.asin(Math.max(-1, Math.min(1, (b * c - a) / r))) : Math.PI / 2;
    const limit = p.rangeM(e);
    if (r > limit) return false;
    return this.lobing === undefined || r <= limit * this.lobing(s, h);
  }

  /**
   * Whether `det(s, h)` holds for every h in [h1, h2] (`all`) or for none (`!all`), settled from bounds when they
   * leave no doubt: along one distance the elevation rises with h, the slant range is convex in h (least at
   * re + h = (re + ha)·cos(s/re)), and `rangeBounds` gives the profile's least and greatest range over the
   * elevations. False when unsure (no `rangeBounds`, lobing, or within 1 mm and a relative 1e−9 of an edge): the
   * caller then asks each altitude, so the band is the same to the bit.
   */
  settles(s: number, h1: number, h2: number, all: boolean): boolean {
    const p = this.profile;
    if (p.rangeBounds === undefined || this.lobing !== undefined || !(h1 <= h2)) return false;
    this.at(s);
    const a = this.a;
    const c = this.c;
    const b1 = this.re + h1;
    const b2 = this.re + h2;
    const r1 = Math.sqrt(Math.max(a * a + b1 * b1 - 2 * a * b1 * c, 0));
    const r2 = Math.sqrt(Math.max(a * a + b2 * b2 - 2 * a * b2 * c, 0));
    const bStar = a * c;
    const rMin = bStar > b1 && bStar < b2 ? a * Math.sqrt(Math.max(0, 1 - c * c)) : Math.min(r1, r2);
    const rMax = Math.max(r1, r2);
    if (!(rMin > 0)) return false;
    const e1 = Math.asin(Math.max(-1, Math.min(1, (b1 * c - a) / r1)));
    const e2 = Math.asin(Math.max(-1, Math.min(1, (b2 * c - a) / r2)));
    // Margins far above the rounding of det's own arithmetic: the slant range's law of cosines loses up to about
    // 0.1 m² of r² to cancellation (under 1 mm of r beyond 100 m), the elevation under 1e−10 rad beyond 100 m.
    const rel = 1e-9;
    const absM = 1e-3;
    p.rangeBounds(e1 - rel, e2 + rel, this.bounds);
    const [least, most] = this.bounds;
    if (all) return rMin >= p.minRangeM * (1 + rel) + absM && rMax <= least * (1 - rel) - absM;
    return rMin >= most * (1 + rel) + absM;
  }

  private at(s: number): void {
    if (s !== this.s) {
      this.s = s;
      this.c = Math.cos(s / this.re);
    }
  }
}

export interface BandRequest {
  antennaAltM: number;
  reM: number;
  maxRangeM: number;
  /** Ground-distance step of the table (default 500 m). */
  stepM?: number;
  /** Lowest altitude considered (the lowest ground the footprint covers; default 0). */
  bottomM?: number;
  lobing?: LobingFactor;
}

export function sensorBand(profile: DetectionProfile, req: BandRequest): SensorBand {
  const stepM = req.stepM ?? 500;
  const n = Math.ceil(req.maxRangeM / stepM) + 2;
  const lo = new Float64Array(n).fill(NaN);
  const hi = new Float64Array(n).fill(NaN);
  const bottom = req.bottomM ?? 0;
  const prober = new Prober(profile, req.antennaAltM, req.reM, req.lobing);
  const det = (s: number, h: number) => prober.det(s, h);
  /** Bisection of an edge known to lie in (a, b]: `a` on the `aDetected` side. */
  const edge = (s: number, a: number, b: number, aDetected: boolean): number => {
    for (let k = 0; k < 12; k++) {
      const m = (a + b) / 2;
      if (det(s, m) === aDetected) a = m;
      else b = m;
    }
    return aDetected ? a : b;
  };
  for (let i = 0; i < n; i++) {
    const s = i * stepM;
    // Lower edge: the first detected altitude above the bottom.
    let l: number;
    if (det(s, bottom)) l = bottom;
    else {
      // The edge moves smoothly with range: try a bracket around the previous row's edge before climbing.
      const prev = i > 0 ? lo[i - 1] : NaN;
      if (
        prev === prev &&
        prev - COARSE_DH_M > bottom &&
        !det(s, prev - COARSE_DH_M) &&
        det(s, prev + COARSE_DH_M)
      ) {
        l = edge(s, prev - COARSE_DH_M, prev + COARSE_DH_M, false);
      } else {
        const h = climb(prober, s, bottom + COARSE_DH_M, false);
        if (h > TOP_M) continue;
        l = edge(s, h - COARSE_DH_M, h, false);
      }
    }
    lo[i] = l;
    // Upper edge: the top of the first run of detected altitudes.
    const prevHi = i > 0 ? hi[i - 1] : NaN;
    if (
      prevHi === prevHi &&
      prevHi - COARSE_DH_M > l &&
      det(s, prevHi - COARSE_DH_M) &&
      !det(s, prevHi + COARSE_DH_M) &&
      runsThrough(det, s, l, prevHi - COARSE_DH_M)
    ) {
      hi[i] = edge(s, prevHi - COARSE_DH_M, prevHi + COARSE_DH_M, true);
      continue;
    }
    const h = climb(prober, s, l, true);
    hi[i] = h > TOP_M ? TOP_M : edge(s, h - COARSE_DH_M, h, true);
  }
  return { stepM, lo, hi };
}

/**
 * The band over sea: the same upper edge as `land`, the lower edge raised where over-sea lobing (`lobing`, the
 * first-lobe factor of multipath.ts, 0…1 and rising with altitude below the first lobe's peak) cuts the range.
 * Per row: the land band's lower edge if it is still detected, else the first detected altitude above it (a
 * doubling search, then bisection to 2 m); none if even the top of the land band is not.
 */
export function seaBand(
  profile: DetectionProfile,
  land: SensorBand,
  req: Pick<BandRequest, 'antennaAltM' | 'reM'>,
  lobing: LobingFactor,
): SensorBand {
  const n = land.lo.length;
  const lo = new Float64Array(n).fill(NaN);
  const prober = new Prober(profile, req.antennaAltM, req.reM, lobing);
  for (let i = 0; i < n; i++) {
    const l = land.lo[i];
    const top = land.hi[i];
    if (!(l === l) || !(top === top)) continue;
    const s = i * land.stepM;
    if (prober.det(s, l)) {
      lo[i] = l;
      continue;
    }
    if (!prober.det(s, top)) continue;
    let a = l;
    let b = top;
    for (let step = 25; a + step < b; step *= 2) {
      if (prober.det(s, a + step)) {
        b = a + step;
        break;
      }
      a += step;
    }
    while (b - a > 2) {
      const m = 0.5 * (a + b);
      if (prober.det(s, m)) b = m;
      else a = m;
    }
    lo[i] = b;
  }
  return { stepM: land.stepM, lo, hi: land.hi };
}

/**
 * Where the reflection point lies over sea, for `buildFootprint`: the sea band, the reflection point's distance from
 * the antenna per band row (at the sea band's lower edge), and a sea mask along the site's radials.
 */
export interface SeaChoice {
  band: SensorBand;
  /** Per band row: distance (m) of the specular point from the antenna; NaN where none. */
  d1M: Float64Array;
  /** Per analysis cell: the radial (azimuth bin) it lies on; 65 535 where unknown. */
  cellRadial: Uint16Array;
  /** radials × steps: 1 where the surface at that distance along that radial is sea. */
  seaMask: Uint8Array;
  steps: number;
  stepM: number;
}

/** Ladder altitudes a climb settles at once when it can (`Prober.settles`): 2.5 km. */
const CLIMB_CHUNK = 25;

/**
 * Climbs the coarse ladder h, h + COARSE_DH_M, … (as far as TOP_M) while `det(s, h) === detected`; returns the first
 * altitude where it is not, or the first past TOP_M. The ladder is stepped by the same additions as a plain climb,
 * and a stretch is skipped only when `settles` proves every altitude in it, so the answer is the plain climb's.
 * Far from the antenna this saves most of the asks: beyond the sensor's reach nothing is detected up to TOP_M, and
 * inside it, on long range, everything is from the lower edge up to TOP_M (about 250 asks a row each).
 */
function climb(prober: Prober, s: number, h: number, detected: boolean): number {
  if (h <= TOP_M && prober.settles(s, h, TOP_M, detected)) {
    while (h <= TOP_M) h += COARSE_DH_M;
    return h;
  }
  while (h <= TOP_M) {
    let end = h;
    let k = 1;
    while (k < CLIMB_CHUNK && end + COARSE_DH_M <= TOP_M) {
      end += COARSE_DH_M;
      k++;
    }
    if (prober.settles(s, h, end, detected)) {
      h = end + COARSE_DH_M;
      continue;
    }
    for (let j = 0; j < k; j++) {
      if (prober.det(s, h) !== detected) return h;
      h += COARSE_DH_M;
    }
  }
  return h;
}

/** Whether detection holds all the way from a to b (checked on the coarse ladder). */
function runsThrough(det: (s: number, h: number) => boolean, s: number, a: number, b: number): boolean {
  for (let h = a; h < b; h += 4 * COARSE_DH_M) if (!det(s, h)) return false;
  return true;
}

export interface Footprint {
  readonly siteId: string;
  readonly typeId: string;
  readonly kind: SensorKind;
  /**
   * Per cell of `window`, row by row (local index (r − row0)·(col1 − col0) + (c − col0)), whole metres AMSL:
   * detected iff lo ≤ h ≤ hi. Cells outside the window have no cover and take no memory: a footprint costs its
   * window, not the study (`loAt` / `hiAt` read by grid cell).
   */
  readonly lo: Uint16Array;
  readonly hi: Uint16Array;
  /** Where cover can be: rows [row0, row1) × columns [col0, col1) of the grid; every cell outside has none. */
  readonly window: FootprintWindow;
  /** The same sensor's footprints for the study's other targets (volumes with their own target), in order. */
  byTarget?: Footprint[];
}

export interface FootprintWindow {
  readonly row0: number;
  readonly row1: number;
  readonly col0: number;
  readonly col1: number;
  /** The grid's width in cells (a cell's index is row · width + column). */
  readonly width: number;
}

/** The whole grid as a window. */
export function wholeWindow(width: number, height: number): FootprintWindow {
  return { row0: 0, row1: height, col0: 0, col1: width, width };
}

/** Cells in a window (0 when it is empty). */
export function windowCellCount(w: FootprintWindow): number {
  return Math.max(0, w.row1 - w.row0) * Math.max(0, w.col1 - w.col0);
}

/** The window-local index of grid cell `cell`, or −1 when it lies outside the window. */
export function localIndex(w: FootprintWindow, cell: number): number {
  const r = Math.floor(cell / w.width);
  const c = cell - r * w.width;
  if (r < w.row0 || r >= w.row1 || c < w.col0 || c >= w.col1) return -1;
  return (r - w.row0) * (w.col1 - w.col0) + (c - w.col0);
}

/** Lowest detected altitude (m) of grid cell `cell`; NO_COVER_LO outside the window or where nothing is detected. */
export function loAt(fp: Footprint, cell: number): number {
  const i = localIndex(fp.window, cell);
  return i < 0 ? NO_COVER_LO : fp.lo[i];
}

/** Highest detected altitude (m) of grid cell `cell`; 0 outside the window. */
export function hiAt(fp: Footprint, cell: number): number {
  const i = localIndex(fp.window, cell);
  return i < 0 ? 0 : fp.hi[i];
}

/** Whether the footprint detects a target at altitude h (m) over grid cell `cell`. */
export function coversAt(fp: Footprint, cell: number, h: number): boolean {
  const i = localIndex(fp.window, cell);
  return i >= 0 && fp.lo[i] <= h && h <= fp.hi[i];
}

/**
 * Combines a site's line-of-sight floor (already ≥ ground, NaN = unknown/out of range) and distance per grid cell
 * with a sensor band into a footprint over `window` (the caller knows the band detects nothing outside it).
 */
export function buildFootprint(
  siteId: string,
  model: SensorModel,
  floor: Float32Array,
  distance: Float32Array,
  land: SensorBand,
  sea: SeaChoice | undefined,
  window: FootprintWindow,
): Footprint {
  const n = windowCellCount(window);
  const lo = new Uint16Array(n);
  const hi = new Uint16Array(n);
  const W = window.width;
  const ww = Math.max(0, window.col1 - window.col0);
  if (n > 0) {
    for (let r = window.row0; r < window.row1; r++) {
      const from = r * W + window.col0;
      footprintRun(floor, distance, land, sea, lo, hi, from, from + ww, (r - window.row0) * ww - from);
    }
  }
  return { siteId, typeId: model.spec.id, kind: model.kind, lo, hi, window };
}

/** Cells [from, to) of a footprint (`buildFootprint`'s hot loop). */
function footprintRun(
  floor: Float32Array,
  distance: Float32Array,
  land: SensorBand,
  sea: SeaChoice | undefined,
  lo: Uint16Array,
  hi: Uint16Array,
  from: number,
  to: number,
  /** Grid cell i is footprint entry i + shift. */
  shift: number,
): void {
  const { stepM } = land;
  const last = land.lo.length - 2;
  const seaSteps = sea ? sea.steps : 0;
  for (let i = from; i < to; i++) {
    const f = floor[i];
    const u = distance[i] / stepM;
    let k = u | 0;
    if (!(f === f) || !(u === u) || k > last) {
      lo[i + shift] = NO_COVER_LO;
      hi[i + shift] = 0;
      continue;
    }
    if (k < 0) k = 0;
    const w = u - k;
    let band = land;
    if (sea !== undefined) {
      // Over sea when the specular point for this row lies on a sea sample of the cell's radial.
      const rad = sea.cellRadial[i];
      const d1 = sea.d1M[k];
      if (rad !== 65_535 && d1 === d1) {
        let j = Math.round(d1 / sea.stepM);
        if (j >= seaSteps) j = seaSteps - 1;
        if (sea.seaMask[rad * seaSteps + j] === 1) band = sea.band;
      }
    }
    const bl = band.lo;
    const bh = band.hi;
    const l0 = bl[k];
    const l1 = bl[k + 1];
    const h0 = bh[k];
    const h1 = bh[k + 1];
    // Where the band ends between two table rows, the nearer row decides.
    const bLo = l0 === l0 && l1 === l1 ? l0 + (l1 - l0) * w : w < 0.5 ? l0 : l1;
    const bHi = h0 === h0 && h1 === h1 ? h0 + (h1 - h0) * w : w < 0.5 ? h0 : h1;
    const cellLo = Math.ceil(f > bLo ? f : bLo);
    const cellHi = Math.floor(bHi);
    if (!(cellLo <= cellHi) || cellLo >= NO_COVER_LO) {
      lo[i + shift] = NO_COVER_LO;
      hi[i + shift] = 0;
    } else {
      lo[i + shift] = cellLo < 0 ? 0 : cellLo;
      hi[i + shift] = cellHi > 65_534 ? 65_534 : cellHi;
    }
  }
}
