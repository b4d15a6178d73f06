/**
 * Sensor models: from a catalog entry (a sensor type) to the detection range at each elevation angle.
 *
 * Detection range at the peak of the elevation pattern, for a target of radar cross-section σ:
 * - Reference form `{ referenceRangeNm, referenceRcsM2 }`. Primary: R(σ) = Rref·(σ/σref)^¼ (the radar equation's
 *   fourth-root law). Secondary: R = Rref whatever σ (a one-way link budget: the reply does not come from an echo).
 * - Physical form (primary only): the monostatic radar equation with one antenna for transmit and receive,
 *     R⁴ = Pt·G²·λ²·σ / ((4π)³·Smin),   Smin = k·T0·B·F · SNRreq · L,   B ≈ 1/τ, T0 = 290 K,
 *   with SNRreq from Albersheim's equation for the type's Pd, Pfa and number of pulses integrated
 *   non-coherently, F the noise figure and L the system losses. τ is the transmitted pulse length (with pulse
 *   compression, the long pulse: the SNR depends on the pulse energy Pt·τ). The gain is given in dBi, or from an
 *   aperture and efficiency, G = 4π·η·A/λ², so that a type whose frequency is changed keeps its antenna size and
 *   its gain follows the frequency.
 *
 * Elevation pattern g(ε): the normalised one-way power gain (1 at the peak). Both kinds scale range by √g(ε)
 * (a primary's two-way gain g² under the fourth root; a secondary's one-way gain under the square root).
 * - `cosec2 { startDeg, endDeg, beamwidthDeg? }`: the peak is at startDeg.
 *     below startDeg      g = 10^(−1.2·((startDeg − ε)/θ3)²)  (the usual Gaussian main-beam approximation: −3 dB at
 *                         half the half-power beamwidth θ3 from the peak). θ3 = beamwidthDeg, default
 *                         2·startDeg, which puts the beam's lower half-power point on the horizon (common practice
 *                         for tilting a surveillance beam); at most 1 at the peak, falling without floor below.
 *     startDeg … endDeg   g = sin²(startDeg)/sin²(ε): R·sin ε is constant, a constant-altitude envelope on a flat
 *                         earth.
 *     above endDeg        g = g(endDeg)·10^(−0.3·((ε − endDeg)/1°)²): a steep shoulder, −3 dB 1° past endDeg,
 *                         −12 dB at 2°, −27 dB at 3°.
 * - `table { deg, gainDb }`: degrees → dB, normalised so that the largest value is 0 dB, linearly interpolated in
 *   dB; below the first and above the last angle the end values hold.
 * `patternGain` is the pattern itself (exact, not tabulated); the cone of silence above maxElevationDeg is applied
 * by `detectionRangeM`, which returns 0 there.
 *
 * Hot path: `detectionRangeM` is called per cell and altitude. It reads √g from a table over elevation at
 * PATTERN_TABLE_STEP_DEG = 0.01° from −90° to just past the maximum elevation (at most 18 000 doubles), linearly
 * interpolated, with a node exactly at the pattern's peak (the corner where a cosec² pattern's slope jumps most).
 * Error of the interpolated √g against the exact pattern (h = the step in radians): on the cosec² curve about
 * h²/(4ε²) relative (< 1e−5 beyond 2°); at a corner between nodes at most Δ·h/4, Δ the jump of d ln√g/dε —
 * cosec² end: cot(endDeg)·h/4 (< 1e−4 for endDeg ≥ 25°); a table node whose dB slope changes by S dB/° and that is not a whole
 * number of steps from the peak: S × 0.029 % (table nodes on the 0.01° lattice from the peak cost nothing); most
 * in the steep Gaussian flank of a narrow beam (4.4e−4 for a 1° beam where g ≈ 1e−6). Measured over the catalog
 * and the test patterns wherever g > 1e−6: below 5e−4 (test/sensor.test.ts checks < 0.2 %). The peak range for σ
 * is cached (recomputed only when σ changes); nothing is allocated per call (about 10 ns a call on the
 * development machine). `detectionRangeM` does not apply the minimum range: callers compare the slant range
 * with `minRangeM`. ε must lie in [−π/2, π/2]; NaN gives NaN.
 */
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD, nmToM } from '../../shared/units.ts';

