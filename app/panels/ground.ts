/**
 * Ground: the terrain tiles (GeoTIFF DEMs) loaded, picked or dropped, and what was read of them.
 */
import { table, h } from '../dom.ts';
import { isTiff } from '../files.ts';
import type { PanelHost } from '../panel-host.ts';
import { errorLines } from '../state.ts';
import { dropZone, filePicker, section } from './kit.ts';
import { picks } from './new-study.ts';

/** What loading tiles needs of the host. */
export type TerrainLoadHost = Pick<
  PanelHost,
  'state' | 'engine' | 'job' | 'say' | 'showPanel' | 'adoptLoaded' | 'save' | 'afterTerrain'
>;
type Host = TerrainLoadHost & Pick<PanelHost, 'terrain' | 'poolSize'>;

/** Loads picked or dropped tiles as the terrain (replacing the loaded ones, or added to them). */
export async function loadTerrainFiles(
  host: TerrainLoadHost,
  files: File[],
  replace: boolean,
): Promise<void> {
  const tiffs = files.filter((f) => isTiff(f.name));
  if (tiffs.length === 0) {
    host.say(
      'error',
      `${files.map((f) => f.name).join(', ')}: found no .tif file; expected GeoTIFF DEM tiles`,
    );
    return;
  }
  await host.job('Terrain', async (progress) => {
    progress(0.1, `reading ${tiffs.length} tile${tiffs.length > 1 ? 's' : ''}`);
    // The scenario names its terrain files: follow the loaded tiles.
    const names = replace
      ? tiffs.map((f) => f.name)
      : [...new Set([...(await host.engine.tileNames()), ...tiffs.map((f) => f.name)])];
    const doc = { ...host.state.doc, terrain: { files: names } };
    let r;
    try {
      r = await host.engine.loadTiles(
        tiffs.map((f) => ({ name: f.name, file: f })),
        replace,
        { input: doc, display: host.state.source },
      );
    } catch (e) {
      // Tiles that do not hold the present sites or volumes: the way on is a new study on them.
      if (!(e instanceof Error && /outside the terrain/.test(e.message))) throw e;
      host.say('error', ['The tiles were not loaded; your work is unchanged.', ...errorLines(e)], {
        label: 'Start a new study on these tiles',
        run: () => {
          picks.tiles = tiffs;
          host.showPanel('files');
          document.getElementById('new-study')?.scrollIntoView({ block: 'start' });
        },
      });
      return;
    }
    host.adoptLoaded({ ...host.state, doc, failed: [] }, r.terrain, r.study!);
    host.save();
    await host.afterTerrain();
    host.say('info', `Terrain: ${r.terrain.tiles.length} tile(s) loaded.`);
  });
}

export function groundPanel(host: Host): HTMLElement {
  const t = host.terrain;
  const replace = h('input', { type: 'checkbox', id: 'terrain-replace', checked: true, 'data-keep': true });
  const onFiles = (files: File[]) => void loadTerrainFiles(host, files, replace.checked);
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
            `Mosaic ${t.width} × ${t.height} px, ${t.bounds.west.toFixed(3)}…${t.bounds.east.toFixed(3)}° E, ${t.bounds.south.toFixed(3)}…${t.bounds.north.toFixed(3)}° N; ${t.unknownCells.toLocaleString('en')} px without data; terrain ${t.shared ? 'shared by' : 'copied to'} ${host.poolSize} workers.`,
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
