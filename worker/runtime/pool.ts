/**
 * A pool of remote workers exposing the worker API (comlink `Remote<WorkerApi>`), handed to the core as an
 * Executor: each piece of a job runs on the next idle worker. Transport-free, so the CLI (worker_threads) and the
 * web app (Web Workers over MessagePorts) share it.
 */
import type { Remote } from 'comlink';
import type { WorkerApi } from './api.ts';
import type { Executor } from '../core/floor.ts';

export class RemotePool {
  private readonly idle: Remote<WorkerApi>[];
  private readonly waiting: ((w: Remote<WorkerApi>) => void)[] = [];

  constructor(readonly remotes: readonly Remote<WorkerApi>[]) {
    this.idle = [...remotes];
  }

  get size(): number {
    return this.remotes.length;
  }

  private async run<T>(job: (w: Remote<WorkerApi>) => Promise<T>): Promise<T> {
    const w = this.idle.pop() ?? (await new Promise<Remote<WorkerApi>>((res) => this.waiting.push(res)));
    try {
      return await job(w);
    } finally {
      const next = this.waiting.shift();
      if (next) next(w);
      else this.idle.push(w);
    }
  }

  /** The pieces write into shared memory (SharedArrayBuffer), so the executor is `shared`. */
  executor(): Executor {
    return {
      size: this.remotes.length,
      shared: true,
      sweep: (layout, tan, a, b) => this.run((w) => w.sweep(layout, tan, a, b)),
      resample: (layout, tan, vmap, out, ground, r0, r1, distance) =>
        this.run((w) => w.resample(layout, tan, vmap, out, ground, r0, r1, distance)),
      gridSweep: (task, pristine, out) => this.run((w) => w.gridSweep(task, pristine, out)),
    };
  }
}
