/** Invariants of the horizon engine, checked with fast-check on seeded random landscapes. */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { computeFloor, inlineExecutor } from '../worker/core/floor.ts';
import {
  allocateTan,
  computeHorizon,
  planHorizon,
  resampleFloor,
  sampleAt,
  sweepSector,
  tailsOf,
  traceRadial,
} from '../worker/core/horizon.ts';
import { pseudoToAzimuthRad, VectorMap } from '../worker/core/geodesy.ts';
import { gridMapper } from '../worker/core/grid.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { bumpyDem } from './support/bumps.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';

const N = 61; // odd: the antenna sits on the centre cell, on the grid's central meridian
const PIXEL_M = 90;
const C = (N - 1) / 2;

async function floorOf(data: Float32Array, mastM: number, terrain = metricTerrain(data, N, N, PIXEL_M)) {
  const geo = metricGeo(N, N, PIXEL_M);
  const site = cellLonLat(geo, C, C);
  return (await computeFloor(terrain, { ...site, mastM }, geo, data, inlineExecutor(terrain))).floor;
}

const seeds = fc.integer({ min: 1, max: 2 ** 31 - 1 });

describe('horizon engine invariants', () => {
  it('the screening angle never decreases outward along a radial', () => {
    fc.assert(
      fc.property(seeds, fc.double({ min: 0, max: 80, noNaN: true }), (seed, mastM) => {
        const data = bumpyDem(seed, N, N);
        const terrain = metricTerrain(data, N, N, PIXEL_M);
        const site = cellLonLat(terrain.geo, C, C);
        const h = computeHorizon(terrain, { ...site, mastM, maxRangeM: (N / 2) * PIXEL_M * 1.5 });
        for (let li = 0; li < h.layout.levels.length; li++) {
          const lv = h.layout.levels[li];
          for (let i = 0; i < lv.azimuthCount; i++) {
            for (let j = lv.jStart + 1; j <= lv.jEnd; j++) {
              const a = sampleAt(h, li, i, j - 1);
              const b = sampleAt(h, li, i, j);
              if (a === a && b === b && b < a) return false;
            }
          }
        }
        return true;
      }),
      { numRuns: 15, seed: 11 },
    );
  });

  it('raising the antenna never raises the floor', async () => {
    await fc.assert(
      fc.asyncProperty(
        seeds,
        fc.double({ min: 0, max: 50, noNaN: true }),
        fc.double({ min: 0.5, max: 100, noNaN: true }),
        async (seed, low, extra) => {
          const data = bumpyDem(seed, N, N);
          const a = await floorOf(data, low);
          const b = await floorOf(data, low + extra);
          for (let i = 0; i < a.length; i++) if (b[i] > a[i] + 1e-3 + 1e-6 * Math.abs(a[i])) return false;
          return true;
        },
      ),
      { numRuns: 15, seed: 12 },
    );
  });

  it('mirrored terrain gives a mirrored floor', async () => {
    await fc.assert(
      fc.asyncProperty(seeds, async (seed) => {
        const data = bumpyDem(seed, N, N);
        const mirrored = new Float32Array(N * N);
        for (let r = 0; r < N; r++)
          for (let c = 0; c < N; c++) mirrored[r * N + c] = data[r * N + (N - 1 - c)];
        const a = await floorOf(data, 20);
        const b = await floorOf(mirrored, 20);
        for (let r = 0; r < N; r++) {
          for (let c = 0; c < N; c++) {
            const x = a[r * N + c];
            const y = b[r * N + (N - 1 - c)];
            if (Math.abs(x - y) > 0.01 + 1e-5 * Math.abs(x)) return false;
          }
        }
        return true;
      }),
      { numRuns: 15, seed: 13 },
    );
  });

  it('adding a tile that only repeats known terrain changes nothing', async () => {
    await fc.assert(
      fc.asyncProperty(
        seeds,
        fc.integer({ min: 0, max: N - 10 }),
        fc.integer({ min: 0, max: N - 10 }),
        async (seed, c0, r0) => {
          const data = bumpyDem(seed, N, N);
          const geo = metricGeo(N, N, PIXEL_M);
          // A second tile: a window of the first, on the same lattice.
          const w = 10;
          const sub = new Float32Array(w * w);
          for (let r = 0; r < w; r++)
            for (let c = 0; c < w; c++) sub[r * w + c] = data[(r + r0) * N + c + c0];
          const subGeo = {
            ...geo,
            width: w,
            height: w,
            originX: geo.originX + c0 * PIXEL_M,
            originY: geo.originY - r0 * PIXEL_M,
          };
          const one = Terrain.fromTiles([{ name: 'a', geo, data, voidsFilled: 0, warnings: [] }]);
          const two = Terrain.fromTiles([
            { name: 'a', geo, data, voidsFilled: 0, warnings: [] },
            { name: 'b', geo: subGeo, data: sub, voidsFilled: 0, warnings: [] },
          ]);
          const a = await floorOf(data, 20, one);
          const b = await floorOf(data, 20, two);
          return a.every((v, i) => Object.is(v, b[i]));
        },
      ),
      { numRuns: 10, seed: 14 },
    );
  });
});

