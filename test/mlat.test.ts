/**
 * Multilateration accuracy (worker/core/mlat.ts): the time-of-arrival model with an unknown emission time
 * (Torrieri, "Statistical theory of passive location systems", IEEE Trans. AES-20(2), 1984 [memory]), checked
 * against closed forms worked out here [calc], against a brute-force Monte-Carlo least-squares fix, and the ENU
 * frame against geodesics (Karney 2013, geographiclib-geodesic). Sources of the check values: test/REFERENCES.md.
 * Every position is over open ocean (the South Atlantic near 40° S 30° W) or in an abstract local frame.
 *
 * The closed form [calc]. N receivers evenly spaced on a circle around the target, azimuths θ_k = θ0 + 2πk/N,
 * each seeing the target at the same elevation α. The unit vector from receiver k to the target is
 * u_k = (−cos α cos θ_k, −cos α sin θ_k, sin α), and the row of H is [u_kᵀ, 1]. For N ≥ 3,
 * Σ cos θ_k = Σ sin θ_k = Σ sin θ_k cos θ_k = 0 and Σ cos² θ_k = Σ sin² θ_k = N/2, so with equal σ
 *
 *   HᵀH = [[N cos²α/2, 0, 0, 0], [0, N cos²α/2, 0, 0], [0, 0, N sin²α, N sin α], [0, 0, N sin α, N]]:
 *
 * the horizontal block does not couple to (z, clock) (whatever that block's rank), so the horizontal covariance
 * is (c σ)²·2/(N cos²α)·I and the horizontal DRMS = √(σe² + σn²) = 2·c·σ / (√N · cos α), with the altitude known or
 * not. Two such circles (N1 at α1, N2 at α2) add: DRMS = 2·c·σ / √(N1 cos²α1 + N2 cos²α2), and then the (z, clock)
 * block is regular.
 */
import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { flToMetres } from '../shared/units.ts';
import { EnuFrame, mlatHorizontalDrms, mlatHorizontalDrmsFlat, type EnuPoint } from '../worker/core/mlat.ts';
import { SPEED_OF_LIGHT_M_S } from '../worker/core/sensor.ts';
import { mulberry32 } from './support/bumps.ts';

const C = SPEED_OF_LIGHT_M_S;
const WGS84 = geodesic.Geodesic.WGS84;
/** A TOA standard deviation for the geometry checks (an arbitrary scale: the DRMS is proportional to it). */
const SIGMA = 50e-9;

/** N receivers on a circle of radius rho (height 0) around the origin, the first at azimuth theta0 (rad). */
function circle(count: number, rho: number, theta0: number, height = 0): EnuPoint[] {
  const out: EnuPoint[] = [];
  for (let k = 0; k < count; k++) {
    const t = theta0 + (2 * Math.PI * k) / count;
    out.push({ e: rho * Math.cos(t), n: rho * Math.sin(t), u: height });
  }
  return out;
}

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('closed form: receivers evenly spaced on a circle at one elevation [calc]', () => {
  const target = { e: 0, n: 0, u: 9000 };
  const rho = 40_000;
  const cosA = rho / Math.hypot(rho, target.u);
  const expected = (count: number) => (2 * C * SIGMA) / (Math.sqrt(count) * cosA);

  it.each([3, 4, 6, 8])('N = %i, altitude known: 2cσ/(√N cos α) within 1e-9', (count) => {
    const drms = mlatHorizontalDrms(circle(count, rho, 0.3), target, SIGMA, { altitudeKnown: true });
    expect(rel(drms, expected(count))).toBeLessThan(1e-9);
  });

  it.each([4, 6, 8])(
    'N = %i, unaided (z and clock confounded, pseudo-inverse): same, within 1e-9',
    (count) => {
      const drms = mlatHorizontalDrms(circle(count, rho, 0.3), target, SIGMA, { altitudeKnown: false });
      expect(rel(drms, expected(count))).toBeLessThan(1e-9);
    },
  );

  it('irregular azimuths at one elevation, unequal σ: unaided equals altitude known [calc]', () => {
    // With u_iz = sin α for every receiver the z column is sin α times the clock column: the unaided problem is
    // the altitude-known one with z·sin α + c·t0 as its clock, so the horizontal covariances are equal. Here the
    // horizontal block does couple to (z, clock) (Σ cos θ_i ≠ 0), so the pseudo-inverse D⁺ is what is checked.
    const rx = [0.1, 0.9, 2.2, 3.0, 4.4].map((t) => ({ e: rho * Math.cos(t), n: rho * Math.sin(t), u: 0 }));
    const sig = [20e-9, 40e-9, 30e-9, 90e-9, 60e-9];
    const known = mlatHorizontalDrms(rx, target, sig, { altitudeKnown: true });
    const unaided = mlatHorizontalDrms(rx, target, sig, { altitudeKnown: false });
    expect(known).toBeGreaterThan(0);
    expect(rel(unaided, known)).toBeLessThan(1e-9);
  });

  it('two circles at different elevations (regular (z, clock) block): 2cσ/√(N1 cos²α1 + N2 cos²α2)', () => {
    const rx = [...circle(4, rho, 0.3), ...circle(5, 15_000, 1.1, 400)];
    const cos1 = cosA;
    const cos2 = 15_000 / Math.hypot(15_000, target.u - 400);
    const want = (2 * C * SIGMA) / Math.sqrt(4 * cos1 * cos1 + 5 * cos2 * cos2);
    for (const altitudeKnown of [true, false]) {
      expect(rel(mlatHorizontalDrms(rx, target, SIGMA, { altitudeKnown }), want)).toBeLessThan(1e-9);
    }
  });

  it('the DRMS scales with σ and a common σ list equals the one number', () => {
    const rx = circle(6, rho, 0.3);
    const one = mlatHorizontalDrms(rx, target, SIGMA, { altitudeKnown: false });
    const list = mlatHorizontalDrms(rx, target, new Array(6).fill(SIGMA), { altitudeKnown: false });
    const twice = mlatHorizontalDrms(rx, target, 2 * SIGMA, { altitudeKnown: false });
    expect(rel(list, one)).toBeLessThan(1e-12);
    expect(rel(twice, 2 * one)).toBeLessThan(1e-12);
  });
});

