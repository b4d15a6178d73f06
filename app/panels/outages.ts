/**
 * Outages: sites taken down (ticked here or clicked on the map) and what the network loses — volume area and
 * demand weight, per level and per volume — and the N−1 table (one site down at a time, radar and receiver sites
 * alike, with the kinds each site takes down with it) and, where volumes bound the multilateration accuracy, what
 * each receiver site down costs those bounds.
 */
import { formatFl } from '../../shared/units.ts';
import { h, table } from '../dom.ts';
import { progressProxy } from '../engine-client.ts';
import type { PanelHost } from '../panel-host.ts';
import type { MlatSiteLoss } from '../../worker/io/mlat-figures.ts';
import type { OutageTable } from '../../worker/runtime/engine.ts';
import { hasReceivers, siteKindsText } from '../receivers.ts';
import { DEMAND_WEIGHT_TEXT, fmtArea, fmtDemandWeight, fmtPct } from '../units.ts';
import { section } from './kit.ts';

type Host = Pick<
  PanelHost,
  'state' | 'engine' | 'busy' | 'job' | 'coverage' | 'outage' | 'plan' | 'nMinus1' | 'toggleFailure'
>;

/**
 * The study's whole demand weight (every volume cell at every level of its band, area × weight): from the last
 * coverage run's volume table, else from the last plan; undefined when neither is there.
 */
function totalDemandWeight(host: Pick<PanelHost, 'state' | 'coverage' | 'plan'>): number | undefined {
  const c = host.coverage;
  if (c) {
    const w = new Map(host.state.doc.volumes.map((v) => [v.id, v.weight ?? 1]));
    return c.volumes.reduce((a, v) => a + v.areaKm2 * (w.get(v.volumeId) ?? 1), 0);
  }
  return host.plan?.totalWeight;
}

/**
 * The N−1 table's accuracy part (engine.ts OutageTable): per receiver site, the volume and level that lose the
 * most area meeting their bound. Null when the table has none (no mlat receivers, or no volume bounds the accuracy).
 */
function accuracyRows(
  n1: OutageTable | null,
): { loss: MlatSiteLoss; worst: MlatSiteLoss['byVolume'][number] | null }[] | null {
  if (!n1?.accuracy) return null;
  return n1.accuracy.map((loss) => {
    const worst = [...loss.byVolume].sort((a, b) => b.areaKm2Lost - a.areaKm2Lost)[0];
    return { loss, worst: worst && worst.areaKm2Lost > 0 ? worst : null };
  });
}

