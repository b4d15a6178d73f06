/**
 * A study: a validated scenario on its terrain, ready to compute — the analysis grid with its ground, the
 * sensor models and the cells of each volume — and what the scenario commands and the web app both derive from
 * it (candidates, layouts, the planner's demand points). No file access: the CLI and the app's engine worker
 * each read the files their own way and call `openStudy`.
 */
import { InputError } from '../../shared/errors.ts';
import type { Locator, Scenario, Volume } from '../../shared/scenario.ts';
import type { Candidate, CoverageSite } from '../core/coverage.ts';
import type { Footprint } from '../core/footprint.ts';
import { MAX_NETWORK_LEVELS, Network } from '../core/network.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../core/grid.ts';
import { countingKinds, type AccuracyDemand, type PlanInstance } from '../core/plan.ts';
import { FOLD_KINDS, type SensorKind } from '../../shared/sensor-kinds.ts';
import type { MemoryAccount } from '../core/memory-estimate.ts';
import { describeTarget, type SensorModel, type Target } from '../core/sensor.ts';
import { buildSensorModel } from '../core/sensor-model.ts';
import { trueAltitudeM, STANDARD_DAY, type Day } from '../core/altimetry.ts';
import { flToMetres } from '../../shared/units.ts';
import type { Terrain } from '../core/terrain.ts';
import { cellsAtLevel, rasterizeVolume, rowAreasKm2 } from '../core/volumes.ts';
import { checkAgainstTerrain } from './scenario-text.ts';

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
  /** The study's targets: [0] the scenario's, then each distinct target a volume gives for itself. */
  targets: Target[];
  /** Per volume, its target's index in `targets`. */
  volumeTargets: number[];
  threads: number;
}

/** Checks the scenario against the terrain and builds the grid, ground, sensor models and volume masks. */
export function openStudy<L extends StudyScenario>(
  loaded: L,
  terrain: Terrain,
  threads: number,
  /** The levels this run computes when not the scenario's (`coverage --fl`), and where they were given. */
  runLevels?: { list: readonly number[]; where: string },
): Study<L> {
  const s = loaded.scenario;
  if (runLevels) checkNetworkLevels(s, runLevels.list, loaded.locate, runLevels.where);
  else checkNetworkLevels(s, s.flightLevels, loaded.locate);
  checkAgainstTerrain(s, terrainBounds(terrain), loaded.file, loaded.locate);
  const grid = analysisGrid(loaded, terrain);
  const ground = groundOnGrid(terrain, grid);
  const models = new Map(
    s.sensorTypes.map((t, i) => [t.id, buildSensorModel(t, loaded.locate(['sensorTypes', i]))]),
  );
  const volumeMasks = s.volumes.map((v) => rasterizeVolume(v, grid));
  const { targets, volumeTargets } = studyTargets(s);
  return { loaded, terrain, grid, ground, models, volumeMasks, targets, volumeTargets, threads };
}

/**
 * The analysis grid: the scenario's bounds (or the terrain's extent) in whole cells of cellArcSec. `terrain` may
 * be null when the scenario gives its bounds (the grid is then known before the terrain is decoded).
 */
export function analysisGrid(loaded: Pick<StudyScenario, 'scenario'>, terrain: Terrain | null): GridGeo {
  const s = loaded.scenario;
  const cell = s.grid.cellArcSec / 3600;
  const b = s.grid.bounds ?? (terrain ? terrainBounds(terrain) : null);
  if (b === null) throw new Error('analysisGrid: no bounds in the scenario and no terrain to take them from');
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
  return {
    id,
    name: f.properties.name,
    lon,
    lat,
    mastHeightM: f.properties.mastHeightM,
    tiltDeg: f.properties.tiltDeg ?? 0,
  };
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
  return { site: siteOf(session, siteId, where), model, target: studyTarget(session.loaded.scenario) };
}

/** The aircraft the study is about: the scenario's target, or a volume's own where it gives one. */
export function studyTarget(
  s: Pick<Scenario, 'targetRcsM2' | 'targetFluctuation' | 'targetTransponder'>,
  v?: Pick<Volume, 'targetRcsM2' | 'targetFluctuation' | 'targetTransponder'>,
): Target {
  return {
    rcsM2: v?.targetRcsM2 ?? s.targetRcsM2,
    fluctuation: v?.targetFluctuation ?? s.targetFluctuation,
    transponder: v?.targetTransponder ?? s.targetTransponder,
  };
}

