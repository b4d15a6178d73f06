/**
 * Detection statistics (worker/core/detection.ts): required SNR and Pd for a steady target and Swerling 1–4,
 * square-law detector, non-coherent integration of n pulses. Each check against something outside the project
 * names its source beside it: [pub] in the publication, [calc] computed here from the published formula, [memory]
 * recalled (with a tolerance that reflects it), "common practice" a fact of the trade. Independent numerical
 * evaluations (a Rician integral, an integral over the target's RCS law, the Poisson form of the gamma tail) check
 * the module's exact formulas without sharing their code.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import {
  DETECTION_LIMITS,
  FLUCTUATIONS,
  detectionProbability,
  gammaQ,
  gammaQInverse,
  lnGamma,
  lnGammaQ,
  requiredSnrDb,
  swerling1SinglePulsePd,
  type Fluctuation,
} from '../worker/core/detection.ts';

const db = (x: number) => 10 * Math.log10(x);
const fromDb = (d: number) => Math.pow(10, d / 10);

/** ln k! by summation (independent of the module's Stirling series). */
function lnFactorial(k: number): number {
  let s = 0;
  for (let i = 2; i <= k; i++) s += Math.log(i);
  return s;
}

/** Composite Simpson's rule on [a, b] with an even number of intervals m. */
function simpson(f: (x: number) => number, a: number, b: number, m: number): number {
  const h = (b - a) / m;
  let s = f(a) + f(b);
  for (let i = 1; i < m; i++) s += (i % 2 === 1 ? 4 : 2) * f(a + i * h);
  return (s * h) / 3;
}

/**
 * Albersheim's equation (Proc. IEEE 69(7), 1981) [pub formula], recomputed here: a fit to the linear (envelope)
 * detector's curves, claimed within 0.2 dB for 0.1 ≤ Pd ≤ 0.9, 1e−7 ≤ Pfa ≤ 1e−3, 1 ≤ n ≤ 8096.
 */
function albersheimDb(pd: number, pfa: number, n: number): number {
  const a = Math.log(0.62 / pfa);
  const b = Math.log(pd / (1 - pd));
  return -5 * Math.log10(n) + (6.2 + 4.54 / Math.sqrt(n + 0.44)) * Math.log10(a + 0.12 * a * b + 1.7 * b);
}

/**
 * Shnidman's equation (D. A. Shnidman, IEEE Trans. AES 38(3), 2002) [pub formula; constants from memory, the form
 * also given in the documentation of the `sdr` Python package's `shnidman`], recomputed here.
 */
function shnidmanDb(pd: number, pfa: number, n: number, f: Fluctuation): number {
  const k = { swerling0: Infinity, swerling1: 1, swerling2: n, swerling3: 2, swerling4: 2 * n }[f];
  const alpha = n < 40 ? 0 : 0.25;
  const eta =
    Math.sqrt(-0.8 * Math.log(4 * pfa * (1 - pfa))) +
    Math.sign(pd - 0.5) * Math.sqrt(-0.8 * Math.log(4 * pd * (1 - pd)));
  const xInf = eta * (eta + 2 * Math.sqrt(n / 2 + (alpha - 0.25)));
  const c1 = (((17.7006 * pd - 18.4496) * pd + 14.5339) * pd - 3.525) / k;
  const c2 =
    (Math.exp(27.31 * pd - 25.14) + (pd - 0.8) * (0.7 * Math.log(1e-5 / pfa) + (2 * n - 20) / 80)) / k;
  return (pd <= 0.872 ? c1 : c1 + c2) + db(xInf / n);
}

/** e^−z·I0(z), z ≥ 0: power series below 40, Hankel's asymptotic series above (A&S 9.6.10, 9.7.1). */
function scaledBesselI0(z: number): number {
  if (z < 40) {
    const q = (z * z) / 4;
    let term = 1;
    let sum = 1;
    for (let k = 1; k < 500 && term > sum * 1e-17; k++) {
      term *= q / (k * k);
      sum += term;
    }
    return sum * Math.exp(-z);
  }
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 12; k++) {
    term *= ((2 * k - 1) * (2 * k - 1)) / (k * 8 * z);
    sum += term;
  }
  return sum / Math.sqrt(2 * Math.PI * z);
}

