/**
 * Our own deterministic generator of an invented landscape, used for the demo and for tests.
 *
 * Height is a continuous function of position in a local plane (metres east / north of the region
 * centre). The landscape is built from a seeded gradient noise (a permutation table and random unit
 * gradients drawn from a small seeded PRNG) and a layout of named features:
 *   - a coastline: a gently bent straight line made irregular by fractal noise; the sea is exactly 0 m
 *     (the sea surface) and the land rises from 0 at the shore;
 *   - coastal lowlands rising inland, with rolling hills whose amplitude grows away from the coast;
 *   - mountain ranges along polyline axes: a pointed cross-profile times ridged noise (sharp crests);
 *   - isolated summits (pointed cones, placed in undistorted coordinates so their tops stay put);
 *   - river valleys along polylines from mouth to source that carve a floor with sloping sides;
 *   - a soft knee that keeps every height below 3000 m.
 * All features except the summits are laid in domain-warped coordinates so no line is straight.
 *
 * Pure TypeScript, no I/O, no Math.random. The slow fields (warp, broad coastline noise, lowland rise,
 * range modulation) live on a fixed 1 km lattice and are interpolated; per cell there remain 3 to 8
 * noise octaves and a few box-culled polyline distances, and the fill loops allocate nothing (about
 * 150–250 ns a cell on one core, so the 25 demo tiles of 1201² take 5–9 s). Hand-written rather than
 * taken from a noise library because the lattice, the feature culling, the exact determinism across
 * tiles and the allocation-free kernel are what make it fast enough.
 */
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD, EARTH_RADIUS_M } from '../../shared/units.ts';

/** A mean coastline: land on the side the inland azimuth points to. */
export interface SynthCoast {
  /** A point on the mean coastline, metres east / north of the local origin. */
  readonly xM: number;
  readonly yM: number;
  /** Direction from the sea towards the land, degrees clockwise from north. */
  readonly inlandAzimuthDeg: number;
  /** Bend of the mean coastline, 1 / radius (1/m); positive bends both ends of the coast inland (a bight). */
  readonly curvaturePerM: number;
  /** Amplitude of the coastline's irregularity (bays, headlands, islands), metres of inland offset. */
  readonly roughnessM: number;
  /** Largest wavelength of the irregularity, metres. */
  readonly roughnessScaleM: number;
  /** Width over which the land rises from the shore to its full height, metres. */
  readonly shoreRampM: number;
}

/** A mountain range along a polyline axis. */
export interface SynthRange {
  readonly name: string;
  /** Axis vertices [x, y] in metres (warped local plane). */
  readonly axisM: readonly (readonly [number, number])[];
  /** Height of the crest envelope at the middle of the axis (before noise and the 3000 m knee), metres. */
  readonly crestM: number;
  /** Half width of the range across its axis, metres. */
  readonly halfWidthM: number;
}

/** A river valley along a polyline, from the mouth (first vertex) to the source (last vertex). */
export interface SynthRiver {
  readonly name: string;
  readonly courseM: readonly (readonly [number, number])[];
  /** Height of the valley floor at the mouth, metres. */
  readonly mouthFloorM: number;
  /** Rise of the valley floor per metre upstream (dimensionless). */
  readonly floorGradient: number;
  /** Half width of the flat valley floor, metres. */
  readonly floorHalfWidthM: number;
}

/** An isolated summit (a pointed cone added to the terrain). */
export interface SynthSummit {
  readonly name: string;
  readonly xM: number;
  readonly yM: number;
  /** Height added at the top, metres. */
  readonly reliefM: number;
  /** Radius of the cone's foot, metres. */
  readonly radiusM: number;
}

/** Everything that defines an invented landscape. Plain data: JSON-serialisable. */
export interface SynthLayout {
  /** Integer seed of the noise. */
  readonly seed: number;
  /** Geographic position of the local origin, for `fillGeographic` (equirectangular about it). */
  readonly centreLon: number;
  readonly centreLat: number;
  /** Amplitude and largest wavelength of the domain warp that bends every feature, metres. */
  readonly warpM: number;
  readonly warpScaleM: number;
  /** Null: no sea anywhere. */
  readonly coast: SynthCoast | null;
  /** Height the lowland plain gains far inland (reached over `lowlandScaleM` from the coast), metres. */
  readonly lowlandRiseM: number;
  readonly lowlandScaleM: number;
  /** Amplitude and largest wavelength of the rolling hills, metres. */
  readonly hillsM: number;
  readonly hillScaleM: number;
  /** Largest wavelength of the ridged noise that sharpens the ranges, metres. */
  readonly ridgeScaleM: number;
  readonly ranges: readonly SynthRange[];
  readonly rivers: readonly SynthRiver[];
  readonly summits: readonly SynthSummit[];
}

/** A landscape ready to sample: its layout plus tables precomputed from it. Build with `createSynthWorld`. */
export interface SynthWorld {
  readonly seed: number;
  readonly layout: SynthLayout;
  /** Precomputed noise tables and flattened features (internal; rebuilt from `layout`). */
  readonly tables: SynthTables;
}

/** Highest height the generator produces, metres. */
export const SYNTH_MAX_HEIGHT_M = 3000;
const KNEE_START_M = 2200;
const KNEE_SPAN_M = SYNTH_MAX_HEIGHT_M - KNEE_START_M;

/** Valley sides: horizontal metres per metre carved, plus a minimum width. */
const VALLEY_SIDE_RUN_PER_M = 2.6;
const VALLEY_SIDE_MIN_M = 1200;
/** Range of the factor that widens and narrows the valleys along their course. */
const VALLEY_WIDTH_MIN = 0.45;
const VALLEY_WIDTH_MAX = 1.7;

// Noise channels: each octave of each use has its own rotation, offset, frequency and weight.
const CH_WARP_X = 0; // 3 octaves, on the lattice
const CH_WARP_Y = 3; // 3 octaves, on the lattice
const CH_COAST = 6; // 4 octaves: 3 on the lattice, the finest per cell
const CH_HILLS = 10; // 3 octaves
const CH_RIDGE = 13; // 4 octaves (must follow the hills: one loop evaluates both)
const CH_RANGE_MOD = 17; // 2 octaves, on the lattice: widens, narrows, raises and lowers the ranges
const N_CHANNELS = 19;
const WARP_LACUNARITY = 3.2;
const COAST_LACUNARITY = 2.3;
const RANGE_MOD_LACUNARITY = 2.7;
/** Range outline and crest modulation: half width × (1 + RANGE_WIDTH_MOD · m), m the modulation noise. */
const RANGE_WIDTH_MOD = 1.1;
const RANGE_MOD_SCALE_M = 45_000;
/** Fraction of the domain warp applied to the hills and ridges noise. */
const LOCAL_WARP = 0.25;
const CH_STRIDE = 6; // cos, sin, 1/scale, offset x, offset y, weight

/** Bound of |gradNoise| (√2/2 for unit gradients), with a little margin for rounding. */
const NOISE_BOUND = 0.7072;

const SEG_STRIDE = 7; // x0, y0, dx, dy, 1/len², len, cumulative length at x0

