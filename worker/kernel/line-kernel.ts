/**
 * The grid sweep's line kernel in AssemblyScript, compiled to WebAssembly with 128-bit SIMD (two cells at a time):
 * worker/core/grid-sweep.ts runs these functions on one octant's line buffers, which live in this module's memory.
 * Each function computes what its JavaScript twin in grid-sweep.ts (`jsLineOps`, `lineDistances`, `farLine`,
 * `floorOf`) computes, with the same IEEE operations in the same order, so the two give the same bits (test/line-kernel.test.ts); grid-sweep.ts holds the
 * method and its sources. Build: `npm run build:kernel` (writes worker/core/line-kernel-wasm.ts).
 *
 * All pointers are byte offsets into the imported memory; f64 arrays are 8-byte, f32 arrays 4-byte aligned.
 */

/** z[m] = the f32 at src[first + step·m], m = 1 … mEnd (a line's terrain, from a row copy or a column block). */
export function widen(src: usize, first: i32, step: i32, mEnd: i32, z: usize): void {
  for (let m = 1; m <= mEnd; m++) {
    store<f64>(z + ((<usize>m) << 3), <f64>load<f32>(src + ((<usize>(first + step * m)) << 2)));
  }
}

/**
 * dst[first + step·m] = h[m] for m = wLo … wHi (a line's floors, in the output's order); returns how many of
 * those below `len` are NaN (the cells in range left unknown).
 */
export function emit(h: usize, dst: usize, first: i32, step: i32, wLo: i32, wHi: i32, len: i32): i32 {
  let nan = 0;
  for (let m = wLo; m <= wHi; m++) {
    const v = load<f32>(h + ((<usize>m) << 2));
    store<f32>(dst + ((<usize>(first + step * m)) << 2), v);
    if (v != v && m < len) nan++;
  }
  return nan;
}

/**
 * Geodesic distances from the antenna to the cells (c + dc·m, r + dr·m), m = 0 … mEnd, into s (f64); stops at the
 * first cell beyond maxRange and returns how many were in range. v: the VectorMap lattice (east, north per node).
 * Lines run along a row (dr = 0) or a column (dc = 0). Each lattice cell is a straight piece along the line; its
 * first cell is done alone (and the piece set up), the rest two at a time while both stay on the piece and in range
 * (the same operations on each lane as on one cell: the same bits as `lineDistances`).
 */
