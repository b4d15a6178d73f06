/**
 * The web app's working state (app/state.ts): every edit a user can make, as pure functions. The starting state
 * is the demo scenario read the way the CLI reads it; a tiny inline scenario covers how the first network is
 * chosen. Each refused edit is checked for an InputError naming the field and for leaving the state it was given
 * exactly as it was (deep-compared with a structuredClone taken before the call).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  parseScenario,
  ScenarioError,
  type Scenario,
  type SensorType,
  type Volume,
  type RadarType,
} from '../shared/scenario.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { readFileSync } from 'node:fs';
import { csvLocator, readSitesCsv } from '../worker/io/scenario-text.ts';
import { readSitesFile } from '../app/files.ts';
import proj4 from 'proj4';
import { checkFilesAlone, newStudyDefaultText, studyOnTerrain } from '../app/new-study.ts';
import type { TerrainSummary } from '../worker/runtime/engine.ts';
import { NEW_STUDY_DEFAULTS } from '../worker/io/new-study.ts';
import { APP_VERSION, appProvenance, geoJsonWithProvenance, sha256Hex } from '../app/provenance.ts';
import {
  addSensorType,
  addSite,
  addVolume,
  COLD_DAY,
  dayOf,
  DEFAULT_LAYERS,
  editSite,
  editVolume,
  errorLines,
  isColdDay,
  moveSite,
  removeLayout,
  removeSensorType,
  removeSite,
  removeVolume,
  replaceSensorType,
  offerText,
  replaceSites,
  restoreState,
  saveLayout,
  scenarioFileText,
  setDay,
  setFailed,
  setFlightLevels,
  setNetwork,
  setTarget,
  setVolumeTarget,
  sitesOffer,
  STANDARD_DAY,
  stateFromScenario,
  toggleSensor,
  useLayout,
  validateDoc,
  type SensorRef,
  type WorkState,
} from '../app/state.ts';
import { FIXTURE_PRIMARY, FIXTURE_SECONDARY, ring } from './support/scenario-fixture.ts';

let demo: Scenario;
beforeAll(async () => {
  ({ scenario: demo } = await loadScenario('data/demo-scenario.json', { checkTerrainFiles: false }));
});

/** A fresh state from the demo (its own copy of the scenario, so no test can leak into another). */
const fresh = (): WorkState => stateFromScenario(structuredClone(demo), 'demo-scenario.json');

const siteIds = (s: WorkState) => s.doc.sites.features.map((f) => f.properties.id);
const siteOf = (s: WorkState, id: string) => {
  const f = s.doc.sites.features.find((x) => x.properties.id === id);
  if (!f) throw new Error(`test: no site ${id}`);
  return f;
};
const typeOf = (s: WorkState, id: string): SensorType => {
  const t = s.doc.sensorTypes.find((x) => x.id === id);
  if (!t) throw new Error(`test: no sensor type ${id}`);
  return t;
};
const layoutOf = (s: WorkState, name: string) => {
  const l = s.doc.layouts.find((x) => x.name === name);
  if (!l) throw new Error(`test: no layout ${name}`);
  return l;
};
const has = (list: SensorRef[], siteId: string, typeId: string) =>
  list.some((r) => r.siteId === siteId && r.typeId === typeId);

/** Runs an edit that must be refused: an InputError whose message contains `field`, and `state` untouched. */
function expectRefused(state: WorkState, edit: (s: WorkState) => unknown, field: string): InputError {
  const before = structuredClone(state);
  let thrown: unknown;
  try {
    edit(state);
  } catch (e) {
    thrown = e;
  }
  expect(thrown, `expected the edit to be refused (${field})`).toBeDefined();
  expect(isInputError(thrown), `expected an InputError, got ${String(thrown)}`).toBe(true);
  expect((thrown as InputError).message).toContain(field);
  expect(state).toStrictEqual(before);
  return thrown as InputError;
}

/** Runs an edit that must succeed and leave its input untouched; returns the new state. */
function applied<T>(state: WorkState, edit: (s: WorkState) => T): T {
  const before = structuredClone(state);
  const next = edit(state);
  expect(state).toStrictEqual(before);
  return next;
}

const newVolume = (over: Record<string, unknown> = {}) =>
  ({
    name: 'Invented test block',
    polygon: { type: 'Polygon', coordinates: [ring(-29.5, -41.5, -28.5, -40.5)] },
    flMin: 100,
    flMax: 200,
    requiredFold: { any: 1 },
    ...over,
  }) as Omit<Volume, 'id'>;

/** A tiny inline scenario (invented names) for how the first network is chosen. */
function tiny(layouts: { name: string; sensors: SensorRef[] }[]): Scenario {
  const site = (id: string, lon: number, existing: boolean, allowedTypes?: string[]) => ({
    type: 'Feature',
    geometry: { type: 'Point', coordinates: [lon, -41] },
    properties: {
      id,
      name: `Test site ${id}`,
      mastHeightM: 10,
      siteCost: 1,
      existing,
      ...(allowedTypes ? { allowedTypes } : {}),
    },
  });
  return parseScenario(
    {
      name: 'Tiny invented scenario',
      terrain: { files: ['tile.tif'] },
      earth: { kFactor: 4 / 3 },
      grid: { cellArcSec: 60 },
      flightLevels: [120, 80],
      sensorTypes: [FIXTURE_PRIMARY, FIXTURE_SECONDARY],
      sites: {
        type: 'FeatureCollection',
        features: [
          site('north', -30.1, true),
          site('south', -30.2, true, ['ssr-t']),
          site('west', -30.3, false),
        ],
      },
      volumes: [],
      layouts,
    },
    'tiny.json',
  );
}

// ---------------------------------------------------------------------------------------------------

describe('stateFromScenario', () => {
  it('takes the demo layout whose name mentions "exist" as the network, the first flight level, aviation units', () => {
    const s = fresh();
    const layout = demo.layouts.find((l) => l.name === 'existing network');
    expect(layout).toBeDefined();
    expect(s.network).toEqual(layout!.sensors);
    expect(s.network[0]).not.toBe(layout!.sensors[0]); // a copy, not the layout's own entries
    expect(s.view.fl).toBe(demo.flightLevels[0]);
    expect(s.view.kind).toBe('any');
    expect(s.view.layers).toEqual(DEFAULT_LAYERS);
    expect(s.units).toBe('aviation');
    expect(s.failed).toEqual([]);
    expect(s.source).toBe('demo-scenario.json');
    expect(s.doc.sites.type).toBe('FeatureCollection');
    expect(s.doc.sites.features).toEqual(demo.sites);
  });

  it('finds the "exist" layout case-insensitively even when it is not first', () => {
    const s = stateFromScenario(
      tiny([
        { name: 'alpha', sensors: [{ siteId: 'west', typeId: 'psr-t' }] },
        { name: 'The EXISTING kit', sensors: [{ siteId: 'north', typeId: 'ssr-t' }] },
      ]),
      'tiny.json',
      'metric',
    );
    expect(s.network).toEqual([{ siteId: 'north', typeId: 'ssr-t' }]);
    expect(s.units).toBe('metric');
    expect(s.view.fl).toBe(120); // the first flight level as listed, not the lowest
  });

  it('falls back to the first layout when no name mentions "exist"', () => {
    const s = stateFromScenario(
      tiny([
        { name: 'alpha', sensors: [{ siteId: 'west', typeId: 'psr-t' }] },
        { name: 'beta', sensors: [{ siteId: 'north', typeId: 'ssr-t' }] },
      ]),
      'tiny.json',
    );
    expect(s.network).toEqual([{ siteId: 'west', typeId: 'psr-t' }]);
  });

  it('without layouts, puts one sensor on each existing site: its first allowed type, else the first type', () => {
    const s = stateFromScenario(tiny([]), 'tiny.json');
    expect(s.network).toEqual([
      { siteId: 'north', typeId: 'psr-t' },
      { siteId: 'south', typeId: 'ssr-t' },
    ]);
  });
});

// ---------------------------------------------------------------------------------------------------