/** Precomputed, typed-array form of a layout. */
export interface SynthTables {
  /** Spacing of the lattice of slow fields, metres. */
  readonly latticeM: number;
  readonly perm: Uint8Array;
  readonly gradX: Float64Array;
  readonly gradY: Float64Array;
  readonly channels: Float64Array;
  readonly warpM: number;
  readonly hasCoast: boolean;
  /** cx, cy, tangent x, y, inland normal x, y, curvature, roughness, 1/shore ramp, finest octave's reach. */
  readonly coast: Float64Array;
  readonly lowlandRiseM: number;
  readonly invLowlandScale: number;
  readonly hillsM: number;
  /** Gain from the hills noise to the hill shape. */
  readonly hillsGain: number;
  readonly segs: Float64Array;
  /** Per range: seg0, seg1. */
  readonly rangeSegs: Int32Array;
  /** Per range: minX, minY, maxX, maxY (culling box), total length, crest, half width. */
  readonly rangeData: Float64Array;
  readonly riverSegs: Int32Array;
  /** Per river: minX, minY, maxX, maxY (box of the course), mouth floor, gradient, floor half width. */
  readonly riverData: Float64Array;
  /** Per summit: x, y, relief, radius. */
  readonly summitData: Float64Array;
  readonly nRanges: number;
  readonly nRivers: number;
  readonly nSummits: number;
}

/** mulberry32: a small, well-mixed 32-bit PRNG; deterministic for a given seed. */
function makeRng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function checkFinite(where: string, v: number, positive = false): void {
  if (!Number.isFinite(v) || (positive && !(v > 0))) {
    throw new InputError(where, String(v), positive ? 'a positive finite number' : 'a finite number');
  }
}

function checkPolyline(where: string, pts: readonly (readonly [number, number])[]): void {
  if (!Array.isArray(pts) || pts.length < 2) {
    throw new InputError(
      where,
      `${Array.isArray(pts) ? pts.length : typeof pts} vertices`,
      'at least 2 vertices',
    );
  }
  pts.forEach((p, i) => {
    if (!Array.isArray(p) || p.length !== 2 || !Number.isFinite(p[0]) || !Number.isFinite(p[1])) {
      throw new InputError(`${where}[${i}]`, JSON.stringify(p), '[xM, yM] with finite numbers');
    }
  });
}

