/**
 * The grid-native floor sweep: one antenna's terrain-masking floor computed straight on the DEM's own cells,
 * line by line outward from the antenna, with no polar buffer and no resampling — for `airshade floor`, whose
 * output is the DEM's grid.
 *
 * Sampling (Franklin & Ray 1994, "Higher isn't necessarily better: visibility algorithms and experiments"): the
 * terrain along the sight line from the antenna to a cell centre is taken where the line crosses the row and
 * column lines of cell centres, interpolated linearly between the two cells on that line — their R3 rule, which
 * the exact reference (test/reference/raywalk.ts) applies at every crossing.
 * - Near the antenna (within NEAR_CELLS cells, Chebyshev distance) every crossing is sampled: the exact R3 walk.
 *   There neighbouring sight lines part fastest, so carrying the screening from cell to cell would blur it most.
 * - Farther out only the last crossing before the cell is sampled; the screening of everything nearer is the
 *   screening already computed along that line of cells, interpolated at the crossing — the propagation of
 *   Franklin & Ray's R2/"XDraw" family. Linear interpolation there acts like a first-order upwind scheme and
 *   smears shadow edges line after line; a monotone cubic (Fritsch & Carlson 1980, "Monotone piecewise cubic
 *   interpolation", SIAM J. Numer. Anal. 17(2)) keeps them sharp without overshoot. The terrain at the crossing
 *   stays linear, as R3 defines it. This interpolation is the one approximation; test/grid-sweep.test.ts
 *   measures it against the exact walk.
 *
 * Geometry (the same as horizon.ts, DESIGN §4): on an effective earth Re = k·R, a point at ground distance s and
 * altitude z seen from an antenna at altitude ha has tan ε = ((Re + z)·cos(s/Re) − (Re + ha)) / ((Re + z)·sin(s/Re));
 * a cell's floor is the altitude whose ε equals the screening tan T: h = (Re + ha) / (cos(s/Re) − T·sin(s/Re)) − Re,
 * never below the cell's ground. Cell distances s are geodesic (VectorMap: the exact inverse geodesic at a
 * lattice of nodes); a crossing at fraction t of the way to the cell is at t·s. Sight lines are straight on the
 * grid, so the caller uses this sweep only where straight grid lines follow geodesics to within a fraction of a
 * cell (projected grids, or a short reach on geographic ones): see `gridSweepFits`.
 *
 * The antenna stands at the centre of the cell that holds the site (as in the reference walk); its ground is that
 * cell's height. The plane is cut into eight octants around the antenna: the four "row" octants (|columns| ≤
 * |rows| away) take rows as lines, the four "column" octants take columns. Cell (d, m) (line d, m cells along it)
 * depends only on line d − 1 of its own octant, so octants run in parallel and each sweeps its lines outward.
 * Column octants gather 64 columns at a time into a small block so every read and write runs along rows. The
 * floor may be written over the terrain itself (in place): a line's heights are read before its floors replace
 * them, and the cells two octants share (the axes and diagonals) and the near field are read from copies made
 * before any octant starts (`GridPristine`).
 *
 * Unknown terrain (NaN) makes every sight line through it unknown (NaN), never sea level.
 *
 * Speed: a line's work (widening its terrain to doubles, its distances, the far-field propagation and floors, its
 * floors written out in the output's order) runs in a WebAssembly kernel (worker/kernel/line-kernel.ts, two cells
 * at a time by 128-bit SIMD), on buffers in the kernel's own memory; rows of terrain and floors go in and out by
 * block copies. The JavaScript twins below (`jsLineOps`) compute the same bits and run where the kernel cannot.
 * Angles are distances times 1/Re, and the series' constants are multiplied, not divided by: the kernel divides
 * only where it must (the rising screening's tan and the floor's altitude).
 */
import { FLOOR_CAP_M } from './floor-cap.ts';
import type { VectorMapParts } from './geodesy.ts';
import { lineKernel } from './line-kernel.ts';

const NOTHING = -1e9;
/** The exact walk's reach around the antenna, in cells (Chebyshev distance). */
export const NEAR_CELLS = 32;
/** Lines a column octant gathers at a time. */
const BLOCK = 64;

/** One octant of one antenna's grid sweep; plain data, so it can be posted to a worker. */
export interface GridSweepTask {
  /** The terrain lattice (row-major, NaN = unknown). */
  readonly width: number;
  readonly height: number;
  /** The antenna's cell. */
  readonly col: number;
  readonly row: number;
  readonly antennaAltM: number;
  /** Effective earth radius k·R, m. */
  readonly reM: number;
  readonly maxRangeM: number;
  /** The octant: columns +1 (east on a north-up grid) or −1, rows +1 (down) or −1; lines are columns or rows. */
  readonly sx: 1 | -1;
  readonly sy: 1 | -1;
  readonly lines: 'rows' | 'columns';
  /** Where the floor goes: a window of the terrain lattice (its top-left cell and size). */
  readonly outCol0: number;
  readonly outRow0: number;
  readonly outWidth: number;
  readonly outHeight: number;
  /** Cell-centre distances from the antenna over the terrain lattice. */
  readonly vmap: VectorMapParts;
  /** false: the line operations in JavaScript even where the WebAssembly kernel could run (tests, benchmarks). */
  readonly kernel?: boolean;
}

