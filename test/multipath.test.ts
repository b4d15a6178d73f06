/**
 * Sea multipath (worker/core/multipath.ts): two-ray geometry on the spherical effective earth, divergence factor,
 * Fresnel reflection off sea water, Ament roughness, and the propagation factor F. Each check against something
 * outside the project names its source beside it: [pub] in the publication, [calc] computed here from the
 * published formula or from first principles (ray optics, vector geometry), [memory] recalled, "common practice"
 * a fact of the trade with no single source.
 */
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { slantGeometry } from '../worker/core/footprint.ts';
import {
  DEFAULT_SEA_RMS_HEIGHT_M,
  propagationFactor,
  reflectionGeometry,
  roughnessFactor,
  seaReflectionCoefficient,
  seaStateRmsHeightM,
  seaWaterPermittivity,
  smoothHorizonM,
  type Polarization,
  type SeaSurface,
} from '../worker/core/multipath.ts';

const DEG = Math.PI / 180;
const C = 299_792_458;
const lambdaOf = (fMHz: number) => C / (fMHz * 1e6);
/** 4/3 earth (common practice). */
const RE = (4 / 3) * 6_371_000;
/** An earth so large that it is flat for these ranges. */
const FLAT_RE = 1e18;
/** A perfectly conducting, smooth surface: ε → ∞ gives Γh → −1 (Fresnel [calc]). */
const CONDUCTOR: SeaSurface = { seaStateSigmaHM: 0, relPermittivity: { re: 1e14, im: 0 } };
const omni = () => 1;

/**
 * How far the exact two-ray F may stray from the classic 2|sin(2πh1h2/(λd))|: the classic formula's Δ = 2h1h2/d
 * exceeds the exact one by (2h1h2/d)·(h1² + h2²)/(2d²) [calc], and |dF/dΔ| ≤ 2π/λ; 10 % margin, and 1e−5 for Γ's
 * departure from −1 at ε = 1e14.
 */
function classicSlack(h1: number, h2: number, d: number, lambda: number): number {
  const classic = (2 * h1 * h2) / d;
  return 1.1 * ((2 * Math.PI) / lambda) * ((classic * (h1 * h1 + h2 * h2)) / (2 * d * d)) + 1e-5;
}

function geom(h1: number, h2: number, d: number, re: number) {
  const g = reflectionGeometry(h1, h2, d, re);
  if (g === null) throw new Error(`no reflection point for ${h1}, ${h2}, ${d}`);
  return g;
}

/** Complex helpers for recomputing Fresnel coefficients in the tests. */
type Cx = [number, number];
const cmul = (a: Cx, b: Cx): Cx => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
const cdiv = (a: Cx, b: Cx): Cx => {
  const d = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / d, (a[1] * b[0] - a[0] * b[1]) / d];
};
const csqrt = (a: Cx): Cx => {
  const m = Math.hypot(a[0], a[1]);
  const re = Math.sqrt((m + a[0]) / 2);
  const im = Math.sqrt(Math.max(0, (m - a[0]) / 2));
  return [re, a[1] < 0 ? -im : im];
};

