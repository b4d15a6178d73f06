/**
 * The national benchmark (issue 12 item 3): `airshade coverage` and `airshade plan --budget none` on a
 * national-size invented study, run as a user runs them (whole processes on a scenario file), timed with their peak
 * memory. The goal: ≤ 15 minutes and ≤ 16 GiB on 2 cores.
 *
 * The study (generated once, seeded, cached under bench/out/national/ with a manifest, so reruns skip it):
 * - terrain: invented land from our generator (worker/demo/synth-terrain.ts) over open South Pacific ocean far from
 *   any land, 140° W – 125° W, 50° S – 35° S, as 1° × 1° GeoTIFF tiles at 3″ (1201² Int16 samples, the layout of
 *   the demo's tiles), 225 tiles at full size;
 * - 500 candidate sites at seeded positions on the invented land (ids nat-001 …, a few marked existing), the 5
 *   sensor types of the default catalog (data/catalog/sensor-types.json, inlined), 10 flight levels FL030–FL460,
 *   a 15″ analysis grid over the box, five volumes with requirements and a layout of the existing sensors.
 * `--scale F` shrinks the box to 15·F degrees a side about the same centre with 500·F² sites (the same density;
 * 15·F must be whole: 0.2 → 3° × 3°, 20 sites); `--sites N` sets the count. `--seed N` makes another study of the same
 * shape: the same ranges, rivers and summits, the generator's noise (hills, warp, coast) and the sites drawn from
 * seed N, its tiles in a folder of their own (terrain-seed-N/). `--scenario FILE` times an existing scenario file
 * instead (nothing is generated).
 *
 * Each command runs as a child process under `/usr/bin/time -f "%e %M"` (wall seconds, peak resident KiB of the
 * whole process) when present, else with this script's clock and the command's own "peak memory" line. The
 * CLI's memory and work checks are kept: the run passes `--max-memory 16G --max-work-min 15` (the goal's limits)
 * unless told otherwise, and a refusal is recorded word for word. Results: bench/out/national-results.{md,json}
 * (the latest run) and a copy in the run's folder.
 *
 *   npm run bench:national                             (full size: 225 tiles, 500 sites)
 *   npx tsx bench/national.ts --scale 0.2              (3° × 3°, 20 sites: a quick end-to-end check)
 *   npx tsx bench/national.ts --scenario study.json    (time an existing scenario)
 *   npx tsx bench/national.ts --seed 2                 (a second study of the same shape: other terrain, other sites)
 *   npx tsx bench/national.ts --cache                  (coverage writes a footprint cache, plan reduces from it)
 *   options: --sites N, --seed N, --cache, --cell ARCSEC (analysis cell, default 15), --steps coverage,plan, --threads N, --max-memory SIZE, --max-work-min M,
 *            --timeout-min M (stop a command after M minutes and record it), --allow-outside-paths
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { cpus, loadavg, tmpdir, totalmem } from 'node:os';
import { basename, dirname, join, relative, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  createSynthWorld,
  fillGeographic,
  synthHeightAtLonLat,
  type SynthLayout,
  type SynthWorld,
} from '../worker/demo/synth-terrain.ts';
import { TILE_ARCSEC, TILE_SAMPLES, worldTile } from '../worker/demo/tiles.ts';
import { sha256, writeFileAtomic, type RunFile } from '../worker/cli/files.ts';

const root = join(import.meta.dirname, '..');
const OUT = join(root, 'bench/out');
const NAT_DIR = join(OUT, 'national');
const TERRAIN_DIR = join(NAT_DIR, 'terrain');
const MANIFEST = join(TERRAIN_DIR, 'national-tiles.json');
const CATALOG = join(root, 'data/catalog/sensor-types.json');

/** The full box: open South Pacific, no land within it (the land is invented). Whole degrees. */
const FULL = { west: -140, south: -50, east: -125, north: -35 } as const;
const FULL_SIDE_DEG = FULL.east - FULL.west;
const FULL_SITES = 500;
const CELL_ARCSEC = 15;
const FLIGHT_LEVELS = [30, 50, 100, 150, 200, 245, 300, 350, 400, 460];
/** The goal of issue 12. */
const GOAL_MIN = 15;
const GOAL_MEMORY = '16G';
const GOAL_MEMORY_MIB = 16 * 1024;

const km = (x: number, y: number): readonly [number, number] => [x * 1000, y * 1000];

/**
 * The invented land of the national box (local plane about its centre: x east, y north; the box spans about
 * ±615 km east-west and ±835 km north-south). Sea along the west, a ragged coast, lowlands rising inland, four
 * ranges, rivers from the coast, a few summits. All names are invented.
 */
