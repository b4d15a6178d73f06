/**
 * Outage what-ifs and layout comparison. Yardstick: "covered by ≥ 2 distinct sites" ⇔ "still covered after any
 * one site fails" — count sites, not sensors, since sensors on one site fail together (test/REFERENCES.md, [calc]).
 */
import fc from 'fast-check';
import { readFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './support/run-cli.ts';
import { hiAt, loAt, NO_COVER_LO, wholeWindow, type Footprint } from '../worker/core/footprint.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Network } from '../worker/core/network.ts';
import { outageTable } from '../worker/core/outage.ts';
import type { VolumeLike } from '../worker/core/volumes.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

const W = 6;
const H = 5;
const GRID: GridGeo = {
  width: W,
  height: H,
  originX: -30,
  originY: -40,
  pixelX: 0.1,
  pixelY: -0.1,
  crs: WGS84_GEOGRAPHIC,
};
const ALL = new Uint8Array(W * H).fill(1);
const volume = (req: VolumeLike['requiredFold']): VolumeLike => ({
  id: 'v',
  name: 'v',
  polygon: {
    type: 'Polygon',
    coordinates: [
      [
        [-30, -40.5],
        [-29.4, -40.5],
        [-29.4, -40],
        [-30, -40],
        [-30, -40.5],
      ],
    ],
  },
  flMin: 0,
  flMax: 600,
  requiredFold: req,
});

const footprints = fc.array(
  fc.record({
    site: fc.constantFrom('a', 'b', 'c', 'd'),
    kind: fc.constantFrom<'primary' | 'secondary'>('primary', 'secondary'),
    cover: fc.array(fc.boolean(), { minLength: W * H, maxLength: W * H }),
  }),
  { minLength: 1, maxLength: 7 },
);

const toFootprints = (
  list: { site: string; kind: 'primary' | 'secondary'; cover: boolean[] }[],
): Footprint[] =>
  list.map((f, i) => ({
    siteId: f.site,
    typeId: `t${i}`,
    kind: f.kind,
    lo: Uint16Array.from(f.cover.map((c) => (c ? 0 : NO_COVER_LO))),
    hi: Uint16Array.from(f.cover.map((c) => (c ? 20_000 : 0))),
    window: wholeWindow(W, H),
  }));

describe('outage table', () => {
  it('a network where every cell has ≥ 2 distinct sites loses nothing to any single failure, and cells with one site are lost with it', () => {
    fc.assert(
      fc.property(footprints, (list) => {
        const fps = toFootprints(list);
        const net = new Network(W * H, [3048], fps);
        const fold = net.foldOf('any', 0).slice();
        const losses = outageTable(net, [volume({ any: 1 })], [ALL], [100], GRID);
        const everyTwo = fold.every((f) => f >= 2);
        if (everyTwo && losses.some((l) => l.demandWeightLost > 0)) return false;
        // A cell seen by exactly one site is lost exactly when that site is down.
        for (const l of losses) {
          const lostCells = l.byVolume[0].areaKm2Lost;
          const single = fps.some((fp) => fp.siteId === l.siteId) ? singleSiteArea(fps, fold, l.siteId) : 0;
          if (Math.abs(lostCells - single) > 1e-9 * Math.max(1, single)) return false;
        }
        // The network is restored after the table.
        return net.foldOf('any', 0).every((f, i) => f === fold[i]);
      }),
      { numRuns: 150, seed: 21 },
    );
  });
});

/** Area of the cells covered by `site` and by no other site (any kind). */
function singleSiteArea(fps: Footprint[], fold: Uint16Array, site: string): number {
  // Cell area on the sphere R²·Δλ·|sin φ₁ − sin φ₀| [calc], R = 6 371 008.8 m: the mean earth radius
  // R1 = (2a + b)/3 of the WGS84 ellipsoid [calc], the sphere @turf/area and worker/core/volumes.ts use.
  const rows = Array.from({ length: H }, (_, r) => {
    const R = 6_371_008.8;
    const a = (GRID.originY + r * GRID.pixelY) * (Math.PI / 180);
    const b = (GRID.originY + (r + 1) * GRID.pixelY) * (Math.PI / 180);
    return (R * R * 0.1 * (Math.PI / 180) * Math.abs(Math.sin(a) - Math.sin(b))) / 1e6;
  });
  let area = 0;
  for (let c = 0; c < W * H; c++) {
    const mine = fps.some((f) => f.siteId === site && loAt(f, c) <= hiAt(f, c));
    if (mine && fold[c] === 1) area += rows[(c / W) | 0];
  }
  return area;
}

describe('airshade outage and compare on a small scenario', () => {
  let fx: Fixture;
  let out: string;
  beforeAll(() => {
    fx = writeScenarioFixture();
    out = join(fx.dir, 'out');
  });
  afterAll(() => fx.cleanup());

  const run = runCli;

  it('writes outage.json with the losses worst first and the lost layers', async () => {
    const r = await run(
      'outage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    const doc = JSON.parse(readFileSync(join(out, 'outage.json'), 'utf8'));
    expect(doc.losses.map((l: { siteId: string }) => l.siteId).sort()).toEqual(['alder', 'brook']);
    for (let i = 1; i < doc.losses.length; i++)
      expect(doc.losses[i - 1].demandWeightLost).toBeGreaterThanOrEqual(doc.losses[i].demandWeightLost);
    expect(doc.worst.siteId).toBe(doc.losses[0].siteId);
    for (const l of doc.losses) {
      const sum = l.byVolume.reduce(
        (a: number, v: { demandWeightLost: number }) => a + v.demandWeightLost,
        0,
      );
      expect(sum).toBeCloseTo(l.demandWeightLost, 6);
    }
    expect(existsSync(join(out, `outage-${doc.losses[0].siteId}-FL050.geojson`))).toBe(true);
  });

  it('--site limits the table; unknown sites and plans give one message', async () => {
    const r = await run(
      'outage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--site',
      'brook',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    expect(JSON.parse(readFileSync(join(out, 'outage.json'), 'utf8')).losses).toHaveLength(1);
    const bad = await run(
      'outage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--site',
      'nowhere',
      '--out',
      out,
      '--threads',
      '0',
    );
    expect(bad.code).not.toBe(0);
    expect(bad.err).toMatch(/--site: found "nowhere"; expected the id of a site/);
    const noPlan = await run(
      'outage',
      fx.scenarioPath,
      '--plan',
      join(fx.dir, 'missing.json'),
      '--out',
      out,
      '--threads',
      '0',
    );
    expect(noPlan.err).toMatch(
      /missing\.json: found a file that cannot be read \(ENOENT\); expected a plan\.json/,
    );
  });

  it('compare: a layout that adds a sensor gains and loses nothing of the smaller one', async () => {
    const r = await run(
      'compare',
      fx.scenarioPath,
      '--a',
      'east only',
      '--b',
      'pair',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    const doc = JSON.parse(readFileSync(join(out, 'compare.json'), 'utf8'));
    expect(doc.bLosesAgainstA.demandWeight).toBe(0);
    expect(doc.b.cost.total).toBeGreaterThan(doc.a.cost.total);
    doc.a.volumes.forEach((v: { meetsRequirementPct: number; coveredPct: number }, i: number) => {
      expect(doc.b.volumes[i].coveredPct).toBeGreaterThanOrEqual(v.coveredPct);
    });
    const back = await run(
      'compare',
      fx.scenarioPath,
      '--a',
      'pair',
      '--b',
      'east only',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(back.code).toBe(0);
    const rev = JSON.parse(readFileSync(join(out, 'compare.json'), 'utf8'));
    expect(rev.bGainsOverA.demandWeight).toBe(0);
    expect(rev.bLosesAgainstA.demandWeight).toBeCloseTo(doc.bGainsOverA.demandWeight, 6);
    const bad = await run(
      'compare',
      fx.scenarioPath,
      '--a',
      'nope',
      '--b',
      'pair',
      '--out',
      out,
      '--threads',
      '0',
    );
    expect(bad.err).toMatch(/--a: found "nope"; expected the name of a layout/);
  });
});
