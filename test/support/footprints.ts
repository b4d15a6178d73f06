/** Footprints for tests, built from whole-grid arrays (cells outside the window must hold no cover). */
import {
  windowCellCount,
  wholeWindow,
  type Footprint,
  type FootprintWindow,
} from '../../worker/core/footprint.ts';

/**
 * A footprint from whole-grid lo/hi arrays of a width × height grid: cropped to `window`, or over the whole grid
 * without one.
 */
export function gridFootprint(
  base: Pick<Footprint, 'siteId' | 'typeId' | 'kind'>,
  lo: Uint16Array,
  hi: Uint16Array,
  width: number,
  height: number,
  window?: FootprintWindow,
): Footprint {
  const w = window ?? wholeWindow(width, height);
  const n = windowCellCount(w);
  const cols = Math.max(0, w.col1 - w.col0);
  const l = new Uint16Array(n);
  const h = new Uint16Array(n);
  for (let r = w.row0, k = 0; r < w.row1; r++, k += cols) {
    l.set(lo.subarray(r * width + w.col0, r * width + w.col1), k);
    h.set(hi.subarray(r * width + w.col0, r * width + w.col1), k);
  }
  return { ...base, lo: l, hi: h, window: w };
}