const NATIONAL_LAYOUT: SynthLayout = {
  seed: 15_031_212,
  centreLon: (FULL.west + FULL.east) / 2,
  centreLat: (FULL.south + FULL.north) / 2,
  warpM: 90_000,
  warpScaleM: 260_000,
  coast: {
    xM: -450_000,
    yM: 0,
    inlandAzimuthDeg: 80,
    curvaturePerM: 1 / 4_000_000,
    roughnessM: 140_000,
    roughnessScaleM: 120_000,
    shoreRampM: 2000,
  },
  lowlandRiseM: 450,
  lowlandScaleM: 150_000,
  hillsM: 500,
  hillScaleM: 30_000,
  ridgeScaleM: 30_000,
  ranges: [
    {
      name: 'Orsavelle Spine',
      axisM: [km(250, 780), km(300, 450), km(280, 100), km(340, -250), km(300, -600), km(350, -800)],
      crestM: 2900,
      halfWidthM: 60_000,
    },
    {
      name: 'Quillmarch Fells',
      axisM: [km(-250, 600), km(-100, 650), km(50, 560)],
      crestM: 2300,
      halfWidthM: 35_000,
    },
    {
      name: 'Zendrathe Scarps',
      axisM: [km(-200, -300), km(-50, -420), km(120, -500)],
      crestM: 2000,
      halfWidthM: 30_000,
    },
    {
      name: 'Merrowgast Heights',
      axisM: [km(-150, 150), km(0, 50), km(120, 180)],
      crestM: 1800,
      halfWidthM: 28_000,
    },
  ],
  rivers: [
    {
      name: 'Ossquerel',
      courseM: [km(-470, 400), km(-300, 420), km(-150, 380), km(50, 420), km(200, 470)],
      mouthFloorM: 0,
      floorGradient: 0.003,
      floorHalfWidthM: 700,
    },
    {
      name: 'Vantrelle',
      courseM: [km(-470, 0), km(-300, -30), km(-150, 20), km(100, -50), km(240, -20)],
      mouthFloorM: 0,
      floorGradient: 0.003,
      floorHalfWidthM: 800,
    },
    {
      name: 'Pryssoth',
      courseM: [km(-460, -550), km(-300, -600), km(-100, -650), km(150, -700)],
      mouthFloorM: 0,
      floorGradient: 0.003,
      floorHalfWidthM: 600,
    },
    {
      name: 'Kelvadrine',
      courseM: [km(-460, 700), km(-350, 760), km(-200, 800)],
      mouthFloorM: 0,
      floorGradient: 0.004,
      floorHalfWidthM: 500,
    },
  ],
  summits: [
    { name: 'Qelvarin Peak', xM: -250_000, yM: 250_000, reliefM: 1800, radiusM: 20_000 },
    { name: 'Zorrastel Dome', xM: 60_000, yM: -200_000, reliefM: 1500, radiusM: 18_000 },
    { name: 'Ymbrecht Knob', xM: 150_000, yM: 650_000, reliefM: 1400, radiusM: 15_000 },
    { name: 'Tarvossin Crown', xM: -300_000, yM: -150_000, reliefM: 1200, radiusM: 15_000 },
  ],
};

// ---------------------------------------------------------------------------------------------------
// Arguments (checked before any long work)

interface Options {
  scale: number;
  /** The generator's seed; undefined = the study's own (NATIONAL_LAYOUT.seed, and its sites' draw). */
  seed?: number;
  sideDeg: number;
  sites: number;
  cellArcSec: number;
  scenario?: string;
  steps: ('coverage' | 'plan')[];
  threads?: string;
  maxMemory: string;
  maxWorkMin: string;
  timeoutMin?: number;
  allowOutside: boolean;
  /** Both commands given `--cache` (a fresh folder beside the run's outputs): coverage writes it, plan reads it. */
  cache: boolean;
}

