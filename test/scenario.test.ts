/**
 * The scenario file: the demo scenario loads (and its terrain names are the generator's), GeoJSON and CSV
 * sites give the same sites, paths resolve relative to the scenario file, and one test per bad input, each
 * asserting the message: the file and field path (`where`), what was found and what was expected.
 * Bad inputs are written to a temp dir.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { isInputError, type InputError } from '../shared/errors.ts';
import { parseScenario, SCENARIO_DEFAULTS, ScenarioError, type SensorType } from '../shared/scenario.ts';
import { checkAgainstTerrain, loadScenario, parseJsonText, readSitesCsv } from '../worker/cli/scenario.ts';
import { demoTileNames } from '../worker/cli/demo.ts';
import { DEMO_REGION } from '../worker/demo/synth-terrain.ts';
import { type SensorTypeSpec } from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { docOf, type ScenarioDoc } from '../app/state.ts';
import { Engine } from '../worker/runtime/engine.ts';
import { checkNetworkLevels } from '../worker/io/study.ts';
import { E2E_SENSOR_TYPES, E2E_SITES, E2E_VOLUMES, writeE2eData, type E2eData } from './e2e/fixture.ts';
import { runCli } from './support/run-cli.ts';

const DATA = fileURLToPath(new URL('../data/', import.meta.url));
const DEMO_SCENARIO = join(DATA, 'demo-scenario.json');

let dir: string;
let n = 0;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-scenario-'));
  writeFileSync(join(dir, 'tile.tif'), 'placeholder: only its existence is checked');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A fresh sub-folder of the temp dir per test. */
function folder(): string {
  const d = join(dir, `case-${++n}`);
  mkdirSync(d, { recursive: true });
  return d;
}

function write(path: string, content: unknown): string {
  writeFileSync(path, typeof content === 'string' ? content : JSON.stringify(content, null, 2));
  return path;
}

const TYPES: unknown[] = [
  {
    id: 'psr-a',
    name: 'Test primary',
    kind: 'primary',
    frequencyMHz: 2800,
    cost: 6,
    maxElevationDeg: 40,
    instrumentedRangeNm: 80,
    elevationPattern: { type: 'cosec2', startDeg: 3, endDeg: 35 },
    detection: { referenceRangeNm: 60, referenceRcsM2: 1 },
  },
  {
    id: 'ssr-b',
    name: 'Test secondary',
    kind: 'secondary',
    frequencyMHz: 1030,
    cost: 3,
    maxElevationDeg: 45,
    instrumentedRangeNm: 200,
    elevationPattern: { type: 'table', deg: [-5, 0, 5, 20, 45], gainDb: [-20, -6, 0, -6, -15] },
    detection: { referenceRangeNm: 220 },
  },
];

function site(id: string, lon: number, lat: number, extra: Record<string, unknown> = {}): unknown {
  return {
    type: 'Feature',
    geometry: { type: 'Point', coordinates: [lon, lat] },
    properties: { id, name: `Site ${id}`, mastHeightM: 20, siteCost: 1.5, ...extra },
  };
}

const SQUARE = [
  [-30, -42],
  [-29, -42],
  [-29, -41],
  [-30, -41],
  [-30, -42],
];

// Test inputs are edited freely, into invalid shapes too: a deliberately loose type.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Doc = Record<string, any>;

/** A small valid scenario, everything inline; `patch` edits a deep copy. */
function scenario(patch: (s: Doc) => void = () => {}): Doc {
  const s: Doc = {
    name: 'test',
    terrain: { files: ['../tile.tif'] },
    earth: { kFactor: 1.3333 },
    grid: { cellArcSec: 30 },
    flightLevels: [50, 100, 245],
    sensorTypes: structuredClone(TYPES),
    sites: {
      type: 'FeatureCollection',
      features: [
        site('north', -29.5, -40.5, { existing: true }),
        site('south', -29.5, -42.5, { allowedTypes: ['ssr-b'] }),
        site('east', -28, -41.5),
      ],
    },
    volumes: [
      {
        id: 'block',
        name: 'Test block',
        polygon: { type: 'Polygon', coordinates: [structuredClone(SQUARE)] },
        flMin: 50,
        flMax: 245,
        requiredFold: { secondary: 1 },
      },
    ],
  };
  patch(s);
  return s;
}

/** Runs `f`, expects an InputError, returns it. */
async function inputError(f: () => unknown): Promise<InputError> {
  try {
    await f();
  } catch (e) {
    expect(isInputError(e), String(e)).toBe(true);
    return e as InputError;
  }
  throw new Error('expected an InputError, got none');
}

/** The problems of an error: each line of a ScenarioError, or the one error itself. */
function problems(e: InputError): readonly InputError[] {
  return e instanceof ScenarioError ? e.problems : [e];
}

/** The one problem at `where`; asserts there is exactly one and that the message carries it. */
function problemAt(e: InputError, where: string): InputError {
  const hits = problems(e).filter((p) => p.where === where);
  expect(
    hits.map((p) => p.message),
    `problems at ${where} in:\n${e.message}`,
  ).toHaveLength(1);
  expect(e.message).toContain(hits[0].message);
  return hits[0];
}

