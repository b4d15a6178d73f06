/**
 * True altitude of a flight level on a non-standard day (worker/core/altimetry.ts). Sources beside each check:
 * [pub] in the publication, [calc] computed here from the named published formula, [memory] recalled, not
 * re-read; "common practice" a fact of the trade. The slow reference is the hypsometric equation integrated
 * numerically (RK4 in ln p) with the ICAO Doc 7488 constants, independent of the closed form under test.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { flToMetres, ftToM, isaPressureHpa, mToFt } from '../shared/units.ts';
import {
  ISA_DEVIATION_LIMITS_C,
  QNH_LIMITS_HPA,
  STANDARD_DAY,
  checkDay,
  pressureAltitudeM,
  trueAltitudeM,
  type Day,
} from '../worker/core/altimetry.ts';

// ICAO Doc 7488 constants [pub].
const G0 = 9.80665;
const R_AIR = 287.05287;
const LAPSE = 0.0065;
const T0 = 288.15;
const P0 = 1013.25;

/**
 * The hypsometric equation dz/d(ln p) = −R·T(z)/g integrated by RK4 from (z = 0, p = QNH) to p, with
 * T(z) = 288.15 + ΔT − 6.5 K/km·z up to 11 km and 216.65 + ΔT above [calc].
 */
function hypsometricAltitudeM(pHpa: number, day: Day): number {
  const temp = (z: number) => (z <= 11_000 ? T0 + day.isaDeviationC - LAPSE * z : 216.65 + day.isaDeviationC);
  const dz = (z: number) => (-R_AIR * temp(z)) / G0;
  const n = 20_000;
  const h = (Math.log(pHpa) - Math.log(day.qnhHpa)) / n;
  let z = 0;
  for (let i = 0; i < n; i++) {
    const k1 = dz(z);
    const k2 = dz(z + 0.5 * h * k1);
    const k3 = dz(z + 0.5 * h * k2);
    const k4 = dz(z + h * k3);
    z += (h * (k1 + 2 * k2 + 2 * k3 + k4)) / 6;
  }
  return z;
}

const dayArb = fc.record({
  qnhHpa: fc.double({ min: QNH_LIMITS_HPA.min, max: QNH_LIMITS_HPA.max, noNaN: true }),
  isaDeviationC: fc.double({ min: ISA_DEVIATION_LIMITS_C.min, max: ISA_DEVIATION_LIMITS_C.max, noNaN: true }),
});

describe('standard day', () => {
  it('true altitude is the pressure altitude: FL100 → 3048 m', () => {
    // ICAO Doc 7488: in the ISA, pressure altitude and (geopotential) altitude coincide [pub].
    expect(STANDARD_DAY).toEqual({ qnhHpa: 1013.25, isaDeviationC: 0 });
    expect(trueAltitudeM(flToMetres(100), STANDARD_DAY)).toBeCloseTo(3048, 6);
    for (let h = -1000; h <= 20_000; h += 250) {
      expect(Math.abs(trueAltitudeM(h, STANDARD_DAY) - h)).toBeLessThan(1e-6);
      expect(Math.abs(pressureAltitudeM(h, STANDARD_DAY) - h)).toBeLessThan(1e-6);
    }
  });

  it('ISA pressure at FL100 is 696.8 hPa [Doc 7488 formula, calc]', () => {
    const fromFormula = 1013.25 * Math.pow(1 - 2.25577e-5 * 3048, 5.25588);
    expect(isaPressureHpa(flToMetres(100))).toBeCloseTo(fromFormula, 9);
    expect(fromFormula).toBeCloseTo(696.8, 1);
  });
});

describe('non-standard day', () => {
  it('the acceptance check: QNH 980 hPa, ISA−20 puts FL100 at 2 592 m (window 2 560–2 600 m)', () => {
    const day = { qnhHpa: 980, isaDeviationC: -20 };
    const z = trueAltitudeM(flToMetres(100), day);
    // 2591.78 m = 8503 ft: 263 m lower for the pressure (33 hPa at ~8 m/hPa), 193 m for the cold (7 % of 2785 m).
    expect(z).toBeCloseTo(2591.8, 1);
    expect(z).toBeGreaterThan(2560);
    expect(z).toBeLessThan(2600);
    expect(z).toBeCloseTo(hypsometricAltitudeM(isaPressureHpa(3048), day), 1);
  });

  it('agrees with the numerically integrated hypsometric equation on any day, below and above 11 km', () => {
    fc.assert(
      fc.property(dayArb, fc.double({ min: -1000, max: 20_000, noNaN: true }), (day, hp) => {
        const z = trueAltitudeM(hp, day);
        expect(Math.abs(z - hypsometricAltitudeM(isaPressureHpa(hp), day))).toBeLessThan(0.05);
      }),
      { numRuns: 60 },
    );
  });

  it('a warm high-pressure day raises the levels, a cold low one lowers them', () => {
    const fl = flToMetres(100);
    expect(trueAltitudeM(fl, { qnhHpa: 1030, isaDeviationC: 15 })).toBeGreaterThan(fl + 200);
    expect(trueAltitudeM(fl, { qnhHpa: 990, isaDeviationC: -15 })).toBeLessThan(fl - 300);
    // Same QNH, same pressure altitude: colder is lower.
    expect(trueAltitudeM(fl, { qnhHpa: 1013.25, isaDeviationC: -5 })).toBeLessThan(fl);
  });
});