describe('a square of 4 receivers, target over its centre at FL100 (3048 m on the standard day)', () => {
  // FL100 = 10 000 ft × 0.3048 m = 3048 m in the ISA (ICAO Doc 7488 [pub]); corners 20 km from the centre.
  const h = flToMetres(100);
  const s = 20_000;

  it('flat local frame: c·σ / cos α with tan α = 3048/20 000 [calc]', () => {
    expect(h).toBeCloseTo(3048, 9);
    const rx = circle(4, s, Math.PI / 4);
    const want = (C * SIGMA) / (s / Math.hypot(s, h));
    for (const altitudeKnown of [true, false]) {
      const drms = mlatHorizontalDrms(rx, { e: 0, n: 0, u: h }, SIGMA, { altitudeKnown });
      expect(rel(drms, want)).toBeLessThan(1e-9);
    }
  });

  it('on WGS84 over the South Atlantic (40° S 30° W), corners 20 km along geodesics: the same closed form', () => {
    const lon0 = -30;
    const lat0 = -40;
    const frame = new EnuFrame(lon0, lat0, 0);
    const rx: EnuPoint[] = [];
    for (const az of [45, 135, 225, 315]) {
      const d = WGS84.Direct(lat0, lon0, az, s);
      const p = frame.toEnu(d.lon2 as number, d.lat2 as number, 0);
      // The ENU frame against the geodesic [calc]: the chord is s(1 − s²/(24 R²)) long horizontally (≈ 20 km to
      // 1 mm), the point sits s²/(2R) ≈ 31.4 m below the tangent plane (R ≈ 6.37e6 m here; 0.3 m covers the
      // ellipsoid's range of curvature radii), and its azimuth is the geodesic's to 1e-6 rad.
      expect(Math.hypot(p.e, p.n)).toBeCloseTo(s, 1);
      expect(p.u).toBeCloseTo(-(s * s) / (2 * 6.37e6), 0);
      expect(Math.abs(Math.atan2(p.e, p.n) - ((az > 180 ? az - 360 : az) * Math.PI) / 180)).toBeLessThan(
        1e-6,
      );
      rx.push(p);
    }
    const target = frame.toEnu(lon0, lat0, h);
    expect(target.e).toBeCloseTo(0, 6);
    expect(target.n).toBeCloseTo(0, 6);
    expect(target.u).toBeCloseTo(h, 6);
    // The four corners see the target at (nearly) one elevation; the closed form with their mean cos α.
    let cosSum = 0;
    for (const p of rx) {
      const dx = Math.hypot(target.e - p.e, target.n - p.n);
      cosSum += dx / Math.hypot(dx, target.u - p.u);
    }
    const want = (C * SIGMA) / (cosSum / 4);
    for (const altitudeKnown of [true, false]) {
      const drms = mlatHorizontalDrms(rx, target, SIGMA, { altitudeKnown });
      expect(rel(drms, want)).toBeLessThan(1e-4);
    }
  });
});

