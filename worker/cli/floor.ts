/** `airshade floor`: the terrain-masking floor of one antenna as a Float32 GeoTIFF on the first DEM's grid. */
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { DEFAULT_K_FACTOR, EARTH_RADIUS_M, K_TEXT, kFactorProblem } from '../../shared/units.ts';
import {
  computeFloor,
  computeGridFloor,
  inlineExecutor,
  type FloorResult,
  type GridFloorResult,
} from '../core/floor.ts';
import { gridSweepFits, NEAR_CELLS } from '../core/grid-sweep.ts';
import { Terrain } from '../core/terrain.ts';
import type { GridAntenna } from '../core/geodesy.ts';
import { pixelsBetween, sameGrid, type GridGeo } from '../core/grid.ts';
import { encodeGeoTiffParts, geoTiffCrsProblem } from '../io/geotiff-write.ts';
import { undated } from '../io/provenance.ts';
import { memoryHelper } from '../runtime/native-memory.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { lonLatArg, numberArg, one, parseArgs, required, threadsArg } from './args.ts';
import { settleDeferredDigests, writeLargeOutputFile } from './files.ts';
import { checkOutput } from './out-check.ts';
import { checkEstimate, estimateRun, MEMORY_OPTION, memoryHelp, memoryLimitArg } from './budget-check.ts';
import { readTerrainWithin } from './dem-open.ts';
import { takeEarlyWorkers } from './floor-early.ts';
import { ProgressLine } from './progress.ts';
import { floorProvenance } from './provenance.ts';
import { checkWork, estimateWork, WORK_OPTION, workHelp, workLimitArg } from './work-check.ts';

export const FLOOR_HELP = `airshade floor — lowest line-of-sight altitude above every cell of a DEM

Usage:
  airshade floor --dem A.tif [--dem B.tif …] --site LON,LAT --mast-m H [--k 1.3333]
                 [--max-range-km R] --out floor.tif [--sweep auto|cells|radials] [--threads N]
                 [--max-memory SIZE] [--max-work-min M] [--quiet] [--debug]

Writes a Float32 GeoTIFF on the first DEM's grid and CRS: per cell, the lowest altitude above mean sea level
(metres) at which a target above that cell is in line of sight of the antenna — never below the ground there.
Cells beyond the range, or whose sight line crosses terrain no tile covers, are nodata (NaN). Pure terrain
masking on an effective earth of radius k × 6371 km: no sensor limits.

Options:
  --dem FILE          a GeoTIFF elevation tile (metres above mean sea level); repeat for a mosaic
  --site LON,LAT      antenna position, decimal degrees WGS84 (negative values are fine: --site -29.5,-41.2)
  --mast-m H          antenna height above the ground, metres (0–1000)
  --k K               effective-earth factor, 0.2–20 (default ${DEFAULT_K_FACTOR.toFixed(4)}, standard refraction;
                      beyond 20 or at 0 and below the ray follows the earth: ducting, refused)
  --max-range-km R    farthest range computed, more than 0 and at most 2000 km (default: the farthest cell of
                      the first DEM, at most 2000 km)
  --out FILE          output GeoTIFF
  --sweep S           how the terrain is sampled: "cells" sweeps the DEM's own cells outward from the antenna
                      (which stands at the centre of its cell), walking every row and column crossing within
                      ${NEAR_CELLS} cells and carrying the screening beyond; "radials" walks geodesic radials from the
                      exact site and resamples them onto the cells; "auto" (default) takes cells where straight
                      lines on the DEM's grid follow geodesics (projected DEMs; geographic ones over a short reach)
  --threads N         worker threads, 0 to the machine's cores (default: one per core, but the main thread alone
                      for a DEM of fewer than 2048 × 2048 cells swept over its cells; 0 = the main thread)
${memoryHelp(22)}
${workHelp(22)}
  --quiet             no progress line
  --debug             show stack traces on errors
`;

/** Below this many terrain cells the sweep over the cells runs on the main thread by default (see floorCommand). */
const SMALL_SWEEP_CELLS = 2 ** 22;

const SPEC = {
  dem: { value: true, repeat: true },
  site: { value: true },
  'mast-m': { value: true },
  k: { value: true },
  'max-range-km': { value: true },
  out: { value: true },
  sweep: { value: true },
  threads: { value: true },
  ...MEMORY_OPTION,
  ...WORK_OPTION,
  quiet: {},
  debug: {},
  help: {},
} as const;

