/**
 * A pool of remote workers exposing the worker API (comlink `Remote<WorkerApi>`), handed to the core as an
 * Executor: each piece of a job is posted at once to the least busy worker. Transport-free, so the CLI (worker_threads) and the
 * web app (Web Workers over MessagePorts) share it.
 */
import type { Remote } from 'comlink';
import { AS_BEFORE, type Sent, type WorkerApi } from './api.ts';
import type { Executor } from '../core/floor.ts';
import type { GridPristine, GridSweepCounts, GridSweepTask } from '../core/grid-sweep.ts';

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
   * pool of n − 1 workers keeps n lanes busy with one worker thread less in memory (`airshade floor`). The octants
   * handed in together (`computeGridFloor` hands in all eight at once, longest first) form one queue: every lane
   * takes the next octant as soon as it is free, by an atomic counter in shared memory (`Atomics.add`), so no lane
   * waits for a message from another — this thread runs its octants back to back. A fixed share per lane, by cells,
   * had left one lane 0.05–0.35 s behind the other at 8192²: the column octants take longer than the row octants of
   * the same size, and the shares gave one lane three of them.
   * Sweeps over radials and resampling go to the workers as `executor()` sends them.
   */
  sharingExecutor(inline: Executor): Executor {
    const base = this.executor();
    let batch: QueuedOctant[] = [];
    return {
      ...base,
      size: this.remotes.length + 1,
      gridSweep: (task, pristine, out) =>
        new Promise((resolve, reject) => {
          if (batch.push({ task, pristine, out, resolve, reject }) === 1) {
            setTimeout(() => {
              const items = batch;
              batch = [];
              this.sweepQueue(items, inline);
            }, 0);
          }
        }),
    };
  }

  /** Runs queued octants on every worker and on this thread, each lane taking the next free one (sharingExecutor). */
  private sweepQueue(items: readonly QueuedOctant[], inline: Executor): void {
    // One queue per pristine copy and output (one grid sweep); in practice all the items share them.
    const first = items[0];
    const rest = items.filter((q) => q.pristine !== first.pristine || q.out !== first.out);
    const mine = rest.length === 0 ? items : items.filter((q) => !rest.includes(q));
    if (rest.length > 0) this.sweepQueue(rest, inline);
    const next = new Int32Array(new SharedArrayBuffer(4));
    const tasks = mine.map((q) => q.task);
    const answered = mine.map(() => false);
    const answer = (i: number, counts: GridSweepCounts): void => {
      answered[i] = true;
      mine[i].resolve(counts);
    };
    const lanes: Promise<void>[] = this.remotes.map((w) =>
      w.gridSweepQueue(tasks, first.pristine, first.out, next).then((done) => {
        for (const [i, counts] of done) answer(i, counts);
      }),
    );
    lanes.push(
      (async () => {
        for (let i = Atomics.add(next, 0, 1); i < tasks.length; i = Atomics.add(next, 0, 1)) {
          answer(i, await inline.gridSweep(tasks[i], first.pristine, first.out));
        }
      })(),
    );
    // A lane that failed took octants it never answered: once every lane has ended, those fail with its error.
    void Promise.allSettled(lanes).then((ends) => {
      const failed = ends.find((e): e is PromiseRejectedResult => e.status === 'rejected');
      if (failed === undefined) return;
      for (let i = 0; i < mine.length; i++) if (!answered[i]) mine[i].reject(failed.reason);
    });
  }
}

interface QueuedOctant {
  task: GridSweepTask;
  pristine: GridPristine;
  out: Float32Array;
  resolve: (c: GridSweepCounts) => void;
  reject: (e: unknown) => void;
}
