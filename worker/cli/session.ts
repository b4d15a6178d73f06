/**
 * What the scenario commands (coverage, plan, outage, compare) share: the scenario and terrain read from disk
 * into a study (`worker/io/study.ts`, shared with the web app), and footprints computed in a worker pool.
 */
import { InputError } from '../../shared/errors.ts';
import { computeFootprints, type Candidate } from '../core/coverage.ts';
import { inlineExecutor, inSharedMemory } from '../core/floor.ts';
import type { Footprint } from '../core/footprint.ts';
import {
  heldAfterCoverage,
  layerWorkerBytes,
  layerWorkerCount,
  MemoryLedger,
  OVERHEAD,
  type FootprintHold,
  pairWindowCells,
  studyBlame,
  studyRun,
} from '../core/memory-estimate.ts';
import { Terrain } from '../core/terrain.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { levelLayerText, levelSnapshot, type LevelFolds, type LevelLayerJob } from '../io/layers.ts';
import type { Provenance } from '../io/provenance.ts';
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
import { applyColdDay, helpOption, one, type Parsed } from './args.ts';
import {
  checkEstimate,
  planKnob,
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
import { join } from 'node:path';
import {
  cacheFileName,
  footprintInputs,
  footprintKey,
  openCacheDir,
  readCachedSite,
  siteGroups,
  writeCachedSite,
  writeSpilledSite,
} from './footprint-cache.ts';

/**
 * A study opened by the CLI. `cacheDir`: the footprint cache folder (--cache), when one is used, or a plan's spill
 * folder (`cacheIsSpill`, footprint-cache.ts `openDiskSpill`) while the plan uses one; `workCheck`: the time estimate,
 * left until the cache says which sites need a sweep (then taken by `footprintsFor`).
 */
export type Session = Study<LoadedScenario> & {
  cacheDir?: string;
  cacheIsSpill?: boolean;
  /** Set when a write to the spill folder failed: no more are tried. */
  spillStopped?: boolean;
  workCheck?: { loaded: LoadedScenario; limitMin: number };
  /** Which footprints the command holds at once, as its memory was checked. */
  footprintHold?: FootprintHold;
};

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

/** The footprint cache option of the commands that compute footprints (worker/cli/footprint-cache.ts). */
export const CACHE_OPTION = { cache: { value: true } } as const;

/** Its help lines, with option texts starting at `column`. */
export function cacheHelp(column: number): string {
  return helpOption('--cache DIR', column, [
    'footprint cache folder (created if missing): the footprints found there are read, the',
    'missing ones computed and stored there; the same results, byte for byte (docs/BATCH.md)',
  ]);
}

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
  /**
   * The sites the run computes when not all (`footprints --sites`): checked against the scenario's sites as soon
   * as it is read, and the memory and time estimates taken for these sites only. Returns [first, last], 1-based.
   */
  siteRange?: (siteCount: number) => [number, number];
  /**
   * Leave the time estimate to `footprintsFor` (with a footprint cache: only the sites not in it are swept); it is
   * still taken before any footprint is computed.
   */
  deferWorkCheck?: boolean;
  /** Which footprints the command holds at once (memory-estimate.ts `FootprintHold`; default every pair's). */
  hold?: FootprintHold;
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
  siteRange?: SessionOptions['siteRange'],
  hold?: FootprintHold,
): Promise<{ session: Session; progress: ProgressLine }> {
  const progress = new ProgressLine(command, p.flags.has('quiet'));
  const cacheText = one(p, 'cache');
  const cacheDir = cacheText === undefined ? undefined : openCacheDir(cacheText);
  const session: Session = await openSession(scenarioPath, threads, progress, {
    ...sessionOptions(p, out),
    runLevels,
    siteRange,
    hold,
    deferWorkCheck: cacheDir !== undefined,
  });
  applyColdDay(p, session.loaded.scenario);
  if (cacheDir !== undefined) session.cacheDir = cacheDir;
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
  // The estimates below for the sites this run computes (all, or those of `footprints --sites`).
  const range = opts.siteRange?.(loaded.scenario.sites.length);
  const checked = range
    ? {
        ...loaded,
        scenario: { ...loaded.scenario, sites: loaded.scenario.sites.slice(range[0] - 1, range[1]) },
      }
    : loaded;
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
    // The study's sites are swept along radials: the terrain goes where the radial kernel reads it.
    kernel: true,
    names: loaded.scenario.terrain.files.map((_, i) => loaded.locate(['terrain', 'files', i])),
    // With the grid's bounds in the scenario the study's memory is known from the tiles' headers: a run too
    // large is refused before any pixel is decoded.
    beforeDecode: ({ tiles, largest }) => {
      if (checked.scenario.grid.bounds === undefined || tiles.length === 0) return;
      const first = Terrain.fromParts({
        geo: { ...tiles[0].geo, width: 1, height: 1 },
        data: new Float32Array(1),
        warnings: [],
        sources: [],
      });
      const pixels = tiles.reduce((n, t) => n + t.geo.width * t.geo.height, 0);
      checkStudyMemory(
        checked,
        { geo: { width: pixels, height: 1 }, metresPerPixel: (lon, lat) => first.metresPerPixel(lon, lat) },
        largest,
        limit,
        opts.hold,
      );
    },
  });
  checkStudyMemory(checked, terrain, largest, limit, opts.hold);
  const limitMin = opts.maxWorkMin ?? workLimitArg({ positional: [], values: new Map(), flags: new Set() });
  if (!opts.deferWorkCheck) checkStudyWork(checked, terrain, threads, limitMin);
  const study: Session = openStudy(loaded, terrain, threads, opts.runLevels);
  if (opts.deferWorkCheck) study.workCheck = { loaded: checked, limitMin };
  study.footprintHold = opts.hold;
  return study;
}