export async function floorCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'floor');
  if (p.flags.has('help')) {
    log(FLOOR_HELP);
    return 0;
  }
  if (p.positional.length > 0) {
    throw new InputError(
      `argument ${JSON.stringify(p.positional[0])}`,
      'an argument that is not an option',
      'only options (see airshade floor --help)',
    );
  }
  const dems = p.values.get('dem') ?? [];
  if (dems.length === 0) throw new InputError('--dem', 'no DEM given', 'at least one --dem FILE.tif');
  const site = lonLatArg('site', required(p, 'site', 'the antenna position as --site LON,LAT'));
  const mastM = numberArg(
    'mast-m',
    required(p, 'mast-m', 'the antenna height above ground in metres'),
    0,
    1000,
    'an antenna height above ground from 0 to 1000 m',
  );
  const kText = one(p, 'k');
  const kFactor = kText === undefined ? DEFAULT_K_FACTOR : kFactorArg(kText);
  const rangeText = one(p, 'max-range-km');
  const maxRangeKm =
    rangeText === undefined
      ? undefined
      : numberArg('max-range-km', rangeText, 0, 2000, 'a range in km, more than 0 and at most 2000', true);
  const maxRangeM = maxRangeKm === undefined ? undefined : maxRangeKm * 1000;
  const outPath = required(p, 'out', 'the output GeoTIFF path');
  const sweepGiven = one(p, 'sweep') ?? 'auto';
  if (sweepGiven !== 'auto' && sweepGiven !== 'cells' && sweepGiven !== 'radials')
    throw new InputError('--sweep', JSON.stringify(sweepGiven), '"auto", "cells" or "radials"');
  const sweepText: 'auto' | 'cells' | 'radials' = sweepGiven;
  const threadsGiven = one(p, 'threads') !== undefined;
  let threads = threadsArg(p, NodePool.defaultSize());
  const memoryLimit = memoryLimitArg(p);
  const workLimitMin = workLimitArg(p);
  checkOutput(outPath, 'file', dems);

  const started = performance.now();
  const progress = new ProgressLine('floor', p.flags.has('quiet'));
  progress.update(0, 'reading terrain');
  // Worker threads for a sweep, and whether this thread works as one more lane.
  const lanes = (m: SweepChoice, cells: number) => {
    // A small DEM swept over its cells runs on this thread alone unless --threads says otherwise: a worker takes
    // about 0.07 s to start and one thread sweeps 2^22 cells in about 0.16 s (35–43 ns a cell at 8192²), so below
    // that the second lane saves less than it costs (1024²: 0.49–0.51 s inline against 0.57–0.64 s with one
    // worker, whole process, three runs each; 4096²: 1.40–1.49 s with it against 1.56–1.76 s inline).
    const n = !threadsGiven && m.sweep === 'cells' && cells < SMALL_SWEEP_CELLS ? 0 : threads;
    // The sweep over the cells takes this thread as one of its lanes: one worker thread less in memory for the
    // same parallelism (RemotePool.sharingExecutor). The radial sweep keeps a worker per thread.
    const sharing = m.sweep === 'cells' && n > 1;
    return { threads: n, sharing, workers: sharing ? n - 1 : n };
  };
  // One DEM: its header says how many workers the sweep takes, and they start loading on their own threads while
  // this one reads the pixels (about 0.07 s saved at 8192²). Kept if the choice after the read is the same. Until
  // then any failure closes them (`orClose`): running workers would hold the process open.
  let booted = null as NodePool | null;
  let pool: NodePool | null = null;
  let antenna: { geo: GridGeo; built: Promise<GridAntenna | null> } | undefined;
  let touchStop: Int32Array | null = null;
  const orClose = async <T>(step: () => T | Promise<T>): Promise<T> => {
    try {
      return await step();
    } catch (e) {
      await booted?.close();
      booted = null;
      throw e;
    }
  };
  // Fused read: headers first, then each tile decoded straight into the mosaic's one (shared) buffer.
  const {
    terrain,
    largest,
    firstGeo: outGeo,
  } = await orClose(() =>
    readTerrainWithin(dems, memoryLimit, {
      shared: threads > 0,
      // One tile is the whole mosaic: its header alone gives the memory estimate, so a run too large is refused
      // before its pixels are decoded (with more tiles the mosaic's extent is known once it is planned: after).
      beforeDecode: (opened) => {
        const { tiles, largest } = opened;
        if (tiles.length !== 1) return;
        const g = tiles[0].geo;
        const { px, sitePixel } = siteOnGrid(g, site);
        // An antenna off the tile is refused after the read, by the site check, naming --site.
        const onTile =
          sitePixel.col >= 0 && sitePixel.col <= g.width && sitePixel.row >= 0 && sitePixel.row <= g.height;
        if (onTile && [px.x, px.y].every(Number.isFinite)) {
          const method = chooseSweep(sweepText, g, site, px, sitePixel, maxRangeM, true);
          checkFloorMemory({
            method,
            terrainPixels: g.width * g.height,
            outGeo: g,
            px,
            sitePixel,
            maxRangeM,
            largest,
            memoryLimit,
          });
          const { workers } = lanes(method, g.width * g.height);
          if (workers > 0) {
            booted = takeEarlyWorkers(workers) ?? NodePool.boot(workers);
            // The DEM's SHA-256 (for the provenance) is taken on a worker while this thread writes the floor, not
            // here as the pixels come in (about 0.17 s at 8192²): the read hands it on (files.ts `deferDigest`).
            opened.deferDigests();
            // The sweep over the cells needs the antenna's vector map (its geodesics: about 0.18 s at 8192², cold
            // code). A worker builds it from the header while this thread reads the pixels; a closed pool or a
            // failure gives null, and the sweep builds it itself.
            if (method.sweep === 'cells') {
              antenna = {
                geo: g,
                built: booted.gridAntenna(g, site.lon, site.lat).catch(() => null),
              };
            }
          }
        }
      },
      // While this thread reads the pixels, the first worker (once the vector map is built) touches the raster's
      // pages from its end: on these VMs first touching memory that was given back to the host costs a fault on
      // the host, and the two threads then take those faults side by side. It stops when the read is done.
      // (readTerrainWithin has asked for huge pages for the raster already, where the native helper loads.)
      onRaster: (data) => {
        if (booted === null || !(data.buffer instanceof SharedArrayBuffer)) return;
        touchStop = new Int32Array(new SharedArrayBuffer(4));
        booted.touchPages(data.buffer, touchStop.buffer as SharedArrayBuffer).catch(() => 0);
      },
    }),
  );
  if (touchStop !== null) Atomics.store(touchStop, 0, 1);
  const tRead = performance.now();
  // How the terrain is swept and on how many threads, and the checks before the long work.
  const settle = () => {
    const window = latticeWindow(terrain, outGeo);
    const wholeTerrain =
      window.col0 === 0 &&
      window.row0 === 0 &&
      window.width === terrain.geo.width &&
      window.height === terrain.geo.height;
    const method = chooseSweep(
      sweepText,
      terrain.geo,
      site,
      terrain.metresPerPixel(site.lon, site.lat),
      siteOnGrid(terrain.geo, site).sitePixel,
      maxRangeM,
      wholeTerrain,
    );
    const chosen = lanes(method, terrain.geo.width * terrain.geo.height);
    threads = chosen.threads;
    checkFloorRun(terrain, outGeo, site, maxRangeM, largest, memoryLimit, method, {
      threads,
      limitMin: workLimitMin,
    });
    // The output is written on the first DEM's CRS: make sure it can be, before the long work.
    const crsProblem = geoTiffCrsProblem(outGeo.crs);
    if (crsProblem !== undefined) {
      throw new InputError(dems[0], crsProblem, 'a DEM whose CRS can be written back as GeoTIFF keys');
    }
    return { window, method, chosen };
  };
  const { window, method, chosen } = await orClose(settle);
  const { sharing, workers } = chosen;
  let tReady = 0;
  let result: { kind: 'radials'; r: FloorResult } | { kind: 'cells'; r: GridFloorResult };
  try {
    if (booted !== null && booted.size === workers) {
      pool = booted;
      booted = null;
      await pool.install(terrain.toParts());
    } else {
      // (The antenna asked of them never comes from a closed pool: the sweep builds it.)
      antenna = undefined;
      await booted?.close();
      booted = null;
      if (workers > 0) pool = await NodePool.start(workers, terrain.toParts());
    }
    tReady = performance.now();
    const exec = pool
      ? sharing
        ? pool.sharingExecutor(inlineExecutor(terrain))
        : pool.executor()
      : inlineExecutor(terrain);
    const req = { lon: site.lon, lat: site.lat, mastM, kFactor, maxRangeM };
    result =
      method.sweep === 'cells'
        ? {
            kind: 'cells',
            r: await computeGridFloor(terrain, req, { ...window, inPlace: method.inPlace }, exec, {
              onProgress: progress.update,
              ...(antenna !== undefined && sameGrid(antenna.geo, terrain.geo)
                ? { antenna: antenna.built }
                : {}),
            }),
          }
        : {
            kind: 'radials',
            r: await computeFloor(terrain, req, outGeo, windowOf(terrain, outGeo), exec, {
              onProgress: progress.update,
            }),
          };
  } catch (e) {
    await pool?.close();
    throw e;
  }
  // The DEM's digest, if its read handed it on: the first worker (idle now) reads the file again while this thread
  // writes the floor; settleDeferredDigests checks that it is the same file, unchanged (or reads it here when no
  // worker can). The workers close once it is in.
  const digestPool = pool;
  const digested = settleDeferredDigests(dems, (path) =>
    digestPool !== null ? digestPool.fileDigest(path) : Promise.resolve(null),
  );
  const closed = digested.catch(() => {}).then(() => digestPool?.close());
  progress.update(1, 'writing');
  const tComputed = performance.now();
  // No date in the raster: the same inputs give the same bytes (the file's time says when).
  const encode = (digest?: (file: string) => string): [Uint8Array, Uint8Array] =>
    encodeGeoTiffParts({
      geo: outGeo,
      data: result.r.floor,
      nodata: NaN,
      description: CAUTION,
      provenance: undated(
        floorProvenance(
          p,
          SPEC,
          dems,
          { antenna: { lon: site.lon, lat: site.lat, mastM }, kFactor, maxRangeKm },
          digest,
        ),
      ),
    });
  // The floor's own buffer (no copy of the raster), flushed to the disk as it goes in, then the header, which
  // waits for the digest: its length is the same with any digest (64 hex digits), so a stand-in sizes it. With the
  // native helper, the raster's pages go back to the kernel as they are written (nothing reads the floor after
  // this: its statistics are taken), and the file's page cache takes them warm: 0.43–0.49 s of writes became
  // 0.05–0.07 s at 8192².
  const [standIn, pixels] = encode(() => '0'.repeat(64));
  const helper = memoryHelper();
  try {
    await writeLargeOutputFile(
      outPath,
      [pixels],
      outPath,
      {
        bytes: standIn.byteLength,
        make: async () => {
          await digested;
          return encode()[0];
        },
      },
      helper === null ? undefined : (part, from, to) => helper.release(part, from, to),
    );
  } finally {
    await closed;
  }
  const tWritten = performance.now();
  progress.done();
  const s = result.r.stats;
  const sec = (ms: number) => `${(ms / 1000).toFixed(2)} s`;
  const pct = (n: number) => `${((100 * n) / s.cells).toFixed(1)} %`;
  let sampling: string;
  let stages: string;
  if (result.kind === 'cells') {
    const g = result.r.stats;
    const reach = `out to ${(g.maxRangeM / 1000).toFixed(1)} km${maxRangeM === undefined ? ' (the farthest cell)' : ''}`;
    sampling = `the DEM's own cells, ${reach}: every row and column crossing within ${NEAR_CELLS} cells of the antenna, the screening carried beyond; antenna at the centre of cell (column ${g.col}, row ${g.row})${method.inPlace ? '; floor written over the terrain buffer' : ''}`;
    stages = `sweep ${sec(g.sweepMs)}`;
  } else {
    const L = result.r.horizon.layout;
    sampling = `${result.r.stats.radials} geodesic radials at the outer range, step ${L.rangeStepM.toFixed(1)} m, out to ${(L.maxRangeM / 1000).toFixed(1)} km, resampled onto the cells`;
    stages = `sweep ${sec(result.r.stats.sweepMs)}, resample ${sec(result.r.stats.resampleMs)}`;
  }
  log(
    [
      `floor written to ${outPath} (${outGeo.width} × ${outGeo.height} cells, ${outGeo.crs.label})`,
      `  antenna      ${site.lon.toFixed(5)}, ${site.lat.toFixed(5)}: ground ${s.groundM.toFixed(1)} m + mast ${mastM} m = ${s.antennaAltM.toFixed(1)} m AMSL`,
      `  earth        k = ${kFactor.toFixed(4)}, effective radius ${((kFactor * EARTH_RADIUS_M) / 1000).toFixed(1)} km (R = 6371 km)`,
      `  sampling     ${sampling}${method.why ? ` (${method.why})` : ''}`,
      `  cells        ${pct(s.valued)} with a floor, ${pct(s.beyondRange)} beyond range, ${pct(s.unknown)} behind or on unknown terrain`,
      ...terrain.warnings.map((w) => `  warning      ${w}`),
      `  stages       read into the mosaic ${sec(tRead - started)}, workers ${sec(tReady - tRead)}, ${stages}, write ${sec(tWritten - tComputed)}`,
      `  time         ${((performance.now() - started) / 1000).toFixed(2)} s, peak memory ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB`,
    ].join('\n'),
  );
  log(CAUTION);
  return 0;
}

