/**
 * "New study" in the Files panel (files.ts): terrain tiles (any CRS the reader knows), the planner's sites (CSV or GeoJSON)
 * and, if they have them, their volumes and sensor types; the study is built by app/new-study.ts and replaces the
 * current work only after the planner says so (with a chance to save it first) and only once every check has
 * passed: the files' schema first (before any tile is read), then the sites and volumes against the tiles'
 * extent. A refusal leaves the work, the terrain and what is stored in the browser as they were.
 */
import { InputError } from '../../shared/errors.ts';
import { SCENARIO_DEFAULTS } from '../../shared/scenario.ts';
import { KIND_LABELS, mlatMinReceivers, type SensorKind } from '../../shared/sensor-kinds.ts';
import { ask } from '../ask.ts';
import { download, h } from '../dom.ts';
import { savedScenarioText, scenarioFileName, type ExportHost } from '../exports.ts';
import { isTiff, readJsonFile, readSitesFile } from '../files.ts';
import {
  checkFilesAlone,
  newStudyDefaultText,
  NEW_STUDY_DISPLAY,
  studyOnTerrain,
  withAltitudeAided,
  type GivenFile,
  type NewStudy,
  type NewStudyFiles,
} from '../new-study.ts';
import type { PanelHost } from '../panel-host.ts';
import { errorLines, stateFromScenario } from '../state.ts';
import { dropZone, filePicker } from './kit.ts';

/** What a new study needs of the host (the Files panel's). */
export type NewStudyHost = ExportHost &
  Pick<PanelHost, 'busy' | 'job' | 'say' | 'render' | 'adoptLoaded' | 'save' | 'afterTerrain'>;

/** What the planner picked so far (kept across redraws of the panel, which are frequent). */
export interface NewStudyPicks {
  tiles: File[];
  sites: File | null;
  volumes: File | null;
  types: File | null;
}

export const picks: NewStudyPicks = { tiles: [], sites: null, volumes: null, types: null };

/**
 * Sorts dropped files into the picks: .tif tiles; .csv sites; JSON by its content — Points are sites, polygons
 * volumes, a list of objects with a `kind` sensor types.
 */
export async function sortDropped(files: File[]): Promise<string[]> {
  const notes: string[] = [];
  for (const f of files) {
    if (isTiff(f.name)) {
      picks.tiles = [...picks.tiles.filter((t) => t.name !== f.name), f];
      continue;
    }
    if (/\.csv$/i.test(f.name)) {
      picks.sites = f;
      continue;
    }
    let json: unknown;
    try {
      json = (await readJsonFile(f, 'a sites, volumes or sensor-types file (JSON or GeoJSON)')).value;
    } catch (e) {
      notes.push(...errorLines(e));
      continue;
    }
    const kind = sniff(json);
    if (kind === null) {
      notes.push(
        `${f.name}: found neither sites (Points), volumes (polygons) nor a list of sensor types; expected one of them`,
      );
      continue;
    }
    picks[kind] = f;
  }
  return notes;
}

function sniff(json: unknown): 'sites' | 'volumes' | 'types' | null {
  if (Array.isArray(json)) {
    const first = json.find((x) => x && typeof x === 'object') as Record<string, unknown> | undefined;
    return first && 'kind' in first ? 'types' : null;
  }
  const text = JSON.stringify(json);
  if (/"type":"(Multi)?Polygon"/.test(text)) return 'volumes';
  if (/"type":"Point"/.test(text)) return 'sites';
  return null;
}

