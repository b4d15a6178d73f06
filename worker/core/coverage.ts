/**
 * The coverage job: line-of-sight floors per site, footprints per (site, type), and the network they form.
 *
 *   per site:  computeFloor's job on the analysis grid (pooled: sweep + resample)  → floor, distance
 *   per type:  sensorBand (sensor limits vs distance)  ×  floor              → footprint (lo, hi per cell)
 *
 * Work follows the area a site sees, not the study: the site's rows within its range box are resampled, and each
 * footprint is computed in the box of its band's reach (`Footprint.window`; no cover outside it).
 *   network:   distinct sites per cell and flight level, per kind           → folds, network floor, stats
 *
 * Sensor types on one site share its floor (the horizon cache makes a second run with the same sites free).
 */
import { readableBy, type Executor, type FloorRequest, type Progress } from './floor.ts';
import { VectorMap } from './geodesy.ts';
import { gridMapper } from './grid.ts';
import { horizonBufferLength, horizonLevels, planHorizon, type HorizonSpec } from './horizon.ts';
import { growRegion, type WasmMemory } from './radial-kernel.ts';
import {
  buildFootprint,
  NO_COVER_LO,
  seaBand,
  sensorBand,
  type Footprint,
  type FootprintWindow,
  type SeaChoice,
} from './footprint.ts';
import { firstLobeFactor, reflectionDistanceM, type Polarization } from './multipath.ts';
import type { GridGeo } from './grid.ts';
import type { HorizonCache } from './horizon-cache.ts';
import type { TerrainRaster } from './horizon.ts';
import type { SensorModel, Target } from './sensor.ts';

export interface CoverageSite {
  id: string;
  name: string;
  lon: number;
  lat: number;
  mastHeightM: number;
  /** Antenna tilt, degrees (default 0). */
  tiltDeg?: number;
}

export interface Candidate {
  site: CoverageSite;
  model: SensorModel;
  /** The aircraft this footprint is for (the study's, or a volume's own). */
  target: Target;
}

export interface CoverageRequest {
  grid: GridGeo;
  /** Terrain height under each analysis cell centre (m), NaN where unknown. */
  ground: Float32Array;
  candidates: readonly Candidate[];
  kFactor: number;
  earthRadiusM?: number;
  /** Upper bound on ranges computed (m); each site also stops at its longest sensor range. */
  maxRangeM: number;
  weather?: boolean;
  /** Gaseous attenuation (default true). */
  atmosphere?: boolean;
  /**
   * The study's other targets (volumes with their own): each footprint then carries the same sensor's footprints
   * for them in `byTarget`, from the same floor (the band alone depends on the target).
   */
  extraTargets?: readonly Target[];
  /**
   * Over-sea lobing (multipath.ts, first-lobe factor) where the specular reflection point lies over sea (surface
   * within ±SEA_LEVEL_TOLERANCE_M of 0 m); default off. Needs a geographic analysis grid (else not applied).
   */
  multipath?: boolean;
  /** Range step along the radials (default: one terrain pixel at the site). */
  rangeStepM?: number;
  /** Arc between neighbouring radials (default: 0.75 of the analysis cell's shorter side). */
  arcStepM?: number;
}

export interface SiteFloor {
  site: CoverageSite;
  floor: Float32Array;
  distance: Float32Array;
  antennaAltM: number;
  groundM: number;
}

