/**
 * DEM tiles for the fused read (issue 12): every tile's file is opened and its header read and checked first
 * (file size and dimensions against `--max-memory`, CRS, block table); the pixels are decoded later, straight
 * into the terrain mosaic's one buffer (`Terrain.fromPendingTiles`), reading each file front to back once — its
 * SHA-256 is taken from those very bytes (files.ts `openFileChecked`, `digestOfRead`), unless the caller hands it
 * on (`deferDigests`: the floor has its worker hash the file while the floor is written).
 */
import { InputError } from '../../shared/errors.ts';
import { tileFileRefusal, type TileShape } from '../core/memory-estimate.ts';
import { Terrain, type PendingTile } from '../core/terrain.ts';
import { decodeDemTileInto, openDemTile, type OpenedDemTile } from '../io/geotiff-read.ts';
import { checkTileShape } from './budget-check.ts';
import { memoryHelper } from '../runtime/native-memory.ts';
import { openFileChecked, type CheckedFile } from './files.ts';

const WHAT = 'a GeoTIFF elevation tile (DEM)';

export interface OpenedTiles {
  /** Per tile: its header's grid, and its decoder. */
  tiles: PendingTile[];
  /** The largest tile's shape (for `estimateRun`). */
  largest: TileShape | undefined;
  /**
   * Hands every file's SHA-256 to another reader (files.ts `deferDigest`, settled by `settleDeferredDigests`):
   * true if all of them were handed on; false changes nothing (each file is hashed as it is read).
   */
  deferDigests(): boolean;
}

/**
 * Opens DEM tiles within the memory limit and reads their headers (see the file note); `use` gets them, and the
 * files are closed after it, whatever happens (their digests recorded when `use` succeeded).
 */
export async function withTilesWithin<T>(
  paths: readonly string[],
  limit: number,
  use: (opened: OpenedTiles) => Promise<T>,
  names: readonly string[] = paths,
): Promise<T> {
  const files: CheckedFile[] = [];
  let ok = false;
  try {
    const tiles: PendingTile[] = [];
    let largest: TileShape | undefined;
    for (let i = 0; i < paths.length; i++) {
      const name = names[i];
      const file = openFileChecked(paths[i], WHAT);
      files.push(file);
      const tooBig = tileFileRefusal(name, file.byteLength, limit, '--max-memory');
      if (tooBig) throw tooBig;
      let shape: TileShape | undefined;
      const opened = await openDemTile(file, name, (h) => {
        shape = { name, fileBytes: file.byteLength, ...h };
        checkTileShape(shape, limit);
      });
      if (shape && (!largest || shape.width * shape.height > largest.width * largest.height)) largest = shape;
      tiles.push(pending(opened));
    }
    // All or none: each file is asked first.
    const deferDigests = (): boolean =>
      files.every((f) => f.canDeferDigest()) && files.every((f) => f.deferDigest());
    const result = await use({ tiles, largest, deferDigests });
    ok = true;
    return result;
  } finally {
    for (const f of files) f.close(ok);
  }
}

/**
 * The terrain mosaic of DEM files, decoded straight into its one buffer (see `withTilesWithin`); `names` are the
 * files as messages name them (default the paths), `shared` puts the mosaic on a SharedArrayBuffer, `kernel` in
 * the radial kernel's WebAssembly memory where it can (Terrain MosaicOptions), and
 * `beforeDecode` sees the headers before any pixel is decoded (to refuse a run early).
 */
export async function readTerrainWithin(
  paths: readonly string[],
  limit: number,
  opts: {
    shared?: boolean;
    kernel?: boolean;
    names?: readonly string[];
    beforeDecode?: (opened: OpenedTiles) => void;
    /** Told of the mosaic's raster once it is allocated, before the pixels are decoded into it. */
    onRaster?: (data: Float32Array) => void;
  } = {},
): Promise<{ terrain: Terrain; largest: TileShape | undefined; firstGeo: PendingTile['geo'] }> {
  if (paths.length === 0) throw new InputError('--dem', 'no DEM given', 'at least one --dem FILE.tif');
  return withTilesWithin(
    paths,
    limit,
    async (opened) => {
      opts.beforeDecode?.(opened);
      return {
        terrain: await Terrain.fromPendingTiles(opened.tiles, {
          shared: opts.shared,
          kernel: opts.kernel,
          // Huge pages for the raster before anything touches it, where the native helper loads: for a plain or
          // shared buffer as for the radial kernel's WebAssembly memory, which glibc's tunable never reaches.
          onRaster: (data) => {
            memoryHelper()?.hugePages(data);
            opts.onRaster?.(data);
          },
        }),
        largest: opened.largest,
        firstGeo: opened.tiles[0].geo,
      };
    },
    opts.names,
  );
}

/** A plain object (Terrain may copy it with a moved origin): the header's grid and a decoder into any window. */
function pending(t: OpenedDemTile): PendingTile {
  return {
    name: t.name,
    geo: t.geo,
    decodeInto: (dst, offset, stride) => decodeDemTileInto(t, dst, offset, stride),
  };
}
