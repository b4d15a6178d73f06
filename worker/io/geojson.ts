/**
 * GeoJSON layer files (DESIGN §5): one MultiPolygon feature per flight level, fold, sensor kind and layer,
 * with the properties outside scripts rely on, and a deterministic writer (RFC 7946: lon/lat WGS84,
 * outer rings counter-clockwise, holes clockwise — as worker/core/contour.ts produces them).
 *
 * Types come from @types/geojson (the package @turf/turf's own types use).
 */
import type { Feature, FeatureCollection, GeoJSON, Geometry, MultiPolygon } from 'geojson';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { round6, type MultiPolygonCoords } from '../core/contour.ts';
import { FOLD_KINDS, type FoldKind } from '../../shared/sensor-kinds.ts';
import type { Provenance } from './provenance.ts';

/**
 * A layer's sensor kind: `primary`, `secondary`, the receivers `adsb` and `mlat` (issue 14; written only when the
 * network has sensors of that kind), and `any`, which counts radars only (a site with a primary or a secondary).
 */
export type LayerKind = FoldKind;
export type LayerName = 'coverage' | 'gap' | 'lost' | 'gained';

export interface LayerFeatureProps {
  /** Flight level (hundreds of feet of pressure altitude), e.g. 100 for FL100. */
  flightLevel: number;
  /** The planning altitude of that flight level in the ISA, metres. */
  altitudeM: number;
  /** How many distinct sensors see the area at least (for 'coverage'), or the fold the layer is about. */
  fold: number;
  kind: LayerKind;
  /** Ids of the sites that contribute to this layer, sorted. */
  siteIds: string[];
  layer: LayerName;
  /** The airspace volume the layer belongs to (gap layers). */
  volumeId?: string;
  /** Geodesic area of the geometry, km². */
  areaKm2: number;
}

export type LayerFeature = Feature<MultiPolygon, LayerFeatureProps>;

/**
 * A FeatureCollection with the foreign members (RFC 7946 §6.1) `caution` (shared/caution.ts's text, in every
 * layer file), an optional `metadata` and the `provenance` every file the CLI writes carries (io/provenance.ts).
 */
export type LayerCollection<G extends Geometry = MultiPolygon, P = LayerFeatureProps> = FeatureCollection<
  G,
  P
> & { caution: string; metadata?: Record<string, unknown>; provenance?: Provenance };

const KINDS: readonly LayerKind[] = FOLD_KINDS;
const LAYERS: readonly LayerName[] = ['coverage', 'gap', 'lost', 'gained'];

/** One layer feature: MultiPolygon geometry (coordinates as given) and checked properties (site ids sorted). */
export function layerFeature(coords: MultiPolygonCoords, props: LayerFeatureProps): LayerFeature {
  const where = `layer feature (${String(props.layer)} FL${String(props.flightLevel)})`;
  if (!Array.isArray(coords)) {
    throw new InputError(`${where}: geometry`, typeof coords, 'MultiPolygon coordinates (an array)');
  }
  if (!LAYERS.includes(props.layer)) {
    throw new InputError(`${where}: properties.layer`, JSON.stringify(props.layer), LAYERS.join(' | '));
  }
  if (!KINDS.includes(props.kind)) {
    throw new InputError(`${where}: properties.kind`, JSON.stringify(props.kind), KINDS.join(' | '));
  }
  if (!Number.isFinite(props.flightLevel) || props.flightLevel < 0) {
    throw new InputError(`${where}: properties.flightLevel`, String(props.flightLevel), 'a number ≥ 0');
  }
  if (!Number.isFinite(props.altitudeM)) {
    throw new InputError(`${where}: properties.altitudeM`, String(props.altitudeM), 'a finite number (m)');
  }
  if (!Number.isInteger(props.fold) || props.fold < 0) {
    throw new InputError(`${where}: properties.fold`, String(props.fold), 'an integer ≥ 0');
  }
  if (!Array.isArray(props.siteIds) || props.siteIds.some((s) => typeof s !== 'string')) {
    throw new InputError(
      `${where}: properties.siteIds`,
      JSON.stringify(props.siteIds),
      'an array of site ids',
    );
  }
  if (props.volumeId !== undefined && typeof props.volumeId !== 'string') {
    throw new InputError(`${where}: properties.volumeId`, JSON.stringify(props.volumeId), 'a volume id');
  }
  if (!Number.isFinite(props.areaKm2) || props.areaKm2 < 0) {
    throw new InputError(`${where}: properties.areaKm2`, String(props.areaKm2), 'a number ≥ 0 (km²)');
  }
  const properties: LayerFeatureProps = {
    layer: props.layer,
    flightLevel: props.flightLevel,
    altitudeM: props.altitudeM,
    fold: props.fold,
    kind: props.kind,
    siteIds: [...props.siteIds].sort(),
    ...(props.volumeId !== undefined ? { volumeId: props.volumeId } : {}),
    areaKm2: props.areaKm2,
  };
  return { type: 'Feature', properties, geometry: { type: 'MultiPolygon', coordinates: coords } };
}

