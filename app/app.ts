/**
 * The app: the working state (app/state.ts), the engine worker, the map and the panels, and the rules that tie
 * them: every edit is validated (schema, then the terrain) before it replaces the state; the state autosaves to
 * IndexedDB; long jobs show a progress bar with their stage and a cancel button; a moved site cancels the
 * running job and recomputes only what changed (the engine caches footprints).
 */
import { destination } from '@turf/turf';
import { get as idbGet, set as idbSet } from 'idb-keyval';
import { CAUTION, CAUTION_SHORT } from '../shared/caution.ts';
import { formatFl } from '../shared/units.ts';
import type {
  CoverageSummary,
  OutageTable,
  OutageView,
  PlanSummary,
  StudySummary,
  TerrainSummary,
  ProbeResult,
} from '../worker/runtime/engine.ts';
import type { TileSource } from '../worker/runtime/engine-worker.ts';
import { clear, download, h } from './dom.ts';
import { progressProxy, startEngine, type Engine } from './engine-client.ts';
import { allLevelsZip, savedScenarioText, scenarioFileName } from './exports.ts';
import { fetchScenario } from './files.ts';
import { MapView, type ImageLayerId } from './map-view.ts';
import type { ComparedLayouts, MapMode, MessageAction, PanelHost, PanelId } from './panel-host.ts';
import { renderPanel, PANELS } from './panels/index.ts';
import {
  addSite,
  ageText,
  errorLines,
  isQuotaError,
  moveSite,
  restoredLines,
  restoreState,
  saveFailureLines,
  setFailed as stateSetFailed,
  stateFromScenario,
  useLayout,
  utcText,
  type FoldKind,
  type SavedWork,
  type WorkState,
} from './state.ts';
import { LEGEND_WIDTH_PX, renderLegend } from './legend.ts';
import { fmtAltitude, fmtLevel, fmtLonLat, fmtReadout } from './units.ts';

const DEMO_URL = 'data/demo-scenario.json';
/** The legend's words for the count shown (the Coverage panel's choices). */
const KIND_WORDS: Record<FoldKind, string> = {
  any: 'any radar',
  primary: 'PSR',
  secondary: 'SSR',
  adsb: 'ADS-B receivers',
  mlat: 'multilateration receivers',
};
/** The demo's variant with ADS-B and multilateration receivers round its two terminal areas (issue 14). */
const DEMO_RECEIVERS_URL = 'data/demo-receivers-scenario.json';
const DEMO_RECEIVERS_LAYOUT = 'existing network with receivers';
const SAVE_KEY = 'airshade-work';

/** Figures the end-to-end test reads (and a curious user can, from the console). */
export interface Metrics {
  coverageMs: number[];
  outageRedrawMs: number[];
  bootMs: number;
  /** First visit: fetching the demo tiles, decoding them into the terrain (with the study), drawing the relief. */
  demoMs?: { read: number; decode: number; relief: number };
  /** From the page's start to the map's first frame (the app shell), ms. */
  shellMs?: number;
}

/** The app; the panels see it only as a PanelHost (app/panel-host.ts). */
export class App implements PanelHost {
  state!: WorkState;
  engine!: Engine;
  map!: MapView;
  terrain: TerrainSummary | null = null;
  study: StudySummary | null = null;
  coverage: CoverageSummary | null = null;
  outage: OutageView | null = null;
  plan: PlanSummary | null = null;
  nMinus1: OutageTable | null = null;
  compare: ComparedLayouts | null = null;
  poolSize = 0;
  shared = false;
  panel: PanelId = 'coverage';
  /** Map click mode: add a site, draw a volume vertex, pick an azimuth, or nothing. */
  mode: MapMode = 'none';
  draft: [number, number][] = [];
  diagramPick: { siteId: string; typeId: string } | null = null;
  diagramSvg: string | null = null;
  /** What the user typed in panel fields marked data-keep, by element id (panels are rebuilt on every change). */
  form: Record<string, string> = {};
  /** A blob URL of the diagram, shown as an image (an SVG in an <img> runs no script). */
  diagramUrl: string | null = null;
  busy: string | null = null;
  readonly metrics: Metrics = { coverageMs: [], outageRedrawMs: [], bootMs: 0 };
  private saveTimer = 0;
  private tileProblemShown: string | null = null;
  private probeBusy = false;
  private probeNext: [number, number] | null = null;
  private readonly el: Record<string, HTMLElement> = {};

