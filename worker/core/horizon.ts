/**
 * The horizon engine: for one antenna, per azimuth and range, the screening angle (the steepest terrain
 * elevation angle between the antenna and that range) and from it the floor — the lowest altitude AMSL at which
 * a target is in line of sight — on an effective earth of radius Re = k·R.
 *
 * Geometry (DESIGN §4): a point at ground arc distance s and altitude h, seen from an antenna at altitude ha, has
 *   tan ε = ((Re + h)·cos(s/Re) − (Re + ha)) / ((Re + h)·sin(s/Re)),
 * and a target at range s is in line of sight iff its ε is at least the screening angle εs(s) = max ε of the
 * terrain at ranges in (0, s). Solving for h gives the floor: h = (Re + ha) / (cos(s/Re) − tan εs·sin(s/Re)) − Re.
 *
 * Sampling: radials are geodesics on WGS84 (see geodesy.ts), sampled every `rangeStepM` with bilinear terrain.
 * Radials are spaced uniformly in a pseudo-angle (cheap to compute per cell). To keep the arc spacing between
 * neighbouring radials within [arcStep/2, arcStep] at every range, the range axis is cut into levels: level ℓ+1
 * has twice the radials of level ℓ. Even radials of a new level continue the radial below; odd ones start from
 * the mean screening angle of their two neighbours at the level boundary and then gather their own terrain.
 *
 * Terrain that is unknown (no tile) makes every range beyond it unknown on that radial (NaN): never sea level.
 */
import { EARTH_RADIUS_M } from '../../shared/units.ts';
import { FLOOR_CAP_M } from './floor-cap.ts';
import { InputError } from '../../shared/errors.ts';
import { radialKernel, type RadialKernel, type WasmMemory } from './radial-kernel.ts';
import {
  pseudoToAzimuthRad,
  RadialFan,
  VectorMap,
  type PixelMapper,
  type RadialFanParts,
} from './geodesy.ts';

/** What the engine needs of the terrain: one raster with NaN for unknown, and its georeferencing. */
export interface TerrainRaster extends PixelMapper {
  readonly geo: { readonly width: number; readonly height: number };
  readonly data: Float32Array;
  /** The WebAssembly memory `data` lies at the start of, when it does (radial-kernel.ts). */
  readonly memory?: WasmMemory | null;
  samplePixel(x: number, y: number): number;
  metresPerPixel(lon: number, lat: number): { x: number; y: number };
}

export interface HorizonSpec {
  lon: number;
  lat: number;
  /** Antenna height above ground, metres. */
  mastM: number;
  /** Effective-earth factor k (default 4/3). */
  kFactor?: number;
  /** Farthest range computed, metres. */
  maxRangeM: number;
  /** Earth radius R, metres (default 6 371 000, the mean radius). */
  earthRadiusM?: number;
  /** Range step (default: 0.75 of the terrain pixel at the site; eight times finer near the antenna). */
  rangeStepM?: number;
  /** Largest arc between neighbouring radials (default: 1.5 terrain pixels at the site). */
  arcStepM?: number;
}

export interface HorizonLevel {
  readonly azimuthCount: number;
  readonly jStart: number;
  readonly jEnd: number;
  /**
   * Offset of this level's block in `tan`. The block is range-major: sample (radial i, range j) is at
   * offset + (j − jStart) · azimuthCount + i, so neighbouring cells of an output row, which fall on neighbouring
   * radials at nearly the same range, read neighbouring memory.
   */
  readonly offset: number;
  /** Index of this level's first radial among the layout's radials (its tail is at `tails[radialBase + i]`). */
  readonly radialBase: number;
}

/** Plain numbers that fix the sampling; everything a worker needs besides the terrain and the `tan` buffer. */
export interface HorizonLayout {
  readonly lon: number;
  readonly lat: number;
  readonly mastM: number;
  readonly kFactor: number;
  readonly earthRadiusM: number;
  /** Effective earth radius k·R. */
  readonly reM: number;
  readonly groundM: number;
  readonly antennaAltM: number;
  readonly maxRangeM: number;
  readonly rangeStepM: number;
  /**
   * Nearest range that can screen: terrain closer than one pixel lies on the antenna's own cell (the ground the
   * mast stands on), which a cell-based terrain model does not let rise between the antenna and its neighbours.
   */
  readonly firstScreenM: number;
  /**
   * Out to this range the terrain is sampled NEAR_SUBSTEPS times more finely than rangeStepM: close to the
   * antenna a small height error is a large angle error, and the steepest point of a slope often sits on a
   * grid line between two samples.
   */
  readonly nearFieldM: number;
  /** Samples j = 0 … rangeCount − 1 at range j · rangeStepM. */
  readonly rangeCount: number;
  readonly levels: readonly HorizonLevel[];
  readonly totalSamples: number;
  /**
   * Radials over all levels. The `tan` buffer holds, after its totalSamples samples, one Int32 per radial: how far
   * the sweep stored it (`tailsOf`).
   */
  readonly radialCount: number;
  /** The geodesic table of the radials, built once here and shipped to every worker with the layout. */
  readonly fan: RadialFanParts;
}

/**
 * A computed horizon: layout + tan of the screening angle for a target at each (radial, range sample).
 *
 * A radial that reaches unknown terrain is unknown from there to its end. The sweep does not store that rest (on
 * the demo 59 % of a site's samples lie beyond the terrain, and storing them as NaN was a fifth of the sweep's
 * time): it stores, per radial, its tail — the first range sample it did not store (jEnd + 1 when it stored its
 * whole row) — in the Int32 slots after the samples (`tailsOf`). Sample (i, j) of a level is known only for
 * j < tail; readers take a sample at or past the tail as NaN (`sampleAt`), whatever the buffer holds there.
 */
