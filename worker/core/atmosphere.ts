/**
 * Gaseous attenuation (oxygen and water vapour) along a radar path, one way. Two-way loss is twice the one-way
 * loss: callers double it.
 *
 * Specific attenuation γ = γo + γw (dB/km) at frequency f (GHz), total pressure p (hPa), temperature T (K) and
 * water-vapour density ρ (g/m³): the closed-form approximations of ITU-R P.676-10 (09/2013) Annex 2 §1,
 * eq. (22) for dry air (oxygen; six pieces from 1 to 350 GHz, the first, f ≤ 54 GHz, covers every surveillance
 * radar band) and eq. (23) for water vapour, with rp = p/1013 and rt = 288/(273 + t), t = T − 273.15 °C (the
 * Recommendation's 273, not 273.15, is kept so that its validation values reproduce). Annex 2 is the fit of the
 * line-by-line sum of Annex 1 for "approximate estimates"; editions from P.676-11 on compute Annex 2's specific
 * attenuation from the Annex 1 line sum instead (44 O₂ and 35 H₂O lines) — not used here. Below 1 GHz (outside
 * P.676's range) the same expression is used: its first term has the Lorentzian shape f²/(f² + d²) of the
 * non-resonant Debye spectrum that Annex 1 adds for oxygen, so it falls smoothly to 0 with f.
 *
 * Standard atmosphere along the path (altitude h in metres AMSL, geometric): ITU-R P.835 mean annual global
 * reference atmosphere, which below 20 km is the ICAO standard atmosphere (Doc 7488, the functions of
 * shared/units.ts) in geopotential height h′ = 6356.766·h/(6356.766 + h) (h, h′ in km; P.835 eq. (1a)):
 * - p(h), T(h) from `isaPressureHpa`, `isaTemperatureK` up to h′ = 20 km. Above it the isothermal layer is
 *   continued (P.835 warms by 1 K/km from 20 km: the pressure here is ~5 % low at 32 km). All the air above 20 km
 *   holds 1.5e−4 dB at zenith and 2e−3 dB on a grazing ray at 1–3 GHz, so the difference is < 1e−3 dB on any
 *   path. Above ATMOSPHERE_TOP_M = 50 km γ = 0 (p < 0.5 hPa and γ ∝ p²: < 1e−6 dB on any path).
 * - ρ(h) = ρ0·exp(−h/h0), ρ0 = 7.5 g/m³ at sea level, h0 = 2 km (P.835 §1.1), never below a volume mixing ratio
 *   e/p of 2e−6, e = ρ·T/216.7 hPa the vapour pressure (P.835 §1.1 [memory for the floor]). The profile is
 *   anchored at sea level whatever the antenna's altitude.
 * - Below −5 km (the ISA table's floor; only rays into the ground get there) the values at −5 km.
 *
 * Path: on the effective earth of radius Re = k·R, k = 4/3 (the refraction model of the horizon engine), the ray is
 * a straight line; at slant range s from an antenna at ha with elevation ε its altitude is
 *   h(s) = √(s² + r0² + 2·s·r0·sin ε) − Re,   r0 = Re + ha,
 * and the path length element is ds (the 4/3-earth ray's length is its slant range). The one-way loss
 *   A(ε, R) = ∫₀^R γ(h(s)) ds
 * is integrated numerically: composite Simpson's rule with steps ≤ DIRECT_STEP_M = 200 m in `oneWayPathLossDb`
 * (exact to the model within 1e−5 relative, the most on steep rays from the tropopause's kink in T; 1e−11 on
 * low rays), up to where the ray leaves the atmosphere. Not used: P.676 Annex 2 §2.2's equivalent-height slant-path method (A = (γo·ho + γw·hw)/sin φ for
 * φ > 5°, and a separate expression for 0–5°): the integral holds at every elevation, negative ones included, and
 * at ranges that end inside the atmosphere; the tests check it against the equivalent heights at zenith and 10°.
 * The classic radar-engineering alternative is Blake's two-way absorption curves (L. V. Blake, NRL Report 7461,
 * 1972; *Radar Range-Performance Analysis*, 1980): Van Vleck's O₂/H₂O model integrated through an exponential
 * reference atmosphere, tabulated by range, elevation and frequency; no numbers from it were at hand for the
 * tests.
 *
 * Magnitudes (sea level, 1013.25 hPa, 15 °C, 7.5 g/m³): γ ≈ 0.0060 dB/km at 1.3 GHz, 0.0070 dB/km at 3 GHz, almost
 * all oxygen (water vapour adds 1.6 % at 1.3 GHz, 7 % at 3 GHz); one-way zenith loss from sea level ≈ 0.033 dB at
 * 1.3 GHz, 0.037 dB at 3 GHz; a 0° ray from sea level collects 1.7 dB at 1.3 GHz, 1.9 dB at 3 GHz (one way) before
 * it leaves the atmosphere.
 *
 * Hot path: `PathLossTable` holds, for one frequency and antenna altitude, the path's mean specific attenuation
 * m = A/R on a grid of elevation × range, and returns R·m bilinear. Both axes are uniform in asinh: elevation in
 * asinh(ε/1°) (rows 0.05° apart at the horizon, 5 % apart of ε above a few degrees), range in asinh(R/5 km)
 * (250 m apart near the antenna, 5 % of R far out): where A bends fastest — near the horizon, near the antenna —
 * the nodes are densest. A is integrated along each row (trapezoids ≤ 100 m on a 25 m altitude profile of γ).
 * Tabulating m rather than A keeps the interpolation exact for a uniform atmosphere and within 0.3 % near the
 * antenna on steep rays (A(R) bends at the scale of the atmosphere there); the result is then clamped between the
 * tabulated A of the cell's two range columns, which keeps it monotone in range where A levels off (R·m is
 * concave or increasing inside a cell). Agreement with the direct integral on rays that stay above the sea:
 * test/atmosphere.test.ts checks < 1 % (measured below 0.2 %; rays that dive kilometres underground, through the
 * model's extrapolated air, to 1.5 %). `oneWayDb` allocates nothing.
 */
