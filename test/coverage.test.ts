/**
 * The coverage stage end to end: footprints on the analysis grid, the network, the statistics, the layers and
 * `airshade coverage` / `airshade diagram` as a user meets them, on small generated scenarios
 * (test/support/scenario-fixture.ts).
 *
 * Outside yardsticks, each named beside its check:
 * - Radar horizon on the effective earth: antenna 30 m, target FL100 (3048 m), k = 4/3 → ≈ 250.1 km, exact form
 *   √((Re+ha)² − Re²) + √((Re+h)² − Re²) (test/REFERENCES.md: Skolnik, Introduction to Radar Systems, horizon on
 *   the 4/3 earth — recalled from memory, not re-read).
 * - Exact WGS84 geodesics (distances from the antenna): geographiclib-geodesic, the reference implementation of
 *   Karney, "Algorithms for geodesics", J. Geodesy 87 (2013).
 * - Flight level → planning altitude FL × 100 ft × 0.3048 m/ft in the ISA: ICAO Doc 7488.
 * - GeoJSON: RFC 7946 (§3.1.6 exterior rings counter-clockwise, holes clockwise); structure checked by
 *   @placemarkio/check-geojson; ring orientation also by @turf/boolean-clockwise.
 * - Polygon validity: OGC Simple Features / ISO 19125 as implemented by JSTS IsValidOp.
 * - Areas: @turf/area (a reference library) against the raster's cell areas.
 * - SVG well-formedness: the XML 1.0 rules as checked by fast-xml-parser's XMLValidator.
 */
import { getIssues } from '@placemarkio/check-geojson';
import { area as turfArea, booleanClockwise, booleanPointInPolygon } from '@turf/turf';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import geodesic from 'geographiclib-geodesic';
import { fromArrayBuffer } from 'geotiff';
import GeometryFactory from 'jsts/org/locationtech/jts/geom/GeometryFactory.js';
import GeoJSONReader from 'jsts/org/locationtech/jts/io/GeoJSONReader.js';
import IsValidOp from 'jsts/org/locationtech/jts/operation/valid/IsValidOp.js';
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { flToMetres, formatFl } from '../shared/units.ts';
import { runCli } from './support/run-cli.ts';
import { allCandidates, footprintsFor, layoutCandidates, openSession } from '../worker/cli/session.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import { analysisGrid } from '../worker/cli/coverage.ts';
import { readTiles } from '../worker/cli/files.ts';
import { loadScenario, type LoadedScenario } from '../worker/cli/scenario.ts';
import type { Footprint } from '../worker/core/footprint.ts';
import type { GridGeo } from '../worker/core/grid.ts';
import { KINDS, Network, type FoldKind } from '../worker/core/network.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { rasterizeVolume, rowAreasKm2, volumeStats, type VolumeLevelStats } from '../worker/core/volumes.ts';
import {
  DEFAULT_SITES,
  writeScenarioFixture,
  type Fixture,
  type FixtureSensorType,
} from './support/scenario-fixture.ts';

const WGS84 = geodesic.Geodesic.WGS84;
const R = 6_371_000;

// ---------------------------------------------------------------------------------------------------------
// Helpers

const run = runCli;

/** Bad input: a non-zero exit and exactly one line on stderr matching `re`. */
function expectOneMessage(r: { code: number; err: string }, re: RegExp): void {
  expect(r.code).not.toBe(0);
  expect(r.err.trim().split('\n')).toHaveLength(1);
  expect(r.err).toMatch(re);
  expect(r.err).not.toMatch(/internal error|at .*\.ts:\d+/);
}

interface Pipeline {
  loaded: LoadedScenario;
  terrain: Terrain;
  grid: GridGeo;
  footprints: Footprint[];
  network: Network;
  fls: number[];
}

/** The coverage pipeline in-process, through the same helpers `airshade coverage` uses. */
async function pipeline(
  scenarioPath: string,
  o: { layout?: string; weather?: boolean; fls?: number[] } = {},
): Promise<Pipeline> {
  const session = await openSession(scenarioPath, 0, new ProgressLine('test', true));
  const { loaded, terrain, grid } = session;
  const s = loaded.scenario;
  const candidates =
    o.layout === undefined ? allCandidates(session) : layoutCandidates(session, o.layout, '--layout');
  const footprints = await footprintsFor(session, candidates, { weather: o.weather ?? false });
  const fls = o.fls ?? s.flightLevels;
  const network = new Network(grid.width * grid.height, fls.map(flToMetres), footprints);
  return { loaded, terrain, grid, footprints, network, fls };
}

