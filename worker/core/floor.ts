/**
 * The floor job: one antenna's terrain-masking floor on an output grid, run inline or split over a pool.
 *
 *   plan (layout) → sweep sectors of radials into one shared `tan` → resample row bands into one shared output
 *
 * Both stages are embarrassingly parallel; an Executor decides where the pieces run. The inline executor runs
 * them here (tests); the Node CLI and the browser pass executors over worker pools with the same interface.
 */
import { nowMs } from './clock.ts';
import { EARTH_RADIUS_M } from '../../shared/units.ts';
import { InputError } from '../../shared/errors.ts';
import type { GridGeo } from './grid.ts';
import type { HorizonCache } from './horizon-cache.ts';
import { gridMapper } from './grid.ts';
import {
  antennaCell,
  antennaVectorMap,
  VectorMap,
  type GridAntenna,
  type VectorMapParts,
} from './geodesy.ts';
import {
  allocateTan,
  planHorizon,
  resampleFloor,
  sweepSector,
  type Horizon,
  type HorizonLayout,
  type HorizonSpec,
  type ResampleCounts,
  type TerrainRaster,
} from './horizon.ts';
import {
  copyPristine,
  gridSweepTaskCost,
  gridSweepTasks,
  sweepGridOctant,
  type GridPristine,
  type GridSweepCounts,
  type GridSweepTask,
} from './grid-sweep.ts';

export type Progress = (fraction: number, stage: string) => void;

/** Where the pieces of a job run. `size` is how many pieces to cut each stage into. */
export interface Executor {
  readonly size: number;
  /** Shared memory is needed when pieces run elsewhere (a pool); inline executors can use plain buffers. */
  readonly shared: boolean;
  /**
   * Radials of one sector into `tan`; `tanInMemory`: `tan` lies in the terrain's WebAssembly memory, so the radial
   * kernel can write it (horizon.ts `sweepSector`).
   */
  sweep(
    layout: HorizonLayout,
    tan: Float32Array,
    sectorStart: number,
    sectorEnd: number,
    tanInMemory?: boolean,
  ): Promise<void>;
  resample(
    layout: HorizonLayout,
    tan: Float32Array,
    vmap: VectorMapParts,
    out: Float32Array,
    ground: Float32Array | null,
    rowStart: number,
    rowEnd: number,
    distance: Float32Array | null,
  ): Promise<ResampleCounts>;
  /** One octant of the grid-native sweep (grid-sweep.ts) over the executor's terrain, into `out`. */
  gridSweep(task: GridSweepTask, pristine: GridPristine, out: Float32Array): Promise<GridSweepCounts>;
}

/**
 * An input array the executor's pieces read, in shared memory when they run elsewhere: posted to a worker, a plain
 * array is copied with every piece (the study's ground, 1.4 MiB on the demo, was copied 8 times per site).
 */
export function readableBy<T extends Float32Array | null>(exec: Executor, a: T): T {
  return a === null || !exec.shared ? a : (inSharedMemory(a) as T);
}

/** `a` itself when it is in shared memory already, else a copy in shared memory (posted without copying). */
export function inSharedMemory<T extends Uint8Array | Uint16Array | Float32Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const copy = new (a.constructor as new (b: SharedArrayBuffer) => T)(new SharedArrayBuffer(a.byteLength));
  copy.set(a);
  return copy;
}

/** Runs every piece on this thread against the given terrain. */
export function inlineExecutor(terrain: TerrainRaster): Executor {
  return {
    size: 1,
    shared: false,
    async sweep(layout, tan, a, b, inMemory) {
      sweepSector(terrain, layout, tan, a, b, undefined, inMemory);
    },
    async resample(layout, tan, vmap, out, ground, r0, r1, distance) {
      return resampleFloor({ layout, tan }, new VectorMap(vmap), out, ground, r0, r1, distance);
    },
    async gridSweep(task, pristine, out) {
      return sweepGridOctant(task, terrain.data, pristine, out);
    },
  };
}

export interface FloorRequest extends Omit<HorizonSpec, 'maxRangeM'> {
  /** Farthest range (m); default: the farthest cell of the output grid. */
  maxRangeM?: number;
}

export interface FloorOptions {
  onProgress?: Progress;
  /** Reuse horizons computed before with the same inputs. */
  cache?: HorizonCache;
  /** Also return each cell's geodesic ground distance from the antenna (m). */
  withDistance?: boolean;
}

