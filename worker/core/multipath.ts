/**
 * Sea multipath: the two-ray (direct + sea-reflected) pattern propagation factor F over a smooth spherical
 * effective earth of radius Re = k·R with a statistical roughness factor.
 *
 *   F = | g(εd) + D·ρs·Γ·g(εr)·exp(−j·2π·Δ/λ) |                          (one-way, field ratio)
 *
 * g is the one-way VOLTAGE elevation pattern (√ of the normalised power gain, 1 at the beam peak), εd the
 * elevation of the direct ray and εr (negative) that of the reflected ray at the antenna, Δ the path difference
 * (reflected − direct), D the divergence factor of the sphere, ρs the roughness factor and Γ = |Γ|·e^{jφ} the
 * Fresnel reflection coefficient of sea water (time convention e^{jωt}: ε = ε′ − jε″). Convention: F² is the
 * power at the target relative to free space AT THE PEAK OF THE BEAM, so F already contains the direct-ray pattern
 * value; it replaces √g(ε) of the detection profile (sensor.ts): range = peak free-space range × F, both for a primary
 * (two-way F⁴ under the radar equation's fourth root) and a one-way link (F² under the square root).
 * Sources: L. V. Blake, Radar Range-Performance Analysis (1980; Artech House 1986) and D. K. Barton, Radar
 * System Analysis and Modeling (Artech House 2005), their propagation-factor chapters, after D. E. Kerr, Propagation of
 * Short Radio Waves (1951) — the interference formula, the reflection-point cubic and the divergence factor.
 *
 * Geometry (`reflectionGeometry`). Antenna at height h1, target at h2 (above the reflecting surface), ground
 * arc d. The specular point at arc d1 from the antenna (d2 = d − d1) starts from Kerr's cubic as Blake solves it
 * (parabolic earth, equal grazing angles h1′/d1 = h2′/d2 with hi′ = hi − di²/(2Re)):
 *     2·d1³ − 3·d·d1² + (d² − 2Re(h1 + h2))·d1 + 2Re·h1·d = 0,
 *     p = (2/√3)·√(Re(h1 + h2) + d²/4),  Φ = arccos(2Re(h1 − h2)·d / p³),  d1 = d/2 + p·cos((Φ + π)/3),
 * then is refined by safeguarded Newton steps on the exact sphere so that the grazing angles on both sides are
 * equal to rounding (the cubic alone is off by O((d/Re)²), which at high elevation angles and long ranges is a
 * sizeable fraction of a wavelength in Δ). In the tangent plane at the specular point, terminal i sits at
 *     xi = (Re + hi)·sin φi,   zi = hi·cos φi − 2Re·sin²(φi/2),   φi = di/Re   (no cancellation for huge Re),
 * the grazing angle is ψ = atan(z1/x1) = atan(z2/x2), and by the image construction (reflected path = distance
 * from the mirror image of the antenna) the path difference is exactly
 *     Δ = |P1′P2| − |P1P2| = 4·z1·z2 / (√((x1+x2)² + (z1+z2)²) + √((x1+x2)² + (z2−z1)²)),
 * which tends to the flat-earth 2·h1·h2/d. The antenna's local horizontal is tilted by φ1 from the tangent plane:
 *     εd = atan2(z2 − z1, x1 + x2) − φ1,   εr = −(ψ + φ1)
 * (εd is the same angle as `slantGeometry` in footprint.ts). Divergence factor (Blake, Barton; from memory):
 *     D = [1 + 2·d1·d2 / (Re·d·sin ψ)]^−½
 * — the in-plane spreading of rays reflected off a convex sphere; the transverse factor [1 + 2·d1·d2·sin ψ/(Re·d)]^−½
 * is left out (it differs from 1 by less than d/(4Re), under 0.3 % at 100 km). D = 1 when the specular point is under
 * either terminal (d1·d2 = 0).
 *
 * Reflection coefficient (`seaReflectionCoefficient`), Fresnel for a smooth plane interface, ψ grazing, ε complex
 * relative permittivity (Blake; Barton; any electromagnetics text):
 *     Γh = (sin ψ − √(ε − cos²ψ)) / (sin ψ + √(ε − cos²ψ)),   Γv = (ε·sin ψ − √(ε − cos²ψ)) / (ε·sin ψ + √(ε − cos²ψ)).
 * Both tend to −1 as ψ → 0; |Γv| has its pseudo-Brewster minimum at a few degrees over the sea.
 * Sea-water permittivity by default (`seaWaterPermittivity`): the Debye model with ionic conductivity of L. A. Klein
 * and C. T. Swift, "An improved model for the dielectric constant of sea water at microwave frequencies", IEEE
 * Trans. Antennas Propag. AP-25(1), 1977, with the conductivity of A. Stogryn, IEEE Trans. MTT-19, 1971
 * (coefficients from memory, checked against independent transcriptions):
 *     ε = ε∞ + (εs − ε∞)/(1 + j·2πfτ) − j·σ/(2πf·ε0),   ε∞ = 4.9,
 *     εs(T,S), τ(T,S), σ(T,S) cubic fits in temperature T (°C) and salinity S (psu).
 * Fitted to measurements at L and S band (1.43 and 2.65 GHz, from memory) — the bands of the radars planned here;
 * a single Debye term stays within a few % up to roughly 10 GHz. Default sea: 20 °C, 35 psu (open-ocean salinity,
 * common practice). At 3 GHz this gives ε ≈ 70 − j40 (from memory, the value usually quoted for sea water at S band).
 *
 * Roughness (`roughnessFactor`), J. W. Ament, "Toward a theory of reflection by a rough surface", Proc. IRE 41(1),
 * 1953: the specular (coherent) part of the reflected field for a Gaussian surface of rms height σh,
 *     ρs = exp(−2·(2π·σh·sin ψ/λ)²)
 * (the Miller–Brown–Vegh refinement, which keeps more coherent reflection from rough seas, is not used).
 * Default σh = 0.3 m: a significant wave height Hs ≈ 4σh ≈ 1.2 m, the upper end of a "slight" sea (WMO sea state 3;
 * common practice, from memory) — calm enough that reflection stays strong at low grazing angles at L and S band
 * (ρs > 0.9 below 0.5° at 3 GHz) so that the lobes and nulls a planner must see are shown, while at S band the lobing
 * above a few degrees of grazing is largely filled in (ρs ≈ 0.14 at 3°; at L band ≈ 0.7). `seaStateRmsHeightM`
 * turns a WMO sea state into σh.
 *
 * Assumptions: a smooth sphere plus the statistical roughness factor; specular reflection only (no diffuse
 * scattering); no diffraction; no ducting or other anomalous refraction beyond the effective earth radius; the
 * pattern is symmetric in azimuth (g depends on elevation only); the specular point lies over sea — the caller
 * checks that with d1 (`reflectionGeometry`), this module assumes it.
 * Limits: beyond the smooth-sphere horizon (d > Re·(acos(Re/(Re+h1)) + acos(Re/(Re+h2))) ≈ √(2Re·h1) + √(2Re·h2))
 * there is neither a direct ray nor a specular point: `reflectionGeometry` returns null and `propagationFactor`
 * returns 0 — the caller treats targets beyond line of sight separately (the diffraction field is not modelled).
 * Near the horizon (grazing angles below roughly 0.05° for typical heights, an engineering estimate, not a published
 * limit) the ray picture fails: Blake treats the zone between the lowest lobe and the horizon as an intermediate
 * region interpolated between the interference and diffraction fields (from memory). Here the interference
 * formula with D is used right down to the horizon, the usual engineering shortcut: as ψ → 0, D → 0 and F rises
 * back toward g(εd), so F is optimistic in a thin band just above the horizon, where the true field is well below
 * free space.
 *
 * Hot path: `propagationFactor` allocates nothing (module scratch for the geometry; the default permittivity is
 * cached for the last frequency) and returns a number; the geometry takes 2–4 Newton steps. Callers evaluate it
 * on a table (range × altitude), not per cell. Heights below 0, a negative ground range, a non-positive Re or
 * frequency, or NaN give NaN.
 */
