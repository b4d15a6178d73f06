/**
 * The map's legend: one block per layer on show — the sites' symbols, sites seeing each cell (with gaps and outage
 * losses), the network floor's steps, the multilateration accuracy's metre bands, the layout differences, the
 * relief — in a box at the map's lower right that
 * folds away to its title bar. Colours come from worker/io/render.ts, the module that paints the rasters, so the
 * legend cannot drift from the map.
 */
import {
  FOLD_COLORS,
  GAINED_COLOR,
  GAP_COLOR,
  LOSS_COLOR,
  cssColor,
  type LegendStop,
} from '../worker/io/render.ts';
import { clear, h } from './dom.ts';
import type { LayerId, LayerSetting, Units } from './state.ts';
import { fmtAltitude } from './units.ts';

/** The legend box's width in CSS pixels (style.css #legend): the map keeps the study area clear of it. */
export const LEGEND_WIDTH_PX = 250;

export interface LegendInput {
  units: Units;
  layers: Record<LayerId, LayerSetting>;
  /** The level shown and the count, as text ("FL030 (3,000 ft), any radar"); null before coverage. */
  foldTitle: string | null;
  /** The level shown alone ("FL030 (3,000 ft)"); null before coverage. */
  levelTitle?: string | null;
  anyFailed: boolean;
  floor: LegendStop[];
  /** The multilateration accuracy's bands (worker/io/mlat-image.ts, through the engine); empty without receivers. */
  accuracy: LegendStop[];
  relief: { value: number; color: string }[];
  /** Names of the compared layouts [A, B], when a comparison is on show. */
  compared: [string, string] | null;
  /** Whether a plan has been made (its sites get a halo). */
  planned: boolean;
}

let folded = false;

function swatch(color: string, label: string, title?: string): HTMLElement {
  const i = h('i', {});
  i.style.background = color;
  return h('span', { className: 'swatch', ...(title ? { title } : {}) }, i, label);
}

/** A site symbol as the map draws it (the same classes as a marker), with its meaning. */
function siteSymbol(classes: string, label: string): HTMLElement {
  return h(
    'span',
    { className: 'swatch site-key' },
    h('span', { className: `site ${classes}` }, h('span', { className: 'site-dot' })),
    label,
  );
}

export function renderLegend(el: HTMLElement, x: LegendInput): void {
  const u = x.units;
  const { layers } = x;
  const blocks: HTMLElement[] = [];
  if (layers.sites.on) {
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-sites' },
        h('strong', {}, 'Sites'),
        h(
          'div',
          { className: 'swatches' },
          siteSymbol('existing', 'existing'),
          siteSymbol('', 'candidate'),
          siteSymbol('in-network', 'filled: in the network'),
          x.planned ? siteSymbol('planned', 'ringed: in the plan') : null,
          x.anyFailed ? siteSymbol('failed', 'down (outage)') : null,
        ),
      ),
    );
  }
  if (x.foldTitle && layers.fold.on) {
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-folds' },
        h('strong', {}, `Sites seeing each cell at ${x.foldTitle}`),
        h(
          'div',
          { className: 'swatches' },
          ...['1', '2', '3', '≥ 4'].map((label, i) => swatch(cssColor(FOLD_COLORS[i]), label)),
        ),
        layers.gap.on ? swatch(cssColor(GAP_COLOR), 'gap in a volume') : null,
        layers.loss.on && x.anyFailed ? swatch(cssColor(LOSS_COLOR), 'volume requirement lost') : null,
      ),
    );
  }
  if (x.foldTitle && layers.floor.on && x.floor.length) {
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-floor' },
        h('strong', {}, 'Network floor, by the lowest computed level at or above it'),
        h(
          'div',
          { className: 'swatches' },
          ...x.floor.map((s) =>
            swatch(
              s.color,
              s.label ?? fmtAltitude(s.value, u),
              Number.isFinite(s.value) ? `floor at or below ${fmtAltitude(s.value, u)}` : undefined,
            ),
          ),
        ),
      ),
    );
  }
  if (x.levelTitle && layers.accuracy.on && x.accuracy.length) {
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-accuracy' },
        h('strong', {}, `Multilateration accuracy at ${x.levelTitle}`),
        h('div', { className: 'legend-note' }, '1σ horizontal error of the fix, m; no colour: no fix'),
        h(
          'div',
          { className: 'swatches' },
          ...x.accuracy.map((s) =>
            swatch(
              s.color,
              s.label ?? `≤ ${s.value} m`,
              Number.isFinite(s.value) ? `fix within ${s.value} m (1σ horizontal)` : undefined,
            ),
          ),
        ),
      ),
    );
  }
  if (x.compared && layers.compare.on) {
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-compare' },
        h('strong', {}, `${x.compared[1]} against ${x.compared[0]}`),
        swatch(cssColor(GAINED_COLOR), 'requirement gained'),
        swatch(cssColor(LOSS_COLOR), 'requirement lost'),
      ),
    );
  }
  if (layers.relief.on && x.relief.length) {
    const ramp = h('div', { className: 'ramp' });
    ramp.style.background = `linear-gradient(to right, ${x.relief.map((s) => s.color).join(', ')})`;
    blocks.push(
      h(
        'div',
        { className: 'legend-block', id: 'legend-relief' },
        h('strong', {}, 'Ground height (shaded relief; sea in grey-blue)'),
        ramp,
        h(
          'div',
          { className: 'ramp-labels' },
          h('span', {}, fmtAltitude(x.relief[0].value, u)),
          h('span', {}, fmtAltitude(x.relief[x.relief.length - 1].value, u)),
        ),
      ),
    );
  }
  const toggle = h(
    'button',
    {
      className: 'legend-fold',
      'aria-expanded': String(!folded),
      title: folded ? 'Show the legend' : 'Fold the legend away',
      onclick: () => {
        folded = !folded;
        renderLegend(el, x);
      },
    },
    folded ? 'Legend ▴' : 'Legend ▾',
  );
  clear(el, toggle, ...(folded ? [] : blocks));
  el.classList.toggle('folded', folded);
  el.hidden = blocks.length === 0;
}