describe('unknown terrain', () => {
  it('a sight line crossing terrain no tile covers is reported unknown, never treated as sea level', async () => {
    const data = bumpyDem(5, N, N);
    // A hole in the mosaic: a band of columns east of the antenna with no tile.
    const holed = data.slice();
    for (let r = 0; r < N; r++) for (let c = C + 8; c < C + 12; c++) holed[r * N + c] = NaN;
    const terrain = metricTerrain(holed, N, N, PIXEL_M);
    const geo = metricGeo(N, N, PIXEL_M);
    const site = cellLonLat(geo, C, C);
    const res = await computeFloor(terrain, { ...site, mastM: 20 }, geo, holed, inlineExecutor(terrain));
    // Straight east, beyond the hole: unknown.
    expect(res.floor[C * N + C + 20]).toBeNaN();
    // West of the antenna: known.
    expect(res.floor[C * N + C - 20]).not.toBeNaN();
    expect(res.stats.unknown).toBeGreaterThan(0);
    expect(res.stats.valued + res.stats.unknown + res.stats.beyondRange).toBe(N * N);
  });
});

describe('horizon cache', () => {
  it('same inputs reuse the horizon; any changed input recomputes it', async () => {
    const { HorizonCache } = await import('../worker/core/horizon-cache.ts');
    const data = bumpyDem(9, N, N);
    const terrain = metricTerrain(data, N, N, PIXEL_M);
    const geo = metricGeo(N, N, PIXEL_M);
    const site = cellLonLat(geo, C, C);
    const inline = inlineExecutor(terrain);
    let sweeps = 0;
    const counting = {
      ...inline,
      sweep: (...a: Parameters<typeof inline.sweep>) => (sweeps++, inline.sweep(...a)),
    };
    const cache = new HorizonCache();
    const a = await computeFloor(terrain, { ...site, mastM: 20 }, geo, data, counting, { cache });
    const b = await computeFloor(terrain, { ...site, mastM: 20 }, geo, data, counting, { cache });
    expect(sweeps).toBe(1);
    expect(b.horizon).toBe(a.horizon);
    expect(b.floor).toEqual(a.floor);
    await computeFloor(terrain, { ...site, mastM: 21 }, geo, data, counting, { cache });
    await computeFloor(terrain, { ...site, mastM: 20, kFactor: 1 }, geo, data, counting, { cache });
    const other = metricTerrain(data.slice(), N, N, PIXEL_M);
    await computeFloor(other, { ...site, mastM: 20 }, geo, data, inlineExecutor(other), { cache });
    expect(sweeps).toBe(3);
    // A tiny budget keeps only the newest entry.
    const small = new HorizonCache(1);
    await computeFloor(terrain, { ...site, mastM: 20 }, geo, data, counting, { cache: small });
    await computeFloor(terrain, { ...site, mastM: 22 }, geo, data, counting, { cache: small });
    await computeFloor(terrain, { ...site, mastM: 20 }, geo, data, counting, { cache: small });
    expect(sweeps).toBe(6);
  });
});

