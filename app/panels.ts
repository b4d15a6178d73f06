/**
 * The side panels, one function each, rebuilt from the state whenever it changes. Names are plain words of our
 * own. Inputs apply on change; a rejected value stays in its field, marked, with the message above the panel.
 */
import { DEFAULT_SOLVER_NODES } from '../shared/plan-limits.ts';
import { formatFl } from '../shared/units.ts';
import { FLUCTUATION_IDS, TRANSPONDER_IDS, type SensorType } from '../shared/scenario.ts';
import type { StudyConventions } from '../worker/study.ts';
import type { App } from './app.ts';
import { clear, download, h, table } from './dom.ts';
import { progressProxy } from './engine-client.ts';
import {
  allLevelsZip,
  compareLayersText,
  layerFileName,
  levelLayersText,
  savedScenarioText,
  scenarioFileName,
  summaryText,
} from './exports.ts';
import { isTiff, readPickedScenario, readPolygonFile } from './files.ts';
import { newStudySection, picks, sortDropped } from './new-study-panel.ts';
import { replaceSitesFromFile } from './sites-import.ts';
import {
  addSensorType,
  addVolume,
  editSite,
  editVolume,
  errorLines,
  removeLayout,
  removeSensorType,
  removeSite,
  removeVolume,
  replaceSensorType,
  COLD_DAY,
  dayOf,
  isColdDay,
  saveLayout,
  sensorSetKey,
  setDay,
  setFlightLevels,
  setNetwork,
  setTarget,
  setVolumeTarget,
  stateFromScenario,
  toggleSensor,
  useLayout,
  type FoldKind,
  type LayerId,
  type SensorRef,
  type WorkState,
} from './state.ts';
import {
  fmtAltitude,
  fmtArea,
  fmtCost,
  fmtLevel,
  fmtPct,
  DEMAND_WEIGHT_TEXT,
  fmtDemandWeight,
  heightInputM,
  heightToUser,
  heightUnit,
  rangeInputNm,
  rangeUnit,
} from './units.ts';

export type PanelId =
  | 'ground'
  | 'sites'
  | 'types'
  | 'volumes'
  | 'coverage'
  | 'plan'
  | 'outages'
  | 'layouts'
  | 'profile'
  | 'files';

export const PANELS: [PanelId, string][] = [
  ['ground', 'Ground'],
  ['sites', 'Sites'],
  ['types', 'Sensor types'],
  ['volumes', 'Airspace'],
  ['coverage', 'Coverage'],
  ['plan', 'Plan'],
  ['outages', 'Outages'],
  ['layouts', 'Layouts'],
  ['profile', 'Profile'],
  ['files', 'Files'],
];

export function renderPanel(app: App, el: HTMLElement): void {
  if (!app.state) {
    clear(el, h('p', {}, 'Loading…'));
    return;
  }
  const builders: Record<PanelId, (app: App) => HTMLElement> = {
    ground: groundPanel,
    sites: sitesPanel,
    types: typesPanel,
    volumes: volumesPanel,
    coverage: coveragePanel,
    plan: planPanel,
    outages: outagesPanel,
    layouts: layoutsPanel,
    profile: profilePanel,
    files: filesPanel,
  };
  const panel = builders[app.panel](app);
  // Fields marked data-keep hold what the user typed across redraws of the panel (a job's start redraws it).
  for (const f of panel.querySelectorAll<HTMLInputElement>('[data-keep][id]')) {
    const v = app.form[f.id];
    if (v === undefined) continue;
    if (f.type === 'checkbox') f.checked = v === 'true';
    else f.value = v;
  }
  const remember = (e: Event) => {
    const f = e.target as HTMLInputElement;
    if (f.id && f.hasAttribute('data-keep'))
      app.form[f.id] = f.type === 'checkbox' ? String(f.checked) : f.value;
  };
  panel.addEventListener('input', remember);
  panel.addEventListener('change', remember);
  clear(el, panel);
}

/** Applies an edit of the state; a thrown error marks the input and shows the message (the value is kept). */
async function tryEdit(
  app: App,
  input: HTMLElement | null,
  edit: () => WorkState,
  opts: { recompute?: boolean } = {},
): Promise<void> {
  let next: WorkState;
  try {
    next = edit();
  } catch (e) {
    input?.classList.add('invalid');
    app.say('error', errorLines(e));
    return;
  }
  input?.classList.remove('invalid');
  await app.commit(next, opts);
}

function numberIn(
  value: number | '',
  attrs: Record<string, string | number>,
  onValue: (v: number, el: HTMLInputElement) => void,
): HTMLInputElement {
  const el = h('input', { type: 'number', value, step: 'any', ...attrs });
  el.addEventListener('change', () => {
    const v = el.value.trim() === '' ? NaN : Number(el.value);
    onValue(v, el);
  });
  return el;
}

function section(title: string, ...children: (Node | string | null | false)[]): HTMLElement {
  return h('section', { className: 'block' }, h('h3', {}, title), ...children);
}

function filePicker(
  id: string,
  label: string,
  accept: string,
  multiple: boolean,
  onFiles: (f: File[]) => void,
) {
  const input = h('input', { type: 'file', id, accept, multiple });
  input.addEventListener('change', () => {
    const files = [...(input.files ?? [])];
    input.value = '';
    if (files.length) onFiles(files);
  });
  return h('label', { className: 'picker' }, label, ' ', input);
}

/** A drop area for files (the whole panel area also accepts drops, see main.ts). */
function dropZone(text: string, onFiles: (f: File[]) => void): HTMLElement {
  const z = h('div', { className: 'drop' }, text);
  z.addEventListener('dragover', (e) => {
    e.preventDefault();
    z.classList.add('over');
  });
  z.addEventListener('dragleave', () => z.classList.remove('over'));
  z.addEventListener('drop', (e) => {
    e.preventDefault();
    e.stopPropagation();
    z.classList.remove('over');
    const files = [...(e.dataTransfer?.files ?? [])];
    if (files.length) onFiles(files);
  });
  return z;
}

// ------------------------------------------------------------------------------------------------- ground

export async function loadTerrainFiles(app: App, files: File[], replace: boolean): Promise<void> {
  const tiffs = files.filter((f) => isTiff(f.name));
  if (tiffs.length === 0) {
    app.say(
      'error',
      `${files.map((f) => f.name).join(', ')}: found no .tif file; expected GeoTIFF DEM tiles`,
    );
    return;
  }
  await app.job('Terrain', async (progress) => {
    progress(0.1, `reading ${tiffs.length} tile${tiffs.length > 1 ? 's' : ''}`);
    // The scenario names its terrain files: follow the loaded tiles.
    const names = replace
      ? tiffs.map((f) => f.name)
      : [...new Set([...(await app.engine.tileNames()), ...tiffs.map((f) => f.name)])];
    const doc = { ...app.state.doc, terrain: { files: names } };
    let r;
    try {
      r = await app.engine.loadTiles(
        tiffs.map((f) => ({ name: f.name, file: f })),
        replace,
        { input: doc, display: app.state.source },
      );
    } catch (e) {
      // Tiles that do not hold the present sites or volumes: the way on is a new study on them.
      if (!(e instanceof Error && /outside the terrain/.test(e.message))) throw e;
      app.say('error', ['The tiles were not loaded; your work is unchanged.', ...errorLines(e)], {
        label: 'Start a new study on these tiles',
        run: () => {
          picks.tiles = tiffs;
          app.showPanel('files');
          document.getElementById('new-study')?.scrollIntoView({ block: 'start' });
        },
      });
      return;
    }
    app.adoptLoaded({ ...app.state, doc, failed: [] }, r.terrain, r.study!);
    app.save();
    await app.afterTerrain();
    app.say('info', `Terrain: ${r.terrain.tiles.length} tile(s) loaded.`);
  });
}