import { InputError } from '../../shared/errors.ts';

export type Polarization = 'horizontal' | 'vertical';

export interface SeaSurface {
  /**
   * RMS wave height σh, m (default 0.3: Hs ≈ 1.2 m, the upper end of a slight sea — strong reflection at low
   * grazing angles, so the lobing is shown; see the module header).
   */
  seaStateSigmaHM?: number;
  /**
   * Complex relative permittivity ε = re + j·im in the e^{jωt} convention (a lossy medium has im ≤ 0, e.g.
   * { re: 70, im: −40 }). Default: Klein–Swift sea water at the frequency, 20 °C, 35 psu.
   */
  relPermittivity?: { re: number; im: number };
}

export interface ReflectionGeometry {
  /** Ground arc from the antenna to the specular point, m (the target side is d − d1). */
  d1M: number;
  /** Grazing angle ψ at the specular point, rad (≥ 0). */
  grazingRad: number;
  /** Path difference reflected − direct, m (≥ 0). */
  pathDiffM: number;
  /** Divergence factor D of the sphere, 0 … 1. */
  divergence: number;
  /** Elevation of the direct ray at the antenna, rad (same as footprint.ts `slantGeometry`). */
  directElevationRad: number;
  /** Elevation of the reflected ray at the antenna, rad (≤ 0): −(ψ + d1/Re). */
  reflectedElevationRad: number;
}

