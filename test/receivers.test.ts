/**
 * Receiver networks (issue 14): ADS-B ground stations and multilateration receivers as sensors of their own kinds —
 * in the scenario and the catalog, in footprints, folds, volumes' requirements and the plan — on a flat sea.
 *
 * Outside references (test/REFERENCES.md):
 * - The free-space range of a one-way link, d = λ/(4π)·10^(M/20) (Friis, "A note on a simple transmission
 *   formula", Proc. IRE 34, 1946 [pub]); the transponder class's reply power and installation loss are the study's
 *   inputs (ICAO Annex 10 Vol. IV [memory], worker/core/sensor.ts).
 * - The radio horizon on the effective earth, ground arc Re·(acos(Re/(Re+ha)) + acos(Re/(Re+h))) of the ray
 *   tangent to the sphere (geometry [calc]); the slant range to ground arc s by the law of cosines on that sphere
 *   (geometry [calc]).
 * - A multilateration fix needs 4 receivers, 3 with the altitude known (Torrieri, IEEE Trans. AES-20(2), 1984
 *   [memory]: the unknowns are position and emission time).
 * Everything is invented and sits over the open South Atlantic near 41° S 30° W.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { parseScenario } from '../shared/scenario.ts';
import { mlatMinReceivers } from '../shared/sensor-kinds.ts';
import { flToMetres } from '../shared/units.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import {
  allCandidates,
  footprintsFor,
  levelLayerTexts,
  openSession,
  sessionLayerJob,
  type Session,
} from '../worker/cli/session.ts';
import { computeFootprints, type Candidate } from '../worker/core/coverage.ts';
import { inlineExecutor } from '../worker/core/floor.ts';
import { coversAt, type Footprint } from '../worker/core/footprint.ts';
import { MLAT_MIN_RECEIVERS } from '../worker/core/mlat.ts';
import { Network } from '../worker/core/network.ts';
import { solvePlan, type PlanInstance } from '../worker/core/plan.ts';
import { diagramData } from '../worker/core/diagram.ts';
import {
  DEFAULT_TARGET,
  describeTarget,
  SPEED_OF_LIGHT_M_S,
  TRANSPONDER_CLASSES,
  wattsToDbm,
  type ReceiverTypeSpec,
} from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { outageTable } from '../worker/core/outage.ts';
import { rasterizeVolume, volumeStats } from '../worker/core/volumes.ts';
import { levelLayers, levelLayerText } from '../worker/io/layers.ts';
import { stringifyGeoJson } from '../worker/io/geojson.ts';
import type { Provenance } from '../worker/io/provenance.ts';
import { buildDemand, coveredPoints, levelAltitudesM, studyNetwork } from '../worker/io/study.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';
import { bruteForceOptimum, mixedKindInstance, newSpend, shortfalls } from './support/plan-check.ts';
import {
  FIXTURE_SECONDARY,
  ring,
  writeScenarioFixture,
  type Fixture,
  type FixtureSensorType,
} from './support/scenario-fixture.ts';

const K = 4 / 3;
const RE = K * 6_371_000;
const CATALOG: ReceiverTypeSpec[] = JSON.parse(
  readFileSync(new URL('../data/catalog/receiver-types.json', import.meta.url), 'utf8'),
);
const ADSB = CATALOG.find((t) => t.kind === 'adsb')!;
const MLAT = CATALOG.find((t) => t.kind === 'mlat')!;

describe('the receiver catalog', () => {
  const readme = readFileSync(new URL('../data/catalog/README.md', import.meta.url), 'utf8');
  it('holds one valid type of each receiver kind, each documented in the README', () => {
    expect(CATALOG.map((t) => t.kind).sort()).toEqual(['adsb', 'mlat']);
    for (const t of CATALOG) {
      expect(readme).toContain(`## ${t.id} — ${t.name}`);
      const m = buildSensorModel(t, `receiver-types.json: ${t.id}`);
      expect(m.kind).toBe(t.kind);
      expect(m.frequencyMHz).toBe(1090);
      expect(m.warnings).toEqual([]);
      // The range depends on the transponder class only.
      expect(m.targetKey({ ...DEFAULT_TARGET, rcsM2: 50 })).toBe(m.targetKey(DEFAULT_TARGET));
      expect(m.targetKey({ ...DEFAULT_TARGET, transponder: 'high-power' })).not.toBe(
        m.targetKey(DEFAULT_TARGET),
      );
    }
  });

  it('bad receiver fields name the field, what was found and what was expected', () => {
    const base = { ...MLAT } as Record<string, unknown>;
    const bad = (over: Record<string, unknown>, field: string, expected: RegExp) => {
      const doc = scenarioDoc([{ ...base, ...over }]);
      let err: unknown;
      try {
        parseScenario(doc, 'rx.json');
      } catch (e) {
        err = e;
      }
      expect(isInputError(err)).toBe(true);
      const msg = (err as Error).message;
      expect(msg).toContain(`rx.json: sensorTypes[0].${field}`);
      expect(msg).toMatch(expected);
    };
    bad({ timingErrorNs: 0 }, 'timingErrorNs', /found 0; expected a 1σ arrival-time error in ns/);
    bad({ sensitivityDbm: -20 }, 'sensitivityDbm', /expected a receiver sensitivity in dBm from −120 to −40/);
    bad({ sector: { fromDeg: 30, toDeg: 390 } }, 'sector.toDeg', /found 390/);
    bad({ frequencyMHz: 1090 }, 'frequencyMHz', /a field that is not known here/);
    bad(
      { kind: 'sonar' },
      'kind',
      /found "sonar"; expected a sensor kind: "primary" or "secondary" \(a radar/,
    );
  });

  it('the scenario says whether the fix is altitude-aided (default true: 3 receivers; false: 4)', () => {
    const on = parseScenario(scenarioDoc([ADSB]), 'a.json');
    expect(on.mlatAltitudeAided).toBe(true);
    expect(mlatMinReceivers(on.mlatAltitudeAided)).toBe(MLAT_MIN_RECEIVERS.altitudeKnown);
    const off = parseScenario({ ...scenarioDoc([ADSB]), mlatAltitudeAided: false }, 'a.json');
    expect(mlatMinReceivers(off.mlatAltitudeAided)).toBe(MLAT_MIN_RECEIVERS.unaided);
  });
});

// -------------------------------------------------------------------------------------------------------------
// An ADS-B receiver's footprint edge on a flat sea: min(radio horizon, Friis range, instrumented range)

/** A strip of flat sea 601 cells of 1 km east–west, 5 rows, the antenna in the middle of the middle row. */
function strip() {
  const cells = 601;
  const H = 5;
  const pixelM = 1000;
  const data = new Float32Array(cells * H);
  const terrain = metricTerrain(data, cells, H, pixelM);
  const geo = metricGeo(cells, H, pixelM);
  const c0 = (cells - 1) / 2;
  const site = { id: 'float', name: 'Test float', ...cellLonLat(geo, c0, 2), mastHeightM: 30 };
  return { terrain, geo, data, site, c0, cells, pixelM };
}

