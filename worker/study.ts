/**
 * A study: a validated scenario on its terrain, ready to compute — the analysis grid with its ground, the
 * sensor models and the cells of each volume — and what the scenario commands and the web app both derive from
 * it (candidates, layouts, the planner's demand points). No file access: the CLI and the app's engine worker
 * each read the files their own way and call `openStudy`.
 */
import { InputError } from '../shared/errors.ts';
import type { Locator, Scenario } from '../shared/scenario.ts';
import type { Candidate, CoverageSite } from './core/coverage.ts';
import type { Footprint } from './core/footprint.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from './core/grid.ts';
import type { PlanInstance } from './core/plan.ts';
import { buildSensorModel, type SensorModel } from './core/sensor.ts';
import type { Terrain } from './core/terrain.ts';
import { rasterizeVolume, rowAreasKm2 } from './core/volumes.ts';
import { checkAgainstTerrain } from './io/scenario-text.ts';

/** The scenario as a study needs it: where it came from (for messages), its content and its field locator. */
export interface StudyScenario {
  file: string;
  scenario: Scenario;
  locate: Locator;
}

export interface Study<L extends StudyScenario = StudyScenario> {
  loaded: L;
  terrain: Terrain;
  grid: GridGeo;
  ground: Float32Array;
  models: Map<string, SensorModel>;
  /** Cells of each volume (same order as the scenario's volumes). */
  volumeMasks: Uint8Array[];
  threads: number;
}

/** Checks the scenario against the terrain and builds the grid, ground, sensor models and volume masks. */
export function openStudy<L extends StudyScenario>(loaded: L, terrain: Terrain, threads: number): Study<L> {
  const s = loaded.scenario;
  checkAgainstTerrain(s, terrainBounds(terrain), loaded.file, loaded.locate);
  const grid = analysisGrid(loaded, terrain);
  const ground = groundOnGrid(terrain, grid);
  const models = new Map(
    s.sensorTypes.map((t, i) => [t.id, buildSensorModel(t, loaded.locate(['sensorTypes', i]))]),
  );
  const volumeMasks = s.volumes.map((v) => rasterizeVolume(v, grid));
  return { loaded, terrain, grid, ground, models, volumeMasks, threads };
}

/** The analysis grid: the scenario's bounds (or the terrain's extent) in whole cells of cellArcSec. */
export function analysisGrid(loaded: Pick<StudyScenario, 'scenario'>, terrain: Terrain): GridGeo {
  const s = loaded.scenario;
  const cell = s.grid.cellArcSec / 3600;
  const b = s.grid.bounds ?? terrainBounds(terrain);
  const west = Math.floor(b.west / cell + 1e-9) * cell;
  const north = Math.ceil(b.north / cell - 1e-9) * cell;
  const width = Math.max(1, Math.round((b.east - west) / cell));
  const height = Math.max(1, Math.round((north - b.south) / cell));
  return { width, height, originX: west, originY: north, pixelX: cell, pixelY: -cell, crs: WGS84_GEOGRAPHIC };
}

/** Lon/lat extent of the terrain (its corners and edge midpoints mapped back to lon/lat). */
export function terrainBounds(terrain: Terrain): {
  west: number;
  south: number;
  east: number;
  north: number;
} {
  const g = terrain.geo;
  const ll = [0, 0];
  let west = Infinity;
  let east = -Infinity;
  let south = Infinity;
  let north = -Infinity;
  for (let i = 0; i <= 8; i++) {
    for (const [x, y] of [
      [(i / 8) * g.width, 0],
      [(i / 8) * g.width, g.height],
      [0, (i / 8) * g.height],
      [g.width, (i / 8) * g.height],
    ]) {
      terrain.pixelToLonLat(x, y, ll);
      west = Math.min(west, ll[0]);
      east = Math.max(east, ll[0]);
      south = Math.min(south, ll[1]);
      north = Math.max(north, ll[1]);
    }
  }
  return { west, south, east, north };
}

export function groundOnGrid(terrain: Terrain, grid: GridGeo): Float32Array {
  const out = new Float32Array(grid.width * grid.height);
  for (let r = 0; r < grid.height; r++) {
    const lat = grid.originY + (r + 0.5) * grid.pixelY;
    for (let c = 0; c < grid.width; c++)
      out[r * grid.width + c] = terrain.sampleLonLat(grid.originX + (c + 0.5) * grid.pixelX, lat);
  }
  return out;
}

export function siteOf(session: Study, id: string, where: string): CoverageSite {
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

export function candidate(session: Study, siteId: string, typeId: string, where: string): Candidate {
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
export function allCandidates(session: Study): Candidate[] {
  const out: Candidate[] = [];
  for (const f of session.loaded.scenario.sites) {
    for (const t of f.properties.allowedTypes ?? [...session.models.keys()])
      out.push(candidate(session, f.properties.id, t, 'sites'));
  }
  return out;
}

/** The sensors of a named layout of the scenario. */
export function layoutCandidates(session: Study, name: string, where: string): Candidate[] {
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

export interface Demand {
  instancePoints: PlanInstance['points'];
  /** Per point: the volume index, the cell and the flight level index. */
  volume: Uint16Array;
  cell: Uint32Array;
  level: Uint8Array;
}

/** Demand points of every volume at the scenario's levels in its band. */
export function buildDemand(session: Study, fls: readonly number[]): Demand {
  const s = session.loaded.scenario;
  const rows = rowAreasKm2(session.grid);
  const W = session.grid.width;
  const vol: number[] = [];
  const cell: number[] = [];
  const level: number[] = [];
  s.volumes.forEach((v, vi) => {
    fls.forEach((fl, f) => {
      if (fl < v.flMin || fl > v.flMax) return;
      const m = session.volumeMasks[vi];
      for (let c = 0; c < m.length; c++) {
        if (!m[c]) continue;
        vol.push(vi);
        cell.push(c);
        level.push(f);
      }
    });
  });
  const n = vol.length;
  const weight = new Float64Array(n);
  const reqAny = new Uint8Array(n);
  const reqPrimary = new Uint8Array(n);
  const reqSecondary = new Uint8Array(n);
  for (let p = 0; p < n; p++) {
    const v = s.volumes[vol[p]];
    weight[p] = rows[(cell[p] / W) | 0] * (v.weight ?? 1);
    reqAny[p] = v.requiredFold.any ?? 0;
    reqPrimary[p] = v.requiredFold.primary ?? 0;
    reqSecondary[p] = v.requiredFold.secondary ?? 0;
    if (reqAny[p] + reqPrimary[p] + reqSecondary[p] === 0) reqAny[p] = 1;
  }
  return {
    instancePoints: { count: n, weight, reqAny, reqPrimary, reqSecondary },
    volume: Uint16Array.from(vol),
    cell: Uint32Array.from(cell),
    level: Uint8Array.from(level),
  };
}

/** The demand points a footprint covers, in increasing order. */
export function coveredPoints(fp: Footprint, d: Demand, altitudesM: readonly number[]): Uint32Array {
  const out: number[] = [];
  const { cell, level } = d;
  for (let p = 0; p < cell.length; p++) {
    const c = cell[p];
    const h = altitudesM[level[p]];
    if (fp.lo[c] <= h && h <= fp.hi[c]) out.push(p);
  }
  return Uint32Array.from(out);
}
