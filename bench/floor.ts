/**
 * `npm run bench`: whole-process speed, peak memory and accuracy of `airshade floor` on generated projected DEMs
 * of 1024², 4096² and 8192² cells, with gdal_viewshed (GDAL's single-threaded viewshed) as a yardstick when it is
 * installed. GDAL is never a runtime dependency of Airshade: without it the bench still prints Airshade's numbers.
 *
 * Accuracy of both tools is measured against the exact R3 ray walk (Franklin & Ray 1994, test/reference/raywalk.ts)
 * on a seeded random sample of target cells, not against each other.
 *
 * Usage: tsx bench/floor.ts [--sizes 1024,4096,8192] [--runs 2]
 * Progress goes to stderr; the result table to stdout and bench/out/floor-results.md.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { fromArrayBuffer } from 'geotiff';
import proj4 from 'proj4';
import type { GridGeo } from '../worker/core/grid.ts';
import { DEMO_WORLD, fillProjected } from '../worker/demo/synth-terrain.ts';
import { encodeGeoTiff } from '../worker/io/geotiff-write.ts';
import { rayWalkFloor, type RayWalkInput } from '../test/reference/raywalk.ts';
import { sphereRayWalkFloor, type SphereRayWalkInput } from './raywalk-sphere.ts';
import { loadMemoryHelper } from '../bin/native-memory.mjs';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const OUT_DIR = join(ROOT, 'bench/out');
const CLI = join(ROOT, 'bin/airshade.mjs');

// --- The scene --------------------------------------------------------------------------------------------

const PIXEL_M = 30;
const EPSG = 32726;
const UTM_26S = '+proj=utm +zone=26 +south +datum=WGS84 +units=m +no_defs';
const UTM_K0 = 0.9996;
const UTM_FALSE_EASTING_M = 500_000;
const WGS84_E2 = 0.00669437999014;
const CENTRE_EASTING_M = 500_000;
const CENTRE_NORTHING_M = 5_500_000;
/**
 * Where the rasters' centre lies in the demo landscape's local plane (metres east / north of its origin): coastal
 * lowland about 270 m up, a 1300 m hill within 15 km, the sea to the west and the 3000 m ranges to the east on the
 * larger rasters — real relief in every direction. (The heights are laid on the UTM grid by translation only.)
 */
const SCENE_X_M = 40_000;
const SCENE_Y_M = 20_000;
const MAST_M = 20;

/** gdal_viewshed's curvature coefficient (1/k) and the semi-major axis it divides by (WGS84, from the CRS). */
const GDAL_CC = 0.75;
const WGS84_A_M = 6_378_137;
/** Airshade's effective radius is k × 6371 km; this k gives the same effective radius as gdal's a / cc. */
const AIRSHADE_R_M = 6_371_000;
const EFFECTIVE_RADIUS_M = WGS84_A_M / GDAL_CC;
const K_FACTOR = EFFECTIVE_RADIUS_M / AIRSHADE_R_M;

const ALTITUDES_M = [500, 1000, 1500, 3000] as const;
/** Ray-walk sample per raster size: each sampled cell costs O(distance in cells), so fewer on the big rasters. */
const SAMPLES: Record<number, number> = { 1024: 40_000, 4096: 16_000, 8192: 12_000 };

// --- Small helpers -----------------------------------------------------------------------------------------

const progress = (s: string): void => {
  process.stderr.write(`[bench] ${s}\n`);
};

function argValue(name: string): string | undefined {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

/** mulberry32: a small seeded PRNG, so the sample is the same on every run. */
function makeRng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) | 0;
    let t = Math.imul(a ^ (a >>> 15), 1 | a);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function quantile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];
}

function demGeo(n: number): GridGeo {
  return {
    width: n,
    height: n,
    originX: CENTRE_EASTING_M - (n / 2) * PIXEL_M,
    originY: CENTRE_NORTHING_M + (n / 2) * PIXEL_M,
    pixelX: PIXEL_M,
    pixelY: -PIXEL_M,
    crs: { kind: 'projected', proj4: UTM_26S, epsg: EPSG, label: `EPSG:${EPSG} (WGS 84 / UTM zone 26S)` },
  };
}

interface Raster {
  width: number;
  height: number;
  originX: number;
  originY: number;
  data: Float32Array | Float64Array;
}

