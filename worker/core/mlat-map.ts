/**
 * The multilateration accuracy map: per analysis cell at one level, the 1σ horizontal DRMS (metres) of the
 * time-of-arrival fix of a target over the cell centre, from the receivers whose footprints cover that cell at
 * that altitude; NaN where fewer receivers than needed see it (or the geometry fixes no horizontal position).
 *
 * Model: mlat.ts (Torrieri, "Statistical theory of passive location systems", IEEE Trans. AES-20(2), 1984, TOA
 * least squares with the emission time unknown), each receiver weighted by its own σ (its type's timingErrorNs).
 * Which receivers hear the target is the footprints' business (line of sight from the per-site floors, the
 * reception band): a receiver counts at cell i and true altitude h iff `coversAt(fp, i, h)` (lo ≤ h ≤ hi).
 *
 * Geometry — exact up to floating point, no flat-earth step. Receivers and targets are placed in WGS84
 * earth-centred coordinates (ECEF) and the receiver → target vectors are rotated into the east-north-up frame of
 * the target itself (the cell centre at altitude h), whose horizontal plane is the one the DRMS is measured in.
 * Done per cell naively that is one geodetic conversion per cell and a 3×3 rotation per (cell, receiver). Here it
 * is separated, with no approximation:
 * - per receiver, once: its ECEF position R (proj4 `+proj=geocent`, as mlat.ts's EnuFrame);
 * - per row, once: the target's ECEF radius from the axis X0 = (N(φ)+h)·cos φ and its Z (proj4 at longitude 0),
 *   and sin φ, cos φ of the row's geodetic latitude;
 * - per column: cos λ, sin λ; per (receiver, column) of the receiver's window, once:
 *     E = Rx·sin λ − Ry·cos λ   and   q = Rx·cos λ + Ry·sin λ;
 * - per (cell, receiver): with p = X0 − q and dz = Z − Rz, the receiver → target vector in the target's frame is
 *     (E,  −sin φ·p + cos φ·dz,  cos φ·p + sin φ·dz)
 *   — the rotation of T − R with T = (X0 cos λ, X0 sin λ, Z) written out: four multiply-adds per pair.
 * Float64 throughout: ECEF coordinates of ~6.4e6 m carry ~1e-9 m of rounding, nothing against tens of km.
 *
 * The approximation that remains is the vertical datum's: receiver and target altitudes are above mean sea level
 * and are used as heights above the ellipsoid, as mlat.ts's EnuFrame allows when the geoid separation is nearly
 * the same across one network. A common separation N raises every point along its own normal, which scales the
 * geometry by (Re + N)/Re (< 2e-5 for |N| ≤ 110 m): the DRMS changes by less than that. A separation that varies
 * by ΔN across the network tilts the receiver → target lines by about ΔN/d (1 m over 20 km: 5e-5 rad), and the
 * DRMS, a function of cos α, by a few 1e-5 relative at most for such figures. No refraction bends the lines
 * (mlat.ts's straight-line assumption).
 *
 * No cap on the receivers per cell: every receiver that sees the cell is used. A receiver's share of the normal
 * matrix is cos²α/σ² on the horizontal axes whatever its distance, so the far receivers of a large network are
 * worth as much as the near ones and no "nearest K" subset keeps the DRMS within 1 % in general. The cost is
 * linear in the (cell, receiver) pairs in view: per row the receivers whose windows span it, each walking its own
 * columns (a chunk of the row at a time) and appending itself to the lists of the cells it covers; then the solver
 * per cell. Measured once while writing this (2 shared cores, 1.2 M cells × 24 receivers all in view): 1.7–2.8 ×
 * the solver alone on precomputed coordinates, ~60 ns per pair; an EnuFrame (proj4) per cell is ~20 × slower.
 *
 * Limits (docs/PHYSICS.md §7a): independent Gaussian arrival-time errors, synchronised receivers, no multipath,
 * garbling or FRUIT; the linearised covariance (Cramér–Rao type) — no bias or ambiguity far outside the network.
 * An unaided fix from exactly 4 receivers is exactly determined and singular on whole lines (e.g. the symmetry
 * axes of a square of receivers at one height): NaN there, very large values beside them.
 */
