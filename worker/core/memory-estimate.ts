/**
 * Refuse before allocating — the pure part, shared by the CLI (worker/cli/budget-check.ts, `--max-memory`) and the
 * web app's engine (worker/runtime/engine.ts): the memory a run will need, estimated from its inputs before any large
 * array exists, and the one message that refuses it. No Node and no DOM here: each side brings its own limit
 * and the words for its knob.
 *
 * The estimate counts the arrays the code allocates, from their layouts:
 * - terrain: the mosaic, Float32 per terrain pixel (worker/core/terrain.ts), and while a tile is read its file
 *   bytes, its decoded samples and its Float32 copy (worker/io/geotiff-read.ts);
 * - per analysis cell: ground (Float32), one byte per volume mask, 3 kinds (any, primary, secondary; plus one per
 *   receiver kind the study has: worker/core/network.ts) × levels × targets Uint16 folds; per
 *   site in flight a floor and a distance (Float32 each);
 * - per (site, type) pair, per cell of its window (the box its type's reach spans around the site, clipped to
 *   the grid: worker/core/coverage.ts rangeWindow): per target a footprint of two Uint16
 *   (worker/core/footprint.ts) and the network's level bits (1, 2 or 4 bytes: worker/core/network.ts);
 * - per site in flight (two: the pipeline of worker/core/coverage.ts, whose buffer is a quarter larger than its
 *   first site needs, and room for a second when a later site needs more still): the horizon's screening tans,
 *   Float32 per sample; the layout (worker/core/horizon.ts planHorizon) keeps arcs between neighbouring radials within
 *   ½…1 arc step, so the samples out to range R number at most about 1.5·π·R² / (rangeStep · arcStep)
 *   (`horizonSamples`).
 * The layers' worker threads on a large grid (`layerWorkerBytes`) are not in it: a run takes them only when the
 * estimate and their bytes together fit its limit (worker/cli/session.ts `levelLayerTexts`).
 * These counts are exact bounds of the layouts; what they leave out (the JavaScript heap, the contour rings,
 * the GeoJSON text, the pool's workers) is the `RUNTIME_BYTES` floor and the `OVERHEAD` factor, both measured
 * with the CLI (DEVELOPERS.md: the figures and the command that reproduces them).
 */
import { InputError } from '../../shared/errors.ts';
import type { Locator, Scenario } from '../../shared/scenario.ts';
import { NM_M } from '../../shared/units.ts';
import type { GridGeo } from './grid.ts';
import type { Terrain } from './terrain.ts';

export const MiB = 1 << 20;
export const GiB = 1 << 30;

/** Node, tsx, zod, turf, geotiff.js and the rest before any data: 170–195 MiB measured on refused runs. */
export const RUNTIME_BYTES = 200 * MiB;
/**
 * Heap and transient copies beyond the counted arrays, as a factor on them: measured on the demo (coverage,
 * 165 sensors, 600 × 600 cells, 6000 × 6000 terrain pixels: counted ≈ 0.55 GiB, peak RSS 839 MiB).
 */
export const OVERHEAD = 1.25;

export function formatBytes(b: number): string {
  return b >= GiB ? `${(b / GiB).toFixed(1)} GiB` : `${Math.max(1, Math.round(b / MiB))} MiB`;
}

export interface TileShape {
  /** The file as the user named it. */
  name: string;
  fileBytes: number;
  width: number;
  height: number;
  bytesPerSample: number;
}

export interface RunShape {
  /** Pixels of the terrain mosaic. */
  terrainPixels: number;
  /** The largest tile read (it and its copies are alive at once). */
  largestTile?: TileShape;
  /** Analysis cells (grid width × height). */
  cells: number;
  /** Sites and (site, type) pairs of the network. */
  sites: number;
  pairs: number;
  /** Flight levels, targets (1 + volumes' own), volumes. */
  levels: number;
  targets: number;
  volumes: number;
  /** Fold kinds the network keeps arrays for (default 3: any, primary, secondary; receivers add theirs). */
  foldKinds?: number;
  /**
   * Cells of every pair's window added up (each pair's footprint and level bits cover only its window); default
   * every pair over the whole grid.
   */
  pairWindowCells?: number;
  /** Farthest range of a site's horizon, m; range step (a terrain pixel) and arc step (¾ of a cell), m. */
  reachM: number;
  rangeStepM: number;
  arcStepM: number;
  /** Horizons alive at once (a floor run: 1; coverage's pipeline: 2). */
  horizonsInFlight: number;
  /**
   * Bytes per analysis cell when the run keeps fewer arrays than a study's network (a floor run: its floor and the
   * ground under it, two Float32 per cell); default the study's layout below.
   */
  gridBytesPerCell?: number;
  /**
   * The tiles are read through the CLI's fused path (worker/cli/dem-open.ts): an uncompressed tile is decoded
   * straight into the mosaic through one buffer of at most 4 MiB, so it adds no copy of itself.
   */
  streamedTiles?: boolean;
}