  async start(root: HTMLElement): Promise<void> {
    const t0 = performance.now();
    this.buildShell(root);
    this.map = new MapView(this.el.map, {
      onSiteClick: (id) => void this.siteClicked(id),
      onSiteDrag: (id, lon, lat) => void this.siteDragged(id, lon, lat),
      onMoveSites: (on) => this.setMoveSites(on),
    });
    this.map.map.on('click', (e) => this.mapClicked(e.lngLat.lng, e.lngLat.lat));
    this.map.map.on('mousemove', (e) => this.probe(e.lngLat.lng, e.lngLat.lat));
    this.map.map.on('mousedown', (e) => {
      if (this.mode === 'azimuth') {
        e.preventDefault();
        this.azimuthDrag(e.lngLat.lng, e.lngLat.lat, false);
      }
    });
    this.map.map.on('mouseup', (e) => {
      if (this.mode === 'azimuth') this.azimuthDrag(e.lngLat.lng, e.lngLat.lat, true);
    });
    const handle = await startEngine();
    this.engine = handle.engine;
    this.poolSize = handle.poolSize;
    this.shared = handle.shared;
    await this.map.ready;
    this.metrics.shellMs = performance.now();
    await this.restoreOrDemo();
    this.metrics.bootMs = performance.now() - t0;
    this.el.root.dataset.ready = 'true';
  }

  // ------------------------------------------------------------------------------------------------ shell

  private buildShell(root: HTMLElement): void {
    const units = h(
      'select',
      {
        id: 'units',
        'aria-label': 'Units',
        onchange: () => this.setUnits(units.value as WorkState['units']),
      },
      h('option', { value: 'aviation' }, 'NM · ft · FL'),
      h('option', { value: 'metric' }, 'km · m · FL'),
    );
    const about = h('dialog', { id: 'about' });
    // Filled from the engine's conventions once a scenario is loaded (render()).
    this.el.aboutSeen = h('p', { id: 'about-seen' });
    this.el.aboutDay = h('p', { id: 'about-day' });
    clear(
      about,
      h('h2', {}, 'About Airshade'),
      h(
        'p',
        {},
        'Airshade computes where the radars of a network see aircraft at chosen flight levels, over the terrain you load, on an effective-earth model; picks the sites and sensor types that close the gaps at least cost; and shows what is lost when a site goes down.',
      ),
      h('h3', {}, 'Cautions'),
      h('p', { id: 'about-caution' }, CAUTION),
      h(
        'ul',
        { className: 'cautions' },
        h(
          'li',
          {},
          'Terrain data: its resolution, voids and datum all shape the results. Refraction: the effective earth radius factor k is an assumption, and anomalous propagation is not modelled.',
        ),
        h(
          'li',
          {},
          'Detection ranges come from the sensor models entered; real performance depends on the site, the equipment and its maintenance.',
        ),
      ),
      h('h3', {}, 'What “seen” means'),
      this.el.aboutSeen,
      h('h3', {}, 'Flight levels and the day'),
      h(
        'p',
        { id: 'about-levels' },
        'Flight levels are pressure altitudes (FL × 100 ft in the ICAO standard atmosphere), not heights. Airshade takes each level at its true altitude on the study’s day — its sea-level pressure (QNH) and temperature, set in the Coverage panel — and shows that altitude beside the level. On a cold, low-pressure day aircraft at a given level fly lower than on a standard day.',
      ),
      this.el.aboutDay,
      h('button', { onclick: () => about.close() }, 'Close'),
    );
    const progress = h('progress', { id: 'progress', max: 1, value: 0 });
    this.el.progress = progress;
    this.el.stage = h('span', { id: 'stage' });
    this.el.cancel = h(
      'button',
      { id: 'cancel', onclick: () => void this.engine.cancel(), disabled: true },
      'Cancel',
    );
    this.el.readout = h('span', { id: 'readout' }, 'Move the cursor over the map');
    this.el.message = h('div', { id: 'message', role: 'status', 'aria-live': 'polite' });
    this.el.panel = h('div', { id: 'panel' });
    this.el.rail = h('nav', { id: 'rail', 'aria-label': 'Panels' });
    this.el.map = h('div', { id: 'map' });
    this.el.legend = h('div', { id: 'legend' });
    this.el.units = units;
    this.el.root = root;
    clear(
      root,
      h(
        'header',
        { id: 'top' },
        h('span', { className: 'brand' }, 'Airshade'),
        (this.el.title = h('span', { id: 'scenario-name' })),
        h('span', { className: 'spacer' }),
        (this.el.unsaved = h(
          'button',
          {
            id: 'unsaved',
            className: 'small',
            hidden: true,
            title: 'The last save in this browser failed: your work is only in this page.',
            onclick: () => this.offerDownloads(this.lastSaveError),
          },
          'Not saved in this browser: download',
        )),
        h('label', {}, 'Units ', units),
        h('button', { id: 'about-open', onclick: () => about.showModal() }, 'About & cautions'),
      ),
      h(
        'main',
        { id: 'body' },
        h('aside', { id: 'side' }, this.el.rail, this.el.message, this.el.panel),
        h('section', { id: 'mapwrap' }, this.el.map, this.el.legend),
      ),
      h(
        'footer',
        { id: 'status' },
        h('span', { id: 'job' }, progress, this.el.stage, this.el.cancel),
        this.el.readout,
        h('span', { className: 'caution-line', title: CAUTION }, CAUTION_SHORT),
      ),
      about,
    );
    this.renderRail();
  }