/** Build the sampling tables of a layout (validated; bad fields raise InputError naming the field). */
export function createSynthWorld(layout: SynthLayout): SynthWorld {
  if (!Number.isSafeInteger(layout.seed)) {
    throw new InputError('synthetic terrain: seed', String(layout.seed), 'a whole number');
  }
  checkFinite('synthetic terrain: centreLon', layout.centreLon);
  checkFinite('synthetic terrain: centreLat', layout.centreLat);
  if (Math.abs(layout.centreLat) > 80) {
    throw new InputError('synthetic terrain: centreLat', String(layout.centreLat), 'a latitude within ±80°');
  }
  checkFinite('synthetic terrain: warpM', layout.warpM);
  checkFinite('synthetic terrain: warpScaleM', layout.warpScaleM, true);
  checkFinite('synthetic terrain: lowlandRiseM', layout.lowlandRiseM);
  checkFinite('synthetic terrain: lowlandScaleM', layout.lowlandScaleM, true);
  checkFinite('synthetic terrain: hillsM', layout.hillsM);
  checkFinite('synthetic terrain: hillScaleM', layout.hillScaleM, true);
  checkFinite('synthetic terrain: ridgeScaleM', layout.ridgeScaleM, true);
  for (const key of ['ranges', 'rivers', 'summits'] as const) {
    if (!Array.isArray(layout[key])) {
      throw new InputError(`synthetic terrain: ${key}`, typeof layout[key], 'an array (possibly empty)');
    }
  }

  // Seed mixing: low and high 32-bit halves both matter.
  const lo = layout.seed >>> 0;
  const hi = Math.floor(layout.seed / 4294967296) >>> 0;
  const rng = makeRng(lo ^ Math.imul(hi ^ 0x9e3779b9, 0x85ebca6b));

  const perm = new Uint8Array(513);
  for (let i = 0; i < 256; i++) perm[i] = i;
  for (let i = 255; i > 0; i--) {
    const j = Math.floor(rng() * (i + 1));
    const t = perm[i];
    perm[i] = perm[j];
    perm[j] = t;
  }
  for (let i = 256; i < 513; i++) perm[i] = perm[i - 256];
  const gradX = new Float64Array(256);
  const gradY = new Float64Array(256);
  for (let i = 0; i < 256; i++) {
    const a = rng() * 2 * Math.PI;
    gradX[i] = Math.cos(a);
    gradY[i] = Math.sin(a);
  }

  const channels = new Float64Array(N_CHANNELS * CH_STRIDE);
  const setChannels = (ch0: number, n: number, scaleM: number, lacunarity: number, gain: number): void => {
    let inv = 1 / scaleM;
    let w = 1;
    let wSum = 0;
    for (let k = 0; k < n; k++) wSum += Math.pow(gain, k);
    for (let k = 0; k < n; k++) {
      const a = rng() * 2 * Math.PI;
      const o = (ch0 + k) * CH_STRIDE;
      channels[o] = Math.cos(a);
      channels[o + 1] = Math.sin(a);
      channels[o + 2] = inv;
      channels[o + 3] = rng() * 256;
      channels[o + 4] = rng() * 256;
      channels[o + 5] = w / wSum;
      inv *= lacunarity;
      w *= gain;
    }
  };
  setChannels(CH_WARP_X, 3, layout.warpScaleM, WARP_LACUNARITY, 0.32);
  setChannels(CH_WARP_Y, 3, layout.warpScaleM, WARP_LACUNARITY, 0.32);
  setChannels(CH_COAST, 4, layout.coast ? layout.coast.roughnessScaleM : 1e5, COAST_LACUNARITY, 0.5);
  setChannels(CH_HILLS, 3, layout.hillScaleM, 2.2, 0.5);
  setChannels(CH_RIDGE, 4, layout.ridgeScaleM, 2.3, 0.45);
  setChannels(CH_RANGE_MOD, 2, RANGE_MOD_SCALE_M, RANGE_MOD_LACUNARITY, 0.45);

  const coast = new Float64Array(10);
  const c = layout.coast;
  if (c) {
    checkFinite('synthetic terrain: coast.xM', c.xM);
    checkFinite('synthetic terrain: coast.yM', c.yM);
    checkFinite('synthetic terrain: coast.inlandAzimuthDeg', c.inlandAzimuthDeg);
    checkFinite('synthetic terrain: coast.curvaturePerM', c.curvaturePerM);
    checkFinite('synthetic terrain: coast.roughnessM', c.roughnessM);
    checkFinite('synthetic terrain: coast.roughnessScaleM', c.roughnessScaleM, true);
    checkFinite('synthetic terrain: coast.shoreRampM', c.shoreRampM, true);
    const az = c.inlandAzimuthDeg * DEG_TO_RAD;
    const nx = Math.sin(az);
    const ny = Math.cos(az);
    // reach of the finest coastline octave (evaluated per cell, see heightKernel)
    const reach = Math.abs(c.roughnessM) * channels[(CH_COAST + 3) * CH_STRIDE + 5] * NOISE_BOUND;
    coast.set([c.xM, c.yM, ny, -nx, nx, ny, c.curvaturePerM, c.roughnessM, 1 / c.shoreRampM, reach]);
  }

  let nSegs = 0;
  for (const r of layout.ranges) nSegs += r.axisM.length - 1;
  for (const r of layout.rivers) nSegs += r.courseM.length - 1;
  const segs = new Float64Array(Math.max(1, nSegs) * SEG_STRIDE);
  let segIdx = 0;
  const addPolyline = (
    pts: readonly (readonly [number, number])[],
    margin: number,
    box: Float64Array,
    bo: number,
  ) => {
    let cum = 0;
    let minX = Infinity;
    let minY = Infinity;
    let maxX = -Infinity;
    let maxY = -Infinity;
    const first = segIdx;
    for (let i = 0; i + 1 < pts.length; i++) {
      const [x0, y0] = pts[i];
      const [x1, y1] = pts[i + 1];
      const dx = x1 - x0;
      const dy = y1 - y0;
      const len2 = dx * dx + dy * dy;
      const len = Math.sqrt(len2);
      const o = segIdx * SEG_STRIDE;
      segs[o] = x0;
      segs[o + 1] = y0;
      segs[o + 2] = dx;
      segs[o + 3] = dy;
      segs[o + 4] = len2 > 0 ? 1 / len2 : 0;
      segs[o + 5] = len;
      segs[o + 6] = cum;
      cum += len;
      segIdx++;
      minX = Math.min(minX, x0, x1);
      minY = Math.min(minY, y0, y1);
      maxX = Math.max(maxX, x0, x1);
      maxY = Math.max(maxY, y0, y1);
    }
    box[bo] = minX - margin;
    box[bo + 1] = minY - margin;
    box[bo + 2] = maxX + margin;
    box[bo + 3] = maxY + margin;
    return { first, end: segIdx, length: cum };
  };

  const nRanges = layout.ranges.length;
  const rangeSegs = new Int32Array(Math.max(1, nRanges) * 2);
  const rangeData = new Float64Array(Math.max(1, nRanges) * 7);
  layout.ranges.forEach((r, i) => {
    const where = `synthetic terrain: ranges[${i}]`;
    checkPolyline(`${where}.axisM`, r.axisM);
    checkFinite(`${where}.crestM`, r.crestM);
    checkFinite(`${where}.halfWidthM`, r.halfWidthM, true);
    const pl = addPolyline(r.axisM, r.halfWidthM * (1 + RANGE_WIDTH_MOD * NOISE_BOUND), rangeData, i * 7);
    if (!(pl.length > 0))
      throw new InputError(`${where}.axisM`, 'an axis of zero length', 'distinct vertices');
    rangeSegs[i * 2] = pl.first;
    rangeSegs[i * 2 + 1] = pl.end;
    rangeData[i * 7 + 4] = pl.length;
    rangeData[i * 7 + 5] = r.crestM;
    rangeData[i * 7 + 6] = r.halfWidthM;
  });

  const nRivers = layout.rivers.length;
  const riverSegs = new Int32Array(Math.max(1, nRivers) * 2);
  const riverData = new Float64Array(Math.max(1, nRivers) * 7);
  layout.rivers.forEach((r, i) => {
    const where = `synthetic terrain: rivers[${i}]`;
    checkPolyline(`${where}.courseM`, r.courseM);
    checkFinite(`${where}.mouthFloorM`, r.mouthFloorM);
    checkFinite(`${where}.floorGradient`, r.floorGradient);
    checkFinite(`${where}.floorHalfWidthM`, r.floorHalfWidthM);
    if (!(r.floorGradient >= 0)) {
      throw new InputError(
        `${where}.floorGradient`,
        String(r.floorGradient),
        'a rise ≥ 0 from mouth to source',
      );
    }
    if (!(r.floorHalfWidthM >= 0)) {
      throw new InputError(`${where}.floorHalfWidthM`, String(r.floorHalfWidthM), 'a width ≥ 0 m');
    }
    const pl = addPolyline(r.courseM, 0, riverData, i * 7);
    riverSegs[i * 2] = pl.first;
    riverSegs[i * 2 + 1] = pl.end;
    riverData[i * 7 + 4] = r.mouthFloorM;
    riverData[i * 7 + 5] = r.floorGradient;
    riverData[i * 7 + 6] = r.floorHalfWidthM;
  });

  const nSummits = layout.summits.length;
  const summitData = new Float64Array(Math.max(1, nSummits) * 4);
  layout.summits.forEach((s, i) => {
    const where = `synthetic terrain: summits[${i}]`;
    checkFinite(`${where}.xM`, s.xM);
    checkFinite(`${where}.yM`, s.yM);
    checkFinite(`${where}.reliefM`, s.reliefM);
    checkFinite(`${where}.radiusM`, s.radiusM, true);
    summitData.set([s.xM, s.yM, s.reliefM, s.radiusM], i * 4);
  });

  // The lattice must resolve the finest octave of the noise it carries.
  const coastFinestM = c ? c.roughnessScaleM / COAST_LACUNARITY ** 2 : Infinity;
  const warpFinestM = layout.warpScaleM / WARP_LACUNARITY ** 2;
  const finestM = Math.min(coastFinestM, warpFinestM, RANGE_MOD_SCALE_M / RANGE_MOD_LACUNARITY);
  let latticeM = LATTICE_MAX_M;
  while (latticeM * LATTICE_NODES_PER_WAVELENGTH > finestM && latticeM > 1) latticeM /= 2;

  const tables: SynthTables = {
    latticeM,
    perm,
    gradX,
    gradY,
    channels,
    warpM: layout.warpM,
    hasCoast: c !== null,
    coast,
    lowlandRiseM: layout.lowlandRiseM,
    invLowlandScale: 1 / layout.lowlandScaleM,
    hillsM: layout.hillsM,
    hillsGain: 2.0,
    segs,
    rangeSegs,
    rangeData,
    riverSegs,
    riverData,
    summitData,
    nRanges,
    nRivers,
    nSummits,
  };
  return { seed: layout.seed, layout, tables };
}

/** 2-D gradient noise (quintic fade) at continuous lattice coordinates; in [−√2/2, √2/2]. */
function gradNoise(perm: Uint8Array, gx: Float64Array, gy: Float64Array, x: number, y: number): number {
  const fx = Math.floor(x);
  const fy = Math.floor(y);
  const tx = x - fx;
  const ty = y - fy;
  const ix = fx & 255;
  const iy = fy & 255;
  const a = perm[ix] + iy;
  const b = perm[ix + 1] + iy;
  const h00 = perm[a];
  const h01 = perm[a + 1];
  const h10 = perm[b];
  const h11 = perm[b + 1];
  const tx1 = tx - 1;
  const ty1 = ty - 1;
  const n00 = gx[h00] * tx + gy[h00] * ty;
  const n10 = gx[h10] * tx1 + gy[h10] * ty;
  const n01 = gx[h01] * tx + gy[h01] * ty1;
  const n11 = gx[h11] * tx1 + gy[h11] * ty1;
  const u = tx * tx * tx * (tx * (tx * 6 - 15) + 10);
  const v = ty * ty * ty * (ty * (ty * 6 - 15) + 10);
  const nx0 = n00 + u * (n10 - n00);
  const nx1 = n01 + u * (n11 - n01);
  return nx0 + v * (nx1 - nx0);
}

