/**
 * Multilateration accuracy: the 1σ horizontal position error of a time-of-arrival (TOA) fix from a set of ground
 * receivers, for a target at a given place, from the geometry and the receivers' timing errors alone.
 *
 * Model (Torrieri, "Statistical theory of passive location systems", IEEE Trans. AES-20(2), 1984): the signal
 * the target sends at the unknown time t0 arrives at receiver i at
 *
 *   t_i = |x − r_i| / c + t0 + n_i,   n_i independent, zero mean, standard deviation σ_i (seconds),
 *
 * x the target's position and r_i the receiver's, in a local east-north-up frame (metres). Linearised at the true
 * position, in the unknowns (x_e, x_n, x_u, c·t0) the design matrix H has one row per receiver,
 *
 *   h_i = [u_iᵀ, 1],   u_i = (x − r_i)/|x − r_i|  (the unit vector from receiver i to the target),
 *
 * the weights are W = diag(1/(c·σ_i)²), and the covariance of the weighted least-squares fix is (Hᵀ W H)⁻¹ (m²).
 * The figure returned is the horizontal DRMS √(σe² + σn²), the 1σ radial error of the horizontal position.
 *
 * The horizontal marginal. Write the normal matrix N = HᵀWH in blocks, A for (e, n), D for the rest — (z, clock)
 * unaided, (clock) alone when the altitude is known — and B between them. The (e, n) block of N⁻¹ is the inverse
 * of the Schur complement S = A − B D⁻¹ Bᵀ, and DRMS² = trace(S⁻¹) = trace(S)/det(S) for the 2×2 S.
 * - Altitude known (the target reports its pressure altitude, which the fix takes as known): the z column is
 *   dropped, D = Σ w_i is a number; at least 3 receivers.
 * - Unaided: D is the 2×2 (z, clock) block; at least 4 receivers. When every receiver sees the target at the same
 *   elevation angle α (receivers on a circle around it at one height), u_iz = sin α for all i, so the z column is
 *   sin α times the clock column: height and emission time cannot be told apart and N itself is singular, yet the
 *   horizontal position is still fixed. D⁻¹ is then replaced by the pseudo-inverse D⁺ (for a rank-1 symmetric 2×2
 *   D = λ·v·vᵀ, D⁺ = D/λ² with λ = trace D). Since the columns of B lie in the range of D (N is a Gram matrix),
 *   A − B D⁺ Bᵀ is exactly the Schur complement of the problem with the confounded pair merged into one unknown,
 *   and its inverse is the horizontal covariance of the estimable part. D counts as rank-deficient when
 *   det D ≤ D_RANK_TOL·(trace D)² (rounding, not geometry).
 * - NaN when there are fewer receivers than that, a receiver sits on the target, or the horizontal position is
 *   not determined: det S ≤ S_RANK_TOL·(trace S)² (e.g. every receiver and the target in one vertical plane).
 *
 * Assumptions (docs/PHYSICS.md §7a): independent Gaussian TOA errors; synchronised receivers (a common clock, any
 * residual synchronisation error folded into σ_i); straight-line propagation (no refraction or multipath); line of
 * sight and reception from each receiver decided elsewhere (receiver.ts, the horizon engine); no garbling or FRUIT.
 * The figure is the Cramér–Rao-type covariance of the linearised fix: it ignores the fix's own bias and the
 * non-linearity far from the receivers.
 *
 * Hot path: `mlatHorizontalDrmsFlat` takes receiver coordinates in one Float64Array and allocates nothing; the
 * normal matrix's 10 distinct sums sit in a module-level scratch array.
 *
 * ENU frame: `EnuFrame` turns WGS84 longitude, latitude and height above the ellipsoid into local east-north-up
 * metres around an origin, through earth-centred coordinates (proj4's `+proj=geocent`, WGS84) and the rotation of
 * the local tangent plane.
 */
import proj4 from 'proj4';
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD } from '../../shared/units.ts';
import { SPEED_OF_LIGHT_M_S } from './sensor.ts';