/** Speed of light in vacuum, m/s (exact, SI). */
export const SPEED_OF_LIGHT_M_S = 299_792_458;
/** Boltzmann constant, J/K (exact, SI 2019). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Standard reference noise temperature T0 = 290 K (IEEE noise-figure definition). */
export const T0_K = 290;
/** Minimum range when the catalog gives none: 0.5 NM (common practice). */
export const DEFAULT_MIN_RANGE_NM = 0.5;
/** Target RCS when neither the type nor the caller gives one: 2 m², a mid-size aircraft (common practice). */
export const DEFAULT_TARGET_RCS_M2 = 2;
/** Resolution of the elevation lookup table behind `detectionRangeM`. */
export const PATTERN_TABLE_STEP_DEG = 0.01;
/** The range of Albersheim's approximation as published (Proc. IEEE 69(7), 1981). */
export const ALBERSHEIM_LIMITS = { pdMin: 0.1, pdMax: 0.9, pfaMin: 1e-7, pfaMax: 1e-3, nMin: 1, nMax: 8096 };

/** Above a cosec² pattern's end angle: −3 dB at this many degrees past endDeg, then Gaussian. */
const UPPER_SHOULDER_HALF_POWER_DEG = 1;

export type ElevationPatternSpec =
  | {
      type: 'cosec2';
      startDeg: number;
      endDeg: number;
      /** Half-power beamwidth of the main beam below startDeg (default 2·startDeg: lower −3 dB on the horizon). */
      beamwidthDeg?: number;
    }
  | { type: 'table'; deg: number[]; gainDb: number[] };

export interface ReferenceDetectionSpec {
  referenceRangeNm: number;
  /** RCS at which the reference range holds; required for a primary, meaningless for a secondary. */
  referenceRcsM2?: number;
}

export interface RadarDetectionSpec {
  peakPowerKw: number;
  /** Antenna gain at the pattern peak; give this or `antenna`, not both. */
  antennaGainDbi?: number;
  /** Antenna aperture (m²) and aperture efficiency (0–1]: G = 4π·η·A/λ² at the type's frequency. */
  antenna?: { apertureM2: number; efficiency: number };
  /** Transmitted pulse length, µs; the noise bandwidth is taken as 1/τ. */
  pulseWidthUs: number;
  noiseFigureDb: number;
  /** System losses (transmit, receive, processing, scanning), dB. */
  lossesDb: number;
  pd: number;
  pfa: number;
  /** Pulses integrated non-coherently (default 1). */
  hitsIntegrated?: number;
}

export interface SensorTypeSpec {
  id: string;
  name: string;
  kind: 'primary' | 'secondary';
  frequencyMHz: number;
  cost: number;
  maxElevationDeg: number;
  instrumentedRangeNm: number;
  /** Minimum range, NM (default 0.5 NM, common practice). */
  minRangeNm?: number;
  /** Two-way loss in weather mode (primary only), dB; default 0. */
  weatherLossDb?: number;
  elevationPattern: ElevationPatternSpec;
  detection: ReferenceDetectionSpec | RadarDetectionSpec;
  /** Default target RCS for this type's coverage (primary only), m². */
  targetRcsM2?: number;
}

