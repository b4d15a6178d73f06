/**
 * Coverage: the flight levels, the day (QNH, temperature; a cold, low-pressure day in one switch), the run, its
 * result (what it assumed, and per volume and level the area seen and meeting its requirement), and what the map
 * shows (level, count, layers).
 */
import { formatFl } from '../../shared/units.ts';
import type { StudyConventions } from '../../worker/io/study.ts';
import { h, table } from '../dom.ts';
import type { PanelHost } from '../panel-host.ts';
import {
  COLD_DAY,
  dayOf,
  isColdDay,
  sensorSetKey,
  setDay,
  setFlightLevels,
  type FoldKind,
  type LayerId,
  type WorkState,
} from '../state.ts';
import { fmtAltitude, fmtArea, fmtLevel, fmtPct } from '../units.ts';
import { numberIn, section, tryEdit, type EditHost } from './kit.ts';

type Host = EditHost &
  Pick<
    PanelHost,
    'state' | 'study' | 'coverage' | 'busy' | 'runCoverage' | 'setView' | 'refreshImages' | 'levelAltitudeM'
  >;

const LAYER_NAMES: [LayerId, string][] = [
  ['relief', 'Shaded relief'],
  ['floor', 'Network floor'],
  ['fold', 'Sites seeing each cell'],
  ['accuracy', 'Multilateration accuracy (1σ horizontal, m)'],
  ['gap', 'Gaps in volumes'],
  ['loss', 'Outage losses'],
  ['compare', 'Layout differences'],
  ['volumes', 'Volume outlines'],
  ['sites', 'Sites'],
];

function viewControls(host: Host): HTMLElement {
  const s = host.state;
  const levels = host.coverage?.flightLevels ?? s.doc.flightLevels;
  const fl = h(
    'select',
    {
      id: 'view-fl',
      onchange: () => {
        host.setView({ ...host.state, view: { ...host.state.view, fl: Number(fl.value) } });
        void host.refreshImages();
      },
    },
    ...levels.map((x) => h('option', { value: x }, fmtLevel(x, host.levelAltitudeM(x), s.units))),
  );
  fl.value = String(s.view.fl);
  const kind = h(
    'select',
    {
      id: 'view-kind',
      onchange: () => {
        host.setView({ ...host.state, view: { ...host.state.view, kind: kind.value as FoldKind } });
        void host.refreshImages(['fold']);
      },
    },
    h('option', { value: 'any' }, 'any radar (PSR or SSR)'),
    h('option', { value: 'primary' }, 'PSR only'),
    h('option', { value: 'secondary' }, 'SSR only'),
    h('option', { value: 'adsb' }, 'ADS-B receivers'),
    h('option', { value: 'mlat' }, 'multilateration receivers'),
  );
  kind.value = s.view.kind;
  // The accuracy layer only when the network computed has multilateration receivers.
  const offered = LAYER_NAMES.filter(([id]) => id !== 'accuracy' || (host.coverage?.mlat ?? null) !== null);
  const layerRows = offered.map(([id, label]) => {
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
      const layers = { ...host.state.view.layers, [id]: { on: on.checked, opacity: Number(op.value) } };
      host.setView({ ...host.state, view: { ...host.state.view, layers } });
      if (on.checked !== set.on) void host.refreshImages();
    };
    on.addEventListener('change', update);
    op.addEventListener('change', update);
    return h('div', { className: 'layer-row' }, h('label', {}, on, ' ', label), op);
  });
  return section('Map', h('label', {}, 'Level shown ', fl), h('label', {}, ' Count ', kind), ...layerRows);
}

export function coveragePanel(host: Host): HTMLElement {
  const s = host.state;
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
    void tryEdit(host, flText, () => {
      if (parts.length === 0 || fls.some((x) => !Number.isInteger(x)))
        throw new Error(
          `flight levels: found "${flText.value}"; expected whole flight levels separated by commas, e.g. 50, 100, 245`,
        );
      return setFlightLevels(host.state, fls);
    });
  });
  const c = host.coverage;
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
        conventionsBlock(host, c.conventions, c.warnings),
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
    dayControls(host),
    h(
      'div',
      {},
      h(
        'button',
        {
          id: 'run-coverage',
          className: 'primary',
          disabled: host.busy !== null,
          onclick: () => void host.runCoverage(),
        },
        'Compute coverage',
      ),
    ),
    result,
    viewControls(host),
  );
}

/** The day: one switch for a cold, low-pressure day, the two numbers, and the levels' true altitudes on it. */
function dayControls(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  const day = dayOf(s);
  const edit = (el: HTMLElement, f: () => WorkState) => void tryEdit(host, el, f, { recompute: true });
  const cold = h('input', { type: 'checkbox', id: 'day-cold', checked: isColdDay(s) });
  cold.addEventListener('change', () =>
    edit(cold, () => setDay(host.state, cold.checked ? { ...COLD_DAY } : null)),
  );
  const qnh = numberIn(
    day.qnhHpa,
    { id: 'day-qnh', min: 870, max: 1090, 'aria-label': 'QNH (hPa)' },
    (v, el) => edit(el, () => setDay(host.state, { qnhHpa: v })),
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
    (v, el) => edit(el, () => setDay(host.state, { isaDeviationC: v })),
  );
  const c = host.study?.conventions;
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
function conventionsBlock(host: Host, c: StudyConventions, warnings: string[]): HTMLElement {
  const s = host.state;
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
