/**
 * The grid sweep's line kernel in AssemblyScript, compiled to WebAssembly with 128-bit SIMD (two cells at a time):
 * worker/core/grid-sweep.ts runs these functions on one octant's line buffers, which live in this module's memory.
 * Each function computes what its JavaScript twin in grid-sweep.ts (`jsLineOps`, `lineDistances`, `farLine`, `floorOf`) computes, with the same IEEE
 * operations in the same order, so the two give the same bits (test/line-kernel.test.ts); grid-sweep.ts holds the
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

/** cos x by its series to x⁶, from x² (x < 0.25: relative error below 1e-8), as grid-sweep.ts computes it. */
function cosSeries(x2: f64): f64 {
  return 1 - x2 * (0.5 - x2 * (1.0 / 24 - x2 * (1.0 / 720)));
}

/** sin x by its series to x⁷, from x and x². */
function sinSeries(x: f64, x2: f64): f64 {
  return x * (1 - x2 * (1.0 / 6 - x2 * (1.0 / 120 - x2 * (1.0 / 5040))));
}

const NAN2 = f64x2.splat(NaN);
const ONE2 = f64x2.splat(1);
const HALF2 = f64x2.splat(0.5);
const C24 = f64x2.splat(1.0 / 24);
const C720 = f64x2.splat(1.0 / 720);
const C6 = f64x2.splat(1.0 / 6);
const C120 = f64x2.splat(1.0 / 120);
const C5040 = f64x2.splat(1.0 / 5040);

/** `cosSeries` on two lanes. */
function cosSeries2(x2: v128): v128 {
  return f64x2.sub(ONE2, f64x2.mul(x2, f64x2.sub(HALF2, f64x2.mul(x2, f64x2.sub(C24, f64x2.mul(x2, C720))))));
}

/** `sinSeries` on two lanes. */
function sinSeries2(x: v128, x2: v128): v128 {
  return f64x2.mul(
    x,
    f64x2.sub(ONE2, f64x2.mul(x2, f64x2.sub(C6, f64x2.mul(x2, f64x2.sub(C120, f64x2.mul(x2, C5040)))))),
  );
}

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
  const zero = f64x2.splat(0);
  const one = f64x2.splat(1);
  const two = f64x2.splat(2);
  const three = f64x2.splat(3);
  const eps = f64x2.splat(1e-9);
  let m = 0;
  // Two cells at a time; an odd line's last pair reads and writes one cell past its end (inside the buffers, and
  // never read: the next line reads T up to len − 1, and h past len is overwritten or not written out).
  for (; m < len; m += 2) {
    const mv = f64x2.add(f64x2.splat(<f64>m), f64x2(0, 1));
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
    // The cubic, as monotoneCubic computes it.
    const d0 = f64x2.sub(y1, y0);
    const d3 = f64x2.mul(three, d0);
    const lo = f64x2.min(zero, d3);
    const hi = f64x2.max(zero, d3);
    const t0 = v128.bitselect(f64x2.mul(HALF2, f64x2.sub(y1, ym)), d0, f64x2.eq(ym, ym));
    const t1 = v128.bitselect(f64x2.mul(HALF2, f64x2.sub(y2, y0)), d0, f64x2.eq(y2, y2));
    const m0 = f64x2.min(f64x2.max(t0, lo), hi);
    const m1 = f64x2.min(f64x2.max(t1, lo), hi);
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
    const cubicN = v128.bitselect(NAN2, cubic, f64x2.ne(d0, d0));
    const interp = f64x2.add(za, f64x2.mul(f64x2.sub(zb, za), w));
    const tc = v128.bitselect(v128.bitselect(y0, NAN2, in0), v128.bitselect(cubicN, NAN2, in1), w0);
    const zc = v128.bitselect(v128.bitselect(za, NAN2, in0), v128.bitselect(interp, NAN2, in1), w0);
    const sm = v128.load(s + ((<usize>m) << 3));
    const xg = f64x2.mul(sm, vInvRe);
    const xc = f64x2.mul(xg, vShrink);
    const x2 = f64x2.mul(xc, xc);
    const cs = cosSeries2(x2);
    const sn = sinSeries2(xc, x2);
    const rz = f64x2.add(vRe, zc);
    const num = f64x2.sub(f64x2.mul(rz, cs), vRha);
    const den = f64x2.mul(rz, sn);
    const rising = f64x2.gt(num, f64x2.mul(tc, den));
    const known = v128.and(f64x2.eq(tc, tc), f64x2.eq(zc, zc));
    const tan = v128.bitselect(v128.bitselect(f64x2.div(num, den), tc, rising), NAN2, known);
    v128.store(T + ((<usize>m) << 3), tan);
    // The floor (floorOf).
    const g = v128.load(z + ((<usize>m) << 3));
    const xg2 = f64x2.mul(xg, xg);
    const cg = cosSeries2(xg2);
    const sg = sinSeries2(xg, xg2);
    const fden = f64x2.sub(cg, f64x2.mul(tan, sg));
    const u = f64x2.sub(f64x2.div(vRha, fden), vRe);
    const capped = v128.bitselect(vCap, u, f64x2.gt(u, vCap));
    const seen = f64x2.le(vRha, f64x2.mul(f64x2.add(vRe, g), fden));
    const above = v128.bitselect(g, capped, seen);
    const never = v128.bitselect(v128.bitselect(g, vCap, f64x2.gt(g, vCap)), NAN2, f64x2.eq(fden, fden));
    const v0 = v128.bitselect(above, never, f64x2.gt(fden, eps));
    const v = v128.bitselect(v0, NAN2, f64x2.eq(g, g));
    v128.store64_lane(h + ((<usize>m) << 2), f32x4.demote_f64x2_zero(v), 0);
  }
}