/**
 * One octave of rotated, offset, scaled gradient noise from channel k at (x, y), times the channel's
 * weight. (The per-cell kernel writes the same arithmetic out inline.)
 */
function octave(
  ch: Float64Array,
  perm: Uint8Array,
  gx: Float64Array,
  gy: Float64Array,
  k: number,
  x: number,
  y: number,
): number {
  const o = k * CH_STRIDE;
  const cs = ch[o];
  const sn = ch[o + 1];
  const inv = ch[o + 2];
  const u = (x * cs - y * sn) * inv + ch[o + 3];
  const v = (x * sn + y * cs) * inv + ch[o + 4];
  return ch[o + 5] * gradNoise(perm, gx, gy, u, v);
}

/** Weighted sum of `n` octaves from channel `ch0` at (x, y); in [−√2/2, √2/2] (weights sum to 1). */
function fbm(t: SynthTables, ch0: number, n: number, x: number, y: number): number {
  let sum = 0;
  for (let k = ch0; k < ch0 + n; k++) sum += octave(t.channels, t.perm, t.gradX, t.gradY, k, x, y);
  return sum;
}

/*
 * Slow fields on a lattice. The warp displacement, the three broadest octaves of the coastline noise,
 * the lowland rise and the range modulation vary over ten kilometres and more; they are evaluated
 * exactly at the nodes of a fixed lattice of `latticeM` spacing (1 km, or finer for small layouts) in
 * the local plane and interpolated bilinearly in between. The lattice is part of the definition of the
 * height function (not a cache of it): every path — single points and any tile — interpolates the same
 * node values with the same arithmetic, so results are identical and continuous. This takes 11 noise
 * octaves and an exp out of the per-cell work.
 */
/** Largest lattice spacing; finer (halved) when a layout's slow noise has small wavelengths. */
const LATTICE_MAX_M = 1000;
/** Lattice nodes per finest wavelength of the noise on the lattice. */
const LATTICE_NODES_PER_WAVELENGTH = 8;
const NODE_FIELDS = 5;

/**
 * Slow fields at lattice node (i, j) into nodes[o .. o + 4]: warp x, warp y, broad coastline noise,
 * the lowland rise factor 1 − exp(−inland / lowlandScale) (0 at the coast, 1 far inland), and the
 * range modulation noise.
 */
function computeNode(t: SynthTables, i: number, j: number, nodes: Float64Array, o: number): void {
  const x = i * t.latticeM;
  const y = j * t.latticeM;
  const dx = t.warpM * fbm(t, CH_WARP_X, 3, x, y);
  const dy = t.warpM * fbm(t, CH_WARP_Y, 3, x, y);
  nodes[o] = dx;
  nodes[o + 1] = dy;
  if (t.hasCoast) {
    const coastLow = fbm(t, CH_COAST, 3, x + dx, y + dy);
    const inland = coastInland(t.coast, x + dx, y + dy, coastLow);
    nodes[o + 2] = coastLow;
    nodes[o + 3] = inland > 0 ? 1 - Math.exp(-inland * t.invLowlandScale) : 0;
  } else {
    nodes[o + 2] = 0;
    nodes[o + 3] = 1;
  }
  nodes[o + 4] = fbm(t, CH_RANGE_MOD, 2, x + dx, y + dy);
}

/** Inland value of the coast at warped (wx, wy) with the broad coastline noise (finest octave aside). */
function coastInland(c: Float64Array, wx: number, wy: number, coastLow: number): number {
  const rx = wx - c[0];
  const ry = wy - c[1];
  const along = rx * c[2] + ry * c[3];
  return rx * c[4] + ry * c[5] + 0.5 * c[6] * along * along + c[7] * coastLow;
}

/** Per-cell octave values (unweighted), by channel. */
const NV = new Float64Array(N_CHANNELS);

/**
 * Terrain height (m above the sea surface) at (xM, yM) metres east / north of the world's local origin.
 * Exactly 0 over the sea; continuous everywhere; in [0, 3000). Given at Float32 precision: the very
 * value a fill stores for a pixel centred there. For many points use `fillGeographic` or
 * `fillProjected`, which share the lattice work between cells.
 */
export function synthHeightM(xM: number, yM: number, world: SynthWorld): number {
  const t = world.tables;
  const i = Math.floor(xM / t.latticeM);
  const j = Math.floor(yM / t.latticeM);
  const cache = pointCache;
  if (cache.tables !== t || cache.i !== i || cache.j !== j) {
    computeNode(t, i, j, cache.nodes, 0);
    computeNode(t, i + 1, j, cache.nodes, NODE_FIELDS);
    computeNode(t, i, j + 1, cache.nodes, 2 * NODE_FIELDS);
    computeNode(t, i + 1, j + 1, cache.nodes, 3 * NODE_FIELDS);
    cache.tables = t;
    cache.i = i;
    cache.j = j;
  }
  cache.xs[0] = xM;
  cache.fxs[0] = xM / t.latticeM - i;
  heightRow(
    t,
    cache.nodes,
    2 * NODE_FIELDS,
    cache.offsets,
    cache.xs,
    cache.fxs,
    yM,
    yM / t.latticeM - j,
    cache.out,
    0,
    1,
  );
  return cache.out[0];
}

/**
 * The four nodes of the last lattice cell a single point was asked in (neighbouring queries reuse
 * them), and one-cell arguments for heightRow.
 */
const pointCache = {
  tables: null as SynthTables | null,
  i: 0,
  j: 0,
  nodes: new Float64Array(4 * NODE_FIELDS),
  offsets: new Int32Array(1),
  xs: new Float64Array(1),
  fxs: new Float64Array(1),
  out: new Float32Array(1),
};

/**
 * The height function proper, for `count` cells of one row at y = yM: cell k lies at x = xs[k], in the
 * lattice cell whose south-west node is at nodes[offsets[k]] (east neighbour + NODE_FIELDS, north
 * neighbour + strideJ), at fractions (fxs[k], fy) inside it; heights go to out[outStart + k].
 * Written out in one piece (no calls but Math) for speed: a double passed to or returned from a call
 * that V8 does not inline is boxed, a heap allocation per cell.
 */