export async function computeFootprints(
  terrain: TerrainRaster,
  req: CoverageRequest,
  exec: Executor,
  opts: {
    onProgress?: Progress;
    cache?: HorizonCache;
    /** Called as each site is done, with its candidates' footprints in order (e.g. to store them at once). */
    onSiteDone?: (site: CoverageSite, footprints: Footprint[]) => void | Promise<void>;
    /**
     * Return every site's floor and distances (`siteFloors`; empty otherwise). Two grid-sized arrays a site, kept to
     * the end: on the national benchmark at 60″, 3.2 GB; so only for tools that read them.
     */
    keepSiteFloors?: boolean;
    /**
     * Which footprints the result keeps (default all): a caller that hands each site's footprints on in
     * `onSiteDone` (e.g. to a network that counts and lets them go) keeps only those it reads after.
     */
    retain?: (fp: Footprint) => boolean;
  } = {},
): Promise<{ footprints: Footprint[]; siteFloors: SiteFloor[] }> {
  const bySite = new Map<string, Candidate[]>();
  for (const c of req.candidates) {
    const list = bySite.get(c.site.id) ?? [];
    list.push(c);
    bySite.set(c.site.id, list);
  }
  const reM = req.kFactor * (req.earthRadiusM ?? 6_371_000);
  const arcStepM = req.arcStepM ?? 1.5 * halfCellM(req.grid);
  const footprints: Footprint[] = [];
  const siteFloors: SiteFloor[] = [];
  let done = 0;
  // Pipelined: while the pool computes one site's floor, this thread turns the previous site's into footprints.
  const groups = [...bySite.values()];
  const reachOf = (cands: Candidate[]) =>
    Math.min(req.maxRangeM, Math.max(...cands.map((c) => c.model.instrumentedRangeM)));
  const rangeStepOf = (site: CoverageSite) => req.rangeStepM ?? terrainPixelM(terrain, site);
  // One polar buffer serves every site in turn (a site's sweep starts only once the previous site's resampling is
  // done): fresh memory costs a page fault per 4 KiB here, about a fifth of the time with a buffer per site. In the
  // terrain's WebAssembly memory, which cannot give a buffer back, it is sized at once for the largest site of the
  // call (its reach and range step bound the layout's samples: `horizonLevels`), and one left by an earlier call
  // that is large enough serves again.
  let polarBytes = 0;
  if (terrain.memory && !opts.cache) {
    for (const c of req.candidates) {
      const l = horizonLevels(reachOf([c]), rangeStepOf(c.site), arcStepM);
      polarBytes = Math.max(polarBytes, 4 * (l.totalSamples + l.radialCount));
    }
  }
  const spare: Spare = { polar: takeFreePolar(terrain, polarBytes), grids: [], polarBytes, owned: new Set() };
  if (spare.polar) spare.owned.add(spare.polar);
  const ground = readableBy(exec, req.ground);
  const floorOf = (cands: Candidate[]) => {
    const site = cands[0].site;
    return siteFloor(
      terrain,
      {
        lon: site.lon,
        lat: site.lat,
        mastM: site.mastHeightM,
        kFactor: req.kFactor,
        earthRadiusM: req.earthRadiusM,
        maxRangeM: reachOf(cands),
        arcStepM,
        // One terrain pixel between range samples: analysis cells are many terrain pixels wide, and the finer
        // step of the engine's default buys nothing at that scale (test/coverage.test.ts checks the radar horizon).
        rangeStepM: rangeStepOf(site),
      },
      req.grid,
      ground,
      exec,
      opts.cache ?? null,
      spare,
      (f, stage) => opts.onProgress?.((done + f) / groups.length, `${site.name}: ${stage}`),
    );
  };
  const footprintFor = (
    c: Candidate,
    target: Target,
    res: SiteRun,
    maxRangeM: number,
    sea: SeaMask | null,
  ): Footprint => {
    const { antennaAltM } = res;
    const profile = c.model.profile({
      target,
      antennaAltM,
      tiltDeg: c.site.tiltDeg,
      weather: req.weather,
      atmosphere: req.atmosphere,
    });
    const band = sensorBand(profile, { antennaAltM, reM, maxRangeM });
    // Cells beyond the band's last detected row are never covered: the footprint is computed in the box within
    // that reach (and within the site's own box); every cell outside it has no cover.
    const window = intersectWindows(res.window, rangeWindow(req.grid, c.site, bandReachM(band)));
    let choice: SeaChoice | undefined;
    if (sea !== null) {
      const tiltRad = ((c.site.tiltDeg ?? 0) * Math.PI) / 180;
      const model = c.model;
      const fMHz = model.frequencyMHz;
      const voltage = (e: number) => Math.sqrt(model.patternGain(e, tiltRad));
      const h1 = Math.max(0, antennaAltM);
      const lobing = (s: number, h: number) =>
        firstLobeFactor(h1, Math.max(0, h), s, reM, fMHz, LOBING_POLARIZATION, voltage);
      const over = seaBand(profile, band, { antennaAltM, reM }, lobing);
      const d1M = new Float64Array(over.lo.length);
      for (let k = 0; k < d1M.length; k++) {
        const h = over.lo[k];
        d1M[k] = h === h ? reflectionDistanceM(h1, Math.max(0, h), k * over.stepM, reM) : NaN;
      }
      choice = { band: over, d1M, ...sea };
    }
    const fp = buildFootprint(c.site.id, c.model, res.floor, res.distance, band, choice, window);
    if (c.model.sector) dropOutsideSector(fp, req.grid, c.site, c.model.sector);
    return fp;
  };
  // One site ahead (two ran the demo no faster once the pool posts its pieces at once, for 70 MiB more).
  let next = groups.length > 0 ? floorOf(groups[0]) : null;
  try {
    for (let g = 0; g < groups.length; g++) {
      const cands = groups[g];
      const site = cands[0].site;
      const res = await next!;
      // The polar buffer is free again (the resampling is done): the next site's sweep takes it.
      if (!opts.cache) spare.polar = res.polar;
      next = g + 1 < groups.length ? floorOf(groups[g + 1]) : null;
      const { distance, maxRangeM } = res;
      if (opts.keepSiteFloors) {
        siteFloors.push({
          site,
          floor: res.floor,
          distance,
          antennaAltM: res.antennaAltM,
          groundM: res.groundM,
        });
      }
      const sea = req.multipath ? seaMask(terrain, req.grid, site, distance, maxRangeM, res.window) : null;
      const first = footprints.length;
      for (const c of cands) {
        // Between footprints, let a pool's replies in: the next site's sweep ends while this thread works, and its
        // resampling is posted from here; without the pause the workers idled that long (about 1 s of 10 on the
        // demo's 33 sites). Inline there is nothing to let in.
        if (exec.shared) await yieldToEvents();
        const fp = footprintFor(c, c.target, res, maxRangeM, sea);
        if (req.extraTargets?.length) {
          // Targets that differ only in what this type does not depend on share its footprint.
          const key0 = c.model.targetKey(c.target);
          fp.byTarget = req.extraTargets.map((t) =>
            c.model.targetKey(t) === key0 ? fp : footprintFor(c, t, res, maxRangeM, sea),
          );
        }
        footprints.push(fp);
      }
      await opts.onSiteDone?.(site, footprints.slice(first));
      const retain = opts.retain;
      if (retain !== undefined) {
        let kept = first;
        for (let i = first; i < footprints.length; i++)
          if (retain(footprints[i])) footprints[kept++] = footprints[i];
        footprints.length = kept;
      }
      // The footprints are built: the site's floor and distances serve a later site (unless handed out).
      if (!opts.keepSiteFloors) spare.grids.push(res.floor, res.distance);
      done++;
      opts.onProgress?.(done / groups.length, `${site.name}: done`);
    }
  } catch (e) {
    // The site ahead is left: its failure, if any, is not this run's to report (this one is).
    next?.catch(() => {});
    throw e;
  } finally {
    // Polar buffers in the terrain's memory outlive the call (the memory cannot give them back): once no sweep of
    // this call can still write into them (the site ahead settled), the next call on this terrain takes them.
    if (terrain.memory && spare.owned.size > 0) {
      await next?.then(
        () => {},
        () => {},
      );
      for (const p of spare.owned) giveFreePolar(terrain.memory, p);
    }
  }
  return { footprints, siteFloors };
}

