/**
 * Sensor types: the common fields edited in a table; the whole type (pattern, detection) as JSON in the scenario
 * file's form, checked by the schema before it is applied.
 */
import type { SensorType } from '../../shared/scenario.ts';
import { KIND_LABELS } from '../../shared/sensor-kinds.ts';
import { h, table } from '../dom.ts';
import type { PanelHost } from '../panel-host.ts';
import { addSensorType, removeSensorType, replaceSensorType } from '../state.ts';
import { rangeInputNm, rangeUnit } from '../units.ts';
import { numberIn, section, tryEdit, type EditHost } from './kit.ts';

type Host = EditHost & Pick<PanelHost, 'state' | 'form'>;

export function typesPanel(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  const editor = h('textarea', {
    id: 'type-json',
    'data-keep': true,
    rows: 14,
    spellcheck: 'false',
    'aria-label': 'sensor type (JSON)',
  });
  let editing: string | null = host.form['type-editing'] ?? null;
  // The common fields edit in place; the rest (pattern, detection) in the JSON editor below.
  const patch = (t: SensorType, el: HTMLElement, change: Partial<SensorType>) =>
    void tryEdit(host, el, () => replaceSensorType(host.state, t.id, { ...t, ...change }));
  const rangeToUser = (nm: number) => (u === 'aviation' ? nm : Math.round(nm * 1.852 * 10) / 10);
  const rows = s.doc.sensorTypes.map((t) => [
    (() => {
      const name = h('input', { type: 'text', value: t.name, 'aria-label': `name of ${t.id}` });
      name.addEventListener('change', () => patch(t, name, { name: name.value }));
      return h('span', {}, name, h('div', { className: 'sub' }, t.id));
    })(),
    KIND_LABELS[t.kind],
    t.kind === 'primary' || t.kind === 'secondary' ? `${t.frequencyMHz} MHz` : '1090 MHz',
    numberIn(
      rangeToUser(t.instrumentedRangeNm),
      { className: 'short', min: 0, 'aria-label': `range of ${t.id}` },
      (v, el) =>
        void tryEdit(host, el, () =>
          replaceSensorType(host.state, t.id, {
            ...t,
            instrumentedRangeNm: rangeInputNm(
              v,
              u,
              `instrumented range of ${t.id} (instrumentedRangeNm)`,
              t.kind === 'primary' || t.kind === 'secondary' ? (t.minRangeNm ?? 0) : 0,
            ),
          }),
        ),
    ),
    // A receiver has no cone of silence beyond its pattern: nothing to edit here (its JSON holds the rest).
    t.kind === 'primary' || t.kind === 'secondary'
      ? numberIn(
          t.maxElevationDeg,
          { className: 'tiny', min: 0, max: 90, 'aria-label': `max elevation of ${t.id}` },
          (v, el) => patch(t, el, { maxElevationDeg: v }),
        )
      : '—',
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
            host.form['type-editing'] = t.id;
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
          onclick: () => void tryEdit(host, null, () => removeSensorType(host.state, t.id)),
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
      host.say(
        'error',
        `sensor type: found text that is not JSON (${(e as Error).message}); expected one sensor type object`,
      );
      return;
    }
    void tryEdit(host, editor, () =>
      editing
        ? replaceSensorType(host.state, editing, parsed as SensorType)
        : addSensorType(host.state, parsed),
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
