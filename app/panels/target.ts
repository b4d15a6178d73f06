/**
 * The target aircraft (Airspace panel): the study's — radar cross-section, echo fluctuation (Swerling case),
 * transponder class — and each volume's own, where it has one.
 */
import { FLUCTUATION_IDS, TRANSPONDER_IDS } from '../../shared/scenario.ts';
import { h, table } from '../dom.ts';
import type { PanelHost } from '../panel-host.ts';
import { setTarget, setVolumeTarget } from '../state.ts';
import { choice, numberIn, tryEdit, type EditHost } from './kit.ts';

type Host = EditHost & Pick<PanelHost, 'state'>;

type FluctuationId = (typeof FLUCTUATION_IDS)[number];
type TransponderId = (typeof TRANSPONDER_IDS)[number];

/** Swerling cases in plain words: whether the echo fluctuates, and how fast. */
const FLUCTUATION_LABELS: Record<FluctuationId, string> = {
  swerling0: 'Swerling 0 (steady echo)',
  swerling1: 'Swerling 1 (fluctuates scan to scan)',
  swerling2: 'Swerling 2 (fluctuates pulse to pulse)',
  swerling3: 'Swerling 3 (one strong reflector, scan to scan)',
  swerling4: 'Swerling 4 (one strong reflector, pulse to pulse)',
};
/** Short forms for the per-volume table. */
const FLUCTUATION_SHORT: Record<FluctuationId, string> = {
  swerling0: 'Swerling 0 (steady)',
  swerling1: 'Swerling 1',
  swerling2: 'Swerling 2',
  swerling3: 'Swerling 3',
  swerling4: 'Swerling 4',
};
/** Transponder classes in plain words (the class's minimum reply power). */
const TRANSPONDER_LABELS: Record<TransponderId, string> = {
  'low-power': 'Low power, 70 W or more (below 15,000 ft, up to 175 kt)',
  'high-power': 'High power, 125 W or more (above 15,000 ft or faster than 175 kt)',
};
const TRANSPONDER_SHORT: Record<TransponderId, string> = {
  'low-power': 'low power',
  'high-power': 'high power',
};

/** The study's target: what every primary must detect, and every secondary and receiver must hear. */
export function targetSection(host: Host): HTMLElement {
  const d = host.state.doc;
  const rcs = numberIn(
    d.targetRcsM2,
    { id: 'target-rcs', className: 'short', min: 0, 'aria-label': 'target radar cross-section (m²)' },
    (v, el) => void tryEdit(host, el, () => setTarget(host.state, { targetRcsM2: v })),
  );
  const fluct = choice(
    { id: 'target-fluctuation', 'aria-label': 'target fluctuation' },
    FLUCTUATION_IDS.map((x) => [x, FLUCTUATION_LABELS[x]]),
    d.targetFluctuation,
    (v, el) => void tryEdit(host, el, () => setTarget(host.state, { targetFluctuation: v as FluctuationId })),
  );
  const xpdr = choice(
    { id: 'target-transponder', 'aria-label': 'target transponder' },
    TRANSPONDER_IDS.map((x) => [x, TRANSPONDER_LABELS[x]]),
    d.targetTransponder,
    (v, el) => void tryEdit(host, el, () => setTarget(host.state, { targetTransponder: v as TransponderId })),
  );
  return h(
    'section',
    { className: 'block target', id: 'target' },
    h('h3', {}, 'Target aircraft'),
    h(
      'p',
      { className: 'hint' },
      'What every sensor must see. A primary radar sees the aircraft by its echo: its radar cross-section (RCS) and how that echo fluctuates. A secondary radar sees it by its transponder’s replies. ADS-B and multilateration receivers hear the aircraft’s own 1090 MHz transmissions, from the same transponder class (its power sets their range); no RCS applies to them.',
    ),
    h('div', { className: 'field' }, h('label', { for: 'target-rcs' }, 'Radar cross-section (m²)'), rcs),
    h('div', { className: 'field' }, h('label', { for: 'target-fluctuation' }, 'Echo fluctuation'), fluct),
    h('div', { className: 'field' }, h('label', { for: 'target-transponder' }, 'Transponder'), xpdr),
  );
}

/** Each volume's own target (blank or "study's" = the study's target). */
export function volumeTargets(host: Host): HTMLElement | null {
  const s = host.state;
  if (s.doc.volumes.length === 0) return null;
  const rows = s.doc.volumes.map((v) => {
    const rcs = numberIn(
      v.targetRcsM2 ?? '',
      {
        className: 'short',
        min: 0,
        placeholder: String(s.doc.targetRcsM2),
        'aria-label': `target RCS of ${v.id}`,
      },
      (x, el) =>
        void tryEdit(host, el, () =>
          setVolumeTarget(host.state, v.id, { targetRcsM2: el.value.trim() === '' ? null : x }),
        ),
    );
    const fluct = choice(
      { 'aria-label': `target fluctuation of ${v.id}`, title: 'echo fluctuation (Swerling case)' },
      [
        ['', `study’s: ${FLUCTUATION_SHORT[s.doc.targetFluctuation]}`],
        ...FLUCTUATION_IDS.map((x): [FluctuationId, string] => [x, FLUCTUATION_SHORT[x]]),
      ],
      v.targetFluctuation ?? '',
      (x, el) =>
        void tryEdit(host, el, () =>
          setVolumeTarget(host.state, v.id, { targetFluctuation: x === '' ? null : x }),
        ),
    );
    const xpdr = choice(
      {
        'aria-label': `target transponder of ${v.id}`,
        title: 'low power: 70 W or more; high power: 125 W or more',
      },
      [
        ['', `study’s: ${TRANSPONDER_SHORT[s.doc.targetTransponder]}`],
        ...TRANSPONDER_IDS.map((x): [TransponderId, string] => [x, TRANSPONDER_SHORT[x]]),
      ],
      v.targetTransponder ?? '',
      (x, el) =>
        void tryEdit(host, el, () =>
          setVolumeTarget(host.state, v.id, { targetTransponder: x === '' ? null : x }),
        ),
    );
    return [v.name, rcs, fluct, xpdr];
  });
  return h(
    'div',
    {},
    h(
      'p',
      { className: 'hint' },
      'A volume may study an aircraft of its own (e.g. small aircraft in a terminal area); blank = the target above.',
    ),
    table(['Volume', 'RCS (m²)', 'Fluctuation', 'Transponder'], rows, {
      id: 'volume-target-table',
      className: 'wide',
    }),
  );
}