/**
 * Steady target, one pulse, by direct integration of the Rician law of the square-law output (Marcum 1960):
 * Pd = ∫_T^∞ e^−(y+S)·I0(2√(yS)) dy, T = ln(1/Pfa), with y = v².
 */
function steadySinglePulsePdByIntegral(s: number, pfa: number): number {
  const t = -Math.log(pfa);
  const rs = Math.sqrt(s);
  const f = (v: number) => {
    const z = 2 * v * rs;
    return 2 * v * Math.exp(-(v - rs) * (v - rs)) * scaledBesselI0(z);
  };
  return simpson(f, Math.sqrt(t), Math.max(Math.sqrt(t), rs) + 14, 8000);
}

/**
 * A fluctuating target's Pd by integrating the steady-target law over the target's total SNR λ = Σ s_k, which is
 * Gamma(K, nS/K) with K = 1, n, 2, 2n for Swerling 1–4 (Swerling 1960: χ² RCS with 2 or 4 degrees of freedom,
 * constant over the n pulses or independent from pulse to pulse). Uses the module's Swerling 0 law only.
 */
function pdByRcsIntegral(snrDb: number, pfa: number, n: number, f: Fluctuation, intervals = 3000): number {
  const k = { swerling0: NaN, swerling1: 1, swerling2: n, swerling3: 2, swerling4: 2 * n }[f];
  const theta = (n * fromDb(snrDb)) / k;
  const lnGk = lnFactorial(k - 1);
  const uLo = Math.max(0, k - 13 * Math.sqrt(k));
  const uHi = k + 13 * Math.sqrt(k) + 40;
  const g = (u: number) => {
    if (u <= 0) return k === 1 ? pfa : 0;
    const density = Math.exp((k - 1) * Math.log(u) - u - lnGk);
    return density * detectionProbability(db((u * theta) / n), pfa, n, 'swerling0');
  };
  return simpson(g, uLo, uHi, intervals);
}

function inputErrorOf(fn: () => unknown): InputError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error('expected an InputError');
}

