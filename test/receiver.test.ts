/**
 * ADS-B / multilateration receivers (worker/core/receiver.ts): the 1090 MHz downlink budget from the study's
 * transponder class to a ground receiver, against the Friis free-space solution written out here
 * (Friis, "A note on a simple transmission formula", Proc. IRE 34, 1946 [pub]; the figures [calc]), and the
 * gaseous loss against the exact path integral of atmosphere.ts (ITU-R P.676). The receiver figures below
 * (sensitivity, gains, losses) are invented fixture values, not yardsticks. Sources: test/REFERENCES.md.
 */
import { describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { oneWayPathLossDb } from '../worker/core/atmosphere.ts';
import {
  buildReceiverModel,
  downlinkBudgetDb,
  receptionProfile,
  type ReceiverSpec,
} from '../worker/core/receiver.ts';
import { DEFAULT_TARGET, TRANSPONDER_CLASSES, type Target } from '../worker/core/sensor.ts';

const DEG = Math.PI / 180;
const C = 299_792_458; // m/s, exact (SI)
const LAMBDA = C / 1090e6; // the 1090 MHz downlink (ICAO Annex 10 Vol. IV [memory])
const FLAT = { type: 'table' as const, deg: [-90, 90], gainDb: [0, 0] };
const LOW: Target = { ...DEFAULT_TARGET, transponder: 'low-power' };
const HIGH: Target = { ...DEFAULT_TARGET, transponder: 'high-power' };

function spec(over: Partial<ReceiverSpec> = {}): ReceiverSpec {
  return {
    sensitivityDbm: -90,
    cableLossDb: 2,
    antennaGainDbi: 8,
    elevationPattern: FLAT,
    instrumentedRangeM: 1_000_000,
    ...over,
  };
}

/** Friis [calc]: FSPL(d) = 20 log10(4π d/λ) = M ⇔ d = λ/(4π)·10^(M/20), M = Pt + Gt − Linst + Gr − Lc − S. */
function friisRangeM(s: ReceiverSpec, t: Target): number {
  const x = TRANSPONDER_CLASSES[t.transponder];
  const ptDbm = 10 * Math.log10(x.replyPowerW * 1000);
  const m =
    ptDbm + x.antennaGainDbi - x.installationLossDb + s.antennaGainDbi - s.cableLossDb - s.sensitivityDbm;
  return (LAMBDA / (4 * Math.PI)) * Math.pow(10, m / 20);
}

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('free space (no gaseous loss)', () => {
  it('a flat pattern reaches the Friis range at every elevation [calc]', () => {
    const s = spec();
    const want = friisRangeM(s, LOW);
    // 70 W → 48.45 dBm; M = 48.45 + 0 − 3 + 8 − 2 + 90 = 141.45 dB; d ≈ 258 km at λ = 0.275 m.
    expect(want).toBeGreaterThan(250_000);
    expect(want).toBeLessThan(265_000);
    const p = receptionProfile(s, { target: LOW, antennaAltM: 0, atmosphere: false }, 'rx');
    for (const e of [-2, 0, 0.37, 5, 30, 89.99]) expect(rel(p.rangeM(e * DEG), want)).toBeLessThan(1e-12);
    expect(rel(p.peakRangeM, want)).toBeLessThan(1e-12);
    expect(p.minRangeM).toBe(0);
  });

  it('the path loss at the solved range equals the budget: FSPL(d) = M', () => {
    const s = spec({ sensitivityDbm: -84, antennaGainDbi: 3, cableLossDb: 1.5 });
    const d = receptionProfile(s, { target: HIGH, antennaAltM: 0, atmosphere: false }, 'rx').rangeM(0);
    const fspl = 20 * Math.log10((4 * Math.PI * d) / LAMBDA);
    expect(fspl).toBeCloseTo(downlinkBudgetDb(s, 'high-power'), 9);
  });

  it('the high-power class reaches farther by exactly 10^(ΔP/20) = √(125/70) [calc]', () => {
    const m = buildReceiverModel(spec(), 'rx');
    const lo = m.profile({ target: LOW, antennaAltM: 0, atmosphere: false }).rangeM(1 * DEG);
    const hi = m.profile({ target: HIGH, antennaAltM: 0, atmosphere: false }).rangeM(1 * DEG);
    expect(rel(hi / lo, Math.sqrt(125 / 70))).toBeLessThan(1e-12);
  });

  it('the instrumented range caps the range', () => {
    const p = receptionProfile(
      spec({ instrumentedRangeM: 150_000 }),
      { target: HIGH, antennaAltM: 0, atmosphere: false },
      'rx',
    );
    expect(p.instrumentedRangeM).toBe(150_000);
    for (const e of [0, 3, 45]) expect(p.rangeM(e * DEG)).toBe(150_000);
  });

  it('the pattern lowers the range by its gain: × 10^(ΔG/20) [calc]', () => {
    // Invented table: 0 dB at 2°, −6 dB at 0° and at 20°, −20 dB at 60°, linear in dB between.
    const pattern = { type: 'table' as const, deg: [0, 2, 20, 60], gainDb: [-6, 0, -6, -20] };
    const s = spec({ elevationPattern: pattern });
    const p = receptionProfile(s, { target: LOW, antennaAltM: 0, atmosphere: false }, 'rx');
    const peak = friisRangeM(s, LOW);
    const cases: [number, number][] = [
      [2, 0],
      [0, -6],
      [20, -6],
      [60, -20],
      [40, -13],
      [11, -3],
    ];
    for (const [deg, gainDb] of cases) {
      expect(rel(p.rangeM(deg * DEG), peak * Math.pow(10, gainDb / 20))).toBeLessThan(1e-9);
    }
  });

  it('a cosec² receiving pattern keeps R·sin ε constant between its angles [calc]', () => {
    const s = spec({ elevationPattern: { type: 'cosec2', startDeg: 3, endDeg: 40 } });
    const p = receptionProfile(s, { target: LOW, antennaAltM: 0, atmosphere: false }, 'rx');
    const h = friisRangeM(s, LOW) * Math.sin(3 * DEG);
    for (const e of [3, 7.5, 15, 39])
      expect(rel(p.rangeM(e * DEG) * Math.sin(e * DEG), h)).toBeLessThan(2e-4);
  });
});

describe('gaseous loss and sectors', () => {
  it('the range with gaseous loss solves d = d0·10^(−A(ε, d)/20), A the exact P.676 path integral', () => {
    const s = spec({ instrumentedRangeM: 600_000 });
    const p = receptionProfile(s, { target: LOW, antennaAltM: 0 }, 'rx');
    const d0 = friisRangeM(s, LOW);
    for (const e of [0.5, 2, 10]) {
      const d = p.rangeM(e * DEG);
      expect(d).toBeLessThan(d0);
      const a = oneWayPathLossDb(1090, 0, e * DEG, d);
      expect(rel(d, d0 * Math.pow(10, -a / 20))).toBeLessThan(2e-3);
    }
  });

  it('a sector receiver hears only inside its azimuth limits (clockwise, through north)', () => {
    const p = receptionProfile(
      spec({ sector: { fromDeg: 300, toDeg: 60 } }),
      { target: LOW, antennaAltM: 0, atmosphere: false },
      'rx',
    );
    const full = p.rangeM(1 * DEG);
    expect(full).toBeGreaterThan(0);
    for (const az of [300, 330, 0, 45, 60]) expect(p.rangeAtM(1 * DEG, az * DEG)).toBe(full);
    for (const az of [61, 90, 180, 299]) expect(p.rangeAtM(1 * DEG, az * DEG)).toBe(0);
    const omni = receptionProfile(spec(), { target: LOW, antennaAltM: 0, atmosphere: false }, 'rx');
    expect(omni.inSector(3.3)).toBe(true);
  });
});

describe('bad input', () => {
  it('names the field, what was found and what was expected', () => {
    expect(() => buildReceiverModel(spec({ sensitivityDbm: -10 }), 'scenario.json: receivers[1]')).toThrow(
      /scenario.json: receivers\[1\].sensitivityDbm: found -10; expected a sensitivity in dBm from −120 to −40/,
    );
    expect(() => buildReceiverModel(spec({ instrumentedRangeM: 0 }), 'rx')).toThrow(/rx.instrumentedRangeM/);
    expect(() => buildReceiverModel(spec({ sector: { fromDeg: 10, toDeg: 370 } }), 'rx')).toThrow(
      /rx.sector.toDeg/,
    );
    expect(() => buildReceiverModel(spec({ sector: { fromDeg: 10, toDeg: 10 } }), 'rx')).toThrow(InputError);
    expect(() =>
      buildReceiverModel(spec({ elevationPattern: { type: 'cosec2', startDeg: 5, endDeg: 2 } }), 'rx'),
    ).toThrow(/rx.elevationPattern.endDeg/);
  });
});
