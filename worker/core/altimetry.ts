/**
 * True altitude of a flight level (pressure altitude) on a non-standard day.
 *
 * An aircraft at flight level FL flies the surface of constant static pressure p = p_ISA(H), H = FL × 30.48 m the
 * pressure altitude (ICAO Doc 7488: `isaPressureHpa` in shared/units.ts). The day's atmosphere has sea-level
 * pressure QNH and the temperature T(z) = T_ISA(z) + ΔT at true altitude z: the ISA lapse rate L = 6.5 K/km with a
 * constant deviation ΔT, so T0 = 288.15 K + ΔT at sea level and, above z = 11 km, the isothermal layer at
 * 216.65 K + ΔT. True altitude follows from the hypsometric equation dz = −(R·T(z)/(g·p))·dp integrated from
 * (z = 0, p = QNH) up to p; with T linear in z it has the closed form of the barometric formula:
 *   z ≤ 11 km:  z = (T0/L)·(1 − (p/QNH)^(1/n)),  n = g/(R·L) = 5.25588,
 *   z > 11 km:  z = 11 km + (R·T11/g)·ln(p11/p),  T11 = 216.65 K + ΔT, p11 the day's pressure at 11 km.
 * On the standard day (QNH 1013.25 hPa, ΔT = 0) this is the ISA itself: true altitude = pressure altitude.
 * Two rules of thumb come out of it (test/altimetry.test.ts): below the tropopause a deviation ΔT scales the true
 * height above the QNH surface by (T0 + ΔT)/T0, 3.5 % per 10 °C (the PANS-OPS cold-temperature correction, ICAO
 * Doc 8168 Vol. I, agrees to first order; "about 4 % per 10 °C" is the pilots' rounding); near sea level
 * 1 hPa of QNH is R·T0/(g·p0) = 8.32 m = 27.3 ft ("about 30 ft per hPa").
 *
 * Assumptions:
 * - One day for the whole study area: QNH and ΔT are the same everywhere (horizontal uniformity).
 * - The deviation ΔT is constant with height, and the tropopause stays at 11 km true altitude.
 * - Dry air: the virtual temperature is ignored (moist air is lighter: in warm humid air near the ground the
 *   virtual temperature exceeds T by up to ~4 K, about 1 % of the height through that layer).
 * - Geopotential ≈ geometric altitude: the hypsometric equation gives geopotential altitude, here taken as
 *   metres AMSL. The difference is z²/(6356.8 km + z): 1.5 m at 3 km, 16 m (0.16 %) at 10 km, 63 m (0.31 %) at
 *   20 km — under 0.2 % below 12.7 km.
 * - Limits: the model is meant for 0–20 km. Pressure altitudes from −1 km (the ground below sea level, a high-QNH
 *   day's lowest levels) to 20 km (the ISA table of shared/units.ts) are accepted; a true altitude is accepted
 *   when its pressure altitude on the day lies in that range.
 */
import { InputError } from '../../shared/errors.ts';
import {
  ISA_MAX_ALTITUDE_M,
  ISA_SEA_LEVEL_PRESSURE_HPA,
  ISA_TROPOPAUSE_M,
  isaAltitudeFromPressureM,
  isaPressureHpa,
  isaTemperatureK,
} from '../../shared/units.ts';

/** The day of a study: sea-level pressure (QNH, hPa) and the deviation from ISA temperature (°C), one for all. */
export interface Day {
  qnhHpa: number;
  isaDeviationC: number;
}

/** The ICAO standard day: QNH 1013.25 hPa, ISA temperature. */
export const STANDARD_DAY: Day = Object.freeze({ qnhHpa: ISA_SEA_LEVEL_PRESSURE_HPA, isaDeviationC: 0 });

/**
 * QNH accepted, hPa: every sea-level pressure on record lies inside — 870 hPa in Typhoon Tip (1979), 1084.8 hPa at
 * Tosontsengel, Mongolia (2001) [memory, WMO extremes archive].
 */
export const QNH_LIMITS_HPA = { min: 870, max: 1090 };
/**
 * ISA deviation accepted, °C. +40: ISA+40 is 55 °C at sea level, above the hottest reliable surface record (about
 * 54 °C, Death Valley) [memory]. −60: ISA−60 is −45 °C at sea level and −117 °C at the tropopause, a column colder
 * than any observed (tropopause minima are near −90 °C) [memory]; colder surface readings come with shallow
 * inversions, which a deviation held constant up the column would exaggerate.
 */
export const ISA_DEVIATION_LIMITS_C = { min: -60, max: 40 };
/** Pressure altitudes accepted, m. */
export const PRESSURE_ALTITUDE_LIMITS_M = { min: -1_000, max: ISA_MAX_ALTITUDE_M };

// The Doc 7488 troposphere in the rounded form that `isaPressureHpa` uses, p = p0·(1 − k·H)^n with k = L/T0:
// restated because shared/units.ts keeps them private. The standard-day identity test keeps the two in step.
const TROPO_COEFF_PER_M = 2.25577e-5;
const TROPO_EXP = 5.25588;
const T0_K = isaTemperatureK(0);
const T11_K = isaTemperatureK(ISA_TROPOPAUSE_M);
/** g/(R·T11) of the ISA's isothermal layer, 1/m, read off the ISA's own pressures at 11 and 20 km. */
const ISA_STRATO_INV_SCALE_PER_M =
  Math.log(isaPressureHpa(ISA_TROPOPAUSE_M) / isaPressureHpa(ISA_MAX_ALTITUDE_M)) /
  (ISA_MAX_ALTITUDE_M - ISA_TROPOPAUSE_M);