  private renderRail(): void {
    clear(
      this.el.rail,
      ...PANELS.map(([id, label]) =>
        h(
          'button',
          {
            id: `tab-${id}`,
            className: id === this.panel ? 'active' : '',
            'aria-pressed': String(id === this.panel),
            onclick: () => this.showPanel(id),
          },
          label,
        ),
      ),
    );
  }

  showPanel(id: PanelId): void {
    this.panel = id;
    if (id !== 'volumes' && this.mode === 'draw') this.setMode('none');
    if (id !== 'sites' && this.mode === 'add-site') this.setMode('none');
    if (id !== 'profile' && this.mode === 'azimuth') this.setMode('none');
    // The diagram's azimuth is on the map while the Profile panel is.
    if (id !== 'profile') this.map.setAzimuth(null);
    else if (this.diagramSvg && this.diagramPick) this.showAzimuth(this.diagramPick, this.azimuth);
    this.renderRail();
    this.refreshVectors();
    this.render();
  }

  render(): void {
    renderPanel(this, this.el.panel);
    this.el.title.textContent = this.state ? this.state.doc.name : '';
    this.renderAbout();
    this.renderLegend();
  }

  /** The true altitude (m AMSL) of a flight level on the study's day, as the engine computed it. */
  levelAltitudeM(fl: number): number | undefined {
    const from = (c: StudySummary['conventions'] | undefined) =>
      c?.levels.find((l) => l.flightLevel === fl)?.trueAltitudeM;
    return from(this.study?.conventions) ?? from(this.coverage?.conventions);
  }

  /** The parts of About & cautions that come from the study: what "seen" means, and this study's day. */
  private renderAbout(): void {
    const c = this.study?.conventions;
    if (!c) return;
    this.el.aboutSeen.textContent =
      c.seen.replace(/^seen = /, '').replace(/^./, (x) => x.toUpperCase()) + '.';
    const u = this.state?.units ?? 'aviation';
    this.el.aboutDay.textContent = `This study: ${c.day.text}; ${c.levels
      .map((l) => `${formatFl(l.flightLevel)} at ${fmtAltitude(l.trueAltitudeM, u)}`)
      .join(', ')}.`;
  }

  setMode(mode: MapMode): void {
    this.mode = mode;
    this.el.map.dataset.mode = mode;
    if (mode !== 'draw') {
      this.draft = [];
      this.map.setDraft([]);
    }
    if (mode !== 'azimuth') this.map.setAzimuth(null);
  }

  // ------------------------------------------------------------------------------------------- messages

  say(kind: 'error' | 'info', lines: string | string[], action?: MessageAction | MessageAction[]): void {
    const list = Array.isArray(lines) ? lines : [lines];
    const actions = action === undefined ? [] : Array.isArray(action) ? action : [action];
    clear(
      this.el.message,
      h(
        'div',
        { className: `msg ${kind}`, role: kind === 'error' ? 'alert' : 'status' },
        ...list.map((l) => h('div', {}, l)),
        ...actions.map((a) => h('button', { className: 'small', onclick: a.run }, a.label)),
        h(
          'button',
          { className: 'close', 'aria-label': 'Dismiss', onclick: () => clear(this.el.message) },
          '×',
        ),
      ),
    );
  }

  fail(e: unknown): void {
    if (e instanceof Error && e.name === 'Cancelled') this.say('info', 'Stopped: the job was cancelled.');
    else this.say('error', errorLines(e));
  }

  // -------------------------------------------------------------------------------------------- storage

  private async restoreOrDemo(): Promise<void> {
    let saved: unknown;
    try {
      saved = await idbGet(SAVE_KEY);
    } catch {
      saved = undefined;
    }
    if (saved) {
      try {
        const state = restoreState((saved as { state: unknown }).state);
        const names = (saved as { tiles: string[] }).tiles;
        const r = await this.engine.restoreTiles(names, { input: state.doc, display: state.source });
        this.adoptLoaded(state, r.terrain, r.study!);
        await this.afterTerrain();
        const hadCoverage = (saved as { results?: { coverage?: boolean } }).results?.coverage === true;
        const savedAt = (saved as { savedAt?: unknown }).savedAt;
        // What comes back, how old it is and which data it used (the tiles the engine restored).
        const restored: SavedWork = {
          state,
          tiles: await this.engine.tileNames(),
          savedAt: typeof savedAt === 'string' ? savedAt : undefined,
        };
        this.el.root.dataset.restoredAt = restored.savedAt ?? 'unknown';
        if (hadCoverage && state.network.length > 0) {
          // The results are not stored (a few MB of footprints per sensor): they are computed again, with progress.
          this.say('info', restoredLines(restored, new Date(), 'again'));
          void this.restoreResults(restored);
        } else this.say('info', restoredLines(restored, new Date()));
        return;
      } catch (e) {
        // What was saved stays within reach: the demo replaces it in the browser, not in the user's hands.
        const doc = (saved as { state?: { doc?: unknown } }).state?.doc;
        const at = new Date(String((saved as { savedAt?: unknown }).savedAt));
        const when = Number.isNaN(at.getTime()) ? '' : ` (saved ${ageText(at, new Date())}, ${utcText(at)})`;
        this.say(
          'error',
          [
            `The work saved in this browser${when} could not be restored; the demo is loaded instead.`,
            ...errorLines(e),
          ],
          doc
            ? {
                label: 'Download the saved scenario',
                run: () => download('unrestored.scenario.json', JSON.stringify(doc, null, 2) + '\n'),
              }
            : undefined,
        );
        await this.loadDemo();
        return;
      }
    }
    await this.loadDemo();
  }

