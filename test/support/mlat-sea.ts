/**
 * The shared ground of the multilateration tests (issue 14): a flat sea at 41° S 30° W in the open South Atlantic,
 * the catalog's receiver types, and the 40 km square of receiver buoys whose centre has the closed form c·σ/cos α
 * (test/REFERENCES.md, multilateration on a circle). Invented and over open ocean, like every fixture.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { ring, type FixtureSensorType } from './scenario-fixture.ts';

/** Speed of light, m/s (SI, exact). */
export const C = 299_792_458;
export const LAT0 = -41;
export const LON0 = -30;
/** Metres per degree of latitude on the 6 371 km sphere [calc]. */
export const M_PER_DEG = (6_371_000 * Math.PI) / 180;
/** Half a side of the 40 km square in degrees (sphere of 6 371 km, [calc]). */
export const HALF_LAT = 20_000 / M_PER_DEG;
export const HALF_LON = HALF_LAT / Math.cos((LAT0 * Math.PI) / 180);

/** data/catalog/receiver-types.json, as written. */
export const RECEIVER_CATALOG = JSON.parse(
  readFileSync(join(import.meta.dirname, '..', '..', 'data', 'catalog', 'receiver-types.json'), 'utf8'),
) as FixtureSensorType[];

/** A flat sea DEM of 300 × 240 cells of 30″ from 31.25° W, 40° S (2.5° × 2°), for writeScenarioFixture. */
export function flatSeaDem() {
  return {
    west: -31.25,
    north: -40,
    widthCells: 300,
    heightCells: 240,
    pixelDeg: 30 / 3600,
    data: new Float32Array(300 * 240),
  };
}

/** The four buoys at the corners of the 40 km square round (LON0, LAT0), antennas 20 m up, site cost 1. */
export function squareBuoys(allowedTypes: (corner: 'ne' | 'nw' | 'sw' | 'se') => string[]) {
  return (
    [
      ['ne', LON0 + HALF_LON, LAT0 + HALF_LAT],
      ['nw', LON0 - HALF_LON, LAT0 + HALF_LAT],
      ['sw', LON0 - HALF_LON, LAT0 - HALF_LAT],
      ['se', LON0 + HALF_LON, LAT0 - HALF_LAT],
    ] as const
  ).map(([id, lon, lat]) => ({
    id: `buoy-${id}`,
    name: `Buoy ${id.toUpperCase()}`,
    lon,
    lat,
    mastHeightM: 20,
    siteCost: 1,
    allowedTypes: allowedTypes(id),
  }));
}

/** The volume over the square ('square'): 3 multilateration receivers and a 10 m bound, from flMin to flMax. */
export function squareVolume(flMin: number, flMax: number) {
  return {
    id: 'square',
    name: 'The square',
    polygon: {
      type: 'Polygon' as const,
      coordinates: [ring(LON0 - HALF_LON, LAT0 - HALF_LAT, LON0 + HALF_LON, LAT0 + HALF_LAT)],
    },
    flMin,
    flMax,
    requiredFold: { mlat: 3 },
    requiredMlatAccuracyM: 10,
  };
}