describe('flat-earth limit (Re → ∞)', () => {
  it('path difference → 2·h1·h2/d (Blake, Barton [pub]); exactly the image-source difference [calc]', () => {
    for (const [h1, h2, d] of [
      [30, 300, 50_000],
      [10, 5000, 120_000],
      [50, 50, 20_000],
    ]) {
      const g = geom(h1, h2, d, FLAT_RE);
      const image = Math.hypot(d, h1 + h2) - Math.hypot(d, h2 - h1);
      expect(Math.abs(g.pathDiffM / image - 1)).toBeLessThan(1e-9);
      // 2h1h2/d is the small-angle form: expanding the square roots, the image difference falls short of it
      // by (2h1h2/d)·(h1² + h2²)/(2d²) to leading order [calc].
      const classic = (2 * h1 * h2) / d;
      const shortfall = (classic * (h1 * h1 + h2 * h2)) / (2 * d * d);
      expect(Math.abs(classic - g.pathDiffM - shortfall)).toBeLessThan(0.01 * shortfall);
      // Specular point of a plane mirror: d1 = d·h1/(h1 + h2) [calc]; divergence 1.
      expect(g.d1M).toBeCloseTo((d * h1) / (h1 + h2), 4);
      expect(g.divergence).toBeCloseTo(1, 6);
    }
  });

  it('smooth conductor, omni antenna: F = 2|sin(2π·h1·h2/(λd))|, the classic lobing formula (Blake, Barton [pub])', () => {
    const h1 = 30;
    const d = 80_000;
    for (const fMHz of [1300, 2800]) {
      const lambda = lambdaOf(fMHz);
      for (let h2 = 5; h2 <= 2000; h2 += 3.7) {
        const f = propagationFactor({
          h1M: h1,
          h2M: h2,
          groundRangeM: d,
          reM: FLAT_RE,
          fMHz,
          pol: 'horizontal',
          sea: CONDUCTOR,
          voltagePattern: omni,
        });
        const classic = 2 * Math.abs(Math.sin((2 * Math.PI * h1 * h2) / (lambda * d)));
        expect(Math.abs(f - classic)).toBeLessThan(classicSlack(h1, h2, d, lambda));
      }
    }
  });

  it('lobe maxima F = 2 at h2 = (2m+1)·λd/(4h1), nulls F = 0 at h2 = m·λd/(2h1) [calc]', () => {
    const h1 = 20;
    const d = 100_000;
    const fMHz = 1300;
    const lambda = lambdaOf(fMHz);
    const F = (h2: number) =>
      propagationFactor({
        h1M: h1,
        h2M: h2,
        groundRangeM: d,
        reM: FLAT_RE,
        fMHz,
        pol: 'horizontal',
        sea: CONDUCTOR,
        voltagePattern: omni,
      });
    for (let m = 0; m < 5; m++) {
      expect(F(((2 * m + 1) * lambda * d) / (4 * h1))).toBeCloseTo(2, 3);
      const hNull = ((m + 1) * lambda * d) / (2 * h1);
      expect(F(hNull)).toBeLessThan(classicSlack(h1, hNull, d, lambda));
    }
  });

  it('the lowest lobe peaks at an elevation ≈ λ/(4·h1) rad [calc]', () => {
    const h1 = 25;
    const fMHz = 2800;
    const lambda = lambdaOf(fMHz);
    // Far away, so that the angle from the antenna and from the ground below it agree (difference h1/d).
    const d = 2_000_000;
    const F = (h2: number) =>
      propagationFactor({
        h1M: h1,
        h2M: h2,
        groundRangeM: d,
        reM: FLAT_RE,
        fMHz,
        pol: 'horizontal',
        sea: CONDUCTOR,
        voltagePattern: omni,
      });
    // Golden-section search for the first maximum between 0 and the first null λd/(2h1).
    let a = 1;
    let b = (lambda * d) / (2 * h1) - 1;
    const r = (Math.sqrt(5) - 1) / 2;
    for (let k = 0; k < 80; k++) {
      const x1 = b - r * (b - a);
      const x2 = a + r * (b - a);
      if (F(x1) > F(x2)) b = x2;
      else a = x1;
    }
    const h2 = (a + b) / 2;
    const elevation = geom(h1, h2, d, FLAT_RE).directElevationRad;
    expect(Math.abs(elevation - lambda / (4 * h1))).toBeLessThan(h1 / d + 1e-6);
    expect(Math.abs(Math.atan(h2 / d) / (lambda / (4 * h1)) - 1)).toBeLessThan(1e-3);
    expect(F(h2)).toBeCloseTo(2, 4);
  });
});