/**
 * From this many analysis cells the CLI makes a study's layers on worker threads of their own (worker/cli/session.ts
 * `levelLayerTexts`). Below, starting them and their cold code costs more than it saves: on the demo's 600 × 600
 * grid the layers stage took 1.42 s on two workers against 0.99 s on the main thread; on the national box's 3600 ×
 * 3600, 22.8 s against 38.7 s, the same files.
 */
export const LAYERS_POOL_CELLS = 2 ** 22;

/**
 * Bytes the layers' `workers` threads add at the most: the volumes' masks and the ground in shared memory once, and
 * per worker its level's folds of every kind for every target in shared memory, counted twice (the rings and text
 * the worker makes from them are of that order).
 */
export function layerWorkerBytes(
  s: Pick<RunShape, 'cells' | 'volumes' | 'foldKinds' | 'targets'>,
  workers: number,
): number {
  if (workers === 0) return 0;
  return s.cells * (4 + s.volumes + workers * 2 * (s.foldKinds ?? 3) * s.targets * 2);
}

/** How many worker threads make a study's layers (0: the main thread does), for `threads` and a grid of `cells`. */
export function layerWorkerCount(threads: number, cells: number, levels: number): number {
  return threads > 0 && levels > 1 && cells >= LAYERS_POOL_CELLS ? Math.min(threads, levels) : 0;
}

export type EstimatePart = 'terrain' | 'grid' | 'footprints' | 'horizons';

export interface Estimate {
  bytes: number;
  parts: Record<EstimatePart, number>;
}

/**
 * Float32 slots of one horizon's buffer (screening tans and tails), an upper bound from the layout rules (worker/core/horizon.ts planHorizon):
 * level ℓ holds N = 2π·r/arc radials out to the range r where their arc reaches `arcStepM`, from r/2 (where the
 * level below doubled them) — π·r²/(arc·range step) samples; the levels below add at most a third of that, and a
 * last level cut short by the reach R at most πR²/(2·arc·range step) more (its radials are those of a level out to
 * 2r ≤ 2R: the worst case, r = 3R/4, gives 1.5·πR² in all). Level 0 starts at the antenna, not at r/2 (its radials
 * at least 512, out to 512·arc/2π: up to π·(82·arc)² more), and every level may store up to three rows more than
 * its span (its end row, rounding, the two rows past the reach: at most 3 × 2·4πR/arc in all). The buffer also
 * holds one tail per radial (horizon.ts `Horizon`): the last level has at most 2π·2R/arc + 8 radials and the levels
 * below it as many again, or 512 when there is one level (8πR/arc + 1024 at most).
 */
export function horizonSamples(reachM: number, rangeStepM: number, arcStepM: number): number {
  const a = arcStepM;
  const r0 = 82 * a;
  return (
    (1.5 * Math.PI * reachM * reachM + Math.PI * r0 * r0) / (rangeStepM * a) +
    (32 * Math.PI * reachM) / a +
    3072
  );
}

/**
 * One (site, type) footprint with its other targets' (worker/core/footprint.ts: lo and hi, Uint16 per cell and
 * target; a target the type cannot tell apart shares the arrays, so this is an upper bound). The estimate counts
 * every allowed pair once; the app's footprint cache (worker/runtime/engine.ts) is bounded with the same figure.
 */
export function footprintBytes(cells: number, targets: number): number {
  return cells * targets * 4;
}

/** Bytes per cell of a network's level bits (network.ts: one bit per level and target, in 8, 16 or 32). */
function levelBitBytes(levelBits: number): number {
  return levelBits <= 8 ? 1 : levelBits <= 16 ? 2 : 4;
}

/**
 * The footprints of every allowed pair of `s`'s sites with their level bits, in bytes: estimateRun's footprints
 * part with every pair held (e.g. a plan's chosen sites, computed again for its layers).
 */
