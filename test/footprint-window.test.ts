/**
 * Footprints kept to the area a site can see: the range box (`rangeWindow`, worker/core/coverage.ts) and what
 * reads footprints through their window — the network (worker/core/network.ts) and the planner's cover lists
 * (`coveredPoints`, worker/io/study.ts).
 *
 * Outside yardsticks, each named beside its check:
 * - Exact WGS84 ground distances: geographiclib-geodesic, the reference implementation of C. F. F. Karney,
 *   "Algorithms for geodesics", J. Geodesy 87 (2013) 43–55. Every cell centre within range must lie in the box.
 * - The network and the cover lists with windows must equal the same computed from the whole raster (the
 *   definition: a cell is covered at altitude h iff lo ≤ h ≤ hi), on random footprints that are empty outside
 *   their window.
 * Grids sit over open ocean (the South Atlantic, and the Southern Ocean for the high-latitude case).
 */
import fc from 'fast-check';
import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { rangeWindow } from '../worker/core/coverage.ts';
import {
  coversAt,
  hiAt,
  loAt,
  NO_COVER_LO,
  wholeWindow,
  type Footprint,
  type FootprintWindow,
} from '../worker/core/footprint.ts';
import { gridFootprint } from './support/footprints.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Network } from '../worker/core/network.ts';
import { coveredPoints, type Demand } from '../worker/io/study.ts';
import { SENSOR_KINDS } from '../shared/sensor-kinds.ts';

const WGS84 = geodesic.Geodesic.WGS84;

function grid(west: number, north: number, cellDeg: number, width: number, height: number): GridGeo {
  return {
    width,
    height,
    originX: west,
    originY: north,
    pixelX: cellDeg,
    pixelY: -cellDeg,
    crs: WGS84_GEOGRAPHIC,
  };
}

describe('rangeWindow', () => {
  const cases = [
    { name: 'mid-latitude, 400 km', g: grid(-34, -37, 0.05, 200, 200), lon: -29.3, lat: -41.7, r: 400_000 },
    {
      name: 'near the grid corner, 150 km',
      g: grid(-34, -37, 0.05, 200, 200),
      lon: -33.8,
      lat: -37.2,
      r: 150_000,
    },
    { name: 'high latitude, 300 km', g: grid(-40, -60, 0.1, 200, 120), lon: -30.1, lat: -66.4, r: 300_000 },
    {
      name: 'site off the grid, 250 km',
      g: grid(-34, -37, 0.05, 120, 120),
      lon: -36.5,
      lat: -40.0,
      r: 250_000,
    },
  ];
  for (const c of cases) {
    it(`holds every cell centre within range (${c.name}; exact geodesics, Karney 2013)`, () => {
      const w = rangeWindow(c.g, { lon: c.lon, lat: c.lat }, c.r);
      let inRange = 0;
      for (let r = 0; r < c.g.height; r += 1) {
        const lat = c.g.originY + (r + 0.5) * c.g.pixelY;
        for (let col = 0; col < c.g.width; col += 1) {
          const lon = c.g.originX + (col + 0.5) * c.g.pixelX;
          const s = WGS84.Inverse(c.lat, c.lon, lat, lon).s12 as number;
          if (s > c.r) continue;
          inRange++;
          expect(r >= w.row0 && r < w.row1 && col >= w.col0 && col < w.col1).toBe(true);
        }
      }
      expect(inRange).toBeGreaterThan(0);
      // The box is a box around the range, not the whole grid (the first three cases leave cells out).
      if (c.r <= 300_000) expect((w.row1 - w.row0) * (w.col1 - w.col0)).toBeLessThan(c.g.width * c.g.height);
    });
  }

  it('is empty for a negative range and the whole grid for a projected one', () => {
    const g = grid(-34, -37, 0.05, 50, 40);
    const empty = rangeWindow(g, { lon: -33, lat: -38 }, -1);
    expect(empty.row1 - empty.row0).toBe(0);
    const projected: GridGeo = { ...g, crs: { ...WGS84_GEOGRAPHIC, kind: 'projected' } as GridGeo['crs'] };
    expect(rangeWindow(projected, { lon: -33, lat: -38 }, 1000)).toEqual({
      row0: 0,
      row1: 40,
      col0: 0,
      col1: 50,
      width: 50,
    });
  });
});

