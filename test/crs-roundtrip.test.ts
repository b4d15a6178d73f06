/**
 * Every CRS we read can be written back. A DEM on a user-defined projected CRS with no EPSG code (a custom WKT:
 * UTM zone 25 south on a datum of its own name, written by geotiff.js's writer, not ours; test/support/
 * custom-crs-dem.ts) goes through `airshade floor` and `airshade coverage`; the floor GeoTIFF is read back with
 * geotiff.js + geotiff-geokeys-to-proj4 + proj4 and, when installed, with GDAL's gdalinfo (an independent
 * reader). UTM zone 25 S parameters: common practice (central meridian 33° W, k0 0.9996, FE 500 000 m,
 * FN 10 000 000 m). Over open South Atlantic near 35° S, 33° W.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fromArrayBuffer } from 'geotiff';
import geokeysToProj4 from 'geotiff-geokeys-to-proj4';
import proj4 from 'proj4';
import { runCli } from './support/run-cli.ts';
import { customCrsDem, CUSTOM_UTM25S_PROJ4 } from './support/custom-crs-dem.ts';
import { ring, writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import { encodeGeoTiff, geoTiffCrsProblem } from '../worker/io/geotiff-write.ts';
import { readDemTile } from '../worker/io/geotiff-read.ts';
import type { Crs, GridGeo } from '../worker/core/grid.ts';
import { CAUTION } from '../shared/caution.ts';

const HAS_GDALINFO = spawnSync('gdalinfo', ['--version']).status === 0;
if (!HAS_GDALINFO) {
  console.warn(
    'crs-roundtrip: gdalinfo not found — the GDAL read-back is skipped (apt-get install gdal-bin)',
  );
}

let dir: string;
let demPath: string;
const dem = customCrsDem();

const ab = (b: Buffer): ArrayBuffer =>
  b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer;

async function readBack(path: string) {
  const tiff = await fromArrayBuffer(ab(readFileSync(path)));
  const img = await tiff.getImage();
  const keys = img.getGeoKeys() as Record<string, unknown>;
  const def = geokeysToProj4.toProj4(keys as unknown as Parameters<typeof geokeysToProj4.toProj4>[0]);
  const [data] = (await img.readRasters()) as unknown as Float32Array[];
  return { img, keys, proj: def.proj4, data };
}

/** Largest distance (m) between two CRSs' projections of a few lon/lat points around the tile. */
function projGapM(a: string, b: string, lon0: number, lat0: number): number {
  let worst = 0;
  for (const [dl, dp] of [
    [0, 0],
    [0.3, 0.2],
    [-0.4, -0.3],
    [0.5, -0.5],
  ]) {
    const p = proj4('WGS84', a, [lon0 + dl, lat0 + dp]);
    const q = proj4('WGS84', b, [lon0 + dl, lat0 + dp]);
    worst = Math.max(worst, Math.hypot(p[0] - q[0], p[1] - q[1]));
  }
  return worst;
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-crs-'));
  demPath = join(dir, 'custom-utm25s.tif');
  writeFileSync(demPath, new Uint8Array(dem.bytes));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a DEM on a custom-WKT projected CRS (no EPSG code)', () => {
  it('is read as the user-defined CRS it is', async () => {
    const t = await readDemTile(ab(readFileSync(demPath)), demPath);
    expect(t.geo.crs.kind).toBe('projected');
    expect(t.geo.crs.epsg).toBeUndefined();
    expect(projGapM(t.geo.crs.proj4, CUSTOM_UTM25S_PROJ4, -33.2, -35.2)).toBeLessThan(1e-6);
    expect(geoTiffCrsProblem(t.geo.crs)).toBeUndefined();
  });

  it('goes through `airshade floor`: the GeoTIFF carries the same CRS, origin and pixel size', async () => {
    const out = join(dir, 'floor.tif');
    const r = await runCli(
      'floor',
      '--dem',
      demPath,
      '--site=-33.2,-35.2',
      '--mast-m',
      '30',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const back = await readBack(out);
    // The user-defined keys, as written by the source file.
    expect(back.keys.ProjectedCSTypeGeoKey).toBe(32767);
    expect(back.keys.ProjCoordTransGeoKey).toBe(1);
    expect(back.keys.ProjNatOriginLongGeoKey).toBe(-33);
    expect(back.keys.ProjScaleAtNatOriginGeoKey).toBe(0.9996);
    expect(back.keys.ProjFalseNorthingGeoKey).toBe(10_000_000);
    expect(back.keys.GTCitationGeoKey).toBe('Ocean survey grid / UTM zone 25S');
    expect(String(back.keys.GeogCitationGeoKey)).toContain('Datum = Ocean_Survey_Datum');
    expect(back.keys.GTRasterTypeGeoKey).toBe(1);
    expect(projGapM(back.proj, CUSTOM_UTM25S_PROJ4, -33.2, -35.2)).toBeLessThan(1e-6);
    expect(back.img.getOrigin().slice(0, 2)).toEqual([dem.originX, dem.originY]);
    expect(back.img.getResolution().slice(0, 2)).toEqual([dem.pixelM, -dem.pixelM]);
    expect(back.img.getWidth()).toBe(dem.width);
    const description = String(await back.img.getFileDirectory().loadValue('ImageDescription'));
    expect(description.startsWith(CAUTION)).toBe(true);
    // A floor is never below the ground it stands on, and most of this small tile is in sight.
    let valued = 0;
    for (let i = 0; i < back.data.length; i++) {
      if (Number.isNaN(back.data[i])) continue;
      valued++;
      expect(back.data[i]).toBeGreaterThanOrEqual(dem.heights[i] - 0.01);
    }
    expect(valued).toBeGreaterThan(back.data.length / 2);
    // And our own reader takes it as input again: the floor raster can be a DEM for the next step.
    const again = await readDemTile(ab(readFileSync(out)), out);
    expect(again.geo.originX).toBe(dem.originX);
    expect(projGapM(again.geo.crs.proj4, CUSTOM_UTM25S_PROJ4, -33.2, -35.2)).toBeLessThan(1e-6);
  });

  it.skipIf(!HAS_GDALINFO)('the floor GeoTIFF reads back in GDAL (gdalinfo) with the custom CRS', () => {
    const out = join(dir, 'floor.tif');
    const r = spawnSync('gdalinfo', ['-json', out], { encoding: 'utf8' });
    expect(r.status).toBe(0);
    const info = JSON.parse(r.stdout) as {
      coordinateSystem: { wkt: string };
      geoTransform: number[];
      size: number[];
    };
    const wkt = info.coordinateSystem.wkt;
    expect(wkt).toContain('Ocean survey grid / UTM zone 25S');
    expect(wkt).toContain('Ocean_Survey_Datum');
    expect(wkt).toMatch(/Transverse Mercator/);
    expect(wkt).toMatch(/"Longitude of natural origin",-33/);
    expect(wkt).toMatch(/"Scale factor at natural origin",0\.9996/);
    expect(wkt).toMatch(/"False northing",10000000/);
    expect(wkt).not.toMatch(/ID\["EPSG",327\d\d\]\]$/); // not silently turned into a stock EPSG zone
    expect(info.geoTransform).toEqual([dem.originX, dem.pixelM, 0, dem.originY, 0, -dem.pixelM]);
    expect(info.size).toEqual([dem.width, dem.height]);
  });

  it('goes through `airshade coverage` and writes whole outputs', async () => {
    let f: Fixture | undefined;
    try {
      f = writeScenarioFixture({
        sites: [
          { id: 'gull', name: 'Gull Shoal', lon: -33.2, lat: -35.2, mastHeightM: 30 },
          { id: 'tern', name: 'Tern Bank', lon: -33.1, lat: -35.12, mastHeightM: 25 },
        ],
        volumes: [
          {
            id: 'box',
            name: 'Survey box',
            polygon: { type: 'Polygon', coordinates: [ring(-33.3, -35.28, -33.1, -35.1)] },
            flMin: 50,
            flMax: 100,
            requiredFold: { any: 1 },
          },
        ],
        layouts: [],
        cellArcSec: 15,
        flightLevels: [50, 100],
      });
      writeFileSync(f.demPath, new Uint8Array(dem.bytes));
      const out = join(dir, 'coverage');
      const r = await runCli('coverage', f.scenarioPath, '--out', out, '--threads', '0', '--quiet');
      expect(r.err).toBe('');
      expect(r.code).toBe(0);
      const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8')) as {
        volumes: { coveredPct: number }[];
      };
      expect(summary.volumes.length).toBe(2);
      for (const v of summary.volumes) expect(v.coveredPct).toBeGreaterThan(50);
      const floor = await readBack(join(out, 'network-floor.tif'));
      expect(floor.keys.GeographicTypeGeoKey).toBe(4326);
      const layer = JSON.parse(readFileSync(join(out, 'coverage-FL050.geojson'), 'utf8')) as {
        features: unknown[];
      };
      expect(layer.features.length).toBeGreaterThan(0);
    } finally {
      f?.cleanup();
    }
  });
});