function groundPanel(app: App): HTMLElement {
  const t = app.terrain;
  const replace = h('input', { type: 'checkbox', id: 'terrain-replace', checked: true, 'data-keep': true });
  const onFiles = (files: File[]) => void loadTerrainFiles(app, files, replace.checked);
  return h(
    'div',
    {},
    h('h2', {}, 'Ground'),
    h(
      'p',
      { className: 'hint' },
      'GeoTIFF elevation tiles (DEM), metres above mean sea level. Voids are filled from their neighbours and counted.',
    ),
    filePicker('terrain-files', 'Load tiles', '.tif,.tiff,image/tiff', true, onFiles),
    h('label', {}, replace, ' replace the loaded tiles (otherwise add to them)'),
    dropZone('…or drop .tif files here', onFiles),
    t
      ? section(
          'What was read',
          h(
            'p',
            {},
            `Mosaic ${t.width} × ${t.height} px, ${t.bounds.west.toFixed(3)}…${t.bounds.east.toFixed(3)}° E, ${t.bounds.south.toFixed(3)}…${t.bounds.north.toFixed(3)}° N; ${t.unknownCells.toLocaleString('en')} px without data; terrain ${t.shared ? 'shared by' : 'copied to'} ${app.poolSize} workers.`,
          ),
          table(
            ['tile', 'size px', 'extent', 'pixel', 'voids filled', 'heights'],
            t.tiles.map((x) => [
              x.name,
              `${x.width} × ${x.height}`,
              `${x.west.toFixed(2)}…${x.east.toFixed(2)} E, ${x.south.toFixed(2)}…${x.north.toFixed(2)} N`,
              `${x.pixel.x.toFixed(2)} × ${x.pixel.y.toFixed(2)} ${x.pixel.unit === 'arcsec' ? '″' : 'm'}`,
              x.voidsFilled.toLocaleString('en'),
              `${Math.round(x.minM)}…${Math.round(x.maxM)} m`,
            ]),
            { id: 'tile-table' },
          ),
        )
      : h('p', {}, 'No terrain loaded.'),
  );
}

// -------------------------------------------------------------------------------------------------- sites

function sitesPanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const types = s.doc.sensorTypes;
  const inNet = (siteId: string, typeId: string) =>
    s.network.some((r) => r.siteId === siteId && r.typeId === typeId);
  const addBtn = h(
    'button',
    {
      id: 'add-site',
      className: app.mode === 'add-site' ? 'active' : '',
      onclick: () => {
        app.setMode(app.mode === 'add-site' ? 'none' : 'add-site');
        app.render();
      },
    },
    app.mode === 'add-site'
      ? 'Click the map to place the site… (click here to stop)'
      : 'Add a site by clicking the map',
  );
  const importSites = filePicker(
    'sites-file',
    'Replace sites from a file (GeoJSON or CSV)',
    '.geojson,.json,.csv',
    false,
    (files) => void replaceSitesFromFile(app, files[0]),
  );
  const rows = s.doc.sites.features.map((f) => {
    const p = f.properties;
    const [lon, lat] = f.geometry.coordinates;
    const name = h('input', { type: 'text', value: p.name, 'aria-label': `name of ${p.id}` });
    name.addEventListener(
      'change',
      () => void tryEdit(app, name, () => editSite(app.state, p.id, { name: name.value })),
    );
    const allowed = p.allowedTypes ?? types.map((t) => t.id);
    const typeBoxes = types.map((t) => {
      const allow = h('input', {
        type: 'checkbox',
        checked: allowed.includes(t.id),
        title: `allow ${t.name}`,
      });
      allow.addEventListener('change', () => {
        const list = types
          .map((x) => x.id)
          .filter((id) => (id === t.id ? allow.checked : allowed.includes(id)));
        void tryEdit(app, allow, () =>
          editSite(app.state, p.id, { allowedTypes: list.length === types.length ? null : list }),
        );
      });
      const use = h('input', {
        type: 'checkbox',
        checked: inNet(p.id, t.id),
        disabled: !allowed.includes(t.id),
        'data-sensor': `${p.id}|${t.id}`,
        title: `in the network: ${t.name}`,
      });
      use.addEventListener('change', () => {
        app.setView(toggleSensor(app.state, p.id, t.id, use.checked));
        app.refreshVectors();
      });
      return h('span', { className: 'type-cell' }, h('span', { className: 'type-id' }, t.id), allow, use);
    });
    return h(
      'tr',
      { 'data-row': p.id },
      h('td', {}, name, h('div', { className: 'sub' }, p.id)),
      h(
        'td',
        {},
        numberIn(
          lon,
          { 'aria-label': `lon of ${p.id}`, className: 'coord' },
          (v, el) => void tryEdit(app, el, () => editSite(app.state, p.id, { lon: v })),
        ),
        numberIn(
          lat,
          { 'aria-label': `lat of ${p.id}`, className: 'coord' },
          (v, el) => void tryEdit(app, el, () => editSite(app.state, p.id, { lat: v })),
        ),
      ),
      h(
        'td',
        {},
        numberIn(
          heightToUser(p.mastHeightM, u),
          { 'aria-label': `mast of ${p.id}`, className: 'short stacked', min: 0 },
          (v, el) =>
            void tryEdit(app, el, () =>
              editSite(app.state, p.id, {
                mastHeightM: heightInputM(v, u, `mast height of ${p.name} (${p.id}, mastHeightM)`),
              }),
            ),
        ),
        numberIn(
          p.tiltDeg ?? 0,
          {
            'aria-label': `tilt of ${p.id}`,
            className: 'short stacked',
            min: -10,
            max: 20,
            step: 0.1,
            title: 'antenna tilt, degrees above the horizontal (−10 to 20; empty = 0)',
          },
          (v, el) =>
            void tryEdit(app, el, () =>
              editSite(app.state, p.id, { tiltDeg: el.value.trim() === '' ? null : v }),
            ),
        ),
      ),
      h(
        'td',
        {},
        numberIn(
          p.siteCost,
          { 'aria-label': `cost of ${p.id}`, className: 'short', min: 0 },
          (v, el) => void tryEdit(app, el, () => editSite(app.state, p.id, { siteCost: v })),
        ),
      ),
      h(
        'td',
        {},
        (() => {
          const c = h('input', { type: 'checkbox', checked: p.existing, 'aria-label': `${p.id} exists` });
          c.addEventListener(
            'change',
            () => void tryEdit(app, c, () => editSite(app.state, p.id, { existing: c.checked })),
          );
          return c;
        })(),
      ),
      h('td', { className: 'types' }, ...typeBoxes),
      h(
        'td',
        {},
        h(
          'button',
          {
            className: 'small',
            title: `remove ${p.id}`,
            'aria-label': `remove ${p.id}`,
            onclick: () => void tryEdit(app, null, () => removeSite(app.state, p.id)),
          },
          '✕',
        ),
      ),
    );
  });
  return h(
    'div',
    {},
    h('h2', {}, 'Sites'),
    h(
      'p',
      { className: 'hint' },
      `Drag a marker to move its site. Per sensor type: first box = allowed at the site, second = in the network being looked at (${s.network.length} sensors).`,
    ),
    addBtn,
    importSites,
    h(
      'table',
      { id: 'site-table', className: 'wide' },
      h(
        'thead',
        {},
        h(
          'tr',
          {},
          h('th', {}, 'Name / id'),
          h('th', {}, 'Lon, lat (°)'),
          h('th', {}, `Mast (${heightUnit(u)}) / tilt (°)`),
          h('th', {}, 'Site cost (M)'),
          h('th', {}, 'Exists'),
          h('th', {}, 'Types: allowed · in network'),
          h('th', {}, ''),
        ),
      ),
      h('tbody', {}, ...rows),
    ),
  );
}

// ------------------------------------------------------------------------------------------- sensor types

function typesPanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const editor = h('textarea', {
    id: 'type-json',
    'data-keep': true,
    rows: 14,
    spellcheck: 'false',
    'aria-label': 'sensor type (JSON)',
  });
  let editing: string | null = app.form['type-editing'] ?? null;
  // The common fields edit in place; the rest (pattern, detection) in the JSON editor below.
  const patch = (t: SensorType, el: HTMLElement, change: Partial<SensorType>) =>
    void tryEdit(app, el, () => replaceSensorType(app.state, t.id, { ...t, ...change }));
  const rangeToUser = (nm: number) => (u === 'aviation' ? nm : Math.round(nm * 1.852 * 10) / 10);
  const rows = s.doc.sensorTypes.map((t) => [
    (() => {
      const name = h('input', { type: 'text', value: t.name, 'aria-label': `name of ${t.id}` });
      name.addEventListener('change', () => patch(t, name, { name: name.value }));
      return h('span', {}, name, h('div', { className: 'sub' }, t.id));
    })(),
    t.kind === 'primary' ? 'PSR' : 'SSR',
    `${t.frequencyMHz} MHz`,
    numberIn(
      rangeToUser(t.instrumentedRangeNm),
      { className: 'short', min: 0, 'aria-label': `range of ${t.id}` },
      (v, el) =>
        void tryEdit(app, el, () =>
          replaceSensorType(app.state, t.id, {
            ...t,
            instrumentedRangeNm: rangeInputNm(
              v,
              u,
              `instrumented range of ${t.id} (instrumentedRangeNm)`,
              t.minRangeNm ?? 0,
            ),
          }),
        ),
    ),
    numberIn(
      t.maxElevationDeg,
      { className: 'tiny', min: 0, max: 90, 'aria-label': `max elevation of ${t.id}` },
      (v, el) => patch(t, el, { maxElevationDeg: v }),
    ),
    numberIn(t.cost, { className: 'short', min: 0, 'aria-label': `cost of ${t.id}` }, (v, el) =>
      patch(t, el, { cost: v }),
    ),
    h(
      'span',
      {},
      h(
        'button',
        {
          className: 'small',
          onclick: () => {
            editing = t.id;
            app.form['type-editing'] = t.id;
            editor.value = JSON.stringify(t, null, 2);
            title.textContent = `Editing ${t.id}`;
          },
        },
        'Edit',
      ),
      h(
        'button',
        {
          className: 'small',
          title: `remove ${t.id}`,
          'aria-label': `remove ${t.id}`,
          onclick: () => void tryEdit(app, null, () => removeSensorType(app.state, t.id)),
        },
        '✕',
      ),
    ),
  ]);
  const title = h('strong', {}, 'New type (JSON, the scenario file’s form)');
  const template = s.doc.sensorTypes[0];
  if (template)
    editor.value = JSON.stringify(
      { ...template, id: `${template.id}-copy`, name: `${template.name} (copy)` },
      null,
      2,
    );
  const apply = () => {
    let parsed: unknown;
    try {
      parsed = JSON.parse(editor.value);
    } catch (e) {
      editor.classList.add('invalid');
      app.say(
        'error',
        `sensor type: found text that is not JSON (${(e as Error).message}); expected one sensor type object`,
      );
      return;
    }
    void tryEdit(app, editor, () =>
      editing
        ? replaceSensorType(app.state, editing, parsed as SensorType)
        : addSensorType(app.state, parsed),
    );
  };
  return h(
    'div',
    {},
    h('h2', {}, 'Sensor types'),
    table(
      [
        'Name / id',
        'Kind',
        'Frequency',
        `Instrumented range (${rangeUnit(u)})`,
        'Max elevation (°)',
        'Cost (M)',
        '',
      ],
      rows,
      {
        id: 'type-table',
        className: 'wide',
      },
    ),
    section(
      'Add or edit',
      title,
      editor,
      h('button', { id: 'type-apply', onclick: apply }, 'Check and apply'),
      h(
        'p',
        { className: 'hint' },
        'Ranges in the file are in NM, heights in m; a type that fails the schema is not applied and the text stays here.',
      ),
    ),
  );
}

// ------------------------------------------------------------------------------------------------ volumes

function volumesPanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const rows = s.doc.volumes.map((v) => {
    const name = h('input', { type: 'text', value: v.name, 'aria-label': `name of ${v.id}` });
    name.addEventListener(
      'change',
      () => void tryEdit(app, name, () => editVolume(app.state, v.id, { name: name.value })),
    );
    const num = (key: 'flMin' | 'flMax' | 'weight', val: number) =>
      numberIn(
        val,
        { className: 'short', 'aria-label': `${key} of ${v.id}` },
        (x, el) => void tryEdit(app, el, () => editVolume(app.state, v.id, { [key]: x })),
      );
    const fold = (k: 'any' | 'primary' | 'secondary') =>
      numberIn(
        v.requiredFold[k] ?? 0,
        { className: 'tiny', min: 0, 'aria-label': `${k} sites required in ${v.id}` },
        (x, el) =>
          void tryEdit(app, el, () => {
            const rf = { ...v.requiredFold, [k]: x };
            if (!x) delete rf[k];
            return editVolume(app.state, v.id, { requiredFold: rf });
          }),
      );
    return [
      h('span', {}, name, h('div', { className: 'sub' }, v.id)),
      h('span', {}, num('flMin', v.flMin), ' – ', num('flMax', v.flMax)),
      h(
        'span',
        { className: 'folds' },
        'any ',
        fold('any'),
        ' PSR ',
        fold('primary'),
        ' SSR ',
        fold('secondary'),
      ),
      num('weight', v.weight ?? 1),
      h(
        'button',
        { className: 'small', onclick: () => void tryEdit(app, null, () => removeVolume(app.state, v.id)) },
        'Remove',
      ),
    ];
  });
  const drawing = app.mode === 'draw';
  const newName = h('input', {
    type: 'text',
    id: 'volume-name',
    'data-keep': true,
    value: `Volume ${s.doc.volumes.length + 1}`,
  });
  const finish = () => {
    if (app.draft.length < 3) {
      app.say('error', `volume: found ${app.draft.length} points; expected at least 3 (click the map)`);
      return;
    }
    const ring = [...app.draft, app.draft[0]];
    // Exterior rings counter-clockwise (GeoJSON, RFC 7946).
    let area = 0;
    for (let i = 0; i < ring.length - 1; i++)
      area += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
    if (area < 0) ring.reverse();
    const fls = s.doc.flightLevels;
    void tryEdit(app, null, () =>
      addVolume(app.state, {
        name: newName.value.trim() || 'New volume',
        polygon: { type: 'Polygon', coordinates: [ring] },
        flMin: fls[0],
        flMax: fls[fls.length - 1],
        requiredFold: { any: 1 },
        weight: 1,
      }),
    ).then(() => {
      app.setMode('none');
      app.render();
    });
  };
  return h(
    'div',
    {},
    h('h2', {}, 'Airspace'),
    targetSection(app),
    h('h3', {}, 'Volumes'),
    h(
      'p',
      { className: 'hint' },
      `Volumes to be seen: a polygon, a band of flight levels (${fmtLevel(s.doc.flightLevels[0], app.levelAltitudeM(s.doc.flightLevels[0]), u)} …), the number of distinct sites required per kind, and a weight for the planner.`,
    ),
    table(['Name / id', 'Band (FL)', 'Sites required', 'Weight', ''], rows, {
      id: 'volume-table',
      className: 'wide',
    }),
    volumeTargets(app),
    section(
      'New volume',
      h('label', {}, 'Name ', newName),
      h(
        'button',
        {
          id: 'draw-volume',
          className: drawing ? 'active' : '',
          onclick: () => {
            app.setMode(drawing ? 'none' : 'draw');
            app.render();
          },
        },
        drawing ? `Drawing: ${app.draft.length} points (click here to stop)` : 'Draw on the map',
      ),
      drawing ? h('button', { id: 'finish-volume', onclick: finish }, 'Finish the polygon') : null,
      filePicker(
        'volume-file',
        'Import polygons (GeoJSON)',
        '.geojson,.json',
        false,
        (files) =>
          void (async () => {
            try {
              const polys = await readPolygonFile(files[0]);
              const fls = app.state.doc.flightLevels;
              let next = app.state;
              for (const p of polys)
                next = addVolume(next, {
                  name: p.name,
                  polygon: p.polygon as never,
                  flMin: fls[0],
                  flMax: fls[fls.length - 1],
                  requiredFold: { any: 1 },
                  weight: 1,
                });
              await app.commit(next);
            } catch (e) {
              app.fail(e);
            }
          })(),
      ),
    ),
  );
}