/**
 * Waits for every piece, then throws the first failure (a cancelled job's, a worker's): once this settles no piece
 * still writes into the site's buffers, which the call may hand to another (`Spare`).
 */
async function settled(jobs: Promise<unknown>[]): Promise<void> {
  const results = await Promise.allSettled(jobs);
  for (const r of results) if (r.status === 'rejected') throw r.reason;
}

/**
 * A pause that lets pending events (worker replies) run first: setImmediate where the platform has it (Node), else
 * a zero timeout.
 */
function yieldToEvents(): Promise<void> {
  const g = globalThis as { setImmediate?: (cb: () => void) => unknown };
  return new Promise((resolve) => {
    if (typeof g.setImmediate === 'function') g.setImmediate(resolve);
    else setTimeout(resolve, 0);
  });
}

/**
 * A sector receiver (receiver.ts) hears nothing outside its azimuth sector: the footprint's cells whose centre lies
 * outside it lose their cover. Azimuths are the WGS84 geodesic's from the antenna (geodesy.ts VectorMap, exact on
 * its lattice and bilinear between, the same vectors the horizon engine uses).
 */
export function dropOutsideSector(
  fp: Footprint,
  grid: GridGeo,
  site: CoverageSite,
  sector: { readonly fromDeg: number; readonly toDeg: number },
): void {
  const w = fp.window;
  const ww = w.col1 - w.col0;
  if (ww <= 0 || w.row1 <= w.row0) return;
  const vmap = VectorMap.build(site.lon, site.lat, grid.width, grid.height, gridMapper(grid));
  const from = (((sector.fromDeg % 360) + 360) % 360) * (Math.PI / 180);
  const width = ((((sector.toDeg - sector.fromDeg) % 360) + 360) % 360) * (Math.PI / 180);
  const v = [0, 0];
  const two = 2 * Math.PI;
  for (let r = w.row0; r < w.row1; r++) {
    for (let c = w.col0; c < w.col1; c++) {
      const i = (r - w.row0) * ww + (c - w.col0);
      if (fp.lo[i] > fp.hi[i]) continue;
      vmap.at(c + 0.5, r + 0.5, v);
      let a = (Math.atan2(v[0], v[1]) - from) % two;
      if (a < 0) a += two;
      if (a > width) {
        fp.lo[i] = NO_COVER_LO;
        fp.hi[i] = 0;
      }
    }
  }
}