export interface SensorModel {
  readonly spec: SensorTypeSpec;
  readonly kind: 'primary' | 'secondary';
  readonly maxElevationRad: number;
  readonly instrumentedRangeM: number;
  readonly minRangeM: number;
  /** Default target RCS: the type's targetRcsM2, else its referenceRcsM2, else DEFAULT_TARGET_RCS_M2. */
  readonly targetRcsM2: number;
  /** Range factor in weather mode: 10^(−L/40) for a primary, 1 for a secondary. */
  readonly weatherFactor: number;
  /** Free-space detection range (m) at the pattern peak for RCS σ (primary; secondary ignores σ); weather = weather mode. */
  peakRangeM(rcsM2: number, weather?: boolean): number;
  /** Normalised one-way power gain g(ε) of the elevation pattern, 0…1 (1 at its peak); ε in radians. */
  patternGain(elevationRad: number): number;
  /** min(instrumented range, peakRange · √g(ε)); 0 above the maximum elevation (cone of silence). */
  detectionRangeM(elevationRad: number, rcsM2: number, weather?: boolean): number;
}

// ---------------------------------------------------------------------------------------------------------------
// Formulas

/** Wavelength (m) of a frequency in MHz. */
export function wavelengthM(frequencyMHz: number): number {
  return SPEED_OF_LIGHT_M_S / (frequencyMHz * 1e6);
}

/** Monostatic radar equation, same antenna for transmit and receive: R⁴ = Pt·G²·λ²·σ / ((4π)³·Smin). Metres. */
export function radarRangeM(p: {
  peakPowerW: number;
  gainLinear: number;
  wavelengthM: number;
  rcsM2: number;
  minSignalW: number;
}): number {
  for (const key of ['peakPowerW', 'gainLinear', 'wavelengthM', 'rcsM2', 'minSignalW'] as const) {
    const v = p[key];
    if (!(Number.isFinite(v) && v > 0)) {
      throw new InputError(`radarRangeM: ${key}`, show(v), 'a positive finite number');
    }
  }
  const fourPi = 4 * Math.PI;
  const r4 =
    (p.peakPowerW * p.gainLinear * p.gainLinear * p.wavelengthM * p.wavelengthM * p.rcsM2) /
    (fourPi * fourPi * fourPi * p.minSignalW);
  return Math.sqrt(Math.sqrt(r4));
}

/**
 * Albersheim's closed-form approximation of the single-pulse-equivalent SNR (dB) needed per pulse to reach
 * detection probability `pd` at false-alarm probability `pfa` after non-coherent integration of `n` pulses
 * (Albersheim, Proc. IEEE 69(7), 1981):
 *   A = ln(0.62/Pfa), B = ln(Pd/(1 − Pd)),
 *   SNR = −5·log10 n + (6.2 + 4.54/√(n + 0.44))·log10(A + 0.12·A·B + 1.7·B).
 * Valid (within about 0.2 dB) for 0.1 ≤ Pd ≤ 0.9, 1e−7 ≤ Pfa ≤ 1e−3, 1 ≤ n ≤ 8096; outside that → InputError.
 */
export function albersheimSnrDb(pd: number, pfa: number, n: number): number {
  const L = ALBERSHEIM_LIMITS;
  if (!(pd >= L.pdMin && pd <= L.pdMax)) {
    throw new InputError('albersheimSnrDb: pd', show(pd), albersheimExpected('pd'));
  }
  if (!(pfa >= L.pfaMin && pfa <= L.pfaMax)) {
    throw new InputError('albersheimSnrDb: pfa', show(pfa), albersheimExpected('pfa'));
  }
  if (!(n >= L.nMin && n <= L.nMax)) {
    throw new InputError('albersheimSnrDb: n', show(n), albersheimExpected('n'));
  }
  const a = Math.log(0.62 / pfa);
  const b = Math.log(pd / (1 - pd));
  return -5 * Math.log10(n) + (6.2 + 4.54 / Math.sqrt(n + 0.44)) * Math.log10(a + 0.12 * a * b + 1.7 * b);
}

function albersheimExpected(what: 'pd' | 'pfa' | 'n'): string {
  const L = ALBERSHEIM_LIMITS;
  const range =
    what === 'pd'
      ? `a probability of detection from ${L.pdMin} to ${L.pdMax}`
      : what === 'pfa'
        ? `a false-alarm probability from ${L.pfaMin} to ${L.pfaMax}`
        : `a number of pulses integrated from ${L.nMin} to ${L.nMax}`;
  return `${range} (the range of Albersheim's approximation)`;
}