describe('published check values', () => {
  it('steady target, one pulse, Pd 0.9, Pfa 1e−6: 13.18 dB', () => {
    const s0 = requiredSnrDb(0.9, 1e-6, 1, 'swerling0');
    // [pub] Marcum (1960), 13.18 dB to the figure given.
    expect(Math.abs(s0 - 13.18)).toBeLessThan(0.005);
    // [pub] The `sdr` Python package's documentation example of min_snr(0.9, 1e-6, detector="square-law"):
    // 13.183490056794499.
    expect(Math.abs(s0 - 13.183490056794499)).toBeLessThan(1e-6);
  });

  it('Swerling 1, one pulse: SNR = ln Pfa / ln Pd − 1 (21.14 dB at Pd 0.9, Pfa 1e−6), about 8 dB above steady', () => {
    // [calc] from Swerling's (1960) single-pulse law Pd = Pfa^(1/(1+SNR)).
    const exact = db(Math.log(1e-6) / Math.log(0.9) - 1);
    expect(Math.abs(exact - 21.14)).toBeLessThan(0.005);
    const s1 = requiredSnrDb(0.9, 1e-6, 1, 'swerling1');
    expect(Math.abs(s1 - exact)).toBeLessThan(1e-6);
    // Swerling 2 with one pulse is the same law.
    expect(Math.abs(requiredSnrDb(0.9, 1e-6, 1, 'swerling2') - exact)).toBeLessThan(1e-6);
    // The fluctuation loss, and the radius ratio under the radar equation's fourth root [calc]:
    const s0 = requiredSnrDb(0.9, 1e-6, 1, 'swerling0');
    expect(Math.abs(s1 - s0 - 7.96)).toBeLessThan(0.01);
    expect(Math.abs(Math.pow(10, -(s1 - s0) / 40) - 0.632)).toBeLessThan(0.002);
  });

  it("Albersheim's equation: one pulse within its 0.2 dB, n = 10 (5.0 dB) within 0.2 dB + the detector difference", () => {
    // With one pulse the linear and square-law detectors are the same test (a monotone function of one sample), so
    // Albersheim's claimed 0.2 dB applies as it stands [pub claim, calc value].
    for (const pd of [0.5, 0.8, 0.9]) {
      for (const pfa of [1e-7, 1e-6, 1e-4]) {
        expect(Math.abs(albersheimDb(pd, pfa, 1) - requiredSnrDb(pd, pfa, 1, 'swerling0'))).toBeLessThan(0.2);
      }
    }
    // n = 10, Pd 0.9, Pfa 1e−6: Albersheim 5.0 dB [calc from pub formula]; exact square-law 5.27 dB. Tolerance:
    // Albersheim's 0.2 dB [pub] plus up to 0.2 dB between the linear detector he fitted and the square-law one
    // [memory: DiFranco & Rubin 1968; Marcum 1960].
    const a10 = albersheimDb(0.9, 1e-6, 10);
    expect(Math.abs(a10 - 5.0)).toBeLessThan(0.05);
    expect(Math.abs(requiredSnrDb(0.9, 1e-6, 10, 'swerling0') - a10)).toBeLessThan(0.4);
  });

  it('fluctuation loss at Pd 0.9, Pfa 1e−6, one pulse: about 8 dB (cases 1, 2) and 4 dB (cases 3, 4)', () => {
    // [memory] Skolnik, Introduction to Radar Systems (3rd ed.), the figure of additional SNR for fluctuating
    // targets against Pd: about 8 dB for Swerling 1/2 and about 4 dB for 3/4 at Pd 0.9 — read off a figure: ±1 dB.
    const s0 = requiredSnrDb(0.9, 1e-6, 1, 'swerling0');
    expect(Math.abs(requiredSnrDb(0.9, 1e-6, 1, 'swerling1') - s0 - 8)).toBeLessThan(1);
    expect(Math.abs(requiredSnrDb(0.9, 1e-6, 1, 'swerling3') - s0 - 4)).toBeLessThan(1);
  });

  it('Swerling 3 and 4, one pulse: the single-pulse law Pd = e^(−T/μ)·(1 + (1 − 1/μ)·T/μ), μ = 1 + S/2', () => {
    // [memory] the published single-pulse law for a χ² (4 degrees of freedom) target (Swerling 1960; DiFranco &
    // Rubin 1968); T = ln(1/Pfa) [calc].
    for (const pfa of [1e-10, 1e-6, 1e-3]) {
      const t = -Math.log(pfa);
      for (const snrDb of [-10, 0, 8, 15, 25, 40]) {
        const mu = 1 + fromDb(snrDb) / 2;
        const law = Math.exp(-t / mu) * (1 + ((1 - 1 / mu) * t) / mu);
        expect(Math.abs(detectionProbability(snrDb, pfa, 1, 'swerling3') / law - 1)).toBeLessThan(1e-11);
        expect(Math.abs(detectionProbability(snrDb, pfa, 1, 'swerling4') / law - 1)).toBeLessThan(1e-11);
      }
    }
  });
});

