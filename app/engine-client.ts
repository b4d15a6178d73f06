/**
 * Starts the engine worker and its pool of floor workers (one per core), and wires the pool to the engine over
 * MessagePorts so floor pieces never pass through the main thread. The terrain lives in a SharedArrayBuffer
 * when the page is cross-origin isolated (the app's server sends the headers), shared by every worker.
 */
import { proxy, transfer, wrap, type Remote } from 'comlink';
import type { EngineApi } from '../worker/runtime/engine-worker.ts';

export type Engine = Remote<EngineApi>;

export interface EngineHandle {
  engine: Engine;
  poolSize: number;
  shared: boolean;
}

export async function startEngine(): Promise<EngineHandle> {
  const worker = new Worker(new URL('../worker/runtime/engine-worker.ts', import.meta.url), {
    type: 'module',
    name: 'airshade-engine',
  });
  const engine = wrap<EngineApi>(worker);
  const size = Math.max(1, Math.min(navigator.hardwareConcurrency || 2, 8));
  const ports: MessagePort[] = [];
  for (let i = 0; i < size; i++) {
    const w = new Worker(new URL('../worker/runtime/browser.ts', import.meta.url), {
      type: 'module',
      name: `airshade-floor-${i + 1}`,
    });
    const ch = new MessageChannel();
    w.postMessage({ airshadePort: ch.port1 }, [ch.port1]);
    ports.push(ch.port2);
  }
  const r = await engine.connectPool(transfer(ports, ports));
  return { engine, poolSize: r.size, shared: r.shared };
}

/** A progress callback the worker can call. */
export function progressProxy(fn: (f: number, stage: string) => void) {
  return proxy(fn);
}
