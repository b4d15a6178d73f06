/**
 * Refuse before allocating: the memory a run will need, estimated from its inputs before any large array
 * exists, against a limit (`--max-memory`, default the smaller of half this machine's memory and 2 GiB). A run
 * past the limit stops at once with one message naming the input that drives the size and the knob.
 *
 * The estimate counts the arrays the code allocates, from their layouts:
 * - terrain: the mosaic, Float32 per terrain pixel (worker/core/terrain.ts), and while a tile is read its file
 *   bytes, its decoded samples and its Float32 copy (worker/io/geotiff-read.ts);
 * - per analysis cell: ground (Float32), one byte per volume mask, per site the network's level bits (1, 2 or
 *   4 bytes: worker/core/network.ts), 3 kinds × levels × targets Uint16 folds, and per (site, type) pair and
 *   target a footprint of two Uint16 (worker/core/footprint.ts); per site in flight a floor and a distance
 *   (Float32 each);
 * - per site in flight (two: the pipeline of worker/core/coverage.ts): the horizon's screening tans, Float32 per
 *   sample; the layout (worker/core/horizon.ts planHorizon) keeps arcs between neighbouring radials within
 *   0.75…1.5 arc steps, so the samples out to range R number at most π·R² / (0.75 · rangeStep · arcStep).
 * These counts are exact bounds of the layouts; what they leave out (the JavaScript heap, the contour rings,
 * the GeoJSON text, the pool's workers) is the `RUNTIME_BYTES` floor and the `OVERHEAD` factor, both measured
 * (DEVELOPERS.md: the figures and the command that reproduces them).
 */
import { statSync } from 'node:fs';
import { totalmem } from 'node:os';
import { InputError } from '../../shared/errors.ts';
import type { DemTile } from '../core/terrain.ts';
import { readDemTile } from '../io/geotiff-read.ts';
import type { Parsed } from './args.ts';
import { readFileChecked } from './files.ts';

const MiB = 1 << 20;
const GiB = 1 << 30;

/** Node, tsx, zod, turf, geotiff.js and the rest before any data: 170–195 MiB measured on refused runs. */
export const RUNTIME_BYTES = 200 * MiB;
/**
 * Heap and transient copies beyond the counted arrays, as a factor on them: measured on the demo (coverage,
 * 165 sensors, 600 × 600 cells, 6000 × 6000 terrain pixels: counted ≈ 0.55 GiB, peak RSS 839 MiB).
 */
export const OVERHEAD = 1.25;
/** Default limit: the smaller of half the machine's memory and this. */
export const DEFAULT_MAX_MEMORY_BYTES = 2 * GiB;

export const MEMORY_OPTION = { 'max-memory': { value: true } } as const;

export function memoryHelp(column: number): string {
  const pad = ' '.repeat(column - 1);
  return (
    '  --max-memory SIZE'.padEnd(column - 1) +
    'refuse at once a run whose estimated memory exceeds SIZE (e.g. 1.5G, 800M; default the smaller\n' +
    `${pad}of half this machine's memory and 2G; at most the machine's memory)`
  );
}

/** Machine limits (a test may pass its own). */
export interface Machine {
  totalBytes: number;
}

export function thisMachine(): Machine {
  return { totalBytes: totalmem() };
}

export function formatBytes(b: number): string {
  return b >= GiB ? `${(b / GiB).toFixed(1)} GiB` : `${Math.max(1, Math.round(b / MiB))} MiB`;
}

/** `--max-memory SIZE`: bytes, from `1.5G`, `800M`, `2GiB`, `512MB` or a plain number of MiB. */
export function memoryLimitArg(p: Parsed, machine: Machine = thisMachine()): number {
  const text = p.values.get('max-memory')?.[0];
  const fallback = Math.min(DEFAULT_MAX_MEMORY_BYTES, machine.totalBytes / 2);
  if (text === undefined) return fallback;
  const what = `a memory size such as 1.5G or 800M, from 256M to this machine's ${formatBytes(machine.totalBytes)}`;
  const m = /^\s*(\d+(?:\.\d+)?|\.\d+)\s*([kKmMgGtT]?)(?:i?[bB])?\s*$/.exec(text);
  if (!m) throw new InputError('--max-memory', JSON.stringify(text), what);
  const unit = { '': MiB, k: 1024, m: MiB, g: GiB, t: 1024 * GiB }[m[2].toLowerCase()] ?? MiB;
  const bytes = Number(m[1]) * unit;
  if (!(bytes >= 256 * MiB) || bytes > machine.totalBytes) {
    throw new InputError('--max-memory', `${text} (${formatBytes(bytes)})`, what);
  }
  return bytes;
}

// ---------------------------------------------------------------------------------------------------
// The estimate

export interface TileShape {
  /** The file as the user named it. */
  name: string;
  fileBytes: number;
  width: number;
  height: number;
  bytesPerSample: number;
}