/** The distinct targets of a study ([0] the scenario's) and each volume's index among them. */
export function studyTargets(s: Scenario): { targets: Target[]; volumeTargets: number[] } {
  const targets = [studyTarget(s)];
  const key = (t: Target) => `${t.rcsM2}|${t.fluctuation}|${t.transponder}`;
  const volumeTargets = s.volumes.map((v) => {
    const t = studyTarget(s, v);
    let i = targets.findIndex((x) => key(x) === key(t));
    if (i < 0) i = targets.push(t) - 1;
    return i;
  });
  return { targets, volumeTargets };
}

/**
 * Refuses, before any footprint, a study whose network could not hold its levels: one bit per flight level and
 * target (worker/core/network.ts MAX_NETWORK_LEVELS), the targets being the scenario's and each distinct one that
 * volumes give for themselves (`studyTargets`). `fls` are the levels to compute; `levelsWhere` names where they
 * come from when they are not the scenario's flightLevels. The message blames the levels when they alone are too
 * many (or were chosen for this run), else the volumes whose own targets add levels.
 */
export function checkNetworkLevels(
  s: Scenario,
  fls: readonly number[],
  locate: Locator,
  levelsWhere?: string,
): void {
  const n = new Set(fls).size;
  const { targets, volumeTargets } = studyTargets(s);
  const nT = targets.length;
  const max = MAX_NETWORK_LEVELS;
  if (n * nT <= max) return;
  const own = s.volumes.map((v, i) => ({ id: v.id, i, t: volumeTargets[i] })).filter((v) => v.t > 0);
  const found =
    nT === 1
      ? `${n} flight levels`
      : `${n} flight levels × ${nT} targets = ${n * nT}: the scenario's target and ${nT - 1} own of volume${own.length > 1 ? 's' : ''} ${own.map((v) => JSON.stringify(v.id)).join(', ')}`;
  const room = `at most ${max} flight levels × targets in one network`;
  if (nT === 1 || n > max || levelsWhere !== undefined) {
    throw new InputError(
      levelsWhere ?? locate(['flightLevels']),
      found,
      nT === 1
        ? `at most ${max} flight levels in one network`
        : `${room}: at most ${Math.floor(max / nT)} flight levels with ${nT} targets`,
    );
  }
  throw new InputError(
    own.length === 1 ? locate(['volumes', own[0].i]) : locate(['volumes']),
    found,
    `${room}: with ${n} flight levels at most ${Math.floor(max / n)} targets (let volumes share the scenario's target or one own target), or with ${nT} targets at most ${Math.floor(max / nT)} flight levels`,
  );
}

/** The day of the study (the ISA standard day when the scenario gives none). */
export function studyDay(s: Pick<Scenario, 'day'>): Day {
  return s.day ?? STANDARD_DAY;
}

/** True altitudes (m AMSL) of flight levels (pressure altitudes) on the study's day. */
export function levelAltitudesM(s: Pick<Scenario, 'day'>, fls: readonly number[]): number[] {
  const day = studyDay(s);
  // The standard day is the identity, exactly (not to rounding: footprints hold whole metres).
  if (day.qnhHpa === STANDARD_DAY.qnhHpa && day.isaDeviationC === STANDARD_DAY.isaDeviationC)
    return fls.map(flToMetres);
  return fls.map((fl) => trueAltitudeM(flToMetres(fl), day));
}

/** Warnings of the sensor models (leftover fields), one line each. */
export function modelWarnings(study: Pick<Study, 'models' | 'loaded'>): string[] {
  return [...study.models.values()].flatMap((m) => warningsOf(study, m));
}

