// Builds the native memory helper (worker/native/memory.c → worker/native/build/Release/airshade_memory.node) with
// node-gyp, the one npm carries. Run by `npm install` (postinstall) and by `npm run build:native`.
//
// The CLI runs without the helper, only slower on large rasters (worker/runtime/native-memory.ts): so a failed build
// says why in a few lines and ends with status 0, unless `--strict` (then 1). Linux only: elsewhere the helper would
// do nothing, and nothing is built.
import { spawnSync } from 'node:child_process';
import { existsSync, rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
// `--directory D` builds a copy of worker/native/ in D instead (the tests do, so as not to pull the helper from under
// other tests that load it).
const at = process.argv.indexOf('--directory');
const dir = at > 0 && process.argv[at + 1] ? resolve(process.argv[at + 1]) : join(root, 'worker/native');
const strict = process.argv.includes('--strict');

function fail(why, output = '') {
  const tail = output.trim().split('\n').slice(-12).join('\n');
  process.stderr.write(
    `airshade: the native memory helper (worker/native/) was not built: ${why}.\n` +
      (tail ? `${tail}\n` : '') +
      'The CLI works without it: `airshade floor` on a large DEM then starts Node a second time for huge pages and ' +
      'writes the floor without handing its pages back (slower, same bytes). Build it later with ' +
      '`npm run build:native`.\n',
  );
  process.exit(strict ? 1 : 0);
}

if (process.platform !== 'linux') {
  if (strict) fail(`it is for Linux, and this is ${process.platform}`);
  process.exit(0);
}
// npm hands its node-gyp to the scripts it runs; otherwise look where npm keeps it beside this Node.
const gyp =
  process.env.npm_config_node_gyp ??
  resolve(dirname(process.execPath), '../lib/node_modules/npm/node_modules/node-gyp/bin/node-gyp.js');
if (!existsSync(gyp)) fail(`node-gyp not found (looked for ${gyp})`);
if (!existsSync(join(dir, 'binding.gyp'))) fail(`no binding.gyp in ${dir}`);
const args = [gyp, 'rebuild', '--directory', dir];
// Node's own headers beside this Node (e.g. /usr/include/node), when npm has not named them: node-gyp would
// otherwise download them.
if (!process.env.npm_config_nodedir) {
  const prefix = resolve(dirname(process.execPath), '..');
  if (existsSync(join(prefix, 'include/node/node_api.h'))) args.push(`--nodedir=${prefix}`);
}
const r = spawnSync(process.execPath, args, { cwd: dir, encoding: 'utf8' });
if (r.error) fail(`node-gyp could not start (${r.error.message})`);
if (r.status !== 0) {
  rmSync(join(dir, 'build'), { recursive: true, force: true });
  fail(`node-gyp ended with status ${r.status}`, `${r.stdout ?? ''}\n${r.stderr ?? ''}`);
}
// A helper that is built but does not load is as good as none: say so now, not at the first large floor.
const built = join(dir, 'build/Release/airshade_memory.node');
const probe = `require(${JSON.stringify(built)}).hugePages(new Uint8Array(8))`;
const check = spawnSync(process.execPath, ['-e', probe], { encoding: 'utf8' });
if (check.status !== 0) {
  rmSync(join(dir, 'build'), { recursive: true, force: true });
  fail('it was built but does not load', check.stderr);
}
