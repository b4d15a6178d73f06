/**
 * The web app's engine: one object, living in a Web Worker, that holds everything heavy — the terrain, the study
 * (grid, ground, sensor models, volume cells), a cache of footprints per (site position, mast, sensor type) and
 * the current network — and answers the app with small things: summaries, tables, images, GeoJSON text.
 *
 * Jobs that take long (coverage, plan, compare) report progress, can be cancelled between sites and within a
 * site's sweep, and only ever replace the state when they finish, so quick calls (an outage toggle, a cursor
 * read-out, an image) can run while a job is in flight. Moving a site changes its footprint key: the next run
 * computes that site again and takes every other footprint from the cache.
 *
 * No DOM and no file access: the worker entry (engine-worker.ts) adds PNG encoding and the pool's transport, and
 * the tests drive this class directly in Node with an inline executor.
 */
import { InputError } from '../../shared/errors.ts';
import { fileLocator, parseScenario, type Scenario } from '../../shared/scenario.ts';
import { formatFl } from '../../shared/units.ts';
import { computeFootprints, type Candidate } from '../core/coverage.ts';
import { diagramData } from '../core/diagram.ts';
import { inlineExecutor, type Executor } from '../core/floor.ts';
import type { Footprint } from '../core/footprint.ts';
import type { GridGeo } from '../core/grid.ts';
import { KINDS, Network, type FoldKind } from '../core/network.ts';
import {
  difference,
  outageTable,
  servedMasks,
  tally,
  type LevelLoss,
  type SiteLoss,
} from '../core/outage.ts';
import {
  DEFAULT_SAFETY_TIME_LIMIT_MS,
  DEFAULT_SOLVER_NODES,
  solvePlan,
  type PlanInstance,
  type PlanOptions,
  type PlanResult,
} from '../core/plan.ts';
import {
  cellArcSecThatFits,
  estimateRefusal,
  estimateRun,
  footprintBytes,
  GiB,
  heldAfterCoverage,
  MemoryLedger,
  studyBlame,
  studyRun,
  tileFileRefusal,
  tileRefusal,
} from '../core/memory-estimate.ts';
import { Terrain, type DemTile } from '../core/terrain.ts';
import { cellsAtLevel, meets, volumeStats, type VolumeLevelStats } from '../core/volumes.ts';
import { renderDiagramSvg } from '../io/diagram-svg.ts';
import type { Provenance } from '../io/provenance.ts';
import { buildReportHtml, type ReportPlan } from '../io/report-html.ts';
import { buildReportModel } from '../io/report-model.ts';
import { featureCollection, stringifyGeoJson } from '../io/geojson.ts';
import { readDemTile } from '../io/geotiff-read.ts';
import { levelLayers, maskLayer } from '../io/layers.ts';
import {
  mlatLevelMap,
  mlatNetwork,
  mlatOutageOf,
  mlatReport,
  mlatStudyOf,
  type MlatNetwork,
  type MlatSiteLoss,
} from '../io/mlat-figures.ts';
import { mlatAccuracyImage, mlatLegend } from '../io/mlat-image.ts';
import {
  foldImage,
  foldLegend,
  floorLevelImage,
  floorStep,
  GAINED_COLOR,
  GAP_COLOR,
  LOSS_COLOR,
  maskImage,
  reliefImage,
  type LegendStop,
  type RasterImage,
} from '../io/render.ts';
import {
  analysisGrid,
  buildDemand,
  DEMAND_POINT_BYTES,
  candidate,
  checkNetworkLevels,
  layerMeta,
  levelAltitudesM,
  modelWarnings,
  openStudy,
  planInstance,
  studyConventions,
  studyDay,
  studyNetwork,
  studyTargets,
  terrainBounds,
  type Study,
  type StudyConventions,
  type StudyScenario,
} from '../io/study.ts';

export interface SensorRef {
  siteId: string;
  typeId: string;
}

export type ProgressFn = (fraction: number, stage: string) => void;

export class Cancelled extends Error {
  constructor() {
    super('cancelled');
    this.name = 'Cancelled';
  }
}

export interface TileSummary {
  name: string;
  width: number;
  height: number;
  west: number;
  south: number;
  east: number;
  north: number;
  /** Pixel size: arc seconds for lon/lat tiles, metres for projected ones. */
  pixel: { x: number; y: number; unit: 'arcsec' | 'm' };
  crs: string;
  /** The tile's georeferencing (its CRS included): what the app's new study is built from (io/new-study.ts). */
  geo: GridGeo;
  voidsFilled: number;
  minM: number;
  maxM: number;
  warnings: string[];
}

export interface TerrainSummary {
  tiles: TileSummary[];
  bounds: { west: number; south: number; east: number; north: number };
  width: number;
  height: number;
  /** Cells no tile covers (NaN in the mosaic). */
  unknownCells: number;
  shared: boolean;
}

export interface StudySummary {
  grid: { width: number; height: number; west: number; north: number; cellDeg: number };
  sites: number;
  sensorTypes: number;
  volumes: { id: string; name: string; cells: number }[];
  /** Whether the network computed before still stands (no sensor of it changed). */
  hasCoverage: boolean;
  /**
   * What results of this scenario mean (worker/io/study.ts studyConventions) at the scenario's flight levels: the
   * target, the day and each level's true altitude on it, k, what "seen" means, the types' spec conventions.
   */
  conventions: StudyConventions;
  /** Warnings of the sensor models (leftover fields), one line each. */
  warnings: string[];
}

export interface CoverageSummary {
  flightLevels: number[];
  sensors: SensorRef[];
  /** Footprints computed in this run, and taken from the cache. */
  computed: number;
  cached: number;
  volumes: VolumeLevelStats[];
  /** The conventions of this run (its levels, target, day, k), as the CLI's summary.json states them. */
  conventions: StudyConventions;
  /** Warnings of the sensor models, as the CLI prints them. */
  warnings: string[];
  timingsMs: { footprints: number; network: number; total: number };
  /** The network's multilateration receivers (the accuracy layer is offered only then); null without any. */
  mlat: MlatInfo | null;
}

/** What the network's multilateration fix rests on (worker/io/mlat-figures.ts). */
export interface MlatInfo {
  /** Receivers of kind `mlat` in the network (failed ones included). */
  receivers: number;
  /** Receivers a fix needs (3 with the altitude reported, else 4). */
  minReceivers: number;
  altitudeKnown: boolean;
}

/**
 * The N−1 table: one row per site, worst first (core/outage.ts). `accuracy`, only when the network has `mlat`
 * receivers and a volume bounds the accuracy: per site with receivers, what its outage alone costs the bounds,
 * worst first (io/mlat-figures.ts). A named property on the array, so that every holder of a `SiteLoss[]` takes
 * the table as before; the worker's messages (structured clone) keep it, JSON.stringify does not.
 */
export type OutageTable = SiteLoss[] & { accuracy?: MlatSiteLoss[] };

export interface OutageView {
  failed: string[];
  demandWeightLost: number;
  areaKm2Lost: number;
  byVolume: LevelLoss[];
  /** Volume area losing its requirement at each level (km²; a cell in two volumes counts once). */
  lostKm2ByLevel: number[];
  ms: number;
}

