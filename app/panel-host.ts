/**
 * What a panel may ask of the app: the host the panels (app/panels/) and the modules they call (exports,
 * sites-import) are given, implemented by the App (app/app.ts). The panels import this file, never app.ts, so the
 * app builds its panels and the panels know only this interface (after MapLibre's controls, which take a map and
 * know nothing of the page around it; STYLE.md, "Panels as controls").
 *
 * Each panel takes a `Pick` of it naming only what it uses, so a panel's dependencies can be read off its
 * signature.
 */
import type {
  CompareSummary,
  CoverageSummary,
  OutageTable,
  OutageView,
  PlanSummary,
  StudySummary,
  TerrainSummary,
} from '../worker/runtime/engine.ts';
import type { Engine } from './engine-client.ts';
import type { ImageLayerId } from './map-view.ts';
import type { WorkState } from './state.ts';

export type PanelId =
  | 'ground'
  | 'sites'
  | 'types'
  | 'volumes'
  | 'coverage'
  | 'plan'
  | 'outages'
  | 'layouts'
  | 'profile'
  | 'files';

/** Map click mode: add a site, draw a volume vertex, pick an azimuth, or nothing. */
export type MapMode = 'none' | 'add-site' | 'draw' | 'azimuth';

/** Two saved layouts compared, with their names [A, B]. */
export type ComparedLayouts = CompareSummary & { names: [string, string] };

/** A job's progress: fraction done (0…1) and the stage's name. */
export type JobProgress = (f: number, stage: string) => void;

/** A message's action button. */
export interface MessageAction {
  label: string;
  run: () => void;
}

export interface PanelHost {
  // ---- the study and the engine's latest results
  readonly state: WorkState;
  readonly terrain: TerrainSummary | null;
  readonly study: StudySummary | null;
  readonly coverage: CoverageSummary | null;
  readonly outage: OutageView | null;
  /** Set by the Plan panel when a plan is made. */
  plan: PlanSummary | null;
  /** Set by the Plan and Outages panels (the N−1 table). */
  nMinus1: OutageTable | null;
  /** Set by the Layouts panel (Compare). */
  compare: ComparedLayouts | null;
  /** The true altitude (m AMSL) of a flight level on the study's day, as the engine computed it. */
  levelAltitudeM(fl: number): number | undefined;

  // ---- the engine and long jobs
  readonly engine: Engine;
  readonly poolSize: number;
  /** The label of the job running, or null. */
  readonly busy: string | null;
  /** Runs a long job with the progress bar and the cancel button; a failure shows its message (null returned). */
  job<T>(label: string, run: (progress: JobProgress) => Promise<T>): Promise<T | null>;
  runCoverage(): Promise<void>;

  // ---- edits and loading
  /** Replaces the state with an edited one once the engine accepts it; false (message shown) when refused. */
  commit(next: WorkState, opts?: { recompute?: boolean }): Promise<boolean>;
  /** View-only changes (units, layers, level, network, failures): no validation. */
  setView(next: WorkState): void;
  /** A new study and terrain, as loaded: results cleared, the map reset. */
  adoptLoaded(state: WorkState, terrain: TerrainSummary, study: StudySummary): void;
  save(): void;
  afterTerrain(): Promise<void>;
  /** The demo (radars), or its variant with ADS-B and multilateration receivers. */
  loadDemo(variant?: 'radars' | 'receivers'): Promise<void>;

  // ---- redraws
  /** Rebuilds the panel on show (and the legend, title and About). */
  render(): void;
  /** Sites and volumes on the map from the state. */
  refreshVectors(): void;
  /** Images of the shown level, for every layer that is on (or only those named). */
  refreshImages(only?: ImageLayerId[]): Promise<void>;

  // ---- messages above the panel
  say(kind: 'error' | 'info', lines: string | string[], action?: MessageAction): void;
  fail(e: unknown): void;

  // ---- panels and map input
  readonly panel: PanelId;
  showPanel(id: PanelId): void;
  readonly mode: MapMode;
  setMode(mode: MapMode): void;
  /** The vertices of the volume being drawn (lon, lat). */
  readonly draft: readonly [number, number][];
  toggleFailure(siteId: string): Promise<void>;

  // ---- the vertical coverage diagram (Profile panel)
  diagramPick: { siteId: string; typeId: string } | null;
  readonly diagramSvg: string | null;
  /** A blob URL of the diagram, shown as an image. */
  readonly diagramUrl: string | null;
  readonly azimuth: number;
  drawDiagram(azimuthDeg: number): Promise<void>;

  /** What the user typed in panel fields marked data-keep, by element id (panels are rebuilt on every change). */
  readonly form: Record<string, string>;
}