import { InputError } from '../../shared/errors.ts';
import {
  DEFAULT_K_FACTOR,
  ISA_MAX_ALTITUDE_M,
  ISA_TROPOPAUSE_M,
  effectiveEarthRadiusM,
  isaPressureHpa,
  isaTemperatureK,
} from '../../shared/units.ts';

/** Sea-level water-vapour density of the reference profile, g/m³ (ITU-R P.835 §1.1). */
export const WATER_VAPOUR_SEA_LEVEL_G_M3 = 7.5;
/** Scale height of the reference water-vapour profile, m (ITU-R P.835 §1.1). */
export const WATER_VAPOUR_SCALE_HEIGHT_M = 2000;
/** Smallest volume mixing ratio e/p of the reference water-vapour profile (ITU-R P.835 §1.1). */
const WATER_VAPOUR_MIN_MIXING_RATIO = 2e-6;
/** Altitude above which the gases attenuate nothing here, m. */
export const ATMOSPHERE_TOP_M = 50_000;
/** Lowest altitude of the atmosphere model (the ISA table's floor); below it the values at this altitude. */
const ATMOSPHERE_FLOOR_M = -5_000;
/** Earth radius of the geopotential conversion, m (ITU-R P.835 eq. (1a); US Standard Atmosphere 1976). */
const GEOPOTENTIAL_EARTH_RADIUS_M = 6_356_766;
/** Frequencies accepted, GHz: P.676-10 Annex 2 reaches 350 GHz; below 1 GHz an extrapolation (see above). */
export const MAX_FREQUENCY_GHZ = 350;
/** Antenna altitudes accepted, m AMSL. */
export const ANTENNA_ALT_LIMITS_M = { min: -1_000, max: ISA_MAX_ALTITUDE_M };
/** Longest path accepted, m (beyond any radar's reach; the table's size grows with its logarithm). */
const MAX_RANGE_M = 1e8;
/** Largest Simpson step of the direct integral, m. */
const DIRECT_STEP_M = 200;

