/**
 * Geodesy for the horizon engine: WGS84 geodesic radials from an antenna, mapped to raster pixels.
 *
 * Exact geodesics come from geographiclib-geodesic (Karney, "Algorithms for geodesics", J. Geodesy 87, 2013).
 * Calling it for every range sample of every radial would cost seconds, so the engine uses a coarse table of
 * exact positions and interpolates:
 *
 *   P(θ, s) = P0 + s · Q(θ, s),   Q = (P − P0) / s   (pixels per metre, smooth in θ and s)
 *
 * Q is tabulated every `azKnotDeg` of azimuth and every `rangeKnotM` of range, interpolated with a periodic
 * Catmull-Rom spline in azimuth and linearly in range. The error is far below a metre at 500 km (test:
 * test/geodesy.test.ts against direct geodesics). The inverse direction (a raster cell → azimuth and distance
 * from the antenna) is tabulated the same way in `VectorMap`.
 */
import geodesic from 'geographiclib-geodesic';

const WGS84 = geodesic.Geodesic.WGS84;
const DEG = Math.PI / 180;

/** lon/lat ↔ continuous pixel coordinates of one raster (centre of pixel (c, r) at (c + 0.5, r + 0.5)). */
export interface PixelMapper {
  lonLatToPixel(lon: number, lat: number, out: Float64Array | number[]): void;
  pixelToLonLat(x: number, y: number, out: Float64Array | number[]): void;
}

/** Exact direct geodesic (for tables and tests). Returns [lon, lat] in degrees. */
export function geodesicDirect(
  lon: number,
  lat: number,
  azimuthDeg: number,
  distanceM: number,
): [number, number] {
  const r = WGS84.Direct(lat, lon, azimuthDeg, distanceM);
  return [r.lon2 as number, r.lat2 as number];
}

/** Exact inverse geodesic: distance (m) and initial azimuth (deg, clockwise from north) from 1 to 2. */
export function geodesicInverse(
  lon1: number,
  lat1: number,
  lon2: number,
  lat2: number,
): { distanceM: number; azimuthDeg: number } {
  const r = WGS84.Inverse(lat1, lon1, lat2, lon2);
  return { distanceM: r.s12 as number, azimuthDeg: r.azi1 as number };
}

// ---------------------------------------------------------------------------------------------------------
// Pseudo-angle: a cheap monotone stand-in for atan2 that indexes radials without a trigonometric call per cell.
// Within each octant the azimuth measured from the north–south axis is replaced by G(t), t = minor/major
// component ratio, G(t) = π/4·t + 0.273·t·(1 − t): monotone, G(0) = 0, G(1) = π/4, within 0.004 rad of atan(t),
// so the radial density stays within ±5 % of uniform. Radials are spaced uniformly in this pseudo-angle; each
// radial's true azimuth is recovered once per radial with `pseudoToAzimuthRad`.
// ---------------------------------------------------------------------------------------------------------
const G_A = Math.PI / 4;
const G_B = 0.273;
const TWO_PI = 2 * Math.PI;
const HALF_PI = Math.PI / 2;

/** Pseudo-angle in [0, 2π) of the direction (east, north). Inline copy lives in the resampler's hot loop. */
export function pseudoAngle(east: number, north: number): number {
  const ax = east < 0 ? -east : east;
  const ay = north < 0 ? -north : north;
  let q: number;
  if (ax <= ay) {
    const t = ay === 0 ? 0 : ax / ay;
    q = t * (G_A + G_B * (1 - t));
  } else {
    const t = ay / ax;
    q = HALF_PI - t * (G_A + G_B * (1 - t));
  }
  if (east >= 0) return north >= 0 ? q : Math.PI - q;
  return north < 0 ? Math.PI + q : TWO_PI - q;
}

function gInverse(g: number): number {
  // Solve G_B t² − (G_A + G_B) t + g = 0 for the root in [0, 1].
  const b = G_A + G_B;
  return (b - Math.sqrt(b * b - 4 * G_B * g)) / (2 * G_B);
}