/** One model's warnings, each saying which value the study uses instead. */
function warningsOf(study: Pick<Study, 'loaded'>, m: SensorModel): string[] {
  const used = `the study's ${study.loaded.scenario.targetRcsM2} m² (targetRcsM2 of ${study.loaded.file})`;
  return m.warnings.map((w) => `${w}; here: ${used}`);
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
  /** Per point: the index of its volume's target in the study's targets (0 = the scenario's). */
  target: Uint8Array;
  cell: Uint32Array;
  level: Uint8Array;
  /**
   * The points in blocks of one volume at one level, cells ascending within a block: block b is points
   * [blockStart[b], blockStart[b + 1]) at level blockLevel[b] for target blockTarget[b].
   */
  blockStart: Uint32Array;
  blockLevel: Uint8Array;
  blockTarget: Uint8Array;
  /**
   * Per block: the sensor kinds whose candidates count toward its volume's requirement (bit 1 << the kind's slot
   * in FOLD_KINDS, plan/demand.ts `countingKinds`; a volume with an accuracy bound needs receivers of kind mlat).
   */
  blockKinds: Uint8Array;
}

/**
 * Bytes per demand point of `Demand`: its volume (2), cell (4), level (1), target (1), weight (8) and five
 * requirements (1 each).
 */
export const DEMAND_POINT_BYTES = 21;

/** Demand points of every volume at the scenario's levels in its band. */
export function buildDemand(session: Study, fls: readonly number[]): Demand {
  const s = session.loaded.scenario;
  const rows = rowAreasKm2(session.grid);
  const W = session.grid.width;
  const altitudes = levelAltitudesM(s, fls);
  // Two passes: the level masks first (to size the arrays), then the points.
  const blocks: { vi: number; f: number; mask: Uint8Array; count: number }[] = [];
  s.volumes.forEach((v, vi) => {
    fls.forEach((fl, f) => {
      const m = cellsAtLevel(v, session.volumeMasks[vi], fl, altitudes[f], session.ground);
      if (m === null) return;
      let count = 0;
      for (let c = 0; c < m.length; c++) if (m[c]) count++;
      if (count > 0) blocks.push({ vi, f, mask: m, count });
    });
  });
  const n = blocks.reduce((a, b) => a + b.count, 0);
  const volume = new Uint16Array(n);
  const cell = new Uint32Array(n);
  const level = new Uint8Array(n);
  const target = new Uint8Array(n);
  const weight = new Float64Array(n);
  const reqAny = new Uint8Array(n);
  const reqPrimary = new Uint8Array(n);
  const reqSecondary = new Uint8Array(n);
  const reqAdsb = new Uint8Array(n);
  const reqMlat = new Uint8Array(n);
  const blockStart = new Uint32Array(blocks.length + 1);
  const blockLevel = new Uint8Array(blocks.length);
  const blockTarget = new Uint8Array(blocks.length);
  const blockKinds = new Uint8Array(blocks.length);
  let p = 0;
  blocks.forEach(({ vi, f, mask }, b) => {
    const v = s.volumes[vi];
    const w = v.weight ?? 1;
    let any = v.requiredFold.any ?? 0;
    const primary = v.requiredFold.primary ?? 0;
    const secondary = v.requiredFold.secondary ?? 0;
    const adsb = v.requiredFold.adsb ?? 0;
    const mlat = v.requiredFold.mlat ?? 0;
    // A volume that requires nothing asks for one radar (volumes.ts meets: the same rule).
    if (any + primary + secondary + adsb + mlat === 0) any = 1;
    const t = session.volumeTargets[vi] ?? 0;
    blockStart[b] = p;
    blockLevel[b] = f;
    blockTarget[b] = t;
    // The accuracy bound implies an mlat fold (plan/accuracy.ts withImpliedMlatFolds).
    blockKinds[b] = countingKinds([
      any,
      primary,
      secondary,
      adsb,
      v.requiredMlatAccuracyM !== undefined ? 1 : mlat,
    ]);
    for (let c = 0; c < mask.length; c++) {
      if (!mask[c]) continue;
      volume[p] = vi;
      cell[p] = c;
      level[p] = f;
      target[p] = t;
      weight[p] = rows[(c / W) | 0] * w;
      reqAny[p] = any;
      reqPrimary[p] = primary;
      reqSecondary[p] = secondary;
      reqAdsb[p] = adsb;
      reqMlat[p] = mlat;
      p++;
    }
  });
  blockStart[blocks.length] = p;
  return {
    instancePoints: { count: n, weight, reqAny, reqPrimary, reqSecondary, reqAdsb, reqMlat },
    volume,
    target,
    cell,
    level,
    blockStart,
    blockLevel,
    blockTarget,
    blockKinds,
  };
}