/**
 * The study's memory against the limit, before its grid exists (budget-check.ts): every allowed (site, type)
 * pair, the scenario's levels and the volumes' own targets, the farthest reach of any type.
 */
export function checkStudyMemory(
  loaded: LoadedScenario,
  terrain: Terrain | Parameters<typeof studyRun>[2],
  largest: TileShape | undefined,
  limit: number,
  hold?: FootprintHold,
): void {
  const s = loaded.scenario;
  const grid: GridGeo = analysisGrid(loaded, terrain instanceof Terrain ? terrain : null);
  const run = studyRun(s, grid, terrain, studyTargets(s).targets.length, largest, hold);
  checkEstimate(estimateRun(run.shape), limit, studyBlame(loaded.locate, s, grid, run));
}

/**
 * A plan's memory account against `limit` (--max-memory): it starts at what the study holds once its coverage is
 * done (the estimate `checkStudyMemory` checked, its horizons let go) — plus, with `horizons`, the horizons in
 * flight, counted as `horizons.bytes` for the caller to give back once its footprints are done — and the plan's
 * stages count their arrays in it as their sizes become known; the refusal names the analysis grid and the (site,
 * type) pairs, which drive them.
 */
export function planLedger(session: Session, limit: number, horizons?: { bytes: number }): MemoryLedger {
  const s = session.loaded.scenario;
  const run = studyRun(
    s,
    session.grid,
    session.terrain,
    studyTargets(s).targets.length,
    undefined,
    session.footprintHold,
  );
  const where = studyBlame(session.loaded.locate, s, session.grid, run).footprints;
  const est = estimateRun(run.shape);
  if (horizons) horizons.bytes = est.parts.horizons;
  return new MemoryLedger({
    held: heldAfterCoverage(est) + (horizons ? OVERHEAD * est.parts.horizons : 0),
    limit,
    where,
    // Before any sweep: the caller says when the footprints have come (`MemoryLedger.setKnob`).
    knob: planKnob(session.cacheDir !== undefined, false),
  });
}

/**
 * The study's work against the time limit, before its grid exists (work-check.ts): every allowed (site, type)
 * pair, each site's sweep out to the farthest of its types (as worker/core/coverage.ts sweeps it: a terrain
 * pixel along, ¾ of a cell across), the scenario's levels and targets. With `sweptSites`, only those sites are
 * swept (the others' footprints are in the cache).
 */
