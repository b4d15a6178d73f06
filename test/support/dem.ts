/** Generated DEMs for engine tests: metric grids on a transverse Mercator centred on the demo ocean. */
import proj4 from 'proj4';
import { Terrain } from '../../worker/core/terrain.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../../worker/core/grid.ts';

/** Centre of the test grids: open ocean, nothing real implied. */
export const TEST_LON0 = -30;
export const TEST_LAT0 = -40;
/** Scale 1 on the central meridian, so grid distances equal ground distances to ~1e-6 over tens of km. */
export const TEST_PROJ4 = `+proj=tmerc +lat_0=${TEST_LAT0} +lon_0=${TEST_LON0} +k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs`;

export function metricGeo(width: number, height: number, pixelM: number): GridGeo {
  return {
    width,
    height,
    originX: (-width / 2) * pixelM,
    originY: (height / 2) * pixelM,
    pixelX: pixelM,
    pixelY: -pixelM,
    crs: { kind: 'projected', proj4: TEST_PROJ4, label: 'test transverse Mercator' },
  };
}

export function metricTerrain(data: Float32Array, width: number, height: number, pixelM: number): Terrain {
  return Terrain.fromParts({
    geo: metricGeo(width, height, pixelM),
    data,
    warnings: [],
    sources: ['generated'],
  });
}

/** lon/lat of the centre of cell (c, r) of a metricGeo grid. */
export function cellLonLat(geo: GridGeo, c: number, r: number): { lon: number; lat: number } {
  const [lon, lat] = proj4(TEST_PROJ4, 'WGS84', [
    geo.originX + (c + 0.5) * geo.pixelX,
    geo.originY + (r + 0.5) * geo.pixelY,
  ]);
  return { lon, lat };
}

/** A geographic test box over open ocean: 1.5° × 1° at 36″ (150 × 100 cells, about 1 km), 31–29.5° W, 40–41° S. */
export function oceanBoxGeo(): GridGeo {
  return {
    width: 150,
    height: 100,
    originX: -31,
    originY: -40,
    pixelX: 0.01,
    pixelY: -0.01,
    crs: WGS84_GEOGRAPHIC,
  };
}
