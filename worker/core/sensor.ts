/**
 * Sensor models: from a catalog entry (a sensor type), the study's target and a site, to the detection range at
 * each elevation angle.
 *
 * Who owns what (DESIGN §4). The *target* belongs to the study: its RCS σ, its fluctuation (Swerling case) and its
 * transponder class come from the scenario (or a volume). A *sensor type* says only how it performs: its
 * specification point or its physical parameters, its Pd and Pfa, its antenna pattern, its limits. "Seen" means:
 * detected with the type's Pd at the type's Pfa (primary), or both SSR links closed (secondary), for the study's
 * target, inside the instrumented range and below the cone of silence.
 *
 * Primary, free-space range at the pattern peak, R0:
 * - Physical form: the monostatic radar equation with one antenna for transmit and receive,
 *     R0⁴ = Pt·G²·λ²·σ / ((4π)³·k·T0·B·F·L·SNRreq),   B ≈ 1/τ, T0 = 290 K,
 *   with SNRreq the per-pulse SNR for (Pd, Pfa, n pulses integrated non-coherently, the target's Swerling case)
 *   from detection.ts (exact Swerling/Marcum detection laws; Shnidman's equation as a cross-check).
 * - Specification-point form `{ referenceRangeNm, referenceRcsM2, referencePd, referencePfa, referenceFluctuation,
 *   referenceElevationDeg, hitsIntegrated }`: the type detects σref with Pd at Pfa for that fluctuation at that
 *   range, at that elevation, in the standard atmosphere. Converted to the study's target with the fourth-root law
 *   and the difference of required SNRs: R0 = Rfs·(σ/σref)^¼·10^((SNRref − SNRtarget)/40) / √g(εref), where
 *   Rfs = Rref·10^(2·Aatm(εref, Rref)/40) removes the two-way gaseous loss of the spec point's own path (taken from
 *   an antenna at sea level). Defaults when a field is absent (files written before these fields keep their
 *   meaning): Pd 0.8, Pfa 1e−6, Swerling 1, one pulse, εref = the pattern peak.
 * Secondary (SSR), one-way links (Friis transmission equation), each at its peak range R0 = λ/(4π)·10^(M/20), M
 * the link's budget in dB before path loss:
 *   uplink   (1030 MHz) M = Pint + Gant − Lcable + Gac − Lac − MTL
 *   downlink (1090 MHz) M = Preply + Gac − Lac + Gant − Lcable − Sens
 *   the transponder (Gac, Lac, MTL, Preply) from the study's transponder class (TRANSPONDER_CLASSES);
 * or a reference range `{ referenceRangeNm, referenceElevationDeg }` (the range with its own transponder, in the
 * standard atmosphere; the study's transponder class then does not apply — the outputs say so).
 *
 * Range at elevation ε, antenna at altitude ha, tilt t (degrees, the site's):
 *   R(ε) = min(instrumented range, R0·√g(ε − t)·Katm(ε, R)),   0 above the cone of silence,
 * g the normalised one-way power pattern (a primary's two-way g² under the fourth root, a link's one-way g under
 * the square root: both √g), Katm = 10^(−2A/40) for a primary (two-way loss), 10^(−A/20) for each SSR link (A the
 * one-way gaseous loss along the path, atmosphere.ts, ITU-R P.676), solved for R by fixed-point iteration (A grows
 * slowly with R). In weather mode a primary's R0 is multiplied by 10^(−Lw/40) (its two-way weather loss Lw).
 * The cone of silence begins at the lower of the type's maximum elevation (antenna coordinates, raised by the
 * tilt) and the first elevation above the beam peak where the range falls below the minimum range: where the
 * pattern's usable gain ends.
 *
 * Elevation pattern g(ε) (antenna coordinates; a site's tilt shifts it up by t):
 * - `cosec2 { startDeg, endDeg, beamwidthDeg? }`: the peak is at startDeg.
 *     below startDeg      g = 10^(−1.2·((startDeg − ε)/θ3)²)  (the usual Gaussian main-beam approximation: −3 dB at
 *                         half the half-power beamwidth θ3 from the peak). θ3 = beamwidthDeg, default
 *                         2·startDeg, which puts the beam's lower half-power point on the horizon (common practice
 *                         for tilting a surveillance beam).
 *     startDeg … endDeg   g = sin²(startDeg)/sin²(ε): R·sin ε is constant, a constant-altitude envelope on a flat
 *                         earth.
 *     above endDeg        g = g(endDeg)·10^(−0.3·((ε − endDeg)/1°)²): a steep shoulder, −3 dB 1° past endDeg,
 *                         −12 dB at 2°, −27 dB at 3°.
 * - `table { deg, gainDb }`: degrees → dB, normalised so that the largest value is 0 dB, linearly interpolated in
 *   dB; below the first and above the last angle the end values hold.
 *
 * Receivers (kinds `adsb` and `mlat`, receive only at 1090 MHz) are built by receiver.ts
 * (`buildReceiverSensorModel`), whose model has the same interface, a reception profile (one-way downlink, Friis)
 * and the pattern builder below; sensor-model.ts's `buildSensorModel` picks the builder by kind.
 *
 * Hot path: a `DetectionProfile` (one per site, type, target and mode) holds R(ε) tabulated every
 * PATTERN_TABLE_STEP_DEG = 0.01° from −90° to just past the cone of silence, with a node at the tilted peak,
 * linearly interpolated; `rangeM(ε)` allocates nothing (about 10 ns a call). Interpolation error of the table
 * against the exact pattern: on the cosec² curve about h²/(4ε²) relative (< 1e−5 beyond 2°); at a corner between
 * nodes at most Δ·h/4 (Δ the jump of d ln√g/dε); measured over the catalog wherever g > 1e−6: below 5e−4
 * (test/sensor.test.ts checks < 0.2 %). `rangeM` does not apply the minimum range: callers compare the slant
 * range with `minRangeM`.
 */
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD, nmToM } from '../../shared/units.ts';
import { PathLossTable } from './atmosphere.ts';
import { DETECTION_LIMITS, FLUCTUATIONS, requiredSnrDb, type Fluctuation } from './detection.ts';
import { ECHO_SPEC_FIELDS, TRANSPONDER_IDS, type TransponderClass } from '../../shared/target-terms.ts';
import { type RadarKind, type SensorKind } from '../../shared/sensor-kinds.ts';