export interface Horizon {
  readonly layout: HorizonLayout;
  /**
   * layout.totalSamples samples, then layout.radialCount tails (`horizonBufferLength`). NaN where the sight line
   * crosses unknown terrain; −1e9 where nothing screens (next to the antenna).
   */
  readonly tan: Float32Array;
}

/** Float32 slots a horizon's `tan` needs: its samples and one tail per radial. */
export function horizonBufferLength(layout: HorizonLayout): number {
  return layout.totalSamples + layout.radialCount;
}

/** The tails of a horizon's radials (see `Horizon`), a view on its buffer. */
export function tailsOf(layout: HorizonLayout, tan: Float32Array): Int32Array {
  return new Int32Array(tan.buffer, tan.byteOffset + layout.totalSamples * 4, layout.radialCount);
}

/** Sample (radial i, range j) of level `li`, NaN at or past the radial's tail. */
export function sampleAt(horizon: Horizon, li: number, i: number, j: number): number {
  const lv = horizon.layout.levels[li];
  const tails = tailsOf(horizon.layout, horizon.tan);
  return j < tails[lv.radialBase + i] ? horizon.tan[lv.offset + (j - lv.jStart) * lv.azimuthCount + i] : NaN;
}

const NOTHING = -1e9;
/** Near field: this many terrain pixels from the antenna, sampled NEAR_SUBSTEPS times per range step. */
const NEAR_FIELD_PIXELS = 16;
const NEAR_SUBSTEPS = 8;
export { FLOOR_CAP_M };

export function planHorizon(terrain: TerrainRaster, spec: HorizonSpec): HorizonLayout {
  const kFactor = spec.kFactor ?? 4 / 3;
  const earthRadiusM = spec.earthRadiusM ?? EARTH_RADIUS_M;
  if (!(kFactor > 0) || !Number.isFinite(kFactor))
    throw new InputError('--k', String(spec.kFactor), 'a positive effective-earth factor such as 1.3333');
  if (!Number.isFinite(spec.mastM) || spec.mastM < 0 || spec.mastM > 1000) {
    throw new InputError(
      '--mast-m',
      String(spec.mastM),
      'an antenna height above ground between 0 and 1000 m',
    );
  }
  if (!(spec.maxRangeM > 0) || spec.maxRangeM > 2_000_000) {
    throw new InputError('--max-range-km', String(spec.maxRangeM / 1000), 'a range between 0 and 2000 km');
  }
  const p = [0, 0];
  terrain.lonLatToPixel(spec.lon, spec.lat, p);
  const groundM = terrain.samplePixel(p[0], p[1]);
  if (!Number.isFinite(groundM)) {
    throw new InputError(
      '--site',
      `${spec.lon},${spec.lat}`,
      'a site inside the loaded terrain tiles (lon,lat in degrees)',
    );
  }
  const px = terrain.metresPerPixel(spec.lon, spec.lat);
  const pixelM = Math.min(px.x, px.y);
  const rangeStepM = spec.rangeStepM ?? pixelM * 0.75;
  const arcStepM = spec.arcStepM ?? pixelM * 1.5;
  const { rangeCount, levels, totalSamples, radialCount } = horizonLevels(
    spec.maxRangeM,
    rangeStepM,
    arcStepM,
  );
  const reM = kFactor * earthRadiusM;
  return {
    lon: spec.lon,
    lat: spec.lat,
    mastM: spec.mastM,
    kFactor,
    earthRadiusM,
    reM,
    groundM,
    antennaAltM: groundM + spec.mastM,
    maxRangeM: spec.maxRangeM,
    rangeStepM,
    firstScreenM: pixelM,
    nearFieldM: NEAR_FIELD_PIXELS * pixelM,
    rangeCount,
    levels,
    totalSamples,
    radialCount,
    fan: RadialFan.build(spec.lon, spec.lat, spec.maxRangeM, terrain),
  };
}

/**
 * The sampling's levels for a reach, range step and largest arc between radials (`planHorizon`'s, without the
 * geodesics): cheap, so a caller can size a polar buffer (`horizonBufferLength`) before planning.
 */
export function horizonLevels(
  maxRangeM: number,
  rangeStepM: number,
  arcStepM: number,
): { rangeCount: number; levels: HorizonLevel[]; totalSamples: number; radialCount: number } {
  const rangeCount = Math.ceil(maxRangeM / rangeStepM) + 2;
  const levels: HorizonLevel[] = [];
  let azimuthCount = Math.max(
    512,
    8 * Math.ceil((2 * Math.PI * Math.min(maxRangeM, 64 * arcStepM)) / arcStepM / 8),
  );
  let jStart = 0;
  let offset = 0;
  let radialBase = 0;
  for (;;) {
    const levelEndM = (azimuthCount * arcStepM) / (2 * Math.PI);
    const jEnd = Math.min(rangeCount - 1, Math.max(jStart + 1, Math.ceil(levelEndM / rangeStepM)));
    levels.push({ azimuthCount, jStart, jEnd, offset, radialBase });
    offset += azimuthCount * (jEnd - jStart + 1);
    radialBase += azimuthCount;
    if (jEnd >= rangeCount - 1) break;
    jStart = jEnd;
    azimuthCount *= 2;
  }
  return { rangeCount, levels, totalSamples: offset, radialCount: radialBase };
}

