import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  DEFAULT_K_FACTOR,
  EARTH_RADIUS_M,
  FT_M,
  NM_M,
  effectiveEarthRadiusM,
  flToMetres,
  formatFl,
  ftToM,
  isaAltitudeFromPressureM,
  isaPressureHpa,
  isaTemperatureK,
  kFactorFromLapseRate,
  kmToNm,
  mToFt,
  mToKm,
  mToNm,
  metresToFl,
  nmToKm,
  nmToM,
  degToRad,
  radToDeg,
} from '../shared/units.ts';
import { isInputError } from '../shared/errors.ts';

describe('exact unit definitions', () => {
  it('international foot and nautical mile', () => {
    // International yard and pound agreement (1959): 1 ft = 0.3048 m exactly;
    // nautical mile = 1852 m exactly (International Hydrographic Conference 1929, BIPM SI brochure).
    expect(FT_M).toBe(0.3048);
    expect(NM_M).toBe(1852);
    expect(ftToM(1)).toBe(0.3048);
    expect(nmToM(1)).toBe(1852);
    expect(nmToKm(1)).toBeCloseTo(1.852, 12);
  });

  it('conversions invert each other', () => {
    fc.assert(
      fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), (v) => {
        expect(mToFt(ftToM(v))).toBeCloseTo(v, 6);
        expect(mToNm(nmToM(v))).toBeCloseTo(v, 6);
        expect(nmToKm(kmToNm(v))).toBeCloseTo(v, 6);
        expect(metresToFl(flToMetres(v))).toBeCloseTo(v, 6);
        expect(radToDeg(degToRad(v))).toBeCloseTo(v, 6);
        expect(mToKm(v) * 1000).toBeCloseTo(v, 6);
      }),
      { numRuns: 200 },
    );
  });
});

describe('flight levels', () => {
  it('FL100 is 3048 m in the ISA', () => {
    // ICAO Doc 7488: flight level = pressure altitude in hundreds of feet; 10 000 ft × 0.3048 m/ft.
    expect(flToMetres(100)).toBeCloseTo(3048, 9);
    expect(flToMetres(245)).toBeCloseTo(7467.6, 9);
    expect(metresToFl(3048)).toBeCloseTo(100, 9);
  });

  it('formats flight levels with three digits', () => {
    expect(formatFl(50)).toBe('FL050');
    expect(formatFl(5)).toBe('FL005');
    expect(formatFl(245)).toBe('FL245');
    expect(formatFl(0)).toBe('FL000');
  });

  it('rejects flight levels that cannot be written', () => {
    for (const bad of [-10, 12.5, 1000, Number.NaN]) {
      let err: unknown;
      try {
        formatFl(bad);
      } catch (e) {
        err = e;
      }
      expect(isInputError(err)).toBe(true);
      expect((err as Error).message).toContain('flight level');
    }
  });
});

describe('ICAO standard atmosphere', () => {
  it('sea level pressure and FL100 pressure', () => {
    // ICAO Doc 7488 [pub formula]: p = 1013.25 (1 − 2.25577e−5 H)^5.25588; value at FL100 [calc].
    expect(isaPressureHpa(0)).toBe(1013.25);
    const expected = 1013.25 * Math.pow(1 - 2.25577e-5 * 3048, 5.25588);
    expect(isaPressureHpa(flToMetres(100))).toBeCloseTo(expected, 9);
    expect(isaPressureHpa(flToMetres(100))).toBeCloseTo(696.8, 1);
  });

  it('tropopause and the layer above it', () => {
    // ICAO Doc 7488 tables: 226.32 hPa at 11 000 m, 54.75 hPa at 20 000 m [memory of table values].
    expect(isaPressureHpa(11_000)).toBeCloseTo(226.32, 1);
    expect(isaPressureHpa(20_000)).toBeCloseTo(54.75, 1);
    // continuous across the tropopause
    expect(isaPressureHpa(11_000 + 1e-6)).toBeCloseTo(isaPressureHpa(11_000), 6);
    // ICAO Doc 7488, the ISA's defining temperatures [memory]: 288.15 K at MSL, −6.5 K/km up to the
    // tropopause at 11 000 m, 216.65 K constant above it; 288.15 − 6.5 × 11 = 216.65 [calc].
    expect(isaTemperatureK(0)).toBe(288.15);
    expect(isaTemperatureK(11_000)).toBeCloseTo(216.65, 9);
    expect(isaTemperatureK(15_000)).toBe(216.65);
  });

  it('pressure falls with height and the inverse recovers the altitude', () => {
    fc.assert(
      fc.property(fc.double({ min: -4000, max: 19_000, noNaN: true }), (h) => {
        expect(isaPressureHpa(h + 100)).toBeLessThan(isaPressureHpa(h));
        expect(isaAltitudeFromPressureM(isaPressureHpa(h))).toBeCloseTo(h, 5);
      }),
      { numRuns: 200 },
    );
  });

  it('rejects altitudes outside the handled layers', () => {
    expect(() => isaPressureHpa(25_000)).toThrow(/ISA altitude.*25000 m/);
    expect(() => isaPressureHpa(Number.NaN)).toThrow(/ISA altitude/);
    expect(() => isaAltitudeFromPressureM(2000)).toThrow(/ISA pressure/);
  });
});

describe('effective earth', () => {
  it('mean radius and the 4/3 effective radius', () => {
    // mean earth radius 6371 km (ITU-R P.834 uses R = 6371 km)
    expect(EARTH_RADIUS_M).toBe(6_371_000);
    expect(DEFAULT_K_FACTOR).toBeCloseTo(1.3333333, 6);
    // ITU-R P.834 / P.453: standard atmosphere Re = 4/3 × 6371 km = 8494.67 km [pub]
    expect(effectiveEarthRadiusM() / 1000).toBeCloseTo(8494.67, 2);
    expect(effectiveEarthRadiusM(1)).toBe(EARTH_RADIUS_M);
  });

  it('k50 from the refractivity lapse rate', () => {
    // ITU-R P.452 eq. (5): k50 = 157 / (157 − ΔN); ΔN = 40 N-units/km [calc]
    expect(kFactorFromLapseRate(40)).toBeCloseTo(157 / (157 - 40), 12);
    expect(kFactorFromLapseRate(40)).toBeCloseTo(1.3419, 4);
    expect(kFactorFromLapseRate(0)).toBe(1);
    expect(() => kFactorFromLapseRate(157)).toThrow(/lapse rate/);
  });

  it('rejects a meaningless k', () => {
    for (const bad of [0, -1, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(() => effectiveEarthRadiusM(bad)).toThrow(/k factor/);
    }
  });
});
