/**
 * The radial sweep's WebAssembly kernel (worker/kernel/radial-kernel.ts, run by horizon.ts `sweepPair` when the
 * terrain and the polar buffer lie in the terrain's WebAssembly memory) against the JavaScript sweep it stands in
 * for: the same screening tans bit for bit, and the same radial tails, on invented terrain over open ocean
 * (test/support/dem.ts) — a centre whose radials leave the raster, a corner, a hole of unknown terrain that stops
 * pairs part-way, and the circle cut into sectors as a pool cuts it. Then whole footprints, terrain in memory
 * against terrain in plain memory [calc: two engines].
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
// @ts-expect-error: a plain ES module without types
import { compileKernel, kernelModuleText } from '../scripts/build-kernel.mjs';
import { RADIAL_KERNEL_WASM_BASE64 } from '../worker/core/radial-kernel-wasm.ts';
import { growRegion, radialKernel, terrainMemory } from '../worker/core/radial-kernel.ts';
import {
  allocateTan,
  horizonBufferLength,
  planHorizon,
  sweepSector,
  tailsOf,
  type HorizonLayout,
} from '../worker/core/horizon.ts';
import { computeFootprints, type Candidate } from '../worker/core/coverage.ts';
import { inlineExecutor } from '../worker/core/floor.ts';
import type { GridGeo } from '../worker/core/grid.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { DEFAULT_TARGET } from '../worker/core/sensor.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { bumpyDem } from './support/bumps.ts';
import { cellLonLat, metricGeo, oceanBoxGeo } from './support/dem.ts';

const PIXEL_M = 90;

/** The same raster twice: in a fresh WebAssembly memory (with the kernel), and in a plain array. */
function terrains(geo: GridGeo, data: Float32Array): { inMemory: Terrain; plain: Terrain } {
  const memory = terrainMemory(data.length);
  if (memory === null) throw new Error('no WebAssembly memory here');
  const inside = new Float32Array(memory.buffer, 0, data.length);
  inside.set(data);
  return {
    inMemory: Terrain.fromParts({ geo, data: inside, warnings: [], sources: ['generated'], memory }),
    plain: Terrain.fromParts({ geo, data: data.slice(), warnings: [], sources: ['generated'] }),
  };
}

/** Stored samples (before each radial's tail) and tails that differ between two horizons of one layout. */
function differences(layout: HorizonLayout, a: Float32Array, b: Float32Array): number {
  const ia = new Int32Array(a.buffer, a.byteOffset, horizonBufferLength(layout));
  const ib = new Int32Array(b.buffer, b.byteOffset, horizonBufferLength(layout));
  const tails = tailsOf(layout, a);
  let diff = 0;
  for (const lv of layout.levels) {
    for (let i = 0; i < lv.azimuthCount; i++) {
      const tail = tails[lv.radialBase + i];
      for (let j = lv.jStart; j <= lv.jEnd && j < tail; j++) {
        const k = lv.offset + (j - lv.jStart) * lv.azimuthCount + i;
        if (ia[k] !== ib[k]) diff++;
      }
    }
  }
  for (let q = layout.totalSamples; q < ia.length; q++) if (ia[q] !== ib[q]) diff++;
  return diff;
}

/** Sweeps one site both ways, over the given sectors; returns the layout and the two buffers. */
function sweepBoth(
  inMemory: Terrain,
  plain: Terrain,
  site: { lon: number; lat: number },
  maxRangeM: number,
  cuts: number[],
) {
  // Radials 40 m apart at most: several levels within these small rasters.
  const layout = planHorizon(plain, { ...site, mastM: 25, maxRangeM, arcStepM: 40 });
  const len = horizonBufferLength(layout);
  const at = growRegion(inMemory.memory!, len * 4);
  expect(at).toBeGreaterThan(0);
  const tanK = new Float32Array(inMemory.memory!.buffer, at, len);
  const tanJ = allocateTan(layout);
  for (let s = 0; s + 1 < cuts.length; s++) {
    sweepSector(inMemory, layout, tanK, cuts[s], cuts[s + 1], undefined, true);
    sweepSector(plain, layout, tanJ, cuts[s], cuts[s + 1]);
  }
  return { layout, tanK, tanJ };
}

