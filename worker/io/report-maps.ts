/**
 * The map pictures of the report (io/report-html.ts), from a network on the study's analysis grid: per flight
 * level the fold (distinct radar sites seeing each cell, as the coverage layers count it) with the cells of
 * each volume whose requirement is not met there, and once the network floor in steps of the study's levels — on a
 * plain base (land and sea not seen), with the coastline (ground above 0 m) as lines. The rasters come from
 * worker/io/render.ts (foldImage, maskImage, floorLevelImage on Web Mercator rows) and are encoded as PNG with
 * fast-png. Pure: typed arrays in, bytes out; the CLI and the app's engine can both call it.
 */
import { encode } from 'fast-png';
import { flToMetres, formatFl } from '../../shared/units.ts';
import { maskToPolygons, type MultiPolygonCoords } from '../core/contour.ts';
import type { GridGeo } from '../core/grid.ts';
import type { Network } from '../core/network.ts';
import { servedMasks } from '../core/outage.ts';
import { cellsAtLevel, type VolumeLike } from '../core/volumes.ts';
import {
  foldImage,
  foldLegend,
  floorLevelImage,
  maskImage,
  paintGrid,
  rgbOf,
  type Bounds,
  type RasterImage,
} from './render.ts';

/** A PNG picture on Web Mercator rows spanning the report's bounds (row 0 north). */
export interface ReportImage {
  /** PNG bytes, or a `data:image/png;base64,…` URI. */
  png: Uint8Array | string;
  width: number;
  height: number;
}

/** One entry of a map's key: a colour swatch, the hatching, a line or a site mark, with its words. */
export interface ReportLegendEntry {
  label: string;
  swatch: { fill: string } | { hatch: true } | { line: 'volume' | 'coast' } | { site: true };
}

export interface ReportMap {
  /** Stable key, e.g. "FL050" or "floor" (letters, digits and dashes). */
  key: string;
  title: string;
  /** Set on a level's map. */
  flightLevel?: number;
  /** One or two sentences under the map (what is drawn). */
  caption: string;
  /** The coloured layer. */
  fill: ReportImage;
  /** Cells to hatch (alpha > 0): where a volume's requirement is not met. */
  hatch?: ReportImage;
  legend: ReportLegendEntry[];
}

/** Colours of cells no sensor sees: sea (or no ground above 0 m), land, unknown terrain. */
export const NOT_SEEN = { sea: '#fafbfb', land: '#e2dfd6', unknown: '#ffffff' } as const;

const SEA = rgbOf(NOT_SEEN.sea);
const LAND = rgbOf(NOT_SEEN.land);
const UNKNOWN = rgbOf(NOT_SEEN.unknown);

/** The map's lon/lat extent from a grid image's corners (top-left … bottom-left). */
export function imageBounds(img: RasterImage): Bounds {
  return {
    west: img.corners[0][0],
    north: img.corners[0][1],
    east: img.corners[2][0],
    south: img.corners[2][1],
  };
}

/** PNG bytes of an RGBA raster (fast-png). */
export function encodeRaster(img: RasterImage): Uint8Array {
  return encode({
    width: img.width,
    height: img.height,
    data: new Uint8Array(img.rgba.buffer, img.rgba.byteOffset, img.rgba.byteLength),
    channels: 4,
    depth: 8,
  });
}

/** Land, sea and unknown terrain of the analysis grid in the not-seen colours. */
export function baseImage(grid: GridGeo, ground: Float32Array): RasterImage {
  return paintGrid(grid, (cell, rgba, o) => {
    const z = ground[cell];
    const c = !(z === z) ? UNKNOWN : z > 0 ? LAND : SEA;
    rgba[o] = c[0];
    rgba[o + 1] = c[1];
    rgba[o + 2] = c[2];
    rgba[o + 3] = 255;
  });
}

/** `top` over `base` (same size), where `top` is opaque; a new image. */
function over(base: RasterImage, top: RasterImage): RasterImage {
  const out = new Uint8ClampedArray(base.rgba);
  const t = top.rgba;
  for (let o = 0; o < out.length; o += 4) {
    if (t[o + 3] === 0) continue;
    out[o] = t[o];
    out[o + 1] = t[o + 1];
    out[o + 2] = t[o + 2];
    out[o + 3] = 255;
  }
  return { ...base, rgba: out };
}

/**
 * The coastline: the cells with ground above 0 m as lon/lat polygons (cell edges), for drawing. The rings are
 * traced on the grid moved to be centred on 0° and moved back, so a grid across 180° is not cut there (a cut, right
 * for GeoJSON layers, would draw a false coast along the meridian): longitudes run on past 180° with the grid's own.
 */
export function coastPolygons(grid: GridGeo, ground: Float32Array): MultiPolygonCoords {
  const land = new Uint8Array(ground.length);
  for (let i = 0; i < ground.length; i++) land[i] = ground[i] > 0 ? 1 : 0;
  const geographic = grid.crs.kind === 'geographic';
  const mid = geographic ? grid.originX + (grid.width * grid.pixelX) / 2 : 0;
  if (mid === 0) return maskToPolygons(land, grid.width, grid.height, grid);
  const polys = maskToPolygons(land, grid.width, grid.height, { ...grid, originX: grid.originX - mid });
  return polys.map((poly) => poly.map((ring) => ring.map(([lon, lat]) => [lon + mid, lat])));
}

