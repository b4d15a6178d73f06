/**
 * What the scenario commands (coverage, plan, outage, compare) share: the scenario loaded and checked, the terrain
 * mosaic, the analysis grid with its ground, the sensor models, and footprints computed in a worker pool.
 */
import { InputError } from '../../shared/errors.ts';
import { computeFootprints, type Candidate, type CoverageSite } from '../core/coverage.ts';
import { inlineExecutor } from '../core/floor.ts';
import type { Footprint } from '../core/footprint.ts';
import type { GridGeo } from '../core/grid.ts';
import { buildSensorModel, type SensorModel } from '../core/sensor.ts';
import { Terrain } from '../core/terrain.ts';
import { rasterizeVolume } from '../core/volumes.ts';
import { NodePool } from '../node-pool.ts';
import { analysisGrid, groundOnGrid, terrainBounds } from './coverage.ts';
import { readTiles } from './files.ts';
import type { ProgressLine } from './progress.ts';
import { checkAgainstTerrain, loadScenario, type LoadedScenario } from './scenario.ts';

export interface Session {
  loaded: LoadedScenario;
  terrain: Terrain;
  grid: GridGeo;
  ground: Float32Array;
  models: Map<string, SensorModel>;
  /** Cells of each volume (same order as the scenario's volumes). */
  volumeMasks: Uint8Array[];
  threads: number;
}

export async function openSession(path: string, threads: number, progress: ProgressLine): Promise<Session> {
  progress.update(0, 'reading the scenario');
  const loaded = await loadScenario(path);
  const s = loaded.scenario;
  progress.update(0, 'reading terrain');
  const terrain = Terrain.fromTiles(await readTiles(loaded.terrainPaths), { shared: threads > 0 });
  checkAgainstTerrain(s, terrainBounds(terrain), loaded.file, loaded.locate);
  const grid = analysisGrid(loaded, terrain);
  const ground = groundOnGrid(terrain, grid);
  const models = new Map(
    s.sensorTypes.map((t, i) => [t.id, buildSensorModel(t, loaded.locate(['sensorTypes', i]))]),
  );
  const volumeMasks = s.volumes.map((v) => rasterizeVolume(v, grid));
  return { loaded, terrain, grid, ground, models, volumeMasks, threads };
}

export function siteOf(session: Session, id: string, where: string): CoverageSite {
  const f = session.loaded.scenario.sites.find((x) => x.properties.id === id);
  if (!f) {
    const ids = session.loaded.scenario.sites.map((x) => x.properties.id);
    throw new InputError(
      where,
      JSON.stringify(id),
      `the id of a site in ${session.loaded.file} (${ids.slice(0, 10).join(', ')}${ids.length > 10 ? ', …' : ''})`,
    );
  }
  const [lon, lat] = f.geometry.coordinates;
  return { id, name: f.properties.name, lon, lat, mastHeightM: f.properties.mastHeightM };
}

export function candidate(session: Session, siteId: string, typeId: string, where: string): Candidate {
  const model = session.models.get(typeId);
  if (!model) {
    throw new InputError(
      where,
      JSON.stringify(typeId),
      `the id of a sensor type in ${session.loaded.file} (${[...session.models.keys()].join(', ')})`,
    );
  }
  const s = session.loaded.scenario;
  return {
    site: siteOf(session, siteId, where),
    model,
    rcsM2: model.spec.targetRcsM2 ?? s.targetRcsM2 ?? model.targetRcsM2,
  };
}

/** Every allowed (site, type) pair of the scenario. */
export function allCandidates(session: Session): Candidate[] {
  const out: Candidate[] = [];
  for (const f of session.loaded.scenario.sites) {
    for (const t of f.properties.allowedTypes ?? [...session.models.keys()])
      out.push(candidate(session, f.properties.id, t, 'sites'));
  }
  return out;
}

/** The sensors of a named layout of the scenario. */
export function layoutCandidates(session: Session, name: string, where: string): Candidate[] {
  const layouts = session.loaded.scenario.layouts ?? [];
  const layout = layouts.find((l) => l.name === name);
  if (!layout) {
    const names = layouts.map((l) => JSON.stringify(l.name)).join(', ') || 'none in the scenario';
    throw new InputError(
      where,
      JSON.stringify(name),
      `the name of a layout in ${session.loaded.file} (${names})`,
    );
  }
  return layout.sensors.map((e) => candidate(session, e.siteId, e.typeId, where));
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
      },
      pool ? pool.executor() : inlineExecutor(terrain),
      { onProgress: (f, stage) => opts.progress?.update(from + span * f, stage) },
    );
    return r.footprints;
  } finally {
    await pool?.close();
  }
}
