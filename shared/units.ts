/**
 * The one units module. SI inside the program (metres, radians, pascal-derived hPa for display);
 * aviation units (flight level, feet, nautical miles) only at the edges, converted here.
 *
 * Flight levels are pressure altitudes in hundreds of feet; in the ICAO standard atmosphere (ISA) the
 * planning altitude of FL n is n × 100 ft × 0.3048 m/ft. A non-standard-day correction is not applied
 * here; callers that offer one do so explicitly.
 */
import { InputError } from './errors.ts';

/** International foot, exact by definition (1959 international yard and pound agreement). */
export const FT_M = 0.3048;
/** International nautical mile, exact by definition. */
export const NM_M = 1852;
/** Feet per flight level step. */
export const FT_PER_FL = 100;
export const DEG_TO_RAD = Math.PI / 180;
export const RAD_TO_DEG = 180 / Math.PI;

/**
 * Mean radius of the earth (IUGG mean radius R1 of WGS84, rounded to the kilometre-level value that
 * ITU-R recommendations use: 6371 km). Used for the effective-earth model, not for geodesy (geodesic
 * distances use the WGS84 ellipsoid).
 */
export const EARTH_RADIUS_M = 6_371_000;
/** Standard-atmosphere refraction: effective earth radius factor k = 4/3. */
export const DEFAULT_K_FACTOR = 4 / 3;

/**
 * Effective earth radius factor k = 157/(157 − ΔN) (ITU-R P.452 eq. (5), ΔN the refractivity decrease per km).
 * k ≤ 0 or k → ∞ is a gradient of −157 N/km or steeper: the ray bends at least as fast as the earth (ducting),
 * which an effective-earth model cannot represent. Accepted: 0.2 ≤ k ≤ 20, i.e. from strong sub-refraction
 * (ΔN = −628 N/km) to within 5 % of the ducting gradient (ΔN = 149 N/km). Here rather than beside the scenario's
 * schema so that a command which takes only `--k` (airshade floor) need not load the schema library.
 */
export const K_LIMITS = { min: 0.2, max: 20 } as const;
export const K_TEXT = `an effective earth radius factor k from ${K_LIMITS.min} to ${K_LIMITS.max} (4/3 is standard)`;

/** Why k is refused (the whole "expected" text), or undefined when it is accepted; a non-number is the caller's. */
export function kFactorProblem(k: number): string | undefined {
  if (!Number.isFinite(k)) return undefined;
  if (k <= 0 || k > K_LIMITS.max) {
    return `${K_TEXT}: k ${k <= 0 ? '≤ 0' : `> ${K_LIMITS.max}`} means a refractivity gradient at or near −157 N/km, where the ray bends as fast as the earth (ducting) — the effective-earth model does not hold; study a duct with a propagation model that represents it`;
  }
  if (k < K_LIMITS.min) {
    return `${K_TEXT}: k < ${K_LIMITS.min} is sub-refraction beyond anything the standard atmosphere models describe`;
  }
  return undefined;
}

/**
 * The planner's cold, low-pressure worst case (one switch in the app, `--cold-day` on the command line): QNH
 * 980 hPa with the air 20 °C colder than the ISA. Both are our own round choices inside what a winter low brings
 * (common practice: planners check a cold low-pressure day, where flight levels sit lowest); FL100 then sits at
 * about 2,590 m true instead of 3,048 m (worker/core/altimetry.ts).
 */
export const COLD_DAY = Object.freeze({ qnhHpa: 980, isaDeviationC: -20 });

// ICAO standard atmosphere (Doc 7488) constants.
/** Sea-level standard pressure, hPa. */
export const ISA_SEA_LEVEL_PRESSURE_HPA = 1013.25;
/** Geopotential altitude of the ISA tropopause, m. */
export const ISA_TROPOPAUSE_M = 11_000;
/** Upper end of the isothermal ISA layer handled here, m. */
export const ISA_MAX_ALTITUDE_M = 20_000;
const ISA_T0_K = 288.15;
const ISA_TROPOPAUSE_T_K = 216.65;
const ISA_G0 = 9.80665;
const ISA_R_AIR = 287.05287;
/** Troposphere: p = p0 (1 − 2.25577e−5 H)^5.25588 (Doc 7488 form with the lapse rate folded in). */
const ISA_TROPO_COEFF = 2.25577e-5;
const ISA_TROPO_EXP = 5.25588;
const ISA_TROPOPAUSE_P_HPA =
  ISA_SEA_LEVEL_PRESSURE_HPA * Math.pow(1 - ISA_TROPO_COEFF * 11_000, ISA_TROPO_EXP);
/** Inverse pressure scale height of the isothermal layer above the tropopause, 1/m. */
const ISA_STRATO_INV_SCALE = ISA_G0 / (ISA_R_AIR * ISA_TROPOPAUSE_T_K);
/** Lowest altitude accepted (below the Dead Sea shore with margin). */
const ISA_MIN_ALTITUDE_M = -5_000;

