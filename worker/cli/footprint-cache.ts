/**
 * The footprint cache: one file per site (every footprint of that site's sensors, worker/io/footprint-file.ts),
 * named by its content key — the SHA-256 of the canonical JSON of everything its bytes depend on — so that
 * `airshade footprints --sites i..j` can fill a shared folder in shards on many machines, and coverage, plan,
 * outage and compare (`--cache DIR`) read what is there and compute only the rest.
 *
 * A site's footprints are keyed together because they are computed together: the site's floor is swept once, out
 * to the farthest reach of the types on it, so the set of types on a site is part of every footprint's input.
 *
 * Files are written whole or not at all (files.ts writeFileAtomic: a temporary file beside, then a rename), so
 * shards writing into one folder at once never leave a half file under a final name; two shards that compute the
 * same site write the same bytes. A file that cannot be used (cut short, corrupt, another key or grid) is reported
 * on stderr, naming it and what was wrong, and the site is computed again.
 */
import { createHash } from 'node:crypto';
import { mkdirSync, readdirSync, readFileSync, rmSync, statfsSync, statSync } from 'node:fs';
import { open, rename } from 'node:fs/promises';
import { join } from 'node:path';
import type { Candidate } from '../core/coverage.ts';
import type { Footprint } from '../core/footprint.ts';
import {
  canonicalJson,
  decodeFootprintFile,
  encodeFootprintFile,
  FOOTPRINT_FORMAT,
  FootprintFileError,
  type Digest,
} from '../io/footprint-file.ts';
import type { Study } from '../io/study.ts';
import { levelAltitudesM } from '../io/study.ts';
import { digestOfRead, writeFileAtomic } from './files.ts';
import { checkOutput } from './out-check.ts';
import { toolVersion } from './provenance.ts';
import type { LoadedScenario } from './scenario.ts';

/** The file name of a site's footprints in the cache folder. */
export function cacheFileName(key: string): string {
  return `${key}.footprints`;
}

export const sha256Parts: Digest = (parts) => {
  const h = createHash('sha256');
  for (const p of parts) h.update(p);
  return h.digest('hex');
};

/**
 * The candidates grouped by site, in the order `computeFootprints` groups them (by first appearance; a site's
 * candidates in their order): its result is these groups one after the other.
 */
export function siteGroups(candidates: readonly Candidate[]): Candidate[][] {
  const bySite = new Map<string, Candidate[]>();
  for (const c of candidates) {
    const list = bySite.get(c.site.id) ?? [];
    list.push(c);
    bySite.set(c.site.id, list);
  }
  return [...bySite.values()];
}

/** What the footprint job reads besides the terrain: the request `footprintsFor` builds from a session. */
export interface FootprintJobInputs {
  kFactor: number;
  maxRangeM: number;
  weather: boolean;
  multipath: boolean;
}

/**
 * Everything a site's footprints depend on, as plain JSON: the engine (package.json's version, the git commit when
 * run from a checkout, the file format), the site (position, mast, tilt), each sensor's full type specification
 * and target, the study's other targets, k, the range limit, weather and multipath, the day and its flight levels
 * (true altitudes), the analysis grid and the SHA-256 of every terrain tile in the scenario's order.
 */
export function footprintInputs(
  session: Study<LoadedScenario>,
  group: readonly Candidate[],
  job: FootprintJobInputs,
): Record<string, unknown> {
  const { loaded, grid } = session;
  const s = loaded.scenario;
  const site = group[0].site;
  const v = toolVersion();
  return {
    engine: { version: v.version, commit: v.commit ?? null, footprintFormat: FOOTPRINT_FORMAT },
    site: {
      id: site.id,
      lon: site.lon,
      lat: site.lat,
      mastHeightM: site.mastHeightM,
      tiltDeg: site.tiltDeg ?? 0,
    },
    sensors: group.map((c) => ({ type: c.model.spec, target: c.target })),
    extraTargets: session.targets.slice(1),
    kFactor: job.kFactor,
    maxRangeM: job.maxRangeM,
    weather: job.weather,
    multipath: job.multipath,
    day: s.day ?? null,
    flightLevels: s.flightLevels,
    levelAltitudesM: levelAltitudesM(s, s.flightLevels),
    grid: {
      crs: grid.crs,
      originX: grid.originX,
      originY: grid.originY,
      pixelX: grid.pixelX,
      pixelY: grid.pixelY,
      width: grid.width,
      height: grid.height,
    },
    terrain: loaded.terrainPaths.map((p) => {
      const sha256 = digestOfRead(p);
      if (sha256 === undefined) throw new Error(`footprint cache: ${p} was not read through files.ts`);
      return sha256;
    }),
  };
}

/** The content key of a site's footprints: SHA-256 (hex) of the canonical JSON of their inputs. */
export function footprintKey(inputs: unknown): string {
  return createHash('sha256').update(canonicalJson(inputs)).digest('hex');
}

/**
 * The cache folder named by `--cache`, checked before any long work (out-check.ts: not a file, and a file can be
 * created in it or in the nearest folder above it that exists). It is created when the first file is written.
 */
export function openCacheDir(dir: string, where = '--cache'): string {
  checkOutput(dir, 'folder', [], where);
  return dir;
}