// Pressure above 20 km (geopotential): the isothermal layer continued, p = p20·exp(−(h′ − 20 km)/Hs), with the
// scale height read off the ISA's own isothermal layer (11–20 km) so that the constants stay in shared/units.ts.
const P20_HPA = isaPressureHpa(ISA_MAX_ALTITUDE_M);
const T20_K = isaTemperatureK(ISA_MAX_ALTITUDE_M);
const STRATO_INV_SCALE_PER_M =
  Math.log(isaPressureHpa(ISA_TROPOPAUSE_M) / P20_HPA) / (ISA_MAX_ALTITUDE_M - ISA_TROPOPAUSE_M);

/** Pressure (hPa), temperature (K) and water-vapour density (g/m³) of the reference atmosphere at h (m AMSL). */
export interface AtmosphereState {
  pressureHpa: number;
  temperatureK: number;
  waterVapourGm3: number;
}

/**
 * The reference atmosphere of this module at a geometric altitude (m AMSL): ISA/P.835 mean annual global below
 * 20 km geopotential, the isothermal layer continued above, water vapour 7.5 g/m³·exp(−h/2 km) with the P.835
 * mixing-ratio floor. Altitudes below −5 km take the values at −5 km.
 */
export function standardAtmosphere(altitudeM: number): AtmosphereState {
  const out = { pressureHpa: 0, temperatureK: 0, waterVapourGm3: 0 };
  atmosphereAt(altitudeM, out);
  return out;
}

function atmosphereAt(altitudeM: number, out: AtmosphereState): void {
  const h = altitudeM < ATMOSPHERE_FLOOR_M ? ATMOSPHERE_FLOOR_M : altitudeM;
  const hp = Math.max(
    ATMOSPHERE_FLOOR_M,
    (GEOPOTENTIAL_EARTH_RADIUS_M * h) / (GEOPOTENTIAL_EARTH_RADIUS_M + h),
  );
  let p: number;
  let t: number;
  if (hp <= ISA_MAX_ALTITUDE_M) {
    p = isaPressureHpa(hp);
    t = isaTemperatureK(hp);
  } else {
    p = P20_HPA * Math.exp(-STRATO_INV_SCALE_PER_M * (hp - ISA_MAX_ALTITUDE_M));
    t = T20_K;
  }
  let rho = WATER_VAPOUR_SEA_LEVEL_G_M3 * Math.exp(-h / WATER_VAPOUR_SCALE_HEIGHT_M);
  // Mixing-ratio floor: e/p ≥ 2e−6 with e = ρ·T/216.7.
  const rhoMin = (WATER_VAPOUR_MIN_MIXING_RATIO * p * 216.7) / t;
  if (rho < rhoMin) rho = rhoMin;
  out.pressureHpa = p;
  out.temperatureK = t;
  out.waterVapourGm3 = rho;
}

// ---------------------------------------------------------------------------------------------------------------
// Specific attenuation: ITU-R P.676-10 Annex 2 §1

/** φ(rp, rt, a, b, c, d) = rp^a·rt^b·exp(c(1 − rp) + d(1 − rt)), P.676-10 eq. (22u). */
function phi(rp: number, rt: number, a: number, b: number, c: number, d: number): number {
  return Math.pow(rp, a) * Math.pow(rt, b) * Math.exp(c * (1 - rp) + d * (1 - rt));
}

