/**
 * Terrain mosaic: one working raster of elevations (metres) built from one or more DEM tiles, and the
 * sampler the rest of the core uses (lon/lat <-> continuous pixel coordinates, bilinear heights, ground
 * size of a pixel).
 *
 * The working raster lies on the first tile's lattice (its CRS, pixel size and alignment) and covers the
 * union of all tiles. Cells that no tile covers are NaN ("unknown", never silently sea level). Tiles on the
 * same lattice are copied cell for cell (adjacent 1° tiles share an edge row/column with identical values;
 * the first tile wins); any other tile is resampled bilinearly through its own CRS.
 *
 * Georeferencing follows grid.ts: pixel-is-area, centre of pixel (c, r) at pixel coordinate
 * (c + 0.5, r + 0.5).
 */
import proj4 from 'proj4';
import type { Converter } from 'proj4';
import { InputError } from '../../shared/errors.ts';
import { pixelsBetween, WGS84_GEOGRAPHIC, type Crs, type GridGeo } from './grid.ts';
import { terrainMemory, type WasmMemory } from './radial-kernel.ts';

/** One decoded DEM tile (see worker/io/geotiff-read.ts). */
export interface DemTile {
  name: string;
  geo: GridGeo;
  /** Elevation in metres, row-major, voids already filled (no NaN). */
  data: Float32Array;
  voidsFilled: number;
  warnings: string[];
}

/** Plain-object form of a Terrain: structured-cloneable; shared when `data` is on a SharedArrayBuffer. */
export interface TerrainParts {
  geo: GridGeo;
  data: Float32Array;
  warnings: string[];
  sources: string[];
  /**
   * The WebAssembly memory `data` lies at the start of, when the terrain was read for the radial kernel
   * (radial-kernel.ts): the polar buffers are grown in it too. Shared, so it goes to workers with the parts.
   */
  memory?: WasmMemory | null;
}

/** Largest working raster we build: 2^30 cells = 4 GiB of Float32. */
const MAX_CELLS = 2 ** 30;
/** Resampling through proj4: exact transform every this many cells along a row, linear in between. */
const PROJ_STEP = 16;

// WGS84 ellipsoid (EPSG:7030) for the local ground size of a pixel.
const WGS84_A = 6378137;
const WGS84_F = 1 / 298.257223563;
const WGS84_E2 = WGS84_F * (2 - WGS84_F);
const DEG = Math.PI / 180;

export class Terrain {
  readonly geo: GridGeo;
  /** Elevation in metres, row-major; NaN where no tile gives a value. */
  readonly data: Float32Array;
  readonly warnings: string[];
  /** Names of the tiles the mosaic was built from, in order. */
  readonly sources: string[];
  /** The WebAssembly memory that holds `data` at its start, or null (see TerrainParts.memory). */
  readonly memory: WasmMemory | null;
  /** WGS84 lon/lat <-> this CRS; null for a geographic raster (no conversion needed). */
  private readonly proj: Converter | null;
  /** Geographic terrain: the longitude of its centre; a lon is taken within ±180° of it (the antimeridian). */
  private readonly lonCentre: number;
  private readonly xy = [0, 0];

  private constructor(p: TerrainParts) {
    const { geo, data } = p;
    if (data.length !== geo.width * geo.height) {
      throw new Error(`Terrain: data has ${data.length} values but the grid is ${geo.width} x ${geo.height}`);
    }
    this.geo = geo;
    this.data = data;
    this.warnings = p.warnings;
    this.sources = p.sources;
    this.memory = p.memory ?? null;
    this.proj = geo.crs.kind === 'geographic' ? null : proj4(WGS84_GEOGRAPHIC.proj4, geo.crs.proj4);
    this.lonCentre = geo.originX + (geo.width * geo.pixelX) / 2;
  }

  /** Rebuilds a Terrain from `toParts()` output (e.g. inside a worker) without copying the data. */
  static fromParts(p: TerrainParts): Terrain {
    return new Terrain(p);
  }

  toParts(): TerrainParts {
    return {
      geo: this.geo,
      data: this.data,
      warnings: this.warnings,
      sources: this.sources,
      memory: this.memory,
    };
  }