function readOptions(argv: string[]): Options {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      options: {
        scale: { type: 'string' },
        sites: { type: 'string' },
        seed: { type: 'string' },
        cell: { type: 'string' },
        scenario: { type: 'string' },
        steps: { type: 'string' },
        threads: { type: 'string' },
        'max-memory': { type: 'string' },
        'max-work-min': { type: 'string' },
        'timeout-min': { type: 'string' },
        'allow-outside-paths': { type: 'boolean' },
        cache: { type: 'boolean' },
      },
      strict: true,
      allowPositionals: false,
    });
  } catch (e) {
    throw new InputError(
      'bench/national.ts arguments',
      (e as Error).message,
      '--scale F, --sites N, --seed N, --cache, --scenario FILE, --steps coverage,plan, --threads N, --max-memory SIZE, ' +
        '--max-work-min M, --timeout-min M, --allow-outside-paths',
    );
  }
  const v = parsed.values;
  const scale = v.scale === undefined ? 1 : Number(v.scale);
  if (!(scale > 0 && scale <= 1)) {
    throw new InputError('--scale', JSON.stringify(v.scale), 'a number more than 0 and at most 1');
  }
  const sideDeg = Math.round(FULL_SIDE_DEG * scale);
  if (sideDeg < 1 || Math.abs(FULL_SIDE_DEG * scale - sideDeg) > 1e-9) {
    throw new InputError(
      '--scale',
      `${v.scale} (a box of ${(FULL_SIDE_DEG * scale).toPrecision(4)}° a side)`,
      `a multiple of 1/${FULL_SIDE_DEG} so that the box is whole 1° tiles (e.g. 0.2 → 3°, 0.4 → 6°, 1 → 15°)`,
    );
  }
  const sites = v.sites === undefined ? Math.max(2, Math.round(FULL_SITES * scale * scale)) : Number(v.sites);
  if (!Number.isInteger(sites) || sites < 2 || sites > 999) {
    throw new InputError(
      '--sites',
      JSON.stringify(v.sites),
      'a whole number of candidate sites from 2 to 999',
    );
  }
  const seed = v.seed === undefined ? undefined : Number(v.seed);
  if (seed !== undefined && !(/^\d+$/.test(v.seed ?? '') && Number.isSafeInteger(seed))) {
    throw new InputError(
      '--seed',
      JSON.stringify(v.seed),
      'a whole number (the seed of the invented terrain and sites)',
    );
  }
  const cellArcSec = v.cell === undefined ? CELL_ARCSEC : Number(v.cell);
  if (!(cellArcSec > 0 && cellArcSec <= 3600 && Number.isInteger((3600 * 1000) / cellArcSec / 1000))) {
    throw new InputError(
      '--cell',
      JSON.stringify(v.cell),
      'an analysis cell in arc-seconds that divides 1° (e.g. 15, 30, 60)',
    );
  }
  const steps = (v.steps ?? 'coverage,plan').split(',').map((s) => s.trim());
  for (const s of steps) {
    if (s !== 'coverage' && s !== 'plan') {
      throw new InputError('--steps', JSON.stringify(v.steps), 'a comma-separated list of coverage and plan');
    }
  }
  if (v.threads !== undefined && !/^\d+$/.test(v.threads)) {
    throw new InputError(
      '--threads',
      JSON.stringify(v.threads),
      'a whole number of worker threads (0 = inline)',
    );
  }
  let timeoutMin: number | undefined;
  if (v['timeout-min'] !== undefined) {
    timeoutMin = Number(v['timeout-min']);
    if (!(timeoutMin > 0)) {
      throw new InputError(
        '--timeout-min',
        JSON.stringify(v['timeout-min']),
        'a number of minutes more than 0',
      );
    }
  }
  let scenario: string | undefined;
  if (v.scenario !== undefined) {
    scenario = resolve(v.scenario);
    let text: string;
    try {
      text = readFileSync(scenario, 'utf8');
    } catch (e) {
      throw new InputError(
        '--scenario',
        `${v.scenario} (${(e as NodeJS.ErrnoException).code ?? 'unreadable'})`,
        'a readable scenario file (JSON)',
      );
    }
    try {
      JSON.parse(text);
    } catch (e) {
      throw new InputError('--scenario', `${v.scenario}: ${(e as Error).message}`, 'a scenario file in JSON');
    }
    if (v.scale !== undefined || v.sites !== undefined || v.cell !== undefined || v.seed !== undefined) {
      throw new InputError(
        '--scenario',
        'also --scale, --sites, --seed or --cell',
        '--scenario alone (its study is given)',
      );
    }
  }
  return {
    scale,
    seed,
    sideDeg,
    sites,
    cellArcSec,
    scenario,
    steps: steps as Options['steps'],
    threads: v.threads,
    // passed on as given: the CLI checks them and its message names the option
    maxMemory: v['max-memory'] ?? GOAL_MEMORY,
    maxWorkMin: v['max-work-min'] ?? String(GOAL_MIN),
    timeoutMin,
    allowOutside: v['allow-outside-paths'] === true,
    cache: v.cache === true,
  };
}

// ---------------------------------------------------------------------------------------------------
// Terrain tiles (cached, with a manifest)

interface Box {
  west: number;
  south: number;
  east: number;
  north: number;
}

function boxOf(sideDeg: number): Box {
  const west = Math.floor((FULL.west + FULL.east) / 2 - sideDeg / 2);
  const south = Math.floor((FULL.south + FULL.north) / 2 - sideDeg / 2);
  return { west, south, east: west + sideDeg, north: south + sideDeg };
}

/** Tile names: our own scheme, south-west corner in whole degrees. */
function tileName(lon: number, lat: number): string {
  return `nat-tile_lat${lat}_lon${lon}.tif`;
}