/**
 * The plan's instance (core/plan.ts) for `candidates` with their `footprints` over `demand` — the CLI's
 * `airshade plan` and the app's Plan panel build it alike: every site with its cost (0 when existing), each
 * candidate's kind, type cost and the demand points it covers, the accuracy demand when volumes bound it, the
 * `forced` candidates (those on sites marked existing stand already: nothing new is spent on them), the sites
 * left out, and the solver's limits.
 */
export function planInstance(
  study: Study,
  candidates: readonly { site: CoverageSite; model: SensorModel }[],
  /** Null: each candidate's `covers` left empty, for the caller to hand them to the plan as they come (`beginSolve`). */
  footprints: readonly Footprint[] | null,
  demand: Demand,
  altitudesM: readonly number[],
  opts: {
    forced: number[];
    excludedSiteIds?: Iterable<string>;
    budget?: number;
    timeLimitMs: number;
    solverNodes: number;
    /** The run's memory account: each candidate's cover list is counted in it as it is made. */
    memory?: MemoryAccount;
  },
): PlanInstance {
  const s = study.loaded.scenario;
  const siteIndex = new Map(s.sites.map((f, i) => [f.properties.id, i]));
  return {
    sites: s.sites.map((f) => ({
      id: f.properties.id,
      cost: f.properties.siteCost,
      existing: f.properties.existing,
    })),
    candidates: candidates.map((c, i) => ({
      siteIndex: siteIndex.get(c.site.id)!,
      typeId: c.model.spec.id,
      kind: c.model.kind,
      cost: c.model.spec.cost,
      covers:
        footprints === null
          ? new Uint32Array(0)
          : counted(coveredPoints(footprints[i], demand, altitudesM, c.model.kind), opts.memory),
    })),
    points: demand.instancePoints,
    accuracy: accuracyDemand(study, demand, candidates, altitudesM),
    forced: opts.forced,
    standing: opts.forced.filter((c) => s.sites[siteIndex.get(candidates[c].site.id)!].properties.existing),
    excludedSites: [...(opts.excludedSiteIds ?? [])].map((id) => siteIndex.get(id)!),
    ...(opts.budget !== undefined ? { budget: opts.budget } : {}),
    timeLimitMs: opts.timeLimitMs,
    solverNodes: opts.solverNodes,
  };
}

/**
 * The plan's multilateration accuracy demand (plan/accuracy.ts): the demand points of volumes with a bound
 * (`requiredMlatAccuracyM`), the target over each point's cell centre at its level's altitude, and every
 * candidate's antenna (ground under the site + mast) and arrival-time error. Undefined when no volume has a bound.
 */
export function accuracyDemand(
  study: Study,
  demand: Demand,
  candidates: readonly { site: CoverageSite; model: SensorModel }[],
  altitudesM: readonly number[],
): AccuracyDemand | undefined {
  const s = study.loaded.scenario;
  if (!s.volumes.some((v) => v.requiredMlatAccuracyM !== undefined)) return undefined;
  const list: number[] = [];
  const bounds: number[] = [];
  for (let p = 0; p < demand.cell.length; p++) {
    const b = s.volumes[demand.volume[p]].requiredMlatAccuracyM;
    if (b === undefined) continue;
    list.push(p);
    bounds.push(b);
  }
  const g = study.grid;
  const target = new Float64Array(3 * list.length);
  list.forEach((p, i) => {
    const c = demand.cell[p];
    target[3 * i] = g.originX + ((c % g.width) + 0.5) * g.pixelX;
    target[3 * i + 1] = g.originY + (Math.floor(c / g.width) + 0.5) * g.pixelY;
    target[3 * i + 2] = altitudesM[demand.level[p]];
  });
  const antenna = new Float64Array(3 * candidates.length);
  const timingErrorNs = new Float64Array(candidates.length).fill(NaN);
  candidates.forEach((c, j) => {
    antenna[3 * j] = c.site.lon;
    antenna[3 * j + 1] = c.site.lat;
    antenna[3 * j + 2] = study.terrain.sampleLonLat(c.site.lon, c.site.lat) + c.site.mastHeightM;
    const t = (c.model.spec as { timingErrorNs?: number }).timingErrorNs;
    if (c.model.kind === 'mlat' && t !== undefined) timingErrorNs[j] = t;
  });
  return {
    points: Uint32Array.from(list),
    boundM: Float64Array.from(bounds),
    target,
    antenna,
    timingErrorNs,
    altitudeKnown: s.mlatAltitudeAided,
  };
}