export interface FloorResult {
  /** Ground distance (m) of each cell centre from the antenna, when asked for. */
  distance?: Float32Array;
  /** Lowest altitude AMSL (m) in line of sight above each cell, at least the ground; NaN = no value. */
  floor: Float32Array;
  horizon: Horizon;
  stats: FloorStats;
}

export interface FloorStats {
  cells: number;
  /** Cells with a floor value. */
  valued: number;
  /** Cells beyond the computed range. */
  beyondRange: number;
  /** Cells in range whose sight line crosses unknown terrain (or whose own ground is unknown). */
  unknown: number;
  groundM: number;
  antennaAltM: number;
  radials: number;
  samples: number;
  /** Wall time of the sweep (0 on a cache hit) and of the resampling, ms. */
  sweepMs: number;
  resampleMs: number;
}

/**
 * The floor on `outGeo`. `ground` gives the terrain height under each output cell (same size); when the output
 * grid is a window of the terrain lattice the caller can pass a copy of that window.
 */
export async function computeFloor(
  terrain: TerrainRaster,
  req: FloorRequest,
  outGeo: GridGeo,
  ground: Float32Array | null,
  exec: Executor,
  options: FloorOptions = {},
): Promise<FloorResult> {
  const { onProgress, cache } = options;
  const mapper = gridMapper(outGeo);
  onProgress?.(0, 'geodesics');
  const vmap = VectorMap.build(req.lon, req.lat, outGeo.width, outGeo.height, mapper);
  // Never farther than the grid's farthest cell: what lies beyond is not asked for.
  const gridReach = vmap.maxDistanceM() + 2 * vmap.block * Math.max(1, pixelSizeM(terrain, req));
  const maxRangeM = Math.min(req.maxRangeM ?? gridReach, gridReach);
  const spec: HorizonSpec = { ...req, maxRangeM };
  const n = Math.max(1, exec.size);
  // More pieces than workers so progress moves and uneven sectors balance out.
  const pieces = n === 1 ? 1 : n * 4;
  let done = 0;
  const tick = (stage: string) => () => onProgress?.(++done / (pieces * 2), stage);
  const t0 = nowMs();
  let horizon = cache?.get(terrain, spec);
  if (horizon) {
    done = pieces;
  } else {
    const layout = planHorizon(terrain, spec);
    const tan = allocateTan(layout, exec.shared);
    const swept = tick('terrain sweep');
    await Promise.all(
      Array.from({ length: pieces }, (_, i) =>
        exec.sweep(layout, tan, i / pieces, (i + 1) / pieces).then(swept),
      ),
    );
    horizon = { layout, tan };
    cache?.set(terrain, spec, horizon);
  }
  const { layout, tan } = horizon;
  const t1 = nowMs();
  const resampled = tick('resampling');
  const cells = outGeo.width * outGeo.height;
  const alloc = () =>
    new Float32Array(exec.shared ? new SharedArrayBuffer(cells * 4) : new ArrayBuffer(cells * 4));
  const out = alloc();
  const distance = options.withDistance ? alloc() : null;
  const groundIn = readableBy(exec, ground);
  const rowsPer = Math.ceil(outGeo.height / pieces);
  const counts = await Promise.all(
    Array.from({ length: pieces }, (_, i) =>
      exec
        .resample(
          layout,
          tan,
          vmap,
          out,
          groundIn,
          i * rowsPer,
          Math.min(outGeo.height, (i + 1) * rowsPer),
          distance,
        )
        .then((c) => {
          resampled();
          return c;
        }),
    ),
  );
  const t2 = nowMs();
  const beyond = counts.reduce((a, c) => a + c.beyondRange, 0);
  const unknown = counts.reduce((a, c) => a + c.unknown, 0);
  return {
    floor: out,
    ...(distance ? { distance } : {}),
    horizon,
    stats: {
      cells,
      valued: cells - beyond - unknown,
      beyondRange: beyond,
      unknown,
      groundM: layout.groundM,
      antennaAltM: layout.antennaAltM,
      radials: layout.levels[layout.levels.length - 1].azimuthCount,
      samples: layout.totalSamples,
      sweepMs: t1 - t0,
      resampleMs: t2 - t1,
    },
  };
}

function pixelSizeM(terrain: TerrainRaster, req: FloorRequest): number {
  const p = terrain.metresPerPixel(req.lon, req.lat);
  return Math.max(p.x, p.y);
}

/** Where the grid-native floor goes: a window of the terrain lattice, or the terrain's own buffer (in place). */
export interface GridFloorWindow {
  col0: number;
  row0: number;
  width: number;
  height: number;
  /**
   * Write the floor over the terrain itself (the window must then be the whole lattice): no second raster. The
   * terrain is unusable afterwards.
   */
  inPlace: boolean;
}