/** A random footprint on a W × H raster, covered only inside a random window (or anywhere without one). */
function footprintArb(W: number, H: number, siteIds: string[]) {
  return fc
    .record({
      site: fc.constantFrom(...siteIds),
      kind: fc.constantFrom('primary' as const, 'secondary' as const),
      windowed: fc.boolean(),
      r0: fc.integer({ min: 0, max: H }),
      r1: fc.integer({ min: 0, max: H }),
      c0: fc.integer({ min: 0, max: W }),
      c1: fc.integer({ min: 0, max: W }),
      lo: fc.array(fc.integer({ min: 0, max: 3000 }), { minLength: W * H, maxLength: W * H }),
      span: fc.array(fc.integer({ min: -500, max: 4000 }), { minLength: W * H, maxLength: W * H }),
    })
    .map((x): Footprint => {
      const window: FootprintWindow = {
        row0: Math.min(x.r0, x.r1),
        row1: Math.max(x.r0, x.r1),
        col0: Math.min(x.c0, x.c1),
        col1: Math.max(x.c0, x.c1),
        width: W,
      };
      const lo = new Uint16Array(W * H).fill(NO_COVER_LO);
      const hi = new Uint16Array(W * H);
      for (let c = 0; c < W * H; c++) {
        const r = (c / W) | 0;
        const col = c - r * W;
        const inside =
          !x.windowed || (r >= window.row0 && r < window.row1 && col >= window.col0 && col < window.col1);
        if (!inside || x.span[c] < 0) continue;
        lo[c] = x.lo[c];
        hi[c] = x.lo[c] + x.span[c];
      }
      return gridFootprint(
        { siteId: x.site, typeId: x.kind, kind: x.kind },
        lo,
        hi,
        W,
        H,
        x.windowed ? window : undefined,
      );
    });
}

/** The same footprint over the whole raster (its window's cells, no cover elsewhere). */
const unwindowed =
  (height: number) =>
  (fp: Footprint): Footprint => {
    const n = fp.window.width * height;
    const lo = new Uint16Array(n);
    const hi = new Uint16Array(n);
    for (let c = 0; c < n; c++) {
      lo[c] = loAt(fp, c);
      hi[c] = hiAt(fp, c);
    }
    return { ...fp, lo, hi, window: wholeWindow(fp.window.width, height) };
  };

describe('reading footprints through their windows', () => {
  const W = 9;
  const H = 7;
  const altitudes = [300, 1500, 3000];

  it('the network is the one of the whole rasters (folds, floor, site cells)', () => {
    fc.assert(
      fc.property(fc.array(footprintArb(W, H, ['a', 'b', 'c']), { minLength: 1, maxLength: 5 }), (fps) => {
        const a = new Network(W * H, altitudes, fps);
        const b = new Network(W * H, altitudes, fps.map(unwindowed(H)));
        expect(a.fold).toEqual(b.fold);
        expect(a.networkFloor()).toEqual(b.networkFloor());
        for (const id of a.siteIds()) {
          expect(a.siteCells(id)).toEqual(b.siteCells(id));
          a.setSite(id, false);
          b.setSite(id, false);
          expect(a.fold).toEqual(b.fold);
          a.setSite(id, true);
          b.setSite(id, true);
        }
      }),
      { numRuns: 60 },
    );
  });

  it('cover lists are those of the definition (lo ≤ h ≤ hi per point), in increasing order; with a kind, only the blocks that count it', () => {
    fc.assert(
      fc.property(
        footprintArb(W, H, ['a']),
        fc.array(
          fc.tuple(
            fc.integer({ min: 0, max: 2 }),
            fc.uniqueArray(fc.integer({ min: 0, max: W * H - 1 })),
            // the block's counting kinds: bits 1 … 4 (FOLD_KINDS slots of primary … mlat)
            fc.integer({ min: 0, max: 15 }).map((b) => b << 1),
          ),
          {
            minLength: 1,
            maxLength: 4,
          },
        ),
        fc.constantFrom(...SENSOR_KINDS),
        (fp, blocks, kind) => {
          const cell: number[] = [];
          const level: number[] = [];
          const blockStart = [0];
          for (const [f, cells] of blocks) {
            for (const c of [...cells].sort((x, y) => x - y)) {
              cell.push(c);
              level.push(f);
            }
            blockStart.push(cell.length);
          }
          const n = cell.length;
          const d: Demand = {
            instancePoints: {
              count: n,
              weight: new Float64Array(n).fill(1),
              reqAny: new Uint8Array(n).fill(1),
              reqPrimary: new Uint8Array(n),
              reqSecondary: new Uint8Array(n),
            },
            volume: new Uint16Array(n),
            target: new Uint8Array(n),
            cell: Uint32Array.from(cell),
            level: Uint8Array.from(level),
            blockStart: Uint32Array.from(blockStart),
            blockLevel: Uint8Array.from(blocks.map((b) => b[0])),
            blockTarget: new Uint8Array(blocks.length),
            blockKinds: Uint8Array.from(blocks.map((b) => b[2])),
          };
          const expected: number[] = [];
          const ofKind: number[] = [];
          const slot = 1 + SENSOR_KINDS.indexOf(kind);
          blocks.forEach((b, i) => {
            for (let p = blockStart[i]; p < blockStart[i + 1]; p++) {
              if (!coversAt(fp, cell[p], altitudes[level[p]])) continue;
              expected.push(p);
              if (b[2] & (1 << slot)) ofKind.push(p);
            }
          });
          expect([...coveredPoints(fp, d, altitudes)]).toEqual(expected);
          expect([...coveredPoints(fp, d, altitudes, kind)]).toEqual(ofKind);
        },
      ),
      { numRuns: 200 },
    );
  });
});
