/**
 * Map rasters of the web app (worker/render.ts): each image row, spaced evenly in Web Mercator y, shows the grid
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
  floorLevelImage,
  ABOVE_LEVELS_COLOR,
  foldImage,
  mercatorRowLatitudes,
  reliefImage,
  rgbOf,
} from '../worker/render.ts';

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