describe('reflection point on the sphere', () => {
  /** Grazing angle at a terminal of height h, ground arc s from the specular point: exact circle geometry. */
  const grazing = (h: number, s: number, re: number) =>
    Math.atan2((re + h) * Math.cos(s / re) - re, (re + h) * Math.sin(s / re));

  const cases = [
    [30, 300, 20_000],
    [30, 3000, 50_000],
    [30, 3000, 200_000],
    [30, 10_000, 400_000],
    [100, 1000, 150_000],
    [500, 20, 60_000],
    [30, 12_000, 15_000],
  ];

  it('equal grazing angles on both sides of d1 and d2 = d − d1 (specular reflection [calc])', () => {
    for (const [h1, h2, d] of cases) {
      const g = geom(h1, h2, d, RE);
      expect(g.d1M).toBeGreaterThan(0);
      expect(g.d1M).toBeLessThan(d);
      const psi1 = grazing(h1, g.d1M, RE);
      const psi2 = grazing(h2, d - g.d1M, RE);
      expect(Math.abs(psi1 - psi2)).toBeLessThan(1e-10);
      expect(Math.abs(g.grazingRad - psi1)).toBeLessThan(1e-10);
      // The specular point lies nearer the lower terminal.
      if (h1 < h2) expect(g.d1M).toBeLessThan(d / 2);
      else expect(g.d1M).toBeGreaterThan(d / 2);
    }
  });

  it('d1 = d/2 when h1 = h2 [calc]', () => {
    for (const [h, d] of [
      [30, 10_000],
      [1000, 200_000],
    ]) {
      expect(geom(h, h, d, RE).d1M).toBeCloseTo(d / 2, 6);
    }
  });

  it("d1 agrees with Blake's trigonometric solution of Kerr's cubic to its parabolic-earth accuracy [calc]", () => {
    for (const [h1, h2, d] of cases) {
      const p = (2 / Math.sqrt(3)) * Math.sqrt(RE * (h1 + h2) + (d / 2) ** 2);
      const phi = Math.acos((2 * RE * (h1 - h2) * d) / p ** 3);
      const d1 = d / 2 + p * Math.cos((phi + Math.PI) / 3);
      // The cubic is the parabolic (small-angle) earth: agreement to a fraction of d/Re of the range.
      expect(Math.abs(geom(h1, h2, d, RE).d1M - d1)).toBeLessThan(1e-3 * d);
    }
  });

  it('path difference = (R1 + R2) − Rd in earth-centred coordinates [calc]', () => {
    for (const [h1, h2, d] of cases) {
      const g = geom(h1, h2, d, RE);
      const a: Cx = [0, RE + h1];
      const t: Cx = [(RE + h2) * Math.sin(d / RE), (RE + h2) * Math.cos(d / RE)];
      const s: Cx = [RE * Math.sin(g.d1M / RE), RE * Math.cos(g.d1M / RE)];
      const dist = (u: Cx, v: Cx) => Math.hypot(u[0] - v[0], u[1] - v[1]);
      const delta = dist(a, s) + dist(s, t) - dist(a, t);
      expect(Math.abs(g.pathDiffM - delta)).toBeLessThan(1e-6);
    }
  });

  it("ray elevations at the antenna: direct = footprint.ts slantGeometry's; reflected = −(ψ + d1/Re) [calc]", () => {
    const out = { rangeM: 0, elevationRad: 0 };
    for (const [h1, h2, d] of cases) {
      const g = geom(h1, h2, d, RE);
      slantGeometry(d, h2, h1, RE, out);
      expect(Math.abs(g.directElevationRad - out.elevationRad)).toBeLessThan(1e-9);
      expect(g.reflectedElevationRad).toBeCloseTo(-(g.grazingRad + g.d1M / RE), 12);
      expect(g.reflectedElevationRad).toBeLessThan(g.directElevationRad);
    }
  });

  it('no reflection point beyond √(2Re·h1) + √(2Re·h2); one just inside the exact smooth-sphere horizon [calc]', () => {
    for (const [h1, h2] of [
      [30, 300],
      [15, 10_000],
    ]) {
      const parabolic = Math.sqrt(2 * RE * h1) + Math.sqrt(2 * RE * h2);
      const exact = RE * (Math.acos(RE / (RE + h1)) + Math.acos(RE / (RE + h2)));
      expect(smoothHorizonM(h1, h2, RE)).toBeCloseTo(exact, 3);
      expect(exact).toBeLessThan(parabolic);
      expect(reflectionGeometry(h1, h2, parabolic, RE)).toBeNull();
      expect(reflectionGeometry(h1, h2, parabolic * 1.01, RE)).toBeNull();
      expect(reflectionGeometry(h1, h2, exact * 1.000001, RE)).toBeNull();
      expect(reflectionGeometry(h1, h2, parabolic * 0.99, RE)).not.toBeNull();
      const edge = geom(h1, h2, exact * (1 - 1e-9), RE);
      expect(edge.grazingRad).toBeLessThan(1e-6);
      // At the horizon the specular point is the antenna's tangent point.
      expect(edge.d1M / (RE * Math.acos(RE / (RE + h1))) - 1).toBeLessThan(1e-3);
    }
  });

  it('the out parameter is filled and returned; invalid input gives null', () => {
    const out = reflectionGeometry(1, 1, 1, RE)!;
    const same = reflectionGeometry(30, 300, 20_000, RE, out);
    expect(same).toBe(out);
    expect(out.d1M).toBeCloseTo(geom(30, 300, 20_000, RE).d1M, 9);
    expect(reflectionGeometry(NaN, 300, 20_000, RE)).toBeNull();
    expect(reflectionGeometry(30, -1, 20_000, RE)).toBeNull();
  });
});