/** Allocates the `tan` buffer, tails included (shared when asked, so a worker pool can fill it in place). */
export function allocateTan(layout: HorizonLayout, shared = false): Float32Array {
  const bytes = horizonBufferLength(layout) * 4;
  return new Float32Array(shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
}

/** Per-range-sample constants shared by every radial. */
interface RangeTables {
  cos: Float64Array;
  sin: Float64Array;
  jNear: number;
  jFirst: number;
}

function rangeTables(layout: HorizonLayout): RangeTables {
  const n = layout.rangeCount;
  const t: RangeTables = {
    cos: new Float64Array(n),
    sin: new Float64Array(n),
    jFirst: Math.max(1, Math.ceil(layout.firstScreenM / layout.rangeStepM)),
    jNear: Math.min(layout.rangeCount - 1, Math.ceil(layout.nearFieldM / layout.rangeStepM)),
  };
  for (let j = 0; j < n; j++) {
    const s = j * layout.rangeStepM;
    t.cos[j] = Math.cos(s / layout.reM);
    t.sin[j] = Math.sin(s / layout.reM);
  }
  return t;
}

/**
 * The near field of one radial, [jStart, jEnd) with jEnd ≤ rt.jNear: like sweepRadial, but each range step is
 * cut into NEAR_SUBSTEPS samples and positions come straight from the knot formula (a few hundred samples per
 * radial, so clarity over speed here).
 */
function nearField(
  data: Float32Array,
  W: number,
  H: number,
  fan: RadialFan,
  knots: Float64Array,
  rt: RangeTables,
  ds: number,
  re: number,
  rha: number,
  T: number,
  dst: Float32Array,
  base: number,
  stride: number,
  jStart: number,
  jEnd: number,
): number {
  const firstM = rt.jFirst * ds;
  const sub = ds / NEAR_SUBSTEPS;
  const lastKnot = fan.rangeKnotCount - 2;
  for (let j = jStart; j < jEnd; j++) {
    dst[base + j * stride] = T;
    if (T !== T) continue;
    for (let k = 0; k < NEAR_SUBSTEPS; k++) {
      const s = j * ds + k * sub;
      if (s < firstM) continue;
      const m = Math.min(Math.floor(s / fan.rangeKnotM), lastKnot);
      const f = (s - m * fan.rangeKnotM) / fan.rangeKnotM;
      const x = fan.x0 + s * (knots[m * 2] * (1 - f) + knots[m * 2 + 2] * f);
      const y = fan.y0 + s * (knots[m * 2 + 1] * (1 - f) + knots[m * 2 + 3] * f);
      const z = bilinearAt(data, W, H, x, y);
      if (z !== z) {
        T = NaN;
        break;
      }
      const rz = re + z;
      const t = (rz * Math.cos(s / re) - rha) / (rz * Math.sin(s / re));
      if (t > T) T = t;
    }
  }
  return T;
}

/** Bilinear terrain at continuous pixel coordinates; the same rule as the sweep's inline copy. */
function bilinearAt(data: Float32Array, W: number, H: number, x: number, y: number): number {
  if (x < 0 || y < 0 || x > W || y > H) return NaN;
  let gx = x - 0.5;
  let gy = y - 0.5;
  if (gx < 0) gx = 0;
  else if (gx > W - 1) gx = W - 1;
  if (gy < 0) gy = 0;
  else if (gy > H - 1) gy = H - 1;
  let ix = gx | 0;
  let iy = gy | 0;
  if (ix > W - 2) ix = W - 2;
  if (iy > H - 2) iy = H - 2;
  const fx = gx - ix;
  const fy = gy - iy;
  const i = iy * W + ix;
  const top = data[i] + (data[i + 1] - data[i]) * fx;
  const bot = data[i + W] + (data[i + W + 1] - data[i + W]) * fx;
  return top + (bot - top) * fy;
}

/**
 * Where `sweepRadial`'s last call stopped writing: samples [sweptTo, jEnd) are unknown (NaN) and not stored. A
 * radial that reaches unknown terrain is unknown to its end; the sweep records where (the radial's tail, see
 * `Horizon`) instead of storing the rest.
 */
let sweptTo = 0;

/**
 * One radial from jStart to jEnd − 1: stores the screening tan before each sample (into dst[base + j·stride]) and takes
 * the sample in. Returns the running screening tan after sample jEnd − 1 (the value for jEnd).
 *
 * Positions: between two range knots P(s) = P0 + s·(Q_m + (s − s_m)·D) is quadratic in s, so it is stepped by
 * forward differences (two additions per coordinate per sample). Kept small and monomorphic so V8 optimises it
 * as a whole.
 */
function sweepRadial(
  data: Float32Array,
  W: number,
  H: number,
  fan: RadialFan,
  knots: Float64Array,
  rt: RangeTables,
  ds: number,
  re: number,
  rha: number,
  T: number,
  dst: Float32Array,
  base: number,
  stride: number,
  jStart: number,
  jEnd: number,
  trace: Float64Array | null,
): number {
  const cos = rt.cos;
  const sin = rt.sin;
  const jFirst = rt.jFirst;
  const x0 = fan.x0;
  const y0 = fan.y0;
  const knotM = fan.rangeKnotM;
  const lastKnot = fan.rangeKnotCount - 2;
  let j = jStart;
  sweptTo = jEnd;
  if (j < rt.jNear && trace === null) {
    const jn = Math.min(rt.jNear, jEnd);
    T = nearField(data, W, H, fan, knots, rt, ds, re, rha, T, dst, base, stride, j, jn);
    j = jn;
  }
  while (j < jEnd) {
    // Segment of range knots [m, m + 1] containing sample j, and its last sample.
    const sj = j * ds;
    const m = Math.min(Math.floor(sj / knotM), lastKnot);
    const jSegEnd = m === lastKnot ? jEnd : Math.min(jEnd, Math.ceil(((m + 1) * knotM) / ds));
    const st = pieceStart(knots, m, sj, ds, knotM, x0, y0, PIECE);
    let px = st[0];
    let py = st[1];
    let vx = st[2];
    let vy = st[3];
    const ax = st[4];
    const ay = st[5];
    // Fast path: the piece's positions all lie at least FAST_MARGIN pixels inside the raster and the screening is
    // known, so none of the general loop's edge tests and clamps below can act; the arithmetic is the same, so the
    // tans are the same to the bit (test/horizon.test.ts). About 1.15–1.25× faster on the demo's far field.
    if (trace === null && T === T && j >= jFirst && insideRaster(px, vx, ax, jSegEnd - 1 - j, W)) {
      if (insideRaster(py, vy, ay, jSegEnd - 1 - j, H)) {
        for (; j < jSegEnd; j++) {
          dst[base + j * stride] = T;
          const gx = px - 0.5;
          const gy = py - 0.5;
          px += vx;
          py += vy;
          vx += ax;
          vy += ay;
          const ix = gx | 0;
          const iy = gy | 0;
          const fx = gx - ix;
          const fy = gy - iy;
          const k = iy * W + ix;
          const d0 = data[k];
          const d2 = data[k + W];
          const top = d0 + (data[k + 1] - d0) * fx;
          const bot = d2 + (data[k + W + 1] - d2) * fx;
          const z = top + (bot - top) * fy;
          if (z !== z) {
            // Unknown terrain: unknown to the radial's end (the caller stores the rest, see `sweptTo`).
            sweptTo = j + 1;
            return NaN;
          }
          const rz = re + z;
          const num = rz * cos[j] - rha;
          const den = rz * sin[j];
          if (num > T * den) T = num / den;
        }
        continue;
      }
    }
    for (; j < jSegEnd; j++) {
      dst[base + j * stride] = T;
      const x = px;
      const y = py;
      px += vx;
      py += vy;
      vx += ax;
      vy += ay;
      if (trace !== null) {
        trace[j * 2] = x;
        trace[j * 2 + 1] = y;
      }
      if (T !== T && trace === null) {
        // Unknown stays unknown to the radial's end (most samples of a site near the terrain's edge): the caller
        // stores the rest as NaN (see `sweptTo`), without stepping positions no sample will read.
        sweptTo = j + 1;
        return T;
      }
      if (j < jFirst || T !== T) continue; // the antenna's own cell; unknown stays unknown
      if (x < 0 || y < 0 || x > W || y > H) {
        T = NaN;
        continue;
      }
      let gx = x - 0.5;
      let gy = y - 0.5;
      if (gx < 0) gx = 0;
      else if (gx > W - 1) gx = W - 1;
      if (gy < 0) gy = 0;
      else if (gy > H - 1) gy = H - 1;
      let ix = gx | 0;
      let iy = gy | 0;
      if (ix > W - 2) ix = W - 2;
      if (iy > H - 2) iy = H - 2;
      const fx = gx - ix;
      const fy = gy - iy;
      const k = iy * W + ix;
      const top = data[k] + (data[k + 1] - data[k]) * fx;
      const bot = data[k + W] + (data[k + W + 1] - data[k + W]) * fx;
      const z = top + (bot - top) * fy;
      if (z !== z) {
        T = NaN;
        continue;
      }
      // t > T ⟺ rz·cos − rha > T·rz·sin (rz·sin > 0): divide only when the screening rises, which is rare.
      const rz = re + z;
      const num = rz * cos[j] - rha;
      const den = rz * sin[j];
      if (num > T * den) T = num / den;
    }
  }
  sweptTo = jEnd;
  return T;
}

/** Scratch for `pieceStart` (one radial; the second of a pair in PIECE_B). */
const PIECE = new Float64Array(6);
const PIECE_B = new Float64Array(6);

/**
 * The forward-difference stepping of one radial over the piece of range knots [m, m + 1] from range sj: between two
 * knots P(s) = P0 + s·(Q_m + (s − s_m)·D) is quadratic in s. Writes into `out` and returns it: the position (x, y)
 * at sj, its first step (vx, vy) and the constant second difference (ax, ay).
 */
function pieceStart(
  knots: Float64Array,
  m: number,
  sj: number,
  ds: number,
  knotM: number,
  x0: number,
  y0: number,
  out: Float64Array,
): Float64Array {
  const sm = m * knotM;
  const qx = knots[m * 2];
  const qy = knots[m * 2 + 1];
  const dx = (knots[m * 2 + 2] - qx) / knotM;
  const dy = (knots[m * 2 + 3] - qy) / knotM;
  const step = ds * (2 * sj + ds - sm);
  out[0] = x0 + sj * (qx + (sj - sm) * dx);
  out[1] = y0 + sj * (qy + (sj - sm) * dy);
  out[2] = ds * qx + dx * step;
  out[3] = ds * qy + dy * step;
  out[4] = 2 * dx * ds * ds;
  out[5] = 2 * dy * ds * ds;
  return out;
}

/** Pixels of margin the sweep's fast path keeps from the raster's edges (its clamps then never act). */
const FAST_MARGIN = 2;

/**
 * Whether p(t) = p + v·t + a·t(t − 1)/2, the sweep's forward-difference stepping for t = 0 … n, stays within
 * [FAST_MARGIN, size − 1 − FAST_MARGIN]: a parabola's extremes lie at the ends or at its vertex.
 */
function insideRaster(p: number, v: number, a: number, n: number, size: number): boolean {
  const lo = FAST_MARGIN;
  const hi = size - 1 - FAST_MARGIN;
  const end = p + v * n + 0.5 * a * n * (n - 1);
  if (!(p > lo && p < hi && end > lo && end < hi)) return false;
  // Vertex of a·t²/2 + (v − a/2)·t: t* = 1/2 − v/a.
  const tv = a === 0 ? -1 : 0.5 - v / a;
  if (!(tv > 0 && tv < n)) return true;
  const mid = p + v * tv + 0.5 * a * tv * (tv - 1);
  return mid > lo && mid < hi;
}

/** Where `sweepPair` stopped on each radial (as `sweptTo`) and each radial's screening tan at jEnd. */
const pairOut = { sweptA: 0, sweptB: 0, tanA: 0, tanB: 0 };

/**
 * Radials A and B (B the next of the level, stored 4 bytes after A: `base` is A's) from jStart to jEnd − 1, as two
 * `sweepRadial` calls would, with the pieces of range knots where both lie well inside the terrain run together by
 * the WebAssembly kernel (worker/kernel/radial-kernel.ts: the fast path's operations, two lanes at once; the same
 * bits). The near field, and everything from the first piece that cannot be run together, go one radial at a time.
 * `data`, `tan` and the tables (cosP, sinP) lie in the kernel's memory; results in `pairOut`.
 */
function sweepPair(
  k: RadialKernel,
  data: Float32Array,
  W: number,
  H: number,
  fan: RadialFan,
  kA: Float64Array,
  kB: Float64Array,
  rt: RangeTables,
  cosP: number,
  sinP: number,
  ds: number,
  re: number,
  rha: number,
  TA: number,
  TB: number,
  tan: Float32Array,
  base: number,
  stride: number,
  jStart: number,
  jEnd: number,
): void {
  const x0 = fan.x0;
  const y0 = fan.y0;
  const knotM = fan.rangeKnotM;
  const lastKnot = fan.rangeKnotCount - 2;
  let j = jStart;
  if (j < rt.jNear) {
    const jn = Math.min(rt.jNear, jEnd);
    TA = nearField(data, W, H, fan, kA, rt, ds, re, rha, TA, tan, base, stride, j, jn);
    TB = nearField(data, W, H, fan, kB, rt, ds, re, rha, TB, tan, base + 1, stride, j, jn);
    j = jn;
  }
  while (j < jEnd && TA === TA && TB === TB && j >= rt.jFirst) {
    // The piece of range knots [m, m + 1] holding sample j, stepped as in sweepRadial for each radial.
    const sj = j * ds;
    const m = Math.min(Math.floor(sj / knotM), lastKnot);
    const jSegEnd = m === lastKnot ? jEnd : Math.min(jEnd, Math.ceil(((m + 1) * knotM) / ds));
    const a = pieceStart(kA, m, sj, ds, knotM, x0, y0, PIECE);
    const b = pieceStart(kB, m, sj, ds, knotM, x0, y0, PIECE_B);
    const n = jSegEnd - 1 - j;
    if (
      !insideRaster(a[0], a[2], a[4], n, W) ||
      !insideRaster(a[1], a[3], a[5], n, H) ||
      !insideRaster(b[0], b[2], b[4], n, W) ||
      !insideRaster(b[1], b[3], b[5], n, H)
    ) {
      break;
    }
    k.pairRun(
      data.byteOffset,
      W,
      j,
      jSegEnd,
      a[0],
      b[0],
      a[1],
      b[1],
      a[2],
      b[2],
      a[3],
      b[3],
      a[4],
      b[4],
      a[5],
      b[5],
      TA,
      TB,
      re,
      rha,
      cosP,
      sinP,
      tan.byteOffset + base * 4,
      stride,
    );
    TA = k.tanA.value;
    TB = k.tanB.value;
    const stopped = k.stoppedAt.value;
    if (stopped < jSegEnd) {
      // Unknown terrain under one of them at `stopped` (its tans stored): each goes on alone from there.
      j = stopped;
      break;
    }
    j = jSegEnd;
  }
  if (j >= jEnd) {
    pairOut.sweptA = jEnd;
    pairOut.sweptB = jEnd;
    pairOut.tanA = TA;
    pairOut.tanB = TB;
    return;
  }
  pairOut.tanA = sweepRadial(data, W, H, fan, kA, rt, ds, re, rha, TA, tan, base, stride, j, jEnd, null);
  pairOut.sweptA = sweptTo;
  pairOut.tanB = sweepRadial(data, W, H, fan, kB, rt, ds, re, rha, TB, tan, base + 1, stride, j, jEnd, null);
  pairOut.sweptB = sweptTo;
}

/**
 * Fills the radials of pseudo-angle sector [sectorStart, sectorEnd) (fractions of the full circle) at every
 * level. Sectors are independent: a pool splits the circle between workers writing into one shared `tan`.
 */
export function sweepSector(
  terrain: TerrainRaster,
  layout: HorizonLayout,
  tan: Float32Array,
  sectorStart = 0,
  sectorEnd = 1,
  onProgress?: (fraction: number) => void,
  /** `tan` lies in the terrain's WebAssembly memory (radial-kernel.ts): neighbouring radials go in pairs. */
  tanInMemory = false,
): void {
  const fan = new RadialFan(layout.fan);
  const rt = rangeTables(layout);
  const kernel = tanInMemory && terrain.memory ? radialKernel(terrain.memory) : null;
  const tablesAt = kernel === null ? -1 : kernel.tables(rt.cos, rt.sin);
  const pairs = kernel !== null && tablesAt >= 0;
  const cosP = tablesAt;
  const sinP = tablesAt + 8 * rt.cos.length;
  const knotsB = new Float64Array(fan.rangeKnotCount * 2);
  const knots = new Float64Array(fan.rangeKnotCount * 2);
  const W = terrain.geo.width;
  const H = terrain.geo.height;
  const data = terrain.data;
  const ds = layout.rangeStepM;
  const re = layout.reM;
  const rha = re + layout.antennaAltM;
  const tails = tailsOf(layout, tan);
  // Carry: screening tan at the level boundary for the sector's radials (plus the one past its end, which the
  // next sector owns but whose value the odd radial before it needs).
  let carry = new Float64Array(0);
  let carryFirst = 0;
  let done = 0;
  const totalWork = layout.levels.reduce(
    (w, l) => w + l.azimuthCount * (sectorEnd - sectorStart) * (l.jEnd - l.jStart + 1),
    0,
  );

  for (let li = 0; li < layout.levels.length; li++) {
    const level = layout.levels[li];
    const n = level.azimuthCount;
    const first = Math.round(sectorStart * n);
    const last = Math.round(sectorEnd * n); // exclusive for writing, inclusive for computing
    const rowLen = level.jEnd - level.jStart + 1;
    const nextCarry = new Float64Array(last - first + 1);
    const scratch = new Float32Array(rowLen);
    for (let i = first; i <= last; i++) {
      const writes = i < last;
      if (pairs && i + 1 < last) {
        // Radials i and i + 1, both written (i + 1 < last ≤ n): started as below, swept together.
        let TA: number;
        let TB: number;
        if (li === 0) {
          TA = NOTHING;
          TB = NOTHING;
        } else if ((i & 1) === 0) {
          TA = carry[i / 2 - carryFirst];
          TB = 0.5 * (carry[i / 2 - carryFirst] + carry[i / 2 + 1 - carryFirst]);
        } else {
          TA = 0.5 * (carry[(i - 1) / 2 - carryFirst] + carry[(i + 1) / 2 - carryFirst]);
          TB = carry[(i + 1) / 2 - carryFirst];
        }
        fan.knotsForAzimuth(pseudoToAzimuthRad((i / n) * 2 * Math.PI), knots);
        fan.knotsForAzimuth(pseudoToAzimuthRad(((i + 1) / n) * 2 * Math.PI), knotsB);
        const base = level.offset + i - level.jStart * n;
        sweepPair(
          kernel,
          data,
          W,
          H,
          fan,
          knots,
          knotsB,
          rt,
          cosP,
          sinP,
          ds,
          re,
          rha,
          TA,
          TB,
          tan,
          base,
          n,
          level.jStart,
          level.jEnd,
        );
        const o = pairOut;
        tails[level.radialBase + i] = o.sweptA === level.jEnd ? level.jEnd + 1 : o.sweptA;
        tails[level.radialBase + i + 1] = o.sweptB === level.jEnd ? level.jEnd + 1 : o.sweptB;
        tan[base + level.jEnd * n] = o.tanA;
        tan[base + 1 + level.jEnd * n] = o.tanB;
        nextCarry[i - first] = o.tanA;
        nextCarry[i + 1 - first] = o.tanB;
        done += 2 * rowLen;
        i++;
        continue;
      }
      const ii = i % n;
      // Initial screening at jStart.
      let T: number;
      if (li === 0) T = NOTHING;
      else if ((i & 1) === 0) T = carry[i / 2 - carryFirst];
      else T = 0.5 * (carry[(i - 1) / 2 - carryFirst] + carry[(i + 1) / 2 - carryFirst]);
      fan.knotsForAzimuth(pseudoToAzimuthRad((ii / n) * 2 * Math.PI), knots);
      const dst = writes ? tan : scratch;
      const base = writes ? level.offset + ii - level.jStart * n : -level.jStart;
      const stride = writes ? n : 1;
      T = sweepRadial(
        data,
        W,
        H,
        fan,
        knots,
        rt,
        ds,
        re,
        rha,
        T,
        dst,
        base,
        stride,
        level.jStart,
        level.jEnd,
        null,
      );
      // The value at jEnd (screening by everything before it) is where the next level starts; the next level
      // takes in the terrain at jEnd itself. A radial that stopped short is unknown there too: its tail says so.
      if (writes) tails[level.radialBase + i] = sweptTo === level.jEnd ? level.jEnd + 1 : sweptTo;
      dst[base + level.jEnd * stride] = T;
      nextCarry[i - first] = T;
      if (writes) done += rowLen;
    }
    carry = nextCarry;
    carryFirst = first;
    onProgress?.(done / totalWork);
  }
}

/** An output raster: its size, lon/lat mapping and (optionally) the ground height under each cell centre. */
export interface OutputGrid extends PixelMapper {
  readonly width: number;
  readonly height: number;
}

/**
 * Resamples a horizon onto rows [rowStart, rowEnd) of an output grid: per cell centre, the floor (lowest
 * altitude AMSL in line of sight) clamped to `ground` when given (a target above the cell cannot be below the
 * ground). NaN outside the computed range or behind unknown terrain. `vmap` is the grid's VectorMap from the
 * antenna (build it once per site and grid; pools pass it to every worker). `distance`, when given, receives
 * each cell centre's geodesic ground distance from the antenna (m).
 */
export function resampleFloor(
  horizon: Horizon,
  vmap: VectorMap,
  out: Float32Array,
  ground: Float32Array | null,
  rowStart = 0,
  rowEnd = vmap.height,
  distance: Float32Array | null = null,
): ResampleCounts {
  const L = horizon.layout;
  const nLevels = L.levels.length;
  const levelOfJ = new Uint8Array(L.rangeCount);
  const lv = new Int32Array(nLevels * 4); // per level: azimuthCount, jStart, radialBase, offset
  for (let li = 0; li < nLevels; li++) {
    const level = L.levels[li];
    lv[li * 4] = level.azimuthCount;
    lv[li * 4 + 1] = level.jStart;
    lv[li * 4 + 2] = level.radialBase;
    lv[li * 4 + 3] = level.offset;
    for (let j = level.jStart; j < level.jEnd; j++) levelOfJ[j] = li;
  }
  levelOfJ[L.rangeCount - 1] = nLevels - 1;
  const tails = tailsOf(L, horizon.tan);
  let beyond = 0;
  for (let r = rowStart; r < rowEnd; r++)
    beyond += resampleRow(L, horizon.tan, tails, vmap, levelOfJ, lv, out, ground, distance, r);
  let nan = 0;
  for (let k = rowStart * vmap.width; k < rowEnd * vmap.width; k++) if (out[k] !== out[k]) nan++;
  return { beyondRange: beyond, unknown: nan - beyond };
}

export interface ResampleCounts {
  /** Cells farther than the computed range. */
  beyondRange: number;
  /** Cells in range without a value: the sight line or the cell's own ground is unknown terrain. */
  unknown: number;
}

const GA = Math.PI / 4;
const GB = 0.273;

/**
 * Bilinear interpolation over the corners that are known. A cell next to the terrain's edge (or to a hole in
 * it) can have a neighbouring radial that has already left the known terrain while its own sight line has
 * not; the radials that stayed on known terrain give its value. NaN only when no corner is known.
 */
function knownPart(v00: number, v01: number, v10: number, v11: number, wj: number, wa: number): number {
  let sum = 0;
  let wsum = 0;
  const w = [(1 - wj) * (1 - wa), wj * (1 - wa), (1 - wj) * wa, wj * wa];
  const v = [v00, v01, v10, v11];
  for (let i = 0; i < 4; i++) {
    if (v[i] === v[i] && w[i] > 0) {
      sum += v[i] * w[i];
      wsum += w[i];
    }
  }
  return wsum > 0 ? sum / wsum : NaN;
}

/**
 * The screening tan between radials i0, i1 (weight wa on i1) and range samples j0, j0 + 1 (weight wj on j0 + 1) of a
 * level: bilinear over the four samples, a sample at or past its radial's tail counting as NaN, and the known
 * corners alone when some are unknown (`knownPart`). k0, k1: the samples (i0, j0), (i1, j0); n: the level's radials.
 */
function screeningAt(
  tan: Float32Array,
  k0: number,
  k1: number,
  n: number,
  j0: number,
  tail0: number,
  tail1: number,
  wj: number,
  wa: number,
): number {
  const j1 = j0 + 1;
  const v00 = j0 < tail0 ? tan[k0] : NaN;
  const v01 = j1 < tail0 ? tan[k0 + n] : NaN;
  const v10 = j0 < tail1 ? tan[k1] : NaN;
  const v11 = j1 < tail1 ? tan[k1 + n] : NaN;
  const T = (v00 + (v01 - v00) * wj) * (1 - wa) + (v10 + (v11 - v10) * wj) * wa;
  return T === T ? T : knownPart(v00, v01, v10, v11, wj, wa);
}

/** One output row (kept small so V8 optimises it whole); returns how many cells were beyond range. */
function resampleRow(
  L: HorizonLayout,
  tan: Float32Array,
  tails: Int32Array,
  vmap: VectorMap,
  levelOfJ: Uint8Array,
  lv: Int32Array,
  out: Float32Array,
  ground: Float32Array | null,
  distance: Float32Array | null,
  r: number,
): number {
  const W = vmap.width;
  let beyond = 0;
  const re = L.reM;
  const rha = re + L.antennaAltM;
  const invDs = 1 / L.rangeStepM;
  const maxRange = L.maxRangeM;
  const lastJ = L.rangeCount - 1;
  const b = vmap.block;
  const nx = vmap.nodesX;
  const v = vmap.v;
  const inv2pi = 1 / (2 * Math.PI);
  const halfPi = Math.PI / 2;
  // Lattice nodes sit at the centres of every b-th cell; a lattice one node wide or high repeats that node.
  const gy = r / b;
  const iy = Math.max(0, Math.min(gy | 0, vmap.nodesY - 2));
  const fy = vmap.nodesY > 1 ? gy - iy : 0;
  const dxNode = nx > 1 ? 2 : 0;
  const dyNode = vmap.nodesY > 1 ? nx * 2 : 0;
  const rowOut = r * W;
  for (let c = 0; c < W; c++) {
    const gx = c / b;
    const ix = Math.max(0, Math.min(gx | 0, nx - 2));
    const fx = nx > 1 ? gx - ix : 0;
    const k00 = (iy * nx + ix) * 2;
    const k10 = k00 + dyNode;
    const e =
      (v[k00] + (v[k00 + dxNode] - v[k00]) * fx) * (1 - fy) + (v[k10] + (v[k10 + dxNode] - v[k10]) * fx) * fy;
    const nn =
      (v[k00 + 1] + (v[k00 + 1 + dxNode] - v[k00 + 1]) * fx) * (1 - fy) +
      (v[k10 + 1] + (v[k10 + 1 + dxNode] - v[k10 + 1]) * fx) * fy;
    const s = Math.sqrt(e * e + nn * nn);
    if (distance !== null) distance[rowOut + c] = s;
    if (!(s <= maxRange)) {
      out[rowOut + c] = NaN;
      beyond++;
      continue;
    }
    // Pseudo-angle (geodesy.pseudoAngle, inlined).
    const ax = e < 0 ? -e : e;
    const ay = nn < 0 ? -nn : nn;
    let q: number;
    if (ax <= ay) {
      const t = ay === 0 ? 0 : ax / ay;
      q = t * (GA + GB * (1 - t));
    } else {
      const t = ay / ax;
      q = halfPi - t * (GA + GB * (1 - t));
    }
    const p = e >= 0 ? (nn >= 0 ? q : Math.PI - q) : nn < 0 ? Math.PI + q : 2 * Math.PI - q;
    const u = s * invDs;
    let j0 = u | 0;
    if (j0 >= lastJ) j0 = lastJ - 1;
    const wj = u - j0;
    const l4 = levelOfJ[j0] * 4;
    const n = lv[l4];
    const fa = p * inv2pi * n;
    let i0 = fa | 0;
    const wa = fa - i0;
    if (i0 >= n) i0 -= n;
    const i1 = i0 + 1 === n ? 0 : i0 + 1;
    const rowBase = lv[l4 + 3] + (j0 - lv[l4 + 1]) * n;
    const k0 = rowBase + i0;
    const k1 = rowBase + i1;
    const tail0 = tails[lv[l4 + 2] + i0];
    const tail1 = tails[lv[l4 + 2] + i1];
    let T: number;
    if (j0 + 1 < tail0 && j0 + 1 < tail1) {
      T = (tan[k0] + (tan[k0 + n] - tan[k0]) * wj) * (1 - wa) + (tan[k1] + (tan[k1 + n] - tan[k1]) * wj) * wa;
      if (T !== T) T = knownPart(tan[k0], tan[k0 + n], tan[k1], tan[k1 + n], wj, wa);
    } else {
      T = screeningAt(tan, k0, k1, n, j0, tail0, tail1, wj, wa);
    }
    // cos and sin of s/Re by series (s/Re < 0.25: error < 1e-8 relative).
    const x = s / re;
    const x2 = x * x;
    const cs = 1 - x2 * (0.5 - x2 * (1 / 24 - x2 / 720));
    const sn = x * (1 - x2 * (1 / 6 - x2 * (1 / 120 - x2 / 5040)));
    const den = cs - T * sn;
    // den ≤ 0: the screening ray never comes down to range s at any height; NaN: unknown terrain. Written so
    // that h stays a plain double in V8's optimized code: a phi with the imported cap (a module cell) or with the
    // global NaN (no type feedback on a branch rarely taken) would box it, a heap number per cell.
    let h = Math.min(den > 1e-9 ? rha / den - re : den === den ? FLOOR_CAP_M : den, FLOOR_CAP_M);
    if (ground !== null) {
      const g = ground[rowOut + c];
      if (g !== g || h < g) h = g; // unknown ground (NaN) or the floor below it
    }
    out[rowOut + c] = h;
  }
  return beyond;
}

/** Runs the sweep's own code along one radial at any azimuth, into `screening` (and positions into `trace`). */
function sweepOne(
  terrain: TerrainRaster,
  layout: HorizonLayout,
  azimuthRad: number,
  screening: Float32Array,
  trace: Float64Array | null,
): void {
  const fan = new RadialFan(layout.fan);
  const knots = new Float64Array(fan.rangeKnotCount * 2);
  fan.knotsForAzimuth(azimuthRad, knots);
  const g = terrain.geo;
  const rha = layout.reM + layout.antennaAltM;
  // Traces cover every sample; screenings stop one short and store the last value as the sweep does at jEnd.
  const jEnd = trace ? layout.rangeCount : layout.rangeCount - 1;
  const T = sweepRadial(
    terrain.data,
    g.width,
    g.height,
    fan,
    knots,
    rangeTables(layout),
    layout.rangeStepM,
    layout.reM,
    rha,
    NOTHING,
    screening,
    0,
    1,
    0,
    jEnd,
    trace,
  );
  for (let q = sweptTo; q < jEnd; q++) screening[q] = NaN;
  if (!trace) screening[jEnd] = T;
}

/**
 * The pixel positions the sweep samples along one radial (j = 0 … rangeCount − 1 into trace[2j], trace[2j+1]),
 * produced by the sweep's own stepping code. For tests of the geodesy.
 */
export function traceRadial(terrain: TerrainRaster, layout: HorizonLayout, azimuthRad: number): Float64Array {
  const trace = new Float64Array(layout.rangeCount * 2).fill(NaN);
  sweepOne(terrain, layout, azimuthRad, new Float32Array(layout.rangeCount), trace);
  return trace;
}

/**
 * The screening tan before each range sample j along one radial at any azimuth — exactly what the sweep stores
 * for its own radials (near field included); −1e9 where nothing screens yet, NaN behind unknown terrain. The
 * vertical coverage diagram draws its floor from it.
 */
export function radialScreening(
  terrain: TerrainRaster,
  layout: HorizonLayout,
  azimuthRad: number,
): Float32Array {
  const out = new Float32Array(layout.rangeCount);
  sweepOne(terrain, layout, azimuthRad, out, null);
  return out;
}

/** Everything inline: plan, sweep and resample onto one grid. Tests and small jobs use this. */
export function computeHorizon(terrain: TerrainRaster, spec: HorizonSpec): Horizon {
  const layout = planHorizon(terrain, spec);
  const tan = allocateTan(layout);
  sweepSector(terrain, layout, tan, 0, 1);
  return { layout, tan };
}

/** The floor of a single target range along one azimuth, straight from the polar samples (tests, diagrams). */
export function floorAt(horizon: Horizon, azimuthPseudoRad: number, rangeM: number): number {
  const L = horizon.layout;
  const u = rangeM / L.rangeStepM;
  const j0 = Math.min(Math.floor(u), L.rangeCount - 2);
  const wj = u - j0;
  let li = 0;
  while (li < L.levels.length - 1 && j0 >= L.levels[li].jEnd) li++;
  const lv = L.levels[li];
  const n = lv.azimuthCount;
  const fa = ((((azimuthPseudoRad / (2 * Math.PI)) % 1) + 1) % 1) * n;
  const i0 = Math.floor(fa) % n;
  const i1 = (i0 + 1) % n;
  const wa = fa - Math.floor(fa);
  const k0 = lv.offset + (j0 - lv.jStart) * n + i0;
  const k1 = lv.offset + (j0 - lv.jStart) * n + i1;
  const tails = tailsOf(L, horizon.tan);
  const T = screeningAt(
    horizon.tan,
    k0,
    k1,
    n,
    j0,
    tails[lv.radialBase + i0],
    tails[lv.radialBase + i1],
    wj,
    wa,
  );
  const x = rangeM / L.reM;
  const den = Math.cos(x) - T * Math.sin(x);
  if (den !== den) return NaN;
  return den > 1e-9 ? Math.min(FLOOR_CAP_M, (L.reM + L.antennaAltM) / den - L.reM) : FLOOR_CAP_M;
}