async function stripFootprint(st: ReturnType<typeof strip>, spec: ReceiverTypeSpec): Promise<Footprint> {
  const candidates: Candidate[] = [
    { site: st.site, model: buildSensorModel(spec, spec.id), target: DEFAULT_TARGET },
  ];
  const r = await computeFootprints(
    st.terrain,
    {
      grid: st.geo,
      ground: st.data,
      candidates,
      kFactor: K,
      maxRangeM: ((st.cells - 1) / 2) * st.pixelM,
      // Free space: the check is against the Friis formula alone.
      atmosphere: false,
    },
    inlineExecutor(st.terrain),
  );
  return r.footprints[0];
}

/** Farthest ground distance east of the antenna (m, to a cell centre) where the footprint covers altitude h. */
function outerEdgeM(st: ReturnType<typeof strip>, fp: Footprint, h: number): number {
  let edge = 0;
  for (let c = Math.ceil(st.c0) + 1; c < st.cells; c++)
    if (coversAt(fp, 2 * st.cells + c, h)) edge = c - st.c0;
  return edge * st.pixelM;
}

/** Ground arc (m) on the effective earth at which the slant range from ha to h is d (law of cosines). */
function groundOfSlant(d: number, ha: number, h: number): number {
  const a = RE + ha;
  const b = RE + h;
  return RE * Math.acos((a * a + b * b - d * d) / (2 * a * b));
}

