/**
 * Map images from grids, for the web app: RGBA rasters warped onto Web Mercator rows (MapLibre stretches an image
 * linearly between its corners in Mercator, so a lon/lat grid drawn as-is would sit up to ~5 km off over a 5°
 * span), with perceptual colour ramps (viridis, cividis, inferno from d3-scale-chromatic). Pure: typed arrays in,
 * typed arrays out; the worker entry turns them into PNG.
 */
import {
  interpolateCividis,
  interpolateInferno,
  interpolatePlasma,
  interpolateViridis,
  schemeSet1,
} from 'd3-scale-chromatic';
import type { GridGeo } from '../core/grid.ts';
import type { Terrain } from '../core/terrain.ts';

export interface RasterImage {
  width: number;
  height: number;
  /** RGBA, row-major, row 0 north. */
  rgba: Uint8ClampedArray<ArrayBuffer>;
  /** Lon/lat corners for MapLibre: top-left, top-right, bottom-right, bottom-left. */
  corners: [number, number][];
}

export interface LegendStop {
  /** Value at this stop (metres, or a fold count). */
  value: number;
  color: string;
  label?: string;
}

export interface Bounds {
  west: number;
  south: number;
  east: number;
  north: number;
}

const DEG = Math.PI / 180;
const mercY = (lat: number) => Math.log(Math.tan(Math.PI / 4 + (lat * DEG) / 2));
const invMercY = (y: number) => (2 * Math.atan(Math.exp(y)) - Math.PI / 2) / DEG;

/** For each of `rows` image rows (Mercator-spaced from north to south), the latitude at its centre. */
export function mercatorRowLatitudes(north: number, south: number, rows: number): Float64Array {
  const yn = mercY(north);
  const ys = mercY(south);
  const out = new Float64Array(rows);
  for (let r = 0; r < rows; r++) out[r] = invMercY(yn + ((r + 0.5) / rows) * (ys - yn));
  return out;
}

function corners(b: Bounds): [number, number][] {
  return [
    [b.west, b.north],
    [b.east, b.north],
    [b.east, b.south],
    [b.west, b.south],
  ];
}

/** RGB bytes of a CSS colour from d3-scale-chromatic ("rgb(r, g, b)" or "#rrggbb"). */
export function rgbOf(css: string): [number, number, number] {
  if (css.startsWith('#')) {
    const n = parseInt(css.slice(1), 16);
    return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
  }
  const m = css.match(/\d+(\.\d+)?/g);
  if (!m || m.length < 3) throw new Error(`render: cannot read colour ${css}`);
  return [Number(m[0]), Number(m[1]), Number(m[2])];
}

/** A 256-entry RGB table of a ramp over [0, 1]. */
export function rampTable(ramp: (t: number) => string): Uint8Array {
  const t = new Uint8Array(256 * 3);
  for (let i = 0; i < 256; i++) t.set(rgbOf(ramp(i / 255)), i * 3);
  return t;
}

const CIVIDIS = rampTable(interpolateCividis);

/** Colours of the fold layer: fold 1, 2, 3, ≥ 4 (viridis steps, light = more sites). */
export const FOLD_COLORS = [0.25, 0.5, 0.72, 0.95].map((t) => rgbOf(interpolateViridis(t)));
/** Gaps inside a volume (requirement not met): inferno's crimson, apart from the viridis set. */
export const GAP_COLOR = rgbOf(interpolateInferno(0.42));
/**
 * What an outage loses, and what layout B loses against A: Set1's red. (Inferno's orange, used before, came within
 * CIELAB ΔE 9 of the ≥ 4 yellow under simulated deuteranopia.)
 */
export const LOSS_COLOR = rgbOf(schemeSet1[0]);
/**
 * What layout B gains against A: plasma's deep violet. (A green used before sat within ΔE 5 of the fold-3 green.)
 * test/render.test.ts holds every pair of these and the fold colours at least 25 apart in CIELAB ΔE*ab, and 15
 * apart under simulated deuteranopia and protanopia.
 */
export const GAINED_COLOR = rgbOf(interpolatePlasma(0.15));

const hex = (c: readonly number[]) => '#' + c.map((v) => v.toString(16).padStart(2, '0')).join('');

/** A colour of this module as CSS hex, for the app's legend (one source for the map and its legend). */
export function cssColor(c: readonly number[]): string {
  return hex(c);
}

export function foldLegend(): LegendStop[] {
  return FOLD_COLORS.map((c, i) => ({ value: i + 1, color: hex(c), label: i === 3 ? '≥ 4' : String(i + 1) }));
}

let lastCells: { key: string; cells: Int32Array } | null = null;

