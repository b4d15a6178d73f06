/**
 * `airshade init` as a planner meets it: a new study from two generated DEM tiles over the open South Pacific near
 * 35.7° S 131° W (one in EPSG:4326, one in UTM zone 9 south, EPSG:32709; invented hills, nothing real implied) and
 * a sites CSV of invented names; the study file loaded by the loader `coverage` uses, `coverage` run on it end to
 * end, and no demo name anywhere. Then the bad inputs, each one message naming the file, row, column or argument,
 * and the choices of the pure builder (worker/io/new-study.ts) on their own.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { CAUTION } from '../shared/caution.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import {
  buildNewStudy,
  chooseCell,
  demPixelArcSec,
  givenJson,
  givenSites,
  M_PER_ARCSEC,
  MAX_GRID_CELLS,
  shrinkToCells,
  type GivenFile,
  type StudyTile,
} from '../worker/io/new-study.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { DEFAULT_CATALOG } from '../worker/cli/init.ts';
import { bumpyDem } from './support/bumps.ts';
import { runCli } from './support/run-cli.ts';

const UTM9S = '+proj=utm +zone=9 +south +datum=WGS84 +units=m +no_defs';

/** West tile: 0.5° × 0.5° at 9″ (200 × 200), EPSG:4326. */
const WEST: GridGeo = {
  width: 200,
  height: 200,
  originX: -131.5,
  originY: -35.5,
  pixelX: 0.5 / 200,
  pixelY: -0.5 / 200,
  crs: WGS84_GEOGRAPHIC,
};
/** East tile: 150 × 185 pixels of 300 m in UTM 9S, its north-west corner near (-131.0, -35.5). */
const [X0, Y0] = proj4('WGS84', UTM9S, [-131.0, -35.5]);
const EAST: GridGeo = {
  width: 150,
  height: 185,
  originX: Math.round(X0 / 300) * 300,
  originY: Math.round(Y0 / 300) * 300,
  pixelX: 300,
  pixelY: -300,
  crs: { kind: 'projected', proj4: UTM9S, epsg: 32709, label: 'EPSG:32709' },
};

const SITES_CSV = [
  'id,name,lon,lat,mastHeightM,siteCost,existing',
  'kestrel-ridge,Kestrel Ridge,-131.3,-35.7,20,1.5,yes',
  'varnhold,Varnhold Bluff,-131.1,-35.9,15,1,',
  'mirrow,"Mirrow Point, north",-130.75,-35.8,25,2,no',
].join('\n');

let dir: string;
const at = (f: string) => join(dir, f);

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-init-'));
  writeFileSync(at('west.tif'), new Uint8Array(encodeGeoTiff({ geo: WEST, data: bumpyDem(7, 200, 200) })));
  writeFileSync(
    at('east-utm.tif'),
    new Uint8Array(encodeGeoTiff({ geo: EAST, data: bumpyDem(8, 150, 185) })),
  );
  writeFileSync(at('sites.csv'), SITES_CSV + '\n');
  writeFileSync(at('two.csv'), SITES_CSV.split('\n').slice(0, 3).join('\n') + '\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Every id and name of the demo (its scenario's name, sites, volumes and layouts). */
function demoWords(): string[] {
  const root = join(import.meta.dirname, '..', 'data');
  const s = JSON.parse(readFileSync(join(root, 'demo-scenario.json'), 'utf8'));
  const sites = JSON.parse(readFileSync(join(root, 'demo-inputs', 'sites.geojson'), 'utf8'));
  const words: string[] = [s.name];
  for (const f of sites.features) words.push(f.properties.id, f.properties.name);
  for (const v of s.volumes) words.push(v.id, v.name);
  for (const l of s.layouts ?? []) words.push(l.name);
  return words.filter((w) => typeof w === 'string' && w.length >= 4);
}

function filesUnder(d: string): string[] {
  return readdirSync(d, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => join(e.parentPath, e.name));
}