export interface PlanRequest {
  /** null: no budget (cheapest plan meeting every volume); undefined: the scenario's budget. */
  budget?: number | null;
  /** Sensors that must stay in (e.g. the existing ones). */
  keep: SensorRef[];
  excludedSites: string[];
  /** The MILP's work limit in branch-and-bound nodes (default: the CLI's, DEFAULT_SOLVER_NODES). */
  solverNodes?: number;
  /** Safety time limit (default DEFAULT_SAFETY_TIME_LIMIT_MS); a plan it stops may differ on another machine. */
  timeLimitMs?: number;
}

export interface PlanSummary {
  mode: 'cover' | 'budget';
  /** What the plan spends anew (the objective): existing sites and sensors already standing count 0. */
  cost: number;
  /** The same figure under its plain name (plan.json's `newSpend`). */
  newSpend: number;
  /** The kept sensors already standing (on existing sites), at their type costs: shown apart, not in `cost`. */
  existingValue: number;
  lowerBound: number;
  gapPct: number;
  demandMet: boolean;
  coveredWeight: number;
  totalWeight: number;
  method: string;
  /** What stopped the solver short: nothing, its work limit, or the safety time limit (see PlanResult). */
  solverStop: PlanResult['solverStop'];
  /**
   * The plan's sensors, each with its share of `cost` (its type, 0 when already standing, and its site's cost on
   * the site's first entry, 0 for an existing site: the entries sum to `cost`, as in plan.json).
   */
  entries: { siteId: string; typeId: string; cost: number; existingSensor: boolean }[];
  volumes: VolumeLevelStats[];
  unmeetable: {
    /** The volume of the first demand point in this class (as plan.json names it). */
    volumeId?: string;
    volumeName?: string;
    kind: string;
    required: number;
    achievable: number;
    points: number;
  }[];
  /**
   * When volumes bound the multilateration accuracy: the share of the bounded volume-levels (by area weight) the
   * plan meets, the share no allowed receivers can meet, and the receivers the plan added for accuracy alone.
   */
  mlatAccuracy?: { metPct: number; unmeetablePct: number; addedForAccuracy: SensorRef[] };
  log: string[];
  stageMs: Record<string, number>;
}

export interface CompareSide {
  sensors: SensorRef[];
  cost: number;
  volumes: VolumeLevelStats[];
}

export interface CompareSummary {
  a: CompareSide;
  b: CompareSide;
  gained: { demandWeight: number; areaKm2: number; byVolume: LevelLoss[] };
  lost: { demandWeight: number; areaKm2: number; byVolume: LevelLoss[] };
}

export interface ProbeResult {
  lon: number;
  lat: number;
  groundM: number | null;
  /** The exact network floor of the cell under the point (m AMSL; null where no sensor sees it). */
  floorM: number | null;
  /** The floor map's step it is drawn in: the lowest computed level at or above it ("FL050"), or "above FL460". */
  floorStep?: string | null;
  fold: Record<FoldKind, number> | null;
  /**
   * The 1σ horizontal DRMS of the multilateration fix at the level shown (m), where the accuracy map of that level
   * has been drawn (the layer on) and gives a fix; absent otherwise.
   */
  mlatDrmsM?: number;
}

export type ImageLayer = 'fold' | 'gap' | 'loss' | 'floor' | 'accuracy' | 'gained' | 'lost';

export interface LayerImage {
  image: RasterImage;
  legend: LegendStop[];
}

interface Current {
  network: Network;
  sensors: SensorRef[];
  flightLevels: number[];
  altitudes: number[];
  /** Per (volume|FL) served cells with every site up, and the any-kind fold with every site up. */
  baseServed: Map<string, Uint8Array>;
  baseAny: Uint16Array[];
  failed: Set<string>;
  /** Per level, the cells lost to the failed sites, once computed (empty arrays until then). */
  lost: Uint8Array[];
  /** Per (volume|FL), the cells served with every site up and not now: what the failed sites cost (lazy). */
  lostServed: Map<string, Uint8Array> | null;
  /** The network floor (m AMSL per cell, NaN where unseen) of the sites up now, once computed. */
  floor: Float32Array | null;
  /** The multilateration receivers of the network (every site up); null without any. */
  mlat: MlatNetwork | null;
  /** Per level, the accuracy map (1σ horizontal DRMS, m) of the receivers up now, once computed. */
  accuracy: (Float32Array | null)[];
}

/**
 * The footprint cache's margin over the memory estimate's footprints (every allowed (site, type) pair once,
 * worker/core/memory-estimate.ts): the cache holds at most (1 + margin) × that part, least recently used out first,
 * so moving a site back is often a cache hit while the app stays within the estimate plus this margin.
 */
export const FOOTPRINT_CACHE_MARGIN = 0.25;

/** A footprint's bytes as the estimate counts them (its cells and targets). */
const bytesOf = (fp: Footprint) => footprintBytes(fp.lo.length, 1 + (fp.byTarget?.length ?? 0));

/**
 * The memory the app's engine may plan for (refuse before allocating, as the CLI's --max-memory): the smaller of
 * 2 GiB and half this device's memory where the browser tells it (navigator.deviceMemory, in GiB, rounded by the
 * browser and at most 8).
 */
export function appMemoryLimitBytes(): number {
  const nav = (globalThis as { navigator?: { deviceMemory?: unknown } }).navigator;
  const device =
    typeof nav?.deviceMemory === 'number' && nav.deviceMemory > 0 ? nav.deviceMemory * GiB : Infinity;
  return Math.min(2 * GiB, device / 2);
}

/** How the app's limit is set, in its refusals. */
const APP_MEMORY_KNOB = "the app's memory limit: the smaller of 2 GiB and half this device's memory";

/** A sensor as a cache key: everything its footprint depends on. */
function footprintKey(c: Candidate, study: Study, weather: boolean): string {
  const s = study.loaded.scenario;
  const g = study.grid;
  return JSON.stringify([
    c.site.id,
    c.site.lon,
    c.site.lat,
    c.site.mastHeightM,
    c.site.tiltDeg ?? 0,
    c.model.spec,
    c.target,
    study.targets,
    s.multipath,
    s.earth.kFactor,
    s.maxRangeKm ?? 400,
    weather,
    [g.width, g.height, g.originX, g.originY, g.pixelX, g.pixelY],
  ]);
}

export class Engine {
  private tiles: DemTile[] = [];
  private terrain: Terrain | null = null;
  private terrainSummary: TerrainSummary | null = null;
  private study: Study | null = null;
  /** Footprints by key, least recently used first (Map order); their bytes as the estimate counts them. */
  private readonly footprints = new Map<string, Footprint>();
  private footprintCacheBytes = 0;
  private current: Current | null = null;
  private compared: { gained: Map<string, Uint8Array>; lost: Map<string, Uint8Array> } | null = null;
  private cancelFlag = 0;
  private jobSeq = 0;
  /** The last plan, its budget, and the scenario it was made on (as JSON): the report includes it while current. */
  private lastPlan: { scenarioKey: string; summary: PlanSummary; budget: number | undefined } | null = null;

  constructor(
    /** Where floors run (a pool of workers); rebuilt when the terrain changes. */
    private executorFor: (terrain: Terrain) => Promise<Executor> = async (t) => inlineExecutor(t),
    private readonly options: {
      shared?: boolean;
      highs?: PlanOptions['highs'];
      /** Runs the planner elsewhere (a pool worker); default: here. */
      solve?: (inst: PlanInstance, opts: PlanOptions) => Promise<PlanResult>;
      /** The memory a study may need (default appMemoryLimitBytes()); past it, a scenario or tile is refused. */
      maxMemoryBytes?: number;
    } = {},
  ) {}

  private executor: Executor | null = null;

