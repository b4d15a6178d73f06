/**
 * The multilateration accuracy map's outputs (pure: bytes and objects out, no files):
 * - the raster as a Float32 GeoTIFF on the analysis grid — metres of 1σ horizontal DRMS, NaN as nodata, the
 *   caution (and the provenance, when given) in the ImageDescription, the grid's own georeferencing — through
 *   geotiff-write.ts; the caller names the file (`mlat-accuracy-FL100.tif`) and writes it atomically;
 * - GeoJSON bands: for each band edge, the cells whose DRMS is at most that edge, as one MultiPolygon feature
 *   (contour.ts's cell-edge walk: the polygons are exactly the raster's cells). Bands are nested, like the fold
 *   layers (≥ 1, ≥ 2 …): the 100 m band contains the 50 m one. Default edges: 50, 100, 200, 500 and 1 000 m —
 *   round figures of our own for a legend, not taken from any standard; a study may pass its own.
 *
 * Feature properties: `layer: 'mlat-accuracy'`, `kind: 'mlat'`, `flightLevel`, `altitudeM` (the level's true
 * altitude), `maxDrmsM` (the band edge), `fold` (the receivers every cell of the band is seen by, at least: the
 * map's minReceivers), `altitudeKnown`, `siteIds` (the receivers' sites, sorted), `areaKm2` (geodesic, of the
 * cells). The FeatureCollection carries the caution, the metadata (level, what the values are, the band edges)
 * and the provenance when given (geojson.ts's featureCollection).
 */
import type { Feature, MultiPolygon } from 'geojson';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { maskAreaKm2, maskToPolygons } from '../core/contour.ts';
import type { GridGeo } from '../core/grid.ts';
import { encodeGeoTiff, encodeGeoTiffParts } from './geotiff-write.ts';
import { featureCollection, type LayerCollection } from './geojson.ts';
import type { Provenance } from './provenance.ts';

/** Default band edges (m of 1σ horizontal DRMS): our own round figures for a legend. */
export const MLAT_BAND_EDGES_M: readonly number[] = [50, 100, 200, 500, 1000];

/** What the raster and the bands hold, in words (metadata). */
export const MLAT_ACCURACY_QUANTITY =
  '1-sigma horizontal DRMS of the multilateration fix, metres (TOA least squares, emission time unknown)';

export interface MlatBandProps {
  layer: 'mlat-accuracy';
  kind: 'mlat';
  flightLevel: number;
  altitudeM: number;
  /** Every cell of the feature has a DRMS at most this (m). */
  maxDrmsM: number;
  /** Receivers that see every cell of the feature, at least (the map's minReceivers). */
  fold: number;
  altitudeKnown: boolean;
  siteIds: string[];
  areaKm2: number;
}

export type MlatBandFeature = Feature<MultiPolygon, MlatBandProps>;

/** The raster's grid, values and output options. */
export interface MlatRasterInput {
  grid: GridGeo;
  /** mlat-map.ts's mlatAccuracyMap: DRMS in metres per cell, NaN where no fix. */
  drmsM: Float32Array;
  provenance?: Provenance;
}

/**
 * The accuracy raster as GeoTIFF parts (header, pixels: the raster's own bytes on a little-endian host), for an
 * atomic write with worker/cli/files.ts `writeFileAtomic(path, parts)`.
 */
export function mlatAccuracyGeoTiffParts(r: MlatRasterInput): [header: Uint8Array, pixels: Uint8Array] {
  checkRaster(r.grid, r.drmsM, 'mlat accuracy raster');
  return encodeGeoTiffParts(rasterOf(r));
}

/** The same GeoTIFF in one buffer (for the app's downloads). */
export function mlatAccuracyGeoTiff(r: MlatRasterInput): ArrayBuffer {
  checkRaster(r.grid, r.drmsM, 'mlat accuracy raster');
  return encodeGeoTiff(rasterOf(r));
}

function rasterOf(r: MlatRasterInput) {
  return {
    geo: r.grid,
    data: r.drmsM,
    nodata: NaN,
    description: CAUTION,
    ...(r.provenance !== undefined ? { provenance: r.provenance } : {}),
  };
}

