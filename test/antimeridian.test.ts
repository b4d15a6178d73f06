/**
 * Terrain across the antimeridian: two lon/lat tiles either side of 180° over the open North Pacific (40–40.5° N,
 * invented hills) give the same floor and the same coverage as the very same geometry moved 180° west (straddling
 * 0°), where no wrap is involved. A longitude shift changes no geodesic distance or azimuth on the ellipsoid, so the
 * figures must agree exactly (common practice: the WGS84 ellipsoid is symmetric about its axis). Also: lon/lat
 * tiles reaching the poles are refused with a message.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fromArrayBuffer } from 'geotiff';
import { runCli } from './support/run-cli.ts';
import { bumpyDem } from './support/bumps.ts';
import { ring, writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import { WGS84_GEOGRAPHIC } from '../worker/core/grid.ts';

const N = 241;
const PX = 0.5 / (N - 1);
let dir: string;
const fixtures: Fixture[] = [];

/** West tile 179.5–180° and east tile 180–180.5° (written as −180…−179.5°), or both moved by `shift` degrees. */
function writeTiles(shift: number): { west: string; east: string } {
  const W = 2 * N - 1;
  const all = bumpyDem(7, W, N);
  const write = (col0: number, lonW: number, name: string) => {
    const d = new Float32Array(N * N);
    for (let r = 0; r < N; r++) for (let c = 0; c < N; c++) d[r * N + c] = all[r * W + col0 + c];
    const geo = {
      width: N,
      height: N,
      originX: lonW - PX / 2,
      originY: 40.5 + PX / 2,
      pixelX: PX,
      pixelY: -PX,
      crs: WGS84_GEOGRAPHIC,
    };
    const path = join(dir, `${name}${shift}.tif`);
    writeFileSync(path, new Uint8Array(encodeGeoTiff({ geo, data: d })));
    return path;
  };
  return {
    west: write(0, 179.5 + shift, 'west'),
    east: write(N - 1, shift === 0 ? -180 : 180 + shift, 'east'),
  };
}

async function raster(path: string): Promise<{ origin: number[]; data: Float32Array }> {
  const b = readFileSync(path);
  const img = await (
    await fromArrayBuffer(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength))
  ).getImage();
  return { origin: img.getOrigin(), data: ((await img.readRasters()) as unknown as Float32Array[])[0] };
}

function expectSame(a: Float32Array, b: Float32Array): void {
  expect(a.length).toBe(b.length);
  let valued = 0;
  for (let i = 0; i < a.length; i++) {
    if (Number.isNaN(a[i]) || Number.isNaN(b[i])) {
      expect([i, Number.isNaN(a[i])]).toEqual([i, Number.isNaN(b[i])]);
    } else {
      valued++;
      expect(Math.abs(a[i] - b[i])).toBeLessThanOrEqual(1e-3);
    }
  }
  expect(valued).toBeGreaterThan(a.length * 0.9);
}

let tiles: { west: string; east: string }[];
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-antimeridian-'));
  tiles = [writeTiles(0), writeTiles(-180)];
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
  for (const f of fixtures) f.cleanup();
});