export type { Fluctuation } from './detection.ts';

/** Speed of light in vacuum, m/s (exact, SI). */
export const SPEED_OF_LIGHT_M_S = 299_792_458;
/** Boltzmann constant, J/K (exact, SI 2019). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Standard reference noise temperature T0 = 290 K (IEEE noise-figure definition). */
export const T0_K = 290;
/** Minimum range when the catalog gives none: 0.5 NM (common practice). */
export const DEFAULT_MIN_RANGE_NM = 0.5;
/** Resolution of the elevation lookup table behind `DetectionProfile.rangeM`. */
export const PATTERN_TABLE_STEP_DEG = 0.01;
/** SSR reply frequency, MHz (ICAO Annex 10 Vol. IV [pub]); the interrogation is the type's frequencyMHz (1030). */
export const SSR_REPLY_MHZ = 1090;
/**
 * Specification-point defaults for fields a type leaves out: Pd 0.8 at Pfa 1e−6 against a Swerling 1 target with
 * one pulse — the way surveillance radar specifications are usually quoted (common practice; 0.8 and 1e−6 from
 * memory of published radar specifications), and one pulse is the conservative choice for converting between
 * fluctuation cases (the Swerling 1 to 0 difference is largest for n = 1).
 */
export const SPEC_POINT_DEFAULTS = { pd: 0.8, pfa: 1e-6, fluctuation: 'swerling1' as Fluctuation, hits: 1 };

/** Above a cosec² pattern's end angle: −3 dB at this many degrees past endDeg, then Gaussian. */
const UPPER_SHOULDER_HALF_POWER_DEG = 1;

// ---------------------------------------------------------------------------------------------------------------
// The target

export type { TransponderClass } from '../../shared/target-terms.ts';
export const TRANSPONDER_CLASS_IDS: readonly TransponderClass[] = TRANSPONDER_IDS;

export interface Transponder {
  label: string;
  /** Reply (peak) power at the transponder's antenna end, W: the class's minimum. */
  replyPowerW: number;
  /** Minimum triggering level at the antenna end, dBm: the least sensitive value allowed. */
  minTriggerDbm: number;
  /** Aircraft antenna gain toward the ground station (dBi) and the installation loss (dB). */
  antennaGainDbi: number;
  installationLossDb: number;
}

/**
 * Transponder classes (ICAO Annex 10 Vol. IV, from memory — the values below are the planning-side ends of the
 * ranges it allows, so that a link closed here closes with any compliant transponder of the class):
 * - reply power: at least 21 dBW (125 W) for aircraft operating above 15 000 ft or faster than 175 kt, at least
 *   18.5 dBW (70 W) otherwise; the class's minimum is used.
 * - minimum triggering level: −74 dBm ± 3 dB; the least sensitive end, −71 dBm, is used.
 * - aircraft antenna: a quarter-wave blade, 0 dBi toward the ground station, 3 dB cable and installation loss
 *   (common practice, from memory); the lobing of the airframe is not modelled.
 */
export const TRANSPONDER_CLASSES: Readonly<Record<TransponderClass, Transponder>> = {
  'high-power': {
    label: 'transponder ≥ 125 W (aircraft above 15 000 ft or faster than 175 kt)',
    replyPowerW: 125,
    minTriggerDbm: -71,
    antennaGainDbi: 0,
    installationLossDb: 3,
  },
  'low-power': {
    label: 'transponder ≥ 70 W (aircraft below 15 000 ft and at most 175 kt)',
    replyPowerW: 70,
    minTriggerDbm: -71,
    antennaGainDbi: 0,
    installationLossDb: 3,
  },
};

/** The aircraft a study is about (the scenario's, or a volume's own). */
export interface Target {
  rcsM2: number;
  fluctuation: Fluctuation;
  transponder: TransponderClass;
}

/**
 * Default target: 2 m² (a small-to-medium aircraft seen broadside-averaged, common practice), Swerling 1
 * (scan-to-scan fluctuation, common practice for aircraft), the low-power transponder class (the conservative
 * one).
 */
