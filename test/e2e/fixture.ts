/**
 * A small, self-contained demo data folder for the web app's end-to-end tests: what the app loads from /data/
 * on a first visit, small enough that coverage runs in a second or two in a headless browser.
 *
 * `writeE2eData(dir)` writes
 * - `demo-scenario.json`: two inline sensor types (a primary and a secondary, shortened to 60–80 NM), three
 *   flight levels, a 60″ grid, two volumes, the layouts "existing network" (3 sensors) and
 *   "existing plus east fill-in", and a budget;
 * - `sites.geojson`: four invented sites;
 * - `terrain/e2e-west.tif`, `terrain/e2e-east.tif`: two GeoTIFF tiles (0.75° × 1° each at 30″, side by side)
 *   cut from one seeded landscape (test/support/bumps.ts), invented terrain over the open South Atlantic
 *   near 41° S 30° W. Nothing real implied; every name is invented.
 *
 * Every path in the scenario is relative to the scenario file.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { GridGeo } from '../../worker/core/grid.ts';
import { encodeGeoTiff } from '../../worker/io/geotiff-write.ts';
import { bumpyDem } from '../support/bumps.ts';
import {
  demGeo,
  ring,
  siteFeature,
  type FixtureLayout,
  type FixtureSensorType,
  type FixtureSite,
  type FixtureVolume,
} from '../support/scenario-fixture.ts';

/** The terrain's extent (degrees): 1.5° × 1°. */
export const E2E_BOUNDS = { west: -30.75, south: -41.5, east: -29.25, north: -40.5 } as const;
/** Pixel size of the terrain tiles (degrees): 30″. */
export const E2E_PIXEL_DEG = 30 / 3600;
/** Seed of the landscape (test/support/bumps.ts). */
export const E2E_TERRAIN_SEED = 2024;

/** The scenario file's name inside the data folder. */
export const E2E_SCENARIO_FILE = 'demo-scenario.json';
export const E2E_SITES_FILE = 'sites.geojson';
/** Terrain tiles, west then east, relative to the data folder. */
export const E2E_TERRAIN_FILES = ['terrain/e2e-west.tif', 'terrain/e2e-east.tif'] as const;

/** An invented compact terminal primary (field shapes as in data/catalog/sensor-types.json). */
export const E2E_PRIMARY: FixtureSensorType = {
  id: 'psr-compact',
  name: 'Compact S-band primary (test)',
  kind: 'primary',
  frequencyMHz: 2800,
  cost: 5,
  maxElevationDeg: 40,
  instrumentedRangeNm: 60,
  minRangeNm: 0.5,
  weatherLossDb: 4,
  elevationPattern: { type: 'cosec2', startDeg: 3.6, endDeg: 30, beamwidthDeg: 4.8 },
  detection: { referenceRangeNm: 45, referenceRcsM2: 1 },
  targetRcsM2: 1,
};

/** An invented short-range secondary. */
export const E2E_SECONDARY: FixtureSensorType = {
  id: 'ssr-compact',
  name: 'Compact secondary (test)',
  kind: 'secondary',
  frequencyMHz: 1030,
  cost: 2.5,
  maxElevationDeg: 40,
  instrumentedRangeNm: 80,
  elevationPattern: { type: 'cosec2', startDeg: 4, endDeg: 40, beamwidthDeg: 12 },
  detection: { referenceRangeNm: 100 },
};

export const E2E_SENSOR_TYPES: readonly FixtureSensorType[] = [E2E_PRIMARY, E2E_SECONDARY];

export const E2E_SITES: readonly FixtureSite[] = [
  {
    id: 'halvoran-north',
    name: 'Halvoran North Beacon',
    lon: -30.28,
    lat: -40.78,
    mastHeightM: 20,
    siteCost: 2,
    existing: true,
  },
  {
    id: 'halvoran-south',
    name: 'Halvoran South Hill',
    lon: -30.12,
    lat: -41.27,
    mastHeightM: 15,
    siteCost: 1.5,
    existing: true,
    allowedTypes: ['ssr-compact'],
  },
  {
    id: 'ridge-east',
    name: 'Glimmerback Ridge',
    lon: -29.55,
    lat: -40.95,
    mastHeightM: 18,
    siteCost: 1.2,
    allowedTypes: ['ssr-compact'],
  },
  {
    id: 'fell-west',
    name: 'Oskerfell Point',
    lon: -30.58,
    lat: -41.08,
    mastHeightM: 12,
    siteCost: 1,
  },
];

/** A counter-clockwise rectangle ring. */

