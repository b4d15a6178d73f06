/**
 * Benchmark of `airshade coverage` on the demo scenario: every candidate (site, type) at the scenario's 8 flight
 * levels, as a whole process (wall time from spawn to exit, peak memory as the CLI reports it), plus the network
 * recompute after switching one site off and on (from summary.json). Best of `--runs` (default 2).
 *
 *   npm run bench            (runs the floor benchmark first)
 *   npx tsx bench/coverage.ts --runs 3
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';

const root = join(import.meta.dirname, '..');
const runsArg = process.argv.indexOf('--runs');
const runs = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 2;
const out = join(root, 'bench/out/coverage');
mkdirSync(out, { recursive: true });

interface Run {
  wallS: number;
  peakMiB: number;
  toggleMs: number;
  footprintsS: number;
  sensors: number;
}

function once(): Run {
  const t0 = performance.now();
  const r = spawnSync(
    process.execPath,
    [
      join(root, 'bin/airshade.mjs'),
      'coverage',
      join(root, 'data/demo-scenario.json'),
      '--out',
      out,
      '--quiet',
    ],
    {
      encoding: 'utf8',
    },
  );
  const wallS = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`airshade coverage failed: ${r.stderr}`);
  const peak = /peak memory (\d+) MiB/.exec(r.stdout);
  const summary = JSON.parse(readFileSync(join(out, 'summary.json'), 'utf8'));
  return {
    wallS,
    peakMiB: peak ? Number(peak[1]) : NaN,
    toggleMs: summary.timingsMs.siteToggle,
    footprintsS: summary.timingsMs.footprints / 1000,
    sensors: summary.network.sensors.length,
  };
}

process.stderr.write(`coverage bench: ${runs} runs, load average ${loadavg()[0].toFixed(2)}\n`);
const all: Run[] = [];
for (let i = 0; i < runs; i++) {
  const r = once();
  process.stderr.write(
    `  run ${i + 1}: ${r.wallS.toFixed(1)} s, ${r.peakMiB} MiB, toggle ${r.toggleMs} ms\n`,
  );
  all.push(r);
}
const best = all.reduce((a, b) => (b.wallS < a.wallS ? b : a));
const table = [
  '| job | sensors × levels | wall s (best of ' +
    runs +
    ') | of which footprints s | peak MiB | site off/on recompute ms |',
  '| --- | --- | --- | --- | --- | --- |',
  `| demo coverage, every candidate | ${best.sensors} × 8 | ${best.wallS.toFixed(1)} | ${best.footprintsS.toFixed(1)} | ${best.peakMiB} | ${best.toggleMs} |`,
  '',
  `Machine: ${cpus().length} × ${cpus()[0]?.model ?? 'CPU'}, Node ${process.version}. Reproduce: \`npx tsx bench/coverage.ts\` (after \`npm run build\`).`,
].join('\n');
writeFileSync(join(root, 'bench/out/coverage-results.md'), table + '\n');
process.stdout.write(table + '\n');
