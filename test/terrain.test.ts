import geodesic from 'geographiclib-geodesic';
import proj4 from 'proj4';
import { describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { pixelsBetween, WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Terrain, bilinear, type DemTile } from '../worker/core/terrain.ts';
import { readDemTile } from '../worker/io/geotiff-read.ts';
import { encodeTiff } from './support/tiff-encoder.ts';

/** UTM zone 24 south on WGS84, from the UTM definition (reference for proj4 checks). */
const UTM24S_PROJ4 = '+proj=utm +zone=24 +south +datum=WGS84 +units=m +no_defs';
const POSTS = 60; // samples per degree: 1 arc-minute posts, 61 x 61 per 1° tile

/** Invented elevation at a global post (gc columns east of 31°W, gr rows south of 43°S). */
function postValue(gc: number, gr: number): number {
  return Math.round(900 * Math.sin(gc / 11) * Math.cos(gr / 13) + 3 * gc - 2 * gr + 200);
}

/**
 * A 1° tile like the common DEM products: pixel-is-point, (POSTS + 1)^2 posts, the edge rows and columns
 * shared with the neighbours. lon0/lat0 = south-west corner, over open ocean.
 */
async function degreeTile(lon0: number, lat0: number): Promise<DemTile> {
  const n = POSTS + 1;
  const gc0 = (lon0 + 31) * POSTS;
  const gr0 = (-43 - (lat0 + 1)) * POSTS;
  const values: number[] = [];
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) values.push(postValue(gc0 + c, gr0 + r));
  const buf = encodeTiff({
    width: n,
    height: n,
    values,
    sampleType: 'int16',
    compression: 'deflate',
    predictor: 2,
    rasterType: 'point',
    georef: { x0: lon0, y0: lat0 + 1, dx: 1 / POSTS, dy: 1 / POSTS },
  });
  return readDemTile(buf, `tile_${lon0}_${lat0}.tif`);
}

function geoTile(name: string, geo: GridGeo, f: (x: number, y: number) => number): DemTile {
  const data = new Float32Array(geo.width * geo.height);
  for (let r = 0; r < geo.height; r++) {
    for (let c = 0; c < geo.width; c++) {
      data[r * geo.width + c] = f(geo.originX + (c + 0.5) * geo.pixelX, geo.originY + (r + 0.5) * geo.pixelY);
    }
  }
  return { name, geo, data, voidsFilled: 0, warnings: [] };
}

describe('pixelsBetween: a lattice offset as a small integer', () => {
  // Math.round((y - y) / -30) is -0; an index built on it stays a double in V8's hot loops (grid.ts).
  it('a grid over itself with a negative pixel height is +0, not -0', () => {
    expect(Object.is(Math.round((-41 - -41) / -30), -0)).toBe(true);
    expect(Object.is(pixelsBetween(-41, -41, -30), 0)).toBe(true);
  });
  it('rounds to the nearest whole pixel either way', () => {
    expect(pixelsBetween(100, 100 + 3 * 30 + 4, 30)).toBe(3);
    expect(pixelsBetween(100, 100 - 2 * 30 - 16, -30)).toBe(3);
    expect(pixelsBetween(0, -5 * 30, 30)).toBe(-5);
  });
});