describe('exact laws against independent evaluations', () => {
  it('swerling1SinglePulsePd is Pfa^(1/(1+SNR)) and is what detectionProbability gives for one pulse', () => {
    for (const pfa of [1e-10, 1e-8, 1e-6, 1e-3]) {
      for (const snr of [0, 0.5, 3, 20, 130.1, 1e4]) {
        const p = swerling1SinglePulsePd(snr, pfa);
        expect(Math.abs(p / Math.pow(pfa, 1 / (1 + snr)) - 1)).toBeLessThan(1e-14);
        if (snr > 0) {
          expect(Math.abs(detectionProbability(db(snr), pfa, 1, 'swerling1') / p - 1)).toBeLessThan(1e-12);
          expect(Math.abs(detectionProbability(db(snr), pfa, 1, 'swerling2') / p - 1)).toBeLessThan(1e-12);
        }
      }
    }
  });

  it('steady target, one pulse: agrees with a direct integral of the Rician law', () => {
    for (const pfa of [1e-10, 1e-6, 1e-3]) {
      for (const snrDb of [0, 6, 10, 13.18, 16]) {
        const byIntegral = steadySinglePulsePdByIntegral(fromDb(snrDb), pfa);
        expect(Math.abs(detectionProbability(snrDb, pfa, 1, 'swerling0') - byIntegral)).toBeLessThan(1e-9);
      }
    }
  });

  it('Swerling 1–4: agree with the steady-target law integrated over the RCS law (n = 1 … 8096)', () => {
    const cases: [number, number, number][] = [
      // [n, snrDb, pfa]: per-pulse SNRs near the 0.3–0.95 part of each curve.
      [1, 14, 1e-6],
      [2, 12, 1e-10],
      [4, 8, 1e-6],
      [30, 0, 1e-3],
      [30, 3, 1e-9],
    ];
    for (const [n, snrDb, pfa] of cases) {
      for (const f of ['swerling1', 'swerling2', 'swerling3', 'swerling4'] as const) {
        const exact = detectionProbability(snrDb, pfa, n, f);
        expect(Math.abs(exact - pdByRcsIntegral(snrDb, pfa, n, f))).toBeLessThan(1e-8);
      }
    }
    // Large n: Swerling 1 and 3 (one RCS sample a scan) and Swerling 2 (Q(n, T/(1+S)) against the Poisson sum of
    // the steady law over λ ~ Gamma(n, S)). The steady law rises from 0 to 1 over a few percent of the Swerling 1
    // RCS scale here, so the integral takes finer steps.
    for (const [f, snrDb] of [
      ['swerling1', -3],
      ['swerling2', -11.6],
      ['swerling3', -7],
    ] as const) {
      const exact = detectionProbability(snrDb, 1e-6, 8096, f);
      expect(exact).toBeGreaterThan(0.2);
      expect(exact).toBeLessThan(0.99);
      expect(Math.abs(exact - pdByRcsIntegral(snrDb, 1e-6, 8096, f, 12_000))).toBeLessThan(1e-8);
    }
  });

  it('the gamma tail: Q(n, x) = P(Poisson(x) ≤ n − 1) [calc], its inverse, and ln Γ', () => {
    for (const n of [1, 2, 7, 50, 400, 3000, 8096]) {
      for (const x of [0.5 * n, n, n + 1, n + 6 * Math.sqrt(n) + 3, 2 * n + 30]) {
        // ln of Σ_{k<n} e^−x·x^k/k! by log-sum-exp, with ln k! by summation (far tails are below 1e−300).
        let lnFact = 0;
        const terms: number[] = [];
        for (let k = 0; k < n; k++) {
          if (k > 0) lnFact += Math.log(k);
          terms.push(-x + k * Math.log(x) - lnFact);
        }
        const top = Math.max(...terms);
        const lnPoisson = top + Math.log(terms.reduce((acc, v) => acc + Math.exp(v - top), 0));
        expect(Math.abs(lnGammaQ(n, x) - lnPoisson)).toBeLessThan(1e-9 * Math.max(1, Math.abs(lnPoisson)));
        if (lnPoisson > -700) expect(Math.abs(gammaQ(n, x) / Math.exp(lnPoisson) - 1)).toBeLessThan(1e-9);
      }
      for (const pfa of [1e-10, 1e-8, 1e-6, 1e-3]) {
        expect(Math.abs(gammaQ(n, gammaQInverse(n, pfa)) / pfa - 1)).toBeLessThan(1e-9);
      }
    }
    expect(gammaQInverse(1, 1e-6)).toBeCloseTo(-Math.log(1e-6), 12);
    for (const k of [1, 2, 5, 9, 10, 11, 30, 170]) {
      expect(Math.abs(lnGamma(k + 1) - lnFactorial(k))).toBeLessThan(1e-12 * Math.max(1, lnFactorial(k)));
    }
    expect(Math.abs(lnGamma(0.5) - 0.5 * Math.log(Math.PI))).toBeLessThan(1e-13);
  });
});