/**
 * Before the sweep: the antenna stands on the terrain (else `--site` is to blame, not the range), and the run fits
 * the memory limit (the horizon grows with the range squared over the pixel squared).
 */
function checkFloorRun(
  terrain: Terrain,
  outGeo: GridGeo,
  site: { lon: number; lat: number },
  maxRangeM: number | undefined,
  largest: Parameters<typeof estimateRun>[0]['largestTile'],
  memoryLimit: number,
  method: SweepChoice,
  work: { threads: number; limitMin: number },
): void {
  if (!Number.isFinite(terrain.sampleLonLat(site.lon, site.lat))) {
    const b = terrain.geo;
    throw new InputError(
      '--site',
      `${site.lon},${site.lat}, outside the DEM tiles (${terrain.sources.length} tile(s) of ${b.width} × ${b.height} pixels)`,
      'an antenna position on the loaded terrain (LON,LAT in degrees)',
    );
  }
  const px = terrain.metresPerPixel(site.lon, site.lat);
  const terrainPixels = terrain.geo.width * terrain.geo.height;
  const { reachM, pixelM, rangeBlame } = checkFloorMemory({
    method,
    terrainPixels,
    outGeo,
    px,
    sitePixel: siteOnGrid(outGeo, site).sitePixel,
    maxRangeM,
    largest,
    memoryLimit,
  });
  // In time, the radial sweep's bound (budget-check.ts) and the resample onto the DEM's cells: the sweep over the
  // cells does less per cell than both, so the bound holds for it too.
  const workEst = estimateWork({
    sweeps: [{ reachM, rangeStepM: 0.75 * pixelM, arcStepM: 1.5 * pixelM }],
    terrainAreaM2: terrainPixels * px.x * px.y,
    cells: outGeo.width * outGeo.height,
    sites: 1,
    pairs: 0,
    targets: 1,
    levels: 0,
    threads: work.threads,
  });
  checkWork(workEst, work.limitMin, { sweeps: rangeBlame, cells: '--dem' });
}