describe('bilinear sampling convention', () => {
  // 3 x 2 raster; centre of cell (c, r) at (c + 0.5, r + 0.5).
  const data = Float32Array.from([0, 10, 20, 100, 110, 120]);

  it('exact at pixel centres, linear in between', () => {
    expect(bilinear(data, 3, 2, 0.5, 0.5)).toBe(0);
    expect(bilinear(data, 3, 2, 2.5, 1.5)).toBe(120);
    expect(bilinear(data, 3, 2, 1.0, 0.5)).toBe(5);
    expect(bilinear(data, 3, 2, 1.0, 1.0)).toBe(55);
    expect(bilinear(data, 3, 2, 2.0, 0.75)).toBeCloseTo(15 + 25, 5);
  });

  it('clamps to the edge value between the outermost centre and the raster edge', () => {
    expect(bilinear(data, 3, 2, 0, 0)).toBe(0);
    expect(bilinear(data, 3, 2, 3, 2)).toBe(120);
    expect(bilinear(data, 3, 2, 0.2, 1.0)).toBe(50);
    expect(bilinear(data, 3, 2, 1.5, 1.9)).toBe(110);
  });

  it('NaN outside the raster', () => {
    expect(bilinear(data, 3, 2, -0.001, 1)).toBeNaN();
    expect(bilinear(data, 3, 2, 1, 2.001)).toBeNaN();
    expect(bilinear(data, 3, 2, NaN, 1)).toBeNaN();
  });

  it('NaN when a cell with non-zero weight is NaN, but not from a zero-weight neighbour', () => {
    const holes = Float32Array.from([0, NaN, 20, 100, 110, 120]);
    expect(bilinear(holes, 3, 2, 1.0, 0.5)).toBeNaN();
    expect(bilinear(holes, 3, 2, 0.5, 1.0)).toBe(50);
    expect(bilinear(holes, 3, 2, 2.5, 0.5)).toBe(20);
    expect(bilinear(holes, 3, 2, 2.5, 1.5)).toBe(120);
  });
});

describe('mosaic of 2 x 2 adjacent 1° tiles sharing their edges', async () => {
  const tiles = await Promise.all([
    degreeTile(-31, -44),
    degreeTile(-30, -44),
    degreeTile(-31, -45),
    degreeTile(-30, -45),
  ]);
  const terrain = Terrain.fromTiles(tiles);

  it('lies on the first tile lattice and covers the union (2 * 60 + 1 posts each way)', () => {
    const g = terrain.geo;
    expect(g.width).toBe(2 * POSTS + 1);
    expect(g.height).toBe(2 * POSTS + 1);
    expect(g.pixelX).toBe(tiles[0].geo.pixelX);
    expect(g.originX).toBeCloseTo(-31 - 0.5 / POSTS, 12);
    expect(g.originY).toBeCloseTo(-43 + 0.5 / POSTS, 12);
    expect(g.crs).toBe(WGS84_GEOGRAPHIC);
    expect(terrain.sources).toEqual(tiles.map((t) => t.name));
  });

  it('every cell equals the source post; no cell unknown', () => {
    let wrong = 0;
    for (let r = 0; r < terrain.geo.height; r++) {
      for (let c = 0; c < terrain.geo.width; c++) {
        if (terrain.samplePixel(c + 0.5, r + 0.5) !== postValue(c, r)) wrong++;
      }
    }
    expect(wrong).toBe(0);
  });

  it('lon/lat samples equal the source tiles, also between posts', () => {
    expect(terrain.sampleLonLat(-30, -44)).toBeCloseTo(postValue(60, 60), 6);
    expect(terrain.sampleLonLat(-31, -43)).toBeCloseTo(postValue(0, 0), 6);
    const singles = tiles.map((t) => Terrain.fromTiles([t]));
    let seed = 3;
    const rand = (): number => ((seed = (seed * 16807) % 2147483647) - 1) / 2147483646;
    for (let k = 0; k < 200; k++) {
      const i = k % 4;
      const lon = [-31, -30][i % 2] + rand();
      const lat = [-44, -45][i >> 1] + rand();
      expect(terrain.sampleLonLat(lon, lat)).toBeCloseTo(singles[i].sampleLonLat(lon, lat), 3);
    }
  });

  it('unknown (NaN) outside the mosaic; the half-pixel edge band is clamped and known', () => {
    expect(terrain.sampleLonLat(-31.5, -44)).toBeNaN();
    expect(terrain.sampleLonLat(-30, -42.9)).toBeNaN();
    expect(terrain.sampleLonLat(-28.9, -44)).toBeNaN();
    expect(terrain.sampleLonLat(-31 - 0.25 / POSTS, -43)).toBeCloseTo(postValue(0, 0), 6);
    expect(terrain.sampleLonLat(-31 - 0.51 / POSTS, -43)).toBeNaN();
  });

  it('pixel <-> lon/lat round trip', () => {
    const p = [0, 0];
    terrain.lonLatToPixel(-30.25, -44.75, p);
    expect(p[0]).toBeCloseTo(0.75 * POSTS + 0.5, 9);
    expect(p[1]).toBeCloseTo(1.75 * POSTS + 0.5, 9);
    const q = new Float64Array(2);
    terrain.pixelToLonLat(p[0], p[1], q);
    expect(q[0]).toBeCloseTo(-30.25, 12);
    expect(q[1]).toBeCloseTo(-44.75, 12);
  });

  it('one tile missing: NaN there, known elsewhere', async () => {
    const three = Terrain.fromTiles([tiles[0], tiles[1], tiles[2]]);
    expect(three.geo.width).toBe(2 * POSTS + 1);
    expect(Number.isNaN(three.sampleLonLat(-29.5, -44.5))).toBe(true);
    expect(three.sampleLonLat(-30.5, -44.5)).toBeCloseTo(terrain.sampleLonLat(-30.5, -44.5), 6);
    expect(three.sampleLonLat(-29.5, -43.5)).toBeCloseTo(terrain.sampleLonLat(-29.5, -43.5), 6);
    let unknown = 0;
    for (const v of three.data) if (Number.isNaN(v)) unknown++;
    expect(unknown).toBe(POSTS * POSTS); // the missing tile minus its edges shared with neighbours
  });

  it('shared: data in a SharedArrayBuffer; toParts/fromParts share it without a copy', () => {
    const shared = Terrain.fromTiles(tiles, { shared: true });
    expect(shared.data.buffer).toBeInstanceOf(SharedArrayBuffer);
    const parts = shared.toParts();
    expect(Terrain.fromParts(parts).data).toBe(shared.data); // no copy
    // As a worker receives it: a structured clone of the parts shares the same memory.
    const again = Terrain.fromParts(structuredClone(parts));
    expect(again.sampleLonLat(-30.3, -44.6)).toBe(shared.sampleLonLat(-30.3, -44.6));
    shared.data[0] = 12345; // one memory: a write is seen through the clone
    expect(again.data[0]).toBe(12345);
    const local = Terrain.fromParts(Terrain.fromTiles(tiles).toParts());
    expect(local.data.buffer).toBeInstanceOf(ArrayBuffer);
  });
});

