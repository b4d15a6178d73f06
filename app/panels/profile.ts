/**
 * Profile: the vertical coverage diagram of one site and sensor type along one azimuth (typed, or dragged on the
 * map), shown at the panel's width, enlarged on a click, saved as SVG with its provenance.
 */
import { download, h } from '../dom.ts';
import { exportProvenance, type ExportHost } from '../exports.ts';
import type { PanelHost } from '../panel-host.ts';
import { KIND_LABELS } from '../../shared/sensor-kinds.ts';
import { profileText } from '../receivers.ts';

type Host = ExportHost &
  Pick<
    PanelHost,
    | 'diagramPick'
    | 'diagramSvg'
    | 'diagramUrl'
    | 'azimuth'
    | 'drawDiagram'
    | 'mode'
    | 'setMode'
    | 'render'
    | 'fail'
  >;

export function profilePanel(host: Host): HTMLElement {
  const s = host.state;
  const pick = host.diagramPick;
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
      .map((t) => h('option', { value: t.id }, `${t.name} (${KIND_LABELS[t.kind]})`)),
  );
  type.value = pick?.typeId && allowed.includes(pick.typeId) ? pick.typeId : '';
  const picked = s.doc.sensorTypes.find((t) => t.id === type.value);
  const onPick = () => {
    host.diagramPick = { siteId: site.value, typeId: type.value };
    host.render();
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
    value: host.azimuth,
    className: 'short',
  });
  const dragging = host.mode === 'azimuth';
  // The panel shows the diagram drawn at the panel's width (its text at full size); enlarged and saved, it is the
  // standard 960 × 560 drawing, asked for when wanted. Saved, it carries its provenance (as the CLI's does).
  const standard = async (saved = false): Promise<string | null> => {
    if (!pick?.typeId) return null;
    try {
      const azimuth = host.azimuth;
      const units = host.state.units;
      const provenance = saved
        ? await exportProvenance(
            host,
            'app diagram',
            { site: pick.siteId, type: pick.typeId, azimuth: String(azimuth), units },
            host.study?.conventions ?? null,
          )
        : undefined;
      return await host.engine.diagram(pick.siteId, pick.typeId, azimuth, units, undefined, provenance);
    } catch (e) {
      host.fail(e);
      return null;
    }
  };
  let img: HTMLElement | null = null;
  if (host.diagramSvg && host.diagramUrl) {
    const im = h('img', {
      id: 'diagram',
      src: host.diagramUrl,
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
      `${profileText(picked?.kind)} The azimuth is drawn on the map; click the diagram to enlarge it.`,
    ),
    h('label', {}, 'Site ', site),
    h('label', {}, ' Type ', type),
    h(
      'div',
      {},
      h('label', {}, 'Azimuth (° true) ', az),
      h('button', { id: 'profile-draw', onclick: () => void host.drawDiagram(Number(az.value)) }, 'Draw'),
    ),
    h(
      'button',
      {
        id: 'profile-drag',
        className: dragging ? 'active' : '',
        onclick: () => {
          host.setMode(dragging ? 'none' : 'azimuth');
          host.render();
        },
      },
      dragging ? 'Press and drag on the map from the site… (click to stop)' : 'Drag an azimuth on the map',
    ),
    img,
    host.diagramSvg
      ? h(
          'button',
          {
            id: 'export-diagram',
            onclick: () =>
              void standard(true).then(
                (svg) =>
                  svg &&
                  download(
                    `profile-${pick?.siteId}-${pick?.typeId}-${host.azimuth}.svg`,
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