// ------------------------------------------------------------------------------------------------- target

type FluctuationId = (typeof FLUCTUATION_IDS)[number];
type TransponderId = (typeof TRANSPONDER_IDS)[number];

/** Swerling cases in plain words: whether the echo fluctuates, and how fast. */
const FLUCTUATION_LABELS: Record<FluctuationId, string> = {
  swerling0: 'Swerling 0 (steady echo)',
  swerling1: 'Swerling 1 (fluctuates scan to scan)',
  swerling2: 'Swerling 2 (fluctuates pulse to pulse)',
  swerling3: 'Swerling 3 (one strong reflector, scan to scan)',
  swerling4: 'Swerling 4 (one strong reflector, pulse to pulse)',
};
/** Short forms for the per-volume table. */
const FLUCTUATION_SHORT: Record<FluctuationId, string> = {
  swerling0: 'Swerling 0 (steady)',
  swerling1: 'Swerling 1',
  swerling2: 'Swerling 2',
  swerling3: 'Swerling 3',
  swerling4: 'Swerling 4',
};
/** Transponder classes in plain words (the class's minimum reply power). */
const TRANSPONDER_LABELS: Record<TransponderId, string> = {
  'low-power': 'Low power, 70 W or more (below 15,000 ft, up to 175 kt)',
  'high-power': 'High power, 125 W or more (above 15,000 ft or faster than 175 kt)',
};
const TRANSPONDER_SHORT: Record<TransponderId, string> = {
  'low-power': 'low power',
  'high-power': 'high power',
};

function choice<T extends string>(
  attrs: Record<string, string>,
  options: [T | '', string][],
  value: T | '',
  onValue: (v: T | '', el: HTMLSelectElement) => void,
): HTMLSelectElement {
  const el = h('select', attrs, ...options.map(([v, label]) => h('option', { value: v }, label)));
  el.value = value;
  el.addEventListener('change', () => onValue(el.value as T | '', el));
  return el;
}

/** The study's target: what every primary must detect and every secondary must hear. */
function targetSection(app: App): HTMLElement {
  const d = app.state.doc;
  const rcs = numberIn(
    d.targetRcsM2,
    { id: 'target-rcs', className: 'short', min: 0, 'aria-label': 'target radar cross-section (m²)' },
    (v, el) => void tryEdit(app, el, () => setTarget(app.state, { targetRcsM2: v })),
  );
  const fluct = choice(
    { id: 'target-fluctuation', 'aria-label': 'target fluctuation' },
    FLUCTUATION_IDS.map((x) => [x, FLUCTUATION_LABELS[x]]),
    d.targetFluctuation,
    (v, el) => void tryEdit(app, el, () => setTarget(app.state, { targetFluctuation: v as FluctuationId })),
  );
  const xpdr = choice(
    { id: 'target-transponder', 'aria-label': 'target transponder' },
    TRANSPONDER_IDS.map((x) => [x, TRANSPONDER_LABELS[x]]),
    d.targetTransponder,
    (v, el) => void tryEdit(app, el, () => setTarget(app.state, { targetTransponder: v as TransponderId })),
  );
  return h(
    'section',
    { className: 'block target', id: 'target' },
    h('h3', {}, 'Target aircraft'),
    h(
      'p',
      { className: 'hint' },
      'What every sensor must see. A primary radar sees the aircraft by its echo: its radar cross-section (RCS) and how that echo fluctuates. A secondary radar sees it by its transponder’s replies.',
    ),
    h('div', { className: 'field' }, h('label', { for: 'target-rcs' }, 'Radar cross-section (m²)'), rcs),
    h('div', { className: 'field' }, h('label', { for: 'target-fluctuation' }, 'Echo fluctuation'), fluct),
    h('div', { className: 'field' }, h('label', { for: 'target-transponder' }, 'Transponder'), xpdr),
  );
}

/** Each volume's own target (blank or "study's" = the study's target). */
function volumeTargets(app: App): HTMLElement | null {
  const s = app.state;
  if (s.doc.volumes.length === 0) return null;
  const rows = s.doc.volumes.map((v) => {
    const rcs = numberIn(
      v.targetRcsM2 ?? '',
      {
        className: 'short',
        min: 0,
        placeholder: String(s.doc.targetRcsM2),
        'aria-label': `target RCS of ${v.id}`,
      },
      (x, el) =>
        void tryEdit(app, el, () =>
          setVolumeTarget(app.state, v.id, { targetRcsM2: el.value.trim() === '' ? null : x }),
        ),
    );
    const fluct = choice(
      { 'aria-label': `target fluctuation of ${v.id}`, title: 'echo fluctuation (Swerling case)' },
      [
        ['', `study’s: ${FLUCTUATION_SHORT[s.doc.targetFluctuation]}`],
        ...FLUCTUATION_IDS.map((x): [FluctuationId, string] => [x, FLUCTUATION_SHORT[x]]),
      ],
      v.targetFluctuation ?? '',
      (x, el) =>
        void tryEdit(app, el, () =>
          setVolumeTarget(app.state, v.id, { targetFluctuation: x === '' ? null : x }),
        ),
    );
    const xpdr = choice(
      {
        'aria-label': `target transponder of ${v.id}`,
        title: 'low power: 70 W or more; high power: 125 W or more',
      },
      [
        ['', `study’s: ${TRANSPONDER_SHORT[s.doc.targetTransponder]}`],
        ...TRANSPONDER_IDS.map((x): [TransponderId, string] => [x, TRANSPONDER_SHORT[x]]),
      ],
      v.targetTransponder ?? '',
      (x, el) =>
        void tryEdit(app, el, () =>
          setVolumeTarget(app.state, v.id, { targetTransponder: x === '' ? null : x }),
        ),
    );
    return [v.name, rcs, fluct, xpdr];
  });
  return h(
    'div',
    {},
    h(
      'p',
      { className: 'hint' },
      'A volume may study an aircraft of its own (e.g. small aircraft in a terminal area); blank = the target above.',
    ),
    table(['Volume', 'RCS (m²)', 'Fluctuation', 'Transponder'], rows, {
      id: 'volume-target-table',
      className: 'wide',
    }),
  );
}

// ----------------------------------------------------------------------------------------------- coverage

const LAYER_NAMES: [LayerId, string][] = [
  ['relief', 'Shaded relief'],
  ['floor', 'Network floor'],
  ['fold', 'Sites seeing each cell'],
  ['gap', 'Gaps in volumes'],
  ['loss', 'Outage losses'],
  ['compare', 'Layout differences'],
  ['volumes', 'Volume outlines'],
  ['sites', 'Sites'],
];

function viewControls(app: App): HTMLElement {
  const s = app.state;
  const levels = app.coverage?.flightLevels ?? s.doc.flightLevels;
  const fl = h(
    'select',
    {
      id: 'view-fl',
      onchange: () => {
        app.setView({ ...app.state, view: { ...app.state.view, fl: Number(fl.value) } });
        void app.refreshImages();
      },
    },
    ...levels.map((x) => h('option', { value: x }, fmtLevel(x, app.levelAltitudeM(x), s.units))),
  );
  fl.value = String(s.view.fl);
  const kind = h(
    'select',
    {
      id: 'view-kind',
      onchange: () => {
        app.setView({ ...app.state, view: { ...app.state.view, kind: kind.value as FoldKind } });
        void app.refreshImages(['fold']);
      },
    },
    h('option', { value: 'any' }, 'any kind'),
    h('option', { value: 'primary' }, 'PSR only'),
    h('option', { value: 'secondary' }, 'SSR only'),
  );
  kind.value = s.view.kind;
  const layerRows = LAYER_NAMES.map(([id, label]) => {
    const set = s.view.layers[id];
    const on = h('input', { type: 'checkbox', checked: set.on, id: `layer-${id}` });
    const op = h('input', {
      type: 'range',
      min: 0,
      max: 1,
      step: 0.05,
      value: set.opacity,
      'aria-label': `${label} opacity`,
    });
    const update = () => {
      const layers = { ...app.state.view.layers, [id]: { on: on.checked, opacity: Number(op.value) } };
      app.setView({ ...app.state, view: { ...app.state.view, layers } });
      if (on.checked !== set.on) void app.refreshImages();
    };
    on.addEventListener('change', update);
    op.addEventListener('change', update);
    return h('div', { className: 'layer-row' }, h('label', {}, on, ' ', label), op);
  });
  return section('Map', h('label', {}, 'Level shown ', fl), h('label', {}, ' Count ', kind), ...layerRows);
}

function coveragePanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const flText = h('input', {
    type: 'text',
    id: 'fl-list',
    value: s.doc.flightLevels.join(', '),
    'aria-label': 'flight levels',
  });
  flText.addEventListener('change', () => {
    const parts = flText.value.split(/[\s,;]+/).filter((x) => x !== '');
    const fls = parts.map((x) => Number(x.replace(/^FL/i, '')));
    void tryEdit(app, flText, () => {
      if (parts.length === 0 || fls.some((x) => !Number.isInteger(x)))
        throw new Error(
          `flight levels: found "${flText.value}"; expected whole flight levels separated by commas, e.g. 50, 100, 245`,
        );
      return setFlightLevels(app.state, fls);
    });
  });
  const c = app.coverage;
  const stale = c !== null && sensorSetKey(c.sensors) !== sensorSetKey(s.network);
  const result = c
    ? section(
        'Result',
        stale
          ? h(
              'p',
              { className: 'warn', id: 'coverage-stale' },
              'The network has changed since this was computed: compute again to see it.',
            )
          : null,
        h(
          'p',
          { id: 'coverage-summary' },
          `${c.sensors.length} sensors; ${c.computed} footprints computed, ${c.cached} from the cache; ${(c.timingsMs.total / 1000).toFixed(1)} s.`,
        ),
        conventionsBlock(app, c.conventions, c.warnings),
        table(
          ['Volume', 'Level', 'Area', 'Seen', 'Meets requirement'],
          c.volumes.map((v) => [
            s.doc.volumes.find((x) => x.id === v.volumeId)?.name ?? v.volumeId,
            levelCell(
              v.flightLevel,
              c.conventions.levels.find((l) => l.flightLevel === v.flightLevel)?.trueAltitudeM,
              u,
            ),
            fmtArea(v.areaKm2, u),
            fmtPct(v.coveredPct),
            fmtPct(v.meetsRequirementPct),
          ]),
          { id: 'coverage-table', className: 'wide' },
        ),
      )
    : h('p', { className: 'hint' }, 'No coverage yet for this network.');
  return h(
    'div',
    {},
    h('h2', {}, 'Coverage'),
    h(
      'p',
      { className: 'hint' },
      `Terrain-masked line of sight on an effective earth (k = ${+s.doc.earth.kFactor.toFixed(4)}), limited by each sensor's detection range, elevation and cone of silence. Network: ${s.network.length} sensors on ${new Set(s.network.map((r) => r.siteId)).size} sites.`,
    ),
    h('label', {}, 'Flight levels ', flText),
    dayControls(app),
    h(
      'div',
      {},
      h(
        'button',
        {
          id: 'run-coverage',
          className: 'primary',
          disabled: app.busy !== null,
          onclick: () => void app.runCoverage(),
        },
        'Compute coverage',
      ),
    ),
    result,
    viewControls(app),
  );
}

/** The day: one switch for a cold, low-pressure day, the two numbers, and the levels' true altitudes on it. */
function dayControls(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const day = dayOf(s);
  const edit = (el: HTMLElement, f: () => WorkState) => void tryEdit(app, el, f, { recompute: true });
  const cold = h('input', { type: 'checkbox', id: 'day-cold', checked: isColdDay(s) });
  cold.addEventListener('change', () =>
    edit(cold, () => setDay(app.state, cold.checked ? { ...COLD_DAY } : null)),
  );
  const qnh = numberIn(
    day.qnhHpa,
    { id: 'day-qnh', min: 870, max: 1090, 'aria-label': 'QNH (hPa)' },
    (v, el) => edit(el, () => setDay(app.state, { qnhHpa: v })),
  );
  const isa = numberIn(
    day.isaDeviationC,
    {
      id: 'day-isa',
      className: 'tiny',
      min: -60,
      max: 40,
      'aria-label': 'temperature vs. the standard atmosphere (°C)',
      title: 'degrees warmer (+) or colder (−) than the ICAO standard atmosphere, −60 to +40',
    },
    (v, el) => edit(el, () => setDay(app.state, { isaDeviationC: v })),
  );
  const c = app.study?.conventions;
  return h(
    'section',
    { className: 'block day', id: 'day' },
    h('h3', {}, 'The day'),
    h(
      'label',
      {},
      cold,
      ` Cold, low-pressure day (QNH ${COLD_DAY.qnhHpa} hPa, ${-COLD_DAY.isaDeviationC} °C colder than standard)`,
    ),
    h('div', {}, h('label', {}, 'QNH (hPa) ', qnh), h('label', {}, 'Temperature vs. standard (°C) ', isa)),
    c
      ? h(
          'p',
          { className: 'hint', id: 'level-altitudes' },
          `${c.day.text}. Flight levels are pressure altitudes; on this day they lie at ${c.levels
            .map((l) => `${formatFl(l.flightLevel)} ${fmtAltitude(l.trueAltitudeM, u)}`)
            .join(', ')}.`,
        )
      : null,
  );
}

/** A flight level in a table, its true altitude on the day below it. */
function levelCell(fl: number, altitudeM: number | undefined, u: WorkState['units']): HTMLElement {
  return h(
    'span',
    {},
    formatFl(fl),
    altitudeM === undefined ? null : h('div', { className: 'sub' }, fmtAltitude(altitudeM, u)),
  );
}

/** What a coverage run assumed — the target, the day, k — and the sensor models' warnings, if any. */
function conventionsBlock(app: App, c: StudyConventions, warnings: string[]): HTMLElement {
  const s = app.state;
  const volName = (id: string) => s.doc.volumes.find((v) => v.id === id)?.name ?? id;
  const standard = c.day.qnhHpa === 1013.25 && c.day.isaDeviationC === 0;
  return h(
    'div',
    { id: 'coverage-conventions', className: 'conventions' },
    h('div', {}, h('strong', {}, 'Target: '), c.target.text),
    ...c.volumeTargets.map((v) =>
      h('div', { className: 'sub-line' }, `${volName(v.volumeId)}: its own target, ${v.text}`),
    ),
    h(
      'div',
      {},
      h('strong', {}, 'Day: '),
      standard ? c.day.text : `${c.day.text} (each level at its true altitude on this day, as in the table)`,
    ),
    h(
      'div',
      {},
      h('strong', {}, 'Refraction: '),
      `k = ${+c.kFactor.toFixed(4)} (effective earth radius ${Math.round(c.kFactor * 6371).toLocaleString('en')} km); sea reflection ${c.multipath === 'auto' ? 'modelled over sea' : 'off'}`,
    ),
    h(
      'details',
      {},
      h('summary', {}, 'What “seen” means, and how each sensor type is specified'),
      h('p', {}, c.seen.replace(/^seen = /, 'Seen: ')),
      h('ul', {}, ...c.sensorTypes.map((t) => h('li', {}, h('strong', {}, `${t.id}: `), t.convention))),
    ),
    warnings.length
      ? h(
          'div',
          { className: 'warn', id: 'coverage-warnings' },
          h('strong', {}, `Sensor type warning${warnings.length > 1 ? 's' : ''}:`),
          h('ul', {}, ...warnings.map((w) => h('li', {}, w))),
        )
      : null,
    c.unevaluated?.length
      ? h(
          'div',
          { className: 'warn', id: 'coverage-unevaluated' },
          h('strong', {}, 'Not evaluated:'),
          h('ul', {}, ...c.unevaluated.map((w) => h('li', {}, w))),
        )
      : null,
  );
}

