/**
 * The multilateration accuracy map as an image for the app (worker/io/render.ts's Mercator rows): each cell's 1σ
 * horizontal DRMS (worker/core/mlat-map.ts) in one of the metre bands of the GeoJSON layers (mlat-layers.ts
 * MLAT_BAND_EDGES_M: at most 50, 100, 200, 500, 1 000 m, and beyond), NaN (no fix) transparent. The colours are our
 * own pick from d3-scale-chromatic's yellow–orange–brown ramp: dark brown for the tightest fix, pale yellow for the
 * loosest. Picked for standing apart from the other map colours (worker/io/render.ts), in CIELAB ΔE*ab (CIE 1976):
 * any two bands ≥ 17 apart, every band ≥ 36 from the fold colours (a blue–green ramp tried first came within
 * 15 of them) and ≥ 26 from the gap, loss and gained colours — test/engine-mlat.test.ts holds the first two.
 */
import { interpolateYlOrBr } from 'd3-scale-chromatic';
import type { GridGeo } from '../core/grid.ts';
import { MLAT_BAND_EDGES_M } from './mlat-layers.ts';
import { cssColor, paintGrid, rgbOf, type LegendStop, type RasterImage } from './render.ts';

/** Band colours, tightest first: one per band edge, then one for beyond the last edge. */
export const MLAT_BAND_COLORS: readonly (readonly [number, number, number])[] = [
  0.95, 0.8, 0.65, 0.5, 0.35, 0.18,
].map((t) => rgbOf(interpolateYlOrBr(t)));

/** The band a DRMS falls in: the first edge at or above it (`edges.length` beyond the last), −1 for NaN. */
export function mlatBand(drmsM: number, edges: readonly number[] = MLAT_BAND_EDGES_M): number {
  if (!(drmsM === drmsM)) return -1;
  let k = 0;
  while (k < edges.length && edges[k] < drmsM) k++;
  return k;
}

/** The legend: one entry per band, `value` its upper edge in metres (Infinity for the last). */
export function mlatLegend(edges: readonly number[] = MLAT_BAND_EDGES_M): LegendStop[] {
  const fmt = (m: number) => m.toLocaleString('en');
  const stops: LegendStop[] = edges.map((e, i) => ({
    value: e,
    color: cssColor(MLAT_BAND_COLORS[i]),
    label: i === 0 ? `≤ ${fmt(e)} m` : `${fmt(edges[i - 1])}–${fmt(e)} m`,
  }));
  stops.push({
    value: Infinity,
    color: cssColor(MLAT_BAND_COLORS[edges.length]),
    label: `> ${fmt(edges[edges.length - 1])} m`,
  });
  return stops;
}

/** The DRMS map (m per cell, NaN where no fix) in the band colours; NaN transparent. */
export function mlatAccuracyImage(grid: GridGeo, drmsM: Float32Array): RasterImage {
  const edges = MLAT_BAND_EDGES_M;
  if (MLAT_BAND_COLORS.length !== edges.length + 1)
    throw new Error('mlat image: one colour per band edge and one beyond');
  return paintGrid(grid, (cell, rgba, o) => {
    const k = mlatBand(drmsM[cell], edges);
    if (k < 0) return;
    const c = MLAT_BAND_COLORS[k];
    rgba[o] = c[0];
    rgba[o + 1] = c[1];
    rgba[o + 2] = c[2];
    rgba[o + 3] = 255;
  });
}
