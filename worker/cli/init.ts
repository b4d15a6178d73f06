/**
 * `airshade init`: a new study from the planner's own DEM tiles and sites (and optionally volumes and sensor
 * types), written as one scenario file that `coverage`, `plan`, `report` and the app open. The choices and their
 * reasons live in the pure builder (worker/io/new-study.ts, shared with the app); this file reads the files,
 * resolves paths relative to the study file (as worker/cli/scenario.ts resolves them back), writes the study
 * atomically and says what was chosen and what to run next.
 */
import { existsSync, readdirSync, statSync } from 'node:fs';
import { dirname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { formatFl } from '../../shared/units.ts';
import type { Provenance } from '../io/provenance.ts';
import {
  boundsText,
  buildNewStudy,
  givenJson,
  givenSites,
  MAX_GRID_CELLS,
  type GivenFile,
  type NewStudy,
  type StudyTile,
} from '../io/new-study.ts';
import { one, parseArgs, required } from './args.ts';
import { readFileChecked, writeOutputFile } from './files.ts';
import { ProgressLine } from './progress.ts';
import { MEMORY_OPTION, memoryHelp, memoryLimitArg } from './budget-check.ts';
import { readTerrainWithin } from './dem-open.ts';
import { checkOutput } from './out-check.ts';
import { commandOptions, readDigest, toolVersion } from './provenance.ts';

/** The default sensor catalog, beside the sources (and beside dist/cli in a build). */
export const DEFAULT_CATALOG = fileURLToPath(
  new URL('../../data/catalog/sensor-types.json', import.meta.url),
);

export const INIT_HELP = `airshade init — a new study from your own DEM tiles and sites

Usage:
  airshade init --dem FILE|FOLDER [--dem …] --sites FILE [--volumes FILE] [--types FILE] [--name TEXT]
                --out study.json [--force] [--quiet]

Writes one scenario file (JSON) that coverage, plan, outage, compare, report and the app open. Nothing of the
demo is used. The study area is the DEM tiles' longitude/latitude bounding box (tiles in any CRS), shrunk to
whole analysis cells; the analysis cell is the finest of 1, 2, 3, 5 … 30, 45, 60 … 3600 arc-seconds that is no
finer than the DEM's pixel and keeps the grid within ${MAX_GRID_CELLS.toLocaleString('en-US')} cells. Defaults
(all editable in the file): flight levels 30, 50, 100, 150, 200, 300, 400; k = 4/3; target 2 m², Swerling 1,
low-power transponder; ISA standard day; sea lobing where the reflection lies over sea; range 400 km.
Sites and sensor types are copied into the study; the DEM tiles are referenced, relative to the study's folder.

Options:
  --dem FILE       a GeoTIFF elevation tile (metres AMSL; any CRS geotiff.js and proj4 can read); repeat it, give a
                   folder (its .tif/.tiff files), or list several files after one --dem (--dem tiles/*.tif)
  --sites FILE     the sites: CSV (header row: lon, lat, id, name, mastHeightM, siteCost; optional existing,
                   allowedTypes as ids separated by ";", tiltDeg) or a GeoJSON FeatureCollection of Points with
                   those properties
  --volumes FILE   airspace volumes: GeoJSON polygons; each feature's properties may give id, name, flMin,
                   flMax, altitudeBand, requiredFold (or primaryFold, secondaryFold, anyFold, adsbFold,
                   mlatFold), weight. Without it: one volume over the study area, from the lowest to the highest
                   level, needing one sensor of each radar kind the sites may carry (of each receiver kind when
                   they carry receivers only)
  --types FILE     sensor types (a JSON list, as data/catalog/sensor-types.json); default: that catalog
  --name TEXT      the study's name (default: from the sites file and the tiles)
  --out FILE       the study file to write (.json)
  --force          replace an existing study file
${memoryHelp(19)}
`;

const SPEC = {
  dem: { value: true, repeat: true },
  sites: { value: true },
  volumes: { value: true },
  types: { value: true },
  name: { value: true },
  out: { value: true },
  ...MEMORY_OPTION,
  force: {},
  quiet: {},
  debug: {},
  help: {},
} as const;

const TIFF = /\.tiff?$/i;
const DEM_WHAT =
  'one or more GeoTIFF DEM tiles: --dem A.tif [--dem B.tif …], --dem FOLDER, or --dem followed by several .tif files';

const utf8 = new TextDecoder('utf-8', { fatal: true });

function readText(path: string, option: string, what: string): string {
  let buf: ArrayBuffer;
  try {
    buf = readFileChecked(path, what);
  } catch (e) {
    if (e instanceof InputError) throw new InputError(`--${option} ${path}`, e.found, e.expected);
    throw e;
  }
  try {
    return utf8.decode(buf);
  } catch {
    throw new InputError(path, 'bytes that are not UTF-8 text', what);
  }
}

/** The DEM files: every --dem (a folder gives its GeoTIFFs, sorted by name), then the .tif files listed after. */
function demFiles(values: readonly string[], positional: readonly string[]): string[] {
  for (const a of positional) {
    if (!TIFF.test(a)) {
      throw new InputError(
        '--dem',
        `the argument "${a}" without an option`,
        'options (see --help); only GeoTIFF files (.tif, .tiff) may follow --dem without one',
      );
    }
  }
  const given = [...values, ...positional];
  if (given.length === 0) throw new InputError('--dem', 'nothing (the option is missing)', DEM_WHAT);
  const out: string[] = [];
  for (const g of given) {
    let dir = false;
    try {
      dir = statSync(g).isDirectory();
    } catch {
      throw new InputError(`--dem ${g}`, 'no such file or folder', DEM_WHAT);
    }
    if (!dir) {
      out.push(g);
      continue;
    }
    const tifs = readdirSync(g)
      .filter((f) => TIFF.test(f))
      .sort();
    if (tifs.length === 0)
      throw new InputError(`--dem ${g}`, 'a folder without .tif or .tiff files', DEM_WHAT);
    out.push(...tifs.map((f) => join(g, f)));
  }
  const seen = new Set<string>();
  for (const f of out) {
    const abs = resolve(f);
    if (seen.has(abs)) throw new InputError(`--dem ${f}`, 'the same file a second time', 'each tile once');
    seen.add(abs);
  }
  return out;
}

/** A path as the study file names it: relative to its folder with "/" (absolute when on another drive). */
function refFrom(studyDir: string, file: string): string {
  const rel = relative(studyDir, resolve(file));
  if (rel === '' || isAbsolute(rel)) return resolve(file);
  return rel.split(sep).join('/');
}

export async function initCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'init');
  if (p.flags.has('help')) {
    log(INIT_HELP);
    return 0;
  }
  // Everything that can be checked without reading the tiles comes first.
  const out = required(p, 'out', 'the study file to write, e.g. --out study.json');
  if (!/\.json$/i.test(out)) throw new InputError('--out', `"${out}"`, 'a file name ending in .json');
  if (existsSync(out)) {
    if (statSync(out).isDirectory())
      throw new InputError('--out', `"${out}", a folder`, 'a file name ending in .json');
    if (!p.flags.has('force'))
      throw new InputError(
        '--out',
        `"${out}", a file that exists`,
        'a new file name, or --force to replace it',
      );
  }
  const dems = demFiles(p.values.get('dem') ?? [], p.positional);
  checkOutput(out, 'file', dems);
  const memoryLimit = memoryLimitArg(p);
  const sitesPath = required(
    p,
    'sites',
    'the sites file: CSV (lon, lat, id, name, mastHeightM, siteCost) or GeoJSON Points',
  );
  const sites = givenSites(readText(sitesPath, 'sites', 'a sites file (CSV or GeoJSON)'), sitesPath);
  const volumesPath = one(p, 'volumes');
  const volumes = volumesPath
    ? givenJson(
        readText(volumesPath, 'volumes', 'a GeoJSON file of polygons'),
        volumesPath,
        'GeoJSON polygons',
      )
    : null;
  const typesPath = one(p, 'types');
  const types = typesPath
    ? givenJson(
        readText(typesPath, 'types', 'a JSON list of sensor types'),
        typesPath,
        'a JSON list of sensor types',
      )
    : null;
  const catalog: GivenFile = types
    ? { display: 'the default catalog', value: [] }
    : givenJson(
        readText(DEFAULT_CATALOG, 'types', 'the default sensor catalog'),
        'the default catalog (data/catalog/sensor-types.json)',
        'a JSON list of sensor types',
      );

  const started = performance.now();
  const progress = new ProgressLine('init', p.flags.has('quiet'));
  const studyDir = dirname(resolve(out));
  const tiles: StudyTile[] = [];
  const tileWarnings: string[] = [];
  for (let i = 0; i < dems.length; i++) {
    progress.update(i / dems.length, `reading ${dems[i]}`);
    // Only the georeferencing is kept: one tile's samples in memory at a time.
    const t = await readTerrainWithin([dems[i]], memoryLimit);
    tiles.push({ ref: refFrom(studyDir, dems[i]), name: dems[i], geo: t.firstGeo });
    tileWarnings.push(...t.terrain.warnings);
  }
  progress.update(1, 'building the study');
  const study = buildNewStudy({
    display: out,
    name: one(p, 'name'),
    tiles,
    sites,
    volumes,
    sensorTypes: types,
    catalog,
  });
  const provenance: Provenance = {
    tool: 'airshade',
    ...toolVersion(),
    createdUtc: new Date().toISOString(),
    command: 'init',
    options: commandOptions(p, SPEC, ['dem', 'force']),
    sensorTypes: readDigest(typesPath ?? DEFAULT_CATALOG),
    sites: readDigest(sitesPath),
    terrain: dems.map((d) => readDigest(d)),
    kFactor: study.scenario.earth.kFactor,
  };
  writeOutputFile(out, JSON.stringify({ ...study.doc, provenance }, null, 2) + '\n', `--out ${out}`);
  progress.done();

  for (const w of [...tileWarnings, ...study.choices.warnings]) log(`warning: ${w}`);
  log(summaryText(study, out, tiles, performance.now() - started));
  log(CAUTION);
  return 0;
}