export function distances(
  v: usize,
  nx: i32,
  ny: i32,
  bk: f64,
  c: i32,
  r: i32,
  dc: i32,
  dr: i32,
  mEnd: i32,
  maxRange: f64,
  s: usize,
): i32 {
  const alongX = dc != 0;
  const dxNode = nx > 1 ? 2 : 0;
  const dyNode = ny > 1 ? nx * 2 : 0;
  const uTop = (alongX ? nx : ny) - 2;
  // The moving coordinate, the cell's column (along a row) or row (along a column): p0 + step·m.
  const p0 = alongX ? c : r;
  const step = alongX ? dc : dr;
  const vBk = f64x2.splat(bk);
  const vMax = f64x2.splat(maxRange);
  const vStep = f64x2.replace_lane(f64x2.splat(0), 1, <f64>step);
  const wholeBk = bk == Math.floor(bk) && bk >= 1;
  let piece = -1;
  let ea: f64 = 0;
  let eb: f64 = 0;
  let na: f64 = 0;
  let nb: f64 = 0;
  let m = 0;
  while (m <= mEnd) {
    const gx = <f64>(c + dc * m) / bk;
    const gy = <f64>(r + dr * m) / bk;
    const u = alongX ? gx : gy;
    const iu = max<i32>(0, min<i32>(<i32>u, uTop));
    if (iu != piece) {
      piece = iu;
      const ix = max<i32>(0, min<i32>(<i32>gx, nx - 2));
      const iy = max<i32>(0, min<i32>(<i32>gy, ny - 2));
      const k00 = (iy * nx + ix) * 2;
      const k10 = k00 + dyNode;
      const p00 = v + ((<usize>k00) << 3);
      const p10 = v + ((<usize>k10) << 3);
      const p01 = v + ((<usize>(k00 + dxNode)) << 3);
      const p11 = v + ((<usize>(k10 + dxNode)) << 3);
      if (alongX) {
        const fy: f64 = ny > 1 ? gy - <f64>iy : 0;
        const e0 = load<f64>(p00) * (1 - fy) + load<f64>(p10) * fy;
        const e1 = load<f64>(p01) * (1 - fy) + load<f64>(p11) * fy;
        const n0 = load<f64>(p00, 8) * (1 - fy) + load<f64>(p10, 8) * fy;
        const n1 = load<f64>(p01, 8) * (1 - fy) + load<f64>(p11, 8) * fy;
        eb = nx > 1 ? e1 - e0 : 0;
        nb = nx > 1 ? n1 - n0 : 0;
        ea = e0 - eb * <f64>ix;
        na = n0 - nb * <f64>ix;
      } else {
        const fx: f64 = nx > 1 ? gx - <f64>ix : 0;
        const e0 = load<f64>(p00) + (load<f64>(p01) - load<f64>(p00)) * fx;
        const e1 = load<f64>(p10) + (load<f64>(p11) - load<f64>(p10)) * fx;
        const n0 = load<f64>(p00, 8) + (load<f64>(p01, 8) - load<f64>(p00, 8)) * fx;
        const n1 = load<f64>(p10, 8) + (load<f64>(p11, 8) - load<f64>(p10, 8)) * fx;
        eb = ny > 1 ? e1 - e0 : 0;
        nb = ny > 1 ? n1 - n0 : 0;
        ea = e0 - eb * <f64>iy;
        na = n0 - nb * <f64>iy;
      }
    }
    const e = ea + eb * u;
    const nn = na + nb * u;
    const dist = Math.sqrt(e * e + nn * nn);
    if (!(dist <= maxRange)) return m;
    store<f64>(s + ((<usize>m) << 3), dist);
    m++;
    // The rest of this piece two at a time: the cells whose moving coordinate p lies in [piece·bk, (piece + 1)·bk)
    // (p and bk whole numbers: p / bk truncates to the piece exactly there); the first and last pieces also take
    // every cell beyond them, as the clamp does. A lattice spacing that is not a whole number goes cell by cell.
    const last = step > 0 ? piece == uTop : piece == 0;
    const mLast = !wholeBk
      ? -1
      : last
        ? mEnd
        : min<i32>(mEnd, step > 0 ? <i32>(<f64>(piece + 1) * bk) - 1 - p0 : p0 - <i32>(<f64>piece * bk));
    const vEa = f64x2.splat(ea);
    const vEb = f64x2.splat(eb);
    const vNa = f64x2.splat(na);
    const vNb = f64x2.splat(nb);
    let vp = f64x2.add(f64x2.splat(<f64>(p0 + step * m)), vStep);
    const vStep2 = f64x2.splat(<f64>(2 * step));
    while (m < mLast) {
      const vu = f64x2.div(vp, vBk);
      const ve = f64x2.add(vEa, f64x2.mul(vEb, vu));
      const vn = f64x2.add(vNa, f64x2.mul(vNb, vu));
      const vd = f64x2.sqrt(f64x2.add(f64x2.mul(ve, ve), f64x2.mul(vn, vn)));
      // Beyond the range (or unknown): the cell-by-cell path finds where it stops.
      if (!i64x2.all_true(f64x2.le(vd, vMax))) break;
      v128.store(s + ((<usize>m) << 3), vd);
      m += 2;
      vp = f64x2.add(vp, vStep2);
    }
  }
  return mEnd + 1;
}

/**
 * cos x by its series to x⁶, from x² (x < 0.25: relative error below 1e-8), on two lanes, as grid-sweep.ts computes
 * it; the coefficients come in as arguments (see farLine).
 */
// @ts-ignore: decorator
@inline
function cosSeries2(x2: v128, one: v128, half: v128, c24: v128, c720: v128): v128 {
  return f64x2.sub(one, f64x2.mul(x2, f64x2.sub(half, f64x2.mul(x2, f64x2.sub(c24, f64x2.mul(x2, c720))))));
}

