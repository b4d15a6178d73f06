/**
 * Planning against a multilateration accuracy bound (issue 14, worker/core/plan/accuracy.ts).
 *
 * Outside values: the DRMS of the plan's accuracy model at the centre of N receivers evenly spaced on a circle, the
 * target above the centre, against the closed form 2·c·σ/(√N·cos α) [calc] (test/REFERENCES.md, multilateration on
 * a circle; Torrieri 1984's covariance for the symmetric case), and against mlat.ts's own path through EnuFrame
 * (proj4), so a slip in the plan's rotation into the target's frame is caught. The rest checks the planner's logic:
 * the bound changes the plan where the cheapest fold-meeting receivers have poor geometry, the plan's figures agree
 * with the accuracy map `airshade coverage` draws for the planned network, a bound no receivers can meet is capped
 * and reported, not chased, and a bound alone implies the fix's fold.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../shared/errors.ts';
import { preparePlan, solvePlan, type PlanInstance } from '../worker/core/plan.ts';
import { pointDrms, prepareAccuracy, withImpliedMlatFolds } from '../worker/core/plan/accuracy.ts';
import { EnuFrame, mlatHorizontalDrms } from '../worker/core/mlat.ts';
import { runCli, runQuiet } from './support/run-cli.ts';
import { ring, writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import { C, LAT0, LON0, M_PER_DEG, RECEIVER_CATALOG, flatSeaDem } from './support/mlat-sea.ts';

const SIGMA_NS = 15;

/** A point `r` metres from the centre at bearing `deg` (spherical small-offset, [calc]). */
function around(rM: number, deg: number): [number, number] {
  const a = (deg * Math.PI) / 180;
  return [
    LON0 + (rM * Math.sin(a)) / (M_PER_DEG * Math.cos((LAT0 * Math.PI) / 180)),
    LAT0 + (rM * Math.cos(a)) / M_PER_DEG,
  ];
}

/**
 * An instance of mlat candidates at `places` (lon, lat; antennas 20 m up) with `costs`, every one covering every
 * point; points at `targets` (lon, lat, altitude m), each requiring `fold` receivers and bounded at `boundM`.
 */
function instance(
  places: [number, number][],
  costs: number[],
  targets: [number, number, number][],
  boundM: number,
  fold = 3,
): PlanInstance {
  const n = targets.length;
  const all = Uint32Array.from(targets.keys());
  return {
    sites: places.map((_, i) => ({ id: `buoy-${i}`, cost: 0, existing: false })),
    candidates: places.map((_, i) => ({
      siteIndex: i,
      typeId: 'rx',
      kind: 'mlat',
      cost: costs[i],
      covers: all,
    })),
    points: {
      count: n,
      weight: new Float64Array(n).fill(1),
      reqAny: new Uint8Array(n),
      reqPrimary: new Uint8Array(n),
      reqSecondary: new Uint8Array(n),
      reqAdsb: new Uint8Array(n),
      reqMlat: new Uint8Array(n).fill(fold),
    },
    accuracy: {
      points: all,
      boundM: new Float64Array(n).fill(boundM),
      target: Float64Array.from(targets.flat()),
      antenna: Float64Array.from(places.flatMap(([lon, lat]) => [lon, lat, 20])),
      timingErrorNs: new Float64Array(places.length).fill(SIGMA_NS),
      altitudeKnown: true,
    },
  };
}

/** The DRMS at a target from receivers at `places`, through mlat.ts's EnuFrame (the independent path). */
function drmsByFrame(places: [number, number][], t: [number, number, number]): number {
  const f = new EnuFrame(t[0], t[1], t[2]);
  const rx = places.map(([lon, lat]) => f.toEnu(lon, lat, 20));
  return mlatHorizontalDrms(rx, { e: 0, n: 0, u: 0 }, SIGMA_NS * 1e-9, { altitudeKnown: true });
}

const CENTRE: [number, number, number] = [LON0, LAT0, 3048];
/** Three cheap receivers huddled 30 km west (poor geometry), three dear ones round the centre. */
const HUDDLE: [number, number][] = [around(30_000, 268), around(30_000, 270), around(30_000, 272)];
const SPREAD: [number, number][] = [around(30_000, 0), around(30_000, 120), around(30_000, 240)];