/** Area (km²) of the cells where mask(i) holds, from the cell areas per row. */
function rasterAreaKm2(grid: GridGeo, mask: (i: number) => boolean): number {
  const rows = rowAreasKm2(grid);
  let a = 0;
  for (let i = 0; i < grid.width * grid.height; i++) if (mask(i)) a += rows[(i / grid.width) | 0];
  return a;
}

/** Twice the signed area (shoelace) of a closed lon/lat ring: > 0 counter-clockwise. */
function shoelace(ring: number[][]): number {
  let s = 0;
  for (let i = 1; i < ring.length; i++) s += ring[i - 1][0] * ring[i][1] - ring[i][0] * ring[i - 1][1];
  return s;
}

const jstsReader = new GeoJSONReader(new GeometryFactory());
/** OGC / ISO 19125 validity by JSTS IsValidOp: '' when valid, else its message. */
function ogcProblem(geometry: unknown): string {
  const op = new IsValidOp(jstsReader.read(geometry));
  return op.isValid() ? '' : String(op.getValidationError());
}

interface LayerProps {
  flightLevel: number;
  altitudeM: number;
  fold: number;
  kind: FoldKind;
  siteIds: string[];
  layer: string;
  volumeId?: string;
  areaKm2: number;
}
interface LayerFeature {
  type: 'Feature';
  properties: LayerProps;
  geometry: { type: 'MultiPolygon'; coordinates: number[][][][] };
}
interface Layer {
  type: 'FeatureCollection';
  features: LayerFeature[];
}

function readLayer(dir: string, fl: number): { text: string; layer: Layer } {
  const text = readFileSync(join(dir, `coverage-${formatFl(fl)}.geojson`), 'utf8');
  return { text, layer: JSON.parse(text) as Layer };
}

/**
 * A layer file's content without what belongs to its run rather than to the layer: `provenance` (the options and
 * input files) and `metadata.unevaluated` (which parts of the volumes' bands the run's set of levels leaves out).
 */
function layerSansProvenance(path: string): unknown {
  const j = JSON.parse(readFileSync(path, 'utf8'));
  delete j.provenance;
  if (j.metadata) delete j.metadata.unevaluated;
  return j;
}

function coverageFeature(layer: Layer, kind: FoldKind, fold: number): LayerFeature | undefined {
  return layer.features.find(
    (f) => f.properties.layer === 'coverage' && f.properties.kind === kind && f.properties.fold === fold,
  );
}

// ---------------------------------------------------------------------------------------------------------
// 1. Flat sea: the FL100 edge is the radar horizon

/** A sensor whose own limits are far away: only the earth's curvature limits it. */
const UNLIMITED: FixtureSensorType = {
  id: 'far-sighted',
  name: 'Test sensor with distant limits',
  kind: 'secondary',
  frequencyMHz: 1030,
  cost: 1,
  maxElevationDeg: 89,
  instrumentedRangeNm: 400,
  minRangeNm: 0.001,
  elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
  detection: { referenceRangeNm: 1000 },
};