/** Dry-air specific attenuation γo, dB/km, P.676-10 Annex 2 eq. (22). f in GHz, 0 < f ≤ 350. */
function oxygenDbPerKm(f: number, rp: number, rt: number): number {
  const f2rp2 = f * f * rp * rp * 1e-3;
  if (f <= 54) {
    const xi1 = phi(rp, rt, 0.0717, -1.8132, 0.0156, -1.6515);
    const xi2 = phi(rp, rt, 0.5146, -4.6368, -0.1921, -5.7416);
    const xi3 = phi(rp, rt, 0.3414, -6.5851, 0.213, -8.5854);
    return (
      ((7.2 * Math.pow(rt, 2.8)) / (f * f + 0.34 * rp * rp * Math.pow(rt, 1.6)) +
        (0.62 * xi3) / (Math.pow(54 - f, 1.16 * xi1) + 0.83 * xi2)) *
      f2rp2
    );
  }
  if (f <= 66) {
    // The 60 GHz complex: logarithmic (Lagrange) interpolation between γ at 54, 58, 60, 62, 64, 66 GHz.
    const g54 = 2.192 * phi(rp, rt, 1.8286, -1.9487, 0.4051, -2.8509);
    const g58 = 12.59 * phi(rp, rt, 1.0045, 3.561, 0.1588, 1.2834);
    const g60 = 15.0 * phi(rp, rt, 0.9003, 4.1335, 0.0427, 1.6088);
    const g62 = 14.28 * phi(rp, rt, 0.9886, 3.4176, 0.1827, 1.3429);
    if (f <= 60) {
      return Math.exp(
        (Math.log(g54) / 24) * (f - 58) * (f - 60) -
          (Math.log(g58) / 8) * (f - 54) * (f - 60) +
          (Math.log(g60) / 12) * (f - 54) * (f - 58),
      );
    }
    if (f <= 62) return g60 + ((g62 - g60) * (f - 60)) / 2;
    const g64 = 6.819 * phi(rp, rt, 1.432, 0.6258, 0.3177, -0.5914);
    const g66 = 1.908 * phi(rp, rt, 2.0717, -4.1404, 0.491, -4.8718);
    return Math.exp(
      (Math.log(g62) / 8) * (f - 64) * (f - 66) -
        (Math.log(g64) / 4) * (f - 62) * (f - 66) +
        (Math.log(g66) / 8) * (f - 62) * (f - 64),
    );
  }
  if (f <= 120) {
    const xi4 = phi(rp, rt, -0.0112, 0.0092, -0.1033, -0.0009);
    const xi5 = phi(rp, rt, 0.2705, -2.7192, -0.3016, -4.1033);
    const xi6 = phi(rp, rt, 0.2445, -5.9191, 0.0422, -8.0719);
    const xi7 = phi(rp, rt, -0.1833, 6.5589, -0.2402, 6.131);
    return (
      (3.02e-4 * Math.pow(rt, 3.5) +
        (0.283 * Math.pow(rt, 3.8)) / ((f - 118.75) * (f - 118.75) + 2.91 * rp * rp * Math.pow(rt, 1.6)) +
        (0.502 * xi6 * (1 - 0.0163 * xi7 * (f - 66))) / (Math.pow(f - 66, 1.4346 * xi4) + 1.15 * xi5)) *
      f2rp2
    );
  }
  const delta = -0.00306 * phi(rp, rt, 3.211, -14.94, 1.583, -16.37);
  return (
    (3.02e-4 / (1 + 1.9e-5 * Math.pow(f, 1.5)) +
      (0.283 * Math.pow(rt, 0.3)) / ((f - 118.75) * (f - 118.75) + 2.91 * rp * rp * Math.pow(rt, 1.6))) *
      f2rp2 *
      Math.pow(rt, 3.5) +
    delta
  );
}

/** 1 + ((f − fi)/(f + fi))², P.676-10 eq. (23). */
function gLine(f: number, fi: number): number {
  const r = (f - fi) / (f + fi);
  return 1 + r * r;
}

/** Water-vapour specific attenuation γw, dB/km, P.676-10 Annex 2 eq. (23). f in GHz (≤ 350), ρ in g/m³. */
function waterDbPerKm(f: number, rp: number, rt: number, rho: number): number {
  if (rho <= 0) return 0;
  const eta1 = 0.955 * rp * Math.pow(rt, 0.68) + 0.006 * rho;
  const eta2 = 0.735 * rp * Math.pow(rt, 0.5) + 0.0353 * Math.pow(rt, 4) * rho;
  const e1 = eta1 * eta1;
  const u = 1 - rt;
  const sq = (x: number) => x * x;
  const sum =
    ((3.98 * eta1 * Math.exp(2.23 * u)) / (sq(f - 22.235) + 9.42 * e1)) * gLine(f, 22) +
    (11.96 * eta1 * Math.exp(0.7 * u)) / (sq(f - 183.31) + 11.14 * e1) +
    (0.081 * eta1 * Math.exp(6.44 * u)) / (sq(f - 321.226) + 6.29 * e1) +
    (3.66 * eta1 * Math.exp(1.6 * u)) / (sq(f - 325.153) + 9.22 * e1) +
    (25.37 * eta1 * Math.exp(1.09 * u)) / sq(f - 380) +
    (17.4 * eta1 * Math.exp(1.46 * u)) / sq(f - 448) +
    ((844.6 * eta1 * Math.exp(0.17 * u)) / sq(f - 557)) * gLine(f, 557) +
    ((290 * eta1 * Math.exp(0.41 * u)) / sq(f - 752)) * gLine(f, 752) +
    ((8.3328e4 * eta2 * Math.exp(0.99 * u)) / sq(f - 1780)) * gLine(f, 1780);
  return sum * f * f * Math.pow(rt, 2.5) * rho * 1e-4;
}