describe('sites', () => {
  it('addSite gives a fresh id, rounds the point to 1e-6 and fills the defaults, leaving the input alone', () => {
    const s = fresh();
    const { state, id } = applied(s, (x) => addSite(x, -28.123456789, -40.9876543219));
    expect(siteIds(s)).not.toContain(id);
    expect(id).toMatch(/^site-\d+$/);
    const f = siteOf(state, id);
    expect(f.geometry.coordinates).toEqual([-28.123457, -40.987654]);
    expect(f.properties).toEqual({
      id,
      name: expect.any(String),
      mastHeightM: 20,
      siteCost: 5,
      existing: false,
    });
    expect(f.properties.name.length).toBeGreaterThan(0);
    expect(state.doc.sites.features).toHaveLength(s.doc.sites.features.length + 1);
    expect(state.network).toEqual(s.network);
  });

  it('addSite ids never collide with existing ones, even after removals shrink the list', () => {
    let s = fresh();
    const a = addSite(s, -28.5, -41);
    s = a.state;
    s = removeSite(s, 'karvessa'); // the site count is back to the demo's, but a.id is still taken
    const b = addSite(s, -28.6, -41.1);
    expect(b.id).not.toBe(a.id);
    expect(siteIds(s)).not.toContain(b.id);
    s = removeSite(b.state, a.id);
    const c = addSite(s, -28.7, -41.2);
    expect(siteIds(s)).not.toContain(c.id);
    const ids = siteIds(c.state);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it('addSite takes the given properties and refuses bad ones naming the field', () => {
    const s = fresh();
    const { state, id } = addSite(s, -28, -41, {
      name: 'Invented Hill',
      mastHeightM: 42,
      siteCost: 0.5,
      existing: true,
      allowedTypes: ['ssr-short'],
    });
    expect(siteOf(state, id).properties).toEqual({
      id,
      name: 'Invented Hill',
      mastHeightM: 42,
      siteCost: 0.5,
      existing: true,
      allowedTypes: ['ssr-short'],
    });
    expectRefused(s, (x) => addSite(x, -28, -41, { mastHeightM: -3 }), 'mastHeightM');
    expectRefused(s, (x) => addSite(x, -28, 91), 'coordinates[1]');
    expectRefused(s, (x) => addSite(x, -28, -41, { id: 'karvessa' }), 'properties.id');
    expectRefused(s, (x) => addSite(x, -28, -41, { allowedTypes: ['no-such-type'] }), 'allowedTypes[0]');
  });

  it('moveSite moves (rounded to 1e-6) and refuses a point off the globe or an unknown site', () => {
    const s = fresh();
    const next = applied(s, (x) => moveSite(x, 'vessamor', -28.00000049, -41.6543216));
    expect(siteOf(next, 'vessamor').geometry.coordinates).toEqual([-28, -41.654322]);
    expect(siteOf(next, 'vessamor').properties).toEqual(siteOf(s, 'vessamor').properties);
    expectRefused(s, (x) => moveSite(x, 'vessamor', NaN, -41), 'coordinates[0]');
    expectRefused(s, (x) => moveSite(x, 'vessamor', -28, 95), 'coordinates[1]');
    expectRefused(s, (x) => moveSite(x, 'vessamor', 181, -41), 'coordinates[0]');
    expectRefused(s, (x) => moveSite(x, 'nowhere', -28, -41), 'nowhere');
  });

  it('editSite applies name, mast, cost, existing and position', () => {
    const s = fresh();
    const next = applied(s, (x) =>
      editSite(x, 'vessamor', {
        name: 'Vessamor Top (raised)',
        mastHeightM: 33,
        siteCost: 0,
        existing: true,
        lon: -28.2,
        lat: -41.6,
      }),
    );
    const f = siteOf(next, 'vessamor');
    expect(f.properties).toEqual({
      id: 'vessamor',
      name: 'Vessamor Top (raised)',
      mastHeightM: 33,
      siteCost: 0,
      existing: true,
    });
    expect(f.geometry.coordinates).toEqual([-28.2, -41.6]);
    // Only lat given: lon stays.
    const moved = editSite(next, 'vessamor', { lat: -41.7 });
    expect(siteOf(moved, 'vessamor').geometry.coordinates).toEqual([-28.2, -41.7]);
  });

  it('editSite refuses bad values naming the field and leaves the state', () => {
    const s = fresh();
    expectRefused(s, (x) => editSite(x, 'karvessa', { mastHeightM: -1 }), 'mastHeightM');
    expectRefused(s, (x) => editSite(x, 'karvessa', { siteCost: -0.1 }), 'siteCost');
    expectRefused(s, (x) => editSite(x, 'karvessa', { lon: NaN }), 'coordinates[0]');
    expectRefused(s, (x) => editSite(x, 'karvessa', { lat: 95 }), 'coordinates[1]');
    expectRefused(s, (x) => editSite(x, 'karvessa', { name: '' }), 'properties.name');
    expectRefused(s, (x) => editSite(x, 'karvessa', { allowedTypes: [] }), 'allowedTypes');
    expectRefused(s, (x) => editSite(x, 'karvessa', { allowedTypes: ['psr-x'] }), 'allowedTypes[0]');
    const e = expectRefused(s, (x) => editSite(x, 'no-such-site', { name: 'x' }), 'no-such-site');
    expect(e.where).toBe('site');
  });

  it('removeSite removes the site with its network entries, failures and layout entries', () => {
    let s = fresh();
    s = setFailed(s, 'karvessa', true);
    s = setFailed(s, 'obrellan', true);
    expect(has(s.network, 'karvessa', 'psr-l-longrange')).toBe(true);
    const inLayouts = s.doc.layouts.map((l) => l.sensors.filter((x) => x.siteId === 'karvessa').length);
    expect(inLayouts.every((n) => n > 0)).toBe(true);

    const next = applied(s, (x) => removeSite(x, 'karvessa'));
    expect(siteIds(next)).not.toContain('karvessa');
    expect(siteIds(next)).toHaveLength(siteIds(s).length - 1);
    expect(next.network).toEqual(s.network.filter((r) => r.siteId !== 'karvessa'));
    expect(next.failed).toEqual(['obrellan']);
    next.doc.layouts.forEach((l, i) => {
      expect(l.name).toBe(s.doc.layouts[i].name);
      expect(l.sensors).toEqual(s.doc.layouts[i].sensors.filter((x) => x.siteId !== 'karvessa'));
    });
    expectRefused(next, (x) => removeSite(x, 'karvessa'), 'karvessa');
  });

  it('editSite allowedTypes restricts the site (dropping now-disallowed network sensors); null lifts it', () => {
    let s = fresh();
    s = toggleSensor(s, 'vessamor', 'psr-l-longrange', true);
    s = toggleSensor(s, 'vessamor', 'ssr-short', true);
    const restricted = applied(s, (x) => editSite(x, 'vessamor', { allowedTypes: ['ssr-short'] }));
    expect(siteOf(restricted, 'vessamor').properties.allowedTypes).toEqual(['ssr-short']);
    expect(has(restricted.network, 'vessamor', 'psr-l-longrange')).toBe(false);
    expect(has(restricted.network, 'vessamor', 'ssr-short')).toBe(true);
    expect(restricted.network).toHaveLength(s.network.length - 1);
    // A disallowed type cannot be switched on while the restriction holds.
    expect(toggleSensor(restricted, 'vessamor', 'psr-l-longrange', true).network).toEqual(restricted.network);

    const lifted = editSite(restricted, 'vessamor', { allowedTypes: null });
    expect('allowedTypes' in siteOf(lifted, 'vessamor').properties).toBe(false);
    expect(
      has(toggleSensor(lifted, 'vessamor', 'psr-l-longrange', true).network, 'vessamor', 'psr-l-longrange'),
    ).toBe(true);
  });

  // Restricting a site's allowed types drops the layout entries that used a now-disallowed type there (as
  // removeSite and removeSensorType drop theirs) instead of being refused by the layout check.
  it('editSite allowedTypes also drops now-disallowed layout entries at that site', () => {
    const s = fresh();
    const next = editSite(s, 'karvessa', { allowedTypes: ['ssr-mono-lva'] });
    expect(has(next.network, 'karvessa', 'psr-l-longrange')).toBe(false);
    expect(has(next.network, 'karvessa', 'ssr-mono-lva')).toBe(true);
    for (const l of next.doc.layouts) expect(has(l.sensors, 'karvessa', 'psr-l-longrange')).toBe(false);
    expect(has(layoutOf(next, 'existing network').sensors, 'karvessa', 'ssr-mono-lva')).toBe(true);
  });
});

// ---------------------------------------------------------------------------------------------------

describe('sensor types', () => {
  it('replaceSensorType with a new id moves every reference: allowed types, layouts, network', () => {
    let s = fresh();
    s = editSite(s, 'zel-point', { allowedTypes: ['psr-s-terminal', 'ssr-short'] });
    s = toggleSensor(s, 'zel-point', 'ssr-short', true);
    const old = typeOf(s, 'ssr-short');
    const renamed = { ...structuredClone(old), id: 'ssr-compact', name: 'Compact secondary (renamed)' };

    const next = applied(s, (x) => replaceSensorType(x, 'ssr-short', renamed));
    const ids = next.doc.sensorTypes.map((t) => t.id);
    expect(ids).toContain('ssr-compact');
    expect(ids).not.toContain('ssr-short');
    expect(ids.indexOf('ssr-compact')).toBe(s.doc.sensorTypes.findIndex((t) => t.id === 'ssr-short'));
    expect(typeOf(next, 'ssr-compact').name).toBe('Compact secondary (renamed)');
    expect(siteOf(next, 'zel-point').properties.allowedTypes).toEqual(['psr-s-terminal', 'ssr-compact']);
    const rename = (r: SensorRef) => (r.typeId === 'ssr-short' ? { ...r, typeId: 'ssr-compact' } : r);
    next.doc.layouts.forEach((l, i) => expect(l.sensors).toEqual(s.doc.layouts[i].sensors.map(rename)));
    expect(next.network).toEqual(s.network.map(rename));
    expect(has(next.network, 'zel-point', 'ssr-compact')).toBe(true);
    for (const f of next.doc.sites.features)
      expect(f.properties.allowedTypes ?? []).not.toContain('ssr-short');
  });

  it('replaceSensorType keeping the id changes the type only; a bad replacement is refused', () => {
    const s = fresh();
    const t = { ...structuredClone(typeOf(s, 'ssr-short')), cost: 9 };
    const next = replaceSensorType(s, 'ssr-short', t);
    expect(typeOf(next, 'ssr-short').cost).toBe(9);
    expect(next.network).toEqual(s.network);
    expect(next.doc.layouts).toEqual(s.doc.layouts);
    expectRefused(s, (x) => replaceSensorType(x, 'ssr-short', { ...t, frequencyMHz: -5 }), 'frequencyMHz');
    // Renaming onto another type's id would duplicate it.
    expectRefused(s, (x) => replaceSensorType(x, 'ssr-short', { ...t, id: 'ssr-mono-lva' }), '.id');
    expectRefused(s, (x) => replaceSensorType(x, 'no-such-type', t), 'no-such-type');
  });

  // The sensor-type editor passes JSON.parse of its text box; `null` must be refused with a message, not a TypeError.
  it('replaceSensorType with null is refused with an InputError', () => {
    const s = fresh();
    expectRefused(s, (x) => replaceSensorType(x, 'ssr-short', null), 'sensorTypes[');
  });

  it('removeSensorType drops every reference to it', () => {
    let s = fresh();
    s = editSite(s, 'zel-point', { allowedTypes: ['psr-s-terminal', 'ssr-short'] });
    s = editSite(s, 'zel-east', { allowedTypes: ['ssr-short'] });
    const next = applied(s, (x) => removeSensorType(x, 'ssr-short'));
    expect(next.doc.sensorTypes.map((t) => t.id)).not.toContain('ssr-short');
    expect(next.doc.sensorTypes).toHaveLength(s.doc.sensorTypes.length - 1);
    expect(next.network).toEqual(s.network.filter((r) => r.typeId !== 'ssr-short'));
    next.doc.layouts.forEach((l, i) =>
      expect(l.sensors).toEqual(s.doc.layouts[i].sensors.filter((r) => r.typeId !== 'ssr-short')),
    );
    expect(siteOf(next, 'zel-point').properties.allowedTypes).toEqual(['psr-s-terminal']);
    // The schema refuses an empty allowedTypes list, so a site whose only allowed type goes loses its restriction.
    expect(siteOf(next, 'zel-east').properties.allowedTypes).toBeUndefined();
  });

  it('addSensorType adds a valid type and refuses an invalid one naming the field', () => {
    const s = fresh();
    const base = {
      ...structuredClone(typeOf(s, 'ssr-short') as RadarType),
      id: 'ssr-invented',
      name: 'Invented secondary',
    };
    const next = applied(s, (x) => addSensorType(x, base));
    expect(next.doc.sensorTypes).toHaveLength(s.doc.sensorTypes.length + 1);
    expect(typeOf(next, 'ssr-invented').name).toBe('Invented secondary');
    expect(next.network).toEqual(s.network);

    expectRefused(s, (x) => addSensorType(x, { ...base, kind: 'tertiary' }), '.kind');
    const { detection: _dropped, ...noDetection } = base;
    expectRefused(s, (x) => addSensorType(x, noDetection), '.detection');
    expectRefused(s, (x) => addSensorType(x, { ...base, id: 'ssr-short' }), '.id');
    // Unknown fields are refused in the scenario's own objects (strictObject).
    expectRefused(s, (x) => addSensorType(x, { ...base, beamColour: 'teal' }), 'beamColour');
    expectRefused(s, (x) => addSensorType(x, null), 'sensorTypes[');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('volumes', () => {
  it('addVolume adds with a fresh id and the default weight; editVolume changes; removeVolume removes', () => {
    const s = fresh();
    const added = applied(s, (x) => addVolume(x, newVolume()));
    expect(added.doc.volumes).toHaveLength(s.doc.volumes.length + 1);
    const v = added.doc.volumes[added.doc.volumes.length - 1];
    expect(s.doc.volumes.map((x) => x.id)).not.toContain(v.id);
    expect(v).toMatchObject({ name: 'Invented test block', flMin: 100, flMax: 200, weight: 1 });

    const twice = addVolume(added, newVolume({ id: 'my-block' }));
    expect(twice.doc.volumes.map((x) => x.id)).toContain('my-block');
    const third = addVolume(removeVolume(twice, v.id), newVolume());
    const ids = third.doc.volumes.map((x) => x.id);
    expect(new Set(ids).size).toBe(ids.length);

    const edited = applied(added, (x) =>
      editVolume(x, v.id, { flMax: 300, weight: 2.5, name: 'Renamed block' }),
    );
    expect(edited.doc.volumes.find((x) => x.id === v.id)).toMatchObject({
      flMin: 100,
      flMax: 300,
      weight: 2.5,
      name: 'Renamed block',
    });

    const removed = applied(edited, (x) => removeVolume(x, v.id));
    expect(removed.doc.volumes).toEqual(s.doc.volumes);
  });

  it('refuses flMin above flMax, unknown fields, a duplicate id and an unknown volume', () => {
    const s = fresh();
    const id = s.doc.volumes[0].id; // upper-enroute: FL245–460
    // VolumeSchema's cross-field rule "flMin ≤ flMax" is reported at flMax.
    expectRefused(s, (x) => addVolume(x, newVolume({ flMin: 300, flMax: 200 })), 'flMax');
    expectRefused(s, (x) => editVolume(x, id, { flMin: 500 }), 'flMax');
    // VolumeSchema is a strictObject: an unknown field is refused by name.
    expectRefused(s, (x) => addVolume(x, newVolume({ colour: 'amber' })), 'colour');
    expectRefused(s, (x) => editVolume(x, id, { shade: 3 } as Partial<Volume>), 'shade');
    // Flight levels must be whole numbers 0–600.
    expectRefused(s, (x) => addVolume(x, newVolume({ flMax: 650 })), 'flMax');
    expectRefused(s, (x) => addVolume(x, newVolume({ id })), '.id');
    expectRefused(s, (x) => editVolume(x, 'no-such-volume', { flMax: 300 }), 'no-such-volume');
    // An open ring is not a polygon.
    const open = { type: 'Polygon', coordinates: [ring(-29.5, -41.5, -28.5, -40.5).slice(0, 4)] };
    expectRefused(s, (x) => addVolume(x, newVolume({ polygon: open })), 'polygon');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('network and layouts', () => {
  it('setNetwork de-duplicates (first occurrence kept) and drops references to unknown sites or types', () => {
    const s = fresh();
    const next = applied(s, (x) =>
      setNetwork(x, [
        { siteId: 'vessamor', typeId: 'ssr-short' },
        { siteId: 'karvessa', typeId: 'psr-l-longrange' },
        { siteId: 'vessamor', typeId: 'ssr-short' },
        { siteId: 'nowhere', typeId: 'ssr-short' },
        { siteId: 'karvessa', typeId: 'no-such-type' },
        { siteId: 'karvessa', typeId: 'psr-l-longrange' },
      ]),
    );
    expect(next.network).toEqual([
      { siteId: 'vessamor', typeId: 'ssr-short' },
      { siteId: 'karvessa', typeId: 'psr-l-longrange' },
    ]);
  });

  it('toggleSensor switches a sensor on once and off again', () => {
    const s = fresh();
    const on = applied(s, (x) => toggleSensor(x, 'tessaline', 'psr-s-gapfiller', true));
    expect(on.network).toEqual([...s.network, { siteId: 'tessaline', typeId: 'psr-s-gapfiller' }]);
    expect(toggleSensor(on, 'tessaline', 'psr-s-gapfiller', true).network).toHaveLength(on.network.length);
    const off = toggleSensor(on, 'tessaline', 'psr-s-gapfiller', false);
    expect(off.network).toEqual(s.network);
    const offExisting = toggleSensor(s, 'karvessa', 'psr-l-longrange', false);
    expect(has(offExisting.network, 'karvessa', 'psr-l-longrange')).toBe(false);
    expect(offExisting.network).toHaveLength(s.network.length - 1);
  });

  it('saveLayout saves the network under a trimmed name, replacing one of the same name; refuses an empty name', () => {
    let s = fresh();
    s = toggleSensor(s, 'tessaline', 'psr-s-gapfiller', true);
    const saved = applied(s, (x) => saveLayout(x, '  my plan  '));
    expect(saved.doc.layouts).toHaveLength(s.doc.layouts.length + 1);
    expect(layoutOf(saved, 'my plan').sensors).toEqual(s.network);

    const smaller = toggleSensor(saved, 'karvessa', 'psr-l-longrange', false);
    const resaved = saveLayout(smaller, 'my plan');
    expect(resaved.doc.layouts).toHaveLength(saved.doc.layouts.length);
    expect(layoutOf(resaved, 'my plan').sensors).toEqual(smaller.network);
    expect(resaved.doc.layouts.map((l) => l.name)).toEqual(saved.doc.layouts.map((l) => l.name));

    const e = expectRefused(s, (x) => saveLayout(x, '   '), 'layout name');
    expect(e.where).toBe('layout name');
  });

  it('useLayout makes a saved layout the network; an unknown name throws; removeLayout removes it', () => {
    const s = fresh();
    const name = 'existing plus coastal fill-in';
    const used = applied(s, (x) => useLayout(x, name));
    expect(used.network).toEqual(layoutOf(s, name).sensors);
    expect(used.network).not.toEqual(s.network);
    expectRefused(s, (x) => useLayout(x, 'no such layout'), 'no such layout');

    const removed = applied(used, (x) => removeLayout(x, name));
    expect(removed.doc.layouts.map((l) => l.name)).toEqual(['existing network']);
    expect(removed.network).toEqual(used.network); // the network stays as it is
  });

  it('setFailed adds a site once and removes it', () => {
    const s = fresh();
    const a = applied(s, (x) => setFailed(x, 'karvessa', true));
    expect(a.failed).toEqual(['karvessa']);
    const b = setFailed(setFailed(a, 'obrellan', true), 'karvessa', true);
    expect([...b.failed].sort()).toEqual(['karvessa', 'obrellan']);
    expect(setFailed(b, 'karvessa', false).failed).toEqual(['obrellan']);
    expect(setFailed(s, 'karvessa', false).failed).toEqual([]);
  });

  it('setFlightLevels sorts and de-duplicates; view.fl moves to the first level only when the shown one is gone', () => {
    const s = fresh();
    // The view opens on the scenario's lowest level (the demo's is FL030).
    expect(s.view.fl).toBe(Math.min(...(demo as { flightLevels: number[] }).flightLevels));
    expect(s.view.fl).toBe(30);
    const next = applied(s, (x) => setFlightLevels(x, [300, 100, 300, 200, 100]));
    expect(next.doc.flightLevels).toEqual([100, 200, 300]);
    expect(next.view.fl).toBe(100);
    const shown = { ...next, view: { ...next.view, fl: 200 } };
    const kept = setFlightLevels(shown, [400, 200]);
    expect(kept.doc.flightLevels).toEqual([200, 400]);
    expect(kept.view.fl).toBe(200);
    expectRefused(s, (x) => setFlightLevels(x, []), 'flightLevels');
    expectRefused(s, (x) => setFlightLevels(x, [100, 700]), 'flightLevels[1]');
    expectRefused(s, (x) => setFlightLevels(x, [12.5]), 'flightLevels[0]');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('the target, the day and the antenna tilt', () => {
  const volumeOf = (s: WorkState, id: string) => {
    const v = s.doc.volumes.find((x) => x.id === id);
    if (!v) throw new Error(`test: no volume ${id}`);
    return v;
  };
  const RCS_TEXT = 'expected a radar cross-section > 0 m²';

  it('the demo studies the schema defaults: 2 m², Swerling 1, low-power transponder, the standard day', () => {
    const s = fresh();
    expect([s.doc.targetRcsM2, s.doc.targetFluctuation, s.doc.targetTransponder]).toEqual([
      2,
      'swerling1',
      'low-power',
    ]);
    expect(s.doc.day).toBeUndefined();
    expect(dayOf(s)).toEqual(STANDARD_DAY);
    expect(isColdDay(s)).toBe(false);
  });

  it('setTarget sets RCS, fluctuation and transponder, one or all at once, leaving the rest', () => {
    const s = fresh();
    const a = applied(s, (x) => setTarget(x, { targetRcsM2: 0.5 }));
    expect([a.doc.targetRcsM2, a.doc.targetFluctuation, a.doc.targetTransponder]).toEqual([
      0.5,
      'swerling1',
      'low-power',
    ]);
    const b = applied(a, (x) =>
      setTarget(x, { targetFluctuation: 'swerling3', targetTransponder: 'high-power' }),
    );
    expect([b.doc.targetRcsM2, b.doc.targetFluctuation, b.doc.targetTransponder]).toEqual([
      0.5,
      'swerling3',
      'high-power',
    ]);
    for (const f of ['swerling0', 'swerling1', 'swerling2', 'swerling3', 'swerling4'] as const)
      expect(setTarget(s, { targetFluctuation: f }).doc.targetFluctuation).toBe(f);
    // Other parts of the scenario are untouched.
    expect(b.doc.volumes).toEqual(s.doc.volumes);
    expect(b.network).toEqual(s.network);
  });

  it('setTarget refuses an RCS ≤ 0 or not a number, an unknown Swerling case or transponder class', () => {
    const s = fresh();
    for (const bad of [0, -1, NaN, Infinity]) {
      const e = expectRefused(s, (x) => setTarget(x, { targetRcsM2: bad }), 'targetRcsM2');
      expect(e.message).toContain(RCS_TEXT);
    }
    const f = expectRefused(
      s,
      (x) => setTarget(x, { targetFluctuation: 'swerling5' as never }),
      'targetFluctuation',
    );
    expect(f.message).toContain('found "swerling5"');
    expect(f.message).toContain('"swerling0", "swerling1", "swerling2", "swerling3", "swerling4"');
    const t = expectRefused(
      s,
      (x) => setTarget(x, { targetTransponder: 'medium' as never }),
      'targetTransponder',
    );
    expect(t.message).toContain('expected one of "high-power", "low-power"');
  });

  it('setVolumeTarget gives a volume its own target field by field; null gives it back the study’s', () => {
    const s = fresh();
    const id = 'zellantis-terminal';
    const a = applied(s, (x) => setVolumeTarget(x, id, { targetRcsM2: 1, targetFluctuation: 'swerling2' }));
    expect(volumeOf(a, id)).toMatchObject({ targetRcsM2: 1, targetFluctuation: 'swerling2' });
    expect(volumeOf(a, id).targetTransponder).toBeUndefined();
    const b = applied(a, (x) => setVolumeTarget(x, id, { targetRcsM2: null }));
    expect('targetRcsM2' in volumeOf(b, id)).toBe(false);
    expect(volumeOf(b, id).targetFluctuation).toBe('swerling2');
    // A transponder override on the en-route block, then removed: no override is left.
    const b2 = applied(b, (x) => setVolumeTarget(x, 'upper-enroute', { targetTransponder: 'high-power' }));
    expect(volumeOf(b2, 'upper-enroute').targetTransponder).toBe('high-power');
    const c = applied(b2, (x) => setVolumeTarget(x, 'upper-enroute', { targetTransponder: null }));
    expect('targetTransponder' in volumeOf(c, 'upper-enroute')).toBe(false);
    // Only that volume changes.
    expect(volumeOf(c, 'vaskerrow-terminal')).toEqual(volumeOf(s, 'vaskerrow-terminal'));
  });

  it('setVolumeTarget refuses bad values naming the volume’s field, and an unknown volume', () => {
    const s = fresh();
    const i = s.doc.volumes.findIndex((v) => v.id === 'zellantis-terminal');
    const e = expectRefused(
      s,
      (x) => setVolumeTarget(x, 'zellantis-terminal', { targetRcsM2: 0 }),
      `volumes[${i}].targetRcsM2`,
    );
    expect(e.message).toContain(RCS_TEXT);
    expectRefused(
      s,
      (x) => setVolumeTarget(x, 'zellantis-terminal', { targetFluctuation: 'rayleigh' as never }),
      `volumes[${i}].targetFluctuation`,
    );
    expectRefused(
      s,
      (x) => setVolumeTarget(x, 'zellantis-terminal', { targetTransponder: 'none' as never }),
      `volumes[${i}].targetTransponder`,
    );
    const u = expectRefused(s, (x) => setVolumeTarget(x, 'no-such-volume', { targetRcsM2: 1 }), 'volume');
    expect(u.message).toBe('volume: found "no-such-volume"; expected the id of a volume in the scenario');
  });

  it('setDay: the cold, low-pressure day on and off; one number at a time; the standard day stored as none', () => {
    const s = fresh();
    const cold = applied(s, (x) => setDay(x, { ...COLD_DAY }));
    expect(cold.doc.day).toEqual({ qnhHpa: 980, isaDeviationC: -20 });
    expect(isColdDay(cold)).toBe(true);
    expect(dayOf(cold)).toEqual(COLD_DAY);
    const off = applied(cold, (x) => setDay(x, null));
    expect('day' in off.doc).toBe(false);
    expect(isColdDay(off)).toBe(false);
    // One number at a time: the other keeps its value (the standard one when there was no day).
    const warm = applied(s, (x) => setDay(x, { isaDeviationC: 15 }));
    expect(warm.doc.day).toEqual({ qnhHpa: 1013.25, isaDeviationC: 15 });
    expect(isColdDay(warm)).toBe(false);
    const low = applied(cold, (x) => setDay(x, { qnhHpa: 995 }));
    expect(low.doc.day).toEqual({ qnhHpa: 995, isaDeviationC: -20 });
    expect(isColdDay(low)).toBe(false);
    // Back to the standard values: the scenario has no day again (its default).
    expect('day' in setDay(warm, { isaDeviationC: 0 }).doc).toBe(false);
    // The limits themselves are accepted.
    expect(setDay(s, { qnhHpa: 870, isaDeviationC: -60 }).doc.day).toEqual({
      qnhHpa: 870,
      isaDeviationC: -60,
    });
    expect(setDay(s, { qnhHpa: 1090, isaDeviationC: 40 }).doc.day).toEqual({
      qnhHpa: 1090,
      isaDeviationC: 40,
    });
  });

  it('setDay refuses a QNH outside 870…1090 hPa and a deviation outside −60…+40 °C, naming the field', () => {
    const s = fresh();
    for (const q of [869, 1091, 800, NaN]) {
      const e = expectRefused(s, (x) => setDay(x, { qnhHpa: q }), 'day.qnhHpa');
      expect(e.message).toContain('expected a sea-level pressure (QNH) in hPa from 870 to 1090');
    }
    const cold = setDay(s, { ...COLD_DAY });
    for (const t of [-61, 41, NaN]) {
      const e = expectRefused(cold, (x) => setDay(x, { isaDeviationC: t }), 'day.isaDeviationC');
      expect(e.message).toContain('expected a temperature deviation from the ISA in °C from −60 to +40');
    }
  });

  it('editSite sets the antenna tilt (−10…20°); null removes it (0°); beyond is refused', () => {
    const s = fresh();
    const i = siteIds(s).indexOf('vessamor');
    const up = applied(s, (x) => editSite(x, 'vessamor', { tiltDeg: 2.5 }));
    expect(siteOf(up, 'vessamor').properties.tiltDeg).toBe(2.5);
    expect(siteOf(editSite(s, 'vessamor', { tiltDeg: -10 }), 'vessamor').properties.tiltDeg).toBe(-10);
    expect(siteOf(editSite(s, 'vessamor', { tiltDeg: 20 }), 'vessamor').properties.tiltDeg).toBe(20);
    const none = applied(up, (x) => editSite(x, 'vessamor', { tiltDeg: null }));
    expect('tiltDeg' in siteOf(none, 'vessamor').properties).toBe(false);
    // Other sites keep theirs.
    expect(siteOf(up, 'karvessa')).toEqual(siteOf(s, 'karvessa'));
    for (const bad of [20.5, -11, NaN]) {
      const e = expectRefused(
        s,
        (x) => editSite(x, 'vessamor', { tiltDeg: bad }),
        `sites.features[${i}].properties.tiltDeg`,
      );
      expect(e.message).toContain('expected an antenna tilt from −10 to 20 degrees');
    }
  });
  it('a sites CSV with a tiltDeg column replaces the sites as the Sites panel does; a tilt beyond 20° is refused', () => {
    const s = fresh();
    // The demo's own sites as a CSV file (the layouts name them all), karvessa with a tilt and one cell empty.
    const csv = (tilt: string) =>
      [
        'lon,lat,id,name,mastHeightM,siteCost,existing,allowedTypes,tiltDeg',
        ...s.doc.sites.features.map((f) => {
          const p = f.properties;
          const t = p.id === 'karvessa' ? tilt : '';
          return `${f.geometry.coordinates.join(',')},${p.id},"${p.name}",${p.mastHeightM},${p.siteCost},${p.existing},${(p.allowedTypes ?? []).join(';')},${t}`;
        }),
      ].join('\n') + '\n';
    // What the panel does with a picked file: the sites replaced, the whole scenario checked, the network kept.
    const replaced = (text: string) => {
      const doc = {
        ...s.doc,
        sites: readSitesCsv(text, 'sites.csv').collection,
      } as unknown as WorkState['doc'];
      validateDoc(doc, 'sites.csv');
      return setNetwork({ ...s, doc }, s.network);
    };
    const next = replaced(csv('-1.5'));
    expect(siteOf(next, 'karvessa').properties.tiltDeg).toBe(-1.5);
    expect(siteOf(next, 'vessamor').properties.tiltDeg).toBeUndefined(); // an empty cell: no tilt (0°)
    const e = expectRefused(s, () => replaced(csv('30')), 'tiltDeg');
    expect(e.message).toContain('expected an antenna tilt from −10 to 20 degrees');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('the scenario file', () => {
  /** A demo state with one of each kind of edit. */
  function edited(): WorkState {
    let s = fresh();
    s = addSite(s, -28.25, -41.25, { name: 'Invented Point', allowedTypes: ['ssr-short'] }).state;
    s = addVolume(s, newVolume());
    s = toggleSensor(s, 'tessaline', 'psr-s-gapfiller', true);
    s = saveLayout(s, 'with tessaline');
    s = editSite(s, 'vessamor', { mastHeightM: 18, tiltDeg: 1.5 });
    s = setTarget(s, { targetRcsM2: 0.5, targetFluctuation: 'swerling2', targetTransponder: 'high-power' });
    s = setVolumeTarget(s, 'zellantis-terminal', { targetRcsM2: 1 });
    s = setDay(s, { ...COLD_DAY });
    return s;
  }

  it('scenarioFileText is a scenario the schema accepts, and rebuilds the same sites, types, volumes, layouts', () => {
    const s = edited();
    const text = applied(s, (x) => scenarioFileText(x));
    expect(text.endsWith('\n')).toBe(true);
    const back = parseScenario(JSON.parse(text), 'saved.scenario.json');
    const rebuilt = stateFromScenario(back, 'saved.scenario.json');
    expect(rebuilt.doc.sites).toEqual(s.doc.sites);
    expect(rebuilt.doc.sensorTypes).toEqual(s.doc.sensorTypes);
    expect(rebuilt.doc.volumes).toEqual(s.doc.volumes);
    expect(rebuilt.doc.layouts).toEqual(s.doc.layouts);
    expect(rebuilt.doc.flightLevels).toEqual(s.doc.flightLevels);
    // The target, the day and the tilt travel with the file.
    expect(rebuilt.doc.day).toEqual(COLD_DAY);
    expect([rebuilt.doc.targetRcsM2, rebuilt.doc.targetFluctuation, rebuilt.doc.targetTransponder]).toEqual([
      0.5,
      'swerling2',
      'high-power',
    ]);
    expect(siteOf(rebuilt, 'vessamor').properties.tiltDeg).toBe(1.5);
    expect(rebuilt.doc).toEqual(s.doc);
  });

  // The saved file carries the current network as the layout "working network", so opening it brings it back.
  it('scenarioFileText saves the current network as the layout "working network"', () => {
    const s = toggleSensor(fresh(), 'tessaline', 'psr-s-gapfiller', true);
    const doc = JSON.parse(scenarioFileText(s)) as { layouts: { name: string; sensors: SensorRef[] }[] };
    const working = doc.layouts.find((l) => l.name === 'working network');
    expect(working?.sensors).toEqual(s.network);
  });
});

// ---------------------------------------------------------------------------------------------------

describe('restoreState', () => {
  /** As IndexedDB would give it back: a plain copy without prototypes (JSON is stricter than structuredClone). */
  const asSaved = (s: WorkState): Record<string, unknown> => JSON.parse(JSON.stringify(s));

  function worked(): WorkState {
    let s = fresh();
    s = addSite(s, -28.3, -41.3).state;
    s = toggleSensor(s, 'tessaline', 'psr-s-gapfiller', true);
    s = setFailed(s, 'obrellan', true);
    const layers = { ...s.view.layers, floor: { on: true, opacity: 0.4 }, relief: { on: false, opacity: 1 } };
    return { ...s, units: 'metric', view: { fl: 245, kind: 'secondary', layers } };
  }

  it('gives back an equal state from a JSON copy', () => {
    const s = worked();
    const back = restoreState(asSaved(s));
    expect(back.version).toBe(1);
    expect(back.source).toBe(s.source);
    expect(back.doc).toEqual(s.doc);
    expect(back.network).toEqual(s.network);
    expect(back.failed).toEqual(s.failed);
    expect(back.units).toBe('metric');
    expect(back.view).toEqual(s.view);
    // and it still edits
    expect(toggleSensor(back, 'tessaline', 'psr-s-gapfiller', false).network).toHaveLength(
      s.network.length - 1,
    );
  });

  it('throws on malformed saved work instead of returning part of it', () => {
    const good = asSaved(worked());
    const e = expectRefused(fresh(), () => restoreState(null), 'saved work');
    expect(e.where).toBe('saved work');
    expectRefused(fresh(), () => restoreState('a string'), 'saved work');
    expectRefused(fresh(), () => restoreState({ ...good, version: 2 }), 'saved work');
    expectRefused(fresh(), () => restoreState({ ...good, doc: undefined }), 'the saved working scenario');

    const badSite = structuredClone(good) as { doc: WorkState['doc'] };
    badSite.doc.sites.features[3].properties.mastHeightM = -7;
    const err = expectRefused(fresh(), () => restoreState(badSite), 'mastHeightM');
    expect(err.message).toContain('the saved working scenario: sites.features[3].properties.mastHeightM');
  });

  it('falls back to defaults for a bad kind, a flight level not in the list, unknown units, missing parts', () => {
    const saved = asSaved(worked()) as Record<string, unknown> & { view: Record<string, unknown> };
    const back = restoreState({
      ...saved,
      units: 'furlongs',
      view: { ...saved.view, kind: 'tertiary', fl: 123 },
    });
    expect(back.view.kind).toBe('any');
    expect(back.view.fl).toBe(back.doc.flightLevels[0]);
    expect(back.units).toBe('aviation');
    expect(back.view.layers.floor).toEqual({ on: true, opacity: 0.4 }); // a good setting is kept

    const bare = restoreState({ version: 1, doc: saved.doc, source: 'x' });
    expect(bare.view).toEqual({ fl: bare.doc.flightLevels[0], kind: 'any', layers: DEFAULT_LAYERS });
    expect(bare.network).toEqual(layoutOf(bare, 'existing network').sensors);
    expect(bare.failed).toEqual([]);

    const partial = restoreState({
      ...saved,
      view: { ...saved.view, layers: { gap: { on: false, opacity: 0.2 } } },
    });
    expect(partial.view.layers).toEqual({ ...DEFAULT_LAYERS, gap: { on: false, opacity: 0.2 } });
  });

  it('drops saved network entries and failures that are malformed or point at nothing', () => {
    const saved = asSaved(worked());
    const back = restoreState({
      ...saved,
      network: [
        { siteId: 'karvessa', typeId: 'psr-l-longrange' },
        null,
        { siteId: 7, typeId: 'ssr-short' },
        { siteId: 'gone', typeId: 'ssr-short' },
        { siteId: 'karvessa', typeId: 'gone' },
      ],
      failed: ['obrellan', 3, 'gone'],
    });
    expect(back.network).toEqual([{ siteId: 'karvessa', typeId: 'psr-l-longrange' }]);
    expect(back.failed).toEqual(['obrellan']);
  });

  // Saved layer settings are taken only for known ids and well-formed { on, opacity }; the rest are defaults.
  it('keeps only known, well-formed layer settings and uses the defaults for the rest', () => {
    const saved = asSaved(worked()) as Record<string, unknown> & {
      view: { layers: Record<string, unknown> };
    };
    const back = restoreState({
      ...saved,
      view: {
        ...saved.view,
        layers: { ...saved.view.layers, sparkle: { on: true, opacity: 1 }, fold: null, gap: { on: 'yes' } },
      },
    });
    expect(Object.keys(back.view.layers).sort()).toEqual(Object.keys(DEFAULT_LAYERS).sort());
    expect(back.view.layers.fold).toEqual(DEFAULT_LAYERS.fold);
    expect(back.view.layers.gap).toEqual(DEFAULT_LAYERS.gap);
    expect(back.view.layers.floor).toEqual({ on: true, opacity: 0.4 });
  });
});

// ---------------------------------------------------------------------------------------------------

describe('errorLines', () => {
  it('gives one line per problem of a ScenarioError', () => {
    const s = fresh();
    const base = { ...structuredClone(typeOf(s, 'ssr-short')), id: 'ssr-invented' };
    let thrown: unknown;
    try {
      addSensorType(s, { ...base, kind: 'tertiary', frequencyMHz: -1, cost: -2 });
    } catch (e) {
      thrown = e;
    }
    expect(thrown).toBeInstanceOf(ScenarioError);
    const problems = (thrown as ScenarioError).problems;
    expect(problems.length).toBeGreaterThanOrEqual(3);
    const lines = errorLines(thrown);
    expect(lines).toEqual(problems.map((p) => p.message));
    for (const field of ['.kind', '.frequencyMHz', '.cost'])
      expect(lines.filter((l) => l.includes(field))).toHaveLength(1);
  });

  it('splits other errors by line and shows non-errors as text', () => {
    const made = new ScenarioError([
      new InputError('a.json: x', '1', '2'),
      new InputError('a.json: y', '3', '4'),
      new InputError('a.json: z', '5', '6'),
    ]);
    expect(errorLines(made)).toEqual([
      'a.json: x: found 1; expected 2',
      'a.json: y: found 3; expected 4',
      'a.json: z: found 5; expected 6',
    ]);
    expect(errorLines(new InputError('site', '"q"', 'a site'))).toEqual(['site: found "q"; expected a site']);
    expect(errorLines(new Error('first\n\nsecond\n'))).toEqual(['first', 'second']);
    expect(errorLines('plain text')).toEqual(['plain text']);
  });
});

// ---------------------------------------------------------------------------------------------------

describe('replacing the sites from a file (Sites panel)', () => {
  /** The demo with three layouts of known content, the network being layout A. */
  const withLayouts = (): WorkState => {
    const s = fresh();
    const A: SensorRef[] = [
      { siteId: 'karvessa', typeId: 'psr-l-longrange' },
      { siteId: 'karvessa', typeId: 'ssr-mono-lva' },
      { siteId: 'pellenroy', typeId: 'ssr-mono-lva' },
    ];
    s.doc.layouts = [
      { name: 'A', sensors: A },
      { name: 'B', sensors: [{ siteId: 'obrellan', typeId: 'ssr-mono-lva' }] },
      { name: 'C', sensors: [{ siteId: 'karvessa', typeId: 'ssr-mono-lva' }] },
    ];
    return { ...s, network: A.map((r) => ({ ...r })), failed: ['pellenroy'] };
  };
  /** karvessa kept where it is, and one new site; every other demo site is gone. */
  const CSV = [
    'lon,lat,id,name,mastHeightM,siteCost,existing,allowedTypes',
    '-28.4666,-40.7568,karvessa,Karvessa Crest,12,2.8,true,',
    '-28.9,-40.9,new-knoll,New Knoll,20,1.5,false,ssr-short',
  ].join('\n');
  const csvSites = () => {
    const r = readSitesCsv(CSV, 'my-sites.csv');
    return { value: r.collection, locate: csvLocator('my-sites.csv', r.rows) };
  };

  it('counts what each answer would do before anything changes', () => {
    const s = withLayouts();
    const offer = applied(s, (x) => sitesOffer(x, csvSites().value));
    // By construction: A loses pellenroy (1 entry), B loses obrellan (1 entry, left empty), C is untouched.
    expect(offer.affected).toEqual(['A', 'B']);
    expect(offer.layouts).toBe(3);
    expect(offer.entriesGone).toBe(2);
    expect(offer.emptied).toBe(1);
    expect(offer.networkGone).toBe(1);
    expect(offer.sitesGone).toHaveLength(s.doc.sites.features.length - 1);
    expect(offer.sitesGone).not.toContain('karvessa');
    expect(offerText(offer, 'my-sites.csv')[0]).toBe(
      '2 of 3 saved layouts name sites that my-sites.csv does not have (2 sensor entries; 1 layout would be left with no sensor): A, B.',
    );
  });

  it('the whole-document check alone refuses such a file (the old dead end) …', () => {
    const s = withLayouts();
    const doc = { ...s.doc, sites: csvSites().value } as unknown as WorkState['doc'];
    expect(() => validateDoc(doc, 'my-sites.csv')).toThrow(/layouts\[0\]\.sensors\[2\]\.siteId/);
  });

  it('… which replaceSites never refuses: "drop" removes the layouts naming missing sites', () => {
    const s = withLayouts();
    const { value, locate } = csvSites();
    const next = applied(s, (x) => replaceSites(x, value, { layouts: 'drop', locate }));
    expect(siteIds(next)).toEqual(['karvessa', 'new-knoll']);
    expect(next.doc.layouts.map((l) => l.name)).toEqual(['C']);
    expect(next.network).toEqual([
      { siteId: 'karvessa', typeId: 'psr-l-longrange' },
      { siteId: 'karvessa', typeId: 'ssr-mono-lva' },
    ]);
    expect(next.failed).toEqual([]);
    expect(siteOf(next, 'new-knoll').properties.allowedTypes).toEqual(['ssr-short']);
  });

  it('… and "keep" keeps every layout without the missing sites (an emptied one stays, by name)', () => {
    const s = withLayouts();
    const { value, locate } = csvSites();
    const next = applied(s, (x) => replaceSites(x, value, { layouts: 'keep', locate }));
    expect(next.doc.layouts.map((l) => [l.name, l.sensors.length])).toEqual([
      ['A', 2],
      ['B', 0],
      ['C', 1],
    ]);
    expect(layoutOf(next, 'A').sensors.every((r) => r.siteId === 'karvessa')).toBe(true);
    // The saved file opens again.
    expect(() => parseScenario(JSON.parse(scenarioFileText(next)), 'saved.json')).not.toThrow();
  });

  it('with no layout naming a missing site, nothing is affected', () => {
    const s = fresh();
    const same = { type: 'FeatureCollection', features: structuredClone(s.doc.sites.features) };
    const offer = sitesOffer(s, same);
    expect(offer.affected).toEqual([]);
    expect(offer.entriesGone).toBe(0);
    expect(offer.sitesGone).toEqual([]);
  });
});

describe('CSV errors as the app shows them: the row, the column, what was expected', () => {
  /** What the Sites panel does with a picked file (readSitesFile, then replaceSites), as message lines. */
  const linesFor = async (csv: string): Promise<string[]> => {
    try {
      const given = await readSitesFile(new File([csv], 'my-sites.csv'));
      replaceSites(fresh(), given.value, { layouts: 'keep', locate: given.locate });
    } catch (e) {
      expect(isInputError(e)).toBe(true);
      return errorLines(e);
    }
    throw new Error('test: expected the file to be refused');
  };
  const HEAD = 'lon,lat,id,name,mastHeightM,siteCost,existing,allowedTypes';
  const at = (lines: string[], row: number, column: string) =>
    lines.find((l) => l.startsWith(`my-sites.csv: row ${row}, column "${column}": found `));

  it('a cell of the wrong form: its row (header = row 1) and column, never a GeoJSON path', async () => {
    const lines = await linesFor(
      [
        HEAD,
        '-28.4,-40.7,one,One,12,2,true,',
        '-28.5,-40.8,two,Two,tall,2,false,',
        '-28.8,-41,six,Six,12,2,maybe,',
      ].join('\n'),
    );
    expect(at(lines, 3, 'mastHeightM')).toMatch(/found "tall"; expected a number ≥ 0 \(m, antenna height/);
    expect(at(lines, 4, 'existing')).toMatch(/found "maybe"; expected true\/false/);
    for (const l of lines) expect(l).not.toMatch(/features\[|properties\.|geometry/);
  });

  it('a value out of range or naming nothing: its row and column, with what was expected', async () => {
    const lines = await linesFor(
      [
        HEAD,
        '-28.4,-40.7,one,One,12,2,true,',
        '-28.6,-95,three,Three,12,2,false,',
        '-28.7,-40.9,four,Four,12,2,false,ssr-nowhere',
        '-28.8,-41.0,one,One again,12,2,false,',
      ].join('\n'),
    );
    expect(at(lines, 3, 'lat')).toMatch(/found -95; expected .*latitude/);
    expect(at(lines, 4, 'allowedTypes')).toMatch(/found "ssr-nowhere"; expected the id of a sensor type/);
    expect(at(lines, 5, 'id')).toMatch(/found "one"/);
    for (const l of lines) expect(l).not.toMatch(/features\[|properties\.|geometry/);
  });

  it('a missing column is named on row 1 with the columns expected', async () => {
    const given = readSitesFile(new File(['lon,lat,id,name,siteCost\n-28,-40,a,A,1\n'], 'my-sites.csv'));
    await expect(given).rejects.toThrow(
      'my-sites.csv: row 1: found the columns lon, lat, id, name, siteCost; expected a header row with the columns lon, lat, id, name, mastHeightM, siteCost',
    );
  });
});

// ---------------------------------------------------------------------------------------------------

describe('a new study from the planner’s own data (app/new-study.ts over worker/io/new-study.ts)', () => {
  /** UTM zone 26 south (EPSG:32726), as the GeoTIFF reader describes it; its central meridian is 27° W. */
  const UTM26S = {
    kind: 'projected' as const,
    proj4: '+proj=utm +zone=26 +south +datum=WGS84 +units=m +no_defs',
    epsg: 32726,
    label: 'EPSG:32726',
  };
  /** A 60 km × 50 km tile of 100 m pixels over open ocean near 40.5° S 27° W (nothing real implied). */
  const TILE = {
    name: 'ocean-utm.tif',
    geo: {
      width: 600,
      height: 500,
      originX: 470_000,
      originY: 5_540_000,
      pixelX: 100,
      pixelY: -100,
      crs: UTM26S,
    },
  };
  const SITES_CSV = [
    'lon,lat,id,name,mastHeightM,siteCost,existing,allowedTypes',
    '-27.1,-40.6,brannock-rise,Brannock Rise,15,2,true,ssr-mono-lva',
    '-26.9,-40.4,ollith-knap,Ollith Knap,20,1.5,false,',
  ].join('\n');
  const files = async (csv = SITES_CSV) => ({
    name: '',
    tileNames: [TILE.name],
    sites: await readSitesFile(new File([csv], 'own-sites.csv')),
    volumes: null,
    sensorTypes: null,
  });
  const catalogIds = (
    JSON.parse(readFileSync('data/catalog/sensor-types.json', 'utf8')) as { id: string }[]
  ).map((t) => t.id);

  it('takes the study area from a projected tile, the stated defaults and the catalog; nothing of the demo', async () => {
    const f = await files();
    expect(() => checkFilesAlone(f)).not.toThrow();
    const built = studyOnTerrain({ tiles: [TILE] as unknown as TerrainSummary['tiles'] }, f);
    const s = built.scenario;
    // The tile's lon/lat extent: its corners through proj4 (outside in, the study area lies within it).
    const corner = (x: number, y: number) => proj4(UTM26S.proj4, 'WGS84', [x, y]);
    const sw = corner(470_000, 5_490_000);
    const ne = corner(530_000, 5_540_000);
    const b = s.grid.bounds!;
    expect(b.west).toBeGreaterThanOrEqual(Math.min(sw[0], corner(470_000, 5_540_000)[0]) - 1e-9);
    expect(b.east).toBeLessThanOrEqual(Math.max(ne[0], corner(530_000, 5_490_000)[0]) + 1e-9);
    expect(b.south).toBeGreaterThanOrEqual(sw[1] - 0.01);
    expect(b.north).toBeLessThanOrEqual(ne[1] + 1e-9);
    expect(b.north - b.south).toBeGreaterThan(0.4); // 50 km ≈ 0.45° of latitude
    // 100 m pixels are 3.24″ of latitude (1852/60 m per arc-second): cells of 5″, within the cell limit.
    expect(s.grid.cellArcSec).toBe(5);
    expect(s.terrain.files).toEqual(['ocean-utm.tif']);
    expect(s.flightLevels).toEqual([...NEW_STUDY_DEFAULTS.flightLevels]);
    expect(s.earth.kFactor).toBeCloseTo(4 / 3, 12);
    expect([s.targetRcsM2, s.targetFluctuation, s.targetTransponder]).toEqual([2, 'swerling1', 'low-power']);
    expect(s.sensorTypes.map((t) => t.id)).toEqual(catalogIds);
    expect(s.layouts).toEqual([]);
    expect(s.volumes.map((v) => [v.id, v.flMin, v.flMax, v.requiredFold])).toEqual([
      ['study-area', 30, 400, { primary: 1, secondary: 1 }],
    ]);
    const text = JSON.stringify(s).toLowerCase();
    for (const demoWord of [
      'demo',
      'karvessa',
      'zellantis',
      'vaskerrow',
      'upper-enroute',
      'existing network',
    ])
      expect(text).not.toContain(demoWord);
    // The working state from it: the existing site's sensor is the network.
    expect(stateFromScenario(s, 'the new study').network).toEqual([
      { siteId: 'brannock-rise', typeId: 'ssr-mono-lva' },
    ]);
    // The form states the builder's own defaults.
    const said = newStudyDefaultText().join(' ');
    for (const fl of NEW_STUDY_DEFAULTS.flightLevels)
      expect(said).toContain(`FL${String(fl).padStart(3, '0')}`);
    expect(said).toContain('k = 4/3');
  });

  it('a bad CSV value is refused before any tile is read, by row and column', async () => {
    const f = await files(SITES_CSV.replace('-40.4,ollith', '-95,ollith'));
    expect(() => checkFilesAlone(f)).toThrow(/own-sites\.csv: row 3, column "lat": found -95/);
  });

  it('a site outside the tiles: one message naming the site and the DEM’s extent', async () => {
    const f = await files(SITES_CSV + '\n-25.0,-40.5,far-out,Far Out,10,1,false,');
    expect(() => checkFilesAlone(f)).not.toThrow(); // the files alone are fine
    let thrown: unknown;
    try {
      studyOnTerrain({ tiles: [TILE] as unknown as TerrainSummary['tiles'] }, f);
    } catch (e) {
      thrown = e;
    }
    const lines = errorLines(thrown);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(
      /^own-sites\.csv: row 4: found site "far-out" at lon -25, lat -40\.5, outside the DEM; expected a site on the terrain: the DEM \(ocean-utm\.tif\) covers lon -27\.\d+…-26\.\d+, lat -40\.\d+…-40\.\d+$/,
    );
  });
});

describe('provenance in the app’s files (app/provenance.ts)', () => {
  it('SHA-256 through Web Crypto: the FIPS 180-2 test vector for "abc"', async () => {
    // FIPS 180-2, Appendix B.1 (one-block message "abc").
    expect(await sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('the saved scenario carries a provenance without a date, and opens again without it', () => {
    const s = fresh();
    const p = appProvenance({
      command: 'app scenario',
      terrain: [{ file: 'own-dem.tif', sha256: 'a'.repeat(64) }],
      conventions: null,
      kFactor: s.doc.earth.kFactor,
      version: '9.9.9',
    });
    const text = scenarioFileText(s, p);
    const json = JSON.parse(text);
    expect(json.provenance).toEqual({
      tool: 'airshade',
      version: '9.9.9',
      command: 'app scenario',
      options: {},
      terrain: [{ file: 'own-dem.tif', sha256: 'a'.repeat(64) }],
      kFactor: s.doc.earth.kFactor,
    });
    const back = parseScenario(json, 'saved.json');
    expect('provenance' in back).toBe(false);
    expect(scenarioFileText(stateFromScenario(back, 'saved.json'), p)).toBe(text);
    expect(APP_VERSION).toBe(JSON.parse(readFileSync('package.json', 'utf8')).version);
  });

  it('a layer collection gets the provenance as a top-level member, written as the CLI writes it', () => {
    const fc = { type: 'FeatureCollection', caution: 'c', features: [] };
    const p = appProvenance({
      command: 'app layers',
      terrain: [],
      conventions: null,
      kFactor: 1.3333,
      createdUtc: '2030-01-02T03:04:05.000Z',
      version: '9.9.9',
    });
    const out = geoJsonWithProvenance(JSON.stringify(fc), p);
    expect(JSON.parse(out).provenance).toEqual(p);
    expect(out.indexOf('"provenance"')).toBeLessThan(out.indexOf('"features"'));
  });
});

describe('numbers in the user’s units (app/units.ts)', () => {
  let u: typeof import('../app/units.ts');
  beforeAll(async () => {
    u = await import('../app/units.ts');
  });
  // 1 ft = 0.3048 m and 1 NM = 1852 m exactly (test/REFERENCES.md, units).
  const message = (f: () => unknown) => {
    try {
      f();
    } catch (e) {
      expect(isInputError(e)).toBe(true);
      return (e as InputError).message;
    }
    throw new Error('expected an InputError');
  };

  it('refuses a negative mast in the units it was typed in, and converts a good one to metres', () => {
    expect(message(() => u.heightInputM(-10, 'aviation', 'mast of North (n)'))).toBe(
      'mast of North (n): found -10 ft; expected a height of 0 ft or more',
    );
    expect(message(() => u.heightInputM(-10, 'metric', 'mast of North (n)'))).toBe(
      'mast of North (n): found -10 m; expected a height of 0 m or more',
    );
    expect(message(() => u.heightInputM(NaN, 'metric', 'mast'))).toContain('found nothing');
    expect(u.heightInputM(100, 'aviation', 'mast')).toBeCloseTo(30.48, 10);
    expect(u.heightInputM(30, 'metric', 'mast')).toBe(30);
  });

  it('refuses a range at or below zero or the type’s minimum range in the typed units, and gives NM', () => {
    expect(message(() => u.rangeInputNm(-5, 'metric', 'instrumented range of psr'))).toBe(
      'instrumented range of psr: found -5 km; expected a range of more than 0 km',
    );
    // Minimum range 0.5 NM = 0.926 km: 0.9 km is too short, and the message says so in km.
    expect(message(() => u.rangeInputNm(0.9, 'metric', 'range', 0.5))).toBe(
      "range: found 0.9 km; expected a range of more than 0.9 km (the type's minimum range)",
    );
    expect(u.rangeInputNm(1.852, 'metric', 'range')).toBeCloseTo(1, 12);
    expect(u.rangeInputNm(60, 'aviation', 'range', 0.5)).toBe(60);
  });

  it('writes the read-out again in the other units from the same figures', () => {
    const r = {
      lon: -29.5,
      lat: -41.25,
      groundM: 304.8,
      floorM: 882.4,
      floorStep: 'FL030',
      fold: { any: 2, primary: 1, secondary: 1 },
    };
    const aviation = u.fmtReadout(r, 'aviation', { level: 'FL030 (3,000 ft)' });
    const metric = u.fmtReadout(r, 'metric', { level: 'FL030 (914 m)' });
    expect(aviation).toBe(
      'S 41.2500°, W 29.5000° · ground 1,000 ft · network floor 2,895 ft (map step FL030) · sites at FL030 (3,000 ft): 2 (PSR 1, SSR 1)',
    );
    expect(metric).toBe(
      'S 41.2500°, W 29.5000° · ground 305 m · network floor 882 m (map step FL030) · sites at FL030 (914 m): 2 (PSR 1, SSR 1)',
    );
    // Before a coverage run: position and ground only; no sensor sees a cell: said so.
    expect(u.fmtReadout(r, 'metric', null)).toBe('S 41.2500°, W 29.5000° · ground 305 m');
    expect(u.fmtReadout({ ...r, floorM: null, floorStep: null }, 'metric', { level: 'x' })).toContain(
      'network floor: not seen',
    );
  });

  it('gives a demand weight with its share of all demand', () => {
    expect(u.fmtDemandWeight(42612.4, 745_000)).toBe('42,612 (5.7 % of all demand)');
    expect(u.fmtDemandWeight(753)).toBe('753');
  });
});

describe('work kept in the browser: its age, its data, a full storage (issue 13, item 7)', () => {
  const now = new Date('2026-03-10T12:00:00Z');
  const saved = (savedAt?: string): import('../app/state.ts').SavedWork => ({
    state: stateFromScenario(demo, 'demo-scenario.json'),
    tiles: ['demo-tile_a.tif', 'demo-tile_b.tif'],
    savedAt,
  });

  it('says how old restored work is, from when and which data it used, and marks work older than a day', async () => {
    const s = await import('../app/state.ts');
    expect(s.ageText(new Date('2026-03-10T11:59:30Z'), now)).toBe('less than a minute ago');
    expect(s.ageText(new Date('2026-03-10T11:55:00Z'), now)).toBe('5 minutes ago');
    expect(s.ageText(new Date('2026-03-10T09:00:00Z'), now)).toBe('3 hours ago');
    expect(s.ageText(new Date('2026-03-09T11:00:00Z'), now)).toBe('yesterday');
    expect(s.ageText(new Date('2026-03-07T12:00:00Z'), now)).toBe('3 days ago');
    expect(s.ageText(new Date('2025-12-01T12:00:00Z'), now)).toBe('3 months ago');
    expect(s.ageText(new Date('2026-03-11T12:00:00Z'), now)).toContain('in the future');

    const fresh = s.restoredLines(saved('2026-03-10T11:55:00Z'), now);
    expect(fresh).toEqual([
      `Restored your work from the last visit (${demo.name}).`,
      'Saved 5 minutes ago (2026-03-10 11:55 UTC); scenario from demo-scenario.json, on 2 terrain tiles: demo-tile_a.tif, demo-tile_b.tif.',
    ]);
    const old = s.restoredLines(saved('2026-03-07T12:00:00Z'), now, 'again');
    expect(old[0]).toMatch(
      /^Restored your work from the last visit \(.*\); its coverage is being computed again/,
    );
    expect(old[1]).toMatch(/^Saved 3 days ago \(2026-03-07 12:00 UTC\)/);
    expect(old[2]).toMatch(/more than a day old: check that its scenario and terrain/);
    // Work saved before the date was recorded: said so, and marked.
    const undated = s.restoredLines(saved(undefined), now, 'done');
    expect(undated[0]).toContain('and its coverage, computed again.');
    expect(undated[1]).toMatch(/^Saved at a time not recorded;/);
    expect(undated[2]).toMatch(/may be old/);
  });

  it('tells a full storage from other failures, says why, and that nothing is lost', async () => {
    const s = await import('../app/state.ts');
    const quota = new DOMException('The quota has been exceeded.', 'QuotaExceededError');
    expect(s.isQuotaError(quota)).toBe(true);
    expect(s.isQuotaError({ name: 'NS_ERROR_DOM_QUOTA_REACHED' })).toBe(true);
    expect(s.isQuotaError('QuotaExceededError: The quota has been exceeded.')).toBe(true);
    expect(s.isQuotaError(new Error('disk on fire'))).toBe(false);
    const lines = s.saveFailureLines(quota, { usage: 3 * 2 ** 30, quota: 3 * 2 ** 30 });
    expect(lines[0]).toBe(
      'Your work could not be saved in this browser: its storage for this site is full (QuotaExceededError: The quota has been exceeded.).',
    );
    expect(lines[1]).toMatch(/^This site uses 3\.0 GiB of the 3\.0 GiB the browser allows it/);
    expect(lines.at(-1)).toMatch(/Nothing is lost while this page stays open: download the scenario/);
    // Without the browser's figures, or another failure: still the reason, still the way out.
    expect(s.saveFailureLines(quota)).toHaveLength(2);
    const other = s.saveFailureLines(new TypeError('x is not a function'));
    expect(other[0]).toBe('Your work could not be saved in this browser (TypeError: x is not a function).');
    expect(other[1]).toMatch(/^Nothing is lost/);
  });
});
