/**
 * What the scenario commands (coverage, plan, outage, compare) share: the scenario and terrain read from disk
 * into a study (`worker/study.ts`, shared with the web app), and footprints computed in a worker pool.
 */
import { computeFootprints, type Candidate } from '../core/coverage.ts';
import { inlineExecutor } from '../core/floor.ts';
import type { Footprint } from '../core/footprint.ts';
import { Terrain } from '../core/terrain.ts';
import { NodePool } from '../node-pool.ts';
import { allCandidates, layoutCandidates, openStudy, type Study } from '../study.ts';
import { readTiles } from './files.ts';
import type { ProgressLine } from './progress.ts';
import { loadScenario, type LoadedScenario } from './scenario.ts';

export type Session = Study<LoadedScenario>;

export { allCandidates, candidate, layoutCandidates, siteOf } from '../study.ts';

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

export async function openSession(path: string, threads: number, progress: ProgressLine): Promise<Session> {
  progress.update(0, 'reading the scenario');
  const loaded = await loadScenario(path);
  progress.update(0, 'reading terrain');
  const terrain = Terrain.fromTiles(await readTiles(loaded.terrainPaths), { shared: threads > 0 });
  return openStudy(loaded, terrain, threads);
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
