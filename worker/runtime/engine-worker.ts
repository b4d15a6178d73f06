/**
 * Web Worker entry of the app's engine (worker/runtime/engine.ts): exposes it through comlink, connects it to the pool
 * of floor workers over MessagePorts, and turns raster images into ImageBitmaps transferred to the page, which
 * shows them without decoding or copying.
 */
import { expose, proxy, transfer, wrap, type Remote } from 'comlink';
import { createStore, del, get, keys, set, type UseStore } from 'idb-keyval';
import { InputError } from '../../shared/errors.ts';
import highsWasmUrl from 'highs/runtime?url';
import type { WorkerApi } from './api.ts';
import { inlineExecutor } from '../core/floor.ts';
import { MemoryLedger } from '../core/memory-estimate.ts';
import { solvePlan } from '../core/plan.ts';
import { Engine, type ImageLayer, type ProgressFn, type SensorRef, type PlanRequest } from './engine.ts';
import type { FoldKind } from '../core/network.ts';
import type { Provenance } from '../io/provenance.ts';
import { RemotePool } from './pool.ts';
import type { RasterImage } from '../io/render.ts';

const shared = typeof SharedArrayBuffer !== 'undefined' && globalThis.crossOriginIsolated === true;
const wasmUrl = new URL(highsWasmUrl, self.location.href).href;
let pool: RemotePool | null = null;

const engine = new Engine(
  async (terrain) => {
    if (!pool || !shared) return inlineExecutor(terrain);
    await Promise.all(pool.remotes.map((r) => r.setTerrain(terrain.toParts())));
    return pool.executor();
  },
  {
    shared,
    highs: { locateFile: () => wasmUrl },
    // The planner runs in a floor worker (idle by then): this worker stays free for outage toggles, the cursor
    // read-out and a cancel while HiGHS works. The instance's arrays are transferred, not copied.
    solve: (inst, opts) => {
      const remote = pool && shared ? pool.remotes[pool.remotes.length - 1] : null;
      if (!remote) return solvePlan(inst, opts);
      // The memory account crosses as data and is rebuilt there (a class does not survive the message).
      const { onProgress, highs: _highs, memory, ...rest } = opts;
      const buffers = [
        ...inst.candidates.map((c) => c.covers.buffer as ArrayBuffer),
        inst.points.weight.buffer as ArrayBuffer,
        inst.points.reqAny.buffer as ArrayBuffer,
        inst.points.reqPrimary.buffer as ArrayBuffer,
        inst.points.reqSecondary.buffer as ArrayBuffer,
        ...[inst.points.reqAdsb, inst.points.reqMlat].flatMap((a) => (a ? [a.buffer as ArrayBuffer] : [])),
      ];
      return remote.solve(
        transfer(inst, [...new Set(buffers)]),
        rest,
        wasmUrl,
        onProgress ? proxy(onProgress) : undefined,
        memory instanceof MemoryLedger ? memory.spec() : undefined,
      );
    },
  },
);

/** A tile to read: a file the user picked (read here, off the main thread) or a URL on this site. */
export type TileSource = { name: string; file: Blob } | { name: string; url: string };

let store: UseStore | null = null;
const tileStore = () => (store ??= createStore('airshade-terrain', 'tiles'));

async function readSource(src: TileSource): Promise<{ name: string; buffer: ArrayBuffer }> {
  if ('file' in src) {
    engine.checkTileFile(src.name, src.file.size); // refused before it is read when it could not fit
    return { name: src.name, buffer: await src.file.arrayBuffer() };
  }
  const res = await fetch(src.url);
  if (!res.ok) throw new InputError(src.url, `HTTP ${res.status}`, 'a GeoTIFF tile served with the app');
  return { name: src.name, buffer: await res.arrayBuffer() };
}

/** A raster for the map: an ImageBitmap (transferred, not copied) and where its corners go. */
let keeping: Promise<string | null> = Promise.resolve(null);

/**
 * Stores the tiles' bytes in IndexedDB and drops tiles no longer in the terrain (queued: one write at a time).
 * Resolves to null, or to what went wrong (the browser's storage may be full): the terrain in use is not affected.
 */
function keepTiles(files: { name: string; buffer: ArrayBuffer }[]): Promise<string | null> {
  keeping = keeping.then(async () => {
    try {
      const names = engine.tileNames();
      for (const f of files) if (names.includes(f.name)) await set(f.name, f.buffer, tileStore());
      for (const k of await keys(tileStore())) if (!names.includes(String(k))) await del(k, tileStore());
      return null;
    } catch (e) {
      // With the error's name: a full storage says so (QuotaExceededError), and the app can tell it apart.
      return e instanceof Error ? `${e.name}: ${e.message}` : String(e);
    }
  });
  return keeping;
}

