/**
 * The multilateration accuracy in the app's engine (issue 14): the accuracy layer, its legend, the cursor
 * read-out and the report's section, driven directly in Node on an invented fixture over the open South Atlantic
 * (test/support/scenario-fixture.ts): four `mlat` receivers on buoys at the corners of a 40 km square on a flat
 * sea, the altitude reported (3 receivers make a fix), each hearing out to 32 NM — so the far corners of the
 * 2.5° × 2° study area get no fix at all.
 *
 * Check values:
 * - at the square's centre the DRMS is c·σ/cos α (test/REFERENCES.md, "multilateration, receivers evenly spaced on
 *   a circle": four corners of a square, target above its centre [calc] from Torrieri, IEEE Trans. AES-20(2), 1984
 *   [memory]); within 10 %, issue 14's tolerance, as test/mlat-outputs.test.ts checks the CLI's raster;
 * - with one receiver down the centre loses a quarter of its normal matrix, so its DRMS grows (the same model);
 * - the report's section carries the very figures `airshade report` prints for the same study (the two share
 *   worker/io/mlat-figures.ts; this checks the engine's wiring).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_LAYERS, docOf, restoreState, stateFromScenario, type ScenarioDoc } from '../app/state.ts';
import type { Scenario } from '../shared/scenario.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { MLAT_BAND_COLORS, mlatLegend } from '../worker/io/mlat-image.ts';
import type { Provenance } from '../worker/io/provenance.ts';
import { FOLD_COLORS, mercatorRowLatitudes } from '../worker/io/render.ts';
import { Engine, type SensorRef } from '../worker/runtime/engine.ts';
import { runCli, runQuiet } from './support/run-cli.ts';
import {
  ring,
  writeScenarioFixture,
  type Fixture,
  type FixtureSensorType,
} from './support/scenario-fixture.ts';
import {
  C,
  HALF_LAT,
  HALF_LON,
  LAT0,
  LON0,
  RECEIVER_CATALOG,
  flatSeaDem,
  squareBuoys,
  squareVolume,
} from './support/mlat-sea.ts';
import { deltaE, lab } from './support/colour.ts';

const catalog = RECEIVER_CATALOG;
/** The catalog's receiver, hearing only out to 32 NM here (so that part of the study area has no fix). */
const MLAT: FixtureSensorType = {
  ...catalog.find((t) => t.kind === 'mlat')!,
  id: 'rx-mlat-short',
  instrumentedRangeNm: 32,
};

/** The catalog's ADS-B receiver: a receiver, but no multilateration. */
const ADSB: FixtureSensorType = catalog.find((t) => t.kind === 'adsb')!;

const PROVENANCE = {
  tool: 'airshade',
  version: 'test',
  command: 'app report',
  options: {},
  terrain: [],
  kFactor: 4 / 3,
} as unknown as Provenance;

const tableOf = (html: string, name: string) => {
  const m = html.match(new RegExp(`<table class="grid" data-table="${name}">[\\s\\S]*?</table>`));
  return m ? m[0] : null;
};