describe('the plan’s accuracy model', () => {
  it('at the centre of N receivers on a circle gives 2·c·σ/(√N·cos α), and agrees with EnuFrame', () => {
    for (const n of [3, 5, 8]) {
      const places = Array.from({ length: n }, (_, i) => around(25_000, (360 * i) / n));
      const inst = instance(places, new Array(n).fill(1), [CENTRE], 100);
      const a = prepareAccuracy(inst, preparePlan(inst))!;
      const d = pointDrms(a, 0, new Uint8Array(n).fill(1), -1);
      const cosA = 25_000 / Math.hypot(25_000, 3048 - 20);
      const closed = (2 * C * SIGMA_NS * 1e-9) / (Math.sqrt(n) * cosA);
      // The closed form is flat; the earth's curvature over 25 km moves it by well under 1 %.
      expect(Math.abs(d - closed) / closed).toBeLessThan(0.01);
      expect(Math.abs(d - drmsByFrame(places, CENTRE)) / d).toBeLessThan(1e-6);
    }
  });

  it('off the centre and at another height it still agrees with EnuFrame to 1e-6', () => {
    const places = [...HUDDLE, ...SPREAD];
    const t: [number, number, number] = [...around(12_000, 40), 6_000];
    const inst = instance(places, new Array(6).fill(1), [t], 100);
    const a = prepareAccuracy(inst, preparePlan(inst))!;
    const d = pointDrms(a, 0, new Uint8Array(6).fill(1), -1);
    expect(Math.abs(d - drmsByFrame(places, t)) / d).toBeLessThan(1e-6);
  });
});

describe('planning against the accuracy bound', () => {
  const places = [...HUDDLE, ...SPREAD];
  const costs = [1, 1, 1, 2, 2, 2];
  const targets: [number, number, number][] = [CENTRE, [...around(3_000, 90), 3048]];
  const huddle = drmsByFrame(HUDDLE, CENTRE);
  const spread = drmsByFrame(SPREAD, CENTRE);

  it('the huddle misses where the spread ring meets (the premise of the next checks)', () => {
    expect(huddle).toBeGreaterThan(10 * spread);
  });

  it('without a bound the fold takes the cheap huddle; with one the plan meets it, checked independently', async () => {
    const bound = Math.sqrt(huddle * spread);
    const free = instance(places, costs, targets, bound);
    delete free.accuracy;
    const r0 = await solvePlan(free);
    expect(r0.chosen).toEqual([0, 1, 2]);
    const r = await solvePlan(instance(places, costs, targets, bound));
    expect(r.demandMet).toBe(true);
    expect(r.accuracy).toMatchObject({ points: 2, metPoints: 2, shortPoints: 0, unmeetablePoints: 0 });
    const chosen = r.chosen.map((c) => places[c]);
    for (const t of targets) expect(drmsByFrame(chosen, t)).toBeLessThanOrEqual(bound);
    // A valid lower bound still (the fold's LP), and a plan no dearer than the ring alone.
    expect(r.lowerBound).toBeLessThanOrEqual(r.cost);
    expect(r.cost).toBeLessThanOrEqual(6);
    expect(r.log.some((l) => l.startsWith('accuracy: added'))).toBe(true);
    // With the covers let go while the model is built, the receivers' covers stay for the accuracy model: the same.
    const { stageMs: _a, ...same } = r;
    const { stageMs: _b, ...released } = await solvePlan(instance(places, costs, targets, bound), {
      releaseCovers: true,
    });
    expect(released).toEqual(same);
  });

  it('a bound no allowed receivers can meet is capped and reported, not chased', async () => {
    const r = await solvePlan(instance(places, costs, targets, 0.01));
    expect(r.accuracy).toMatchObject({ points: 2, metPoints: 0, shortPoints: 0, unmeetablePoints: 2 });
    expect(r.chosen).toEqual([0, 1, 2]);
    expect(r.demandMet).toBe(true);
  });

  it('a bound with no fold asked for still needs a fix: 3 receivers at distinct places', () => {
    const inst = instance(places, costs, targets, 100, 0);
    expect([...withImpliedMlatFolds(inst).points.reqMlat!]).toEqual([3, 3]);
    const aided = instance(places, costs, targets, 100, 0);
    aided.accuracy!.altitudeKnown = false;
    expect([...withImpliedMlatFolds(aided).points.reqMlat!]).toEqual([4, 4]);
  });

  it('refuses an accuracy demand of the wrong shape, naming the field', async () => {
    const inst = instance(places, costs, targets, 20);
    inst.accuracy!.boundM = new Float64Array(1);
    await expect(solvePlan(inst)).rejects.toThrow(InputError);
    await expect(solvePlan(inst)).rejects.toThrow(/plan: accuracy\.boundM/);
    const bad = instance(places, costs, targets, 20);
    bad.accuracy!.timingErrorNs[4] = 0;
    await expect(solvePlan(bad)).rejects.toThrow(/timingErrorNs\[4\]/);
  });
});

