/**
 * Refuse before allocating, for the CLI: the memory a run will need, estimated from its inputs before any large
 * array exists (worker/core/memory-estimate.ts, shared with the web app's engine), against a limit
 * (`--max-memory`, default the smaller of half this machine's memory and 2 GiB). A run past the limit stops at
 * once with one message naming the input that drives the size and the knob. This file adds what needs Node: the
 * machine's memory and the option (DEM tiles are read within the limit by dem-open.ts).
 */
import { totalmem } from 'node:os';
import { InputError } from '../../shared/errors.ts';
import {
  estimateRefusal,
  formatBytes,
  GiB,
  MiB,
  tileRefusal,
  type Estimate,
  type EstimatePart,
  type TileShape,
} from '../core/memory-estimate.ts';
import { helpOption, type Parsed } from './args.ts';

export {
  estimateRun,
  formatBytes,
  horizonSamples,
  OVERHEAD,
  RUNTIME_BYTES,
  type Estimate,
  type RunShape,
  type TileShape,
} from '../core/memory-estimate.ts';

/** Default limit: the smaller of half the machine's memory and this. */
export const DEFAULT_MAX_MEMORY_BYTES = 2 * GiB;

export const MEMORY_OPTION = { 'max-memory': { value: true } } as const;

export function memoryHelp(column: number): string {
  return helpOption('--max-memory SIZE', column, [
    'refuse at once a run whose estimated memory exceeds SIZE (e.g. 1.5G, 800M; default the smaller',
    "of half this machine's memory and 2G; at most the machine's memory)",
  ]);
}

/** Machine limits (a test may pass its own). */
export interface Machine {
  totalBytes: number;
}

export function thisMachine(): Machine {
  return { totalBytes: totalmem() };
}

/** `--max-memory SIZE`: bytes, from `1.5G`, `800M`, `2GiB`, `512MB` or a plain number of MiB. */
export function memoryLimitArg(p: Parsed, machine: Machine = thisMachine()): number {
  const text = p.values.get('max-memory')?.[0];
  const fallback = Math.min(DEFAULT_MAX_MEMORY_BYTES, machine.totalBytes / 2);
  if (text === undefined) return fallback;
  const what = `a memory size such as 1.5G or 800M, from 256M to this machine's ${formatBytes(machine.totalBytes)}`;
  const m = /^\s*(\d+(?:\.\d+)?|\.\d+)\s*([kKmMgGtT]?)(?:i?[bB])?\s*$/.exec(text);
  if (!m) throw new InputError('--max-memory', JSON.stringify(text), what);
  const unit = { '': MiB, k: 1024, m: MiB, g: GiB, t: 1024 * GiB }[m[2].toLowerCase()] ?? MiB;
  const bytes = Number(m[1]) * unit;
  if (!(bytes >= 256 * MiB) || bytes > machine.totalBytes) {
    throw new InputError('--max-memory', `${text} (${formatBytes(bytes)})`, what);
  }
  return bytes;
}

/**
 * Throws when `estimate` exceeds `limit`: the message names `where` (the input that drives the size), the
 * largest part, and the knob.
 */
export function checkEstimate(est: Estimate, limit: number, blame: Record<EstimatePart, string>): void {
  const refusal = estimateRefusal(
    est,
    limit,
    blame,
    `--max-memory; raise it up to this machine's ${formatBytes(totalmem())}, ` +
      'or make the input smaller: coarser grid.cellArcSec, smaller grid.bounds or maxRangeKm, fewer sites or tiles',
  );
  if (refusal) throw refusal;
}

/**
 * How a plan's limit is set, and what makes a plan smaller: the refusal's words (core/memory-estimate.ts
 * MemoryLedger). With a footprint cache (`cached`) a refusal once footprints are computed (`computed`) says the next
 * run reads them from it; one before any sweep (the demand points alone) has none to offer; without a cache the words
 * say how to keep them.
 */
export function planKnob(cached: boolean, computed: boolean): string {
  return (
    `--max-memory; raise it up to this machine's ${formatBytes(totalmem())}, ` +
    'or make the plan smaller: coarser grid.cellArcSec, fewer flight levels or volumes, fewer sites or sensor types' +
    (!cached
      ? '; with --cache DIR the next run keeps the footprints it computes'
      : computed
        ? '; the footprints computed are in the --cache folder for the next run'
        : '')
  );
}

/**
 * A DEM tile's header against the limit, before its pixels are decoded: absurd dimensions, and a file whose
 * pixels would not fit. `found` names the file.
 */
export function checkTileShape(t: TileShape, limit: number): void {
  const refusal = tileRefusal(t, limit, '--max-memory');
  if (refusal) throw refusal;
}