describe('multilateration accuracy in the engine, four receivers on a square over a flat sea', () => {
  let fx: Fixture;
  let doc: ScenarioDoc;
  let scenario: Scenario;
  let engine: Engine;
  let sensors: SensorRef[];

  beforeAll(async () => {
    fx = writeScenarioFixture({
      dem: flatSeaDem(),
      cellArcSec: 60,
      flightLevels: [50, 100],
      sensorTypes: [MLAT, ADSB],
      sites: squareBuoys((id) => (id === 'ne' ? [MLAT.id, ADSB.id] : [MLAT.id])),
      volumes: [
        squareVolume(50, 100),
        {
          id: 'wide',
          name: 'The wide box',
          polygon: { type: 'Polygon', coordinates: [ring(-31, -41.8, -29, -40.2)] },
          flMin: 100,
          flMax: 100,
          requiredFold: { mlat: 3 },
          requiredMlatAccuracyM: 50,
        },
      ],
      layouts: [],
      extra: { multipath: 'off', mlatAltitudeAided: true },
    });
    scenario = (await loadScenario(fx.scenarioPath)).scenario;
    doc = docOf(scenario);
    sensors = scenario.sites.map((f) => ({ siteId: f.properties.id, typeId: MLAT.id }));
    sensors.push({ siteId: 'buoy-ne', typeId: ADSB.id });
    engine = new Engine();
    const b = readFileSync(fx.demPath);
    await engine.loadTiles(
      [
        {
          name: 'terrain.tif',
          buffer: b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer,
        },
      ],
      true,
      { input: doc, display: 'fixture' },
    );
  });
  afterAll(() => fx?.cleanup());

  it('says the network has multilateration receivers', async () => {
    expect(engine.mlatInfo()).toBeNull(); // no network yet
    const c = await engine.coverage(sensors, undefined);
    expect(c.mlat).toEqual({ receivers: 4, minReceivers: 3, altitudeKnown: true });
    expect(engine.mlatInfo()).toEqual(c.mlat);
  });

  it('draws the accuracy: coloured by band inside the square, transparent where no fix; legend in metre bands', () => {
    // Before the layer is drawn the read-out names no DRMS (a read-out never starts a map).
    expect(engine.probe(LON0, LAT0).mlatDrmsM).toBeUndefined();
    engine.setProbeLevel(100);
    const { image, legend } = engine.layerImage('accuracy', 100);
    expect(legend).toEqual(mlatLegend());
    expect(legend.map((s) => s.label)).toEqual([
      '≤ 50 m',
      '50–100 m',
      '100–200 m',
      '200–500 m',
      '500–1,000 m',
      '> 1,000 m',
    ]);
    const [west, north] = image.corners[0];
    const [east, south] = image.corners[2];
    const lats = mercatorRowLatitudes(north, south, image.height);
    const px = (lon: number, lat: number) => {
      const col = Math.floor(((lon - west) / (east - west)) * image.width);
      let row = 0;
      for (let r = 0; r < lats.length; r++) if (Math.abs(lats[r] - lat) < Math.abs(lats[row] - lat)) row = r;
      return Array.from(
        image.rgba.subarray((row * image.width + col) * 4, (row * image.width + col) * 4 + 4),
      );
    };
    // The centre: c·σ/cos α (REFERENCES.md, four corners of a square) within 10 %, in the tightest band's colour.
    const drms = engine.probe(LON0, LAT0).mlatDrmsM!;
    const sigma = (MLAT.timingErrorNs as number) * 1e-9;
    const horizontal = Math.SQRT2 * 20_000;
    const cosA = horizontal / Math.hypot(horizontal, 3048 - 20);
    expect(Math.abs(drms - (C * sigma) / cosA) / ((C * sigma) / cosA)).toBeLessThan(0.1);
    expect(px(LON0, LAT0)).toEqual([...MLAT_BAND_COLORS[0], 255]);
    // Every cell inside the square has a fix; the study area's corners, 120 km and more from every buoy, none.
    for (const [dx, dy] of [
      [-0.8, -0.8],
      [0.8, 0.8],
      [-0.8, 0.8],
      [0.8, -0.8],
      [0, 0.5],
    ])
      expect(px(LON0 + dx * HALF_LON, LAT0 + dy * HALF_LAT)[3], `${dx}, ${dy}`).toBe(255);
    for (const [lon, lat] of [
      [-31.2, -40.05],
      [-28.8, -40.05],
      [-31.2, -41.95],
      [-28.8, -41.95],
    ]) {
      expect(px(lon, lat), `${lon}, ${lat}`).toEqual([0, 0, 0, 0]);
      expect(engine.probe(lon, lat).mlatDrmsM).toBeUndefined();
    }
    // The level shown only: FL050's map is another (not drawn yet).
    engine.setProbeLevel(50);
    expect(engine.probe(LON0, LAT0).mlatDrmsM).toBeUndefined();
    engine.setProbeLevel(100);
  });

  // Our own design thresholds (worker/io/mlat-image.ts): bands told apart from one another, and from the folds the
  // layer is drawn over. For scale, a ΔE*ab of about 2.3 is just noticeable (Sharma & Trussell, IEEE TIP 6(7), 1997
  // [memory], as test/render.test.ts cites it).
  it('keeps the bands apart from one another and from the fold colours', () => {
    const bands = MLAT_BAND_COLORS;
    for (const [i, a] of bands.entries()) {
      for (const c of bands.slice(i + 1)) expect(deltaE(a, c)).toBeGreaterThanOrEqual(15);
      for (const c of FOLD_COLORS) expect(deltaE(a, c)).toBeGreaterThanOrEqual(25);
    }
    // Tightest first: each band darker (lower L*) than the next, so the ramp reads one way.
    for (let i = 1; i < bands.length; i++) expect(lab(bands[i])[0]).toBeGreaterThan(lab(bands[i - 1])[0]);
  });

  it('leaves a failed receiver out until it comes back', () => {
    engine.setProbeLevel(100);
    engine.layerImage('accuracy', 100);
    const all = engine.probe(LON0, LAT0).mlatDrmsM!;
    engine.setFailed(['buoy-ne']);
    expect(engine.probe(LON0, LAT0).mlatDrmsM).toBeUndefined(); // the map of four is dropped
    engine.layerImage('accuracy', 100);
    const three = engine.probe(LON0, LAT0).mlatDrmsM!;
    expect(three).toBeGreaterThan(all * 1.05);
    engine.setFailed([]);
    engine.layerImage('accuracy', 100);
    expect(engine.probe(LON0, LAT0).mlatDrmsM).toBe(all);
  });

  it('the report has the accuracy section with the figures `airshade report` gives for the study', async () => {
    const html = engine.report({ provenance: PROVENANCE, caution: 'test caution' });
    expect(html).toMatch(/<section class="text" id="mlat">/);
    const mine = tableOf(html, 'mlat');
    expect(mine).not.toBeNull();
    expect(mine).toMatch(/<tr data-volume="square" data-level="50">/);
    expect(mine).toMatch(/<tr data-volume="wide" data-level="100">/);
    const out = join(fx.dir, 'report.html');
    const r = await runCli('report', fx.scenarioPath, '--out', out, '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
    const cli = readFileSync(out, 'utf8');
    expect(mine).toBe(tableOf(cli, 'mlat'));
    // The section's words (receivers, what a fix needs) too.
    const section = (t: string) => t.match(/<section class="text" id="mlat">[\s\S]*?<\/section>/)![0];
    expect(section(html)).toBe(section(cli));
  });

  it('the N−1 table carries the accuracy bounds lost per receiver site, as `airshade outage` gives them', async () => {
    // The CLI's default network: every allowed site and type (the four receivers and buoy NE's ADS-B receiver).
    const out = join(fx.dir, 'outage');
    const r = await runCli('outage', fx.scenarioPath, '--out', out, '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
    const cli = JSON.parse(readFileSync(join(out, 'outage.json'), 'utf8')) as {
      sensors: SensorRef[];
      mlatAccuracyLosses: unknown[];
    };
    expect(cli.sensors).toHaveLength(sensors.length);
    // The same sensors in the CLI's order, so that both sum the receivers in the same order.
    const table = await engine.outageTable(cli.sensors);
    expect(table.accuracy).toBeDefined();
    expect(table.accuracy!.map((l) => l.siteId).sort()).toEqual(
      scenario.sites.map((f) => f.properties.id).sort(),
    );
    // Each buoy down leaves three receivers: a fix still (the altitude reported), but a worse one, so the 10 m
    // bound over the square loses area (the model's own consequence, not a figure from outside).
    expect(table.accuracy!.every((l) => l.areaKm2Lost > 0)).toBe(true);
    expect(JSON.parse(JSON.stringify(table.accuracy))).toEqual(cli.mlatAccuracyLosses);
    // The fold-based rows are the CLI's too.
    expect(JSON.parse(JSON.stringify([...table]))).toEqual(JSON.parse(JSON.stringify(cli)).losses);
    // A network without multilateration receivers: the fold-based table alone.
    const adsbOnly = await engine.outageTable([{ siteId: 'buoy-ne', typeId: ADSB.id }]);
    expect(adsbOnly).toHaveLength(1);
    expect(adsbOnly.accuracy).toBeUndefined();
  });

  it('offers nothing for a network without multilateration receivers', async () => {
    const c = await engine.coverage([{ siteId: 'buoy-ne', typeId: ADSB.id }], undefined);
    expect(c.mlat).toBeNull();
    expect(engine.mlatInfo()).toBeNull();
    const { image, legend } = engine.layerImage('accuracy', 100);
    expect(legend).toEqual([]);
    expect(image.rgba.every((v) => v === 0)).toBe(true);
    expect(engine.probe(LON0, LAT0).mlatDrmsM).toBeUndefined();
    expect(engine.report({ provenance: PROVENANCE, caution: 'test caution' })).not.toMatch(/id="mlat"/);
  });

  it('the app’s plan meets the accuracy bounds as `airshade plan` does, with the same figures', async () => {
    const p = await engine.plan({ keep: [], excludedSites: [], budget: null, timeLimitMs: 8000 });
    expect(p.mlatAccuracy).toBeDefined();
    const a = p.mlatAccuracy!;
    // Every bounded volume-level is met or beyond what all four buoys reach (the wide box's far parts).
    expect(a.metPct + a.unmeetablePct).toBeCloseTo(100, 9);
    expect(a.unmeetablePct).toBeGreaterThan(0);
    expect(p.demandMet).toBe(true);
    const out = join(fx.dir, 'plan');
    const r = await runQuiet('plan', fx.scenarioPath, out, '--budget', 'none');
    expect(r.code, r.err).toBe(0);
    const cli = JSON.parse(readFileSync(join(out, 'plan.json'), 'utf8'));
    expect(a.metPct).toBeCloseTo((100 * cli.mlatAccuracy.metWeight) / cli.mlatAccuracy.boundedWeight, 9);
    expect(p.entries.map((e) => `${e.siteId}/${e.typeId}`)).toEqual(
      cli.entries.map((e: SensorRef) => `${e.siteId}/${e.typeId}`),
    );
  });

  it('a workspace saved before the accuracy layer existed restores with it at its default', () => {
    const state = stateFromScenario(scenario, 'fixture');
    state.view.layers.floor = { on: true, opacity: 0.4 };
    const saved = JSON.parse(JSON.stringify(state)) as { view: { layers: Record<string, unknown> } };
    delete saved.view.layers.accuracy;
    const back = restoreState(saved);
    expect(back.view.layers.accuracy).toEqual(DEFAULT_LAYERS.accuracy);
    expect(back.view.layers.floor).toEqual({ on: true, opacity: 0.4 });
    // A saved accuracy setting is kept.
    saved.view.layers.accuracy = { on: true, opacity: 0.5 };
    expect(restoreState(saved).view.layers.accuracy).toEqual({ on: true, opacity: 0.5 });
  });
});