/** Default rms wave height, m (see the module header). */
export const DEFAULT_SEA_RMS_HEIGHT_M = 0.3;
/** Default sea temperature for the permittivity model, °C. */
export const DEFAULT_SEA_TEMPERATURE_C = 20;
/** Default salinity, practical salinity units: open ocean (common practice). */
export const DEFAULT_SALINITY_PSU = 35;
/** Vacuum permittivity ε0, F/m (CODATA 2018). */
const EPSILON_0_F_PER_M = 8.8541878128e-12;
/** High-frequency permittivity of water in the Klein–Swift model. */
const KLEIN_SWIFT_EPS_INF = 4.9;
/**
 * Speed of light in vacuum, m/s (exact, SI). Kept here rather than imported from sensor.ts so that this module
 * stays below the sensor model (which may come to use it) with no import cycle.
 */
const SPEED_OF_LIGHT_M_S = 299_792_458;

function wavelengthM(fMHz: number): number {
  return SPEED_OF_LIGHT_M_S / (fMHz * 1e6);
}

// ---------------------------------------------------------------------------------------------------------------
// Sea surface

/**
 * Complex relative permittivity of sea water, ε = re + j·im (im ≤ 0, e^{jωt}), Klein & Swift (1977) Debye model
 * with Stogryn's (1971) ionic conductivity. Temperature in °C (about −2 … 30 in the fit), salinity in psu (4 … 35).
 */
export function seaWaterPermittivity(
  fMHz: number,
  temperatureC = DEFAULT_SEA_TEMPERATURE_C,
  salinityPsu = DEFAULT_SALINITY_PSU,
): { re: number; im: number } {
  kleinSwift(fMHz, temperatureC, salinityPsu);
  return { re: ksRe, im: ksIm };
}

let ksRe = 0;
let ksIm = 0;

