/**
 * Map rasters of the web app (worker/io/render.ts): each image row, spaced evenly in Web Mercator y, shows the grid
 * row holding its centre latitude (y = ln tan(π/4 + φ/2), the spherical Mercator of EPSG:3857); fold counts in the
 * fold colours, the network floor on viridis with its legend ends at the ramp's ends, the relief opaque where the
 * terrain is known.
 */
import { interpolateViridis } from 'd3-scale-chromatic';
import { describe, expect, it } from 'vitest';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { Terrain } from '../worker/core/terrain.ts';
import {
  FOLD_COLORS,
  GAINED_COLOR,
  GAP_COLOR,
  LOSS_COLOR,
  floorLevelImage,
  floorStep,
  ABOVE_LEVELS_COLOR,
  foldImage,
  mercatorRowLatitudes,
  reliefImage,
  rgbOf,
} from '../worker/io/render.ts';
import { deltaE, lab } from './support/colour.ts';

// 4 columns × 50 rows of 0.1° from 60° S: far enough south for Mercator rows to differ from lon/lat rows. At 35° W:
// open Southern Ocean, some 400 km from the nearest island.
const grid: GridGeo = {
  width: 4,
  height: 50,
  originX: -35,
  originY: -60,
  pixelX: 0.1,
  pixelY: -0.1,
  crs: WGS84_GEOGRAPHIC,
};

describe('map rasters', () => {
  it('show on each Mercator-spaced row the grid row under its centre', () => {
    const fold = new Uint16Array(grid.width * grid.height);
    for (let r = 0; r < grid.height; r++) fold.fill((r % 4) + 1, r * grid.width, (r + 1) * grid.width);
    const img = foldImage(grid, fold);
    const lats = mercatorRowLatitudes(-60, -65, grid.height);
    let shifted = 0;
    for (let r = 0; r < grid.height; r++) {
      const gridRow = Math.floor((lats[r] - grid.originY) / grid.pixelY);
      if (gridRow !== r) shifted++;
      const want = FOLD_COLORS[gridRow % 4];
      const o = (r * grid.width + 2) * 4;
      expect([img.rgba[o], img.rgba[o + 1], img.rgba[o + 2], img.rgba[o + 3]]).toEqual([...want, 255]);
    }
    expect(shifted).toBeGreaterThan(0); // the warp does something at these latitudes
    expect(img.corners).toEqual([
      [-35, -60],
      [-34.6, -60],
      [-34.6, -65],
      [-35, -65],
    ]);
  });

  it('shade the relief wherever the terrain is known', () => {
    const n = 64;
    const data = new Float32Array(n * n);
    for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) data[r * n + c] = 40 * c + 5 * r;
    const t = Terrain.fromTiles([
      {
        name: 'ramp',
        geo: {
          width: n,
          height: n,
          originX: -30,
          originY: -40,
          pixelX: 1 / 64,
          pixelY: -1 / 64,
          crs: WGS84_GEOGRAPHIC,
        },
        data,
        voidsFilled: 0,
        warnings: [],
      },
    ]);
    const r = reliefImage(t, { west: -30, east: -29, north: -40, south: -41 }, 100);
    let opaque = 0;
    for (let i = 3; i < r.image.rgba.length; i += 4) if (r.image.rgba[i] === 255) opaque++;
    expect(opaque).toBe(r.image.width * r.image.height);
    expect(r.minM).toBeGreaterThanOrEqual(0);
    expect(r.maxM).toBeLessThanOrEqual(40 * 63 + 5 * 63);
    expect(r.maxM).toBeGreaterThan(2000);
  });
});

describe('the network floor in steps of the computed levels', () => {
  it('each cell takes the lowest level it is seen at; above every level grey; unseen transparent', () => {
    const grid = {
      width: 4,
      height: 1,
      originX: -35,
      originY: -40,
      pixelX: 1,
      pixelY: -1,
      crs: WGS84_GEOGRAPHIC,
    };
    const levels = [
      { label: 'FL030', altitudeM: 914.4 },
      { label: 'FL050', altitudeM: 1524 },
      { label: 'FL100', altitudeM: 3048 },
    ];
    const { image, legend } = floorLevelImage(grid, Float32Array.from([100, 1000, 5000, NaN]), levels);
    expect(legend.map((l) => l.label)).toEqual(['FL030', 'FL050', 'FL100', 'above FL100']);
    expect(legend[0].color).toBe(interpolateViridis(0));
    expect(legend[2].color).toBe(interpolateViridis(1));
    // The image is on Mercator rows: read the colours the cells' columns got in its top row.
    const px = (x: number) => [...image.rgba.slice(x * 4, x * 4 + 4)];
    const w = image.width;
    const col = (c: number) => Math.min(w - 1, Math.floor(((c + 0.5) / 4) * w));
    expect(px(col(0)).slice(0, 3)).toEqual(rgbOf(interpolateViridis(0))); // 100 m: seen from FL030
    expect(px(col(1)).slice(0, 3)).toEqual(rgbOf(interpolateViridis(0.5))); // 1000 m: from FL050
    expect(px(col(2)).slice(0, 3)).toEqual(rgbOf(ABOVE_LEVELS_COLOR)); // above FL100
    expect(px(col(3))[3]).toBe(0); // never seen
  });
});

