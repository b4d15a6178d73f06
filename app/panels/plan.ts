/**
 * Plan: the sites and sensor types that give every volume its required sites at least cost (or, within a budget,
 * the most demand), by the engine's planner; its result (new spend, the kept sensors already standing apart, the
 * bound and gap, the entries with their kinds, the sensors per kind, each volume's share met and its requirement per
 * kind), and the way on to coverage and the N−1 table.
 */
import { DEFAULT_SOLVER_NODES } from '../../shared/plan-limits.ts';
import { KIND_LABELS, mlatMinReceivers, type FoldKind } from '../../shared/sensor-kinds.ts';
import { formatFl } from '../../shared/units.ts';
import { h, table } from '../dom.ts';
import { progressProxy } from '../engine-client.ts';
import type { PanelHost } from '../panel-host.ts';
import type { PlanSummary } from '../../worker/runtime/engine.ts';
import { setNetwork } from '../state.ts';
import { altitudeAided, kindCounts, kindCountText, requirementText } from '../receivers.ts';
import { DEMAND_WEIGHT_TEXT, fmtCost, fmtDemandWeight, fmtPct } from '../units.ts';
import { section } from './kit.ts';

type Host = Pick<
  PanelHost,
  | 'state'
  | 'engine'
  | 'busy'
  | 'job'
  | 'plan'
  | 'nMinus1'
  | 'setView'
  | 'refreshVectors'
  | 'runCoverage'
  | 'showPanel'
>;

