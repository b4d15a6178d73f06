/**
 * Sites: the candidate and existing sites, edited in a table (name, position, mast, tilt, cost, whether it exists,
 * the sensor types allowed there and those in the network), added by clicking the map, or replaced from a file.
 */
import { h } from '../dom.ts';
import type { PanelHost } from '../panel-host.ts';
import { replaceSitesFromFile, type SitesImportHost } from '../sites-import.ts';
import { editSite, removeSite, toggleSensor } from '../state.ts';
import { KIND_LABELS } from '../../shared/sensor-kinds.ts';
import { kindCounts, kindCountText } from '../receivers.ts';
import { heightInputM, heightToUser, heightUnit } from '../units.ts';
import { filePicker, numberIn, tryEdit, type EditHost } from './kit.ts';

type Host = EditHost &
  SitesImportHost &
  Pick<PanelHost, 'state' | 'mode' | 'setMode' | 'render' | 'setView' | 'refreshVectors'>;

export function sitesPanel(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  const types = s.doc.sensorTypes;
  const inNet = (siteId: string, typeId: string) =>
    s.network.some((r) => r.siteId === siteId && r.typeId === typeId);
  const addBtn = h(
    'button',
    {
      id: 'add-site',
      className: host.mode === 'add-site' ? 'active' : '',
      onclick: () => {
        host.setMode(host.mode === 'add-site' ? 'none' : 'add-site');
        host.render();
      },
    },
    host.mode === 'add-site'
      ? 'Click the map to place the site… (click here to stop)'
      : 'Add a site by clicking the map',
  );
  const importSites = filePicker(
    'sites-file',
    'Replace sites from a file (GeoJSON or CSV)',
    '.geojson,.json,.csv',
    false,
    (files) => void replaceSitesFromFile(host, files[0]),
  );
  const rows = s.doc.sites.features.map((f) => {
    const p = f.properties;
    const [lon, lat] = f.geometry.coordinates;
    const name = h('input', { type: 'text', value: p.name, 'aria-label': `name of ${p.id}` });
    name.addEventListener(
      'change',
      () => void tryEdit(host, name, () => editSite(host.state, p.id, { name: name.value })),
    );
    const allowed = p.allowedTypes ?? types.map((t) => t.id);
    const typeBoxes = types.map((t) => {
      const allow = h('input', {
        type: 'checkbox',
        checked: allowed.includes(t.id),
        title: `allow ${t.name} (${KIND_LABELS[t.kind]})`,
      });
      allow.addEventListener('change', () => {
        const list = types
          .map((x) => x.id)
          .filter((id) => (id === t.id ? allow.checked : allowed.includes(id)));
        void tryEdit(host, allow, () =>
          editSite(host.state, p.id, { allowedTypes: list.length === types.length ? null : list }),
        );
      });
      const use = h('input', {
        type: 'checkbox',
        checked: inNet(p.id, t.id),
        disabled: !allowed.includes(t.id),
        'data-sensor': `${p.id}|${t.id}`,
        title: `in the network: ${t.name} (${KIND_LABELS[t.kind]})`,
      });
      use.addEventListener('change', () => {
        host.setView(toggleSensor(host.state, p.id, t.id, use.checked));
        host.refreshVectors();
      });
      return h(
        'span',
        { className: 'type-cell', title: `${t.id}: ${KIND_LABELS[t.kind]}` },
        h('span', { className: 'type-id' }, t.id),
        allow,
        use,
      );
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
          (v, el) => void tryEdit(host, el, () => editSite(host.state, p.id, { lon: v })),
        ),
        numberIn(
          lat,
          { 'aria-label': `lat of ${p.id}`, className: 'coord' },
          (v, el) => void tryEdit(host, el, () => editSite(host.state, p.id, { lat: v })),
        ),
      ),
      h(
        'td',
        {},
        numberIn(
          heightToUser(p.mastHeightM, u),
          { 'aria-label': `mast of ${p.id}`, className: 'short stacked', min: 0 },
          (v, el) =>
            void tryEdit(host, el, () =>
              editSite(host.state, p.id, {
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
            void tryEdit(host, el, () =>
              editSite(host.state, p.id, { tiltDeg: el.value.trim() === '' ? null : v }),
            ),
        ),
      ),
      h(
        'td',
        {},
        numberIn(
          p.siteCost,
          { 'aria-label': `cost of ${p.id}`, className: 'short', min: 0 },
          (v, el) => void tryEdit(host, el, () => editSite(host.state, p.id, { siteCost: v })),
        ),
      ),
      h(
        'td',
        {},
        (() => {
          const c = h('input', { type: 'checkbox', checked: p.existing, 'aria-label': `${p.id} exists` });
          c.addEventListener(
            'change',
            () => void tryEdit(host, c, () => editSite(host.state, p.id, { existing: c.checked })),
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
            onclick: () => void tryEdit(host, null, () => removeSite(host.state, p.id)),
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
      `Drag a marker to move its site, here or from any panel with the map’s “Move sites” switch on. Per sensor type (radar or receiver): first box = allowed at the site, second = in the network being looked at (${s.network.length} sensors: ${kindCountText(kindCounts(s.network, types))}).`,
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