/** Whether the study names a tile outside its own folder (worker/cli/scenario.ts refuses those by default). */
function outsideTiles(tiles: readonly StudyTile[]): boolean {
  return tiles.some((t) => t.ref === '..' || t.ref.startsWith('../') || isAbsolute(t.ref));
}

/** What was chosen and what to run next, for the screen. */
export function summaryText(study: NewStudy, out: string, tiles: readonly StudyTile[], ms: number): string {
  const c = study.choices;
  const s = study.scenario;
  const a = c.area;
  const crs = [...new Set(tiles.map((t) => t.geo.crs.label))].join('; ');
  const folds = (f: Record<string, number>) =>
    Object.entries(f)
      .map(([k, n]) => `${k} ≥ ${n}`)
      .join(', ');
  const lines = [
    `wrote ${out} in ${(ms / 1000).toFixed(1)} s: "${s.name}"`,
    `  terrain       ${tiles.length} DEM tile${tiles.length === 1 ? '' : 's'} (${crs}), covering ${boundsText(c.dem)}`,
    `  study area    ${boundsText(a)}: ${c.cell.width} × ${c.cell.height} cells of ${c.cell.cellArcSec}″`,
    `                (cell: ${c.cell.rule})`,
    `  levels        ${c.flightLevels.map(formatFl).join(' ')}, ISA standard day; k = 4/3`,
    `  target        ${s.targetRcsM2} m², ${s.targetFluctuation}, ${s.targetTransponder} transponder`,
    `  sensor types  ${c.sensorTypes.ids.length} from ${c.sensorTypes.from}, copied into the study: ${c.sensorTypes.ids.join(', ')}`,
    `  sites         ${c.siteCount} from ${c.sitesFrom} (${c.existingSites} existing), copied into the study`,
    c.defaultVolume
      ? `  volumes       one, over the study area (no --volumes given):`
      : `  volumes       ${c.volumes.length} from the volumes file:`,
    ...c.volumes.map(
      (v) =>
        `                ${v.id} "${v.name}": ${formatFl(v.flMin)}–${formatFl(v.flMax)}, ${folds(v.requiredFold)}`,
    ),
    '',
    'Next (the outputs in an out/ folder beside the study):',
    ...(outsideTiles(tiles)
      ? [
          "  (the tiles lie outside the study's folder: the commands read them only with --allow-outside-paths;",
          '   or move the study beside its tiles and run init again)',
        ]
      : []),
    ...nextCommands(out, outsideTiles(tiles)).map((c) => `  ${c}`),
  ];
  return lines.join('\n');
}

/** The commands to run on the new study, with an out/ folder beside it. */
export function nextCommands(study: string, outsidePaths = false): string[] {
  const dir = dirname(study);
  // Quoted for a POSIX shell when the path holds a space or a character the shell would act on.
  const q = (t: string) => (/[\s"'$`\\!*?;&|<>()]/.test(t) ? `'${t.replace(/'/g, `'\\''`)}'` : t);
  const o = (name: string) => q(dir === '.' ? `out/${name}` : join(dir, 'out', name));
  const out = q(study) + (outsidePaths ? ' --allow-outside-paths' : '');
  return [
    `airshade coverage ${out} --out ${o('coverage')}`,
    `airshade plan ${out} --out ${o('plan')}`,
    `airshade report ${out} --plan ${o('plan/plan.json')} --out ${o('report.html')}`,
  ];
}
