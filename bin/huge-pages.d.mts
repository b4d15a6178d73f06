// Types for bin/huge-pages.mjs, for the TypeScript tests that check it.

export declare const HUGE_TUNABLE: string;
/** Marks the child, so that it never starts another. */
export declare const CHILD_MARK: string;
/** Commands run with huge pages by default. */
export declare const HUGE_COMMANDS: ReadonlySet<string>;
/** DEM bytes from which `floor` runs with huge pages by default. */
export declare const HUGE_FLOOR_BYTES: number;

/** Whether the launcher starts Node again with glibc's huge-pages tunable. */
export declare function wantsHugePages(at: {
  /** The command line after the script. */
  args: readonly string[];
  env: Readonly<Record<string, string | undefined>>;
  platform: string;
  /** The running glibc's version (asked only when needed). */
  glibc: () => string | undefined;
  /** A file's size in bytes (may throw). */
  fileSize: (path: string) => number;
  /** Whether the native memory helper loads (asked only for the floor; none: it does not). */
  memoryHelper?: () => boolean;
}): boolean;