  // ----------------------------------------------------------------------------------------------- terrain

  /**
   * Decodes GeoTIFF tiles and makes them the terrain (added to the loaded ones unless `replace`). All tiles are
   * decoded, and the scenario (when given) checked against the new terrain, before anything changes: one bad
   * file, or a site that would fall outside, leaves the current terrain as it was.
   */
  async loadTiles(
    files: { name: string; buffer: ArrayBuffer }[],
    replace: boolean,
    scenario?: { input: unknown; display: string },
    /** Per tile decoded (fraction 0…0.9 of the load), then the mosaic and the study. */
    progress?: ProgressFn,
  ): Promise<{ terrain: TerrainSummary; study: StudySummary | null }> {
    if (files.length === 0)
      throw new InputError('terrain files', 'no files', 'one or more GeoTIFF DEM tiles');
    const decoded: DemTile[] = [];
    const limit = this.memoryLimitBytes();
    for (const [i, f] of files.entries()) {
      progress?.((0.9 * i) / files.length, `decoding tile ${i + 1} of ${files.length} (${f.name})`);
      // Refused at its header, before its pixels are decoded, when it would not fit.
      decoded.push(
        await readDemTile(f.buffer, f.name, (h) => {
          const refusal = tileRefusal(
            { name: f.name, fileBytes: f.buffer.byteLength, ...h },
            limit,
            APP_MEMORY_KNOB,
          );
          if (refusal) throw refusal;
        }),
      );
    }
    progress?.(0.9, scenario ? 'joining the tiles, placing the study' : 'joining the tiles');
    const names = new Set(decoded.map((t) => t.name));
    const tiles = replace ? decoded : [...this.tiles.filter((t) => !names.has(t.name)), ...decoded];
    const terrain = Terrain.fromTiles(tiles, { shared: this.options.shared ?? false });
    const study = scenario ? this.makeStudy(scenario.input, scenario.display, terrain) : null;
    const executor = await this.executorFor(terrain);
    this.tiles = tiles;
    this.terrain = terrain;
    this.executor = executor;
    this.study = null;
    this.current = null;
    this.compared = null;
    this.lastPlan = null;
    this.footprints.clear();
    this.footprintCacheBytes = 0;
    this.terrainSummary = summariseTerrain(terrain, tiles, this.options.shared ?? false);
    return { terrain: this.terrainSummary, study: study ? this.adopt(study) : null };
  }

  /** The memory a study may need, bytes (refuse before allocating). */
  memoryLimitBytes(): number {
    return this.options.maxMemoryBytes ?? appMemoryLimitBytes();
  }

  /** Throws when a tile file of `bytes` could not even be read within the limit (before it is read). */
  checkTileFile(name: string, bytes: number): void {
    const refusal = tileFileRefusal(name, bytes, this.memoryLimitBytes(), APP_MEMORY_KNOB);
    if (refusal) throw refusal;
  }

  /** Names of the tiles the terrain is made of. */
  tileNames(): string[] {
    return this.tiles.map((t) => t.name);
  }

  terrainInfo(): TerrainSummary | null {
    return this.terrainSummary;
  }

  reliefImage(maxSide = 1400): LayerImage & { minM: number; maxM: number } {
    const t = this.needTerrain();
    const r = reliefImage(t, terrainBounds(t), maxSide);
    return { image: r.image, legend: r.legend, minM: r.minM, maxM: r.maxM };
  }

  private needTerrain(): Terrain {
    if (!this.terrain)
      throw new InputError('terrain', 'no terrain loaded', 'GeoTIFF DEM tiles (Ground panel)');
    return this.terrain;
  }

  private needStudy(): Study {
    if (!this.study)
      throw new InputError('scenario', 'no scenario on the terrain yet', 'a scenario (load one)');
    return this.study;
  }

  // ---------------------------------------------------------------------------------------------- scenario

  /**
   * Validates the scenario (inline sites and sensor types) against the schema and the terrain and makes it the
   * study. A bad scenario throws and leaves the previous one in place.
   */
  setScenario(input: unknown, display: string): StudySummary {
    return this.adopt(this.makeStudy(input, display, this.needTerrain()));
  }

  private makeStudy(input: unknown, display: string, terrain: Terrain): Study {
    const scenario: Scenario = parseScenario(input, display);
    const loaded: StudyScenario = { file: display, scenario, locate: fileLocator(display) };
    this.checkStudyMemory(loaded, terrain);
    return openStudy(loaded, terrain, 0);
  }

  /**
   * Refuse before allocating (worker/core/memory-estimate.ts, the CLI's estimate): the study's grid, every allowed
   * (site, type) footprint and two horizons against the limit, before the grid's ground exists. The message names
   * the input that drives the size and, for the grid, the finest cell size that would fit.
   */
  private checkStudyMemory(loaded: StudyScenario, terrain: Terrain): void {
    const s = loaded.scenario;
    const limit = this.memoryLimitBytes();
    const targets = studyTargets(s).targets.length;
    const grid = analysisGrid(loaded, terrain);
    const run = studyRun(s, grid, terrain, targets);
    const est = estimateRun(run.shape);
    if (est.bytes <= limit) return;
    const fits = cellArcSecThatFits(s.grid.cellArcSec, limit, (c) => {
      const at = { ...s, grid: { ...s.grid, cellArcSec: c } };
      return studyRun(at, analysisGrid({ scenario: at }, terrain), terrain, targets).shape;
    });
    const knob =
      `${APP_MEMORY_KNOB}; ` +
      (fits !== null
        ? `grid.cellArcSec of ${fits}″ or coarser would fit`
        : 'no cell size would fit: fewer or smaller terrain tiles, a shorter maxRangeKm');
    const blame = studyBlame(loaded.locate, s, grid, run, 'the terrain tiles (Ground panel)');
    throw estimateRefusal(est, limit, blame, knob)!;
  }

  private adopt(study: Study): StudySummary {
    const scenario = study.loaded.scenario;
    this.study = study;
    this.trimFootprints(new Set());
    // The network stays only if every sensor of it still exists with the same footprint inputs: otherwise the
    // app runs coverage again (and only what changed is computed).
    if (this.current && !this.current.sensors.every((r) => this.cachedFootprint(r) !== null))
      this.current = null;
    else if (this.current) this.rebuildCurrent(this.current.sensors, this.current.flightLevels);
    this.compared = null;
    return {
      grid: {
        width: study.grid.width,
        height: study.grid.height,
        west: study.grid.originX,
        north: study.grid.originY,
        cellDeg: study.grid.pixelX,
      },
      sites: scenario.sites.length,
      sensorTypes: scenario.sensorTypes.length,
      volumes: scenario.volumes.map((v, i) => ({
        id: v.id,
        name: v.name,
        cells: study.volumeMasks[i].reduce((a, b) => a + b, 0),
      })),
      hasCoverage: this.current !== null,
      conventions: studyConventions(study, scenario.flightLevels),
      warnings: modelWarnings(study),
    };
  }

  /**
   * The conventions (worker/io/study.ts studyConventions) at flight levels `fls`: by default the levels of the
   * network computed last, or the scenario's.
   */
  conventions(fls?: number[]): StudyConventions {
    const study = this.needStudy();
    const levels =
      fls && fls.length ? this.levelsOf(fls) : (this.current?.flightLevels ?? this.levelsOf(undefined));
    return studyConventions(study, levels);
  }

  private candidateOf(r: SensorRef, where: string): Candidate {
    return candidate(this.needStudy(), r.siteId, r.typeId, where);
  }

