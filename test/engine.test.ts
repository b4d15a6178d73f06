/**
 * The web app's engine (worker/runtime/engine.ts) driven directly in Node with the inline executor, on the invented
 * scenario of test/e2e/fixture.ts: it must give the same figures as the CLI on the same scenario (the two share
 * the core; this checks the engine's own wiring — footprint cache, network, outages, plan), recompute only what a
 * moved site changes, stop on cancel without losing the state, and refuse bad input without losing the state.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { flToMetres } from '../shared/units.ts';
import { docOf, type ScenarioDoc } from '../app/state.ts';
import { Network } from '../worker/core/network.ts';
import { outageTable } from '../worker/core/outage.ts';
import { Cancelled, Engine, type SensorRef } from '../worker/runtime/engine.ts';
import type { StudyConventions } from '../worker/io/study.ts';
import { mercatorRowLatitudes } from '../worker/io/render.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { writeE2eData, E2E_LAYOUT_NAME, type E2eData } from './e2e/fixture.ts';
import { runCli } from './support/run-cli.ts';

let dir: string;
let data: E2eData;
let doc: ScenarioDoc;
let tiles: { name: string; buffer: ArrayBuffer }[];
let layout: SensorRef[];

const bytes = (p: string) => {
  const b = readFileSync(p);
  return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
};

async function engineOn(d: ScenarioDoc = doc, display = 'fixture'): Promise<Engine> {
  const e = new Engine();
  await e.loadTiles(
    tiles.map((t) => ({ name: t.name, buffer: t.buffer.slice(0) })),
    true,
    { input: d, display },
  );
  return e;
}

/** Conventions without the sensor models' warnings (whose place names the file as each side read it). */
const sansWarnings = (c: StudyConventions) => ({
  ...c,
  sensorTypes: c.sensorTypes.map((t) => ({ id: t.id, convention: t.convention })),
});