export const DEFAULT_TARGET: Target = { rcsM2: 2, fluctuation: 'swerling1', transponder: 'low-power' };

/**
 * One line naming the target, for outputs; for one kind of sensor, only what that kind sees of it (a primary its
 * echo; a secondary and the 1090 MHz receivers its transponder).
 */
export function describeTarget(t: Target, kind?: SensorKind): string {
  const echo = `${t.rcsM2} m² ${t.fluctuation.replace('swerling', 'Swerling ')}`;
  const transponder = TRANSPONDER_CLASSES[t.transponder].label;
  return kind === 'primary' ? echo : kind === undefined ? `${echo}, ${transponder}` : transponder;
}

// ---------------------------------------------------------------------------------------------------------------
// Specs

export type ElevationPatternSpec =
  | {
      type: 'cosec2';
      startDeg: number;
      endDeg: number;
      /** Half-power beamwidth of the main beam below startDeg (default 2·startDeg: lower −3 dB on the horizon). */
      beamwidthDeg?: number;
    }
  | { type: 'table'; deg: number[]; gainDb: number[] };

/** A specification point: the type sees the reference target at this range (see the module comment). */
export interface ReferenceDetectionSpec {
  referenceRangeNm: number;
  /** RCS at which the reference range holds; required for a primary, meaningless for a secondary. */
  referenceRcsM2?: number;
  /** Primary: the Pd, Pfa and fluctuation the range is quoted for (defaults SPEC_POINT_DEFAULTS). */
  referencePd?: number;
  referencePfa?: number;
  referenceFluctuation?: Fluctuation;
  /** Elevation (degrees, antenna coordinates) the range applies to; default the pattern's peak. */
  referenceElevationDeg?: number;
  /** Primary: pulses integrated non-coherently (default 1). */
  hitsIntegrated?: number;
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

/** An SSR's own half of the two link budgets (the transponder's half is the study's transponder class). */
export interface SecondaryLinkSpec {
  /** Interrogator peak power at the transmitter output, W. */
  interrogatorPowerW: number;
  /** Antenna gain at the elevation pattern's peak, dBi (sum beam). */
  antennaGainDbi: number;
  /** Cable and rotary-joint loss between the antenna and the interrogator/receiver, dB (each way). */
  cableLossDb: number;
  /** Receiver sensitivity (minimum reply level decoded) at the receiver input, dBm. */
  receiverSensitivityDbm: number;
}

/** A radar's catalog entry (primary or secondary). */
export interface RadarTypeSpec {
  id: string;
  name: string;
  kind: RadarKind;
  frequencyMHz: number;
  cost: number;
  maxElevationDeg: number;
  instrumentedRangeNm: number;
  /** Minimum range, NM (default 0.5 NM, common practice). */
  minRangeNm?: number;
  /** Two-way loss in weather mode (primary only), dB; default 0. */
  weatherLossDb?: number;
  elevationPattern: ElevationPatternSpec;
  detection: ReferenceDetectionSpec | RadarDetectionSpec | SecondaryLinkSpec;
  /** Leftover of earlier files: ignored with a warning (the study's target governs). */
  targetRcsM2?: number;
}

/** A 1090 MHz ground receiver's catalog entry (ADS-B ground station or multilateration receiver), receive only. */
export interface ReceiverTypeSpec {
  id: string;
  name: string;
  kind: 'adsb' | 'mlat';
  cost: number;
  /** Minimum decoded signal level at the receiver input, dBm. */
  sensitivityDbm: number;
  /** Loss between the antenna and the receiver input, dB. */
  cableLossDb: number;
  /** Antenna gain at the elevation pattern's peak, dBi. */
  antennaGainDbi: number;
  elevationPattern: ElevationPatternSpec;
  instrumentedRangeNm: number;
  /** Azimuth sector, clockwise from fromDeg to toDeg (degrees from true north); absent: omnidirectional. */
  sector?: { fromDeg: number; toDeg: number };
  /** mlat: the 1σ time-of-arrival error, ns (synchronisation included). */
  timingErrorNs?: number;
}

export type SensorTypeSpec = RadarTypeSpec | ReceiverTypeSpec;

/** What a profile is built for. */
export interface ProfileRequest {
  target: Target;
  /** Antenna altitude AMSL, m (the gaseous loss depends on it). */
  antennaAltM: number;
  /** The site's antenna tilt, degrees (default 0). */
  tiltDeg?: number;
  weather?: boolean;
  /** Gaseous attenuation on (default true; tests of other effects switch it off). */
  atmosphere?: boolean;
}

/** The detection range of one type on one site for one target, per elevation (see the module comment). */
export interface DetectionProfile {
  readonly minRangeM: number;
  readonly instrumentedRangeM: number;
  /** Elevation (rad) above which nothing is detected: the cone of silence. */
  readonly coneOfSilenceRad: number;
  /** Free-space range at the (tilted) pattern peak, m, before the instrumented range and the atmosphere. */
  readonly peakRangeM: number;
  /** Secondary with link budgets: which link sets the peak range (undefined for a reference-range secondary). */
  readonly limitingLink?: 'uplink' | 'downlink';
  /** min(instrumented range, range with atmosphere) at ε (rad); 0 above the cone of silence; NaN gives NaN. */
  rangeM(elevationRad: number): number;
  /**
   * Least and greatest of `rangeM` over the elevations [e1, e2] (rad, e1 ≤ e2) into out[0], out[1]; lets a caller
   * settle a whole altitude interval at once (footprint.ts sensorBand). Optional: without it every altitude is asked.
   */
  rangeBounds?(e1: number, e2: number, out: number[]): void;
}

export interface SensorModel {
  readonly spec: SensorTypeSpec;
  readonly kind: SensorKind;
  /** The frequency the sensor receives on (over-sea lobing): a radar's own, 1090 MHz for a receiver. */
  readonly frequencyMHz: number;
  /**
   * A receiver's azimuth sector (degrees clockwise from north, from fromDeg clockwise to toDeg); undefined for an
   * omnidirectional receiver and for every radar. The footprint drops the cells outside it.
   */
  readonly sector?: { readonly fromDeg: number; readonly toDeg: number };
  /** The type's maximum elevation in antenna coordinates (a site's tilt raises it). */
  readonly maxElevationRad: number;
  readonly instrumentedRangeM: number;
  readonly minRangeM: number;
  /** Range factor in weather mode: 10^(−L/40) for a primary, 1 for a secondary. */
  readonly weatherFactor: number;
  /** Problems that did not stop the model (a leftover field): one line each, naming the field. */
  readonly warnings: readonly string[];
  /** The specification convention in one line, for outputs ("1 m² Swerling 1, Pd 0.8, Pfa 1e-6 at 60 NM, 3.6°"). */
  readonly convention: string;
  /** Free-space range (m) at the pattern peak for the target (no atmosphere, no instrumented range). */
  peakRangeM(target: Target, weather?: boolean): number;
  /** Normalised one-way power gain g(ε) of the elevation pattern, 0…1 (1 at its peak); ε in radians. */
  patternGain(elevationRad: number, tiltRad?: number): number;
  profile(req: ProfileRequest): DetectionProfile;
  /** The part of a target this type's range depends on: two targets with one key give one footprint. */
  targetKey(target: Target): string;
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

/** A value as a message shows it (at most 80 characters). */
export function show(v: unknown): string {
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
export function num(
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

export interface Pattern {
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

/**
 * Validates an elevation pattern spec and builds its exact pattern (the shapes of the module comment); bad fields
 * throw InputError naming `path` and the field. Radars and receivers share it.
 */
export function buildPattern(p: unknown, path: string): Pattern {
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

/** Free-space range (m) at which a one-way link with M dB of budget before path loss closes: FSPL = M (Friis). */
export function linkRangeM(marginDb: number, frequencyMHz: number): number {
  return (wavelengthM(frequencyMHz) / (4 * Math.PI)) * Math.pow(10, marginDb / 20);
}

/** A false-alarm probability as specifications write it: 1e-6, 1e-10. */
function fmtPfa(p: number): string {
  return p < 1e-3 ? p.toExponential() : String(p);
}

/** Power in dBm of a power in W. */
export function wattsToDbm(w: number): number {
  return 10 * Math.log10(w) + 30;
}

const fluctuationText = `one of ${FLUCTUATIONS.map((f) => `"${f}"`).join(', ')}`;
const D = DETECTION_LIMITS;
const pdText = `a probability of detection from ${D.pdMin} to ${D.pdMax}`;
const pfaText = `a false-alarm probability from ${D.pfaMin} to ${D.pfaMax}`;
const hitsText = `a whole number of pulses integrated from ${D.nMin} to ${D.nMax}`;

/**
 * How a type's range is built, independent of the target: `unit` gives the free-space peak range for a target
 * (primary) or per link (secondary).
 */
type RangeBasis =
  | {
      kind: 'primary';
      /** Peak range for σ = 1 m² at SNR `snrBasisDb` (free space). */
      unitRangeM: number;
      snrBasisDb: number;
      pd: number;
      pfa: number;
      hits: number;
    }
  | { kind: 'secondary-reference'; peakRangeM: number }
  | {
      kind: 'secondary-link';
      /** Budget before path loss with the transponder's terms left out, dB, per link. */
      upBaseDb: number;
      downBaseDb: number;
      upMHz: number;
    };

function checkFluctuation(v: unknown, path: string): Fluctuation {
  if (!FLUCTUATIONS.includes(v as Fluctuation)) throw new InputError(path, show(v), fluctuationText);
  return v as Fluctuation;
}

/**
 * Gaseous loss tables, shared by types and sites: keyed by frequency, antenna altitude (to 250 m; an antenna below
 * sea level counts as at sea level) and reach (to 100 km). 250 m of antenna altitude changes a path's loss by about
 * 3 % of itself (the oxygen scale height is about 8 km), a few hundredths of a dB at most.
 */
const LOSS_TABLES = new Map<string, PathLossTable>();
const LOSS_ALT_STEP_M = 250;
const LOSS_REACH_STEP_M = 100_000;

/** The antenna altitude a loss table is built for: to LOSS_ALT_STEP_M, and sea level for an antenna below it. */
function lossAltitudeStep(antennaAltM: number): number {
  return Math.max(0, Math.round(antennaAltM / LOSS_ALT_STEP_M) * LOSS_ALT_STEP_M);
}

export function pathLossTable(fMHz: number, antennaAltM: number, reachM: number): PathLossTable {
  const alt = lossAltitudeStep(antennaAltM);
  const reach = Math.ceil(reachM / LOSS_REACH_STEP_M) * LOSS_REACH_STEP_M;
  const key = `${fMHz}|${alt}|${reach}`;
  let t = LOSS_TABLES.get(key);
  if (!t) {
    if (LOSS_TABLES.size > 256) LOSS_TABLES.clear();
    t = new PathLossTable(fMHz, alt, reach);
    LOSS_TABLES.set(key, t);
  }
  return t;
}

/** The free-space range Rfs whose range with the path's gaseous loss is `rangeM`: Rfs = R·10^(A(ε,R)·c). */
function freeSpaceOf(
  rangeM: number,
  elevationRad: number,
  table: PathLossTable,
  dbToRangeExp: number,
): number {
  return rangeM * Math.pow(10, table.oneWayDb(elevationRad, rangeM) * dbToRangeExp);
}

function rangeBasis(
  s: Record<string, unknown>,
  kind: RadarKind,
  frequencyMHz: number,
  pattern: Pattern,
  path: string,
): { basis: RangeBasis; convention: string } {
  const d = s.detection;
  const dPath = `${path}.detection`;
  if (!isObject(d)) {
    throw new InputError(
      dPath,
      show(d),
      kind === 'primary'
        ? '{ referenceRangeNm, referenceRcsM2, … } or physical radar parameters { peakPowerKw, … }'
        : '{ referenceRangeNm } or SSR link parameters { interrogatorPowerW, … }',
    );
  }
  const hasRef = d.referenceRangeNm !== undefined;
  const hasPhys = d.peakPowerKw !== undefined;
  const hasLink = d.interrogatorPowerW !== undefined;
  if (Number(hasRef) + Number(hasPhys) + Number(hasLink) > 1) {
    throw new InputError(
      dPath,
      [hasRef && 'referenceRangeNm', hasPhys && 'peakPowerKw', hasLink && 'interrogatorPowerW']
        .filter(Boolean)
        .join(' and '),
      'one form only: a specification point, physical radar parameters (primary) or link parameters (secondary)',
    );
  }
  if (hasRef) {
    const rangeM = nmToM(num(d, 'referenceRangeNm', dPath, positive, 'a positive range in NM'));
    const eRefDeg =
      optNum(
        d,
        'referenceElevationDeg',
        dPath,
        (v) => v >= -10 && v <= 90,
        'an elevation from −10 to 90 degrees',
      ) ?? pattern.peakRad / DEG_TO_RAD;
    const eRef = eRefDeg * DEG_TO_RAD;
    const gRef = pattern.gain(eRef);
    if (!(gRef > 1e-6)) {
      throw new InputError(
        `${dPath}.referenceElevationDeg`,
        show(eRefDeg),
        'an elevation where the elevation pattern has usable gain (above −60 dB)',
      );
    }
    const atRef = `${(rangeM / 1852).toFixed(0)} NM at ${+eRefDeg.toFixed(2)}°${d.referenceElevationDeg === undefined ? ' (the beam peak)' : ''}`;
    if (kind === 'secondary') {
      for (const k of ECHO_SPEC_FIELDS)
        forbid(d, k, dPath, "a secondary's range comes from its links, not from a target's echo");
      const fs = freeSpaceOf(rangeM, eRef, pathLossTable(frequencyMHz, 0, rangeM), 1 / 20);
      return {
        basis: { kind: 'secondary-reference', peakRangeM: fs / Math.sqrt(gRef) },
        convention: `reaches ${atRef} with its own reference transponder (the study's transponder class does not apply)`,
      };
    }
    if (d.referenceRcsM2 === undefined) {
      throw new InputError(
        `${dPath}.referenceRcsM2`,
        'nothing',
        'the RCS (m²) at which a primary reaches its reference range, e.g. 1 or 2',
      );
    }
    const rcs = num(d, 'referenceRcsM2', dPath, positive, 'a positive RCS in m²');
    const pd =
      optNum(d, 'referencePd', dPath, (v) => v >= D.pdMin && v <= D.pdMax, pdText) ?? SPEC_POINT_DEFAULTS.pd;
    const pfa =
      optNum(d, 'referencePfa', dPath, (v) => v >= D.pfaMin && v <= D.pfaMax, pfaText) ??
      SPEC_POINT_DEFAULTS.pfa;
    const fl =
      d.referenceFluctuation === undefined
        ? SPEC_POINT_DEFAULTS.fluctuation
        : checkFluctuation(d.referenceFluctuation, `${dPath}.referenceFluctuation`);
    const hits =
      optNum(
        d,
        'hitsIntegrated',
        dPath,
        (v) => Number.isInteger(v) && v >= D.nMin && v <= D.nMax,
        hitsText,
      ) ?? SPEC_POINT_DEFAULTS.hits;
    const fs = freeSpaceOf(rangeM, eRef, pathLossTable(frequencyMHz, 0, rangeM), 2 / 40);
    return {
      basis: {
        kind: 'primary',
        unitRangeM: fs / Math.sqrt(gRef) / Math.sqrt(Math.sqrt(rcs)),
        snrBasisDb: requiredSnrDb(pd, pfa, hits, fl),
        pd,
        pfa,
        hits,
      },
      convention: `specified: ${rcs} m² ${fl.replace('swerling', 'Swerling ')} with Pd ${pd} at Pfa ${fmtPfa(pfa)} (${hits} pulse${hits > 1 ? 's' : ''}) at ${atRef}`,
    };
  }
  if (kind === 'secondary') {
    if (hasPhys) {
      throw new InputError(
        dPath,
        'physical radar parameters (peakPowerKw …)',
        "a reference range { referenceRangeNm } or link parameters { interrogatorPowerW, antennaGainDbi, cableLossDb, receiverSensitivityDbm }: a secondary's range comes from its link budget, not the radar equation",
      );
    }
    if (!hasLink) throw new InputError(dPath, show(d), '{ referenceRangeNm } or { interrogatorPowerW, … }');
    const pW = num(
      d,
      'interrogatorPowerW',
      dPath,
      (v) => v > 0 && v <= 1e5,
      'a peak power in W from above 0 to 100 000',
    );
    const gDbi = num(
      d,
      'antennaGainDbi',
      dPath,
      (v) => v > 0 && v < 50,
      'a gain in dBi above 0 and below 50',
    );
    const lc = num(d, 'cableLossDb', dPath, (v) => v >= 0 && v < 20, 'a loss in dB from 0 to below 20');
    const sens = num(
      d,
      'receiverSensitivityDbm',
      dPath,
      (v) => v >= -120 && v <= -40,
      'a sensitivity in dBm from −120 to −40',
    );
    const p = wattsToDbm(pW);
    return {
      basis: {
        kind: 'secondary-link',
        upBaseDb: p + gDbi - lc,
        downBaseDb: gDbi - lc - sens,
        upMHz: frequencyMHz,
      },
      convention: `link budgets: ${pW} W interrogations at ${frequencyMHz} MHz, ${gDbi} dBi, ${lc} dB cable, receiver ${sens} dBm at ${SSR_REPLY_MHZ} MHz`,
    };
  }
  if (hasLink) {
    throw new InputError(
      dPath,
      'SSR link parameters (interrogatorPowerW …)',
      'a primary takes a specification point or physical radar parameters',
    );
  }
  if (!hasPhys) {
    throw new InputError(
      dPath,
      show(d),
      '{ referenceRangeNm, referenceRcsM2 } or physical radar parameters { peakPowerKw, … }',
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
  const pd = num(d, 'pd', dPath, (v) => v >= D.pdMin && v <= D.pdMax, pdText);
  const pfa = num(d, 'pfa', dPath, (v) => v >= D.pfaMin && v <= D.pfaMax, pfaText);
  const hits =
    optNum(d, 'hitsIntegrated', dPath, (v) => Number.isInteger(v) && v >= D.nMin && v <= D.nMax, hitsText) ??
    1;
  // The unit range at SNR 0 dB: the study's required SNR is applied per target.
  const minSignalW = noisePowerW(nfDb, 1 / tauS) * Math.pow(10, lossDb / 10);
  const unitRangeM = radarRangeM({
    peakPowerW,
    gainLinear: gain,
    wavelengthM: wavelengthM(frequencyMHz),
    rcsM2: 1,
    minSignalW,
  });
  return {
    basis: { kind: 'primary', unitRangeM, snrBasisDb: 0, pd, pfa, hits },
    convention: `radar equation: ${d.peakPowerKw} kW, ${(10 * Math.log10(gain)).toFixed(1)} dBi, ${d.pulseWidthUs} µs, NF ${nfDb} dB, losses ${lossDb} dB; Pd ${pd} at Pfa ${fmtPfa(pfa)}, ${hits} pulse${hits > 1 ? 's' : ''}`,
  };
}

/** Profile table: R(ε) on nodes PATTERN_TABLE_STEP_DEG apart. */
class Profile implements DetectionProfile {
  constructor(
    readonly minRangeM: number,
    readonly instrumentedRangeM: number,
    readonly coneOfSilenceRad: number,
    readonly peakRangeM: number,
    readonly limitingLink: 'uplink' | 'downlink' | undefined,
    private readonly table: Float64Array,
    private readonly loRad: number,
    private readonly invStepRad: number,
  ) {}

  rangeM(elevationRad: number): number {
    if (elevationRad > this.coneOfSilenceRad) return 0;
    let x = (elevationRad - this.loRad) * this.invStepRad;
    if (x < 0) x = 0;
    const i = x | 0;
    const t = this.table;
    const a = t[i];
    return a + (x - i) * (t[i + 1] - a);
  }

  /** The table is linear between its nodes: the extremes over [e1, e2] lie at its ends or at the nodes between. */
  rangeBounds(e1: number, e2: number, out: number[]): void {
    const r1 = this.rangeM(e1);
    const r2 = this.rangeM(e2);
    let lo = Math.min(r1, r2);
    let hi = Math.max(r1, r2);
    const top = Math.min(e2, this.coneOfSilenceRad);
    if (e1 <= top) {
      const rTop = this.rangeM(top);
      lo = Math.min(lo, rTop);
      hi = Math.max(hi, rTop);
      const t = this.table;
      const i1 = Math.floor(Math.max(0, (e1 - this.loRad) * this.invStepRad)) + 1;
      const i2 = Math.min(t.length - 1, Math.floor(Math.max(0, (top - this.loRad) * this.invStepRad)));
      for (let i = i1; i <= i2; i++) {
        if (t[i] < lo) lo = t[i];
        if (t[i] > hi) hi = t[i];
      }
    }
    out[0] = lo;
    out[1] = hi;
  }
}

class Model implements SensorModel {
  readonly maxElevationRad: number;
  readonly frequencyMHz: number;
  constructor(
    readonly spec: RadarTypeSpec,
    readonly kind: RadarKind,
    maxElevationDeg: number,
    readonly instrumentedRangeM: number,
    readonly minRangeM: number,
    readonly weatherFactor: number,
    readonly warnings: readonly string[],
    readonly convention: string,
    private readonly basis: RangeBasis,
    private readonly pattern: Pattern,
  ) {
    this.maxElevationRad = maxElevationDeg * DEG_TO_RAD;
    this.frequencyMHz = spec.frequencyMHz;
  }

  /** Free-space peak range per link (a primary has one). */
  private peaks(target: Target, weather: boolean): { up: number; down: number } {
    const b = this.basis;
    if (b.kind === 'primary') {
      if (!(target.rcsM2 > 0 && target.rcsM2 < Infinity)) {
        throw new InputError(`${this.spec.id}: target RCS`, show(target.rcsM2), 'a positive RCS in m²');
      }
      const snr = requiredSnrDb(b.pd, b.pfa, b.hits, target.fluctuation);
      const r =
        b.unitRangeM *
        Math.sqrt(Math.sqrt(target.rcsM2)) *
        Math.pow(10, (b.snrBasisDb - snr) / 40) *
        (weather ? this.weatherFactor : 1);
      return { up: r, down: r };
    }
    if (b.kind === 'secondary-reference') return { up: b.peakRangeM, down: b.peakRangeM };
    const x = TRANSPONDER_CLASSES[target.transponder];
    const ac = x.antennaGainDbi - x.installationLossDb;
    return {
      up: linkRangeM(b.upBaseDb + ac - x.minTriggerDbm, b.upMHz),
      down: linkRangeM(b.downBaseDb + wattsToDbm(x.replyPowerW) + ac, SSR_REPLY_MHZ),
    };
  }

  targetKey(target: Target): string {
    const k = this.basis.kind;
    return k === 'primary'
      ? `${target.rcsM2}|${target.fluctuation}`
      : k === 'secondary-link'
        ? target.transponder
        : '';
  }

  peakRangeM(target: Target, weather = false): number {
    const p = this.peaks(target, weather);
    return Math.min(p.up, p.down);
  }

  patternGain(elevationRad: number, tiltRad = 0): number {
    return this.pattern.gain(elevationRad - tiltRad);
  }

  /**
   * Profiles by what they depend on: the target (as this type tells targets apart), mode, tilt and the loss table
   * (the antenna altitude enters only through it, to 250 m): sites in one altitude step share a profile.
   */
  private readonly profiles = new Map<string, DetectionProfile>();

  profile(req: ProfileRequest): DetectionProfile {
    const atmOn = req.atmosphere ?? true;
    const key = [
      this.targetKey(req.target),
      req.weather ?? false,
      req.tiltDeg ?? 0,
      atmOn ? lossAltitudeStep(req.antennaAltM) : 'free space',
    ].join('|');
    let p = this.profiles.get(key);
    if (p === undefined) {
      if (this.profiles.size >= 256) this.profiles.clear();
      p = this.buildProfile(req);
      this.profiles.set(key, p);
    }
    return p;
  }

  private buildProfile(req: ProfileRequest): DetectionProfile {
    const tilt = (req.tiltDeg ?? 0) * DEG_TO_RAD;
    const peaks = this.peaks(req.target, req.weather ?? false);
    const instr = this.instrumentedRangeM;
    const primary = this.kind === 'primary';
    const atm = req.atmosphere ?? true;
    // Gaseous loss: two-way under the fourth root (primary), one-way under the square root (each SSR link).
    const exp = primary ? -2 / 40 : -1 / 20;
    const lossUp = atm ? pathLossTable(this.spec.frequencyMHz, req.antennaAltM, instr) : null;
    const lossDown = atm && !primary ? pathLossTable(SSR_REPLY_MHZ, req.antennaAltM, instr) : lossUp;
    const step = PATTERN_TABLE_STEP_DEG * DEG_TO_RAD;
    const peak = this.pattern.peakRad + tilt;
    const top = Math.min(Math.PI / 2, this.maxElevationRad + tilt);
    const below = Math.ceil((peak + Math.PI / 2) / step - 1e-9);
    const lo = peak - below * step;
    const n = Math.max(2, Math.ceil((top - lo) / step) + 2);
    const t = new Float64Array(n);
    let cone = top;
    // The gaseous-loss factor K = R/R0 varies slowly with elevation: it is solved every LOSS_STRIDE nodes (0.1°)
    // and interpolated between (its change over 0.1° is below 1e−3 of the range), from the previous solution as
    // the first guess.
    const oneLink = peaks.up === peaks.down && lossUp === lossDown;
    const kUp = lossFactors(n, lo, step, tilt, this.pattern, peaks.up, lossUp, exp, instr);
    const kDown = oneLink
      ? kUp
      : lossFactors(n, lo, step, tilt, this.pattern, peaks.down, lossDown, exp, instr);
    for (let i = 0; i < n; i++) {
      const e = lo + i * step;
      const sg = Math.sqrt(this.pattern.gain(e - tilt));
      let r = Math.min(peaks.up * sg * factorAt(kUp, i), peaks.down * sg * factorAt(kDown, i));
      if (r > instr) r = instr;
      t[i] = r;
      // Where the usable gain ends: the first node above the peak whose range is below the minimum range.
      if (e > peak && r < this.minRangeM && e < cone) cone = e;
    }
    return new Profile(
      this.minRangeM,
      instr,
      cone,
      Math.min(peaks.up, peaks.down),
      this.basis.kind === 'secondary-link' ? (peaks.up <= peaks.down ? 'uplink' : 'downlink') : undefined,
      t,
      lo,
      1 / step,
    );
  }
}

/** Nodes between two solutions of the gaseous-loss factor (0.1° at the 0.01° table step). */
const LOSS_STRIDE = 10;

/**
 * The gaseous-loss factor K = R/R0 every LOSS_STRIDE profile nodes (one more past the end), where R solves
 * R = R0·10^(A(ε, R)·exp) by fixed-point iteration. The map's slope is |exp·ln10·R·dA/dR| ≈ 0.1 per dB of loss,
 * so each step gains about a decimal; three steps from the neighbour's factor leave < 1e−4. Where R0 reaches the
 * instrumented range the factor at that range is kept (enough to decide whether it still reaches it); null
 * without a loss table (factor 1).
 */
function lossFactors(
  n: number,
  lo: number,
  step: number,
  tilt: number,
  pattern: Pattern,
  peakM: number,
  table: PathLossTable | null,
  exp: number,
  cap: number,
): Float64Array | null {
  if (table === null) return null;
  const m = Math.ceil(n / LOSS_STRIDE) + 1;
  const out = new Float64Array(m);
  let guess = 1;
  for (let j = 0; j < m; j++) {
    const e = lo + j * LOSS_STRIDE * step;
    const r0 = peakM * Math.sqrt(pattern.gain(e - tilt));
    if (!(r0 > 0)) {
      out[j] = guess;
      continue;
    }
    let r = Math.min(r0 * guess, cap);
    for (let k = 0; k < 3; k++) r = Math.min(r0 * Math.pow(10, table.oneWayDb(e, r) * exp), cap);
    guess = r / r0;
    if (r >= cap) guess = Math.pow(10, table.oneWayDb(e, cap) * exp);
    out[j] = guess;
  }
  return out;
}

/** The loss factor at profile node i, linear between the solved nodes. */
function factorAt(k: Float64Array | null, i: number): number {
  if (k === null) return 1;
  const x = i / LOSS_STRIDE;
  const j = x | 0;
  return k[j] + (x - j) * (k[j + 1] - k[j]);
}

/**
 * Validates one sensor type and builds its model. `where` names the object in the user's terms, e.g.
 * `scenario.json: sensorTypes[2]`; field paths are appended (`….detection.pd`). Impossible or contradictory
 * values throw InputError(where + field path, found, expected); a leftover `targetRcsM2` is a warning.
 */
export function buildRadarSensorModel(spec: SensorTypeSpec, where: string): SensorModel {
  const s: unknown = spec;
  if (!isObject(s)) throw new InputError(where, show(s), 'a sensor type object');
  if (typeof s.id !== 'string' || s.id.trim() === '') {
    throw new InputError(`${where}.id`, show(s.id), 'a non-empty identifier string');
  }
  if (typeof s.name !== 'string' || s.name.trim() === '') {
    throw new InputError(`${where}.name`, show(s.name), 'a non-empty name');
  }
  if (s.kind !== 'primary' && s.kind !== 'secondary') {
    throw new InputError(`${where}.kind`, show(s.kind), `'primary', 'secondary', 'adsb' or 'mlat'`);
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
  const warnings: string[] = [];
  let weatherFactor = 1;
  if (kind === 'secondary') {
    forbid(s, 'weatherLossDb', where, 'a secondary is not affected by weather mode');
  } else {
    const loss =
      optNum(s, 'weatherLossDb', where, (v) => v >= 0 && v < 40, 'a two-way loss in dB from 0 to 40') ?? 0;
    weatherFactor = weatherRangeFactor(loss);
  }
  if (s.targetRcsM2 !== undefined) {
    warnings.push(
      `${where}.targetRcsM2: ${show(s.targetRcsM2)} is ignored — the target belongs to the study: the scenario's targetRcsM2 (or a volume's) is used instead`,
    );
  }
  const pattern = buildPattern(s.elevationPattern, `${where}.elevationPattern`);
  const { basis, convention } = rangeBasis(s, kind, frequencyMHz, pattern, where);
  return new Model(
    spec as RadarTypeSpec,
    kind,
    maxElevationDeg,
    instrumentedRangeM,
    minRangeM,
    weatherFactor,
    warnings,
    convention,
    basis,
    pattern,
  );
}