interface TileManifest {
  about: string;
  /** Fingerprint of the layout, the tile format and a patch of the generator's output. */
  generator: string;
  tiles: RunFile[];
}

/** The layout of the study drawn from `seed` (undefined: the study's own). */
function layoutOf(seed: number | undefined): SynthLayout {
  return seed === undefined ? NATIONAL_LAYOUT : { ...NATIONAL_LAYOUT, seed };
}

/** Where a seed's tiles live: the study's own in terrain/, another seed's in terrain-seed-N/. */
function terrainDirOf(seed: number | undefined): string {
  return seed === undefined ? TERRAIN_DIR : join(NAT_DIR, `terrain-seed-${seed}`);
}

function generatorFingerprint(world: SynthWorld, layout: SynthLayout): string {
  const patch = new Float32Array(16 * 16);
  fillGeographic(patch, FULL.west + 3.37, FULL.south + 5.61, 0.01, 16, 16, world);
  return sha256(
    `${TILE_ARCSEC}/${TILE_SAMPLES}/int16/${JSON.stringify(layout)}/` + sha256(new Uint8Array(patch.buffer)),
  );
}

/** Makes the box's tiles whole (missing or changed ones generated again); returns their paths, north first. */
function ensureTiles(
  box: Box,
  world: SynthWorld,
  layout: SynthLayout,
  dir: string,
): { paths: string[]; generated: number; seconds: number } {
  const t0 = performance.now();
  mkdirSync(dir, { recursive: true });
  const manifest = join(dir, basename(MANIFEST));
  const fingerprint = generatorFingerprint(world, layout);
  const known = new Map<string, RunFile>();
  try {
    const m = JSON.parse(readFileSync(manifest, 'utf8')) as TileManifest;
    if (m.generator === fingerprint) for (const t of m.tiles) known.set(t.name, t);
  } catch {
    // absent or unreadable: every tile is made
  }
  const save = () =>
    writeFileAtomic(
      manifest,
      JSON.stringify(
        {
          about:
            'Invented terrain of the national benchmark (bench/national.ts): our own seeded generator, over open ' +
            'ocean; each tile with its size and SHA-256.',
          generator: fingerprint,
          tiles: [...known.values()].sort((a, b) => a.name.localeCompare(b.name)),
        } satisfies TileManifest,
        null,
        2,
      ) + '\n',
    );
  const paths: string[] = [];
  let generated = 0;
  const total = (box.east - box.west) * (box.north - box.south);
  for (let lat = box.north - 1; lat >= box.south; lat--) {
    for (let lon = box.west; lon < box.east; lon++) {
      const name = tileName(lon, lat);
      const path = join(dir, name);
      paths.push(path);
      const want = known.get(name);
      if (want !== undefined && existsSync(path)) {
        const bytes = readFileSync(path);
        if (bytes.byteLength === want.bytes && sha256(bytes) === want.sha256) continue;
      }
      const data = worldTile(lon, lat, world);
      writeFileAtomic(path, data);
      known.set(name, { name, bytes: data.byteLength, sha256: sha256(data) });
      save();
      generated++;
      if (process.stderr.isTTY)
        process.stderr.write(`\r  terrain: tile ${paths.length}/${total} (${name})   `);
      else if (generated % 25 === 0) process.stderr.write(`  terrain: ${paths.length}/${total} tiles\n`);
    }
  }
  if (generated > 0 && process.stderr.isTTY) process.stderr.write('\n');
  if (generated === 0) save();
  return { paths, generated, seconds: (performance.now() - t0) / 1000 };
}

// ---------------------------------------------------------------------------------------------------
// The scenario

/** mulberry32: a small seeded PRNG (the generator's own is private to it). */
function rng32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const round4 = (v: number): number => Math.round(v * 1e4) / 1e4;

interface Site {
  lon: number;
  lat: number;
  id: string;
  mastHeightM: number;
  siteCost: number;
  existing: boolean;
}

/**
 * Seeded candidate sites on the invented land: a position drawn uniformly in the box (inset 2 % from its edges),
 * kept when the ground there is above 5 m (the sea is exactly 0 m), then the highest of four nearby draws within
 * about 3 km (sites sit on high ground). Every 50th site, and at least two, are existing.
 */
