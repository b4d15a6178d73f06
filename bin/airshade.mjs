#!/usr/bin/env node
// The `airshade` command. Runs the built CLI (dist/cli, from `npm run build`) when it is newer than the
// sources, otherwise the TypeScript sources through tsx — so a fresh checkout works without a build step.
import { spawn } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { Socket } from 'node:net';
import { constants as osConstants } from 'node:os';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';
import { CHILD_MARK, HUGE_TUNABLE, wantsHugePages } from './huge-pages.mjs';
import { loadMemoryHelper } from './native-memory.mjs';

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

// Huge pages (issue 12): whether to start Node again with glibc's huge-pages tunable is decided in huge-pages.mjs.

function wantsHugePagesRerun() {
  return wantsHugePages({
    args: process.argv.slice(2),
    env: process.env,
    platform: process.platform,
    glibc: () => process.report?.getReport?.().header?.glibcVersionRuntime,
    fileSize: (path) => statSync(path).size,
    memoryHelper: () => loadMemoryHelper(root, process.env) !== null,
  });
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