describe('divergence factor', () => {
  it('D = [1 + 2·d1·d2/(Re·d·sin ψ)]^−½ (Blake, Barton [memory]) matches ray optics off the sphere [calc]', () => {
    /**
     * Trace a ray leaving the antenna at depression θ, reflect it off the circle of radius Re, and find the height
     * H where it crosses the target's vertical. A flat mirror spreads the rays as L·dθ across the ray (L the
     * unfolded path); the sphere as |dH/dθ|·cos β (β the ray's elevation at the target). D² is their ratio.
     */
    const traced = (h1: number, theta: number, d: number) => {
      const ay = RE + h1;
      const ux = Math.cos(theta);
      const uy = -Math.sin(theta);
      const b = ay * uy;
      const t = -b - Math.sqrt(b * b - (ay * ay - RE * RE));
      const sx = t * ux;
      const sy = ay + t * uy;
      const un = (ux * sx + uy * sy) / RE;
      const rx = ux - (2 * un * sx) / RE;
      const ry = uy - (2 * un * sy) / RE;
      const ex = Math.sin(d / RE);
      const ey = Math.cos(d / RE);
      const det = -rx * ey + ex * ry;
      const s = (sx * ey - ex * sy) / det;
      const mu = (-rx * sy + ry * sx) / det;
      return { h: mu - RE, length: t + s, beta: Math.asin(rx * ex + ry * ey) };
    };
    for (const [h1, h2, d] of [
      [30, 300, 20_000],
      [30, 3000, 200_000],
      [30, 10_000, 400_000],
      [100, 1000, 150_000],
      [30, 300, 60_000],
    ]) {
      const g = geom(h1, h2, d, RE);
      const theta = -g.reflectedElevationRad;
      const ray = traced(h1, theta, d);
      expect(ray.h).toBeCloseTo(h2, 4); // the reflected elevation hits the target
      const dt = 1e-7;
      const dh = Math.abs(traced(h1, theta - dt, d).h - traced(h1, theta + dt, d).h) / (2 * dt);
      const dRays = Math.sqrt(ray.length / (dh * Math.cos(ray.beta)));
      const d2 = d - g.d1M;
      const dFormula = 1 / Math.sqrt(1 + (2 * g.d1M * d2) / (RE * d * Math.sin(g.grazingRad)));
      expect(g.divergence).toBeCloseTo(dFormula, 12);
      expect(Math.abs(g.divergence - dRays)).toBeLessThan(1e-3);
    }
  });

  it('D → 1 at short range and high grazing, D → 0 toward the horizon, 0 < D ≤ 1 [calc]', () => {
    expect(geom(30, 3000, 5000, RE).divergence).toBeGreaterThan(0.9999);
    const h1 = 30;
    const h2 = 1000;
    const horizon = smoothHorizonM(h1, h2, RE);
    let previous = 1;
    for (let d = 1000; d < horizon; d += horizon / 200) {
      const D = geom(h1, h2, d, RE).divergence;
      expect(D).toBeGreaterThan(0);
      expect(D).toBeLessThanOrEqual(1);
      expect(D).toBeLessThanOrEqual(previous + 1e-12);
      previous = D;
    }
    expect(geom(h1, h2, horizon * (1 - 1e-6), RE).divergence).toBeLessThan(0.01);
  });
});