/** sin x by its series to x⁷, from x and x², on two lanes. */
// @ts-ignore: decorator
@inline
function sinSeries2(x: v128, x2: v128, one: v128, c6: v128, c120: v128, c5040: v128): v128 {
  return f64x2.mul(
    x,
    f64x2.sub(one, f64x2.mul(x2, f64x2.sub(c6, f64x2.mul(x2, f64x2.sub(c120, f64x2.mul(x2, c5040)))))),
  );
}

/**
 * One cell pair's work once the crossing's screening (tc) and terrain (zc) are known: the steeper of the two into T,
 * the floor (floorOf) into h. The constants come in as arguments so that each is built once per line (see farLine).
 */
// @ts-ignore: decorator
@inline
function finishPair(
  m: i32,
  tc: v128,
  zc: v128,
  z: usize,
  s: usize,
  T: usize,
  h: usize,
  vShrink: v128,
  vRe: v128,
  vInvRe: v128,
  vRha: v128,
  vCap: v128,
  eps: v128,
  nan2: v128,
  one: v128,
  half: v128,
  c24: v128,
  c720: v128,
  c6: v128,
  c120: v128,
  c5040: v128,
): void {
  const sm = v128.load(s + ((<usize>m) << 3));
  const xg = f64x2.mul(sm, vInvRe);
  const xc = f64x2.mul(xg, vShrink);
  const x2 = f64x2.mul(xc, xc);
  const cs = cosSeries2(x2, one, half, c24, c720);
  const sn = sinSeries2(xc, x2, one, c6, c120, c5040);
  const rz = f64x2.add(vRe, zc);
  const num = f64x2.sub(f64x2.mul(rz, cs), vRha);
  const den = f64x2.mul(rz, sn);
  const rising = f64x2.gt(num, f64x2.mul(tc, den));
  const known = v128.and(f64x2.eq(tc, tc), f64x2.eq(zc, zc));
  const tan = v128.bitselect(v128.bitselect(f64x2.div(num, den), tc, rising), nan2, known);
  v128.store(T + ((<usize>m) << 3), tan);
  // The floor (floorOf).
  const g = v128.load(z + ((<usize>m) << 3));
  const xg2 = f64x2.mul(xg, xg);
  const cg = cosSeries2(xg2, one, half, c24, c720);
  const sg = sinSeries2(xg, xg2, one, c6, c120, c5040);
  const fden = f64x2.sub(cg, f64x2.mul(tan, sg));
  const u = f64x2.sub(f64x2.div(vRha, fden), vRe);
  const capped = v128.bitselect(vCap, u, f64x2.gt(u, vCap));
  const seen = f64x2.le(vRha, f64x2.mul(f64x2.add(vRe, g), fden));
  const above = v128.bitselect(g, capped, seen);
  const never = v128.bitselect(v128.bitselect(g, vCap, f64x2.gt(g, vCap)), nan2, f64x2.eq(fden, fden));
  const v0 = v128.bitselect(above, never, f64x2.gt(fden, eps));
  const v = v128.bitselect(v0, nan2, f64x2.eq(g, g));
  v128.store64_lane(h + ((<usize>m) << 2), f32x4.demote_f64x2_zero(v), 0);
}

/**
 * The monotone cubic on two lanes, as monotoneCubic computes it (the clamps as `a < b ? b : a` and `b < a ? b : a`,
 * WebAssembly's pmax and pmin: one instruction each, where min and max also order −0 and +0 and pass NaN on).
 */