function heightRow(
  t: SynthTables,
  nodes: Float64Array,
  strideJ: number,
  offsets: Int32Array,
  xs: Float64Array,
  fxs: Float64Array,
  yM: number,
  fy: number,
  out: Float32Array,
  outStart: number,
  count: number,
): void {
  const ch = t.channels;
  const perm = t.perm;
  const gx = t.gradX;
  const gy = t.gradY;
  const segs = t.segs;
  const rd = t.rangeData;
  const sd = t.summitData;
  const vd = t.riverData;
  cells: for (let cell = 0; cell < count; cell++) {
    const xM = xs[cell];
    const fx = fxs[cell];
    const o00 = offsets[cell];
    const o10 = o00 + NODE_FIELDS;
    const o01 = o00 + strideJ;
    const o11 = o01 + NODE_FIELDS;

    // Domain warp (bilinear between lattice nodes): every feature but the summits is laid out in
    // warped coordinates.
    let s = nodes[o00] + fx * (nodes[o10] - nodes[o00]);
    let n = nodes[o01] + fx * (nodes[o11] - nodes[o01]);
    const wx = xM + (s + fy * (n - s));
    s = nodes[o00 + 1] + fx * (nodes[o10 + 1] - nodes[o00 + 1]);
    n = nodes[o01 + 1] + fx * (nodes[o11 + 1] - nodes[o01 + 1]);
    const wy = yM + (s + fy * (n - s));

    // Coast: a signed inland distance-like value; sea where it is not positive. The finest coastline
    // octave is evaluated here, fading out away from the shore where it could not change the sign.
    let shore = 1;
    if (t.hasCoast) {
      const c = t.coast;
      s = nodes[o00 + 2] + fx * (nodes[o10 + 2] - nodes[o00 + 2]);
      n = nodes[o01 + 2] + fx * (nodes[o11 + 2] - nodes[o01 + 2]);
      const coastLow = s + fy * (n - s);
      // (same arithmetic as coastInland, written out)
      const rx = wx - c[0];
      const ry = wy - c[1];
      const along = rx * c[2] + ry * c[3];
      let inland = rx * c[4] + ry * c[5] + 0.5 * c[6] * along * along + c[7] * coastLow;
      const reach = c[9];
      const a = inland < 0 ? -inland : inland;
      if (a < 2 * reach) {
        let fade = 1;
        if (a > reach) {
          const e = a / reach - 1;
          fade = 1 - e * e * (3 - 2 * e);
        }
        // one octave of gradient noise, written out (see gradNoise) so that no double crosses a call
        const o = (CH_COAST + 3) * CH_STRIDE;
        const u = (wx * ch[o] - wy * ch[o + 1]) * ch[o + 2] + ch[o + 3];
        const v = (wx * ch[o + 1] + wy * ch[o]) * ch[o + 2] + ch[o + 4];
        const fu = Math.floor(u);
        const fv = Math.floor(v);
        const tx = u - fu;
        const ty = v - fv;
        const pa = perm[fu & 255] + (fv & 255);
        const pb = perm[(fu & 255) + 1] + (fv & 255);
        const h00 = perm[pa];
        const h01 = perm[pa + 1];
        const h10 = perm[pb];
        const h11 = perm[pb + 1];
        const n00 = gx[h00] * tx + gy[h00] * ty;
        const n10 = gx[h10] * (tx - 1) + gy[h10] * ty;
        const n01 = gx[h01] * tx + gy[h01] * (ty - 1);
        const n11 = gx[h11] * (tx - 1) + gy[h11] * (ty - 1);
        const fu5 = tx * tx * tx * (tx * (tx * 6 - 15) + 10);
        const fv5 = ty * ty * ty * (ty * (ty * 6 - 15) + 10);
        const nx0 = n00 + fu5 * (n10 - n00);
        const nx1 = n01 + fu5 * (n11 - n01);
        inland += c[7] * fade * ch[o + 5] * (nx0 + fv5 * (nx1 - nx0));
      }
      if (inland <= 0) {
        out[outStart + cell] = 0;
        continue cells;
      }
      const e = inland * c[8];
      if (e < 1) shore = e * e * (3 - 2 * e);
    }

    // Lowland plain rising inland, rolling hills growing with it.
    s = nodes[o00 + 3] + fx * (nodes[o10 + 3] - nodes[o00 + 3]);
    n = nodes[o01 + 3] + fx * (nodes[o11 + 3] - nodes[o01 + 3]);
    const rise = s + fy * (n - s);
    let h = t.lowlandRiseM * rise;

    // Mountain ranges: the highest envelope wins (sharpened by ridged noise below). A broad noise widens
    // and narrows the ranges and raises and lowers their crests.
    s = nodes[o00 + 4] + fx * (nodes[o10 + 4] - nodes[o00 + 4]);
    n = nodes[o01 + 4] + fx * (nodes[o11 + 4] - nodes[o01 + 4]);
    const rangeMod = s + fy * (n - s);
    const widthFactor = 1 + RANGE_WIDTH_MOD * rangeMod;
    let env = 0;
    for (let i = 0; i < t.nRanges; i++) {
      const o = i * 7;
      if (wx < rd[o] || wy < rd[o + 1] || wx > rd[o + 2] || wy > rd[o + 3]) continue;
      // nearest point of the axis
      let best = Infinity;
      let alongM = 0;
      for (let g = t.rangeSegs[i * 2], g1 = t.rangeSegs[i * 2 + 1]; g < g1; g++) {
        const so = g * SEG_STRIDE;
        const px = wx - segs[so];
        const py = wy - segs[so + 1];
        const dx = segs[so + 2];
        const dy = segs[so + 3];
        let f = (px * dx + py * dy) * segs[so + 4];
        if (f < 0) f = 0;
        else if (f > 1) f = 1;
        const ex = px - f * dx;
        const ey = py - f * dy;
        const d2 = ex * ex + ey * ey;
        if (d2 < best) {
          best = d2;
          alongM = segs[so + 6] + f * segs[so + 5];
        }
      }
      const hw = rd[o + 6] * widthFactor;
      if (best >= hw * hw) continue;
      const q = Math.sqrt(best) / hw;
      const u = alongM / rd[o + 4];
      const alongProfile = Math.sqrt(4 * u * (1 - u));
      const q1 = 1 - q;
      const q2 = 1 - q * q;
      const e = rd[o + 5] * alongProfile * (0.55 * q1 * Math.sqrt(q1) + 0.45 * q2 * q2);
      if (e > env) env = e;
    }

    // Per-cell noise: the hills' 3 octaves, and the ridges' 4 (contiguous channels) inside a range.
    // Unweighted octave values go to NV; the gradient noise is written out (see gradNoise) so that no
    // double crosses a call. These small-scale noises take only a quarter of the warp: the full warp
    // would stretch them into streaks where it shears.
    const lx = xM + LOCAL_WARP * (wx - xM);
    const ly = yM + LOCAL_WARP * (wy - yM);
    const kEnd = env > 0 ? CH_RIDGE + 4 : CH_HILLS + 3;
    for (let k = CH_HILLS; k < kEnd; k++) {
      const o = k * CH_STRIDE;
      const u = (lx * ch[o] - ly * ch[o + 1]) * ch[o + 2] + ch[o + 3];
      const v = (lx * ch[o + 1] + ly * ch[o]) * ch[o + 2] + ch[o + 4];
      const fu = Math.floor(u);
      const fv = Math.floor(v);
      const tx = u - fu;
      const ty = v - fv;
      const pa = perm[fu & 255] + (fv & 255);
      const pb = perm[(fu & 255) + 1] + (fv & 255);
      const h00 = perm[pa];
      const h01 = perm[pa + 1];
      const h10 = perm[pb];
      const h11 = perm[pb + 1];
      const n00 = gx[h00] * tx + gy[h00] * ty;
      const n10 = gx[h10] * (tx - 1) + gy[h10] * ty;
      const n01 = gx[h01] * tx + gy[h01] * (ty - 1);
      const n11 = gx[h11] * (tx - 1) + gy[h11] * (ty - 1);
      const fu5 = tx * tx * tx * (tx * (tx * 6 - 15) + 10);
      const fv5 = ty * ty * ty * (ty * (ty * 6 - 15) + 10);
      const nx0 = n00 + fu5 * (n10 - n00);
      const nx1 = n01 + fu5 * (n11 - n01);
      NV[k] = nx0 + fv5 * (nx1 - nx0);
    }
    const hillNoise =
      ch[CH_HILLS * CH_STRIDE + 5] * NV[CH_HILLS] +
      ch[(CH_HILLS + 1) * CH_STRIDE + 5] * NV[CH_HILLS + 1] +
      ch[(CH_HILLS + 2) * CH_STRIDE + 5] * NV[CH_HILLS + 2];
    // a smooth positive part of 0.5 + gain·noise (no flat floors where the noise dips), squared
    const hv = 0.5 + t.hillsGain * hillNoise;
    const hills = 0.5 * (hv + Math.sqrt(hv * hv + 0.04));
    h += t.hillsM * (0.1 + 0.9 * rise) * hills * hills;

    if (env > 0) {
      let ridge = 0;
      // ridged multifractal: each octave is weighted by the one before, so detail gathers on the crests
      // and the valleys between stay smoother
      let prev = 1;
      for (let k = CH_RIDGE; k < CH_RIDGE + 4; k++) {
        let r = 1 - Math.abs(1.4 * NV[k]);
        if (r < 0) r = 0;
        r *= r * prev;
        ridge += ch[k * CH_STRIDE + 5] * r;
        prev = r * 2 > 1 ? 1 : r * 2;
      }
      let crest = 0.9 + 1.4 * rangeMod;
      if (crest < 0.35) crest = 0.35;
      else if (crest > 1.3) crest = 1.3;
      h += env * crest * (0.25 + 0.95 * ridge);
    }

    // Isolated summits, in unwarped coordinates so each top stays where the layout puts it.
    for (let i = 0; i < t.nSummits; i++) {
      const o = i * 4;
      const dx = xM - sd[o];
      const dy = yM - sd[o + 1];
      const r = sd[o + 3];
      const d2 = dx * dx + dy * dy;
      if (d2 >= r * r) continue;
      const q1 = 1 - Math.sqrt(d2) / r;
      h += sd[o + 2] * q1 * q1;
    }

    // River valleys: pull the terrain down to the valley floor, with sides as wide as the cut is deep;
    // the hills' noise makes the valleys wider and narrower along their course.
    let valleyWidth = 1 + 2 * hillNoise;
    if (valleyWidth < VALLEY_WIDTH_MIN) valleyWidth = VALLEY_WIDTH_MIN;
    else if (valleyWidth > VALLEY_WIDTH_MAX) valleyWidth = VALLEY_WIDTH_MAX;
    for (let i = 0; i < t.nRivers; i++) {
      const o = i * 7;
      // the valley reaches at most this far from the course at this height (the floor is lowest at the mouth)
      const reachMax =
        VALLEY_WIDTH_MAX * (vd[o + 6] + VALLEY_SIDE_MIN_M + VALLEY_SIDE_RUN_PER_M * (h - vd[o + 4]));
      if (
        wx < vd[o] - reachMax ||
        wy < vd[o + 1] - reachMax ||
        wx > vd[o + 2] + reachMax ||
        wy > vd[o + 3] + reachMax
      ) {
        continue;
      }
      let best = Infinity;
      let alongM = 0;
      for (let g = t.riverSegs[i * 2], g1 = t.riverSegs[i * 2 + 1]; g < g1; g++) {
        const so = g * SEG_STRIDE;
        const px = wx - segs[so];
        const py = wy - segs[so + 1];
        const dx = segs[so + 2];
        const dy = segs[so + 3];
        let f = (px * dx + py * dy) * segs[so + 4];
        if (f < 0) f = 0;
        else if (f > 1) f = 1;
        const ex = px - f * dx;
        const ey = py - f * dy;
        const d2 = ex * ex + ey * ey;
        if (d2 < best) {
          best = d2;
          alongM = segs[so + 6] + f * segs[so + 5];
        }
      }
      const floorM = vd[o + 4] + vd[o + 5] * alongM;
      const depth = h - floorM;
      if (depth <= 0) continue;
      const floorHalfWidthM = valleyWidth * vd[o + 6];
      const side = valleyWidth * (VALLEY_SIDE_MIN_M + VALLEY_SIDE_RUN_PER_M * depth);
      const reach = floorHalfWidthM + side;
      if (best >= reach * reach) continue;
      const e = (Math.sqrt(best) - floorHalfWidthM) / side;
      h = e <= 0 ? floorM : floorM + depth * e * e * (3 - 2 * e);
    }

    h *= shore;
    if (h < 0) h = 0;
    if (h > KNEE_START_M) h = KNEE_START_M + KNEE_SPAN_M * Math.tanh((h - KNEE_START_M) / KNEE_SPAN_M);
    out[outStart + cell] = h;
  }
}

