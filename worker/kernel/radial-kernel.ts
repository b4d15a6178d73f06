/**
 * The radial sweep's kernel in AssemblyScript, compiled to WebAssembly with 128-bit SIMD: two neighbouring radials
 * of a level stepped together, one in each lane. worker/core/horizon.ts (`sweepPair`) runs it on a piece of range
 * knots where both radials lie well inside the terrain; it computes what `sweepRadial`'s fast path computes, with
 * the same IEEE operations in the same order per radial, so the two give the same bits (test/radial-kernel.test.ts).
 * horizon.ts holds the method and its sources. Build: `npm run build:kernel` (writes worker/core/radial-kernel-wasm.ts).
 *
 * The memory is the terrain's own (shared between the threads that sweep): the terrain mosaic, the polar buffer of
 * screening tans and each thread's range tables all live in it (worker/core/radial-kernel.ts). Pointers are byte
 * offsets into it; f64 arrays are 8-byte, f32 arrays 4-byte aligned.
 */

/** The range sample at which `pairRun` stopped: its jEnd, or the first sample of unknown terrain on either radial. */
export let stoppedAt: i32 = 0;
/** The two radials' screening tans where `pairRun` stopped (before that sample's terrain is taken in). */
export let tanA: f64 = 0;
export let tanB: f64 = 0;

/**
 * Samples j = j0 … jEnd − 1 of radials A (lane 0) and B (lane 1): for each, stores the screening tan before the
 * sample (f32, at dst + 4·j·stride for A and 4 bytes after it for B), steps the pixel position by forward
 * differences (p += v; v += a), takes in the bilinear terrain z under the old position and raises the screening
 * where (Re + z)·cos[j] − (Re + ha) > T·(Re + z)·sin[j]. Stops before the first sample whose terrain is unknown on
 * either radial (NaN), its tans stored; the caller goes on from there one radial at a time.
 */
export function pairRun(
  data: usize,
  W: i32,
  j0: i32,
  jEnd: i32,
  pxA: f64,
  pxB: f64,
  pyA: f64,
  pyB: f64,
  vxA: f64,
  vxB: f64,
  vyA: f64,
  vyB: f64,
  axA: f64,
  axB: f64,
  ayA: f64,
  ayB: f64,
  TA: f64,
  TB: f64,
  re: f64,
  rha: f64,
  cosP: usize,
  sinP: usize,
  dst: usize,
  stride: i32,
): void {
  let px = f64x2(pxA, pxB);
  let py = f64x2(pyA, pyB);
  let vx = f64x2(vxA, vxB);
  let vy = f64x2(vyA, vyB);
  const ax = f64x2(axA, axB);
  const ay = f64x2(ayA, ayB);
  let T = f64x2(TA, TB);
  const half = f64x2.splat(0.5);
  const reV = f64x2.splat(re);
  const rhaV = f64x2.splat(rha);
  const rowBytes = (<usize>W) << 2;
  let j = j0;
  for (; j < jEnd; j++) {
    const d = dst + ((<usize>(j * stride)) << 2);
    store<f32>(d, <f32>f64x2.extract_lane(T, 0));
    store<f32>(d, <f32>f64x2.extract_lane(T, 1), 4);
    const gx = f64x2.sub(px, half);
    const gy = f64x2.sub(py, half);
    px = f64x2.add(px, vx);
    py = f64x2.add(py, vy);
    vx = f64x2.add(vx, ax);
    vy = f64x2.add(vy, ay);
    // Positions stay at least two pixels inside the raster (the caller checks): truncation is the floor.
    const ix = i32x4.trunc_sat_f64x2_s_zero(gx);
    const iy = i32x4.trunc_sat_f64x2_s_zero(gy);
    const fx = f64x2.sub(gx, f64x2.convert_low_i32x4_s(ix));
    const fy = f64x2.sub(gy, f64x2.convert_low_i32x4_s(iy));
    const kA = data + ((<usize>(i32x4.extract_lane(iy, 0) * W + i32x4.extract_lane(ix, 0))) << 2);
    const kB = data + ((<usize>(i32x4.extract_lane(iy, 1) * W + i32x4.extract_lane(ix, 1))) << 2);
    // Each radial's two neighbouring samples of its two rows, widened to f64, then regrouped by corner.
    const topA = f64x2.promote_low_f32x4(v128.load64_zero(kA));
    const botA = f64x2.promote_low_f32x4(v128.load64_zero(kA + rowBytes));
    const topB = f64x2.promote_low_f32x4(v128.load64_zero(kB));
    const botB = f64x2.promote_low_f32x4(v128.load64_zero(kB + rowBytes));
    const d0 = v128.shuffle<f64>(topA, topB, 0, 2);
    const d1 = v128.shuffle<f64>(topA, topB, 1, 3);
    const d2 = v128.shuffle<f64>(botA, botB, 0, 2);
    const d3 = v128.shuffle<f64>(botA, botB, 1, 3);
    const top = f64x2.add(d0, f64x2.mul(f64x2.sub(d1, d0), fx));
    const bot = f64x2.add(d2, f64x2.mul(f64x2.sub(d3, d2), fx));
    const z = f64x2.add(top, f64x2.mul(f64x2.sub(bot, top), fy));
    if (!i64x2.all_true(f64x2.eq(z, z))) break;
    const rz = f64x2.add(reV, z);
    const num = f64x2.sub(f64x2.mul(rz, f64x2.splat(load<f64>(cosP + ((<usize>j) << 3)))), rhaV);
    const den = f64x2.mul(rz, f64x2.splat(load<f64>(sinP + ((<usize>j) << 3))));
    // Divide only where the screening rises (rare), as the scalar sweep does.
    const up = f64x2.gt(num, f64x2.mul(T, den));
    if (v128.any_true(up)) T = v128.bitselect(f64x2.div(num, den), T, up);
  }
  stoppedAt = j;
  tanA = f64x2.extract_lane(T, 0);
  tanB = f64x2.extract_lane(T, 1);
}