  private cachedFootprint(r: SensorRef): Footprint | null {
    const study = this.needStudy();
    let c: Candidate;
    try {
      c = this.candidateOf(r, 'sensors');
    } catch {
      return null;
    }
    return this.footprints.get(footprintKey(c, study, false)) ?? null;
  }

  // ------------------------------------------------------------------------------------------------- jobs

  /** Stops the running job at its next check; its partial results stay in the footprint cache. */
  cancel(): void {
    this.cancelFlag = ++this.jobSeq;
  }

  /**
   * A job's check, called between pieces: throws Cancelled once `cancel()` was called after the job started, or
   * once the scenario changed under it (its results would belong to the old one; the app runs it again).
   */
  private startJob(): () => void {
    const mine = ++this.jobSeq;
    const study = this.study;
    return () => {
      if (this.cancelFlag >= mine || this.study !== study) throw new Cancelled();
    };
  }

  /** Footprints of `refs` (in order), computing the missing ones site by site. */
  private async footprintsOf(
    refs: readonly SensorRef[],
    check: () => void,
    progress: ProgressFn | undefined,
    share: [number, number] = [0, 1],
  ): Promise<{ footprints: Footprint[]; computed: number }> {
    const study = this.needStudy();
    const exec = this.executor ?? inlineExecutor(this.needTerrain());
    const s = study.loaded.scenario;
    const cands = refs.map((r, i) => this.candidateOf(r, `sensors[${i}]`));
    const keys = cands.map((c) => footprintKey(c, study, false));
    const missing = new Map<string, { cand: Candidate; key: string }[]>();
    const mine = new Set(keys);
    cands.forEach((c, i) => {
      const hit = this.footprints.get(keys[i]);
      if (hit) {
        this.remember(keys[i], hit, mine); // now the most recently used
        return;
      }
      const list = missing.get(c.site.id) ?? [];
      if (!list.some((x) => x.key === keys[i])) list.push({ cand: c, key: keys[i] });
      missing.set(c.site.id, list);
    });
    const groups = [...missing.values()];
    let done = 0;
    const [from, span] = share;
    for (const group of groups) {
      check();
      const r = await computeFootprints(
        study.terrain,
        {
          grid: study.grid,
          ground: study.ground,
          candidates: group.map((g) => g.cand),
          kFactor: s.earth.kFactor,
          maxRangeM: (s.maxRangeKm ?? 400) * 1000,
          extraTargets: study.targets.slice(1),
          multipath: s.multipath === 'auto',
        },
        exec,
        {
          onProgress: (f, stage) => {
            check();
            progress?.(from + (span * (done + f)) / groups.length, stage);
          },
        },
      );
      // Finished work is kept even when the job was cancelled meanwhile.
      r.footprints.forEach((fp, i) => this.remember(group[i].key, fp, mine));
      check();
      done++;
      progress?.(from + (span * done) / groups.length, `${group[0].cand.site.name}: done`);
    }
    const footprints = keys.map((k) => this.footprints.get(k)!);
    return { footprints, computed: groups.reduce((a, g) => a + g.length, 0) };
  }

  /** Puts a footprint last (most recently used), then trims the cache, never dropping the running job's `keep`. */
  private remember(key: string, fp: Footprint, keep: ReadonlySet<string>): void {
    const old = this.footprints.get(key);
    if (old) {
      this.footprints.delete(key);
      this.footprintCacheBytes -= bytesOf(old);
    }
    this.footprints.set(key, fp);
    this.footprintCacheBytes += bytesOf(fp);
    this.trimFootprints(keep);
  }

  /**
   * The cache's bound, bytes: (1 + FOOTPRINT_CACHE_MARGIN) × the estimate's footprints of the study (every
   * allowed (site, type) pair, each with every target: worker/core/memory-estimate.ts studyRun, footprintBytes).
   * A job needs at most one footprint per pair (a site has one position at a time), so its own always fit.
   */
  footprintCacheLimitBytes(): number {
    const study = this.study;
    if (!study) return 0;
    const s = study.loaded.scenario;
    const pairs = studyRun(s, study.grid, study.terrain, study.targets.length).pairs;
    const per = footprintBytes(study.grid.width * study.grid.height, study.targets.length);
    return (1 + FOOTPRINT_CACHE_MARGIN) * pairs * per;
  }

  /** What the footprint cache holds: entries and bytes (as the estimate counts them), and its bound. */
  footprintCacheInfo(): { entries: number; bytes: number; limitBytes: number } {
    return {
      entries: this.footprints.size,
      bytes: this.footprintCacheBytes,
      limitBytes: this.footprintCacheLimitBytes(),
    };
  }

  /** Drops the least recently used footprints, except `keep`, until the cache is within its bound. */
  private trimFootprints(keep: ReadonlySet<string>): void {
    const limit = this.footprintCacheLimitBytes();
    if (this.footprintCacheBytes <= limit) return;
    for (const [key, fp] of this.footprints) {
      if (this.footprintCacheBytes <= limit) break;
      if (keep.has(key)) continue;
      this.footprints.delete(key);
      this.footprintCacheBytes -= bytesOf(fp);
    }
  }

  private levelsOf(fls: readonly number[] | undefined): number[] {
    const s = this.needStudy().loaded.scenario;
    const list = [...new Set(fls && fls.length > 0 ? fls : s.flightLevels)].sort((a, b) => a - b);
    for (const fl of list) {
      if (!Number.isInteger(fl) || fl < 0 || fl > 600)
        throw new InputError('flight levels', String(fl), 'whole flight levels from 0 to 600');
    }
    checkNetworkLevels(s, list, this.needStudy().loaded.locate, 'flight levels');
    return list;
  }

  /** Coverage of a network: its footprints (cached where possible), the network and the volume statistics. */
  async coverage(
    sensors: SensorRef[],
    flightLevels: number[] | undefined,
    progress?: ProgressFn,
  ): Promise<CoverageSummary> {
    const check = this.startJob();
    const t0 = performance.now();
    const study = this.needStudy();
    const fls = this.levelsOf(flightLevels);
    const uniq = dedupe(sensors);
    progress?.(0, 'footprints');
    const { computed } = await this.footprintsOf(uniq, check, progress, [0, 0.9]);
    check();
    const t1 = performance.now();
    progress?.(0.92, 'network');
    const failed = this.current?.failed ?? new Set<string>();
    this.rebuildCurrent(uniq, fls, failed);
    const t2 = performance.now();
    const s = study.loaded.scenario;
    const volumes = volumeStats(
      this.current!.network,
      s.volumes,
      study.volumeMasks,
      fls,
      study.grid,
      study.volumeTargets,
      study.ground,
    );
    progress?.(1, 'done');
    return {
      flightLevels: fls,
      sensors: uniq,
      computed,
      cached: uniq.length - computed,
      volumes,
      conventions: studyConventions(study, fls, this.current!.altitudes),
      warnings: modelWarnings(study),
      mlat: this.mlatInfo(),
      timingsMs: {
        footprints: Math.round(t1 - t0),
        network: Math.round(t2 - t1),
        total: Math.round(performance.now() - t0),
      },
    };
  }

