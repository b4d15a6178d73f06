/**
 * Detection statistics: the per-pulse signal-to-noise ratio a radar needs for a probability of detection Pd at a
 * false-alarm probability Pfa after non-coherent integration of n pulses, and the inverse (Pd at a given SNR), for
 * a steady target (Swerling 0) and the four Swerling fluctuating targets.
 *
 * Model. Square-law detector, non-coherent (post-detection) integration of n pulses with equal weights:
 *   Y = Σ_{k=1..n} |x_k|² / (noise power per pulse),
 * so that under noise alone Y ~ Gamma(n, 1) and
 *   Pfa = Q(n, T),   T the threshold,   Q(a, x) = Γ(a, x)/Γ(a), P = 1 − Q (regularised incomplete gamma functions).
 * S is the per-pulse SNR averaged over the target's fluctuation (the single-pulse SNR of the radar equation).
 * Target models (Marcum, "A statistical theory of target detection by pulsed radar", IRE Trans. IT-6(2), 1960;
 * Swerling, "Probability of detection for fluctuating targets", IRE Trans. IT-6(2), 1960):
 *   swerling0   steady target
 *   swerling1   RCS exponential (χ², 2 degrees of freedom), constant over the n pulses, independent scan to scan
 *   swerling2   RCS exponential, independent pulse to pulse
 *   swerling3   RCS χ² with 4 degrees of freedom, constant over the n pulses, independent scan to scan
 *   swerling4   RCS χ² with 4 degrees of freedom, independent pulse to pulse
 *
 * Every case is computed EXACTLY (no curve fit; every n from 1 to 8096, every Pfa from 1e−10 to 1e−3). Given the
 * target's total SNR over the n pulses, λ = Σ s_k, Y is non-central with moment generating function
 * (1+t)^−n·exp(−λt/(1+t)); λ is constant (case 0) or Gamma(K, nS/K) with K = 1, n, 2, 2n for cases 1–4 (the
 * same K as Shnidman's). Averaging gives:
 *   swerling0  Pd = Q_n(√(2nS), √(2T)), the generalised Marcum Q function (Marcum 1960), summed as its Poisson
 *              mixture Pd = Σ_k e^−λ·λ^k/k! · Q(n+k, T), λ = nS, over k within λ ± 12√λ + 10.
 *   swerling1  Y = Gamma(n−1, 1) + Exponential(mean 1 + nS), the closed form
 *                Pd = Q(n−1, T) + (1 + 1/(nS))^(n−1) · P(n−1, T/(1 + 1/(nS))) · e^(−T/(1+nS))
 *              (Swerling 1960; the form given by DiFranco & Rubin, Radar Detection, 1968, and Meyer & Mayer, Radar
 *              Target Detection, 1973 — recalled from memory and re-derived here). n = 1: Pd = e^(−T/(1+S)) =
 *              Pfa^(1/(1+S)), exported as `swerling1SinglePulsePd`.
 *   swerling2  Y = Gamma(n, 1 + S): Pd = Q(n, T/(1+S)) (Swerling 1960).
 *   swerling3  the generating function (1+t)^−(n−2)·(1+μt)^−2, μ = 1 + nS/2, expanded in powers of
 *              c/(1+t), c = 1 − 1/μ, is a negative-binomial mixture:
 *                Pd = Σ_k (k+1)·μ^−2·c^k · Q(n+k, T)
 *              (derived here; for n = 1 it equals the published single-pulse law e^(−T/μ)·(1 + cT/μ), recalled
 *              from memory and checked in the tests). A closed form with P(n−2, cT) exists too, but it subtracts
 *              nearly equal terms at low SNR; this sum has only positive terms.
 *   swerling4  (1+t)^n·(1+βt)^−2n, β = 1 + S/2, expanded in powers of (1+βt) is a binomial mixture:
 *                Pd = Σ_k C(n,k)·p^k·(1−p)^(n−k) · Q(2n−k, T/β),   p = 1/β
 *              (derived here), over k within np ± 12σ + 10.
 * Each sum steps its gamma tails upward, Q(a+1, x) = Q(a, x) + x^a·e^−x/Γ(a+1), adds only positive terms, starts
 * from logarithms (no overflow or underflow of weights such as (1+1/(nS))^(n−1) or μ^−2·c^k) and stops where
 * Q(a, x) = 1 to double precision, adding the rest of the weight in full. The tests check cases 1–4 against an
 * independent numerical integration of the case-0 law over λ ~ Gamma(K, nS/K) (also at n = 8096).
 *
 * requiredSnrDb solves Pd(S) = pd: the threshold T from Pfa by Newton's method on ln Q(n, T) (concave in T for
 * n ≥ 1, so the iteration converges monotonically after one step), then S in dB bracketed around a starting guess
 * from Shnidman's equation (D. A. Shnidman, "Determination of required SNR values", IEEE Trans. AES 38(3), 2002;
 * constants from memory — only a starting point, the answer does not depend on it) and refined by the Illinois
 * variant of regula falsi to 1e−9 dB: about 10 Pd evaluations, typically 0.01–0.1 ms a call at n = 8096.
 *
 * Numerics: P and Q by their power series (x < a + 1) and Lentz's continued fraction (x ≥ a + 1) (Press et al.,
 * Numerical Recipes, 2nd ed., §6.2), each as a logarithm; ln Γ by Stirling's series (Abramowitz & Stegun 6.1.41)
 * above 10, shifted by the recurrence below. Pd to about 1e−10 relative; required SNR to about 1e−8 dB.
 *
 * Assumptions: independent noise samples from pulse to pulse; for cases 2 and 4 independent target samples pulse to
 * pulse, for cases 1 and 3 one target sample for all n pulses; square-law detection, ideal equal-weight
 * integration, a fixed threshold set for the exact Pfa. Not included (they belong in the system losses): CFAR
 * loss, collapsing loss, beam-shape and straddle losses, and the few tenths of a dB between a linear (envelope) and
 * a square-law detector.
 *
 * Limits (DETECTION_LIMITS; outside → InputError naming the argument): 0.1 ≤ Pd ≤ 0.99 (Shnidman's published Pd
 * range), 1e−10 ≤ Pfa ≤ 1e−3, n a whole number of pulses from 1 to 8096 (Albersheim's published n range). These
 * are the product's limits: the exact method holds beyond them. Shnidman's equation itself is published for
 * 1e−9 ≤ Pfa ≤ 1e−3 and n ≤ 100 only, and is not used for the answer.
 */
