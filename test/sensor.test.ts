/**
 * Sensor models (worker/core/sensor.ts): radar equation, antenna gain, the study's target (RCS, fluctuation,
 * transponder class), specification points and their conventions, SSR link budgets, elevation patterns, tilt,
 * weather mode, the cone of silence, the default catalog, and every InputError. Each check against something
 * outside the project names its source beside it (test/REFERENCES.md): [pub] in the publication, [calc] computed
 * here from the published formula, [memory] recalled, "common practice" a fact of the trade with no single source.
 * Most checks switch the gaseous attenuation off (`atmosphere: false`) to isolate one effect; the atmosphere has
 * its own checks (test/atmosphere.test.ts) and one here on how it enters the range.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { flToMetres, nmToM } from '../shared/units.ts';
import { oneWayPathLossDb } from '../worker/core/atmosphere.ts';
import { requiredSnrDb } from '../worker/core/detection.ts';
import {
  DEFAULT_TARGET,
  gainFromAperture,
  linkRangeM,
  noisePowerW,
  radarRangeM,
  TRANSPONDER_CLASSES,
  wavelengthM,
  weatherRangeFactor,
  type RadarTypeSpec,
  type Target,
} from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';

const DEG = Math.PI / 180;
const db = (x: number) => 10 * Math.log10(x);
const T = (o: Partial<Target> = {}): Target => ({ ...DEFAULT_TARGET, ...o });
/** Range at ε for a target, no atmosphere, antenna at sea level. */
const rangeAt = (m: ReturnType<typeof buildSensorModel>, e: number, t: Target = T(), o = {}) =>
  m.profile({ target: t, antennaAltM: 0, atmosphere: false, ...o }).rangeM(e);

function primaryRef(over: Partial<RadarTypeSpec> = {}): RadarTypeSpec {
  return {
    id: 'p',
    name: 'test primary',
    kind: 'primary',
    frequencyMHz: 2800,
    cost: 1,
    maxElevationDeg: 40,
    instrumentedRangeNm: 10_000,
    elevationPattern: { type: 'cosec2', startDeg: 2, endDeg: 35 },
    detection: { referenceRangeNm: 100, referenceRcsM2: 2 },
    ...over,
  };
}

function secondaryRef(over: Partial<RadarTypeSpec> = {}): RadarTypeSpec {
  return {
    id: 's',
    name: 'test secondary',
    kind: 'secondary',
    frequencyMHz: 1030,
    cost: 1,
    maxElevationDeg: 45,
    instrumentedRangeNm: 10_000,
    elevationPattern: { type: 'cosec2', startDeg: 3, endDeg: 40 },
    detection: { referenceRangeNm: 200 },
    ...over,
  };
}

describe('radar equation and antenna gain', () => {
  // Skolnik, Introduction to Radar Systems, ch. 1 worked example [memory for the problem's numbers; formula pub]:
  // Pt = 200 kW, f = 2.9 GHz, aperture 5 m × 2.7 m at efficiency 0.6 (Ae = 8.1 m²), σ = 2 m², Smin = 1e−12 W.
  const lambda = wavelengthM(2900);
  const g = gainFromAperture(5 * 2.7, 0.6, 2900);

  it('gain from aperture: G = 4πηA/λ² = 39.78 dBi (Skolnik worked example)', () => {
    // The textbook rounds c to 3e8 m/s (39.782 dBi); with c = 299 792 458 m/s it is 39.788 dBi.
    expect(Math.abs(db(g) - 39.78)).toBeLessThan(0.015);
    // [calc] the formula itself, with the effective aperture Ae = ηA.
    expect(g).toBeCloseTo((4 * Math.PI * 8.1) / (lambda * lambda), 9);
  });

  it('gain from aperture follows the frequency: ×2 in frequency → ×4 in gain (G ∝ 1/λ², Skolnik [pub])', () => {
    expect(gainFromAperture(10, 0.6, 2600) / gainFromAperture(10, 0.6, 1300)).toBeCloseTo(4, 12);
  });

  it('Rmax ≈ 118.2 km (Skolnik worked example), same as the textbook form R⁴ = Pt G Ae σ / ((4π)² Smin)', () => {
    const r = radarRangeM({
      peakPowerW: 200e3,
      gainLinear: g,
      wavelengthM: lambda,
      rcsM2: 2,
      minSignalW: 1e-12,
    });
    expect(Math.abs(r / 1000 - 118.2)).toBeLessThan(0.1);
    const textbook = Math.pow((200e3 * g * 8.1 * 2) / ((4 * Math.PI) ** 2 * 1e-12), 0.25);
    expect(r / textbook).toBeCloseTo(1, 12);
  });

  it('R ∝ σ^¼: σ × 16 → R × 2 (radar equation [pub])', () => {
    const p = { peakPowerW: 1e6, gainLinear: 3000, wavelengthM: 0.23, minSignalW: 1e-13 };
    expect(radarRangeM({ ...p, rcsM2: 32 }) / radarRangeM({ ...p, rcsM2: 2 })).toBeCloseTo(2, 12);
  });

  it('noise power k·T0·B: −114 dBm in 1 MHz at 0 dB noise figure (kT0 = −174 dBm/Hz, common practice)', () => {
    expect(db(noisePowerW(0, 1e6) / 1e-3)).toBeCloseTo(-114, 0);
    // F in dB multiplies: 3 dB noise figure doubles the noise (definition of noise figure [pub]).
    expect(noisePowerW(10 * Math.log10(2), 1e6) / noisePowerW(0, 1e6)).toBeCloseTo(2, 12);
  });

  it('free-space link range: FSPL = 20 log10(4πd/λ) closes at the budget (Friis 1946 [pub])', () => {
    // 150 dB of budget at 1090 MHz: d = λ/(4π)·10^(150/20) [calc], and the loss at that d is 150 dB.
    const d = linkRangeM(150, 1090);
    expect(20 * Math.log10((4 * Math.PI * d) / wavelengthM(1090))).toBeCloseTo(150, 9);
    expect(linkRangeM(156, 1090) / d).toBeCloseTo(Math.pow(10, 6 / 20), 12); // +6 dB → ×2 (one-way, √ law)
  });
});