/** Antenna power gain (linear) of an aperture: G = 4π·η·A/λ². */
export function gainFromAperture(apertureM2: number, efficiency: number, frequencyMHz: number): number {
  const lambda = wavelengthM(frequencyMHz);
  return (4 * Math.PI * efficiency * apertureM2) / (lambda * lambda);
}

/** Receiver noise power k·T0·B·F (W), T0 = 290 K, F from the noise figure in dB. */
export function noisePowerW(noiseFigureDb: number, bandwidthHz: number): number {
  return BOLTZMANN_J_PER_K * T0_K * bandwidthHz * Math.pow(10, noiseFigureDb / 10);
}

/** Range factor of a two-way loss L (dB) under the radar equation's fourth root: 10^(−L/40). */
export function weatherRangeFactor(lossDb: number): number {
  return Math.pow(10, -lossDb / 40);
}

// ---------------------------------------------------------------------------------------------------------------
// Validation helpers

function show(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === undefined) return 'nothing';
  if (typeof v === 'number' || typeof v === 'boolean' || v === null) return String(v);
  let s: string;
  try {
    s = JSON.stringify(v);
  } catch {
    s = String(v);
  }
  return s.length > 80 ? s.slice(0, 77) + '…' : s;
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** A finite number satisfying `ok`, else InputError at `path`. */
function num(
  obj: Record<string, unknown>,
  key: string,
  path: string,
  ok: (v: number) => boolean,
  expected: string,
): number {
  const v = obj[key];
  if (typeof v !== 'number' || !Number.isFinite(v) || !ok(v)) {
    throw new InputError(`${path}.${key}`, show(v), expected);
  }
  return v;
}

function optNum(
  obj: Record<string, unknown>,
  key: string,
  path: string,
  ok: (v: number) => boolean,
  expected: string,
): number | undefined {
  return obj[key] === undefined ? undefined : num(obj, key, path, ok, expected);
}

function forbid(obj: Record<string, unknown>, key: string, path: string, why: string): void {
  if (obj[key] !== undefined) throw new InputError(`${path}.${key}`, show(obj[key]), `nothing: ${why}`);
}

const positive = (v: number) => v > 0;
const nonNegative = (v: number) => v >= 0;

// ---------------------------------------------------------------------------------------------------------------
// Patterns (exact)

interface Pattern {
  /** Normalised power gain at ε (radians). */
  gain(elevationRad: number): number;
  /** Elevation (radians) of the peak: the lookup table puts a node there. */
  readonly peakRad: number;
}

function cosec2Pattern(startDeg: number, endDeg: number, beamwidthDeg: number): Pattern {
  const start = startDeg * DEG_TO_RAD;
  const end = endDeg * DEG_TO_RAD;
  const sinStart2 = Math.sin(start) ** 2;
  const gEnd = sinStart2 / Math.sin(end) ** 2;
  // dB roll-offs as natural-log coefficients: g = exp(−c·Δ²).
  const cLow = (1.2 * Math.LN10) / (beamwidthDeg * DEG_TO_RAD) ** 2;
  const cHigh = (0.3 * Math.LN10) / (UPPER_SHOULDER_HALF_POWER_DEG * DEG_TO_RAD) ** 2;
  return {
    peakRad: start,
    gain(e: number): number {
      if (e <= start) {
        const d = start - e;
        return Math.exp(-cLow * d * d);
      }
      if (e <= end) {
        const s = Math.sin(e);
        return sinStart2 / (s * s);
      }
      const d = e - end;
      return gEnd * Math.exp(-cHigh * d * d);
    },
  };
}