describe('flat sea: the FL100 coverage ends at the radar horizon', () => {
  const SITE = { lon: -30, lat: -41 };
  const MAST_M = 30;
  let fx: Fixture;
  let p: Pipeline;
  beforeAll(async () => {
    // 6.6° × 5° of sea (0 m) at 60″ around the antenna: the horizon (≈ 2.98° of longitude, 2.25° of latitude
    // at 41° S) lies well inside.
    const W = 396;
    const H = 300;
    fx = writeScenarioFixture({
      dem: {
        west: SITE.lon - 3.3,
        north: SITE.lat + 2.5,
        widthCells: W,
        heightCells: H,
        pixelDeg: 1 / 60,
        data: new Float32Array(W * H),
      },
      sites: [{ id: 'mid-sea', name: 'Mid-sea test mast', ...SITE, mastHeightM: MAST_M }],
      sensorTypes: [UNLIMITED],
      volumes: [],
      layouts: [],
      flightLevels: [100],
      cellArcSec: 60,
      kFactor: 4 / 3,
    });
    p = await pipeline(fx.scenarioPath);
  });
  afterAll(() => fx.cleanup());

  // test/REFERENCES.md: ≈ 250.1 km for 30 m / FL100 / k = 4/3, exact form √((Re+h)² − Re²) summed
  // (Skolnik, horizon on the 4/3 earth — recalled from memory). Recomputed here from the formula's inputs.
  const re = (4 / 3) * R;
  const hM = flToMetres(100); // ICAO Doc 7488: FL100 = 3048 m
  const horizonM = Math.sqrt((re + MAST_M) ** 2 - re ** 2) + Math.sqrt((re + hM) ** 2 - re ** 2);
  // One analysis cell (60″): its sides in metres at 41° S, and its extent along an azimuth (the projection of the
  // cell onto the radial) — "within one cell in that direction". A tolerance, not a check value: 111 320 m is one
  // degree along the WGS84 equator, 2π × 6 378 137 m / 360 [calc], a little more than a degree of latitude at 41° S.
  const cellM = (60 / 3600) * 111_320;
  const cellLonM = cellM * Math.cos((SITE.lat * Math.PI) / 180);
  const cellAlongM = (azDeg: number) =>
    cellM * Math.abs(Math.cos((azDeg * Math.PI) / 180)) +
    cellLonM * Math.abs(Math.sin((azDeg * Math.PI) / 180));

  it('along 16 azimuths the farthest covered cell and the nearest uncovered one straddle it within a cell', () => {
    const { grid, network } = p;
    const fold = network.foldOf('any', 0);
    for (let k = 0; k < 16; k++) {
      const az = k * 22.5;
      let farthestCovered = -Infinity;
      let nearestUncovered = Infinity;
      let cellsSeen = 0;
      for (let d = 0; d < 275_000; d += 200) {
        const g = WGS84.Direct(SITE.lat, SITE.lon, az, d);
        const c = Math.floor((g.lon2! - grid.originX) / grid.pixelX);
        const r = Math.floor((g.lat2! - grid.originY) / grid.pixelY);
        expect(c >= 0 && r >= 0 && c < grid.width && r < grid.height).toBe(true);
        const lon = grid.originX + (c + 0.5) * grid.pixelX;
        const lat = grid.originY + (r + 0.5) * grid.pixelY;
        const s = WGS84.Inverse(SITE.lat, SITE.lon, lat, lon, geodesic.Geodesic.DISTANCE).s12!;
        if (fold[r * grid.width + c] >= 1) farthestCovered = Math.max(farthestCovered, s);
        else nearestUncovered = Math.min(nearestUncovered, s);
        cellsSeen++;
      }
      expect(cellsSeen).toBeGreaterThan(1000);
      const tol = cellAlongM(az);
      expect(Math.abs(farthestCovered - horizonM), `azimuth ${az}°: farthest covered`).toBeLessThan(tol);
      expect(Math.abs(nearestUncovered - horizonM), `azimuth ${az}°: nearest uncovered`).toBeLessThan(tol);
      // One clean edge: no covered cell beyond an uncovered one along the radial.
      expect(farthestCovered, `azimuth ${az}°: one edge`).toBeLessThan(nearestUncovered);
    }
  });

  it('over the whole grid: covered inside the horizon less a cell, uncovered beyond it plus a cell', () => {
    const { grid, network } = p;
    const fold = network.foldOf('any', 0);
    let inside = 0;
    let outside = 0;
    for (let r = 0; r < grid.height; r += 2) {
      const lat = grid.originY + (r + 0.5) * grid.pixelY;
      for (let c = 0; c < grid.width; c += 2) {
        const lon = grid.originX + (c + 0.5) * grid.pixelX;
        const s = WGS84.Inverse(SITE.lat, SITE.lon, lat, lon, geodesic.Geodesic.DISTANCE).s12!;
        const f = fold[r * grid.width + c];
        if (s < horizonM - cellM) {
          inside++;
          if (f !== 1) expect.fail(`cell (${c}, ${r}) at ${s.toFixed(0)} m: fold ${f}, expected 1`);
        } else if (s > horizonM + cellM) {
          outside++;
          if (f !== 0) expect.fail(`cell (${c}, ${r}) at ${s.toFixed(0)} m: fold ${f}, expected 0`);
        }
      }
    }
    expect(inside).toBeGreaterThan(5000);
    expect(outside).toBeGreaterThan(5000);
  });
});