/** An octant's work, in cells (lines × cells along them): how the octants are ordered and shared out. */
export function gridSweepTaskCells(t: GridSweepTask): number {
  const lines =
    t.lines === 'rows' ? (t.sy > 0 ? t.height - 1 - t.row : t.row) : t.sx > 0 ? t.width - 1 - t.col : t.col;
  const along =
    t.lines === 'rows' ? (t.sx > 0 ? t.width - 1 - t.col : t.col) : t.sy > 0 ? t.height - 1 - t.row : t.row;
  return Math.max(0, lines) * Math.max(0, along);
}

/**
 * Column octants take longer than row octants of as many cells: each block of their lines is gathered from and
 * written back to 64 cells of every row (strided), where a row octant copies whole rows. Measured at 8192² with
 * two lanes: 353 ms against 300 ms on average (twelve octants of each kind over three runs), hence 1.2.
 */
const COLUMN_OCTANT_COST = 1.2;

/** An octant's expected time, in row-octant cells: the order the octants are handed to the lanes (longest first). */
export function gridSweepTaskCost(t: GridSweepTask): number {
  return gridSweepTaskCells(t) * (t.lines === 'columns' ? COLUMN_OCTANT_COST : 1);
}

export interface GridSweepCounts {
  /** Output cells beyond the range (a cell two octants share is counted by one). */
  beyondRange: number;
  /** Output cells in range without a value (unknown ground or unknown terrain on the sight line). */
  unknown: number;
}

/** Terrain copied before any octant may overwrite it: the antenna's row and column, the diagonals, the near field. */
export interface GridPristine {
  readonly rowAxis: Float32Array;
  readonly colAxis: Float32Array;
  /** Heights along the four half-diagonals from the antenna, index (sx > 0 ? 0 : 1) + (sy > 0 ? 0 : 2). */
  readonly diagonals: readonly Float32Array[];
  /** The (2·NEAR_CELLS + 1)² cells around the antenna, NaN off the lattice. */
  readonly near: Float32Array;
}

export function copyPristine(
  data: Float32Array,
  width: number,
  height: number,
  col: number,
  row: number,
): GridPristine {
  const rowAxis = data.slice(row * width, (row + 1) * width);
  const colAxis = new Float32Array(height);
  for (let r = 0; r < height; r++) colAxis[r] = data[r * width + col];
  const diagonals: Float32Array[] = [];
  for (const sy of [1, -1]) {
    for (const sx of [1, -1]) {
      const n = Math.min(sx > 0 ? width - 1 - col : col, sy > 0 ? height - 1 - row : row) + 1;
      const d = new Float32Array(n);
      for (let i = 0; i < n; i++) d[i] = data[(row + sy * i) * width + col + sx * i];
      diagonals.push(d);
    }
  }
  const side = 2 * NEAR_CELLS + 1;
  const near = new Float32Array(side * side).fill(NaN);
  for (let dr = -NEAR_CELLS; dr <= NEAR_CELLS; dr++) {
    const r = row + dr;
    if (r < 0 || r >= height) continue;
    for (let dc = -NEAR_CELLS; dc <= NEAR_CELLS; dc++) {
      const c = col + dc;
      if (c >= 0 && c < width) near[(dr + NEAR_CELLS) * side + dc + NEAR_CELLS] = data[r * width + c];
    }
  }
  return { rowAxis, colAxis, diagonals, near };
}

/** The eight octants of an antenna, as tasks. */
export function gridSweepTasks(base: Omit<GridSweepTask, 'sx' | 'sy' | 'lines'>): GridSweepTask[] {
  const tasks: GridSweepTask[] = [];
  for (const lines of ['rows', 'columns'] as const)
    for (const sy of [1, -1] as const)
      for (const sx of [1, -1] as const) tasks.push({ ...base, sx, sy, lines });
  return tasks;
}

/**
 * Whether straight lines on this grid follow geodesics closely enough for the sweep: on a projected grid they
 * do (the scale varies slowly); on a geographic grid a straight line of length L departs from the geodesic by
 * about L²·tan|φ|/(8R) in the middle, which must stay within a quarter of a cell.
 */
