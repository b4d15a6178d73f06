/**
 * Airspace: the study's target aircraft (target.ts), and the volumes to be seen — polygon, band of flight levels,
 * sites required per kind (radars and receivers), the multilateration accuracy bound, weight, each volume's own
 * target — drawn on the map or imported from GeoJSON; and the study's altitude-aided multilateration choice.
 */
import { h, table } from '../dom.ts';
import { readPolygonFile } from '../files.ts';
import type { PanelHost } from '../panel-host.ts';
import { addVolume, editVolume, removeVolume, type FoldKind } from '../state.ts';
import { mlatMinReceivers } from '../../shared/sensor-kinds.ts';
import {
  altitudeAided,
  hasReceivers,
  requirementNotes,
  setAltitudeAided,
  setMlatAccuracy,
} from '../receivers.ts';
import { fmtLevel } from '../units.ts';
import { filePicker, numberIn, section, tryEdit, type EditHost } from './kit.ts';
import { targetSection, volumeTargets } from './target.ts';

type Host = EditHost &
  Pick<PanelHost, 'state' | 'mode' | 'setMode' | 'render' | 'draft' | 'fail' | 'levelAltitudeM'>;

export function volumesPanel(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  // Metres in both unit sets: the trade states a multilateration accuracy in metres.
  const accuracy = (id: string, m: number | undefined) =>
    numberIn(
      m ?? '',
      {
        className: 'tiny',
        min: 0,
        placeholder: '—',
        'aria-label': `multilateration accuracy of ${id}`,
        title: 'the 1σ horizontal accuracy (DRMS, m) a multilateration fix must reach; empty = none',
      },
      (x, el) =>
        void tryEdit(host, el, () => setMlatAccuracy(host.state, id, el.value.trim() === '' ? null : x)),
    );
  const rx = hasReceivers(s.doc.sensorTypes);
  const rows = s.doc.volumes.map((v) => {
    const name = h('input', { type: 'text', value: v.name, 'aria-label': `name of ${v.id}` });
    name.addEventListener(
      'change',
      () => void tryEdit(host, name, () => editVolume(host.state, v.id, { name: name.value })),
    );
    const num = (key: 'flMin' | 'flMax' | 'weight', val: number) =>
      numberIn(
        val,
        { className: 'short', 'aria-label': `${key} of ${v.id}` },
        (x, el) => void tryEdit(host, el, () => editVolume(host.state, v.id, { [key]: x })),
      );
    const fold = (k: FoldKind) =>
      numberIn(
        v.requiredFold[k] ?? 0,
        { className: 'tiny', min: 0, 'aria-label': `${k} sites required in ${v.id}` },
        (x, el) =>
          void tryEdit(host, el, () => {
            const rf = { ...v.requiredFold, [k]: x };
            if (!x) delete rf[k];
            return editVolume(host.state, v.id, { requiredFold: rf });
          }),
      );
    return [
      h('span', {}, name, h('div', { className: 'sub' }, v.id)),
      h('span', {}, num('flMin', v.flMin), ' – ', num('flMax', v.flMax)),
      h(
        'span',
        { className: 'folds' },
        // One line per kind, its label before its field; the receiver kinds only in a study that has receiver
        // types (or a volume that already asks for them).
        h('div', { title: 'radar sites of either kind (PSR or SSR)' }, 'any ', fold('any')),
        h('div', {}, 'PSR ', fold('primary')),
        h('div', {}, 'SSR ', fold('secondary')),
        rx || v.requiredFold.adsb ? h('div', {}, 'ADS-B ', fold('adsb')) : null,
        rx || v.requiredFold.mlat || v.requiredMlatAccuracyM !== undefined
          ? [
              h('div', {}, 'MLAT ', fold('mlat')),
              h(
                'div',
                { title: 'multilateration accuracy: the 1σ horizontal DRMS a fix must reach (empty = none)' },
                '≤ ',
                accuracy(v.id, v.requiredMlatAccuracyM),
                ' m',
              ),
            ]
          : null,
      ),
      num('weight', v.weight ?? 1),
      h(
        'button',
        { className: 'small', onclick: () => void tryEdit(host, null, () => removeVolume(host.state, v.id)) },
        'Remove',
      ),
    ];
  });
  const notes = s.doc.volumes.flatMap((v) => requirementNotes(v, altitudeAided(s)));
  const aided = h('input', { type: 'checkbox', id: 'mlat-altitude-aided', checked: altitudeAided(s) });
  aided.addEventListener(
    'change',
    () => void tryEdit(host, aided, () => setAltitudeAided(host.state, aided.checked)),
  );
  const drawing = host.mode === 'draw';
  const newName = h('input', {
    type: 'text',
    id: 'volume-name',
    'data-keep': true,
    value: `Volume ${s.doc.volumes.length + 1}`,
  });
  const finish = () => {
    if (host.draft.length < 3) {
      host.say('error', `volume: found ${host.draft.length} points; expected at least 3 (click the map)`);
      return;
    }
    const ring = [...host.draft, host.draft[0]];
    // Exterior rings counter-clockwise (GeoJSON, RFC 7946).
    let area = 0;
    for (let i = 0; i < ring.length - 1; i++)
      area += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
    if (area < 0) ring.reverse();
    const fls = s.doc.flightLevels;
    void tryEdit(host, null, () =>
      addVolume(host.state, {
        name: newName.value.trim() || 'New volume',
        polygon: { type: 'Polygon', coordinates: [ring] },
        flMin: fls[0],
        flMax: fls[fls.length - 1],
        requiredFold: { any: 1 },
        weight: 1,
      }),
    ).then(() => {
      host.setMode('none');
      host.render();
    });
  };
  return h(
    'div',
    {},
    h('h2', {}, 'Airspace'),
    targetSection(host),
    h('h3', {}, 'Volumes'),
    h(
      'p',
      { className: 'hint' },
      `Volumes to be seen: a polygon, a band of flight levels (${fmtLevel(s.doc.flightLevels[0], host.levelAltitudeM(s.doc.flightLevels[0]), u)} …), the number of distinct sites required per kind, and a weight for the planner.`,
    ),
    table(
      [
        'Name / id',
        'Band (FL)',
        rx ? 'Sites required per kind (≤: MLAT accuracy, 1σ)' : 'Sites required',
        'Weight',
        '',
      ],
      rows,
      {
        id: 'volume-table',
        className: 'wide',
      },
    ),
    notes.length
      ? h('ul', { className: 'hint', id: 'volume-notes' }, ...notes.map((n) => h('li', {}, n)))
      : null,
    rx &&
      section(
        'Multilateration fix',
        h('label', {}, aided, ' the target reports its pressure altitude: a fix needs 3 receivers (off: 4)'),
        h(
          'p',
          { className: 'hint' },
          `The MLAT count of a volume is the number of multilateration receivers that must hear each cell; a fix needs ${mlatMinReceivers(altitudeAided(s))} here. The planner meets these counts and, where a volume bounds it, the accuracy (the 1σ horizontal DRMS of the fix, drawn level by level in the accuracy layer of Coverage).`,
        ),
      ),
    volumeTargets(host),
    section(
      'New volume',
      h('label', {}, 'Name ', newName),
      h(
        'button',
        {
          id: 'draw-volume',
          className: drawing ? 'active' : '',
          onclick: () => {
            host.setMode(drawing ? 'none' : 'draw');
            host.render();
          },
        },
        drawing ? `Drawing: ${host.draft.length} points (click here to stop)` : 'Draw on the map',
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
              const fls = host.state.doc.flightLevels;
              let next = host.state;
              for (const p of polys)
                next = addVolume(next, {
                  name: p.name,
                  polygon: p.polygon as never,
                  flMin: fls[0],
                  flMax: fls[fls.length - 1],
                  requiredFold: { any: 1 },
                  weight: 1,
                });
              await host.commit(next);
            } catch (e) {
              host.fail(e);
            }
          })(),
      ),
    ),
  );
}
