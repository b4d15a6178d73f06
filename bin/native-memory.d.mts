// Types for bin/native-memory.mjs.

/** The built helper, from the package's root. */
export declare const MEMORY_HELPER_PATH: string;
/** AIRSHADE_MEMORY_HELPER=0 runs without it. */
export declare const MEMORY_HELPER_ENV: string;

export interface MemoryHelper {
  /** madvise(MADV_HUGEPAGE) over the whole pages of the view; the bytes advised. */
  hugePages(view: ArrayBufferView): number;
  /**
   * madvise(MADV_DONTNEED) over the whole pages of the view from byte `from` (rounded down, not below the view's
   * first whole page) to byte `to` (rounded down): the view's bytes before `to` must be of no more use. The bytes
   * released.
   */
  release(view: ArrayBufferView, from: number, to: number): number;
}

/** The helper, or null where it is not built, does not load, or is turned off. */
export declare function loadMemoryHelper(
  root: string,
  env: Readonly<Record<string, string | undefined>>,
): MemoryHelper | null;