/**
 * A FeatureCollection of the features, with the caution as its `caution` foreign member; `meta` (if any) rides
 * along as the `metadata` foreign member, `provenance` (if any) as the `provenance` one.
 */
export function featureCollection<G extends Geometry = MultiPolygon, P = LayerFeatureProps>(
  features: Feature<G, P>[],
  meta?: Record<string, unknown>,
  provenance?: Provenance,
): LayerCollection<G, P> {
  const fc: LayerCollection<G, P> = { type: 'FeatureCollection', caution: CAUTION, features };
  if (meta !== undefined) fc.metadata = meta;
  if (provenance !== undefined) fc.provenance = provenance;
  return fc;
}

/**
 * GeoJSON text with a stable layout: in GeoJSON objects `type`, `id`, `bbox` first, then foreign members
 * (`caution`, `metadata`, `provenance`, …) alphabetically, then `properties`, `geometry`, `geometries`,
 * `coordinates`, `features`; in every other object (properties, metadata, provenance) keys alphabetically. Every
 * number is rounded to 6 decimals (no -0), in `provenance` too; undefined members are left out; a non-finite
 * number is an error. One feature per line.
 */
export function stringifyGeoJson(geojson: GeoJSON | LayerCollection<Geometry, unknown>): string {
  const parts: string[] = [];
  writeGeoJson(geojson as unknown as Record<string, unknown>, 'GeoJSON', parts, 0);
  parts.push('\n');
  return parts.join('');
}

const STRUCTURAL_TAIL = ['properties', 'geometry', 'geometries', 'coordinates', 'features'];
const STRUCTURAL = new Set(['type', 'id', 'bbox', ...STRUCTURAL_TAIL]);

function writeGeoJson(obj: Record<string, unknown>, where: string, out: string[], depth: number): void {
  if (obj === null || typeof obj !== 'object' || typeof obj.type !== 'string') {
    throw new InputError(
      where,
      JSON.stringify(obj)?.slice(0, 60) ?? String(obj),
      'a GeoJSON object with a type',
    );
  }
  const foreign = Object.keys(obj)
    .filter((k) => !STRUCTURAL.has(k) && obj[k] !== undefined)
    .sort();
  const keys = ['type', 'id', 'bbox', ...foreign, ...STRUCTURAL_TAIL].filter((k) => obj[k] !== undefined);
  out.push('{');
  keys.forEach((k, n) => {
    if (n > 0) out.push(',');
    out.push(JSON.stringify(k), ':');
    const v = obj[k];
    const at = `${where}.${k}`;
    if (k === 'geometry' || k === 'geometries' || k === 'features') {
      if (v === null) out.push('null');
      else if (!Array.isArray(v)) writeGeoJson(v as Record<string, unknown>, at, out, depth + 1);
      else {
        const lines = k === 'features' && depth === 0;
        out.push('[');
        v.forEach((item, i) => {
          if (i > 0) out.push(',');
          if (lines) out.push('\n');
          writeGeoJson(item as Record<string, unknown>, `${at}[${i}]`, out, depth + 1);
        });
        out.push(lines && v.length > 0 ? '\n]' : ']');
      }
    } else if (k === 'coordinates' || k === 'bbox') {
      writeCoordinates(v, at, out);
    } else {
      writeValue(v, at, out);
    }
  });
  out.push('}');
}

/** Nested arrays of numbers (positions), written without per-element recursion through writeValue. */
function writeCoordinates(v: unknown, where: string, out: string[]): void {
  if (typeof v === 'number') {
    out.push(formatNumber(v, where));
    return;
  }
  if (!Array.isArray(v)) throw new InputError(where, typeof v, 'nested arrays of numbers');
  out.push('[');
  for (let i = 0; i < v.length; i++) {
    if (i > 0) out.push(',');
    writeCoordinates(v[i], where, out);
  }
  out.push(']');
}

function writeValue(v: unknown, where: string, out: string[]): void {
  if (v === null) out.push('null');
  else if (typeof v === 'number') out.push(formatNumber(v, where));
  else if (typeof v === 'string' || typeof v === 'boolean') out.push(JSON.stringify(v));
  else if (Array.isArray(v)) {
    out.push('[');
    v.forEach((item, i) => {
      if (i > 0) out.push(',');
      writeValue(item === undefined ? null : item, `${where}[${i}]`, out);
    });
    out.push(']');
  } else if (typeof v === 'object') {
    const o = v as Record<string, unknown>;
    const keys = Object.keys(o)
      .filter((k) => o[k] !== undefined)
      .sort();
    out.push('{');
    keys.forEach((k, n) => {
      if (n > 0) out.push(',');
      out.push(JSON.stringify(k), ':');
      writeValue(o[k], `${where}.${k}`, out);
    });
    out.push('}');
  } else {
    throw new InputError(where, typeof v, 'a JSON value (number, string, boolean, null, array, object)');
  }
}

function formatNumber(v: number, where: string): string {
  if (!Number.isFinite(v)) throw new InputError(where, String(v), 'a finite number');
  return String(round6(v));
}