describe('airshade init, then coverage', () => {
  it('writes a study the coverage loader opens, and coverage runs on it with no demo name anywhere', async () => {
    const study = at('new/study.json');
    const r = await runCli(
      'init',
      '--dem',
      at('west.tif'),
      at('east-utm.tif'),
      '--sites',
      at('sites.csv'),
      '--out',
      study,
      '--quiet',
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    // What was chosen, and what to run next, with an out/ folder beside the study; the caution last.
    expect(r.out).toMatch(/study area +lon -131\.5…/);
    expect(r.out).toContain('cells of 10″');
    expect(r.out).toContain('FL030 FL050 FL100 FL150 FL200 FL300 FL400');
    expect(r.out).toContain('3 from');
    // The tiles sit beside new/, outside the study's folder: the next commands say --allow-outside-paths (issue 13).
    const allow = `${study} --allow-outside-paths`;
    expect(r.out).toContain('the tiles lie outside the study');
    expect(r.out).toContain(`airshade coverage ${allow} --out ${at('new/out/coverage')}`);
    expect(r.out).toContain(`airshade plan ${allow} --out ${at('new/out/plan')}`);
    expect(r.out).toContain(
      `airshade report ${allow} --plan ${at('new/out/plan/plan.json')} --out ${at('new/out/report.html')}`,
    );
    expect(r.out.trimEnd().endsWith(CAUTION)).toBe(true);

    const doc = JSON.parse(readFileSync(study, 'utf8'));
    expect(doc.caution).toBe(CAUTION);
    expect(doc.provenance).toMatchObject({ tool: 'airshade', command: 'init' });
    expect(doc.provenance.terrain).toHaveLength(2);
    // Paths relative to the study's folder, as loadScenario resolves them.
    expect(doc.terrain.files).toEqual(['../west.tif', '../east-utm.tif']);
    expect(doc.layouts).toBeUndefined();
    // No temporary file left beside the study.
    expect(readdirSync(at('new'))).toEqual(['study.json']);

    const loaded = await loadScenario(study);
    const s = loaded.scenario;
    expect(loaded.terrainPaths).toEqual([at('west.tif'), at('east-utm.tif')]);
    expect(s.flightLevels).toEqual([30, 50, 100, 150, 200, 300, 400]);
    expect(s.earth.kFactor).toBeCloseTo(4 / 3, 12);
    expect(s).toMatchObject({
      targetRcsM2: 2,
      targetFluctuation: 'swerling1',
      targetTransponder: 'low-power',
      day: { qnhHpa: 1013.25, isaDeviationC: 0 },
    });
    expect(s.sites.map((f) => f.properties.id)).toEqual(['kestrel-ridge', 'varnhold', 'mirrow']);
    expect(s.sites[2].properties.name).toBe('Mirrow Point, north');
    expect(s.sites.map((f) => f.properties.existing)).toEqual([true, false, false]);
    const catalog = JSON.parse(readFileSync(DEFAULT_CATALOG, 'utf8')) as { id: string }[];
    expect(s.sensorTypes.map((t) => t.id)).toEqual(catalog.map((t) => t.id));
    // One volume over the study area, clipped to the tiles (the UTM tile does not fill its lon/lat box).
    expect(s.volumes).toHaveLength(1);
    expect(s.volumes[0]).toMatchObject({
      id: 'study-area',
      name: 'Study area on the DEM',
      flMin: 30,
      flMax: 400,
      requiredFold: { primary: 1, secondary: 1 },
    });
    expect(r.out).toContain('% of the study area lies on no DEM tile');

    const out = at('new/out/coverage');
    const refused = await runCli('coverage', study, '--out', out, '--threads', '0', '--quiet');
    expect(refused.err).toMatch(
      /terrain\.files\[0\]: found .*outside the scenario's folder.*--allow-outside-paths/,
    );
    const c = await runCli(
      'coverage',
      study,
      '--allow-outside-paths',
      '--out',
      out,
      '--threads',
      '0',
      '--quiet',
    );
    expect(c.err).toBe('');
    expect(c.code).toBe(0);
    const written = filesUnder(out).map((f) => f.slice(out.length + 1));
    for (const fl of ['030', '050', '100', '150', '200', '300', '400'])
      expect(written).toContain(`coverage-FL${fl}.geojson`);
    expect(written).toContain('summary.json');
    const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8'));
    expect(summary.caution).toBe(CAUTION);

    // Nothing of the demo: not in the study, not in any output, not on the screen.
    const texts = [
      readFileSync(study, 'utf8'),
      r.out,
      c.out,
      ...filesUnder(out).map((f) => readFileSync(f, 'latin1')),
    ];
    for (const w of demoWords()) for (const t of texts) expect(t.includes(w), `demo word "${w}"`).toBe(false);
  }, 120_000);

  it('takes a folder of tiles, a GeoJSON volumes file and --name', async () => {
    const tiles = at('tiles');
    rmSync(tiles, { recursive: true, force: true });
    mkdirSync(tiles);
    writeFileSync(join(tiles, 'a.tif'), readFileSync(at('west.tif')));
    writeFileSync(join(tiles, 'notes.txt'), 'not a tile');
    writeFileSync(
      at('volumes.geojson'),
      JSON.stringify({
        type: 'FeatureCollection',
        features: [
          {
            type: 'Feature',
            id: 'inner-block',
            properties: { name: 'Inner block', flMin: 50, primaryFold: 1, secondaryFold: 2, colour: 'blue' },
            geometry: {
              type: 'Polygon',
              coordinates: [
                [
                  [-131.4, -35.9],
                  [-131.1, -35.9],
                  [-131.1, -35.6],
                  [-131.4, -35.6],
                  [-131.4, -35.9],
                ],
              ],
            },
          },
        ],
      }),
    );
    const study = at('named.json');
    const r = await runCli(
      'init',
      '--dem',
      tiles,
      '--sites',
      at('two.csv'),
      '--volumes',
      at('volumes.geojson'),
      '--name',
      'Tarrow Basin trial',
      '--out',
      study,
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toContain('feature properties not read: colour');
    const s = (await loadScenario(study)).scenario;
    expect(s.name).toBe('Tarrow Basin trial');
    expect(s.terrain.files).toEqual(['tiles/a.tif']);
    expect(s.volumes).toEqual([
      expect.objectContaining({
        id: 'inner-block',
        name: 'Inner block',
        flMin: 50,
        flMax: 400,
        requiredFold: { primary: 1, secondary: 2 },
      }),
    ]);
    // One geographic tile fills its own box: the grid is the tile, whole 10″ cells (its pixel is 9″).
    expect(s.grid).toEqual({
      cellArcSec: 10,
      bounds: { west: -131.5, south: -36, east: -131, north: -35.5 },
    });
  });
});

describe('airshade init: bad input, one message each, nothing written', () => {
  const study = () => at('bad/study.json');
  const init = (...extra: string[]) => runCli('init', ...extra, '--out', study(), '--quiet');

  it('no --dem', async () => {
    const r = await init('--sites', at('sites.csv'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(
      /^airshade init: --dem: found nothing \(the option is missing\); expected one or more GeoTIFF DEM tiles/,
    );
    expect(existsSync(study())).toBe(false);
  });

  it('a site off the DEM names its row, its id, its position and the DEM’s extent', async () => {
    writeFileSync(at('far.csv'), SITES_CSV + '\nfarhollow,Farhollow,-129.2,-35.7,10,1,\n');
    const r = await init('--dem', at('west.tif'), at('east-utm.tif'), '--sites', at('far.csv'));
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `${at('far.csv')}: row 5: found site "farhollow" at lon -129.2, lat -35.7, outside the DEM; ` +
        'expected a site on the terrain: the DEM (west.tif, east-utm.tif) covers lon -131.5…-130.',
    );
    expect(existsSync(study())).toBe(false);
  });

  it('a site inside the bounding box but on no tile is refused too', async () => {
    // South-east corner of the box: the UTM tile's south edge runs below -36.0 only at its east end.
    writeFileSync(at('corner.csv'), SITES_CSV + '\ngapwick,Gapwick,-131.2,-36.004,10,1,\n');
    const r = await init('--dem', at('west.tif'), at('east-utm.tif'), '--sites', at('corner.csv'));
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      'row 5: found site "gapwick" at lon -131.2, lat -36.004, inside the DEM’s bounding box but on none of its tiles',
    );
  });

  it('bad CSV cells name the row (the header is row 1) and the column as the header spells it', async () => {
    writeFileSync(
      at('cells.csv'),
      [
        'ID,Name,Lon,LAT,mastHeightM,siteCost,existing,tiltDeg',
        'kestrel-ridge,Kestrel Ridge,-131.3,35.7S,20,1.5,yes,',
        'varnhold,Varnhold Bluff,-131.1,-35.9,,1,maybe,',
        'mirrow,Mirrow Point,-130.75,-35.8,25,2,no,level',
        'kestrel-ridge,Kestrel Ridge again,-131.2,-95,20,1.5,,',
      ].join('\n'),
    );
    const r = await init('--dem', at('west.tif'), '--sites', at('cells.csv'));
    expect(r.code).toBe(2);
    const f = at('cells.csv');
    expect(r.err).toContain(
      `${f}: row 2, column "LAT": found "35.7S"; expected a latitude from -90 to 90 (degrees north), in decimal degrees`,
    );
    expect(r.err).toContain(
      `${f}: row 3, column "mastHeightM": found an empty cell; expected a number ≥ 0 (m, antenna height above ground)`,
    );
    expect(r.err).toContain(
      `${f}: row 3, column "existing": found "maybe"; expected true/false, yes/no, 1/0`,
    );
    expect(r.err).toContain(
      `${f}: row 4, column "tiltDeg": found "level"; expected an antenna tilt from −10 to 20`,
    );
    // In the same list: a value out of range and a repeated id, so the file is fixed in one pass.
    expect(r.err).toContain(`${f}: row 5, column "LAT": found -95; expected a latitude from -90 to 90`);
    expect(r.err).toContain(
      `${f}: row 5, column "ID": found "kestrel-ridge" again; expected a unique site id (first used at ${f}: row 2, column "ID")`,
    );

    // Values of the right form but out of range: the schema's message, at the same row and column.
    writeFileSync(at('range.csv'), 'id,name,lon,Lat,mastHeightM,siteCost\nsolvane,Solvane,-131.3,-95,20,1\n');
    const r2 = await init('--dem', at('west.tif'), '--sites', at('range.csv'));
    expect(r2.err).toContain(
      `${at('range.csv')}: row 2, column "Lat": found -95; expected a latitude from -90 to 90 (degrees north)`,
    );

    // A row with a cell too few (an unquoted comma elsewhere gives one too many).
    writeFileSync(at('short.csv'), 'id,name,lon,lat,mastHeightM,siteCost\nsolvane,Solvane,-131.3,-35.7,20\n');
    const r3 = await init('--dem', at('west.tif'), '--sites', at('short.csv'));
    expect(r3.err).toContain(`${at('short.csv')}: row 2: found 5 cells; expected 6 cells, one per column`);

    // A column twice.
    writeFileSync(
      at('twice.csv'),
      'id,name,lon,lat,mastHeightM,siteCost,LAT\nsolvane,Solvane,-131.3,-35.7,20,1,3\n',
    );
    const r4 = await init('--dem', at('west.tif'), '--sites', at('twice.csv'));
    expect(r4.err).toContain(`${at('twice.csv')}: row 1, column "LAT": found the column lat a second time`);
    expect(existsSync(study())).toBe(false);
  });

  it('bad GeoJSON sites name the feature and the property', async () => {
    const feature = (id: string, lon: number, mast: unknown) => ({
      type: 'Feature',
      geometry: { type: 'Point', coordinates: [lon, -35.7] },
      properties: { id, name: id, mastHeightM: mast, siteCost: 1 },
    });
    writeFileSync(
      at('sites.geojson'),
      JSON.stringify({
        type: 'FeatureCollection',
        features: [
          feature('orlen', -131.3, 20),
          feature('tassock', -131.2, 'tall'),
          feature('wend', -131.1, -4),
        ],
      }),
    );
    const r = await init('--dem', at('west.tif'), '--sites', at('sites.geojson'));
    expect(r.code).toBe(2);
    const f = at('sites.geojson');
    expect(r.err).toContain(
      `${f}: features[1].properties.mastHeightM: found "tall" (text); expected a number ≥ 0`,
    );
    expect(r.err).toContain(`${f}: features[2].properties.mastHeightM: found -4; expected a number ≥ 0`);
  });

  it('bad volumes name the feature and the property', async () => {
    writeFileSync(
      at('bad-volumes.geojson'),
      JSON.stringify({
        type: 'FeatureCollection',
        features: [
          {
            type: 'Feature',
            properties: { id: 'low', flMin: 'FL50', anyFold: 1 },
            geometry: {
              type: 'Polygon',
              coordinates: [
                [
                  [-131.4, -35.9],
                  [-131.1, -35.9],
                  [-131.1, -35.6],
                  [-131.4, -35.9],
                ],
              ],
            },
          },
          {
            type: 'Feature',
            properties: {},
            geometry: {
              type: 'LineString',
              coordinates: [
                [-131, -35.6],
                [-131.2, -35.7],
              ],
            },
          },
        ],
      }),
    );
    const r = await init(
      '--dem',
      at('west.tif'),
      '--sites',
      at('sites.csv'),
      '--volumes',
      at('bad-volumes.geojson'),
    );
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `${at('bad-volumes.geojson')}: features[1].geometry: found a "LineString" geometry; expected a Polygon or MultiPolygon`,
    );
    const v2 = at('one-volume.geojson');
    const text = JSON.parse(readFileSync(at('bad-volumes.geojson'), 'utf8'));
    text.features.pop();
    writeFileSync(v2, JSON.stringify(text));
    const r2 = await init('--dem', at('west.tif'), '--sites', at('sites.csv'), '--volumes', v2);
    expect(r2.code).toBe(2);
    expect(r2.err).toContain(
      `${v2}: features[0].properties.flMin: found "FL50" (text); expected a flight level`,
    );
  });

  it('a volume’s multilateration accuracy bound reaches the study; a bad one names the feature and property', async () => {
    // requiredMlatAccuracyM: the 1σ horizontal DRMS (m) the fix must reach (shared/scenario.ts). 150 m is an
    // invented figure: the test checks that it is carried, not what it means.
    const volumesWith = (bound: unknown) => ({
      type: 'FeatureCollection',
      features: [
        {
          type: 'Feature',
          properties: { id: 'fix-block', secondaryFold: 1, mlatFold: 4, requiredMlatAccuracyM: bound },
          geometry: {
            type: 'Polygon',
            coordinates: [
              [
                [-131.4, -35.9],
                [-131.1, -35.9],
                [-131.1, -35.6],
                [-131.4, -35.9],
              ],
            ],
          },
        },
      ],
    });
    const good = at('mlat-bound.geojson');
    writeFileSync(good, JSON.stringify(volumesWith(150)));
    const out = at('mlat-bound.json');
    const r = await runCli(
      'init',
      '--dem',
      at('west.tif'),
      '--sites',
      at('two.csv'),
      '--volumes',
      good,
      '--out',
      out,
    );
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).not.toContain('not read');
    const s = (await loadScenario(out)).scenario;
    expect(s.volumes).toEqual([
      expect.objectContaining({
        id: 'fix-block',
        requiredFold: { secondary: 1, mlat: 4 },
        requiredMlatAccuracyM: 150,
      }),
    ]);
    for (const [bound, found] of [
      [-5, '-5'],
      [0, '0'],
      ['150 m', '"150 m" (text)'],
    ] as const) {
      const bad = at('mlat-bound-bad.geojson');
      writeFileSync(bad, JSON.stringify(volumesWith(bound)));
      const rb = await init('--dem', at('west.tif'), '--sites', at('sites.csv'), '--volumes', bad);
      expect(rb.code).toBe(2);
      expect(rb.err).toContain(
        `${bad}: features[0].properties.requiredMlatAccuracyM: found ${found}; ` +
          'expected a number > 0 (m, a 1σ horizontal DRMS)',
      );
      expect(existsSync(study())).toBe(false);
    }
  });

  it('an existing --out without --force is kept; with --force it is replaced', async () => {
    const out = at('kept.json');
    writeFileSync(out, '{"mine": true}\n');
    const args = ['--dem', at('west.tif'), '--sites', at('two.csv'), '--out', out, '--quiet'];
    const r = await runCli('init', ...args);
    expect(r.code).toBe(2);
    expect(r.err).toBe(
      `airshade init: --out: found "${out}", a file that exists; expected a new file name, or --force to replace it\n`,
    );
    expect(readFileSync(out, 'utf8')).toBe('{"mine": true}\n');
    const r2 = await runCli('init', ...args, '--force');
    expect(r2.code).toBe(0);
    expect(JSON.parse(readFileSync(out, 'utf8')).caution).toBe(CAUTION);
  });
});