/**
 * Buffers lent from one site to the next: the polar buffer of screening tans, and floor and distance grids (fresh
 * memory costs a page fault per 4 KiB at first touch: on the national benchmark at 60″, `siteFloor`'s own time,
 * mostly its two fresh grids a site, was about 9 s of the main thread's busy 100 s).
 */
interface Spare {
  polar: Polar | null;
  grids: Float32Array[];
  /** The size a polar buffer grown in the terrain's WebAssembly memory gets at least (0: as the site needs). */
  polarBytes: number;
  /** The polar buffers in the terrain's memory this call has taken or grown: free again once it ends. */
  owned: Set<Polar>;
}

/** A polar buffer: a view over its whole room, and whether it lies in the terrain's WebAssembly memory. */
interface Polar {
  view: Float32Array;
  inMemory: boolean;
}

/**
 * Polar buffers grown in a terrain's WebAssembly memory by a finished `computeFootprints`: a memory cannot shrink,
 * so the next call on the same terrain (the plan's second pass, a refraction sweep's next k) takes the buffer
 * instead of growing another. A call takes it out while it runs: two at once never share one.
 */
const freePolars = new WeakMap<WasmMemory, Polar[]>();

/** The smallest free polar buffer of the terrain's memory with at least `bytes`, taken out; null if none. */
function takeFreePolar(terrain: TerrainRaster, bytes: number): Polar | null {
  const free = terrain.memory ? freePolars.get(terrain.memory) : undefined;
  if (free === undefined) return null;
  let best = -1;
  free.forEach((p, i) => {
    if (p.view.byteLength >= bytes && (best < 0 || p.view.byteLength < free[best].view.byteLength)) best = i;
  });
  return best < 0 ? null : free.splice(best, 1)[0];
}

