/**
 * Flat sea: the floor is the radar-horizon relation. Sources: the effective-earth horizon
 * d ≈ √(2·Re·ha) + √(2·Re·h) (DESIGN §4; Skolnik, Introduction to Radar Systems, horizon on the 4/3 earth —
 * recalled from memory), and its exact spherical form: the tangent ray from the antenna grazes the sphere
 * of radius Re at arc Re·acos(Re/(Re+ha)) and reaches altitude h at a further arc Re·acos(Re/(Re+h)).
 * Check value (test/REFERENCES.md): antenna 30 m, target FL100 = 3048 m, k = 4/3 → ≈ 250.1 km.
 */
import { describe, expect, it } from 'vitest';
import { computeFloor, inlineExecutor } from '../worker/core/floor.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';
import { VectorMap } from '../worker/core/geodesy.ts';
import { gridMapper } from '../worker/core/grid.ts';

const R = 6_371_000;
const N = 1101;
const PIXEL_M = 500;
const C = (N - 1) / 2;

/** Exact floor on a smooth sphere: the altitude whose tangent-ray arc completes `s`. */
function exactFloor(s: number, ha: number, re: number): number {
  const s1 = re * Math.acos(re / (re + ha));
  const s2 = s - s1;
  return s2 <= 0 ? 0 : re / Math.cos(s2 / re) - re;
}

describe.each([1, 4 / 3])('flat sea, k = %s', (k) => {
  it('the floor matches the radar-horizon relation within 0.5 %', async () => {
    const data = new Float32Array(N * N); // sea surface: 0 m everywhere
    const terrain = metricTerrain(data, N, N, PIXEL_M);
    const geo = metricGeo(N, N, PIXEL_M);
    const site = cellLonLat(geo, C, C);
    const ha = 30;
    const re = k * R;
    const res = await computeFloor(
      terrain,
      { ...site, mastM: ha, kFactor: k },
      geo,
      data,
      inlineExecutor(terrain),
    );
    const vmap = VectorMap.build(site.lon, site.lat, N, N, gridMapper(geo));
    const v = [0, 0];
    let worstExact = 0;
    let worstApprox = 0;
    let checked = 0;
    for (let r = 0; r < N; r += 7) {
      for (let c = 0; c < N; c += 7) {
        vmap.at(c + 0.5, r + 0.5, v);
        const s = Math.hypot(v[0], v[1]);
        const f = res.floor[r * N + c];
        const exact = exactFloor(s, ha, re);
        if (exact < 200 || s > 270_000) continue;
        const approx = (s - Math.sqrt(2 * re * ha)) ** 2 / (2 * re);
        worstExact = Math.max(worstExact, Math.abs(f - exact) / exact);
        worstApprox = Math.max(worstApprox, Math.abs(f - approx) / approx);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(1000);
    expect(worstExact).toBeLessThan(0.005);
    expect(worstApprox).toBeLessThan(0.005);
  });
});

it('the product puts FL100 at the radar horizon ≈ 250.1 km for a 30 m antenna on the 4/3 earth (test/REFERENCES.md)', async () => {
  // The check value (Skolnik, horizon on the 4/3 earth [memory]) against the engine's own floor, cell by cell
  // around 250.1 km: within 1 % of 3048 m there.
  const k = 4 / 3;
  const data = new Float32Array(N * N);
  const terrain = metricTerrain(data, N, N, PIXEL_M);
  const geo = metricGeo(N, N, PIXEL_M);
  const site = cellLonLat(geo, C, C);
  const res = await computeFloor(
    terrain,
    { ...site, mastM: 30, kFactor: k },
    geo,
    data,
    inlineExecutor(terrain),
  );
  const vmap = VectorMap.build(site.lon, site.lat, N, N, gridMapper(geo));
  const v = [0, 0];
  let checked = 0;
  for (let r = 0; r < N; r++) {
    for (let c = 0; c < N; c++) {
      vmap.at(c + 0.5, r + 0.5, v);
      const sM = Math.hypot(v[0], v[1]);
      if (Math.abs(sM - 250_100) > 250) continue;
      expect(Math.abs(res.floor[r * N + c] - 3048) / 3048).toBeLessThan(0.01);
      checked++;
    }
  }
  expect(checked).toBeGreaterThan(100);
});