describe('no fix', () => {
  it('receivers on a line with the target in their vertical plane: NaN', () => {
    for (const angle of [0, 0.5236]) {
      const ce = Math.cos(angle);
      const cn = Math.sin(angle);
      const rx = [-30_000, -10_000, 5_000, 25_000, 40_000].map((x) => ({ e: x * ce, n: x * cn, u: 0 }));
      const target = { e: 8_000 * ce, n: 8_000 * cn, u: 6_000 };
      for (const altitudeKnown of [true, false]) {
        expect(mlatHorizontalDrms(rx, target, SIGMA, { altitudeKnown })).toBeNaN();
      }
    }
  });

  it('fewer receivers than needed: 2 with the altitude known, 3 unaided', () => {
    const target = { e: 0, n: 0, u: 5_000 };
    expect(mlatHorizontalDrms(circle(2, 20_000, 0.2), target, SIGMA, { altitudeKnown: true })).toBeNaN();
    expect(mlatHorizontalDrms(circle(3, 20_000, 0.2), target, SIGMA, { altitudeKnown: false })).toBeNaN();
    // One more each is a fix.
    expect(
      mlatHorizontalDrms(circle(3, 20_000, 0.2), target, SIGMA, { altitudeKnown: true }),
    ).toBeGreaterThan(0);
    expect(
      mlatHorizontalDrms(circle(4, 20_000, 0.2), target, SIGMA, { altitudeKnown: false }),
    ).toBeGreaterThan(0);
  });

  it('a receiver on the target: NaN', () => {
    const rx = circle(5, 20_000, 0.2);
    expect(mlatHorizontalDrms(rx, rx[2], SIGMA, { altitudeKnown: true })).toBeNaN();
  });
});

describe('bad input', () => {
  const rx = circle(4, 20_000, 0.2);
  const target = { e: 0, n: 0, u: 5_000 };
  it('a σ list of the wrong length, or a σ that is not positive, names the argument', () => {
    expect(() => mlatHorizontalDrms(rx, target, [SIGMA, SIGMA], { altitudeKnown: true })).toThrow(InputError);
    expect(() => mlatHorizontalDrms(rx, target, [SIGMA, SIGMA], { altitudeKnown: true })).toThrow(
      /sigmaS: found 2 values; expected 4 values, one per receiver/,
    );
    expect(() => mlatHorizontalDrms(rx, target, [SIGMA, -1, SIGMA, SIGMA], { altitudeKnown: true })).toThrow(
      /sigmaS\[1\]: found -1/,
    );
    expect(() => mlatHorizontalDrms(rx, target, 0, { altitudeKnown: true })).toThrow(InputError);
  });
  it('an ENU point off the globe names the coordinate', () => {
    expect(() => new EnuFrame(-30, 95, 0)).toThrow(/ENU origin: latitude: found 95/);
    expect(() => new EnuFrame(-30, -40, 0).toEnu(-30, -40, Number.NaN, 'receivers[3]')).toThrow(
      /receivers\[3\]: height: found NaN/,
    );
  });
});

// ---------------------------------------------------------------------------------------------------------------
// Monte Carlo: the brute-force weighted non-linear least-squares fix of simulated arrival times

/** Solves the n×n system a·x = b in place (Gaussian elimination with partial pivoting); returns x in b. */
function solveInPlace(a: number[][], b: number[]): void {
  const n = b.length;
  for (let col = 0; col < n; col++) {
    let piv = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(a[r][col]) > Math.abs(a[piv][col])) piv = r;
    [a[col], a[piv]] = [a[piv], a[col]];
    [b[col], b[piv]] = [b[piv], b[col]];
    for (let r = col + 1; r < n; r++) {
      const f = a[r][col] / a[col][col];
      for (let k = col; k < n; k++) a[r][k] -= f * a[col][k];
      b[r] -= f * b[col];
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r];
    for (let k = r + 1; k < n; k++) s -= a[r][k] * b[k];
    b[r] = s / a[r][r];
  }
}

/**
 * Empirical horizontal RMS error of the Gauss–Newton weighted least-squares fix over `trials` noisy arrival-time
 * sets: the unknowns (e, n[, u], b = c·t0), pseudo-ranges ρ_i = |x − r_i| + b + c·n_i, n_i ~ N(0, σ_i²).
 */
