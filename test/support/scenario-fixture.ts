/**
 * A small self-contained scenario written into a temp dir, so that coverage tests run in seconds: a generated
 * GeoTIFF (EPSG:4326, a few hundred cells a side, invented terrain over the open South Atlantic near 41° S 30° W,
 * nothing real implied), a sites file (GeoJSON or CSV, or inline), sensor types inline, volumes, flight levels
 * and layouts. Every name is invented.
 *
 * `writeScenarioFixture()` with no options gives the default fixture: bumpy terrain 2.5° × 2° at 30″, three
 * sites (a primary + secondary site, a secondary-only site, a primary-only site), two volumes (one with a
 * hole), three flight levels, two layouts, and a 60″ analysis grid.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../../worker/core/grid.ts';
import { encodeGeoTiff } from '../../worker/io/geotiff-write.ts';
import { bumpyDem } from './bumps.ts';

export interface FixtureSite {
  id: string;
  name: string;
  lon: number;
  lat: number;
  mastHeightM: number;
  siteCost?: number;
  existing?: boolean;
  allowedTypes?: string[];
}

export interface FixtureDem {
  /** North-west corner of the raster (degrees). */
  west: number;
  north: number;
  widthCells: number;
  heightCells: number;
  /** Pixel size in degrees (square pixels in lon/lat). */
  pixelDeg: number;
  /** Heights (m), row-major, row 0 north; default: seeded hills (test/support/bumps.ts). */
  data?: Float32Array;
}

export type FixtureSensorType = Record<string, unknown> & {
  id: string;
  kind: 'primary' | 'secondary' | 'adsb' | 'mlat';
};

export interface FixtureVolume {
  id: string;
  name: string;
  polygon:
    { type: 'Polygon'; coordinates: number[][][] } | { type: 'MultiPolygon'; coordinates: number[][][][] };
  flMin?: number;
  flMax?: number;
  altitudeBand?: { reference: 'amsl' | 'agl'; minFt: number; maxFt: number };
  requiredFold: { primary?: number; secondary?: number; any?: number; adsb?: number; mlat?: number };
  requiredMlatAccuracyM?: number;
  weight?: number;
  targetRcsM2?: number;
  targetFluctuation?: string;
  targetTransponder?: string;
}

export interface FixtureLayout {
  name: string;
  sensors: { siteId: string; typeId: string }[];
}

export interface FixtureOptions {
  name?: string;
  dem?: FixtureDem;
  sites?: FixtureSite[];
  /** How the sites are given: a GeoJSON file (default), a CSV file or inline in the scenario. */
  sitesFormat?: 'geojson' | 'csv' | 'inline';
  sensorTypes?: FixtureSensorType[];
  volumes?: FixtureVolume[];
  flightLevels?: number[];
  layouts?: FixtureLayout[];
  cellArcSec?: number;
  bounds?: { west: number; south: number; east: number; north: number };
  kFactor?: number;
  maxRangeKm?: number;
  targetRcsM2?: number;
  /** Further top-level scenario fields as given (e.g. multipath, mlatAltitudeAided, targetTransponder). */
  extra?: Record<string, unknown>;
}

export interface Fixture {
  dir: string;
  scenarioPath: string;
  demPath: string;
  sitesPath: string | null;
  /** The scenario as written (sites as the file path, or inline). */
  scenario: Record<string, unknown>;
  /** The raster written to demPath. */
  dem: { geo: GridGeo; data: Float32Array };
  sites: FixtureSite[];
  /** Removes the temp dir. */
  cleanup(): void;
}

/** Terrain of the default fixture: 2.5° × 2° at 30″ (300 × 240 cells) centred on 30° W, 41° S. */
export const DEFAULT_DEM: FixtureDem = {
  west: -31.25,
  north: -40,
  widthCells: 300,
  heightCells: 240,
  pixelDeg: 30 / 3600,
};

/** An invented terminal primary: reference-range form, range-limited at FL100 well inside the terrain. */
export const FIXTURE_PRIMARY: FixtureSensorType = {
  id: 'psr-t',
  name: 'Test terminal primary',
  kind: 'primary',
  frequencyMHz: 2800,
  cost: 6,
  maxElevationDeg: 40,
  instrumentedRangeNm: 60,
  minRangeNm: 0.5,
  weatherLossDb: 3,
  elevationPattern: { type: 'cosec2', startDeg: 3, endDeg: 35 },
  detection: { referenceRangeNm: 40, referenceRcsM2: 1 },
  targetRcsM2: 1,
};

/** An invented secondary with a table pattern. */
export const FIXTURE_SECONDARY: FixtureSensorType = {
  id: 'ssr-t',
  name: 'Test secondary',
  kind: 'secondary',
  frequencyMHz: 1030,
  cost: 3,
  maxElevationDeg: 45,
  instrumentedRangeNm: 55,
  elevationPattern: { type: 'table', deg: [-5, 0, 5, 20, 45], gainDb: [-20, -6, 0, -6, -15] },
  detection: { referenceRangeNm: 90 },
};

export const DEFAULT_SITES: FixtureSite[] = [
  { id: 'alder', name: 'Alder Knoll', lon: -30.35, lat: -40.8, mastHeightM: 25, siteCost: 2, existing: true },
  {
    id: 'brook',
    name: 'Brellindar Rise',
    lon: -29.65,
    lat: -41.3,
    mastHeightM: 20,
    siteCost: 1.5,
    allowedTypes: ['ssr-t'],
  },
  {
    id: 'cinder',
    name: 'Cinderhollow',
    lon: -30.6,
    lat: -41.45,
    mastHeightM: 15,
    siteCost: 1,
    allowedTypes: ['psr-t'],
  },
];