function checkOut(fn: string, out: Float32Array, width: number, height: number): void {
  if (!Number.isInteger(width) || width < 1) {
    throw new InputError(`${fn}: width`, String(width), 'a positive whole number');
  }
  if (!Number.isInteger(height) || height < 1) {
    throw new InputError(`${fn}: height`, String(height), 'a positive whole number');
  }
  if (!(out instanceof Float32Array) || out.length !== width * height) {
    throw new InputError(
      `${fn}: out`,
      out instanceof Float32Array ? `a Float32Array of length ${out.length}` : 'not a Float32Array',
      `a Float32Array of length ${width * height} (width × height)`,
    );
  }
}

/** Metres per degree of latitude (on the sphere of EARTH_RADIUS_M). */
const M_PER_DEG_LAT = EARTH_RADIUS_M * DEG_TO_RAD;
function mPerDegLon(world: SynthWorld): number {
  return M_PER_DEG_LAT * Math.cos(world.layout.centreLat * DEG_TO_RAD);
}

/**
 * Pixel-centre coordinates are snapped to 1e-9° (≈ 0.1 mm) before mapping, so that two tiles whose
 * origins were computed differently still sample bit-identical positions where their pixels coincide.
 */
function snapDeg(v: number): number {
  return Math.round(v * 1e9) / 1e9;
}
/** Same for metric grids: 0.1 mm. */
function snapM(v: number): number {
  return Math.round(v * 1e4) / 1e4;
}