describe('rules of thumb', () => {
  it('cold correction: (T0 + ΔT)/T0 of the height above the QNH surface, 3.5 % per 10 °C [calc]', () => {
    // Below 11 km the day's troposphere is the ISA's stretched in height by (T0 + ΔT)/T0 [calc, hypsometric].
    for (const qnh of [960, 1013.25, 1040]) {
      for (const dt of [-30, -10, 10]) {
        for (const fl of [30, 100, 250]) {
          const warm = trueAltitudeM(flToMetres(fl), { qnhHpa: qnh, isaDeviationC: 0 });
          const day = trueAltitudeM(flToMetres(fl), { qnhHpa: qnh, isaDeviationC: dt });
          expect(day / warm).toBeCloseTo((T0 + dt) / T0, 12);
        }
      }
    }
    // "About 4 % of height per 10 °C below ISA" [memory, ICAO Doc 8168]: the model gives 10/288.15 = 3.47 %; the
    // pilots' figure rounds it up.
    const h = flToMetres(100);
    const perTen = (h - trueAltitudeM(h, { qnhHpa: 1013.25, isaDeviationC: -10 })) / h;
    expect(perTen).toBeCloseTo(10 / 288.15, 12);
    expect(perTen).toBeGreaterThan(0.03);
    expect(perTen).toBeLessThan(0.045);
  });

  it('agrees with the PANS-OPS cold-temperature correction within 4 % of the correction up to 3 km [memory]', () => {
    // ICAO Doc 8168 Vol. I (PANS-OPS) [memory, formula not re-read]:
    //   ΔH = (−ΔT_std / L0) · ln(1 + L0 · h_PAA / (T0 + L0 · h_stn)),   L0 = −0.0065 K/m, T0 = 288.15 K,
    // h_PAA the height above the aerodrome, h_stn its elevation. It holds the deviation constant on pressure
    // surfaces (T = T_ISA(H) + ΔT), the model holds it constant at true altitude: the two agree to first order,
    // and differ by about L0·h/(2·T0) of the correction (3.5 % at 3 km).
    const L0 = -0.0065;
    for (const dt of [-10, -20, -30]) {
      for (const h of [300, 1000, 3048]) {
        const pansOps = (-dt / L0) * Math.log(1 + (L0 * h) / (T0 + L0 * 0));
        const ours = h - trueAltitudeM(h, { qnhHpa: 1013.25, isaDeviationC: dt });
        expect(ours).toBeGreaterThan(0);
        expect(Math.abs(ours / pansOps - 1)).toBeLessThan(0.04);
      }
    }
  });

  it('near sea level 1 hPa of QNH is 27.3 ft [calc], "about 30 ft per hPa" (common practice)', () => {
    // dz/dQNH = R·T0/(g·p0) at the QNH surface [calc from the Doc 7488 constants] = 8.324 m/hPa.
    const expectedM = (R_AIR * T0) / (G0 * P0);
    const per = (qnh: number) => trueAltitudeM(0, { qnhHpa: qnh, isaDeviationC: 0 });
    const slopeM = per(P0 + 0.5) - per(P0 - 0.5);
    expect(slopeM / expectedM).toBeCloseTo(1, 4);
    expect(mToFt(slopeM)).toBeCloseTo(27.3, 1);
    expect(Math.abs(mToFt(slopeM) / 30 - 1)).toBeLessThan(0.1);
    // A lower QNH lowers every level by about that much near the ground.
    expect(trueAltitudeM(ftToM(1000), { qnhHpa: 1003.25, isaDeviationC: 0 })).toBeCloseTo(
      ftToM(1000) - 10 * 8.2,
      -1,
    );
  });
});