function tablePattern(deg: readonly number[], gainDb: readonly number[]): Pattern {
  const n = deg.length;
  const rad = new Float64Array(n);
  const db = new Float64Array(n);
  let maxDb = -Infinity;
  let peak = 0;
  for (let i = 0; i < n; i++) {
    if (gainDb[i] > maxDb) {
      maxDb = gainDb[i];
      peak = i;
    }
  }
  for (let i = 0; i < n; i++) {
    rad[i] = deg[i] * DEG_TO_RAD;
    db[i] = gainDb[i] - maxDb;
  }
  return {
    peakRad: rad[peak],
    gain(e: number): number {
      let v: number;
      if (e <= rad[0]) v = db[0];
      else if (e >= rad[n - 1]) v = db[n - 1];
      else {
        let lo = 0;
        let hi = n - 1;
        while (hi - lo > 1) {
          const mid = (lo + hi) >> 1;
          if (rad[mid] <= e) lo = mid;
          else hi = mid;
        }
        v = db[lo] + ((db[hi] - db[lo]) * (e - rad[lo])) / (rad[hi] - rad[lo]);
      }
      return Math.pow(10, v / 10);
    },
  };
}

function buildPattern(p: unknown, path: string): Pattern {
  if (!isObject(p)) {
    throw new InputError(path, show(p), `an elevation pattern { type: 'cosec2', … } or { type: 'table', … }`);
  }
  if (p.type === 'cosec2') {
    const startDeg = num(
      p,
      'startDeg',
      path,
      (v) => v > 0 && v < 90,
      'an angle in degrees above 0 and below 90',
    );
    const endDeg = num(
      p,
      'endDeg',
      path,
      (v) => v > startDeg && v <= 90,
      `an angle in degrees above startDeg (${startDeg}) and at most 90`,
    );
    const beamwidthDeg =
      optNum(
        p,
        'beamwidthDeg',
        path,
        (v) => v > 0 && v <= 90,
        'a half-power beamwidth in degrees, above 0 and at most 90',
      ) ?? 2 * startDeg;
    return cosec2Pattern(startDeg, endDeg, beamwidthDeg);
  }
  if (p.type === 'table') {
    const deg = p.deg;
    const gainDb = p.gainDb;
    if (!Array.isArray(deg) || deg.length < 2) {
      throw new InputError(`${path}.deg`, show(deg), 'an array of at least 2 elevation angles in degrees');
    }
    if (!Array.isArray(gainDb)) {
      throw new InputError(
        `${path}.gainDb`,
        show(gainDb),
        `an array of ${deg.length} gains in dB, one per angle`,
      );
    }
    if (gainDb.length !== deg.length) {
      throw new InputError(
        `${path}.gainDb`,
        `${gainDb.length} values`,
        `${deg.length} values, one per angle in ${path}.deg`,
      );
    }
    for (let i = 0; i < deg.length; i++) {
      const d = deg[i];
      if (typeof d !== 'number' || !Number.isFinite(d) || d < -90 || d > 90) {
        throw new InputError(`${path}.deg[${i}]`, show(d), 'an elevation angle in degrees from −90 to 90');
      }
      if (i > 0 && !(d > deg[i - 1])) {
        throw new InputError(
          `${path}.deg[${i}]`,
          `${d} after ${deg[i - 1]}`,
          'angles in strictly increasing order',
        );
      }
      const g = gainDb[i];
      if (typeof g !== 'number' || !Number.isFinite(g)) {
        throw new InputError(`${path}.gainDb[${i}]`, show(g), 'a finite gain in dB');
      }
    }
    return tablePattern(deg as number[], gainDb as number[]);
  }
  throw new InputError(`${path}.type`, show(p.type), `'cosec2' or 'table'`);
}

// ---------------------------------------------------------------------------------------------------------------
// Detection