/** Ground arc (m) of the radio horizon between heights ha and h on the effective earth. */
function horizonGroundM(ha: number, h: number): number {
  return RE * (Math.acos(RE / (RE + ha)) + Math.acos(RE / (RE + h)));
}

/** Friis range (m) of the receiver's downlink for the default target's transponder class, at the pattern peak. */
function friisM(spec: ReceiverTypeSpec): number {
  const x = TRANSPONDER_CLASSES[DEFAULT_TARGET.transponder];
  const m =
    wattsToDbm(x.replyPowerW) +
    x.antennaGainDbi -
    x.installationLossDb +
    spec.antennaGainDbi -
    spec.cableLossDb -
    spec.sensitivityDbm;
  const lambda = SPEED_OF_LIGHT_M_S / 1090e6;
  return (lambda / (4 * Math.PI)) * Math.pow(10, m / 20);
}

describe('an ADS-B receiver on a flat sea: its footprint edge at FL100 is min(radio horizon, Friis range, instrumented range), within a cell', () => {
  const st = strip();
  const h = flToMetres(100);
  const ha = 30;
  /** A flat elevation pattern: the range is the same at every elevation. */
  const flat = (over: Partial<ReceiverTypeSpec>): ReceiverTypeSpec => ({
    id: 'rx-flat',
    name: 'Test receiver with a flat pattern',
    kind: 'adsb',
    cost: 1,
    sensitivityDbm: -100,
    cableLossDb: 1,
    antennaGainDbi: 0,
    elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
    instrumentedRangeNm: 300,
    ...over,
  });
  const cases: [string, ReceiverTypeSpec, 'friis' | 'instrumented' | 'horizon'][] = [
    ['the Friis range (sensitivity −90 dBm)', flat({ sensitivityDbm: -90 }), 'friis'],
    ['the instrumented range (100 NM)', flat({ instrumentedRangeNm: 100 }), 'instrumented'],
    ['the radio horizon', flat({}), 'horizon'],
  ];
  for (const [what, spec, limit] of cases) {
    it(`set by ${what}`, async () => {
      const slantLimits = { friis: friisM(spec), instrumented: spec.instrumentedRangeNm * 1852 };
      const edges = {
        friis: groundOfSlant(slantLimits.friis, ha, h),
        instrumented: groundOfSlant(slantLimits.instrumented, ha, h),
        horizon: horizonGroundM(ha, h),
      };
      // The case is built so that its limit is the nearest of the three.
      expect(Math.min(edges.friis, edges.instrumented, edges.horizon)).toBe(edges[limit]);
      const fp = await stripFootprint(st, spec);
      expect(Math.abs(outerEdgeM(st, fp, h) - edges[limit])).toBeLessThanOrEqual(st.pixelM);
    });
  }

  it('a sector receiver hears nothing outside its sector (0° to 180° clockwise: east, not west)', async () => {
    const fp = await stripFootprint(st, flat({ sensitivityDbm: -90, sector: { fromDeg: 0, toDeg: 180 } }));
    const row = 2 * st.cells;
    const c0 = st.c0;
    expect(coversAt(fp, row + c0 + 20, h)).toBe(true);
    expect(coversAt(fp, row + c0 - 20, h)).toBe(false);
  });
});

describe('the vertical coverage diagram of a receiver', () => {
  const st = strip();
  const model = buildSensorModel({ ...ADSB, sector: { fromDeg: 0, toDeg: 180 } }, 'rx');
  const draw = (azimuthDeg: number) =>
    diagramData(st.terrain, { lon: st.site.lon, lat: st.site.lat, mastM: 30 }, model, {
      azimuthDeg,
      target: DEFAULT_TARGET,
      flightLevels: [100],
      maxRangeM: 250_000,
    });
  it('names the transponder class only, has no cone of silence below 90°, and is empty outside its sector', () => {
    const east = draw(90);
    expect(east.sensor.kind).toBe('adsb');
    expect(east.sensor.target).toBe(describeTarget(DEFAULT_TARGET, 'adsb'));
    expect(east.sensor.target).toBe(TRANSPONDER_CLASSES[DEFAULT_TARGET.transponder].label);
    expect(east.cone.maxElevationDeg).toBeCloseTo(90, 9);
    expect(east.envelope.hiM.some((v) => v > flToMetres(100))).toBe(true);
    expect(draw(270).envelope.hiM.every((v) => Number.isNaN(v))).toBe(true);
  });
});

