/**
 * The one API object every worker exposes (Web Worker in the browser, worker_threads in the CLI). Its type is
 * the protocol: callers hold `Remote<WorkerApi>`. It keeps heavy data where it is computed: the terrain is set
 * once per worker (shared memory, never cloned per call) and jobs write into shared output buffers.
 */
import type { Terrain, TerrainParts } from '../core/terrain.ts';
import type { HorizonLayout, ResampleCounts } from '../core/horizon.ts';
import type { GridAntenna, VectorMap, VectorMapParts } from '../core/geodesy.ts';
import type { GridGeo } from '../core/grid.ts';
import {
  sweepGridOctant,
  type GridPristine,
  type GridSweepCounts,
  type GridSweepTask,
} from '../core/grid-sweep.ts';
import type { PlanInstance, PlanOptions, PlanResult } from '../core/plan.ts';
import type { LedgerSpec } from '../core/memory-estimate.ts';
import type { LevelLayerJob } from '../io/layers.ts';

/**
 * The radial engine (horizon, geodesics, the terrain's projection) is loaded on a worker's first radial job: a worker
 * that only runs the grid sweep (`airshade floor` on a projected DEM) starts with none of it: the built worker
 * (worker/runtime/node.ts) measured bare takes 10.7 MiB, against 22.4 MiB with the engine loaded up front and 9.5 MiB
 * for an empty worker thread.
 */
interface RadialEngine {
  Terrain: typeof import('../core/terrain.ts').Terrain;
  VectorMap: typeof import('../core/geodesy.ts').VectorMap;
  sweepSector: typeof import('../core/horizon.ts').sweepSector;
  resampleFloor: typeof import('../core/horizon.ts').resampleFloor;
}
let radial: Promise<RadialEngine> | null = null;

function radialEngine(): Promise<RadialEngine> {
  radial ??= Promise.all([
    import('../core/terrain.ts'),
    import('../core/geodesy.ts'),
    import('../core/horizon.ts'),
  ]).then(([t, g, h]) => ({
    Terrain: t.Terrain,
    VectorMap: g.VectorMap,
    sweepSector: h.sweepSector,
    resampleFloor: h.resampleFloor,
  }));
  return radial;
}

/** The terrain as sent (its samples are all the grid sweep reads) and, once a radial job asks, as a Terrain. */
let parts: TerrainParts | null = null;
let terrain: Terrain | null = null;

/**
 * What a piece's caller sends of a large argument it sent this worker for the piece before: `AS_BEFORE` instead of
 * the same object again. A site's layout (its geodesic table: about 240 KiB on the demo) and vector map (about
 * 360 KiB) go to each worker once, not with each of its sweep and resampling pieces (RemotePool tracks what each
 * worker holds; a worker takes its messages in order).
 */
export const AS_BEFORE = 'as-before';
export type Sent<T> = T | typeof AS_BEFORE;
let lastLayout: HorizonLayout | null = null;
let lastVmap: VectorMap | null = null;

function layoutOf(sent: Sent<HorizonLayout>): HorizonLayout {
  if (sent !== AS_BEFORE) lastLayout = sent;
  if (lastLayout === null) throw new Error('worker: a layout "as before" with none sent');
  return lastLayout;
}

function vmapOf(sent: Sent<VectorMapParts>, E: RadialEngine): VectorMap {
  if (sent !== AS_BEFORE) lastVmap = new E.VectorMap(sent);
  if (lastVmap === null) throw new Error('worker: a vector map "as before" with none sent');
  return lastVmap;
}

function needParts(): TerrainParts {
  if (parts === null) throw new Error('worker: call setTerrain() before running a job');
  return parts;
}

function need(E: RadialEngine): Terrain {
  terrain ??= E.Terrain.fromParts(needParts());
  return terrain;
}

/** The vector map this worker was last asked for (`gridAntenna`), done or failed; `touchPages` waits for it. */
let antennaBuilt: Promise<unknown> = Promise.resolve();