function makeSites(box: Box, count: number, world: SynthWorld, seed: number | undefined): Site[] {
  const rand = rng32(0x6e617431 ^ count ^ (seed === undefined ? 0 : Math.imul(seed, 0x9e3779b1)));
  const side = box.east - box.west;
  const inset = 0.02 * side;
  const existingEvery = Math.max(1, Math.min(50, Math.floor(count / 2)));
  const out: Site[] = [];
  let tries = 0;
  while (out.length < count) {
    if (++tries > count * 1000) {
      throw new Error(
        `only ${out.length} of ${count} sites found on land in ${tries} draws: the layout has no land`,
      );
    }
    const lon0 = box.west + inset + rand() * (side - 2 * inset);
    const lat0 = box.south + inset + rand() * (side - 2 * inset);
    if (!(synthHeightAtLonLat(lon0, lat0, world) > 5)) continue;
    let best = { lon: lon0, lat: lat0, h: synthHeightAtLonLat(lon0, lat0, world) };
    for (let k = 0; k < 4; k++) {
      const lon = lon0 + (rand() - 0.5) * 0.06;
      const lat = lat0 + (rand() - 0.5) * 0.05;
      const h = synthHeightAtLonLat(lon, lat, world);
      if (h > best.h) best = { lon, lat, h };
    }
    const i = out.length;
    out.push({
      lon: round4(best.lon),
      lat: round4(best.lat),
      id: `nat-${String(i + 1).padStart(3, '0')}`,
      mastHeightM: 10 + Math.floor(rand() * 3) * 5,
      siteCost: Math.round((1.5 + rand() * 1.5) * 10) / 10,
      existing: i % existingEvery === 0,
    });
  }
  return out;
}

/** A disc of `radiusNm` about (lon, lat) as a counter-clockwise 32-gon (RFC 7946 exterior ring). */
function disc(lon: number, lat: number, radiusNm: number): number[][] {
  const rLat = (radiusNm * 1852) / 111_320;
  const rLon = rLat / Math.cos((lat * Math.PI) / 180);
  const ring: number[][] = [];
  for (let k = 0; k < 32; k++) {
    const a = (2 * Math.PI * k) / 32;
    ring.push([round4(lon + rLon * Math.cos(a)), round4(lat + rLat * Math.sin(a))]);
  }
  ring.push(ring[0]);
  return ring;
}

function rect(b: Box, insetFrac: number): number[][] {
  const dx = (b.east - b.west) * insetFrac;
  const dy = (b.north - b.south) * insetFrac;
  const [w, s, e, n] = [b.west + dx, b.south + dy, b.east - dx, b.north - dy].map(round4);
  return [
    [w, s],
    [e, s],
    [e, n],
    [w, n],
    [w, s],
  ];
}

/** Writes the scenario (and its sites file) beside the tiles; returns its path. */
function writeScenario(
  box: Box,
  sites: Site[],
  tilePaths: string[],
  tag: string,
  cellArcSec: number,
): string {
  const types = JSON.parse(readFileSync(CATALOG, 'utf8')) as { id: string }[];
  const typeIds = types.map((t) => t.id);
  for (const id of ['psr-s-terminal', 'ssr-mono-lva', 'ssr-short']) {
    if (!typeIds.includes(id)) {
      throw new InputError(
        CATALOG,
        `sensor types ${typeIds.join(', ')}`,
        `a type ${id} (the default catalog)`,
      );
    }
  }
  const existing = sites.filter((s) => s.existing);
  // Terminal areas (25 NM discs) about up to three sites whose disc lies inside the box: existing ones first.
  const fits = (s: Site): boolean => {
    const rLat = (26 * 1852) / 111_320;
    const rLon = rLat / Math.cos((s.lat * Math.PI) / 180);
    return (
      s.lon - rLon > box.west &&
      s.lon + rLon < box.east &&
      s.lat - rLat > box.south &&
      s.lat + rLat < box.north
    );
  };
  const terminals = [...existing.filter(fits), ...sites.filter((s) => !s.existing && fits(s))].slice(0, 3);
  const sitesFile = `sites-${tag}.geojson`;
  writeFileAtomic(
    join(NAT_DIR, sitesFile),
    JSON.stringify(
      {
        type: 'FeatureCollection',
        features: sites.map((s) => ({
          type: 'Feature',
          geometry: { type: 'Point', coordinates: [s.lon, s.lat] },
          properties: {
            id: s.id,
            name: `National candidate ${s.id.slice(4)}`,
            mastHeightM: s.mastHeightM,
            siteCost: s.siteCost,
            existing: s.existing,
          },
        })),
      },
      null,
      1,
    ) + '\n',
  );
  const scenario = {
    name: `Airshade national benchmark: invented land, ${-box.west}° W – ${-box.east}° W, ${-box.south}° S – ${-box.north}° S, ${sites.length} candidate sites`,
    terrain: { files: tilePaths.map((p) => relative(NAT_DIR, p)) },
    earth: { kFactor: 1.3333 },
    grid: { cellArcSec, bounds: box },
    flightLevels: FLIGHT_LEVELS,
    targetRcsM2: 2,
    targetFluctuation: 'swerling1',
    targetTransponder: 'low-power',
    multipath: 'auto',
    maxRangeKm: 400,
    sensorTypes: types,
    sites: sitesFile,
    volumes: [
      {
        id: 'upper-airspace',
        name: 'Upper airspace over the whole box',
        polygon: { type: 'Polygon', coordinates: [rect(box, 0.03)] },
        flMin: 245,
        flMax: 460,
        requiredFold: { secondary: 2 },
        weight: 1,
      },
      {
        id: 'lower-airspace',
        name: 'Lower airspace over the inland core',
        polygon: { type: 'Polygon', coordinates: [rect(box, 0.2)] },
        flMin: 100,
        flMax: 245,
        requiredFold: { secondary: 1 },
        weight: 1,
      },
      ...terminals.map((s, i) => ({
        id: `terminal-${i + 1}`,
        name: `Terminal area ${i + 1} (about site ${s.id})`,
        polygon: { type: 'Polygon', coordinates: [disc(s.lon, s.lat, 25)] },
        flMin: 30,
        flMax: 245,
        requiredFold: { primary: 1, secondary: 2 },
        weight: 3,
      })),
    ],
    layouts: [
      {
        name: 'existing network',
        sensors: existing.flatMap((s) =>
          terminals.includes(s)
            ? [
                { siteId: s.id, typeId: 'psr-s-terminal' },
                { siteId: s.id, typeId: 'ssr-short' },
              ]
            : [{ siteId: s.id, typeId: 'ssr-mono-lva' }],
        ),
      },
    ],
  };
  const path = join(NAT_DIR, `national-${tag}.json`);
  writeFileAtomic(path, JSON.stringify(scenario, null, 2) + '\n');
  return path;
}