  /** True while restoreResults runs: a save meanwhile still records that coverage is wanted. */
  private restoringResults = false;

  /** After a reload: the coverage that existed before it, run again; the message says so when it is back. */
  private async restoreResults(restored: SavedWork): Promise<void> {
    const note = this.el.message.firstElementChild;
    this.restoringResults = true;
    try {
      await this.runCoverage();
    } finally {
      this.restoringResults = false;
    }
    if (this.coverage && this.el.message.firstElementChild === note)
      this.say('info', restoredLines(restored, new Date(), 'done'));
  }

  async loadDemo(variant: 'radars' | 'receivers' = 'radars'): Promise<void> {
    const url = variant === 'receivers' ? DEMO_RECEIVERS_URL : DEMO_URL;
    await this.job(
      variant === 'receivers' ? 'Loading the demo with receivers' : 'Loading the demo',
      async (progress) => {
        progress(0.05, 'reading the scenario');
        const { scenario, tileUrls } = await fetchScenario(url);
        progress(0.2, `reading ${tileUrls.length} terrain tiles`);
        let state = stateFromScenario(scenario, url.split('/').pop()!, this.state?.units ?? 'aviation');
        // The variant opens on its receivers: the network with them, not the radars-only one it shares with the demo.
        if (variant === 'receivers' && scenario.layouts.some((l) => l.name === DEMO_RECEIVERS_LAYOUT))
          state = useLayout(state, DEMO_RECEIVERS_LAYOUT);
        const sources: TileSource[] = tileUrls;
        // Per tile read and decoded, from 20 % to 90 % of the bar.
        const r = await this.engine.loadTiles(
          sources,
          true,
          { input: state.doc, display: state.source },
          undefined,
          progressProxy((f, stage) => progress(0.2 + 0.7 * f, stage)),
        );
        this.adoptLoaded(state, r.terrain, r.study!);
        this.save();
        progress(0.92, 'drawing the relief');
        const t = performance.now();
        await this.afterTerrain();
        this.metrics.demoMs = { ...r.timingsMs, relief: Math.round(performance.now() - t) };
      },
    );
  }

  adoptLoaded(state: WorkState, terrain: TerrainSummary, study: StudySummary): void {
    this.form = {};
    this.state = state;
    this.terrain = terrain;
    this.study = study;
    this.coverage = null;
    this.outage = null;
    this.plan = null;
    this.nMinus1 = null;
    this.compare = null;
    (this.el.units as HTMLSelectElement).value = state.units;
    this.map.setScaleUnits(state.units);
    this.map.applySettings(state.view.layers);
    for (const id of ['floor', 'fold', 'gap', 'loss', 'compare', 'compare-lost'] as const)
      void this.map.setImage(id, null);
    this.refreshVectors();
    this.render();
  }

  /** After new terrain: the relief image and the view. */
  async afterTerrain(): Promise<void> {
    if (!this.terrain) return;
    this.renderLegend();
    // The legend box sits at the map's lower right: the study area is fitted beside it, not under it.
    const legendSoon = !this.el.legend.hidden || (this.state?.view.layers.relief.on ?? false);
    this.map.fitBounds(this.terrain.bounds, legendSoon ? LEGEND_WIDTH_PX + 10 : 0);
    const relief = await this.engine.relief();
    this.reliefLegend = relief.legend;
    await this.map.setImage('relief', relief);
    this.renderLegend();
  }

  save(): void {
    clearTimeout(this.saveTimer);
    this.saveTimer = window.setTimeout(() => {
      void (async () => {
        try {
          const tiles = await this.engine.tileNames();
          const tileProblem = await this.engine.tilesKept();
          // Whether coverage had been computed: a reload runs it again (restoreResults).
          const results = { coverage: this.coverage !== null || this.restoringResults };
          await idbSet(SAVE_KEY, { state: this.state, tiles, results, savedAt: new Date().toISOString() });
          this.saveFailed(null);
          if (tileProblem && tileProblem !== this.tileProblemShown) {
            this.tileProblemShown = tileProblem;
            this.say('error', [
              isQuotaError(tileProblem)
                ? "Your work is saved in this browser, but the terrain tiles could not be kept for the next visit: the browser's storage for this site is full. Load the tiles again then."
                : 'Your work is saved in this browser, but the terrain tiles could not be kept for the next visit: load them again then.',
              tileProblem,
            ]);
          }
          this.el.root.dataset.saved = String(Date.now());
        } catch (e) {
          this.saveFailed(e);
        }
      })();
    }, 150);
  }