describe('mosaic warnings, resampling and errors', () => {
  const plane = (lon: number, lat: number): number => 1000 + 500 * lon + 300 * lat;

  it('collects the tiles void warnings', async () => {
    const values = new Array(16).fill(50);
    values[5] = -9999;
    const tile = await readDemTile(
      encodeTiff({
        width: 4,
        height: 4,
        values,
        sampleType: 'int16',
        nodata: '-9999',
        georef: { x0: 0, y0: 0, dx: 1, dy: 1 },
      }),
      'holes.tif',
    );
    const t = Terrain.fromTiles([tile]);
    expect(t.warnings).toEqual([expect.stringMatching(/^holes\.tif: filled 1 void/)]);
  });

  it('geographic tiles of different resolutions: the second is resampled onto the first lattice', () => {
    const a = geoTile(
      'a.tif',
      {
        width: 60,
        height: 60,
        originX: -31,
        originY: -44,
        pixelX: 1 / 60,
        pixelY: -1 / 60,
        crs: WGS84_GEOGRAPHIC,
      },
      plane,
    );
    const b = geoTile(
      'b.tif',
      {
        width: 120,
        height: 120,
        originX: -30,
        originY: -44,
        pixelX: 1 / 120,
        pixelY: -1 / 120,
        crs: WGS84_GEOGRAPHIC,
      },
      plane,
    );
    const t = Terrain.fromTiles([a, b]);
    expect(t.geo.width).toBe(120);
    expect(t.geo.height).toBe(60);
    expect(t.geo.pixelX).toBeCloseTo(1 / 60, 15);
    expect(t.warnings).toEqual(['b.tif: resampled (bilinear) onto the grid of a.tif']);
    const ll = [0, 0];
    let worst = 0;
    for (let r = 0; r < 60; r++) {
      for (let c = 0; c < 120; c++) {
        t.pixelToLonLat(c + 0.5, r + 0.5, ll);
        worst = Math.max(worst, Math.abs(t.data[r * 120 + c] - plane(ll[0], ll[1])));
      }
    }
    expect(worst).toBeLessThan(0.01); // bilinear reproduces a plane; float32 rounding only
  });

  it('a geographic tile resampled onto a projected (UTM 24S) first tile through proj4', () => {
    const utm = { kind: 'projected' as const, proj4: UTM24S_PROJ4, epsg: 32724, label: 'EPSG:32724' };
    const first = geoTile(
      'utm.tif',
      { width: 50, height: 50, originX: 400000, originY: 5050000, pixelX: 300, pixelY: -300, crs: utm },
      () => 7,
    );
    const conv = proj4(UTM24S_PROJ4, WGS84_GEOGRAPHIC.proj4);
    // A geographic tile just east of the UTM tile.
    const [lonE, latN] = conv.forward([415000, 5050000]);
    const geoT = geoTile(
      'll.tif',
      {
        width: 40,
        height: 60,
        originX: lonE - 0.01,
        originY: latN,
        pixelX: 0.005,
        pixelY: -0.0025,
        crs: WGS84_GEOGRAPHIC,
      },
      plane,
    );
    const t = Terrain.fromTiles([first, geoT]);
    expect(t.geo.crs).toBe(utm);
    expect(t.samplePixel(10.5, 10.5)).toBe(7);
    let checked = 0;
    let worst = 0;
    for (let r = 0; r < t.geo.height; r += 3) {
      for (let c = 0; c < t.geo.width; c += 3) {
        const v = t.data[r * t.geo.width + c];
        const x = t.geo.originX + (c + 0.5) * 300;
        const y = t.geo.originY - (r + 0.5) * 300;
        const [lon, lat] = conv.forward([x, y]);
        const insideGeo =
          lon > geoT.geo.originX + 0.0025 &&
          lon < geoT.geo.originX + 0.2 - 0.0025 &&
          lat < latN - 0.00125 &&
          lat > latN - 0.15 + 0.00125;
        if (c >= 50 && insideGeo) {
          worst = Math.max(worst, Math.abs(v - plane(lon, lat)));
          checked++;
        }
        if (
          c >= 50 &&
          !insideGeo &&
          (lon < geoT.geo.originX - 0.001 || lat > latN + 0.001 || lat < latN - 0.151)
        ) {
          expect(v).toBeNaN();
        }
      }
    }
    expect(checked).toBeGreaterThan(50);
    expect(worst).toBeLessThan(0.05);
  });

  it('overlapping tiles: the first tile wins, aligned or resampled', () => {
    const lattice = { width: 10, height: 10, pixelX: 0.1, pixelY: -0.1, crs: WGS84_GEOGRAPHIC };
    const a = geoTile('a.tif', { ...lattice, originX: 0, originY: 1 }, () => 1);
    const aligned = geoTile('b.tif', { ...lattice, originX: 0.5, originY: 1.5 }, () => 2);
    const offset = geoTile('c.tif', { ...lattice, originX: 0.55, originY: 0.45 }, () => 3);
    const t = Terrain.fromTiles([a, aligned, offset]);
    expect(t.geo).toMatchObject({ width: 16, height: 21 }); // x 0..1.55, y -0.55..1.5 on a's lattice
    expect(t.sampleLonLat(0.7, 0.8)).toBe(1); // inside a and b
    expect(t.sampleLonLat(1.2, 1.3)).toBe(2); // only b
    expect(t.sampleLonLat(0.7, 0.2)).toBe(1); // inside a and c
    expect(t.sampleLonLat(1.3, -0.3)).toBe(3); // only c
    expect(t.sampleLonLat(0.2, 1.3)).toBeNaN(); // in the union's box, in no tile
  });

  it('no tiles: InputError', () => {
    let err: unknown;
    try {
      Terrain.fromTiles([]);
    } catch (e) {
      err = e;
    }
    expect(isInputError(err)).toBe(true);
    expect((err as Error).message).toBe(
      'terrain: found no DEM tiles; expected at least one GeoTIFF elevation tile',
    );
  });
});

