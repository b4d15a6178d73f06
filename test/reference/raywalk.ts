/**
 * The exact reference for line of sight on a gridded DEM: Franklin & Ray's R3 ("Higher isn't necessarily
 * better: visibility algorithms and experiments", 1994). For every target cell a ray is walked from the
 * observer to the cell centre; at every crossing of a row or column line of cell centres the terrain is
 * interpolated linearly between the two cells on that line, lowered by the earth's curvature drop d²/(2kR)
 * on a flat plane. Slow (O(n) per cell) and independent of the engine: its only job is to be right.
 *
 * Works on a metric (projected) grid with square pixels; distances are planar.
 */
export interface RayWalkInput {
  data: Float32Array;
  width: number;
  height: number;
  pixelM: number;
  /** Observer at continuous pixel coordinates (cell centre of (c, r) = (c + 0.5, r + 0.5)). */
  ox: number;
  oy: number;
  antennaAltM: number;
  /** k·R in metres. */
  reM: number;
}

/**
 * Visits every crossing of the segment from the observer to the centre of cell (c, r) with a column or row line
 * of cell centres (strictly between the two), with t ∈ (0, 1) the fraction of the way and z the terrain
 * interpolated linearly between the two cells on that line.
 */
export function forEachCrossing(
  inp: RayWalkInput,
  c: number,
  r: number,
  visit: (t: number, z: number) => void,
): void {
  const { data, width: W, ox, oy } = inp;
  const tx = c + 0.5;
  const ty = r + 0.5;
  const dx = tx - ox;
  const dy = ty - oy;
  if (dx !== 0) {
    const kFrom = Math.min(ox, tx);
    const kTo = Math.max(ox, tx);
    for (let k = Math.ceil(kFrom - 0.5); k + 0.5 <= kTo; k++) {
      const t = (k + 0.5 - ox) / dx;
      if (t <= 1e-12 || t >= 1 - 1e-12) continue;
      const y = oy + t * dy - 0.5;
      const r0 = Math.floor(y);
      const f = y - r0;
      const a = data[r0 * W + k];
      const b = f > 0 ? data[(r0 + 1) * W + k] : a;
      visit(t, a + (b - a) * f);
    }
  }
  if (dy !== 0) {
    const kFrom = Math.min(oy, ty);
    const kTo = Math.max(oy, ty);
    for (let k = Math.ceil(kFrom - 0.5); k + 0.5 <= kTo; k++) {
      const t = (k + 0.5 - oy) / dy;
      if (t <= 1e-12 || t >= 1 - 1e-12) continue;
      const x = ox + t * dx - 0.5;
      const c0 = Math.floor(x);
      const f = x - c0;
      const a = data[k * W + c0];
      const b = f > 0 ? data[k * W + c0 + 1] : a;
      visit(t, a + (b - a) * f);
    }
  }
}

/** Lowest line-of-sight altitude above the centre of target cell (c, r), not clamped to the ground. */
export function rayWalkFloor(inp: RayWalkInput, c: number, r: number): number {
  const { pixelM, ox, oy, antennaAltM: ha, reM } = inp;
  const len = Math.hypot(c + 0.5 - ox, r + 0.5 - oy);
  const D = len * pixelM;
  if (len < 1e-9) return -Infinity;
  let maxSlope = -Infinity;
  forEachCrossing(inp, c, r, (t, z) => {
    const d = t * D;
    const zEff = z - (d * d) / (2 * reM);
    const slope = (zEff - ha) / d;
    if (slope > maxSlope) maxSlope = slope;
  });
  if (maxSlope === -Infinity) return -Infinity;
  return ha + maxSlope * D + (D * D) / (2 * reM);
}

/** The reference floor for every cell, clamped to the ground (a target above the cell is at least on it). */
export function rayWalkFloorGrid(inp: RayWalkInput): Float32Array {
  const out = new Float32Array(inp.width * inp.height);
  for (let r = 0; r < inp.height; r++) {
    for (let c = 0; c < inp.width; c++) {
      const g = inp.data[r * inp.width + c];
      out[r * inp.width + c] = Math.max(rayWalkFloor(inp, c, r), g);
    }
  }
  return out;
}