export function gridSweepFits(
  geographic: boolean,
  reachM: number,
  latDeg: number,
  pixelM: number,
  earthRadiusM = 6_371_000,
): boolean {
  if (!geographic) return true;
  const phi = (Math.min(89, Math.abs(latDeg) + (reachM / earthRadiusM) * (180 / Math.PI)) * Math.PI) / 180;
  return (reachM * reachM * Math.tan(phi)) / (8 * earthRadiusM) <= 0.25 * pixelM;
}

/** Per-octant constants and scratch, so the hot functions take few arguments. */
interface Sweep {
  readonly t: GridSweepTask;
  readonly re: number;
  /** 1 / re: angles are distances times it (the kernel divides only where it must). */
  readonly invRe: number;
  readonly rha: number;
  readonly cs: Float64Array;
  /** The previous line's screening tan and terrain, and how many of its cells were computed. */
  tPrev: Float64Array;
  zPrev: Float64Array;
  prevLen: number;
  tCur: Float64Array;
  zCur: Float64Array;
}

/**
 * An octant's line buffers and the four line operations over them: either the WebAssembly kernel's
 * (worker/kernel/line-kernel.ts, whose memory holds the buffers) or their JavaScript twins below, which compute
 * the same bits (test/line-kernel.test.ts). The kernel runs where WebAssembly is available and every distance of
 * the reach is under 0.25·Re (its cos and sin are the series `floorOf` uses there).
 */
interface LineOps {
  readonly tPrev: Float64Array;
  readonly zPrev: Float64Array;
  readonly tCur: Float64Array;
  readonly zCur: Float64Array;
  /** Distances of the current line's cells, its floors, and a copy of one row of terrain or floors. */
  readonly s: Float64Array;
  readonly h: Float32Array;
  readonly stage: Float32Array;
  /** Column octants: BLOCK columns of terrain, and of floors, gathered along rows (null for row octants). */
  readonly block: Float32Array | null;
  readonly hBlock: Float32Array | null;
  /** z[m] = src[first + step·m], m = 1 … mEnd. */
  widen(src: Float32Array, first: number, step: number, mEnd: number, z: Float64Array): void;
  /** dst[first + step·m] = h[m], m = wLo … wHi; returns how many of those below `len` are NaN. */
  emit(
    h: Float32Array,
    dst: Float32Array,
    first: number,
    step: number,
    wLo: number,
    wHi: number,
    len: number,
  ): number;
  /** `lineDistances` over the task's VectorMap. */
  distances(c: number, r: number, dc: number, dr: number, mEnd: number, s: Float64Array): number;
  /** `farLine`. */
  far(sw: Sweep, d: number, len: number, s: Float64Array, h: Float32Array): void;
}

function jsLineOps(task: GridSweepTask, n: number, blockCells: number): LineOps {
  const vm = task.vmap;
  return {
    tPrev: new Float64Array(n),
    zPrev: new Float64Array(n),
    tCur: new Float64Array(n),
    zCur: new Float64Array(n),
    s: new Float64Array(n),
    h: new Float32Array(n),
    stage: new Float32Array(n),
    block: blockCells > 0 ? new Float32Array(blockCells) : null,
    hBlock: blockCells > 0 ? new Float32Array(blockCells) : null,
    widen(src, first, step, mEnd, z) {
      for (let m = 1, i = first + step; m <= mEnd; m++, i += step) z[m] = src[i];
    },
    emit(h, dst, first, step, wLo, wHi, len) {
      let nan = 0;
      for (let m = wLo, o = first + step * wLo; m <= wHi; m++, o += step) {
        const v = h[m];
        dst[o] = v;
        if (v !== v && m < len) nan++;
      }
      return nan;
    },
    distances: (c, r, dc, dr, mEnd, s) => lineDistances(vm, c, r, dc, dr, mEnd, task.maxRangeM, s),
    far: farLine,
  };
}