/** γo + γw (dB/km) of the reference atmosphere at altitude h; 0 above ATMOSPHERE_TOP_M. */
function gammaAtAltitude(fGHz: number, altitudeM: number, scratch: AtmosphereState): number {
  if (altitudeM > ATMOSPHERE_TOP_M) return 0;
  atmosphereAt(altitudeM, scratch);
  const rp = scratch.pressureHpa / 1013;
  const rt = 288 / (scratch.temperatureK - 0.15);
  return oxygenDbPerKm(fGHz, rp, rt) + waterDbPerKm(fGHz, rp, rt, scratch.waterVapourGm3);
}

/**
 * Specific attenuation (dB/km) of dry air (oxygen) and water vapour at frequency f (GHz), pressure p (hPa),
 * temperature T (K), water-vapour density ρ (g/m³): ITU-R P.676-10 Annex 2 eqs. (22) and (23) (see the module
 * comment). 0 < f ≤ 350 GHz (P.676's range starts at 1 GHz; below it, an extrapolation).
 */
export function specificAttenuationDbPerKm(
  fGHz: number,
  pHpa: number,
  tK: number,
  rhoGm3: number,
): { oxygen: number; water: number } {
  if (!(fGHz > 0 && fGHz <= MAX_FREQUENCY_GHZ)) {
    throw new InputError(
      'specificAttenuationDbPerKm: frequency',
      `${fGHz} GHz`,
      `a frequency above 0 and at most ${MAX_FREQUENCY_GHZ} GHz (ITU-R P.676-10 Annex 2)`,
    );
  }
  if (!(pHpa > 0 && pHpa <= 1100)) {
    throw new InputError(
      'specificAttenuationDbPerKm: pressure',
      `${pHpa} hPa`,
      'a pressure above 0 and at most 1100 hPa',
    );
  }
  if (!(tK >= 150 && tK <= 350)) {
    throw new InputError(
      'specificAttenuationDbPerKm: temperature',
      `${tK} K`,
      'an air temperature from 150 to 350 K',
    );
  }
  if (!(rhoGm3 >= 0 && rhoGm3 <= 50)) {
    throw new InputError(
      'specificAttenuationDbPerKm: water-vapour density',
      `${rhoGm3} g/m³`,
      'a water-vapour density from 0 to 50 g/m³',
    );
  }
  const rp = pHpa / 1013;
  const rt = 288 / (tK - 0.15);
  return { oxygen: oxygenDbPerKm(fGHz, rp, rt), water: waterDbPerKm(fGHz, rp, rt, rhoGm3) };
}

// ---------------------------------------------------------------------------------------------------------------
// Path geometry and the direct integral

const RE_M = effectiveEarthRadiusM(DEFAULT_K_FACTOR);

/** Altitude (m) at slant range s along the 4/3-earth ray; r0 = Re + ha, written to avoid cancellation. */
function rayAltitudeM(s: number, antennaAltM: number, r0: number, sinE: number): number {
  const q = s * s + 2 * s * r0 * sinE;
  return antennaAltM + q / (Math.sqrt(r0 * r0 + q) + r0);
}