/** True azimuth (rad, clockwise from north, [0, 2π)) of the direction whose pseudo-angle is p. */
export function pseudoToAzimuthRad(p: number): number {
  p = ((p % TWO_PI) + TWO_PI) % TWO_PI;
  const quadrant = Math.floor(p / HALF_PI);
  let q = p - quadrant * HALF_PI;
  // Odd quadrants run the axis angle backwards.
  if (quadrant === 1 || quadrant === 3) q = HALF_PI - q;
  const a = q <= Math.PI / 4 ? Math.atan(gInverse(q)) : HALF_PI - Math.atan(gInverse(HALF_PI - q));
  switch (quadrant) {
    case 0:
      return a;
    case 1:
      return Math.PI - a;
    case 2:
      return Math.PI + a;
    default:
      return TWO_PI - a;
  }
}

// ---------------------------------------------------------------------------------------------------------
// Forward: (azimuth, range) → pixel.
// ---------------------------------------------------------------------------------------------------------
export interface FanOptions {
  /** Azimuth spacing of the exact table, degrees (default 1). */
  azKnotDeg?: number;
  /** Range spacing of the exact table, metres (default min(10 km, maxRange / 16)). */
  rangeKnotM?: number;
}

/** Plain-object form of a RadialFan (structured-cloneable: built once, sent to every worker). */
export interface RadialFanParts {
  readonly lon: number;
  readonly lat: number;
  readonly maxRangeM: number;
  readonly x0: number;
  readonly y0: number;
  readonly azKnotCount: number;
  readonly rangeKnotCount: number;
  readonly rangeKnotM: number;
  /** Q table: [(az * rangeKnotCount + m) * 2 + {0: x, 1: y}], pixels per metre. */
  readonly q: Float64Array;
}

export class RadialFan implements RadialFanParts {
  readonly lon: number;
  readonly lat: number;
  readonly maxRangeM: number;
  readonly x0: number;
  readonly y0: number;
  readonly azKnotCount: number;
  readonly rangeKnotCount: number;
  readonly rangeKnotM: number;
  readonly q: Float64Array;

  constructor(p: RadialFanParts) {
    this.lon = p.lon;
    this.lat = p.lat;
    this.maxRangeM = p.maxRangeM;
    this.x0 = p.x0;
    this.y0 = p.y0;
    this.azKnotCount = p.azKnotCount;
    this.rangeKnotCount = p.rangeKnotCount;
    this.rangeKnotM = p.rangeKnotM;
    this.q = p.q;
  }

  /** Tabulates exact geodesics from (lon, lat) out to maxRangeM, mapped to the pixels of `mapper`. */
  static build(
    lon: number,
    lat: number,
    maxRangeM: number,
    mapper: PixelMapper,
    options: FanOptions = {},
  ): RadialFan {
    const azKnotDeg = options.azKnotDeg ?? 1;
    const azKnotCount = Math.round(360 / azKnotDeg);
    const rangeKnotM = options.rangeKnotM ?? Math.max(50, Math.min(10_000, maxRangeM / 16));
    const rangeKnotCount = Math.ceil(maxRangeM / rangeKnotM) + 2;
    const p = [0, 0];
    mapper.lonLatToPixel(lon, lat, p);
    const x0 = p[0];
    const y0 = p[1];
    const nA = azKnotCount;
    const nS = rangeKnotCount;
    const q = new Float64Array(nA * nS * 2);
    for (let a = 0; a < nA; a++) {
      const azDeg = (a * 360) / nA;
      const line = WGS84.DirectLine(lat, lon, azDeg, maxRangeM);
      for (let m = 0; m < nS; m++) {
        // At s = 0 the quotient is the limit; one metre out is as good as the limit for a table.
        const s = m === 0 ? 1 : m * rangeKnotM;
        const pos = line.Position(s);
        mapper.lonLatToPixel(pos.lon2 as number, pos.lat2 as number, p);
        const k = (a * nS + m) * 2;
        q[k] = (p[0] - x0) / s;
        q[k + 1] = (p[1] - y0) / s;
      }
    }
    return new RadialFan({ lon, lat, maxRangeM, x0, y0, azKnotCount, rangeKnotCount, rangeKnotM, q });
  }