/**
 * The run's memory against the limit, from the mosaic's size in pixels, the first DEM's grid (`outGeo`) and the
 * ground size of a pixel at the antenna (`px`): the horizon grows with the range squared over the pixel squared.
 */
function checkFloorMemory(run: {
  method: SweepChoice;
  terrainPixels: number;
  outGeo: GridGeo;
  px: { x: number; y: number };
  maxRangeM: number | undefined;
  largest: Parameters<typeof estimateRun>[0]['largestTile'];
  memoryLimit: number;
  /** The antenna in (continuous) pixel coordinates of `outGeo`. */
  sitePixel: { col: number; row: number };
}): { reachM: number; pixelM: number; rangeBlame: string } {
  const { method, terrainPixels, outGeo, px, maxRangeM, largest, memoryLimit, sitePixel } = run;
  const pixelM = Math.min(px.x, px.y);
  // The default range reaches the farthest cell of the first DEM: the farthest of its corners from the antenna.
  let farthestM = 0;
  for (const cx of [0, outGeo.width])
    for (const cy of [0, outGeo.height])
      farthestM = Math.max(farthestM, Math.hypot((cx - sitePixel.col) * px.x, (cy - sitePixel.row) * px.y));
  const reachM = Math.min(maxRangeM ?? farthestM, 2_000_000);
  const est = estimateRun({
    terrainPixels,
    largestTile: largest,
    cells: outGeo.width * outGeo.height,
    sites: 1,
    pairs: 0,
    levels: 0,
    targets: 1,
    volumes: 0,
    reachM,
    rangeStepM: 0.75 * pixelM,
    arcStepM: 1.5 * pixelM,
    // The radial sweep keeps a horizon, the floor and the ground under it (Float32 each) per output cell; the
    // sweep over the cells keeps only small per-line buffers, and the floor (none when it is written in place).
    horizonsInFlight: method.sweep === 'radials' ? 1 : 0,
    gridBytesPerCell: method.sweep === 'radials' ? 8 : method.inPlace ? 0 : 4,
    streamedTiles: true,
  });
  const rangeBlame =
    maxRangeM === undefined
      ? '--dem (the range reaches its farthest cell; see --max-range-km)'
      : '--max-range-km';
  checkEstimate(est, memoryLimit, {
    terrain: '--dem',
    grid: '--dem',
    footprints: '--dem',
    horizons: rangeBlame,
  });
  return { reachM, pixelM, rangeBlame };
}