function kernelLineOps(task: GridSweepTask, n: number, blockCells: number): LineOps | null {
  // Layout (bytes): a 64-byte guard (the kernel reads one cell before a line), five f64 lines, two f32 lines,
  // the column blocks, the VectorMap; every array 16-byte aligned.
  const n8 = Math.ceil(n / 2) * 16;
  const n4 = Math.ceil(n / 4) * 16;
  const b4 = Math.ceil(blockCells / 4) * 16;
  const at = { f64: 64, f32: 64 + 5 * n8, block: 64 + 5 * n8 + 2 * n4, v: 64 + 5 * n8 + 2 * n4 + 2 * b4 };
  const vm = task.vmap;
  const k = lineKernel(at.v + vm.v.length * 8 + 64);
  if (k === null) return null;
  const buf = k.buffer;
  const f64 = (i: number): Float64Array => new Float64Array(buf, at.f64 + i * n8, n);
  new Float64Array(buf, at.v, vm.v.length).set(vm.v);
  const { nodesX, nodesY, block: bk } = vm;
  const maxRange = task.maxRangeM;
  return {
    tPrev: f64(0),
    zPrev: f64(1),
    tCur: f64(2),
    zCur: f64(3),
    s: f64(4),
    h: new Float32Array(buf, at.f32, n),
    stage: new Float32Array(buf, at.f32 + n4, n),
    block: blockCells > 0 ? new Float32Array(buf, at.block, blockCells) : null,
    hBlock: blockCells > 0 ? new Float32Array(buf, at.block + b4, blockCells) : null,
    widen: (src, first, step, mEnd, z) => k.widen(src.byteOffset, first, step, mEnd, z.byteOffset),
    emit: (h, dst, first, step, wLo, wHi, len) =>
      k.emit(h.byteOffset, dst.byteOffset, first, step, wLo, wHi, len),
    distances: (c, r, dc, dr, mEnd, s) =>
      k.distances(at.v, nodesX, nodesY, bk, c, r, dc, dr, mEnd, maxRange, s.byteOffset),
    far: (sw, d, len, s, h) =>
      k.farLine(
        sw.tPrev.byteOffset,
        sw.zPrev.byteOffset,
        sw.prevLen - 1,
        sw.tCur.byteOffset,
        sw.zCur.byteOffset,
        s.byteOffset,
        h.byteOffset,
        d,
        len,
        sw.re,
        sw.invRe,
        sw.rha,
        FLOOR_CAP_M,
      ),
  };
}

/**
 * Sweeps one octant: reads terrain from `data` (the shared cells from `pristine`), writes floors into `out` (which
 * may be `data` itself when the window is the whole lattice). `onLines` is told how many lines are done.
 */