/** A candidate's cover list, counted in the run's memory account when it has one. */
function counted(covers: Uint32Array, memory: MemoryAccount | undefined): Uint32Array {
  memory?.take(covers.byteLength, 'the demand points each candidate covers');
  return covers;
}

/** Grown as needed and reused: the cover list of one footprint before it is copied out. */
let coverScratch = new Uint32Array(0);

/**
 * The demand points a footprint covers (each with its volume's target), in increasing order. Per block of points
 * (one volume at one level) only the points in the rows of the footprint's window are looked at. With `kind` (the
 * sensor's), only the blocks whose volume's requirement that kind counts toward: the plan ignores the others
 * (PlanInstance `covers`), and on the national benchmark they are most of the primaries' points.
 */
export function coveredPoints(
  fp: Footprint,
  d: Demand,
  altitudesM: readonly number[],
  kind?: SensorKind,
): Uint32Array {
  return coveredPointsView(fp, d, altitudesM, kind).slice();
}

/**
 * `coveredPoints` as a view of one scratch array (as long as the demand's points, grown once): valid until the next
 * call, for a caller that reads the list at once (the plan's grouping) — no fresh array per candidate, which cost
 * more than finding the points (page faults on fresh memory; on the 6° × 6° box 5.6 of 8.9 s).
 */
export function coveredPointsView(
  fp: Footprint,
  d: Demand,
  altitudesM: readonly number[],
  kind?: SensorKind,
): Uint32Array {
  const { cell, blockStart, blockLevel, blockTarget, blockKinds } = d;
  const byTarget = [fp, ...(fp.byTarget ?? [])];
  if (coverScratch.length < cell.length) coverScratch = new Uint32Array(cell.length);
  const out = coverScratch;
  const bit = kind === undefined ? 0 : 1 << FOLD_KINDS.indexOf(kind);
  let n = 0;
  for (let b = 0; b < blockLevel.length; b++) {
    if (bit !== 0 && (blockKinds[b] & bit) === 0) continue;
    const f = byTarget[blockTarget[b]];
    let p0 = blockStart[b];
    let p1 = blockStart[b + 1];
    const w = f.window;
    if (w.row1 <= w.row0 || w.col1 <= w.col0) continue;
    p0 = lowerBound(cell, p0, p1, w.row0 * w.width + w.col0);
    p1 = lowerBound(cell, p0, p1, (w.row1 - 1) * w.width + w.col1);
    n = coverRun(f, cell, altitudesM[blockLevel[b]], p0, p1, out, n);
  }
  return out.subarray(0, n);
}

/** The first index in [from, to) whose cell is ≥ c (cells ascending there); `to` if none. */
function lowerBound(cell: Uint32Array, from: number, to: number, c: number): number {
  let a = from;
  let b = to;
  while (a < b) {
    const m = (a + b) >>> 1;
    if (cell[m] < c) a = m + 1;
    else b = m;
  }
  return a;
}

/**
 * Appends to `out` from `n` the points of [p0, p1) whose cell's interval holds h; returns the new count. The points'
 * cells ascend, so each window row's points are one run: found by a binary search for the row's first window
 * column, read up to its last, and the next row's searched from there (the points outside the window's columns
 * are never read: on the national benchmark most of a short-range type's rows).
 */
function coverRun(
  fp: Footprint,
  cell: Uint32Array,
  h: number,
  p0: number,
  p1: number,
  out: Uint32Array,
  n: number,
): number {
  const { lo, hi, window: w } = fp;
  const W = w.width;
  const ww = w.col1 - w.col0;
  let p = p0;
  for (let r = p < p1 ? Math.max(w.row0, Math.floor(cell[p] / W)) : w.row1; r < w.row1 && p < p1; r++) {
    const first = r * W + w.col0;
    const end = r * W + w.col1;
    p = lowerBound(cell, p, p1, first);
    // Window index of cell c on this row: c + off.
    const off = (r - w.row0) * ww - first;
    for (; p < p1; p++) {
      const c = cell[p];
      if (c >= end) break;
      const i = c + off;
      if (lo[i] <= h && h <= hi[i]) out[n++] = p;
    }
    // The next row with a point at or after this one's end.
    if (p < p1) r = Math.max(r, Math.floor(cell[p] / W) - 1);
  }
  return n;
}

