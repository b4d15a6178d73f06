/**
 * A DEM on a user-defined projected CRS with no EPSG code, written by geotiff.js's own writer (not ours), with
 * the geokeys a GeoTIFF writer puts down for a custom WKT "UTM zone 25 south on a datum of its own name": model
 * type projected, ProjectedCSTypeGeoKey and ProjectionGeoKey user-defined (32767), the transverse Mercator
 * parameters of the zone in GeoDoubleParams, a user-defined geographic CRS and datum on the WGS 84 ellipsoid, and
 * the names in GeoAsciiParams (GeoTIFF 1.0 §2.7 / OGC 19-008r4 §7.3.3 user-defined keys).
 *
 * UTM zone 25 south (common practice): transverse Mercator, central meridian 33° W, scale 0.9996, false easting
 * 500 000 m, false northing 10 000 000 m. The tile sits over open South Atlantic near 35° S, 33° W.
 */
import { writeArrayBuffer } from 'geotiff';
import { bumpyDem } from './bumps.ts';

/** The same CRS as a proj4 string, for checks. */
export const CUSTOM_UTM25S_PROJ4 =
  '+proj=tmerc +lat_0=0 +lon_0=-33 +k=0.9996 +x_0=500000 +y_0=10000000 +ellps=WGS84 +units=m +no_defs';

export interface CustomCrsDem {
  bytes: ArrayBuffer;
  width: number;
  height: number;
  /** Outer corner of pixel (0, 0), metres in the CRS. */
  originX: number;
  originY: number;
  pixelM: number;
  heights: Float32Array;
}

/** A width × height Float32 DEM of invented hills at `pixelM` metres, its north-west corner at (x0, y0). */
export function customCrsDem(
  opts: { width?: number; height?: number; pixelM?: number; x0?: number; y0?: number; seed?: number } = {},
): CustomCrsDem {
  const width = opts.width ?? 160;
  const height = opts.height ?? 140;
  const pixelM = opts.pixelM ?? 250;
  // 35.2° S, 33.3° W ≈ (472 700 E, 6 104 000 N) in zone 25 S: open ocean.
  const originX = opts.x0 ?? 460_000;
  const originY = opts.y0 ?? 6_120_000;
  const heights = bumpyDem(opts.seed ?? 25, width, height);
  // The key directory is built here by hand from the GeoTIFF specification (geotiff.js's writer only knows the
  // types of a few keys): (id, location, count, value) with location 0 = SHORT value inline, 34736 = index into
  // GeoDoubleParams, 34737 = offset into GeoAsciiParams ('|'-terminated strings).
  const ascii: string[] = [];
  const doubles: number[] = [];
  const entries: [number, number, number, number][] = [];
  const short = (id: number, v: number) => entries.push([id, 0, 1, v]);
  const dbl = (id: number, v: number) => {
    entries.push([id, 34736, 1, doubles.length]);
    doubles.push(v);
  };
  const text = (id: number, v: string) => {
    const at = ascii.join('').length;
    ascii.push(v + '|');
    entries.push([id, 34737, v.length + 1, at]);
  };
  short(1024, 1); // GTModelTypeGeoKey: projected
  short(1025, 1); // GTRasterTypeGeoKey: pixel is area
  text(1026, 'Ocean survey grid / UTM zone 25S'); // GTCitationGeoKey
  short(2048, 32767); // GeographicTypeGeoKey: user-defined
  text(
    2049,
    'GCS Name = Ocean survey datum|Datum = Ocean_Survey_Datum|Ellipsoid = WGS 84|Primem = Greenwich',
  );
  short(2050, 32767); // GeogGeodeticDatumGeoKey: user-defined
  short(2051, 8901); // GeogPrimeMeridianGeoKey: Greenwich
  short(2054, 9102); // GeogAngularUnitsGeoKey: degree
  short(2056, 7030); // GeogEllipsoidGeoKey: WGS 84
  short(3072, 32767); // ProjectedCSTypeGeoKey: user-defined
  short(3074, 32767); // ProjectionGeoKey: user-defined
  short(3075, 1); // ProjCoordTransGeoKey: transverse Mercator
  short(3076, 9001); // ProjLinearUnitsGeoKey: metre
  dbl(3080, -33); // ProjNatOriginLongGeoKey
  dbl(3081, 0); // ProjNatOriginLatGeoKey
  dbl(3082, 500000); // ProjFalseEastingGeoKey
  dbl(3083, 10000000); // ProjFalseNorthingGeoKey
  dbl(3092, 0.9996); // ProjScaleAtNatOriginGeoKey
  entries.sort((a, b) => a[0] - b[0]);
  const bytes = writeArrayBuffer(heights, {
    width,
    height,
    BitsPerSample: [32],
    SampleFormat: [3],
    ModelPixelScale: [pixelM, pixelM, 0],
    ModelTiepoint: [0, 0, 0, originX, originY, 0],
    GDAL_NODATA: '-9999',
    GeoKeyDirectory: [1, 1, 0, entries.length, ...entries.flat()],
    GeoDoubleParams: doubles,
    GeoAsciiParams: ascii.join(''),
    // Only stops geotiff.js from adding its EPSG:4326 defaults; the directory above is what is written.
    ProjectedCSTypeGeoKey: 32767,
  } as unknown as Parameters<typeof writeArrayBuffer>[1]);
  return { bytes: bytes as ArrayBuffer, width, height, originX, originY, pixelM, heights };
}
