/**
 * Airspace volumes on the analysis grid: which cells each volume holds, cell areas, and the coverage statistics
 * per volume and flight level (covered share and area, area meeting the volume's required folds, fold
 * histograms per kind).
 */
import { FT_M } from '../../shared/units.ts';
import type { GridGeo } from './grid.ts';
import {
  FOLD_KINDS,
  isRadarKind,
  type RadarKind,
  type ReceiverKind,
  type RequiredFold,
} from '../../shared/sensor-kinds.ts';
import { KINDS, type Network } from './network.ts';
import { nearLon } from './terrain.ts';

/** Mean earth radius used for areas (the same sphere @turf/area uses), metres. */
const AREA_RADIUS_M = 6_371_008.8;
const DEG = Math.PI / 180;

export interface VolumeLike {
  id: string;
  name: string;
  polygon:
    { type: 'Polygon'; coordinates: number[][][] } | { type: 'MultiPolygon'; coordinates: number[][][][] };
  flMin: number;
  flMax: number;
  /** The band as altitudes (feet AMSL or above the cell's ground) instead of flight levels (shared/scenario.ts). */
  altitudeBand?: { reference: 'amsl' | 'agl'; minFt: number; maxFt: number };
  requiredFold: RequiredFold;
  weight?: number;
}

/**
 * The cells of volume `v` at one level — flight level `fl`, true altitude `altitudeM` on the study's day: null
 * when the level lies outside the volume's band; its cells (`mask`) for a flight-level or AMSL band that holds the
 * level; for an AGL band the cells whose ground (`ground`, m) plus the band holds the altitude (null if none).
 */
export function cellsAtLevel(
  v: VolumeLike,
  mask: Uint8Array,
  fl: number,
  altitudeM: number,
  ground?: Float32Array,
): Uint8Array | null {
  if (fl < v.flMin || fl > v.flMax) return null;
  const b = v.altitudeBand;
  if (b === undefined) return mask;
  const lo = b.minFt * FT_M;
  const hi = b.maxFt * FT_M;
  if (b.reference === 'amsl') return altitudeM >= lo && altitudeM <= hi ? mask : null;
  if (ground === undefined) throw new Error(`cellsAtLevel: volume ${v.id} has an AGL band: pass the ground`);
  const out = new Uint8Array(mask.length);
  let any = false;
  for (let i = 0; i < mask.length; i++) {
    if (!mask[i]) continue;
    const above = altitudeM - ground[i];
    if (above >= lo && above <= hi) {
      out[i] = 1;
      any = true;
    }
  }
  return any ? out : null;
}

/**
 * Cells of a geographic grid whose centres lie inside the polygon (even–odd rule, holes excluded).
 *
 * Each vertex's longitude is taken within ±180° of the grid's middle (`nearLon`, as the terrain and the sites are):
 * on a grid across the antimeridian (e.g. 179.5…180.5° E) a volume east of 180° may be given as −179.8°, as RFC
 * 7946 parts split at ±180°, or as one ring that runs from 179.6° to −179.7°; all land on the grid's own
 * continuous longitudes. A ring more than 180° wide cannot be told from one going the other way round and is not
 * a volume a grid holds (the terrain check refuses it).
 */
export function rasterizeVolume(v: VolumeLike, grid: GridGeo): Uint8Array {
  const polys = v.polygon.type === 'Polygon' ? [v.polygon.coordinates] : v.polygon.coordinates;
  const midLon = grid.originX + (grid.width * grid.pixelX) / 2;
  const rings = polys.flat().map((ring) => ring.map((p) => [nearLon(p[0], midLon), p[1]]));
  const { width: W, height: H } = grid;
  const mask = new Uint8Array(W * H);
  const xs: number[] = [];
  for (let r = 0; r < H; r++) {
    const lat = grid.originY + (r + 0.5) * grid.pixelY;
    xs.length = 0;
    for (const ring of rings) {
      for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
        const [x1, y1] = ring[j];
        const [x2, y2] = ring[i];
        if (y1 > lat !== y2 > lat) xs.push(x1 + ((lat - y1) * (x2 - x1)) / (y2 - y1));
      }
    }
    xs.sort((a, b) => a - b);
    for (let k = 0; k + 1 < xs.length; k += 2) {
      // Cells whose centre lon lies in [xs[k], xs[k+1]).
      const c0 = Math.max(0, Math.ceil((xs[k] - grid.originX) / grid.pixelX - 0.5));
      const c1 = Math.min(W - 1, Math.ceil((xs[k + 1] - grid.originX) / grid.pixelX - 0.5) - 1);
      for (let c = c0; c <= c1; c++) mask[r * W + c] = 1;
    }
  }
  return mask;
}

/** Area (km²) of the cells of each row of a geographic grid, on the sphere. */
export function rowAreasKm2(grid: GridGeo): Float64Array {
  const out = new Float64Array(grid.height);
  const dLon = Math.abs(grid.pixelX) * DEG;
  for (let r = 0; r < grid.height; r++) {
    const a = grid.originY + r * grid.pixelY;
    const b = a + grid.pixelY;
    out[r] = (AREA_RADIUS_M * AREA_RADIUS_M * dLon * Math.abs(Math.sin(a * DEG) - Math.sin(b * DEG))) / 1e6;
  }
  return out;
}