export function sitesFootprintBytes(s: Scenario, grid: GridGeo, targets: number): number {
  const cells = pairWindowCells(s, grid, 'every pair');
  return footprintBytes(cells, targets) + cells * levelBitBytes(s.flightLevels.length * targets);
}

export function estimateRun(s: RunShape): Estimate {
  const tile = s.largestTile;
  const uncompressed = tile !== undefined && tile.fileBytes >= tile.width * tile.height * tile.bytesPerSample;
  const tileBytes = !tile
    ? 0
    : s.streamedTiles && uncompressed
      ? 4 * MiB
      : tile.fileBytes + tile.width * tile.height * (tile.bytesPerSample + 4);
  const terrain = s.terrainPixels * 4 + tileBytes;
  const levelBits = s.levels * s.targets;
  const bitBytes = levelBitBytes(levelBits);
  const perCell = 4 + s.volumes + (s.foldKinds ?? 3) * levelBits * 2 + 4 /* network floor */ + 2 * 8;
  const grid = s.cells * (s.gridBytesPerCell ?? perCell);
  const pairCells = s.pairWindowCells ?? s.pairs * s.cells;
  const footprints =
    footprintBytes(pairCells, s.targets) + (s.gridBytesPerCell === undefined ? pairCells * bitBytes : 0);
  const horizons = horizonSamples(s.reachM, s.rangeStepM, s.arcStepM) * 4 * s.horizonsInFlight;
  const bytes = RUNTIME_BYTES + OVERHEAD * (terrain + grid + footprints + horizons);
  return { bytes, parts: { terrain, grid, footprints, horizons } };
}

/** What each part of the estimate is, in the refusal's words. */
export const PART_WORDS: Record<EstimatePart, string> = {
  terrain: 'the terrain',
  grid: 'the analysis grid',
  footprints: "the footprints (each sensor's window of cells)",
  horizons: "each site's horizon (range² over terrain pixel × cell)",
};

/** The part that weighs most. */
export function largestPart(est: Estimate): EstimatePart {
  return (Object.entries(est.parts) as [EstimatePart, number][]).sort((a, b) => b[1] - a[1])[0][0];
}

/**
 * The refusal of an estimate past `limit` (null when it fits): `where` is the input that drives the largest part
 * (from `blame`), `expected` the limit with `knob` (how the limit is set, and what to make smaller).
 */
export function estimateRefusal(
  est: Estimate,
  limit: number,
  blame: Record<EstimatePart, string>,
  knob: string,
): InputError | null {
  if (est.bytes <= limit) return null;
  const part = largestPart(est);
  return new InputError(
    blame[part],
    `a run that needs about ${formatBytes(est.bytes)} (mostly ${PART_WORDS[part]}: ${formatBytes(est.parts[part])})`,
    `at most ${formatBytes(limit)} (${knob})`,
  );
}

/** Bytes alive while one tile is read and decoded (its file, its samples, its Float32 copy and the runtime). */
export function tileReadBytes(t: TileShape): number {
  return RUNTIME_BYTES + t.fileBytes + t.width * t.height * (t.bytesPerSample + 8);
}

/**
 * The refusal of a DEM tile's header past the limit, before its pixels are decoded (null when it fits): absurd
 * dimensions, or a file whose pixels would not fit. `knob` says how the limit is set.
 */
export function tileRefusal(t: TileShape, limit: number, knob: string): InputError | null {
  const bytes = tileReadBytes(t);
  if (bytes <= limit) return null;
  return new InputError(
    t.name,
    `a tile of ${t.width} × ${t.height} pixels (about ${formatBytes(bytes)} to read)`,
    `a tile that fits in ${formatBytes(limit)} (${knob}), or the tile cut into smaller ones`,
  );
}

/** The refusal of a tile file too large to read at all (null when it fits). */
export function tileFileRefusal(
  name: string,
  fileBytes: number,
  limit: number,
  knob: string,
): InputError | null {
  if (RUNTIME_BYTES + fileBytes <= limit) return null;
  return new InputError(
    name,
    `a file of ${formatBytes(fileBytes)}`,
    `a tile that fits in ${formatBytes(limit)} (${knob}), or the tile cut into smaller ones`,
  );
}

// ---------------------------------------------------------------------------------------------------
// A scenario's run