// ---------------------------------------------------------------------------------------------------
// Running the commands

interface StepResult {
  step: 'coverage' | 'plan';
  command: string;
  exitCode: number | null;
  signal: string | null;
  timedOut: boolean;
  wallS: number;
  /** Peak resident memory of the whole process, MiB: /usr/bin/time's, else the command's own line. */
  peakMiB: number | null;
  peakFrom: string;
  loadBefore: number;
  loadAfter: number;
  /** The command's last words (a refusal word for word). */
  stderrTail: string;
  stdoutTail: string;
  details: Record<string, unknown>;
}

const TIME = '/usr/bin/time';

function tail(text: string, chars = 3000): string {
  const t = text.trim();
  return t.length > chars ? '…' + t.slice(-chars) : t;
}

async function runStep(
  step: 'coverage' | 'plan',
  scenario: string,
  outDir: string,
  o: Options,
  cacheDir: string | undefined,
): Promise<StepResult> {
  const cli = [join(root, 'bin/airshade.mjs'), step, scenario];
  if (step === 'plan') cli.push('--budget', 'none');
  cli.push('--out', outDir, '--quiet', '--max-memory', o.maxMemory, '--max-work-min', o.maxWorkMin);
  if (o.threads !== undefined) cli.push('--threads', o.threads);
  if (o.allowOutside) cli.push('--allow-outside-paths');
  if (cacheDir !== undefined) cli.push('--cache', cacheDir);
  const useTime = existsSync(TIME);
  const timeFile = join(tmpdir(), `airshade-national-time-${process.pid}-${step}.txt`);
  const [cmd, args] = useTime
    ? [TIME, ['-f', '%e %M', '-o', timeFile, process.execPath, ...cli]]
    : [process.execPath, cli];
  const shown = ['node', ...cli.map((a) => relative(root, a) || a)].join(' ');
  process.stderr.write(`  ${step}: ${shown}\n`);
  const loadBefore = loadavg()[0];
  const t0 = performance.now();
  // A process group of its own, so a timeout stops the command and not only /usr/bin/time.
  const child = spawn(cmd, args, { cwd: root, detached: true, stdio: ['ignore', 'pipe', 'pipe'] });
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString('utf8')));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString('utf8')));
  let timedOut = false;
  const timer =
    o.timeoutMin === undefined
      ? undefined
      : setTimeout(() => {
          timedOut = true;
          if (child.pid !== undefined) process.kill(-child.pid, 'SIGTERM');
        }, o.timeoutMin * 60_000);
  const [exitCode, signal] = await new Promise<[number | null, string | null]>((res) =>
    child.on('close', (code, sig) => res([code, sig])),
  );
  if (timer !== undefined) clearTimeout(timer);
  const ownWallS = (performance.now() - t0) / 1000;
  let wallS = ownWallS;
  let peakMiB: number | null = null;
  let peakFrom = 'none';
  if (useTime && existsSync(timeFile)) {
    const last = readFileSync(timeFile, 'utf8').trim().split('\n').pop() ?? '';
    const m = /^([\d.]+) (\d+)$/.exec(last);
    if (m) {
      wallS = Number(m[1]);
      peakMiB = Math.round(Number(m[2]) / 1024);
      peakFrom = '/usr/bin/time %M (whole process)';
    }
    rmSync(timeFile, { force: true });
  }
  if (peakMiB === null) {
    const m = /peak memory (\d+) MiB/.exec(stdout + stderr);
    if (m) {
      peakMiB = Number(m[1]);
      peakFrom = "the command's own peak memory line";
    }
  }
  const details: Record<string, unknown> = {};
  if (exitCode === 0) {
    try {
      if (step === 'coverage') {
        const s = JSON.parse(readFileSync(join(outDir, 'summary.json'), 'utf8'));
        details.timingsMs = s.timingsMs;
        details.sensors = s.network?.sensors?.length;
        details.grid = s.grid;
      } else {
        const p = JSON.parse(readFileSync(join(outDir, 'plan.json'), 'utf8'));
        for (const k of ['cost', 'lowerBound', 'gapPct', 'demandMet', 'method', 'solverStop']) {
          if (p[k] !== undefined) details[k] = p[k];
        }
        details.entries = Array.isArray(p.entries) ? p.entries.length : undefined;
        // the command's own stage times, as it prints them
        const m = /demand \+ candidates ([\d.]+) s, solver ([\d.]+) s, total ([\d.]+) s/.exec(stdout);
        if (m)
          details.stagesS = { demandAndCandidates: Number(m[1]), solver: Number(m[2]), total: Number(m[3]) };
      }
    } catch (e) {
      details.readError = (e as Error).message;
    }
  }
  const r: StepResult = {
    step,
    command: shown,
    exitCode,
    signal,
    timedOut,
    wallS: Math.round(wallS * 100) / 100,
    peakMiB,
    peakFrom,
    loadBefore: Math.round(loadBefore * 100) / 100,
    loadAfter: Math.round(loadavg()[0] * 100) / 100,
    stderrTail: tail(stderr),
    stdoutTail: tail(stdout, 1500),
    details,
  };
  process.stderr.write(
    `  ${step}: exit ${exitCode ?? signal}${timedOut ? ' (stopped: --timeout-min)' : ''}, ${r.wallS} s, ` +
      `peak ${peakMiB ?? '?'} MiB, load ${r.loadBefore} → ${r.loadAfter}\n`,
  );
  if (exitCode !== 0 && stderr.trim()) process.stderr.write(`  ${step} said: ${tail(stderr, 800)}\n`);
  return r;
}