/** A point in a local east-north-up frame, metres. */
export interface EnuPoint {
  e: number;
  n: number;
  u: number;
}

export interface MlatOptions {
  /** The target's altitude is known (its reported pressure altitude): the fix solves for e, n and the clock only. */
  altitudeKnown: boolean;
}

/** Receivers needed for a horizontal fix: 4 unaided (e, n, u, t0), 3 with the altitude known (e, n, t0). */
export const MLAT_MIN_RECEIVERS = { unaided: 4, altitudeKnown: 3 } as const;

/** Relative determinant under which the (z, clock) block counts as rank-deficient (rounding level). */
const D_RANK_TOL = 1e-10;
/** Relative determinant under which the horizontal position counts as not determined. */
const S_RANK_TOL = 1e-12;

/** The normal matrix's distinct sums: ee en eu ec nn nu nc uu uc cc. */
const NORMAL = new Float64Array(10);

/**
 * 1σ horizontal DRMS (m) of the TOA fix of a target at `target` from `receivers` (local ENU metres), with TOA
 * standard deviations `sigmaS` (seconds: one for all, or one per receiver). NaN when the fix is not possible (see
 * the module comment). Throws InputError on a σ that is not a positive finite number or a σ list of the wrong
 * length.
 */
export function mlatHorizontalDrms(
  receivers: readonly EnuPoint[],
  target: EnuPoint,
  sigmaS: number | readonly number[],
  opts: MlatOptions,
): number {
  const count = receivers.length;
  checkSigmas(sigmaS, count, 'mlatHorizontalDrms: sigmaS');
  const need = opts.altitudeKnown ? MLAT_MIN_RECEIVERS.altitudeKnown : MLAT_MIN_RECEIVERS.unaided;
  if (count < need) return NaN;
  const m = NORMAL;
  m.fill(0);
  for (let i = 0; i < count; i++) {
    const r = receivers[i];
    const s = typeof sigmaS === 'number' ? sigmaS : sigmaS[i];
    if (!accumulate(m, target.e - r.e, target.n - r.n, target.u - r.u, s)) return NaN;
  }
  return horizontalDrms(m, opts.altitudeKnown);
}

/**
 * The same for the hot path: receiver i at (rx[3i], rx[3i+1], rx[3i+2]) (e, n, u metres) for i < count, TOA
 * standard deviations sigmaS[i] (seconds; Float64Array of at least `count`) or one number for all. Allocates
 * nothing; checks only the array lengths (validate σ once with `checkSigmas`).
 */
export function mlatHorizontalDrmsFlat(
  rx: Float64Array,
  count: number,
  targetE: number,
  targetN: number,
  targetU: number,
  sigmaS: Float64Array | number,
  altitudeKnown: boolean,
): number {
  if (rx.length < 3 * count || (typeof sigmaS !== 'number' && sigmaS.length < count)) {
    throw new InputError(
      'mlatHorizontalDrmsFlat: rx / sigmaS',
      `${rx.length} coordinates and ${typeof sigmaS === 'number' ? 'one σ' : `${sigmaS.length} σ`}`,
      `3 coordinates and one σ per receiver for ${count} receivers`,
    );
  }
  const need = altitudeKnown ? MLAT_MIN_RECEIVERS.altitudeKnown : MLAT_MIN_RECEIVERS.unaided;
  if (count < need) return NaN;
  const m = NORMAL;
  m.fill(0);
  for (let i = 0; i < count; i++) {
    const s = typeof sigmaS === 'number' ? sigmaS : sigmaS[i];
    const k = 3 * i;
    if (!accumulate(m, targetE - rx[k], targetN - rx[k + 1], targetU - rx[k + 2], s)) return NaN;
  }
  return horizontalDrms(m, altitudeKnown);
}

