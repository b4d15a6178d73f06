/**
 * Sensor models (worker/core/sensor.ts): radar equation, Albersheim, antenna gain, elevation patterns, weather
 * mode, cone of silence, the default catalog, and every InputError. Each check against something outside the
 * project names its source beside it (see REFERENCES.md): [pub] in the publication, [calc] computed here from the
 * published formula, [memory] recalled, "common practice" a fact of the trade with no single source.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { flToMetres, ftToM, kmToNm, nmToKm, nmToM } from '../shared/units.ts';
import {
  albersheimSnrDb,
  buildSensorModel,
  gainFromAperture,
  noisePowerW,
  radarRangeM,
  wavelengthM,
  weatherRangeFactor,
  type SensorTypeSpec,
} from '../worker/core/sensor.ts';

const DEG = Math.PI / 180;
const db = (x: number) => 10 * Math.log10(x);

function primaryRef(over: Partial<SensorTypeSpec> = {}): SensorTypeSpec {
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

function secondaryRef(over: Partial<SensorTypeSpec> = {}): SensorTypeSpec {
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
});

describe("Albersheim's equation (Albersheim, Proc. IEEE 69(7), 1981 [pub formula, calc values])", () => {
  it('Pd 0.9, Pfa 1e−6, N = 1 → 13.1 dB', () => {
    expect(albersheimSnrDb(0.9, 1e-6, 1)).toBeCloseTo(13.1, 1);
  });
  it('Pd 0.9, Pfa 1e−6, N = 10 → 5.0 dB', () => {
    expect(albersheimSnrDb(0.9, 1e-6, 10)).toBeCloseTo(5.0, 1);
  });
  it('needs less SNR for a lower Pd or a higher Pfa (monotone, [calc])', () => {
    expect(albersheimSnrDb(0.5, 1e-6, 1)).toBeLessThan(albersheimSnrDb(0.9, 1e-6, 1));
    expect(albersheimSnrDb(0.9, 1e-4, 1)).toBeLessThan(albersheimSnrDb(0.9, 1e-6, 1));
  });
});

describe('sensor model: detection range', () => {
  it('the physical form reproduces the Skolnik worked example end to end (kW, µs, MHz, dB wiring [calc])', () => {
    // Smin = k T0 B F · SNR · L = 1e−12 W with τ = 1 µs (B = 1 MHz), F = 0 dB, Pd 0.9, Pfa 1e−6, N = 1,
    // and losses chosen to make up the rest.
    const snr = albersheimSnrDb(0.9, 1e-6, 1);
    const lossesDb = db(1e-12 / noisePowerW(0, 1e6)) - snr;
    const m = buildSensorModel(
      primaryRef({
        frequencyMHz: 2900,
        detection: {
          peakPowerKw: 200,
          antenna: { apertureM2: 13.5, efficiency: 0.6 },
          pulseWidthUs: 1,
          noiseFigureDb: 0,
          lossesDb,
          pd: 0.9,
          pfa: 1e-6,
        },
      }),
      'test',
    );
    expect(Math.abs(m.peakRangeM(2) / 1000 - 118.2)).toBeLessThan(0.1); // Skolnik [memory for the numbers]
  });

  it('antenna gain in dBi and from aperture give the same range when they agree', () => {
    const det = { peakPowerKw: 50, pulseWidthUs: 20, noiseFigureDb: 2, lossesDb: 8, pd: 0.8, pfa: 1e-6 };
    const gDbi = db(gainFromAperture(6, 0.6, 2800));
    const a = buildSensorModel(
      primaryRef({ detection: { ...det, antenna: { apertureM2: 6, efficiency: 0.6 } } }),
      'a',
    );
    const b = buildSensorModel(primaryRef({ detection: { ...det, antennaGainDbi: gDbi } }), 'b');
    expect(a.peakRangeM(1) / b.peakRangeM(1)).toBeCloseTo(1, 12);
    // A fixed aperture at twice the frequency: R⁴ ∝ G²λ² ∝ 1/λ² → R × √2 (radar equation [calc]).
    const c = buildSensorModel(
      primaryRef({ frequencyMHz: 5600, detection: { ...det, antenna: { apertureM2: 6, efficiency: 0.6 } } }),
      'c',
    );
    expect(c.peakRangeM(1) / a.peakRangeM(1)).toBeCloseTo(Math.SQRT2, 12);
  });

  it('primary: R(σ) = Rref·(σ/σref)^¼ — σ × 16 → R × 2 (radar equation [pub])', () => {
    const m = buildSensorModel(primaryRef(), 'test');
    expect(m.peakRangeM(2)).toBeCloseTo(nmToM(100), 6);
    expect(m.peakRangeM(32) / m.peakRangeM(2)).toBeCloseTo(2, 12);
    const e = 5 * DEG;
    expect(m.detectionRangeM(e, 32) / m.detectionRangeM(e, 2)).toBeCloseTo(2, 12);
  });

  it('secondary: the range does not depend on σ (one-way link, Friis transmission equation [pub])', () => {
    const m = buildSensorModel(secondaryRef(), 'test');
    expect(m.peakRangeM(0.1)).toBe(m.peakRangeM(100));
    expect(m.peakRangeM(1)).toBeCloseTo(nmToM(200), 6);
    expect(m.detectionRangeM(10 * DEG, 0.1)).toBe(m.detectionRangeM(10 * DEG, 100));
  });

  it('fourth-root law: a radar seeing 2 m² to about 360 km sees about 2.9× that RCS to about 470 km (common practice)', () => {
    const m = buildSensorModel(
      primaryRef({ detection: { referenceRangeNm: kmToNm(360), referenceRcsM2: 2 } }),
      't',
    );
    expect(Math.abs(m.peakRangeM(2 * 2.9) / 1000 - 470)).toBeLessThan(5);
  });

  it('range scales with √g(ε) for both kinds (radar equation / Friis [calc])', () => {
    const table = { type: 'table' as const, deg: [0, 10, 20], gainDb: [0, -6, -20] };
    for (const m of [
      buildSensorModel(primaryRef({ elevationPattern: table }), 'p'),
      buildSensorModel(secondaryRef({ elevationPattern: table }), 's'),
    ]) {
      const r0 = m.detectionRangeM(0, 2);
      expect(r0).toBeCloseTo(m.peakRangeM(2), 6);
      expect(m.detectionRangeM(10 * DEG, 2) / r0).toBeCloseTo(Math.pow(10, -6 / 20), 4);
      expect(m.detectionRangeM(20 * DEG, 2) / r0).toBeCloseTo(Math.pow(10, -20 / 20), 4);
      expect(m.patternGain(10 * DEG)).toBeCloseTo(Math.pow(10, -0.6), 12);
    }
  });

  it('the instrumented range caps the detection range', () => {
    const m = buildSensorModel(primaryRef({ instrumentedRangeNm: 60 }), 'test');
    expect(m.peakRangeM(2)).toBeGreaterThan(nmToM(60));
    expect(m.detectionRangeM(2 * DEG, 2)).toBe(nmToM(60));
    expect(m.instrumentedRangeM).toBe(nmToM(60));
  });

  it('minimum range: 0.5 NM unless given (common practice)', () => {
    expect(buildSensorModel(primaryRef(), 't').minRangeM).toBe(nmToM(0.5));
    expect(buildSensorModel(primaryRef({ minRangeNm: 2 }), 't').minRangeM).toBe(nmToM(2));
  });
});

describe('weather mode', () => {
  it('factor 10^(−L/40): a two-way loss under the fourth root; 12.04 dB halves the range (radar equation [calc])', () => {
    expect(weatherRangeFactor(40 * Math.log10(2))).toBeCloseTo(0.5, 12);
    expect(weatherRangeFactor(0)).toBe(1);
  });
  it('primaries lose weatherLossDb; secondaries are unaffected', () => {
    const p = buildSensorModel(primaryRef({ weatherLossDb: 4 }), 'p');
    expect(p.peakRangeM(2, true) / p.peakRangeM(2)).toBeCloseTo(Math.pow(10, -4 / 40), 12);
    expect(p.detectionRangeM(5 * DEG, 2, true) / p.detectionRangeM(5 * DEG, 2)).toBeCloseTo(
      Math.pow(10, -0.1),
      12,
    );
    const s = buildSensorModel(secondaryRef(), 's');
    expect(s.peakRangeM(2, true)).toBe(s.peakRangeM(2));
    expect(s.detectionRangeM(5 * DEG, 2, true)).toBe(s.detectionRangeM(5 * DEG, 2));
  });
});

describe('elevation patterns', () => {
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
      const ceiling = m.peakRangeM(2) * Math.sin(startDeg * DEG);
      let worst = 0;
      for (let e = startDeg; e <= endDeg; e += 0.137) {
        const h = m.detectionRangeM(e * DEG, 2) * Math.sin(e * DEG);
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
    // beamwidthDeg widens the main beam below the peak: −3 dB at half the beamwidth below it.
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

  it('the lookup table behind detectionRangeM agrees with the exact pattern within 0.2 %', () => {
    const catalog = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    const specs: SensorTypeSpec[] = [
      ...catalog,
      primaryRef({ elevationPattern: { type: 'cosec2', startDeg: 0.5, endDeg: 30, beamwidthDeg: 1 } }),
      primaryRef({ elevationPattern: { type: 'table', deg: [-1, 0, 1, 2], gainDb: [-20, -2, 0, -12] } }),
      // Nodes off the 0.01° lattice around the peak: corners between table nodes (slope changes ≤ 4 dB/°).
      primaryRef({
        elevationPattern: { type: 'table', deg: [-3.003, 0.0047, 2.3333, 10.111], gainDb: [-18, -6, 0, -8] },
      }),
    ];
    for (const spec of specs) {
      const m = buildSensorModel(spec, spec.id);
      const peak = m.peakRangeM(2);
      let worst = 0;
      for (let e = -20 * DEG; e <= m.maxElevationRad; e += 0.0031 * DEG) {
        const exact = Math.min(m.instrumentedRangeM, peak * Math.sqrt(m.patternGain(e)));
        if (exact < 1e-3 * peak) continue;
        worst = Math.max(worst, Math.abs(m.detectionRangeM(e, 2) / exact - 1));
      }
      expect(worst, spec.id).toBeLessThan(0.002);
    }
  });

  it('cone of silence: radius at FL100 for a 40° maximum elevation is 3632 m (h / tan θmax, geometry [calc])', () => {
    const m = buildSensorModel(primaryRef({ maxElevationDeg: 40 }), 't');
    const h = flToMetres(100);
    // Bisect the ground distance at which the target leaves the cone (flat earth near the antenna).
    let a = 100;
    let b = 20_000;
    for (let k = 0; k < 60; k++) {
      const d = (a + b) / 2;
      if (m.detectionRangeM(Math.atan2(h, d), 2) === 0) a = d;
      else b = d;
    }
    expect(Math.abs(b - h / Math.tan(40 * DEG))).toBeLessThan(0.01);
    expect(Math.round(b)).toBe(3632);
    expect(m.detectionRangeM(40 * DEG, 2)).toBeGreaterThan(0);
    expect(m.detectionRangeM(40.001 * DEG, 2)).toBe(0);
    expect(m.detectionRangeM(89 * DEG, 2)).toBe(0);
  });
});

describe('units of the trade used with the catalog (common practice)', () => {
  it('200 NM ≈ 370 km; 105,000 ft ≈ 32 km; cruise 33,000–42,000 ft ≈ 10,000–12,800 m', () => {
    expect(Math.round(nmToKm(200))).toBe(370);
    expect(Math.round(ftToM(105_000) / 1000)).toBe(32);
    expect(Math.abs(ftToM(33_000) - 10_000)).toBeLessThan(100);
    expect(Math.abs(ftToM(42_000) - 12_800)).toBeLessThan(5);
  });
});

describe('default catalog data/catalog/sensor-types.json', () => {
  const catalog: SensorTypeSpec[] = JSON.parse(
    readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
  );
  const readme = readFileSync(new URL('../data/catalog/README.md', import.meta.url), 'utf8');
  const models = catalog.map((t, i) => buildSensorModel(t, `sensor-types.json: [${i}]`));

  it('has five valid types with unique ids, each documented in the README', () => {
    expect(catalog).toHaveLength(5);
    expect(new Set(catalog.map((t) => t.id)).size).toBe(5);
    for (const t of catalog) expect(readme).toContain(`## ${t.id} — ${t.name}`);
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

  it('primaries carry a weather loss and a default target RCS; maximum elevations are 30–45° (common practice)', () => {
    for (const t of catalog) {
      expect(t.maxElevationDeg).toBeGreaterThanOrEqual(30);
      expect(t.maxElevationDeg).toBeLessThanOrEqual(45);
      if (t.kind === 'primary') {
        expect(t.weatherLossDb).toBeGreaterThan(0);
        expect(t.targetRcsM2).toBeGreaterThan(0);
      }
    }
  });

  it('the long-range primary sees 2 m² to about 360 km and holds it above cruise levels (common practice)', () => {
    const i = catalog.findIndex((t) => t.id === 'psr-l-longrange');
    const m = models[i];
    expect(Math.abs(m.peakRangeM(2) / 1000 - 360)).toBeLessThan(10);
    const p = catalog[i].elevationPattern;
    if (p.type !== 'cosec2') throw new Error('expected a cosec² pattern');
    // Flat-earth cosec² ceiling R·sin(startDeg) at or above 42,000 ft.
    expect(m.peakRangeM(2) * Math.sin(p.startDeg * DEG)).toBeGreaterThan(ftToM(42_000) * 0.97);
  });
});

describe('bad input: one clear InputError each', () => {
  type Case = [string, SensorTypeSpec, string, RegExp];
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
      /does not depend on the target's RCS/,
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
    ['kind unknown', { ...P, kind: 'tertiary' as never }, 'W.kind', /'primary' or 'secondary'/],
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
      'target RCS on a secondary',
      { ...S, targetRcsM2: 2 },
      'W.targetRcsM2',
      /does not depend on the target's RCS/,
    ],
    ['target RCS ≤ 0', { ...P, targetRcsM2: -1 }, 'W.targetRcsM2', /positive RCS/],
    [
      'Pd outside Albersheim',
      { ...P, detection: { ...physical, pd: 0.99 } },
      'W.detection.pd',
      /from 0.1 to 0.9 \(the range of Albersheim's approximation\)/,
    ],
    [
      'Pfa outside Albersheim',
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
    expect(() => m.peakRangeM(0)).toThrow(InputError);
    expect(() => m.detectionRangeM(0.05, -2)).toThrow(
      'scenario.json: sensorTypes[0]: target RCS: found -2; expected a positive RCS in m²',
    );
  });

  it('Albersheim outside its published range', () => {
    expect(() => albersheimSnrDb(0.9, 1e-6, 0.5)).toThrow('albersheimSnrDb: n: found 0.5');
  });

  it('radar equation with a non-positive input', () => {
    expect(() =>
      radarRangeM({ peakPowerW: 1e5, gainLinear: 1000, wavelengthM: 0.1, rcsM2: 1, minSignalW: 0 }),
    ).toThrow('radarRangeM: minSignalW: found 0; expected a positive finite number');
  });
});