/** Local x (m east of the world's origin) of a longitude: equirectangular about the world's centre. */
export function localXM(lon: number, world: SynthWorld): number {
  return (snapDeg(lon) - world.layout.centreLon) * mPerDegLon(world);
}
/** Local y (m north of the world's origin) of a latitude. */
export function localYM(lat: number, world: SynthWorld): number {
  return (snapDeg(lat) - world.layout.centreLat) * M_PER_DEG_LAT;
}
/** Longitude of a local x (inverse of `localXM` up to the 1e-9° snap). */
export function lonOfLocalX(xM: number, world: SynthWorld): number {
  return world.layout.centreLon + xM / mPerDegLon(world);
}
/** Latitude of a local y. */
export function latOfLocalY(yM: number, world: SynthWorld): number {
  return world.layout.centreLat + yM / M_PER_DEG_LAT;
}

/** Height at a lon/lat, with the same mapping as `fillGeographic` (so it equals the filled pixel there). */
export function synthHeightAtLonLat(lon: number, lat: number, world: SynthWorld): number {
  return synthHeightM(localXM(lon, world), localYM(lat, world), world);
}

/**
 * Fill a grid whose pixel centres are at local coordinates xs[c] (columns) and ys[r] (rows):
 * out[r * width + c] = height. Computes the lattice block the grid touches, then runs the per-cell
 * kernel with no allocation inside the loop.
 */
function fillSeparable(out: Float32Array, xs: Float64Array, ys: Float64Array, world: SynthWorld): void {
  const t = world.tables;
  const latticeM = t.latticeM;
  const width = xs.length;
  const height = ys.length;
  const ci = new Int32Array(width);
  const cfx = new Float64Array(width);
  let i0 = Infinity;
  let i1 = -Infinity;
  for (let c = 0; c < width; c++) {
    const i = Math.floor(xs[c] / latticeM);
    ci[c] = i;
    cfx[c] = xs[c] / latticeM - i;
    if (i < i0) i0 = i;
    if (i > i1) i1 = i;
  }
  let j0 = Infinity;
  let j1 = -Infinity;
  for (let r = 0; r < height; r++) {
    const j = Math.floor(ys[r] / latticeM);
    if (j < j0) j0 = j;
    if (j > j1) j1 = j;
  }
  const ni = i1 - i0 + 2;
  const nj = j1 - j0 + 2;
  if (ni * nj > 4 * width * height + 4096) {
    // pixels much larger than the lattice: a block would be mostly unused; go point by point
    // (same values: the point path interpolates the same nodes)
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) out[r * width + c] = synthHeightM(xs[c], ys[r], world);
    }
    return;
  }
  const strideJ = ni * NODE_FIELDS;
  const nodes = new Float64Array(ni * nj * NODE_FIELDS);
  for (let jj = 0; jj < nj; jj++) {
    for (let ii = 0; ii < ni; ii++) computeNode(t, i0 + ii, j0 + jj, nodes, jj * strideJ + ii * NODE_FIELDS);
  }
  for (let c = 0; c < width; c++) ci[c] = (ci[c] - i0) * NODE_FIELDS;
  const offsets = new Int32Array(width);

  for (let r = 0; r < height; r++) {
    const yM = ys[r];
    const j = Math.floor(yM / latticeM);
    const rowNode = (j - j0) * strideJ;
    for (let c = 0; c < width; c++) offsets[c] = rowNode + ci[c];
    heightRow(t, nodes, strideJ, offsets, xs, cfx, yM, yM / latticeM - j, out, r * width, width);
  }
}

/**
 * Fill a north-up lon/lat grid: row 0 at the north, (originLon, originLat) the outer north-west corner
 * of pixel (0, 0) (pixel-is-area), pixel centre (c, r) at lon = originLon + (c + 0.5)·pixelDeg,
 * lat = originLat − (r + 0.5)·pixelDeg. `out[r * width + c]` receives the height in metres.
 */
export function fillGeographic(
  out: Float32Array,
  originLon: number,
  originLat: number,
  pixelDeg: number,
  width: number,
  height: number,
  world: SynthWorld,
): void {
  checkOut('fillGeographic', out, width, height);
  checkFinite('fillGeographic: originLon', originLon);
  checkFinite('fillGeographic: originLat', originLat);
  checkFinite('fillGeographic: pixelDeg', pixelDeg, true);
  const xs = new Float64Array(width);
  const ys = new Float64Array(height);
  for (let c = 0; c < width; c++) xs[c] = localXM(originLon + (c + 0.5) * pixelDeg, world);
  for (let r = 0; r < height; r++) ys[r] = localYM(originLat - (r + 0.5) * pixelDeg, world);
  fillSeparable(out, xs, ys, world);
}

/**
 * Fill a north-up metric grid of `pixelM` square pixels whose centre lies at (centreXM, centreYM) of the
 * local plane (default: the local origin). Pixel centre (c, r) is at
 * x = centreXM + (c + 0.5 − width/2)·pixelM, y = centreYM + (height/2 − r − 0.5)·pixelM.
 */
export function fillProjected(
  out: Float32Array,
  width: number,
  height: number,
  pixelM: number,
  world: SynthWorld,
  centreXM = 0,
  centreYM = 0,
): void {
  checkOut('fillProjected', out, width, height);
  checkFinite('fillProjected: pixelM', pixelM, true);
  checkFinite('fillProjected: centreXM', centreXM);
  checkFinite('fillProjected: centreYM', centreYM);
  const xs = new Float64Array(width);
  const ys = new Float64Array(height);
  for (let c = 0; c < width; c++) xs[c] = snapM(centreXM + (c + 0.5 - width / 2) * pixelM);
  for (let r = 0; r < height; r++) ys[r] = snapM(centreYM + (height / 2 - r - 0.5) * pixelM);
  fillSeparable(out, xs, ys, world);
}

const km = (x: number, y: number): readonly [number, number] => [x * 1000, y * 1000];

/** The demo region: 5° × 5° of open South Atlantic with no real land near it, so no real terrain is implied. */
export const DEMO_REGION = { west: -32, south: -44, east: -27, north: -39 } as const;

/**
 * The invented land of the demo region (local plane about the region centre, x east, y north; the
 * region spans about ±208 km east-west and ±278 km north-south). Sea on the west and south-west, a
 * ragged coast running north-west to south-east, lowlands, then the ranges inland. Names are invented.
 */