import proj4 from 'proj4';
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD } from '../../shared/units.ts';
import { TOP_M, windowCellCount, type Footprint } from './footprint.ts';
import type { GridGeo } from './grid.ts';
import { MLAT_MIN_RECEIVERS, mlatHorizontalDrmsFlat } from './mlat.ts';

/** One multilateration receiver of the network: where its antenna is, how well it times, what it hears. */
export interface MlatReceiver {
  /** Its footprint on the analysis grid for the study's target (kind `mlat`, or any footprint the caller picks). */
  readonly footprint: Footprint;
  /** Antenna position: WGS84 longitude and latitude (degrees) and altitude AMSL (m; ground + mast). */
  readonly lonDeg: number;
  readonly latDeg: number;
  readonly antennaAltM: number;
  /** 1σ arrival-time error of this receiver (its type's `timingErrorNs`), nanoseconds. */
  readonly timingErrorNs: number;
}

export interface MlatMapInput {
  /** The analysis grid (geographic lon/lat cells); the footprints' windows index it. */
  readonly grid: GridGeo;
  /** The multilateration receivers (the caller picks which footprints these are). */
  readonly receivers: readonly MlatReceiver[];
  /** The level's true altitude (m AMSL): the target's height over every cell, and the altitude coversAt checks. */
  readonly altitudeM: number;
  /** The target reports its pressure altitude and the fix takes it as known (3 receivers suffice, not 4). */
  readonly altitudeKnown: boolean;
  /**
   * Receivers that must see a cell for it to get a value: default MLAT_MIN_RECEIVERS (4 unaided, 3 with the
   * altitude known); more may be asked for, never fewer.
   */
  readonly minReceivers?: number;
  /** Only these cells are computed (rows [row0, row1) × columns [col0, col1)); the rest stay NaN. Default all. */
  readonly only?: { row0: number; row1: number; col0: number; col1: number };
}

/** Lowest true altitude accepted for the target (m AMSL); the highest is footprint.ts's TOP_M. */
const MIN_ALTITUDE_M = -1_000;

/** Columns per chunk of a row: the chunk's receiver lists (8·4 bytes per receiver and cell) stay small. */
const CHUNK_COLS = 256;

const GEOCENTRIC = proj4(
  '+proj=longlat +datum=WGS84 +no_defs',
  '+proj=geocent +datum=WGS84 +units=m +no_defs',
);

/**
 * The accuracy map: per grid cell (row · width + column), the 1σ horizontal DRMS in metres of the multilateration
 * fix of a target at `altitudeM` over the cell centre; NaN where fewer than `minReceivers` receivers cover the
 * cell at that altitude or the geometry fixes no horizontal position. Throws InputError (before any work) on a
 * grid that is not geographic, an altitude out of range, a receiver off the globe or with a σ that is not a
 * positive number, a footprint whose window does not fit the grid, or `minReceivers` below the fix's minimum.
 */