export interface ReportMapsInput {
  grid: GridGeo;
  ground: Float32Array;
  network: Network;
  volumes: readonly VolumeLike[];
  /** Cells of each volume (the study's volumeMasks). */
  masks: readonly Uint8Array[];
  /** The levels of the network, in its order. */
  flightLevels: readonly number[];
  /** Per volume, its target's index in the network (study.volumeTargets). */
  volumeTargets?: readonly number[];
}

/** Cells of any volume whose band holds level f and whose requirement is not met there (1 = not met). */
export function unmetCells(input: ReportMapsInput, f: number): Uint8Array {
  const { network, volumes, masks, flightLevels, volumeTargets, ground } = input;
  const fl = flightLevels[f];
  const served = servedMasks(network, volumes, masks, [fl], volumeTargets, ground);
  const out = new Uint8Array(ground.length);
  volumes.forEach((v, vi) => {
    const inside = cellsAtLevel(v, masks[vi], fl, network.altitudesM[f], ground);
    const ok = served.get(`${v.id}|${fl}`);
    if (inside === null || ok === undefined) return;
    for (let i = 0; i < out.length; i++) if (inside[i] && !ok[i]) out[i] = 1;
  });
  return out;
}

const FOLD_WORDS = ['seen by 1 site', 'seen by 2 sites', 'seen by 3 sites', 'seen by 4 sites or more'];

/** The key entries every map shares after its colours. */
function commonLegend(): ReportLegendEntry[] {
  return [
    { label: 'not seen, sea', swatch: { fill: NOT_SEEN.sea } },
    { label: 'not seen, land', swatch: { fill: NOT_SEEN.land } },
    { label: 'coastline (ground above 0 m)', swatch: { line: 'coast' } },
    { label: 'site of the network', swatch: { site: true } },
  ];
}

/**
 * The report's maps: one per flight level (folds of any kind, unmet cells hatched), then the network floor. The
 * network's sensors as they are switched now.
 */
export function reportMaps(input: ReportMapsInput): { bounds: Bounds; maps: ReportMap[] } {
  const { grid, ground, network, flightLevels } = input;
  const base = baseImage(grid, ground);
  const bounds = imageBounds(base);
  const maps: ReportMap[] = [];
  const folds = foldLegend();
  flightLevels.forEach((fl, f) => {
    const fill = over(base, foldImage(grid, network.foldOf('any', f)));
    const unmet = unmetCells(input, f);
    let anyUnmet = false;
    for (let i = 0; i < unmet.length && !anyUnmet; i++) anyUnmet = unmet[i] === 1;
    const hatch = anyUnmet ? maskImage(grid, unmet, [0, 0, 0]) : null;
    const label = formatFl(fl);
    const alt = network.altitudesM[f];
    maps.push({
      key: label,
      title: `${label} — sites seeing each cell, and where a requirement is not met`,
      flightLevel: fl,
      caption:
        `${label}, true altitude ${alt.toFixed(0)} m on the study's day (pressure altitude ${flToMetres(fl).toFixed(0)} m). ` +
        'Colour: how many distinct radar sites of the network see the cell (primary or secondary; a site counts once). ' +
        (anyUnmet
          ? 'Hatched: cells inside a volume whose band holds this level where its required folds are not met.'
          : 'No cell of a volume whose band holds this level falls short of its required folds.'),
      fill: { png: encodeRaster(fill), width: fill.width, height: fill.height },
      ...(hatch ? { hatch: { png: encodeRaster(hatch), width: hatch.width, height: hatch.height } } : {}),
      legend: [
        ...folds.map((s, i) => ({ label: FOLD_WORDS[i], swatch: { fill: s.color } })),
        ...(anyUnmet
          ? [
              {
                label: 'requirement not met (inside a volume at this level)',
                swatch: { hatch: true as const },
              },
            ]
          : []),
        ...commonLegend(),
      ],
    });
  });
  const levels = flightLevels.map((fl, f) => ({ label: formatFl(fl), altitudeM: network.altitudesM[f] }));
  const floor = floorLevelImage(grid, network.networkFloor(), levels);
  const fill = over(base, floor.image);
  maps.push({
    key: 'floor',
    title: 'Network floor — the lowest level seen over each cell',
    caption:
      'Colour: the lowest altitude at which any sensor of the network sees a target over the cell, in steps of the ' +
      "study's levels (true altitudes on the day): a cell in a level's colour is seen at an altitude at or below " +
      'that level and above the level before it. Above the floor the sensors’ upper limits (cone of silence, ' +
      'detection range) may still leave gaps: the level maps show each level.',
    fill: { png: encodeRaster(fill), width: fill.width, height: fill.height },
    legend: [
      ...floor.legend.map((s, i) => ({
        label:
          s.value === Infinity
            ? `floor above ${levels[levels.length - 1]?.label ?? 'the highest level'}`
            : i === 0
              ? `floor at or below ${s.label} (${s.value.toFixed(0)} m)`
              : `floor above ${levels[i - 1].label}, at or below ${s.label} (${s.value.toFixed(0)} m)`,
        swatch: { fill: s.color },
      })),
      ...commonLegend(),
    ],
  });
  return { bounds, maps };
}