  private rebuildCurrent(sensors: SensorRef[], fls: number[], failed = this.current?.failed): void {
    const study = this.needStudy();
    const fps = sensors.map((r) => this.cachedFootprint(r)!);
    const altitudes = levelAltitudesM(study.loaded.scenario, fls);
    const network = studyNetwork(study, fls, fps);
    const s = study.loaded.scenario;
    const baseServed = servedMasks(
      network,
      s.volumes,
      study.volumeMasks,
      fls,
      study.volumeTargets,
      study.ground,
    );
    const baseAny = fls.map((_, f) => network.foldOf('any', f).slice());
    this.current = {
      network,
      sensors,
      flightLevels: fls,
      altitudes,
      baseServed,
      baseAny,
      failed: new Set(),
      lost: fls.map(() => new Uint8Array(0)),
      lostServed: null,
      floor: null,
      mlat: mlatNetwork(
        mlatStudyOf(study),
        sensors.map((r, i) => this.candidateOf(r, `sensors[${i}]`)),
        fps,
      ),
      accuracy: fls.map(() => null),
    };
    const keep = [...(failed ?? [])].filter((id) => network.siteIds().includes(id));
    if (keep.length > 0) this.setFailed(keep);
  }

  /** The current network's multilateration receivers (null without a network or without any). */
  mlatInfo(): MlatInfo | null {
    const m = this.current?.mlat;
    return m
      ? { receivers: m.receivers.length, minReceivers: m.minReceivers, altitudeKnown: m.altitudeKnown }
      : null;
  }

  private needCurrent(): Current {
    if (!this.current) throw new InputError('coverage', 'no coverage computed yet', 'a coverage run first');
    return this.current;
  }

  // ------------------------------------------------------------------------------------------------ outage

  /**
   * Fails exactly these sites (the others come back): only the network's counts change here (incrementally, from
   * the cached footprints), so the map can be redrawn at once; `outageTally` then sums up what is lost.
   */
  setFailed(siteIds: string[]): { failed: string[]; ms: number } {
    const t0 = performance.now();
    const cur = this.needCurrent();
    const want = new Set(siteIds.filter((id) => cur.network.siteIds().includes(id)));
    for (const id of cur.network.siteIds()) {
      const on = !want.has(id);
      if (cur.network.isSiteActive(id) !== on) cur.network.setSite(id, on);
    }
    cur.failed = want;
    cur.lost = cur.flightLevels.map(() => new Uint8Array(0));
    cur.lostServed = null;
    cur.floor = null;
    cur.accuracy = cur.flightLevels.map(() => null);
    return { failed: [...want], ms: performance.now() - t0 };
  }

  /**
   * Per (volume|FL), the cells whose volume's requirement was met with every site up and is not now: the one
   * set every outage figure and the loss layer are counted from (through `tally`, as the N−1 table is).
   */
  private lostServed(): Map<string, Uint8Array> {
    const cur = this.needCurrent();
    if (cur.lostServed) return cur.lostServed;
    const study = this.needStudy();
    const now = servedMasks(
      cur.network,
      study.loaded.scenario.volumes,
      study.volumeMasks,
      cur.flightLevels,
      study.volumeTargets,
      study.ground,
    );
    cur.lostServed = difference(cur.baseServed, now);
    return cur.lostServed;
  }

  /**
   * The cells of one level where a volume's requirement, met with every site up, is no longer met (empty when no
   * site is failed): the union over the volumes of `lostServed` at that level. Computed when first asked for.
   */
  private lostAt(f: number): Uint8Array {
    const cur = this.needCurrent();
    const study = this.needStudy();
    const cells = study.grid.width * study.grid.height;
    if (cur.failed.size === 0) return new Uint8Array(cells);
    if (cur.lost[f].length) return cur.lost[f];
    const fl = cur.flightLevels[f];
    const m = new Uint8Array(cells);
    for (const [k, d] of this.lostServed()) if (Number(k.split('|')[1]) === fl) orInto(m, d);
    cur.lost[f] = m;
    return m;
  }

  /**
   * What the failed sites cost the network against all sites up: per volume and level, per level and over all
   * levels, each counted by `tally` from `lostServed` (the N−1 table counts with the same function).
   */
  outageTally(): OutageView {
    const t0 = performance.now();
    const cur = this.needCurrent();
    const study = this.needStudy();
    const s = study.loaded.scenario;
    if (cur.failed.size === 0) {
      return {
        failed: [],
        demandWeightLost: 0,
        areaKm2Lost: 0,
        byVolume: [],
        lostKm2ByLevel: cur.flightLevels.map(() => 0),
        ms: performance.now() - t0,
      };
    }
    const t = tally(this.lostServed(), s.volumes, study.grid);
    const lostKm2ByLevel = cur.flightLevels.map(
      (fl) => t.byLevel.find((x) => x.flightLevel === fl)?.areaKm2 ?? 0,
    );
    return {
      failed: [...cur.failed],
      demandWeightLost: t.demandWeight,
      areaKm2Lost: t.unionAreaKm2,
      byVolume: t.byVolume,
      lostKm2ByLevel,
      ms: performance.now() - t0,
    };
  }

  /**
   * N−1: what each site's failure alone costs the given network (default: the current one), every other site up.
   * With `mlat` receivers in the network and a volume bounding the accuracy, the table also carries `accuracy`:
   * per site with receivers, the area whose fix meets its bound with every receiver up and not with that site
   * down (io/mlat-figures.ts `mlatOutageLosses`, as `airshade outage` writes outage.json mlatAccuracyLosses).
   */
  async outageTable(sensors?: SensorRef[], progress?: ProgressFn): Promise<OutageTable> {
    const check = this.startJob();
    const study = this.needStudy();
    const s = study.loaded.scenario;
    const cur = this.current;
    const refs = dedupe(sensors ?? cur?.sensors ?? []);
    if (refs.length === 0) throw new InputError('sensors', 'an empty network', 'one or more sensors');
    const fls = cur?.flightLevels ?? s.flightLevels;
    const { footprints } = await this.footprintsOf(refs, check, progress, [0, 0.9]);
    check();
    const network = studyNetwork(study, fls, footprints);
    progress?.(0.93, 'outage table');
    const table: OutageTable = outageTable(
      network,
      s.volumes,
      study.volumeMasks,
      fls,
      study.grid,
      undefined,
      undefined,
      study.volumeTargets,
      study.ground,
    );
    if (!s.volumes.some((v) => v.requiredMlatAccuracyM !== undefined)) return table;
    check();
    progress?.(0.96, 'accuracy bounds, one receiver site down at a time');
    const accuracy = mlatOutageOf(
      mlatStudyOf(study),
      refs.map((r, i) => this.candidateOf(r, `sensors[${i}]`)),
      footprints,
      fls,
      levelAltitudesM(s, fls),
    );
    if (accuracy) table.accuracy = accuracy;
    return table;
  }

  // -------------------------------------------------------------------------------------------------- plan