export function mlatAccuracyMap(input: MlatMapInput): Float32Array {
  const { grid, receivers, altitudeM: h, altitudeKnown } = input;
  const minReceivers = checkInput(input);
  const { width, height } = grid;
  const out = new Float32Array(width * height).fill(NaN);
  const count = receivers.length;
  if (count < minReceivers) return out;

  // Per receiver: ECEF, σ (s), and E, q per column of its window.
  const rxX = new Float64Array(count);
  const rxY = new Float64Array(count);
  const rxZ = new Float64Array(count);
  const sigma = new Float64Array(count);
  const colE: Float64Array[] = [];
  const colQ: Float64Array[] = [];
  const cosLon = new Float64Array(width);
  const sinLon = new Float64Array(width);
  for (let c = 0; c < width; c++) {
    const lon = (grid.originX + (c + 0.5) * grid.pixelX) * DEG_TO_RAD;
    cosLon[c] = Math.cos(lon);
    sinLon[c] = Math.sin(lon);
  }
  for (let i = 0; i < count; i++) {
    const r = receivers[i];
    const [x, y, z] = GEOCENTRIC.forward([r.lonDeg, r.latDeg, r.antennaAltM]);
    rxX[i] = x;
    rxY[i] = y;
    rxZ[i] = z;
    sigma[i] = r.timingErrorNs * 1e-9;
    const w = r.footprint.window;
    const ww = Math.max(0, w.col1 - w.col0);
    const e = new Float64Array(ww);
    const q = new Float64Array(ww);
    for (let k = 0; k < ww; k++) {
      const c = w.col0 + k;
      e[k] = x * sinLon[c] - y * cosLon[c];
      q[k] = x * cosLon[c] + y * sinLon[c];
    }
    colE.push(e);
    colQ.push(q);
  }

  // Per row, receiver by receiver over a chunk of columns: each covered (cell, receiver) pair appends the receiver
  // to the cell's list (receivers keep their order), then the solver runs per cell. The lists live in `buf`,
  // CHUNK_COLS cells × count receivers × (e, n, u) relative to the target (the target at the origin).
  const chunk = Math.min(width, CHUNK_COLS);
  const buf = new Float64Array(chunk * count * 3);
  const sbuf = new Float64Array(chunk * count);
  const inView = new Int32Array(chunk);
  const rx = new Float64Array(3 * count);
  const sig = new Float64Array(count);
  const active = new Int32Array(count);
  const xyz = [0, 0, 0];
  const only = input.only ?? { row0: 0, row1: height, col0: 0, col1: width };
  const rowFrom = Math.max(0, only.row0);
  const rowTo = Math.min(height, only.row1);
  const colFrom = Math.max(0, only.col0);
  const colTo = Math.min(width, only.col1);
  for (let row = rowFrom; row < rowTo; row++) {
    let nActive = 0;
    for (let i = 0; i < count; i++) {
      const w = receivers[i].footprint.window;
      if (row >= w.row0 && row < w.row1 && w.col1 > w.col0) active[nActive++] = i;
    }
    if (nActive < minReceivers) continue;
    const lat = grid.originY + (row + 0.5) * grid.pixelY;
    xyz[0] = 0;
    xyz[1] = lat;
    xyz[2] = h;
    const t = GEOCENTRIC.forward(xyz);
    const x0 = t[0];
    const zt = t[2];
    const sinLat = Math.sin(lat * DEG_TO_RAD);
    const cosLat = Math.cos(lat * DEG_TO_RAD);
    const outRow = row * width;
    for (let c0 = colFrom; c0 < colTo; c0 += chunk) {
      const c1 = Math.min(colTo, c0 + chunk);
      inView.fill(0);
      for (let a = 0; a < nActive; a++) {
        const i = active[a];
        const fp = receivers[i].footprint;
        const w = fp.window;
        const from = Math.max(c0, w.col0);
        const to = Math.min(c1, w.col1);
        if (from >= to) continue;
        const lo = fp.lo;
        const hi = fp.hi;
        const e = colE[i];
        const q = colQ[i];
        const ww = w.col1 - w.col0;
        // Window-local index of (row, col0): the cell at column c is base + c − col0.
        const base = (row - w.row0) * ww - w.col0;
        const dz = zt - rxZ[i];
        const nz = -cosLat * dz;
        const uz = -sinLat * dz;
        const s = sigma[i];
        for (let c = from; c < to; c++) {
          const li = base + c;
          if (!(lo[li] <= h && h <= hi[li])) continue;
          const k = c - w.col0;
          const p = x0 - q[k];
          const cell = c - c0;
          const j = cell * count + inView[cell]++;
          // The receiver's position relative to the target, in the target's ENU frame: −(receiver → target).
          const m = 3 * j;
          buf[m] = -e[k];
          buf[m + 1] = sinLat * p + nz;
          buf[m + 2] = uz - cosLat * p;
          sbuf[j] = s;
        }
      }
      for (let c = c0; c < c1; c++) {
        const cell = c - c0;
        const n = inView[cell];
        if (n < minReceivers) continue;
        const j0 = cell * count;
        for (let j = 0; j < n; j++) {
          const from = 3 * (j0 + j);
          rx[3 * j] = buf[from];
          rx[3 * j + 1] = buf[from + 1];
          rx[3 * j + 2] = buf[from + 2];
          sig[j] = sbuf[j0 + j];
        }
        out[outRow + c] = mlatHorizontalDrmsFlat(rx, n, 0, 0, 0, sig, altitudeKnown);
      }
    }
  }
  return out;
}