describe('inverse and shape', () => {
  it('pressure ↔ true round trips within 1 mm on any day', () => {
    fc.assert(
      fc.property(dayArb, fc.double({ min: -1000, max: 20_000, noNaN: true }), (day, hp) => {
        const z = trueAltitudeM(hp, day);
        expect(Math.abs(pressureAltitudeM(z, day) - hp)).toBeLessThan(1e-3);
        const back = trueAltitudeM(pressureAltitudeM(z, day), day);
        expect(Math.abs(back - z)).toBeLessThan(1e-3);
      }),
      { numRuns: 300 },
    );
    // The ends of the range survive a round trip.
    const day = { qnhHpa: 900, isaDeviationC: -55 };
    expect(pressureAltitudeM(trueAltitudeM(-1000, day), day)).toBeCloseTo(-1000, 6);
    expect(pressureAltitudeM(trueAltitudeM(20_000, day), day)).toBeCloseTo(20_000, 6);
  });

  it('true altitude increases with pressure altitude, continuously through the tropopause', () => {
    fc.assert(
      fc.property(dayArb, (day) => {
        let prev = -Infinity;
        for (let hp = -1000; hp <= 20_000; hp += 97) {
          const z = trueAltitudeM(hp, day);
          expect(z).toBeGreaterThan(prev);
          prev = z;
        }
        // No step where the day's 11 km tropopause is crossed.
        const hp11 = pressureAltitudeM(11_000, day);
        const below = trueAltitudeM(hp11 - 1e-6, day);
        const above = trueAltitudeM(hp11 + 1e-6, day);
        expect(above - below).toBeLessThan(1e-3);
      }),
      { numRuns: 50 },
    );
  });
});

describe('bad input', () => {
  it('checkDay names the field, what was found and what was expected', () => {
    const bad: [unknown, RegExp][] = [
      [
        { qnhHpa: 860, isaDeviationC: 0 },
        /scenario\.json: day\.qnhHpa: found 860; expected .*870 to 1090 hPa/,
      ],
      [{ qnhHpa: 1100, isaDeviationC: 0 }, /day\.qnhHpa/],
      [{ qnhHpa: NaN, isaDeviationC: 0 }, /day\.qnhHpa: found NaN/],
      [{ qnhHpa: 1013, isaDeviationC: -70 }, /day\.isaDeviationC: found -70; expected .*-60 to \+40 °C/],
      [{ qnhHpa: 1013, isaDeviationC: 41 }, /day\.isaDeviationC/],
      [{ qnhHpa: 1013 }, /day\.isaDeviationC: found undefined/],
      [{ qnhHpa: '1013', isaDeviationC: 0 }, /day\.qnhHpa/],
      [null, /scenario\.json: day: found null/],
    ];
    for (const [day, message] of bad) {
      let error: unknown;
      try {
        checkDay(day as Day, 'scenario.json: day');
      } catch (e) {
        error = e;
      }
      expect(isInputError(error)).toBe(true);
      expect((error as Error).message).toMatch(message);
    }
    expect(() => checkDay({ qnhHpa: 870, isaDeviationC: 40 }, 'x')).not.toThrow();
    expect(() => checkDay({ qnhHpa: 1090, isaDeviationC: -60 }, 'x')).not.toThrow();
  });

  it('the conversions check the day and their range', () => {
    expect(() => trueAltitudeM(3048, { qnhHpa: 500, isaDeviationC: 0 })).toThrow(
      /trueAltitudeM: day\.qnhHpa/,
    );
    expect(() => trueAltitudeM(25_000, STANDARD_DAY)).toThrow(
      /trueAltitudeM: pressureAltitudeM: found 25000 m/,
    );
    expect(() => trueAltitudeM(-2000, STANDARD_DAY)).toThrow(/trueAltitudeM: pressureAltitudeM/);
    expect(() => trueAltitudeM(NaN, STANDARD_DAY)).toThrow(/trueAltitudeM: pressureAltitudeM/);
    expect(() => pressureAltitudeM(25_000, STANDARD_DAY)).toThrow(
      /pressureAltitudeM: trueAltitudeM: found 25000 m/,
    );
    expect(() => pressureAltitudeM(NaN, STANDARD_DAY)).toThrow(/pressureAltitudeM: trueAltitudeM/);
    expect(() => pressureAltitudeM(3000, { qnhHpa: 1013, isaDeviationC: 99 })).toThrow(
      /pressureAltitudeM: day\.isaDeviationC/,
    );
    // A warm day's 20 km pressure surface lies above 20 km: its true altitude is accepted.
    const warm = { qnhHpa: 1013.25, isaDeviationC: 30 };
    expect(pressureAltitudeM(trueAltitudeM(20_000, warm), warm)).toBeCloseTo(20_000, 6);
  });
});