  /**
   * Q at every range knot for one azimuth, into out[m*2], out[m*2+1] (length ≥ 2 × rangeKnotCount).
   * Periodic Catmull-Rom across the azimuth table.
   */
  knotsForAzimuth(azimuthRad: number, out: Float64Array): void {
    const nA = this.azKnotCount;
    const nS = this.rangeKnotCount;
    let u = (azimuthRad / TWO_PI) * nA;
    u = ((u % nA) + nA) % nA;
    const a1 = Math.floor(u);
    const t = u - a1;
    const a0 = (a1 - 1 + nA) % nA;
    const a2 = (a1 + 1) % nA;
    const a3 = (a1 + 2) % nA;
    const t2 = t * t;
    const t3 = t2 * t;
    const w0 = -0.5 * t3 + t2 - 0.5 * t;
    const w1 = 1.5 * t3 - 2.5 * t2 + 1;
    const w2 = -1.5 * t3 + 2 * t2 + 0.5 * t;
    const w3 = 0.5 * t3 - 0.5 * t2;
    const q = this.q;
    const b0 = a0 * nS * 2;
    const b1 = (a1 % nA) * nS * 2;
    const b2 = a2 * nS * 2;
    const b3 = a3 * nS * 2;
    for (let k = 0; k < nS * 2; k++) {
      out[k] = w0 * q[b0 + k] + w1 * q[b1 + k] + w2 * q[b2 + k] + w3 * q[b3 + k];
    }
  }

  /** Pixel position at (azimuth, range) through the table (used by tests and by slow paths). */
  position(azimuthRad: number, rangeM: number, out: Float64Array | number[]): void {
    const knots = new Float64Array(this.rangeKnotCount * 2);
    this.knotsForAzimuth(azimuthRad, knots);
    const u = rangeM / this.rangeKnotM;
    const m = Math.min(Math.floor(u), this.rangeKnotCount - 2);
    const f = u - m;
    const qx = knots[m * 2] * (1 - f) + knots[m * 2 + 2] * f;
    const qy = knots[m * 2 + 1] * (1 - f) + knots[m * 2 + 3] * f;
    out[0] = this.x0 + rangeM * qx;
    out[1] = this.y0 + rangeM * qy;
  }
}

// ---------------------------------------------------------------------------------------------------------
// Inverse: output raster cell → ground vector from the antenna.
// ---------------------------------------------------------------------------------------------------------

/** The geodesic vector from the site to pixel (x, y) of a grid, into out (NaN where it maps to no lon/lat). */
function nodeVector(
  siteLon: number,
  siteLat: number,
  mapper: PixelMapper,
  x: number,
  y: number,
  ll: number[],
  out: number[],
): void {
  try {
    mapper.pixelToLonLat(x, y, ll);
  } catch {
    ll[0] = NaN;
  }
  if (!Number.isFinite(ll[0]) || !Number.isFinite(ll[1])) {
    out[0] = NaN;
    out[1] = NaN;
    return;
  }
  const r = WGS84.Inverse(siteLat, siteLon, ll[1], ll[0]);
  const s = r.s12 as number;
  const az = (r.azi1 as number) * DEG;
  out[0] = s * Math.sin(az);
  out[1] = s * Math.cos(az);
}

/** Ground size (m) of one cell near the middle of a grid: the larger of its two sides. */
function cellSizeM(width: number, height: number, mapper: PixelMapper): number {
  const a = [0, 0];
  const b = [0, 0];
  const c = [0, 0];
  const x = width / 2;
  const y = height / 2;
  mapper.pixelToLonLat(x, y, a);
  mapper.pixelToLonLat(x + 1, y, b);
  mapper.pixelToLonLat(x, y + 1, c);
  const dx = WGS84.Inverse(a[1], a[0], b[1], b[0]).s12 as number;
  const dy = WGS84.Inverse(a[1], a[0], c[1], c[0]).s12 as number;
  const m = Math.max(dx, dy);
  return Number.isFinite(m) && m > 0 ? m : 1;
}