export function checkStudyWork(
  loaded: LoadedScenario,
  terrain: Terrain,
  threads: number,
  limitMin: number,
  sweptSites?: ReadonlySet<string>,
): WorkEstimate {
  const s = loaded.scenario;
  const grid: GridGeo = analysisGrid(loaded, terrain);
  const lat = grid.originY + (grid.height / 2) * grid.pixelY;
  const cellM = Math.min(grid.pixelX * Math.cos((lat * Math.PI) / 180), -grid.pixelY) * 111_320;
  const rangeOf = new Map(s.sensorTypes.map((t) => [t.id, t.instrumentedRangeNm * NM_M]));
  let pairs = 0;
  for (const f of s.sites) pairs += (f.properties.allowedTypes ?? s.sensorTypes).length;
  const swept = sweptSites ? s.sites.filter((f) => sweptSites.has(f.properties.id)) : s.sites;
  const sweeps = swept.map((f) => {
    const types = f.properties.allowedTypes ?? s.sensorTypes.map((t) => t.id);
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
    sites: swept.length,
    pairs,
    pairCells: pairWindowCells(s, grid),
    targets: studyTargets(s).targets.length,
    levels: s.flightLevels.length,
    threads,
  });
  const cell = `${loaded.locate(['grid', 'cellArcSec'])} (${s.grid.cellArcSec}″: ${grid.width} × ${grid.height} cells)`;
  checkWork(est, limitMin, {
    sweeps: `${loaded.locate(['sites'])} (${swept.length} sites${sweptSites ? ` of ${s.sites.length} not in the footprint cache` : ''}, each swept out to ${(Math.max(0, ...sweeps.map((w) => w.reachM)) / 1000).toFixed(0)} km: maxRangeKm and the types' instrumented range)`,
    cells: `${cell} with ${pairs} (site, type) pairs and ${s.flightLevels.length} flight levels`,
  });
  return est;
}

/** `FootprintsOptions.retain` that keeps none (a cached site's file is then read again only for `onSite`). */
export const KEEP_NONE = (): boolean => false;

export interface FootprintsOptions {
  weather?: boolean;
  progress?: ProgressLine;
  share?: [number, number];
  /** With a cache: told of each site read from it or written to it (e.g. `airshade footprints`' report). */
  onCache?: (event: { siteId: string; file: string; read: boolean }) => void;
  /**
   * Handed each site's footprints in the order they are returned: as soon as they are done, while the pool sweeps
   * the next sites (`airshade coverage` grows its network there), and a cached site's as its file is read in turn.
   */
  onSite?: (footprints: readonly Footprint[]) => void;
  /**
   * Which footprints the result keeps (default all). With it, a cached site's file is read when its turn comes and
   * its footprints handed to `onSite`, so that a caller that counts and lets them go holds one site's at a time.
   */
  retain?: (fp: Footprint) => boolean;
}

/**
 * Footprints of the candidates (the floors in a pool of `session.threads` workers, 0 = inline), in the order
 * `computeFootprints` gives them. With `session.cacheDir` (--cache): each site's footprints are read from the
 * cache when there, the others computed and stored there as each site is done (worker/cli/footprint-cache.ts).
 */