/** Writes the scenario (into `d`, default a fresh folder), loads it, returns the error. */
async function loadBad(s: Doc, d = folder()): Promise<{ e: InputError; file: string }> {
  const file = write(join(d, 'scenario.json'), s);
  return { e: await inputError(() => loadScenario(file)), file };
}

// ---------------------------------------------------------------------------------------------------

describe('the demo scenario', () => {
  it('loads: the catalog, the 33 demo sites, the inline volumes, 9 flight levels (FL030: the terminal areas’ bottom) and its layouts', async () => {
    const l = await loadScenario(DEMO_SCENARIO, { checkTerrainFiles: false });
    const s = l.scenario;
    expect(l.file).toBe(DEMO_SCENARIO);
    expect(l.sources.sensorTypes).toBe(join(DATA, 'catalog/sensor-types.json'));
    expect(l.sources.sites).toBe(join(DATA, 'demo-inputs/sites.geojson'));
    expect(s.flightLevels).toEqual([30, 50, 100, 150, 200, 245, 300, 400, 460]);
    expect(s.earth.kFactor).toBe(1.3333);
    expect(s.grid.cellArcSec).toBe(30);
    expect(s.sites).toHaveLength(33);
    expect(s.sites.filter((f) => f.properties.existing).map((f) => f.properties.id)).toEqual([
      'karvessa',
      'pellenroy',
      'obrellan',
      'zel-field',
      'vas-field',
    ]);
    const volumes = JSON.parse(readFileSync(join(DATA, 'demo-inputs/volumes.json'), 'utf8')) as {
      id: string;
      polygon: unknown;
    }[];
    expect(s.volumes.map((v) => v.id)).toEqual(volumes.map((v) => v.id));
    expect(s.volumes.map((v) => v.polygon)).toEqual(volumes.map((v) => v.polygon));
    expect(s.layouts.length).toBeGreaterThanOrEqual(2);
    const kinds = new Set(s.sensorTypes.map((t) => t.kind));
    expect(kinds).toEqual(new Set(['primary', 'secondary']));
    // Every layout entry names a demo site and a catalog type (the schema checks this; here it must pass).
    const ids = new Set(s.sensorTypes.map((t) => t.id));
    for (const l of s.layouts) for (const e of l.sensors) expect(ids.has(e.typeId), e.typeId).toBe(true);
  });

  it('names the 25 generated demo tiles, resolved beside the scenario, in the region of the generator', async () => {
    const l = await loadScenario(DEMO_SCENARIO, { checkTerrainFiles: false });
    expect(l.terrainPaths).toHaveLength(25);
    expect(new Set(l.terrainPaths)).toEqual(new Set(demoTileNames().map((t) => t.path)));
    // Every site and volume lies on the generated terrain.
    expect(() => checkAgainstTerrain(l.scenario, DEMO_REGION, l.file, l.locate)).not.toThrow();
  });

  it('fills the documented defaults', async () => {
    const s = parseScenario(
      scenario((x) => delete x.sites.features[2].properties.existing),
      'x.json',
    );
    expect(s.targetRcsM2).toBe(SCENARIO_DEFAULTS.targetRcsM2);
    expect(s.targetRcsM2).toBe(2);
    expect(s.maxRangeKm).toBe(400);
    expect(s.layouts).toEqual([]);
    expect(s.volumes[0].weight).toBe(1);
    expect(s.sites[2].properties.existing).toBe(false);
    expect(s.sites[2].properties.allowedTypes).toBeUndefined();
    expect(s.grid.bounds).toBeUndefined();
  });

  it('gives sensor types that the sensor model accepts, and that fit its interface', async () => {
    const l = await loadScenario(DEMO_SCENARIO, { checkTerrainFiles: false });
    // Compile-time: the schema's output is assignable to the sensor model's input type.
    const asSpec = (t: SensorType): SensorTypeSpec => t;
    for (const t of l.scenario.sensorTypes) {
      const m = buildSensorModel(asSpec(t), `sensorTypes[${t.id}]`);
      expect(m.kind).toBe(t.kind);
    }
  });
});