export const DEMO_LAYOUT: SynthLayout = {
  seed: 20_240_611,
  centreLon: (DEMO_REGION.west + DEMO_REGION.east) / 2,
  centreLat: (DEMO_REGION.south + DEMO_REGION.north) / 2,
  warpM: 45_000,
  warpScaleM: 110_000,
  coast: {
    xM: -40_000,
    yM: 0,
    inlandAzimuthDeg: 65,
    curvaturePerM: 1 / 800_000,
    roughnessM: 110_000,
    roughnessScaleM: 55_000,
    shoreRampM: 1500,
  },
  lowlandRiseM: 320,
  lowlandScaleM: 70_000,
  hillsM: 450,
  hillScaleM: 24_000,
  ridgeScaleM: 26_000,
  ranges: [
    {
      name: 'Karvessa Spine',
      axisM: [km(40, 260), km(75, 120), km(95, 0), km(150, -120), km(190, -200)],
      crestM: 2800,
      halfWidthM: 38_000,
    },
    {
      name: 'Ulbrith Fells',
      axisM: [km(-70, 175), km(-20, 200), km(30, 205)],
      crestM: 2200,
      halfWidthM: 22_000,
    },
    {
      name: 'Tsorren Scarps',
      axisM: [km(45, -100), km(75, -170), km(110, -240)],
      crestM: 1900,
      halfWidthM: 18_000,
    },
  ],
  rivers: [
    {
      name: 'Ossavel',
      courseM: [km(-105, 115), km(-60, 120), km(-10, 130), km(40, 150), km(62, 160)],
      mouthFloorM: 0,
      floorGradient: 0.004,
      floorHalfWidthM: 500,
    },
    {
      name: 'Quenthe',
      courseM: [km(-48, -5), km(0, 15), km(50, 30), km(88, 40), km(110, 60), km(160, 40)],
      mouthFloorM: 0,
      floorGradient: 0.003,
      floorHalfWidthM: 700,
    },
    {
      name: 'Drisselle',
      courseM: [km(-20, -62), km(30, -75), km(90, -110), km(120, -160), km(140, -220)],
      mouthFloorM: 0,
      floorGradient: 0.003,
      floorHalfWidthM: 600,
    },
    {
      name: 'Yelvaine',
      courseM: [km(70, -262), km(120, -255), km(170, -230)],
      mouthFloorM: 0,
      floorGradient: 0.004,
      floorHalfWidthM: 400,
    },
    {
      name: 'Pellaquin',
      courseM: [km(-165, 245), km(-110, 250), km(-50, 240), km(0, 260)],
      mouthFloorM: 0,
      floorGradient: 0.004,
      floorHalfWidthM: 400,
    },
  ],
  summits: [
    { name: 'Mount Azzoret', xM: -30_000, yM: 70_000, reliefM: 1700, radiusM: 16_000 },
    { name: 'Skellivar Dome', xM: 20_000, yM: -20_000, reliefM: 1300, radiusM: 13_000 },
    { name: 'Hyrrakel Peak', xM: 130_000, yM: 150_000, reliefM: 1500, radiusM: 12_000 },
  ],
};

/** The demo landscape. */
export const DEMO_WORLD: SynthWorld = createSynthWorld(DEMO_LAYOUT);

/** Scenarios of `testWorld`. */
export type TestScenario = 'valley' | 'summit' | 'coast';

/**
 * Layout of a small generated landscape for accuracy tests (a few tens of kilometres, features sized
 * for 10–30 m pixels), centred on the local origin.
 */
function testLayout(seed: number, scenario: TestScenario): SynthLayout {
  const common = {
    seed,
    centreLon: DEMO_LAYOUT.centreLon,
    centreLat: DEMO_LAYOUT.centreLat,
    warpM: 2500,
    warpScaleM: 24_000,
    lowlandScaleM: 8000,
    hillScaleM: 4500,
    ridgeScaleM: 5000,
  };
  switch (scenario) {
    case 'valley':
      // A north-south valley floor between two ridges ~4.5 km either side.
      return {
        ...common,
        coast: null,
        lowlandRiseM: 450,
        hillsM: 260,
        ranges: [
          {
            name: 'west wall',
            axisM: [km(-4.5, -30), km(-4.8, 0), km(-4.5, 30)],
            crestM: 1300,
            halfWidthM: 4000,
          },
          {
            name: 'east wall',
            axisM: [km(4.5, -30), km(4.8, 0), km(4.5, 30)],
            crestM: 1300,
            halfWidthM: 4000,
          },
        ],
        rivers: [
          {
            name: 'valley river',
            courseM: [km(0, -30), km(0, 30)],
            mouthFloorM: 150,
            floorGradient: 0.004,
            floorHalfWidthM: 150,
          },
        ],
        summits: [],
      };
    case 'summit':
      // A pointed summit on a short ridge above rolling hills.
      return {
        ...common,
        coast: null,
        lowlandRiseM: 300,
        hillsM: 300,
        ranges: [{ name: 'ridge', axisM: [km(-9, -7), km(0, 0), km(9, 7)], crestM: 700, halfWidthM: 3500 }],
        rivers: [],
        summits: [{ name: 'summit', xM: 0, yM: 0, reliefM: 1000, radiusM: 5000 }],
      };
    case 'coast':
      // Sea to the west, a shore running north-south through the origin, hills and a ridge inland.
      return {
        ...common,
        coast: {
          xM: 0,
          yM: 0,
          inlandAzimuthDeg: 90,
          curvaturePerM: 0,
          roughnessM: 5000,
          roughnessScaleM: 9000,
          shoreRampM: 400,
        },
        lowlandRiseM: 450,
        hillsM: 280,
        ranges: [
          { name: 'coast ridge', axisM: [km(7, -20), km(7.5, 0), km(7, 20)], crestM: 900, halfWidthM: 3500 },
        ],
        rivers: [],
        summits: [],
      };
  }
}

/**
 * Small generated DEMs for accuracy tests, in a local plane (use `fillProjected`, centred on the
 * antenna if wanted): an antenna position on the valley floor, on the summit (the highest point near the
 * summit's centre), or on the coast (just inland of the shoreline). Different seeds give different
 * terrain around the same arrangement.
 */
export function testWorld(
  seed: number,
  scenario: TestScenario,
): { world: SynthWorld; antenna: { xM: number; yM: number } } {
  if (scenario !== 'valley' && scenario !== 'summit' && scenario !== 'coast') {
    throw new InputError('testWorld: scenario', JSON.stringify(scenario), "'valley', 'summit' or 'coast'");
  }
  const world = createSynthWorld(testLayout(seed, scenario));
  const h = (x: number, y: number): number => synthHeightM(x, y, world);
  let ax = 0;
  let ay = 0;
  if (scenario === 'valley') {
    // lowest point across the valley on the east-west line through the origin
    let best = Infinity;
    for (let x = -2500; x <= 2500; x += 10) {
      const z = h(x, 0);
      if (z < best) {
        best = z;
        ax = x;
      }
    }
  } else if (scenario === 'summit') {
    // highest point within 1.5 km of the summit's centre: coarse grid, then two refinements
    let best = -Infinity;
    let cx = 0;
    let cy = 0;
    for (const [span, step] of [
      [1500, 50],
      [60, 5],
      [6, 0.5],
    ]) {
      const x0 = cx;
      const y0 = cy;
      for (let y = y0 - span; y <= y0 + span; y += step) {
        for (let x = x0 - span; x <= x0 + span; x += step) {
          if (x * x + y * y > 1500 * 1500) continue;
          const z = h(x, y);
          if (z > best) {
            best = z;
            cx = x;
            cy = y;
          }
        }
      }
    }
    ax = cx;
    ay = cy;
  } else {
    // walk east along y = 0 from 6 km out at sea to the first land, then 150 m further inland
    let x = -6000;
    while (x < 6000 && h(x, 0) === 0) x += 10;
    ax = x + 150;
  }
  return { world, antenna: { xM: ax, yM: ay } };
}