export async function footprintsFor(
  session: Session,
  candidates: readonly Candidate[],
  opts: FootprintsOptions = {},
): Promise<Footprint[]> {
  const s = session.loaded.scenario;
  const job = {
    kFactor: s.earth.kFactor,
    maxRangeM: (s.maxRangeKm ?? 400) * 1000,
    weather: opts.weather ?? false,
    multipath: s.multipath === 'auto',
  };
  const dir = session.cacheDir;
  if (dir === undefined) {
    const onSite = opts.onSite;
    return computeFor(session, candidates, job, opts, onSite && ((_, fps) => onSite(fps)));
  }
  const retain = opts.retain;
  const grid = session.grid;
  const groups = siteGroups(candidates).map((group) => {
    const inputs = footprintInputs(session, group, job);
    const key = footprintKey(inputs);
    const warn = (line: string) => process.stderr.write(`${line}\n`);
    const found = readCachedSite(dir, key, grid, warn, session.cacheIsSpill);
    // A file whose footprints do not match the group (a hand-edited header with the right key) is not used.
    const fits =
      found !== null &&
      found.length === group.length &&
      found.every((fp, i) => fp.siteId === group[i].site.id && fp.typeId === group[i].model.spec.id);
    if (found !== null && !fits) {
      warn(
        `footprint cache: ${join(dir, cacheFileName(key))}: found footprints of ${found.map((f) => `${f.siteId}/${f.typeId}`).join(', ')}; expected ${group.map((c) => `${c.site.id}/${c.model.spec.id}`).join(', ')}; computing this site again`,
      );
    }
    // Read again in turn when the caller lets each site's go (`retain`): one site's footprints held at a time.
    return { group, inputs, key, cached: fits, footprints: fits && retain === undefined ? found : null };
  });
  for (const g of groups) {
    if (g.cached) opts.onCache?.({ siteId: g.group[0].site.id, file: g.key, read: true });
  }
  const missing = groups.filter((g) => !g.cached);
  const spillWrites = new Set<Promise<void>>();
  if (session.workCheck) {
    // The time estimate for the sites still to sweep, before any is computed.
    const { loaded, limitMin } = session.workCheck;
    const swept = new Set(missing.map((g) => g.group[0].site.id));
    checkStudyWork(loaded, session.terrain, session.threads, limitMin, swept);
  }
  // Each site's footprints go to `onSite` in the groups' order: a cached site's as soon as the sites before it
  // have gone, a computed one's when it is done.
  let handed = 0;
  const handTo = (end: number) => {
    for (; handed < end; handed++) {
      const g = groups[handed];
      if (g.cached && g.footprints === null && opts.onSite === undefined && retain === KEEP_NONE) {
        // Nothing to hand them to and nothing kept: the file is not read again.
        g.footprints = [];
        continue;
      }
      if (g.cached && g.footprints === null) {
        // Read once already (above) and found whole: only something else rewriting the folder meanwhile fails
        // here, and the layers would then mix two studies' footprints.
        let why = '';
        const again = readCachedSite(dir, g.key, grid, (line) => (why = line), session.cacheIsSpill);
        if (again === null) {
          throw new InputError(
            `--cache ${join(dir, cacheFileName(g.key))}`,
            `a footprint file that changed while this run read it${why ? ` (${why.replace(/^footprint cache: [^:]*: /, '').replace(/; computing this site again$/, '')})` : ' (it is gone)'}`,
            'a cache folder that nothing else rewrites while a run reads it',
          );
        }
        g.footprints = again;
      }
      opts.onSite?.(g.footprints!);
      if (retain !== undefined) g.footprints = g.footprints!.filter(retain);
    }
  };
  if (missing.length > 0) {
    const bySite = new Map(missing.map((g) => [g.group[0].site.id, g]));
    // The computed footprints reach the groups through the callback; the pool's own list keeps none of them (it
    // kept every one here before: 16.5 GiB at the national box's 15″ with --cache, past --max-memory 16G).
    await computeFor(
      session,
      missing.flatMap((g) => g.group),
      job,
      { ...opts, retain: KEEP_NONE },
      (site, fps) => {
        const g = bySite.get(site.id)!;
        g.footprints = fps;
        if (session.cacheIsSpill) {
          // A plan's spill folder: written by Node's I/O threads, at most SPILL_WRITES_IN_FLIGHT sites at a time
          // (beyond that on this thread: the footprints of sites waiting to be written are not in the memory
          // account). A site that cannot be written (a full disk) is swept again if it is chosen.
          const stop = (e: unknown) => {
            if (session.spillStopped) return;
            session.spillStopped = true;
            process.stderr.write(
              `plan: the spill folder ${dir} cannot take more (${e instanceof InputError ? e.found : String(e)}); the chosen sites not written there will be swept again\n`,
            );
          };
          if (!session.spillStopped && spillWrites.size < SPILL_WRITES_IN_FLIGHT) {
            const w: Promise<void> = writeSpilledSite(dir, g.key, g.inputs, fps, grid)
              .catch(stop)
              .finally(() => spillWrites.delete(w));
            spillWrites.add(w);
          } else if (!session.spillStopped) {
            try {
              writeCachedSite(dir, g.key, g.inputs, fps, grid, true);
            } catch (e) {
              stop(e);
            }
          }
        } else {
          const file = writeCachedSite(dir, g.key, g.inputs, fps, grid);
          opts.onCache?.({ siteId: site.id, file, read: false });
        }
        handTo(groups.indexOf(g) + 1);
      },
    );
  }
  handTo(groups.length);
  // A spill's files are all in place before anything reads them back.
  await Promise.all(spillWrites);
  return groups.flatMap((g) => g.footprints!);
}