describe('projected terrain (EPSG:32724 tile read from a GeoTIFF)', async () => {
  // Easting 480 km, northing 5010 km in zone 24 south: near 45.1° S 39.3° W, open South Atlantic.
  const w = 40;
  const h = 30;
  const values = Array.from({ length: w * h }, (_, i) => (i % w) * 2 + Math.floor(i / w));
  const tile = await readDemTile(
    encodeTiff({
      width: w,
      height: h,
      values,
      sampleType: 'float32',
      crs: { kind: 'projected', epsg: 32724 },
      georef: { x0: 480000, y0: 5010000, dx: 30, dy: 30 },
    }),
    'utm24s.tif',
  );
  const terrain = Terrain.fromTiles([tile]);
  const ref = proj4(UTM24S_PROJ4, WGS84_GEOGRAPHIC.proj4); // reference library: proj4, textbook UTM string

  it.each([
    [0, 0],
    [20, 15],
    [40, 30],
    [3.25, 27.5],
  ])('pixel (%d, %d) <-> lon/lat agrees with proj4', (x, y) => {
    const [lon, lat] = ref.forward([480000 + 30 * x, 5010000 - 30 * y]);
    const ll = [0, 0];
    terrain.pixelToLonLat(x, y, ll);
    expect(ll[0]).toBeCloseTo(lon, 9);
    expect(ll[1]).toBeCloseTo(lat, 9);
    const p = new Float64Array(2);
    terrain.lonLatToPixel(lon, lat, p);
    expect(p[0]).toBeCloseTo(x, 6);
    expect(p[1]).toBeCloseTo(y, 6);
  });

  it('samples by lon/lat', () => {
    const [lon, lat] = ref.forward([480000 + 30 * 10.5, 5010000 - 30 * 4.5]);
    expect(terrain.sampleLonLat(lon, lat)).toBeCloseTo(10 * 2 + 4, 4);
    const [lonOut, latOut] = ref.forward([470000, 5010000]);
    expect(terrain.sampleLonLat(lonOut, latOut)).toBeNaN();
  });

  it('metres per pixel on the central meridian is 30 m / k0 (k0 = 0.9996, UTM definition)', () => {
    const [lon, lat] = ref.forward([500000, 5009000]);
    const m = terrain.metresPerPixel(lon, lat);
    expect(m.x).toBeCloseTo(30 / 0.9996, 3);
    expect(m.y).toBeCloseTo(30 / 0.9996, 3);
  });
});

describe('metresPerPixel on a geographic grid', () => {
  it('matches geodesic distances (geographiclib, Karney 2013) across one pixel', () => {
    const px = 1 / 3600;
    // A tiny grid on the equator at 35° W (open Atlantic); the latitudes below are where the scale is asked.
    const t = Terrain.fromParts({
      geo: {
        width: 10,
        height: 10,
        originX: -35,
        originY: 0,
        pixelX: px,
        pixelY: -px,
        crs: WGS84_GEOGRAPHIC,
      },
      data: new Float32Array(100),
      warnings: [],
      sources: [],
    });
    const g = geodesic.Geodesic.WGS84;
    for (const lat of [0, -23.5, -45, -60]) {
      const m = t.metresPerPixel(-35, lat);
      const ex = g.Inverse(lat, -35 - px / 2, lat, -35 + px / 2).s12 ?? NaN;
      const ey = g.Inverse(lat - px / 2, -35, lat + px / 2, -35).s12 ?? NaN;
      expect(m.x).toBeCloseTo(ex, 4);
      expect(m.y).toBeCloseTo(ey, 4);
    }
  });
});