describe('flat sea: the cone of silence above a sensor', () => {
  const SITE = { lon: -30, lat: -41 };
  let fx: Fixture;
  let p: Pipeline;
  beforeAll(async () => {
    // 0.4° × 0.3° of sea at 3″ (480 × 360 cells), analysis grid 3″: cells of 70 m × 93 m.
    const W = 480;
    const H = 360;
    fx = writeScenarioFixture({
      dem: {
        west: SITE.lon - 0.2,
        north: SITE.lat + 0.15,
        widthCells: W,
        heightCells: H,
        pixelDeg: 3 / 3600,
        data: new Float32Array(W * H),
      },
      // Antenna at sea level, as in the reference geometry.
      sites: [{ id: 'buoy', name: 'Test buoy mast', ...SITE, mastHeightM: 0 }],
      sensorTypes: [{ ...UNLIMITED, maxElevationDeg: 40 }],
      volumes: [],
      layouts: [],
      flightLevels: [100],
      cellArcSec: 3,
    });
    p = await pipeline(fx.scenarioPath);
  });
  afterAll(() => fx.cleanup());

  it('at FL100 with a 40° maximum elevation the hole has a radius of h / tan 40° = 3632 m, to within a cell', () => {
    // test/REFERENCES.md: cone of silence radius 3632 m at FL100 for 40° (geometry [calc]); recomputed here.
    const radiusM = flToMetres(100) / Math.tan((40 * Math.PI) / 180);
    expect(radiusM).toBeCloseTo(3632, 0);
    const { grid, network } = p;
    const fold = network.foldOf('any', 0);
    // Tolerance: a cell's diagonal, with 111 320 m per degree as above.
    const cellDiagM = Math.hypot((3 / 3600) * 111_320, (3 / 3600) * 111_320 * Math.cos((41 * Math.PI) / 180));
    let inside = 0;
    let outside = 0;
    for (let r = 0; r < grid.height; r++) {
      const lat = grid.originY + (r + 0.5) * grid.pixelY;
      for (let c = 0; c < grid.width; c++) {
        const lon = grid.originX + (c + 0.5) * grid.pixelX;
        const s = WGS84.Inverse(SITE.lat, SITE.lon, lat, lon, geodesic.Geodesic.DISTANCE).s12!;
        if (s > 15_000) continue;
        const f = fold[r * grid.width + c];
        if (s < radiusM - cellDiagM) {
          inside++;
          if (f !== 0) expect.fail(`cell (${c}, ${r}) at ${s.toFixed(0)} m: covered inside the cone`);
        } else if (s > radiusM + cellDiagM) {
          outside++;
          if (f !== 1) expect.fail(`cell (${c}, ${r}) at ${s.toFixed(0)} m: not covered outside the cone`);
        }
      }
    }
    expect(inside).toBeGreaterThan(3000);
    expect(outside).toBeGreaterThan(30_000);
  });
});

// ---------------------------------------------------------------------------------------------------------
// 2. `airshade coverage` on the default fixture