/** Slant range at which the ray leaves the atmosphere for good (climbs through ATMOSPHERE_TOP_M). */
function exitRangeM(r0: number, sinE: number): number {
  const rTop = RE_M + ATMOSPHERE_TOP_M;
  const cos2 = 1 - sinE * sinE;
  return -r0 * sinE + Math.sqrt(rTop * rTop - r0 * r0 * cos2);
}

function checkFrequencyMHz(fMHz: number, where: string): number {
  if (!(fMHz > 0 && fMHz <= MAX_FREQUENCY_GHZ * 1000)) {
    throw new InputError(
      `${where}: fMHz`,
      String(fMHz),
      `a frequency above 0 and at most ${MAX_FREQUENCY_GHZ * 1000} MHz (ITU-R P.676-10 Annex 2)`,
    );
  }
  return fMHz / 1000;
}

function checkAntennaAlt(antennaAltM: number, where: string): void {
  const L = ANTENNA_ALT_LIMITS_M;
  if (!(antennaAltM >= L.min && antennaAltM <= L.max)) {
    throw new InputError(
      `${where}: antennaAltM`,
      String(antennaAltM),
      `an altitude from ${L.min} to ${L.max} m AMSL`,
    );
  }
}

/**
 * One-way gaseous attenuation (dB) along a path from an antenna at altitude antennaAltM (m AMSL) to a target at
 * slant range rangeM and elevation elevationRad (at the antenna), in the standard atmosphere of this module
 * (ITU-R P.835 mean annual global reference = ISA below 20 km, water vapour 7.5 g/m³ at sea level with a 2 km
 * scale height): the integral of P.676-10 Annex 2's γ along the straight ray on the 4/3 earth, Simpson's rule
 * with steps ≤ 200 m. Not for the hot path: about 1 µs per 200 m of path inside the atmosphere.
 */
export function oneWayPathLossDb(
  fMHz: number,
  antennaAltM: number,
  elevationRad: number,
  rangeM: number,
): number {
  const fGHz = checkFrequencyMHz(fMHz, 'oneWayPathLossDb');
  checkAntennaAlt(antennaAltM, 'oneWayPathLossDb');
  if (!(elevationRad >= -Math.PI / 2 && elevationRad <= Math.PI / 2)) {
    throw new InputError(
      'oneWayPathLossDb: elevationRad',
      String(elevationRad),
      'an angle from −π/2 to π/2 rad',
    );
  }
  if (!(rangeM >= 0 && rangeM <= MAX_RANGE_M)) {
    throw new InputError(
      'oneWayPathLossDb: rangeM',
      String(rangeM),
      `a slant range from 0 to ${MAX_RANGE_M} m`,
    );
  }
  const sinE = Math.sin(elevationRad);
  const r0 = RE_M + antennaAltM;
  const len = Math.min(rangeM, exitRangeM(r0, sinE));
  if (!(len > 0)) return 0;
  const n = 2 * Math.max(1, Math.ceil(len / (2 * DIRECT_STEP_M)));
  const h = len / n;
  const scratch: AtmosphereState = { pressureHpa: 0, temperatureK: 0, waterVapourGm3: 0 };
  let sum =
    gammaAtAltitude(fGHz, antennaAltM, scratch) +
    gammaAtAltitude(fGHz, rayAltitudeM(len, antennaAltM, r0, sinE), scratch);
  for (let i = 1; i < n; i++) {
    const g = gammaAtAltitude(fGHz, rayAltitudeM(i * h, antennaAltM, r0, sinE), scratch);
    sum += (i & 1 ? 4 : 2) * g;
  }
  return (sum * h) / 3 / 1000; // dB/km × m → dB
}

// ---------------------------------------------------------------------------------------------------------------
// The table

/** Elevation axis: u = asinh(ε/ELEV_SCALE_RAD), ELEV_ROWS rows from −90° to 90°. */
const ELEV_SCALE_RAD = Math.PI / 180;
const ELEV_DU = 0.05;
/** Range axis: v = asinh(R/RANGE_SCALE_M), columns ΔV apart from 0 to the table's reach. */
const RANGE_SCALE_M = 5_000;
const RANGE_DV = 0.05;
/** The γ(h) profile behind the table: every PROFILE_STEP_M from the floor to the top of the atmosphere. */
const PROFILE_STEP_M = 25;
/** Largest trapezoid along a row, m. */
const ROW_STEP_M = 250;