/** Grid cell of each image pixel (−1 outside the grid), for a lon/lat grid drawn on Mercator rows (kept for the last grid). */
function pixelCells(grid: GridGeo, rowLats: Float64Array): Int32Array {
  const key = [grid.width, grid.height, grid.originX, grid.originY, grid.pixelX, grid.pixelY].join();
  if (lastCells?.key === key) return lastCells.cells;
  const W = grid.width;
  const out = new Int32Array(W * rowLats.length);
  for (let r = 0; r < rowLats.length; r++) {
    const gr = Math.floor((rowLats[r] - grid.originY) / grid.pixelY);
    for (let c = 0; c < W; c++) out[r * W + c] = gr >= 0 && gr < grid.height ? gr * W + c : -1;
  }
  lastCells = { key, cells: out };
  return out;
}

function gridBounds(grid: GridGeo): Bounds {
  return {
    west: grid.originX,
    east: grid.originX + grid.width * grid.pixelX,
    north: grid.originY,
    south: grid.originY + grid.height * grid.pixelY,
  };
}

/**
 * Paints a lon/lat analysis grid: `paint(cell, rgba, offset)` writes one pixel (leave alpha 0 for nothing).
 * The image has the grid's columns and as many Mercator-spaced rows as the grid has rows.
 */
export function paintGrid(
  grid: GridGeo,
  paint: (cell: number, rgba: Uint8ClampedArray, o: number) => void,
): RasterImage {
  if (grid.crs.kind !== 'geographic') throw new Error('render: the analysis grid must be lon/lat');
  const b = gridBounds(grid);
  const lats = mercatorRowLatitudes(b.north, b.south, grid.height);
  const cellOf = pixelCells(grid, lats);
  const rgba = new Uint8ClampedArray(grid.width * grid.height * 4);
  for (let p = 0; p < cellOf.length; p++) if (cellOf[p] >= 0) paint(cellOf[p], rgba, p * 4);
  return { width: grid.width, height: grid.height, rgba, corners: corners(b) };
}

/** Fold count per cell (1…≥4) in the fold colours; 0 transparent. */
export function foldImage(grid: GridGeo, fold: Uint16Array, alpha = 255): RasterImage {
  return paintGrid(grid, (cell, rgba, o) => {
    const k = fold[cell];
    if (k === 0) return;
    const c = FOLD_COLORS[Math.min(k, 4) - 1];
    rgba[o] = c[0];
    rgba[o + 1] = c[1];
    rgba[o + 2] = c[2];
    rgba[o + 3] = alpha;
  });
}

/** Cells where `mask` is set, in one colour. */
export function maskImage(grid: GridGeo, mask: Uint8Array, color: readonly number[]): RasterImage {
  return paintGrid(grid, (cell, rgba, o) => {
    if (!mask[cell]) return;
    rgba[o] = color[0];
    rgba[o + 1] = color[1];
    rgba[o + 2] = color[2];
    rgba[o + 3] = 255;
  });
}

/** Colour of cells whose floor lies above the highest computed level (seen, but not at any level shown). */
export const ABOVE_LEVELS_COLOR = '#b9b9b9';

/**
 * The network floor in steps of the study's levels: each cell takes the colour of the lowest computed level it is
 * seen at (the first level whose true altitude is at or above its floor), viridis from the lowest level to the
 * highest, one legend entry per level — so the low levels, where the gaps are, get as much of the ramp as the high
 * ones (a linear ramp from 0 to FL460 spent most of it above FL200). A floor above every level is grey; NaN (not
 * seen at all) is transparent. `levels` in increasing altitude.
 */
/**
 * The step of the floor map a floor falls in: the index of the first level whose altitude is at or above it
 * (`altitudesM` increasing), `altitudesM.length` when the floor lies above every level, −1 for NaN (not seen).
 * floorLevelImage paints with it and the cursor read-out names it, so the two agree.
 */
export function floorStep(floorM: number, altitudesM: ArrayLike<number>): number {
  if (!(floorM === floorM)) return -1;
  const n = altitudesM.length;
  let k = 0;
  while (k < n && altitudesM[k] < floorM) k++;
  return k;
}

export function floorLevelImage(
  grid: GridGeo,
  floor: Float32Array,
  levels: readonly { label: string; altitudeM: number }[],
): { image: RasterImage; legend: LegendStop[] } {
  const n = levels.length;
  const rgb = levels.map((_, i) => rgbOf(interpolateViridis(n > 1 ? i / (n - 1) : 0)));
  const above = rgbOf(ABOVE_LEVELS_COLOR);
  const alts = Float64Array.from(levels, (l) => l.altitudeM);
  const image = paintGrid(grid, (cell, rgba, o) => {
    const k = floorStep(floor[cell], alts);
    if (k < 0) return;
    const c = k < n ? rgb[k] : above;
    rgba[o] = c[0];
    rgba[o + 1] = c[1];
    rgba[o + 2] = c[2];
    rgba[o + 3] = 255;
  });
  const legend: LegendStop[] = levels.map((l, i) => ({
    value: l.altitudeM,
    color: interpolateViridis(n > 1 ? i / (n - 1) : 0),
    label: l.label,
  }));
  legend.push({
    value: Infinity,
    color: ABOVE_LEVELS_COLOR,
    label: `above ${levels[n - 1]?.label ?? ''}`.trim(),
  });
  return { image, legend };
}