describe('airshade coverage on the fixture', () => {
  let fx: Fixture;
  let out: string;
  let first: { code: number; out: string; err: string };
  let p: Pipeline;
  beforeAll(async () => {
    fx = writeScenarioFixture();
    out = join(fx.dir, 'out');
    first = await run('coverage', fx.scenarioPath, '--out', out, '--threads', '0', '--quiet');
    p = await pipeline(fx.scenarioPath);
  });
  afterAll(() => fx.cleanup());

  it('writes one coverage-FLxxx.geojson per level, summary.json and network-floor.tif', () => {
    expect(first.err).toBe('');
    expect(first.code).toBe(0);
    expect(p.fls).toEqual([50, 100, 200]);
    for (const fl of p.fls) expect(existsSync(join(out, `coverage-${formatFl(fl)}.geojson`))).toBe(true);
    expect(existsSync(join(out, 'summary.json'))).toBe(true);
    expect(existsSync(join(out, 'network-floor.tif'))).toBe(true);
    expect(first.out).toMatch(/coverage of "Airshade test fixture \(invented\)"/);
  });

  it('every layer is valid GeoJSON (RFC 7946, check-geojson) and valid OGC polygons (JSTS IsValidOp)', () => {
    for (const fl of p.fls) {
      const { text, layer } = readLayer(out, fl);
      expect(getIssues(text), formatFl(fl)).toEqual([]);
      expect(layer.type).toBe('FeatureCollection');
      expect(layer.features.length).toBeGreaterThan(0);
      for (const f of layer.features) {
        const what = `${formatFl(fl)} ${f.properties.layer} ${f.properties.kind} fold ${f.properties.fold}`;
        expect(f.geometry.type).toBe('MultiPolygon');
        expect(ogcProblem(f.geometry), what).toBe('');
      }
    }
  });

  it('exterior rings run counter-clockwise and holes clockwise (RFC 7946 §3.1.6)', () => {
    let holes = 0;
    for (const fl of p.fls) {
      for (const f of readLayer(out, fl).layer.features) {
        for (const polygon of f.geometry.coordinates) {
          polygon.forEach((ring, i) => {
            // Shoelace sign, and @turf/boolean-clockwise as a second opinion.
            expect(shoelace(ring) > 0, `ring ${i}`).toBe(i === 0);
            expect(booleanClockwise(ring), `ring ${i}`).toBe(i > 0);
            if (i > 0) holes++;
          });
        }
      }
    }
    // The fixture's masked terrain leaves holes in the coverage; the test must see some.
    expect(holes).toBeGreaterThan(0);
  });

  it('no number is written with more than 6 decimals', () => {
    for (const fl of p.fls) {
      const { text } = readLayer(out, fl);
      expect(text.match(/\d\.\d{7,}/g)).toBeNull();
      expect(text).toMatch(/-\d+\.\d{1,6}\b/); // coordinates are there, rounded
    }
  });

  it('features carry flightLevel, altitudeM, fold, kind and the contributing site ids (DESIGN §5)', () => {
    const ids = new Set(fx.sites.map((s) => s.id));
    const volumeIds = new Set(p.loaded.scenario.volumes.map((v) => v.id));
    for (const fl of p.fls) {
      const { layer } = readLayer(out, fl);
      for (const f of layer.features) {
        const q = f.properties;
        expect(q.flightLevel).toBe(fl);
        expect(q.altitudeM).toBeCloseTo(fl * 100 * 0.3048, 6); // ICAO Doc 7488
        expect(Number.isInteger(q.fold) && q.fold >= 0).toBe(true);
        expect(KINDS).toContain(q.kind);
        expect(Array.isArray(q.siteIds)).toBe(true);
        expect([...q.siteIds].sort()).toEqual(q.siteIds);
        for (const id of q.siteIds) expect(ids.has(id)).toBe(true);
        expect(['coverage', 'gap']).toContain(q.layer);
        if (q.layer === 'coverage') {
          expect(q.fold).toBeGreaterThanOrEqual(1);
          expect(q.siteIds.length).toBeGreaterThanOrEqual(q.fold);
        } else {
          expect(volumeIds.has(q.volumeId!)).toBe(true);
        }
      }
      // The fixture's kinds: primaries on alder and cinder, secondaries on alder and brook.
      const byKind = (k: FoldKind) => coverageFeature(layer, k, 1)?.properties.siteIds;
      if (fl <= 100) {
        expect(byKind('primary')).toEqual(['alder', 'cinder']);
        expect(byKind('secondary')).toEqual(['alder', 'brook']);
        expect(byKind('any')).toEqual(['alder', 'brook', 'cinder']);
      }
    }
  });

  it('the in-process network is the one the command wrote: network-floor.tif equals networkFloor()', async () => {
    const buf = readFileSync(join(out, 'network-floor.tif'));
    const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
    const img = await tiff.getImage();
    expect(img.getWidth()).toBe(p.grid.width);
    expect(img.getHeight()).toBe(p.grid.height);
    const [ox, oy] = img.getOrigin();
    expect(ox).toBeCloseTo(p.grid.originX, 9);
    expect(oy).toBeCloseTo(p.grid.originY, 9);
    const [written] = (await img.readRasters()) as unknown as Float32Array[];
    const floor = p.network.networkFloor();
    expect(Array.from(written)).toEqual(Array.from(floor));
    let valued = 0;
    for (const v of floor) if (v === v) valued++;
    expect(valued).toBeGreaterThan(floor.length / 2);
  });

  it('each feature’s polygon area (turf) is within 1 % of the raster area it came from', () => {
    const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8')) as {
      volumes: VolumeLevelStats[];
    };
    let checked = 0;
    p.fls.forEach((fl, f) => {
      for (const feat of readLayer(out, fl).layer.features) {
        const q = feat.properties;
        const polygonKm2 = turfArea(feat.geometry) / 1e6; // @turf/area, reference library
        let rasterKm2: number;
        if (q.layer === 'coverage') {
          const fold = p.network.foldOf(q.kind, f);
          rasterKm2 = rasterAreaKm2(p.grid, (i) => fold[i] >= q.fold);
        } else {
          // A gap layer: the volume's cells that do not meet its requirement.
          const st = summary.volumes.find((v) => v.volumeId === q.volumeId && v.flightLevel === fl)!;
          rasterKm2 = st.areaKm2 - st.meetsRequirementKm2;
        }
        const what = `${formatFl(fl)} ${q.layer} ${q.kind} ≥${q.fold} ${q.volumeId ?? ''}`;
        expect(rasterKm2, what).toBeGreaterThan(0);
        expect(Math.abs(polygonKm2 / rasterKm2 - 1), what).toBeLessThan(0.01);
        expect(Math.abs(q.areaKm2 / rasterKm2 - 1), what).toBeLessThan(1e-6);
        checked++;
      }
    });
    expect(checked).toBeGreaterThan(10);
  });

  it('covered cell centres lie inside the fold-1 polygons and uncovered ones outside (turf point-in-polygon)', () => {
    const f = p.fls.indexOf(100);
    const { layer } = readLayer(out, 100);
    // Receiver kinds have no layers in a study without receivers (their folds are all zero).
    for (const kind of KINDS.filter((k) => k === 'any' || p.network.kindsPresent.has(k))) {
      const feat = coverageFeature(layer, kind, 1)!;
      const fold = p.network.foldOf(kind, f);
      const { grid } = p;
      for (let r = 1; r < grid.height; r += 5) {
        for (let c = 2; c < grid.width; c += 5) {
          const pt = [grid.originX + (c + 0.5) * grid.pixelX, grid.originY + (r + 0.5) * grid.pixelY];
          const inside = booleanPointInPolygon(pt, feat.geometry);
          if (inside !== fold[r * grid.width + c] >= 1) expect.fail(`${kind} cell (${c}, ${r})`);
        }
      }
    }
  });

  it('summary.json holds the statistics per volume and level that volumeStats gives in-process', () => {
    const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8')) as {
      flightLevels: number[];
      volumes: VolumeLevelStats[];
      network: { sensors: { siteId: string; typeId: string; kind: string }[] };
    };
    const vols = p.loaded.scenario.volumes;
    const masks = vols.map((v) => rasterizeVolume(v, p.grid));
    const stats = volumeStats(p.network, vols, masks, p.fls, p.grid);
    expect(summary.flightLevels).toEqual(p.fls);
    expect(summary.volumes).toHaveLength(stats.length);
    // inner: FL50..245 → 50, 100, 200; ring: FL100..300 → 100, 200.
    expect(summary.volumes.map((v) => `${v.volumeId}@${v.flightLevel}`)).toEqual([
      'inner@50',
      'inner@100',
      'inner@200',
      'ring@100',
      'ring@200',
    ]);
    summary.volumes.forEach((v, i) => {
      expect(v.areaKm2).toBeCloseTo(stats[i].areaKm2, 5);
      expect(v.coveredKm2).toBeCloseTo(stats[i].coveredKm2, 5);
      expect(v.meetsRequirementKm2).toBeCloseTo(stats[i].meetsRequirementKm2, 5);
      expect(v.meetsRequirementKm2).toBeLessThanOrEqual(v.coveredKm2 + 1e-9);
      expect(v.coveredKm2).toBeLessThanOrEqual(v.areaKm2 + 1e-9);
      // Area of a volume: @turf/area of its polygon (reference library), to within the cells along its edge.
      const vol = vols.find((x) => x.id === v.volumeId)!;
      expect(Math.abs(v.areaKm2 / (turfArea(vol.polygon) / 1e6) - 1)).toBeLessThan(0.03);
    });
    expect(summary.network.sensors).toEqual([
      { siteId: 'alder', typeId: 'psr-t', kind: 'primary' },
      { siteId: 'alder', typeId: 'ssr-t', kind: 'secondary' },
      { siteId: 'brook', typeId: 'ssr-t', kind: 'secondary' },
      { siteId: 'cinder', typeId: 'psr-t', kind: 'primary' },
    ]);
  });

  it('--layout NAME builds the network from that layout only', async () => {
    const dir = join(fx.dir, 'pair');
    const r = await run(
      'coverage',
      fx.scenarioPath,
      '--layout',
      'pair',
      '--out',
      dir,
      '--threads=0',
      '--quiet',
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/layout "pair" \(2 sensors\)/);
    const summary = JSON.parse(readFileSync(join(dir, 'summary.json'), 'utf8'));
    expect(summary.network.sensors).toEqual([
      { siteId: 'alder', typeId: 'psr-t', kind: 'primary' },
      { siteId: 'brook', typeId: 'ssr-t', kind: 'secondary' },
    ]);
    const { layer } = readLayer(dir, 100);
    for (const f of layer.features)
      for (const id of f.properties.siteIds) expect(['alder', 'brook']).toContain(id);
    expect(coverageFeature(layer, 'primary', 1)!.properties.siteIds).toEqual(['alder']);
    expect(coverageFeature(layer, 'secondary', 1)!.properties.siteIds).toEqual(['brook']);
    expect(coverageFeature(layer, 'primary', 2)).toBeUndefined();
    // The same network in-process, from the same layout.
    const q = await pipeline(fx.scenarioPath, { layout: 'pair' });
    const f = q.fls.indexOf(100);
    for (const kind of KINDS.filter((k) => k === 'any' || q.network.kindsPresent.has(k))) {
      const fold = q.network.foldOf(kind, f);
      const expected = rasterAreaKm2(q.grid, (i) => fold[i] >= 1);
      expect(coverageFeature(layer, kind, 1)!.properties.areaKm2).toBeCloseTo(expected, 4);
    }
    // Less than the full network.
    const full = coverageFeature(readLayer(out, 100).layer, 'any', 1)!.properties.areaKm2;
    expect(coverageFeature(layer, 'any', 1)!.properties.areaKm2).toBeLessThan(full);
  });

  it('--fl LIST replaces the scenario’s levels', async () => {
    const dir = join(fx.dir, 'fl');
    const r = await run(
      'coverage',
      fx.scenarioPath,
      '--fl',
      '150,50',
      '--out',
      dir,
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).toBe(0);
    expect(existsSync(join(dir, 'coverage-FL050.geojson'))).toBe(true);
    expect(existsSync(join(dir, 'coverage-FL150.geojson'))).toBe(true);
    expect(existsSync(join(dir, 'coverage-FL100.geojson'))).toBe(false);
    // FL050 is the same layer as in the full run (its provenance records the other options).
    expect(layerSansProvenance(join(dir, 'coverage-FL050.geojson'))).toEqual(
      layerSansProvenance(join(out, 'coverage-FL050.geojson')),
    );
  });

  it('--weather shrinks a primary’s coverage (weather loss > 0) and leaves a secondary’s unchanged', async () => {
    const dir = join(fx.dir, 'weather');
    const r = await run('coverage', fx.scenarioPath, '--weather', '--out', dir, '--threads', '0', '--quiet');
    expect(r.code).toBe(0);
    for (const fl of [50, 100]) {
      const clear = readLayer(out, fl).layer;
      const wet = readLayer(dir, fl).layer;
      const pClear = coverageFeature(clear, 'primary', 1)!.properties.areaKm2;
      const pWet = coverageFeature(wet, 'primary', 1)?.properties.areaKm2 ?? 0;
      expect(pWet, formatFl(fl)).toBeLessThan(pClear * 0.95);
      expect(pWet, formatFl(fl)).toBeGreaterThan(0);
      for (const fold of [1, 2]) {
        const a = coverageFeature(clear, 'secondary', fold)!;
        const b = coverageFeature(wet, 'secondary', fold)!;
        expect(b.properties.areaKm2).toBe(a.properties.areaKm2);
        expect(b.geometry).toEqual(a.geometry);
      }
    }
    // Cell by cell, in-process: wet primary cover is a subset of the clear one; secondary folds are equal.
    const w = await pipeline(fx.scenarioPath, { weather: true });
    for (let f = 0; f < p.fls.length; f++) {
      const pc = p.network.foldOf('primary', f);
      const pw = w.network.foldOf('primary', f);
      for (let i = 0; i < pc.length; i++)
        if (pw[i] > pc[i]) expect.fail(`primary cell ${i} gained in weather`);
      expect(Array.from(w.network.foldOf('secondary', f))).toEqual(
        Array.from(p.network.foldOf('secondary', f)),
      );
    }
  });

  it('the worker pool (a real process, two threads) writes the same layers and floor as the inline path', () => {
    const dir = join(fx.dir, 'pooled');
    const bin = join(import.meta.dirname, '..', 'bin', 'airshade.mjs');
    execFileSync(process.execPath, [
      bin,
      'coverage',
      fx.scenarioPath,
      '--out',
      dir,
      '--threads',
      '2',
      '--quiet',
    ]);
    for (const fl of p.fls) {
      const name = `coverage-${formatFl(fl)}.geojson`;
      expect(readFileSync(join(dir, name)).equals(readFileSync(join(out, name))), name).toBe(true);
    }
    expect(
      readFileSync(join(dir, 'network-floor.tif')).equals(readFileSync(join(out, 'network-floor.tif'))),
    ).toBe(true);
    const strip = (f: string) => {
      const j = JSON.parse(readFileSync(f, 'utf8'));
      delete j.timingsMs;
      delete j.provenance.createdUtc; // the run's date
      return j;
    };
    expect(strip(join(dir, 'summary.json'))).toEqual(strip(join(out, 'summary.json')));
  });

  it('grid.bounds sets the analysis grid: whole cells from the north-west corner', async () => {
    const b = writeScenarioFixture({ bounds: { west: -30.9, south: -41.7, east: -29.4, north: -40.2 } });
    try {
      const loaded = await loadScenario(b.scenarioPath);
      const terrain = Terrain.fromTiles(await readTiles(loaded.terrainPaths));
      const g = analysisGrid(loaded, terrain);
      expect(g.width).toBe(90);
      expect(g.height).toBe(90);
      expect(g.originX).toBeCloseTo(-30.9, 12);
      expect(g.originY).toBeCloseTo(-40.2, 12);
      expect(g.pixelX).toBeCloseTo(1 / 60, 15);
      expect(g.pixelY).toBeCloseTo(-1 / 60, 15);
      // Without bounds: the terrain's extent (2.5° × 2° → 150 × 120 cells of 60″).
      const full = analysisGrid(p.loaded, p.terrain);
      expect([full.width, full.height, full.originX, full.originY]).toEqual([150, 120, -31.25, -40]);
    } finally {
      b.cleanup();
    }
  });

  it('sites from a CSV file give the same coverage as from GeoJSON', async () => {
    const csv = writeScenarioFixture({ sitesFormat: 'csv' });
    try {
      const dir = join(csv.dir, 'out');
      const r = await run(
        'coverage',
        csv.scenarioPath,
        '--fl',
        '100',
        '--out',
        dir,
        '--threads',
        '0',
        '--quiet',
      );
      expect(r.code).toBe(0);
      // The same layer (its provenance records the other sites file and options).
      expect(layerSansProvenance(join(dir, 'coverage-FL100.geojson'))).toEqual(
        layerSansProvenance(join(out, 'coverage-FL100.geojson')),
      );
    } finally {
      csv.cleanup();
    }
  });

  describe('bad input: one message each', () => {
    it('an unknown layout name', async () => {
      const r = await run('coverage', fx.scenarioPath, '--layout', 'nope', '--out', join(fx.dir, 'x'));
      expectOneMessage(
        r,
        /--layout: found "nope"; expected the name of a layout in .*scenario\.json \("east only", "pair"\)/,
      );
    });
    it('--fl 50,abc', async () => {
      const r = await run('coverage', fx.scenarioPath, '--fl', '50,abc', '--out', join(fx.dir, 'x'));
      expectOneMessage(r, /--fl: found "50,abc"; expected flight levels as whole numbers from 0 to 600/);
    });
    it('a site outside the terrain', async () => {
      const far = writeScenarioFixture({
        sites: [
          ...DEFAULT_SITES,
          { id: 'faraway', name: 'Far Away Shoal', lon: -25, lat: -41, mastHeightM: 10 },
        ],
      });
      try {
        const r = await run('coverage', far.scenarioPath, '--out', join(far.dir, 'x'), '--threads', '0');
        expectOneMessage(
          r,
          /sites\.geojson: features\[3\]: found site "faraway" at lon -25, lat -41, outside the terrain; expected a site inside the terrain/,
        );
      } finally {
        far.cleanup();
      }
    });
    it('no --out', async () => {
      expectOneMessage(await run('coverage', fx.scenarioPath), /--out: found nothing/);
    });
  });
});