/**
 * A precomputed table of the one-way loss (dB) for one frequency (MHz) and antenna altitude (m AMSL), for slant
 * ranges up to maxRangeM: `oneWayDb(ε, R)` = R × the path's mean specific attenuation, bilinear in
 * (asinh(ε/1°), asinh(R/5 km)) — see the module comment. No allocation per call. Elevations beyond ±π/2 count as
 * ±π/2; NaN gives NaN; a negative range throws; beyond maxRangeM the mean specific attenuation at maxRangeM is held
 * (A grows in proportion to R — an over-estimate for a rising ray, so callers that iterate on R a little past the
 * table's reach stay safe).
 */
export class PathLossTable {
  readonly fMHz: number;
  readonly antennaAltM: number;
  readonly maxRangeM: number;
  private readonly rows: number;
  private readonly cols: number;
  private readonly u0: number;
  private readonly invDu: number;
  private readonly invDv: number;
  /** Mean specific attenuation A/R (dB/m), rows × cols, row-major. */
  private readonly mean: Float32Array;
  /** The loss A itself (dB), same layout: the bounds that keep the interpolation monotone. */
  private readonly loss: Float32Array;

  constructor(fMHz: number, antennaAltM: number, maxRangeM: number) {
    const fGHz = checkFrequencyMHz(fMHz, 'PathLossTable');
    checkAntennaAlt(antennaAltM, 'PathLossTable');
    if (!(maxRangeM > 0 && maxRangeM <= MAX_RANGE_M)) {
      throw new InputError(
        'PathLossTable: maxRangeM',
        String(maxRangeM),
        `a range above 0 and at most ${MAX_RANGE_M} m`,
      );
    }
    this.fMHz = fMHz;
    this.antennaAltM = antennaAltM;
    this.maxRangeM = maxRangeM;

    const uMax = Math.asinh(Math.PI / 2 / ELEV_SCALE_RAD);
    this.rows = 2 * Math.ceil(uMax / ELEV_DU) + 1;
    this.u0 = -uMax;
    const du = (2 * uMax) / (this.rows - 1);
    this.invDu = 1 / du;
    const vMax = Math.asinh(maxRangeM / RANGE_SCALE_M);
    this.cols = Math.max(2, Math.ceil(vMax / RANGE_DV) + 1);
    const dv = vMax / (this.cols - 1);
    this.invDv = 1 / dv;

    const colRange = new Float64Array(this.cols);
    for (let j = 0; j < this.cols; j++) colRange[j] = RANGE_SCALE_M * Math.sinh(j * dv);
    colRange[this.cols - 1] = maxRangeM;

    const profile = profileFor(fGHz);
    this.mean = new Float32Array(this.rows * this.cols);
    this.loss = new Float32Array(this.rows * this.cols);
    for (let i = 0; i < this.rows; i++) {
      const e = Math.max(-Math.PI / 2, Math.min(Math.PI / 2, ELEV_SCALE_RAD * Math.sinh(this.u0 + i * du)));
      fillRow(this.mean, this.loss, i * this.cols, colRange, profile, antennaAltM, Math.sin(e));
    }
  }

