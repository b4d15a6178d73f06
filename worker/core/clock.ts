/** A monotonic clock for stage timings; both Web Workers and Node provide `performance.now()`. */
const perf = (globalThis as unknown as { performance: { now(): number } }).performance;

export function nowMs(): number {
  return perf.now();
}