describe('sites from GeoJSON and from CSV', () => {
  it('the demo CSV gives the same sites as the demo GeoJSON', async () => {
    const d = folder();
    const base = JSON.parse(readFileSync(DEMO_SCENARIO, 'utf8'));
    const viaCsv = write(join(d, 'csv.json'), {
      ...base,
      sensorTypes: join(DATA, 'catalog/sensor-types.json'),
      sites: join(DATA, 'demo-inputs/sites.csv'),
    });
    const a = await loadScenario(DEMO_SCENARIO, { checkTerrainFiles: false });
    const b = await loadScenario(viaCsv, { checkTerrainFiles: false });
    expect(b.sources.sites).toBe(join(DATA, 'demo-inputs/sites.csv'));
    expect(b.scenario.sites).toHaveLength(33);
    expect(b.scenario.sites).toEqual(a.scenario.sites);
  });

  it('reads quoting, any column order and case, yes/no, empty cells and ;-separated allowed types', async () => {
    const d = folder();
    write(
      join(d, 'sites.csv'),
      [
        'ID,Name,LON,lat,siteCost,mastHeightM,allowedTypes,existing,notes',
        'north,"North Hill, upper",-29.5,-40.5,1.5,20,,yes,ignored',
        '',
        'south,South Head,-29.5,-42.5,1.5,20,ssr-b ; psr-a,no,',
        'east,East Knoll,-28,-41.5,0,12.5,,,',
      ].join('\n'),
    );
    const file = write(
      join(d, 'scenario.json'),
      scenario((s) => (s.sites = 'sites.csv')),
    );
    const l = await loadScenario(file);
    const p = l.scenario.sites.map((f) => f.properties);
    expect(p.map((x) => x.id)).toEqual(['north', 'south', 'east']);
    expect(p[0].name).toBe('North Hill, upper');
    expect(p.map((x) => x.existing)).toEqual([true, false, false]);
    expect(p[1].allowedTypes).toEqual(['ssr-b', 'psr-a']);
    expect(p[0].allowedTypes).toBeUndefined();
    expect(p[2]).toMatchObject({ mastHeightM: 12.5, siteCost: 0 });
    expect(l.scenario.sites[2].geometry.coordinates).toEqual([-28, -41.5]);
  });

  it('numbers CSV rows as lines of the file, the header being row 1', () => {
    const r = readSitesCsv('lon,lat,id,name,mastHeightM,siteCost\n1,2,a,A,3,4\n\n5,6,b,B,7,8\n', 'x.csv');
    expect(r.rows).toEqual([2, 4]);
  });
});