export interface GridFloorResult {
  /** The floor on the window (NaN = no value); the terrain's own buffer when in place. */
  floor: Float32Array;
  stats: Omit<FloorStats, 'radials' | 'samples' | 'resampleMs'> & {
    /** The antenna's cell on the terrain lattice (the antenna stands at its centre). */
    col: number;
    row: number;
    maxRangeM: number;
  };
}

/**
 * The floor straight on the terrain's own cells (grid-sweep.ts): eight octants, in parallel over the executor.
 * The antenna stands at the centre of the terrain cell holding (lon, lat); its ground is that cell's height.
 */
export async function computeGridFloor(
  terrain: TerrainRaster,
  req: FloorRequest,
  window: GridFloorWindow,
  exec: Executor,
  options: {
    onProgress?: Progress;
    /** false: the sweep's line operations in JavaScript (grid-sweep.ts). */ kernel?: boolean;
    /**
     * The antenna's cell and vector map built ahead over this terrain's grid (e.g. on a worker thread while the DEM
     * was read): used when its cell is the site's, else (or when it gives null) they are built here.
     */
    antenna?: Promise<GridAntenna | null>;
  } = {},
): Promise<GridFloorResult> {
  const g = terrain.geo;
  const W = g.width;
  const H = g.height;
  if (window.inPlace && (window.col0 !== 0 || window.row0 !== 0 || window.width !== W || window.height !== H))
    throw new Error('computeGridFloor: in place needs the whole terrain as the window');
  const { col, row } = antennaCell(terrain, req.lon, req.lat);
  const groundM = col >= 0 && row >= 0 && col < W && row < H ? terrain.data[row * W + col] : NaN;
  if (!Number.isFinite(groundM)) {
    throw new InputError(
      '--site',
      `${req.lon},${req.lat}`,
      'a site on a known cell of the loaded terrain tiles (lon,lat in degrees)',
    );
  }
  const kFactor = req.kFactor ?? 4 / 3;
  const reM = kFactor * (req.earthRadiusM ?? EARTH_RADIUS_M);
  const t0 = nowMs();
  options.onProgress?.(0, 'geodesics');
  // Distances from where the sweep puts the antenna: the centre of its cell (built ahead on a worker when given
  // for this very grid and cell).
  const early = options.antenna !== undefined ? await options.antenna : null;
  const vmap =
    early !== null &&
    early.col === col &&
    early.row === row &&
    early.vmap.width === W &&
    early.vmap.height === H
      ? new VectorMap(early.vmap)
      : antennaVectorMap(terrain, W, H, col, row);
  // Never farther than the farthest cell (nor than 2000 km): what lies beyond is not asked for.
  const maxRangeM = Math.min(req.maxRangeM ?? Infinity, 2_000_000, vmap.maxDistanceM() + 1);
  const antennaAltM = groundM + req.mastM;
  const pristine = copyPristine(terrain.data, W, H, col, row);
  const out = window.inPlace
    ? terrain.data
    : new Float32Array(
        exec.shared
          ? new SharedArrayBuffer(window.width * window.height * 4)
          : new ArrayBuffer(window.width * window.height * 4),
      );
  const tasks = gridSweepTasks({
    width: W,
    height: H,
    col,
    row,
    antennaAltM,
    reM,
    maxRangeM,
    outCol0: window.col0,
    outRow0: window.row0,
    outWidth: window.width,
    outHeight: window.height,
    vmap,
    ...(options.kernel === false ? { kernel: false } : {}),
  });
  // Longest octants first (by cells, the column octants weighed heavier), so the last ones to finish are short.
  tasks.sort((a, b) => gridSweepTaskCost(b) - gridSweepTaskCost(a));
  let done = 0;
  const counts = await Promise.all(
    tasks.map((t) =>
      exec.gridSweep(t, pristine, out).then((c) => {
        options.onProgress?.(++done / tasks.length, 'terrain sweep');
        return c;
      }),
    ),
  );
  const beyondRange = counts.reduce((a, c) => a + c.beyondRange, 0);
  const unknown = counts.reduce((a, c) => a + c.unknown, 0);
  const cells = window.width * window.height;
  return {
    floor: out,
    stats: {
      cells,
      valued: cells - beyondRange - unknown,
      beyondRange,
      unknown,
      groundM,
      antennaAltM,
      col,
      row,
      maxRangeM,
      sweepMs: nowMs() - t0,
    },
  };
}