  /** What the last save in the browser threw (null: it worked). */
  private lastSaveError: unknown = null;

  /**
   * A save in the browser failed (or, with null, worked again): the message says why — the storage full, with the
   * browser's own figures — and offers the work as files; the header keeps a button for them until a save works.
   */
  private saveFailed(e: unknown): void {
    const was = this.lastSaveError;
    this.lastSaveError = e;
    this.el.unsaved.hidden = e === null;
    if (e === null) {
      delete this.el.root.dataset.unsaved;
      return;
    }
    this.el.root.dataset.unsaved = isQuotaError(e) ? 'quota' : 'error';
    // Said once per failure run (every edit saves again): the header's button brings it back.
    if (was === null) void this.offerDownloads(e);
  }

  /** The message of a failed save, with the downloads of the scenario and (once computed) the results. */
  private async offerDownloads(e: unknown): Promise<void> {
    let storage: { usage?: number; quota?: number } | undefined;
    try {
      storage = await navigator.storage?.estimate();
    } catch {
      storage = undefined;
    }
    const actions: MessageAction[] = [
      {
        label: 'Download the scenario',
        run: () =>
          void savedScenarioText(this)
            .then((text) => download(scenarioFileName(this), text))
            .catch((err: unknown) => this.fail(err)),
      },
    ];
    if (this.coverage)
      actions.push({
        label: 'Download the results (zip)',
        run: () =>
          void allLevelsZip(this)
            .then((zip) => download(zip.name, new Blob([zip.bytes as BlobPart], { type: 'application/zip' })))
            .catch((err: unknown) => this.fail(err)),
      });
    this.say('error', saveFailureLines(e, storage), actions);
  }

  // ------------------------------------------------------------------------------------------ state edits

  /**
   * Replaces the state with an edited one once the engine accepts its scenario (schema and terrain). On
   * failure the message names the problem and the state stays as it was (the panel shows the old values).
   */
  commit(next: WorkState, opts: { recompute?: boolean } = {}): Promise<boolean> {
    // Registered at once (edits call this from their change events), so that a run started right after an edit
    // waits for it: see flushEdits.
    const p = this.commitNow(next, opts);
    this.pendingCommits.add(p);
    void p.finally(() => this.pendingCommits.delete(p));
    return p;
  }

  private readonly pendingCommits = new Set<Promise<boolean>>();

  /**
   * Edits first, then work: a field still holding the cursor is left (its change event commits what was typed) and
   * every commit under way is awaited, so a run never uses the values from before the last edit.
   */
  async flushEdits(): Promise<void> {
    const active = document.activeElement;
    if (
      active instanceof HTMLInputElement ||
      active instanceof HTMLTextAreaElement ||
      active instanceof HTMLSelectElement
    )
      active.blur();
    while (this.pendingCommits.size > 0) await Promise.allSettled([...this.pendingCommits]);
  }

  private async commitNow(next: WorkState, opts: { recompute?: boolean }): Promise<boolean> {
    const coverageRunning = this.busy === 'Coverage';
    let study: StudySummary;
    try {
      study = await this.engine.setScenario(next.doc, next.source);
    } catch (e) {
      this.fail(e);
      this.refreshVectors();
      this.render();
      return false;
    }
    const hadCoverage = this.coverage !== null;
    clear(this.el.message); // an earlier complaint no longer applies
    this.state = next;
    this.study = study;
    this.save();
    this.refreshVectors();
    this.render();
    this.redrawDiagram();
    if (coverageRunning || (hadCoverage && (!study.hasCoverage || opts.recompute))) {
      // Something under the network changed (a site moved, a type edited), or a run was under way on the old
      // scenario: run again; the footprint cache keeps everything that did not change.
      await this.engine.cancel();
      void this.runCoverage();
    } else if (hadCoverage) {
      await this.refreshImages();
    }
    return true;
  }

  /** A diagram on show is drawn again after an edit (its site, type, target or day may have changed). */
  private redrawDiagram(): void {
    const pick = this.diagramPick;
    if (!this.diagramSvg || !pick?.typeId) return;
    const site = this.state.doc.sites.features.find((f) => f.properties.id === pick.siteId);
    const allowed = site?.properties.allowedTypes ?? this.state.doc.sensorTypes.map((t) => t.id);
    if (site && allowed.includes(pick.typeId) && this.state.doc.sensorTypes.some((t) => t.id === pick.typeId))
      void this.drawDiagram(this.azimuth);
  }

  /** View-only changes (units, layers, level, failures) need no validation. */
  setView(next: WorkState): void {
    this.state = next;
    this.save();
    this.map.applySettings(next.view.layers);
    this.render();
  }