/** Klein–Swift into ksRe/ksIm (no allocation). */
function kleinSwift(fMHz: number, t: number, s: number): void {
  const t2 = t * t;
  const t3 = t2 * t;
  const s2 = s * s;
  const s3 = s2 * s;
  // Static permittivity: pure water εs(T) times the salinity correction a(T,S).
  const epsS =
    (87.134 - 1.949e-1 * t - 1.276e-2 * t2 + 2.491e-4 * t3) *
    (1 + 1.613e-5 * s * t - 3.656e-3 * s + 3.21e-5 * s2 - 4.232e-7 * s3);
  // Relaxation time, s: pure water τ(T) times b(T,S).
  const tau =
    (1.768e-11 - 6.086e-13 * t + 1.104e-14 * t2 - 8.111e-17 * t3) *
    (1 + 2.282e-5 * s * t - 7.638e-4 * s - 7.76e-6 * s2 + 1.105e-8 * s3);
  // Ionic conductivity, S/m: σ(25 °C, S)·exp(−Δ·β), Δ = 25 − T (Stogryn).
  const dT = 25 - t;
  const sigma25 = s * (0.182521 - 1.46192e-3 * s + 2.09324e-5 * s2 - 1.28205e-7 * s3);
  const beta =
    2.033e-2 + 1.266e-4 * dT + 2.464e-6 * dT * dT - s * (1.849e-5 - 2.551e-7 * dT + 2.551e-8 * dT * dT);
  const sigma = sigma25 * Math.exp(-dT * beta);
  const w = 2 * Math.PI * fMHz * 1e6;
  const wt = w * tau;
  const relax = (epsS - KLEIN_SWIFT_EPS_INF) / (1 + wt * wt);
  ksRe = KLEIN_SWIFT_EPS_INF + relax;
  ksIm = -(relax * wt + sigma / (w * EPSILON_0_F_PER_M));
}

/** Ament's (1953) specular roughness factor ρs = exp(−2(2π·σh·sin ψ/λ)²). */
export function roughnessFactor(sigmaHM: number, grazingRad: number, fMHz: number): number {
  const g = (2 * Math.PI * sigmaHM * Math.sin(grazingRad)) / wavelengthM(fMHz);
  return Math.exp(-2 * g * g);
}

/**
 * WMO sea state code (0–9; WMO code table 3700, from memory) → rms wave height σh, m: the middle of the code's
 * significant-wave-height band (the lower bound, 14 m, for code 9) divided by 4 (Hs ≈ 4σh for a Gaussian sea,
 * common practice). Bands, m: 0 | 0–0.1 | 0.1–0.5 | 0.5–1.25 | 1.25–2.5 | 2.5–4 | 4–6 | 6–9 | 9–14 | > 14.
 */
export function seaStateRmsHeightM(seaState: number): number {
  if (!(Number.isInteger(seaState) && seaState >= 0 && seaState <= 9)) {
    throw new InputError('sea state', String(seaState), 'a WMO sea state code, a whole number from 0 to 9');
  }
  return SEA_STATE_HS_M[seaState] / 4;
}

const SEA_STATE_HS_M = [0, 0.05, 0.3, 0.875, 1.875, 3.25, 5, 7.5, 11.5, 14];

// ---------------------------------------------------------------------------------------------------------------
// Geometry

/**
 * Ground arc (m) of the smooth-sphere horizon between heights h1 and h2 (m) on an earth of radius Re:
 * Re·(acos(Re/(Re+h1)) + acos(Re/(Re+h2))) — a little under √(2Re·h1) + √(2Re·h2).
 */
export function smoothHorizonM(h1M: number, h2M: number, reM: number): number {
  return reM * (horizonAngle(h1M, reM) + horizonAngle(h2M, reM));
}

/** acos(Re/(Re+h)) without cancellation: atan(√(h(2Re+h))/Re). */
function horizonAngle(h: number, re: number): number {
  return Math.atan(Math.sqrt(h * (2 * re + h)) / re);
}

/**
 * Geometry of the specular reflection point on the spherical earth for antenna height h1 and target height h2 (m
 * above the reflecting surface), ground range d (m). Kerr's cubic (as Blake solves it) gives d1, refined on the
 * exact sphere. Returns null beyond the smooth-sphere horizon (no reflection point, no direct ray). Pass `out` to
 * reuse an object (nothing allocated); without it a new object is returned. NaN or out-of-domain input → null.
 */
export function reflectionGeometry(
  h1M: number,
  h2M: number,
  groundRangeM: number,
  reM: number,
  out?: ReflectionGeometry,
): ReflectionGeometry | null {
  const g = out ?? {
    d1M: 0,
    grazingRad: 0,
    pathDiffM: 0,
    divergence: 0,
    directElevationRad: 0,
    reflectedElevationRad: 0,
  };
  return solveGeometry(h1M, h2M, groundRangeM, reM, g) === SOLVED ? g : null;
}

const SOLVED = 0;
const BEYOND_HORIZON = 1;
const INVALID = 2;