import { InputError } from '../../shared/errors.ts';
import { DETECTION_LIMITS, FLUCTUATION_IDS, type Fluctuation } from '../../shared/target-terms.ts';

export type { Fluctuation } from '../../shared/target-terms.ts';
export { DETECTION_LIMITS } from '../../shared/target-terms.ts';
/** The Swerling cases, in order. */
export const FLUCTUATIONS: readonly Fluctuation[] = FLUCTUATION_IDS;

/** Required single-pulse SNR (dB) per pulse for (pd, pfa, n, case): exact, solved to 1e−9 dB. */
export function requiredSnrDb(pd: number, pfa: number, n: number, fluctuation: Fluctuation): number {
  const where = 'requiredSnrDb';
  checkPd(where, pd);
  checkPfa(where, pfa);
  checkN(where, n);
  checkFluctuation(where, fluctuation);
  const t = gammaQInverse(n, pfa);
  const f = (db: number) => pdAt(fluctuation, Math.pow(10, db / 10), t, n) - pd;

  // Bracket from Shnidman's estimate, widening by 2 dB steps (Pd rises monotonically with SNR).
  const guess = shnidmanEstimateDb(pd, pfa, n, fluctuation);
  let lo = guess - 1;
  let hi = guess + 1;
  let fLo = f(lo);
  let fHi = f(hi);
  for (let i = 0; fLo > 0 && i < 100; i++) {
    hi = lo;
    fHi = fLo;
    lo -= 2;
    fLo = f(lo);
  }
  for (let i = 0; fHi < 0 && i < 100; i++) {
    lo = hi;
    fLo = fHi;
    hi += 2;
    fHi = f(hi);
  }
  if (!(fLo <= 0 && fHi >= 0)) throw new Error(`requiredSnrDb: no bracket (pd ${pd}, pfa ${pfa}, n ${n})`);

  // Illinois regula falsi: superlinear, and never leaves the bracket.
  let side = 0;
  for (let i = 0; i < 200 && hi - lo > 1e-9; i++) {
    const x = fHi === fLo ? 0.5 * (lo + hi) : (lo * fHi - hi * fLo) / (fHi - fLo);
    const fx = f(x);
    if (fx === 0) return x;
    if (fx < 0) {
      lo = x;
      fLo = fx;
      if (side === -1) fHi *= 0.5;
      side = -1;
    } else {
      hi = x;
      fHi = fx;
      if (side === 1) fLo *= 0.5;
      side = 1;
    }
  }
  return fHi === fLo ? 0.5 * (lo + hi) : (lo * fHi - hi * fLo) / (fHi - fLo);
}