/** Band 1 of a GeoTIFF, raw (no void filling): nodata stays as written. */
async function readRaster(path: string): Promise<Raster> {
  const buf = readFileSync(path);
  const ab =
    buf.byteOffset === 0 && buf.byteLength === buf.buffer.byteLength
      ? (buf.buffer as ArrayBuffer)
      : buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength);
  const image = await (await fromArrayBuffer(ab)).getImage();
  const bands = (await image.readRasters({ samples: [0] })) as unknown as ArrayLike<unknown>[];
  const data = bands[0];
  if (!(data instanceof Float32Array) && !(data instanceof Float64Array)) {
    throw new Error(`${path}: expected a Float32 or Float64 band, got ${data?.constructor?.name}`);
  }
  const [originX, originY] = image.getOrigin();
  return { width: image.getWidth(), height: image.getHeight(), originX, originY, data };
}

interface Timed {
  wallS: number;
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Runs a child process; wall time runs from spawn to the child's exit. */
function runTimed(cmd: string, args: readonly string[]): Promise<Timed> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    let t1 = NaN;
    const child = spawn(cmd, args, { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    child.on('error', reject);
    child.on('exit', () => (t1 = performance.now()));
    child.on('close', (code) => resolve({ wallS: (t1 - t0) / 1000, code, stdout, stderr }));
  });
}

/** GDAL's version line from `gdal_viewshed --version` (which prints it, then its usage, and exits 1), or null. */
function gdalViewshedVersion(): string | null {
  const r = spawnSync('gdal_viewshed', ['--version'], { encoding: 'utf8' });
  if (r.error) return null;
  return /GDAL \d[^\n]*/.exec(`${r.stdout}\n${r.stderr}`)?.[0] ?? 'GDAL (version not reported)';
}

/** True when bin/airshade.mjs will run the built CLI (dist/cli newer than worker/ and shared/), not tsx. */
function builtCliFresh(): boolean {
  const built = join(ROOT, 'dist/cli/cli.js');
  return (
    existsSync(built) &&
    statSync(built).mtimeMs >=
      Math.max(newestSourceMs(join(ROOT, 'worker')), newestSourceMs(join(ROOT, 'shared')))
  );
}

/** Newest .ts/.mjs under dir (the same test bin/airshade.mjs makes to prefer the built CLI). */
function newestSourceMs(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) t = Math.max(t, newestSourceMs(p));
    else if (e.name.endsWith('.ts') || e.name.endsWith('.mjs')) t = Math.max(t, statSync(p).mtimeMs);
  }
  return t;
}

// --- Steps -------------------------------------------------------------------------------------------------