  async plan(req: PlanRequest, progress?: ProgressFn): Promise<PlanSummary> {
    const check = this.startJob();
    const study = this.needStudy();
    const s = study.loaded.scenario;
    const all: SensorRef[] = [];
    for (const f of s.sites) {
      if (req.excludedSites.includes(f.properties.id)) continue;
      for (const t of f.properties.allowedTypes ?? s.sensorTypes.map((x) => x.id))
        all.push({ siteId: f.properties.id, typeId: t });
    }
    for (const k of req.keep) {
      if (req.excludedSites.includes(k.siteId))
        throw new InputError('plan: keep', `site ${k.siteId}`, 'sensors kept on sites that are not excluded');
      if (!all.some((r) => r.siteId === k.siteId && r.typeId === k.typeId)) all.push(k);
    }
    if (all.length === 0) throw new InputError('plan', 'no candidate sensors', 'sites that are not excluded');
    const { footprints } = await this.footprintsOf(all, check, progress, [0, 0.6]);
    check();
    progress?.(0.6, 'demand points');
    const fls = s.flightLevels;
    const altitudes = levelAltitudesM(study.loaded.scenario, fls);
    const demand = buildDemand(study, fls);
    // The plan's arrays against the app's limit as their sizes become known (as the CLI's plan counts them).
    const run = studyRun(s, study.grid, study.terrain, studyTargets(s).targets.length);
    const memory = new MemoryLedger({
      held: heldAfterCoverage(estimateRun(run.shape)),
      limit: this.memoryLimitBytes(),
      where: studyBlame(study.loaded.locate, s, study.grid, run).footprints,
      knob: `${APP_MEMORY_KNOB}; or a smaller plan: a coarser grid.cellArcSec, fewer flight levels, sites or types`,
    });
    memory.take(DEMAND_POINT_BYTES * demand.cell.length, 'the demand points');
    const budget = req.budget === undefined ? s.budget : (req.budget ?? undefined);
    const forced = req.keep.map((k) => all.findIndex((r) => r.siteId === k.siteId && r.typeId === k.typeId));
    const inst = planInstance(
      study,
      all.map((r) => candidate(study, r.siteId, r.typeId, 'plan')),
      footprints,
      demand,
      altitudes,
      {
        forced,
        budget,
        timeLimitMs: req.timeLimitMs ?? DEFAULT_SAFETY_TIME_LIMIT_MS,
        solverNodes: req.solverNodes ?? DEFAULT_SOLVER_NODES,
        memory,
      },
    );
    check();
    const solve = this.options.solve ?? solvePlan;
    const result = await untilCancelled(
      solve(inst, {
        onProgress: (f, stage) => progress?.(0.65 + 0.3 * f, stage),
        lpMaxNonzeros: 2_000_000,
        exactMaxCandidates: 1_000,
        highs: this.options.highs,
        // The instance was built for this solve alone.
        releaseCovers: true,
        memory,
      }),
      check,
    );
    check();
    const chosen = result.chosen.map((i) => all[i]);
    const network = studyNetwork(
      study,
      fls,
      result.chosen.map((i) => footprints[i]),
    );
    progress?.(1, 'done');
    const summary: PlanSummary = {
      mode: result.mode,
      cost: result.cost,
      newSpend: result.cost,
      existingValue: result.existingValue,
      lowerBound: result.lowerBound,
      gapPct: result.gapPct,
      demandMet: result.demandMet,
      coveredWeight: result.coveredWeight,
      totalWeight: result.totalWeight,
      method: result.method,
      solverStop: result.solverStop,
      entries: chosen.map((r, j) => ({
        ...r,
        cost: result.chosenCost[j],
        existingSensor: result.chosenStanding[j],
      })),
      ...(result.accuracy
        ? {
            mlatAccuracy: {
              metPct: pctOf(result.accuracy.metWeight, result.accuracy.weight),
              unmeetablePct: pctOf(result.accuracy.unmeetableWeight, result.accuracy.weight),
              addedForAccuracy: result.accuracy.added.map((i) => all[i]),
            },
          }
        : {}),
      volumes: volumeStats(
        network,
        s.volumes,
        study.volumeMasks,
        fls,
        study.grid,
        study.volumeTargets,
        study.ground,
      ),
      unmeetable: result.unmeetable.map((u) => ({
        volumeId: s.volumes[demand.volume[u.firstPoint]]?.id,
        volumeName: s.volumes[demand.volume[u.firstPoint]]?.name,
        kind: u.kind,
        required: u.required,
        achievable: u.achievable,
        points: u.points,
      })),
      log: result.log,
      stageMs: result.stageMs,
    };
    this.lastPlan = { scenarioKey: JSON.stringify(s), summary, budget };
    return summary;
  }

  // ------------------------------------------------------------------------------------------------ report

  /**
   * The report of the current network as one self-contained HTML document (io/report-html.ts), its model built by
   * io/report-model.ts as `airshade report` builds it: statistics, the N−1 table and the maps of the network with
   * every site up (sites switched off in the Outages panel are named in its warnings), and the last plan while it
   * was made on the scenario as it stands. The provenance is the app's (app/provenance.ts), made on the page.
   */
  report(
    options: { provenance: Provenance; caution: string; paper?: 'A4' | 'A3'; includePlan?: boolean },
    progress?: ProgressFn,
  ): string {
    const study = this.needStudy();
    const cur = this.needCurrent();
    const s = study.loaded.scenario;
    const candidates = cur.sensors.map((r, i) => this.candidateOf(r, `sensors[${i}]`));
    const footprints = cur.sensors.map((r) => this.cachedFootprint(r));
    if (footprints.some((fp) => fp === null))
      throw new InputError('report', 'a network whose footprints are gone', 'a coverage run first');
    progress?.(0.05, 'the network, every site up');
    // A network of its own with every site up: outageTable switches each site off and on again.
    const network = studyNetwork(study, cur.flightLevels, footprints as Footprint[]);
    const warnings = [...modelWarnings(study)];
    if (cur.failed.size > 0)
      warnings.push(
        `sites switched off in the app (${[...cur.failed].join(', ')}) are up in this report: its maps and tables are of the whole network, and its N−1 table takes each site out in turn`,
      );
    const key = JSON.stringify(s);
    const plan = options.includePlan === false ? null : this.lastPlan;
    if (plan && plan.scenarioKey !== key)
      warnings.push(
        'the last plan was made before the study was edited: it is left out (run the plan again)',
      );
    const current = plan && plan.scenarioKey === key ? plan : null;
    const siteCount = new Set(cur.sensors.map((r) => r.siteId)).size;
    // The accuracy section and its N−1 table, with every site up, as `airshade report` computes them.
    const mlat = mlatReport(
      mlatStudyOf(study),
      candidates,
      footprints as Footprint[],
      cur.flightLevels,
      levelAltitudesM(s, cur.flightLevels),
    );
    const { model } = buildReportModel({
      study,
      network,
      flightLevels: cur.flightLevels,
      candidates,
      label: `the app's working network (${cur.sensors.length} sensors on ${siteCount} sites)`,
      weatherMode: false,
      warnings,
      provenance: options.provenance,
      ...(current ? { plan: reportPlan(current.summary, current.budget) } : {}),
      ...(mlat ? { mlat } : {}),
      caution: options.caution,
      paper: options.paper ?? 'A4',
      onStage: (f, stage) => progress?.(0.1 + 0.8 * f, stage),
    });
    progress?.(0.9, 'the document');
    const html = buildReportHtml(model);
    progress?.(1, 'done');
    return html;
  }

  // ----------------------------------------------------------------------------------------------- compare

