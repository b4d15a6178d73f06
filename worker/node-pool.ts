/**
 * A pool of worker_threads running worker/node.ts, driven through comlink. Size 0 means "run inline": the
 * executor then calls the core directly (what tests do).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { wrap, type Remote } from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import type { WorkerApi } from './api.ts';
import type { Executor } from './core/floor.ts';
import type { TerrainParts } from './core/terrain.ts';

function workerEntry(): URL {
  // Built CLI: dist/cli/node.js beside this bundle. Development: the tsx boot file beside this source.
  const built = new URL('./node.js', import.meta.url);
  if (import.meta.url.endsWith('.js') && existsSync(fileURLToPath(built))) return built;
  return new URL('./node-boot.mjs', import.meta.url);
}

export class NodePool {
  private readonly idle: Remote<WorkerApi>[] = [];
  private readonly waiting: ((w: Remote<WorkerApi>) => void)[] = [];

  private constructor(
    private readonly workers: Worker[],
    remotes: Remote<WorkerApi>[],
  ) {
    this.idle.push(...remotes);
  }

  static defaultSize(): number {
    return Math.max(1, Math.min(availableParallelism(), 8));
  }

  /** Starts `size` workers and installs the terrain in each (shared memory: one copy for all). */
  static async start(size: number, terrain: TerrainParts): Promise<NodePool> {
    const entry = workerEntry();
    const workers = Array.from({ length: size }, () => new Worker(entry));
    const remotes = workers.map((w) => wrap<WorkerApi>(nodeEndpoint(w)));
    const pool = new NodePool(workers, remotes);
    await Promise.all(remotes.map((r) => r.setTerrain(terrain)));
    return pool;
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

  executor(): Executor {
    return {
      size: this.workers.length,
      shared: true,
      sweep: (layout, tan, a, b) => this.run((w) => w.sweep(layout, tan, a, b)),
      resample: (layout, tan, vmap, out, ground, r0, r1, distance) =>
        this.run((w) => w.resample(layout, tan, vmap, out, ground, r0, r1, distance)),
    };
  }

  async close(): Promise<void> {
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