  setUnits(u: WorkState['units']): void {
    this.map.setScaleUnits(u);
    this.setView({ ...this.state, units: u });
    // What shows figures outside the panels follows: the read-out, and a diagram on show.
    this.showReadout();
    this.redrawDiagram();
  }

  /** Sites can be dragged on the map from any panel while this is on (the "Move sites" switch on the map). */
  moveSites = false;

  setMoveSites(on: boolean): void {
    this.moveSites = on;
    this.map.setMoveSites(on);
    this.refreshVectors();
  }

  // ------------------------------------------------------------------------------------------------- jobs

  private jobSeq = 0;

  /**
   * Runs a long job with the progress bar and the cancel button. A job started while another runs (a site moved
   * during a run) takes the bar over; the older one, cancelled by whoever started the new one, ends quietly.
   */
  async job<T>(
    label: string,
    run: (progress: (f: number, stage: string) => void) => Promise<T>,
  ): Promise<T | null> {
    const mine = ++this.jobSeq;
    const progress = (f: number, stage: string) => {
      if (mine !== this.jobSeq) return;
      (this.el.progress as HTMLProgressElement).value = f;
      this.el.stage.textContent = `${label}: ${stage} (${Math.round(f * 100)} %)`;
    };
    this.busy = label;
    this.el.root.dataset.busy = label;
    (this.el.cancel as HTMLButtonElement).disabled = false;
    progress(0, 'starting');
    this.render(); // the run buttons show as disabled
    try {
      await this.flushEdits();
      return await run(progress);
    } catch (e) {
      // A job overtaken by a newer one was cancelled on purpose: no message for it.
      if (!(mine !== this.jobSeq && e instanceof Error && e.name === 'Cancelled')) this.fail(e);
      return null;
    } finally {
      if (mine === this.jobSeq) {
        this.busy = null;
        delete this.el.root.dataset.busy;
        (this.el.cancel as HTMLButtonElement).disabled = true;
        this.el.stage.textContent = '';
        (this.el.progress as HTMLProgressElement).value = 0;
        this.render();
      }
    }
  }

  async runCoverage(): Promise<void> {
    await this.flushEdits();
    if (this.state.network.length === 0) {
      this.say(
        'error',
        'coverage: found an empty network; expected one or more sensors (tick them in Sites)',
      );
      return;
    }
    const t0 = performance.now();
    await this.job('Coverage', async (progress) => {
      const r = await this.engine.coverage(
        this.state.network,
        this.state.doc.flightLevels,
        progressProxy(progress),
      );
      this.coverage = r;
      this.outage = null;
      if (!r.flightLevels.includes(this.state.view.fl))
        this.state = { ...this.state, view: { ...this.state.view, fl: r.flightLevels[0] } };
      if (this.state.failed.length > 0) {
        await this.engine.setFailed(this.state.failed);
        this.outage = await this.engine.outageTally();
      }
      progress(0.97, 'drawing');
      await this.refreshImages();
      this.metrics.coverageMs.push(performance.now() - t0);
      this.el.root.dataset.coverage = String(this.metrics.coverageMs.length);
      this.save(); // a reload now computes it again
    });
  }

  /** Images of the shown level, for every layer that is on. */
  async refreshImages(only?: ImageLayerId[]): Promise<void> {
    if (!this.coverage) return;
    const { fl, kind, layers } = this.state.view;
    if (!this.coverage.flightLevels.includes(fl)) return;
    void this.engine.setProbeLevel(fl);
    const want: [ImageLayerId, 'fold' | 'gap' | 'loss' | 'floor' | 'accuracy', boolean][] = [
      ['fold', 'fold', layers.fold.on],
      // Offered only when the network has multilateration receivers (the Coverage panel hides the toggle else).
      ['accuracy', 'accuracy', layers.accuracy.on && this.coverage.mlat !== null],
      ['gap', 'gap', layers.gap.on],
      ['loss', 'loss', layers.loss.on && this.state.failed.length > 0],
      ['floor', 'floor', layers.floor.on],
    ];
    const jobs = want
      .filter(([id]) => !only || only.includes(id))
      .map(async ([id, layer, on]) => {
        if (!on) return this.map.setImage(id, null);
        const img = await this.engine.layerImage(layer, fl, kind);
        if (id === 'floor') this.floorLegend = img.legend;
        if (id === 'accuracy') this.accuracyLegend = img.legend;
        return this.map.setImage(id, img);
      });
    await Promise.all(jobs);
    if (this.compare && layers.compare.on) {
      await this.map.setImage('compare', await this.engine.layerImage('gained', fl, kind));
      await this.map.setImage('compare-lost', await this.engine.layerImage('lost', fl, kind));
    }
    this.renderLegend();
    // The read-out under a still cursor follows what is drawn (another level, a new run, another day).
    if (this.probeAt) this.probe(...this.probeAt);
  }