describe("Shnidman's equation as a cross-check", () => {
  // Shnidman's published range: 0.1 ≤ Pd ≤ 0.99, 1e−9 ≤ Pfa ≤ 1e−3, 1 ≤ n ≤ 100.
  const PDS = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.872, 0.9, 0.95, 0.99];
  const PFAS = [1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4, 1e-3];
  const NS = [1, 2, 3, 5, 10, 20, 40, 70, 100];

  it('steady target: within 0.5 dB over the whole published range', () => {
    // [pub claim] within 0.5 dB (Shnidman 2002; as summarised in Richards, Fundamentals of Radar Signal
    // Processing, 2005). Measured here: at most 0.3 dB.
    for (const pd of PDS) {
      for (const pfa of PFAS) {
        for (const n of NS) {
          expect(
            Math.abs(shnidmanDb(pd, pfa, n, 'swerling0') - requiredSnrDb(pd, pfa, n, 'swerling0')),
          ).toBeLessThan(0.5);
        }
      }
    }
  });

  it('every case: within 0.5 dB at Pfa 1e−6, n = 5, 0.1 ≤ Pd ≤ 0.9', () => {
    // [pub] Richards (2005) shows the error at Pfa 1e−6, n = 5 over the Pd range; within 0.5 dB except at extreme
    // Pd for Swerling 1.
    for (const f of FLUCTUATIONS) {
      for (let pd = 0.1; pd <= 0.9 + 1e-9; pd += 0.05) {
        expect(Math.abs(shnidmanDb(pd, 1e-6, 5, f) - requiredSnrDb(pd, 1e-6, 5, f))).toBeLessThan(0.5);
      }
    }
  });

  it('every case: within 1 dB over the whole published range, but for the Swerling 1 law at Pd 0.1', () => {
    // [pub claim] "less than 1 dB" (the `sdr` package's documentation of shnidman); "except at the extreme values
    // of Pd for the Swerling 1 case" (Richards 2005). Measured here: fluctuating cases reach 0.9 dB near
    // Pd 0.872 (where Shnidman's correction term switches on) and beyond 0.5 dB in several corners.
    let worst = 0;
    for (const f of FLUCTUATIONS) {
      for (const pd of PDS) {
        for (const pfa of PFAS) {
          for (const n of NS) {
            const swerling1Law = f === 'swerling1' || (f === 'swerling2' && n === 1);
            if (swerling1Law && pd === 0.1) continue;
            const d = Math.abs(shnidmanDb(pd, pfa, n, f) - requiredSnrDb(pd, pfa, n, f));
            worst = Math.max(worst, d);
          }
        }
      }
    }
    expect(worst).toBeLessThan(1);
  });

  it("the Swerling 1 exception is Shnidman's own error: there the exact answer is closed form", () => {
    // Pd 0.1, Pfa 1e−3, one pulse: SNR = ln 1e−3 / ln 0.1 − 1 = 2 exactly → 3.01 dB [calc, Swerling 1960].
    const exact = db(Math.log(1e-3) / Math.log(0.1) - 1);
    expect(Math.abs(requiredSnrDb(0.1, 1e-3, 1, 'swerling1') - exact)).toBeLessThan(1e-6);
    const shn = shnidmanDb(0.1, 1e-3, 1, 'swerling1');
    expect(exact - shn).toBeGreaterThan(0.9);
    expect(exact - shn).toBeLessThan(1.1);
  });
});