/**
 * What a result means, for every output (summary, layers, report, app): the target, the day, the refraction, what
 * "seen" means and each sensor type's specification convention.
 */
export interface StudyConventions {
  target: Target & { text: string };
  /** Volumes that study their own target. */
  volumeTargets: { volumeId: string; text: string }[];
  day: Day & { text: string };
  /** Each level's true altitude on the day. */
  levels: { flightLevel: number; pressureAltitudeM: number; trueAltitudeM: number }[];
  kFactor: number;
  multipath: 'auto' | 'off';
  seen: string;
  sensorTypes: { id: string; convention: string; warnings: string[] }[];
  /** Parts of volume bands no computed level stands for (their requirement is not evaluated there). */
  unevaluated: string[];
}

export const SEEN_TEXT =
  'seen = a primary detects the target with its type’s Pd at its type’s Pfa (the target’s RCS and Swerling case), ' +
  'or a secondary closes both links (interrogation to the transponder’s minimum triggering level, reply to the ' +
  'receiver’s sensitivity), in line of sight over the terrain on the effective earth, within the instrumented ' +
  'range and below the cone of silence; flight levels are pressure altitudes, taken at their true altitude on the day';

export function dayText(day: Day): string {
  return day.qnhHpa === 1013.25 && day.isaDeviationC === 0
    ? 'ISA standard day (QNH 1013.25 hPa, ISA +0 °C)'
    : `QNH ${day.qnhHpa} hPa, ISA ${day.isaDeviationC >= 0 ? '+' : '−'}${Math.abs(day.isaDeviationC)} °C`;
}

export function studyConventions(
  study: Pick<Study, 'loaded' | 'models'>,
  fls: readonly number[],
  altitudesM: readonly number[] = levelAltitudesM(study.loaded.scenario, fls),
): StudyConventions {
  const s = study.loaded.scenario;
  const target = studyTarget(s);
  const day = studyDay(s);
  return {
    target: { ...target, text: describeTarget(target) },
    volumeTargets: s.volumes
      .filter(
        (v) =>
          v.targetRcsM2 !== undefined ||
          v.targetFluctuation !== undefined ||
          v.targetTransponder !== undefined,
      )
      .map((v) => ({ volumeId: v.id, text: describeTarget(studyTarget(s, v)) })),
    day: { ...day, text: dayText(day) },
    levels: fls.map((fl, i) => ({
      flightLevel: fl,
      pressureAltitudeM: flToMetres(fl),
      trueAltitudeM: altitudesM[i],
    })),
    kFactor: s.earth.kFactor,
    multipath: s.multipath,
    seen: SEEN_TEXT,
    unevaluated: unevaluatedBands(s.volumes, fls),
    sensorTypes: [...study.models.values()].map((m) => ({
      id: m.spec.id,
      convention: m.convention,
      warnings: warningsOf(study, m),
    })),
  };
}

/** The conventions in a few lines for the screen. */
export function conventionsText(c: StudyConventions): string {
  const lines = [
    `target: ${c.target.text}`,
    ...c.volumeTargets.map((v) => `  volume ${v.volumeId}: ${v.text}`),
    `day: ${c.day.text}; k = ${+c.kFactor.toFixed(4)}; sea lobing: ${c.multipath}`,
  ];
  if (c.day.qnhHpa !== 1013.25 || c.day.isaDeviationC !== 0)
    lines.push(
      `true altitudes: ${c.levels.map((l) => `FL${String(l.flightLevel).padStart(3, '0')} ${l.trueAltitudeM.toFixed(0)} m`).join(', ')}`,
    );
  for (const u of c.unevaluated) lines.push(`warning: ${u}`);
  return lines.join('\n');
}

/**
 * Where a volume's flight-level band reaches beyond the computed levels: its lowest (highest) band level is not
 * computed, so the band's bottom (top) is not evaluated and "meets the requirement" does not speak for it. One
 * line per such volume, naming it, the band, the levels computed in it and what to add. (Bands given as altitudes
 * are evaluated at whichever computed levels fall inside them, per cell for AGL; none computed in one is said too.)
 */
