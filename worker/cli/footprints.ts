/**
 * `airshade footprints`: the footprints of a range of the scenario's sites into the footprint cache
 * (worker/cli/footprint-cache.ts), so that a batch system can run the sites in shards and coverage, plan, outage
 * and compare (`--cache DIR`) read them back. Sites already in the cache are skipped.
 */
import { InputError } from '../../shared/errors.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { coldDayHelp, one, parseArgs, required, scenarioArg, threadsArg, weatherHelp } from './args.ts';
import {
  CACHE_OPTION,
  footprintsFor,
  KEEP_NONE,
  networkChoice,
  openCommandSession,
  SESSION_OPTIONS,
  sessionHelp,
} from './session.ts';

export const FOOTPRINTS_HELP = `airshade footprints — the footprints of some of a scenario's sites, into a cache folder

Usage:
  airshade footprints SCENARIO.json --cache DIR [--sites I..J] [--layout NAME] [--weather] [--cold-day]
                      [--threads N] [--quiet] [--debug]

Computes the footprint of every sensor on the sites numbered I to J (1-based, in the order of the scenario's
"sites"; both ends included; --sites I alone is one site) and stores each site's footprints in DIR as one file
named by its content key. Sites whose file is already there are skipped. Run it in shards on many machines over
one shared DIR (e.g. a batch job array), then run coverage, plan, outage or compare with --cache DIR: they read
every footprint found there and give the same bytes as a run without the cache (docs/BATCH.md).
Use the same --layout, --weather and --cold-day as the run that will read the cache.

Options:
  --cache DIR      the cache folder (created if missing)
  --sites I..J     the sites to compute, 1-based in the scenario's order (default: all)
  --layout NAME    the sensors of this layout (default: every allowed site and type)
${weatherHelp(19)}
${coldDayHelp(19)}
  --threads N      worker threads (default: one per core; 0 runs on the main thread)
${sessionHelp(19)}`;

const SPEC = {
  cache: CACHE_OPTION.cache,
  sites: { value: true },
  layout: { value: true },
  weather: {},
  'cold-day': {},
  threads: { value: true },
  ...SESSION_OPTIONS,
  quiet: {},
  debug: {},
  help: {},
} as const;

/** `--sites` as [first, last], 1-based and inclusive: `I..J` or `I`, within 1..siteCount. */
export function parseSiteRange(text: string, siteCount: number): [number, number] {
  const m = /^\s*(\d+)\s*(?:\.\.\s*(\d+)\s*)?$/.exec(text);
  const expected = `a site range I..J or one site I, 1-based in the order of the scenario's sites, within 1..${siteCount}`;
  if (!m) throw new InputError('--sites', JSON.stringify(text), expected);
  const first = Number(m[1]);
  const last = m[2] === undefined ? first : Number(m[2]);
  if (first < 1 || last < first) throw new InputError('--sites', JSON.stringify(text), expected);
  if (last > siteCount) {
    throw new InputError(
      '--sites',
      `${JSON.stringify(text)} (the scenario has ${siteCount} site${siteCount === 1 ? '' : 's'})`,
      expected,
    );
  }
  return [first, last];
}

export async function footprintsCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'footprints');
  if (p.flags.has('help')) {
    log(FOOTPRINTS_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'footprints');
  const cacheDir = required(p, 'cache', 'the footprint cache folder');
  // --sites is checked as soon as the scenario is read (its sites' count), before the terrain.
  const sitesText = one(p, 'sites');
  const threads = threadsArg(p, NodePool.defaultSize());
  const { session, progress } = await openCommandSession(
    p,
    'footprints',
    scenarioPath,
    threads,
    { path: cacheDir, kind: 'folder' },
    undefined,
    (n) => (sitesText === undefined ? [1, n] : parseSiteRange(sitesText, n)),
    // Each site's footprints are written to the cache as they are done and not kept (below).
    'one site',
  );
  const sites = session.loaded.scenario.sites;
  const [first, last] = sitesText === undefined ? [1, sites.length] : parseSiteRange(sitesText, sites.length);
  const wanted = new Set(sites.slice(first - 1, last).map((f) => f.properties.id));
  const choice = networkChoice(session, one(p, 'layout'), '--layout');
  const candidates = choice.candidates.filter((c) => wanted.has(c.site.id));
  const written: string[] = [];
  const skipped: string[] = [];
  const started = performance.now();
  await footprintsFor(session, candidates, {
    weather: p.flags.has('weather'),
    progress,
    share: [0, 1],
    onCache: (e) => (e.read ? skipped : written).push(e.siteId),
    retain: KEEP_NONE,
  });
  progress.done();
  const range = first === last ? `site ${first}` : `sites ${first}..${last}`;
  const bare = wanted.size - written.length - skipped.length;
  log(
    `footprints of ${range} of ${sites.length} (${candidates.length} sensors of ${choice.label}) in ${cacheDir}`,
  );
  log(`  computed and written: ${written.length} site${written.length === 1 ? '' : 's'}${list(written)}`);
  log(`  already in the cache: ${skipped.length} site${skipped.length === 1 ? '' : 's'}${list(skipped)}`);
  if (bare > 0) log(`  without sensors in this network: ${bare} site${bare === 1 ? '' : 's'}`);
  log(`time: ${((performance.now() - started) / 1000).toFixed(1)} s`);
  return 0;
}

function list(ids: readonly string[]): string {
  if (ids.length === 0) return '';
  const shown = ids.slice(0, 12).join(', ');
  return ` (${shown}${ids.length > 12 ? `, … ${ids.length - 12} more` : ''})`;
}