/**
 * Shaded relief of the terrain with an elevation ramp (cividis above sea level, a flat grey-blue at or below
 * it), sampled at most `maxSide` pixels on the long side over `bounds`, on Mercator rows. Light from the
 * north-west at 45° (the usual cartographic convention), slopes from central differences in metres.
 */
export function reliefImage(
  terrain: Terrain,
  bounds: Bounds,
  maxSide = 1400,
): { image: RasterImage; minM: number; maxM: number; legend: LegendStop[] } {
  const latMid = (bounds.north + bounds.south) / 2;
  const wDeg = bounds.east - bounds.west;
  const aspect = (wDeg * Math.cos(latMid * DEG)) / (bounds.north - bounds.south);
  const W = Math.max(2, Math.round(aspect >= 1 ? maxSide : maxSide * aspect));
  const H = Math.max(2, Math.round(aspect >= 1 ? maxSide / aspect : maxSide));
  const lats = mercatorRowLatitudes(bounds.north, bounds.south, H);
  const z = new Float32Array(W * H);
  let minM = Infinity;
  let maxM = -Infinity;
  for (let r = 0; r < H; r++) {
    for (let c = 0; c < W; c++) {
      const v = terrain.sampleLonLat(bounds.west + ((c + 0.5) / W) * wDeg, lats[r]);
      z[r * W + c] = v;
      if (v === v) {
        if (v < minM) minM = v;
        if (v > maxM) maxM = v;
      }
    }
  }
  if (!(maxM >= minM)) {
    minM = 0;
    maxM = 0;
  }
  const top = Math.max(1, maxM);
  const rgba = new Uint8ClampedArray(W * H * 4);
  const dxM = (wDeg / W) * 111_320;
  const az = 315 * DEG;
  const alt = 45 * DEG;
  for (let r = 0; r < H; r++) {
    const rUp = Math.max(0, r - 1);
    const rDn = Math.min(H - 1, r + 1);
    const dyM = ((lats[rUp] - lats[rDn]) / Math.max(1, rDn - rUp)) * 111_320;
    const cosLat = Math.cos(lats[r] * DEG);
    for (let c = 0; c < W; c++) {
      const i = r * W + c;
      const v = z[i];
      const o = i * 4;
      if (!(v === v)) continue; // unknown terrain: transparent
      const cl = Math.max(0, c - 1);
      const cr = Math.min(W - 1, c + 1);
      const e = z[r * W + cr];
      const w = z[r * W + cl];
      const n = z[rUp * W + c];
      const s = z[rDn * W + c];
      const dzdx = (e === e && w === w ? e - w : 0) / ((cr - cl || 1) * dxM * cosLat);
      const dzdy = (n === n && s === s ? n - s : 0) / ((rDn - rUp || 1) * dyM);
      const slope = Math.atan(Math.hypot(dzdx, dzdy));
      const aspectRad = Math.atan2(dzdx, dzdy);
      const shade = Math.max(
        0,
        Math.cos(alt) * Math.sin(slope) * Math.cos(az - aspectRad - Math.PI) +
          Math.sin(alt) * Math.cos(slope),
      );
      let R: number, G: number, B: number;
      if (v <= 0) {
        R = 150;
        G = 170;
        B = 186;
      } else {
        // Cividis, half-way to a light grey: the relief stays quiet under the coverage colours.
        const t = Math.min(255, Math.round((v / top) * 200 + 40)) * 3;
        R = 0.5 * CIVIDIS[t] + 0.5 * 205;
        G = 0.5 * CIVIDIS[t + 1] + 0.5 * 205;
        B = 0.5 * CIVIDIS[t + 2] + 0.5 * 200;
      }
      const k = v <= 0 ? 1 : 0.45 + 0.75 * shade;
      rgba[o] = Math.min(255, R * k);
      rgba[o + 1] = Math.min(255, G * k);
      rgba[o + 2] = Math.min(255, B * k);
      rgba[o + 3] = 255;
    }
  }
  const legend = [0, 0.5, 1].map((t) => {
    const [r, g, b] = rgbOf(interpolateCividis((t * 200 + 40) / 255));
    return { value: t * top, color: hex([0.5 * r + 102.5, 0.5 * g + 102.5, 0.5 * b + 100].map(Math.round)) };
  });
  return { image: { width: W, height: H, rgba, corners: corners(bounds) }, minM, maxM, legend };
}