/**
 * The ground size (m) of a pixel of `geo` at `at` and `at`'s pixel coordinates, before the mosaic exists:
 * `Terrain.metresPerPixel` and `lonLatToPixel` read only the grid's origin, pixel size and CRS, so a one-pixel
 * terrain on that grid gives the mosaic's own figures.
 */
function siteOnGrid(
  geo: GridGeo,
  at: { lon: number; lat: number },
): { px: { x: number; y: number }; sitePixel: { col: number; row: number } } {
  const one = { ...geo, width: 1, height: 1 };
  const stub = Terrain.fromParts({ geo: one, data: new Float32Array(1), warnings: [], sources: [] });
  const xy = [0, 0];
  stub.lonLatToPixel(at.lon, at.lat, xy);
  return { px: stub.metresPerPixel(at.lon, at.lat), sitePixel: { col: xy[0], row: xy[1] } };
}

interface SweepChoice {
  sweep: 'cells' | 'radials';
  /** The floor goes over the terrain's own buffer (one DEM: the output grid is the whole terrain). */
  inPlace: boolean;
  /** Why auto chose radials, when it did. */
  why?: string;
}

/**
 * Which sweep runs: the one asked for, or under "auto" the sweep over the cells where straight lines on the
 * DEM's grid follow geodesics to within a quarter of a cell over the reach (grid-sweep.ts `gridSweepFits`).
 */