  /**
   * Mosaics tiles onto the first tile's lattice. `shared: true` puts the data in a SharedArrayBuffer so a
   * pool of workers can read one copy; `kernel: true` puts it in a WebAssembly memory for the radial kernel where
   * that can be had (shared too; see `newRaster`).
   */
  static fromTiles(tilesIn: DemTile[], opts: MosaicOptions = {}): Terrain {
    const { geo, tiles } = planMosaic(tilesIn);
    const { data, memory } = newRaster(geo.width * geo.height, opts);
    data.fill(NaN);
    const warnings: string[] = [];
    for (const t of tiles) placeTile(t, t === tiles[0], t.warnings, geo, data, warnings, tiles[0].name);
    return new Terrain({ geo, data, warnings, sources: tiles.map((t) => t.name), memory });
  }

  /**
   * The same mosaic as `fromTiles`, from tiles known so far by their headers: the layout is fixed (and refused)
   * before any pixel is decoded, then the first tile decodes straight into the mosaic's one buffer (no copy of its
   * own) and every other tile into one reused scratch buffer, from which it is copied or resampled as in `fromTiles`.
   */
  static async fromPendingTiles(tilesIn: PendingTile[], opts: MosaicOptions = {}): Promise<Terrain> {
    const { geo, tiles } = planMosaic(tilesIn);
    const { data, memory } = newRaster(geo.width * geo.height, opts);
    opts.onRaster?.(data);
    const first = tiles[0];
    const g0 = first.geo;
    const dc = pixelsBetween(geo.originX, g0.originX, geo.pixelX);
    const dr = pixelsBetween(geo.originY, g0.originY, geo.pixelY);
    // Cells outside the first tile start unknown; the first tile's own cells are all written by its decoder.
    if (g0.width !== geo.width || g0.height !== geo.height) data.fill(NaN);
    const warnings: string[] = [];
    warnings.push(...(await first.decodeInto(data, dr * geo.width + dc, geo.width)).warnings);
    let scratch: Float32Array | null = null;
    for (const t of tiles.slice(1)) {
      const n = t.geo.width * t.geo.height;
      if (scratch === null || scratch.length < n) {
        let largest = n;
        for (const u of tiles.slice(1)) largest = Math.max(largest, u.geo.width * u.geo.height);
        scratch = new Float32Array(largest);
      }
      const tileData = scratch.subarray(0, n);
      const decoded = await t.decodeInto(tileData, 0, t.geo.width);
      const tile: DemTile = { name: t.name, geo: t.geo, data: tileData, ...decoded };
      placeTile(tile, false, decoded.warnings, geo, data, warnings, first.name);
    }
    return new Terrain({ geo, data, warnings, sources: tiles.map((t) => t.name), memory });
  }

  /** Continuous pixel coordinates of a lon/lat (degrees, WGS84) into out[0], out[1]. */
  lonLatToPixel(lon: number, lat: number, out: Float64Array | number[]): void {
    const g = this.geo;
    let x = lon;
    let y = lat;
    if (!this.proj) {
      x = nearLon(lon, this.lonCentre);
    } else {
      const xy = this.xy;
      xy[0] = lon;
      xy[1] = lat;
      const p = this.proj.forward(xy);
      x = p[0];
      y = p[1];
    }
    out[0] = (x - g.originX) / g.pixelX;
    out[1] = (y - g.originY) / g.pixelY;
  }

  /**
   * Lon/lat (degrees, WGS84) of continuous pixel coordinates into out[0], out[1]. On geographic terrain across the
   * antimeridian the longitude runs on past ±180° (continuous across the mosaic).
   */
  pixelToLonLat(x: number, y: number, out: Float64Array | number[]): void {
    const g = this.geo;
    const cx = g.originX + x * g.pixelX;
    const cy = g.originY + y * g.pixelY;
    if (this.proj) {
      const xy = this.xy;
      xy[0] = cx;
      xy[1] = cy;
      const p = this.proj.inverse(xy);
      out[0] = p[0];
      out[1] = p[1];
    } else {
      out[0] = cx;
      out[1] = cy;
    }
  }

  /** Bilinear elevation (m) at a lon/lat; NaN where unknown. */
  sampleLonLat(lon: number, lat: number): number {
    const g = this.geo;
    if (this.proj) {
      const xy = this.xy;
      xy[0] = lon;
      xy[1] = lat;
      const p = this.proj.forward(xy);
      return bilinear(
        this.data,
        g.width,
        g.height,
        (p[0] - g.originX) / g.pixelX,
        (p[1] - g.originY) / g.pixelY,
      );
    }
    const x = nearLon(lon, this.lonCentre);
    return bilinear(this.data, g.width, g.height, (x - g.originX) / g.pixelX, (lat - g.originY) / g.pixelY);
  }