/**
 * Probability of detection for a given per-pulse SNR (dB), exact (see the header). Any finite snrDb; very low
 * SNR gives Pd → Pfa, very high Pd → 1.
 */
export function detectionProbability(
  snrDb: number,
  pfa: number,
  n: number,
  fluctuation: Fluctuation,
): number {
  const where = 'detectionProbability';
  if (typeof snrDb !== 'number' || !Number.isFinite(snrDb)) {
    throw new InputError(`${where}: snrDb`, show(snrDb), 'a finite SNR per pulse in dB');
  }
  checkPfa(where, pfa);
  checkN(where, n);
  checkFluctuation(where, fluctuation);
  return pdAt(fluctuation, Math.pow(10, snrDb / 10), gammaQInverse(n, pfa), n);
}

/** The exact single-pulse Swerling 1 law: Pd = Pfa^(1/(1+SNR)), SNR linear (Swerling 1960). */
export function swerling1SinglePulsePd(snrLinear: number, pfa: number): number {
  const where = 'swerling1SinglePulsePd';
  if (typeof snrLinear !== 'number' || !Number.isFinite(snrLinear) || snrLinear < 0) {
    throw new InputError(`${where}: snrLinear`, show(snrLinear), 'a finite linear SNR ≥ 0');
  }
  checkPfa(where, pfa);
  return Math.pow(pfa, 1 / (1 + snrLinear));
}

// ---------------------------------------------------------------------------------------------------------------
// Pd per case. s = mean per-pulse SNR (linear), t = threshold (noise-normalised), n = pulses.

function pdAt(fluctuation: Fluctuation, s: number, t: number, n: number): number {
  if (!(s > 0)) return gammaQ(n, t);
  if (s === Infinity) return 1;
  let pd: number;
  switch (fluctuation) {
    case 'swerling0':
      pd = pdSteady(s, t, n);
      break;
    case 'swerling1':
      pd = pdSwerling1(s, t, n);
      break;
    case 'swerling2':
      pd = gammaQ(n, t / (1 + s));
      break;
    case 'swerling3':
      pd = pdSwerling3(s, t, n);
      break;
    case 'swerling4':
      pd = pdSwerling4(s, t, n);
      break;
  }
  return pd < 0 ? 0 : pd > 1 ? 1 : pd;
}

/*
 * Three of the cases are mixtures Σ_k w_k·Q(a_k, x) of gamma tails whose shape a_k rises by one per term. Each loop
 * steps Q upward, Q(a+1, x) = Q(a, x) + inc_a with inc_a = x^a·e^−x/Γ(a+1), inc_{a+1} = inc_a·x/(a+1), and the
 * weights by their ratio; both start from logarithms (no overflow or underflow at the start of a window, which
 * lies within ~12 standard deviations of the mass — see each case) and every term is positive.
 */

/**
 * Whether Q(a, x) is 1 to double precision, given inc = x^a·e^−x/Γ(a+1) = Q(a+1, x) − Q(a, x): once a + 1 > x,
 * 1 − Q(a, x) = Σ_{j≥a} x^j·e^−x/j! ≤ inc/(1 − x/(a+1)) (the terms fall at least geometrically).
 */