  floorLegend: { value: number; color: string; label?: string }[] = [];
  /** The accuracy layer's metre bands, as the engine drew them. */
  accuracyLegend: { value: number; color: string; label?: string }[] = [];
  reliefLegend: { value: number; color: string }[] = [];

  private renderLegend(): void {
    if (!this.state) return;
    const { layers, fl, kind } = this.state.view;
    const u = this.state.units;
    renderLegend(this.el.legend, {
      units: u,
      layers,
      levelTitle: this.coverage ? fmtLevel(fl, this.levelAltitudeM(fl), u) : null,
      foldTitle: this.coverage ? `${fmtLevel(fl, this.levelAltitudeM(fl), u)}, ${KIND_WORDS[kind]}` : null,
      anyFailed: this.state.failed.length > 0,
      floor: this.coverage ? this.floorLegend : [],
      accuracy: this.coverage?.mlat ? this.accuracyLegend : [],
      relief: this.reliefLegend,
      compared: this.compare ? this.compare.names : null,
      planned: this.plan !== null,
    });
  }

  // --------------------------------------------------------------------------------------------- outages

  async toggleFailure(siteId: string): Promise<void> {
    if (!this.coverage) {
      this.say('error', 'outage: found no coverage yet; expected a coverage run first (Coverage panel)');
      return;
    }
    if (!this.coverage.sensors.some((s) => s.siteId === siteId)) {
      this.say('info', `Site ${siteId} has no sensor in the network: failing it changes nothing.`);
      return;
    }
    const t0 = performance.now();
    const next = stateSetFailed(this.state, siteId, !this.state.failed.includes(siteId));
    try {
      await this.engine.setFailed(next.failed);
      this.state = next;
      this.refreshVectors();
      await this.refreshImages(['fold', 'gap', 'loss', 'floor']);
      // Drawn once the frame with the new images is painted (a task queued from the next animation frame runs
      // after that frame's paint); the figures for the panel come after.
      await new Promise<void>((res) => requestAnimationFrame(() => setTimeout(res, 0)));
      this.metrics.outageRedrawMs.push(performance.now() - t0);
      this.outage = await this.engine.outageTally();
    } catch (e) {
      this.fail(e);
      return;
    }
    this.setView(next);
    this.el.root.dataset.outage = String(this.metrics.outageRedrawMs.length);
  }

  // -------------------------------------------------------------------------------------------- map input

  private siteClicked(id: string): void {
    if (this.panel === 'outages') void this.toggleFailure(id);
    else if (this.panel === 'profile') {
      this.diagramPick = { siteId: id, typeId: this.diagramPick?.typeId ?? '' };
      this.render();
    } else {
      this.showPanel('sites');
      const row = this.el.panel.querySelector(`[data-row="${CSS.escape(id)}"]`);
      row?.scrollIntoView({ block: 'center' });
      row?.classList.add('flash');
    }
  }

  private async siteDragged(id: string, lon: number, lat: number): Promise<void> {
    let next: WorkState;
    try {
      next = moveSite(this.state, id, lon, lat);
    } catch (e) {
      this.fail(e);
      this.refreshVectors();
      return;
    }
    await this.commit(next, { recompute: true });
  }

  private mapClicked(lon: number, lat: number): void {
    if (this.mode === 'add-site') void this.addSiteAt(lon, lat);
    else if (this.mode === 'draw') {
      this.draft.push([Math.round(lon * 1e5) / 1e5, Math.round(lat * 1e5) / 1e5]);
      this.map.setDraft(this.draft);
      this.render();
    }
  }

  private async addSiteAt(lon: number, lat: number): Promise<void> {
    try {
      const r = addSite(this.state, lon, lat);
      if (await this.commit(r.state))
        this.say('info', `Added ${r.id} at ${fmtLonLat(lon, lat)}; edit it in the table.`);
    } catch (e) {
      this.fail(e);
    }
  }

  private azimuthDrag(lon: number, lat: number, done: boolean): void {
    const pick = this.diagramPick;
    const site = pick && this.state.doc.sites.features.find((f) => f.properties.id === pick.siteId);
    if (!site) {
      this.say(
        'error',
        'profile: found no site picked; expected a site (choose one in the panel or click it)',
      );
      return;
    }
    const [slon, slat] = site.geometry.coordinates;
    this.map.setAzimuth([
      [slon, slat],
      [lon, lat],
    ]);
    if (done) {
      const toRad = Math.PI / 180;
      const y = Math.sin((lon - slon) * toRad) * Math.cos(lat * toRad);
      const x =
        Math.cos(slat * toRad) * Math.sin(lat * toRad) -
        Math.sin(slat * toRad) * Math.cos(lat * toRad) * Math.cos((lon - slon) * toRad);
      const az = (((Math.atan2(y, x) / toRad) % 360) + 360) % 360;
      void this.drawDiagram(Math.round(az * 10) / 10);
    }
  }

  azimuth = 0;