export const api = {
  /** Installs the terrain every later job reads (data should be on a SharedArrayBuffer). */
  setTerrain(sent: TerrainParts): void {
    parts = sent;
    terrain = null;
  },
  async sweep(
    layout: Sent<HorizonLayout>,
    tan: Float32Array,
    sectorStart: number,
    sectorEnd: number,
    tanInMemory?: boolean,
  ): Promise<void> {
    const E = await radialEngine();
    E.sweepSector(need(E), layoutOf(layout), tan, sectorStart, sectorEnd, undefined, tanInMemory);
  },
  async resample(
    layout: Sent<HorizonLayout>,
    tan: Float32Array,
    vmap: Sent<VectorMapParts>,
    out: Float32Array,
    ground: Float32Array | null,
    rowStart: number,
    rowEnd: number,
    distance: Float32Array | null,
  ): Promise<ResampleCounts> {
    const E = await radialEngine();
    return E.resampleFloor(
      { layout: layoutOf(layout), tan },
      vmapOf(vmap, E),
      out,
      ground,
      rowStart,
      rowEnd,
      distance,
    );
  },
  /**
   * One flight level's layers as GeoJSON text (io/layers.ts `levelLayerText`): the levels of a study are made on the
   * pool's threads at once. Needs no terrain; the layers' code is loaded on the first such job.
   */
  async levelLayerText(job: LevelLayerJob): Promise<string> {
    return (await import('../io/layers.ts')).levelLayerText(job);
  },
  /**
   * The grid sweep's antenna cell and vector map on a grid (core/geodesy.ts `gridAntenna`): needs no terrain, so a
   * worker started for `airshade floor` builds it while the caller reads the DEM. Geodesy and projections are loaded
   * on the first such job.
   */
  async gridAntenna(geo: GridGeo, lon: number, lat: number): Promise<GridAntenna> {
    const built = (async () => {
      const [{ gridMapper }, { gridAntenna }] = await Promise.all([
        import('../core/grid.ts'),
        import('../core/geodesy.ts'),
      ]);
      return gridAntenna(gridMapper(geo), geo.width, geo.height, lon, lat);
    })();
    antennaBuilt = built.catch(() => null);
    return built;
  },
  /**
   * Touches every 4 KiB page of a shared buffer the caller is reading into (a DEM's terrain raster), from its end
   * towards its start, until `stop` (an Int32 in shared memory) is set: where first touching memory is costly (a
   * fault on the host of a virtual machine), this thread takes some of those faults while the caller reads. Each
   * touch is a compare-and-swap of 0 with 0, which never changes a value, whoever writes it meanwhile. Waits for
   * the antenna's vector map this worker was asked for first (the sweep needs it before the raster). Returns how
   * many pages it touched.
   */
  async touchPages(buffer: SharedArrayBuffer, stop: SharedArrayBuffer): Promise<number> {
    await antennaBuilt;
    const words = new Int32Array(buffer);
    const flag = new Int32Array(stop);
    let touched = 0;
    for (let i = words.length - 1024; i >= 0; i -= 1024) {
      if ((touched & 511) === 0 && Atomics.load(flag, 0) !== 0) break;
      Atomics.compareExchange(words, i, 0, 0);
      touched++;
    }
    return touched;
  },
  /** One octant of the grid-native floor sweep; `out` may be the terrain's own (shared) buffer. */
  gridSweep(task: GridSweepTask, pristine: GridPristine, out: Float32Array): GridSweepCounts {
    return sweepGridOctant(task, needParts().data, pristine, out);
  },
  /**
   * Octants of one grid sweep from a queue shared with other lanes (pool.ts `sharingExecutor`): takes the next
   * untaken index (`Atomics.add` on `next`, in shared memory) until none is left; answers the indices it ran and
   * their counts.
   */
  gridSweepQueue(
    tasks: readonly GridSweepTask[],
    pristine: GridPristine,
    out: Float32Array,
    next: Int32Array,
  ): [number, GridSweepCounts][] {
    const done: [number, GridSweepCounts][] = [];
    for (let i = Atomics.add(next, 0, 1); i < tasks.length; i = Atomics.add(next, 0, 1)) {
      done.push([i, sweepGridOctant(tasks[i], needParts().data, pristine, out)]);
    }
    return done;
  },
  /**
   * The planner, off the caller's thread (the app's engine stays free for quick calls while HiGHS works).
   * `wasmUrl`: where HiGHS's WebAssembly is served (a browser needs it; null lets the package find it).
   */
  async solve(
    inst: PlanInstance,
    opts: Omit<PlanOptions, 'highs' | 'onProgress'>,
    wasmUrl: string | null,
    onProgress?: (fraction: number, stage: string) => void,
    /** The caller's memory account as it stands (the covers counted), rebuilt here for the solve. */
    memory?: LedgerSpec,
  ): Promise<PlanResult> {
    // Loaded on first use: a worker that only sweeps terrain starts without the planner and its solver.
    const [{ solvePlan }, { MemoryLedger }] = await Promise.all([
      import('../core/plan.ts'),
      import('../core/memory-estimate.ts'),
    ]);
    return solvePlan(inst, {
      ...opts,
      ...(memory ? { memory: new MemoryLedger(memory) } : {}),
      onProgress,
      ...(wasmUrl ? { highs: { locateFile: () => wasmUrl } } : {}),
    });
  },
};

export type WorkerApi = typeof api;