/** A closed counter-clockwise rectangle ring (RFC 7946 exterior) from its west, south, east and north edges. */
export const ring = (w: number, s: number, e: number, n: number) => [
  [w, s],
  [e, s],
  [e, n],
  [w, n],
  [w, s],
];

export const DEFAULT_VOLUMES: FixtureVolume[] = [
  {
    id: 'inner',
    name: 'Inner terminal block',
    polygon: { type: 'Polygon', coordinates: [ring(-30.6, -41.2, -29.8, -40.6)] },
    flMin: 50,
    flMax: 245,
    requiredFold: { primary: 1, secondary: 2 },
    weight: 3,
  },
  {
    id: 'ring',
    name: 'Ring block with a hole',
    polygon: {
      type: 'Polygon',
      // Outer ring counter-clockwise, hole clockwise (RFC 7946 §3.1.6).
      coordinates: [ring(-31, -41.8, -29.2, -40.3), ring(-30.4, -41.3, -29.8, -40.8).reverse()],
    },
    flMin: 100,
    flMax: 300,
    requiredFold: { any: 1 },
  },
];

export const DEFAULT_LAYOUTS: FixtureLayout[] = [
  { name: 'east only', sensors: [{ siteId: 'brook', typeId: 'ssr-t' }] },
  {
    name: 'pair',
    sensors: [
      { siteId: 'alder', typeId: 'psr-t' },
      { siteId: 'brook', typeId: 'ssr-t' },
    ],
  },
];

/** The DEM's geo-referencing. */
export function demGeo(d: FixtureDem): GridGeo {
  return {
    width: d.widthCells,
    height: d.heightCells,
    originX: d.west,
    originY: d.north,
    pixelX: d.pixelDeg,
    pixelY: -d.pixelDeg,
    crs: WGS84_GEOGRAPHIC,
  };
}

/** A site as a GeoJSON Point feature of the scenario's sites file. */
export function siteFeature(s: FixtureSite) {
  return {
    type: 'Feature',
    geometry: { type: 'Point', coordinates: [s.lon, s.lat] },
    properties: {
      id: s.id,
      name: s.name,
      mastHeightM: s.mastHeightM,
      siteCost: s.siteCost ?? 1,
      ...(s.existing !== undefined ? { existing: s.existing } : {}),
      ...(s.allowedTypes ? { allowedTypes: s.allowedTypes } : {}),
    },
  };
}

function sitesCsv(sites: readonly FixtureSite[]): string {
  const q = (t: string) => (/[",\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t);
  const rows = ['id,name,lon,lat,mastHeightM,siteCost,existing,allowedTypes'];
  for (const s of sites) {
    rows.push(
      [
        q(s.id),
        q(s.name),
        String(s.lon),
        String(s.lat),
        String(s.mastHeightM),
        String(s.siteCost ?? 1),
        s.existing === undefined ? '' : String(s.existing),
        (s.allowedTypes ?? []).join(';'),
      ].join(','),
    );
  }
  return rows.join('\n') + '\n';
}

/** Writes the scenario, its DEM and its sites file into a fresh temp dir. */
export function writeScenarioFixture(opts: FixtureOptions = {}): Fixture {
  const dir = mkdtempSync(join(tmpdir(), 'airshade-fixture-'));
  const d = opts.dem ?? DEFAULT_DEM;
  const geo = demGeo(d);
  const data = d.data ?? bumpyDem(41, d.widthCells, d.heightCells);
  if (data.length !== d.widthCells * d.heightCells) {
    throw new Error(
      `scenario fixture: dem.data has ${data.length} values for ${d.widthCells} x ${d.heightCells}`,
    );
  }
  const demPath = join(dir, 'terrain.tif');
  writeFileSync(demPath, new Uint8Array(encodeGeoTiff({ geo, data })));

  const sites = opts.sites ?? DEFAULT_SITES;
  const format = opts.sitesFormat ?? 'geojson';
  const collection = { type: 'FeatureCollection', features: sites.map(siteFeature) };
  let sitesPath: string | null = null;
  let sitesField: unknown = collection;
  if (format === 'geojson') {
    sitesPath = join(dir, 'sites.geojson');
    writeFileSync(sitesPath, JSON.stringify(collection, null, 2));
    sitesField = 'sites.geojson';
  } else if (format === 'csv') {
    sitesPath = join(dir, 'sites.csv');
    writeFileSync(sitesPath, sitesCsv(sites));
    sitesField = 'sites.csv';
  }

  const scenario: Record<string, unknown> = {
    name: opts.name ?? 'Airshade test fixture (invented)',
    terrain: { files: ['terrain.tif'] },
    earth: { kFactor: opts.kFactor ?? 4 / 3 },
    grid: { cellArcSec: opts.cellArcSec ?? 60, ...(opts.bounds ? { bounds: opts.bounds } : {}) },
    flightLevels: opts.flightLevels ?? [50, 100, 200],
    sensorTypes: opts.sensorTypes ?? [FIXTURE_PRIMARY, FIXTURE_SECONDARY],
    sites: sitesField,
    volumes: opts.volumes ?? DEFAULT_VOLUMES,
    layouts: opts.layouts ?? DEFAULT_LAYOUTS,
    ...(opts.maxRangeKm !== undefined ? { maxRangeKm: opts.maxRangeKm } : {}),
    ...(opts.targetRcsM2 !== undefined ? { targetRcsM2: opts.targetRcsM2 } : {}),
    ...(opts.extra ?? {}),
  };
  const scenarioPath = join(dir, 'scenario.json');
  writeFileSync(scenarioPath, JSON.stringify(scenario, null, 2));
  return {
    dir,
    scenarioPath,
    demPath,
    sitesPath,
    scenario,
    dem: { geo, data },
    sites,
    cleanup: () => rmSync(dir, { recursive: true, force: true }),
  };
}