describe('sea water', () => {
  it('Klein–Swift: pure water at 20 °C has a static permittivity of about 80.1 (CRC Handbook [memory])', () => {
    expect(Math.abs(seaWaterPermittivity(1, 20, 0).re - 80.1)).toBeLessThan(0.2);
  });

  it('Stogryn conductivity: standard sea water (S = 35, 15 °C) conducts 4.2914 S/m (PSS-78 definition [memory])', () => {
    // At 1 MHz the loss is the ionic conductivity: σ = −Im ε · 2πf·ε0.
    const f = 1e6;
    const sigma = -seaWaterPermittivity(1, 15, 35).im * 2 * Math.PI * f * 8.8541878128e-12;
    expect(Math.abs(sigma / 4.2914 - 1)).toBeLessThan(0.005);
  });

  it('at 3 GHz and 20 °C, ε ≈ 70 − j40 (the value usually quoted for sea water at S band [memory])', () => {
    const e = seaWaterPermittivity(3000);
    expect(Math.abs(e.re - 70)).toBeLessThan(3);
    expect(Math.abs(-e.im - 40)).toBeLessThan(4);
  });

  it('Fresnel: Γv = 0 at the Brewster angle of a lossless dielectric, tan ψB = 1/√ε (Brewster [pub])', () => {
    const sea: SeaSurface = { relPermittivity: { re: 4, im: 0 } };
    const psiB = Math.atan(1 / 2);
    expect(seaReflectionCoefficient(psiB, 1000, 'vertical', sea).mag).toBeLessThan(1e-12);
    expect(seaReflectionCoefficient(psiB, 1000, 'horizontal', sea).mag).toBeGreaterThan(0.5);
  });

  it('Fresnel at normal incidence: Γh = (1 − √ε)/(1 + √ε) = −Γv [calc]', () => {
    const eps: Cx = [70, -40];
    const q = csqrt(eps);
    const gh = cdiv([1 - q[0], -q[1]], [1 + q[0], q[1]]);
    const sea: SeaSurface = { relPermittivity: { re: eps[0], im: eps[1] } };
    const h = seaReflectionCoefficient(Math.PI / 2, 3000, 'horizontal', sea);
    const v = seaReflectionCoefficient(Math.PI / 2, 3000, 'vertical', sea);
    expect(h.mag).toBeCloseTo(Math.hypot(gh[0], gh[1]), 12);
    expect(h.phaseRad).toBeCloseTo(Math.atan2(gh[1], gh[0]), 12);
    expect(v.mag).toBeCloseTo(h.mag, 12);
    expect(Math.cos(v.phaseRad - h.phaseRad)).toBeCloseTo(-1, 12);
  });

  it('Fresnel at any angle, both polarisations: recomputed with complex arithmetic [calc]', () => {
    const eps: Cx = [72, -71];
    const sea: SeaSurface = { relPermittivity: { re: eps[0], im: eps[1] } };
    for (const deg of [0.1, 1, 5, 20, 60]) {
      const s = Math.sin(deg * DEG);
      const q = csqrt([eps[0] - Math.cos(deg * DEG) ** 2, eps[1]]);
      const gh = cdiv([s - q[0], -q[1]], [s + q[0], q[1]]);
      const es = cmul(eps, [s, 0]);
      const gv = cdiv([es[0] - q[0], es[1] - q[1]], [es[0] + q[0], es[1] + q[1]]);
      for (const [pol, want] of [
        ['horizontal', gh],
        ['vertical', gv],
      ] as [Polarization, Cx][]) {
        const got = seaReflectionCoefficient(deg * DEG, 1300, pol, sea);
        expect(got.mag * Math.cos(got.phaseRad)).toBeCloseTo(want[0], 12);
        expect(got.mag * Math.sin(got.phaseRad)).toBeCloseTo(want[1], 12);
      }
    }
  });

  it('horizontal: |Γh| close to 1 with phase ≈ π at low grazing (Blake, Barton [pub])', () => {
    for (const fMHz of [1030, 1300, 2800]) {
      for (const deg of [0.1, 0.5, 1]) {
        const g = seaReflectionCoefficient(deg * DEG, fMHz, 'horizontal');
        expect(g.mag).toBeGreaterThan(0.98);
        expect(Math.cos(g.phaseRad)).toBeLessThan(-0.999);
      }
    }
  });

  it('vertical: a pseudo-Brewster minimum of |Γv| at a few degrees, near atan(1/√|ε|) [memory]; 5–8° at 3 GHz [memory]', () => {
    for (const fMHz of [1030, 1300, 2800, 3000]) {
      let best = Infinity;
      let bestDeg = 0;
      for (let deg = 0.05; deg <= 30; deg += 0.01) {
        const m = seaReflectionCoefficient(deg * DEG, fMHz, 'vertical').mag;
        if (m < best) {
          best = m;
          bestDeg = deg;
        }
      }
      expect(bestDeg).toBeGreaterThan(2);
      expect(bestDeg).toBeLessThan(15);
      const e = seaWaterPermittivity(fMHz);
      expect(Math.abs(bestDeg - Math.atan(1 / Math.sqrt(Math.hypot(e.re, e.im))) / DEG)).toBeLessThan(0.2);
      expect(best).toBeLessThan(0.5 * seaReflectionCoefficient(bestDeg * DEG, fMHz, 'horizontal').mag);
      // Below it |Γv| climbs back toward 1 as ψ → 0 with phase → π (Blake [pub]).
      const low = seaReflectionCoefficient(0.05 * DEG, fMHz, 'vertical');
      expect(low.mag).toBeGreaterThan(0.9);
      expect(Math.cos(low.phaseRad)).toBeLessThan(-0.99);
      if (fMHz === 3000) {
        expect(bestDeg).toBeGreaterThan(5);
        expect(bestDeg).toBeLessThan(8);
      }
    }
  });

  it('a permittivity with a gain (Im ε > 0) or a non-positive real part is an InputError', () => {
    expect(() =>
      seaReflectionCoefficient(0.01, 1300, 'vertical', { relPermittivity: { re: 70, im: 40 } }),
    ).toThrow(InputError);
    expect(() =>
      seaReflectionCoefficient(0.01, 1300, 'vertical', { relPermittivity: { re: 0, im: -1 } }),
    ).toThrow(/imaginary part ≤ 0/);
  });
});