  async drawDiagram(az: number): Promise<void> {
    const pick = this.diagramPick;
    if (!pick || !pick.typeId) {
      this.say('error', 'profile: found no site or sensor type chosen; expected both (in the panel)');
      return;
    }
    this.azimuth = az;
    try {
      // Drawn at the width it is shown at (the panel's), so its text keeps its size; saved at 960 × 560.
      this.diagramSvg = await this.engine.diagram(
        pick.siteId,
        pick.typeId,
        az,
        this.state.units,
        diagramSizeFor(this.el.panel.clientWidth),
      );
      if (this.diagramUrl) URL.revokeObjectURL(this.diagramUrl);
      this.diagramUrl = URL.createObjectURL(new Blob([this.diagramSvg], { type: 'image/svg+xml' }));
      this.showAzimuth(pick, az);
    } catch (e) {
      this.fail(e);
    }
    this.render();
  }

  /**
   * The diagram's azimuth on the map, typed or dragged: from the site along the azimuth to the type's
   * instrumented range (a great circle from @turf/destination; the diagram's own radial is a WGS84 geodesic, the
   * same line on screen to well under a pixel).
   */
  private showAzimuth(pick: { siteId: string; typeId: string }, az: number): void {
    if (this.panel !== 'profile') return;
    const site = this.state.doc.sites.features.find((f) => f.properties.id === pick.siteId);
    const type = this.state.doc.sensorTypes.find((t) => t.id === pick.typeId);
    if (!site || !type) return;
    const rangeKm = (type.instrumentedRangeNm * 1852) / 1000;
    const line: [number, number][] = [];
    for (let i = 0; i <= 48; i++)
      line.push(
        destination(site.geometry.coordinates, (rangeKm * i) / 48, az > 180 ? az - 360 : az, {
          units: 'kilometers',
        }).geometry.coordinates as [number, number],
      );
    this.map.setAzimuth(line);
  }

  /** Where the cursor was last over the map: the read-out is taken again there when the results change. */
  private probeAt: [number, number] | null = null;
  /** What the engine gave there: written again in the new units when the units change. */
  private probeLast: ProbeResult | null = null;

  /** Writes the read-out from the last probe, in the units now chosen. */
  showReadout(): void {
    const r = this.probeLast;
    if (!r || !this.state) return;
    const { fl } = this.state.view;
    const u = this.state.units;
    // The multilateration DRMS under the cursor where the accuracy layer of the level is drawn (metres always).
    const drms = r.mlatDrmsM;
    this.el.readout.textContent = this.el.readout.title =
      fmtReadout(r, u, this.coverage ? { level: fmtLevel(fl, this.levelAltitudeM(fl), u) } : null) +
      (this.coverage && drms !== undefined
        ? ` · multilateration accuracy ${fmtDrms(drms)} (1σ horizontal)`
        : '');
  }

  private probe(lon: number, lat: number): void {
    this.probeAt = [lon, lat];
    this.probeNext = [lon, lat];
    if (this.probeBusy || !this.engine) return;
    this.probeBusy = true;
    void (async () => {
      while (this.probeNext) {
        const [x, y] = this.probeNext;
        this.probeNext = null;
        this.probeLast = await this.engine.probe(x, y);
        this.showReadout();
      }
      this.probeBusy = false;
    })();
  }

  /** Sites and volumes on the map from the state. */
  refreshVectors(): void {
    if (!this.state) return;
    const inNet = new Set(this.state.network.map((r) => r.siteId));
    const planned = new Set(this.plan?.entries.map((e) => e.siteId) ?? []);
    const failed = new Set(this.state.failed);
    this.map.setSites(
      this.state.doc.sites.features.map((f) => ({
        id: f.properties.id,
        name: f.properties.name,
        lon: f.geometry.coordinates[0],
        lat: f.geometry.coordinates[1],
        existing: f.properties.existing,
        inNetwork: inNet.has(f.properties.id),
        failed: failed.has(f.properties.id),
        planned: planned.has(f.properties.id),
      })),
      this.panel === 'sites' || this.moveSites,
    );
    this.map.setVolumes({
      type: 'FeatureCollection',
      features: this.state.doc.volumes.map((v) => ({
        type: 'Feature',
        properties: { id: v.id, name: v.name },
        geometry: v.polygon,
      })),
    });
  }
}

/** A DRMS in metres for the read-out: whole metres, a decimal below 10 m. */
function fmtDrms(m: number): string {
  return `${m < 10 ? m.toFixed(1) : Math.round(m).toLocaleString('en')} m`;
}

/**
 * The diagram's size for a panel `panelPx` wide: its width (less the panel's padding), at least 480 px; taller when
 * narrower, since its legend and notes then take more rows.
 */
export function diagramSizeFor(panelPx: number): { width: number; height: number } {
  const width = Math.max(480, Math.min(1200, Math.round(panelPx - 26)));
  return { width, height: Math.round(560 + Math.max(0, 960 - width) * 0.35) };
}