export function unevaluatedBands(
  volumes: readonly Pick<Volume, 'id' | 'name' | 'flMin' | 'flMax' | 'altitudeBand'>[],
  fls: readonly number[],
): string[] {
  const out: string[] = [];
  const fmt = (fl: number) => `FL${String(fl).padStart(3, '0')}`;
  for (const v of volumes) {
    const inBand = fls.filter((fl) => fl >= v.flMin && fl <= v.flMax);
    if (v.altitudeBand !== undefined) {
      if (inBand.length === 0)
        out.push(
          `volume ${v.id} (${v.name}): no computed flight level lies in its band; it is not evaluated`,
        );
      continue;
    }
    const band = `${fmt(v.flMin)}–${fmt(v.flMax)}`;
    if (inBand.length === 0) {
      out.push(
        `volume ${v.id} (${v.name}): no computed level lies in its band ${band}; it is not evaluated — add its levels`,
      );
      continue;
    }
    const lo = inBand[0];
    const hi = inBand[inBand.length - 1];
    const missing: string[] = [];
    if (lo > v.flMin) missing.push(`${fmt(v.flMin)} up to ${fmt(lo)}`);
    if (hi < v.flMax) missing.push(`above ${fmt(hi)} up to ${fmt(v.flMax)}`);
    if (missing.length > 0)
      out.push(
        `volume ${v.id} (${v.name}): its band ${band} is evaluated only at ${inBand.map(fmt).join(', ')}; ${missing.join(' and ')} is not evaluated — add ${[
          v.flMin,
          v.flMax,
        ]
          .filter((x) => !inBand.includes(x))
          .map(fmt)
          .join(' and ')} to the flight levels`,
      );
  }
  return out;
}

/** The conventions as a layer collection's metadata: the target, the day, k, what "seen" means. */
export function layerMeta(c: StudyConventions): Record<string, unknown> {
  return {
    target: c.target.text,
    volumeTargets: c.volumeTargets.length ? c.volumeTargets : undefined,
    day: c.day.text,
    kFactor: c.kFactor,
    multipath: c.multipath,
    seen: c.seen,
    unevaluated: c.unevaluated.length ? c.unevaluated : undefined,
  };
}

/**
 * The network of a study's footprints at flight levels `fls`: true altitudes on the study's day, and the folds of
 * each volume's own target only at the levels of that volume's band.
 */
export function studyNetwork(
  study: Pick<Study, 'loaded' | 'grid' | 'volumeTargets' | 'targets'>,
  fls: readonly number[],
  footprints: readonly Footprint[],
  active?: readonly boolean[],
): Network {
  return new Network(
    study.grid.width * study.grid.height,
    levelAltitudesM(study.loaded.scenario, fls),
    footprints,
    active,
    targetLevelMasks(study, fls),
  );
}

/**
 * The study's network with no sensor yet, for the sensors of `kinds` to be added site by site as their footprints
 * are done (`Network.addSite`); the same network as `studyNetwork` of the same footprints in the same order.
 */
export function grownStudyNetwork(
  study: Pick<Study, 'loaded' | 'grid' | 'volumeTargets' | 'targets'>,
  fls: readonly number[],
  kinds: ReadonlySet<string>,
): Network {
  return new Network(
    study.grid.width * study.grid.height,
    levelAltitudesM(study.loaded.scenario, fls),
    [],
    undefined,
    targetLevelMasks(study, fls),
    { kinds, targets: study.targets.length },
  );
}

/** Per volume target t ≥ 1, the levels (bits) its volumes' bands need its folds at. */
function targetLevelMasks(
  study: Pick<Study, 'loaded' | 'volumeTargets' | 'targets'>,
  fls: readonly number[],
): number[] {
  const masks = study.targets.slice(1).map(() => 0);
  study.loaded.scenario.volumes.forEach((v, vi) => {
    const t = study.volumeTargets[vi];
    if (!t) return;
    fls.forEach((fl, f) => {
      if (fl >= v.flMin && fl <= v.flMax) masks[t - 1] |= 1 << f;
    });
  });
  return masks;
}
