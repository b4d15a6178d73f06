/**
 * Layouts: named sets of sensors — the network looked at saved under a name, looked at again, deleted — and two
 * of them compared (sensors per kind, area and each volume's share gained and lost, the difference drawn on the
 * map).
 */
import { formatFl } from '../../shared/units.ts';
import { h, table } from '../dom.ts';
import { progressProxy } from '../engine-client.ts';
import type { PanelHost } from '../panel-host.ts';
import { removeLayout, saveLayout, useLayout } from '../state.ts';
import { compareKinds, kindCounts, kindCountText } from '../receivers.ts';
import { fmtArea, fmtCost, fmtPct } from '../units.ts';
import { section, tryEdit, type EditHost } from './kit.ts';

type Host = EditHost &
  Pick<
    PanelHost,
    'state' | 'engine' | 'busy' | 'job' | 'compare' | 'setView' | 'refreshVectors' | 'refreshImages' | 'fail'
  >;

export function layoutsPanel(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  const name = h('input', {
    type: 'text',
    id: 'layout-name',
    value: `Layout ${s.doc.layouts.length + 1}`,
    'data-keep': true,
  });
  const list = s.doc.layouts.map((l) => [
    l.name,
    h(
      'span',
      {},
      `${l.sensors.length} sensors`,
      h('div', { className: 'sub' }, kindCountText(kindCounts(l.sensors, s.doc.sensorTypes))),
    ),
    h(
      'span',
      {},
      h(
        'button',
        {
          className: 'small',
          onclick: () => {
            try {
              host.setView(useLayout({ ...host.state, failed: [] }, l.name));
              host.refreshVectors();
              host.say('info', `The network is now "${l.name}"; compute coverage to see it.`);
            } catch (e) {
              host.fail(e);
            }
          },
        },
        'Look at it',
      ),
      h(
        'button',
        {
          className: 'small',
          onclick: () => void tryEdit(host, null, () => removeLayout(host.state, l.name)),
        },
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
  const cmp = host.compare;
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
      {
        id: 'save-layout',
        onclick: () => void tryEdit(host, name, () => saveLayout(host.state, name.value)),
      },
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
          disabled: host.busy !== null || s.doc.layouts.length < 1,
          onclick: () =>
            void host.job('Compare', async (progress) => {
              const la = host.state.doc.layouts.find((l) => l.name === a.value);
              const lb = host.state.doc.layouts.find((l) => l.name === b.value);
              if (!la || !lb) throw new Error('compare: found a layout missing; expected two saved layouts');
              const r = await host.engine.compare(la.sensors, lb.sensors, progressProxy(progress));
              host.compare = { ...r, names: [la.name, lb.name] };
              await host.refreshImages();
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
              ['Kind', cmp.names[0], cmp.names[1]],
              compareKinds(cmp.a.sensors, cmp.b.sensors, s.doc.sensorTypes),
              { id: 'compare-kinds' },
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
