/**
 * The worker pool's dispatch (worker/runtime/pool.ts): every piece is posted at once to the worker with the fewest
 * pieces outstanding, so no worker waits for the calling thread to hand it the next one (in `airshade coverage`
 * that thread is busy building footprints between replies).
 */
import { describe, expect, it } from 'vitest';
import type { Remote } from 'comlink';
import { RemotePool } from '../worker/runtime/pool.ts';
import { api, AS_BEFORE, type WorkerApi } from '../worker/runtime/api.ts';
import type { HorizonLayout } from '../worker/core/horizon.ts';
import type { Executor } from '../worker/core/floor.ts';
import type { GridPristine, GridSweepCounts, GridSweepTask } from '../worker/core/grid-sweep.ts';

/** A stand-in worker: records the sweep pieces posted to it and answers each when told to. */
function fakeWorker(name: string, log: string[]) {
  const open: (() => void)[] = [];
  const remote = {
    sweep: (_l: HorizonLayout, _t: Float32Array, a: number) =>
      new Promise<void>((resolve) => {
        log.push(`${name}:${a}`);
        open.push(resolve);
      }),
  };
  return { remote: remote as unknown as Remote<WorkerApi>, answer: () => open.shift()?.(), open };
}

const tick = () => new Promise((r) => setTimeout(r, 0));

describe('RemotePool dispatch', () => {
  it('posts every piece at once, to the worker with the fewest outstanding, before any is answered', async () => {
    const log: string[] = [];
    const a = fakeWorker('a', log);
    const b = fakeWorker('b', log);
    const exec = new RemotePool([a.remote, b.remote]).executor();
    const layout = {} as HorizonLayout;
    const tan = new Float32Array(1);
    const done = Array.from({ length: 6 }, (_, i) => exec.sweep(layout, tan, i, i + 1));
    await tick();
    // All six posted with none answered: alternating, three each.
    expect(log).toEqual(['a:0', 'b:1', 'a:2', 'b:3', 'a:4', 'b:5']);
    // Worker a answers two pieces: the next two pieces go to it, the less loaded.
    a.answer();
    a.answer();
    await tick();
    const more = [
      exec.sweep(layout, tan, 6, 7),
      exec.sweep(layout, tan, 7, 8),
      exec.sweep(layout, tan, 8, 9),
    ];
    await tick();
    expect(log.slice(6)).toEqual(['a:6', 'a:7', 'a:8']);
    while (a.open.length + b.open.length > 0) {
      a.answer();
      b.answer();
      await tick();
    }
    await Promise.all([...done, ...more]);
  });

  it("sends a site's layout and vector map to each worker once, then 'as before' (a worker takes its messages in order)", async () => {
    const got: string[] = [];
    const worker = (name: string) =>
      ({
        sweep: async (l: unknown, _t: Float32Array, a: number) => {
          got.push(`${name} sweep ${a} ${l === AS_BEFORE ? 'as-before' : (l as { id: string }).id}`);
        },
        resample: async (
          l: unknown,
          _t: Float32Array,
          v: unknown,
          _o: Float32Array,
          _g: null,
          r0: number,
        ) => {
          const lv = l === AS_BEFORE ? 'as-before' : (l as { id: string }).id;
          const vv = v === AS_BEFORE ? 'as-before' : (v as { id: string }).id;
          got.push(`${name} resample ${r0} ${lv} ${vv}`);
          return { beyondRange: 0, unknown: 0 };
        },
      }) as unknown as Remote<WorkerApi>;
    const exec = new RemotePool([worker('a'), worker('b')]).executor();
    const tan = new Float32Array(1);
    const out = new Float32Array(1);
    for (const site of ['L1', 'L2']) {
      const layout = { id: site } as unknown as HorizonLayout;
      const vmap = { id: `V${site[1]}` } as never;
      await Promise.all([0, 1, 2, 3].map((i) => exec.sweep(layout, tan, i, i + 1)));
      await Promise.all([0, 1, 2, 3].map((i) => exec.resample(layout, tan, vmap, out, null, i, i + 1, null)));
    }
    expect(got).toEqual([
      'a sweep 0 L1',
      'b sweep 1 L1',
      'a sweep 2 as-before',
      'b sweep 3 as-before',
      'a resample 0 as-before V1',
      'b resample 1 as-before V1',
      'a resample 2 as-before as-before',
      'b resample 3 as-before as-before',
      'a sweep 0 L2',
      'b sweep 1 L2',
      'a sweep 2 as-before',
      'b sweep 3 as-before',
      'a resample 0 as-before V2',
      'b resample 1 as-before V2',
      'a resample 2 as-before as-before',
      'b resample 3 as-before as-before',
    ]);
  });

  it('after a failed job a worker is sent the whole layout again, not "as before"', async () => {
    const got: string[] = [];
    let fail = true;
    const remote = {
      sweep: async (l: unknown) => {
        got.push(l === AS_BEFORE ? 'as-before' : (l as { id: string }).id);
        if (fail) {
          fail = false;
          throw new Error('worker failed');
        }
      },
    } as unknown as Remote<WorkerApi>;
    const exec = new RemotePool([remote]).executor();
    const layout = { id: 'L1' } as unknown as HorizonLayout;
    const tan = new Float32Array(1);
    await expect(exec.sweep(layout, tan, 0, 1)).rejects.toThrow('worker failed');
    await exec.sweep(layout, tan, 1, 2);
    await exec.sweep(layout, tan, 2, 3);
    expect(got).toEqual(['L1', 'L1', 'as-before']);
  });
});