export interface RunShape {
  /** Pixels of the terrain mosaic. */
  terrainPixels: number;
  /** The largest tile read (it and its copies are alive at once). */
  largestTile?: TileShape;
  /** Analysis cells (grid width × height). */
  cells: number;
  /** Sites and (site, type) pairs of the network. */
  sites: number;
  pairs: number;
  /** Flight levels, targets (1 + volumes' own), volumes. */
  levels: number;
  targets: number;
  volumes: number;
  /** Farthest range of a site's horizon, m; range step (a terrain pixel) and arc step (¾ of a cell), m. */
  reachM: number;
  rangeStepM: number;
  arcStepM: number;
  /** Horizons alive at once (a floor run: 1; coverage's pipeline: 2). */
  horizonsInFlight: number;
}

export interface Estimate {
  bytes: number;
  parts: { terrain: number; grid: number; footprints: number; horizons: number };
}

/** Screening-tan samples of one horizon, an upper bound from the layout rules (see the module comment). */
export function horizonSamples(reachM: number, rangeStepM: number, arcStepM: number): number {
  return (Math.PI * reachM * reachM) / (0.75 * rangeStepM * arcStepM) + (2 * Math.PI * reachM) / arcStepM;
}

export function estimateRun(s: RunShape): Estimate {
  const tile = s.largestTile;
  const terrain =
    s.terrainPixels * 4 + (tile ? tile.fileBytes + tile.width * tile.height * (tile.bytesPerSample + 4) : 0);
  const levelBits = s.levels * s.targets;
  const bitBytes = levelBits <= 8 ? 1 : levelBits <= 16 ? 2 : 4;
  const perCell = 4 + s.volumes + s.sites * bitBytes + 3 * levelBits * 2 + 4 /* network floor */ + 2 * 8;
  const grid = s.cells * perCell;
  const footprints = s.cells * s.pairs * s.targets * 4;
  const horizons = horizonSamples(s.reachM, s.rangeStepM, s.arcStepM) * 4 * s.horizonsInFlight;
  const bytes = RUNTIME_BYTES + OVERHEAD * (terrain + grid + footprints + horizons);
  return { bytes, parts: { terrain, grid, footprints, horizons } };
}

/**
 * Throws when `estimate` exceeds `limit`: the message names `where` (the input that drives the size), the
 * largest part, and the knob.
 */
export function checkEstimate(
  est: Estimate,
  limit: number,
  blame: Record<keyof Estimate['parts'], string>,
): void {
  if (est.bytes <= limit) return;
  const [part] = (Object.entries(est.parts) as [keyof Estimate['parts'], number][]).sort(
    (a, b) => b[1] - a[1],
  )[0];
  const words: Record<keyof Estimate['parts'], string> = {
    terrain: 'the terrain',
    grid: 'the analysis grid',
    footprints: 'the footprints (cells × sensors)',
    horizons: "each site's horizon (range² over terrain pixel × cell)",
  };
  throw new InputError(
    blame[part],
    `a run that needs about ${formatBytes(est.bytes)} (mostly ${words[part]}: ${formatBytes(est.parts[part])})`,
    `at most ${formatBytes(limit)} (--max-memory; raise it up to this machine's ${formatBytes(totalmem())}, ` +
      'or make the input smaller: coarser grid.cellArcSec, smaller grid.bounds or maxRangeKm, fewer sites or tiles)',
  );
}

/**
 * A DEM tile's header against the limit, before its pixels are decoded: absurd dimensions, and a file whose
 * pixels would not fit. `found` names the file.
 */
export function checkTileShape(t: TileShape, limit: number): void {
  const bytes = RUNTIME_BYTES + t.fileBytes + t.width * t.height * (t.bytesPerSample + 8);
  if (bytes <= limit) return;
  throw new InputError(
    t.name,
    `a tile of ${t.width} × ${t.height} pixels (about ${formatBytes(bytes)} to read)`,
    `a tile that fits in ${formatBytes(limit)} (--max-memory), or the tile cut into smaller ones`,
  );
}

/**
 * Reads DEM tiles within the memory limit: each file's size before it is read, each tile's dimensions at its
 * header before its pixels are decoded. Returns the tiles and the largest one's shape (for `estimateRun`).
 */
export async function readTilesWithin(
  paths: readonly string[],
  limit: number,
  names: readonly string[] = paths,
): Promise<{ tiles: DemTile[]; largest: TileShape | undefined }> {
  const tiles: DemTile[] = [];
  let largest: TileShape | undefined;
  const what = 'a GeoTIFF elevation tile (DEM)';
  for (let i = 0; i < paths.length; i++) {
    const name = names[i];
    let fileBytes = 0;
    try {
      fileBytes = statSync(paths[i]).size;
    } catch {
      throw new InputError(name, 'no such file', what);
    }
    if (RUNTIME_BYTES + fileBytes > limit) {
      throw new InputError(
        name,
        `a file of ${formatBytes(fileBytes)}`,
        `a tile that fits in ${formatBytes(limit)} (--max-memory), or the tile cut into smaller ones`,
      );
    }
    let shape: TileShape | undefined;
    const tile = await readDemTile(readFileChecked(paths[i], what), name, (h) => {
      shape = { name, fileBytes, ...h };
      checkTileShape(shape, limit);
    });
    if (shape && (!largest || shape.width * shape.height > largest.width * largest.height)) largest = shape;
    tiles.push(tile);
  }
  return { tiles, largest };
}