/** dψ/dd at one terminal: −(Re + h)·w / (Re·(x² + z²)), w = h + 2Re·sin²(φ/2). Set by `side`. */
let sideX = 0;
let sideZ = 0;
let sideSlope = 0;

/** Terminal at height h, arc di from the specular point: tangent-plane position and dψ/d(di). */
function side(h: number, di: number, re: number): void {
  const phi = di / re;
  const sh = Math.sin(0.5 * phi);
  const drop = 2 * re * sh * sh;
  const x = (re + h) * Math.sin(phi);
  const z = h * Math.cos(phi) - drop;
  sideX = x;
  sideZ = z;
  const r2 = x * x + z * z;
  sideSlope = r2 > 0 ? (-(re + h) * (h + drop)) / (re * r2) : 0;
}

function solveGeometry(h1: number, h2: number, d: number, re: number, out: ReflectionGeometry): number {
  if (!(h1 >= 0 && h2 >= 0 && d >= 0 && re > 0) || !Number.isFinite(d + h1 + h2 + re)) return INVALID;
  if (d > smoothHorizonM(h1, h2, re)) return BEYOND_HORIZON;

  // Kerr's cubic (Blake): the starting point.
  const p = (2 / Math.sqrt(3)) * Math.sqrt(re * (h1 + h2) + 0.25 * d * d);
  let d1: number;
  if (p > 0) {
    let c = (2 * re * (h1 - h2) * d) / (p * p * p);
    c = c > 1 ? 1 : c < -1 ? -1 : c;
    d1 = 0.5 * d + p * Math.cos((Math.acos(c) + Math.PI) / 3);
  } else d1 = 0;
  if (!(d1 >= 0 && d1 <= d)) d1 = h1 + h2 > 0 ? (d * h1) / (h1 + h2) : 0.5 * d;

  // Safeguarded Newton on f(d1) = ψ1(d1) − ψ2(d − d1): f decreases from π/2 at 0 to −π/2 at d.
  let lo = 0;
  let hi = d;
  const tol = 1e-12 * d + 1e-9;
  for (let k = 0; k < 60; k++) {
    side(h1, d1, re);
    const psi1 = Math.atan2(sideZ, sideX);
    const slope1 = sideSlope;
    side(h2, d - d1, re);
    const psi2 = Math.atan2(sideZ, sideX);
    const f = psi1 - psi2;
    if (f > 0) lo = d1;
    else hi = d1;
    const fp = slope1 + sideSlope;
    let next = fp < 0 ? d1 - f / fp : NaN;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    const step = Math.abs(next - d1);
    d1 = next;
    if (step <= tol || hi - lo <= tol) break;
  }

  const d2 = d - d1;
  side(h1, d1, re);
  const x1 = sideX;
  const z1Raw = sideZ;
  side(h2, d2, re);
  const x2 = sideX;
  const z2Raw = sideZ;
  // At the horizon rounding can leave a terminal a hair below the tangent plane.
  const z1 = z1Raw > 0 ? z1Raw : 0;
  const z2 = z2Raw > 0 ? z2Raw : 0;
  const psi1 = Math.atan2(z1, x1);
  const psi2 = Math.atan2(z2, x2);
  const psi = 0.5 * (psi1 + psi2);
  const xs = x1 + x2;
  const rr = Math.sqrt(xs * xs + (z1 + z2) * (z1 + z2));
  const rd = Math.sqrt(xs * xs + (z2 - z1) * (z2 - z1));
  const phi1 = d1 / re;
  out.d1M = d1;
  out.grazingRad = psi;
  out.pathDiffM = rr + rd > 0 ? (4 * z1 * z2) / (rr + rd) : 0;
  const spread = d1 * d2;
  if (spread > 0) {
    const sinPsi = Math.sin(psi);
    out.divergence = sinPsi > 0 ? 1 / Math.sqrt(1 + (2 * spread) / (re * d * sinPsi)) : 0;
  } else out.divergence = 1;
  out.directElevationRad = Math.atan2(z2Raw - z1Raw, xs) - phi1;
  out.reflectedElevationRad = -(psi + phi1);
  return SOLVED;
}