/** The section of the Files panel. */
export function newStudySection(host: NewStudyHost): HTMLElement {
  const redraw = () => host.render();
  // A pick redraws the list of what is picked.
  const picker = (
    id: string,
    label: string,
    accept: string,
    multiple: boolean,
    take: (f: File[]) => void,
  ): HTMLElement =>
    filePicker(id, label, accept, multiple, (files) => {
      take(files);
      redraw();
    });
  const drop = dropZone(
    '…or drop all the files here',
    (files) =>
      void sortDropped(files).then((notes) => {
        if (notes.length) host.say('error', notes);
        redraw();
      }),
    'new-study-drop',
  );
  const remove = (label: string, run: () => void) =>
    h(
      'button',
      {
        className: 'small',
        'aria-label': `remove ${label}`,
        onclick: () => {
          run();
          redraw();
        },
      },
      '✕',
    );
  const row = (what: string, f: File | null, clearIt: () => void, fallback: string) =>
    h(
      'li',
      {},
      `${what}: `,
      f ? h('strong', {}, f.name) : h('span', { className: 'hint' }, fallback),
      f ? remove(f.name, clearIt) : null,
    );
  const name = h('input', {
    type: 'text',
    id: 'new-study-name',
    placeholder: 'from the sites file and the tiles',
    'data-keep': true,
    'aria-label': 'Name of the new study',
  });
  const ready = picks.tiles.length > 0 && picks.sites !== null;
  const aided = h('input', {
    type: 'checkbox',
    id: 'new-study-mlat-aided',
    'data-keep': true,
    checked: SCENARIO_DEFAULTS.mlatAltitudeAided,
  });
  return h(
    'section',
    { className: 'block', id: 'new-study' },
    h('h3', {}, 'New study from your own data'),
    h(
      'p',
      { className: 'hint' },
      'Terrain tiles (GeoTIFF, in degrees or a projected CRS), your sites, and if you have them your airspace volumes and sensor types. The study area is the tiles’ extent; nothing of the present work is kept.',
    ),
    h('label', {}, 'Name ', name),
    picker('new-study-tiles', 'Terrain tiles (.tif)', '.tif,.tiff,image/tiff', true, (f) => {
      const names = new Set(f.map((x) => x.name));
      picks.tiles = [...picks.tiles.filter((t) => !names.has(t.name)), ...f];
    }),
    picker('new-study-sites', 'Sites (CSV or GeoJSON)', '.csv,.geojson,.json', false, (f) => {
      picks.sites = f[0];
    }),
    picker('new-study-volumes', 'Volumes (optional: GeoJSON polygons)', '.geojson,.json', false, (f) => {
      picks.volumes = f[0];
    }),
    picker('new-study-types', 'Sensor types (optional: a JSON list)', '.json', false, (f) => {
      picks.types = f[0];
    }),
    drop,
    h(
      'ul',
      { id: 'new-study-picked', className: 'picked' },
      h(
        'li',
        {},
        'Terrain: ',
        picks.tiles.length
          ? picks.tiles.map((t) =>
              h(
                'span',
                { className: 'tile-pick' },
                h('strong', {}, t.name),
                remove(t.name, () => {
                  picks.tiles = picks.tiles.filter((x) => x !== t);
                }),
              ),
            )
          : h('span', { className: 'hint' }, 'no tiles yet'),
      ),
      row(
        'Sites',
        picks.sites,
        () => (picks.sites = null),
        'none yet (CSV columns: lon, lat, id, name, mastHeightM, siteCost; optional existing, allowedTypes, tiltDeg)',
      ),
      row('Volumes', picks.volumes, () => (picks.volumes = null), 'none: one volume over the study area'),
      row(
        'Sensor types',
        picks.types,
        () => (picks.types = null),
        'none: the default catalog of generic types',
      ),
    ),
    h(
      'label',
      { title: 'matters only for multilateration receivers' },
      aided,
      ' Multilateration: the target reports its pressure altitude (a fix from 3 receivers; off: 4)',
    ),
    h(
      'details',
      { id: 'new-study-defaults' },
      h('summary', {}, 'What a new study starts with'),
      h('ul', {}, ...newStudyDefaultText().map((t) => h('li', {}, t))),
    ),
    h(
      'button',
      {
        id: 'new-study-create',
        className: 'primary',
        disabled: !ready || host.busy !== null,
        onclick: () => void startNewStudy(host, name.value, aided.checked),
      },
      'Create the study',
    ),
  );
}

async function given(f: File | null, what: string): Promise<GivenFile | null> {
  return f ? readJsonFile(f, what) : null;
}

/**
 * Builds and opens the new study from the picks. Nothing changes until every check has passed and the planner
 * has agreed to replace the present work.
 */