// -------------------------------------------------------------------------------------------------------------
// A flat-sea scenario with receivers: folds, requirements, layers and the plan

/** 40 km square: half a side in degrees of latitude and of longitude at 41° S (sphere of 6 371 km, [calc]). */
const LAT0 = -41;
const LON0 = -30;
const HALF_LAT = 20_000 / ((6_371_000 * Math.PI) / 180);
const HALF_LON = HALF_LAT / Math.cos((LAT0 * Math.PI) / 180);

function scenarioDoc(types: unknown[]): Record<string, unknown> {
  return {
    name: 'Receiver test (invented)',
    terrain: { files: ['t.tif'] },
    earth: { kFactor: 4 / 3 },
    grid: { cellArcSec: 60 },
    flightLevels: [100],
    sensorTypes: types,
    sites: { type: 'FeatureCollection', features: [] },
    volumes: [],
  };
}

describe('receivers on a flat sea, FL100', () => {
  let fx: Fixture;
  let session: Session;
  let footprints: Footprint[];
  const mlatType = { ...MLAT, id: 'mlat' } as unknown as FixtureSensorType;
  const adsbType = { ...ADSB, id: 'adsb' } as unknown as FixtureSensorType;
  const corners = [
    ['mlat-ne', LON0 + HALF_LON, LAT0 + HALF_LAT],
    ['mlat-nw', LON0 - HALF_LON, LAT0 + HALF_LAT],
    ['mlat-sw', LON0 - HALF_LON, LAT0 - HALF_LAT],
    ['mlat-se', LON0 + HALF_LON, LAT0 - HALF_LAT],
  ] as const;
  const adsbBox = ring(LON0 - 0.1, LAT0 - 0.1, LON0 + 0.1, LAT0 + 0.1);

  beforeAll(async () => {
    fx = writeScenarioFixture({
      dem: {
        west: -31.25,
        north: -40,
        widthCells: 300,
        heightCells: 240,
        pixelDeg: 30 / 3600,
        data: new Float32Array(300 * 240),
      },
      flightLevels: [100],
      sensorTypes: [mlatType, adsbType, FIXTURE_SECONDARY],
      sites: [
        ...corners.map(([id, lon, lat]) => ({
          id,
          name: `Buoy ${id.slice(5).toUpperCase()}`,
          lon,
          lat,
          mastHeightM: 20,
          siteCost: 1,
          allowedTypes: ['mlat'],
        })),
        // Two ADS-B candidates that both see the box: the plan must take the cheaper (gull).
        {
          id: 'gull',
          name: 'Gullet Float',
          lon: LON0 + 0.05,
          lat: LAT0,
          mastHeightM: 20,
          siteCost: 0.2,
          allowedTypes: ['adsb'],
        },
        {
          id: 'heron',
          name: 'Heronmere Float',
          lon: LON0 - 0.05,
          lat: LAT0,
          mastHeightM: 20,
          siteCost: 3,
          allowedTypes: ['adsb'],
        },
        // A radar that sees the box too: it counts toward 'any', never toward an ADS-B requirement.
        {
          id: 'tern',
          name: 'Ternwick Float',
          lon: LON0,
          lat: LAT0 + 0.3,
          mastHeightM: 20,
          siteCost: 0,
          allowedTypes: ['ssr-t'],
        },
      ],
      volumes: [
        {
          id: 'adsb-box',
          name: 'ADS-B box',
          polygon: { type: 'Polygon', coordinates: [adsbBox] },
          flMin: 100,
          flMax: 100,
          requiredFold: { adsb: 1 },
        },
      ],
      layouts: [],
      extra: { multipath: 'off', mlatAltitudeAided: false },
    });
    session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
    footprints = await footprintsFor(session, allCandidates(session));
  });
  afterAll(() => fx.cleanup());

  const cellOf = (lon: number, lat: number) => {
    const g = session.grid;
    return Math.floor((lat - g.originY) / g.pixelY) * g.width + Math.floor((lon - g.originX) / g.pixelX);
  };

  it('the ≥ 4-fold multilateration region contains the square of four receivers 40 km across (4 needed: not altitude-aided)', () => {
    const net = studyNetwork(session, [100], footprints);
    const need = mlatMinReceivers(session.loaded.scenario.mlatAltitudeAided);
    expect(need).toBe(4);
    const mlat = net.foldOf('mlat', 0);
    const g = session.grid;
    let inside = 0;
    for (let r = 0; r < g.height; r++) {
      for (let c = 0; c < g.width; c++) {
        const lon = g.originX + (c + 0.5) * g.pixelX;
        const lat = g.originY + (r + 0.5) * g.pixelY;
        if (Math.abs(lon - LON0) > HALF_LON || Math.abs(lat - LAT0) > HALF_LAT) continue;
        inside++;
        expect(mlat[r * g.width + c], `cell ${c},${r}`).toBeGreaterThanOrEqual(need);
      }
    }
    expect(inside).toBeGreaterThan(400);
    // No receiver counts toward 'any' (radars only): it is the radar's own fold.
    const any = net.foldOf('any', 0);
    const mlatSites = new Set<string>(corners.map((x) => x[0]));
    const radarOnly = new Network(
      mlat.length,
      net.altitudesM,
      footprints.filter((f) => !mlatSites.has(f.siteId) && f.kind !== 'adsb'),
    );
    expect(Array.from(any)).toEqual(Array.from(radarOnly.foldOf('any', 0)));
  });

  it('a single receiver lost: the 4-fold region shrinks below the square (N−1 breaks the geometry)', () => {
    const net = studyNetwork(session, [100], footprints);
    net.setSite('mlat-ne', false);
    expect(net.foldOf('mlat', 0)[cellOf(LON0, LAT0)]).toBe(3);
  });

  it('the N−1 table: losing any one of the four receivers loses the whole square where 4 are required', () => {
    const net = studyNetwork(session, [100], footprints);
    const square = ring(LON0 - HALF_LON, LAT0 - HALF_LAT, LON0 + HALF_LON, LAT0 + HALF_LAT);
    const v = {
      id: 'square',
      name: 'Multilateration square',
      polygon: { type: 'Polygon' as const, coordinates: [square] },
      flMin: 100,
      flMax: 100,
      requiredFold: { mlat: 4 },
    };
    const mask = rasterizeVolume(v, session.grid);
    const area = volumeStats(net, [v], [mask], [100], session.grid)[0];
    expect(area.meetsRequirementPct).toBe(100);
    const losses = outageTable(net, [v], [mask], [100], session.grid);
    for (const [id] of corners) {
      expect(losses.find((l) => l.siteId === id)!.areaKm2Lost).toBeCloseTo(area.areaKm2, 6);
    }
    for (const id of ['gull', 'heron', 'tern'])
      expect(losses.find((l) => l.siteId === id)!.areaKm2Lost).toBe(0);
  });

  it('the level’s coverage GeoJSON carries mlat and adsb fold features shaped as the radars’', () => {
    const net = studyNetwork(session, [100], footprints);
    const fc = levelLayers(net, 0, 100, session.grid, session.loaded.scenario.volumes, session.volumeMasks);
    const folds = (kind: string) =>
      fc.features
        .filter((f) => f.properties.layer === 'coverage' && f.properties.kind === kind)
        .map((f) => f.properties.fold);
    expect(folds('mlat')).toEqual([1, 2, 3, 4]);
    expect(folds('adsb')).toEqual([1, 2]);
    const m4 = fc.features.find((f) => f.properties.kind === 'mlat' && f.properties.fold === 4)!;
    expect(m4.properties.siteIds).toEqual([...corners.map((x) => x[0])].sort());
    expect(Object.keys(m4.properties).sort()).toEqual(
      ['altitudeM', 'areaKm2', 'flightLevel', 'fold', 'kind', 'layer', 'siteIds'].sort(),
    );
  });

  it('a level made from its snapshot, here and on a worker thread, is the text made from the network', async () => {
    const net = studyNetwork(session, [100], footprints);
    const s = session.loaded.scenario;
    const provenance = { tool: 'airshade', command: 'test' } as unknown as Provenance;
    const meta = { target: 'test' };
    const direct = levelLayers(
      net,
      0,
      100,
      session.grid,
      s.volumes,
      session.volumeMasks,
      meta,
      session.volumeTargets,
      session.ground,
    );
    direct.provenance = provenance;
    const job = sessionLayerJob(session, net, 0, 100, meta, provenance);
    const here = levelLayerText(job);
    expect(here).toBe(stringifyGeoJson(direct));
    expect(here).toMatch(/"kind":"mlat"/);
    // On a worker thread, its arrays posted in shared memory (levelLayerTexts; forced for this small grid).
    const [there] = await levelLayerTexts(session, net, [100], meta, provenance, { workers: 1 });
    expect(there).toBe(here);
  });

  it('a volume requiring ADS-B fold 1 is met where a receiver sees it, not by the radar alone', () => {
    const s = session.loaded.scenario;
    const stats = (active?: boolean[]) =>
      volumeStats(
        studyNetwork(session, [100], footprints, active),
        s.volumes,
        session.volumeMasks,
        [100],
        session.grid,
      )[0];
    expect(stats().meetsRequirementPct).toBe(100);
    const noAdsb = footprints.map((f) => f.kind !== 'adsb');
    const without = stats(noAdsb);
    expect(without.meetsRequirementPct).toBe(0);
    // The radar still sees the box: 'any' fold 1 everywhere in it.
    expect(without.foldHistogramKm2.any[1]).toBeCloseTo(without.areaKm2, 6);
    expect(stats().foldHistogramKm2.adsb?.[2]).toBeCloseTo(stats().areaKm2, 6);
  });

  it('the plan meets the ADS-B requirement with the cheapest receiver, and reports a zero gap', async () => {
    const s = session.loaded.scenario;
    const cands = allCandidates(session);
    const demand = buildDemand(session, [100]);
    const altitudes = levelAltitudesM(s, [100]);
    const siteIndex = new Map(s.sites.map((f, i) => [f.properties.id, i]));
    const inst: PlanInstance = {
      sites: s.sites.map((f) => ({
        id: f.properties.id,
        cost: f.properties.siteCost,
        existing: f.properties.existing,
      })),
      candidates: cands.map((c, i) => ({
        siteIndex: siteIndex.get(c.site.id)!,
        typeId: c.model.spec.id,
        kind: c.model.kind,
        cost: c.model.spec.cost,
        covers: coveredPoints(footprints[i], demand, altitudes),
      })),
      points: demand.instancePoints,
    };
    expect(demand.instancePoints.reqAdsb?.every((r) => r === 1)).toBe(true);
    expect(demand.instancePoints.reqAny.every((r) => r === 0)).toBe(true);
    const r = await solvePlan(inst);
    expect(
      r.chosen.map((c) => `${inst.sites[inst.candidates[c].siteIndex].id}/${inst.candidates[c].typeId}`),
    ).toEqual(['gull/adsb']);
    expect(r.cost).toBeCloseTo(0.2 + ADSB.cost, 9);
    expect(r.gapPct).toBe(0);
  });
});