/**
 * SHA-256 (lowercase hex) of each tile of the terrain, by name: of the very bytes decoded (the app's exports name
 * them in their provenance). Replaced together with the terrain, only once a load has been accepted.
 */
let digests = new Map<string, string>();

async function sha256Of(buffer: ArrayBuffer): Promise<string> {
  const d = new Uint8Array(await crypto.subtle.digest('SHA-256', buffer));
  return Array.from(d, (b) => b.toString(16).padStart(2, '0')).join('');
}

/** Digests of the files just read, then kept for the tiles the terrain now holds. */
async function noteDigests(files: { name: string; buffer: ArrayBuffer }[], replace: boolean): Promise<void> {
  const fresh = await Promise.all(files.map(async (f) => [f.name, await sha256Of(f.buffer)] as const));
  const next = replace ? new Map<string, string>() : new Map(digests);
  for (const [name, sha] of fresh) next.set(name, sha);
  const names = engine.tileNames();
  digests = new Map(names.filter((n) => next.has(n)).map((n) => [n, next.get(n)!]));
}

/** The tiles of the last load that was not kept at once (see keepLoaded). */
let unkept: { name: string; buffer: ArrayBuffer }[] = [];

export interface MapBitmap {
  bitmap: ImageBitmap;
  width: number;
  height: number;
  corners: [number, number][];
}

async function toBitmap(img: RasterImage): Promise<MapBitmap> {
  const bitmap = await createImageBitmap(new ImageData(img.rgba, img.width, img.height));
  return { bitmap, width: img.width, height: img.height, corners: img.corners };
}

/**
 * Progress to the page at most every 250 ms: each report redraws the progress bar, and on a machine whose cores
 * are all busy with the job a redraw can hold the page's main thread (the compositor gets little CPU).
 */
function throttled(progress: ProgressFn | undefined): ProgressFn | undefined {
  if (!progress) return undefined;
  let last = -Infinity;
  return (f, stage) => {
    const t = performance.now();
    if (t - last < 250 && f < 1) return;
    last = t;
    void progress(f, stage);
  };
}

/** Thrown errors cross comlink as plain Errors: keep the name so the app can tell a cancel from a fault. */
async function guard<T>(job: () => Promise<T> | T): Promise<T> {
  try {
    return await job();
  } catch (e) {
    if (e instanceof Error) {
      const err = new Error(e.message);
      err.name = e.name;
      throw err;
    }
    throw e;
  }
}