  /** Bilinear elevation (m) at continuous pixel coordinates; NaN where unknown. */
  samplePixel(x: number, y: number): number {
    return bilinear(this.data, this.geo.width, this.geo.height, x, y);
  }

  /** Local ground size (m) of one pixel at a lon/lat: x along a row, y along a column. */
  metresPerPixel(lon: number, lat: number): { x: number; y: number } {
    const g = this.geo;
    if (!this.proj) {
      const s = Math.sin(lat * DEG);
      const w = 1 - WGS84_E2 * s * s;
      const n = WGS84_A / Math.sqrt(w); // prime-vertical radius of curvature
      const m = (WGS84_A * (1 - WGS84_E2)) / (w * Math.sqrt(w)); // meridional radius of curvature
      return { x: Math.abs(g.pixelX) * DEG * n * Math.cos(lat * DEG), y: Math.abs(g.pixelY) * DEG * m };
    }
    // Projected: map half a pixel either side back to lon/lat and measure on the ellipsoid.
    const p = this.proj.forward([lon, lat]);
    const hx = g.pixelX / 2;
    const hy = g.pixelY / 2;
    const a = this.proj.inverse([p[0] - hx, p[1]]);
    const b = this.proj.inverse([p[0] + hx, p[1]]);
    const c = this.proj.inverse([p[0], p[1] - hy]);
    const d = this.proj.inverse([p[0], p[1] + hy]);
    return { x: localDistanceM(a[0], a[1], b[0], b[1]), y: localDistanceM(c[0], c[1], d[0], d[1]) };
  }
}

/**
 * A DEM tile known by its header, whose pixels are decoded later straight into a raster (the CLI's fused read;
 * worker/io/geotiff-read.ts `openDemTile` + `decodeDemTileInto`).
 */
export interface PendingTile {
  name: string;
  geo: GridGeo;
  /**
   * Decodes the elevations (metres, voids filled) into `dst`: pixel (c, r) to `dst[offset + r * stride + c]`.
   * Returns the voids filled and the tile's warnings.
   */
  decodeInto(
    dst: Float32Array,
    offset: number,
    stride: number,
  ): Promise<{ voidsFilled: number; warnings: string[] }>;
}

/**
 * The mosaic's grid: the first tile's lattice over the union of all tiles (geographic tiles moved by whole turns
 * next to the first, across the antimeridian). Refuses, before any pixel is touched, tiles that cannot be placed
 * and a mosaic too large for one raster.
 */
function planMosaic<T extends { name: string; geo: GridGeo }>(tilesIn: T[]): { geo: GridGeo; tiles: T[] } {
  let tiles = tilesIn;
  if (tiles.length === 0) {
    throw new InputError('terrain', 'no DEM tiles', 'at least one GeoTIFF elevation tile');
  }
  const g0 = tiles[0].geo;
  const base = g0.crs;
  checkPolar(tiles);
  // Geographic tiles across the antimeridian: each is taken at the longitude (±360°) nearest the first tile, so
  // that tiles either side of 180° form one continuous lattice (e.g. 179…181° E) instead of two ends of the world.
  if (base.kind === 'geographic') tiles = tiles.map((t, i) => (i === 0 ? t : nearestCopy(t, g0)));
  // Bounds of every tile in base-lattice pixel coordinates.
  const bounds = tiles.map((t) => tileBoundsOnLattice(t.geo, g0));
  let uMin = Infinity;
  let uMax = -Infinity;
  let vMin = Infinity;
  let vMax = -Infinity;
  bounds.forEach((b, i) => {
    if (![b.uMin, b.uMax, b.vMin, b.vMax].every(Number.isFinite)) {
      throw new InputError(
        tiles[i].name,
        `a tile that cannot be placed in the first tile's CRS (${base.label})`,
        'tiles that overlap the area of the first tile',
      );
    }
    uMin = Math.min(uMin, b.uMin);
    uMax = Math.max(uMax, b.uMax);
    vMin = Math.min(vMin, b.vMin);
    vMax = Math.max(vMax, b.vMax);
  });
  const c0 = Math.floor(uMin + 1e-6);
  const c1 = Math.ceil(uMax - 1e-6);
  const r0 = Math.floor(vMin + 1e-6);
  const r1 = Math.ceil(vMax - 1e-6);
  const width = c1 - c0;
  const height = r1 - r0;
  if (width * height > MAX_CELLS) {
    throw new InputError(
      'terrain',
      `tiles spread over ${width} x ${height} cells of ${tiles[0].name}'s grid`,
      `tiles close enough together for one raster of at most ${MAX_CELLS} cells`,
    );
  }
  const geo: GridGeo = {
    width,
    height,
    originX: g0.originX + c0 * g0.pixelX,
    originY: g0.originY + r0 * g0.pixelY,
    pixelX: g0.pixelX,
    pixelY: g0.pixelY,
    crs: base,
  };
  return { geo, tiles };
}

