/**
 * The outage figures counted once: the app's outage panel (headline, per-level table, loss layer) and the N−1 table
 * all come from `tally` over the cells whose volume requirement is lost. Worked by hand on four cells.
 *
 * One row of four cells, 0.1° square, over the open South Atlantic at 40° S 30° W (about 1 500 km from the nearest
 * land, Tristan da Cunha, from memory).
 * Volume V (weight 2) holds cells 0 and 1; volume U (weight 1) holds cells 0 and 3; both at FL100 and FL200,
 * requiring one site. Site A sees all four cells, site B only cell 1.
 *
 * A down, by hand: V loses cell 0 (cell 1 keeps B); U loses cells 0 and 3 — at each of the two levels. Cell 2 loses
 * coverage too but lies in no volume: it is not an outage loss. So the area losing a requirement is cells {0, 3}
 * at each level and over all levels; per (volume, level) V 1 cell, U 2 cells; demand weight
 * 2 levels × (2 × 1 cell + 1 × 2 cells) = 8 cell areas. B down loses nothing (A still sees cell 1).
 * Before, the panel's per-level table also counted cell 2 (3 cells at each level) while its headline said 2.
 */
import { describe, expect, it } from 'vitest';
import { NO_COVER_LO, wholeWindow, type Footprint } from '../worker/core/footprint.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Network } from '../worker/core/network.ts';
import { difference, outageTable, servedMasks, tally } from '../worker/core/outage.ts';
import type { VolumeLike } from '../worker/core/volumes.ts';

const GRID: GridGeo = {
  width: 4,
  height: 1,
  originX: -30,
  originY: -40,
  pixelX: 0.1,
  pixelY: -0.1,
  crs: WGS84_GEOGRAPHIC,
};
/**
 * One cell's area on the sphere of R = 6 371 008.8 m (the IUGG mean radius, @turf/area's): R²·Δλ·|sin φ₁ − sin φ₀|
 * (test/REFERENCES.md, "area of a band of the sphere") [calc].
 */
const R_KM = 6371.0088;
const DEG = Math.PI / 180;
const CELL_KM2 = R_KM * R_KM * 0.1 * DEG * Math.abs(Math.sin(-40 * DEG) - Math.sin(-40.1 * DEG));

const rect = (w: number, e: number): VolumeLike['polygon'] => ({
  type: 'Polygon',
  coordinates: [
    [
      [w, -40.1],
      [e, -40.1],
      [e, -40],
      [w, -40],
      [w, -40.1],
    ],
  ],
});
const V: VolumeLike = {
  id: 'v',
  name: 'V',
  polygon: rect(-30, -29.8),
  flMin: 100,
  flMax: 200,
  requiredFold: { any: 1 },
  weight: 2,
};
const U: VolumeLike = { ...V, id: 'u', name: 'U', polygon: rect(-30, -29.6), weight: 1 };
const MASKS = [Uint8Array.from([1, 1, 0, 0]), Uint8Array.from([1, 0, 0, 1])];
const FLS = [100, 200];
const ALTS = [3048, 6096];

const fp = (siteId: string, cover: number[]): Footprint => ({
  siteId,
  typeId: 't',
  kind: 'secondary',
  lo: Uint16Array.from(cover.map((c) => (c ? 0 : NO_COVER_LO))),
  hi: Uint16Array.from(cover.map((c) => (c ? 20_000 : 0))),
  window: wholeWindow(GRID.width, GRID.height),
});
const network = () => new Network(4, ALTS, [fp('a', [1, 1, 1, 1]), fp('b', [0, 1, 0, 0])]);

describe('outage figures', () => {
  it('count, with A down, the volume cells losing their requirement, once per level and once over all', () => {
    const net = network();
    const before = servedMasks(net, [V, U], MASKS, FLS);
    net.setSite('a', false);
    const t = tally(difference(before, servedMasks(net, [V, U], MASKS, FLS)), [V, U], GRID);
    expect(t.unionAreaKm2).toBeCloseTo(2 * CELL_KM2, 9);
    expect(t.byLevel).toEqual([
      { flightLevel: 100, areaKm2: expect.closeTo(2 * CELL_KM2, 9) },
      { flightLevel: 200, areaKm2: expect.closeTo(2 * CELL_KM2, 9) },
    ]);
    const cells = (id: string, fl: number) =>
      t.byVolume.find((x) => x.volumeId === id && x.flightLevel === fl)!.areaKm2Lost / CELL_KM2;
    expect([cells('v', 100), cells('u', 100), cells('v', 200), cells('u', 200)].map(Math.round)).toEqual([
      1, 2, 1, 2,
    ]);
    expect(t.demandWeight / CELL_KM2).toBeCloseTo(8, 9);
  });

  it('give the N−1 table the same figures as the panel for the same site', () => {
    const rows = outageTable(network(), [V, U], MASKS, FLS, GRID);
    const a = rows.find((r) => r.siteId === 'a')!;
    const b = rows.find((r) => r.siteId === 'b')!;
    expect(a.areaKm2Lost).toBeCloseTo(2 * CELL_KM2, 9);
    expect(a.demandWeightLost / CELL_KM2).toBeCloseTo(8, 9);
    // Every (volume, level) has its row, in the table as in outage.json, zeros included.
    expect(a.byVolume.map((x) => `${x.volumeId}|${x.flightLevel}`).sort()).toEqual([
      'u|100',
      'u|200',
      'v|100',
      'v|200',
    ]);
    expect(b.areaKm2Lost).toBe(0);
    expect(b.byVolume.every((x) => x.areaKm2Lost === 0)).toBe(true);
    expect(rows.map((r) => r.siteId)).toEqual(['a', 'b']); // worst first
  });

  it('count only the cells given, when given (a site’s own cells in the N−1 table)', () => {
    const diff = new Map([['v|100', Uint8Array.from([1, 1, 0, 0])]]);
    expect(tally(diff, [V], GRID, Int32Array.from([1])).unionAreaKm2).toBeCloseTo(CELL_KM2, 9);
    expect(tally(diff, [V], GRID).unionAreaKm2).toBeCloseTo(2 * CELL_KM2, 9);
  });
});