/**
 * The geodesic from the antenna to each point of a raster, as the vector v = s · (sin θ, cos θ) (metres east,
 * north in the antenna's azimuth frame). v is a smooth function of pixel position (no wrap at north, no
 * singularity at the antenna), so it is tabulated exactly on a lattice every `block` pixels and interpolated
 * bilinearly (error ≈ block² · cell² / (8 R), millimetres).
 */
export interface VectorMapParts {
  readonly width: number;
  readonly height: number;
  readonly block: number;
  readonly nodesX: number;
  readonly nodesY: number;
  /** [(ny * nodesX + nx) * 2 + {0: east, 1: north}], NaN where a node does not map to lon/lat. */
  readonly v: Float64Array;
}

/**
 * The grid sweep's antenna (core/floor.ts `computeGridFloor`): the cell holding the site, and the vector map from that
 * cell's centre over the grid. Plain data, so that `airshade floor` has a worker thread build it while this one reads
 * the DEM's pixels (a grid's geometry is all it needs): the same bits as built here.
 */
export interface GridAntenna {
  readonly col: number;
  readonly row: number;
  readonly vmap: VectorMapParts;
}

/** The cell (column, row) holding a lon/lat, possibly off the grid. */
export function antennaCell(mapper: PixelMapper, lon: number, lat: number): { col: number; row: number } {
  const p = [0, 0];
  mapper.lonLatToPixel(lon, lat, p);
  return { col: Math.floor(p[0]), row: Math.floor(p[1]) };
}

/** The vector map over a width × height grid from the centre of cell (col, row), where the sweep puts the antenna. */
export function antennaVectorMap(
  mapper: PixelMapper,
  width: number,
  height: number,
  col: number,
  row: number,
): VectorMap {
  const centre = [0, 0];
  mapper.pixelToLonLat(col + 0.5, row + 0.5, centre);
  return VectorMap.build(centre[0], centre[1], width, height, mapper);
}

/** `antennaCell` and `antennaVectorMap` together. */
export function gridAntenna(
  mapper: PixelMapper,
  width: number,
  height: number,
  lon: number,
  lat: number,
): GridAntenna {
  const { col, row } = antennaCell(mapper, lon, lat);
  const m = antennaVectorMap(mapper, width, height, col, row);
  return {
    col,
    row,
    vmap: { width: m.width, height: m.height, block: m.block, nodesX: m.nodesX, nodesY: m.nodesY, v: m.v },
  };
}

export class VectorMap implements VectorMapParts {
  readonly width: number;
  readonly height: number;
  readonly block: number;
  readonly nodesX: number;
  readonly nodesY: number;
  readonly v: Float64Array;

  constructor(p: VectorMapParts) {
    this.width = p.width;
    this.height = p.height;
    this.block = p.block;
    this.nodesX = p.nodesX;
    this.nodesY = p.nodesY;
    this.v = p.v;
  }

  /**
   * Tabulates the exact inverse geodesic from the site to the centre of every `block`-th cell of a width × height
   * grid. The default block keeps the interpolation error (node spacing d: about d²/(8R)) under 0.3 m or a
   * thousandth of a cell, whichever is larger, with nodes at most 64 cells apart; a block of 1 makes every cell
   * exact. With `cells`, only the nodes that cells in that window read (`at` at their centres, and the resampler)
   * are computed, the rest left NaN: the same values there, for the inverse geodesics of the window alone (a site's
   * reach is often a small part of a large grid).
   */
  static build(
    siteLon: number,
    siteLat: number,
    width: number,
    height: number,
    mapper: PixelMapper,
    block?: number,
    cells?: { row0: number; row1: number; col0: number; col1: number },
  ): VectorMap {
    const { b, nodesX, nodesY } = VectorMap.lattice(width, height, mapper, block);
    const v = new Float64Array(nodesX * nodesY * 2);
    // A cell at column c reads nodes ⌊c/b⌋ and the next (kept within the lattice).
    const x0 = cells ? Math.max(0, Math.floor(cells.col0 / b)) : 0;
    const x1 = cells ? Math.min(nodesX - 1, Math.floor((cells.col1 - 1) / b) + 1) : nodesX - 1;
    const y0 = cells ? Math.max(0, Math.floor(cells.row0 / b)) : 0;
    const y1 = cells ? Math.min(nodesY - 1, Math.floor((cells.row1 - 1) / b) + 1) : nodesY - 1;
    if (cells) v.fill(NaN);
    const ll = [0, 0];
    const out = [0, 0];
    for (let ny = y0; ny <= y1; ny++) {
      for (let nx = x0; nx <= x1; nx++) {
        const k = (ny * nodesX + nx) * 2;
        nodeVector(siteLon, siteLat, mapper, nx * b + 0.5, ny * b + 0.5, ll, out);
        v[k] = out[0];
        v[k + 1] = out[1];
      }
    }
    return new VectorMap({ width, height, block: b, nodesX, nodesY, v });
  }