export function ftToM(ft: number): number {
  return ft * FT_M;
}
export function mToFt(m: number): number {
  return m / FT_M;
}
export function nmToM(nm: number): number {
  return nm * NM_M;
}
export function mToNm(m: number): number {
  return m / NM_M;
}
export function kmToNm(km: number): number {
  return (km * 1000) / NM_M;
}
export function nmToKm(nm: number): number {
  return (nm * NM_M) / 1000;
}
export function kmToM(km: number): number {
  return km * 1000;
}
export function mToKm(m: number): number {
  return m / 1000;
}
export function degToRad(deg: number): number {
  return deg * DEG_TO_RAD;
}
export function radToDeg(rad: number): number {
  return rad * RAD_TO_DEG;
}

/** ISA planning altitude (m) of a flight level: FL × 100 ft × 0.3048 m/ft. */
export function flToMetres(fl: number): number {
  return fl * FT_PER_FL * FT_M;
}

/** Flight level (not rounded) of an ISA pressure altitude in metres. */
export function metresToFl(m: number): number {
  return m / (FT_PER_FL * FT_M);
}

/**
 * Flight level as written on charts and in file names: 'FL050', 'FL245', 'FL460'. The level must be a
 * non-negative whole number (at most 999).
 */
export function formatFl(fl: number): string {
  if (!Number.isInteger(fl) || fl < 0 || fl > 999) {
    throw new InputError('flight level', String(fl), 'a whole number from 0 to 999');
  }
  return 'FL' + String(fl).padStart(3, '0');
}

/**
 * ISA static pressure (hPa) at a geopotential altitude in metres (ICAO Doc 7488):
 * p = 1013.25 (1 − 2.25577e−5 H)^5.25588 up to the tropopause at 11 km, then the isothermal layer
 * p = p11 · exp(−g0 (H − 11000) / (R T11)) up to 20 km.
 */
export function isaPressureHpa(altitudeM: number): number {
  if (!(altitudeM >= ISA_MIN_ALTITUDE_M && altitudeM <= ISA_MAX_ALTITUDE_M)) {
    throw new InputError(
      'ISA altitude',
      `${altitudeM} m`,
      `an altitude from ${ISA_MIN_ALTITUDE_M} to ${ISA_MAX_ALTITUDE_M} m`,
    );
  }
  if (altitudeM <= ISA_TROPOPAUSE_M) {
    return ISA_SEA_LEVEL_PRESSURE_HPA * Math.pow(1 - ISA_TROPO_COEFF * altitudeM, ISA_TROPO_EXP);
  }
  return ISA_TROPOPAUSE_P_HPA * Math.exp(-ISA_STRATO_INV_SCALE * (altitudeM - ISA_TROPOPAUSE_M));
}

/** Inverse of `isaPressureHpa`: the ISA pressure altitude (m) at which the static pressure is `pressureHpa`. */
export function isaAltitudeFromPressureM(pressureHpa: number): number {
  const pMin = isaPressureHpa(ISA_MAX_ALTITUDE_M);
  const pMax = isaPressureHpa(ISA_MIN_ALTITUDE_M);
  if (!(pressureHpa >= pMin && pressureHpa <= pMax)) {
    throw new InputError(
      'ISA pressure',
      `${pressureHpa} hPa`,
      `a pressure from ${pMin.toFixed(2)} to ${pMax.toFixed(2)} hPa`,
    );
  }
  if (pressureHpa >= ISA_TROPOPAUSE_P_HPA) {
    return (1 - Math.pow(pressureHpa / ISA_SEA_LEVEL_PRESSURE_HPA, 1 / ISA_TROPO_EXP)) / ISA_TROPO_COEFF;
  }
  return ISA_TROPOPAUSE_M - Math.log(pressureHpa / ISA_TROPOPAUSE_P_HPA) / ISA_STRATO_INV_SCALE;
}

/** ISA temperature (K) at a geopotential altitude (m): 288.15 K − 6.5 K/km to 11 km, then 216.65 K. */
export function isaTemperatureK(altitudeM: number): number {
  return altitudeM <= ISA_TROPOPAUSE_M ? ISA_T0_K - 0.0065 * altitudeM : ISA_TROPOPAUSE_T_K;
}

/** Effective earth radius Re = k · R (m) used for refraction on the effective-earth model. */
export function effectiveEarthRadiusM(k: number = DEFAULT_K_FACTOR): number {
  if (!(Number.isFinite(k) && k > 0)) {
    throw new InputError(
      'k factor',
      String(k),
      'a positive number (4/3 ≈ 1.3333 for the standard atmosphere)',
    );
  }
  return k * EARTH_RADIUS_M;
}

/**
 * Median effective earth radius factor from the average refractivity lapse rate ΔN (N-units/km,
 * positive for the usual decrease with height): k50 = 157 / (157 − ΔN), ITU-R P.452 eq. (5).
 */
export function kFactorFromLapseRate(deltaNPerKm: number): number {
  if (!(Number.isFinite(deltaNPerKm) && deltaNPerKm < 157)) {
    throw new InputError(
      'refractivity lapse rate ΔN',
      String(deltaNPerKm),
      'a number of N-units/km below 157 (above it the ray bends faster than the earth: ducting)',
    );
  }
  return 157 / (157 - deltaNPerKm);
}
