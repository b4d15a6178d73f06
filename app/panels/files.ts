/**
 * Files: the scenario saved or opened (with its sites, types and tiles), the demo again, the exports (a level's
 * layers, every level in one zip, the layout differences, the summary), and a new study from the planner's own
 * data (new-study.ts).
 */
import { formatFl } from '../../shared/units.ts';
import { download, h } from '../dom.ts';
import {
  allLevelsZip,
  compareLayersText,
  layerFileName,
  levelLayersText,
  savedScenarioText,
  scenarioFileName,
  summaryText,
  type ExportHost,
} from '../exports.ts';
import { isTiff, readPickedScenario } from '../files.ts';
import type { PanelHost } from '../panel-host.ts';
import { errorLines, stateFromScenario } from '../state.ts';
import { reportSection, type ReportHost } from '../report.ts';
import { dropZone, filePicker, section } from './kit.ts';
import { newStudySection, sortDropped, type NewStudyHost } from './new-study.ts';

/** What opening a scenario needs of the host. */
export type ScenarioLoadHost = Pick<
  PanelHost,
  'state' | 'engine' | 'terrain' | 'job' | 'say' | 'showPanel' | 'adoptLoaded' | 'save' | 'afterTerrain'
>;
type Host = ScenarioLoadHost &
  ExportHost &
  NewStudyHost &
  ReportHost &
  Pick<PanelHost, 'busy' | 'fail' | 'loadDemo' | 'levelAltitudeM'>;

/** Opens a scenario picked or dropped with its files; a bad file leaves the work as it is. */
export async function loadScenarioFiles(host: ScenarioLoadHost, files: File[]): Promise<void> {
  // Read and check everything first: a bad file leaves the current work as it is.
  let picked;
  try {
    picked = await readPickedScenario(files);
  } catch (e) {
    // Tiles with sites (and no scenario file) are the makings of a new study: offer it.
    const makings = files.some((f) => isTiff(f.name)) && /no scenario file among them/.test(String(e));
    host.say(
      'error',
      ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)],
      makings
        ? {
            label: 'Start a new study with these files',
            run: () =>
              void sortDropped(files).then((notes) => {
                host.showPanel('files');
                if (notes.length) host.say('error', notes);
                document.getElementById('new-study')?.scrollIntoView({ block: 'start' });
              }),
          }
        : undefined,
    );
    return;
  }
  const state = stateFromScenario(picked.scenario, picked.source, host.state.units);
  if (picked.tiles.length === 0) {
    // Same terrain as now: the scenario must fit it.
    try {
      const study = await host.engine.setScenario(state.doc, state.source);
      host.adoptLoaded(state, host.terrain!, study);
      host.save();
      host.say('info', [
        `Loaded ${picked.source} on the terrain already loaded.`,
        ...(picked.missingTiles.length
          ? [
              `(The tiles it names were not picked: ${picked.missingTiles.slice(0, 4).join(', ')}${picked.missingTiles.length > 4 ? ', …' : ''}.)`,
            ]
          : []),
      ]);
    } catch (e) {
      // The engine keeps its previous study when setScenario throws.
      host.say('error', ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)]);
    }
    return;
  }
  await host.job('Scenario', async (progress) => {
    progress(0.2, 'reading terrain');
    try {
      const r = await host.engine.loadTiles(picked.tiles, true, { input: state.doc, display: state.source });
      host.adoptLoaded(state, r.terrain, r.study!);
      host.save();
      await host.afterTerrain();
      host.say('info', `Loaded ${picked.source}.`);
    } catch (e) {
      host.say('error', ['The scenario was not loaded; your work is unchanged.', ...errorLines(e)]);
    }
  });
}

export function filesPanel(host: Host): HTMLElement {
  const s = host.state;
  const fl = h(
    'select',
    { id: 'export-fl' },
    ...(host.coverage?.flightLevels ?? []).map((x) => h('option', { value: x }, formatFl(x))),
  );
  fl.value = String(s.view.fl);
  /** Runs an export; a failure shows its message (nothing is written). */
  const exporting = (make: () => Promise<void>) => () => void make().catch((e: unknown) => host.fail(e));
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
          onclick: exporting(async () => download(scenarioFileName(host), await savedScenarioText(host))),
        },
        'Save the scenario file',
      ),
      filePicker(
        'scenario-file',
        'Open a scenario (with its sites, types and .tif files)',
        '.json,.geojson,.csv,.tif,.tiff',
        true,
        (files) => void loadScenarioFiles(host, files),
      ),
      dropZone('…or drop the files here', (files) => void loadScenarioFiles(host, files)),
      h(
        'button',
        {
          id: 'load-demo',
          onclick: () => {
            if (confirm('Replace your work with the demo? Save the scenario file first to keep it.'))
              void host.loadDemo();
          },
        },
        'Start again from the demo',
      ),
      h(
        'button',
        {
          id: 'load-demo-receivers',
          onclick: () => {
            if (
              confirm(
                'Replace your work with the demo with receivers? Save the scenario file first to keep it.',
              )
            )
              void host.loadDemo('receivers');
          },
        },
        'Start from the demo with receivers',
      ),
    ),
    section(
      'Export',
      host.coverage
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
                  download(layerFileName(level), await levelLayersText(host, level), 'application/geo+json');
                }),
              },
              'Coverage layers (GeoJSON)',
            ),
            h(
              'button',
              {
                id: 'export-all-levels',
                disabled: host.busy !== null,
                onclick: () =>
                  void host.job('Export', async (progress) => {
                    const zip = await allLevelsZip(host, (done, total) =>
                      progress((0.9 * done) / total, `level ${done} of ${total}`),
                    );
                    download(zip.name, new Blob([zip.bytes as BlobPart], { type: 'application/zip' }));
                    host.say('info', `${zip.name}: ${zip.files.join(', ')}.`);
                  }),
              },
              'Every level in one zip',
            ),
            host.compare
              ? h(
                  'button',
                  {
                    id: 'export-compare',
                    onclick: exporting(async () => {
                      const level = Number(fl.value);
                      download(
                        `compare-${formatFl(level)}.geojson`,
                        await compareLayersText(host, level),
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
          onclick: exporting(async () => download('airshade-summary.json', await summaryText(host))),
        },
        'Summary and plan (JSON)',
      ),
      h(
        'p',
        { className: 'hint' },
        `Altitudes in the files are true altitudes on the study’s day, metres AMSL (${formatFl(s.doc.flightLevels[0])} = ${host.levelAltitudeM(s.doc.flightLevels[0])?.toFixed(0) ?? '…'} m${host.study ? `; ${host.study.conventions.day.text}` : ''}). Every file records its provenance: the tool’s version, the SHA-256 of the scenario file as saved here and of each terrain tile, k, the target, the day, the levels and the date. The vertical coverage diagram is saved from the Profile panel.`,
      ),
    ),
    reportSection(host),
    newStudySection(host),
  );
}
