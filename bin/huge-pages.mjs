// Whether `bin/airshade.mjs` starts Node again with glibc's huge-pages tunable (issue 12). Plain JavaScript beside the
// launcher, with everything it reads passed in, so that test/fused-io.test.ts checks the rule itself.
//
// The big rasters are fresh memory, and on Linux every 4 KiB page of it costs a fault at first touch (about 11 µs a
// page on the project's VMs: 0.7 s for a 256 MiB DEM) and a page-table walk at every TLB miss; glibc >= 2.35 backs
// large allocations with transparent huge pages when GLIBC_TUNABLES holds glibc.malloc.hugetlb=1, read once at process
// start. So the launcher starts Node again with the tunable, once. The second start costs about 0.1 s (0.43–0.45 s
// against 0.32–0.36 s to a first message).
//
// When, by default: the study commands (HUGE_COMMANDS: the 6° × 6° national box's plan ran in 49.2 and 47.6 s against
// 54.5 and 49.5 s in two alternating pairs, its coverage in 33.5 s against 34.6 s; the demo's coverage the same either
// way), and `airshade floor` on DEM files of HUGE_FLOOR_BYTES or more together (reading the 8192² DEM took
// 0.85–1.08 s against 1.55–1.63 s; on small DEMs the second start costs more than it saves) — unless the native
// memory helper loads (bin/native-memory.mjs): then the floor asks for huge pages for its raster itself and Node
// starts once. AIRSHADE_HUGE_PAGES=1 asks for it for any command, AIRSHADE_HUGE_PAGES=0 never. Never where the
// tunable is set already, in the child itself, on other platforms or C libraries, on glibc older than 2.35 (which
// does not know it), or for --help.

export const HUGE_TUNABLE = 'glibc.malloc.hugetlb';
/** Marks the child, so that it never starts another (a C library may drop the tunable from its environment). */
export const CHILD_MARK = 'AIRSHADE_HUGE_PAGES_CHILD';
/** Commands run with huge pages by default. */
export const HUGE_COMMANDS = new Set(['coverage', 'plan', 'outage', 'compare', 'report', 'footprints']);
/** DEM bytes from which `floor` runs with huge pages by default. */
export const HUGE_FLOOR_BYTES = 64 * 1024 * 1024;

/**
 * @param {{ args: string[], env: Record<string, string | undefined>, platform: string,
 *           glibc: () => string | undefined, fileSize: (path: string) => number, memoryHelper?: () => boolean }} at
 *   the command line after the script, the environment, the platform, the running glibc's version (asked only when
 *   needed: it takes a diagnostic report), a file's size (may throw) and whether the native memory helper loads
 *   (asked only for the floor; none: it does not)
 * @returns {boolean}
 */
export function wantsHugePages({ args, env, platform, glibc, fileSize, memoryHelper = () => false }) {
  const asked = env.AIRSHADE_HUGE_PAGES;
  if (platform !== 'linux' || env[CHILD_MARK] === '1' || asked === '0') return false;
  if ((env.GLIBC_TUNABLES ?? '').includes(HUGE_TUNABLE)) return false;
  if (args.length === 0 || args.some((a) => a === '--help' || a === '-h' || a === '--version')) return false;
  const byDefault =
    HUGE_COMMANDS.has(args[0]) ||
    (args[0] === 'floor' && demBytes(args, fileSize) >= HUGE_FLOOR_BYTES && !memoryHelper());
  if (asked !== '1' && !byDefault) return false;
  const version = /^(\d+)\.(\d+)/.exec(glibc() ?? '');
  return (
    version !== null && (Number(version[1]) > 2 || (Number(version[1]) === 2 && Number(version[2]) >= 35))
  );
}

/** The sizes of the `--dem` files named in `args`, added up (a file that cannot be read counts nothing). */
function demBytes(args, fileSize) {
  let total = 0;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    const path = a === '--dem' ? args[i + 1] : a.startsWith('--dem=') ? a.slice(6) : undefined;
    if (path === undefined) continue;
    try {
      total += fileSize(path);
    } catch {
      // the command names the file in its own message
    }
  }
  return total;
}