function chooseSweep(
  asked: 'auto' | 'cells' | 'radials',
  geo: GridGeo,
  site: { lon: number; lat: number },
  px: { x: number; y: number },
  sitePixel: { col: number; row: number },
  maxRangeM: number | undefined,
  wholeTerrain: boolean,
): SweepChoice {
  if (asked === 'radials') return { sweep: 'radials', inPlace: false };
  let farthestM = 0;
  for (const cx of [0, geo.width])
    for (const cy of [0, geo.height])
      farthestM = Math.max(farthestM, Math.hypot((cx - sitePixel.col) * px.x, (cy - sitePixel.row) * px.y));
  const reachM = Math.min(maxRangeM ?? farthestM, farthestM);
  const fits = gridSweepFits(geo.crs.kind === 'geographic', reachM, site.lat, Math.min(px.x, px.y));
  if (asked === 'cells' || fits) return { sweep: 'cells', inPlace: wholeTerrain };
  return {
    sweep: 'radials',
    inPlace: false,
    why: 'a geographic DEM whose straight grid lines part from geodesics by more than a quarter cell over this reach',
  };
}

/** Where `geo` (the first DEM) sits on the terrain lattice. */
function latticeWindow(
  terrain: Terrain,
  geo: GridGeo,
): { col0: number; row0: number; width: number; height: number } {
  const t = terrain.geo;
  return {
    col0: pixelsBetween(t.originX, geo.originX, t.pixelX),
    row0: pixelsBetween(t.originY, geo.originY, t.pixelY),
    width: geo.width,
    height: geo.height,
  };
}

/** The terrain heights under `geo`'s cells when `geo` lies on the terrain lattice (it does for the first tile). */
export function windowOf(terrain: Terrain, geo: GridGeo): Float32Array {
  const t = terrain.geo;
  const dc = pixelsBetween(t.originX, geo.originX, t.pixelX);
  const dr = pixelsBetween(t.originY, geo.originY, t.pixelY);
  // The whole terrain: no copy.
  if (dc === 0 && dr === 0 && geo.width === t.width && geo.height === t.height) return terrain.data;
  const out = new Float32Array(geo.width * geo.height);
  for (let r = 0; r < geo.height; r++) {
    const src = (r + dr) * t.width + dc;
    out.set(terrain.data.subarray(src, src + geo.width), r * geo.width);
  }
  return out;
}

/** `--k`: a number the effective-earth model holds for (the scenario's rule, shared/units.ts `kFactorProblem`). */
function kFactorArg(text: string): number {
  const k = numberArg('k', text, -1e9, 1e9, `a number: ${K_TEXT}`);
  const why = kFactorProblem(k);
  if (why !== undefined) throw new InputError('--k', String(k), why);
  return k;
}