export function outagesPanel(host: Host): HTMLElement {
  const s = host.state;
  const u = s.units;
  const sites = [...new Set(s.network.map((r) => r.siteId))];
  const name = (id: string) =>
    s.doc.sites.features.find((f) => f.properties.id === id)?.properties.name ?? id;
  const o = host.outage;
  const boxes = sites.map((id) => {
    const c = h('input', { type: 'checkbox', checked: s.failed.includes(id), 'data-fail': id });
    c.addEventListener('change', () => void host.toggleFailure(id));
    const kinds = siteKindsText(id, s.network, s.doc.sensorTypes);
    return h(
      'label',
      { className: 'fail-row' },
      c,
      ' ',
      name(id),
      kinds ? h('span', { className: 'sub' }, ` (${kinds})`) : null,
    );
  });
  const loss =
    o && o.failed.length
      ? section(
          'What is lost',
          h(
            'p',
            { id: 'outage-loss' },
            `${o.failed.map(name).join(', ')} down: ${fmtArea(o.areaKm2Lost, u)} of volume area lose their requirement at one level or more.`,
          ),
          h(
            'p',
            { id: 'outage-weight', title: DEMAND_WEIGHT_TEXT },
            `Demand weight lost: ${fmtDemandWeight(o.demandWeightLost, totalDemandWeight(host))}.`,
          ),
          table(
            ['Level', 'Volume area losing its requirement'],
            (host.coverage?.flightLevels ?? []).map((fl, i) => [
              formatFl(fl),
              fmtArea(o.lostKm2ByLevel[i] ?? 0, u),
            ]),
            { id: 'outage-levels' },
          ),
          table(
            ['Volume', 'Level', 'Area lost'],
            o.byVolume
              .filter((x) => x.areaKm2Lost > 0)
              .map((x) => [
                s.doc.volumes.find((v) => v.id === x.volumeId)?.name ?? x.volumeId,
                formatFl(x.flightLevel),
                fmtArea(x.areaKm2Lost, u),
              ]),
          ),
        )
      : h('p', { className: 'hint', id: 'outage-loss' }, 'No site failed.');
  const n1 = host.nMinus1;
  const accuracy = accuracyRows(n1);
  const volumeName = (id: string) => s.doc.volumes.find((v) => v.id === id)?.name ?? id;
  // The N−1 table may be the plan's (Plan panel) rather than the network's: its sites' sensors come from the
  // list whose sites it lists.
  const sameSites = (refs: readonly { siteId: string }[]) =>
    n1 !== null &&
    new Set(refs.map((r) => r.siteId)).size === n1.length &&
    n1.every((x) => refs.some((r) => r.siteId === x.siteId));
  const n1Sensors =
    host.plan && !sameSites(s.network) && sameSites(host.plan.entries) ? host.plan.entries : s.network;
  const receiversIn = hasReceivers(s.doc.sensorTypes.filter((t) => s.network.some((r) => r.typeId === t.id)));
  return h(
    'div',
    {},
    h('h2', {}, 'Outages'),
    h(
      'p',
      { className: 'hint' },
      'Click a site on the map, or tick it here, to take it down; the loss shows at once from the cached footprints.',
    ),
    host.coverage ? h('div', { className: 'fail-list' }, ...boxes) : h('p', {}, 'Compute coverage first.'),
    loss,
    section(
      'One site down at a time (N−1)',
      h(
        'button',
        {
          id: 'run-n1',
          disabled: host.busy !== null || !host.coverage,
          onclick: () =>
            void host.job('Outage table', async (progress) => {
              host.nMinus1 = await host.engine.outageTable(undefined, progressProxy(progress));
            }),
        },
        'Table for the current network',
      ),
      n1
        ? table(
            ['Site down', 'Volume area losing its requirement', 'Demand weight lost', 'Sensors lost with it'],
            n1.map((x) => [
              name(x.siteId),
              fmtArea(x.areaKm2Lost, u),
              fmtDemandWeight(x.demandWeightLost, totalDemandWeight(host)),
              siteKindsText(x.siteId, n1Sensors, s.doc.sensorTypes) || '—',
            ]),
            { id: 'n1-table', className: 'wide' },
          )
        : null,
    ),
    accuracy
      ? section(
          'Accuracy bound lost with the site down',
          h(
            'p',
            { className: 'hint' },
            'Per site with multilateration receivers, one at a time, every other site up: the volume area whose fix meets its accuracy bound with every receiver up and not with that site down, at one level or more.',
          ),
          accuracy.length
            ? table(
                ['Site down', 'Area losing its bound', 'Worst volume and level', 'Share meeting the bound'],
                accuracy.map(({ loss, worst }) => [
                  name(loss.siteId),
                  fmtArea(loss.areaKm2Lost, u),
                  worst ? `${volumeName(worst.volumeId)} ${formatFl(worst.flightLevel)}` : '—',
                  worst ? `${fmtPct(worst.metPctBefore)} → ${fmtPct(worst.metPctAfter)}` : '—',
                ]),
                { id: 'n1-accuracy', className: 'wide' },
              )
            : h('p', {}, 'No volume that bounds the accuracy has cells at the study’s levels.'),
        )
      : null,
    h(
      'p',
      { className: 'hint', id: 'demand-weight-hint' },
      `Areas count a cell once however many volumes and levels it loses. ${DEMAND_WEIGHT_TEXT} The share is of the whole study’s demand.`,
    ),
    receiversIn
      ? h(
          'p',
          { className: 'hint', id: 'outage-receivers-hint' },
          `Receiver sites count here as radar sites do: a volume that requires ADS-B or multilateration loses every cell where the receivers left hearing it fall below its count, so one receiver down can take a whole area with it. These figures count receivers, not how much worse the fixes left become: ${accuracy ? 'that is in “Accuracy bound lost with the site down” above, for the volumes that bound the accuracy' : 'with multilateration receivers and volumes that bound the accuracy, the N−1 table adds “Accuracy bound lost with the site down” for that'}. On the map, take a site down and look at the accuracy layer in Coverage.`,
        )
      : null,
  );
}
