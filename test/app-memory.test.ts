/**
 * Refuse before allocating, in the web app's engine (worker/runtime/engine.ts) as in the CLI (worker/cli/budget-check.ts):
 * both take the estimate of worker/core/memory-estimate.ts. A scenario whose grid would not fit is refused with
 * one message naming grid.cellArcSec, what it would need and the finest cell size that fits — and that cell size
 * is then accepted; a tile whose header announces more than fits is refused before its pixels are decoded; the
 * state stays as it was. On the invented open-ocean scenario of test/e2e/fixture.ts.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { docOf, type ScenarioDoc } from '../app/state.ts';
import * as cliBudget from '../worker/cli/budget-check.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import {
  cellArcSecThatFits,
  estimateRun,
  GiB,
  horizonSamples,
  MiB,
  RUNTIME_BYTES,
  tileReadBytes,
  type RunShape,
} from '../worker/core/memory-estimate.ts';
import { appMemoryLimitBytes, Engine, FOOTPRINT_CACHE_MARGIN } from '../worker/runtime/engine.ts';
import { horizonBufferLength, planHorizon } from '../worker/core/horizon.ts';
import { mulberry32 } from './support/bumps.ts';
import { cellLonLat, metricTerrain } from './support/dem.ts';
import { writeE2eData, type E2eData } from './e2e/fixture.ts';
import { runCli } from './support/run-cli.ts';

let dir: string;
let data: E2eData;
let doc: ScenarioDoc;
let tiles: { name: string; buffer: ArrayBuffer }[];

const bytes = (p: string) => {
  const b = readFileSync(p);
  return b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;
};
const copies = () => tiles.map((t) => ({ name: t.name, buffer: t.buffer.slice(0) }));
const withCell = (cellArcSec: number): ScenarioDoc => ({ ...doc, grid: { ...doc.grid, cellArcSec } });

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-app-memory-'));
  data = writeE2eData(dir);
  doc = docOf((await loadScenario(data.scenarioPath)).scenario);
  tiles = data.tiles.map((t) => ({ name: t.file.split('/').pop()!, buffer: bytes(t.path) }));
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the shared estimate', () => {
  it('is the one the CLI uses (re-exported, not copied)', () => {
    expect(cliBudget.estimateRun).toBe(estimateRun);
    expect(cliBudget.RUNTIME_BYTES).toBe(RUNTIME_BYTES);
  });

  it("bounds a horizon's buffer from above: planHorizon's layout never needs more slots than horizonSamples", () => {
    // Flat ground of 90 m pixels around a site at the centre; reach, range step and arc step drawn from the
    // shapes the commands use (range step a terrain pixel or ¾ of one, arc ¾ of a cell of 1″…120″, or 1.5 pixels).
    const n = 41;
    const terrain = metricTerrain(new Float32Array(n * n).fill(10), n, n, 90);
    const site = cellLonLat(terrain.geo, 20, 20);
    const rnd = mulberry32(7);
    let worst = 0;
    for (let k = 0; k < 60; k++) {
      const arcStepM = k % 3 === 0 ? 135 : 0.75 * (1 + rnd() * 119) * 23;
      const rangeStepM = k % 2 === 0 ? 90 : 67.5;
      const maxRangeM = 200 + rnd() ** 2 * 600_000;
      const layout = planHorizon(terrain, { ...site, mastM: 10, maxRangeM, rangeStepM, arcStepM });
      const bound = horizonSamples(maxRangeM, rangeStepM, arcStepM);
      // Samples and the radials' tails (horizon.ts horizonBufferLength).
      const slots = horizonBufferLength(layout);
      expect(slots).toBeLessThanOrEqual(bound);
      worst = Math.max(worst, slots / bound);
    }
    // Not loose for nothing: some layout comes within 20 % of it.
    expect(worst).toBeGreaterThan(0.8);
  });

  it('offers the finest round cell size whose run fits, coarser than the one asked', () => {
    // Cells of a 1.5° × 1° area at c″: (5400/c) × (3600/c); the footprints alone are cells × pairs × 4 bytes.
    const runAt = (c: number): RunShape => ({
      terrainPixels: 180 * 120,
      cells: Math.round(5400 / c) * Math.round(3600 / c),
      sites: 4,
      pairs: 8,
      levels: 3,
      targets: 1,
      volumes: 2,
      reachM: 150_000,
      rangeStepM: 700,
      arcStepM: 0.75 * c * 23,
      horizonsInFlight: 2,
    });
    const limit = 400 * MiB;
    const c = cellArcSecThatFits(0.5, limit, runAt)!;
    expect(estimateRun(runAt(c)).bytes).toBeLessThanOrEqual(limit);
    // The next finer whole value does not fit (c is the finest offered).
    expect(estimateRun(runAt(c - 1)).bytes).toBeGreaterThan(limit);
    // Nothing fits under the runtime alone.
    expect(cellArcSecThatFits(0.5, RUNTIME_BYTES, runAt)).toBeNull();
  });

  it("the app's default limit is the smaller of 2 GiB and half the device's memory", () => {
    const nav = globalThis as { navigator?: unknown };
    const saved = Object.getOwnPropertyDescriptor(globalThis, 'navigator');
    try {
      Object.defineProperty(globalThis, 'navigator', { value: { deviceMemory: 2 }, configurable: true });
      expect(appMemoryLimitBytes()).toBe(1 * GiB);
      Object.defineProperty(globalThis, 'navigator', { value: { deviceMemory: 8 }, configurable: true });
      expect(appMemoryLimitBytes()).toBe(2 * GiB);
      Object.defineProperty(globalThis, 'navigator', { value: {}, configurable: true });
      expect(appMemoryLimitBytes()).toBe(2 * GiB);
    } finally {
      if (saved) Object.defineProperty(globalThis, 'navigator', saved);
      else delete nav.navigator;
    }
  });
});

describe("the app's engine refuses before allocating", () => {
  it('a tiny grid.cellArcSec: one message naming the field, the need and what fits; the study is unchanged', async () => {
    const e = new Engine();
    const first = await e.loadTiles(copies(), true, { input: doc, display: 'fixture' });
    expect(first.study).not.toBeNull();
    let message = '';
    try {
      e.setScenario(withCell(0.5), 'fixture');
    } catch (err) {
      message = (err as Error).message;
    }
    // The fixture's 1.5° × 1° at 0.5″: 10 800 × 7 200 cells, 77.8 million, each with 8 footprints of 4 bytes.
    expect(message).toMatch(/^fixture: grid\.cellArcSec \(0\.5″: 10800 × 7200 cells\)/);
    expect(message).toMatch(/found a run that needs about \d+\.\d GiB/);
    expect(message).toContain("the app's memory limit");
    const fits = Number(/grid\.cellArcSec of (\d+)″ or coarser would fit/.exec(message)?.[1]);
    expect(fits).toBeGreaterThan(0.5);
    // The study before the refusal stands (its grid is the fixture's), until the cell size offered replaces it.
    expect(e.conventions().levels.length).toBe(doc.flightLevels.length);
    const accepted = e.setScenario(withCell(fits), 'fixture');
    expect(accepted.grid.width).toBe(Math.round((1.5 * 3600) / fits));
    expect(first.study!.grid.width).toBe(Math.round((1.5 * 3600) / doc.grid.cellArcSec));
  });

  it('says what the CLI says of the same scenario under the same limit (one estimate, one message)', async () => {
    const path = join(dir, 'tiny-cells.json');
    writeFileSync(
      path,
      JSON.stringify({ ...data.scenario, grid: { ...(data.scenario.grid as object), cellArcSec: 0.5 } }),
    );
    // The app keeps every footprint (its what-ifs), as `airshade outage` does (every allowed site and type, here);
    // `coverage` and `plan` hold one site's at a time (plan keeps more while they fit), and are counted so
    // (test/coverage-memory.test.ts).
    const cli = await runCli('outage', path, '--out', join(dir, 'tiny-out'), '--max-memory', '2G', '--quiet');
    expect(cli.code).toBe(2);
    const e = new Engine(undefined, { maxMemoryBytes: 2 * GiB });
    await e.loadTiles(copies(), true, { input: doc, display: 'fixture' });
    let app = '';
    try {
      e.setScenario(withCell(0.5), path);
    } catch (err) {
      app = (err as Error).message;
    }
    // Where and what was found agree word for word; only the knob differs (--max-memory, the app's limit).
    const upToKnob = (m: string) => /(\S+: grid\.cellArcSec .*; expected at most 2\.0 GiB)/.exec(m)?.[1];
    expect(upToKnob(app)).toBeDefined();
    expect(upToKnob(cli.err)).toBe(upToKnob(app));
  });

  it('a scenario that loads with its tiles is refused the same way, and the terrain before stays', async () => {
    const e = new Engine();
    await e.loadTiles(copies(), true, { input: doc, display: 'fixture' });
    const before = e.terrainInfo();
    await expect(e.loadTiles(copies(), true, { input: withCell(0.5), display: 'tiny.json' })).rejects.toThrow(
      /^tiny\.json: grid\.cellArcSec .*would fit/,
    );
    expect(e.terrainInfo()).toBe(before);
  });

  it('a tile whose header announces more than fits, before its pixels are decoded; a file too big to read', async () => {
    const t = tiles[0];
    // The tile's own need (runtime, file, samples, Float32 copy), less one byte: just past the limit.
    const header = {
      name: t.name,
      fileBytes: t.buffer.byteLength,
      width: 90,
      height: 120,
      bytesPerSample: 4,
    };
    const e = new Engine(undefined, { maxMemoryBytes: tileReadBytes(header) - 1 });
    await expect(e.loadTiles(copies().slice(0, 1), true)).rejects.toThrow(
      new RegExp(
        `^${t.name.replace('.', '\\.')}: found a tile of 90 × 120 pixels .*expected a tile that fits in`,
      ),
    );
    expect(e.terrainInfo()).toBeNull();
    expect(() => e.checkTileFile('huge.tif', 4 * GiB)).toThrow(
      /^huge\.tif: found a file of 4\.0 GiB; expected a tile that fits/,
    );
  });
});

describe("the app engine's footprint cache stays within the estimate plus its margin", () => {
  it('many site moves: bytes bounded, least recently used out first, the network of the moment kept', async () => {
    // The estimate (memory-estimate.ts) counts every allowed (site, type) pair once, each footprint lo + hi Uint16
    // per cell and target: the fixture has 6 pairs (2 + 1 + 1 + 2) and one target on its 90 × 60 grid.
    const e = new Engine();
    const first = await e.loadTiles(copies(), true, { input: doc, display: 'fixture' });
    const cells = first.study!.grid.width * first.study!.grid.height;
    const pairs = doc.sites.features.reduce(
      (n, f) => n + (f.properties.allowedTypes?.length ?? doc.sensorTypes.length),
      0,
    );
    expect(pairs).toBe(6);
    const perFootprint = cells * 1 * 4;
    expect(e.footprintCacheInfo().limitBytes).toBe((1 + FOOTPRINT_CACHE_MARGIN) * pairs * perFootprint);
    // One sensor moved east step by step, 12 times: one new footprint per position, twice what the bound holds.
    const ref = { siteId: 'ridge-east', typeId: 'ssr-compact' };
    const at = (step: number): ScenarioDoc => ({
      ...doc,
      sites: {
        ...doc.sites,
        features: doc.sites.features.map((f) =>
          f.properties.id === ref.siteId
            ? { ...f, geometry: { ...f.geometry, coordinates: [-29.55 + 0.02 * step, -40.95] } }
            : f,
        ),
      },
    });
    const moves = 12;
    for (let step = 0; step < moves; step++) {
      e.setScenario(at(step), 'fixture');
      const r = await e.coverage([ref], undefined);
      expect(r.computed).toBe(1);
      const info = e.footprintCacheInfo();
      expect(info.bytes).toBe(info.entries * perFootprint);
      expect(info.bytes).toBeLessThanOrEqual(info.limitBytes);
    }
    // Without the bound the cache would hold all 12; with it, floor(1.25 × 6) = 7.
    expect(e.footprintCacheInfo().entries).toBe(Math.floor((1 + FOOTPRINT_CACHE_MARGIN) * pairs));
    // Least recently used out first: the position before last is still there, the first one is gone.
    e.setScenario(at(moves - 2), 'fixture');
    expect((await e.coverage([ref], undefined)).computed).toBe(0);
    e.setScenario(at(0), 'fixture');
    expect((await e.coverage([ref], undefined)).computed).toBe(1);
    // A network of every allowed pair (the most one study needs at once) computes and fits, moved site included.
    const all = doc.sites.features.flatMap((f) =>
      (f.properties.allowedTypes ?? doc.sensorTypes.map((t) => t.id)).map((typeId) => ({
        siteId: f.properties.id,
        typeId,
      })),
    );
    const full = await e.coverage(all, undefined);
    expect(full.computed + full.cached).toBe(pairs);
    expect(full.cached).toBe(1);
    const info = e.footprintCacheInfo();
    expect(info.bytes).toBeLessThanOrEqual(info.limitBytes);
    // The network of the moment stays whole: its outage figures read its footprints.
    expect(() => e.outageTally()).not.toThrow();
  });
});