// ---------------------------------------------------------------------------------------------------------
// 3. `airshade diagram` on the fixture

describe('airshade diagram on the fixture', () => {
  let fx: Fixture;
  beforeAll(() => {
    fx = writeScenarioFixture();
  });
  afterAll(() => fx.cleanup());

  it('writes a well-formed SVG', async () => {
    const svg = join(fx.dir, 'alder.svg');
    const r = await run(
      'diagram',
      fx.scenarioPath,
      '--site',
      'alder',
      '--type',
      'psr-t',
      '--azimuth',
      '45',
      '--out',
      svg,
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/diagram written to/);
    const text = readFileSync(svg, 'utf8');
    expect(XMLValidator.validate(text)).toBe(true);
    const doc = new XMLParser({ ignoreAttributes: false }).parse(text) as Record<string, unknown>;
    expect(doc.svg).toBeDefined();
    expect(text).toMatch(/Alder Knoll/);
  });

  it('an unknown --site gives one message', async () => {
    const r = await run(
      'diagram',
      fx.scenarioPath,
      '--site',
      'nowhere',
      '--type',
      'psr-t',
      '--azimuth',
      '0',
      '--out',
      join(fx.dir, 'x.svg'),
    );
    expectOneMessage(r, /--site: found "nowhere"; expected the id of a site in .*\(alder, brook, cinder\)/);
  });

  it('an unknown --type gives one message', async () => {
    const r = await run(
      'diagram',
      fx.scenarioPath,
      '--site',
      'alder',
      '--type',
      'psr-x',
      '--azimuth',
      '0',
      '--out',
      join(fx.dir, 'x.svg'),
    );
    expectOneMessage(r, /--type: found "psr-x"; expected the id of a sensor type in .*\(psr-t, ssr-t\)/);
  });
});