// ---------------------------------------------------------------------------------------------------
// Results

function resultsMarkdown(res: Results): string {
  const lines = [
    `# National benchmark — ${res.study.name}`,
    '',
    `${res.study.description}`,
    '',
    `Run ${res.date}; machine ${res.machine.cores} × ${res.machine.cpu}, ${res.machine.memoryGiB} GiB, ` +
      `Node ${res.machine.node}; limits passed: --max-memory ${res.limits.maxMemory} --max-work-min ` +
      `${res.limits.maxWorkMin}. Goal: ≤ ${GOAL_MIN} min and ≤ 16 GiB on 2 cores.`,
    '',
    '| step | exit | wall s | peak MiB | load avg before → after | within goal |',
    '| --- | --- | --- | --- | --- | --- |',
  ];
  for (const s of res.steps) {
    const ok =
      s.exitCode === 0 && s.wallS <= GOAL_MIN * 60 && s.peakMiB !== null && s.peakMiB <= GOAL_MEMORY_MIB;
    const exit = s.timedOut ? `stopped after ${s.wallS} s` : String(s.exitCode ?? s.signal);
    lines.push(
      `| ${s.step} | ${exit} | ${s.wallS} | ${s.peakMiB ?? '?'} | ${s.loadBefore} → ${s.loadAfter} | ${ok ? 'yes' : 'no'} |`,
    );
  }
  if (res.steps.length > 1) {
    const total = res.steps.reduce((t, s) => t + s.wallS, 0);
    const allOk = res.steps.every((s) => s.exitCode === 0);
    lines.push(
      '',
      `One after the other: ${total.toFixed(1)} s (${(total / 60).toFixed(1)} min)` +
        (allOk ? `, ${total <= GOAL_MIN * 60 ? 'within' : 'over'} ${GOAL_MIN} min together.` : '.'),
    );
  }
  lines.push('');
  for (const s of res.steps) {
    lines.push(`- ${s.step}: \`${s.command}\``);
    if (s.exitCode !== 0) lines.push('', '  ```', ...s.stderrTail.split('\n').map((l) => `  ${l}`), '  ```');
    else if (Object.keys(s.details).length > 0) lines.push(`  ${JSON.stringify(s.details)}`);
  }
  if (res.terrain) {
    lines.push(
      '',
      `Terrain: ${res.terrain.tiles} tiles (${res.terrain.generated} generated this run in ${res.terrain.seconds} s).`,
    );
  }
  return lines.join('\n') + '\n';
}