const catalog = RECEIVER_CATALOG;
const MLAT = catalog.find((t) => t.kind === 'mlat')!;

describe('airshade plan with an accuracy bound, checked by airshade coverage on the planned network', () => {
  let fx: Fixture;
  const half = 4_000 / M_PER_DEG;
  beforeAll(() => {
    fx = writeScenarioFixture({
      dem: flatSeaDem(),
      cellArcSec: 30,
      flightLevels: [100],
      sensorTypes: [MLAT],
      sites: [...HUDDLE, ...SPREAD].map(([lon, lat], i) => ({
        id: `buoy-${i}`,
        name: `Buoy ${i}`,
        lon,
        lat,
        mastHeightM: 20,
        siteCost: i < 3 ? 1 : 2,
        allowedTypes: [MLAT.id],
      })),
      volumes: [
        {
          id: 'core',
          name: 'The core',
          polygon: {
            type: 'Polygon',
            coordinates: [
              ring(LON0 - half / Math.cos((LAT0 * Math.PI) / 180), LAT0 - half, LON0 + half, LAT0 + half),
            ],
          },
          flMin: 100,
          flMax: 100,
          requiredFold: { mlat: 3 },
          requiredMlatAccuracyM: 30,
        },
      ],
      layouts: [],
      extra: { multipath: 'off', mlatAltitudeAided: true },
    });
  });
  afterAll(() => fx.cleanup());

  it('meets the bound everywhere in the volume, and the coverage map of the plan agrees', async () => {
    const out = join(fx.dir, 'plan');
    const r = await runQuiet('plan', fx.scenarioPath, out, '--budget', 'none');
    expect(r.code, r.err).toBe(0);
    expect(r.out).toMatch(/multilateration accuracy: 100\.0 % of the bounded volume-levels meet their bound/);
    const plan = JSON.parse(readFileSync(join(out, 'plan.json'), 'utf8'));
    expect(plan.demandMet).toBe(true);
    expect(plan.mlatAccuracy.shortPoints).toBe(0);
    expect(plan.mlatAccuracy.metPoints).toBe(plan.mlatAccuracy.boundedPoints);
    expect(plan.mlatAccuracy.addedForAccuracy.length).toBeGreaterThan(0);
    const sensors = plan.entries.map((e: { siteId: string; typeId: string }) => ({
      siteId: e.siteId,
      typeId: e.typeId,
    }));
    const scenario = JSON.parse(readFileSync(fx.scenarioPath, 'utf8'));
    scenario.layouts = [{ name: 'planned', sensors }];
    const path = join(fx.dir, 'planned.json');
    writeFileSync(path, JSON.stringify(scenario));
    const cov = join(fx.dir, 'coverage');
    const c = await runCli(
      'coverage',
      path,
      '--layout',
      'planned',
      '--out',
      cov,
      '--threads',
      '0',
      '--quiet',
    );
    expect(c.code, c.err).toBe(0);
    const summary = JSON.parse(readFileSync(join(cov, 'summary.json'), 'utf8'));
    expect(summary.mlatAccuracy.volumes[0]).toMatchObject({ volumeId: 'core', fixPct: 100, metPct: 100 });
    // The report of the plan says so, naming the receivers added for accuracy alone.
    const html = join(fx.dir, 'report.html');
    const rep = await runCli(
      'report',
      fx.scenarioPath,
      '--plan',
      join(out, 'plan.json'),
      '--out',
      html,
      '--quiet',
    );
    expect(rep.code, rep.err).toBe(0);
    const text = readFileSync(html, 'utf8');
    expect(text).toMatch(
      /Multilateration accuracy<\/t[hd]><td>100\.0 % of the bounded demand meets its bound/,
    );
    for (const a of plan.mlatAccuracy.addedForAccuracy) expect(text).toContain(`<code>${a.siteId}</code>`);
  });
});
