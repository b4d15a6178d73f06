/**
 * The demo's terrain tiles, built from our own seeded generator (synth-terrain.ts): pure, no I/O. The CLI's
 * `airshade demo-data` (worker/cli/demo.ts) names the files, checks them and writes them.
 */
import { WGS84_GEOGRAPHIC, type GridGeo } from '../core/grid.ts';
import { encodeGeoTiff } from '../io/geotiff-write.ts';
import { DEMO_WORLD, fillGeographic, type SynthWorld } from './synth-terrain.ts';

/** 3 arc-seconds; 1201 × 1201 samples per 1° tile, neighbours sharing their edge row and column. */
export const TILE_ARCSEC = 3;
export const TILE_SAMPLES = 3600 / TILE_ARCSEC + 1;

/** Generates one demo tile (south-west corner lon, lat) as an Int16 GeoTIFF. */
export function demoTile(lon: number, lat: number): ArrayBuffer {
  return worldTile(lon, lat, DEMO_WORLD);
}

/** One 1° tile (south-west corner lon, lat) of any generated world, on the demo tiles' lattice, as an Int16 GeoTIFF. */
export function worldTile(lon: number, lat: number, world: SynthWorld): ArrayBuffer {
  const px = TILE_ARCSEC / 3600;
  const n = TILE_SAMPLES;
  // Pixel-is-area: the outer corner lies half a pixel beyond the edge sample centres.
  const originLon = lon - px / 2;
  const originLat = lat + 1 + px / 2;
  const heights = new Float32Array(n * n);
  fillGeographic(heights, originLon, originLat, px, n, n, world);
  const ints = new Int16Array(n * n);
  for (let i = 0; i < ints.length; i++) ints[i] = Math.round(heights[i]);
  const geo: GridGeo = {
    width: n,
    height: n,
    originX: originLon,
    originY: originLat,
    pixelX: px,
    pixelY: -px,
    crs: WGS84_GEOGRAPHIC,
  };
  return encodeGeoTiff({ geo, data: ints, nodata: -32768 });
}