describe('the radial sweep kernel', () => {
  it('runs here (Node has WebAssembly with SIMD and threads), so the comparisons compare two engines', () => {
    const memory = terrainMemory(1024);
    expect(memory).not.toBeNull();
    expect(radialKernel(memory!)).not.toBeNull();
    // A raster larger than 3 GiB stays out of WebAssembly memory (room is left for the polar buffers).
    expect(terrainMemory(2 ** 30)).toBeNull();
  });

  it('is the compiled form of worker/kernel/radial-kernel.ts (npm run build:kernel after editing it)', async () => {
    const wasm: Buffer = await compileKernel('radial');
    expect(Buffer.from(RADIAL_KERNEL_WASM_BASE64, 'base64').equals(wasm)).toBe(true);
    expect(kernelModuleText(wasm, 'radial')).toBe(
      readFileSync(new URL('../worker/core/radial-kernel-wasm.ts', import.meta.url), 'utf8'),
    );
  }, 60_000);

  const W = 241;
  const H = 201;
  const cases: [string, number, number, number, number[]][] = [
    ['the centre, radials running off the raster', 120, 100, 16_000, [0, 1]],
    ['a corner, most radials off the raster at once', 7, 193, 9_000, [0, 1]],
    ['the centre, cut into three sectors as a pool cuts it', 120, 100, 12_000, [0, 0.3, 0.61, 1]],
    ['off centre, eight sectors', 150, 60, 8_000, [0, 0.125, 0.25, 0.375, 0.5, 0.625, 0.75, 0.875, 1]],
  ];
  it.each(cases)('gives the JavaScript sweep’s tans and tails bit for bit: %s', (_, c, r, range, cuts) => {
    const geo = metricGeo(W, H, PIXEL_M);
    const { inMemory, plain } = terrains(geo, bumpyDem(3, W, H));
    const { layout, tanK, tanJ } = sweepBoth(inMemory, plain, cellLonLat(geo, c, r), range, cuts);
    expect(layout.levels.length).toBeGreaterThan(1);
    expect(differences(layout, tanK, tanJ)).toBe(0);
    // The pairs ran: the kernel stopped at the end of a piece at least once.
    expect(radialKernel(inMemory.memory!)!.stoppedAt.value).toBeGreaterThan(0);
  });

  it('stops a pair at unknown terrain and goes on radial by radial, as the JavaScript sweep does', () => {
    const geo = metricGeo(W, H, PIXEL_M);
    const data = bumpyDem(9, W, H);
    // A block of unknown terrain east of the antenna, and a single unknown cell north of it.
    for (let r = 90; r < 110; r++) for (let c = 160; c < 175; c++) data[r * W + c] = NaN;
    data[40 * W + 121] = NaN;
    const { inMemory, plain } = terrains(geo, data);
    const { layout, tanK, tanJ } = sweepBoth(inMemory, plain, cellLonLat(geo, 120, 100), 14_000, [0, 1]);
    // Some radials stop at the hole, short of where they stop without it.
    const whole = terrains(geo, bumpyDem(9, W, H));
    const without = sweepBoth(whole.inMemory, whole.plain, cellLonLat(geo, 120, 100), 14_000, [0, 1]);
    const tails = tailsOf(layout, tanJ);
    const wholeTails = tailsOf(layout, without.tanJ);
    let short = 0;
    for (let i = 0; i < layout.radialCount; i++) if (tails[i] < wholeTails[i]) short++;
    expect(short).toBeGreaterThan(20);
    expect(differences(layout, tanK, tanJ)).toBe(0);
  });

  it('gives the same footprints when the terrain lies in WebAssembly memory', async () => {
    const geo = oceanBoxGeo();
    const data = bumpyDem(7, geo.width, geo.height);
    const { inMemory, plain } = terrains(geo, data);
    const catalog = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    const spec = catalog.find((t: { kind: string }) => t.kind === 'secondary');
    const model = buildSensorModel(spec, spec.id);
    const sites = [
      { id: 'a', name: 'Test buoy A', lon: -30.7, lat: -40.3, mastHeightM: 20 },
      { id: 'b', name: 'Test buoy B', lon: -30.1, lat: -40.6, mastHeightM: 35 },
    ];
    const candidates: Candidate[] = sites.map((site) => ({ site, model, target: DEFAULT_TARGET }));
    const req = { grid: geo, ground: data, candidates, kFactor: 4 / 3, maxRangeM: 40_000 };
    const grownBefore = inMemory.memory!.buffer.byteLength;
    const k = await computeFootprints(inMemory, req, inlineExecutor(inMemory));
    // The polar buffer was grown in the terrain's memory, so the kernel swept it.
    const grown = inMemory.memory!.buffer.byteLength;
    expect(grown).toBeGreaterThan(grownBefore);
    // A second call on the same terrain takes that buffer again instead of growing the memory.
    const again = await computeFootprints(inMemory, req, inlineExecutor(inMemory));
    expect(inMemory.memory!.buffer.byteLength).toBe(grown);
    expect(again.footprints.map((fp) => Array.from(fp.lo))).toEqual(
      k.footprints.map((fp) => Array.from(fp.lo)),
    );
    const j = await computeFootprints(plain, req, inlineExecutor(plain));
    expect(k.footprints.length).toBe(2);
    k.footprints.forEach((fp, i) => {
      expect(fp.window).toEqual(j.footprints[i].window);
      expect(Buffer.from(fp.lo.buffer, fp.lo.byteOffset, fp.lo.byteLength)).toEqual(
        Buffer.from(j.footprints[i].lo.buffer, j.footprints[i].lo.byteOffset, j.footprints[i].lo.byteLength),
      );
      expect(Buffer.from(fp.hi.buffer, fp.hi.byteOffset, fp.hi.byteLength)).toEqual(
        Buffer.from(j.footprints[i].hi.buffer, j.footprints[i].hi.byteOffset, j.footprints[i].hi.byteLength),
      );
      expect(fp.lo.some((l, q) => l <= fp.hi[q])).toBe(true);
    });
  });

  it('grows one polar buffer in the terrain’s memory for sites of different reach, sized for the largest', async () => {
    const geo = oceanBoxGeo();
    const data = bumpyDem(4, geo.width, geo.height);
    const catalog = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    const model = (id: string) =>
      buildSensorModel(
        catalog.find((t: { id: string }) => t.id === id),
        id,
      );
    // The shortest reach first (60 NM), then the longest (the 200 km cap), then one between (80 NM).
    const sites: [string, number, number, string][] = [
      ['a', -30.7, -40.3, 'psr-s-gapfiller'],
      ['b', -30.1, -40.6, 'ssr-mono-lva'],
      ['c', -29.8, -40.25, 'psr-s-terminal'],
    ];
    const candidates: Candidate[] = sites.map(([id, lon, lat, type]) => ({
      site: { id, name: `Test buoy ${id}`, lon, lat, mastHeightM: 20 },
      model: model(type),
      target: DEFAULT_TARGET,
    }));
    const grownBy = async (cands: Candidate[]) => {
      const { inMemory } = terrains(geo, data);
      const before = inMemory.memory!.buffer.byteLength;
      await computeFootprints(
        inMemory,
        { grid: geo, ground: data, candidates: cands, kFactor: 4 / 3, maxRangeM: 200_000 },
        inlineExecutor(inMemory),
      );
      return inMemory.memory!.buffer.byteLength - before;
    };
    const longest = await grownBy([candidates[1]]);
    const all = await grownBy(candidates);
    const shortest = await grownBy([candidates[0]]);
    // Sized for the first site alone, the buffer would have been grown again for the second: at least the first
    // site's buffer more. Up to two pages more are the range tables grown again for a longer sweep.
    expect(shortest).toBeGreaterThan(3 * 65_536);
    expect(all).toBeLessThanOrEqual(longest + 2 * 65_536);
  });
});
