// Loads the native memory helper (worker/native/memory.c, built by scripts/build-native.mjs) for the launcher and the CLI
// (worker/runtime/native-memory.ts). Plain JavaScript beside the launcher, so that both find it the same way.
import { createRequire } from 'node:module';
import { join } from 'node:path';

/** The built helper, from the package's root. */
export const MEMORY_HELPER_PATH = 'worker/native/build/Release/airshade_memory.node';
/** AIRSHADE_MEMORY_HELPER=0 runs without it (as where it is not built). */
export const MEMORY_HELPER_ENV = 'AIRSHADE_MEMORY_HELPER';

const require = createRequire(import.meta.url);

/**
 * @param {string} root the package's root folder
 * @param {Record<string, string | undefined>} env
 * @returns {{ hugePages(view: ArrayBufferView): number, release(view: ArrayBufferView, from: number, to: number): number } | null}
 *   the helper, or null where it is not built, does not load (another platform or Node-API), or is turned off
 */
export function loadMemoryHelper(root, env) {
  if (env[MEMORY_HELPER_ENV] === '0' || process.platform !== 'linux') return null;
  try {
    return require(join(root, MEMORY_HELPER_PATH));
  } catch {
    return null;
  }
}