/** Checks everything before any work; returns the receivers needed per cell. */
function checkInput(input: MlatMapInput): number {
  const { grid, receivers, altitudeM, altitudeKnown } = input;
  const where = 'mlatAccuracyMap';
  if (grid.crs.kind !== 'geographic') {
    throw new InputError(
      `${where}: grid`,
      `a ${grid.crs.label} grid`,
      'the geographic (lon/lat) analysis grid',
    );
  }
  if (!(Number.isFinite(altitudeM) && altitudeM >= MIN_ALTITUDE_M && altitudeM <= TOP_M)) {
    throw new InputError(
      `${where}: altitudeM`,
      String(altitudeM),
      `a true altitude in metres AMSL from ${MIN_ALTITUDE_M} to ${TOP_M}`,
    );
  }
  const least = altitudeKnown ? MLAT_MIN_RECEIVERS.altitudeKnown : MLAT_MIN_RECEIVERS.unaided;
  const minReceivers = input.minReceivers ?? least;
  if (!(Number.isInteger(minReceivers) && minReceivers >= least)) {
    throw new InputError(
      `${where}: minReceivers`,
      String(input.minReceivers),
      `a whole number ≥ ${least} (${altitudeKnown ? 'e, n and the emission time' : 'e, n, u and the emission time'} are unknown)`,
    );
  }
  receivers.forEach((r, i) => {
    const at = `${where}: receivers[${i}] (site ${JSON.stringify(r.footprint?.siteId)})`;
    if (!(Number.isFinite(r.lonDeg) && r.lonDeg >= -540 && r.lonDeg <= 540)) {
      throw new InputError(`${at}.lonDeg`, String(r.lonDeg), 'a longitude in degrees');
    }
    if (!(Number.isFinite(r.latDeg) && r.latDeg >= -90 && r.latDeg <= 90)) {
      throw new InputError(`${at}.latDeg`, String(r.latDeg), 'a latitude in degrees from −90 to 90');
    }
    if (!(Number.isFinite(r.antennaAltM) && r.antennaAltM >= MIN_ALTITUDE_M && r.antennaAltM <= TOP_M)) {
      throw new InputError(
        `${at}.antennaAltM`,
        String(r.antennaAltM),
        `an antenna altitude in metres AMSL from ${MIN_ALTITUDE_M} to ${TOP_M}`,
      );
    }
    if (!(Number.isFinite(r.timingErrorNs) && r.timingErrorNs > 0)) {
      throw new InputError(
        `${at}.timingErrorNs`,
        String(r.timingErrorNs),
        'a 1σ arrival-time error in nanoseconds above 0 (e.g. 50)',
      );
    }
    const fp = r.footprint;
    const w = fp?.window;
    if (
      w === undefined ||
      w.width !== grid.width ||
      !(w.row0 >= 0 && w.row0 <= w.row1 && w.row1 <= grid.height) ||
      !(w.col0 >= 0 && w.col0 <= w.col1 && w.col1 <= grid.width)
    ) {
      throw new InputError(
        `${at}.footprint.window`,
        w === undefined
          ? 'none'
          : `rows ${w.row0}…${w.row1}, columns ${w.col0}…${w.col1} of width ${w.width}`,
        `a window inside the ${grid.width} × ${grid.height} analysis grid (footprints of this grid)`,
      );
    }
    const cells = windowCellCount(w);
    if (fp.lo.length !== cells || fp.hi.length !== cells) {
      throw new InputError(
        `${at}.footprint.lo/hi`,
        `${fp.lo.length} and ${fp.hi.length} values`,
        `${cells}, one per cell of the window`,
      );
    }
  });
  return minReceivers;
}
