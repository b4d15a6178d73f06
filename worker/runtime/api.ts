/**
 * The one API object every worker exposes (Web Worker in the browser, worker_threads in the CLI). Its type is
 * the protocol: callers hold `Remote<WorkerApi>`. It keeps heavy data where it is computed: the terrain is set
 * once per worker (shared memory, never cloned per call) and jobs write into shared output buffers.
 */
import { Terrain, type TerrainParts } from '../core/terrain.ts';
import { resampleFloor, sweepSector, type HorizonLayout, type ResampleCounts } from '../core/horizon.ts';
import { VectorMap, type VectorMapParts } from '../core/geodesy.ts';
import {
  sweepGridOctant,
  type GridPristine,
  type GridSweepCounts,
  type GridSweepTask,
} from '../core/grid-sweep.ts';
import type { PlanInstance, PlanOptions, PlanResult } from '../core/plan.ts';
import { MemoryLedger, type LedgerSpec } from '../core/memory-estimate.ts';

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

function vmapOf(sent: Sent<VectorMapParts>): VectorMap {
  if (sent !== AS_BEFORE) lastVmap = new VectorMap(sent);
  if (lastVmap === null) throw new Error('worker: a vector map "as before" with none sent');
  return lastVmap;
}

function need(): Terrain {
  if (terrain === null) throw new Error('worker: call setTerrain() before running a job');
  return terrain;
}

export const api = {
  /** Installs the terrain every later job reads (data should be on a SharedArrayBuffer). */
  setTerrain(parts: TerrainParts): void {
    terrain = Terrain.fromParts(parts);
  },
  sweep(layout: Sent<HorizonLayout>, tan: Float32Array, sectorStart: number, sectorEnd: number): void {
    sweepSector(need(), layoutOf(layout), tan, sectorStart, sectorEnd);
  },
  resample(
    layout: Sent<HorizonLayout>,
    tan: Float32Array,
    vmap: Sent<VectorMapParts>,
    out: Float32Array,
    ground: Float32Array | null,
    rowStart: number,
    rowEnd: number,
    distance: Float32Array | null,
  ): ResampleCounts {
    return resampleFloor(
      { layout: layoutOf(layout), tan },
      vmapOf(vmap),
      out,
      ground,
      rowStart,
      rowEnd,
      distance,
    );
  },
  /** One octant of the grid-native floor sweep; `out` may be the terrain's own (shared) buffer. */
  gridSweep(task: GridSweepTask, pristine: GridPristine, out: Float32Array): GridSweepCounts {
    return sweepGridOctant(task, need().data, pristine, out);
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
    const { solvePlan } = await import('../core/plan.ts');
    return solvePlan(inst, {
      ...opts,
      ...(memory ? { memory: new MemoryLedger(memory) } : {}),
      onProgress,
      ...(wasmUrl ? { highs: { locateFile: () => wasmUrl } } : {}),
    });
  },
};

export type WorkerApi = typeof api;