export const engineApi = {
  /** Pool of floor workers, one MessagePort each (the app creates the workers). */
  connectPool(ports: MessagePort[]): { size: number; shared: boolean } {
    pool = new RemotePool(ports.map((p) => wrap<WorkerApi>(p) as Remote<WorkerApi>));
    return { size: pool.size, shared };
  },
  /**
   * Reads tiles (files the user picked, or URLs of the demo), decodes them into the terrain and, once they are
   * accepted, keeps their bytes in IndexedDB so that a reload finds them. Nothing passes through the main thread.
   */
  loadTiles: (
    sources: TileSource[],
    replace: boolean,
    scenario?: { input: unknown; display: string },
    keep = true,
    /** Reading (0…0.3, per tile read), decoding (0.3…0.95, per tile), joining and placing the study. */
    progress?: ProgressFn,
  ) =>
    guard(async () => {
      const t0 = performance.now();
      const report = throttled(progress);
      let read = 0;
      const files = await Promise.all(
        sources.map(async (src) => {
          const f = await readSource(src);
          read++;
          report?.((0.3 * read) / sources.length, `read ${read} of ${sources.length} tiles`);
          return f;
        }),
      );
      const t1 = performance.now();
      const r = await engine.loadTiles(
        files,
        replace,
        scenario,
        // The last stage (joining the tiles, placing the study) is always shown: it can take seconds.
        report && ((f, stage) => (f >= 0.9 ? progress! : report)(0.3 + (0.65 * f) / 0.9, stage)),
      );
      const t2 = performance.now();
      await noteDigests(files, replace);
      // Kept for the next visit after the answer has gone back, one tile at a time (or once the app says so).
      if (keep) void keepTiles(files);
      unkept = keep ? [] : files;
      return { ...r, timingsMs: { read: Math.round(t1 - t0), decode: Math.round(t2 - t1) } };
    }),
  /** The tiles kept in IndexedDB, by name (a reload): throws naming the first one missing. */
  restoreTiles: (
    names: string[],
    scenario?: { input: unknown; display: string },
    /** Per tile decoded, as loadTiles. */
    progress?: ProgressFn,
  ) =>
    guard(async () => {
      const files: { name: string; buffer: ArrayBuffer }[] = [];
      for (const name of names) {
        const buffer = await get<ArrayBuffer>(name, tileStore());
        if (!buffer)
          throw new InputError(
            `saved terrain tile ${name}`,
            'nothing saved',
            'the tile kept from the last visit',
          );
        files.push({ name, buffer });
      }
      const r = await engine.loadTiles(files, true, scenario, throttled(progress));
      await noteDigests(files, true);
      return r;
    }),
  /**
   * Keeps the tiles of the last `loadTiles(…, keep = false)` in IndexedDB (the app's new study, once its sites
   * are found inside them); resolves as `tilesKept` does.
   */
  keepLoaded: () => {
    const files = unkept;
    unkept = [];
    return files.length ? keepTiles(files) : keeping;
  },
  tileNames: () => engine.tileNames(),
  /** Each terrain tile with the SHA-256 of the bytes read, in the terrain's order (for the exports' provenance). */
  tileDigests: () => engine.tileNames().map((file) => ({ file, sha256: digests.get(file) ?? '' })),
  /** Resolves when the tiles of the last load are stored: null, or what went wrong. */
  tilesKept: () => keeping,
  terrainInfo: () => engine.terrainInfo(),
  relief: () =>
    guard(async () => {
      const r = engine.reliefImage();
      const m = await toBitmap(r.image);
      return transfer({ ...m, legend: r.legend, minM: r.minM, maxM: r.maxM }, [m.bitmap]);
    }),
  setScenario: (input: unknown, display: string) => guard(() => engine.setScenario(input, display)),
  /** What results mean (target, day, true altitudes, k, "seen", spec conventions) at `fls` or the last levels. */
  conventions: (fls?: number[]) => guard(() => engine.conventions(fls)),
  coverage: (sensors: SensorRef[], fls: number[] | undefined, progress?: ProgressFn) =>
    guard(() => engine.coverage(sensors, fls, throttled(progress))),
  setFailed: (siteIds: string[]) => guard(() => engine.setFailed(siteIds)),
  outageTally: () => guard(() => engine.outageTally()),
  outageTable: (sensors: SensorRef[] | undefined, progress?: ProgressFn) =>
    guard(() => engine.outageTable(sensors, throttled(progress))),
  plan: (req: PlanRequest, progress?: ProgressFn) => guard(() => engine.plan(req, throttled(progress))),
  compare: (a: SensorRef[], b: SensorRef[], progress?: ProgressFn) =>
    guard(() => engine.compare(a, b, throttled(progress))),
  layerImage: (layer: ImageLayer, fl: number, kind: FoldKind) =>
    guard(async () => {
      const r = engine.layerImage(layer, fl, kind);
      const m = await toBitmap(r.image);
      return transfer({ ...m, legend: r.legend }, [m.bitmap]);
    }),
  probe: (lon: number, lat: number) => engine.probe(lon, lat),
  /** The current network's multilateration receivers (the accuracy layer is offered only then), or null. */
  mlatInfo: () => engine.mlatInfo(),
  setProbeLevel: (fl: number) => engine.setProbeLevel(fl),
  levelGeoJson: (fl: number) => guard(() => engine.levelGeoJson(fl)),
  compareGeoJson: (fl: number) => guard(() => engine.compareGeoJson(fl)),
  /** The report of the current network as one self-contained HTML string (engine.report). */
  report: (
    options: { provenance: Provenance; caution: string; paper?: 'A4' | 'A3'; includePlan?: boolean },
    progress?: ProgressFn,
  ) => guard(() => engine.report(options, throttled(progress))),
  diagram: (
    siteId: string,
    typeId: string,
    az: number,
    units: 'metric' | 'aviation',
    size?: { width: number; height: number },
    provenance?: Provenance,
  ) => guard(() => engine.diagram(siteId, typeId, az, units, size, provenance)),
  cancel: () => engine.cancel(),
};

export type EngineApi = typeof engineApi;
export { proxy };

expose(engineApi);