export function planPanel(host: Host): HTMLElement {
  const s = host.state;
  const budget = h('input', {
    type: 'number',
    id: 'plan-budget',
    'data-keep': true,
    min: 0,
    step: 'any',
    value: s.doc.budget ?? '',
  });
  const keep = h('input', { type: 'checkbox', id: 'plan-keep', checked: true, 'data-keep': true });
  // A work limit, not a clock: the same study gives the same plan on any machine (shared/plan-limits.ts).
  const nodes = h('input', {
    type: 'number',
    id: 'plan-nodes',
    'data-keep': true,
    min: 0,
    max: 100000,
    step: 1,
    value: DEFAULT_SOLVER_NODES,
    className: 'short',
  });
  const run = () =>
    void host.job('Plan', async (progress) => {
      const b = budget.value.trim() === '' ? null : Number(budget.value);
      const n = Number(nodes.value);
      if (!(Number.isInteger(n) && n >= 0 && n <= 100000))
        throw new Error(`solver nodes: found "${nodes.value}"; expected a whole number from 0 to 100000`);
      if (b !== null && !(b >= 0))
        throw new Error(`budget: found "${budget.value}"; expected a number ≥ 0 or empty for none`);
      const keepRefs = keep.checked
        ? host.state.network.filter(
            (r) =>
              host.state.doc.sites.features.find((f) => f.properties.id === r.siteId)?.properties.existing,
          )
        : [];
      host.plan = await host.engine.plan(
        {
          budget: b,
          keep: keepRefs,
          excludedSites: [],
          solverNodes: n,
        },
        progressProxy(progress),
      );
      host.nMinus1 = null;
      host.refreshVectors();
    });
  const p = host.plan;
  const needsMlat = s.doc.volumes.some((v) => (v.requiredFold.mlat ?? 0) > 0);
  const acc = p?.mlatAccuracy;
  const result = p
    ? section(
        'Result',
        h(
          'dl',
          { id: 'plan-result', className: 'facts' },
          h('dt', {}, 'Cost'),
          h('dd', { id: 'plan-cost' }, fmtCost(p.cost)),
          h('dt', {}, 'New spend'),
          h('dd', { id: 'plan-new-spend' }, fmtCost(p.newSpend)),
          p.existingValue > 0 ? h('dt', {}, 'Existing sensors kept (value, not in the cost)') : null,
          p.existingValue > 0 ? h('dd', { id: 'plan-existing-value' }, fmtCost(p.existingValue)) : null,
          h('dt', {}, p.mode === 'cover' ? 'Lower bound' : 'Covered weight'),
          h(
            'dd',
            {},
            p.mode === 'cover'
              ? fmtCost(p.lowerBound)
              : `${fmtDemandWeight(p.coveredWeight)} of ${fmtDemandWeight(p.totalWeight)} (${fmtPct(p.totalWeight > 0 ? (100 * p.coveredWeight) / p.totalWeight : 0)})`,
          ),
          h('dt', {}, 'Gap'),
          h('dd', {}, fmtPct(p.gapPct)),
          h('dt', {}, 'Method'),
          h('dd', {}, p.method),
          p.solverStop && p.solverStop !== 'nothing'
            ? h(
                'dd',
                { className: p.solverStop === 'safety time limit' ? 'warn' : 'hint' },
                p.solverStop === 'safety time limit'
                  ? 'Stopped by the safety time limit: this plan may differ on another machine.'
                  : 'Stopped at its work limit: the same plan on any machine; more nodes may narrow the gap.',
              )
            : null,
          h('dt', {}, 'Every requirement met'),
          h('dd', {}, p.demandMet ? 'yes' : 'no'),
          h('dt', {}, 'Sensors by kind'),
          h('dd', { id: 'plan-kinds' }, kindCountText(kindCounts(p.entries, s.doc.sensorTypes))),
          needsMlat ? h('dt', {}, 'Multilateration fix') : null,
          needsMlat
            ? h(
                'dd',
                {},
                `from ${mlatMinReceivers(altitudeAided(s))} receivers (${altitudeAided(s) ? 'the target’s reported altitude taken as known' : 'position and time solved, no altitude'})`,
              )
            : null,
          acc ? h('dt', {}, 'Multilateration accuracy bounds') : null,
          acc ? h('dd', { id: 'plan-accuracy' }, accuracyText(acc)) : null,
        ),
        p.unmeetable.length
          ? h(
              'p',
              { className: 'warn' },
              `Some demand cannot be met by any allowed sensor: ${p.unmeetable.map((x) => `${x.points} points${x.volumeName ? ` of ${x.volumeName}` : ''} need ${x.required} ${kindLabel(x.kind)}, best ${x.achievable}`).join('; ')}.`,
            )
          : null,
        table(
          ['Site', 'Sensor type', 'Kind', 'Cost'],
          p.entries.map((e) => [
            s.doc.sites.features.find((f) => f.properties.id === e.siteId)?.properties.name ?? e.siteId,
            s.doc.sensorTypes.find((t) => t.id === e.typeId)?.name ?? e.typeId,
            kindLabel(s.doc.sensorTypes.find((t) => t.id === e.typeId)?.kind ?? ''),
            h(
              'span',
              {},
              fmtCost(e.cost),
              e.existingSensor ? h('div', { className: 'sub' }, 'already standing') : null,
              acc?.addedForAccuracy.some((r) => r.siteId === e.siteId && r.typeId === e.typeId)
                ? h('div', { className: 'sub' }, 'added for accuracy')
                : null,
            ),
          ]),
          { id: 'plan-entries' },
        ),
        table(
          ['Volume', 'Level', 'Meets requirement'],
          p.volumes.map((v) => [
            s.doc.volumes.find((x) => x.id === v.volumeId)?.name ?? v.volumeId,
            formatFl(v.flightLevel),
            fmtPct(v.meetsRequirementPct),
          ]),
          { className: 'wide' },
        ),
        table(
          ['Volume', 'Required at each level of its band'],
          s.doc.volumes.map((v) => [v.name, requirementText(v)]),
          { id: 'plan-requirements' },
        ),
        h(
          'button',
          {
            id: 'plan-use',
            onclick: () => {
              host.setView(
                setNetwork(
                  { ...host.state, failed: [] },
                  p.entries.map((e) => ({ siteId: e.siteId, typeId: e.typeId })),
                ),
              );
              host.refreshVectors();
              void host.runCoverage();
            },
          },
          'Look at this plan (coverage)',
        ),
        h(
          'button',
          {
            id: 'plan-n1',
            onclick: () =>
              void host.job('Outage table', async (progress) => {
                host.nMinus1 = await host.engine.outageTable(
                  p.entries.map((e) => ({ siteId: e.siteId, typeId: e.typeId })),
                  progressProxy(progress),
                );
                host.showPanel('outages');
              }),
          },
          'N−1 table of this plan',
        ),
      )
    : null;
  return h(
    'div',
    {},
    h('h2', {}, 'Plan'),
    h(
      'p',
      { className: 'hint' },
      'Chooses sites and sensor types — radars and receivers together — that give every volume its required number of sites of each kind at the levels of its band at least cost (or, within a budget, the most demand). Existing sites cost nothing to open.',
    ),
    h('label', {}, 'Budget (M, empty = none) ', budget),
    h('label', {}, keep, ' keep the network’s sensors at existing sites'),
    h(
      'label',
      {
        title:
          'Branch-and-bound nodes the exact search may explore; 0 keeps the heuristic plan with the LP bound',
      },
      'Solver work limit (nodes) ',
      nodes,
    ),
    h(
      'div',
      {},
      h(
        'button',
        { id: 'run-plan', className: 'primary', disabled: host.busy !== null, onclick: run },
        'Make a plan',
      ),
    ),
    h(
      'p',
      { className: 'hint' },
      `Needs the footprint of every allowed site and type (${countCandidates(host)}); those already computed come from the cache.`,
    ),
    result,
    h(
      'p',
      { className: 'hint', id: 'plan-weight-hint' },
      `Costs in millions (M), as in the sites and sensor types. ${DEMAND_WEIGHT_TEXT} Within a budget the plan covers the most of it.`,
    ),
  );
}

function countCandidates(host: Pick<PanelHost, 'state'>): number {
  const s = host.state.doc;
  return s.sites.features.reduce(
    (a, f) => a + (f.properties.allowedTypes?.length ?? s.sensorTypes.length),
    0,
  );
}

/** A kind's short label ("SSR", "ADS-B"); an unknown kind as it is. */
function kindLabel(k: string): string {
  return (KIND_LABELS as Record<string, string>)[k as FoldKind] ?? k;
}

/** The plan's multilateration accuracy figures in one line (engine PlanSummary.mlatAccuracy). */
function accuracyText(a: NonNullable<PlanSummary['mlatAccuracy']>): string {
  const parts = [`${fmtPct(a.metPct)} of the bounded volume levels met (by area weight)`];
  if (a.unmeetablePct > 0) parts.push(`${fmtPct(a.unmeetablePct)} no allowed receivers can meet`);
  if (a.addedForAccuracy.length)
    parts.push(
      `${a.addedForAccuracy.length} receiver${a.addedForAccuracy.length > 1 ? 's' : ''} added for accuracy alone`,
    );
  return parts.join('; ');
}