describe('roughness', () => {
  it('Ament: ρs = exp(−2(2π·σh·sin ψ/λ)²) (Ament 1953 [pub]); → 1 as σh → 0', () => {
    expect(roughnessFactor(0, 10 * DEG, 3000)).toBe(1);
    expect(roughnessFactor(1e-6, 10 * DEG, 3000)).toBeGreaterThan(0.999999);
    const g = (2 * Math.PI * 0.5 * Math.sin(2 * DEG)) / lambdaOf(1300);
    expect(roughnessFactor(0.5, 2 * DEG, 1300)).toBeCloseTo(Math.exp(-2 * g * g), 14);
  });

  it('at the Rayleigh criterion σh·sin ψ = λ/8, ρs = exp(−π²/8) [calc]', () => {
    const fMHz = 2800;
    const psi = 3 * DEG;
    const sigma = lambdaOf(fMHz) / (8 * Math.sin(psi));
    expect(roughnessFactor(sigma, psi, fMHz)).toBeCloseTo(Math.exp(-(Math.PI ** 2) / 8), 12);
  });

  it('decreases with frequency and with grazing angle (Ament [pub])', () => {
    let previous = 1;
    for (const fMHz of [500, 1030, 1300, 2800, 5600]) {
      const r = roughnessFactor(DEFAULT_SEA_RMS_HEIGHT_M, 1 * DEG, fMHz);
      expect(r).toBeLessThan(previous);
      previous = r;
    }
    previous = 1;
    for (const deg of [0.1, 0.5, 1, 2, 5, 10]) {
      const r = roughnessFactor(DEFAULT_SEA_RMS_HEIGHT_M, deg * DEG, 1300);
      expect(r).toBeLessThan(previous);
      previous = r;
    }
  });

  it('the default σh = 0.3 m lies in WMO sea state 3, "slight", Hs 0.5–1.25 m with Hs ≈ 4σh (common practice [memory])', () => {
    expect(4 * DEFAULT_SEA_RMS_HEIGHT_M).toBeGreaterThan(0.5);
    expect(4 * DEFAULT_SEA_RMS_HEIGHT_M).toBeLessThanOrEqual(1.25);
    expect(seaStateRmsHeightM(0)).toBe(0);
    expect(seaStateRmsHeightM(3)).toBeCloseTo((0.5 + 1.25) / 2 / 4, 12);
    for (let s = 1; s <= 9; s++) expect(seaStateRmsHeightM(s)).toBeGreaterThan(seaStateRmsHeightM(s - 1));
    expect(() => seaStateRmsHeightM(10)).toThrow(InputError);
    expect(() => seaStateRmsHeightM(2.5)).toThrow(/whole number from 0 to 9/);
  });
});