function saturated(a: number, x: number, inc: number): boolean {
  return a + 1 > x && inc < 1e-17 * (1 - x / (a + 1));
}

/** Generalised Marcum Q as a Poisson(λ = nS) mixture of Q(n+k, T), over the terms within λ ± 12√λ + 10. */
function pdSteady(s: number, t: number, n: number): number {
  const lambda = n * s;
  const sd = Math.sqrt(lambda);
  const kLo = Math.max(0, Math.floor(lambda - 12 * sd - 10));
  const kHi = Math.ceil(lambda + 12 * sd + 10);
  let a = n + kLo;
  let q = gammaQ(a, t);
  let inc = Math.exp(a * Math.log(t) - t - lnGamma(a + 1));
  let w = Math.exp(-lambda + kLo * Math.log(lambda) - lnGamma(kLo + 1));
  let sum = 0;
  let wSum = 0;
  for (let k = kLo; k <= kHi; k++) {
    if (saturated(a, t, inc)) {
      // Every later tail is 1: the rest of the Poisson mass counts in full.
      sum += Math.max(0, 1 - wSum);
      break;
    }
    sum += w * q;
    wSum += w;
    q = Math.min(1, q + inc);
    a += 1;
    inc *= t / a;
    w *= lambda / (k + 1);
  }
  return sum;
}

/** Swerling 1: Gamma(n−1, 1) + Exponential(mean 1 + nS), in closed form (two positive terms). */
function pdSwerling1(s: number, t: number, n: number): number {
  const mu = 1 + n * s;
  if (n === 1) return Math.exp(-t / mu);
  const a = n - 1;
  const lnC = Math.log(n * s) - Math.log(mu); // ln(1 − 1/μ) without cancellation
  return gammaQ(a, t) + Math.exp(-t / mu - a * lnC + lnGammaP(a, t * Math.exp(lnC)));
}

/**
 * Swerling 3 as a negative-binomial mixture of gamma tails: Pd = Σ_k (k+1)·p²·c^k · Q(n+k, T), p = 1/μ, c = 1 − p,
 * μ = 1 + nS/2 (all terms positive). Terms start where Q(n+k, T) stops being negligible (n + k ≥ T − 15√T − 20,
 * more than 15 standard deviations of Gamma(n+k) below T) and stop once Q(n+k, T) = 1 to double precision, where
 * the rest of the mass, P(K ≥ k) = c^k·(1 + k·p), counts in full.
 */
function pdSwerling3(s: number, t: number, n: number): number {
  const mu = 1 + (n * s) / 2;
  const lnC = Math.log((n * s) / 2) - Math.log(mu); // ln(1 − 1/μ) without cancellation
  const c = Math.exp(lnC);
  const p = 1 / mu;
  const kStart = Math.max(0, Math.floor(t - n - 15 * Math.sqrt(t) - 20));
  let a = n + kStart;
  let q = gammaQ(a, t);
  let inc = Math.exp(a * Math.log(t) - t - lnGamma(a + 1));
  let w = Math.exp(Math.log(kStart + 1) - 2 * Math.log(mu) + kStart * lnC);
  let sum = 0;
  for (let k = kStart; k < kStart + 10_000_000; k++) {
    if (saturated(a, t, inc)) {
      sum += Math.exp(k * lnC) * (1 + k * p);
      break;
    }
    sum += w * q;
    q = Math.min(1, q + inc);
    a += 1;
    inc *= t / a;
    w *= (c * (k + 2)) / (k + 1);
  }
  return sum;
}

/**
 * Swerling 4: binomial mixture Σ_k C(n,k)·p^k·(1−p)^(n−k)·Q(2n − k, T/β), p = 1/β, β = 1 + S/2, over the terms
 * within np ± 12σ + 10 (σ² = np(1−p)).
 */