/** The DEM of n² cells: reused when bench/out already holds one of the right size, else generated. */
async function ensureDem(n: number): Promise<{ path: string; data: Float32Array }> {
  const path = join(OUT_DIR, `dem-${n}.tif`);
  if (existsSync(path)) {
    try {
      const r = await readRaster(path);
      const g = demGeo(n);
      if (
        r.width === n &&
        r.height === n &&
        r.data instanceof Float32Array &&
        Math.abs(r.originX - g.originX) < 1e-6 &&
        Math.abs(r.originY - g.originY) < 1e-6
      ) {
        progress(`${n}²: reusing ${relative(ROOT, path)}`);
        return { path, data: r.data };
      }
      progress(`${n}²: ${relative(ROOT, path)} has another size or origin; regenerating`);
    } catch (e) {
      progress(`${n}²: ${relative(ROOT, path)} unreadable (${(e as Error).message}); regenerating`);
    }
  }
  progress(`${n}²: generating the DEM (${((n * n * 4) / 2 ** 20).toFixed(0)} MiB Float32)…`);
  const t0 = performance.now();
  const data = new Float32Array(n * n);
  fillProjected(data, n, n, PIXEL_M, DEMO_WORLD, SCENE_X_M, SCENE_Y_M);
  writeFileSync(path, new Uint8Array(encodeGeoTiff({ geo: demGeo(n), data })));
  progress(`${n}²: DEM written in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  return { path, data };
}

interface ToolRun {
  tool: string;
  ok: boolean;
  /** Best (fastest) of the runs. */
  wallS: number;
  allWallS: number[];
  peakMiB: number | null;
  outPath: string;
  note?: string;
  /** Airshade: the antenna ground it reported. */
  groundM?: number;
}

/**
 * One tool's runs, one at a time (`once`), so that the two tools' runs alternate in one loop (`runBoth`); `result`
 * sums them up. A failed run ends that tool's runs.
 */
interface ToolRunner {
  once(i: number, runs: number): Promise<boolean>;
  result(): ToolRun;
}

function airshadeRunner(n: number, demPath: string, site: string, haveTime: boolean): ToolRunner {
  const outPath = join(OUT_DIR, `airshade-floor-${n}.tif`);
  const args = [
    CLI,
    'floor',
    '--dem',
    demPath,
    '--site',
    site,
    '--mast-m',
    String(MAST_M),
    '--k',
    String(K_FACTOR),
    '--out',
    outPath,
    '--quiet',
    // The bench measures: it allows the machine's memory (the 8192² run's estimate, 1.7 GiB, is within the default).
    '--max-memory',
    `${Math.floor(os.totalmem() / 2 ** 20)}M`,
  ];
  const walls: number[] = [];
  let best: { wallS: number; peak: number | null; ground?: number; viaTsx: boolean } | null = null;
  let failed = false;
  return {
    async once(i, runs) {
      progress(`${n}²: airshade floor, run ${i + 1}/${runs}…`);
      // Others may edit the sources while the bench runs: rebuild so bin/airshade.mjs runs the built CLI.
      ensureBuilt(`${n}²`);
      const viaTsx = !builtCliFresh();
      // Under /usr/bin/time like gdal_viewshed: Linux keeps the peak resident set across fork and exec, so a child
      // spawned straight from this script would report at least this script's own (references and all: 500–800 MiB
      // here), whatever it used itself. /usr/bin/time is a small parent.
      const r = haveTime
        ? await runTimed('/usr/bin/time', ['-v', process.execPath, ...args])
        : await runTimed(process.execPath, args);
      if (r.code !== 0) {
        progress(`${n}²: airshade floor failed (exit ${r.code}):\n${r.stderr}${r.stdout}`);
        failed = true;
        return false;
      }
      const kb = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr);
      const printed = /peak memory (\d+) MiB/.exec(r.stdout);
      const peak = kb ? [kb[0], String(Math.round(Number(kb[1]) / 1024))] : printed;
      const ground = /ground (-?[\d.]+) m \+ mast/.exec(r.stdout);
      walls.push(r.wallS);
      progress(
        `${n}²: airshade floor, run ${i + 1}: ${r.wallS.toFixed(2)} s, ${peak ? peak[1] : '?'} MiB` +
          (viaTsx ? ' (through tsx)' : ''),
      );
      if (!best || r.wallS < best.wallS) {
        best = {
          wallS: r.wallS,
          peak: peak ? Number(peak[1]) : null,
          ground: ground ? Number(ground[1]) : undefined,
          viaTsx,
        };
      }
      return true;
    },
    result() {
      if (failed || best === null) return failedRun('Airshade', walls, outPath);
      return {
        tool: 'Airshade',
        ok: true,
        wallS: best.wallS,
        allWallS: walls,
        peakMiB: best.peak,
        outPath,
        groundM: best.ground,
        note: best.viaTsx ? 'ran through tsx: sources newer than dist/cli' : undefined,
      };
    },
  };
}

function gdalRunner(n: number, demPath: string, haveTime: boolean): ToolRunner {
  const outPath = join(OUT_DIR, `gdal-viewshed-${n}.tif`);
  // The observer at the centre of the centre cell, in projected coordinates.
  const c0 = n / 2;
  const g = demGeo(n);
  const ox = g.originX + (c0 + 0.5) * g.pixelX;
  const oy = g.originY + (c0 + 0.5) * g.pixelY;
  const gdalArgs = ['-om', 'DEM', '-cc', String(GDAL_CC), '-oz', String(MAST_M)];
  gdalArgs.push('-ox', String(ox), '-oy', String(oy), '-q', demPath, outPath);
  const walls: number[] = [];
  let best: { wallS: number; peak: number | null } | null = null;
  let failed = false;
  return {
    async once(i, runs) {
      progress(`${n}²: gdal_viewshed, run ${i + 1}/${runs}…`);
      const r = haveTime
        ? await runTimed('/usr/bin/time', ['-v', 'gdal_viewshed', ...gdalArgs])
        : await runTimed('gdal_viewshed', gdalArgs);
      if (r.code !== 0) {
        progress(`${n}²: gdal_viewshed failed (exit ${r.code}):\n${r.stderr}${r.stdout}`);
        failed = true;
        return false;
      }
      const kb = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr);
      const peak = kb ? Number(kb[1]) / 1024 : null;
      walls.push(r.wallS);
      progress(`${n}²: gdal_viewshed, run ${i + 1}: ${r.wallS.toFixed(2)} s, ${peak?.toFixed(0) ?? '—'} MiB`);
      if (!best || r.wallS < best.wallS) best = { wallS: r.wallS, peak };
      return true;
    },
    result() {
      if (failed || best === null) return failedRun('gdal_viewshed', walls, outPath);
      return {
        tool: 'gdal_viewshed',
        ok: true,
        wallS: best.wallS,
        allWallS: walls,
        peakMiB: best.peak,
        outPath,
      };
    },
  };
}

/** A tool whose run failed: its runs so far, no best. */
function failedRun(tool: string, walls: number[], outPath: string): ToolRun {
  return { tool, ok: false, wallS: NaN, allWallS: walls, peakMiB: null, outPath, note: 'failed' };
}

/**
 * The two tools' runs alternating, in the order A B B A A B … (each tool first in half of the pairs), so that a
 * slow or fast spell of the machine, or what one run leaves behind for the next (freed memory, a replaced output's
 * pages), falls on both alike.
 */
async function runBoth(runners: readonly ToolRunner[], runs: number): Promise<ToolRun[]> {
  const going = runners.map(() => true);
  for (let i = 0; i < runs; i++) {
    const order = i % 2 === 0 ? runners.map((_, k) => k) : runners.map((_, k) => runners.length - 1 - k);
    for (const k of order) if (going[k]) going[k] = await runners[k].once(i, runs);
  }
  return runners.map((r) => r.result());
}

/** A reference floor on the sampled cells. */
interface Reference {
  /** Floor, clamped to the ground. */
  floor: Float64Array;
  /** The unclamped floor lies above the ground (the cell is shadowed at ground level). */
  shadowed: Uint8Array;
  count: number;
  seconds: number;
}

interface Sample {
  /** Cell indices (r * n + c). */
  cells: Int32Array;
  ground: Float32Array;
  /** test/reference/raywalk.ts: planar grid distances, parabolic drop (gdal's model too). */
  planar: Reference;
  /** bench/raywalk-sphere.ts: ground distances, exact effective sphere (Airshade's model). */
  sphere: Reference;
}

function referenceOn(
  cells: Int32Array,
  ground: Float32Array,
  n: number,
  f: (c: number, r: number) => number,
) {
  const floor = new Float64Array(cells.length);
  const shadowed = new Uint8Array(cells.length);
  let count = 0;
  const t0 = performance.now();
  for (let k = 0; k < cells.length; k++) {
    const i = cells[k];
    const v = f(i % n, Math.floor(i / n));
    floor[k] = Math.max(v, ground[k]);
    shadowed[k] = v > ground[k] ? 1 : 0;
    count += shadowed[k];
  }
  return { floor, shadowed, count, seconds: (performance.now() - t0) / 1000 };
}

function sampleReference(n: number, data: Float32Array, count: number, latDeg: number): Sample {
  const c0 = n / 2;
  const r0 = n / 2;
  const inp: RayWalkInput = {
    data,
    width: n,
    height: n,
    pixelM: PIXEL_M,
    ox: c0 + 0.5,
    oy: r0 + 0.5,
    antennaAltM: data[r0 * n + c0] + MAST_M,
    reM: EFFECTIVE_RADIUS_M,
  };
  const rng = makeRng(0x5eed + n);
  const picked = new Set<number>();
  const observer = r0 * n + c0;
  while (picked.size < Math.min(count, n * n - 1)) {
    const i = Math.floor(rng() * n * n);
    if (i !== observer) picked.add(i);
  }
  const cells = Int32Array.from(picked);
  const ground = new Float32Array(cells.length);
  for (let k = 0; k < cells.length; k++) ground[k] = data[cells[k]];
  const s2 = Math.sin((latDeg * Math.PI) / 180) ** 2;
  const sph: SphereRayWalkInput = {
    ...inp,
    x0M: demGeo(n).originX - UTM_FALSE_EASTING_M,
    k0: UTM_K0,
    rhoNuM2: (WGS84_A_M * WGS84_A_M * (1 - WGS84_E2)) / (1 - WGS84_E2 * s2) ** 2,
  };
  return {
    cells,
    ground,
    planar: referenceOn(cells, ground, n, (c, r) => rayWalkFloor(inp, c, r)),
    sphere: referenceOn(cells, ground, n, (c, r) => sphereRayWalkFloor(sph, c, r)),
  };
}

interface Accuracy {
  /** Share (0–1) of sampled cells whose visibility agrees with the reference, per altitude. */
  agree: number[];
  medianErrM: number;
  p95ErrM: number;
  /** Sampled cells with no value (NaN / nodata) in the tool's output. */
  noValue: number;
}

/** Compares a tool's floor (clamped to the ground; no value = never visible) with the reference on the sample. */
function accuracy(out: Raster, s: Sample, reference: Reference): Accuracy {
  const agree = ALTITUDES_M.map(() => 0);
  const errs: number[] = [];
  let noValue = 0;
  for (let k = 0; k < s.cells.length; k++) {
    const v = out.data[s.cells[k]];
    const missing = Number.isNaN(v);
    if (missing) noValue++;
    const g = s.ground[k];
    const floor = missing ? Infinity : Math.max(v, g);
    const ref = reference.floor[k];
    for (let a = 0; a < ALTITUDES_M.length; a++) {
      const alt = ALTITUDES_M[a];
      const visTool = alt >= g && alt >= floor;
      const visRef = alt >= g && alt >= ref;
      if (visTool === visRef) agree[a]++;
    }
    if (reference.shadowed[k] && !missing) errs.push(Math.abs(floor - ref));
  }
  const sorted = Float64Array.from(errs).sort();
  return {
    agree: agree.map((x) => x / s.cells.length),
    medianErrM: quantile(sorted, 0.5),
    p95ErrM: quantile(sorted, 0.95),
    noValue,
  };
}

// --- Main --------------------------------------------------------------------------------------------------

interface Row {
  n: number;
  run: ToolRun;
  /** Against the planar and the spherical reference. */
  acc: { planar: Accuracy; sphere: Accuracy } | null;
}

const accuracies = (out: Raster, s: Sample) => ({
  planar: accuracy(out, s, s.planar),
  sphere: accuracy(out, s, s.sphere),
});

/** Rebuilds dist/cli when sources changed since (others may edit the tree while the bench runs). */
function ensureBuilt(label: string): void {
  if (builtCliFresh()) return;
  progress(`${label}: sources are newer than dist/cli; rebuilding (npm run build)…`);
  const r = spawnSync('npm', ['run', 'build', '--silent'], { cwd: ROOT, encoding: 'utf8' });
  if (r.status !== 0)
    progress(`${label}: build failed; the CLI will run through tsx:\n${r.stderr}${r.stdout}`);
}

async function main(): Promise<void> {
  const sizes = (argValue('sizes') ?? '1024,4096,8192').split(',').map(Number);
  const runs = Number(argValue('runs') ?? 2);
  for (const n of sizes) {
    if (!Number.isInteger(n) || n < 16 || n % 2 !== 0)
      throw new Error(`--sizes: "${n}" is not an even size ≥ 16`);
  }
  if (!Number.isInteger(runs) || runs < 1) throw new Error(`--runs: "${runs}" is not a whole number ≥ 1`);
  mkdirSync(OUT_DIR, { recursive: true });

  if (!builtCliFresh()) {
    progress(
      'WARNING: dist/cli is missing or older than the sources: the CLI runs through tsx (slower start).',
    );
    progress('         Run `npm run bench` (it builds first) for representative times.');
  }

  const gdalVersion = gdalViewshedVersion();
  const haveTime = existsSync('/usr/bin/time') && spawnSync('/usr/bin/time', ['--version']).status === 0;
  if (!gdalVersion)
    progress('gdal_viewshed not found: only Airshade is measured (apt-get install -y gdal-bin).');
  else if (!haveTime) progress('/usr/bin/time not found: gdal_viewshed peak memory is reported as —.');

  const loadStart = os.loadavg();
  const toUtm = proj4('WGS84', UTM_26S);
  const rows: Row[] = [];
  const sampleNotes: string[] = [];
  const neighbourNotes: string[] = [];
  for (const n of sizes) {
    const { path: demPath, data } = await ensureDem(n);
    const c0 = n / 2;
    const g = demGeo(n);
    const [lon, lat] = toUtm.inverse([g.originX + (c0 + 0.5) * PIXEL_M, g.originY - (c0 + 0.5) * PIXEL_M]);
    const site = `${lon.toFixed(9)},${lat.toFixed(9)}`;
    const groundC = data[c0 * n + c0];

    progress(`${n}²: ray-walk references on ${SAMPLES[n] ?? 10_000} sampled cells…`);
    const sample = sampleReference(n, data, SAMPLES[n] ?? 10_000, lat);
    const { planar: pl, sphere: sp } = sample;
    progress(
      `${n}²: references done in ${pl.seconds.toFixed(1)} + ${sp.seconds.toFixed(1)} s ` +
        `(${pl.count} / ${sp.count} shadowed at ground level)`,
    );
    sampleNotes.push(
      `${n}²: ${sample.cells.length} cells sampled (seed ${0x5eed + n}), ${pl.count} (planar) / ${sp.count} ` +
        `(sphere) with the reference floor above the ground; antenna ground ${groundC.toFixed(1)} m + ${MAST_M} m ` +
        `mast at cell (${c0}, ${c0}) = ${lon.toFixed(6)}, ${lat.toFixed(6)}; the references took ` +
        `${pl.seconds.toFixed(1)} + ${sp.seconds.toFixed(1)} s`,
    );

    const [air, gd] = await runBoth(
      [
        airshadeRunner(n, demPath, site, haveTime),
        ...(gdalVersion ? [gdalRunner(n, demPath, haveTime)] : []),
      ],
      runs,
    );
    if (air.ok && air.groundM !== undefined && Math.abs(air.groundM - groundC) > 0.05) {
      progress(
        `${n}²: WARNING Airshade reports antenna ground ${air.groundM} m, the centre cell holds ${groundC}`,
      );
    }
    let acc: Row['acc'] = null;
    if (air.ok) {
      progress(`${n}²: reading ${relative(ROOT, air.outPath)}…`);
      acc = accuracies(await readRaster(air.outPath), sample);
    }
    rows.push({ n, run: air, acc });

    if (gd !== undefined) {
      let gacc: Row['acc'] = null;
      if (gd.ok) {
        progress(`${n}²: reading ${relative(ROOT, gd.outPath)}…`);
        const out = await readRaster(gd.outPath);
        if (out.width !== n || out.height !== n)
          throw new Error(`${gd.outPath}: ${out.width} × ${out.height}`);
        gacc = accuracies(out, sample);
        // The observer's 8 neighbours, where GDAL 3.6 is known to go wrong (see the notes).
        const vals: string[] = [];
        for (let dr = -1; dr <= 1; dr++) {
          for (let dc = -1; dc <= 1; dc++) {
            if (dr === 0 && dc === 0) continue;
            const i = (c0 + dr) * n + c0 + dc;
            vals.push(`${out.data[i].toFixed(2)}/${data[i].toFixed(2)}`);
          }
        }
        neighbourNotes.push(`${n}²: ${vals.join(', ')}`);
      }
      rows.push({ n, run: gd, acc: gacc });
    }
  }

  // --- Report ---
  const cpus = os.cpus();
  const fmtPct = (x: number): string => (100 * x).toFixed(3) + ' %';
  const errCols = ' | median \\|err\\| m | p95 \\|err\\| m |';
  const agreeCols = ALTITUDES_M.map((a) => `agree @${a} m`).join(' | ');
  const header = `| DEM | tool | wall s (best of ${runs}) | peak MiB | cells/s | ${agreeCols}${errCols}`;
  const sep = '|' + ' --- |'.repeat(5 + ALTITUDES_M.length + 2);
  const headerSphere = `| DEM | tool | ${agreeCols}${errCols}`;
  const sepSphere = '|' + ' --- |'.repeat(2 + ALTITUDES_M.length + 2);
  const accCols = (acc: Accuracy | undefined): string => {
    const agree = ALTITUDES_M.map((_, a) => (acc ? fmtPct(acc.agree[a]) : '—'));
    const med = acc ? acc.medianErrM.toFixed(2) : '—';
    const p95 = acc ? acc.p95ErrM.toFixed(2) : '—';
    return `${agree.join(' | ')} | ${med} | ${p95} |`;
  };
  const toolName = (run: ToolRun): string => (run.note && run.ok ? `${run.tool} (${run.note})` : run.tool);
  const lines = rows.map(({ n, run, acc }) => {
    const wall = run.ok ? run.wallS.toFixed(2) : 'failed';
    const peak = run.peakMiB === null ? '—' : run.peakMiB.toFixed(0);
    const rate = run.ok
      ? `${(n * n) / run.wallS / 1e6 >= 10 ? ((n * n) / run.wallS / 1e6).toFixed(0) : ((n * n) / run.wallS / 1e6).toFixed(2)} M`
      : '—';
    return `| ${n}² | ${toolName(run)} | ${wall} | ${peak} | ${rate} | ${accCols(acc?.planar)}`;
  });
  const linesSphere = rows.map(({ n, run, acc }) => `| ${n}² | ${toolName(run)} | ${accCols(acc?.sphere)}`);

  const nodataNotes = rows
    .filter((r) => r.acc && r.acc.planar.noValue > 0)
    .map(
      (r) =>
        `${r.n}² ${r.run.tool}: ${r.acc!.planar.noValue} sampled cells without a value (counted as never visible)`,
    );
  const allTimes = rows
    .filter((r) => r.run.ok)
    .map(
      (r) =>
        `${r.n}² ${r.run.tool}: ${r.run.allWallS.map((t) => t.toFixed(2)).join(' / ')} s ` +
        `(median ${median(r.run.allWallS).toFixed(2)} s)`,
    );
  // Ratio of medians, Airshade over gdal_viewshed, per size: the figure to compare across machines.
  const ratios = sizes.flatMap((n) => {
    const a = rows.find((r) => r.n === n && r.run.tool === 'Airshade' && r.run.ok);
    const g = rows.find((r) => r.n === n && r.run.tool === 'gdal_viewshed' && r.run.ok);
    return a && g ? [`${n}²: ${(median(a.run.allWallS) / median(g.run.allWallS)).toFixed(2)}×`] : [];
  });

  const md = [
    '# `airshade floor` benchmark',
    '',
    'Accuracy against the exact R3 ray walk of test/reference/raywalk.ts (planar grid distances, parabolic earth ' +
      'drop d²/(2Re): the model gdal_viewshed uses):',
    '',
    header,
    sep,
    ...lines,
    '',
    'The same outputs against bench/raywalk-sphere.ts: the same R3 walk with ground (geodesic) distances and the ' +
      "exact effective-sphere geometry, the model Airshade's engine uses (see the notes):",
    '',
    headerSphere,
    sepSphere,
    ...linesSphere,
    '',
    '## Machine',
    '',
    `- CPU: ${cpus.length} × ${cpus[0]?.model ?? 'unknown'}; RAM ${(os.totalmem() / 2 ** 30).toFixed(1)} GiB; ` +
      `${os.type()} ${os.release()}`,
    `- Load average when the bench started (1 / 5 min): ${loadStart[0].toFixed(2)} / ${loadStart[1].toFixed(2)}` +
      ' (other processes on the same cores make the times pessimistic)',
    `- Node ${process.version}; ${gdalVersion ?? 'GDAL not installed (gdal_viewshed rows omitted)'}`,
    `- The native memory helper (worker/native/, built by \`npm install\`): ${
      loadMemoryHelper(ROOT, process.env) !== null
        ? 'loaded (huge pages for the raster, its pages handed back as the floor is written; Node starts once)'
        : "not loaded (the launcher starts Node again with glibc's huge-pages tunable; the write takes fresh memory)"
    }`,
    `- Reproduce: \`npm run bench\` (= \`npm run build && tsx bench/floor.ts\`)` +
      (sizes.join(',') === '1024,4096,8192' && runs === 2
        ? ''
        : ` with \`--sizes ${sizes.join(',')} --runs ${runs}\``),
    '',
    '## How it was measured',
    '',
    `- DEMs: ${PIXEL_M} m Float32 cells, EPSG:${EPSG} (UTM 26S), centred on E ${CENTRE_EASTING_M} / ` +
      `N ${CENTRE_NORTHING_M}; heights from our own generator (\`fillProjected\` on \`DEMO_WORLD\`, local-plane ` +
      `centre ${SCENE_X_M / 1000} km E, ${SCENE_Y_M / 1000} km N: invented land, lowland with hills, sea and ` +
      'ranges). Files in bench/out/, reused when present.',
    `- Antenna: the centre cell (n/2, n/2), ${MAST_M} m above its ground, whole raster. Airshade: ` +
      `\`node bin/airshade.mjs floor --dem … --site LON,LAT --mast-m ${MAST_M} --k ${K_FACTOR.toFixed(6)} ` +
      '--out … --quiet` (default threads: one per core). gdal_viewshed: ' +
      `\`gdal_viewshed -om DEM -cc ${GDAL_CC} -oz ${MAST_M} -ox X -oy Y -q in.tif out.tif\` with X, Y the ` +
      'centre of the same cell in projected metres.',
    `- Earth: gdal lowers heights by cc·d²/(2a) with a = ${WGS84_A_M} m (the CRS's semi-major axis) and ` +
      `cc = ${GDAL_CC}, i.e. an effective radius a/cc = ${(EFFECTIVE_RADIUS_M / 1000).toFixed(3)} km. Airshade's ` +
      `effective radius is k × 6371 km, so k = ${WGS84_A_M} / (${GDAL_CC} × ${AIRSHADE_R_M}) = ` +
      `${K_FACTOR.toFixed(6)} gives the same radius; the reference uses it too (reM = a / cc).`,
    `- Wall time: whole process, from spawn to exit (start-up, reading the DEM and writing the output ` +
      `included); each tool run ${runs}×, the two tools' runs alternating (A B B A …), the faster run is reported. All runs: ${allTimes.join('; ')}.` +
      (ratios.length > 0 ? ` Airshade / gdal_viewshed, ratio of medians: ${ratios.join(', ')}.` : ''),
    '- Peak memory: both tools run under `/usr/bin/time -v` (Debian package `time`) and its "Maximum resident set ' +
      'size" is reported (worker threads included). Not the figure a child spawned straight from this script would ' +
      "print: Linux keeps the peak resident set across fork and exec, so it would include this script's own. " +
      "Without /usr/bin/time, Airshade's printed figure is used (read it as an upper bound) and gdal_viewshed's is —.",
    '- Accuracy: against the exact R3 ray walk (Franklin & Ray 1994; test/reference/raywalk.ts) on a seeded ' +
      'uniform random sample of target cells (the observer cell excluded), antenna altitude = ground of the ' +
      `centre cell + ${MAST_M} m, reM = a / cc. All floors are clamped to the ground first (gdal's -om DEM value ` +
      'is max(0, lowest line-of-sight altitude) and is treated as a floor the same way). A target at altitude h ' +
      'is visible iff h ≥ ground and h ≥ floor; "agree" is the share of sampled cells where the tool and the ' +
      'reference say the same at h. |err| = |floor − reference floor| over sampled cells where the reference ' +
      'floor is above the ground. Outputs are read raw with geotiff.js (no void filling).',
    ...sampleNotes.map((s) => `  - ${s}`),
    ...nodataNotes.map((s) => `  - ${s}`),
    '- Two earth models: the planar reference and gdal take planar grid distances and lower the terrain by ' +
      'd²/(2Re); Airshade takes WGS84 geodesic distances (0.02–0.04 % longer than grid distances on this UTM ' +
      'grid, scale 0.9996–0.9998) and the exact effective-sphere formula (worker/core/horizon.ts). At 100–170 km, ' +
      'where floors reach several km, the two models differ by a few metres of floor (the sphere is higher), so ' +
      'each tool is also scored against the reference of the other model. The visibility agreement barely moves; ' +
      'the floor errors grow with range for the tool whose model differs from the reference.',
    "- GDAL 3.6 gives the observer's 8 neighbours wrong heights (a known defect, fixed upstream since), which " +
      'can put phantom obstacles next to the antenna; nothing is excluded for it here. Its scan (Wang et al. ' +
      '2000) is also approximate away from the axes and diagonals. gdal_viewshed output / ground at the 8 ' +
      'neighbours (row by row, north first):',
    ...(neighbourNotes.length > 0 ? neighbourNotes.map((s) => `  - ${s}`) : ['  - (gdal_viewshed not run)']),
    '',
  ].join('\n');

  const resultsPath = join(OUT_DIR, 'floor-results.md');
  writeFileSync(resultsPath, md);
  process.stdout.write(md);
  progress(`written to ${relative(ROOT, resultsPath)}`);
}

main().catch((e: unknown) => {
  process.stderr.write(`[bench] failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}\n`);
  process.exitCode = 1;
});