export async function startNewStudy(
  host: NewStudyHost,
  name: string,
  altitudeAided: boolean = SCENARIO_DEFAULTS.mlatAltitudeAided,
): Promise<void> {
  const refused = (e: unknown) =>
    host.say('error', ['The new study was not started; your work is unchanged.', ...errorLines(e)]);
  const tiles = picks.tiles;
  if (tiles.length === 0 || !picks.sites) {
    refused(
      new InputError(
        'New study',
        tiles.length === 0 ? 'no terrain tiles' : 'no sites file',
        'GeoTIFF terrain tiles and a sites file (CSV or GeoJSON)',
      ),
    );
    return;
  }
  // 1. The planner's files, checked on their own before any tile is read.
  let files: NewStudyFiles;
  try {
    files = {
      name,
      tileNames: tiles.map((t) => t.name),
      sites: await readSitesFile(picks.sites),
      volumes: await given(picks.volumes, 'airspace volumes (GeoJSON polygons)'),
      sensorTypes: await given(picks.types, 'a JSON list of sensor types'),
    };
    checkFilesAlone(files);
  } catch (e) {
    refused(e);
    return;
  }
  const sites = files.sites;
  // 2. The present work is replaced only when the planner says so.
  const answer = await ask(
    'Start a new study?',
    [
      `“${host.state.doc.name}” and everything computed for it will be replaced by the new study (${tiles.length} terrain tile${tiles.length > 1 ? 's' : ''}, sites from ${sites.display}).`,
      'Save its scenario file first to keep it: it opens again with its terrain tiles.',
    ],
    [
      {
        label: 'Save the current scenario file',
        value: 'save',
        id: 'new-study-save-old',
        run: () => void savedScenarioText(host).then((text) => download(scenarioFileName(host), text)),
      },
      { label: 'Start the new study', value: 'go', primary: true, id: 'new-study-go' },
    ],
    { id: 'new-study-confirm' },
  );
  if (answer !== 'go') return;
  const before = { names: await host.engine.tileNames(), doc: host.state.doc, source: host.state.source };
  await host.job('New study', async (progress) => {
    progress(0.1, `reading ${tiles.length} terrain tile${tiles.length > 1 ? 's' : ''}`);
    // 3. The tiles: read and decoded, not yet kept in the browser's storage.
    let terrain;
    try {
      terrain = (
        await host.engine.loadTiles(
          tiles.map((f) => ({ name: f.name, file: f })),
          true,
          undefined,
          false,
        )
      ).terrain;
    } catch (e) {
      refused(e); // a bad tile: the engine kept its terrain
      return;
    }
    progress(0.6, 'checking the sites against the terrain');
    let built: NewStudy;
    let study;
    try {
      built = withAltitudeAided(studyOnTerrain(terrain, files), altitudeAided);
      study = await host.engine.setScenario(built.doc, NEW_STUDY_DISPLAY);
    } catch (e) {
      // The tiles do not hold the sites (or volumes): the previous terrain and study come back.
      try {
        await host.engine.restoreTiles(before.names, { input: before.doc, display: before.source });
        refused(e);
      } catch (e2) {
        host.say('error', [
          'The new study was not started, and the previous terrain could not be read back from this browser: reload the page to restore your work.',
          ...errorLines(e),
          ...errorLines(e2),
        ]);
      }
      return;
    }
    progress(0.85, 'drawing');
    const state = stateFromScenario(built.scenario, NEW_STUDY_DISPLAY, host.state.units);
    await host.engine.keepLoaded();
    host.adoptLoaded(state, terrain, study);
    host.save();
    await host.afterTerrain();
    picks.tiles = [];
    picks.sites = picks.volumes = picks.types = null;
    const c = built.choices;
    const b = c.area;
    host.say('info', [
      `New study “${state.doc.name}”: ${c.siteCount} sites from ${c.sitesFrom}, ${c.sensorTypes.ids.length} sensor types from ${c.sensorTypes.from} (${c.kinds.map((k) => KIND_LABELS[k as SensorKind] ?? k).join(', ')}), ${c.volumes.length} volume${c.volumes.length > 1 ? 's' : ''}${c.defaultVolume ? ' (the study area)' : ''}.`,
      `Study area ${b.west.toFixed(3)}…${b.east.toFixed(3)}° E, ${b.south.toFixed(3)}…${b.north.toFixed(3)}° N, in cells of ${c.cell.cellArcSec}″ (${c.cell.width} × ${c.cell.height}): ${c.cell.rule}.`,
      ...(c.kinds.includes('mlat')
        ? [
            `Multilateration fixes from ${mlatMinReceivers(altitudeAided)} receivers (${altitudeAided ? 'the reported altitude taken as known' : 'no altitude taken'}); set accuracy bounds in Airspace.`,
          ]
        : []),
      ...c.warnings,
      state.network.length
        ? `The network: ${state.network.length} sensor${state.network.length > 1 ? 's' : ''} on the existing sites. Compute coverage in the Coverage panel.`
        : 'No site is marked existing: tick sensors in Sites, or let the Plan panel choose.',
    ]);
  });
}