function monteCarloDrms(
  rx: EnuPoint[],
  target: EnuPoint,
  sigmas: number[],
  altitudeKnown: boolean,
  trials: number,
  seed: number,
): number {
  const rnd = mulberry32(seed);
  const gauss = () => {
    const u1 = 1 - rnd();
    const u2 = rnd();
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
  };
  const bias = 1234.5; // c·t0, m: any value; the fix estimates it
  const dim = altitudeKnown ? 3 : 4;
  let sum2 = 0;
  for (let t = 0; t < trials; t++) {
    const rho = rx.map(
      (r, i) => Math.hypot(target.e - r.e, target.n - r.n, target.u - r.u) + bias + C * sigmas[i] * gauss(),
    );
    // Start away from the truth (100 m, 100 m, 100 m, 50 m) so the solver has to work; a known altitude is exact.
    const x = [target.e + 100, target.n - 100, target.u + (altitudeKnown ? 0 : 100), bias - 50];
    for (let it = 0; it < 8; it++) {
      const a = Array.from({ length: dim }, () => new Array<number>(dim).fill(0));
      const g = new Array<number>(dim).fill(0);
      for (let i = 0; i < rx.length; i++) {
        const de = x[0] - rx[i].e;
        const dn = x[1] - rx[i].n;
        const du = x[2] - rx[i].u;
        const d = Math.hypot(de, dn, du);
        const row = altitudeKnown ? [de / d, dn / d, 1] : [de / d, dn / d, du / d, 1];
        const w = 1 / (C * sigmas[i]) ** 2;
        const res = rho[i] - (d + x[3]);
        for (let p = 0; p < dim; p++) {
          g[p] += w * row[p] * res;
          for (let q = 0; q < dim; q++) a[p][q] += w * row[p] * row[q];
        }
      }
      solveInPlace(a, g);
      x[0] += g[0];
      x[1] += g[1];
      if (altitudeKnown) x[3] += g[2];
      else {
        x[2] += g[2];
        x[3] += g[3];
      }
    }
    sum2 += (x[0] - target.e) ** 2 + (x[1] - target.n) ** 2;
  }
  return Math.sqrt(sum2 / trials);
}

describe('unequal σ_i against a brute-force Monte-Carlo least-squares fix (seeded, 20 000 trials)', () => {
  // Five receivers at irregular places and heights, timing errors from 20 to 120 ns (invented geometry).
  const rx: EnuPoint[] = [
    { e: -22_000, n: 9_000, u: 20 },
    { e: 4_000, n: 31_000, u: 450 },
    { e: 27_000, n: 6_000, u: 120 },
    { e: 15_000, n: -26_000, u: 800 },
    { e: -9_000, n: -17_000, u: 60 },
  ];
  const sigmas = [20e-9, 35e-9, 50e-9, 80e-9, 120e-9];
  const target = { e: 6_000, n: -3_000, u: 7_500 };

  it.each([true, false])(
    'altitude known = %s: within 3 % (sampling error ≈ 0.5 % at this count)',
    (altitudeKnown) => {
      const predicted = mlatHorizontalDrms(rx, target, sigmas, { altitudeKnown });
      const observed = monteCarloDrms(rx, target, sigmas, altitudeKnown, 20_000, altitudeKnown ? 11 : 12);
      expect(rel(predicted, observed)).toBeLessThan(0.03);
      // The weights matter here: the same σ given to the receivers in reverse order is outside the band.
      const swapped = mlatHorizontalDrms(rx, target, [...sigmas].reverse(), { altitudeKnown });
      expect(rel(swapped, observed)).toBeGreaterThan(0.03);
    },
  );

  it('the flat version gives the same figure, and repeated calls do not disturb each other', () => {
    const flat = new Float64Array(rx.flatMap((r) => [r.e, r.n, r.u]));
    const sig = new Float64Array(sigmas);
    for (const altitudeKnown of [true, false]) {
      const a = mlatHorizontalDrms(rx, target, sigmas, { altitudeKnown });
      const b = mlatHorizontalDrmsFlat(flat, 5, target.e, target.n, target.u, sig, altitudeKnown);
      const again = mlatHorizontalDrmsFlat(flat, 5, target.e, target.n, target.u, sig, altitudeKnown);
      expect(b).toBe(a);
      expect(again).toBe(a);
    }
    expect(() => mlatHorizontalDrmsFlat(flat, 6, 0, 0, 0, sig, true)).toThrow(InputError);
  });
});