/** A study's run as the estimate sees it, with the figures its refusal names. */
export interface StudyRun {
  shape: RunShape;
  /** Every allowed (site, type) pair: the most a network of this scenario can hold. */
  pairs: number;
  /**
   * The farthest any site's horizon reaches, m: maxRangeKm and the types' instrumented ranges, and no farther than
   * the grid's farthest cell from the site.
   */
  reachM: number;
}

/**
 * The run of a scenario on its terrain over `grid` (its analysis grid): every allowed (site, type) pair, the
 * scenario's levels and `targets` targets (the scenario's and the volumes' own), the farthest reach of any type,
 * two horizons in flight (coverage's pipeline).
 */
export function studyRun(
  s: Scenario,
  grid: GridGeo,
  /** The terrain, or what its tiles' headers say of it (its pixels, and the ground size of one). */
  terrain: Pick<Terrain, 'metresPerPixel'> & { geo: { width: number; height: number } },
  targets: number,
  largestTile?: TileShape,
  /** Which footprints the run holds at once (`FootprintHold`; default every pair's). */
  hold: FootprintHold = 'every pair',
): StudyRun {
  const typeCount = s.sensorTypes.length;
  const pairs = s.sites.reduce((n, f) => n + (f.properties.allowedTypes?.length ?? typeCount), 0);
  const typeReachM = Math.min(
    s.maxRangeKm * 1000,
    Math.max(0, ...s.sensorTypes.map((t) => t.instrumentedRangeNm * NM_M)),
  );
  const lat = grid.originY + (grid.height / 2) * grid.pixelY;
  const lon = grid.originX + (grid.width / 2) * grid.pixelX;
  const px = terrain.metresPerPixel(lon, lat);
  // A site's horizon stops at the grid's farthest cell (worker/core/coverage.ts siteFloor: the VectorMap's farthest
  // node plus two lattice blocks of at most 64 terrain pixels).
  const margin = 2 * 64 * Math.max(px.x, px.y, 1);
  const reachM = Math.max(
    0,
    ...s.sites.map((f) => {
      const [siteLon, siteLat] = f.geometry.coordinates;
      return Math.min(typeReachM, farthestCornerM(grid, siteLon, siteLat) + margin);
    }),
  );
  const cellM = Math.min(grid.pixelX * Math.cos((lat * Math.PI) / 180), -grid.pixelY) * 111_320;
  const shape: RunShape = {
    pairWindowCells: pairWindowCells(s, grid, hold),
    terrainPixels: terrain.geo.width * terrain.geo.height,
    largestTile,
    cells: grid.width * grid.height,
    sites: s.sites.length,
    pairs,
    levels: s.flightLevels.length,
    targets,
    volumes: s.volumes.length,
    foldKinds: 3 + new Set(s.sensorTypes.map((t) => t.kind).filter((k) => k === 'adsb' || k === 'mlat')).size,
    reachM,
    rangeStepM: Math.min(px.x, px.y) || cellM,
    arcStepM: 0.75 * cellM,
    horizonsInFlight: 2,
  };
  return { shape, pairs, reachM };
}

/**
 * An upper bound of the ground distance (m) from (lon, lat) to the farthest corner of a geographic grid: the
 * haversine on a sphere of the equatorial radius, plus 1 % (WGS84 geodesics are at most 0.6 % longer than that).
 * Over a lon/lat box the distance from a point outside its antipodal half is largest at a corner (along a parallel
 * it grows with the longitude difference; along a meridian it has one minimum). Infinity for a projected grid (no
 * lon/lat corners here) and for a box wider than 90°.
 */
function farthestCornerM(grid: GridGeo, lon: number, lat: number): number {
  // A grid this wide might hold the site's antipode, which is farther than any corner.
  if (grid.crs.kind !== 'geographic' || Math.abs(grid.width * grid.pixelX) > 90) return Infinity;
  if (Math.abs(grid.height * grid.pixelY) > 90) return Infinity;
  const rad = Math.PI / 180;
  let far = 0;
  for (const cx of [grid.originX, grid.originX + grid.width * grid.pixelX]) {
    for (const cy of [grid.originY, grid.originY + grid.height * grid.pixelY]) {
      const dLat = (cy - lat) * rad;
      const dLon = (cx - lon) * rad;
      const h = Math.sin(dLat / 2) ** 2 + Math.cos(lat * rad) * Math.cos(cy * rad) * Math.sin(dLon / 2) ** 2;
      far = Math.max(far, 2 * 6_378_137 * Math.asin(Math.min(1, Math.sqrt(h))));
    }
  }
  return far * 1.01;
}

