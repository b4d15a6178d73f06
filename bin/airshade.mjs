#!/usr/bin/env node
// The `airshade` command. Runs the built CLI (dist/cli, from `npm run build`) when it is newer than the
// sources, otherwise the TypeScript sources through tsx — so a fresh checkout works without a build step.
import { existsSync, readdirSync, statSync } from 'node:fs';
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
  ({ main } = await tsImport('../worker/cli.ts', import.meta.url));
}
process.exitCode = await main(process.argv.slice(2));