// @ts-ignore: decorator
@inline
function cubic2(
  ym: v128,
  y0: v128,
  y1: v128,
  y2: v128,
  w: v128,
  zero: v128,
  half: v128,
  two: v128,
  three: v128,
  one: v128,
  nan2: v128,
): v128 {
  const d0 = f64x2.sub(y1, y0);
  const d3 = f64x2.mul(three, d0);
  const lo = f64x2.pmin(zero, d3);
  const hi = f64x2.pmax(zero, d3);
  const t0 = v128.bitselect(f64x2.mul(half, f64x2.sub(y1, ym)), d0, f64x2.eq(ym, ym));
  const t1 = v128.bitselect(f64x2.mul(half, f64x2.sub(y2, y0)), d0, f64x2.eq(y2, y2));
  const m0 = f64x2.pmin(f64x2.pmax(t0, lo), hi);
  const m1 = f64x2.pmin(f64x2.pmax(t1, lo), hi);
  const w2 = f64x2.mul(w, w);
  const w3 = f64x2.mul(w2, w);
  const cubic = f64x2.add(
    f64x2.add(
      f64x2.add(
        f64x2.mul(f64x2.add(f64x2.sub(f64x2.mul(two, w3), f64x2.mul(three, w2)), one), y0),
        f64x2.mul(f64x2.add(f64x2.sub(w3, f64x2.mul(two, w2)), w), m0),
      ),
      f64x2.mul(f64x2.sub(f64x2.mul(three, w2), f64x2.mul(two, w3)), y1),
    ),
    f64x2.mul(f64x2.sub(w3, w2), m1),
  );
  return v128.bitselect(nan2, cubic, f64x2.ne(d0, d0));
}

/**
 * Cells m and m + 1 by the general path: each lane finds its crossing on line d − 1 (m·shrink) and its neighbours
 * there, with the ends of that line (a crossing at or beyond its last cell) and exact hits (w = 0) tested per lane.
 */
// @ts-ignore: decorator
@inline
function generalPair(
  m: i32,
  tp: usize,
  zp: usize,
  T: usize,
  z: usize,
  s: usize,
  h: usize,
  vShrink: v128,
  vLast: v128,
  vRe: v128,
  vInvRe: v128,
  vRha: v128,
  vCap: v128,
  lane: v128,
  zero: v128,
  one: v128,
  two: v128,
  three: v128,
  half: v128,
  eps: v128,
  nan2: v128,
  c24: v128,
  c720: v128,
  c6: v128,
  c120: v128,
  c5040: v128,
): void {
  const mv = f64x2.add(f64x2.splat(<f64>m), lane);
  const x = f64x2.mul(mv, vShrink);
  const fi = i32x4.trunc_sat_f64x2_s_zero(x);
  const fa = i32x4.extract_lane(fi, 0);
  const fb = i32x4.extract_lane(fi, 1);
  const fl = f64x2.convert_low_i32x4_s(fi);
  const w = f64x2.sub(x, fl);
  const pa = tp + ((<usize>fa) << 3);
  const pb = tp + ((<usize>fb) << 3);
  const qa = zp + ((<usize>fa) << 3);
  const qb = zp + ((<usize>fb) << 3);
  const A01 = v128.load(pa);
  const B01 = v128.load(pb);
  const y0 = f64x2.shuffle(A01, B01, 0, 2);
  const y1 = f64x2.shuffle(A01, B01, 1, 3);
  const ym0 = f64x2.shuffle(v128.load(pa - 8), v128.load(pb - 8), 0, 2);
  const y20 = f64x2.shuffle(v128.load(pa, 16), v128.load(pb, 16), 0, 2);
  const QA = v128.load(qa);
  const QB = v128.load(qb);
  const za = f64x2.shuffle(QA, QB, 0, 2);
  const zb = f64x2.shuffle(QA, QB, 1, 3);
  const w0 = f64x2.eq(w, zero);
  const in0 = f64x2.le(fl, vLast);
  const in1 = f64x2.le(f64x2.add(fl, one), vLast);
  const ym = v128.bitselect(ym0, y0, f64x2.gt(fl, zero));
  const y2 = v128.bitselect(y20, y1, f64x2.le(f64x2.add(fl, two), vLast));
  const cubicN = cubic2(ym, y0, y1, y2, w, zero, half, two, three, one, nan2);
  const interp = f64x2.add(za, f64x2.mul(f64x2.sub(zb, za), w));
  const tc = v128.bitselect(v128.bitselect(y0, nan2, in0), v128.bitselect(cubicN, nan2, in1), w0);
  const zc = v128.bitselect(v128.bitselect(za, nan2, in0), v128.bitselect(interp, nan2, in1), w0);
  finishPair(m, tc, zc, z, s, T, h, vShrink, vRe, vInvRe, vRha, vCap, eps, nan2, one, half, c24, c720, c6, c120, c5040);
}