function giveFreePolar(memory: WasmMemory, polar: Polar): void {
  const free = freePolars.get(memory) ?? [];
  free.push(polar);
  freePolars.set(memory, free);
}

/**
 * A polar buffer of `bytes`: grown in the terrain's WebAssembly memory when it has one (there the radial kernel
 * writes it, radial-kernel.ts), else in shared memory for a pool, else plain.
 */
function newPolar(terrain: TerrainRaster, bytes: number, shared: boolean, inMemory: boolean): Polar {
  const memory = inMemory ? terrain.memory : null;
  if (memory) {
    const at = growRegion(memory, bytes);
    if (at >= 0) return { view: new Float32Array(memory.buffer, at, bytes / 4), inMemory: true };
  }
  const buffer = shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes);
  return { view: new Float32Array(buffer), inMemory: false };
}

/** One site's floor as `siteFloor` computes it. */
interface SiteRun {
  /** NaN outside `window` (the cells within the horizon's range). */
  floor: Float32Array;
  distance: Float32Array;
  /** The polar buffer of screening tans (lent: free again once the footprints no longer need it). */
  tan: Float32Array;
  /** The whole of the polar buffer `tan` lies in. */
  polar: Polar;
  antennaAltM: number;
  groundM: number;
  /** The horizon's range (m). */
  maxRangeM: number;
  window: FootprintWindow;
}

/**
 * A site's line-of-sight floor and distance on the analysis grid: `computeFloor`'s job (floor.ts: the same
 * layout, sweep pieces and resampling, so the same values to the bit), with savings — the polar buffer is reused
 * from the previous site (`spare`, when no horizon cache keeps it), and so are the floor and distance grids of a
 * site whose footprints are built; only the rows of the site's range box are resampled (the rest stay NaN: beyond
 * range), and only the geodesics the box reads are tabulated when the grid's reach cannot bind.
 */