/** The day's profile constants. */
interface DayProfile {
  qnh: number;
  /** (T0 + ΔT)/T0: the day's troposphere is the ISA's stretched by this factor in height. */
  stretch: number;
  /** Pressure at 11 km true altitude, hPa. */
  p11: number;
  /** g/(R·(T11 + ΔT)), 1/m. */
  invScale: number;
}

function profileOf(day: Day): DayProfile {
  const stretch = (T0_K + day.isaDeviationC) / T0_K;
  const p11 = day.qnhHpa * Math.pow(1 - (TROPO_COEFF_PER_M * ISA_TROPOPAUSE_M) / stretch, TROPO_EXP);
  const invScale = (ISA_STRATO_INV_SCALE_PER_M * T11_K) / (T11_K + day.isaDeviationC);
  return { qnh: day.qnhHpa, stretch, p11, invScale };
}

/** True altitude (m) of the static pressure p (hPa) on the day. */
function altitudeOfPressure(pHpa: number, d: DayProfile): number {
  if (pHpa >= d.p11) return (d.stretch * (1 - Math.pow(pHpa / d.qnh, 1 / TROPO_EXP))) / TROPO_COEFF_PER_M;
  return ISA_TROPOPAUSE_M + Math.log(d.p11 / pHpa) / d.invScale;
}

/** Static pressure (hPa) at true altitude z (m) on the day. */
function pressureAtAltitude(z: number, d: DayProfile): number {
  if (z <= ISA_TROPOPAUSE_M) return d.qnh * Math.pow(1 - (TROPO_COEFF_PER_M * z) / d.stretch, TROPO_EXP);
  return d.p11 * Math.exp(-d.invScale * (z - ISA_TROPOPAUSE_M));
}

/**
 * Checks a day's values and throws InputError(where + field, found, expected): QNH from 870 to 1090 hPa, ISA
 * deviation from −60 to +40 °C (QNH_LIMITS_HPA, ISA_DEVIATION_LIMITS_C say why).
 */
export function checkDay(day: Day, where: string): void {
  const d: unknown = day;
  if (typeof d !== 'object' || d === null) {
    throw new InputError(where, String(d), 'a day { qnhHpa, isaDeviationC }');
  }
  const { qnhHpa, isaDeviationC } = d as Record<string, unknown>;
  const Q = QNH_LIMITS_HPA;
  if (typeof qnhHpa !== 'number' || !(qnhHpa >= Q.min && qnhHpa <= Q.max)) {
    throw new InputError(
      `${where}.qnhHpa`,
      String(qnhHpa),
      `a sea-level pressure (QNH) from ${Q.min} to ${Q.max} hPa (every sea-level pressure on record lies inside)`,
    );
  }
  const D = ISA_DEVIATION_LIMITS_C;
  if (typeof isaDeviationC !== 'number' || !(isaDeviationC >= D.min && isaDeviationC <= D.max)) {
    throw new InputError(
      `${where}.isaDeviationC`,
      String(isaDeviationC),
      `a deviation from ISA temperature from ${D.min} to +${D.max} °C (ISA+40 is hotter than any surface on record; ` +
        `ISA−60 is colder than any observed column)`,
    );
  }
}

/** True altitude (m AMSL) of a pressure altitude (m, i.e. FL × 30.48) on the given day. */
export function trueAltitudeM(pressureAltitudeM: number, day: Day): number {
  checkDay(day, 'trueAltitudeM: day');
  const L = PRESSURE_ALTITUDE_LIMITS_M;
  if (!(pressureAltitudeM >= L.min && pressureAltitudeM <= L.max)) {
    throw new InputError(
      'trueAltitudeM: pressureAltitudeM',
      `${pressureAltitudeM} m`,
      `a pressure altitude from ${L.min} to ${L.max} m`,
    );
  }
  return altitudeOfPressure(isaPressureHpa(pressureAltitudeM), profileOf(day));
}

/** Inverse: the pressure altitude (m) of a true altitude (m AMSL) on the day. */
export function pressureAltitudeM(trueAltitudeM: number, day: Day): number {
  checkDay(day, 'pressureAltitudeM: day');
  const L = PRESSURE_ALTITUDE_LIMITS_M;
  const p = Number.isFinite(trueAltitudeM) ? pressureAtAltitude(trueAltitudeM, profileOf(day)) : NaN;
  // The ends of the range with a rounding's margin, so that a round trip from an end does not fail.
  const pHi = isaPressureHpa(L.min);
  const pLo = isaPressureHpa(L.max);
  if (!(p <= pHi * (1 + 1e-12) && p >= pLo * (1 - 1e-12))) {
    throw new InputError(
      'pressureAltitudeM: trueAltitudeM',
      `${trueAltitudeM} m`,
      `a true altitude whose pressure altitude on this day lies from ${L.min} to ${L.max} m`,
    );
  }
  return isaAltitudeFromPressureM(Math.min(pHi, Math.max(pLo, p)));
}