function pdSwerling4(s: number, t: number, n: number): number {
  const beta = 1 + s / 2;
  const lnP = -Math.log(beta);
  const ln1mP = Math.log(s / 2) - Math.log(beta);
  const p = 1 / beta;
  const mean = n * p;
  const sd = Math.sqrt(n * p * (1 - p));
  const kLo = Math.max(0, Math.floor(mean - 12 * sd - 10));
  const kHi = Math.min(n, Math.ceil(mean + 12 * sd + 10));
  const x = t / beta;
  // Shapes m = 2n − k rise as k falls: start at k = kHi and walk down.
  let m = 2 * n - kHi;
  let q = gammaQ(m, x);
  let inc = Math.exp(m * Math.log(x) - x - lnGamma(m + 1));
  let w = Math.exp(lnGamma(n + 1) - lnGamma(kHi + 1) - lnGamma(n - kHi + 1) + kHi * lnP + (n - kHi) * ln1mP);
  const odds = s / 2; // (1 − p)/p
  let sum = 0;
  let wSum = 0;
  for (let k = kHi; k >= kLo; k--) {
    if (saturated(m, x, inc)) {
      sum += Math.max(0, 1 - wSum);
      break;
    }
    sum += w * q;
    wSum += w;
    q = Math.min(1, q + inc);
    m += 1;
    inc *= x / m;
    // C(n, k−1)/C(n, k) = k/(n − k + 1)
    w *= (k * odds) / (n - k + 1);
  }
  return sum;
}

/**
 * Shnidman's equation (IEEE Trans. AES 38(3), 2002; constants from memory): required per-pulse SNR in dB, stated
 * within about 0.5 dB for 0.1 ≤ Pd ≤ 0.99, 1e−9 ≤ Pfa ≤ 1e−3, n ≤ 100. Here only the root finder's starting point.
 */
function shnidmanEstimateDb(pd: number, pfa: number, n: number, fluctuation: Fluctuation): number {
  const k =
    fluctuation === 'swerling0'
      ? Infinity
      : fluctuation === 'swerling1'
        ? 1
        : fluctuation === 'swerling2'
          ? n
          : fluctuation === 'swerling3'
            ? 2
            : 2 * n;
  const alpha = n < 40 ? 0 : 0.25;
  const eta =
    Math.sqrt(-0.8 * Math.log(4 * pfa * (1 - pfa))) +
    Math.sign(pd - 0.5) * Math.sqrt(-0.8 * Math.log(4 * pd * (1 - pd)));
  const xInf = eta * (eta + 2 * Math.sqrt(n / 2 + (alpha - 0.25)));
  const c1 = (((17.7006 * pd - 18.4496) * pd + 14.5339) * pd - 3.525) / k;
  const c2 =
    (Math.exp(27.31 * pd - 25.14) + (pd - 0.8) * (0.7 * Math.log(1e-5 / pfa) + (2 * n - 20) / 80)) / k;
  const cDb = pd <= 0.872 ? c1 : c1 + c2;
  return cDb + 10 * Math.log10(xInf / n);
}

// ---------------------------------------------------------------------------------------------------------------
// Incomplete gamma function (regularised), its inverse in x, and ln Γ.

const LN_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

/** ln Γ(x), x > 0: Stirling's series (A&S 6.1.41) at x ≥ 10, shifted up by the recurrence below; ~1e−15 rel. */
export function lnGamma(x: number): number {
  let shift = 0;
  let prod = 1;
  while (x < 10) {
    prod *= x;
    x += 1;
    shift += 1;
  }
  const r = 1 / x;
  const r2 = r * r;
  const series = r * (1 / 12 - r2 * (1 / 360 - r2 * (1 / 1260 - r2 * (1 / 1680 - r2 / 1188))));
  const v = (x - 0.5) * Math.log(x) - x + LN_SQRT_2PI + series;
  return shift === 0 ? v : v - Math.log(prod);
}