/**
 * The planner on 30 seeded instances mixing radars and receivers (test/support/plan-check.ts, `mixedKindInstance`,
 * written from the definitions: a fold of distinct sites per kind, 'any' of radar sites only): every plan meets the
 * capped demand, costs what it claims, its lower bound is never above the brute-force optimum, and where it claims
 * optimality (gap 0) its cost is that optimum.
 */
describe('the plan with receiver kinds, against brute force', () => {
  it('30 seeded mixed instances: demand met, bound ≤ optimum, gap 0 ⇒ optimum', async () => {
    let claimed = 0;
    for (let i = 0; i < 30; i++) {
      const inst = mixedKindInstance(14_000 + i);
      const opt = bruteForceOptimum(inst).cost;
      const r = await solvePlan(inst);
      expect(shortfalls(inst, r.chosen)).toEqual([]);
      expect(r.cost).toBeCloseTo(newSpend(inst, r.chosen), 9);
      expect(r.lowerBound).toBeLessThanOrEqual(opt + 1e-9);
      if (r.gapPct === 0) {
        claimed++;
        expect(r.cost).toBeCloseTo(opt, 9);
      }
    }
    expect(claimed).toBeGreaterThanOrEqual(25);
  });

  it('a receiver never meets an any-radar requirement, and a radar never meets a receiver one', async () => {
    const one = (kind: 'secondary' | 'adsb', req: 'reqAny' | 'reqAdsb'): PlanInstance => ({
      sites: [{ id: 'a', cost: 1, existing: false }],
      candidates: [{ siteIndex: 0, typeId: 't', kind, cost: 1, covers: Uint32Array.of(0) }],
      points: {
        count: 1,
        weight: Float64Array.of(1),
        reqAny: Uint8Array.of(req === 'reqAny' ? 1 : 0),
        reqPrimary: Uint8Array.of(0),
        reqSecondary: Uint8Array.of(0),
        reqAdsb: Uint8Array.of(req === 'reqAdsb' ? 1 : 0),
      },
    });
    for (const [kind, req] of [
      ['adsb', 'reqAny'],
      ['secondary', 'reqAdsb'],
    ] as const) {
      const r = await solvePlan(one(kind, req));
      expect(r.chosen).toEqual([]);
      expect(r.unmeetable.map((u) => [u.kind, u.required, u.achievable])).toEqual([
        [req === 'reqAny' ? 'any' : 'adsb', 1, 0],
      ]);
    }
    const ok = await solvePlan(one('adsb', 'reqAdsb'));
    expect(ok.chosen).toEqual([0]);
  });
});

