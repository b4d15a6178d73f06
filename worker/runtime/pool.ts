/**
 * A pool of remote workers exposing the worker API (comlink `Remote<WorkerApi>`), handed to the core as an
 * Executor: each piece of a job is posted at once to the least busy worker. Transport-free, so the CLI (worker_threads) and the
 * web app (Web Workers over MessagePorts) share it.
 */
import type { Remote } from 'comlink';
import { AS_BEFORE, type Sent, type WorkerApi } from './api.ts';
import type { Executor } from '../core/floor.ts';
import { gridSweepTaskCells } from '../core/grid-sweep.ts';

export class RemotePool {
  /** Jobs posted to each worker and not yet answered. */
  private readonly queued: number[];
  /** Per worker, the last layout and vector map posted to it (api.ts `AS_BEFORE`). */
  private readonly sent: { layout: object | null; vmap: object | null }[];

  constructor(readonly remotes: readonly Remote<WorkerApi>[]) {
    this.queued = remotes.map(() => 0);
    this.sent = remotes.map(() => ({ layout: null, vmap: null }));
  }

  /** `value`, or AS_BEFORE when it is the object last posted to worker k under that name. */
  private once<T extends object>(k: number, name: 'layout' | 'vmap', value: T): Sent<T> {
    if (this.sent[k][name] === value) return AS_BEFORE;
    this.sent[k][name] = value;
    return value;
  }

  get size(): number {
    return this.remotes.length;
  }

  /**
   * Posts the job at once to the worker with the fewest jobs outstanding (the first such), where it queues behind
   * them. No worker then waits for the calling thread to hand it its next piece: in `airshade coverage` that
   * thread builds footprints between the pieces of the next site's sweep, and while it did, the workers idled.
   */
  private async run<T>(job: (w: Remote<WorkerApi>, k: number) => Promise<T>): Promise<T> {
    let k = 0;
    for (let i = 1; i < this.queued.length; i++) if (this.queued[i] < this.queued[k]) k = i;
    this.queued[k]++;
    try {
      // The job posts its message now (comlink posts as it is called), so `once` sees the worker's order.
      return await job(this.remotes[k], k);
    } catch (e) {
      // Whatever failed (the post itself, or the worker), the next job sends its objects whole again.
      this.sent[k] = { layout: null, vmap: null };
      throw e;
    } finally {
      this.queued[k]--;
    }
  }

  /** The pieces write into shared memory (SharedArrayBuffer), so the executor is `shared`. */
  executor(): Executor {
    return {
      size: this.remotes.length,
      shared: true,
      sweep: (layout, tan, a, b, inMemory) =>
        this.run((w, k) => w.sweep(this.once(k, 'layout', layout), tan, a, b, inMemory)),
      resample: (layout, tan, vmap, out, ground, r0, r1, distance) =>
        this.run((w, k) =>
          w.resample(
            this.once(k, 'layout', layout),
            tan,
            this.once(k, 'vmap', vmap),
            out,
            ground,
            r0,
            r1,
            distance,
          ),
        ),
      gridSweep: (task, pristine, out) => this.run((w) => w.gridSweep(task, pristine, out)),
    };
  }

  /**
   * For one grid sweep (`computeGridFloor`): the calling thread works as one more lane beside the workers, so a
   * pool of n − 1 workers keeps n lanes busy with one worker thread less in memory (`airshade floor`). Each octant
   * goes, as it is handed in (largest first), to the lane with the least work so far (longest-processing-time
   * order). A worker's octants are posted at once and queue in that worker; the calling thread's run back to back
   * in `inline` once every octant has been handed out, so no worker waits for this thread to hand it the next.
   * Sweeps over radials and resampling go to the workers as `executor()` sends them.
   */
  sharingExecutor(inline: Executor): Executor {
    const base = this.executor();
    const load = new Array<number>(this.remotes.length + 1).fill(0);
    const mine: (() => void)[] = [];
    return {
      ...base,
      size: this.remotes.length + 1,
      gridSweep: (task, pristine, out) => {
        let lane = 0;
        for (let i = 1; i < load.length; i++) if (load[i] < load[lane]) lane = i;
        load[lane] += gridSweepTaskCells(task);
        if (lane < this.remotes.length) return this.remotes[lane].gridSweep(task, pristine, out);
        return new Promise((resolve, reject) => {
          if (mine.push(() => void inline.gridSweep(task, pristine, out).then(resolve, reject)) === 1) {
            setTimeout(() => {
              for (const run of mine.splice(0)) run();
            }, 0);
          }
        });
      },
    };
  }
}