describe('paths', () => {
  it('resolve relative to the scenario file, not the working directory', async () => {
    const root = folder();
    mkdirSync(join(root, 'plan/inputs'), { recursive: true });
    mkdirSync(join(root, 'catalog'));
    mkdirSync(join(root, 'dem'));
    write(join(root, 'catalog/types.json'), TYPES);
    write(join(root, 'plan/inputs/sites.geojson'), scenario().sites);
    write(join(root, 'dem/a.tif'), 'x');
    write(join(root, 'dem/b.tif'), 'x');
    const file = write(
      join(root, 'plan/scenario.json'),
      scenario((s) => {
        s.sensorTypes = '../catalog/types.json';
        s.sites = 'inputs/sites.geojson';
        s.terrain.files = ['../dem/a.tif', join(root, 'dem/b.tif')];
      }),
    );
    const rel = relative(process.cwd(), file);
    // Files outside the scenario's folder are read only when asked (issue 13; test/bad-input.test.ts).
    await expect(loadScenario(rel, { allowOutsidePaths: false })).rejects.toThrow(
      /outside the scenario's folder.*--allow-outside-paths/,
    );
    const l = await loadScenario(rel, { allowOutsidePaths: true });
    expect(l.file).toBe(file);
    expect(l.dir).toBe(join(root, 'plan'));
    expect(l.terrainPaths).toEqual([join(root, 'dem/a.tif'), join(root, 'dem/b.tif')]);
    expect(l.scenario.sensorTypes.map((t) => t.id)).toEqual(['psr-a', 'ssr-b']);
    expect(l.scenario.sites.map((f) => f.properties.id)).toEqual(['north', 'south', 'east']);
    // Messages show referenced files beside the scenario file as the user named it.
    expect(l.sources.sensorTypes).toBe(relative(process.cwd(), join(root, 'catalog/types.json')));
    expect(l.scenario.terrain.files[0]).toBe('../dem/a.tif');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('bad input: one message per problem, naming file, field, what was found and what was expected', () => {
  it('invalid JSON: line and column', async () => {
    const file = write(join(folder(), 'scenario.json'), '{\n  "name": "x",\n  "earth": { "kFactor": },\n}\n');
    const e = await inputError(() => loadScenario(file));
    expect(e.where).toBe(`${file}: line 3, column 25`);
    expect(e.found).toBe('"}", which is not valid JSON');
    expect(e.expected).toMatch(/^a value .*\(in a scenario file \(JSON\)\)$/);
    expect(e.message).toBe(`${e.where}: found ${e.found}; expected ${e.expected}`);
  });

  it('invalid JSON: a trailing comma and the end of the file', () => {
    const e1 = (() => {
      try {
        parseJsonText('[1, 2,\n]', 'a.json', 'a list');
      } catch (e) {
        return e as InputError;
      }
    })();
    expect(e1?.where).toBe('a.json: line 2, column 1');
    expect(e1?.expected).toContain('a value');
    const e2 = (() => {
      try {
        parseJsonText('{"a": [1,\n 2', 'b.json', 'an object');
      } catch (e) {
        return e as InputError;
      }
    })();
    expect(e2?.where).toBe('b.json: line 2, column 3');
    expect(e2?.found).toBe('the end of the file, which is not valid JSON');
    expect(e2?.expected).toContain('a closing ]');
  });

  it('a missing scenario file', async () => {
    const file = join(folder(), 'nowhere.json');
    const e = await inputError(() => loadScenario(file));
    expect(e.where).toBe(file);
    expect(e.found).toBe('no such file');
    expect(e.expected).toBe('a scenario file (JSON)');
  });

  it('a missing sites file, a folder as sensor types, a missing terrain tile', async () => {
    const { e, file } = await loadBad(scenario((s) => (s.sites = 'sites/missing.geojson')));
    expect(e.where).toBe(`${file}: sites`);
    expect(e.found).toContain('"sites/missing.geojson", a file that does not exist');
    expect(e.expected).toContain(
      'sites file (GeoJSON FeatureCollection, or CSV), relative to the scenario file',
    );

    const d = folder();
    mkdirSync(join(d, 'types'));
    const f2 = write(
      join(d, 'scenario.json'),
      scenario((s) => (s.sensorTypes = 'types')),
    );
    const e2 = await inputError(() => loadScenario(f2));
    expect(e2.where).toBe(`${f2}: sensorTypes`);
    expect(e2.found).toBe('"types", a folder');

    const { e: e3, file: f3 } = await loadBad(scenario((s) => s.terrain.files.push('dem/none.tif')));
    const p = problemAt(e3, `${f3}: terrain.files[1]`);
    expect(p.found).toContain('"dem/none.tif", a file that does not exist');
    expect(p.expected).toContain('GeoTIFF');
  });

  it('a sensor types file that is not JSON', async () => {
    const d = folder();
    write(join(d, 'types.json'), 'id,name,kind\npsr-a,Test,primary\n');
    const file = write(
      join(d, 'scenario.json'),
      scenario((s) => (s.sensorTypes = 'types.json')),
    );
    const e = await inputError(() => loadScenario(file));
    expect(e.where).toBe(`${join(d, 'types.json')}: line 1, column 1`);
    expect(e.found).toContain('which is not valid JSON');
    expect(e.expected).toContain('a JSON list of sensor types');
  });

  it('a problem inside a sensor types file names that file and the entry', async () => {
    const d = folder();
    const types = structuredClone(TYPES) as Doc[];
    types[1].elevationPattern.deg = [-5, 0, 5, 4, 45];
    write(join(d, 'types.json'), types);
    const file = write(
      join(d, 'scenario.json'),
      scenario((s) => (s.sensorTypes = 'types.json')),
    );
    const e = await inputError(() => loadScenario(file));
    const p = problemAt(e, `${join(d, 'types.json')}: [1].elevationPattern.deg`);
    expect(p.found).toBe('4 after 5 (entries 2 and 3)');
  });

  it('an unknown sensor type id in allowedTypes names the id and the known ones', async () => {
    const { e, file } = await loadBad(
      scenario((s) => (s.sites.features[1].properties.allowedTypes = ['ssr-b', 'psr-x'])),
    );
    const p = problemAt(e, `${file}: sites.features[1].properties.allowedTypes[1]`);
    expect(p.found).toBe('"psr-x"');
    expect(p.expected).toBe('the id of a sensor type in sensorTypes ("psr-a", "ssr-b")');
  });

  it('an unknown sensor type id in a CSV row names the row', async () => {
    const d = folder();
    write(
      join(d, 'sites.csv'),
      'lon,lat,id,name,mastHeightM,siteCost,allowedTypes\n-29.5,-40.5,a,A,10,1,psr-a\n-29,-41,b,B,10,1,ssr-b;radar-9\n',
    );
    const { e } = await loadBad(
      scenario((s) => (s.sites = 'sites.csv')),
      d,
    );
    const p = problemAt(e, `${join(d, 'sites.csv')}: row 3, column "allowedTypes"`);
    expect(p.found).toBe('"radar-9"');
    expect(p.expected).toBe('the id of a sensor type in sensorTypes ("psr-a", "ssr-b")');
  });

  it('an unclosed volume ring', async () => {
    const { e, file } = await loadBad(scenario((s) => s.volumes[0].polygon.coordinates[0].pop()));
    const p = problemAt(e, `${file}: volumes[0].polygon.coordinates[0]`);
    expect(p.found).toBe('a ring from [-30,-42] that ends at [-30,-41]');
    expect(p.expected).toContain('a closed ring');
  });

  it('a volume ring of fewer than 4 positions', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.volumes[0].polygon.coordinates[0] = [
          [-30, -42],
          [-29, -42],
          [-30, -42],
        ];
      }),
    );
    const p = problemAt(e, `${file}: volumes[0].polygon.coordinates[0]`);
    expect(p.expected).toContain('at least 4 positions');
  });

  it('a self-intersecting (bow-tie) volume polygon, with the crossing point', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.volumes[0].polygon.coordinates[0] = [
          [-30, -42],
          [-29, -41],
          [-29, -42],
          [-30, -41],
          [-30, -42],
        ];
      }),
    );
    const p = problemAt(e, `${file}: volumes[0].polygon.coordinates[0]`);
    expect(p.found).toBe('a ring whose edges cross at lon -29.5, lat -41.5');
    expect(p.expected).toContain('a simple polygon');
  });

  it('a hole crossing its outer ring, and a MultiPolygon whose parts cross', async () => {
    const hole = [
      [-29.5, -41.5],
      [-28.5, -41.5],
      [-28.5, -41.2],
      [-29.5, -41.2],
      [-29.5, -41.5],
    ];
    const { e, file } = await loadBad(scenario((s) => s.volumes[0].polygon.coordinates.push(hole)));
    expect(problemAt(e, `${file}: volumes[0].polygon.coordinates`).found).toMatch(
      /^rings that cross each other at/,
    );
    const { e: e2, file: f2 } = await loadBad(
      scenario((s) => {
        const shifted = SQUARE.map(([x, y]) => [x + 0.5, y + 0.5]);
        s.volumes[0].polygon = { type: 'MultiPolygon', coordinates: [[SQUARE], [shifted]] };
      }),
    );
    expect(problemAt(e2, `${f2}: volumes[0].polygon.coordinates`).found).toMatch(
      /^polygons that cross each other/,
    );
    const outside = hole.map(([x, y]) => [x + 3, y]);
    const { e: e3, file: f3 } = await loadBad(
      scenario((s) => s.volumes[0].polygon.coordinates.push(outside)),
    );
    expect(problemAt(e3, `${f3}: volumes[0].polygon.coordinates[1]`)).toMatchObject({
      found: 'a hole with a vertex outside the outer ring (lon -26.5, lat -41.5)',
      expected: 'holes inside the outer ring',
    });
  });

  it('a longitude out of range in a volume', async () => {
    const { e, file } = await loadBad(
      scenario((s) => (s.volumes[0].polygon.coordinates[0][1] = [-190, -42])),
    );
    const p = problemAt(e, `${file}: volumes[0].polygon.coordinates[0][1][0]`);
    expect(p.found).toBe('-190');
    expect(p.expected).toBe('a longitude from -180 to 180 (degrees east)');
  });

  it('a volume outside the terrain names the volume', async () => {
    const l = await loadScenario(
      write(
        join(folder(), 'scenario.json'),
        scenario((s) => (s.volumes[0].polygon.coordinates[0][2] = [-26.5, -41])),
      ),
    );
    const e = await inputError(() => checkAgainstTerrain(l.scenario, DEMO_REGION, l.file, l.locate));
    const p = problemAt(e, `${l.file}: volumes[0].polygon`);
    expect(p.found).toBe('volume "block" with a vertex at lon -26.5, lat -41, outside the terrain');
    expect(p.expected).toBe('a volume inside the terrain (-32…-27° E, -44…-39° N)');
  });

  it('a site outside the terrain names the site (and its CSV row)', async () => {
    const s = parseScenario(
      scenario((x) => (x.sites.features[2].geometry.coordinates = [-26.9, -41.5])),
      'x.json',
    );
    const e = await inputError(() => checkAgainstTerrain(s, DEMO_REGION, 'x.json'));
    const p = problemAt(e, 'x.json: sites.features[2]');
    expect(p.found).toBe('site "east" at lon -26.9, lat -41.5, outside the terrain');
    expect(p.expected).toBe('a site inside the terrain (-32…-27° E, -44…-39° N)');

    const d = folder();
    write(
      join(d, 'sites.csv'),
      'lon,lat,id,name,mastHeightM,siteCost\n-29.5,-40.5,a,A,10,1\n-29,-38.5,b,B,10,1\n',
    );
    const l = await loadScenario(
      write(
        join(d, 'scenario.json'),
        scenario((x) => (x.sites = 'sites.csv')),
      ),
    );
    const e2 = await inputError(() => checkAgainstTerrain(l.scenario, DEMO_REGION, l.file, l.locate));
    expect(problemAt(e2, `${join(d, 'sites.csv')}: row 3`).found).toBe(
      'site "b" at lon -29, lat -38.5, outside the terrain',
    );
  });

  it('flight levels outside 0–600, not whole, or repeated', async () => {
    const { e, file } = await loadBad(scenario((s) => (s.flightLevels = [50, 700, -10, 99.5, 50])));
    const text = 'a flight level: a whole number from 0 to 600 (hundreds of feet)';
    expect(problemAt(e, `${file}: flightLevels[1]`)).toMatchObject({ found: '700', expected: text });
    expect(problemAt(e, `${file}: flightLevels[2]`)).toMatchObject({ found: '-10', expected: text });
    expect(problemAt(e, `${file}: flightLevels[3]`)).toMatchObject({ found: '99.5', expected: text });
    expect(problemAt(e, `${file}: flightLevels[4]`).expected).toBe(
      `each flight level once (first used at ${file}: flightLevels[0])`,
    );
    // A volume's band too, and flMin above flMax.
    const { e: e2, file: f2 } = await loadBad(
      scenario((s) => {
        s.volumes[0].flMin = 300;
        s.volumes[0].flMax = 650;
      }),
    );
    expect(problemAt(e2, `${f2}: volumes[0].flMax`)).toMatchObject({ found: '650', expected: text });
    const { e: e3, file: f3 } = await loadBad(scenario((s) => (s.volumes[0].flMin = 300)));
    expect(problemAt(e3, `${f3}: volumes[0].flMax`)).toMatchObject({
      found: 'flMax 245 below flMin 300',
      expected: 'flMin ≤ flMax',
    });
  });

  it('k ≤ 0 or beyond 20: a gradient that ducts is refused, saying so (k = 157/(157 − ΔN), ITU-R P.452 eq. (5))', async () => {
    for (const k of [0, -1.3333, 25, 1e300]) {
      const { e, file } = await loadBad(scenario((s) => (s.earth.kFactor = k)));
      expect(problems(e)).toHaveLength(1);
      expect(e.where).toBe(`${file}: earth.kFactor`);
      expect(e.found).toBe(String(k));
      expect(e.expected).toMatch(
        /^an effective earth radius factor k from 0.2 to 20 \(4\/3 is standard\): .*ducting/,
      );
    }
    // Strong sub-refraction beyond what the standard models describe is refused too, without talk of ducts.
    const { e } = await loadBad(scenario((s) => (s.earth.kFactor = 1e-300)));
    expect(e.expected).toMatch(/sub-refraction/);
  });

  it('an RCS ≤ 0 (scenario target, sensor type target, reference target)', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.targetRcsM2 = 0;
        s.sensorTypes[0].targetRcsM2 = -2;
        s.sensorTypes[0].detection.referenceRcsM2 = 0;
      }),
    );
    const rcs = 'a radar cross-section > 0 m²';
    expect(problemAt(e, `${file}: targetRcsM2`)).toMatchObject({ found: '0', expected: rcs });
    expect(problemAt(e, `${file}: sensorTypes[0].targetRcsM2`)).toMatchObject({ found: '-2', expected: rcs });
    expect(problemAt(e, `${file}: sensorTypes[0].detection.referenceRcsM2`)).toMatchObject({
      found: '0',
      expected: rcs,
    });
  });

  it('a pattern table that is not sorted, or whose gains do not match its angles', async () => {
    const { e, file } = await loadBad(
      scenario((s) => (s.sensorTypes[1].elevationPattern.deg = [-5, 0, 20, 5, 45])),
    );
    const p = problemAt(e, `${file}: sensorTypes[1].elevationPattern.deg`);
    expect(p.found).toBe('5 after 20 (entries 2 and 3)');
    expect(p.expected).toBe('elevation angles in strictly increasing order');
    const { e: e2, file: f2 } = await loadBad(
      scenario((s) => s.sensorTypes[1].elevationPattern.gainDb.pop()),
    );
    expect(problemAt(e2, `${f2}: sensorTypes[1].elevationPattern.gainDb`)).toMatchObject({
      found: '4 gains for 5 angles',
      expected: 'one gainDb entry per deg entry (5)',
    });
  });

  it('a CSV row with a non-numeric mast height names the row and column', async () => {
    const d = folder();
    write(
      join(d, 'sites.csv'),
      'lon,lat,id,name,mastHeightM,siteCost\n-29.5,-40.5,a,A,10,1\n-29,-41,b,B,10,1\n-29,-41.2,c,C,tall,1\n',
    );
    const { e } = await loadBad(
      scenario((s) => (s.sites = 'sites.csv')),
      d,
    );
    const p = problemAt(e, `${join(d, 'sites.csv')}: row 4, column "mastHeightM"`);
    expect(p.found).toBe('"tall"');
    expect(p.expected).toBe('a number ≥ 0 (m, antenna height above ground)');
  });

  it('a CSV file without the required columns', async () => {
    const d = folder();
    write(join(d, 'sites.csv'), 'lon,lat,id,name,mast,siteCost\n-29.5,-40.5,a,A,10,1\n');
    const file = write(
      join(d, 'scenario.json'),
      scenario((s) => (s.sites = 'sites.csv')),
    );
    const e = await inputError(() => loadScenario(file));
    expect(e.where).toBe(`${join(d, 'sites.csv')}: row 1`);
    expect(e.found).toBe('the columns lon, lat, id, name, mast, siteCost');
    expect(e.expected).toContain('missing mastHeightM');
  });

  it('duplicate site ids (and duplicate type ids), naming both places', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.sites.features[2].properties.id = 'north';
        s.sensorTypes[1].id = 'psr-a';
      }),
    );
    expect(problemAt(e, `${file}: sites.features[2].properties.id`)).toMatchObject({
      found: '"north" again',
      expected: `a unique site id (first used at ${file}: sites.features[0].properties.id)`,
    });
    expect(problemAt(e, `${file}: sensorTypes[1].id`).found).toBe('"psr-a" again');
  });

  it('every problem at once: one line each, the first naming file and field', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.earth.kFactor = 0;
        s.flightLevels = [700];
        s.sites.features[0].properties.mastHeightM = 'high';
        s.volumes[0].flMin = 300;
        s.flightlevels = [50];
      }),
    );
    expect(e).toBeInstanceOf(ScenarioError);
    const lines = e.message.split('\n');
    expect(lines).toHaveLength(5);
    expect(lines[0]).toBe(
      `${file}: earth.kFactor: found 0; expected an effective earth radius factor k from 0.2 to 20 (4/3 is standard): k ≤ 0 means a refractivity gradient at or near −157 N/km, where the ray bends as fast as the earth (ducting) — the effective-earth model does not hold; study a duct with a propagation model that represents it`,
    );
    expect(e.where).toBe(`${file}: earth.kFactor`);
    expect(problemAt(e, `${file}: flightlevels`).found).toBe('a field that is not known here');
    expect(problemAt(e, `${file}: flightlevels`).expected).toContain('only the fields name, terrain, earth');
  });

  it('sensor types: the form of detection, and fields a secondary cannot have', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        delete s.sensorTypes[0].detection.referenceRcsM2;
        s.sensorTypes[1].detection = {
          peakPowerKw: 2,
          antennaGainDbi: 27,
          pulseWidthUs: 1,
          noiseFigureDb: 3,
          lossesDb: 6,
          pd: 0.9,
          pfa: 1e-6,
        };
        s.sensorTypes[1].weatherLossDb = 3;
      }),
    );
    expect(problemAt(e, `${file}: sensorTypes[0].detection.referenceRcsM2`).found).toBe(
      'nothing (the field is missing)',
    );
    expect(problemAt(e, `${file}: sensorTypes[1].detection`).expected).toMatch(/^a reference range/);
    expect(problemAt(e, `${file}: sensorTypes[1].weatherLossDb`).expected).toContain(
      'not affected by weather',
    );
    // A detection object that is neither form is judged against the form it is closest to.
    const { e: e2, file: f2 } = await loadBad(
      scenario((s) => (s.sensorTypes[0].detection = { referenceRangeNm: 'far', referenceRcsM2: 1 })),
    );
    expect(problems(e2)).toHaveLength(1);
    expect(problemAt(e2, `${f2}: sensorTypes[0].detection.referenceRangeNm`).found).toBe('"far" (text)');
  });

  it('layouts: unknown sites and types, types not allowed at the site, repeated entries', async () => {
    const { e, file } = await loadBad(
      scenario((s) => {
        s.layouts = [
          {
            name: 'one',
            sensors: [
              { siteId: 'north', typeId: 'psr-a' },
              { siteId: 'west', typeId: 'psr-a' },
              { siteId: 'north', typeId: 'psr-z' },
              { siteId: 'south', typeId: 'psr-a' },
              { siteId: 'north', typeId: 'psr-a' },
            ],
          },
        ];
      }),
    );
    expect(problemAt(e, `${file}: layouts[0].sensors[1].siteId`).found).toBe('"west"');
    expect(problemAt(e, `${file}: layouts[0].sensors[2].typeId`).found).toBe('"psr-z"');
    expect(problemAt(e, `${file}: layouts[0].sensors[3].typeId`).expected).toBe(
      'a type allowed at that site ("ssr-b")',
    );
    expect(problemAt(e, `${file}: layouts[0].sensors[4]`).expected).toContain(
      `(first used at ${file}: layouts[0].sensors[0])`,
    );
  });

  it('a whole scenario that is not an object, or has path-valued fields without the loader', () => {
    expect(() => parseScenario([1], 'x.json')).toThrow('x.json: found [1] (a list); expected an object');
    const e = (() => {
      try {
        parseScenario(
          scenario((s) => (s.sensorTypes = 'catalog.json')),
          'x.json',
        );
      } catch (err) {
        return err as InputError;
      }
    })();
    expect(e?.where).toBe('x.json: sensorTypes');
    expect(e?.expected).toContain('the path of a JSON file');
  });
});