describe('horizon sweep paths', () => {
  it('along each radial the sweep stores the steepest terrain elevation so far: a plain re-walk of its own positions', () => {
    // The sweep steps most of a radial on a fast path without edge tests (horizon.ts insideRaster): walked again
    // here plainly from the positions the sweep's general loop traces, with terrain holes and radials that leave
    // the raster, so both paths and the stop at unknown terrain are compared sample by sample.
    const n = 161;
    const data = bumpyDem(5, n, n);
    for (let r = 100; r < 112; r++) for (let c = 20; c < 60; c++) data[r * n + c] = NaN;
    const terrain = metricTerrain(data, n, n, PIXEL_M);
    const site = cellLonLat(terrain.geo, 50, 70);
    const horizon = computeHorizon(terrain, { ...site, mastM: 15, maxRangeM: 140 * PIXEL_M });
    const { layout } = horizon;
    const re = layout.reM;
    const rha = re + layout.antennaAltM;
    const ds = layout.rangeStepM;
    const jNear = Math.ceil(layout.nearFieldM / ds);
    const n0 = layout.levels[0].azimuthCount;
    /** The stored tan before sample j of level-0 radial i (radial i·2^L of level L; NaN past its tail). */
    const stored = (i: number, j: number) => {
      const L = layout.levels.findIndex((lv) => j >= lv.jStart && j <= lv.jEnd);
      return sampleAt(horizon, L, i * 2 ** L, j);
    };
    const terrainAt = (x: number, y: number) => {
      if (x < 0 || y < 0 || x > n || y > n) return NaN;
      const gx = Math.min(Math.max(x - 0.5, 0), n - 1);
      const gy = Math.min(Math.max(y - 0.5, 0), n - 1);
      const ix = Math.min(Math.floor(gx), n - 2);
      const iy = Math.min(Math.floor(gy), n - 2);
      const fx = gx - ix;
      const fy = gy - iy;
      const k = iy * n + ix;
      const top = data[k] + (data[k + 1] - data[k]) * fx;
      const bot = data[k + n] + (data[k + n + 1] - data[k + n]) * fx;
      return top + (bot - top) * fy;
    };
    let compared = 0;
    let unknown = 0;
    for (let i = 0; i < n0; i += 3) {
      const trace = traceRadial(terrain, layout, pseudoToAzimuthRad((i / n0) * 2 * Math.PI));
      // The near field's own finer walk is taken as given; from its end on, every sample is walked again.
      let T: number = stored(i, jNear);
      for (let j = jNear; j < layout.rangeCount - 1; j++) {
        const got = stored(i, j);
        if (T !== T) {
          expect(got).toBeNaN();
          unknown++;
        } else {
          expect(Math.abs(got - T)).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(T)));
          compared++;
        }
        const z = terrainAt(trace[2 * j], trace[2 * j + 1]);
        const s = j * ds;
        const t = ((re + z) * Math.cos(s / re) - rha) / ((re + z) * Math.sin(s / re));
        if (z !== z) T = NaN;
        else if (t > T) T = t;
      }
    }
    expect(compared).toBeGreaterThan(10_000);
    expect(unknown).toBeGreaterThan(1_000);
  });

  it("a reused buffer gives the same floor: samples past a radial's tail are never read, whatever they hold", () => {
    // The sweep records where each radial met unknown terrain (its tail) instead of storing the rest as NaN; a
    // buffer that held another horizon before must give the same floor as a fresh one.
    const n = 121;
    const data = bumpyDem(9, n, n);
    for (let r = 0; r < n; r++) for (let c = 90; c < n; c++) data[r * n + c] = NaN; // the east is unknown
    const terrain = metricTerrain(data, n, n, PIXEL_M);
    const geo = metricGeo(n, n, PIXEL_M);
    const site = cellLonLat(geo, 60, 60);
    const layout = planHorizon(terrain, { ...site, mastM: 10, maxRangeM: 100 * PIXEL_M });
    const fresh = allocateTan(layout);
    const reused = allocateTan(layout).fill(0.25); // a steep screening everywhere: would raise every floor read
    sweepSector(terrain, layout, fresh);
    sweepSector(terrain, layout, reused);
    const tails = tailsOf(layout, reused);
    let short = 0;
    for (const lv of layout.levels) {
      for (let i = 0; i < lv.azimuthCount; i++) if (tails[lv.radialBase + i] <= lv.jEnd) short++;
    }
    expect(short).toBeGreaterThan(100); // radials that stopped at the unknown east
    const vmap = VectorMap.build(site.lon, site.lat, n, n, gridMapper(geo));
    const a = new Float32Array(n * n);
    const b = new Float32Array(n * n);
    resampleFloor({ layout, tan: fresh }, vmap, a, data);
    resampleFloor({ layout, tan: reused }, vmap, b, data);
    let valued = 0;
    for (let k = 0; k < a.length; k++) {
      expect(Object.is(a[k], b[k]) || (a[k] !== a[k] && b[k] !== b[k])).toBe(true);
      if (a[k] === a[k]) valued++;
    }
    expect(valued).toBeGreaterThan(5_000);
    // sampleAt says NaN past a tail, whatever the buffer holds there.
    const lv = layout.levels[layout.levels.length - 1];
    for (let i = 0; i < lv.azimuthCount; i++) {
      const t = tails[lv.radialBase + i];
      if (t <= lv.jEnd) expect(sampleAt({ layout, tan: reused }, layout.levels.length - 1, i, t)).toBeNaN();
    }
  });
});