export interface MlatBandsInput {
  grid: GridGeo;
  drmsM: Float32Array;
  flightLevel: number;
  /** The level's true altitude (m AMSL) the map was computed at. */
  altitudeM: number;
  altitudeKnown: boolean;
  /** The receivers needed per cell the map was computed with. */
  minReceivers: number;
  /** Site ids of the receivers the map used. */
  siteIds: readonly string[];
  /** Band edges in metres, increasing (default MLAT_BAND_EDGES_M). */
  edgesM?: readonly number[];
  /** Extra metadata (the study's conventions), beside the level's own. */
  meta?: Record<string, unknown>;
  provenance?: Provenance;
}

/** The nested accuracy bands as one FeatureCollection (a band with no cell is left out). */
export function mlatAccuracyBands(input: MlatBandsInput): LayerCollection<MultiPolygon, MlatBandProps> {
  const { grid, drmsM, flightLevel, altitudeM, altitudeKnown, minReceivers } = input;
  const edges = input.edgesM ?? MLAT_BAND_EDGES_M;
  const where = 'mlat accuracy bands';
  checkRaster(grid, drmsM, where);
  if (grid.crs.kind !== 'geographic') {
    throw new InputError(
      `${where}: grid`,
      `a ${grid.crs.label} grid`,
      'the geographic (lon/lat) analysis grid',
    );
  }
  if (!(Number.isFinite(flightLevel) && flightLevel >= 0)) {
    throw new InputError(`${where}: flightLevel`, String(flightLevel), 'a flight level ≥ 0');
  }
  if (!Number.isFinite(altitudeM)) {
    throw new InputError(`${where}: altitudeM`, String(altitudeM), 'a finite altitude in metres');
  }
  if (!(Number.isInteger(minReceivers) && minReceivers >= 1)) {
    throw new InputError(`${where}: minReceivers`, String(minReceivers), 'a whole number ≥ 1');
  }
  if (
    edges.length === 0 ||
    edges.some((e, i) => !(Number.isFinite(e) && e > 0 && (i === 0 || e > edges[i - 1])))
  ) {
    throw new InputError(
      `${where}: edgesM`,
      JSON.stringify(edges),
      'band edges in metres, above 0 and increasing',
    );
  }
  const siteIds = [...input.siteIds].sort();
  const { width, height } = grid;
  const mask = new Uint8Array(width * height);
  const features: MlatBandFeature[] = [];
  for (const edge of edges) {
    let any = 0;
    for (let i = 0; i < mask.length; i++) {
      // NaN compares false: no fix, no band.
      const inBand = drmsM[i] <= edge ? 1 : 0;
      mask[i] = inBand;
      any |= inBand;
    }
    if (any === 0) continue;
    features.push({
      type: 'Feature',
      properties: {
        layer: 'mlat-accuracy',
        kind: 'mlat',
        flightLevel,
        altitudeM,
        maxDrmsM: edge,
        fold: minReceivers,
        altitudeKnown,
        siteIds,
        areaKm2: maskAreaKm2(mask, width, height, grid),
      },
      geometry: { type: 'MultiPolygon', coordinates: maskToPolygons(mask, width, height, grid) },
    });
  }
  return featureCollection<MultiPolygon, MlatBandProps>(
    features,
    {
      ...input.meta,
      flightLevel,
      altitudeM,
      quantity: MLAT_ACCURACY_QUANTITY,
      altitudeKnown,
      minReceivers,
      bandEdgesM: [...edges],
    },
    input.provenance,
  );
}

function checkRaster(grid: GridGeo, drmsM: Float32Array, where: string): void {
  if (!(drmsM instanceof Float32Array) || drmsM.length !== grid.width * grid.height) {
    throw new InputError(
      `${where}: drmsM`,
      drmsM instanceof Float32Array ? `${drmsM.length} values` : typeof drmsM,
      `a Float32Array of ${grid.width} × ${grid.height} = ${grid.width * grid.height} values (one per cell)`,
    );
  }
}
