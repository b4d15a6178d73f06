/**
 * The engine against the exact reference (Franklin & Ray 1994, R3: test/reference/raywalk.ts) on generated
 * DEMs, for antennas in a valley, on a summit and on a coast: target visibility at 500, 1000, 1500 and
 * 3000 m AMSL (visible iff altitude ≥ ground and ≥ floor) must agree on ≥ 99.9 % of cells, and the median
 * |floor error| over cells where the reference floor is above the ground must be ≤ 5 m.
 */
import { describe, expect, it } from 'vitest';
import { computeFloor, inlineExecutor } from '../worker/core/floor.ts';
import { fillProjected, testWorld } from '../worker/demo/synth-terrain.ts';
import { rayWalkFloorGrid } from './reference/raywalk.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';
import { scoreFloor } from './support/floor-accuracy.ts';

const N = 360;
const PIXEL_M = 30;
const K = 4 / 3;
const R = 6_371_000;

describe.each(['valley', 'summit', 'coast'] as const)('antenna %s', (scenario) => {
  it('agrees with the exact ray walk', async () => {
    const { world, antenna } = testWorld(7, scenario);
    const data = new Float32Array(N * N);
    // Centre the grid on the antenna so its rays run out in every direction.
    fillProjected(data, N, N, PIXEL_M, world, antenna.xM, antenna.yM);
    const terrain = metricTerrain(data, N, N, PIXEL_M);
    const geo = metricGeo(N, N, PIXEL_M);
    const c0 = N / 2;
    const r0 = N / 2;
    const site = cellLonLat(geo, c0, r0);
    const mastM = 15;
    const res = await computeFloor(
      terrain,
      { ...site, mastM, kFactor: K },
      geo,
      data,
      inlineExecutor(terrain),
    );
    const ref = rayWalkFloorGrid({
      data,
      width: N,
      height: N,
      pixelM: PIXEL_M,
      ox: c0 + 0.5,
      oy: r0 + 0.5,
      antennaAltM: data[r0 * N + c0] + mastM,
      reM: K * R,
    });
    const { errors, median, p95, agreement } = scoreFloor(data, res.floor, ref, [500, 1000, 1500, 3000]);
    console.log(
      `${scenario}: shadowed ${errors.length} cells, median |floor error| ${median.toFixed(2)} m, p95 ${p95.toFixed(1)} m; agreement ${agreement.map((a) => (100 * a).toFixed(3) + '%').join(' ')}`,
    );
    expect(errors.length).toBeGreaterThan(N * N * 0.05); // the scene really has shadows to get right
    expect(median).toBeLessThanOrEqual(5);
    for (const a of agreement) expect(a).toBeGreaterThanOrEqual(0.999);
  });
});