export function sweepGridOctant(
  task: GridSweepTask,
  data: Float32Array,
  pristine: GridPristine,
  out: Float32Array,
  onLines?: (done: number, total: number) => void,
): GridSweepCounts {
  const { width: W, height: H, col: c0, row: r0, sx, sy } = task;
  const rows = task.lines === 'rows';
  // Lines run 0 … lastLine; along line d, cells m = 0 … min(d, lastAlong).
  const lastLine = rows ? (sy > 0 ? H - 1 - r0 : r0) : sx > 0 ? W - 1 - c0 : c0;
  const lastAlong = rows ? (sx > 0 ? W - 1 - c0 : c0) : sy > 0 ? H - 1 - r0 : r0;
  const diagonal = pristine.diagonals[(sx > 0 ? 0 : 1) + (sy > 0 ? 0 : 2)];
  const n = lastAlong + 2;
  const blockCells = rows ? 0 : (lastAlong + 1) * BLOCK;
  const ops =
    (task.kernel !== false && task.maxRangeM / task.reM < 0.25 ? kernelLineOps(task, n, blockCells) : null) ??
    jsLineOps(task, n, blockCells);
  const sw: Sweep = {
    t: task,
    re: task.reM,
    invRe: 1 / task.reM,
    rha: task.reM + task.antennaAltM,
    cs: new Float64Array(2),
    tPrev: ops.tPrev,
    zPrev: ops.zPrev,
    prevLen: 0,
    tCur: ops.tCur,
    zCur: ops.zCur,
  };
  const counts: GridSweepCounts = { beyondRange: 0, unknown: 0 };
  // Which shared cells this octant counts: the row octants own the diagonals, the axis of each kind goes to
  // one side, the antenna to one octant.
  const countAxis = rows ? sx > 0 : sy > 0;
  const countDiagonal = rows;
  const countAntenna = rows && sx > 0 && sy > 0;
  const oc0 = task.outCol0;
  const or0 = task.outRow0;
  const ow = task.outWidth;
  const oh = task.outHeight;
  const { block, hBlock, h: hLine, s: sLine, stage } = ops;
  // The column blocks go in and out as 32-bit words through loops: no view allocated per row (a million a column
  // octant at 8192², and the scavenges they cost), the bits copied as they are.
  const bits = (a: Float32Array): Int32Array => new Int32Array(a.buffer, a.byteOffset, a.length);
  const dataBits = bits(data);
  const outBits = out === data ? dataBits : bits(out);
  const blockBits = block === null ? null : bits(block);
  const hBlockBits = hBlock === null ? null : bits(hBlock);
  let ended = false;
  for (let d1 = 0; d1 <= lastLine; d1 += rows ? 1 : BLOCK) {
    const d2 = rows ? d1 + 1 : Math.min(lastLine + 1, d1 + BLOCK);
    const nb = d2 - d1;
    // Column octants: gather the block's columns along rows (one short contiguous copy per row). Going west
    // (sx < 0) a row's cells land in reverse: column d1 + k at nb − 1 − k.
    if (blockBits !== null) {
      const base = r0 * W + c0 + sx * d1 - (sx > 0 ? 0 : nb - 1);
      gatherRows(dataBits, base, sy * W, Math.min(d2 - 1, lastAlong) + 1, nb, blockBits);
    }
    for (let d = d1; d < d2; d++) {
      const mEnd = Math.min(d, lastAlong);
      const kk = sx > 0 ? d - d1 : nb - 1 - (d - d1);
      // Terrain along the line: the inside from the raster (or the block), the shared ends from their copies.
      const z = sw.zCur;
      if (block !== null) {
        ops.widen(block, kk, BLOCK, mEnd, z);
      } else if (mEnd > 0) {
        const base = (r0 + sy * d) * W + c0;
        const lo = sx > 0 ? base : base - mEnd;
        stage.set(data.subarray(lo, lo + mEnd + 1));
        ops.widen(stage, sx > 0 ? 0 : mEnd, sx, mEnd, z);
      }
      z[0] =
        d === 0 ? pristine.colAxis[r0] : rows ? pristine.colAxis[r0 + sy * d] : pristine.rowAxis[c0 + sx * d];
      if (d > 0 && d <= mEnd) z[d] = diagonal[d];
      let len = 0;
      if (!ended) {
        const c = rows ? c0 : c0 + sx * d;
        const r = rows ? r0 + sy * d : r0;
        len = ops.distances(c, r, rows ? sx : 0, rows ? 0 : sy, mEnd, sLine);
        if (len === 0) ended = true;
        else if (d > NEAR_CELLS) ops.far(sw, d, len, sLine, hLine);
        else nearLine(sw, pristine, d, len, sLine, hLine);
      }
      if (len <= mEnd) hLine.fill(NaN, len, mEnd + 1);
      // The cells of this line inside the output window, m in [wLo, wHi], go out in the output's order: a row
      // through the staging copy (reversed going west), a column into the block of floors.
      let wLo: number;
      let wHi: number;
      let nan: number;
      if (rows) {
        const y = r0 + sy * d - or0;
        const inside = y >= 0 && y < oh;
        wLo = inside ? alongLo(c0 - oc0, sx, ow) : 1;
        wHi = inside ? alongHi(c0 - oc0, sx, ow, mEnd) : 0;
        nan = ops.emit(hLine, stage, sx > 0 ? -wLo : wHi, sx, wLo, wHi, len);
        if (wLo <= wHi)
          out.set(stage.subarray(0, wHi - wLo + 1), y * ow + (c0 - oc0) + (sx > 0 ? wLo : -wHi));
      } else {
        const x = c0 + sx * d - oc0;
        const inside = x >= 0 && x < ow;
        wLo = inside ? alongLo(r0 - or0, sy, oh) : 1;
        wHi = inside ? alongHi(r0 - or0, sy, oh, mEnd) : 0;
        nan = ops.emit(hLine, hBlock!, kk, BLOCK, wLo, wHi, len);
      }
      let beyond = Math.max(0, wHi - Math.max(wLo, len) + 1);
      // Shared cells are counted by one octant only.
      const shared = d === 0 ? (countAntenna ? -1 : 0) : countAxis ? -1 : 0;
      const sharedEnd = d > 0 && d <= mEnd && !countDiagonal ? d : -1;
      for (const m of [shared, sharedEnd]) {
        if (m < wLo || m > wHi || hLine[m] === hLine[m]) continue;
        if (m >= len) beyond--;
        else nan--;
      }
      counts.beyondRange += beyond;
      counts.unknown += nan;
      // This line becomes the previous one.
      const zt = sw.zPrev;
      sw.zPrev = sw.zCur;
      sw.zCur = zt;
      const tt = sw.tPrev;
      sw.tPrev = sw.tCur;
      sw.tCur = tt;
      sw.prevLen = len;
    }
    // Column octants: copy the block's floors back along rows (cells of this octant only: m ≤ d, k ≥ m − d1).
    if (hBlock !== null) {
      const x0 = c0 + sx * d1 - oc0;
      const mTop = Math.min(d2 - 1, lastAlong);
      for (let m = 0; m <= mTop; m++) {
        const y = r0 + sy * m - or0;
        if (y < 0 || y >= oh) continue;
        const b = m * BLOCK;
        const kLo = Math.max(0, m - d1);
        // Columns k in [kA, kB] fall inside the window (x = x0 + sx·k).
        const kA = Math.max(kLo, sx > 0 ? -x0 : x0 - (ow - 1));
        const kB = Math.min(nb - 1, sx > 0 ? ow - 1 - x0 : x0);
        if (kA > kB) continue;
        if (sx > 0) copyWords(hBlockBits!, b + kA, outBits, y * ow + x0 + kA, kB - kA + 1);
        else copyWords(hBlockBits!, b + nb - 1 - kB, outBits, y * ow + x0 - kB, kB - kA + 1);
      }
    }
    if (onLines !== undefined && (rows ? (d1 & 63) === 63 : true)) onLines(d2, lastLine + 1);
  }
  return counts;
}