describe('studies of radars only keep their network', () => {
  it('a scenario of the old kinds loads and gives the same folds as before the receivers (any = primary | secondary)', async () => {
    const fx = writeScenarioFixture();
    try {
      const session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
      expect(session.loaded.scenario.mlatAltitudeAided).toBe(true);
      const fls = session.loaded.scenario.flightLevels;
      const fps = await footprintsFor(session, allCandidates(session));
      const net = studyNetwork(session, fls, fps);
      expect([...net.kindsPresent].sort()).toEqual(['primary', 'secondary']);
      const cells = session.grid.width * session.grid.height;
      for (let f = 0; f < fls.length; f++) {
        // Folds recomputed by hand from the footprints: distinct sites per kind, 'any' their union per site.
        const want = {
          any: new Uint16Array(cells),
          primary: new Uint16Array(cells),
          secondary: new Uint16Array(cells),
        };
        const h = net.altitudesM[f];
        for (let i = 0; i < cells; i++) {
          const bySite = new Map<string, Set<string>>();
          for (const fp of fps) {
            if (!coversAt(fp, i, h)) continue;
            const set = bySite.get(fp.siteId) ?? new Set<string>();
            set.add(fp.kind);
            bySite.set(fp.siteId, set);
          }
          for (const kinds of bySite.values()) {
            want.any[i]++;
            if (kinds.has('primary')) want.primary[i]++;
            if (kinds.has('secondary')) want.secondary[i]++;
          }
        }
        for (const k of ['any', 'primary', 'secondary'] as const) expect(net.foldOf(k, f)).toEqual(want[k]);
        expect(net.foldOf('adsb', f).every((v) => v === 0)).toBe(true);
        expect(net.foldOf('mlat', f).every((v) => v === 0)).toBe(true);
      }
      const stats = volumeStats(net, session.loaded.scenario.volumes, session.volumeMasks, fls, session.grid);
      for (const st of stats)
        expect(Object.keys(st.foldHistogramKm2).sort()).toEqual(['any', 'primary', 'secondary']);
    } finally {
      fx.cleanup();
    }
  });
});
