/**
 * What the scenario commands (coverage, plan, outage, compare) share: the scenario and terrain read from disk
 * into a study (`worker/io/study.ts`, shared with the web app), and footprints computed in a worker pool.
 */
import { computeFootprints, type Candidate } from '../core/coverage.ts';
import { inlineExecutor } from '../core/floor.ts';
import type { Footprint } from '../core/footprint.ts';
import { studyBlame, studyRun } from '../core/memory-estimate.ts';
import type { Terrain } from '../core/terrain.ts';
import { NodePool } from '../runtime/node-pool.ts';
import {
  allCandidates,
  analysisGrid,
  layoutCandidates,
  openStudy,
  studyTargets,
  terrainBounds,
  type Study,
} from '../io/study.ts';
import type { GridGeo } from '../core/grid.ts';
import { NM_M } from '../../shared/units.ts';
import { applyColdDay, type Parsed } from './args.ts';
import {
  checkEstimate,
  estimateRun,
  MEMORY_OPTION,
  memoryHelp,
  memoryLimitArg,
  type TileShape,
} from './budget-check.ts';
import { readTerrainWithin } from './dem-open.ts';
import { checkOutput } from './out-check.ts';
import { ProgressLine } from './progress.ts';
import {
  checkWork,
  estimateWork,
  WORK_OPTION,
  workHelp,
  workLimitArg,
  type WorkEstimate,
} from './work-check.ts';
import { loadScenario, OUTSIDE_PATHS_HELP, OUTSIDE_PATHS_OPTION, type LoadedScenario } from './scenario.ts';

export type Session = Study<LoadedScenario>;

export { allCandidates, candidate, layoutCandidates, siteOf } from '../io/study.ts';

/**
 * The network a scenario command computes when it is not given a plan: the layout named by `where` (e.g.
 * `--layout`), or else every allowed (site, type) — with the words the command prints for it.
 */
export function networkChoice(
  session: Session,
  layoutName: string | undefined,
  where: string,
): { candidates: Candidate[]; label: string } {
  const candidates =
    layoutName === undefined ? allCandidates(session) : layoutCandidates(session, layoutName, where);
  const label =
    layoutName === undefined
      ? `every allowed site and type (${candidates.length} sensors on ${session.loaded.scenario.sites.length} sites)`
      : `layout "${layoutName}" (${candidates.length} sensors)`;
  return { candidates, label };
}

/** The options every scenario command takes for its inputs: --max-memory, --max-work-min, --allow-outside-paths. */
export const SESSION_OPTIONS = { ...MEMORY_OPTION, ...WORK_OPTION, ...OUTSIDE_PATHS_OPTION } as const;

/** Their help lines, with option texts starting at `column`. */
export function sessionHelp(column: number): string {
  return `${memoryHelp(column)}\n${workHelp(column)}\n${OUTSIDE_PATHS_HELP(column)}`;
}

export interface SessionOptions {
  /** The memory limit (--max-memory, default budget-check.ts's). */
  maxMemoryBytes?: number;
  /** The time limit in minutes (--max-work-min, default work-check.ts's). */
  maxWorkMin?: number;
  /** Let the scenario name files outside its own folder (--allow-outside-paths). */
  allowOutsidePaths?: boolean;
  /** The output (checked once the inputs are known, before the terrain is read): a folder or a file. */
  out?: { path: string; kind: 'file' | 'folder' };
  /** The levels the run computes when not the scenario's (`coverage --fl`), and the argument that gave them. */
  runLevels?: { list: readonly number[]; where: string };
}

/** The session options as the command line gives them (`out` from the command itself). */
export function sessionOptions(p: Parsed, out?: SessionOptions['out']): SessionOptions {
  return {
    maxMemoryBytes: memoryLimitArg(p),
    maxWorkMin: workLimitArg(p),
    allowOutsidePaths: p.flags.has('allow-outside-paths'),
    out,
  };
}

/**
 * How a scenario command opens its study: its progress line (named `command`, silent with --quiet), the session
 * with the command line's options and the output `out` checked, and the cold day (--cold-day) applied.
 */
export async function openCommandSession(
  p: Parsed,
  command: string,
  scenarioPath: string,
  threads: number,
  out: NonNullable<SessionOptions['out']>,
  runLevels?: SessionOptions['runLevels'],
): Promise<{ session: Session; progress: ProgressLine }> {
  const progress = new ProgressLine(command, p.flags.has('quiet'));
  const session = await openSession(scenarioPath, threads, progress, {
    ...sessionOptions(p, out),
    runLevels,
  });
  applyColdDay(p, session.loaded.scenario);
  return { session, progress };
}