/** Where a mosaic's raster goes. */
export interface MosaicOptions {
  /** In shared memory: a pool of workers reads one copy. */
  shared?: boolean;
  /**
   * At the start of a (shared) WebAssembly memory, where the radial kernel can have it (radial-kernel.ts): for
   * the jobs that sweep radials (coverage and what builds on it). Elsewhere, and for a raster over 3 GiB, as
   * `shared` says.
   */
  kernel?: boolean;
  /** Told of the raster once it is allocated, before any tile is decoded into it (`fromPendingTiles`). */
  onRaster?: (data: Float32Array) => void;
}

/** The mosaic's raster (zeroed), and the WebAssembly memory it lies in when it does. */
function newRaster(n: number, opts: MosaicOptions): { data: Float32Array; memory: WasmMemory | null } {
  const memory = opts.kernel ? terrainMemory(n) : null;
  if (memory !== null) return { data: new Float32Array(memory.buffer, 0, n), memory };
  const data = opts.shared ? new Float32Array(new SharedArrayBuffer(n * 4)) : new Float32Array(n);
  return { data, memory: null };
}

/** One decoded tile into the mosaic: copied cell for cell when on its lattice, else resampled; its warnings. */
function placeTile(
  t: DemTile,
  first: boolean,
  tileWarnings: readonly string[],
  geo: GridGeo,
  data: Float32Array,
  warnings: string[],
  firstName: string,
): void {
  warnings.push(...tileWarnings);
  if (!copyAligned(t, geo, data, first)) {
    resampleInto(t, geo, data);
    if (!first) warnings.push(`${t.name}: resampled (bilinear) onto the grid of ${firstName}`);
  }
}

/**
 * Bilinear interpolation at continuous pixel coordinates (x, y) on a row-major raster; centre of cell
 * (c, r) is at (c + 0.5, r + 0.5). Between the outermost centres and the raster edge the edge value is
 * used (clamped); outside [0, width] x [0, height] the result is NaN, and so it is when a cell with a
 * non-zero weight is NaN.
 */
export function bilinear(data: Float32Array, width: number, height: number, x: number, y: number): number {
  if (!(x >= 0 && x <= width && y >= 0 && y <= height)) return NaN;
  let fx = x - 0.5;
  let fy = y - 0.5;
  if (fx < 0) fx = 0;
  else if (fx > width - 1) fx = width - 1;
  if (fy < 0) fy = 0;
  else if (fy > height - 1) fy = height - 1;
  const c0 = Math.floor(fx);
  const r0 = Math.floor(fy);
  const tx = fx - c0;
  const ty = fy - r0;
  const i00 = r0 * width + c0;
  const i10 = tx > 0 ? i00 + 1 : i00;
  const i01 = ty > 0 ? i00 + width : i00;
  const i11 = tx > 0 ? i01 + 1 : i01;
  const top = data[i00] + (data[i10] - data[i00]) * tx;
  const bottom = data[i01] + (data[i11] - data[i01]) * tx;
  return top + (bottom - top) * ty;
}

function sameCrs(a: Crs, b: Crs): boolean {
  if (a.kind !== b.kind) return false;
  if (a.kind === 'geographic') return true;
  return a.proj4 === b.proj4 || (a.epsg !== undefined && a.epsg === b.epsg);
}

interface LatticeBounds {
  uMin: number;
  uMax: number;
  vMin: number;
  vMax: number;
}