describe('CRSs without geokeys from a file: user-defined keys built from the proj4 definition', () => {
  // Each definition, written on a small grid and read back through geotiff.js + geokeys-to-proj4, must project a
  // few points to the same place (< 1 mm). Parameters are invented, over open ocean near 35° S, 33° W.
  const cases: [string, string][] = [
    [
      'transverse Mercator',
      '+proj=tmerc +lat_0=-35 +lon_0=-33 +k=0.9999 +x_0=200000 +y_0=300000 +ellps=WGS84',
    ],
    ['UTM 25 south', '+proj=utm +zone=25 +south +datum=WGS84 +units=m'],
    ['Mercator', '+proj=merc +lon_0=-30 +k=1 +x_0=0 +y_0=0 +datum=WGS84'],
    [
      'Lambert conformal 2SP',
      '+proj=lcc +lat_1=-30 +lat_2=-40 +lat_0=-35 +lon_0=-33 +x_0=1000 +y_0=2000 +ellps=GRS80',
    ],
    ['Lambert azimuthal equal area', '+proj=laea +lat_0=-35 +lon_0=-33 +x_0=0 +y_0=0 +datum=WGS84'],
    ['Albers equal area', '+proj=aea +lat_1=-30 +lat_2=-40 +lat_0=-35 +lon_0=-33 +x_0=0 +y_0=0 +datum=WGS84'],
    ['azimuthal equidistant', '+proj=aeqd +lat_0=-35 +lon_0=-33 +x_0=0 +y_0=0 +datum=WGS84'],
    [
      'tmerc on the international ellipsoid',
      '+proj=tmerc +lat_0=0 +lon_0=-33 +k=0.9996 +x_0=500000 +y_0=10000000 +ellps=intl',
    ],
  ];
  for (const [name, def] of cases) {
    it(`${name} round-trips`, async () => {
      const crs: Crs = { kind: 'projected', proj4: def, label: `invented ${name}` };
      expect(geoTiffCrsProblem(crs)).toBeUndefined();
      const [x, y] = proj4('WGS84', def, [-33.2, -35.2]);
      const geo: GridGeo = { width: 4, height: 3, originX: x, originY: y, pixelX: 100, pixelY: -100, crs };
      const path = join(dir, `${name.replace(/\W+/g, '-')}.tif`);
      writeFileSync(path, new Uint8Array(encodeGeoTiff({ geo, data: new Float32Array(12).fill(5) })));
      const back = await readBack(path);
      expect(back.keys.ProjectedCSTypeGeoKey).toBe(32767);
      expect(projGapM(back.proj, def, -33.2, -35.2)).toBeLessThan(1e-3);
      const t = await readDemTile(ab(readFileSync(path)), path);
      expect(projGapM(t.geo.crs.proj4, def, -33.2, -35.2)).toBeLessThan(1e-3);
    });
  }

  it('a projection it cannot spell is refused with a message before any work, never a crash at the end', () => {
    const crs: Crs = {
      kind: 'projected',
      proj4: '+proj=robin +lon_0=-33 +datum=WGS84',
      label: 'invented world',
    };
    expect(geoTiffCrsProblem(crs)).toMatch(/invented world.*no EPSG code.*robin/);
  });
});