/** Throws InputError at `where` unless σ is one positive finite number or `count` of them. */
export function checkSigmas(sigmaS: number | ArrayLike<number>, count: number, where: string): void {
  const bad = (v: unknown) => !(typeof v === 'number' && Number.isFinite(v) && v > 0);
  if (typeof sigmaS === 'number') {
    if (bad(sigmaS)) {
      throw new InputError(where, String(sigmaS), 'a TOA standard deviation in seconds above 0 (e.g. 50e-9)');
    }
    return;
  }
  if (sigmaS.length !== count) {
    throw new InputError(where, `${sigmaS.length} values`, `${count} values, one per receiver`);
  }
  for (let i = 0; i < count; i++) {
    if (bad(sigmaS[i])) {
      throw new InputError(
        `${where}[${i}]`,
        String(sigmaS[i]),
        'a TOA standard deviation in seconds above 0 (e.g. 50e-9)',
      );
    }
  }
}

/** Adds one receiver's row [uᵀ, 1] (u along (de, dn, du), receiver → target) with weight 1/(c σ)². */
function accumulate(m: Float64Array, de: number, dn: number, du: number, sigmaS: number): boolean {
  const d = Math.sqrt(de * de + dn * dn + du * du);
  if (!(d > 0)) return false;
  const cs = SPEED_OF_LIGHT_M_S * sigmaS;
  const w = 1 / (cs * cs);
  const inv = 1 / d;
  const ue = de * inv;
  const un = dn * inv;
  const uu = du * inv;
  const wue = w * ue;
  const wun = w * un;
  const wuu = w * uu;
  m[0] += wue * ue;
  m[1] += wue * un;
  m[2] += wue * uu;
  m[3] += wue;
  m[4] += wun * un;
  m[5] += wun * uu;
  m[6] += wun;
  m[7] += wuu * uu;
  m[8] += wuu;
  m[9] += w;
  return true;
}

/** √trace of the horizontal block of N⁻¹ (or N⁺ over (z, clock)), through the Schur complement. */
function horizontalDrms(m: Float64Array, altitudeKnown: boolean): number {
  const aee = m[0];
  const aen = m[1];
  const ann = m[4];
  const bec = m[3];
  const bnc = m[6];
  const dcc = m[9];
  let see: number;
  let sen: number;
  let snn: number;
  if (altitudeKnown) {
    see = aee - (bec * bec) / dcc;
    sen = aen - (bec * bnc) / dcc;
    snn = ann - (bnc * bnc) / dcc;
  } else {
    const bez = m[2];
    const bnz = m[5];
    const dzz = m[7];
    const dzc = m[8];
    const tr = dzz + dcc;
    const det = dzz * dcc - dzc * dzc;
    let pzz: number;
    let pzc: number;
    let pcc: number;
    if (det > D_RANK_TOL * tr * tr) {
      pzz = dcc / det;
      pzc = -dzc / det;
      pcc = dzz / det;
    } else {
      // Rank 1 (z and the clock confounded): D⁺ = D / (trace D)².
      const t2 = tr * tr;
      pzz = dzz / t2;
      pzc = dzc / t2;
      pcc = dcc / t2;
    }
    // S = A − B D⁺ Bᵀ with B's rows (bez, bec) for e and (bnz, bnc) for n.
    const qez = pzz * bez + pzc * bec;
    const qec = pzc * bez + pcc * bec;
    const qnz = pzz * bnz + pzc * bnc;
    const qnc = pzc * bnz + pcc * bnc;
    see = aee - (bez * qez + bec * qec);
    sen = aen - (bez * qnz + bec * qnc);
    snn = ann - (bnz * qnz + bnc * qnc);
  }
  const trS = see + snn;
  const detS = see * snn - sen * sen;
  if (!(detS > S_RANK_TOL * trS * trS)) return NaN;
  return Math.sqrt(trS / detS);
}

// ---------------------------------------------------------------------------------------------------------------
// Local east-north-up frame on WGS84

const GEOCENTRIC = proj4(
  '+proj=longlat +datum=WGS84 +no_defs',
  '+proj=geocent +datum=WGS84 +units=m +no_defs',
);

