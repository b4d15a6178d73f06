/**
 * The native memory helper (worker/native/memory.c) for the Node CLI, or null: not built (scripts/build-native.mjs says
 * why at `npm install`), not loadable, another platform, or AIRSHADE_MEMORY_HELPER=0. Everything that uses it has a
 * plain path without it that gives the same bytes, only slower on large rasters:
 * - `hugePages`: the floor's raster is backed by transparent huge pages without starting Node again with glibc's
 *   tunable (bin/huge-pages.mjs);
 * - `release`: the floor's pages go back to the kernel as they are written, so that the page cache of the output
 *   takes them still warm (on the project's VMs fresh memory costs a fault on the host at first touch).
 * Loaded once, on first use.
 */
import { fileURLToPath } from 'node:url';
import { loadMemoryHelper, type MemoryHelper } from '../../bin/native-memory.mjs';

export type { MemoryHelper };

let helper: MemoryHelper | null | undefined;

export function memoryHelper(): MemoryHelper | null {
  // The package's root: two folders up, from worker/runtime/ as from the built dist/cli/.
  if (helper === undefined)
    helper = loadMemoryHelper(fileURLToPath(new URL('../../', import.meta.url)), process.env);
  return helper;
}
