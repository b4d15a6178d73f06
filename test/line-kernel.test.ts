/**
 * The grid sweep's WebAssembly line kernel (worker/kernel/line-kernel.ts) against its JavaScript twins in
 * worker/core/grid-sweep.ts: the same floors bit for bit and the same counts, on rugged generated terrain with
 * antennas in the middle, near an edge and in a corner, with a window, in place, with holes of unknown terrain and
 * with a range cut. The exactness of the method itself is test/grid-sweep.test.ts's (against the exact ray walk);
 * this file makes sure the kernel changes nothing of it. Also: the committed bytes are those the source compiles to.
 */
import { describe, expect, it } from 'vitest';
import { fillProjected, testWorld } from '../worker/demo/synth-terrain.ts';
import { computeGridFloor, inlineExecutor, type GridFloorWindow } from '../worker/core/floor.ts';
import { lineKernel } from '../worker/core/line-kernel.ts';
import { LINE_KERNEL_WASM_BASE64 } from '../worker/core/line-kernel-wasm.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';
// @ts-expect-error: a plain ES module without types
import { compileKernel, kernelModuleText } from '../scripts/build-kernel.mjs';

const PIXEL_M = 30;

/** Both engines on a copy of `base` each; returns the floors and the counts. */
async function both(
  base: Float32Array,
  w: number,
  h: number,
  c0: number,
  r0: number,
  window: GridFloorWindow,
  extra: { maxRangeM?: number; kFactor?: number } = {},
) {
  const run = async (kernel: boolean) => {
    const data = base.slice();
    const terrain = metricTerrain(data, w, h, PIXEL_M);
    const site = cellLonLat(metricGeo(w, h, PIXEL_M), c0, r0);
    return computeGridFloor(
      terrain,
      { ...site, mastM: 12, kFactor: 4 / 3, ...extra },
      window,
      inlineExecutor(terrain),
      {
        kernel,
      },
    );
  };
  return { wasm: await run(true), js: await run(false) };
}

/** What a run counted (not how long it took). */
function counted(stats: { cells: number; valued: number; beyondRange: number; unknown: number }) {
  return { cells: stats.cells, valued: stats.valued, beyondRange: stats.beyondRange, unknown: stats.unknown };
}

/** The first cell where two floors differ (NaN equals NaN), or -1. */
function firstDifference(a: Float32Array, b: Float32Array): number {
  if (a.length !== b.length) return 0;
  for (let i = 0; i < a.length; i++)
    if (!Object.is(a[i], b[i]) && !(a[i] !== a[i] && b[i] !== b[i])) return i;
  return -1;
}

function terrainOf(
  w: number,
  h: number,
  seed: number,
  scenario: 'valley' | 'summit' | 'coast',
): Float32Array {
  const { world, antenna } = testWorld(seed, scenario);
  const data = new Float32Array(w * h);
  fillProjected(data, w, h, PIXEL_M, world, antenna.xM, antenna.yM);
  return data;
}

describe('the WebAssembly line kernel', () => {
  it('runs here (Node has WebAssembly with SIMD), so the comparisons below compare two engines', () => {
    expect(lineKernel(1 << 16)).not.toBeNull();
  });

  it('is the compiled form of worker/kernel/line-kernel.ts (npm run build:kernel after editing it)', async () => {
    const wasm: Buffer = await compileKernel();
    expect(Buffer.from(LINE_KERNEL_WASM_BASE64, 'base64').equals(wasm)).toBe(true);
    expect(typeof kernelModuleText(wasm)).toBe('string');
  }, 60_000);

  const cases: [string, number, number, number, number, 'valley' | 'summit' | 'coast'][] = [
    ['centre of a summit', 301, 301, 150, 150, 'summit'],
    ['near the west edge of a valley, a wide grid', 420, 260, 37, 120, 'valley'],
    ['the bottom-right corner of a coast', 257, 303, 250, 299, 'coast'],
  ];
  it.each(cases)(
    'gives the same floors and counts as the JavaScript twins: %s',
    async (_, w, h, c0, r0, sc) => {
      const base = terrainOf(w, h, 5, sc);
      const { wasm, js } = await both(base, w, h, c0, r0, {
        col0: 0,
        row0: 0,
        width: w,
        height: h,
        inPlace: false,
      });
      expect(firstDifference(wasm.floor, js.floor)).toBe(-1);
      expect(counted(wasm.stats)).toEqual(counted(js.stats));
      // The floors are not trivial: some cells are screened well above their ground.
      let screened = 0;
      for (let i = 0; i < base.length; i++) if (wasm.floor[i] > base[i] + 50) screened++;
      expect(screened).toBeGreaterThan(base.length * 0.02);
    },
  );

  it('the same in place, in a window, behind unknown terrain and at a range cut', async () => {
    const w = 333;
    const h = 280;
    const base = terrainOf(w, h, 9, 'valley');
    // Holes of unknown terrain: a block east of the antenna, and scattered single cells.
    for (let r = 100; r < 110; r++) for (let c = 200; c < 206; c++) base[r * w + c] = NaN;
    for (let i = 7; i < base.length; i += 997) base[i] = NaN;
    const c0 = 121;
    const r0 = 140;
    base[r0 * w + c0] = 300; // the antenna's own cell known
    const inPlace = await both(base, w, h, c0, r0, { col0: 0, row0: 0, width: w, height: h, inPlace: true });
    expect(firstDifference(inPlace.wasm.floor, inPlace.js.floor)).toBe(-1);
    expect(counted(inPlace.wasm.stats)).toEqual(counted(inPlace.js.stats));
    expect(inPlace.wasm.stats.unknown).toBeGreaterThan(100);
    const win = { col0: 50, row0: 30, width: 200, height: 111, inPlace: false };
    const part = await both(base, w, h, c0, r0, win);
    expect(firstDifference(part.wasm.floor, part.js.floor)).toBe(-1);
    expect(counted(part.wasm.stats)).toEqual(counted(part.js.stats));
    const cut = await both(
      base,
      w,
      h,
      c0,
      r0,
      { col0: 0, row0: 0, width: w, height: h, inPlace: false },
      {
        maxRangeM: 2500,
      },
    );
    expect(firstDifference(cut.wasm.floor, cut.js.floor)).toBe(-1);
    expect(counted(cut.wasm.stats)).toEqual(counted(cut.js.stats));
    expect(cut.wasm.stats.beyondRange).toBeGreaterThan(w * h * 0.5);
  });
});