/** A tile's extent in the pixel coordinates of the base lattice (corners, or a densified outline). */
function tileBoundsOnLattice(t: GridGeo, base: GridGeo): LatticeBounds {
  const b: LatticeBounds = { uMin: Infinity, uMax: -Infinity, vMin: Infinity, vMax: -Infinity };
  const add = (x: number, y: number): void => {
    const u = (x - base.originX) / base.pixelX;
    const v = (y - base.originY) / base.pixelY;
    if (!Number.isFinite(u) || !Number.isFinite(v)) return;
    b.uMin = Math.min(b.uMin, u);
    b.uMax = Math.max(b.uMax, u);
    b.vMin = Math.min(b.vMin, v);
    b.vMax = Math.max(b.vMax, v);
  };
  const x0 = t.originX;
  const y0 = t.originY;
  const x1 = t.originX + t.width * t.pixelX;
  const y1 = t.originY + t.height * t.pixelY;
  if (sameCrs(t.crs, base.crs)) {
    add(x0, y0);
    add(x1, y1);
    return b;
  }
  const conv = proj4(t.crs.proj4, base.crs.proj4);
  const steps = 32;
  for (let k = 0; k <= steps; k++) {
    const f = k / steps;
    for (const [x, y] of [
      [x0 + f * (x1 - x0), y0],
      [x0 + f * (x1 - x0), y1],
      [x0, y0 + f * (y1 - y0)],
      [x1, y0 + f * (y1 - y0)],
    ]) {
      try {
        const p = conv.forward([x, y]);
        add(p[0], p[1]);
      } catch {
        // a point outside the projection's domain does not extend the bounds
      }
    }
  }
  return b;
}

/** Cell-for-cell copy when the tile lies on the working lattice; false if it does not. */
function copyAligned(t: DemTile, geo: GridGeo, dst: Float32Array, first = false): boolean {
  const g = t.geo;
  if (!sameCrs(g.crs, geo.crs)) return false;
  if (Math.abs(g.pixelX - geo.pixelX) > 1e-9 * Math.abs(geo.pixelX)) return false;
  if (Math.abs(g.pixelY - geo.pixelY) > 1e-9 * Math.abs(geo.pixelY)) return false;
  const oc = (g.originX - geo.originX) / geo.pixelX;
  const or = (g.originY - geo.originY) / geo.pixelY;
  const dc = Math.round(oc) | 0; // | 0: no -0 (grid.ts pixelsBetween)
  const dr = Math.round(or) | 0;
  if (Math.abs(oc - dc) > 1e-4 || Math.abs(or - dr) > 1e-4) return false;
  const W = geo.width;
  const src = t.data;
  const tw = g.width;
  for (let r = 0; r < g.height; r++) {
    const rr = r + dr;
    if (rr < 0 || rr >= geo.height) continue;
    const cStart = Math.max(0, -dc);
    const cEnd = Math.min(tw, W - dc);
    let d = rr * W + dc + cStart;
    let s = r * tw + cStart;
    if (first) {
      // Nothing written yet: the whole row at once.
      dst.set(src.subarray(s, s + cEnd - cStart), d);
      continue;
    }
    for (let c = cStart; c < cEnd; c++, d++, s++) {
      if (dst[d] !== dst[d]) dst[d] = src[s]; // first tile wins on shared edges
    }
  }
  return true;
}

/** Bilinear resampling of a tile into the still-empty cells of the working raster. */
function resampleInto(t: DemTile, geo: GridGeo, dst: Float32Array): void {
  const g = t.geo;
  const b = tileBoundsOnLattice(g, geo);
  const cStart = Math.max(0, Math.floor(b.uMin));
  const cEnd = Math.min(geo.width, Math.ceil(b.uMax));
  const rStart = Math.max(0, Math.floor(b.vMin));
  const rEnd = Math.min(geo.height, Math.ceil(b.vMax));
  if (cStart >= cEnd || rStart >= rEnd) return;
  const W = geo.width;
  const span = cEnd - cStart;
  const rowU = new Float64Array(span);
  const rowV = new Float64Array(span);
  const same = sameCrs(g.crs, geo.crs);
  const conv = same ? null : proj4(geo.crs.proj4, g.crs.proj4);
  const node = [0, 0];
  for (let r = rStart; r < rEnd; r++) {
    const y = geo.originY + (r + 0.5) * geo.pixelY;
    if (conv === null) {
      const v = (y - g.originY) / g.pixelY;
      for (let k = 0; k < span; k++) {
        const x = geo.originX + (cStart + k + 0.5) * geo.pixelX;
        rowU[k] = (x - g.originX) / g.pixelX;
        rowV[k] = v;
      }
    } else {
      // Exact transform at every PROJ_STEP-th cell (and the last), linear in between.
      let prevK = -1;
      let prevU = NaN;
      let prevV = NaN;
      for (let k = 0; ; k = Math.min(k + PROJ_STEP, span - 1)) {
        node[0] = geo.originX + (cStart + k + 0.5) * geo.pixelX;
        node[1] = y;
        let u = NaN;
        let v = NaN;
        try {
          const p = conv.forward(node);
          u = (p[0] - g.originX) / g.pixelX;
          v = (p[1] - g.originY) / g.pixelY;
        } catch {
          // outside the tile CRS's domain: leave NaN
        }
        rowU[k] = u;
        rowV[k] = v;
        if (prevK >= 0) {
          const n = k - prevK;
          for (let j = 1; j < n; j++) {
            const f = j / n;
            rowU[prevK + j] = prevU + (u - prevU) * f;
            rowV[prevK + j] = prevV + (v - prevV) * f;
          }
        }
        prevK = k;
        prevU = u;
        prevV = v;
        if (k === span - 1) break;
      }
    }
    const rowBase = r * W + cStart;
    for (let k = 0; k < span; k++) {
      const d = rowBase + k;
      if (dst[d] === dst[d]) continue; // already filled by an earlier tile
      const h = bilinear(t.data, g.width, g.height, rowU[k], rowV[k]);
      if (h === h) dst[d] = h;
    }
  }
}

