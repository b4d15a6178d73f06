/**
 * Rasters → polygons → GeoJSON layers (worker/core/contour.ts, worker/io/geojson.ts).
 *
 * Outside yardsticks, each named beside its check:
 * - RFC 7946 (GeoJSON): §3.1.6 outer rings counter-clockwise, holes clockwise; §3.1.9 antimeridian cutting;
 *   structure checked by @placemarkio/check-geojson.
 * - OGC Simple Features / ISO 19125 polygon validity, as implemented by JSTS IsValidOp.
 * - @turf/area (spherical area) and @turf/boolean-point-in-polygon, @turf/boolean-clockwise as reference
 *   libraries; d3-contour's marching squares as an independent tracer of the same rings.
 * - Area of a spherical zone 2πRh (any spherical geometry text) for the cell-area formula.
 */
import { getIssues } from '@placemarkio/check-geojson';
import {
  area as turfArea,
  booleanClockwise,
  booleanPointInPolygon,
  earthRadius,
  multiPolygon as turfMultiPolygon,
} from '@turf/turf';
import { contours } from 'd3-contour';
import fc from 'fast-check';
import GeometryFactory from 'jsts/org/locationtech/jts/geom/GeometryFactory.js';
import GeoJSONReader from 'jsts/org/locationtech/jts/io/GeoJSONReader.js';
import IsValidOp from 'jsts/org/locationtech/jts/operation/valid/IsValidOp.js';
import { beforeAll, describe, expect, it } from 'vitest';
import { CAUTION } from '../shared/caution.ts';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  maskAreaKm2,
  maskToPolygons,
  polygonAreaKm2,
  type MultiPolygonCoords,
} from '../worker/core/contour.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import {
  featureCollection,
  layerFeature,
  stringifyGeoJson,
  type LayerFeatureProps,
} from '../worker/io/geojson.ts';

/** 30″ cells (the scenario's default analysis grid) over invented open ocean. */
const CELL = 1 / 120;

function grid(width: number, height: number, over: Partial<GridGeo> = {}): GridGeo {
  return {
    width,
    height,
    originX: -27.25,
    originY: -38.5,
    pixelX: CELL,
    pixelY: -CELL,
    crs: WGS84_GEOGRAPHIC,
    ...over,
  };
}

/** '#' = covered, anything else = not; row 0 first (north). */
function maskOf(rows: string[]): { mask: Uint8Array; w: number; h: number } {
  const h = rows.length;
  const w = rows[0].length;
  const mask = new Uint8Array(w * h);
  rows.forEach((r, y) => [...r].forEach((c, x) => (mask[y * w + x] = c === '#' ? 1 : 0)));
  return { mask, w, h };
}

const jstsReader = new GeoJSONReader(new GeometryFactory());

/** OGC / ISO 19125 validity by JSTS IsValidOp: '' when valid, else its message. */
function ogcProblem(coords: MultiPolygonCoords): string {
  const op = new IsValidOp(jstsReader.read({ type: 'MultiPolygon', coordinates: coords }));
  return op.isValid() ? '' : String(op.getValidationError());
}

/** Twice the signed area (shoelace) of a closed ring in lon/lat: > 0 counter-clockwise. */
function shoelace(ring: number[][]): number {
  let s = 0;
  for (let i = 1; i < ring.length; i++) s += ring[i - 1][0] * ring[i][1] - ring[i][0] * ring[i - 1][1];
  return s;
}

const SIX_DECIMALS = /^-?\d+(\.\d{1,6})?$/;
const PROPS: LayerFeatureProps = {
  flightLevel: 100,
  altitudeM: 3048,
  fold: 1,
  kind: 'any',
  siteIds: ['S2', 'S1'],
  layer: 'coverage',
  areaKm2: 0,
};

/** Longitude into [-180, 180) — where a point east of the antimeridian is written. */
function wrapLon(lon: number): number {
  return ((((lon + 180) % 360) + 360) % 360) - 180;
}

/**
 * Every invariant the module promises, for one mask. `sample` also checks, by point-in-polygon, the centre
 * of every cell and four points 0.4 cell from it towards its corners: inside iff the cell is covered — so
 * the polygon is the union of the covered cells with square corners, not only of equal area.
 */