async function siteFloor(
  terrain: TerrainRaster,
  req: FloorRequest & { maxRangeM: number },
  grid: GridGeo,
  ground: Float32Array,
  exec: Executor,
  cache: HorizonCache | null,
  spare: Spare,
  onProgress: Progress,
): Promise<SiteRun> {
  onProgress(0, 'geodesics');
  const mapper = gridMapper(grid);
  // As computeFloor: never farther than the grid's farthest cell (its farthest lattice node, plus a margin). When
  // the lattice's corners alone lie beyond the site's range, that bound cannot bind, and only the nodes within the
  // site's reach are needed (below); else the whole lattice is tabulated first, as the floor command does.
  const p = terrain.metresPerPixel(req.lon, req.lat);
  const block = VectorMap.blockFor(grid.width, grid.height, mapper);
  const margin = 2 * block * Math.max(1, Math.max(p.x, p.y));
  let vmap: VectorMap | null = null;
  let maxRangeM = req.maxRangeM;
  if (
    !(
      req.maxRangeM <=
      VectorMap.cornerReachM(req.lon, req.lat, grid.width, grid.height, mapper, block) + margin
    )
  ) {
    vmap = VectorMap.build(req.lon, req.lat, grid.width, grid.height, mapper, block);
    maxRangeM = Math.min(req.maxRangeM, vmap.maxDistanceM() + margin);
  }
  const spec: HorizonSpec = { ...req, maxRangeM };
  const n = Math.max(1, exec.size);
  const pieces = n === 1 ? 1 : n * 4;
  let done = 0;
  const tick = (stage: string) => () => onProgress(++done / (pieces * 2), stage);
  let horizon = cache?.get(terrain, spec);
  let polar: Polar | null = null;
  if (horizon) {
    done = pieces;
  } else {
    const layout = planHorizon(terrain, spec);
    const bytes = horizonBufferLength(layout) * 4;
    const reuse = cache === null && spare.polar !== null && spare.polar.view.byteLength >= bytes;
    // A fresh buffer gets a quarter more than this site needs, so that the sites after it (other latitudes, other
    // reaches) fit in it too: one buffer for the whole run, where a buffer fitted to its first site was replaced by a
    // fresh one whenever a later site needed a little more (the demo's peak went from 860 to 650 MiB). Without a
    // horizon cache (which keeps buffers) it goes in the terrain's WebAssembly memory where there is one, sized for
    // the call's largest site (`polarBytes`).
    const room = spare.polarBytes > 0 ? Math.max(spare.polarBytes, bytes) : 4 * Math.ceil(bytes / 3.2);
    polar = reuse ? spare.polar! : newPolar(terrain, room, exec.shared, cache === null);
    if (reuse) spare.polar = null;
    if (polar.inMemory) spare.owned.add(polar);
    // Every sample a reader takes is written by the sweep (the rest lies past its radial's tail): a reused buffer
    // needs no clearing.
    const tan = new Float32Array(polar.view.buffer, polar.view.byteOffset, horizonBufferLength(layout));
    const inMemory = polar.inMemory;
    const swept = tick('terrain sweep');
    await settled(
      Array.from({ length: pieces }, (_, i) =>
        exec.sweep(layout, tan, i / pieces, (i + 1) / pieces, inMemory).then(swept),
      ),
    );
    horizon = { layout, tan };
    cache?.set(terrain, spec, horizon);
  }
  const { layout, tan } = horizon;
  const window = rangeWindow(grid, req, layout.maxRangeM);
  // Cells outside the window lie beyond the range: the resampler finds them so from their NaN vector.
  vmap ??= VectorMap.build(req.lon, req.lat, grid.width, grid.height, mapper, block, window);
  const cells = grid.width * grid.height;
  const alloc = () =>
    spare.grids.pop() ??
    new Float32Array(exec.shared ? new SharedArrayBuffer(cells * 4) : new ArrayBuffer(cells * 4));
  const floor = alloc();
  const distance = alloc();
  const W = grid.width;
  for (const a of [floor, distance]) {
    a.fill(NaN, 0, window.row0 * W);
    a.fill(NaN, window.row1 * W);
  }
  const resampled = tick('resampling');
  const rows = window.row1 - window.row0;
  const rowsPer = Math.max(1, Math.ceil(rows / pieces));
  const jobs: Promise<unknown>[] = [];
  for (let r0 = window.row0; r0 < window.row1; r0 += rowsPer) {
    const r1 = Math.min(window.row1, r0 + rowsPer);
    jobs.push(exec.resample(layout, tan, vmap, floor, ground, r0, r1, distance).then(resampled));
  }
  await settled(jobs);
  return {
    floor,
    distance,
    tan,
    polar: polar ?? { view: tan, inMemory: false },
    antennaAltM: layout.antennaAltM,
    groundM: layout.groundM,
    maxRangeM: layout.maxRangeM,
    window,
  };
}

function intersectWindows(a: FootprintWindow, b: FootprintWindow): FootprintWindow {
  const row0 = Math.max(a.row0, b.row0);
  const col0 = Math.max(a.col0, b.col0);
  return {
    width: a.width,
    row0,
    row1: Math.max(row0, Math.min(a.row1, b.row1)),
    col0,
    col1: Math.max(col0, Math.min(a.col1, b.col1)),
  };
}

/** Ground distance (m) beyond which a band detects nothing: one row past its last row with a detected altitude. */
function bandReachM(band: { stepM: number; lo: Float64Array; hi: Float64Array }): number {
  for (let k = band.lo.length - 1; k >= 0; k--) {
    if (band.lo[k] === band.lo[k] && band.hi[k] === band.hi[k]) return (k + 1) * band.stepM;
  }
  return -1;
}

/** Metres per degree, lower bounds on WGS84: along a meridian (110 574 m at the equator) and a parallel (a·cos φ). */
const MERIDIAN_DEG_MIN_M = 110_000;
const PARALLEL_DEG_MIN_M = 111_000;