/** dst[to + k] = src[from + k] for k < n. */
function copyWords(src: Int32Array, from: number, dst: Int32Array, to: number, n: number): void {
  for (let k = 0; k < n; k++) dst[to + k] = src[from + k];
}

/**
 * A column block's terrain: dst[m·BLOCK + k] = src[base + m·rowStep + k] for rows m < rows and k < nb. Four rows
 * at a time, so that the loads of four rows (each a different page, far apart) are in flight together: 61–88 ns a
 * row against 102–160 ns for a view and `set` per row (scratch script, 4096-row blocks of 64 columns of an 8192²
 * raster).
 */
function gatherRows(
  src: Int32Array,
  base: number,
  rowStep: number,
  rows: number,
  nb: number,
  dst: Int32Array,
): void {
  let m = 0;
  for (; m + 4 <= rows; m += 4) {
    const a = base + m * rowStep;
    const b = a + rowStep;
    const c = b + rowStep;
    const d = c + rowStep;
    const o = m * BLOCK;
    for (let k = 0; k < nb; k++) {
      dst[o + k] = src[a + k];
      dst[o + BLOCK + k] = src[b + k];
      dst[o + 2 * BLOCK + k] = src[c + k];
      dst[o + 3 * BLOCK + k] = src[d + k];
    }
  }
  for (; m < rows; m++) copyWords(src, base + m * rowStep, dst, m * BLOCK, nb);
}

/** The first cell m ≥ 0 of a line whose position p0 + step·m lies in [0, size). */
function alongLo(p0: number, step: number, size: number): number {
  return step > 0 ? Math.max(0, -p0) : Math.max(0, p0 - (size - 1));
}

/** The last cell m ≤ mEnd of a line whose position p0 + step·m lies in [0, size). */
function alongHi(p0: number, step: number, size: number, mEnd: number): number {
  return step > 0 ? Math.min(mEnd, size - 1 - p0) : Math.min(mEnd, p0);
}

/**
 * Geodesic distances (m) from the antenna to the cells (c + dc·m, r + dr·m), m = 0 … mEnd, into `s`; stops at
 * the first cell beyond `maxRangeM` and returns how many were in range. The VectorMap lattice is bilinear, so
 * along a row or a column each lattice cell is a straight piece: east and north are a + b·u there.
 */
function lineDistances(
  vm: VectorMapParts,
  c: number,
  r: number,
  dc: number,
  dr: number,
  mEnd: number,
  maxRangeM: number,
  s: Float64Array,
): number {
  const bk = vm.block;
  const nx = vm.nodesX;
  const ny = vm.nodesY;
  const v = vm.v;
  const alongX = dc !== 0;
  const dxNode = nx > 1 ? 2 : 0;
  const dyNode = ny > 1 ? nx * 2 : 0;
  let piece = -1;
  let ea = 0;
  let eb = 0;
  let na = 0;
  let nb = 0;
  for (let m = 0; m <= mEnd; m++) {
    const gx = (c + dc * m) / bk;
    const gy = (r + dr * m) / bk;
    const u = alongX ? gx : gy;
    const iu = Math.max(0, Math.min(u | 0, (alongX ? nx : ny) - 2));
    if (iu !== piece) {
      // This lattice cell's straight piece along the line, in the moving coordinate u.
      piece = iu;
      const ix = Math.max(0, Math.min(gx | 0, nx - 2));
      const iy = Math.max(0, Math.min(gy | 0, ny - 2));
      const k00 = (iy * nx + ix) * 2;
      const k10 = k00 + dyNode;
      if (alongX) {
        const fy = ny > 1 ? gy - iy : 0;
        const e0 = v[k00] * (1 - fy) + v[k10] * fy;
        const e1 = v[k00 + dxNode] * (1 - fy) + v[k10 + dxNode] * fy;
        const n0 = v[k00 + 1] * (1 - fy) + v[k10 + 1] * fy;
        const n1 = v[k00 + 1 + dxNode] * (1 - fy) + v[k10 + 1 + dxNode] * fy;
        eb = nx > 1 ? e1 - e0 : 0;
        nb = nx > 1 ? n1 - n0 : 0;
        ea = e0 - eb * ix;
        na = n0 - nb * ix;
      } else {
        const fx = nx > 1 ? gx - ix : 0;
        const e0 = v[k00] + (v[k00 + dxNode] - v[k00]) * fx;
        const e1 = v[k10] + (v[k10 + dxNode] - v[k10]) * fx;
        const n0 = v[k00 + 1] + (v[k00 + 1 + dxNode] - v[k00 + 1]) * fx;
        const n1 = v[k10 + 1] + (v[k10 + 1 + dxNode] - v[k10 + 1]) * fx;
        eb = ny > 1 ? e1 - e0 : 0;
        nb = ny > 1 ? n1 - n0 : 0;
        ea = e0 - eb * iy;
        na = n0 - nb * iy;
      }
    }
    const e = ea + eb * u;
    const nn = na + nb * u;
    const dist = Math.sqrt(e * e + nn * nn);
    if (!(dist <= maxRangeM)) return m;
    s[m] = dist;
  }
  return mEnd + 1;
}