// ---------------------------------------------------------------------------------------------------------------
// Reflection coefficient

let gammaRe = 0;
let gammaIm = 0;
let epsCacheF = NaN;
let epsCacheRe = 0;
let epsCacheIm = 0;

/** Complex Fresnel reflection coefficient of sea water at grazing angle ψ (rad). */
export function seaReflectionCoefficient(
  grazingRad: number,
  fMHz: number,
  pol: Polarization,
  sea?: SeaSurface,
): { mag: number; phaseRad: number } {
  fresnel(grazingRad, fMHz, pol, sea);
  return { mag: Math.sqrt(gammaRe * gammaRe + gammaIm * gammaIm), phaseRad: Math.atan2(gammaIm, gammaRe) };
}

/** Γ into gammaRe/gammaIm (no allocation). */
function fresnel(psi: number, fMHz: number, pol: Polarization, sea: SeaSurface | undefined): void {
  let er: number;
  let ei: number;
  const given = sea?.relPermittivity;
  if (given !== undefined) {
    er = given.re;
    ei = given.im;
    if (!(Number.isFinite(er) && er > 0 && Number.isFinite(ei) && ei <= 0)) {
      throw new InputError(
        'sea surface: relPermittivity',
        `{ re: ${er}, im: ${ei} }`,
        'a complex relative permittivity with a positive finite real part and an imaginary part ≤ 0 (ε′ − jε″)',
      );
    }
  } else {
    if (fMHz !== epsCacheF) {
      kleinSwift(fMHz, DEFAULT_SEA_TEMPERATURE_C, DEFAULT_SALINITY_PSU);
      epsCacheF = fMHz;
      epsCacheRe = ksRe;
      epsCacheIm = ksIm;
    }
    er = epsCacheRe;
    ei = epsCacheIm;
  }
  const s = Math.sin(psi);
  const c = Math.cos(psi);
  // q = √(ε − cos²ψ), principal branch (Re q ≥ 0).
  const ur = er - c * c;
  const ui = ei;
  const m = Math.sqrt(ur * ur + ui * ui);
  const qr = Math.sqrt(0.5 * (m + ur));
  let qi = Math.sqrt(0.5 * Math.max(m - ur, 0));
  if (ui < 0) qi = -qi;
  // Γ = (a − q)/(a + q), a = sin ψ (horizontal) or ε·sin ψ (vertical).
  const ar = pol === 'vertical' ? er * s : s;
  const ai = pol === 'vertical' ? ei * s : 0;
  const nr = ar - qr;
  const ni = ai - qi;
  const dr = ar + qr;
  const di = ai + qi;
  const den = dr * dr + di * di;
  gammaRe = (nr * dr + ni * di) / den;
  gammaIm = (ni * dr - nr * di) / den;
}

// ---------------------------------------------------------------------------------------------------------------
// Propagation factor

const scratch: ReflectionGeometry = {
  d1M: 0,
  grazingRad: 0,
  pathDiffM: 0,
  divergence: 0,
  directElevationRad: 0,
  reflectedElevationRad: 0,
};

/**
 * One-way pattern propagation factor F at the target (field ratio to free space at the beam peak):
 *   F = | g(εd) + D·ρs·Γ·g(εr)·exp(−j·2πΔ/λ) |,
 * `voltagePattern` the one-way voltage pattern √(power gain), 1 at its peak (a real value; a sign for a sidelobe
 * in antiphase is allowed). F includes the direct-ray pattern value: the caller multiplies its peak free-space range
 * by F (primary, two-way; or a one-way link). 0 beyond the smooth-sphere horizon; NaN for invalid input.
 */