export async function openSession(
  path: string,
  threads: number,
  progress: ProgressLine,
  opts: SessionOptions = {},
): Promise<Session> {
  progress.update(0, 'reading the scenario');
  const loaded = await loadScenario(path, { allowOutsidePaths: opts.allowOutsidePaths });
  if (opts.out) {
    const inputs = [
      loaded.file,
      ...loaded.terrainPaths,
      ...Object.values(loaded.digests).map((d) => d?.file ?? ''),
    ];
    checkOutput(
      opts.out.path,
      opts.out.kind,
      inputs.filter((f) => f !== ''),
    );
  }
  const limit =
    opts.maxMemoryBytes ?? memoryLimitArg({ positional: [], values: new Map(), flags: new Set() });
  progress.update(0, 'reading terrain');
  const { terrain, largest } = await readTerrainWithin(loaded.terrainPaths, limit, {
    shared: threads > 0,
    names: loaded.scenario.terrain.files.map((_, i) => loaded.locate(['terrain', 'files', i])),
  });
  checkStudyMemory(loaded, terrain, largest, limit);
  checkStudyWork(
    loaded,
    terrain,
    threads,
    opts.maxWorkMin ?? workLimitArg({ positional: [], values: new Map(), flags: new Set() }),
  );
  return openStudy(loaded, terrain, threads, opts.runLevels);
}

/**
 * The study's memory against the limit, before its grid exists (budget-check.ts): every allowed (site, type)
 * pair, the scenario's levels and the volumes' own targets, the farthest reach of any type.
 */
export function checkStudyMemory(
  loaded: LoadedScenario,
  terrain: Terrain,
  largest: TileShape | undefined,
  limit: number,
): void {
  const s = loaded.scenario;
  const grid: GridGeo = analysisGrid(loaded, terrain);
  const run = studyRun(s, grid, terrain, studyTargets(s).targets.length, largest);
  checkEstimate(estimateRun(run.shape), limit, studyBlame(loaded.locate, s, grid, run));
}

/**
 * The study's work against the time limit, before its grid exists (work-check.ts): every allowed (site, type)
 * pair, each site's sweep out to the farthest of its types (as worker/core/coverage.ts sweeps it: a terrain
 * pixel along, ¾ of a cell across), the scenario's levels and targets.
 */
export function checkStudyWork(
  loaded: LoadedScenario,
  terrain: Terrain,
  threads: number,
  limitMin: number,
): WorkEstimate {
  const s = loaded.scenario;
  const grid: GridGeo = analysisGrid(loaded, terrain);
  const lat = grid.originY + (grid.height / 2) * grid.pixelY;
  const cellM = Math.min(grid.pixelX * Math.cos((lat * Math.PI) / 180), -grid.pixelY) * 111_320;
  const rangeOf = new Map(s.sensorTypes.map((t) => [t.id, t.instrumentedRangeNm * NM_M]));
  let pairs = 0;
  const sweeps = s.sites.map((f) => {
    const types = f.properties.allowedTypes ?? s.sensorTypes.map((t) => t.id);
    pairs += types.length;
    const [lon, siteLat] = f.geometry.coordinates;
    const px = terrain.metresPerPixel(lon, siteLat);
    return {
      reachM: Math.min(s.maxRangeKm * 1000, Math.max(0, ...types.map((id) => rangeOf.get(id) ?? 0))),
      rangeStepM: Math.min(px.x, px.y) || cellM,
      arcStepM: 0.75 * cellM,
    };
  });
  const tb = terrainBounds(terrain);
  const midLat = ((tb.north + tb.south) / 2) * (Math.PI / 180);
  const est = estimateWork({
    sweeps,
    terrainAreaM2: (tb.east - tb.west) * Math.cos(midLat) * (tb.north - tb.south) * 111_320 ** 2,
    cells: grid.width * grid.height,
    sites: s.sites.length,
    pairs,
    targets: studyTargets(s).targets.length,
    levels: s.flightLevels.length,
    threads,
  });
  const cell = `${loaded.locate(['grid', 'cellArcSec'])} (${s.grid.cellArcSec}″: ${grid.width} × ${grid.height} cells)`;
  checkWork(est, limitMin, {
    sweeps: `${loaded.locate(['sites'])} (${s.sites.length} sites, each swept out to ${(Math.max(0, ...sweeps.map((w) => w.reachM)) / 1000).toFixed(0)} km: maxRangeKm and the types' instrumented range)`,
    cells: `${cell} with ${pairs} (site, type) pairs and ${s.flightLevels.length} flight levels`,
  });
  return est;
}

/** Footprints of the candidates (the floors in a pool of `session.threads` workers, 0 = inline). */
export async function footprintsFor(
  session: Session,
  candidates: readonly Candidate[],
  opts: { weather?: boolean; progress?: ProgressLine; share?: [number, number] } = {},
): Promise<Footprint[]> {
  const { terrain, grid, ground, loaded, threads } = session;
  const s = loaded.scenario;
  const [from, span] = opts.share ?? [0, 0.85];
  const pool = threads > 0 ? await NodePool.start(threads, terrain.toParts()) : null;
  try {
    const r = await computeFootprints(
      terrain,
      {
        grid,
        ground,
        candidates,
        kFactor: s.earth.kFactor,
        maxRangeM: (s.maxRangeKm ?? 400) * 1000,
        weather: opts.weather,
        extraTargets: session.targets.slice(1),
        multipath: s.multipath === 'auto',
      },
      pool ? pool.executor() : inlineExecutor(terrain),
      { onProgress: (f, stage) => opts.progress?.update(from + span * f, stage) },
    );
    return r.footprints;
  } finally {
    await pool?.close();
  }
}
