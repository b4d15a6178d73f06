/**
 * Reading a scenario file for the CLI: every path resolved relative to the scenario file, the referenced
 * sensor-type and site files read from disk, then assembled and validated by `io/scenario-text.ts` (shared with
 * the web app) with messages that name the file each value came from (`sites.csv: row 7: mastHeightM`).
 */
import { realpathSync, statSync } from 'node:fs';
import { dirname, isAbsolute, join, normalize, relative, resolve } from 'node:path';
import { InputError } from '../../shared/errors.ts';
import { ScenarioError, showValue, type Locator, type Scenario } from '../../shared/scenario.ts';
import type { FileDigest } from '../io/provenance.ts';
import { assembleScenario, parseJsonText } from '../io/scenario-text.ts';
import { digestOfRead, readFileChecked } from './files.ts';
import { helpOption } from './args.ts';

export { checkAgainstTerrain, parseJsonText, readSitesCsv } from '../io/scenario-text.ts';

export interface LoadedScenario {
  /** The scenario file, absolute. */
  file: string;
  /** Its folder, absolute: every path in the scenario is relative to it. */
  dir: string;
  /** Validated, defaults filled, sites and sensor types read into arrays. */
  scenario: Scenario;
  /** `scenario.terrain.files` resolved (absolute), in order. */
  terrainPaths: string[];
  /** The files the sensor types and sites came from, as shown in messages (null when inline). */
  sources: { sensorTypes: string | null; sites: string | null };
  /**
   * SHA-256 of the bytes read: the scenario file, and the sensor-type and site files it names (null when inline),
   * for the outputs' provenance.
   */
  digests: { scenario: FileDigest; sensorTypes: FileDigest | null; sites: FileDigest | null };
  /** Turns a field path of the scenario (sites as `['sites', 'features', i, …]`) into a message's `where`. */
  locate: Locator;
}

export interface LoadScenarioOptions {
  /** Check that every terrain file exists (default true). */
  checkTerrainFiles?: boolean;
  /**
   * Let the scenario name files outside its own folder (absolute paths, `../`, or links that lead out). The
   * commands pass false unless `--allow-outside-paths` is given, so a scenario from elsewhere cannot make them read
   * any file of this machine; a caller that does not say (a script, a test) keeps the old behaviour: allowed.
   */
  allowOutsidePaths?: boolean;
}

/** The switch that lets a scenario name files outside its folder, as every scenario command spells it. */
export const OUTSIDE_PATHS_OPTION = { 'allow-outside-paths': {} } as const;
export const OUTSIDE_PATHS_HELP = (column: number): string =>
  helpOption('--allow-outside-paths', column, [
    'read files the scenario names outside its own folder (absolute paths, ../); by default refused (a study',
    'made by airshade init with its tiles elsewhere needs it)',
  ]);

function realOr(path: string): string {
  try {
    return realpathSync(path);
  } catch {
    return path;
  }
}

/** Whether `abs` (and, when it exists, the file it really is) lies inside the folder `dir`. */
export function insideFolder(dir: string, abs: string): boolean {
  const inside = (d: string, f: string) => {
    const rel = relative(d, f);
    return rel !== '' && !rel.startsWith('..') && !isAbsolute(rel);
  };
  return inside(dir, abs) && inside(realOr(dir), realOr(abs));
}

/** Refuses a path the scenario names outside its folder, unless allowed; the message does not read the file. */
function confine(dir: string, abs: string, where: string, ref: string, what: string, allow: boolean): void {
  if (allow || insideFolder(dir, abs)) return;
  throw new InputError(
    where,
    `${showValue(ref)}, a file outside the scenario's folder (${dir})`,
    `${what}, inside that folder — or run with --allow-outside-paths to read files elsewhere`,
  );
}

const SCENARIO_WHAT = 'a scenario file (JSON)';
const TERRAIN_WHAT = 'the path of a GeoTIFF elevation tile (DEM), relative to the scenario file';

// ---------------------------------------------------------------------------------------------------
// Text, JSON, CSV

const utf8 = new TextDecoder('utf-8', { fatal: true });

function readText(path: string, display: string, what: string): string {
  let buf: ArrayBuffer;
  try {
    buf = readFileChecked(path, what);
  } catch (e) {
    if (e instanceof InputError) throw new InputError(display, e.found, e.expected);
    throw e;
  }
  try {
    return utf8.decode(buf); // drops a leading byte-order mark
  } catch {
    throw new InputError(display, 'bytes that are not UTF-8 text', what);
  }
}

/** Where a referenced file stands in messages: beside the scenario file as the user named it. */
function displayPath(scenarioDisplay: string, ref: string): string {
  return isAbsolute(ref) ? ref : normalize(join(dirname(scenarioDisplay), ref));
}

function readReferenced(
  dir: string,
  scenarioDisplay: string,
  field: string,
  ref: string,
  what: string,
  allowOutside: boolean,
): { abs: string; display: string; text: string } {
  const abs = resolve(dir, ref);
  const display = displayPath(scenarioDisplay, ref);
  confine(dir, abs, `${scenarioDisplay}: ${field}`, ref, what, allowOutside);
  let st;
  try {
    st = statSync(abs);
  } catch {
    throw new InputError(
      `${scenarioDisplay}: ${field}`,
      `${showValue(ref)}, a file that does not exist (${abs})`,
      what,
    );
  }
  if (st.isDirectory())
    throw new InputError(`${scenarioDisplay}: ${field}`, `${showValue(ref)}, a folder`, what);
  return { abs, display, text: readText(abs, display, what) };
}

/**
 * Reads, resolves and validates a scenario file. Throws `InputError` (a `ScenarioError` listing several
 * problems when there are several) naming the file and field of each problem.
 */
export async function loadScenario(path: string, options: LoadScenarioOptions = {}): Promise<LoadedScenario> {
  const file = resolve(path);
  const dir = dirname(file);
  const display = path;
  const json = parseJsonText(readText(file, display, SCENARIO_WHAT), display, SCENARIO_WHAT);
  const digest = (abs: string): FileDigest => ({ file: abs, sha256: digestOfRead(abs)! });
  const digests: LoadedScenario['digests'] = { scenario: digest(file), sensorTypes: null, sites: null };
  const { scenario, sources, locate } = assembleScenario(json, display, (field, ref, what) => {
    const r = readReferenced(dir, display, field, ref, what, options.allowOutsidePaths ?? true);
    digests[field] = digest(r.abs);
    return r;
  });
  const terrainPaths = scenario.terrain.files.map((f) => resolve(dir, f));
  const outside: InputError[] = [];
  terrainPaths.forEach((abs, i) => {
    try {
      confine(
        dir,
        abs,
        locate(['terrain', 'files', i]),
        scenario.terrain.files[i],
        TERRAIN_WHAT,
        options.allowOutsidePaths ?? true,
      );
    } catch (e) {
      outside.push(e as InputError);
    }
  });
  if (outside.length > 0) throw new ScenarioError(outside);

  if (options.checkTerrainFiles ?? true) {
    const problems: InputError[] = [];
    terrainPaths.forEach((abs, i) => {
      let found: string | undefined;
      try {
        if (statSync(abs).isDirectory()) found = 'a folder';
      } catch {
        found = `a file that does not exist (${abs})`;
      }
      if (found) {
        const ref = scenario.terrain.files[i];
        problems.push(
          new InputError(locate(['terrain', 'files', i]), `${showValue(ref)}, ${found}`, TERRAIN_WHAT),
        );
      }
    });
    if (problems.length > 0) throw new ScenarioError(problems);
  }
  return { file, dir, scenario, terrainPaths, sources, digests, locate };
}