describe('invariants', () => {
  it('required SNR rises with Pd, falls as Pfa grows, and falls (per pulse) with n', () => {
    for (const f of FLUCTUATIONS) {
      for (const n of [1, 3, 30, 1000, 8096]) {
        let prev = -Infinity;
        for (const pd of [0.1, 0.3, 0.5, 0.7, 0.9, 0.95, 0.99]) {
          const s = requiredSnrDb(pd, 1e-6, n, f);
          expect(s).toBeGreaterThan(prev);
          prev = s;
        }
        prev = Infinity;
        for (const pfa of [1e-10, 1e-8, 1e-6, 1e-4, 1e-3]) {
          const s = requiredSnrDb(0.8, pfa, n, f);
          expect(s).toBeLessThan(prev);
          prev = s;
        }
      }
      let prev = Infinity;
      for (const n of [1, 2, 3, 5, 10, 30, 100, 300, 1000, 3000, 8096]) {
        const s = requiredSnrDb(0.9, 1e-8, n, f);
        expect(s).toBeLessThan(prev);
        prev = s;
      }
    }
  });

  it('at Pd 0.9: Swerling 1 ≥ Swerling 3 ≥ steady (n = 1 and more), Swerling 2 ≥ 4 ≥ steady for n ≥ 2', () => {
    for (const pfa of [1e-10, 1e-6, 1e-3]) {
      for (const n of [1, 2, 10, 100, 8096]) {
        const s0 = requiredSnrDb(0.9, pfa, n, 'swerling0');
        const s1 = requiredSnrDb(0.9, pfa, n, 'swerling1');
        const s3 = requiredSnrDb(0.9, pfa, n, 'swerling3');
        expect(s1).toBeGreaterThan(s3);
        expect(s3).toBeGreaterThan(s0);
        if (n >= 2) {
          const s2 = requiredSnrDb(0.9, pfa, n, 'swerling2');
          const s4 = requiredSnrDb(0.9, pfa, n, 'swerling4');
          expect(s2).toBeGreaterThan(s4);
          expect(s4).toBeGreaterThan(s0);
        }
      }
    }
  });

  it('for large n the pulse-to-pulse cases approach the steady target', () => {
    let prev = Infinity;
    for (const n of [10, 100, 1000, 8096]) {
      const gap = requiredSnrDb(0.9, 1e-6, n, 'swerling2') - requiredSnrDb(0.9, 1e-6, n, 'swerling0');
      expect(gap).toBeGreaterThan(0);
      expect(gap).toBeLessThan(prev);
      prev = gap;
    }
    expect(prev).toBeLessThan(0.01);
  });

  it('detectionProbability(requiredSnrDb(…)) gives Pd back (fast-check, n up to 8096)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 0.99, noNaN: true }),
        fc.double({ min: -10, max: -3, noNaN: true }),
        fc.oneof(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 1, max: 8096 })),
        fc.constantFrom(...FLUCTUATIONS),
        (pd, log10Pfa, n, f) => {
          const pfa = Math.pow(10, log10Pfa);
          const s = requiredSnrDb(pd, pfa, n, f);
          expect(Math.abs(detectionProbability(s, pfa, n, f) - pd)).toBeLessThan(1e-8);
        },
      ),
      { numRuns: 150, seed: 20020701 },
    );
  });

  it('detectionProbability rises with SNR from Pfa to 1, at any SNR', () => {
    for (const f of FLUCTUATIONS) {
      for (const n of [1, 3, 100, 8096]) {
        for (const pfa of [1e-10, 1e-3]) {
          let prev = 0;
          for (let snrDb = -80; snrDb <= 80; snrDb += 1) {
            const p = detectionProbability(snrDb, pfa, n, f);
            // Monotone to the module's accuracy (~1e−11 absolute near Pd = 1, where thousands of terms add up).
            expect(p).toBeGreaterThanOrEqual(prev - 1e-11);
            expect(p).toBeGreaterThanOrEqual(pfa * (1 - 1e-9));
            expect(p).toBeLessThanOrEqual(1);
            prev = p;
          }
          // Far below the noise Pd → Pfa; far above, → 1 (also at SNRs beyond any radar, without overflow).
          expect(Math.abs(detectionProbability(-80, pfa, n, f) / pfa - 1)).toBeLessThan(1e-4);
          expect(prev).toBeGreaterThan(0.999);
          expect(Math.abs(detectionProbability(-4000, pfa, n, f) / pfa - 1)).toBeLessThan(1e-9);
          for (const huge of [300, 4000]) expect(detectionProbability(huge, pfa, n, f)).toBe(1);
        }
      }
    }
  });

  it('accepts Pfa 1e−8 and 1e−10 (a common specification) for every case and n', () => {
    for (const pfa of [1e-8, 1e-10]) {
      // Swerling 1, one pulse: closed form [calc].
      const exact = db(Math.log(pfa) / Math.log(0.9) - 1);
      expect(Math.abs(requiredSnrDb(0.9, pfa, 1, 'swerling1') - exact)).toBeLessThan(1e-6);
      for (const f of FLUCTUATIONS) {
        for (const n of [1, 8096]) {
          const lower = requiredSnrDb(0.9, pfa, n, f);
          expect(Number.isFinite(lower)).toBe(true);
          expect(lower).toBeGreaterThan(requiredSnrDb(0.9, 1e-6, n, f));
        }
      }
    }
  });
});