interface Results {
  date: string;
  machine: { cores: number; cpu: string; memoryGiB: number; node: string };
  limits: { maxMemory: string; maxWorkMin: string; timeoutMin?: number };
  study: { name: string; description: string; scenario: string; scenarioSha256: string };
  terrain?: { tiles: number; generated: number; seconds: number };
  steps: StepResult[];
}

async function main(): Promise<void> {
  const o = readOptions(process.argv.slice(2));
  let scenario: string;
  let description: string;
  let terrain: Results['terrain'];
  let runDir: string;
  if (o.scenario !== undefined) {
    scenario = o.scenario;
    description = `The scenario ${scenario}, as given.`;
    runDir = join(NAT_DIR, 'given-' + basename(scenario).replace(/\.json$/i, ''));
  } else {
    const box = boxOf(o.sideDeg);
    const tag =
      `${o.sideDeg}deg-${o.sites}sites` +
      (o.cellArcSec === CELL_ARCSEC ? '' : `-${o.cellArcSec}s`) +
      (o.seed === undefined ? '' : `-seed${o.seed}`);
    process.stderr.write(
      `national bench: ${o.sideDeg}° × ${o.sideDeg}° (${box.west}…${box.east}° E, ${box.south}…${box.north}° N), ` +
        `${o.sites} sites${o.seed === undefined ? '' : `, seed ${o.seed}`}, load average ${loadavg()[0].toFixed(2)}\n`,
    );
    const layout = layoutOf(o.seed);
    const world = createSynthWorld(layout);
    const t = ensureTiles(box, world, layout, terrainDirOf(o.seed));
    terrain = { tiles: t.paths.length, generated: t.generated, seconds: Math.round(t.seconds * 10) / 10 };
    process.stderr.write(
      `  terrain: ${t.paths.length} tiles ready (${t.generated} generated, ${terrain.seconds} s)\n`,
    );
    const sites = makeSites(box, o.sites, world, o.seed);
    scenario = writeScenario(box, sites, t.paths, tag, o.cellArcSec);
    const cells = Math.round((o.sideDeg * 3600) / o.cellArcSec) ** 2;
    description =
      `Invented terrain ${o.sideDeg}° × ${o.sideDeg}° at 3″${o.seed === undefined ? '' : ` (generator and sites seeded ${o.seed})`} (${t.paths.length} tiles of 1201²), ` +
      `${o.sites} candidate sites × 5 types of the default catalog, ${FLIGHT_LEVELS.length} flight levels, ` +
      `${o.cellArcSec}″ analysis grid (${cells.toLocaleString('en')} cells), 5 volumes.`;
    runDir = join(NAT_DIR, tag);
  }
  if (o.cache) runDir += '-cache';
  // A fresh cache: the run times coverage writing it and plan reading it, not a cache left by an earlier run.
  const cacheDir = o.cache ? join(runDir, 'footprint-cache') : undefined;
  if (cacheDir !== undefined) rmSync(cacheDir, { recursive: true, force: true });
  const steps: StepResult[] = [];
  for (const step of o.steps) {
    const outDir = join(runDir, step);
    mkdirSync(outDir, { recursive: true });
    steps.push(await runStep(step, scenario, outDir, o, cacheDir));
  }
  const text = readFileSync(scenario);
  let name = basename(scenario);
  try {
    name = String(JSON.parse(text.toString('utf8')).name ?? name);
  } catch {
    // the name stays the file's
  }
  const res: Results = {
    date: new Date().toISOString(),
    machine: {
      cores: cpus().length,
      cpu: cpus()[0]?.model ?? 'CPU',
      memoryGiB: Math.round(totalmem() / 2 ** 30),
      node: process.version,
    },
    limits: { maxMemory: o.maxMemory, maxWorkMin: o.maxWorkMin, timeoutMin: o.timeoutMin },
    study: {
      name,
      description,
      scenario: relative(root, scenario) || scenario,
      scenarioSha256: sha256(text),
    },
    terrain,
    steps,
  };
  const json = JSON.stringify(res, null, 2) + '\n';
  const md = resultsMarkdown(res);
  mkdirSync(runDir, { recursive: true });
  for (const dir of [OUT, runDir]) {
    const prefix = dir === OUT ? 'national-results' : 'results';
    writeFileAtomic(join(dir, `${prefix}.json`), json);
    writeFileAtomic(join(dir, `${prefix}.md`), md);
  }
  process.stdout.write(md);
  process.stderr.write(
    `  results: ${relative(root, join(OUT, 'national-results.md'))}, ${relative(root, dirname(join(runDir, 'x')))}/\n`,
  );
}

main().catch((e: unknown) => {
  process.stderr.write(`${isInputError(e) ? e.message : ((e as Error).stack ?? String(e))}\n`);
  process.exit(1);
});