  /** Two networks side by side: statistics of each and what B gains and loses against A. */
  async compare(a: SensorRef[], b: SensorRef[], progress?: ProgressFn): Promise<CompareSummary> {
    const check = this.startJob();
    const study = this.needStudy();
    const s = study.loaded.scenario;
    const fls = s.flightLevels;
    const A = dedupe(a);
    const B = dedupe(b);
    const { footprints } = await this.footprintsOf([...A, ...B], check, progress, [0, 0.9]);
    check();
    const netA = studyNetwork(study, fls, footprints.slice(0, A.length));
    const netB = studyNetwork(study, fls, footprints.slice(A.length));
    const servedA = servedMasks(netA, s.volumes, study.volumeMasks, fls, study.volumeTargets, study.ground);
    const servedB = servedMasks(netB, s.volumes, study.volumeMasks, fls, study.volumeTargets, study.ground);
    const gained = difference(servedB, servedA);
    const lost = difference(servedA, servedB);
    this.compared = { gained, lost };
    const g = tally(gained, s.volumes, study.grid);
    const l = tally(lost, s.volumes, study.grid);
    const side = (refs: SensorRef[], net: Network): CompareSide => ({
      sensors: refs,
      cost: this.costOf(refs),
      volumes: volumeStats(
        net,
        s.volumes,
        study.volumeMasks,
        fls,
        study.grid,
        study.volumeTargets,
        study.ground,
      ),
    });
    progress?.(1, 'done');
    return {
      a: side(A, netA),
      b: side(B, netB),
      gained: { demandWeight: g.demandWeight, areaKm2: g.unionAreaKm2, byVolume: g.byVolume },
      lost: { demandWeight: l.demandWeight, areaKm2: l.unionAreaKm2, byVolume: l.byVolume },
    };
  }

  /** Site costs (once per new site; existing sites free) plus sensor costs. */
  costOf(refs: SensorRef[]): number {
    const study = this.needStudy();
    const s = study.loaded.scenario;
    let cost = 0;
    const sites = new Set<string>();
    for (const r of dedupe(refs)) {
      cost += study.models.get(r.typeId)?.spec.cost ?? 0;
      if (sites.has(r.siteId)) continue;
      sites.add(r.siteId);
      const f = s.sites.find((x) => x.properties.id === r.siteId);
      if (f && !f.properties.existing) cost += f.properties.siteCost;
    }
    return cost;
  }

  // ------------------------------------------------------------------------------------------------ output

  private levelIndex(fl: number): number {
    const cur = this.needCurrent();
    const f = cur.flightLevels.indexOf(fl);
    if (f < 0)
      throw new InputError(
        'flight level',
        String(fl),
        `one of the computed levels (${cur.flightLevels.join(', ')})`,
      );
    return f;
  }

  /** One map layer as an image: folds of a kind, gaps, outage loss or the network floor, at a flight level. */
  layerImage(layer: ImageLayer, fl: number, kind: FoldKind = 'any'): LayerImage {
    const study = this.needStudy();
    const grid = study.grid;
    if (layer === 'gained' || layer === 'lost') {
      const m = new Uint8Array(grid.width * grid.height);
      const maps = this.compared?.[layer];
      if (maps) for (const [k, d] of maps) if (Number(k.split('|')[1]) === fl) orInto(m, d);
      const color = layer === 'lost' ? LOSS_COLOR : GAINED_COLOR;
      return { image: maskImage(grid, m, color), legend: [] };
    }
    const cur = this.needCurrent();
    const f = this.levelIndex(fl);
    if (layer === 'fold')
      return { image: foldImage(grid, cur.network.foldOf(kind, f)), legend: foldLegend() };
    if (layer === 'loss') return { image: maskImage(grid, this.lostAt(f), LOSS_COLOR), legend: [] };
    if (layer === 'gap') return { image: maskImage(grid, this.gapMask(f), GAP_COLOR), legend: [] };
    if (layer === 'accuracy') {
      // Without receivers (the network changed under the app's request) nothing is drawn and nothing explained.
      const drms = this.accuracyOf(cur, f);
      return drms
        ? { image: mlatAccuracyImage(grid, drms), legend: mlatLegend() }
        : {
            image: mlatAccuracyImage(grid, new Float32Array(grid.width * grid.height).fill(NaN)),
            legend: [],
          };
    }
    // The network floor in steps of the computed levels (the lowest level at or above each cell's floor).
    const alts = cur.network.altitudesM;
    const r = floorLevelImage(
      grid,
      this.floorOf(cur),
      cur.flightLevels.map((fl, i) => ({ label: formatFl(fl), altitudeM: alts[i] })),
    );
    return { image: r.image, legend: r.legend };
  }

  /** The network floor of the sites up now (kept until the network or its failures change). */
  private floorOf(cur: Current): Float32Array {
    return (cur.floor ??= cur.network.networkFloor());
  }

  /**
   * The accuracy map of level index `f` from the receivers up now (failed sites' receivers left out), kept until
   * the network or its failures change; null when the network has no multilateration receiver.
   */
  private accuracyOf(cur: Current, f: number): Float32Array | null {
    const net = cur.mlat;
    if (!net) return null;
    const cached = cur.accuracy[f];
    if (cached) return cached;
    const up = net.receivers.filter((_, i) => !cur.failed.has(net.receiverSites[i]));
    const grid = this.needStudy().grid;
    const drms =
      up.length > 0
        ? mlatLevelMap(grid, { ...net, receivers: up }, cur.altitudes[f])
        : new Float32Array(grid.width * grid.height).fill(NaN);
    cur.accuracy[f] = drms;
    return drms;
  }

  private gapMask(f: number): Uint8Array {
    const study = this.needStudy();
    const cur = this.needCurrent();
    const fl = cur.flightLevels[f];
    const s = study.loaded.scenario;
    const cells = study.grid.width * study.grid.height;
    const m = new Uint8Array(cells);
    s.volumes.forEach((v, vi) => {
      const vm = cellsAtLevel(v, study.volumeMasks[vi], fl, cur.network.altitudesM[f], study.ground);
      if (vm === null) return;
      const t = study.volumeTargets[vi] ?? 0;
      const fold = (k: FoldKind) => cur.network.foldOf(k, f, t);
      const [any, pri, sec, adsb, mlat] = KINDS.map(fold);
      for (let i = 0; i < cells; i++)
        if (vm[i] && !meets(v.requiredFold, any[i], pri[i], sec[i], adsb[i], mlat[i])) m[i] = 1;
    });
    return m;
  }

  /** Ground, network floor and folds under a point (the cursor read-out). */
  probe(lon: number, lat: number): ProbeResult {
    const out: ProbeResult = { lon, lat, groundM: null, floorM: null, fold: null };
    if (!this.terrain) return out;
    const g = this.terrain.sampleLonLat(lon, lat);
    out.groundM = g === g ? g : null;
    const study = this.study;
    const cur = this.current;
    if (!study || !cur) return out;
    const grid = study.grid;
    const c = Math.floor((lon - grid.originX) / grid.pixelX);
    const r = Math.floor((lat - grid.originY) / grid.pixelY);
    if (c < 0 || r < 0 || c >= grid.width || r >= grid.height) return out;
    const i = r * grid.width + c;
    // The exact floor of the cell, and the step of the floor map it is drawn in (the same rule: floorStep).
    const floorM = this.floorOf(cur)[i];
    out.floorM = floorM === floorM ? floorM : null;
    const alts = cur.network.altitudesM;
    const k = floorStep(floorM, alts);
    out.floorStep =
      k < 0
        ? null
        : k < alts.length
          ? formatFl(cur.flightLevels[k])
          : `above ${formatFl(cur.flightLevels.at(-1)!)}`;
    out.fold = Object.fromEntries(
      KINDS.map((k) => [k, cur.flightLevels.length ? cur.network.foldOf(k, this.probeLevel(cur))[i] : 0]),
    ) as Record<FoldKind, number>;
    // The DRMS only where the accuracy map of the level is drawn already: a read-out never starts a map.
    const d = cur.accuracy[this.probeLevel(cur)]?.[i];
    if (d !== undefined && d === d) out.mlatDrmsM = d;
    return out;
  }