/**
 * The cells whose centres may lie within `rangeM` of a point: a box from lower bounds on the ground distance
 * (a latitude difference is at least its meridian arc; a longitude difference at least its parallel arc at the most
 * poleward latitude reachable), widened by 2 % and two cells. The whole grid when the grid is projected, the range
 * reaches near a pole, or the box would wrap round; an empty box for a negative range.
 */
export function rangeWindow(
  grid: GridGeo,
  at: { lon: number; lat: number },
  rangeM: number,
): FootprintWindow {
  const width = grid.width;
  const all: FootprintWindow = { row0: 0, row1: grid.height, col0: 0, col1: width, width };
  if (!(rangeM >= 0)) return { row0: 0, row1: 0, col0: 0, col1: 0, width };
  if (grid.crs.kind !== 'geographic') return all;
  const px = Math.abs(grid.pixelX);
  const py = Math.abs(grid.pixelY);
  const r = rangeM * 1.02;
  const dLat = r / MERIDIAN_DEG_MIN_M + 2 * py;
  const polar = Math.max(Math.abs(at.lat - dLat), Math.abs(at.lat + dLat)) + r / MERIDIAN_DEG_MIN_M;
  if (polar >= 89) return all;
  const dLon = r / (PARALLEL_DEG_MIN_M * Math.cos((polar * Math.PI) / 180)) + 2 * px;
  if (dLon >= 180) return all;
  // Rows run from originY in steps of pixelY; the site's longitude taken within ±180° of the grid's centre.
  const rowOf = (lat: number) => (lat - grid.originY) / grid.pixelY - 0.5;
  const centre = grid.originX + (grid.width * grid.pixelX) / 2;
  const lon = at.lon + 360 * Math.round((centre - at.lon) / 360);
  const colOf = (x: number) => (x - grid.originX) / grid.pixelX - 0.5;
  const ra = rowOf(at.lat + dLat);
  const rb = rowOf(at.lat - dLat);
  const ca = colOf(lon - dLon);
  const cb = colOf(lon + dLon);
  const clamp = (v: number, hi: number) => Math.max(0, Math.min(hi, v));
  const row0 = clamp(Math.floor(Math.min(ra, rb)), grid.height);
  const col0 = clamp(Math.floor(Math.min(ca, cb)), grid.width);
  return {
    width,
    row0,
    row1: Math.max(row0, clamp(Math.ceil(Math.max(ra, rb)) + 1, grid.height)),
    col0,
    col1: Math.max(col0, clamp(Math.ceil(Math.max(ca, cb)) + 1, grid.width)),
  };
}

function terrainPixelM(terrain: TerrainRaster, site: CoverageSite): number {
  const p = terrain.metresPerPixel(site.lon, site.lat);
  return Math.min(p.x, p.y);
}

function halfCellM(grid: GridGeo): number {
  if (grid.crs.kind === 'projected') return Math.min(Math.abs(grid.pixelX), Math.abs(grid.pixelY)) / 2;
  const latMid = grid.originY + (grid.height / 2) * grid.pixelY;
  const m = 111_320;
  return (
    (Math.min(Math.abs(grid.pixelX) * Math.cos((latMid * Math.PI) / 180), Math.abs(grid.pixelY)) * m) / 2
  );
}

/**
 * Polarisation taken for the sea reflection: vertical, as SSR antennas radiate and as is usual for L- and S-band
 * surveillance primaries (common practice, from memory). At the low grazing angles that set the first lobe both
 * polarisations reflect with Γ ≈ −1; they differ near the Brewster angle (a few degrees), above the first lobe.
 */
const LOBING_POLARIZATION: Polarization = 'vertical';
/** A surface sample within this many metres of 0 m counts as sea (DEMs give the sea as 0 m). */
export const SEA_LEVEL_TOLERANCE_M = 0.5;
/**
 * Sea mask resolution: 360 radials uniform in the "diamond" pseudo-angle (so a cell's radial needs one division, no
 * atan2; the true spacing is 0.7–1.4°), samples every 500 m out to SEA_MASK_REACH_M (beyond: the last sample).
 */