/**
 * A site's footprints from the cache: null when the file is absent, or when it cannot be used — then one line on
 * `warn` names the file and what was wrong, and says the site is computed again.
 */
export function readCachedSite(
  dir: string,
  key: string,
  grid: { width: number; height: number },
  warn: (line: string) => void,
  /** A plan's spill file (`openDiskSpill`): written without a digest, so none is checked. */
  spill = false,
): Footprint[] | null {
  const path = join(dir, cacheFileName(key));
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') return null;
    warn(`footprint cache: ${path}: cannot be read (${code ?? 'error'}); computing this site again`);
    return null;
  }
  try {
    return decodeFootprintFile(
      bytes,
      { key, width: grid.width, height: grid.height },
      spill ? NO_DIGEST : sha256Parts,
    ).footprints;
  } catch (e) {
    if (!(e instanceof FootprintFileError)) throw e;
    warn(`footprint cache: ${path}: ${e.message}; computing this site again`);
    return null;
  }
}

/** Writes a site's footprints into the cache atomically; returns the file's path. */
export function writeCachedSite(
  dir: string,
  key: string,
  inputs: unknown,
  footprints: readonly Footprint[],
  grid: { width: number; height: number },
  /** A plan's spill (`openDiskSpill`): no fsync and no digest (the run that writes it reads it back). */
  spill = false,
): string {
  const path = join(dir, cacheFileName(key));
  writeFileAtomic(
    path,
    encodeFootprintFile(key, inputs, footprints, grid, spill ? NO_DIGEST : sha256Parts),
    `--cache: ${path}`,
    !spill,
  );
  return path;
}

/**
 * A spill file's digest: none taken. Its SHA-256 cost the plan's main thread about 20 ms a site (28 MB) on the
 * national box, twice over with the read back; a cache folder given to --cache never holds these files, and one that
 * did would not match them (this text is no SHA-256), so they would be computed again.
 */
const NO_DIGEST: Digest = () => 'none (a plan spill, read back by the run that wrote it)';

/**
 * `writeCachedSite` for a plan's spill (`openDiskSpill`), written by Node's I/O threads while the main thread goes on
 * (no fsync, no digest): under a temporary name, then renamed. Resolves when the file is in place.
 */
export async function writeSpilledSite(
  dir: string,
  key: string,
  inputs: unknown,
  footprints: readonly Footprint[],
  grid: { width: number; height: number },
): Promise<void> {
  const path = join(dir, cacheFileName(key));
  const tmp = `${path}.tmp`;
  const parts = encodeFootprintFile(key, inputs, footprints, grid, NO_DIGEST);
  const total = parts.reduce((n, p) => n + p.byteLength, 0);
  const fh = await open(tmp, 'w');
  try {
    const { bytesWritten } = await fh.writev(parts as Uint8Array[]);
    if (bytesWritten !== total) throw new Error(`${bytesWritten} of ${total} bytes written`);
  } finally {
    await fh.close();
  }
  await rename(tmp, path);
}

/** The name of a plan's spill folder in its output folder is this and the process id. */
const SPILL_PREFIX = '.airshade-spill-';

/** A plan's spill folder (see `openDiskSpill`). */
export interface DiskSpill {
  readonly dir: string;
  /** The bytes of the files in it now. */
  bytes(): number;
  /** Removes the folder and what is in it. */
  remove(): void;
}

/**
 * A folder in the output folder where a plan that cannot hold every footprint in memory writes each site's as they
 * are computed (the cache's file format, not fsynced), to read the chosen sites' back for the layers instead of
 * sweeping those sites again; removed by the same run. Null (the chosen sites are then swept again) where the disk
 * there lacks room for `bytes` (the footprints' estimate) with a quarter and 1 GiB to spare, or the folder cannot be
 * made. Spill folders of runs killed before their end (their process gone) are removed first.
 */
export function openDiskSpill(outDir: string, bytes: number): DiskSpill | null {
  for (const entry of safeList(outDir)) {
    if (!entry.startsWith(SPILL_PREFIX)) continue;
    const pid = Number(entry.slice(SPILL_PREFIX.length));
    if (!Number.isInteger(pid) || pid === process.pid || processAlive(pid)) continue;
    rmSync(join(outDir, entry), { recursive: true, force: true });
  }
  const dir = join(outDir, `${SPILL_PREFIX}${process.pid}`);
  try {
    // A folder of this name can only be an earlier process's that had the same id: nothing of it is read.
    rmSync(dir, { recursive: true, force: true });
    mkdirSync(dir, { recursive: true });
    const st = statfsSync(dir);
    if (st.bavail * st.bsize < bytes * 1.25 + 2 ** 30) {
      rmSync(dir, { recursive: true, force: true });
      return null;
    }
  } catch {
    rmSync(dir, { recursive: true, force: true });
    return null;
  }
  return {
    dir,
    bytes: () =>
      safeList(dir).reduce((n, f) => {
        try {
          return n + statSync(join(dir, f)).size;
        } catch {
          return n;
        }
      }, 0),
    remove: () => rmSync(dir, { recursive: true, force: true }),
  };
}

function safeList(dir: string): string[] {
  try {
    return readdirSync(dir);
  } catch {
    return [];
  }
}

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}