/** `airshade coverage` of the fixture's layout on a copy of the scenario with `change`, in the data folder. */
async function cliCoverage(name: string, change: Record<string, unknown>) {
  const path = join(dir, `${name}.scenario.json`);
  writeFileSync(path, JSON.stringify({ ...data.scenario, ...change }, null, 2));
  const out = join(dir, name);
  const cli = await runCli(
    'coverage',
    path,
    '--layout',
    E2E_LAYOUT_NAME,
    '--out',
    out,
    '--threads',
    '0',
    '--quiet',
  );
  expect(cli.code).toBe(0);
  return JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8'));
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-engine-'));
  data = writeE2eData(dir);
  const { scenario } = await loadScenario(data.scenarioPath);
  doc = docOf(scenario);
  tiles = data.tiles.map((t) => ({ name: t.file.split('/').pop()!, buffer: bytes(t.path) }));
  layout = scenario.layouts.find((l) => l.name === E2E_LAYOUT_NAME)!.sensors;
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('engine', () => {
  it('gives the same volume statistics as `airshade coverage` on the same layout', async () => {
    const e = await engineOn();
    const r = await e.coverage(layout, undefined);
    expect(r.computed).toBe(layout.length);
    const out = join(dir, 'cov');
    const cli = await runCli(
      'coverage',
      data.scenarioPath,
      '--layout',
      E2E_LAYOUT_NAME,
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(cli.code).toBe(0);
    const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8'));
    expect(r.volumes).toEqual(summary.volumes);
  });

  it('recomputes only the moved site and then agrees with a fresh engine', async () => {
    const e = await engineOn();
    await e.coverage(layout, undefined);
    const moved = structuredClone(doc);
    const id = layout[0].siteId;
    const f = moved.sites.features.find((x) => x.properties.id === id)!;
    f.geometry.coordinates = [f.geometry.coordinates[0] + 0.05, f.geometry.coordinates[1] - 0.03];
    const summary = e.setScenario(moved, 'fixture');
    expect(summary.hasCoverage).toBe(false); // the network's footprints changed under it
    const again = await e.coverage(layout, undefined);
    const atSite = layout.filter((r) => r.siteId === id).length;
    expect(again.computed).toBe(atSite);
    expect(again.cached).toBe(layout.length - atSite);
    const fresh = await (await engineOn(moved)).coverage(layout, undefined);
    expect(again.volumes).toEqual(fresh.volumes);
  });

  it('states the conventions of a run as `airshade coverage` writes them, and the models’ warnings', async () => {
    const e = await engineOn(doc, data.scenarioPath);
    const r = await e.coverage(layout, undefined);
    const summary = await cliCoverage('conventions', {});
    expect(sansWarnings(r.conventions)).toEqual(sansWarnings(summary.conventions));
    expect(r.conventions.target.text).toMatch(/^2 m² Swerling 1, transponder ≥ 70 W/);
    expect(r.conventions.day.text).toBe('ISA standard day (QNH 1013.25 hPa, ISA +0 °C)');
    expect(r.conventions.kFactor).toBeCloseTo(4 / 3, 12);
    // The fixture's primary still carries a targetRcsM2 of its own: it loads, with a warning.
    expect(r.warnings).toHaveLength(1);
    expect(r.warnings[0]).toContain('targetRcsM2');
    expect(r.conventions.sensorTypes.find((t) => t.id === 'psr-compact')!.warnings).toEqual(r.warnings);
    // The scenario as it stands says the same, and so does the engine asked afterwards.
    const study = e.setScenario(doc, data.scenarioPath);
    expect(study.conventions).toEqual(r.conventions);
    expect(study.warnings).toEqual(r.warnings);
    expect(e.conventions()).toEqual(r.conventions);
    expect(e.conventions([100]).levels).toEqual([r.conventions.levels[1]]);
  });

  it('on a cold, low-pressure day lowers every level, keeps the footprints, and agrees with the CLI', async () => {
    const day = { qnhHpa: 980, isaDeviationC: -20 };
    const e = await engineOn();
    const std = await e.coverage(layout, undefined);
    const study = e.setScenario({ ...doc, day }, 'fixture');
    // Footprints are altitude bands: the day only moves the levels, so the network stands (no footprint anew).
    expect(study.hasCoverage).toBe(true);
    expect(study.conventions.day.text).toBe('QNH 980 hPa, ISA −20 °C');
    for (const l of study.conventions.levels) {
      expect(l.pressureAltitudeM).toBeCloseTo(l.flightLevel * 30.48, 9);
      expect(l.trueAltitudeM).toBeLessThan(l.pressureAltitudeM - 250);
    }
    const cold = await e.coverage(layout, undefined);
    expect(cold.computed).toBe(0);
    expect(cold.conventions.levels).toEqual(study.conventions.levels);
    expect(cold.volumes).not.toEqual(std.volumes);
    const summary = await cliCoverage('cold', { day });
    expect(cold.volumes).toEqual(summary.volumes);
    expect(sansWarnings(cold.conventions)).toEqual(sansWarnings(summary.conventions));
  });

  it('computes every footprint again for a new target, and one site’s for a new tilt', async () => {
    const e = await engineOn();
    await e.coverage(layout, undefined);
    const small = e.setScenario({ ...doc, targetRcsM2: 0.5, targetTransponder: 'high-power' }, 'fixture');
    expect(small.hasCoverage).toBe(false);
    const r = await e.coverage(layout, undefined);
    expect(r.computed).toBe(layout.length);
    expect(r.conventions.target).toMatchObject({ rcsM2: 0.5, transponder: 'high-power' });
    expect(r.conventions.target.text).toMatch(/^0\.5 m² Swerling 1, transponder ≥ 125 W/);
    const tilted = structuredClone({ ...doc, targetRcsM2: 0.5, targetTransponder: 'high-power' as const });
    const id = layout[0].siteId;
    tilted.sites.features.find((f) => f.properties.id === id)!.properties.tiltDeg = 3;
    expect(e.setScenario(tilted, 'fixture').hasCoverage).toBe(false);
    const again = await e.coverage(layout, undefined);
    const atSite = layout.filter((x) => x.siteId === id).length;
    expect(again.computed).toBe(atSite);
    expect(again.cached).toBe(layout.length - atSite);
    // A volume's own target: stated for that volume.
    const own = structuredClone(doc);
    own.volumes[0].targetRcsM2 = 0.3;
    const c = e.setScenario(own, 'fixture').conventions;
    expect(c.volumeTargets).toEqual([
      { volumeId: own.volumes[0].id, text: expect.stringMatching(/^0\.3 m²/) },
    ]);
  });

  it('tallies an outage as the N−1 table does, and restores the folds exactly', async () => {
    const e = await engineOn();
    await e.coverage(layout, undefined);
    const fl = doc.flightLevels[0];
    const before = e.layerImage('fold', fl).image.rgba.slice();
    const table = await e.outageTable();
    // The same table from the core directly, on a network of the same footprints.
    const site = table[0].siteId;
    e.setFailed([site]);
    const t = e.outageTally();
    expect(t.failed).toEqual([site]);
    expect(t.demandWeightLost).toBeCloseTo(table[0].demandWeightLost, 6);
    expect(t.areaKm2Lost).toBeCloseTo(table[0].areaKm2Lost, 6);
    expect(t.demandWeightLost).toBeGreaterThan(0);
    const lossPixels = countOpaque(e.layerImage('loss', fl).image.rgba);
    expect(lossPixels).toBeGreaterThan(0);
    const geo = JSON.parse(e.levelGeoJson(fl));
    expect(geo.features.some((x: { properties: { layer: string } }) => x.properties.layer === 'lost')).toBe(
      true,
    );
    e.setFailed([]);
    expect(e.outageTally().demandWeightLost).toBe(0);
    expect(e.layerImage('fold', fl).image.rgba).toEqual(before);
  });

  it('matches outageTable of the core for every site of the layout', async () => {
    const e = await engineOn();
    await e.coverage(layout, undefined);
    const fromEngine = await e.outageTable(layout);
    // Rebuild the network from the CLI's footprints through the core's own outage table.
    const { openSession, footprintsFor, layoutCandidates } = await import('../worker/cli/session.ts');
    const { ProgressLine } = await import('../worker/cli/progress.ts');
    const session = await openSession(data.scenarioPath, 0, new ProgressLine('t', true));
    const fps = await footprintsFor(session, layoutCandidates(session, E2E_LAYOUT_NAME, 'layout'));
    const s = session.loaded.scenario;
    const net = new Network(session.grid.width * session.grid.height, s.flightLevels.map(flToMetres), fps);
    expect(fromEngine).toEqual(
      outageTable(net, s.volumes, session.volumeMasks, s.flightLevels, session.grid),
    );
  });

  it('stops on cancel, keeps the network it had, and keeps the footprints already done', async () => {
    const e = await engineOn();
    await e.coverage(layout.slice(0, 1), undefined);
    const probeBefore = e.probe(
      doc.sites.features[0].geometry.coordinates[0],
      doc.sites.features[0].geometry.coordinates[1],
    );
    const all: SensorRef[] = doc.sites.features.flatMap((f) =>
      (f.properties.allowedTypes ?? doc.sensorTypes.map((t) => t.id)).map((typeId) => ({
        siteId: f.properties.id,
        typeId,
      })),
    );
    let sitesDone = 0;
    const run = e.coverage(all, undefined, (_f, stage) => {
      if (stage.endsWith(': done')) {
        sitesDone++;
        if (sitesDone === 1) e.cancel();
      }
    });
    await expect(run).rejects.toBeInstanceOf(Cancelled);
    expect(
      e.probe(doc.sites.features[0].geometry.coordinates[0], doc.sites.features[0].geometry.coordinates[1]),
    ).toEqual(probeBefore);
    const rest = await e.coverage(all, undefined);
    expect(rest.cached).toBeGreaterThan(1); // the first run's sensor and the site finished before the cancel
    expect(rest.computed + rest.cached).toBe(all.length);
  });

  it('refuses a tile that is not a GeoTIFF and a site outside the terrain, keeping what it had', async () => {
    const e = await engineOn();
    const info = e.terrainInfo();
    await expect(
      e.loadTiles([{ name: 'notes.tif', buffer: new TextEncoder().encode('hello').buffer }], true),
    ).rejects.toThrow(/notes\.tif/);
    expect(e.terrainInfo()).toEqual(info);
    const away = structuredClone(doc);
    away.sites.features[0].geometry.coordinates = [-10, -10]; // open South Atlantic, far off the terrain
    expect(() => e.setScenario(away, 'moved.json')).toThrow(/outside the terrain/);
    // The previous study still stands: coverage runs.
    const r = await e.coverage(layout, undefined);
    expect(r.sensors.length).toBe(layout.length);
  });

  it('makes the same plan as `airshade plan`', async () => {
    const e = await engineOn();
    const p = await e.plan({ keep: [], excludedSites: [], timeLimitMs: 8000 });
    const out = join(dir, 'plan');
    const cli = await runCli('plan', data.scenarioPath, '--out', out, '--threads', '0', '--quiet');
    expect(cli.code).toBe(0);
    const plan = JSON.parse(readFileSync(join(out, 'plan.json'), 'utf8'));
    expect(p.cost).toBeCloseTo(plan.cost, 9);
    expect(p.lowerBound).toBeCloseTo(plan.lowerBound, 9);
    expect(p.entries.map((x) => `${x.siteId}/${x.typeId}`).sort()).toEqual(
      plan.entries.map((x: SensorRef) => `${x.siteId}/${x.typeId}`).sort(),
    );
  });

  it('draws images on Mercator rows over the grid, and a vertical coverage diagram', async () => {
    const e = await engineOn();
    await e.coverage(layout, undefined);
    const img = e.layerImage('fold', doc.flightLevels[0]).image;
    expect(img.rgba.length).toBe(img.width * img.height * 4);
    const [nw, , se] = img.corners;
    const lats = mercatorRowLatitudes(nw[1], se[1], img.height);
    // Row centres are equally spaced in Mercator y (y = ln tan(π/4 + φ/2)), north to south.
    const y = (lat: number) => Math.log(Math.tan(Math.PI / 4 + (lat * Math.PI) / 360));
    const step = (y(se[1]) - y(nw[1])) / img.height;
    for (let r = 0; r < img.height; r++) expect(y(lats[r])).toBeCloseTo(y(nw[1]) + (r + 0.5) * step, 9);
    const svg = e.diagram(layout[0].siteId, layout[0].typeId, 90, 'aviation');
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg).toContain('FL');
    // Its caption states the target, the sensor's spec convention, the tilt and the day (words split by wrapping).
    const words = svg.replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ');
    expect(words).toContain('Target: 2 m² Swerling 1');
    expect(words).toContain('tilt 0°');
    expect(words).toContain('ISA standard day');
  });
});

function countOpaque(rgba: Uint8ClampedArray): number {
  let n = 0;
  for (let i = 3; i < rgba.length; i += 4) if (rgba[i] > 0) n++;
  return n;
}