/** The floor above a cell at distance s whose screening tan is `tan` and ground `g` (NaN = unknown). */
function floorOf(tan: number, s: number, g: number, re: number, rha: number, invRe: number): number {
  const x = s * invRe;
  let cs: number;
  let sn: number;
  if (x < 0.25) {
    const x2 = x * x;
    cs = 1 - x2 * (0.5 - x2 * (1 / 24 - x2 * (1 / 720)));
    sn = x * (1 - x2 * (1 / 6 - x2 * (1 / 120 - x2 * (1 / 5040))));
  } else {
    cs = Math.cos(x);
    sn = Math.sin(x);
  }
  if (g !== g) return NaN;
  const den = cs - tan * sn;
  if (den > 1e-9) {
    // The ground itself in sight (h ≤ g ⟺ Re + ha ≤ (Re + g)·den): no division.
    if (rha <= (re + g) * den) return g;
    const v = rha / den - re;
    return v > FLOOR_CAP_M ? FLOOR_CAP_M : v;
  }
  // den ≤ 0: the screening ray never comes back down to this range; NaN: unknown terrain on the way.
  return den === den ? (g > FLOOR_CAP_M ? g : FLOOR_CAP_M) : NaN;
}

/** Line d ≤ NEAR_CELLS: the exact walk to every cell (the antenna's own cell, d = 0, sees its ground). */
function nearLine(
  sw: Sweep,
  pristine: GridPristine,
  d: number,
  len: number,
  s: Float64Array,
  h: Float32Array,
): void {
  const t = sw.t;
  const rows = t.lines === 'rows';
  for (let m = 0; m < len; m++) {
    if (d === 0) {
      sw.tCur[m] = NOTHING;
      h[m] = sw.zCur[m];
      continue;
    }
    const tan = walkNear(pristine.near, rows ? t.sx * m : t.sx * d, rows ? t.sy * d : t.sy * m, s[m], sw);
    sw.tCur[m] = tan;
    h[m] = floorOf(tan, s[m], sw.zCur[m], sw.re, sw.rha, sw.invRe);
  }
}

/**
 * Line d > NEAR_CELLS, cells 0 … len − 1: the sight line to cell m crosses line d − 1 at m·(d − 1)/d; the
 * screening there is the one carried to it (monotone cubic over line d − 1's screening) or the terrain there
 * (linear between its two cells), whichever is steeper.
 */
function farLine(sw: Sweep, d: number, len: number, s: Float64Array, h: Float32Array): void {
  const zp = sw.zPrev;
  const tp = sw.tPrev;
  const z = sw.zCur;
  const T = sw.tCur;
  const last = sw.prevLen - 1;
  const re = sw.re;
  const invRe = sw.invRe;
  const rha = sw.rha;
  const shrink = (d - 1) / d;
  for (let m = 0; m < len; m++) {
    const x = m * shrink;
    const f0 = x | 0;
    const w = x - f0;
    let tc: number;
    let zc: number;
    if (w === 0) {
      tc = f0 <= last ? tp[f0] : NaN;
      zc = f0 <= last ? zp[f0] : NaN;
    } else if (f0 + 1 > last) {
      tc = NaN;
      zc = NaN;
    } else {
      const y0 = tp[f0];
      const y1 = tp[f0 + 1];
      zc = zp[f0] + (zp[f0 + 1] - zp[f0]) * w;
      tc = monotoneCubic(f0 > 0 ? tp[f0 - 1] : y0, y0, y1, f0 + 2 <= last ? tp[f0 + 2] : y1, w);
    }
    let tan: number;
    if (tc !== tc || zc !== zc) {
      tan = NaN;
    } else {
      // The terrain at the crossing, at distance s·(d − 1)/d: tz > tc ⟺ num > tc·den (den > 0).
      const xc = s[m] * invRe * shrink;
      let cs: number;
      let sn: number;
      if (xc < 0.25) {
        const x2 = xc * xc;
        cs = 1 - x2 * (0.5 - x2 * (1 / 24 - x2 * (1 / 720)));
        sn = xc * (1 - x2 * (1 / 6 - x2 * (1 / 120 - x2 * (1 / 5040))));
      } else {
        cs = Math.cos(xc);
        sn = Math.sin(xc);
      }
      const rz = re + zc;
      const num = rz * cs - rha;
      const den = rz * sn;
      tan = num > tc * den ? num / den : tc;
    }
    T[m] = tan;
    h[m] = floorOf(tan, s[m], z[m], re, rha, invRe);
  }
}