/**
 * Which footprints a run holds at once: every allowed pair's (a plan, an outage, the app), or `one site` at a time
 * (`airshade coverage`: its network counts each site's and lets them go, worker/core/network.ts `addSite` with
 * `release`; `airshade footprints`: each site's written to the cache and let go) besides those coverage keeps —
 * the first site's (for its what-if figure) and the multilateration receivers' (for their accuracy maps); counted
 * for both commands, an upper bound for the second.
 */
export type FootprintHold = 'every pair' | 'one site';

/**
 * Cells of the pairs' windows a run holds at once (`hold`), added up: per pair, the box of its type's reach
 * (maxRangeKm and its instrumented range) around the site, in cells no larger than the grid's smallest (its row
 * farthest from the equator, a degree of meridian at its shortest), clipped to the grid's size — an upper bound of
 * what worker/core/coverage.ts `rangeWindow` gives.
 */
export function pairWindowCells(s: Scenario, grid: GridGeo, hold: FootprintHold = 'every pair'): number {
  const lat0 = grid.originY;
  const lat1 = grid.originY + grid.height * grid.pixelY;
  const far = Math.min(89.9, Math.max(Math.abs(lat0), Math.abs(lat1)));
  const cellW = Math.abs(grid.pixelX) * Math.cos((far * Math.PI) / 180) * 111_320;
  const cellH = Math.abs(grid.pixelY) * 110_574;
  const geographic = grid.crs.kind === 'geographic';
  const w = geographic ? cellW : Math.abs(grid.pixelX);
  const h = geographic ? cellH : Math.abs(grid.pixelY);
  const byType = new Map(
    s.sensorTypes.map((t) => {
      const r = Math.min(s.maxRangeKm * 1000, t.instrumentedRangeNm * NM_M);
      const cols = Math.min(grid.width, 2 * Math.ceil(r / w) + 2);
      const rows = Math.min(grid.height, 2 * Math.ceil(r / h) + 2);
      return [t.id, cols * rows];
    }),
  );
  const all = s.sensorTypes.map((t) => t.id);
  const mlat = new Set(s.sensorTypes.filter((t) => t.kind === 'mlat').map((t) => t.id));
  let n = 0;
  let kept = 0;
  let mostOfOneSite = 0;
  s.sites.forEach((f, i) => {
    let site = 0;
    for (const id of f.properties.allowedTypes ?? all) {
      const cells = byType.get(id) ?? 0;
      site += cells;
      if (i > 0 && mlat.has(id)) kept += cells;
    }
    n += site;
    if (i === 0) kept += site;
    mostOfOneSite = Math.max(mostOfOneSite, site);
  });
  return hold === 'every pair' ? n : Math.min(n, kept + mostOfOneSite);
}

/**
 * The inputs a study's refusal names, per part of the estimate: the terrain (`terrainWhere`, default the
 * scenario's terrain.files), and the analysis grid's cell size with its size in cells for the others.
 */
export function studyBlame(
  locate: Locator,
  s: Scenario,
  grid: GridGeo,
  run: Pick<StudyRun, 'pairs' | 'reachM'>,
  terrainWhere = locate(['terrain', 'files']),
): Record<EstimatePart, string> {
  const cell = `${locate(['grid', 'cellArcSec'])} (${s.grid.cellArcSec}″: ${grid.width} × ${grid.height} cells)`;
  return {
    terrain: terrainWhere,
    grid: cell,
    footprints: `${cell} with ${run.pairs} (site, type) pairs`,
    horizons: `${cell} out to ${(run.reachM / 1000).toFixed(0)} km (maxRangeKm, the types' instrumented range)`,
  };
}

/** Cell sizes (arc seconds) offered when a finer one does not fit: whole divisors of a degree, then coarser. */
const NICE_CELLS_ARCSEC = [
  1, 2, 3, 4, 5, 6, 8, 9, 10, 12, 15, 16, 18, 20, 24, 30, 36, 40, 45, 48, 60, 72, 80, 90, 120, 150, 180, 225,
  240, 300, 360, 450, 600, 720, 900, 1200, 1800, 3600,
];