describe('flight levels × targets beyond what one network holds: refused when the study opens, before any footprint', () => {
  // One network keeps one bit per flight level and target (worker/core/network.ts MAX_NETWORK_LEVELS = 32); the
  // check (worker/io/study.ts checkNetworkLevels) runs in openStudy, which the CLI session and the app engine share.
  let e2e: E2eData;
  let e2eTiles: { name: string; buffer: ArrayBuffer }[];
  const levels = (n: number) => Array.from({ length: n }, (_, i) => 10 + 10 * i);
  /** The fixture's two volumes, each with its own target (two targets besides the scenario's). */
  const ownTargets = () => E2E_VOLUMES.map((v, i) => ({ ...v, flMin: 10, flMax: 600, targetRcsM2: 0.5 + i }));
  const engineWith = async (change: Partial<ScenarioDoc>): Promise<Engine> => {
    const eng = new Engine();
    await eng.loadTiles(
      e2eTiles.map((t) => ({ name: t.name, buffer: t.buffer.slice(0) })),
      true,
      { input: { ...docOf((await loadScenario(e2e.scenarioPath)).scenario), ...change }, display: 'fx.json' },
    );
    return eng;
  };
  const cliOn = async (name: string, change: Record<string, unknown>) => {
    const path = join(e2e.dir, `${name}.json`);
    write(path, { ...e2e.scenario, ...change });
    const out = join(e2e.dir, `${name}-out`);
    const cli = await runCli('coverage', path, '--out', out, '--threads', '0', '--quiet');
    return { ...cli, path, out };
  };

  beforeAll(() => {
    e2e = writeE2eData(folder());
    e2eTiles = e2e.tiles.map((t) => {
      const b = readFileSync(t.path);
      return {
        name: t.file.split('/').pop()!,
        buffer: b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength),
      };
    });
  });

  it('33 flight levels: the CLI names flightLevels, what it found and what fits, and writes nothing', async () => {
    const cli = await cliOn('fl33', { flightLevels: levels(33) });
    expect(cli.code).toBe(2);
    // The load check's words (the file named, "flight levels in"), not the network's own late refusal.
    expect(cli.err).toContain(
      `${cli.path}: flightLevels: found 33 flight levels; expected at most 32 flight levels in one network`,
    );
    expect(existsSync(join(cli.out, 'summary.json'))).toBe(false);
  });

  it('33 flight levels with --fl picking fewer: the run checks the levels it computes, and runs', async () => {
    const path = join(e2e.dir, 'fl33-pick.json');
    write(path, { ...e2e.scenario, flightLevels: levels(33) });
    const out = join(e2e.dir, 'fl33-pick-out');
    const picked = levels(33).slice(0, 2).join(',');
    const ok = await runCli('coverage', path, '--fl', picked, '--out', out, '--threads', '0', '--quiet');
    expect(ok.err).toBe('');
    expect(ok.code).toBe(0);
    expect(existsSync(join(out, 'summary.json'))).toBe(true);
    // Too many picked: the refusal names --fl.
    const all = levels(33).join(',');
    const bad = await runCli('coverage', path, '--fl', all, '--out', out + '2', '--threads', '0', '--quiet');
    expect(bad.code).toBe(2);
    expect(bad.err).toContain(
      '--fl: found 33 flight levels; expected at most 32 flight levels in one network',
    );
  });

  it('the app engine refuses the same scenario with the same words, and keeps the study it had', async () => {
    const eng = await engineWith({});
    const base = docOf((await loadScenario(e2e.scenarioPath)).scenario);
    expect(() => eng.setScenario({ ...base, flightLevels: levels(33) }, 'fx.json')).toThrow(
      /^fx\.json: flightLevels: found 33 flight levels; expected at most 32 flight levels in one network$/,
    );
    expect(eng.conventions().levels.length).toBe(3);
  });

  it('11 levels × 3 targets = 33: the message names the volumes whose own targets add levels', async () => {
    const cli = await cliOn('own33', { flightLevels: levels(11), volumes: ownTargets() });
    expect(cli.code).toBe(2);
    expect(cli.err).toContain(
      `${cli.path}: volumes: found 11 flight levels × 3 targets = 33: the scenario's target and 2 own of volumes "halvoran-terminal", "upper-block"; expected at most 32 flight levels × targets in one network: with 11 flight levels at most 2 targets`,
    );
    expect(cli.err).toContain('or with 3 targets at most 10 flight levels');
    // One volume with its own target: that volume is named by its place in the file.
    const one = await cliOn('own-one', {
      flightLevels: levels(17),
      volumes: [ownTargets()[0], E2E_VOLUMES[1]],
    });
    expect(one.err).toContain(`${one.path}: volumes[0]: found 17 flight levels × 2 targets = 34`);
  });

  it('what fits still loads: 32 × 1, 16 × 2 and 10 × 3 (no footprint needed to tell)', async () => {
    const eng = await engineWith({});
    const base = docOf((await loadScenario(e2e.scenarioPath)).scenario);
    expect(eng.setScenario({ ...base, flightLevels: levels(32) }, 'fx.json').grid.width).toBeGreaterThan(0);
    const own = ownTargets() as unknown as ScenarioDoc['volumes'];
    expect(() =>
      eng.setScenario({ ...base, flightLevels: levels(16), volumes: [own[0], base.volumes[1]] }, 'fx.json'),
    ).not.toThrow();
    expect(() =>
      eng.setScenario({ ...base, flightLevels: levels(10), volumes: own }, 'fx.json'),
    ).not.toThrow();
    // And the engine's own choice of levels for a run is checked before its footprints: 11 × 3 is refused.
    await expect(
      eng.coverage([{ siteId: E2E_SITES[0].id, typeId: E2E_SENSOR_TYPES[0].id }], levels(11)),
    ).rejects.toThrow(/^flight levels: found 11 flight levels × 3 targets = 33/);
  });

  it('the demo scenario passes the check', async () => {
    const { scenario, locate } = await loadScenario(DEMO_SCENARIO);
    expect(() => checkNetworkLevels(scenario, scenario.flightLevels, locate)).not.toThrow();
  });
});