export function propagationFactor(p: {
  h1M: number;
  h2M: number;
  groundRangeM: number;
  reM: number;
  fMHz: number;
  pol: Polarization;
  sea?: SeaSurface;
  voltagePattern: (elevationRad: number) => number;
}): number {
  const fMHz = p.fMHz;
  if (!(fMHz > 0)) return NaN;
  const state = solveGeometry(p.h1M, p.h2M, p.groundRangeM, p.reM, scratch);
  if (state === INVALID) return NaN;
  if (state === BEYOND_HORIZON) return 0;
  const g = scratch;
  const sea = p.sea;
  const sigmaH = sea?.seaStateSigmaHM ?? DEFAULT_SEA_RMS_HEIGHT_M;
  if (!(Number.isFinite(sigmaH) && sigmaH >= 0)) {
    throw new InputError('sea surface: seaStateSigmaHM', String(sigmaH), 'an rms wave height in metres, ≥ 0');
  }
  const psi = g.grazingRad;
  const lambda = wavelengthM(fMHz);
  fresnel(psi, fMHz, p.pol, sea);
  const rough = (2 * Math.PI * sigmaH * Math.sin(psi)) / lambda;
  const rhoS = Math.exp(-2 * rough * rough);
  const gd = p.voltagePattern(g.directElevationRad);
  const gr = p.voltagePattern(g.reflectedElevationRad);
  const a = g.divergence * rhoS * gr;
  // Γ·exp(−jkΔ)
  const k = (2 * Math.PI * g.pathDiffM) / lambda;
  const ck = Math.cos(k);
  const sk = Math.sin(k);
  const re = gd + a * (gammaRe * ck + gammaIm * sk);
  const im = a * (gammaIm * ck - gammaRe * sk);
  return Math.sqrt(re * re + im * im);
}

/**
 * The coverage maps' use of the two-ray model: the range factor over sea relative to free space with the same
 * pattern, F/g(εd) = |1 + D·ρs·Γ·(g(εr)/g(εd))·exp(−j·2πΔ/λ)|, applied only below the peak of the first (lowest)
 * lobe — where the reflected ray's phase lag 2πΔ/λ is still short of arg Γ (≈ π at low grazing) — and capped at 1
 * there; 1 above it. Coverage maps thus show the first lobe's lower edge (the loss of low-angle coverage over
 * water) but neither the reinforcement of the lobe maxima (up to ×2, not counted: conservative) nor the nulls
 * between higher lobes (not counted: optimistic for a target that sits in a null; the vertical coverage diagram
 * is where lobes are read). 1 where no reflection point exists (beyond the smooth-sphere horizon, where the
 * line-of-sight floor decides). `voltage` is the one-way voltage pattern √g, any scale. No allocation.
 */
export function firstLobeFactor(
  h1M: number,
  h2M: number,
  groundRangeM: number,
  reM: number,
  fMHz: number,
  pol: Polarization,
  voltage: (elevationRad: number) => number,
  sigmaHM: number = DEFAULT_SEA_RMS_HEIGHT_M,
): number {
  if (solveGeometry(h1M, h2M, groundRangeM, reM, scratch) !== SOLVED) return 1;
  const g = scratch;
  const lambda = wavelengthM(fMHz);
  const k = (2 * Math.PI * g.pathDiffM) / lambda;
  const psi = g.grazingRad;
  fresnel(psi, fMHz, pol, undefined);
  let phase = Math.atan2(gammaIm, gammaRe);
  if (phase <= 0) phase += 2 * Math.PI;
  if (k >= phase) return 1;
  const gd = voltage(g.directElevationRad);
  if (!(gd > 0)) return 1;
  const rough = (2 * Math.PI * sigmaHM * Math.sin(psi)) / lambda;
  const a = (g.divergence * Math.exp(-2 * rough * rough) * voltage(g.reflectedElevationRad)) / gd;
  const ck = Math.cos(k);
  const sk = Math.sin(k);
  const re = 1 + a * (gammaRe * ck + gammaIm * sk);
  const im = a * (gammaIm * ck - gammaRe * sk);
  const f = Math.sqrt(re * re + im * im);
  return f < 1 ? f : 1;
}

/** The specular point's distance from the antenna (m), or NaN where none exists. */
export function reflectionDistanceM(h1M: number, h2M: number, groundRangeM: number, reM: number): number {
  return solveGeometry(h1M, h2M, groundRangeM, reM, scratch) === SOLVED ? scratch.d1M : NaN;
}