  private probeFl: number | null = null;

  /** The level the cursor read-out reports folds at (the one shown on the map). */
  setProbeLevel(fl: number): void {
    this.probeFl = fl;
  }

  private probeLevel(cur: Current): number {
    const f = this.probeFl === null ? -1 : cur.flightLevels.indexOf(this.probeFl);
    return f >= 0 ? f : 0;
  }

  /** The coverage layers of one flight level as GeoJSON text (the same features the CLI writes). */
  levelGeoJson(fl: number): string {
    const study = this.needStudy();
    const cur = this.needCurrent();
    const f = this.levelIndex(fl);
    const s = study.loaded.scenario;
    const fc = levelLayers(
      cur.network,
      f,
      fl,
      study.grid,
      s.volumes,
      study.volumeMasks,
      layerMeta(studyConventions(study, cur.flightLevels)),
      study.volumeTargets,
      study.ground,
    );
    if (cur.failed.size > 0) {
      const lost = maskLayer(this.lostAt(f), study.grid, {
        flightLevel: fl,
        altitudeM: cur.network.altitudesM[f],
        fold: 0,
        kind: 'any',
        siteIds: [...cur.failed],
        layer: 'lost',
      });
      if (lost) fc.features.push(lost);
    }
    return stringifyGeoJson(fc);
  }

  /** What B gains and loses against A at one level, as GeoJSON text. */
  compareGeoJson(fl: number): string {
    const study = this.needStudy();
    if (!this.compared) throw new InputError('compare', 'no comparison yet', 'two layouts compared first');
    const features = [];
    for (const layer of ['gained', 'lost'] as const) {
      for (const [k, m] of this.compared[layer]) {
        const [volumeId, flText] = k.split('|');
        if (Number(flText) !== fl) continue;
        const f = maskLayer(m, study.grid, {
          flightLevel: fl,
          altitudeM: levelAltitudesM(study.loaded.scenario, [fl])[0],
          fold: 0,
          kind: 'any',
          siteIds: [],
          layer,
          volumeId,
        });
        if (f) features.push(f);
      }
    }
    return stringifyGeoJson(
      featureCollection(features, { ...layerMeta(studyConventions(study, [fl])), flightLevel: fl }),
    );
  }

  /** A vertical coverage diagram (SVG text) along one azimuth from a site, for one sensor type. */
  diagram(
    siteId: string,
    typeId: string,
    azimuthDeg: number,
    units: 'metric' | 'aviation',
    /** CSS pixels (default 960 × 560, as saved): the app draws it at the width it is shown at. */
    size?: { width: number; height: number },
    /** Written into the SVG (its <metadata>) when the diagram is saved. */
    provenance?: Provenance,
  ): string {
    const study = this.needStudy();
    const c = this.candidateOf({ siteId, typeId }, 'diagram');
    const s = study.loaded.scenario;
    const data = diagramData(
      study.terrain,
      { lon: c.site.lon, lat: c.site.lat, mastM: c.site.mastHeightM, tiltDeg: c.site.tiltDeg },
      c.model,
      {
        azimuthDeg: ((azimuthDeg % 360) + 360) % 360,
        kFactor: s.earth.kFactor,
        target: c.target,
        day: studyDay(s),
        multipath: s.multipath === 'auto',
        flightLevels: s.flightLevels,
      },
    );
    const title = `${c.site.name} — ${c.model.spec.name} — azimuth ${data.azimuthDeg.toFixed(1)}°`;
    return renderDiagramSvg(data, { title, units, ...size, provenance });
  }
}

/**
 * A job's promise, or Cancelled as soon as its check throws (polled every 100 ms): a solver running elsewhere
 * is left to finish on its own and its answer dropped.
 */
function untilCancelled<T>(work: Promise<T>, check: () => void): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const timer = setInterval(() => {
      try {
        check();
      } catch (e) {
        clearInterval(timer);
        reject(e);
      }
    }, 100);
    work.then(
      (v) => {
        clearInterval(timer);
        resolve(v);
      },
      (e: unknown) => {
        clearInterval(timer);
        reject(e);
      },
    );
  });
}

/** 100·part/whole, 0 for an empty whole. */
function pctOf(part: number, whole: number): number {
  return whole > 0 ? (100 * part) / whole : 0;
}

/** A plan of the app's Plan panel as the report shows it (the fields of plan.json it names). */
function reportPlan(p: PlanSummary, budget: number | undefined): ReportPlan {
  return {
    file: 'plan (the app)',
    origin:
      "Made in the app's Plan panel on the scenario as it stands (the file named in section 1), with the planner of airshade plan.",
    mode: p.mode,
    cost: p.cost,
    lowerBound: p.lowerBound,
    gapPct: p.gapPct,
    method: p.method,
    demandMet: p.demandMet,
    solverStop: p.solverStop,
    ...(budget !== undefined ? { budget } : {}),
    entries: p.entries.map((e) => ({ siteId: e.siteId, typeId: e.typeId, cost: e.cost })),
    volumes: p.volumes,
    ...(p.mlatAccuracy ? { mlatAccuracy: p.mlatAccuracy } : {}),
    unmeetable: p.unmeetable.map((u) => ({
      volumeId: u.volumeId ?? '',
      volumeName: u.volumeName,
      kind: u.kind,
      required: u.required,
      achievable: u.achievable,
    })),
  };
}

function dedupe(refs: readonly SensorRef[]): SensorRef[] {
  const seen = new Set<string>();
  const out: SensorRef[] = [];
  for (const r of refs) {
    const k = `${r.siteId}\u0000${r.typeId}`;
    if (seen.has(k)) continue;
    seen.add(k);
    out.push({ siteId: r.siteId, typeId: r.typeId });
  }
  return out;
}

function orInto(m: Uint8Array, d: Uint8Array): void {
  for (let i = 0; i < m.length; i++) if (d[i]) m[i] = 1;
}

function summariseTerrain(terrain: Terrain, tiles: DemTile[], shared: boolean): TerrainSummary {
  let unknown = 0;
  for (let i = 0; i < terrain.data.length; i++) if (terrain.data[i] !== terrain.data[i]) unknown++;
  return {
    tiles: tiles.map((t) => {
      const geographic = t.geo.crs.kind === 'geographic';
      const b = geographic
        ? {
            west: t.geo.originX,
            east: t.geo.originX + t.geo.width * t.geo.pixelX,
            north: t.geo.originY,
            south: t.geo.originY + t.geo.height * t.geo.pixelY,
          }
        : terrainBounds(Terrain.fromTiles([t]));
      let minM = Infinity;
      let maxM = -Infinity;
      for (let i = 0; i < t.data.length; i++) {
        const v = t.data[i];
        if (v < minM) minM = v;
        if (v > maxM) maxM = v;
      }
      return {
        name: t.name,
        width: t.geo.width,
        height: t.geo.height,
        ...b,
        pixel: {
          x: Math.abs(t.geo.pixelX) * (geographic ? 3600 : 1),
          y: Math.abs(t.geo.pixelY) * (geographic ? 3600 : 1),
          unit: geographic ? 'arcsec' : 'm',
        },
        crs: geographic ? 'lon/lat (WGS 84)' : 'projected',
        geo: t.geo,
        voidsFilled: t.voidsFilled,
        minM,
        maxM,
        warnings: t.warnings,
      };
    }),
    bounds: terrainBounds(terrain),
    width: terrain.geo.width,
    height: terrain.geo.height,
    unknownCells: unknown,
    shared,
  };
}