function checkAll(mask: Uint8Array, w: number, h: number, geo: GridGeo, sample = true): MultiPolygonCoords {
  const coords = maskToPolygons(mask, w, h, geo);
  const ones = mask.reduce((a, b) => a + b, 0);
  if (ones === 0) expect(coords).toEqual([]);
  else expect(coords.length).toBeGreaterThan(0);

  for (const polygon of coords) {
    polygon.forEach((ring, r) => {
      // Closed, at least 4 positions, no repeated and no collinear vertices.
      expect(ring.length).toBeGreaterThanOrEqual(5);
      expect(ring[ring.length - 1]).toEqual(ring[0]);
      const keys = ring.slice(0, -1).map((p) => `${p[0]},${p[1]}`);
      expect(new Set(keys).size).toBe(keys.length);
      for (let i = 0; i < ring.length - 1; i++) {
        const a = ring[(i + ring.length - 2) % (ring.length - 1)];
        const b = ring[i];
        const c = ring[i + 1];
        expect((a[0] === b[0] && b[0] === c[0]) || (a[1] === b[1] && b[1] === c[1])).toBe(false);
      }
      // RFC 7946 §3.1.6: outer counter-clockwise, holes clockwise (shoelace and turf agree).
      if (r === 0) expect(shoelace(ring)).toBeGreaterThan(0);
      else expect(shoelace(ring)).toBeLessThan(0);
      expect(booleanClockwise(ring)).toBe(r !== 0);
      for (const [lon, lat] of ring) {
        expect(String(lon)).toMatch(SIX_DECIMALS);
        expect(String(lat)).toMatch(SIX_DECIMALS);
        expect(Math.abs(lon)).toBeLessThanOrEqual(180);
        expect(Math.abs(lat)).toBeLessThanOrEqual(90);
      }
    });
  }
  // OGC / ISO 19125 validity (JSTS IsValidOp).
  if (coords.length > 0) expect(ogcProblem(coords)).toBe('');
  // RFC 7946 structure (check-geojson), through the layer writer.
  const text = stringifyGeoJson(featureCollection([layerFeature(coords, PROPS)]));
  expect(getIssues(text)).toEqual([]);
  // Area: every shape, even one cell, within 0.1 % of the raster's (only 6-decimal rounding is left).
  const rasterKm2 = maskAreaKm2(mask, w, h, geo);
  if (ones === 0) expect(polygonAreaKm2(coords)).toBe(0);
  else expect(Math.abs(polygonAreaKm2(coords) / rasterKm2 - 1)).toBeLessThan(1e-3);

  if (sample && coords.length > 0) {
    const feature = turfMultiPolygon(coords);
    const offsets = [
      [0, 0],
      [-0.4, -0.4],
      [0.4, -0.4],
      [-0.4, 0.4],
      [0.4, 0.4],
    ];
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        for (const [dx, dy] of offsets) {
          const lon = wrapLon(geo.originX + (x + 0.5 + dx) * geo.pixelX);
          const lat = geo.originY + (y + 0.5 + dy) * geo.pixelY;
          const inside = booleanPointInPolygon([lon, lat], feature);
          if (inside !== (mask[y * w + x] === 1)) {
            throw new Error(
              `cell (${x}, ${y}) offset (${dx}, ${dy}): inside=${inside}, mask=${mask[y * w + x]}`,
            );
          }
        }
      }
    }
  }
  return coords;
}

/** Corner (column, row) of a lon/lat vertex on a grid that does not cross the antimeridian. */
function cornerOf(p: number[], geo: GridGeo): string {
  return `${Math.round((p[0] - geo.originX) / geo.pixelX)},${Math.round((p[1] - geo.originY) / geo.pixelY)}`;
}

/**
 * d3-contour as an independent tracer: its marching-squares rings with each 45° corner cut replaced by the
 * corner it skips must give the same multiset of turn corners as ours, and one outer ring per polygon.
 */
function crossCheckWithD3(mask: Uint8Array, w: number, h: number, geo: GridGeo, coords: MultiPolygonCoords) {
  const iso = contours().size([w, h]).smooth(false).contour(Array.from(mask), 0.5);
  const d3Corners: string[] = [];
  for (const polygon of iso.coordinates) {
    for (const ring of polygon) {
      for (let i = 0; i + 1 < ring.length; i++) {
        const [a, b] = [ring[i], ring[i + 1]];
        if (a[0] !== b[0] && a[1] !== b[1]) {
          d3Corners.push(Number.isInteger(a[1]) ? `${b[0]},${a[1]}` : `${a[0]},${b[1]}`);
        }
      }
    }
  }
  const ours = coords.flatMap((polygon) =>
    polygon.flatMap((ring) => ring.slice(0, -1).map((p) => cornerOf(p, geo))),
  );
  expect(ours.sort()).toEqual(d3Corners.sort());
  expect(coords.length).toBe(iso.coordinates.length);
}