describe('terrain across the antimeridian', () => {
  for (const [first, label] of [
    ['east', 'the east tile (−180…−179.5°)'],
    ['west', 'the west tile (179.5…180°)'],
  ] as const) {
    it(`floor on ${label} equals the same geometry at 0°`, async () => {
      const outs: string[] = [];
      for (let k = 0; k < 2; k++) {
        const t = tiles[k];
        const dems = first === 'east' ? [t.east, t.west] : [t.west, t.east];
        const site = k === 0 ? '179.9,40.25' : `${179.9 - 180},40.25`;
        const out = join(dir, `floor-${first}-${k}.tif`);
        const r = await runCli(
          'floor',
          '--dem',
          dems[0],
          '--dem',
          dems[1],
          `--site=${site}`,
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
        outs.push(out);
      }
      const a = await raster(outs[0]);
      const b = await raster(outs[1]);
      expect(a.origin[0] - b.origin[0]).toBeCloseTo(first === 'east' ? -180 : 180, 9);
      expectSame(a.data, b.data);
    });
  }

  it('coverage with sites either side of 180° equals the same study at 0°', async () => {
    const outs: string[] = [];
    for (let k = 0; k < 2; k++) {
      const shift = k === 0 ? 0 : -180;
      const f = writeScenarioFixture({
        sites: [
          { id: 'wa', name: 'Wavecrest', lon: 179.8 + shift, lat: 40.3, mastHeightM: 30 },
          // East of 180°, given the usual way (−179.8°), or at 0.2° E in the shifted copy.
          { id: 'eb', name: 'Eastbank', lon: shift === 0 ? -179.8 : 0.2, lat: 40.2, mastHeightM: 30 },
        ],
        volumes: [
          {
            id: 'v',
            name: 'West block',
            polygon: { type: 'Polygon', coordinates: [ring(179.6 + shift, 40.1, 179.95 + shift, 40.4)] },
            flMin: 50,
            flMax: 100,
            requiredFold: { any: 2 },
          },
        ],
        layouts: [],
        cellArcSec: 30,
        flightLevels: [50, 100],
      });
      fixtures.push(f);
      copyFileSync(tiles[k].west, join(f.dir, 'west.tif'));
      copyFileSync(tiles[k].east, join(f.dir, 'east.tif'));
      writeFileSync(
        f.scenarioPath,
        JSON.stringify({ ...f.scenario, terrain: { files: ['west.tif', 'east.tif'] } }, null, 2),
      );
      const out = join(dir, `coverage-${k}`);
      const r = await runCli('coverage', f.scenarioPath, '--out', out, '--threads', '0', '--quiet');
      expect(r.err).toBe('');
      expect(r.code).toBe(0);
      outs.push(out);
    }
    const a = await raster(join(outs[0], 'network-floor.tif'));
    const b = await raster(join(outs[1], 'network-floor.tif'));
    expect(a.origin[0] - b.origin[0]).toBeCloseTo(180, 9);
    expectSame(a.data, b.data);
    const stats = (o: string) =>
      (JSON.parse(readFileSync(join(o, 'summary.json'), 'utf8')) as { volumes: unknown[] }).volumes;
    expect(stats(outs[0])).toEqual(stats(outs[1]));
    // The layers of the antimeridian study stay within ±180° (RFC 7946 §3.1.9), with features either side.
    const layer = readFileSync(join(outs[0], 'coverage-FL100.geojson'), 'utf8');
    const lons = [...layer.matchAll(/\[(-?\d+(?:\.\d+)?),\s*-?\d+(?:\.\d+)?\]/g)].map((m) => Number(m[1]));
    expect(Math.max(...lons)).toBeLessThanOrEqual(180);
    expect(Math.min(...lons)).toBeGreaterThanOrEqual(-180);
    expect(lons.some((x) => x > 179.5) && lons.some((x) => x < -179.5)).toBe(true);
  });
});

describe('near the poles', () => {
  it('a lon/lat tile reaching 89° N is refused with a message naming the file and what to do', async () => {
    const n = 41;
    const geo = {
      width: n,
      height: n,
      originX: -30,
      originY: 89,
      pixelX: 1 / n,
      pixelY: -1 / n,
      crs: WGS84_GEOGRAPHIC,
    };
    const path = join(dir, 'polar.tif');
    writeFileSync(path, new Uint8Array(encodeGeoTiff({ geo, data: bumpyDem(3, n, n) })));
    const r = await runCli(
      'floor',
      '--dem',
      path,
      '--site=-29.5,88.5',
      '--mast-m',
      '30',
      '--out',
      join(dir, 'polar-floor.tif'),
      '--threads',
      '0',
      '--quiet',
    );
    expect(r.code).not.toBe(0);
    expect(r.code).not.toBe(70);
    expect(r.err).toContain(path);
    expect(r.err).toMatch(/89\.00° of latitude/);
    expect(r.err).toMatch(/polar stereographic/);
  });
});

describe('volumes across the antimeridian', () => {
  it('a volume across 180° (one ring, or parts split at ±180°) or east of it gives the statistics of its copy at 0°', async () => {
    // The rectangle 179.8…180.2° E given as one ring through −179.8°, as two RFC 7946 parts split at ±180°, and a
    // block wholly east of 180° given as −179.9…−179.6°; in the copy moved 180° west the same rectangles straddle
    // or lie east of 0° and involve no wrap. A longitude shift changes no cell area or sight line (see the header),
    // so every statistic must agree exactly.
    const volumesAt = (shift: number) => {
      const east = (lon: number) => (shift === 0 ? lon - 360 : lon + shift);
      const band = { flMin: 50, flMax: 100, requiredFold: { any: 1 } };
      return [
        {
          id: 'across-ring',
          name: 'Dateline block',
          polygon: {
            type: 'Polygon' as const,
            coordinates: [
              [
                [179.8 + shift, 40.15],
                [east(180.2), 40.15],
                [east(180.2), 40.35],
                [179.8 + shift, 40.35],
                [179.8 + shift, 40.15],
              ],
            ],
          },
          ...band,
        },
        {
          id: 'across-split',
          name: 'Dateline block in two parts',
          // Two parts touching at 0° would be refused as crossing polygons: the copy is the one rectangle.
          polygon:
            shift === 0
              ? {
                  type: 'MultiPolygon' as const,
                  coordinates: [[ring(179.8, 40.15, 180, 40.35)], [ring(-180, 40.15, -179.8, 40.35)]],
                }
              : { type: 'Polygon' as const, coordinates: [ring(-0.2, 40.15, 0.2, 40.35)] },
          ...band,
        },
        {
          id: 'east-of-180',
          name: 'Far east block',
          polygon: { type: 'Polygon' as const, coordinates: [ring(east(180.1), 40.1, east(180.4), 40.4)] },
          ...band,
        },
      ];
    };
    const stats: { volumeId: string; areaKm2: number; coveredKm2: number }[][] = [];
    for (let k = 0; k < 2; k++) {
      const shift = k === 0 ? 0 : -180;
      const f = writeScenarioFixture({
        sites: [
          { id: 'wa', name: 'Wavecrest', lon: 179.8 + shift, lat: 40.3, mastHeightM: 30 },
          { id: 'eb', name: 'Eastbank', lon: shift === 0 ? -179.8 : 0.2, lat: 40.2, mastHeightM: 30 },
        ],
        volumes: volumesAt(shift),
        layouts: [],
        cellArcSec: 30,
        flightLevels: [50, 100],
      });
      fixtures.push(f);
      copyFileSync(tiles[k].west, join(f.dir, 'west.tif'));
      copyFileSync(tiles[k].east, join(f.dir, 'east.tif'));
      writeFileSync(
        f.scenarioPath,
        JSON.stringify({ ...f.scenario, terrain: { files: ['west.tif', 'east.tif'] } }, null, 2),
      );
      const out = join(dir, `coverage-volumes-${k}`);
      const r = await runCli('coverage', f.scenarioPath, '--out', out, '--threads', '0', '--quiet');
      expect(r.err).toBe('');
      expect(r.code).toBe(0);
      stats.push(
        (JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8')) as { volumes: (typeof stats)[0] })
          .volumes,
      );
    }
    expect(stats[0]).toEqual(stats[1]);
    const at = (id: string, fl = 100) =>
      stats[0].find(
        (v) => v.volumeId === id && (v as unknown as { flightLevel: number }).flightLevel === fl,
      )!;
    // 0.4° × 0.2° at 40.25° N: about 34 km × 22 km ≈ 750 km² (spherical cell areas; coarse check, common practice).
    expect(at('across-ring').areaKm2).toBeGreaterThan(650);
    expect(at('across-ring').areaKm2).toBeLessThan(850);
    // The two ways of writing the same rectangle hold the same cells.
    expect(at('across-split').areaKm2).toBeCloseTo(at('across-ring').areaKm2, 9);
    expect(at('across-split').coveredKm2).toBeCloseTo(at('across-ring').coveredKm2, 9);
    expect(at('east-of-180').areaKm2).toBeGreaterThan(0);
  });
});

describe('report maps across the antimeridian', () => {
  it('draw volume outlines, sites and coast as the copy at 0° does, none at the wrong edge of the map', async () => {
    // A volume or site given as −179.x lies just east of 180°: on the map of the study across 180° it must sit
    // beside its neighbours, where the copy moved 180° west draws it. The map's x is relative to its west edge,
    // so the shared vector layers (outlines, sites, coast) of the two reports must be the same text.
    const layers: Record<string, string>[] = [];
    const html: string[] = [];
    for (let k = 0; k < 2; k++) {
      const shift = k === 0 ? 0 : -180;
      const east = (lon: number) => (shift === 0 ? lon - 360 : lon + shift);
      const f = writeScenarioFixture({
        sites: [
          { id: 'wa', name: 'Wavecrest', lon: 179.8 + shift, lat: 40.3, mastHeightM: 30 },
          { id: 'eb', name: 'Eastbank', lon: east(180.2), lat: 40.2, mastHeightM: 30 },
        ],
        volumes: [
          {
            id: 'across-ring',
            name: 'Dateline block',
            polygon: {
              type: 'Polygon',
              coordinates: [
                [
                  [179.8 + shift, 40.15],
                  [east(180.2), 40.15],
                  [east(180.2), 40.35],
                  [179.8 + shift, 40.35],
                  [179.8 + shift, 40.15],
                ],
              ],
            },
            flMin: 50,
            flMax: 100,
            requiredFold: { any: 2 },
          },
          {
            id: 'east-of-180',
            name: 'Far east block',
            polygon: { type: 'Polygon', coordinates: [ring(east(180.1), 40.1, east(180.4), 40.4)] },
            flMin: 50,
            flMax: 100,
            requiredFold: { any: 1 },
          },
        ],
        layouts: [],
        cellArcSec: 30,
        flightLevels: [50, 100],
      });
      fixtures.push(f);
      copyFileSync(tiles[k].west, join(f.dir, 'west.tif'));
      copyFileSync(tiles[k].east, join(f.dir, 'east.tif'));
      writeFileSync(
        f.scenarioPath,
        JSON.stringify({ ...f.scenario, terrain: { files: ['west.tif', 'east.tif'] } }, null, 2),
      );
      const out = join(dir, `report-${k}.html`);
      const r = await runCli('report', f.scenarioPath, '--out', out, '--threads', '0', '--quiet');
      expect(r.err).toBe('');
      expect(r.code).toBe(0);
      html.push(readFileSync(out, 'utf8'));
      const group = (id: string) => new RegExp(`<g id="${id}">(.*?)</g>\\n`, 's').exec(html[k])?.[1] ?? '';
      layers.push({ volumes: group('as-volumes'), sites: group('as-sites'), coast: group('as-coast') });
    }
    expect(layers[0].volumes).toContain('east-of-180');
    expect(layers[0].sites).toContain('eb');
    expect(layers[0]).toEqual(layers[1]);
    // Every outline vertex and site mark lies inside the map frame (x from 0 to its width), not 360° away.
    const width = Number(
      /<clipPath id="as-frame"[^>]*><rect x="0" y="0" width="([\d.]+)"/.exec(html[0])?.[1],
    );
    expect(width).toBeGreaterThan(0);
    const xs = [
      ...layers[0].volumes.matchAll(/[ML](-?[\d.]+) /g),
      ...layers[0].sites.matchAll(/cx="(-?[\d.]+)"/g),
    ].map((m) => Number(m[1]));
    expect(xs.length).toBeGreaterThanOrEqual(10);
    for (const x of xs) expect(x >= 0 && x <= width, `x ${x} within 0…${width}`).toBe(true);
    // The longitude labels past 180° read as west longitudes.
    expect(html[0]).toMatch(/class="tick">179\.\d+° W</);
  });
});
