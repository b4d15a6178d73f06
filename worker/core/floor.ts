/**
 * The floor job: one antenna's terrain-masking floor on an output grid, run inline or split over a pool.
 *
 *   plan (layout) → sweep sectors of radials into one shared `tan` → resample row bands into one shared output
 *
 * Both stages are embarrassingly parallel; an Executor decides where the pieces run. The inline executor runs
 * them here (tests); the Node CLI and the browser pass executors over worker pools with the same interface.
 */
import { nowMs } from './clock.ts';
import type { GridGeo } from './grid.ts';
import type { HorizonCache } from './horizon-cache.ts';
import { gridMapper } from './grid.ts';
import { VectorMap, type VectorMapParts } from './geodesy.ts';
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

export type Progress = (fraction: number, stage: string) => void;

/** Where the pieces of a job run. `size` is how many pieces to cut each stage into. */
export interface Executor {
  readonly size: number;
  /** Shared memory is needed when pieces run elsewhere (a pool); inline executors can use plain buffers. */
  readonly shared: boolean;
  sweep(layout: HorizonLayout, tan: Float32Array, sectorStart: number, sectorEnd: number): Promise<void>;
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
}

/** Runs every piece on this thread against the given terrain. */
export function inlineExecutor(terrain: TerrainRaster): Executor {
  return {
    size: 1,
    shared: false,
    async sweep(layout, tan, a, b) {
      sweepSector(terrain, layout, tan, a, b);
    },
    async resample(layout, tan, vmap, out, ground, r0, r1, distance) {
      return resampleFloor({ layout, tan }, new VectorMap(vmap), out, ground, r0, r1, distance);
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
  const rowsPer = Math.ceil(outGeo.height / pieces);
  const counts = await Promise.all(
    Array.from({ length: pieces }, (_, i) =>
      exec
        .resample(
          layout,
          tan,
          vmap,
          out,
          ground,
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