const SEA_RADIALS = 360;
const SEA_STEP_M = 500;
const SEA_MASK_REACH_M = 60_000;

type SeaMask = Omit<SeaChoice, 'band' | 'd1M'>;

/** Diamond pseudo-angle of a direction (x east, y north), 0…4, monotone in the compass bearing from north. */
function diamond(x: number, y: number): number {
  // Bearing quadrants: north→east [0, 1), east→south [1, 2), south→west [2, 3), west→north [3, 4).
  if (x >= 0 && y > 0) return x / (x + y);
  if (x > 0 && y <= 0) return 1 - y / (x - y);
  if (x <= 0 && y < 0) return 2 - x / (-x - y);
  if (x < 0 && y >= 0) return 3 + y / (y - x);
  return 0;
}

/** The unit direction (x east, y north) of a diamond pseudo-angle. */
function fromDiamond(p: number, out: number[]): void {
  const q = Math.floor(p);
  const f = p - q;
  let x: number;
  let y: number;
  if (q === 0) [x, y] = [f, 1 - f];
  else if (q === 1) [x, y] = [1 - f, -f];
  else if (q === 2) [x, y] = [-f, -(1 - f)];
  else [x, y] = [-(1 - f), f];
  const n = Math.hypot(x, y);
  out[0] = x / n;
  out[1] = y / n;
}

/**
 * Which surface lies under each radial of a site (every 500 m out to 60 km), and the radial of each analysis cell;
 * null where no sea is found (nothing to do) or the grid is not geographic. Positions near the site use the local
 * equirectangular approximation (within 60 km its error is far below the 500 m sampling). Specular points farther
 * than 60 km (very low antennas at long range) take the radial's last sample.
 */
function seaMask(
  terrain: TerrainRaster,
  grid: GridGeo,
  site: CoverageSite,
  distance: Float32Array,
  maxRangeM: number,
  window: FootprintWindow,
): SeaMask | null {
  if (grid.crs.kind !== 'geographic') return null;
  const steps = Math.max(2, Math.ceil(Math.min(SEA_MASK_REACH_M, maxRangeM) / SEA_STEP_M) + 1);
  const mask = new Uint8Array(SEA_RADIALS * steps);
  const mPerDegLat = 111_320;
  const cosLat = Math.cos((site.lat * Math.PI) / 180);
  const px = [0, 0];
  const dir = [0, 0];
  let any = false;
  for (let a = 0; a < SEA_RADIALS; a++) {
    fromDiamond(((a + 0.5) * 4) / SEA_RADIALS, dir);
    const dLon = dir[0] / (mPerDegLat * cosLat);
    const dLat = dir[1] / mPerDegLat;
    for (let j = 0; j < steps; j++) {
      const d = j * SEA_STEP_M;
      terrain.lonLatToPixel(site.lon + d * dLon, site.lat + d * dLat, px);
      const z = terrain.samplePixel(px[0], px[1]);
      if (z >= -SEA_LEVEL_TOLERANCE_M && z <= SEA_LEVEL_TOLERANCE_M) {
        mask[a * steps + j] = 1;
        any = true;
      }
    }
  }
  if (!any) return null;
  const cellRadial = new Uint16Array(distance.length).fill(65_535);
  const W = grid.width;
  const scale = SEA_RADIALS / 4;
  // Only the site's window: every footprint of the site lies in it (and outside it the distance is unknown).
  for (let r = window.row0; r < window.row1; r++) {
    const y = grid.originY + (r + 0.5) * grid.pixelY - site.lat;
    for (let i = r * W + window.col0; i < r * W + window.col1; i++) {
      if (!(distance[i] === distance[i])) continue;
      const x = (grid.originX + (i - r * W + 0.5) * grid.pixelX - site.lon) * cosLat;
      let b = Math.floor(diamond(x, y) * scale);
      if (b >= SEA_RADIALS) b = SEA_RADIALS - 1;
      cellRadial[i] = b;
    }
  }
  return { cellRadial, seaMask: mask, steps, stepM: SEA_STEP_M };
}
