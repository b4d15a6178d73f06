/**
 * Geodesy of the horizon engine. Reference: exact WGS84 geodesics from geographiclib-geodesic, the reference
 * implementation of Karney, "Algorithms for geodesics", J. Geodesy 87 (2013). The engine tabulates exact
 * geodesics coarsely and interpolates; every range sample the sweep takes must lie within 1 m of the exact
 * direct geodesic out to 500 km, and the inverse table (cell → distance, azimuth) within 1 m too.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import geodesic from 'geographiclib-geodesic';
import { pseudoAngle, pseudoToAzimuthRad, VectorMap } from '../worker/core/geodesy.ts';
import { planHorizon, traceRadial } from '../worker/core/horizon.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { gridMapper, WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';

const WGS84 = geodesic.Geodesic.WGS84;

function terrainAround(geo: GridGeo): Terrain {
  return Terrain.fromParts({
    geo,
    data: new Float32Array(geo.width * geo.height).fill(100),
    warnings: [],
    sources: ['flat'],
  });
}

const SITES: { name: string; geo: GridGeo; lon: number; lat: number }[] = [
  {
    name: 'geographic grid, 41.5° S',
    lon: -29.5,
    lat: -41.5,
    geo: {
      width: 20,
      height: 20,
      originX: -29.6,
      originY: -41.4,
      pixelX: 0.01,
      pixelY: -0.01,
      crs: WGS84_GEOGRAPHIC,
    },
  },
  {
    // High latitude, northern hemisphere: open Norwegian Sea, about 470 km from the nearest land.
    name: 'geographic grid, 68° N',
    lon: 1.0,
    lat: 68.0,
    geo: {
      width: 20,
      height: 20,
      originX: 0.9,
      originY: 68.1,
      pixelX: 0.01,
      pixelY: -0.01,
      crs: WGS84_GEOGRAPHIC,
    },
  },
  {
    name: 'UTM 26S grid',
    lon: -27.2,
    lat: -40.5,
    geo: {
      width: 40,
      height: 40,
      originX: 482_000,
      originY: 5_517_000,
      pixelX: 1000,
      pixelY: -1000,
      crs: {
        kind: 'projected',
        proj4: '+proj=utm +zone=26 +south +datum=WGS84 +units=m +no_defs',
        epsg: 32726,
        label: 'EPSG:32726',
      },
    },
  },
];

describe.each(SITES)('radial samples on a $name', ({ geo, lon, lat }) => {
  it('lie within 1 m of the exact direct geodesic out to 500 km', () => {
    const terrain = terrainAround(geo);
    const layout = planHorizon(terrain, { lon, lat, mastM: 10, maxRangeM: 500_000, rangeStepM: 250 });
    const ll = [0, 0];
    let worst = 0;
    for (let a = 0; a < 64; a++) {
      // Real radials sit at pseudo-angle steps; use their true azimuths.
      const az = pseudoToAzimuthRad((a / 64) * 2 * Math.PI + 0.013);
      const trace = traceRadial(terrain, layout, az);
      const line = WGS84.DirectLine(lat, lon, (az * 180) / Math.PI, 500_000);
      for (let j = 1; j < layout.rangeCount; j += 37) {
        const s = j * layout.rangeStepM;
        if (s > 500_000) break;
        terrain.pixelToLonLat(trace[2 * j], trace[2 * j + 1], ll);
        const exact = line.Position(s);
        const d = WGS84.Inverse(exact.lat2 as number, exact.lon2 as number, ll[1], ll[0]).s12 as number;
        worst = Math.max(worst, d);
      }
    }
    expect(worst).toBeLessThan(1);
  });

  it('the inverse table gives distance and azimuth within 1 m at the cell centres of a 1000 km grid', () => {
    // An output grid 1000 km wide around the site, in the site's CRS family.
    const out: GridGeo =
      geo.crs.kind === 'geographic'
        ? {
            ...geo,
            width: 4000,
            height: 1800,
            originX: lon - 10,
            originY: lat + 4.5,
            pixelX: 0.005,
            pixelY: -0.005,
          }
        : {
            ...geo,
            width: 1000,
            height: 1000,
            originX: geo.originX - 500_000,
            originY: geo.originY + 500_000,
            pixelX: 1000,
            pixelY: -1000,
          };
    const mapper = gridMapper(out);
    const vmap = VectorMap.build(lon, lat, out.width, out.height, mapper);
    const v = [0, 0];
    const ll = [0, 0];
    fc.assert(
      fc.property(fc.nat(out.width - 1), fc.nat(out.height - 1), (col, row) => {
        const x = col + 0.5;
        const y = row + 0.5;
        vmap.at(x, y, v);
        mapper.pixelToLonLat(x, y, ll);
        const r = WGS84.Inverse(lat, lon, ll[1], ll[0]);
        const s = r.s12 as number;
        const az = ((r.azi1 as number) * Math.PI) / 180;
        const err = Math.hypot(v[0] - s * Math.sin(az), v[1] - s * Math.cos(az));
        return err < 1;
      }),
      { numRuns: 300, seed: 42 },
    );
  });

  it('a table of a window of cells reads the same as the whole table in the window; the corners bound its reach', () => {
    const out: GridGeo = { ...geo, width: 300, height: 200 };
    const mapper = gridMapper(out);
    const whole = VectorMap.build(lon, lat, out.width, out.height, mapper, 7);
    // Windows with edges on and off the lattice's nodes, one touching the grid's last column and row.
    for (const w of [
      { row0: 13, row1: 97, col0: 50, col1: 181 },
      { row0: 14, row1: 15, col0: 49, col1: 50 },
      { row0: 140, row1: 200, col0: 210, col1: 300 },
    ]) {
      const part = VectorMap.build(lon, lat, out.width, out.height, mapper, 7, w);
      expect([part.nodesX, part.nodesY, part.block]).toEqual([whole.nodesX, whole.nodesY, 7]);
      const a = [0, 0];
      const b = [0, 0];
      for (let r = w.row0; r < w.row1; r++) {
        for (let c = w.col0; c < w.col1; c++) {
          whole.at(c + 0.5, r + 0.5, a);
          part.at(c + 0.5, r + 0.5, b);
          expect(b).toEqual(a);
        }
      }
      // Nodes no cell of the window reads are not computed.
      expect(Number.isNaN(part.v[0]) || w.row0 < 7 || w.col0 < 7).toBe(true);
    }
    const corners = VectorMap.cornerReachM(lon, lat, out.width, out.height, mapper);
    const reach = VectorMap.build(lon, lat, out.width, out.height, mapper).maxDistanceM();
    expect(corners).toBeGreaterThan(0);
    expect(corners).toBeLessThanOrEqual(reach);
    expect(corners).toBeGreaterThan(0.9 * reach);
  });
});

describe('pseudo-angle', () => {
  it('is monotone in azimuth and inverts exactly', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 2 * Math.PI - 1e-9, noNaN: true }), (p) => {
        const az = pseudoToAzimuthRad(p);
        const back = pseudoAngle(Math.sin(az), Math.cos(az));
        return Math.abs(back - p) < 1e-9;
      }),
      { numRuns: 2000, seed: 1 },
    );
    let prev = -1;
    for (let i = 0; i < 3600; i++) {
      const az = (i / 3600) * 2 * Math.PI;
      const p = pseudoAngle(Math.sin(az), Math.cos(az));
      expect(p).toBeGreaterThan(prev);
      prev = p;
    }
  });

  it('keeps radial spacing within ±6 % of uniform', () => {
    const n = 4096;
    let min = Infinity;
    let max = 0;
    for (let i = 0; i < n; i++) {
      const a = pseudoToAzimuthRad((i / n) * 2 * Math.PI);
      const b = pseudoToAzimuthRad(((i + 1) / n) * 2 * Math.PI);
      const d = (((b - a) % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI);
      min = Math.min(min, d);
      max = Math.max(max, d);
    }
    const uniform = (2 * Math.PI) / n;
    expect(min / uniform).toBeGreaterThan(0.94);
    expect(max / uniform).toBeLessThan(1.06);
  });
});
