#!/usr/bin/env node
// The `airshade` command. Runs the built CLI (dist/cli, from `npm run build`) when it is newer than the
// sources, otherwise the TypeScript sources through tsx — so a fresh checkout works without a build step.
import { spawn } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { Socket } from 'node:net';
import { constants as osConstants } from 'node:os';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

const root = fileURLToPath(new URL('..', import.meta.url));
const built = join(root, 'dist/cli/cli.js');

function newestSource(dir) {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) t = Math.max(t, newestSource(p));
    else if (e.name.endsWith('.ts') || e.name.endsWith('.mjs')) t = Math.max(t, statSync(p).mtimeMs);
  }
  return t;
}

// Huge pages (issue 12). The big rasters are fresh memory, and on Linux every 4 KiB page of it costs a fault at first
// touch (about 11 µs a page on the project's VMs: 0.7 s for a 256 MiB DEM) and a page-table walk at every TLB miss;
// glibc >= 2.35 backs large allocations with transparent huge pages when GLIBC_TUNABLES holds
// glibc.malloc.hugetlb=1, read once at process start. So this launcher starts Node again with the tunable, once:
// same argv and Node options, stdin/stdout/stderr inherited, the child's exit status (or signal) passed on.
// When: by default for `airshade floor` on DEM files of HUGE_FLOOR_BYTES or more together (reading the 8192² DEM
// took 0.62–0.72 s against 1.55 s, README Performance; a second start of Node costs about 0.1 s, more than it saves
// on small DEMs); AIRSHADE_HUGE_PAGES=1 asks for it for any command, AIRSHADE_HUGE_PAGES=0 never (the demo coverage
// ran no faster with it: 7.8 s either way). Not re-run where the tunable is set already, on other platforms or C
// libraries, on glibc older than 2.35 (which does not know it), or for --help.
const HUGE_TUNABLE = 'glibc.malloc.hugetlb';
/** Marks the child, so that it never starts another (a C library may drop the tunable from its environment). */
const CHILD_MARK = 'AIRSHADE_HUGE_PAGES_CHILD';
/** DEM bytes from which `floor` runs with huge pages by default. */
const HUGE_FLOOR_BYTES = 64 * 1024 * 1024;

/** The sizes of the `--dem` files named in argv, added up (a file that cannot be read counts nothing). */
function demBytes(args) {
  let total = 0;
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    const path = a === '--dem' ? args[i + 1] : a.startsWith('--dem=') ? a.slice(6) : undefined;
    if (path === undefined) continue;
    try {
      total += statSync(path).size;
    } catch {
      // the command names the file in its own message
    }
  }
  return total;
}

function wantsHugePagesRerun() {
  const env = process.env;
  const asked = env.AIRSHADE_HUGE_PAGES;
  if (process.platform !== 'linux' || env[CHILD_MARK] === '1' || asked === '0') return false;
  if ((env.GLIBC_TUNABLES ?? '').includes(HUGE_TUNABLE)) return false;
  const args = process.argv.slice(2);
  if (args.length === 0 || args.some((a) => a === '--help' || a === '-h' || a === '--version')) return false;
  if (asked !== '1' && !(args[0] === 'floor' && demBytes(args) >= HUGE_FLOOR_BYTES)) return false;
  const glibc = /^(\d+)\.(\d+)/.exec(process.report?.getReport?.().header?.glibcVersionRuntime ?? '');
  return glibc !== null && (Number(glibc[1]) > 2 || (Number(glibc[1]) === 2 && Number(glibc[2]) >= 35));
}

if (wantsHugePagesRerun()) {
  const env = {
    ...process.env,
    GLIBC_TUNABLES: [process.env.GLIBC_TUNABLES, `${HUGE_TUNABLE}=1`].filter(Boolean).join(':'),
    [CHILD_MARK]: '1',
  };
  // fd 3: a pipe the child watches, so that the child ends when this process is killed (even by SIGKILL).
  const child = spawn(process.execPath, [...process.execArgv, ...process.argv.slice(1)], {
    stdio: ['inherit', 'inherit', 'inherit', 'pipe'],
    env,
  });
  const forwarded = ['SIGINT', 'SIGTERM', 'SIGHUP', 'SIGQUIT', 'SIGUSR2'];
  const forward = (signal) => child.kill(signal);
  for (const s of forwarded) process.on(s, forward);
  child.on('error', (e) => {
    process.stderr.write(`airshade: cannot start ${process.execPath}: ${e.message}\n`);
    process.exit(1);
  });
  child.on('exit', (code, signal) => {
    for (const s of forwarded) process.off(s, forward);
    if (signal) {
      // The same end as the child's: killed by the same signal (128 + its number where that cannot be).
      process.kill(process.pid, signal);
      setTimeout(() => process.exit(128 + (osConstants.signals[signal] ?? 0)), 1000);
      return;
    }
    process.exit(code ?? 1);
  });
  await new Promise(() => {}); // this process only waits; the child does the work
}

if (process.env[CHILD_MARK] === '1') {
  // Started by the launcher above: end with it (its pipe on fd 3 closes when it dies, however it dies).
  try {
    const parent = new Socket({ fd: 3, readable: true, writable: false });
    parent.on('error', () => {});
    parent.on('close', () => process.kill(process.pid, 'SIGKILL'));
    parent.resume();
    parent.unref();
  } catch {
    // no pipe on fd 3 (the variable was set by hand): nothing to watch
  }
}

// Output piped into a command that stops reading (`airshade … | head`) ends the run quietly, not with a trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (e) => {
    if (e.code === 'EPIPE') process.exit(0);
    throw e;
  });
}

let main;
if (
  existsSync(built) &&
  statSync(built).mtimeMs >= Math.max(newestSource(join(root, 'worker')), newestSource(join(root, 'shared')))
) {
  ({ main } = await import(built));
} else {
  const { tsImport } = await import('tsx/esm/api');
  ({ main } = await tsImport('../worker/cli/main.ts', import.meta.url));
}
process.exitCode = await main(process.argv.slice(2));