/**
 * Line d's floors and screening (farLine in grid-sweep.ts), two cells at a time. For 1 ≤ m ≤ d − 1 the crossing
 * m·(d − 1)/d = m − m/d lies strictly between cells m − 1 and m of line d − 1 (m/d is no whole number, and the
 * rounding of m·shrink is far below 1/d), so the middle of the line reads its neighbours as straight runs; the ends
 * (m = 0, 1, the cells beyond line d − 1 or at m = d) take the general path, each lane's crossing found on its own.
 */
export function farLine(
  tp: usize,
  zp: usize,
  last: i32,
  T: usize,
  z: usize,
  s: usize,
  h: usize,
  d: i32,
  len: i32,
  re: f64,
  invRe: f64,
  rha: f64,
  cap: f64,
): void {
  const shrink: f64 = <f64>(d - 1) / <f64>d;
  const vShrink = f64x2.splat(shrink);
  const vLast = f64x2.splat(<f64>last);
  const vRe = f64x2.splat(re);
  const vInvRe = f64x2.splat(invRe);
  const vRha = f64x2.splat(rha);
  const vCap = f64x2.splat(cap);
  // The constants, each made from an argument (cap − cap is 0 for the finite cap): the compilers then keep one
  // copy per line instead of building the value again at every use in the loop (an exact value either way).
  const o: f64 = cap - cap;
  const zero = f64x2.splat(o);
  const one = f64x2.splat(o + 1);
  const two = f64x2.splat(o + 2);
  const three = f64x2.splat(o + 3);
  const half = f64x2.splat(o + 0.5);
  const eps = f64x2.splat(o + 1e-9);
  const nan2 = f64x2.splat(o + NaN);
  const c24 = f64x2.splat(o + 1.0 / 24);
  const c720 = f64x2.splat(o + 1.0 / 720);
  const c6 = f64x2.splat(o + 1.0 / 6);
  const c120 = f64x2.splat(o + 1.0 / 120);
  const c5040 = f64x2.splat(o + 1.0 / 5040);
  const lane = f64x2.replace_lane(zero, 1, o + 1);
  // The straight runs: pairs m, m + 1 with 2 ≤ m and m + 1 ≤ min(len − 1, d − 1, last − 1) (the neighbour
  // after each crossing, fl + 2, is on line d − 1 too).
  const fastEnd = min<i32>(min<i32>(len - 1, d - 1), last - 1);
  // The general path up to the straight runs (m = 0: cells 0 and 1), the runs, then the general path to the end.
  let m = 0;
  for (; m < len; m += 2) {
    if (m >= 2 && m + 1 <= fastEnd) break;
    generalPair(
      m, tp, zp, T, z, s, h, vShrink, vLast, vRe, vInvRe, vRha, vCap, lane, zero, one, two, three, half, eps, nan2, c24,
      c720, c6, c120, c5040,
    );
  }
  for (; m + 1 <= fastEnd; m += 2) {
    // fl = m − 1 on both lanes; w = x − fl as the general path computes it.
    const mv = f64x2.add(f64x2.splat(<f64>m), lane);
    const x = f64x2.mul(mv, vShrink);
    const fl = f64x2.sub(mv, one);
    const w = f64x2.sub(x, fl);
    const pa = tp + ((<usize>(m - 1)) << 3);
    const y0 = v128.load(pa);
    const y1 = v128.load(pa, 8);
    const ym = v128.load(pa - 8);
    const y2 = v128.load(pa, 16);
    const qa = zp + ((<usize>(m - 1)) << 3);
    const za = v128.load(qa);
    const zb = v128.load(qa, 8);
    const tc = cubic2(ym, y0, y1, y2, w, zero, half, two, three, one, nan2);
    const zc = f64x2.add(za, f64x2.mul(f64x2.sub(zb, za), w));
    finishPair(
      m, tc, zc, z, s, T, h, vShrink, vRe, vInvRe, vRha, vCap, eps, nan2, one, half, c24, c720, c6, c120, c5040,
    );
  }
  for (; m < len; m += 2) {
    generalPair(
      m, tp, zp, T, z, s, h, vShrink, vLast, vRe, vInvRe, vRha, vCap, lane, zero, one, two, three, half, eps, nan2, c24,
      c720, c6, c120, c5040,
    );
  }
}