/** Distance (m) between two nearby lon/lat points on the WGS84 ellipsoid (local plane approximation). */
function localDistanceM(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const lat = ((lat1 + lat2) / 2) * DEG;
  const s = Math.sin(lat);
  const w = 1 - WGS84_E2 * s * s;
  const n = WGS84_A / Math.sqrt(w);
  const m = (WGS84_A * (1 - WGS84_E2)) / (w * Math.sqrt(w));
  const dx = (lon2 - lon1) * DEG * n * Math.cos(lat);
  const dy = (lat2 - lat1) * DEG * m;
  return Math.hypot(dx, dy);
}

/** `lon` moved by whole turns to lie within ±180° of `centre` (degrees). */
export function nearLon(lon: number, centre: number): number {
  const d = lon - centre;
  return d >= -180 && d < 180 ? lon : lon - 360 * Math.round(d / 360);
}

/** A geographic tile at the longitude (±360°) whose centre is nearest the base tile's centre. */
function nearestCopy<T extends { geo: GridGeo }>(t: T, base: GridGeo): T {
  if (t.geo.crs.kind !== 'geographic') return t;
  const centre = t.geo.originX + (t.geo.width * t.geo.pixelX) / 2;
  const baseCentre = base.originX + (base.width * base.pixelX) / 2;
  const shift = nearLon(centre, baseCentre) - centre;
  return shift === 0 ? t : { ...t, geo: { ...t.geo, originX: t.geo.originX + shift } };
}

/**
 * Geographic tiles must lie within ±90° of latitude (a file beyond it is misread, not polar). Near the poles a
 * lon/lat lattice degenerates — a pixel's east–west size shrinks with cos(latitude) to nothing — so a geographic
 * mosaic reaching past POLAR_LIMIT_DEG is refused with a message: polar terrain wants a polar projection
 * (e.g. a polar stereographic DEM), which is read like any projected CRS.
 */
export const POLAR_LIMIT_DEG = 85;

function checkPolar(tiles: readonly { name: string; geo: GridGeo }[]): void {
  for (const t of tiles) {
    const g = t.geo;
    if (g.crs.kind !== 'geographic') continue;
    const yA = g.originY;
    const yB = g.originY + g.height * g.pixelY;
    const north = Math.max(yA, yB);
    const south = Math.min(yA, yB);
    if (north > 90 + 1e-6 || south < -90 - 1e-6) {
      throw new InputError(
        t.name,
        `a geographic tile reaching latitude ${(north > 90 ? north : south).toFixed(4)}°`,
        'latitudes within ±90°',
      );
    }
    if (north > POLAR_LIMIT_DEG || south < -POLAR_LIMIT_DEG) {
      throw new InputError(
        t.name,
        `a lon/lat tile reaching ${(north > POLAR_LIMIT_DEG ? north : south).toFixed(2)}° of latitude ` +
          `(beyond ±${POLAR_LIMIT_DEG}° a lon/lat grid's cells shrink to slivers and the sweep cannot step on them)`,
        `lon/lat terrain within ±${POLAR_LIMIT_DEG}° latitude; for polar regions reproject the DEM to a polar ` +
          'projection (a polar stereographic grid, e.g. EPSG:3031 or EPSG:3413), which Airshade reads as it is',
      );
    }
  }
}
