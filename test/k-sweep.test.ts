/**
 * `airshade coverage --k-sweep`: the network again under other refraction (effective-earth factor k), per volume
 * and level, and the ducting refusal. Sources: k = 157/(157 − ΔN) (ITU-R P.452 eq. (5) [pub]); a smaller k bends the
 * earth more, so line-of-sight floors rise: coverage meeting a requirement can only shrink as the floors rise on
 * the fixture (invariant of the horizon engine: a higher floor never adds coverage below it).
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../shared/caution.ts';
import { runCli } from './support/run-cli.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

describe('coverage --k-sweep', () => {
  let fx: Fixture;
  beforeAll(() => {
    fx = writeScenarioFixture({ flightLevels: [50, 100] });
  });
  afterAll(() => fx.cleanup());

  it('writes k-sweep.json with each case per volume and level, and prints the table', async () => {
    const out = join(fx.dir, 'sweep');
    const r = await runCli(
      'coverage',
      fx.scenarioPath,
      '--k-sweep',
      '1,0.5',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/refraction cases/);
    expect(existsSync(join(out, 'k-sweep.json'))).toBe(true);
    const j = JSON.parse(readFileSync(join(out, 'k-sweep.json'), 'utf8'));
    expect(j.caution).toBe(CAUTION);
    expect(j.rows.length).toBeGreaterThan(0);
    let sum0 = 0;
    let sumLow = 0;
    for (const row of j.rows) {
      const k0 = row.meetsPct['k=1.3333'];
      const kLow = row.meetsPct['k=0.5'];
      expect(Math.abs(row.lostPts['k=0.5'] - (k0 - kLow))).toBeLessThanOrEqual(0.11); // both rounded to 0.1
      sum0 += k0;
      sumLow += kLow;
    }
    expect(sumLow).toBeLessThan(sum0); // sub-refraction loses coverage on the fixture
  });

  it('a k that ducts is refused before any work, saying so', async () => {
    const r = await runCli('coverage', fx.scenarioPath, '--k-sweep', '1,-0.5', '--out', join(fx.dir, 'x'));
    expect(r.code).not.toBe(0);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(/--k-sweep: found -0.5; expected .*ducting/);
    const t = await runCli('coverage', fx.scenarioPath, '--k-sweep', '1,abc', '--out', join(fx.dir, 'x'));
    expect(t.err).toMatch(/--k-sweep: found "1,abc"/);
  });
});

describe('--cold-day', () => {
  let fx: Fixture;
  beforeAll(() => {
    fx = writeScenarioFixture({ flightLevels: [50, 100] });
  });
  afterAll(() => fx.cleanup());

  it('studies the cold, low-pressure day: the outputs state it and carry each level’s true altitude (ICAO Doc 7488 hypsometric relation via altimetry.ts)', async () => {
    const out = join(fx.dir, 'cold');
    const r = await runCli(
      'coverage',
      fx.scenarioPath,
      '--cold-day',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/day: QNH 980 hPa, ISA −20 °C/);
    const j = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8'));
    expect(j.conventions.day).toMatchObject({ qnhHpa: 980, isaDeviationC: -20 });
    const l100 = j.conventions.levels.find((l: { flightLevel: number }) => l.flightLevel === 100);
    // The figure for this day: FL100 at about 2,560–2,600 m true (test/physics-flat-sea.test.ts too).
    expect(l100.trueAltitudeM).toBeGreaterThan(2560);
    expect(l100.trueAltitudeM).toBeLessThan(2600);
    const layer = JSON.parse(readFileSync(join(out, 'coverage-FL100.geojson'), 'utf8'));
    expect(layer.metadata.altitudeM).toBeCloseTo(l100.trueAltitudeM, 6);
    expect(layer.metadata.day).toMatch(/QNH 980/);
  });
});