  /** One-way loss (dB) at elevation ε (rad, at the antenna) and slant range R (m). */
  oneWayDb(elevationRad: number, rangeM: number): number {
    if (!(rangeM >= 0)) {
      if (rangeM !== rangeM) return NaN;
      throw new RangeError(
        `PathLossTable.oneWayDb: range ${rangeM} m; expected a slant range of 0 m or more`,
      );
    }
    let fu = (Math.asinh(elevationRad / ELEV_SCALE_RAD) - this.u0) * this.invDu;
    if (!(fu > 0)) {
      if (fu !== fu) return NaN;
      fu = 0;
    }
    const lastRow = this.rows - 1;
    if (fu > lastRow) fu = lastRow;
    const lastCol = this.cols - 1;
    const beyond = rangeM >= this.maxRangeM;
    let fv = beyond ? lastCol : Math.asinh(rangeM / RANGE_SCALE_M) * this.invDv;
    if (fv > lastCol) fv = lastCol;
    let i = Math.floor(fu);
    if (i === lastRow) i = lastRow - 1;
    let j = Math.floor(fv);
    if (j === lastCol) j = lastCol - 1;
    const a = fu - i;
    const b = fv - j;
    const m = this.mean;
    const k = i * this.cols + j;
    const k2 = k + this.cols;
    const m1 = m[k] + (m[k + 1] - m[k]) * b;
    const m2 = m[k2] + (m[k2 + 1] - m[k2]) * b;
    const loss = rangeM * (m1 + (m2 - m1) * a);
    // Bounds: the loss at the cell's two range columns (interpolated in elevation). Within a cell R·m is concave
    // or increasing in R, so clamping it between them keeps the table monotone in range, as the loss is.
    const L = this.loss;
    const lo = L[k] + (L[k2] - L[k]) * a;
    if (loss < lo) return lo;
    if (beyond) return loss;
    const hi = L[k + 1] + (L[k2 + 1] - L[k + 1]) * a;
    return loss > hi ? hi : loss;
  }
}

/** γ (dB/m) every PROFILE_STEP_M from ATMOSPHERE_FLOOR_M to ATMOSPHERE_TOP_M (one node past it, at 0). */
/** γ profiles by frequency: tables for other antenna altitudes at one frequency share theirs. */
const PROFILES = new Map<number, Float64Array>();
function profileFor(fGHz: number): Float64Array {
  let p = PROFILES.get(fGHz);
  if (!p) {
    if (PROFILES.size > 64) PROFILES.clear();
    p = buildProfile(fGHz);
    PROFILES.set(fGHz, p);
  }
  return p;
}

function buildProfile(fGHz: number): Float64Array {
  const n = Math.ceil((ATMOSPHERE_TOP_M - ATMOSPHERE_FLOOR_M) / PROFILE_STEP_M) + 2;
  const out = new Float64Array(n);
  const scratch: AtmosphereState = { pressureHpa: 0, temperatureK: 0, waterVapourGm3: 0 };
  for (let k = 0; k < n; k++)
    out[k] = gammaAtAltitude(fGHz, ATMOSPHERE_FLOOR_M + k * PROFILE_STEP_M, scratch) / 1000;
  return out;
}

/** γ (dB/m) at altitude h from the profile, linear between nodes; clamped at the floor, 0 above the top. */
function profileAt(profile: Float64Array, h: number): number {
  let x = (h - ATMOSPHERE_FLOOR_M) / PROFILE_STEP_M;
  if (x <= 0) x = 0;
  const k = Math.floor(x);
  if (k >= profile.length - 1) return 0;
  return profile[k] + (profile[k + 1] - profile[k]) * (x - k);
}

/** One row: A(R_j) and A(R_j)/R_j along the ray, trapezoids ≤ ROW_STEP_M between columns. */
function fillRow(
  out: Float32Array,
  outLoss: Float32Array,
  offset: number,
  colRange: Float64Array,
  profile: Float64Array,
  antennaAltM: number,
  sinE: number,
): void {
  const r0 = RE_M + antennaAltM;
  const exit = exitRangeM(r0, sinE);
  let g0 = profileAt(profile, antennaAltM);
  out[offset] = g0;
  let acc = 0;
  let s0 = 0;
  for (let j = 1; j < colRange.length; j++) {
    const s1 = colRange[j];
    const end = Math.min(s1, exit);
    if (end > s0) {
      const n = Math.ceil((end - s0) / ROW_STEP_M);
      const h = (end - s0) / n;
      for (let k = 1; k <= n; k++) {
        const g1 = profileAt(profile, rayAltitudeM(s0 + k * h, antennaAltM, r0, sinE));
        acc += 0.5 * (g0 + g1) * h;
        g0 = g1;
      }
    }
    s0 = Math.max(s0, end);
    out[offset + j] = acc / s1;
    outLoss[offset + j] = acc;
  }
}