describe('primary detection: the radar equation with the target fluctuation', () => {
  it('the physical form is the radar equation with Smin = k·T0·(1/τ)·F·L·SNRreq, SNRreq from the published detection laws', () => {
    // Written out here from the published formulas (not from the product's helpers):
    // R⁴ = Pt·G²·λ²·σ / ((4π)³·k·T0·B·F·L·SNR), k = 1.380649e−23 J/K (SI), T0 = 290 K (IEEE), B = 1/τ.
    // SNR for a steady target, N = 1, Pd 0.9, Pfa 1e−6: 13.18 dB (Marcum 1960 [pub]); for Swerling 1, N = 1:
    // SNR = ln Pfa / ln Pd − 1 (Swerling 1960 [pub formula, calc]).
    const spec = primaryRef({
      frequencyMHz: 2900,
      detection: {
        peakPowerKw: 200,
        antennaGainDbi: 39.78,
        pulseWidthUs: 1,
        noiseFigureDb: 3,
        lossesDb: 6,
        pd: 0.9,
        pfa: 1e-6,
      },
    });
    const m = buildSensorModel(spec, 'test');
    const lambda = 299_792_458 / 2.9e9;
    const G = Math.pow(10, 3.978);
    const byHand = (snrDb: number) =>
      Math.pow(
        (200e3 * G * G * lambda * lambda * 2) /
          (Math.pow(4 * Math.PI, 3) * 1.380649e-23 * 290 * 1e6 * Math.pow(10, (3 + 6 + snrDb) / 10)),
        0.25,
      );
    expect(m.peakRangeM(T({ rcsM2: 2, fluctuation: 'swerling0' })) / byHand(13.18)).toBeCloseTo(1, 2);
    const sw1 = 10 * Math.log10(Math.log(1e-6) / Math.log(0.9) - 1); // 21.14 dB
    expect(m.peakRangeM(T({ rcsM2: 2, fluctuation: 'swerling1' })) / byHand(sw1)).toBeCloseTo(1, 3);
  });

  it('Swerling 1 against a steady target at Pd 0.9, Pfa 1e−6, one pulse: radius × 0.63–0.66 (~8 dB, Swerling 1960 / Marcum 1960)', () => {
    const m = buildSensorModel(
      primaryRef({
        detection: {
          peakPowerKw: 100,
          antennaGainDbi: 33,
          pulseWidthUs: 1,
          noiseFigureDb: 2,
          lossesDb: 8,
          pd: 0.9,
          pfa: 1e-6,
        },
      }),
      't',
    );
    const ratio =
      m.peakRangeM(T({ fluctuation: 'swerling1' })) / m.peakRangeM(T({ fluctuation: 'swerling0' }));
    expect(ratio).toBeGreaterThan(0.63);
    expect(ratio).toBeLessThan(0.66);
  });

  it('the target belongs to the study: σ × 16 → R × 2 (radar equation [pub]), and a leftover targetRcsM2 is ignored with a warning', () => {
    const m = buildSensorModel(primaryRef({ targetRcsM2: 7 }), 'types.json: [0]');
    expect(m.warnings).toHaveLength(1);
    expect(m.warnings[0]).toMatch(/types\.json: \[0\]\.targetRcsM2: 7 is ignored .* scenario's targetRcsM2/);
    expect(m.peakRangeM(T({ rcsM2: 32 })) / m.peakRangeM(T({ rcsM2: 2 }))).toBeCloseTo(2, 12);
    const e = 5 * DEG;
    expect(rangeAt(m, e, T({ rcsM2: 16 })) / rangeAt(m, e, T({ rcsM2: 1 }))).toBeCloseTo(2, 3);
  });
});

describe('specification points: the convention is stated and applied', () => {
  it('a spec point at its own elevation, Pd, Pfa and fluctuation is reproduced exactly there, in the standard atmosphere', () => {
    const spec = primaryRef({
      elevationPattern: { type: 'cosec2', startDeg: 3.6, endDeg: 30, beamwidthDeg: 4.8 },
      detection: {
        referenceRangeNm: 60,
        referenceRcsM2: 1,
        referencePd: 0.8,
        referencePfa: 1e-6,
        referenceFluctuation: 'swerling1',
        referenceElevationDeg: 0,
      },
    });
    const m = buildSensorModel(spec, 't');
    // The same target as the spec point, at the spec point's elevation, from a sea-level antenna in the standard
    // atmosphere: exactly the spec range (the spec point is quoted in the standard atmosphere, sensor.ts).
    const withAir = m.profile({ target: T({ rcsM2: 1 }), antennaAltM: 0 }).rangeM(0);
    expect(withAir / nmToM(60)).toBeCloseTo(1, 3);
    // Free space (atmosphere off) the peak is farther than the spec point's free-space range by 1/√g(0) =
    // 10^(6.75/20) (the Gaussian main beam [calc]).
    expect(rangeAt(m, 3.6 * DEG, T({ rcsM2: 1 })) / rangeAt(m, 0, T({ rcsM2: 1 }))).toBeCloseTo(
      Math.pow(10, (1.2 * 0.75 ** 2) / 2),
      3,
    );
    expect(m.convention).toMatch(/1 m² Swerling 1 with Pd 0.8 at Pfa 1e-6 .* at 60 NM at 0°/);
  });

  it('without a stated elevation the spec point is the beam peak, and the convention says so', () => {
    const m = buildSensorModel(primaryRef(), 't');
    expect(m.convention).toMatch(/at 100 NM at 2° \(the beam peak\)/);
    const withAir = m.profile({ target: T({ rcsM2: 2 }), antennaAltM: 0 }).rangeM(2 * DEG);
    expect(withAir / nmToM(100)).toBeCloseTo(1, 3);
  });

  it('a spec point for a steady target, used for a Swerling 1 study target, loses the SNR difference (detection.ts)', () => {
    const steady = buildSensorModel(
      primaryRef({
        detection: {
          referenceRangeNm: 100,
          referenceRcsM2: 2,
          referencePd: 0.9,
          referenceFluctuation: 'swerling0',
        },
      }),
      't',
    );
    const d = requiredSnrDb(0.9, 1e-6, 1, 'swerling1') - requiredSnrDb(0.9, 1e-6, 1, 'swerling0');
    const r = (f: Target['fluctuation']) => steady.peakRangeM(T({ fluctuation: f }));
    expect(r('swerling1') / r('swerling0')).toBeCloseTo(Math.pow(10, -d / 40), 9);
    const spec = steady.profile({ target: T({ fluctuation: 'swerling0' }), antennaAltM: 0 }).rangeM(2 * DEG);
    expect(spec / nmToM(100)).toBeCloseTo(1, 3);
  });

  it('Pfa 1e−8 and 1e−10 are accepted (common specifications) and need more SNR', () => {
    const at = (pfa: number) =>
      buildSensorModel(
        primaryRef({ detection: { referenceRangeNm: 100, referenceRcsM2: 2, referencePfa: pfa } }),
        't',
      );
    // The spec point holds at its own Pfa; a steady study target is seen farther by the SNR difference the
    // detection laws give at that Pfa (detection.ts; Swerling 1960 / Marcum 1960).
    for (const pfa of [1e-8, 1e-10]) {
      const withAir = at(pfa)
        .profile({ target: T(), antennaAltM: 0 })
        .rangeM(2 * DEG);
      expect(withAir / nmToM(100)).toBeCloseTo(1, 3);
      const d = requiredSnrDb(0.8, pfa, 1, 'swerling1') - requiredSnrDb(0.8, pfa, 1, 'swerling0');
      const gain = at(pfa).peakRangeM(T({ fluctuation: 'swerling0' })) / at(pfa).peakRangeM(T());
      expect(gain).toBeCloseTo(Math.pow(10, d / 40), 9);
    }
  });
});

describe('secondary: link budgets (Friis transmission equation [pub]; ICAO Annex 10 Vol. IV transponder values [memory])', () => {
  const link = secondaryRef({
    detection: { interrogatorPowerW: 1000, antennaGainDbi: 25, cableLossDb: 2, receiverSensitivityDbm: -80 },
  });

  it('range = the lesser of the uplink and downlink free-space ranges, each from its own budget', () => {
    const m = buildSensorModel(link, 't');
    for (const tr of ['low-power', 'high-power'] as const) {
      const x = TRANSPONDER_CLASSES[tr];
      // Written out from the budgets [calc]: uplink to the minimum triggering level at 1030 MHz, downlink to the
      // receiver sensitivity at 1090 MHz.
      const ac = x.antennaGainDbi - x.installationLossDb;
      const up = linkRangeM(60 + 25 - 2 + ac - x.minTriggerDbm, 1030);
      const down = linkRangeM(10 * Math.log10(x.replyPowerW * 1000) + ac + 25 - 2 + 80, 1090);
      expect(m.peakRangeM(T({ transponder: tr })) / Math.min(up, down)).toBeCloseTo(1, 9);
    }
    // The low-power class replies with 70 W instead of 125 W (Annex 10 [memory]): its downlink is shorter by
    // √(70/125) [calc], so it never reaches farther.
    expect(m.peakRangeM(T({ transponder: 'low-power' }))).toBeLessThanOrEqual(
      m.peakRangeM(T({ transponder: 'high-power' })),
    );
  });

  it('the range of a secondary does not depend on the RCS or the fluctuation', () => {
    const m = buildSensorModel(link, 't');
    expect(m.peakRangeM(T({ rcsM2: 0.1, fluctuation: 'swerling0' }))).toBe(m.peakRangeM(T({ rcsM2: 100 })));
  });

  it('one-way links scale with √g(ε) (Friis [calc])', () => {
    const table = { type: 'table' as const, deg: [0, 10, 20], gainDb: [0, -6, -20] };
    for (const m of [
      buildSensorModel(primaryRef({ elevationPattern: table }), 'p'),
      buildSensorModel(secondaryRef({ elevationPattern: table }), 's'),
    ]) {
      const r0 = rangeAt(m, 0);
      expect(r0).toBeCloseTo(m.peakRangeM(T()), 3);
      expect(rangeAt(m, 10 * DEG) / r0).toBeCloseTo(Math.pow(10, -6 / 20), 4);
      expect(rangeAt(m, 20 * DEG) / r0).toBeCloseTo(Math.pow(10, -20 / 20), 4);
      expect(m.patternGain(10 * DEG)).toBeCloseTo(Math.pow(10, -0.6), 12);
    }
  });
});

describe('atmosphere in the range', () => {
  it('two-way gaseous loss under the fourth root (primary), one-way under the square root (SSR link)', () => {
    const p = buildSensorModel(primaryRef({ instrumentedRangeNm: 10_000 }), 'p');
    const e = 0.5 * DEG;
    const free = rangeAt(p, e);
    const air = p.profile({ target: T(), antennaAltM: 0 }).rangeM(e);
    // R_air = R_free·10^(−2A(ε, R_air)/40) [calc, radar equation with a loss factor]; A from atmosphere.ts.
    expect(air / (free * Math.pow(10, (-2 * oneWayPathLossDb(2800, 0, e, air)) / 40))).toBeCloseTo(1, 3);
    const s = buildSensorModel(secondaryRef(), 's');
    const sFree = rangeAt(s, e);
    const sAir = s.profile({ target: T(), antennaAltM: 0 }).rangeM(e);
    expect(sAir / (sFree * Math.pow(10, -oneWayPathLossDb(1030, 0, e, sAir) / 20))).toBeCloseTo(1, 2);
    expect(air).toBeLessThan(free);
  });
});

describe('limits: instrumented range, minimum range, weather', () => {
  it('the instrumented range caps the detection range', () => {
    const m = buildSensorModel(primaryRef({ instrumentedRangeNm: 60 }), 'test');
    expect(m.peakRangeM(T())).toBeGreaterThan(nmToM(60));
    expect(rangeAt(m, 2 * DEG)).toBe(nmToM(60));
    expect(m.instrumentedRangeM).toBe(nmToM(60));
  });

  it('minimum range: 0.5 NM unless given (common practice)', () => {
    expect(buildSensorModel(primaryRef(), 't').minRangeM).toBe(nmToM(0.5));
    expect(buildSensorModel(primaryRef({ minRangeNm: 2 }), 't').minRangeM).toBe(nmToM(2));
  });

  it('weather: factor 10^(−L/40), a two-way loss under the fourth root; 12.04 dB halves the range (radar equation [calc])', () => {
    expect(weatherRangeFactor(40 * Math.log10(2))).toBeCloseTo(0.5, 12);
    expect(weatherRangeFactor(0)).toBe(1);
  });

  it('primaries lose weatherLossDb in weather mode; secondaries are unaffected', () => {
    const p = buildSensorModel(primaryRef({ weatherLossDb: 4 }), 'p');
    expect(p.peakRangeM(T(), true) / p.peakRangeM(T())).toBeCloseTo(Math.pow(10, -4 / 40), 12);
    expect(rangeAt(p, 5 * DEG, T(), { weather: true }) / rangeAt(p, 5 * DEG)).toBeCloseTo(
      Math.pow(10, -0.1),
      6,
    );
    const s = buildSensorModel(secondaryRef(), 's');
    expect(s.peakRangeM(T(), true)).toBe(s.peakRangeM(T()));
  });
});

describe('elevation patterns, tilt and the cone of silence', () => {
  it('cosec²: on a flat earth R·sin ε is constant within 2 % between its angles (Skolnik [memory])', () => {
    for (const [startDeg, endDeg] of [
      [0.5, 30],
      [2, 40],
      [3.6, 30],
    ]) {
      const m = buildSensorModel(
        primaryRef({ maxElevationDeg: 45, elevationPattern: { type: 'cosec2', startDeg, endDeg } }),
        't',
      );
      const ceiling = m.peakRangeM(T()) * Math.sin(startDeg * DEG);
      let worst = 0;
      for (let e = startDeg; e <= endDeg; e += 0.137) {
        const h = rangeAt(m, e * DEG) * Math.sin(e * DEG);
        worst = Math.max(worst, Math.abs(h / ceiling - 1));
      }
      expect(worst).toBeLessThan(0.02);
    }
  });

  it('cosec²: g = 1 at startDeg, falls on both sides, steeply above endDeg', () => {
    const m = buildSensorModel(
      primaryRef({ elevationPattern: { type: 'cosec2', startDeg: 2, endDeg: 30 } }),
      't',
    );
    expect(m.patternGain(2 * DEG)).toBe(1);
    expect(m.patternGain(1 * DEG)).toBeLessThan(1);
    expect(m.patternGain(0)).toBeCloseTo(0.5, 2); // default beamwidth 2·startDeg: lower −3 dB on the horizon
    expect(m.patternGain(-4 * DEG)).toBeLessThan(m.patternGain(0));
    const gEnd = m.patternGain(30 * DEG);
    expect(gEnd).toBeCloseTo(Math.sin(2 * DEG) ** 2 / Math.sin(30 * DEG) ** 2, 12);
    expect(db(m.patternGain(31 * DEG) / gEnd)).toBeCloseTo(-3, 6);
    expect(db(m.patternGain(33 * DEG) / gEnd)).toBeCloseTo(-27, 6);
    const w = buildSensorModel(
      primaryRef({ elevationPattern: { type: 'cosec2', startDeg: 2, endDeg: 30, beamwidthDeg: 10 } }),
      't',
    );
    expect(db(w.patternGain(-3 * DEG))).toBeCloseTo(-3, 6);
  });

  it('table: normalised to its maximum, linear in dB, end values outside', () => {
    const m = buildSensorModel(
      primaryRef({ elevationPattern: { type: 'table', deg: [-2, 0, 6, 30], gainDb: [10, 24, 27, 13] } }),
      't',
    );
    expect(m.patternGain(6 * DEG)).toBe(1);
    expect(db(m.patternGain(3 * DEG))).toBeCloseTo(-1.5, 10);
    expect(db(m.patternGain(-1 * DEG))).toBeCloseTo(-10, 10);
    expect(db(m.patternGain(-30 * DEG))).toBeCloseTo(-17, 10);
    expect(db(m.patternGain(60 * DEG))).toBeCloseTo(-14, 10);
  });

  it('tilt shifts the whole pattern up: R(ε + t) with tilt t equals R(ε) without [calc]', () => {
    const m = buildSensorModel(primaryRef(), 't');
    const tilted = m.profile({ target: T(), antennaAltM: 0, atmosphere: false, tiltDeg: 1.5 });
    const flat = m.profile({ target: T(), antennaAltM: 0, atmosphere: false });
    for (const e of [-1, 0, 0.7, 2, 10, 30]) {
      expect(tilted.rangeM((e + 1.5) * DEG) / flat.rangeM(e * DEG)).toBeCloseTo(1, 3);
    }
    expect(tilted.coneOfSilenceRad - flat.coneOfSilenceRad).toBeCloseTo(1.5 * DEG, 3);
  });

  it('the lookup table agrees with the exact pattern within 0.2 %', () => {
    const catalog = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    const specs: RadarTypeSpec[] = [
      ...catalog,
      primaryRef({ elevationPattern: { type: 'cosec2', startDeg: 0.5, endDeg: 30, beamwidthDeg: 1 } }),
      primaryRef({ elevationPattern: { type: 'table', deg: [-1, 0, 1, 2], gainDb: [-20, -2, 0, -12] } }),
      primaryRef({
        elevationPattern: { type: 'table', deg: [-3.003, 0.0047, 2.3333, 10.111], gainDb: [-18, -6, 0, -8] },
      }),
    ];
    for (const spec of specs) {
      const m = buildSensorModel(spec, spec.id);
      const p = m.profile({ target: T(), antennaAltM: 0, atmosphere: false });
      const peak = m.peakRangeM(T());
      let worst = 0;
      for (let e = -20 * DEG; e <= p.coneOfSilenceRad; e += 0.0031 * DEG) {
        const exact = Math.min(m.instrumentedRangeM, peak * Math.sqrt(m.patternGain(e)));
        if (exact < 1e-3 * peak) continue;
        worst = Math.max(worst, Math.abs(p.rangeM(e) / exact - 1));
      }
      expect(worst, spec.id).toBeLessThan(0.002);
    }
  });

  it('cone of silence: radius at FL100 for a 40° maximum elevation is 3632 m (h / tan θmax, geometry [calc])', () => {
    // cosec² up to 40°: the type's maximum elevation, not the pattern's shoulder, sets the cone here.
    const m = buildSensorModel(
      primaryRef({ maxElevationDeg: 40, elevationPattern: { type: 'cosec2', startDeg: 2, endDeg: 40 } }),
      't',
    );
    const p = m.profile({ target: T(), antennaAltM: 0, atmosphere: false });
    const h = flToMetres(100);
    let a = 100;
    let b = 20_000;
    for (let k = 0; k < 60; k++) {
      const d = (a + b) / 2;
      if (p.rangeM(Math.atan2(h, d)) === 0) a = d;
      else b = d;
    }
    expect(Math.abs(b - h / Math.tan(40 * DEG))).toBeLessThan(0.01);
    expect(Math.round(b)).toBe(3632);
    expect(p.rangeM(89 * DEG)).toBe(0);
  });

  it('the cone of silence begins where the usable gain ends, not at a maximum elevation past it', () => {
    // cosec² to 30°, then the steep shoulder (−3 dB 1° past, −27 dB 3° past; sensor.ts): the range falls below the
    // 0.5 NM minimum range a few degrees past 30°, well before the 40° maximum elevation.
    const m = buildSensorModel(
      primaryRef({ maxElevationDeg: 40, elevationPattern: { type: 'cosec2', startDeg: 2, endDeg: 30 } }),
      't',
    );
    const p = m.profile({ target: T(), antennaAltM: 0, atmosphere: false });
    // First elevation past the peak whose range is below the minimum range, from the exact pattern [calc].
    let e = 2 * DEG;
    while (m.peakRangeM(T()) * Math.sqrt(m.patternGain(e)) >= m.minRangeM) e += 0.001 * DEG;
    expect(Math.abs(p.coneOfSilenceRad - e)).toBeLessThan(0.02 * DEG);
    expect(p.coneOfSilenceRad).toBeLessThan(40 * DEG);
  });
});

describe('default catalog data/catalog/sensor-types.json', () => {
  const catalog: RadarTypeSpec[] = JSON.parse(
    readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
  );
  const readme = readFileSync(new URL('../data/catalog/README.md', import.meta.url), 'utf8');
  const models = catalog.map((t, i) => buildSensorModel(t, `sensor-types.json: [${i}]`));

  it('has five valid types with unique ids, each documented in the README, none with a leftover target', () => {
    expect(catalog).toHaveLength(5);
    expect(new Set(catalog.map((t) => t.id)).size).toBe(5);
    for (const t of catalog) expect(readme).toContain(`## ${t.id} — ${t.name}`);
    for (const m of models) expect(m.warnings).toEqual([]);
    expect(models.filter((m) => m.kind === 'primary').length).toBeGreaterThanOrEqual(2);
    expect(models.filter((m) => m.kind === 'secondary').length).toBeGreaterThanOrEqual(2);
  });

  it('frequencies lie in their bands: ITU-R M.1463 (1215–1400 MHz), M.1464 (2700–2900 MHz), SSR 1030 MHz', () => {
    for (const t of catalog) {
      const f = t.frequencyMHz;
      if (t.kind === 'secondary')
        expect(f).toBe(1030); // ICAO Annex 10 Vol. IV [memory]
      else expect((f >= 1215 && f <= 1400) || (f >= 2700 && f <= 2900), t.id).toBe(true);
    }
  });

  it('maximum elevations are 30–45° (common practice); primaries carry a weather loss', () => {
    for (const t of catalog) {
      expect(t.maxElevationDeg).toBeGreaterThanOrEqual(30);
      expect(t.maxElevationDeg).toBeLessThanOrEqual(45);
      if (t.kind === 'primary') expect(t.weatherLossDb).toBeGreaterThan(0);
    }
  });
});

describe('bad input: one clear InputError each', () => {
  type Case = [string, RadarTypeSpec, string, RegExp];
  const P = primaryRef();
  const S = secondaryRef();
  const physical = {
    peakPowerKw: 100,
    antennaGainDbi: 33,
    pulseWidthUs: 1,
    noiseFigureDb: 2,
    lossesDb: 8,
    pd: 0.8,
    pfa: 1e-6,
  };
  const cases: Case[] = [
    [
      'unsorted pattern table',
      { ...P, elevationPattern: { type: 'table', deg: [0, 5, 3], gainDb: [0, -1, -2] } },
      'W.elevationPattern.deg[2]',
      /found 3 after 5; expected angles in strictly increasing order/,
    ],
    [
      'mismatched table lengths',
      { ...P, elevationPattern: { type: 'table', deg: [0, 5, 10], gainDb: [0, -1] } },
      'W.elevationPattern.gainDb',
      /found 2 values; expected 3 values/,
    ],
    [
      'table with one angle',
      { ...P, elevationPattern: { type: 'table', deg: [0], gainDb: [0] } },
      'W.elevationPattern.deg',
      /at least 2/,
    ],
    [
      'non-finite table gain',
      { ...P, elevationPattern: { type: 'table', deg: [0, 1], gainDb: [0, NaN] } },
      'W.elevationPattern.gainDb[1]',
      /finite gain/,
    ],
    [
      'unknown pattern type',
      { ...P, elevationPattern: { type: 'beam' } as never },
      'W.elevationPattern.type',
      /found "beam"; expected 'cosec2' or 'table'/,
    ],
    [
      'cosec² end below start',
      { ...P, elevationPattern: { type: 'cosec2', startDeg: 10, endDeg: 5 } },
      'W.elevationPattern.endDeg',
      /above startDeg \(10\)/,
    ],
    [
      'cosec² start at 0°',
      { ...P, elevationPattern: { type: 'cosec2', startDeg: 0, endDeg: 30 } },
      'W.elevationPattern.startDeg',
      /above 0/,
    ],
    [
      'primary without reference RCS',
      { ...P, detection: { referenceRangeNm: 100 } },
      'W.detection.referenceRcsM2',
      /found nothing; expected the RCS/,
    ],
    [
      'reference RCS ≤ 0',
      { ...P, detection: { referenceRangeNm: 100, referenceRcsM2: 0 } },
      'W.detection.referenceRcsM2',
      /found 0; expected a positive RCS/,
    ],
    [
      'secondary with a reference RCS',
      { ...S, detection: { referenceRangeNm: 100, referenceRcsM2: 2 } },
      'W.detection.referenceRcsM2',
      /not from a target's echo/,
    ],
    [
      'secondary with physical parameters',
      { ...S, detection: physical },
      'W.detection',
      /expected a reference range \{ referenceRangeNm \}/,
    ],
    [
      'both detection forms',
      { ...P, detection: { ...physical, referenceRangeNm: 100 } as never },
      'W.detection',
      /one form only/,
    ],
    ['no detection form', { ...P, detection: {} as never }, 'W.detection', /referenceRangeNm/],
    [
      'maxElevation 0',
      { ...P, maxElevationDeg: 0 },
      'W.maxElevationDeg',
      /found 0; expected an angle in degrees above 0 and at most 90/,
    ],
    ['maxElevation above 90', { ...P, maxElevationDeg: 95 }, 'W.maxElevationDeg', /found 95/],
    [
      'kind unknown',
      { ...P, kind: 'tertiary' as never },
      'W.kind',
      /'primary', 'secondary', 'adsb' or 'mlat'/,
    ],
    ['frequency ≤ 0', { ...P, frequencyMHz: -3 }, 'W.frequencyMHz', /found -3/],
    ['instrumented range ≤ 0', { ...P, instrumentedRangeNm: 0 }, 'W.instrumentedRangeNm', /positive range/],
    [
      'minimum range beyond instrumented range',
      { ...P, instrumentedRangeNm: 5, minRangeNm: 6 },
      'W.minRangeNm',
      /below instrumentedRangeNm \(5\)/,
    ],
    ['negative weather loss', { ...P, weatherLossDb: -1 }, 'W.weatherLossDb', /two-way loss in dB/],
    [
      'weather loss on a secondary',
      { ...S, weatherLossDb: 2 },
      'W.weatherLossDb',
      /not affected by weather mode/,
    ],
    [
      'an RCS on a secondary spec point',
      { ...S, detection: { referenceRangeNm: 100, referenceRcsM2: 2 } },
      'W.detection.referenceRcsM2',
      /not from a target's echo/,
    ],
    [
      'Pd outside the detection laws',
      { ...P, detection: { ...physical, pd: 0.999 } },
      'W.detection.pd',
      /from 0.1 to 0.99/,
    ],
    [
      'spec point fluctuation unknown',
      {
        ...P,
        detection: { referenceRangeNm: 50, referenceRcsM2: 1, referenceFluctuation: 'swerling9' as never },
      },
      'W.detection.referenceFluctuation',
      /one of "swerling0"/,
    ],
    [
      'link parameters on a primary',
      {
        ...P,
        detection: {
          interrogatorPowerW: 1000,
          antennaGainDbi: 25,
          cableLossDb: 2,
          receiverSensitivityDbm: -80,
        },
      },
      'W.detection',
      /a primary takes a specification point or physical radar parameters/,
    ],
    [
      'Pfa outside the detection laws',
      { ...P, detection: { ...physical, pfa: 0.01 } },
      'W.detection.pfa',
      /false-alarm probability/,
    ],
    [
      'hits below 1',
      { ...P, detection: { ...physical, hitsIntegrated: 0 } },
      'W.detection.hitsIntegrated',
      /pulses integrated/,
    ],
    [
      'both gain forms',
      { ...P, detection: { ...physical, antenna: { apertureM2: 5, efficiency: 0.6 } } },
      'W.detection.antenna',
      /one or the other/,
    ],
    [
      'no gain',
      { ...P, detection: { ...physical, antennaGainDbi: undefined } },
      'W.detection.antennaGainDbi',
      /found nothing; expected the antenna gain in dBi/,
    ],
    [
      'efficiency above 1',
      {
        ...P,
        detection: { ...physical, antennaGainDbi: undefined, antenna: { apertureM2: 5, efficiency: 1.2 } },
      },
      'W.detection.antenna.efficiency',
      /found 1.2/,
    ],
    [
      'pulse width ≤ 0',
      { ...P, detection: { ...physical, pulseWidthUs: 0 } },
      'W.detection.pulseWidthUs',
      /positive pulse length/,
    ],
    ['empty id', { ...P, id: '' }, 'W.id', /non-empty identifier/],
  ];

  it.each(cases)('%s', (_label, spec, where, message) => {
    let err: unknown;
    try {
      buildSensorModel(spec, 'W');
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    const ie = err as InputError;
    expect(ie.where).toBe(where);
    expect(ie.message).toMatch(message);
    expect(ie.message.startsWith(`${where}: found `)).toBe(true);
  });

  it('RCS ≤ 0 passed to a primary model', () => {
    const m = buildSensorModel(primaryRef(), 'scenario.json: sensorTypes[0]');
    expect(() => m.peakRangeM(T({ rcsM2: 0 }))).toThrow(InputError);
    expect(() => m.profile({ target: T({ rcsM2: -2 }), antennaAltM: 0 })).toThrow(
      'p: target RCS: found -2; expected a positive RCS in m²',
    );
  });

  it('radar equation with a non-positive input', () => {
    expect(() =>
      radarRangeM({ peakPowerW: 1e5, gainLinear: 1000, wavelengthM: 0.1, rcsM2: 1, minSignalW: 0 }),
    ).toThrow('radarRangeM: minSignalW: found 0; expected a positive finite number');
  });
});