  /** The lattice `build` tabulates: its spacing `b` (cells between nodes) and its nodes across and down. */
  private static lattice(
    width: number,
    height: number,
    mapper: PixelMapper,
    block?: number,
  ): { b: number; nodesX: number; nodesY: number } {
    const b = VectorMap.blockFor(width, height, mapper, block);
    return { b, nodesX: Math.ceil((width - 1) / b) + 1, nodesY: Math.ceil((height - 1) / b) + 1 };
  }

  /** The lattice spacing `build` uses (cells between nodes). */
  static blockFor(width: number, height: number, mapper: PixelMapper, block?: number): number {
    if (block !== undefined) return block;
    // Bilinear error between nodes d apart is about d²/(8R): allow 0.3 m, or a thousandth of a cell on coarse grids.
    const cellM = cellSizeM(width, height, mapper);
    const spanM = Math.sqrt(8 * 6_371_000 * Math.max(0.3, cellM * 1e-3));
    return Math.max(1, Math.min(64, Math.floor(spanM / cellM)));
  }

  /**
   * The largest distance from the site to the lattice's four corner nodes: a lower bound of `maxDistanceM` of the
   * whole lattice (the same values), for the price of four inverse geodesics.
   */
  static cornerReachM(
    siteLon: number,
    siteLat: number,
    width: number,
    height: number,
    mapper: PixelMapper,
    block?: number,
  ): number {
    const { b, nodesX, nodesY } = VectorMap.lattice(width, height, mapper, block);
    const ll = [0, 0];
    const out = [0, 0];
    let m = 0;
    for (const ny of [0, nodesY - 1]) {
      for (const nx of [0, nodesX - 1]) {
        nodeVector(siteLon, siteLat, mapper, nx * b + 0.5, ny * b + 0.5, ll, out);
        const d = Math.hypot(out[0], out[1]);
        if (d > m) m = d;
      }
    }
    return m;
  }

  /** Largest distance from the site to any node (the farthest corner of the grid, within a block). */
  maxDistanceM(): number {
    let m = 0;
    for (let k = 0; k < this.v.length; k += 2) {
      const d = Math.hypot(this.v[k], this.v[k + 1]);
      if (d > m) m = d;
    }
    return m;
  }

  /** v at continuous pixel coordinates (x, y), into out[0..1]. */
  at(x: number, y: number, out: Float64Array | number[]): void {
    const b = this.block;
    const gx = Math.min(Math.max((x - 0.5) / b, 0), Math.max(0, this.nodesX - 1.000001));
    const gy = Math.min(Math.max((y - 0.5) / b, 0), Math.max(0, this.nodesY - 1.000001));
    const ix = Math.floor(gx);
    const iy = Math.floor(gy);
    const fx = gx - ix;
    const fy = gy - iy;
    const n = this.nodesX;
    const v = this.v;
    const k00 = (iy * n + ix) * 2;
    const k01 = this.nodesX > 1 ? k00 + 2 : k00;
    const k10 = this.nodesY > 1 ? k00 + n * 2 : k00;
    const k11 = k10 + (k01 - k00);
    for (let c = 0; c < 2; c++) {
      const top = v[k00 + c] * (1 - fx) + v[k01 + c] * fx;
      const bot = v[k10 + c] * (1 - fx) + v[k11 + c] * fx;
      out[c] = top * (1 - fy) + bot * fy;
    }
  }
}