describe('limits and input errors', () => {
  it('publishes its limits and cases', () => {
    expect(DETECTION_LIMITS).toEqual({
      pdMin: 0.1,
      pdMax: 0.99,
      pfaMin: 1e-10,
      pfaMax: 1e-3,
      nMin: 1,
      nMax: 8096,
    });
    expect([...FLUCTUATIONS]).toEqual(['swerling0', 'swerling1', 'swerling2', 'swerling3', 'swerling4']);
    // The limits themselves are inside.
    const L = DETECTION_LIMITS;
    for (const f of FLUCTUATIONS) {
      expect(Number.isFinite(requiredSnrDb(L.pdMin, L.pfaMin, L.nMax, f))).toBe(true);
      expect(Number.isFinite(requiredSnrDb(L.pdMax, L.pfaMax, L.nMin, f))).toBe(true);
    }
  });

  it('outside the limits → InputError naming the argument', () => {
    const bad: [() => unknown, string, string][] = [
      [() => requiredSnrDb(0.05, 1e-6, 1, 'swerling1'), 'requiredSnrDb: pd', '0.05'],
      [() => requiredSnrDb(0.995, 1e-6, 1, 'swerling1'), 'requiredSnrDb: pd', '0.995'],
      [() => requiredSnrDb(NaN, 1e-6, 1, 'swerling1'), 'requiredSnrDb: pd', 'NaN'],
      [() => requiredSnrDb(0.9, 1e-11, 1, 'swerling1'), 'requiredSnrDb: pfa', '1e-11'],
      [() => requiredSnrDb(0.9, 0.01, 1, 'swerling1'), 'requiredSnrDb: pfa', '0.01'],
      [() => requiredSnrDb(0.9, 1e-6, 0, 'swerling1'), 'requiredSnrDb: n', '0'],
      [() => requiredSnrDb(0.9, 1e-6, 8097, 'swerling1'), 'requiredSnrDb: n', '8097'],
      [() => requiredSnrDb(0.9, 1e-6, 2.5, 'swerling1'), 'requiredSnrDb: n', '2.5'],
      [
        () => requiredSnrDb(0.9, 1e-6, 1, 'swerling5' as Fluctuation),
        'requiredSnrDb: fluctuation',
        '"swerling5"',
      ],
      [() => detectionProbability(NaN, 1e-6, 1, 'swerling0'), 'detectionProbability: snrDb', 'NaN'],
      [() => detectionProbability(Infinity, 1e-6, 1, 'swerling0'), 'detectionProbability: snrDb', 'Infinity'],
      [() => detectionProbability(10, 2e-3, 1, 'swerling0'), 'detectionProbability: pfa', '0.002'],
      [() => detectionProbability(10, 1e-6, 10_000, 'swerling0'), 'detectionProbability: n', '10000'],
      [
        () => detectionProbability(10, 1e-6, 1, 'rayleigh' as Fluctuation),
        'detectionProbability: fluctuation',
        '"rayleigh"',
      ],
      [() => swerling1SinglePulsePd(-1, 1e-6), 'swerling1SinglePulsePd: snrLinear', '-1'],
      [() => swerling1SinglePulsePd(10, 0.5), 'swerling1SinglePulsePd: pfa', '0.5'],
    ];
    for (const [fn, where, found] of bad) {
      const e = inputErrorOf(fn);
      expect(e.where).toBe(where);
      expect(e.found).toBe(found);
      expect(e.expected.length).toBeGreaterThan(10);
    }
  });
});