export interface VolumeLevelStats {
  volumeId: string;
  flightLevel: number;
  areaKm2: number;
  /**
   * Covered by at least one radar site (any kind of radar), or by a receiver of a kind the volume requires
   * (`requiredFold.adsb` / `.mlat`).
   */
  coveredKm2: number;
  coveredPct: number;
  /** Meeting the volume's required folds (all of its kinds at once). */
  meetsRequirementKm2: number;
  meetsRequirementPct: number;
  /** Area (km²) by fold 0, 1, 2, 3, ≥4, per kind (adsb and mlat only when the network has such receivers). */
  foldHistogramKm2: Record<'any' | RadarKind, number[]> & Partial<Record<ReceiverKind, number[]>>;
}

export const HISTOGRAM_BINS = 5;

/**
 * Whether a cell meets a required-fold record given its folds per kind. A record that requires nothing asks for
 * one radar (any ≥ 1, as it always has); one that requires a receiver kind only does not ask for a radar.
 */
export function meets(
  req: VolumeLike['requiredFold'],
  any: number,
  primary: number,
  secondary: number,
  adsb = 0,
  mlat = 0,
): boolean {
  return (
    any >= (req.any ?? 0) &&
    primary >= (req.primary ?? 0) &&
    secondary >= (req.secondary ?? 0) &&
    adsb >= (req.adsb ?? 0) &&
    mlat >= (req.mlat ?? 0) &&
    (any >= 1 || !requiresNothing(req))
  );
}

/** Whether a required-fold record asks for nothing (then one radar is asked for). */
export function requiresNothing(req: VolumeLike['requiredFold']): boolean {
  return !FOLD_KINDS.some((k) => (req[k] ?? 0) > 0);
}

/** Whether a cell is covered for a volume: seen by a radar, or by a receiver of a kind the volume requires. */
function coveredFor(req: VolumeLike['requiredFold'], any: number, adsb: number, mlat: number): boolean {
  return any > 0 || ((req.adsb ?? 0) > 0 && adsb > 0) || ((req.mlat ?? 0) > 0 && mlat > 0);
}

export function volumeStats(
  network: Network,
  volumes: readonly VolumeLike[],
  masks: readonly Uint8Array[],
  flightLevels: readonly number[],
  grid: GridGeo,
  /** Per volume, the index of its target in the network (default 0: the study's target). */
  volumeTargets?: readonly number[],
  /** Ground per cell (m), for volumes with an AGL band. */
  ground?: Float32Array,
): VolumeLevelStats[] {
  const rowArea = rowAreasKm2(grid);
  const W = grid.width;
  const out: VolumeLevelStats[] = [];
  volumes.forEach((v, vi) => {
    flightLevels.forEach((fl, f) => {
      const mask = cellsAtLevel(v, masks[vi], fl, network.altitudesM[f], ground);
      if (mask === null) return;
      const t = volumeTargets?.[vi] ?? 0;
      const any = network.foldOf('any', f, t);
      const pri = network.foldOf('primary', f, t);
      const sec = network.foldOf('secondary', f, t);
      const adsb = network.foldOf('adsb', f, t);
      const mlat = network.foldOf('mlat', f, t);
      // Receiver kinds appear in the histogram only when the network has them (older summaries stay as they were).
      const kinds = KINDS.filter((k) => isRadarKind(k) || k === 'any' || network.kindsPresent.has(k));
      const hist = Object.fromEntries(
        kinds.map((k) => [k, new Array<number>(HISTOGRAM_BINS).fill(0)]),
      ) as VolumeLevelStats['foldHistogramKm2'];
      const hAdsb = hist.adsb;
      const hMlat = hist.mlat;
      let area = 0;
      let covered = 0;
      let ok = 0;
      for (let i = 0; i < mask.length; i++) {
        if (!mask[i]) continue;
        const a = rowArea[(i / W) | 0];
        area += a;
        if (coveredFor(v.requiredFold, any[i], adsb[i], mlat[i])) covered += a;
        if (meets(v.requiredFold, any[i], pri[i], sec[i], adsb[i], mlat[i])) ok += a;
        hist.any[Math.min(any[i], HISTOGRAM_BINS - 1)] += a;
        hist.primary[Math.min(pri[i], HISTOGRAM_BINS - 1)] += a;
        hist.secondary[Math.min(sec[i], HISTOGRAM_BINS - 1)] += a;
        if (hAdsb) hAdsb[Math.min(adsb[i], HISTOGRAM_BINS - 1)] += a;
        if (hMlat) hMlat[Math.min(mlat[i], HISTOGRAM_BINS - 1)] += a;
      }
      out.push({
        volumeId: v.id,
        flightLevel: fl,
        areaKm2: area,
        coveredKm2: covered,
        coveredPct: area > 0 ? (100 * covered) / area : 0,
        meetsRequirementKm2: ok,
        meetsRequirementPct: area > 0 ? (100 * ok) / area : 0,
        foldHistogramKm2: hist,
      });
    });
  });
  return out;
}