/**
 * The finest cell size (arc seconds, from a list of round values coarser than `cellArcSec`) whose run fits in
 * `limit`, or null when none does (then the terrain or the sites' reach, not the grid, is what does not fit).
 * `runAt` gives the run at a cell size (its grid computed as the study would).
 */
export function cellArcSecThatFits(
  cellArcSec: number,
  limit: number,
  runAt: (cellArcSec: number) => RunShape,
): number | null {
  for (const c of NICE_CELLS_ARCSEC) {
    if (c <= cellArcSec) continue;
    if (estimateRun(runAt(c)).bytes <= limit) return c;
  }
  return null;
}

// ---------------------------------------------------------------------------------------------------
// A plan's arrays, counted as they are made

/**
 * What a plan's stages count against the run's memory limit (worker/core/plan): `take` before a large array is
 * made, `give` when one is let go, `fits` to ask first. A plan's size is not known before its coverage is: how many
 * demand points each candidate covers, then how many groups those points fall into and how many candidates each
 * group lists. On the national benchmark at 60″ the plan held about twice what its coverage did, and a geometric
 * bound of the covers (every demand cell within each type's range) came out 3.7 times the covers found there. So
 * the plan counts its arrays as their sizes become known, and stops with the refusal before making one that would
 * pass the limit, instead of running out of memory later.
 */
export interface MemoryAccount {
  take(bytes: number, what: string): void;
  give(bytes: number): void;
  fits(bytes: number): boolean;
}

/**
 * A memory account as plain data, to rebuild it on the other side of a worker's message (the app's planner runs in
 * a worker): what it holds, its limit, the input its refusal names (`where`) and how the limit is set (`knob`).
 */
export interface LedgerSpec {
  held: number;
  limit: number;
  where: string;
  knob: string;
}

/**
 * The account of one run: it starts at what the run holds already (`held`, bytes, the estimate of what stays alive
 * from the stages before), counts each array's bytes times `OVERHEAD` (as `estimateRun` does), and refuses with one
 * message: `where` (the input that drives the size), the run's need, what would have passed the limit with the bytes
 * taken for it in all (this take's included: a candidate's cover list is one of many), and the limit with `knob`.
 */
export class MemoryLedger implements MemoryAccount {
  private readonly taken = new Map<string, number>();
  private held: number;

  constructor(private readonly at: LedgerSpec) {
    this.held = at.held;
  }

  /** How the limit is set, as a later refusal says it (what the run can offer changes as it goes). */
  setKnob(knob: string): void {
    this.at.knob = knob;
  }

  /** Bytes counted so far. */
  get bytes(): number {
    return this.held;
  }

  /** The account as it stands, as data. */
  spec(): LedgerSpec {
    return { ...this.at, held: this.held };
  }

  fits(bytes: number): boolean {
    return this.held + OVERHEAD * bytes <= this.at.limit;
  }

  /**
   * What can be let go when a take would pass the limit (e.g. footprints kept only to spare computing them again):
   * called once, before the refusal; it lets its arrays go and returns their bytes, and the take is tried again.
   */
  spill: (() => number) | undefined;

  take(bytes: number, what: string): void {
    const all = (this.taken.get(what) ?? 0) + bytes;
    if (!this.fits(bytes) && this.spill) {
      const spill = this.spill;
      this.spill = undefined;
      this.give(spill());
    }
    if (!this.fits(bytes)) {
      throw new InputError(
        this.at.where,
        `a plan that needs about ${formatBytes(this.held + OVERHEAD * bytes)} (${what}: ${formatBytes(all)})`,
        `at most ${formatBytes(this.at.limit)} (${this.at.knob})`,
      );
    }
    this.taken.set(what, all);
    this.held += OVERHEAD * bytes;
  }

  give(bytes: number): void {
    this.held -= OVERHEAD * bytes;
  }

  /** Back to `bytes`, a count read before (`bytes`): what was taken since is let go (a stage's arrays, once done). */
  rewind(bytes: number): void {
    this.held = Math.min(this.held, bytes);
  }
}

/**
 * What a study's run holds once its coverage is done (its horizons let go): the runtime, and the estimate's
 * terrain, grid and footprints with their overhead.
 */
export function heldAfterCoverage(est: Estimate): number {
  return RUNTIME_BYTES + OVERHEAD * (est.parts.terrain + est.parts.grid + est.parts.footprints);
}