export const E2E_VOLUMES: readonly FixtureVolume[] = [
  {
    id: 'halvoran-terminal',
    name: 'Halvoran terminal area',
    polygon: { type: 'Polygon', coordinates: [ring(-30.5, -41.3, -29.9, -40.75)] },
    flMin: 50,
    flMax: 200,
    requiredFold: { primary: 1, secondary: 1 },
    weight: 2,
  },
  {
    id: 'upper-block',
    name: 'Upper block',
    polygon: { type: 'Polygon', coordinates: [ring(-30.7, -41.45, -29.3, -40.55)] },
    flMin: 100,
    flMax: 300,
    requiredFold: { secondary: 1 },
  },
];

export const E2E_LAYOUT_NAME = 'existing network';

export const E2E_LAYOUTS: readonly FixtureLayout[] = [
  {
    name: E2E_LAYOUT_NAME,
    sensors: [
      { siteId: 'halvoran-north', typeId: 'psr-compact' },
      { siteId: 'halvoran-north', typeId: 'ssr-compact' },
      { siteId: 'halvoran-south', typeId: 'ssr-compact' },
    ],
  },
  {
    name: 'existing plus east fill-in',
    sensors: [
      { siteId: 'halvoran-north', typeId: 'psr-compact' },
      { siteId: 'halvoran-north', typeId: 'ssr-compact' },
      { siteId: 'halvoran-south', typeId: 'ssr-compact' },
      { siteId: 'ridge-east', typeId: 'ssr-compact' },
    ],
  },
];

export const E2E_FLIGHT_LEVELS = [50, 100, 200] as const;
export const E2E_BUDGET = 12;

export interface E2eTile {
  /** Relative to the data folder, as in the scenario. */
  file: string;
  path: string;
  geo: GridGeo;
  data: Float32Array;
}

export interface E2eData {
  dir: string;
  scenarioPath: string;
  sitesPath: string;
  tiles: E2eTile[];
  /** The scenario as written (sites as the file name). */
  scenario: Record<string, unknown>;
  /** The sites file as written. */
  sites: { type: 'FeatureCollection'; features: unknown[] };
}

/** The two tiles: one seeded landscape over E2E_BOUNDS, cut in two along its middle meridian. */
export function e2eTerrain(): { file: string; geo: GridGeo; data: Float32Array }[] {
  const width = Math.round((E2E_BOUNDS.east - E2E_BOUNDS.west) / E2E_PIXEL_DEG);
  const height = Math.round((E2E_BOUNDS.north - E2E_BOUNDS.south) / E2E_PIXEL_DEG);
  const whole = bumpyDem(E2E_TERRAIN_SEED, width, height);
  const half = width / 2;
  return E2E_TERRAIN_FILES.map((file, k) => {
    const data = new Float32Array(half * height);
    for (let r = 0; r < height; r++) {
      data.set(whole.subarray(r * width + k * half, r * width + (k + 1) * half), r * half);
    }
    const geo = demGeo({
      west: E2E_BOUNDS.west + k * half * E2E_PIXEL_DEG,
      north: E2E_BOUNDS.north,
      widthCells: half,
      heightCells: height,
      pixelDeg: E2E_PIXEL_DEG,
    });
    return { file, geo, data };
  });
}

/** Writes the demo data folder into `dir` (created if needed; existing files of the same names replaced). */
export function writeE2eData(dir: string): E2eData {
  mkdirSync(join(dir, 'terrain'), { recursive: true });
  const tiles = e2eTerrain().map((t) => {
    const path = join(dir, t.file);
    writeFileSync(path, new Uint8Array(encodeGeoTiff({ geo: t.geo, data: t.data })));
    return { ...t, path };
  });

  const sites = { type: 'FeatureCollection' as const, features: E2E_SITES.map(siteFeature) };
  const sitesPath = join(dir, E2E_SITES_FILE);
  writeFileSync(sitesPath, JSON.stringify(sites, null, 2) + '\n');

  const scenario: Record<string, unknown> = {
    name: 'Airshade end-to-end demo (invented terrain and sites)',
    terrain: { files: [...E2E_TERRAIN_FILES] },
    earth: { kFactor: 4 / 3 },
    grid: { cellArcSec: 60 },
    flightLevels: [...E2E_FLIGHT_LEVELS],
    targetRcsM2: 2,
    maxRangeKm: 200,
    budget: E2E_BUDGET,
    sensorTypes: E2E_SENSOR_TYPES,
    sites: E2E_SITES_FILE,
    volumes: E2E_VOLUMES,
    layouts: E2E_LAYOUTS,
  };
  const scenarioPath = join(dir, E2E_SCENARIO_FILE);
  writeFileSync(scenarioPath, JSON.stringify(scenario, null, 2) + '\n');
  return { dir, scenarioPath, sitesPath, tiles, scenario, sites };
}
