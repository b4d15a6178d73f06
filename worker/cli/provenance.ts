/**
 * The provenance the CLI writes into every output (worker/io/provenance.ts): the tool's version (package.json, and
 * the git commit when the tool runs from a checkout), the SHA-256 of every input file as it was read (the hashes
 * `files.ts` takes of the bytes it reads: no file is read twice), the command's options that can change the
 * result, and the study's conventions (`studyConventions`: k, target, day, flight levels, sea lobing).
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { StudyConventions } from '../io/study.ts';
import type { CommandOptions, FileDigest, Provenance } from '../io/provenance.ts';
import type { OptionSpec, Parsed } from './args.ts';
import { digestOfRead } from './files.ts';
import type { LoadedScenario } from './scenario.ts';

/**
 * Options that never change a result: where it goes, how many threads compute it, what is printed, where the
 * footprints are cached (a cached footprint is the same bytes as a computed one).
 */
const NOT_RESULT = new Set(['out', 'threads', 'quiet', 'debug', 'help', 'cache']);

/**
 * The options of a parsed command line that can change its result, by name in alphabetical order: switches as
 * true, options that may repeat as lists, others as the text given.
 */
export function commandOptions(
  p: Parsed,
  spec: Record<string, OptionSpec>,
  skip: readonly string[] = [],
): CommandOptions {
  const out: CommandOptions = {};
  const names = [...p.values.keys(), ...p.flags].filter((n) => !NOT_RESULT.has(n) && !skip.includes(n));
  for (const n of names.sort()) {
    const v = p.values.get(n);
    out[n] = v === undefined ? true : spec[n]?.repeat ? [...v] : v[v.length - 1];
  }
  return out;
}

/** A file the command read, with the SHA-256 of the bytes it read (an internal error if it read none). */
export function readDigest(
  path: string,
  digest: (file: string) => string | undefined = digestOfRead,
): FileDigest {
  const file = resolve(path);
  const sha256 = digest(file);
  if (sha256 === undefined) throw new Error(`provenance: ${file} was not read through files.ts`);
  return { file, sha256 };
}

let version: { version: string; commit?: string } | undefined;

/** package.json's version and, when the tool runs from a git checkout, its HEAD commit (read once). */
export function toolVersion(): { version: string; commit?: string } {
  if (version) return version;
  const root = packageRoot();
  const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { version: string };
  const commit = gitHead(root);
  version = { version: pkg.version, ...(commit ? { commit } : {}) };
  return version;
}

/** The folder of airshade's package.json above this module (the sources, or the built dist/cli). */
function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const pkg = join(dir, 'package.json');
    if (existsSync(pkg) && (JSON.parse(readFileSync(pkg, 'utf8')) as { name?: string }).name === 'airshade')
      return dir;
    const up = dirname(dir);
    if (up === dir) throw new Error('provenance: the package.json of airshade was not found');
    dir = up;
  }
}

/**
 * The commit HEAD names in the checkout at `root` (its own .git only: a copy installed inside another repository
 * does not report that one's), read from the files git keeps — HEAD, the ref file or packed-refs; a worktree's
 * .git file and commondir followed. Undefined when there is none or it cannot be read.
 */
function gitHead(root: string): string | undefined {
  const isCommit = (s: string | undefined) =>
    s !== undefined && /^[0-9a-f]{40}([0-9a-f]{24})?$/.test(s) ? s : undefined;
  const text = (p: string) => (existsSync(p) ? readFileSync(p, 'utf8').trim() : undefined);
  try {
    const dotGit = join(root, '.git');
    if (!existsSync(dotGit)) return undefined;
    let gitDir = dotGit;
    if (!statSync(dotGit).isDirectory()) {
      const m = /^gitdir:\s*(.+)$/m.exec(text(dotGit) ?? '');
      if (!m) return undefined;
      gitDir = resolve(root, m[1].trim());
    }
    const common = resolve(gitDir, text(join(gitDir, 'commondir')) ?? '.');
    const head = text(join(gitDir, 'HEAD'));
    if (head === undefined) return undefined;
    const ref = /^ref:\s*(\S+)$/.exec(head)?.[1];
    if (ref === undefined) return isCommit(head);
    const direct = text(join(gitDir, ref)) ?? text(join(common, ref));
    if (direct !== undefined) return isCommit(direct);
    for (const line of (text(join(common, 'packed-refs')) ?? '').split('\n')) {
      const [sha, name] = line.trim().split(' ');
      if (name === ref) return isCommit(sha);
    }
  } catch {
    // Unreadable: the version alone.
  }
  return undefined;
}

/** The start of every provenance: tool, version, commit, the run's date, the command and its options. */
function head(command: string, options: CommandOptions): Omit<Provenance, 'terrain' | 'kFactor'> {
  return {
    tool: 'airshade',
    ...toolVersion(),
    createdUtc: new Date().toISOString(),
    command,
    options,
  };
}

/**
 * The provenance of a scenario command's outputs: the scenario and the files it names, the terrain tiles, the
 * options, and the conventions the results hold under (from `studyConventions`, the same the outputs state).
 */
export function scenarioProvenance(
  command: string,
  p: Parsed,
  spec: Record<string, OptionSpec>,
  loaded: LoadedScenario,
  c: StudyConventions,
): Provenance {
  const d = loaded.digests;
  return {
    ...head(command, commandOptions(p, spec)),
    scenario: d.scenario,
    ...(d.sensorTypes ? { sensorTypes: d.sensorTypes } : {}),
    ...(d.sites ? { sites: d.sites } : {}),
    terrain: loaded.terrainPaths.map((t) => readDigest(t)),
    kFactor: c.kFactor,
    target: c.target,
    day: c.day,
    flightLevels: c.levels,
    multipath: c.multipath,
  };
}

/** The provenance of `airshade floor`: the DEM tiles, the antenna, k and range as parsed, and the options. */
export function floorProvenance(
  p: Parsed,
  spec: Record<string, OptionSpec>,
  dems: readonly string[],
  run: { antenna: { lon: number; lat: number; mastM: number }; kFactor: number; maxRangeKm?: number },
  /** The DEMs' digests (default: as read, `digestOfRead`; a stand-in sizes a header before they are known). */
  digest?: (file: string) => string | undefined,
): Provenance {
  return {
    ...head('floor', commandOptions(p, spec, ['dem'])),
    terrain: dems.map((d) => readDigest(d, digest)),
    kFactor: run.kFactor,
    antenna: run.antenna,
    ...(run.maxRangeKm !== undefined ? { maxRangeKm: run.maxRangeKm } : {}),
  };
}