describe('propagation factor on the spherical earth', () => {
  /** A Gaussian beam peaking at 2°, 4° wide at −3 dB (voltage pattern; common practice). */
  const beam = (e: number) => Math.sqrt(Math.pow(10, -1.2 * ((e - 2 * DEG) / (4 * DEG)) ** 2));
  const base = { h1M: 30, reM: RE, voltagePattern: beam };

  it('is |g(εd) + D·ρs·Γ·g(εr)·e^{−j2πΔ/λ}| from the geometry, Γ and ρs (Blake, Barton [pub]; recomputed [calc])', () => {
    for (const [h2, d, fMHz, pol] of [
      [300, 20_000, 1300, 'horizontal'],
      [3000, 120_000, 2800, 'vertical'],
      [10_000, 300_000, 1030, 'vertical'],
      [50, 25_000, 2800, 'horizontal'],
    ] as [number, number, number, Polarization][]) {
      const g = geom(30, h2, d, RE);
      const gamma = seaReflectionCoefficient(g.grazingRad, fMHz, pol);
      const rho = roughnessFactor(DEFAULT_SEA_RMS_HEIGHT_M, g.grazingRad, fMHz);
      const a = g.divergence * rho * gamma.mag * beam(g.reflectedElevationRad);
      const phase = gamma.phaseRad - (2 * Math.PI * g.pathDiffM) / lambdaOf(fMHz);
      const want = Math.hypot(beam(g.directElevationRad) + a * Math.cos(phase), a * Math.sin(phase));
      const got = propagationFactor({ ...base, h2M: h2, groundRangeM: d, fMHz, pol });
      expect(got).toBeCloseTo(want, 12);
    }
  });

  it('a very rough sea or a pattern with nothing below the horizon leaves the free-space pattern, F = g(εd) [calc]', () => {
    const d = 40_000;
    const h2 = 600;
    const gd = beam(geom(30, h2, d, RE).directElevationRad);
    const rough = propagationFactor({
      ...base,
      h2M: h2,
      groundRangeM: d,
      fMHz: 2800,
      pol: 'horizontal',
      sea: { seaStateSigmaHM: 50 },
    });
    expect(rough).toBeCloseTo(gd, 12);
    const upOnly = propagationFactor({
      ...base,
      voltagePattern: (e: number) => (e >= 0 ? beam(e) : 0),
      h2M: h2,
      groundRangeM: d,
      fMHz: 2800,
      pol: 'horizontal',
    });
    expect(upOnly).toBeCloseTo(gd, 12);
  });

  it('0 ≤ F ≤ 2 with an omni pattern; lobing reaches near 2 and near 0 at low grazing over a calm sea', () => {
    let lo = Infinity;
    let hi = 0;
    for (let h2 = 10; h2 <= 3000; h2 += 2.3) {
      const f = propagationFactor({
        h1M: 30,
        h2M: h2,
        groundRangeM: 40_000,
        reM: RE,
        fMHz: 1300,
        pol: 'horizontal',
        sea: { seaStateSigmaHM: 0 },
        voltagePattern: omni,
      });
      expect(f).toBeGreaterThanOrEqual(0);
      expect(f).toBeLessThanOrEqual(2);
      lo = Math.min(lo, f);
      hi = Math.max(hi, f);
    }
    expect(hi).toBeGreaterThan(1.9);
    expect(lo).toBeLessThan(0.1);
  });

  it('vertical polarisation lobes less deeply than horizontal near the pseudo-Brewster angle (Blake [pub])', () => {
    const swing = (pol: Polarization) => {
      let lo = Infinity;
      let hi = 0;
      // Grazing about 6° at 10 km: around |Γv|'s minimum at S band.
      for (let h2 = 1000; h2 <= 1100; h2 += 0.05) {
        const f = propagationFactor({
          h1M: 30,
          h2M: h2,
          groundRangeM: 10_000,
          reM: RE,
          fMHz: 2800,
          pol,
          sea: { seaStateSigmaHM: 0 },
          voltagePattern: omni,
        });
        lo = Math.min(lo, f);
        hi = Math.max(hi, f);
      }
      return hi - lo;
    };
    expect(swing('vertical')).toBeLessThan(0.5 * swing('horizontal'));
  });

  it('0 beyond the smooth-sphere horizon; NaN for invalid input', () => {
    const p = { h1M: 30, h2M: 300, reM: RE, fMHz: 1300, pol: 'horizontal' as const, voltagePattern: omni };
    const horizon = smoothHorizonM(30, 300, RE);
    expect(propagationFactor({ ...p, groundRangeM: horizon * 1.001 })).toBe(0);
    expect(propagationFactor({ ...p, groundRangeM: horizon * 0.999 })).toBeGreaterThan(0);
    expect(propagationFactor({ ...p, groundRangeM: NaN })).toBeNaN();
    expect(propagationFactor({ ...p, groundRangeM: 1000, h2M: -5 })).toBeNaN();
    expect(propagationFactor({ ...p, groundRangeM: 1000, fMHz: 0 })).toBeNaN();
    expect(() => propagationFactor({ ...p, groundRangeM: 1000, sea: { seaStateSigmaHM: -1 } })).toThrow(
      InputError,
    );
  });
});
