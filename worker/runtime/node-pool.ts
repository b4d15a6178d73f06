/**
 * A pool of worker_threads running worker/runtime/node.ts, driven through comlink. Size 0 means "run inline": the
 * executor then calls the core directly (what tests do).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { wrap, type Remote } from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import type { NodeWorkerApi } from './node.ts';
import type { ChunkedDigest } from '../cli/file-digest.ts';
import type { Executor } from '../core/floor.ts';
import type { TerrainParts } from '../core/terrain.ts';
import type { GridAntenna } from '../core/geodesy.ts';
import type { GridGeo } from '../core/grid.ts';
import { RemotePool } from './pool.ts';

function workerEntry(): URL {
  // Built CLI: dist/cli/node.js beside this bundle. Development: the tsx boot file beside this source.
  const built = new URL('./node.js', import.meta.url);
  if (import.meta.url.endsWith('.js') && existsSync(fileURLToPath(built))) return built;
  return new URL('./node-boot.mjs', import.meta.url);
}

let running = 0;

export class NodePool {
  private readonly pool: RemotePool;
  private closed = false;

  private constructor(
    private readonly workers: Worker[],
    private readonly remotes: Remote<NodeWorkerApi>[],
  ) {
    this.pool = new RemotePool(remotes);
  }

  static defaultSize(): number {
    return Math.max(1, Math.min(availableParallelism(), 8));
  }

  /** Starts `size` workers and installs the terrain in each (shared memory: one copy for all). */
  static async start(size: number, terrain: TerrainParts): Promise<NodePool> {
    const pool = NodePool.boot(size);
    await pool.install(terrain);
    return pool;
  }

  /** Worker threads started and not yet closed, over every pool of this process (what tests check). */
  static get running(): number {
    return running;
  }

  /**
   * Starts `size` workers without a terrain: they load their modules on their own threads while this one goes on
   * (e.g. reads the terrain); `install` gives it to them.
   */
  static boot(size: number): NodePool {
    const entry = workerEntry();
    const workers = Array.from({ length: size }, () => new Worker(entry));
    running += size;
    return new NodePool(
      workers,
      workers.map((w) => wrap<NodeWorkerApi>(nodeEndpoint(w))),
    );
  }

  get size(): number {
    return this.workers.length;
  }

  /** The grid sweep's antenna on a grid, built on the first worker (WorkerApi.gridAntenna). */
  gridAntenna(geo: GridGeo, lon: number, lat: number): Promise<GridAntenna> {
    return this.remotes[0].gridAntenna(geo, lon, lat);
  }

  /** Pages of a shared buffer touched on the first worker while this thread reads into it (WorkerApi.touchPages). */
  touchPages(buffer: SharedArrayBuffer, stop: SharedArrayBuffer): Promise<number> {
    return this.remotes[0].touchPages(buffer, stop);
  }

  /** A file's SHA-256 read on the first worker (file-digest.ts `digestFile`), e.g. while this thread writes. */
  fileDigest(path: string): Promise<ChunkedDigest> {
    return this.remotes[0].fileDigest(path);
  }

  /** Installs the terrain in every worker (shared memory: one copy for all). */
  async install(terrain: TerrainParts): Promise<void> {
    await Promise.all(this.remotes.map((r) => r.setTerrain(terrain)));
  }

  /** Runs `jobs` on the workers, one at a time on each, in order of the list; the results in the same order. */
  async each<T>(jobs: readonly ((worker: Remote<NodeWorkerApi>) => Promise<T>)[]): Promise<T[]> {
    const results = new Array<T>(jobs.length);
    let next = 0;
    await Promise.all(
      this.remotes.map(async (w) => {
        while (next < jobs.length) {
          const i = next++;
          results[i] = await jobs[i](w);
        }
      }),
    );
    return results;
  }

  executor(): Executor {
    return this.pool.executor();
  }

  /** The workers and the calling thread as one more lane, for one grid sweep (RemotePool.sharingExecutor). */
  sharingExecutor(inline: Executor): Executor {
    return this.pool.sharingExecutor(inline);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    running -= this.workers.length;
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