/** Level f's layers job of a session's network (io/layers.ts `LevelLayerJob`): the study's grid, volumes and ground. */
export function sessionLayerJob(
  session: Session,
  network: LevelFolds,
  f: number,
  fl: number,
  meta: Record<string, unknown>,
  provenance: Provenance,
): LevelLayerJob {
  return {
    snapshot: levelSnapshot(network, f, session.volumeTargets),
    fl,
    grid: session.grid,
    volumes: session.loaded.scenario.volumes,
    masks: session.volumeMasks,
    meta,
    volumeTargets: session.volumeTargets,
    ground: session.ground,
    provenance,
  };
}

/**
 * Every flight level's layers file as text (io/layers.ts `levelLayerText`): on a large grid (`layerWorkerCount`) the
 * levels are made at once on worker threads of their own, else on this thread one after the other; the same bytes
 * either way. A level's job is made as it is handed out, so only the levels in the making are posted at any time.
 */
export async function levelLayerTexts(
  session: Session,
  network: LevelFolds,
  fls: readonly number[],
  meta: Record<string, unknown>,
  provenance: Provenance,
  opts: {
    /**
     * The workers' bytes (`layerWorkerBytes`) must fit: a plan's memory account, from which they are taken, or a
     * coverage's limit (--max-memory), beside the study's estimate; else the layers are made on this thread.
     */
    memory?: MemoryLedger | { limit: number };
    /** The worker threads, whatever the grid (tests); default `layerWorkerCount`'s. */
    workers?: number;
  } = {},
): Promise<string[]> {
  const { grid, threads } = session;
  const { memory } = opts;
  const job = (f: number) => sessionLayerJob(session, network, f, fls[f], meta, provenance);
  let workers = opts.workers ?? layerWorkerCount(threads, grid.width * grid.height, fls.length);
  if (workers > 0 && memory !== undefined) {
    const run = studyRun(
      session.loaded.scenario,
      grid,
      session.terrain,
      session.targets.length,
      undefined,
      session.footprintHold,
    );
    const bytes = OVERHEAD * layerWorkerBytes(run.shape, workers);
    if (memory instanceof MemoryLedger) {
      if (memory.fits(bytes)) memory.take(bytes, "the layers' worker threads");
      else workers = 0;
    } else if (estimateRun(run.shape).bytes + bytes > memory.limit) {
      workers = 0;
    }
  }
  if (workers === 0) return fls.map((_, f) => levelLayerText(job(f)));
  // Posted in shared memory: the masks and the ground once for every level, a level's folds once (a plain array is
  // copied twice with each message, out of this thread and into the worker).
  const masks = session.volumeMasks.map(inSharedMemory);
  const ground = inSharedMemory(session.ground);
  const posted = (f: number): LevelLayerJob => {
    const j = job(f);
    const folds = Object.fromEntries(
      Object.entries(j.snapshot.folds).map(([k, a]) => [k, inSharedMemory(a)]),
    );
    return { ...j, masks, ground, snapshot: { ...j.snapshot, folds } };
  };
  const pool = NodePool.boot(workers);
  try {
    return await pool.each(fls.map((_, f) => (w) => w.levelLayerText(posted(f))));
  } finally {
    await pool.close();
  }
}

/** A plan's spill files being written at once, at most (each holds its site's footprints until written). */
const SPILL_WRITES_IN_FLIGHT = 4;

async function computeFor(
  session: Session,
  candidates: readonly Candidate[],
  job: { kFactor: number; maxRangeM: number; weather: boolean; multipath: boolean },
  opts: FootprintsOptions,
  onSiteDone?: (site: Candidate['site'], footprints: Footprint[]) => void,
): Promise<Footprint[]> {
  const { terrain, grid, ground, threads } = session;
  const [from, span] = opts.share ?? [0, 0.85];
  const pool = threads > 0 ? await NodePool.start(threads, terrain.toParts()) : null;
  try {
    const r = await computeFootprints(
      terrain,
      {
        grid,
        ground,
        candidates,
        kFactor: job.kFactor,
        maxRangeM: job.maxRangeM,
        weather: job.weather,
        extraTargets: session.targets.slice(1),
        multipath: job.multipath,
      },
      pool ? pool.executor() : inlineExecutor(terrain),
      {
        onProgress: (f, stage) => opts.progress?.update(from + span * f, stage),
        onSiteDone,
        retain: opts.retain,
      },
    );
    return r.footprints;
  } finally {
    await pool?.close();
  }
}