/** Peak range (m) at σ = 1 m² for a primary; the σ-independent range for a secondary. */
function peakRangeAtUnitRcs(
  spec: Record<string, unknown>,
  kind: 'primary' | 'secondary',
  frequencyMHz: number,
  path: string,
): number {
  const d = spec.detection;
  const dPath = `${path}.detection`;
  if (!isObject(d)) {
    throw new InputError(
      dPath,
      show(d),
      '{ referenceRangeNm, referenceRcsM2 } or physical radar parameters { peakPowerKw, … }',
    );
  }
  const hasRef = d.referenceRangeNm !== undefined;
  const hasPhys = d.peakPowerKw !== undefined;
  if (hasRef && hasPhys) {
    throw new InputError(
      dPath,
      'both referenceRangeNm and peakPowerKw',
      'one form only: a reference range, or physical radar parameters',
    );
  }
  if (hasRef) {
    const rangeM = nmToM(num(d, 'referenceRangeNm', dPath, positive, 'a positive range in NM'));
    if (kind === 'secondary') {
      forbid(d, 'referenceRcsM2', dPath, "a secondary's range does not depend on the target's RCS");
      return rangeM;
    }
    if (d.referenceRcsM2 === undefined) {
      throw new InputError(
        `${dPath}.referenceRcsM2`,
        'nothing',
        'the RCS (m²) at which a primary reaches its reference range, e.g. 1 or 2',
      );
    }
    const rcs = num(d, 'referenceRcsM2', dPath, positive, 'a positive RCS in m²');
    return rangeM / Math.sqrt(Math.sqrt(rcs));
  }
  if (!hasPhys) {
    throw new InputError(
      dPath,
      show(d),
      kind === 'secondary'
        ? '{ referenceRangeNm }'
        : '{ referenceRangeNm, referenceRcsM2 } or physical radar parameters { peakPowerKw, … }',
    );
  }
  if (kind === 'secondary') {
    throw new InputError(
      dPath,
      'physical radar parameters (peakPowerKw …)',
      "a reference range { referenceRangeNm }: a secondary's range comes from its link budget, not the radar equation",
    );
  }
  const peakPowerW = 1e3 * num(d, 'peakPowerKw', dPath, positive, 'a positive peak power in kW');
  let gain: number;
  if (d.antennaGainDbi !== undefined && d.antenna !== undefined) {
    throw new InputError(
      `${dPath}.antenna`,
      show(d.antenna),
      'nothing when antennaGainDbi is given (one or the other)',
    );
  }
  if (d.antennaGainDbi !== undefined) {
    gain = Math.pow(
      10,
      num(d, 'antennaGainDbi', dPath, (v) => v > 0 && v < 70, 'a gain in dBi above 0 and below 70') / 10,
    );
  } else if (d.antenna !== undefined) {
    const a = d.antenna;
    const aPath = `${dPath}.antenna`;
    if (!isObject(a)) throw new InputError(aPath, show(a), '{ apertureM2, efficiency }');
    const area = num(a, 'apertureM2', aPath, positive, 'a positive aperture area in m²');
    const eff = num(
      a,
      'efficiency',
      aPath,
      (v) => v > 0 && v <= 1,
      'an aperture efficiency above 0 and at most 1',
    );
    gain = gainFromAperture(area, eff, frequencyMHz);
  } else {
    throw new InputError(
      `${dPath}.antennaGainDbi`,
      'nothing',
      'the antenna gain in dBi, or antenna: { apertureM2, efficiency }',
    );
  }
  const tauS = 1e-6 * num(d, 'pulseWidthUs', dPath, positive, 'a positive pulse length in µs');
  const nfDb = num(d, 'noiseFigureDb', dPath, (v) => v >= 0 && v < 30, 'a noise figure in dB from 0 to 30');
  const lossDb = num(d, 'lossesDb', dPath, (v) => v >= 0 && v < 60, 'system losses in dB from 0 to 60');
  const L = ALBERSHEIM_LIMITS;
  const pd = num(d, 'pd', dPath, (v) => v >= L.pdMin && v <= L.pdMax, albersheimExpected('pd'));
  const pfa = num(d, 'pfa', dPath, (v) => v >= L.pfaMin && v <= L.pfaMax, albersheimExpected('pfa'));
  const hits =
    optNum(d, 'hitsIntegrated', dPath, (v) => v >= L.nMin && v <= L.nMax, albersheimExpected('n')) ?? 1;
  const snrDb = albersheimSnrDb(pd, pfa, hits);
  const minSignalW = noisePowerW(nfDb, 1 / tauS) * Math.pow(10, (snrDb + lossDb) / 10);
  return radarRangeM({
    peakPowerW,
    gainLinear: gain,
    wavelengthM: wavelengthM(frequencyMHz),
    rcsM2: 1,
    minSignalW,
  });
}