// --------------------------------------------------------------------------------------------------- plan

function planPanel(app: App): HTMLElement {
  const s = app.state;
  const budget = h('input', {
    type: 'number',
    id: 'plan-budget',
    'data-keep': true,
    min: 0,
    step: 'any',
    value: s.doc.budget ?? '',
  });
  const keep = h('input', { type: 'checkbox', id: 'plan-keep', checked: true, 'data-keep': true });
  // A work limit, not a clock: the same study gives the same plan on any machine (shared/plan-limits.ts).
  const nodes = h('input', {
    type: 'number',
    id: 'plan-nodes',
    'data-keep': true,
    min: 0,
    max: 100000,
    step: 1,
    value: DEFAULT_SOLVER_NODES,
    className: 'short',
  });
  const run = () =>
    void app.job('Plan', async (progress) => {
      const b = budget.value.trim() === '' ? null : Number(budget.value);
      const n = Number(nodes.value);
      if (!(Number.isInteger(n) && n >= 0 && n <= 100000))
        throw new Error(`solver nodes: found "${nodes.value}"; expected a whole number from 0 to 100000`);
      if (b !== null && !(b >= 0))
        throw new Error(`budget: found "${budget.value}"; expected a number ≥ 0 or empty for none`);
      const keepRefs = keep.checked
        ? app.state.network.filter(
            (r) =>
              app.state.doc.sites.features.find((f) => f.properties.id === r.siteId)?.properties.existing,
          )
        : [];
      app.plan = await app.engine.plan(
        {
          budget: b,
          keep: keepRefs,
          excludedSites: [],
          solverNodes: n,
        },
        progressProxy(progress),
      );
      app.nMinus1 = null;
      app.refreshVectors();
    });
  const p = app.plan;
  const result = p
    ? section(
        'Result',
        h(
          'dl',
          { id: 'plan-result', className: 'facts' },
          h('dt', {}, 'Cost'),
          h('dd', { id: 'plan-cost' }, fmtCost(p.cost)),
          h('dt', {}, p.mode === 'cover' ? 'Lower bound' : 'Covered weight'),
          h(
            'dd',
            {},
            p.mode === 'cover'
              ? fmtCost(p.lowerBound)
              : `${fmtDemandWeight(p.coveredWeight)} of ${fmtDemandWeight(p.totalWeight)} (${fmtPct(p.totalWeight > 0 ? (100 * p.coveredWeight) / p.totalWeight : 0)})`,
          ),
          h('dt', {}, 'Gap'),
          h('dd', {}, fmtPct(p.gapPct)),
          h('dt', {}, 'Method'),
          h('dd', {}, p.method),
          p.solverStop && p.solverStop !== 'nothing'
            ? h(
                'dd',
                { className: p.solverStop === 'safety time limit' ? 'warn' : 'hint' },
                p.solverStop === 'safety time limit'
                  ? 'Stopped by the safety time limit: this plan may differ on another machine.'
                  : 'Stopped at its work limit: the same plan on any machine; more nodes may narrow the gap.',
              )
            : null,
          h('dt', {}, 'Every requirement met'),
          h('dd', {}, p.demandMet ? 'yes' : 'no'),
        ),
        p.unmeetable.length
          ? h(
              'p',
              { className: 'warn' },
              `Some demand cannot be met by any allowed sensor: ${p.unmeetable.map((x) => `${x.points} points need ${x.required} ${x.kind}, best ${x.achievable}`).join('; ')}.`,
            )
          : null,
        table(
          ['Site', 'Sensor type', 'Cost'],
          p.entries.map((e) => [
            s.doc.sites.features.find((f) => f.properties.id === e.siteId)?.properties.name ?? e.siteId,
            s.doc.sensorTypes.find((t) => t.id === e.typeId)?.name ?? e.typeId,
            fmtCost(e.cost),
          ]),
          { id: 'plan-entries' },
        ),
        table(
          ['Volume', 'Level', 'Meets requirement'],
          p.volumes.map((v) => [
            s.doc.volumes.find((x) => x.id === v.volumeId)?.name ?? v.volumeId,
            formatFl(v.flightLevel),
            fmtPct(v.meetsRequirementPct),
          ]),
          { className: 'wide' },
        ),
        h(
          'button',
          {
            id: 'plan-use',
            onclick: () => {
              app.setView(
                setNetwork(
                  { ...app.state, failed: [] },
                  p.entries.map((e) => ({ siteId: e.siteId, typeId: e.typeId })),
                ),
              );
              app.refreshVectors();
              void app.runCoverage();
            },
          },
          'Look at this plan (coverage)',
        ),
        h(
          'button',
          {
            id: 'plan-n1',
            onclick: () =>
              void app.job('Outage table', async (progress) => {
                app.nMinus1 = await app.engine.outageTable(
                  p.entries.map((e) => ({ siteId: e.siteId, typeId: e.typeId })),
                  progressProxy(progress),
                );
                app.showPanel('outages');
              }),
          },
          'N−1 table of this plan',
        ),
      )
    : null;
  return h(
    'div',
    {},
    h('h2', {}, 'Plan'),
    h(
      'p',
      { className: 'hint' },
      'Chooses sites and sensor types that give every volume its required number of sites at the levels of its band at least cost (or, within a budget, the most demand). Existing sites cost nothing to open.',
    ),
    h('label', {}, 'Budget (M, empty = none) ', budget),
    h('label', {}, keep, ' keep the network’s sensors at existing sites'),
    h(
      'label',
      {
        title:
          'Branch-and-bound nodes the exact search may explore; 0 keeps the heuristic plan with the LP bound',
      },
      'Solver work limit (nodes) ',
      nodes,
    ),
    h(
      'div',
      {},
      h(
        'button',
        { id: 'run-plan', className: 'primary', disabled: app.busy !== null, onclick: run },
        'Make a plan',
      ),
    ),
    h(
      'p',
      { className: 'hint' },
      `Needs the footprint of every allowed site and type (${countCandidates(app)}); those already computed come from the cache.`,
    ),
    result,
    h(
      'p',
      { className: 'hint', id: 'plan-weight-hint' },
      `Costs in millions (M), as in the sites and sensor types. ${DEMAND_WEIGHT_TEXT} Within a budget the plan covers the most of it.`,
    ),
  );
}

function countCandidates(app: App): number {
  const s = app.state.doc;
  return s.sites.features.reduce(
    (a, f) => a + (f.properties.allowedTypes?.length ?? s.sensorTypes.length),
    0,
  );
}

// ------------------------------------------------------------------------------------------------ outages

/**
 * The study's whole demand weight (every volume cell at every level of its band, area × weight): from the last
 * coverage run's volume table, else from the last plan; undefined when neither is there.
 */
function totalDemandWeight(app: App): number | undefined {
  const c = app.coverage;
  if (c) {
    const w = new Map(app.state.doc.volumes.map((v) => [v.id, v.weight ?? 1]));
    return c.volumes.reduce((a, v) => a + v.areaKm2 * (w.get(v.volumeId) ?? 1), 0);
  }
  return app.plan?.totalWeight;
}

function outagesPanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const sites = [...new Set(s.network.map((r) => r.siteId))];
  const name = (id: string) =>
    s.doc.sites.features.find((f) => f.properties.id === id)?.properties.name ?? id;
  const o = app.outage;
  const boxes = sites.map((id) => {
    const c = h('input', { type: 'checkbox', checked: s.failed.includes(id), 'data-fail': id });
    c.addEventListener('change', () => void app.toggleFailure(id));
    return h('label', { className: 'fail-row' }, c, ' ', name(id));
  });
  const loss =
    o && o.failed.length
      ? section(
          'What is lost',
          h(
            'p',
            { id: 'outage-loss' },
            `${o.failed.map(name).join(', ')} down: ${fmtArea(o.areaKm2Lost, u)} of volume area lose their requirement at one level or more.`,
          ),
          h(
            'p',
            { id: 'outage-weight', title: DEMAND_WEIGHT_TEXT },
            `Demand weight lost: ${fmtDemandWeight(o.demandWeightLost, totalDemandWeight(app))}.`,
          ),
          table(
            ['Level', 'Volume area losing its requirement'],
            (app.coverage?.flightLevels ?? []).map((fl, i) => [
              formatFl(fl),
              fmtArea(o.lostKm2ByLevel[i] ?? 0, u),
            ]),
            { id: 'outage-levels' },
          ),
          table(
            ['Volume', 'Level', 'Area lost'],
            o.byVolume
              .filter((x) => x.areaKm2Lost > 0)
              .map((x) => [
                s.doc.volumes.find((v) => v.id === x.volumeId)?.name ?? x.volumeId,
                formatFl(x.flightLevel),
                fmtArea(x.areaKm2Lost, u),
              ]),
          ),
        )
      : h('p', { className: 'hint', id: 'outage-loss' }, 'No site failed.');
  const n1 = app.nMinus1;
  return h(
    'div',
    {},
    h('h2', {}, 'Outages'),
    h(
      'p',
      { className: 'hint' },
      'Click a site on the map, or tick it here, to take it down; the loss shows at once from the cached footprints.',
    ),
    app.coverage ? h('div', { className: 'fail-list' }, ...boxes) : h('p', {}, 'Compute coverage first.'),
    loss,
    section(
      'One site down at a time (N−1)',
      h(
        'button',
        {
          id: 'run-n1',
          disabled: app.busy !== null || !app.coverage,
          onclick: () =>
            void app.job('Outage table', async (progress) => {
              app.nMinus1 = await app.engine.outageTable(undefined, progressProxy(progress));
            }),
        },
        'Table for the current network',
      ),
      n1
        ? table(
            ['Site down', 'Volume area losing its requirement', 'Demand weight lost'],
            n1.map((x) => [
              name(x.siteId),
              fmtArea(x.areaKm2Lost, u),
              fmtDemandWeight(x.demandWeightLost, totalDemandWeight(app)),
            ]),
            { id: 'n1-table', className: 'wide' },
          )
        : null,
    ),
    h(
      'p',
      { className: 'hint', id: 'demand-weight-hint' },
      `Areas count a cell once however many volumes and levels it loses. ${DEMAND_WEIGHT_TEXT} The share is of the whole study’s demand.`,
    ),
  );
}

// ------------------------------------------------------------------------------------------------ layouts

function layoutsPanel(app: App): HTMLElement {
  const s = app.state;
  const u = s.units;
  const name = h('input', {
    type: 'text',
    id: 'layout-name',
    value: `Layout ${s.doc.layouts.length + 1}`,
    'data-keep': true,
  });
  const list = s.doc.layouts.map((l) => [
    l.name,
    `${l.sensors.length} sensors`,
    h(
      'span',
      {},
      h(
        'button',
        {
          className: 'small',
          onclick: () => {
            try {
              app.setView(useLayout({ ...app.state, failed: [] }, l.name));
              app.refreshVectors();
              app.say('info', `The network is now "${l.name}"; compute coverage to see it.`);
            } catch (e) {
              app.fail(e);
            }
          },
        },
        'Look at it',
      ),
      h(
        'button',
        { className: 'small', onclick: () => void tryEdit(app, null, () => removeLayout(app.state, l.name)) },
        'Delete',
      ),
    ),
  ]);
  const pick = (id: string, i: number) => {
    const sel = h(
      'select',
      { id, 'data-keep': true },
      ...s.doc.layouts.map((l) => h('option', { value: l.name }, l.name)),
    );
    if (s.doc.layouts[i]) sel.value = s.doc.layouts[i].name;
    return sel;
  };
  const a = pick('compare-a', 0);
  const b = pick('compare-b', 1);
  const cmp = app.compare;
  return h(
    'div',
    {},
    h('h2', {}, 'Layouts'),
    h(
      'p',
      { className: 'hint' },
      'A layout is a named set of sensors. Save the network you are looking at, or compare two.',
    ),
    h('label', {}, 'Name ', name),
    h(
      'button',
      { id: 'save-layout', onclick: () => void tryEdit(app, name, () => saveLayout(app.state, name.value)) },
      'Save the current network',
    ),
    table(['Layout', 'Sensors', ''], list, { id: 'layout-table' }),
    section(
      'Compare',
      h('label', {}, 'A ', a),
      h('label', {}, ' B ', b),
      h(
        'button',
        {
          id: 'run-compare',
          disabled: app.busy !== null || s.doc.layouts.length < 1,
          onclick: () =>
            void app.job('Compare', async (progress) => {
              const la = app.state.doc.layouts.find((l) => l.name === a.value);
              const lb = app.state.doc.layouts.find((l) => l.name === b.value);
              if (!la || !lb) throw new Error('compare: found a layout missing; expected two saved layouts');
              const r = await app.engine.compare(la.sensors, lb.sensors, progressProxy(progress));
              app.compare = { ...r, names: [la.name, lb.name] };
              await app.refreshImages();
            }),
        },
        'Compare',
      ),
      cmp
        ? h(
            'div',
            { id: 'compare-result' },
            h(
              'p',
              {},
              `${cmp.names[1]} gains ${fmtArea(cmp.gained.areaKm2, u)} and loses ${fmtArea(cmp.lost.areaKm2, u)} of served volume area against ${cmp.names[0]}; cost ${fmtCost(cmp.a.cost)} → ${fmtCost(cmp.b.cost)}.`,
            ),
            table(
              ['Volume', 'Level', `${cmp.names[0]}: meets`, `${cmp.names[1]}: meets`],
              cmp.a.volumes.map((v, i) => [
                s.doc.volumes.find((x) => x.id === v.volumeId)?.name ?? v.volumeId,
                formatFl(v.flightLevel),
                fmtPct(v.meetsRequirementPct),
                fmtPct(cmp.b.volumes[i]?.meetsRequirementPct ?? 0),
              ]),
              { className: 'wide side-by-side' },
            ),
          )
        : null,
    ),
  );
}

// ------------------------------------------------------------------------------------------------ profile