describe('RemotePool.sharingExecutor: one queue of octants for the workers and this thread', () => {
  /** Octants told apart by their column; each lane answers counts that name the octant and the lane. */
  const octants = Array.from({ length: 8 }, (_, i) => ({ col: i }) as unknown as GridSweepTask);
  const pristine = {} as GridPristine;
  const out = new Float32Array(1);
  const answer = (t: GridSweepTask, lane: number): GridSweepCounts => ({ beyondRange: t.col, unknown: lane });
  const inline = {
    gridSweep: async (t: GridSweepTask) => answer(t, 0),
  } as unknown as Executor;

  /** A stand-in worker: takes octants from the shared counter as a worker thread would, a tick apart. */
  function queueWorker(lane: number, failAfter = Infinity) {
    const took: number[] = [];
    const remote = {
      gridSweepQueue: async (
        tasks: readonly GridSweepTask[],
        _p: GridPristine,
        _o: Float32Array,
        next: Int32Array,
      ) => {
        const done: [number, GridSweepCounts][] = [];
        for (let i = Atomics.add(next, 0, 1); i < tasks.length; i = Atomics.add(next, 0, 1)) {
          took.push(i);
          if (took.length > failAfter) throw new Error(`lane ${lane} failed`);
          done.push([i, answer(tasks[i], lane)]);
          await tick();
        }
        return done;
      },
    } as unknown as Remote<WorkerApi>;
    return { remote, took };
  }

  it('runs every octant once, on whichever lane is free, and answers each with its own counts', async () => {
    const w = queueWorker(1);
    const exec = new RemotePool([w.remote]).sharingExecutor(inline);
    expect(exec.size).toBe(2);
    const counts = await Promise.all(octants.map((t) => exec.gridSweep(t, pristine, out)));
    expect(counts.map((c) => c.beyondRange)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
    // The worker took the first octant; this thread, free at once, took the rest before the worker's next tick.
    expect(w.took).toEqual([0]);
    expect(counts.map((c) => c.unknown)).toEqual([1, 0, 0, 0, 0, 0, 0, 0]);
  });

  it('a lane that fails fails the octants it took, and only those', async () => {
    const w = queueWorker(1, 0);
    const exec = new RemotePool([w.remote]).sharingExecutor(inline);
    const settled = await Promise.allSettled(octants.map((t) => exec.gridSweep(t, pristine, out)));
    expect(settled.map((s) => s.status)).toEqual(['rejected', ...Array(7).fill('fulfilled')]);
    expect((settled[0] as PromiseRejectedResult).reason).toEqual(new Error('lane 1 failed'));
  });
});

describe('touchPages: a worker touches the pages of the raster being read, and changes no value', () => {
  it('every 4 KiB page, from the end; the values there (zeros included) stay as they are; a set stop ends it', async () => {
    const words = 1024 * 64 + 300; // 64 pages and a part
    const buffer = new SharedArrayBuffer(words * 4);
    const data = new Int32Array(buffer);
    let seed = 3;
    for (let i = 0; i < words; i++) {
      seed = (seed * 16807) % 2147483647;
      data[i] = seed % 5 === 0 ? 0 : seed; // some zeros where the touches land too
    }
    for (let i = words - 1024; i >= 0; i -= 4096) data[i] = 0;
    const before = data.slice();
    const stop = new SharedArrayBuffer(4);
    // One touch per whole 4 KiB step back from the end.
    expect(await api.touchPages(buffer, stop)).toBe(Math.floor(words / 1024));
    expect(data).toEqual(before);
    Atomics.store(new Int32Array(stop), 0, 1);
    expect(await api.touchPages(buffer, stop)).toBe(0);
    expect(data).toEqual(before);
  });
});