/** WGS84 earth-centred coordinates (m) of a longitude, latitude (degrees) and height (m); no checks. */
export function toEcef(lonDeg: number, latDeg: number, hM: number): [x: number, y: number, z: number] {
  const [x, y, z] = GEOCENTRIC.forward([lonDeg, latDeg, hM]);
  return [x, y, z];
}

/**
 * A local east-north-up frame at (lon0, lat0, h0) on WGS84 (degrees, metres above the ellipsoid). Heights above
 * mean sea level may be passed instead when the geoid separation is the same for every point of one problem (it
 * varies by well under a metre over a receiver network's extent at sea): a common height offset moves the frame's
 * origin, not the geometry between the points.
 */
export class EnuFrame {
  private readonly x0: number;
  private readonly y0: number;
  private readonly z0: number;
  private readonly sinLat: number;
  private readonly cosLat: number;
  private readonly sinLon: number;
  private readonly cosLon: number;

  constructor(lon0Deg: number, lat0Deg: number, h0M: number, where = 'ENU origin') {
    checkLonLatH(lon0Deg, lat0Deg, h0M, where);
    const [x, y, z] = GEOCENTRIC.forward([lon0Deg, lat0Deg, h0M]);
    this.x0 = x;
    this.y0 = y;
    this.z0 = z;
    const lat = lat0Deg * DEG_TO_RAD;
    const lon = lon0Deg * DEG_TO_RAD;
    this.sinLat = Math.sin(lat);
    this.cosLat = Math.cos(lat);
    this.sinLon = Math.sin(lon);
    this.cosLon = Math.cos(lon);
  }

  /** The point (lon, lat in degrees, h in metres) in this frame. */
  toEnu(lonDeg: number, latDeg: number, hM: number, where = 'point'): EnuPoint {
    checkLonLatH(lonDeg, latDeg, hM, where);
    const [x, y, z] = GEOCENTRIC.forward([lonDeg, latDeg, hM]);
    const dx = x - this.x0;
    const dy = y - this.y0;
    const dz = z - this.z0;
    return {
      e: -this.sinLon * dx + this.cosLon * dy,
      n: -this.sinLat * this.cosLon * dx - this.sinLat * this.sinLon * dy + this.cosLat * dz,
      u: this.cosLat * this.cosLon * dx + this.cosLat * this.sinLon * dy + this.sinLat * dz,
    };
  }

  /** Points as (lon, lat, h) triples → a flat Float64Array of (e, n, u) triples, for `mlatHorizontalDrmsFlat`. */
  toEnuFlat(lonLatH: ArrayLike<number>, where = 'points'): Float64Array {
    if (lonLatH.length % 3 !== 0) {
      throw new InputError(where, `${lonLatH.length} numbers`, 'a multiple of 3: (lon, lat, h) per point');
    }
    const out = new Float64Array(lonLatH.length);
    for (let k = 0; k < lonLatH.length; k += 3) {
      const p = this.toEnu(lonLatH[k], lonLatH[k + 1], lonLatH[k + 2], `${where}[${k / 3}]`);
      out[k] = p.e;
      out[k + 1] = p.n;
      out[k + 2] = p.u;
    }
    return out;
  }
}

function checkLonLatH(lon: number, lat: number, h: number, where: string): void {
  if (!(Number.isFinite(lon) && lon >= -540 && lon <= 540)) {
    throw new InputError(`${where}: longitude`, String(lon), 'a longitude in degrees');
  }
  if (!(Number.isFinite(lat) && lat >= -90 && lat <= 90)) {
    throw new InputError(`${where}: latitude`, String(lat), 'a latitude in degrees from −90 to 90');
  }
  if (!(Number.isFinite(h) && h > -12_000 && h < 100_000)) {
    throw new InputError(`${where}: height`, String(h), 'a height in metres from −12 000 to 100 000');
  }
}