function profilePanel(app: App): HTMLElement {
  const s = app.state;
  const pick = app.diagramPick;
  const site = h(
    'select',
    { id: 'profile-site' },
    h('option', { value: '' }, '— site —'),
    ...s.doc.sites.features.map((f) => h('option', { value: f.properties.id }, f.properties.name)),
  );
  site.value = pick?.siteId ?? '';
  const siteProps = s.doc.sites.features.find((f) => f.properties.id === site.value)?.properties;
  const allowed = siteProps?.allowedTypes ?? s.doc.sensorTypes.map((t) => t.id);
  const type = h(
    'select',
    { id: 'profile-type' },
    h('option', { value: '' }, '— sensor type —'),
    ...s.doc.sensorTypes
      .filter((t) => allowed.includes(t.id))
      .map((t) => h('option', { value: t.id }, t.name)),
  );
  type.value = pick?.typeId && allowed.includes(pick.typeId) ? pick.typeId : '';
  const onPick = () => {
    app.diagramPick = { siteId: site.value, typeId: type.value };
    app.render();
  };
  site.addEventListener('change', onPick);
  type.addEventListener('change', onPick);
  const az = h('input', {
    type: 'number',
    id: 'profile-az',
    'data-keep': true,
    min: 0,
    max: 360,
    step: 0.1,
    value: app.azimuth,
    className: 'short',
  });
  const dragging = app.mode === 'azimuth';
  // The panel shows the diagram drawn at the panel's width (its text at full size); enlarged and saved, it is the
  // standard 960 × 560 drawing, asked for when wanted.
  const standard = async (): Promise<string | null> => {
    if (!pick?.typeId) return null;
    try {
      return await app.engine.diagram(pick.siteId, pick.typeId, app.azimuth, app.state.units);
    } catch (e) {
      app.fail(e);
      return null;
    }
  };
  let img: HTMLElement | null = null;
  if (app.diagramSvg && app.diagramUrl) {
    const im = h('img', {
      id: 'diagram',
      src: app.diagramUrl,
      alt: 'vertical coverage diagram',
      title: 'Click to enlarge',
    });
    im.addEventListener(
      'click',
      () =>
        void (async () => {
          const svg = await standard();
          if (!svg) return;
          const url = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }));
          const big = h(
            'dialog',
            { className: 'diagram-dialog' },
            h('img', { src: url, alt: 'vertical coverage diagram' }),
          );
          big.addEventListener('click', () => big.close());
          big.addEventListener('close', () => {
            big.remove();
            URL.revokeObjectURL(url);
          });
          document.body.appendChild(big);
          big.showModal();
        })(),
    );
    img = im;
  }
  return h(
    'div',
    {},
    h('h2', {}, 'Profile'),
    h(
      'p',
      { className: 'hint' },
      'A vertical coverage diagram along one azimuth: terrain profile, screening, detection envelope, cone of silence and flight levels. The azimuth is drawn on the map; click the diagram to enlarge it.',
    ),
    h('label', {}, 'Site ', site),
    h('label', {}, ' Type ', type),
    h(
      'div',
      {},
      h('label', {}, 'Azimuth (° true) ', az),
      h('button', { id: 'profile-draw', onclick: () => void app.drawDiagram(Number(az.value)) }, 'Draw'),
    ),
    h(
      'button',
      {
        id: 'profile-drag',
        className: dragging ? 'active' : '',
        onclick: () => {
          app.setMode(dragging ? 'none' : 'azimuth');
          app.render();
        },
      },
      dragging ? 'Press and drag on the map from the site… (click to stop)' : 'Drag an azimuth on the map',
    ),
    img,
    app.diagramSvg
      ? h(
          'button',
          {
            id: 'export-diagram',
            onclick: () =>
              void standard().then(
                (svg) =>
                  svg &&
                  download(
                    `profile-${pick?.siteId}-${pick?.typeId}-${app.azimuth}.svg`,
                    svg,
                    'image/svg+xml',
                  ),
              ),
          },
          'Save the diagram (SVG)',
        )
      : null,
  );
}

// -------------------------------------------------------------------------------------------------- files

export async function loadScenarioFiles(app: App, files: File[]): Promise<void> {
  // Read and check everything first: a bad file leaves the current work as it is.
  let picked;
  try {
    picked = await readPickedScenario(files);
  } catch (e) {
    // Tiles with sites (and no scenario file) are the makings of a new study: offer it.
    const makings = files.some((f) => isTiff(f.name)) && /no scenario file among them/.test(String(e));
    app.say(
      'error',
      ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)],
      makings
        ? {
            label: 'Start a new study with these files',
            run: () =>
              void sortDropped(files).then((notes) => {
                app.showPanel('files');
                if (notes.length) app.say('error', notes);
                document.getElementById('new-study')?.scrollIntoView({ block: 'start' });
              }),
          }
        : undefined,
    );
    return;
  }
  const state = stateFromScenario(picked.scenario, picked.source, app.state.units);
  if (picked.tiles.length === 0) {
    // Same terrain as now: the scenario must fit it.
    try {
      const study = await app.engine.setScenario(state.doc, state.source);
      app.adoptLoaded(state, app.terrain!, study);
      app.save();
      app.say('info', [
        `Loaded ${picked.source} on the terrain already loaded.`,
        ...(picked.missingTiles.length
          ? [
              `(The tiles it names were not picked: ${picked.missingTiles.slice(0, 4).join(', ')}${picked.missingTiles.length > 4 ? ', …' : ''}.)`,
            ]
          : []),
      ]);
    } catch (e) {
      // The engine keeps its previous study when setScenario throws.
      app.say('error', ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)]);
    }
    return;
  }
  await app.job('Scenario', async (progress) => {
    progress(0.2, 'reading terrain');
    try {
      const r = await app.engine.loadTiles(picked.tiles, true, { input: state.doc, display: state.source });
      app.adoptLoaded(state, r.terrain, r.study!);
      app.save();
      await app.afterTerrain();
      app.say('info', `Loaded ${picked.source}.`);
    } catch (e) {
      app.say('error', ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)]);
    }
  });
}

function filesPanel(app: App): HTMLElement {
  const s = app.state;
  const fl = h(
    'select',
    { id: 'export-fl' },
    ...(app.coverage?.flightLevels ?? []).map((x) => h('option', { value: x }, formatFl(x))),
  );
  fl.value = String(s.view.fl);
  /** Runs an export; a failure shows its message (nothing is written). */
  const exporting = (make: () => Promise<void>) => () => void make().catch((e: unknown) => app.fail(e));
  return h(
    'div',
    {},
    h('h2', {}, 'Files'),
    section(
      'Scenario',
      h(
        'button',
        {
          id: 'save-scenario',
          onclick: exporting(async () => download(scenarioFileName(app), await savedScenarioText(app))),
        },
        'Save the scenario file',
      ),
      filePicker(
        'scenario-file',
        'Open a scenario (with its sites, types and .tif files)',
        '.json,.geojson,.csv,.tif,.tiff',
        true,
        (files) => void loadScenarioFiles(app, files),
      ),
      dropZone('…or drop the files here', (files) => void loadScenarioFiles(app, files)),
      h(
        'button',
        {
          id: 'load-demo',
          onclick: () => {
            if (confirm('Replace your work with the demo? Save the scenario file first to keep it.'))
              void app.loadDemo();
          },
        },
        'Start again from the demo',
      ),
    ),
    section(
      'Export',
      app.coverage
        ? h(
            'div',
            {},
            h('label', {}, 'Level ', fl),
            h(
              'button',
              {
                id: 'export-layer',
                onclick: exporting(async () => {
                  const level = Number(fl.value);
                  download(layerFileName(level), await levelLayersText(app, level), 'application/geo+json');
                }),
              },
              'Coverage layers (GeoJSON)',
            ),
            h(
              'button',
              {
                id: 'export-all-levels',
                disabled: app.busy !== null,
                onclick: () =>
                  void app.job('Export', async (progress) => {
                    const zip = await allLevelsZip(app, (done, total) =>
                      progress((0.9 * done) / total, `level ${done} of ${total}`),
                    );
                    download(zip.name, new Blob([zip.bytes as BlobPart], { type: 'application/zip' }));
                    app.say('info', `${zip.name}: ${zip.files.join(', ')}.`);
                  }),
              },
              'Every level in one zip',
            ),
            app.compare
              ? h(
                  'button',
                  {
                    id: 'export-compare',
                    onclick: exporting(async () => {
                      const level = Number(fl.value);
                      download(
                        `compare-${formatFl(level)}.geojson`,
                        await compareLayersText(app, level),
                        'application/geo+json',
                      );
                    }),
                  },
                  'Layout differences (GeoJSON)',
                )
              : null,
          )
        : h('p', { className: 'hint' }, 'Compute coverage to export its layers.'),
      h(
        'button',
        {
          id: 'export-summary',
          onclick: exporting(async () => download('airshade-summary.json', await summaryText(app))),
        },
        'Summary and plan (JSON)',
      ),
      h(
        'p',
        { className: 'hint' },
        `Altitudes in the files are true altitudes on the study’s day, metres AMSL (${formatFl(s.doc.flightLevels[0])} = ${app.levelAltitudeM(s.doc.flightLevels[0])?.toFixed(0) ?? '…'} m${app.study ? `; ${app.study.conventions.day.text}` : ''}). Every file records its provenance: the tool’s version, the SHA-256 of the scenario file as saved here and of each terrain tile, k, the target, the day, the levels and the date. The vertical coverage diagram is saved from the Profile panel.`,
      ),
    ),
    newStudySection(app),
  );
}

export type { SensorRef };
