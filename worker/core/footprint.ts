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
 * Intervals are stored as whole metres in Uint16 (lo rounded up, hi rounded down; 65 535 = none) to keep a
 * scenario's hundreds of footprints small; an empty cell has lo > hi.
 */
import type { DetectionProfile, SensorModel } from './sensor.ts';

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

const geom = { rangeM: 0, elevationRad: 0 };

/**
 * Over-sea lobing for `sensorDetects`: a factor F (0…1) on the detection range at a target altitude, from the
 * two-ray model (multipath.ts). Applied where the caller knows the reflection point lies over sea.
 */
export type LobingFactor = (groundRangeM: number, altitudeM: number) => number;

/** Whether the sensor's own limits (not terrain) let it detect a target at (s, h). */
export function sensorDetects(
  profile: DetectionProfile,
  s: number,
  h: number,
  ha: number,
  re: number,
  lobing?: LobingFactor,
): boolean {
  slantGeometry(s, h, ha, re, geom);
  const r = geom.rangeM;
  if (r < profile.minRangeM) return false;
  const limit = profile.rangeM(geom.elevationRad);
  if (r > limit) return false;
  return lobing === undefined || r <= limit * lobing(s, h);
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
  const det = (s: number, h: number) => sensorDetects(profile, s, h, req.antennaAltM, req.reM, req.lobing);
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
        let h = bottom + COARSE_DH_M;
        while (h <= TOP_M && !det(s, h)) h += COARSE_DH_M;
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
    let h = l;
    while (h <= TOP_M && det(s, h)) h += COARSE_DH_M;
    hi[i] = h > TOP_M ? TOP_M : edge(s, h - COARSE_DH_M, h, true);
  }
  return { stepM, lo, hi };
}

/** Whether detection holds all the way from a to b (checked on the coarse ladder). */
function runsThrough(det: (s: number, h: number) => boolean, s: number, a: number, b: number): boolean {
  for (let h = a; h < b; h += 4 * COARSE_DH_M) if (!det(s, h)) return false;
  return true;
}

export interface Footprint {
  readonly siteId: string;
  readonly typeId: string;
  readonly kind: 'primary' | 'secondary';
  /** Per analysis cell, whole metres AMSL: detected iff lo ≤ h ≤ hi. */
  readonly lo: Uint16Array;
  readonly hi: Uint16Array;
  /** The same sensor's footprints for the study's other targets (volumes with their own target), in order. */
  byTarget?: Footprint[];
}

/**
 * Combines a site's line-of-sight floor (already ≥ ground, NaN = unknown/out of range) and distance per cell with a
 * sensor band into a footprint.
 */
export function buildFootprint(
  siteId: string,
  model: SensorModel,
  floor: Float32Array,
  distance: Float32Array,
  band: SensorBand,
): Footprint {
  const n = floor.length;
  const lo = new Uint16Array(n);
  const hi = new Uint16Array(n);
  const { stepM } = band;
  const bl = band.lo;
  const bh = band.hi;
  const last = bl.length - 2;
  for (let i = 0; i < n; i++) {
    const f = floor[i];
    const u = distance[i] / stepM;
    let k = u | 0;
    if (!(f === f) || !(u === u) || k > last) {
      lo[i] = NO_COVER_LO;
      hi[i] = 0;
      continue;
    }
    if (k < 0) k = 0;
    const w = u - k;
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
      lo[i] = NO_COVER_LO;
      hi[i] = 0;
    } else {
      lo[i] = cellLo < 0 ? 0 : cellLo;
      hi[i] = cellHi > 65_534 ? 65_534 : cellHi;
    }
  }
  return { siteId, typeId: model.spec.id, kind: model.kind, lo, hi };
}