/** ln P(a, x) by the series, valid (and used) for x < a + 1. */
function lnPSeries(a: number, x: number): number {
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 1_000_000; k++) {
    term *= x / (a + k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return a * Math.log(x) - x - lnGamma(a + 1) + Math.log(sum);
}

/** ln Q(a, x) by Lentz's continued fraction, valid (and used) for x ≥ a + 1. */
function lnQFraction(a: number, x: number): number {
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1_000_000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return a * Math.log(x) - x - lnGamma(a) + Math.log(h);
}

/** ln P(a, x), the regularised lower incomplete gamma function; a > 0, x ≥ 0. */
export function lnGammaP(a: number, x: number): number {
  if (x <= 0) return -Infinity;
  return x < a + 1 ? lnPSeries(a, x) : Math.log1p(-Math.exp(lnQFraction(a, x)));
}

/** ln Q(a, x), the regularised upper incomplete gamma function; a > 0, x ≥ 0. */
export function lnGammaQ(a: number, x: number): number {
  if (x <= 0) return 0;
  return x < a + 1 ? Math.log1p(-Math.exp(lnPSeries(a, x))) : lnQFraction(a, x);
}

/** Q(a, x) = Γ(a, x)/Γ(a). */
export function gammaQ(a: number, x: number): number {
  return Math.exp(lnGammaQ(a, x));
}

/** The x with Q(a, x) = p (0 < p < 1, a ≥ 1): Newton's method on ln Q, which is concave in x for a ≥ 1. */
export function gammaQInverse(a: number, p: number): number {
  if (a === 1) return -Math.log(p);
  const lnPTarget = Math.log(p);
  // Start: Wilson–Hilferty with the normal quantile of A&S 26.2.23 (|error| < 4.5e−4).
  const z = p < 0.5 ? normalUpperQuantile(p) : -normalUpperQuantile(1 - p);
  const h = 1 / (9 * a);
  let x = Math.max(1e-3, a * Math.pow(Math.max(1 - h + z * Math.sqrt(h), 1e-3), 3));
  for (let i = 0; i < 200; i++) {
    const lnQ = lnGammaQ(a, x);
    const lnPdf = (a - 1) * Math.log(x) - x - lnGamma(a);
    // d ln Q/dx = −pdf/Q
    const step = (lnQ - lnPTarget) / Math.exp(lnPdf - lnQ);
    let next = x + step;
    if (!(next > 0)) next = x / 2;
    const done = Math.abs(next - x) <= 1e-14 * x;
    x = next;
    if (done) break;
  }
  return x;
}

/** z with upper normal tail p, 0 < p ≤ 0.5 (A&S 26.2.23, |error| < 4.5e−4): a starting value only. */
function normalUpperQuantile(p: number): number {
  const t = Math.sqrt(-2 * Math.log(p));
  return (
    t - (2.515517 + t * (0.802853 + t * 0.010328)) / (1 + t * (1.432788 + t * (0.189269 + t * 0.001308)))
  );
}

// ---------------------------------------------------------------------------------------------------------------
// Validation

function checkPd(where: string, pd: number): void {
  const L = DETECTION_LIMITS;
  if (!(typeof pd === 'number' && pd >= L.pdMin && pd <= L.pdMax)) {
    throw new InputError(
      `${where}: pd`,
      show(pd),
      `a probability of detection from ${L.pdMin} to ${L.pdMax}`,
    );
  }
}

function checkPfa(where: string, pfa: number): void {
  const L = DETECTION_LIMITS;
  if (!(typeof pfa === 'number' && pfa >= L.pfaMin && pfa <= L.pfaMax)) {
    throw new InputError(
      `${where}: pfa`,
      show(pfa),
      `a false-alarm probability from ${L.pfaMin} to ${L.pfaMax}`,
    );
  }
}

function checkN(where: string, n: number): void {
  const L = DETECTION_LIMITS;
  if (!(typeof n === 'number' && Number.isInteger(n) && n >= L.nMin && n <= L.nMax)) {
    throw new InputError(
      `${where}: n`,
      show(n),
      `a whole number of pulses integrated from ${L.nMin} to ${L.nMax}`,
    );
  }
}

function checkFluctuation(where: string, f: Fluctuation): void {
  if (!FLUCTUATIONS.includes(f)) {
    throw new InputError(
      `${where}: fluctuation`,
      show(f),
      `one of ${FLUCTUATIONS.map((x) => `'${x}'`).join(', ')}`,
    );
  }
}

function show(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === undefined) return 'nothing';
  return String(v);
}
