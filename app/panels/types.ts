/**
 * Sensor types: radars and receivers each in their own table with their own fields (a receiver: sensitivity, cable
 * loss, antenna gain, instrumented range, a multilateration receiver's timing error; no cone of silence, power or
 * RCS); the whole type (pattern, detection, sector) as JSON in the scenario file's form, checked by the schema
 * before it is applied.
 */
import type { RadarType, ReceiverType, SensorType } from '../../shared/scenario.ts';
import { isRadarKind, isReceiverKind, KIND_LABELS } from '../../shared/sensor-kinds.ts';
import { NM_M } from '../../shared/units.ts';
import { h, table } from '../dom.ts';
import type { PanelHost } from '../panel-host.ts';
import { addSensorType, removeSensorType, replaceSensorType } from '../state.ts';
import {
  RECEIVER_FIELD_RULES,
  RECEIVER_MAX_RANGE_NM,
  ruleText,
  sectorText,
  setReceiverField,
  type ReceiverField,
} from '../receivers.ts';
import { fmtRange, rangeInputNm, rangeUnit } from '../units.ts';
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
  const nameCell = (t: SensorType) => {
    const name = h('input', { type: 'text', value: t.name, 'aria-label': `name of ${t.id}` });
    name.addEventListener('change', () => patch(t, name, { name: name.value }));
    return h('span', {}, name, h('div', { className: 'sub' }, t.id));
  };
  const costCell = (t: SensorType) =>
    numberIn(t.cost, { className: 'short', min: 0, 'aria-label': `cost of ${t.id}` }, (v, el) =>
      patch(t, el, { cost: v }),
    );
  const buttons = (t: SensorType) =>
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
          title: `a new type from a copy of ${t.id}`,
          'aria-label': `copy ${t.id}`,
          onclick: () => {
            editing = null;
            delete host.form['type-editing'];
            editor.value = JSON.stringify({ ...t, id: `${t.id}-copy`, name: `${t.name} (copy)` }, null, 2);
            title.textContent = `New type (a copy of ${t.id})`;
          },
        },
        'Copy',
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
    );
  const radars = s.doc.sensorTypes.filter((t): t is RadarType => isRadarKind(t.kind));
  const receivers = s.doc.sensorTypes.filter((t): t is ReceiverType => isReceiverKind(t.kind));
  const rows = radars.map((t) => [
    nameCell(t),
    KIND_LABELS[t.kind],
    `${t.frequencyMHz} MHz`,
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
    costCell(t),
    buttons(t),
  ]);
  // A receiver's own fields, each checked in its unit with a message naming the type and the field.
  const rxField = (t: ReceiverType, field: ReceiverField, value: number, stacked = false) => {
    const r = RECEIVER_FIELD_RULES[field];
    return numberIn(
      value,
      {
        className: stacked ? 'short stacked' : 'short',
        min: r.min,
        max: r.max,
        'aria-label': `${r.label} of ${t.id}`,
        title: `${r.label}: ${ruleText(field)} (${field})`,
      },
      (v, el) => void tryEdit(host, el, () => setReceiverField(host.state, t.id, field, v, u)),
    );
  };
  const rxRows = receivers.map((t) => [
    h('span', {}, nameCell(t), h('div', { className: 'sub' }, `${KIND_LABELS[t.kind]} · ${sectorText(t)}`)),
    h(
      'span',
      {},
      rxField(t, 'sensitivityDbm', t.sensitivityDbm, true),
      rxField(t, 'cableLossDb', t.cableLossDb, true),
      rxField(t, 'antennaGainDbi', t.antennaGainDbi, true),
    ),
    numberIn(
      rangeToUser(t.instrumentedRangeNm),
      {
        className: 'short',
        min: 0,
        'aria-label': `range of ${t.id}`,
        title: `above 0 and at most ${fmtRange(RECEIVER_MAX_RANGE_NM * NM_M, u)} (instrumentedRangeNm)`,
      },
      (v, el) =>
        void tryEdit(host, el, () => setReceiverField(host.state, t.id, 'instrumentedRangeNm', v, u)),
    ),
    t.kind === 'mlat' ? rxField(t, 'timingErrorNs', t.timingErrorNs) : '—',
    costCell(t),
    buttons(t),
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
    radars.length > 0 || receivers.length === 0
      ? table(
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
        )
      : null,
    receivers.length > 0 ? h('h3', {}, 'Receivers (1090 MHz, receive only)') : null,
    receivers.length > 0
      ? table(
          [
            'Name / id',
            'Sensitivity (dBm) / cable loss (dB) / gain (dBi)',
            `Range (${rangeUnit(u)})`,
            'Timing error (ns, 1σ)',
            'Cost (M)',
            '',
          ],
          rxRows,
          { id: 'receiver-type-table', className: 'wide' },
        )
      : null,
    receivers.length > 0
      ? h(
          'p',
          { className: 'hint', id: 'receiver-type-hint' },
          'A receiver hears the aircraft’s own 1090 MHz transmissions: it has no transmitter power, no frequency to choose, no cone of silence and no RCS. Its range comes from the sensitivity, cable loss and gain against the target’s transponder class; the timing error (multilateration only) sets the accuracy of a fix. The elevation pattern and the sector are edited as JSON below.',
        )
      : null,
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