/**
 * Colour-vision deficiency simulated with the matrices of Machado, Oliveira & Fernandes, "A physiologically-based
 * model for simulation of color vision deficiency", IEEE TVCG 15(6), 2009, at severity 1.0, applied to linear RGB
 * (the matrices from memory; each row sums to 1, so white stays white).
 */
const CVD: Record<'deuteranopia' | 'protanopia', number[][]> = {
  deuteranopia: [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.01182, 0.04294, 0.968881],
  ],
  protanopia: [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
  ],
};
function simulate(rgb: readonly number[], m: number[][]): number[] {
  const lin = rgb.map((v) => {
    const c = v / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  });
  return m.map((row) => {
    const v = Math.min(1, Math.max(0, row[0] * lin[0] + row[1] * lin[1] + row[2] * lin[2]));
    return 255 * (v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055);
  });
}

/** The least ΔE*ab between the two given colours and every other map colour (and between themselves). */
function closest(
  mine: Record<string, readonly number[]>,
  view: (c: readonly number[]) => readonly number[] = (c) => c,
): { pair: string; dE: number } {
  const others: Record<string, readonly number[]> = {
    ...Object.fromEntries(FOLD_COLORS.map((c, i) => [`fold ${i + 1}`, c])),
    gap: GAP_COLOR,
  };
  let best = { pair: '', dE: Infinity };
  const names = Object.keys(mine);
  for (const [i, n] of names.entries()) {
    const against = { ...others, ...Object.fromEntries(names.slice(i + 1).map((k) => [k, mine[k]])) };
    for (const [o, c] of Object.entries(against)) {
      const dE = deltaE(view(mine[n]), view(c));
      if (dE < best.dE) best = { pair: `${n} / ${o}`, dE };
    }
  }
  return best;
}

describe('map colours', () => {
  // Thresholds: a ΔE*ab of about 2.3 is just noticeable (Sharma & Trussell, "Digital color imaging", IEEE TIP 6(7),
  // 1997 [memory]); categories on a map want far more. 25 in normal vision and 15 under simulated deuteranopia and
  // protanopia are this project's choice, not a published figure.
  const layout = { gained: GAINED_COLOR, lost: LOSS_COLOR };

  it('tell gained and lost apart from every fold colour, the gap colour and each other', () => {
    expect(closest(layout).dE).toBeGreaterThan(25);
  });

  it('still do under simulated deuteranopia and protanopia', () => {
    for (const m of Object.values(CVD)) expect(closest(layout, (c) => simulate(c, m)).dE).toBeGreaterThan(15);
  });

  it('would catch the green "gained" it replaced (it sat on the fold-3 green)', () => {
    const old = closest({ gained: [72, 200, 120], lost: LOSS_COLOR });
    expect(old.pair).toBe('gained / fold 3');
    expect(old.dE).toBeLessThan(10);
  });

  it('check the conversion on known values: white is L* 100, black L* 0, sRGB red L* 53.2 a* 80.1 b* 67.2', () => {
    // sRGB red in CIELAB (D65): L* 53.24, a* 80.09, b* 67.20 [calc, from the same IEC 61966-2-1 and CIE 15 formulas;
    // the figures as commonly tabulated, from memory].
    expect(lab([255, 255, 255])[0]).toBeCloseTo(100, 1);
    expect(lab([0, 0, 0])[0]).toBeCloseTo(0, 6);
    const red = lab([255, 0, 0]);
    expect(red[0]).toBeCloseTo(53.24, 1);
    expect(red[1]).toBeCloseTo(80.09, 0);
    expect(red[2]).toBeCloseTo(67.2, 0);
  });
});

describe('floor steps', () => {
  const alts = [914.4, 1524, 3048];
  it('name the first level at or above the floor, "above" past the last, nothing for NaN', () => {
    expect(floorStep(0, alts)).toBe(0);
    expect(floorStep(914.4, alts)).toBe(0); // at a level: seen at that level
    expect(floorStep(914.5, alts)).toBe(1);
    expect(floorStep(3048, alts)).toBe(2);
    expect(floorStep(3049, alts)).toBe(3);
    expect(floorStep(NaN, alts)).toBe(-1);
  });

  it('are the steps the floor map is painted in', () => {
    const floor = Float32Array.from([500, 1600, 3048, 4000]);
    const levels = alts.map((a, i) => ({ label: `L${i}`, altitudeM: a }));
    const { image, legend } = floorLevelImage(grid, floor, levels);
    const w = image.width;
    for (let c = 0; c < 4; c++) {
      const x = Math.min(w - 1, Math.floor(((c + 0.5) / 4) * w));
      const want = rgbOf(legend[floorStep(floor[c], alts)].color);
      expect([...image.rgba.slice(x * 4, x * 4 + 3)]).toEqual(want);
    }
  });
});