describe('the new-study builder', () => {
  const tile = (geo: GridGeo, name: string): StudyTile => ({ ref: name, name, geo });
  const catalog: GivenFile = givenJson(readFileSync(DEFAULT_CATALOG, 'utf8'), 'catalog.json', 'types');

  it('the cell: no finer than the DEM pixel, within the cell limit, on whole cells of the DEM box', () => {
    // 1° × 1° at 1″: 3600² cells would be 13 M; √(3600²/400 000) = 5.7″, so the ladder gives 6″ (600 × 600).
    const c1 = chooseCell({ west: -132, south: -37, east: -131, north: -36 }, 1, 'a.tif');
    expect(c1).toMatchObject({ cellArcSec: 6, width: 600, height: 600 });
    expect(c1.width * c1.height).toBeLessThanOrEqual(MAX_GRID_CELLS);
    // A small DEM at 3″: its pixel governs.
    expect(chooseCell({ west: -132, south: -37, east: -131.9, north: -36.9 }, 3, 'a.tif').cellArcSec).toBe(3);
    // A DEM smaller than two cells each way is refused, naming the tile.
    expect(() =>
      chooseCell({ west: -132, south: -37, east: -131.9999, north: -36.9999 }, 3, 'tiny.tif'),
    ).toThrow(
      /^tiny\.tif: found terrain of 0\.0001° × 0\.0001° with 3″ pixels; expected terrain at least 2 analysis cells across/,
    );
    // Shrinking rounds inward to multiples of the cell.
    expect(
      shrinkToCells({ west: -131.50004, south: -36.00804, east: -130.50406, north: -35.49 }, 10),
    ).toEqual({
      bounds: { west: -131.5, south: -36.005555556, east: -130.505555556, north: -35.491666667 },
      width: 358,
      height: 185,
    });
  });

  it('a projected DEM pixel in arc-seconds of latitude', () => {
    // 300 m over one nautical mile (1852 m) per minute of latitude (common practice); the meridian's true arc
    // length per arc-second differs from 1852/60 m by under 0.6 % at any latitude (from memory), hence 1 %.
    expect(demPixelArcSec(EAST)).toBeGreaterThan((300 / M_PER_ARCSEC) * 0.99);
    expect(demPixelArcSec(EAST)).toBeLessThan((300 / M_PER_ARCSEC) * 1.01);
    expect(demPixelArcSec(WEST)).toBeCloseTo(9, 9);
  });

  it('one geographic tile: the study-area volume is the study area itself; sensor kinds follow the sites', () => {
    const sites = givenSites(
      'id,name,lon,lat,mastHeightM,siteCost,allowedTypes\nbrannock,Brannock,-131.3,-35.7,20,1,ssr-short\n',
      'ssr-only.csv',
    );
    const st = buildNewStudy({ display: 's.json', tiles: [tile(WEST, 'w.tif')], sites, catalog });
    expect(st.choices.kinds).toEqual(['secondary']);
    expect(st.scenario.volumes[0]).toMatchObject({
      id: 'study-area',
      name: 'Study area',
      requiredFold: { secondary: 1 },
      polygon: {
        type: 'Polygon',
        coordinates: [
          [
            [-131.5, -36],
            [-131, -36],
            [-131, -35.5],
            [-131.5, -35.5],
            [-131.5, -36],
          ],
        ],
      },
    });
    expect(st.choices.warnings).toEqual([]);
  });

  it('the builder (as the app’s New study uses it) keeps a volume’s accuracy bound and names a bad one', () => {
    const sites = givenSites(SITES_CSV.split('\n').slice(0, 3).join('\n'), 'sites.csv');
    const ring = [
      [-131.4, -35.9],
      [-131.1, -35.9],
      [-131.1, -35.6],
      [-131.4, -35.9],
    ];
    const volumes = (bound: unknown) =>
      givenJson(
        JSON.stringify({
          type: 'Feature',
          properties: { requiredMlatAccuracyM: bound },
          geometry: { type: 'Polygon', coordinates: [ring] },
        }),
        'vols.geojson',
        'volumes',
      );
    const build = (bound: unknown) =>
      buildNewStudy({
        display: 's.json',
        tiles: [tile(WEST, 'w.tif')],
        sites,
        volumes: volumes(bound),
        catalog,
      });
    const st = build(75.5);
    expect(st.scenario.volumes[0].requiredMlatAccuracyM).toBe(75.5);
    expect(st.choices.warnings).toEqual([]);
    expect(() => build(-20)).toThrow(
      'vols.geojson: properties.requiredMlatAccuracyM: found -20; expected a number > 0 (m, a 1σ horizontal DRMS)',
    );
  });

  it('refuses a site CSV with no rows, and an empty sensor type list', () => {
    const empty = givenSites('id,name,lon,lat,mastHeightM,siteCost\n', 'none.csv');
    expect(() =>
      buildNewStudy({ display: 's.json', tiles: [tile(WEST, 'w.tif')], sites: empty, catalog }),
    ).toThrow('none.csv: found no sites; expected at least one site');
    const sites = givenSites(SITES_CSV, 'sites.csv');
    const types = givenJson('[]', 'types.json', 'types');
    expect(() =>
      buildNewStudy({ display: 's.json', tiles: [tile(WEST, 'w.tif')], sites, sensorTypes: types, catalog }),
    ).toThrow('types.json: found an empty list; expected a JSON list of sensor types');
  });
});