class Model implements SensorModel {
  readonly kind: 'primary' | 'secondary';
  readonly maxElevationRad: number;
  readonly instrumentedRangeM: number;
  readonly minRangeM: number;
  readonly targetRcsM2: number;
  readonly weatherFactor: number;
  private readonly unitRangeM: number;
  private readonly pattern: Pattern;
  /** √g at elevation tableLoRad + i·step, i = 0 … length − 1 (one node beyond the maximum elevation). */
  private readonly sqrtGain: Float64Array;
  private readonly tableLoRad: number;
  private readonly invStepRad: number;
  private readonly isPrimary: boolean;
  private cachedRcs = NaN;
  private cachedPeakM = NaN;
  private cachedWeatherPeakM = NaN;

  constructor(
    readonly spec: SensorTypeSpec,
    private readonly where: string,
    fields: {
      kind: 'primary' | 'secondary';
      maxElevationDeg: number;
      instrumentedRangeM: number;
      minRangeM: number;
      targetRcsM2: number;
      weatherFactor: number;
      unitRangeM: number;
      pattern: Pattern;
    },
  ) {
    this.kind = fields.kind;
    this.maxElevationRad = fields.maxElevationDeg * DEG_TO_RAD;
    this.instrumentedRangeM = fields.instrumentedRangeM;
    this.minRangeM = fields.minRangeM;
    this.targetRcsM2 = fields.targetRcsM2;
    this.weatherFactor = fields.weatherFactor;
    this.unitRangeM = fields.unitRangeM;
    this.pattern = fields.pattern;
    this.isPrimary = this.kind === 'primary';
    if (!this.isPrimary) {
      this.cachedPeakM = this.unitRangeM;
      this.cachedWeatherPeakM = this.unitRangeM;
    }

    const step = PATTERN_TABLE_STEP_DEG * DEG_TO_RAD;
    const peak = this.pattern.peakRad;
    const below = Math.ceil((peak + Math.PI / 2) / step - 1e-9);
    const lo = peak - below * step;
    const n = Math.ceil((this.maxElevationRad - lo) / step) + 2;
    const t = new Float64Array(n);
    for (let i = 0; i < n; i++) t[i] = Math.sqrt(this.pattern.gain(lo + i * step));
    this.sqrtGain = t;
    this.tableLoRad = lo;
    this.invStepRad = 1 / step;
  }

  peakRangeM(rcsM2: number, weather = false): number {
    if (this.isPrimary && rcsM2 !== this.cachedRcs) this.setRcs(rcsM2);
    return weather ? this.cachedWeatherPeakM : this.cachedPeakM;
  }

  patternGain(elevationRad: number): number {
    return this.pattern.gain(elevationRad);
  }

  detectionRangeM(elevationRad: number, rcsM2: number, weather = false): number {
    if (elevationRad > this.maxElevationRad) return 0;
    if (this.isPrimary && rcsM2 !== this.cachedRcs) this.setRcs(rcsM2);
    // ε ≤ maxElevation here, and the table holds a node beyond it, so i + 1 is in range; NaN gives NaN.
    let x = (elevationRad - this.tableLoRad) * this.invStepRad;
    if (x < 0) x = 0;
    const i = x | 0;
    const t = this.sqrtGain;
    const a = t[i];
    const r = (weather ? this.cachedWeatherPeakM : this.cachedPeakM) * (a + (x - i) * (t[i + 1] - a));
    return r > this.instrumentedRangeM ? this.instrumentedRangeM : r;
  }