function expectInputError(f: () => unknown, where: RegExp): void {
  try {
    f();
  } catch (e) {
    expect(isInputError(e)).toBe(true);
    expect((e as InputError).where).toMatch(where);
    return;
  }
  throw new Error('expected an InputError');
}

describe('maskToPolygons: shapes', () => {
  it('an empty mask gives no polygons and zero area', () => {
    const { mask, w, h } = maskOf(['....', '....']);
    expect(checkAll(mask, w, h, grid(w, h))).toEqual([]);
    expect(maskAreaKm2(mask, w, h, grid(w, h))).toBe(0);
  });

  it('a single cell is its own four corners', () => {
    const { mask, w, h } = maskOf(['...', '.#.', '...']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.length).toBe(1);
    expect(coords[0].length).toBe(1);
    expect(coords[0][0].length).toBe(5);
    const corners = coords[0][0].slice(0, -1).map((p) => cornerOf(p, geo));
    expect(corners.sort()).toEqual(['1,1', '1,2', '2,1', '2,2']);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('a 1 × 1 grid and a full mask close along the grid edges', () => {
    const one = maskOf(['#']);
    expect(checkAll(one.mask, 1, 1, grid(1, 1))[0][0].length).toBe(5);
    const { mask, w, h } = maskOf(['#####', '#####', '#####']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.length).toBe(1);
    expect(coords[0].length).toBe(1);
    expect(
      coords[0][0]
        .slice(0, -1)
        .map((p) => cornerOf(p, geo))
        .sort(),
    ).toEqual(['0,0', '0,3', '5,0', '5,3']);
  });

  it('shapes touching the grid edges close', () => {
    const { mask, w, h } = maskOf(['##..#', '#...#', '#.###', '.....', '##.##']);
    const geo = grid(w, h);
    crossCheckWithD3(mask, w, h, geo, checkAll(mask, w, h, geo));
  });

  it('a ring of cells has its hole, clockwise', () => {
    const { mask, w, h } = maskOf(['.....', '.###.', '.#.#.', '.###.', '.....']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.map((p) => p.length)).toEqual([2]);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('islands inside holes inside islands: each hole goes to its own polygon', () => {
    const { mask, w, h } = maskOf([
      '#########',
      '#.......#',
      '#.#####.#',
      '#.#...#.#',
      '#.#.#.#.#',
      '#.#...#.#',
      '#.#####.#',
      '#.......#',
      '#########',
    ]);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    // Outer frame + its hole, middle frame + its hole, the centre cell (raster-scan order of first cells).
    expect(coords.map((p) => p.length)).toEqual([2, 2, 1]);
    const areas = coords.map((p) => polygonAreaKm2([p]));
    expect(areas[0]).toBeGreaterThan(areas[1]);
    expect(areas[1]).toBeGreaterThan(areas[2]);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('cells touching only at a corner are separate polygons sharing one point', () => {
    const { mask, w, h } = maskOf(['#..', '.#.', '..#']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.length).toBe(3);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('a pocket open only at a corner becomes a hole touching the outer ring at that point', () => {
    const { mask, w, h } = maskOf(['####', '#..#', '#..#', '###.']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.map((p) => p.length)).toEqual([2]);
    const shared = coords[0][1]
      .slice(0, -1)
      .filter((p) => coords[0][0].some((q) => q[0] === p[0] && q[1] === p[1]));
    expect(shared.length).toBe(1);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('holes touching each other at corners stay separate holes of one polygon', () => {
    const { mask, w, h } = maskOf(['#####', '#.###', '##.##', '###.#', '#####']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.map((p) => p.length)).toEqual([4]);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('a diagonal of gaps from corner to corner splits the cells into polygons touching at points', () => {
    const { mask, w, h } = maskOf(['.####', '#.###', '##.##', '###.#', '####.']);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.length).toBe(2);
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('a checkerboard is one polygon per covered cell', () => {
    const rows = Array.from({ length: 6 }, (_, y) =>
      Array.from({ length: 7 }, (_, x) => ((x + y) % 2 === 0 ? '#' : '.')).join(''),
    );
    const { mask, w, h } = maskOf(rows);
    const geo = grid(w, h);
    const coords = checkAll(mask, w, h, geo);
    expect(coords.length).toBe(mask.reduce((a, b) => a + b, 0));
    crossCheckWithD3(mask, w, h, geo, coords);
  });

  it('orientation holds for south-up and east-to-west grids too', () => {
    const { mask, w, h } = maskOf(['##.#', '#..#', '####']);
    for (const over of [{ pixelY: CELL }, { pixelX: -CELL }, { pixelX: -CELL, pixelY: CELL }]) {
      checkAll(mask, w, h, grid(w, h, over));
    }
  });

  it('random masks (fast-check): valid, RFC 7946 winding, ≤ 6 decimals, exact cells, as d3-contour traces', () => {
    const masks = fc
      .tuple(
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 5, max: 95 }),
      )
      .chain(([w, h, pct]) =>
        fc.tuple(
          fc.constant(w),
          fc.constant(h),
          fc
            .array(fc.integer({ min: 0, max: 99 }), { minLength: w * h, maxLength: w * h })
            .map((v) => Uint8Array.from(v, (u) => (u < pct ? 1 : 0))),
        ),
      );
    fc.assert(
      fc.property(masks, ([w, h, mask]) => {
        const geo = grid(w, h);
        crossCheckWithD3(mask, w, h, geo, checkAll(mask, w, h, geo));
      }),
      { numRuns: 150, seed: 20240607 },
    );
  });

  it('a 200 × 200 blob with speckled holes and islands: valid, area exact, as d3-contour traces', () => {
    const n = 200;
    const mask = new Uint8Array(n * n);
    let seed = 7;
    const rnd = () => (seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 4294967296;
    for (let y = 0; y < n; y++) {
      for (let x = 0; x < n; x++) {
        const r = Math.hypot(x - 100, y - 100);
        const edge = 70 + 12 * Math.sin(Math.atan2(y - 100, x - 100) * 7);
        mask[y * n + x] = r < edge !== rnd() < 0.03 ? 1 : 0;
      }
    }
    const geo = grid(n, n);
    const coords = checkAll(mask, n, n, geo, false);
    expect(coords.reduce((a, p) => a + p.length, 0)).toBeGreaterThan(100); // many holes and islands
    crossCheckWithD3(mask, n, n, geo, coords);
  });
});

describe('maskToPolygons: antimeridian (RFC 7946 §3.1.9)', () => {
  /** Every polygon lies wholly on one side: within [170, 180] or within [-180, -170]. */
  function expectSplit(coords: MultiPolygonCoords): { east: number; west: number } {
    let east = 0;
    let west = 0;
    for (const polygon of coords) {
      const lons = polygon.flat().map((p) => p[0]);
      if (lons.every((l) => l >= 170 && l <= 180)) east++;
      else if (lons.every((l) => l >= -180 && l <= -170)) west++;
      else throw new Error(`polygon spans ${Math.min(...lons)}..${Math.max(...lons)}`);
    }
    return { east, west };
  }

  const blob = maskOf(['........', '.######.', '.##..##.', '.######.', '...##...', '........']);

  it('a grid from 179°E to 179°W cut on a cell edge: a shape across it becomes two, area kept', () => {
    const { mask, w, h } = blob;
    const geo = grid(w, h, { originX: 179, originY: 12, pixelX: 0.25, pixelY: -0.25 });
    const coords = checkAll(mask, w, h, geo);
    expect(expectSplit(coords)).toEqual({ east: 1, west: 1 });
    const lons = coords.flat(2).map((p) => p[0]);
    expect(lons).toContain(180);
    expect(lons).toContain(-180);
  });

  it('a cell straddling the antimeridian is cut in two', () => {
    const { mask, w, h } = blob;
    const geo = grid(w, h, { originX: 179.1, originY: 12, pixelX: 0.25, pixelY: -0.25 }); // cut inside column 3
    const coords = checkAll(mask, w, h, geo);
    expect(expectSplit(coords)).toEqual({ east: 1, west: 1 });
  });

  it('a grid west of -180° is cut there and its western part written east of 170°E', () => {
    const { mask, w, h } = blob;
    const geo = grid(w, h, { originX: -181, originY: 12, pixelX: 0.25, pixelY: -0.25 });
    expect(expectSplit(checkAll(mask, w, h, geo))).toEqual({ east: 1, west: 1 });
  });

  it('a grid wholly beyond 180° is shifted into range', () => {
    const { mask, w, h } = blob;
    const geo = grid(w, h, { originX: 181, originY: 12, pixelX: 0.25, pixelY: -0.25 });
    expect(expectSplit(checkAll(mask, w, h, geo))).toEqual({ east: 0, west: 1 });
  });

  it('a cut within a sliver of a cell edge snaps to that edge', () => {
    const { mask, w, h } = blob;
    for (const originX of [180 - 5e-7, 179 + 5e-7]) {
      const geo = grid(w, h, { originX, originY: 12, pixelX: 0.25, pixelY: -0.25 });
      const coords = checkAll(mask, w, h, geo);
      expectSplit(coords);
      expect(coords.flat(2).every((p) => Math.abs(p[0]) <= 180)).toBe(true);
    }
  });

  it('random masks across the antimeridian (fast-check)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.boolean(), { minLength: 80, maxLength: 80 }),
        fc.integer({ min: 0, max: 19 }),
        (bits, shift) => {
          const mask = Uint8Array.from(bits, (b) => (b ? 1 : 0));
          const geo = grid(10, 8, { originX: 178.55 + shift * 0.05, originY: 3, pixelX: 0.2, pixelY: -0.2 });
          checkAll(mask, 10, 8, geo);
        },
      ),
      { numRuns: 60, seed: 11 },
    );
  });
});

describe('areas', () => {
  it('maskAreaKm2 is the sum of @turf/area over the covered cells', () => {
    const { mask, w, h } = maskOf(['#.##', '.###', '##.#']);
    const geo = grid(w, h, { originY: 61.3, pixelX: 0.5, pixelY: -0.5 });
    let turfKm2 = 0;
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        if (mask[y * w + x] === 0) continue;
        const [x0, x1] = [geo.originX + x * geo.pixelX, geo.originX + (x + 1) * geo.pixelX];
        const [y0, y1] = [geo.originY + (y + 1) * geo.pixelY, geo.originY + y * geo.pixelY];
        turfKm2 +=
          turfArea(
            turfMultiPolygon([
              [
                [
                  [x0, y0],
                  [x1, y0],
                  [x1, y1],
                  [x0, y1],
                  [x0, y0],
                ],
              ],
            ]),
          ) / 1e6;
      }
    }
    expect(maskAreaKm2(mask, w, h, geo)).toBeCloseTo(turfKm2, 6);
  });

  it('a hemisphere is 2πR² (spherical zone area 2πRh, R = turf earthRadius)', () => {
    const geo = grid(1, 1, { originX: -180, originY: 90, pixelX: 360, pixelY: -90 });
    const expected = (2 * Math.PI * earthRadius * earthRadius) / 1e6;
    expect(maskAreaKm2(new Uint8Array([1]), 1, 1, geo) / expected).toBeCloseTo(1, 12);
    expect(polygonAreaKm2(maskToPolygons(new Uint8Array([1]), 1, 1, geo)) / expected).toBeCloseTo(1, 9);
  });
});

describe('maskToPolygons: bad input', () => {
  const ok = maskOf(['#.', '.#']);
  it('names the argument or field and what was expected', () => {
    expectInputError(() => maskToPolygons(new Uint8Array(3), 2, 2, grid(2, 2)), /^mask$/);
    expectInputError(() => maskToPolygons(ok.mask, 2, 2, grid(3, 2)), /width/);
    expectInputError(() => maskToPolygons(Uint8Array.from([1, 2, 0, 0]), 2, 2, grid(2, 2)), /mask\[1\]/);
    expectInputError(
      () =>
        maskToPolygons(ok.mask, 2, 2, {
          ...grid(2, 2),
          crs: { kind: 'projected', proj4: '', epsg: 32724, label: 'EPSG:32724' },
        }),
      /crs/,
    );
    expectInputError(() => maskToPolygons(ok.mask, 2, 2, grid(2, 2, { pixelX: 1e-7 })), /pixelX/);
    expectInputError(() => maskToPolygons(ok.mask, 2, 2, grid(2, 2, { originY: 89.99, pixelY: 0.1 })), /lat/);
    expectInputError(() => maskToPolygons(ok.mask, 2, 2, grid(2, 2, { pixelX: 200 })), /lon/);
    expect(() => maskAreaKm2(new Uint8Array(5), 2, 2, grid(2, 2))).toThrow(/expected a Uint8Array/);
  });
});

describe('GeoJSON layers', () => {
  const sample = maskOf(['.##.', '#..#', '.##.']);
  let coords: MultiPolygonCoords = [];
  beforeAll(() => {
    coords = maskToPolygons(sample.mask, sample.w, sample.h, grid(sample.w, sample.h));
    expect(coords.length).toBe(4);
  });

  it('layerFeature carries the DESIGN §5 properties; the collection passes check-geojson', () => {
    const f = layerFeature(coords, {
      ...PROPS,
      layer: 'gap',
      volumeId: 'V1',
      areaKm2: polygonAreaKm2(coords),
    });
    expect(f.type).toBe('Feature');
    expect(f.geometry).toEqual({ type: 'MultiPolygon', coordinates: coords });
    expect(f.properties).toMatchObject({ flightLevel: 100, altitudeM: 3048, fold: 1, kind: 'any' });
    expect(f.properties.siteIds).toEqual(['S1', 'S2']);
    expect(f.properties.volumeId).toBe('V1');
    const text = stringifyGeoJson(featureCollection([f, layerFeature([], PROPS)], { flightLevel: 100 }));
    expect(getIssues(text)).toEqual([]);
    expect('volumeId' in layerFeature(coords, PROPS).properties).toBe(false);
  });

  it('layerFeature rejects bad properties by name', () => {
    expectInputError(() => layerFeature(coords, { ...PROPS, fold: -1 }), /properties\.fold/);
    expectInputError(() => layerFeature(coords, { ...PROPS, fold: 1.5 }), /properties\.fold/);
    expectInputError(() => layerFeature(coords, { ...PROPS, kind: 'both' as 'any' }), /properties\.kind/);
    expectInputError(() => layerFeature(coords, { ...PROPS, layer: 'x' as 'gap' }), /properties\.layer/);
    expectInputError(() => layerFeature(coords, { ...PROPS, areaKm2: NaN }), /properties\.areaKm2/);
    expectInputError(() => layerFeature(coords, { ...PROPS, siteIds: [3 as unknown as string] }), /siteIds/);
  });

  it('stringifyGeoJson: stable key order, ≤ 6 decimals, one feature per line, round trip', () => {
    const f = layerFeature(coords, { ...PROPS, areaKm2: 1.23456789 });
    const collection = featureCollection([f, f], { zeta: -0.00000001, alpha: [1 / 3, 'x', null, true] });
    const text = stringifyGeoJson(collection);
    const lines = text.trimEnd().split('\n');
    expect(lines.length).toBe(4); // header, two features, closing bracket
    expect(lines[0]).toBe(
      `{"type":"FeatureCollection","caution":${JSON.stringify(CAUTION)},` +
        '"metadata":{"alpha":[0.333333,"x",null,true],"zeta":0},"features":[',
    );
    expect(lines[1]).toMatch(
      /^\{"type":"Feature","properties":\{"altitudeM":3048,"areaKm2":1.234568,"flightLevel":100,/,
    );
    expect(lines[1]).toMatch(/"geometry":\{"type":"MultiPolygon","coordinates":\[\[\[\[/);
    const back = JSON.parse(text);
    expect(Object.keys(back)).toEqual(['type', 'caution', 'metadata', 'features']);
    expect(Object.keys(back.features[0])).toEqual(['type', 'properties', 'geometry']);
    expect(Object.keys(back.features[0].properties)).toEqual([...Object.keys(f.properties)].sort());
    expect(back.features[0].geometry.coordinates).toEqual(coords); // already 6-decimal: unchanged
    expect(back.features[0].properties.areaKm2).toBe(1.234568);
    expect(stringifyGeoJson(back)).toBe(text); // idempotent
    for (const n of text.match(/-?\d+\.\d+/g) ?? []) expect(n).toMatch(SIX_DECIMALS);
    expect(getIssues(text)).toEqual([]);
  });

  it('stringifyGeoJson names a non-finite number', () => {
    const f = layerFeature(
      [
        [
          [
            [0, 0],
            [1, 0],
            [1, 1],
            [0, 0],
          ],
        ],
      ],
      PROPS,
    );
    f.geometry.coordinates[0][0][1][0] = Infinity;
    expectInputError(() => stringifyGeoJson(featureCollection([f])), /features\[0\]\.geometry\.coordinates/);
  });
});