/**
 * Fritsch–Carlson monotone cubic Hermite between y0 and y1 at fraction w, with tangents from the neighbours
 * ym and y2 (central differences, limited so the curve never leaves [y0, y1]). NaN neighbours fall back to the
 * secant; NaN ends give NaN.
 */
export function monotoneCubic(ym: number, y0: number, y1: number, y2: number, w: number): number {
  const d0 = y1 - y0;
  if (d0 !== d0) return NaN;
  // Tangents by central differences (the secant where a neighbour is unknown), each held between 0 and three
  // times the secant: inside that square the cubic is monotone (Fritsch & Carlson 1980). The clamps are
  // WebAssembly's pmin/pmax (`b < a ? b : a`, `a < b ? b : a`; one instruction each in the kernel): they differ
  // from Math.min/max only in the sign of a zero (NaN cannot reach them: d0 is a number here, and so is each t
  // while the line's values are finite).
  const d3 = 3 * d0;
  const lo = d3 < 0 ? d3 : 0;
  const hi = 0 < d3 ? d3 : 0;
  const t0 = ym === ym ? 0.5 * (y1 - ym) : d0;
  const t1 = y2 === y2 ? 0.5 * (y2 - y0) : d0;
  const c0 = t0 < lo ? lo : t0;
  const c1 = t1 < lo ? lo : t1;
  const m0 = hi < c0 ? hi : c0;
  const m1 = hi < c1 ? hi : c1;
  const w2 = w * w;
  const w3 = w2 * w;
  return (2 * w3 - 3 * w2 + 1) * y0 + (w3 - 2 * w2 + w) * m0 + (3 * w2 - 2 * w3) * y1 + (w3 - w2) * m1;
}

/**
 * The exact R3 walk near the antenna: the steepest terrain at every crossing of the sight line to the cell
 * (dc, dr) cells away with a column or row line of cell centres strictly between (`near` is the pristine block
 * around the antenna, NaN off the lattice).
 */
function walkNear(near: Float32Array, dc: number, dr: number, s: number, sw: Sweep): number {
  const side = 2 * NEAR_CELLS + 1;
  const centre = NEAR_CELLS * side + NEAR_CELLS;
  let T = NOTHING;
  const ac = Math.abs(dc);
  const ar = Math.abs(dr);
  const stepC = dc > 0 ? 1 : -1;
  const stepR = dr > 0 ? 1 : -1;
  // Column lines k = 1 … |dc| − 1 at fraction k/|dc|.
  for (let k = 1; k < ac; k++) {
    const f = k / ac;
    const y = dr * f;
    const y0 = Math.floor(y);
    const w = y - y0;
    const i = centre + y0 * side + k * stepC;
    const a = near[i];
    const z = w > 0 ? a + (near[i + side] - a) * w : a;
    T = screen(T, z, f * s, sw);
    if (T !== T) return NaN;
  }
  for (let k = 1; k < ar; k++) {
    const f = k / ar;
    const x = dc * f;
    const x0 = Math.floor(x);
    const w = x - x0;
    const i = centre + k * stepR * side + x0;
    const a = near[i];
    const z = w > 0 ? a + (near[i + 1] - a) * w : a;
    T = screen(T, z, f * s, sw);
    if (T !== T) return NaN;
  }
  return T;
}

/**
 * The screening after a crossing: the screening carried to it (`tc`) or the terrain there (`zc` at distance
 * `sc`), whichever is steeper; NaN when either is unknown.
 */
function screen(tc: number, zc: number, sc: number, sw: Sweep): number {
  if (tc !== tc || zc !== zc) return NaN;
  const cs = sw.cs;
  cosSin(sc * sw.invRe, cs);
  const rz = sw.re + zc;
  const num = rz * cs[0] - sw.rha;
  const den = rz * cs[1];
  // tz > tc ⟺ num > tc·den (den > 0): divide only when the screening rises.
  return num > tc * den ? num / den : tc;
}

/** cos and sin of x by series where x is small (x < 0.25: relative error below 1e-8), else the library's. */
function cosSin(x: number, out: Float64Array): void {
  if (x < 0.25) {
    const x2 = x * x;
    out[0] = 1 - x2 * (0.5 - x2 * (1 / 24 - x2 * (1 / 720)));
    out[1] = x * (1 - x2 * (1 / 6 - x2 * (1 / 120 - x2 * (1 / 5040))));
  } else {
    out[0] = Math.cos(x);
    out[1] = Math.sin(x);
  }
}