  private setRcs(rcsM2: number): void {
    if (!(rcsM2 > 0 && rcsM2 < Infinity)) {
      throw new InputError(`${this.where}: target RCS`, show(rcsM2), 'a positive RCS in m²');
    }
    this.cachedRcs = rcsM2;
    this.cachedPeakM = this.unitRangeM * Math.sqrt(Math.sqrt(rcsM2));
    this.cachedWeatherPeakM = this.cachedPeakM * this.weatherFactor;
  }
}

/**
 * Validates one sensor type and builds its model. `where` names the object in the user's terms, e.g.
 * `scenario.json: sensorTypes[2]`; field paths are appended (`….detection.pd`). Impossible or contradictory
 * values throw InputError(where + field path, found, expected).
 */
export function buildSensorModel(spec: SensorTypeSpec, where: string): SensorModel {
  const s: unknown = spec;
  if (!isObject(s)) throw new InputError(where, show(s), 'a sensor type object');
  if (typeof s.id !== 'string' || s.id.trim() === '') {
    throw new InputError(`${where}.id`, show(s.id), 'a non-empty identifier string');
  }
  if (typeof s.name !== 'string' || s.name.trim() === '') {
    throw new InputError(`${where}.name`, show(s.name), 'a non-empty name');
  }
  if (s.kind !== 'primary' && s.kind !== 'secondary') {
    throw new InputError(`${where}.kind`, show(s.kind), `'primary' or 'secondary'`);
  }
  const kind = s.kind;
  const frequencyMHz = num(
    s,
    'frequencyMHz',
    where,
    (v) => v >= 1 && v <= 300_000,
    'a frequency in MHz from 1 to 300 000',
  );
  num(s, 'cost', where, nonNegative, 'a cost of zero or more');
  const maxElevationDeg = num(
    s,
    'maxElevationDeg',
    where,
    (v) => v > 0 && v <= 90,
    'an angle in degrees above 0 and at most 90',
  );
  const instrumentedRangeM = nmToM(num(s, 'instrumentedRangeNm', where, positive, 'a positive range in NM'));
  const minRangeM = nmToM(
    optNum(
      s,
      'minRangeNm',
      where,
      (v) => v >= 0 && nmToM(v) < instrumentedRangeM,
      `a range in NM of zero or more, below instrumentedRangeNm (${s.instrumentedRangeNm})`,
    ) ?? DEFAULT_MIN_RANGE_NM,
  );
  if (minRangeM >= instrumentedRangeM) {
    throw new InputError(
      `${where}.instrumentedRangeNm`,
      show(s.instrumentedRangeNm),
      `a range above the minimum range (${DEFAULT_MIN_RANGE_NM} NM by default)`,
    );
  }
  let weatherFactor = 1;
  if (kind === 'secondary') {
    forbid(s, 'weatherLossDb', where, 'a secondary is not affected by weather mode');
    forbid(s, 'targetRcsM2', where, "a secondary's range does not depend on the target's RCS");
  } else {
    const loss =
      optNum(s, 'weatherLossDb', where, (v) => v >= 0 && v < 40, 'a two-way loss in dB from 0 to 40') ?? 0;
    weatherFactor = weatherRangeFactor(loss);
  }
  const targetRcs =
    kind === 'primary' ? optNum(s, 'targetRcsM2', where, positive, 'a positive RCS in m²') : undefined;
  const pattern = buildPattern(s.elevationPattern, `${where}.elevationPattern`);
  const unitRangeM = peakRangeAtUnitRcs(s, kind, frequencyMHz, where);
  const det = s.detection as Record<string, unknown>;
  const refRcs = typeof det.referenceRcsM2 === 'number' ? det.referenceRcsM2 : undefined;
  return new Model(spec, where, {
    kind,
    maxElevationDeg,
    instrumentedRangeM,
    minRangeM,
    targetRcsM2: targetRcs ?? refRcs ?? DEFAULT_TARGET_RCS_M2,
    weatherFactor,
    unitRangeM,
    pattern,
  });
}
