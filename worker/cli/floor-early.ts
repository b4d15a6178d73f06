/**
 * `airshade floor`'s workers started before the command's own modules load (issue 12): on a DEM large enough for
 * the sweep to take workers, a worker thread's start (about 0.1 s: Node's isolate, the worker's modules) then runs
 * beside this thread's loading of the floor's modules, and the first worker builds the antenna's vector map
 * sooner. Only in the plain case — one `--dem` of EARLY_DEM_BYTES or more, no `--threads`, the sweep over the cells
 * or `--sweep auto` — with the number of workers that case takes on this machine (floor.ts `lanes`: the cores
 * less this thread). floor.ts takes them when it wants as many (`takeEarlyWorkers`); otherwise, and whenever the
 * command ends without them, they are closed (`closeEarlyWorkers`, main.ts).
 */
import { statSync } from 'node:fs';
import { NodePool } from '../runtime/node-pool.ts';

/** DEM bytes from which the floor's workers start early (floor.ts gives small DEMs no workers). */
const EARLY_DEM_BYTES = 64 * 1024 * 1024;

let early: NodePool | null = null;

/** The values of `--NAME VALUE` and `--NAME=VALUE` in `argv`. */
function values(argv: readonly string[], name: string): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === name && i + 1 < argv.length) out.push(argv[i + 1]);
    else if (argv[i].startsWith(`${name}=`)) out.push(argv[i].slice(name.length + 1));
  }
  return out;
}

/** Starts the floor's workers now when `argv` (the floor's arguments) is the plain case (see the file note). */
export function bootFloorWorkersEarly(argv: readonly string[]): void {
  if (early !== null || argv.some((a) => a === '--help' || a === '-h')) return;
  const dems = values(argv, '--dem');
  const sweep = values(argv, '--sweep');
  if (dems.length !== 1 || values(argv, '--threads').length > 0) return;
  if (sweep.length > 0 && !['cells', 'auto'].includes(sweep[sweep.length - 1])) return;
  let bytes: number;
  try {
    bytes = statSync(dems[0]).size;
  } catch {
    return; // the command names the file in its own message
  }
  const workers = NodePool.defaultSize() - 1;
  if (bytes >= EARLY_DEM_BYTES && workers >= 1) early = NodePool.boot(workers);
}

/** The workers started early if there are `size` of them (they are the caller's now), else null (closed). */
export function takeEarlyWorkers(size: number): NodePool | null {
  const pool = early;
  early = null;
  if (pool === null || pool.size === size) return pool;
  void pool.close();
  return null;
}

/** Closes the workers started early if nobody took them. */
export async function closeEarlyWorkers(): Promise<void> {
  const pool = early;
  early = null;
  await pool?.close();
}
