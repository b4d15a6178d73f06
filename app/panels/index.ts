/**
 * The side panels: their names on the rail, and the one that is on show, rebuilt from the state whenever it
 * changes. One file per panel (this folder), each taking only the part of the host (app/panel-host.ts) it uses;
 * the pieces they share are in kit.ts. Names are plain words of our own. Inputs apply on change; a rejected value
 * stays in its field, marked, with the message above the panel.
 */
import { clear, h } from '../dom.ts';
import type { PanelHost, PanelId } from '../panel-host.ts';
import { coveragePanel } from './coverage.ts';
import { filesPanel } from './files.ts';
import { groundPanel } from './ground.ts';
import { keepTyped } from './kit.ts';
import { layoutsPanel } from './layouts.ts';
import { outagesPanel } from './outages.ts';
import { planPanel } from './plan.ts';
import { profilePanel } from './profile.ts';
import { sitesPanel } from './sites.ts';
import { typesPanel } from './types.ts';
import { volumesPanel } from './volumes.ts';

export type { PanelId };

export const PANELS: [PanelId, string][] = [
  ['ground', 'Ground'],
  ['sites', 'Sites'],
  ['types', 'Sensor types'],
  ['volumes', 'Airspace'],
  ['coverage', 'Coverage'],
  ['plan', 'Plan'],
  ['outages', 'Outages'],
  ['layouts', 'Layouts'],
  ['profile', 'Profile'],
  ['files', 'Files'],
];

const BUILDERS: Record<PanelId, (host: PanelHost) => HTMLElement> = {
  ground: groundPanel,
  sites: sitesPanel,
  types: typesPanel,
  volumes: volumesPanel,
  coverage: coveragePanel,
  plan: planPanel,
  outages: outagesPanel,
  layouts: layoutsPanel,
  profile: profilePanel,
  files: filesPanel,
};

/** Builds the host's panel on show into `el`. */
export function renderPanel(host: PanelHost, el: HTMLElement): void {
  if (!host.state) {
    clear(el, h('p', {}, 'Loading…'));
    return;
  }
  const panel = BUILDERS[host.panel](host);
  keepTyped(panel, host);
  clear(el, panel);
}
