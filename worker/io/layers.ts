/**
 * Coverage layers as GeoJSON from a network: per flight level, the fold areas per kind and the gaps inside each
 * volume (the CLI's coverage-FL*.geojson files and the web app's exports are both made here).
 */
import type { Scenario } from '../../shared/scenario.ts';
import { maskAreaKm2, maskToPolygons } from '../core/contour.ts';
import type { GridGeo } from '../core/grid.ts';
import { KINDS, type FoldKind, type Network } from '../core/network.ts';
import { cellsAtLevel, meets } from '../core/volumes.ts';
import { featureCollection, layerFeature, stringifyGeoJson, type LayerFeatureProps } from './geojson.ts';
import type { Provenance } from './provenance.ts';

type Vol = Scenario['volumes'][number];

/** One layer feature from a cell mask of the analysis grid (null when the mask is empty). */
export function maskLayer(
  mask: Uint8Array,
  grid: GridGeo,
  props: Omit<LayerFeatureProps, 'areaKm2'>,
): ReturnType<typeof layerFeature> | null {
  const coords = maskToPolygons(mask, grid.width, grid.height, grid);
  if (coords.length === 0) return null;
  return layerFeature(coords, {
    ...props,
    areaKm2: maskAreaKm2(mask, grid.width, grid.height, grid),
  });
}

/**
 * Fold layers written per kind: ≥1 … ≥4, or up to the highest fold a volume requires if that is more. A kind
 * whose folds are all zero (no sensor of it, e.g. receivers in a radar-only study) writes none: the receivers'
 * `adsb` / `mlat` layers appear only in studies that have them, shaped as the radars' (`any` counts radars only).
 */
export function maxFoldLayers(volumes: readonly Vol[]): number {
  let m = 4;
  for (const v of volumes) for (const k of KINDS) m = Math.max(m, v.requiredFold[k] ?? 0);
  return m;
}

/** One flight level's FeatureCollection: folds per kind, then the gaps inside each volume. */
/** What `levelLayers` reads of a network. */
export type LevelFolds = Pick<Network, 'altitudesM' | 'foldOf' | 'contributingSites'>;

/**
 * One level of a network as plain data, to post to a worker: the folds of every kind at that level for the targets
 * named (the network's own arrays, not copied here), and the sites contributing to each kind.
 */
export interface LevelSnapshot {
  readonly altitudesM: readonly number[];
  readonly level: number;
  /** By `${kind}:${target}`. */
  readonly folds: Readonly<Record<string, Uint16Array>>;
  /** By kind. */
  readonly sites: Readonly<Record<string, string[]>>;
}

export function levelSnapshot(network: LevelFolds, level: number, targets: readonly number[]): LevelSnapshot {
  const folds: Record<string, Uint16Array> = {};
  const sites: Record<string, string[]> = {};
  for (const kind of KINDS) {
    for (const t of new Set([0, ...targets])) folds[`${kind}:${t}`] = network.foldOf(kind, level, t);
    sites[kind] = network.contributingSites(kind, level);
  }
  return { altitudesM: network.altitudesM, level, folds, sites };
}

/** A snapshot read as the network it was taken from (at its own level only). */
function snapshotFolds(s: LevelSnapshot): LevelFolds {
  const at = (f: number): void => {
    if (f !== s.level) throw new Error(`levelSnapshot: level ${f} asked of a snapshot of level ${s.level}`);
  };
  return {
    altitudesM: s.altitudesM,
    foldOf: (kind: FoldKind, f: number, t = 0) => {
      at(f);
      const a = s.folds[`${kind}:${t}`];
      if (a === undefined) throw new Error(`levelSnapshot: no ${kind} folds for target ${t}`);
      return a;
    },
    contributingSites: (kind: FoldKind, f: number) => {
      at(f);
      return s.sites[kind];
    },
  };
}

/** Everything one level's layers file is made from (plain data: a worker can make it). */
export interface LevelLayerJob {
  snapshot: LevelSnapshot;
  fl: number;
  grid: GridGeo;
  volumes: readonly Vol[];
  masks: readonly Uint8Array[];
  meta: Record<string, unknown>;
  volumeTargets?: readonly number[];
  ground?: Float32Array;
  provenance: Provenance;
}

/** One level's layers as the text of its GeoJSON file, with the provenance given (the same bytes wherever made). */
export function levelLayerText(j: LevelLayerJob): string {
  const fc = levelLayers(
    snapshotFolds(j.snapshot),
    j.snapshot.level,
    j.fl,
    j.grid,
    j.volumes,
    j.masks,
    j.meta,
    j.volumeTargets,
    j.ground,
  );
  fc.provenance = j.provenance;
  return stringifyGeoJson(fc);
}

export function levelLayers(
  network: LevelFolds,
  f: number,
  fl: number,
  grid: GridGeo,
  volumes: readonly Vol[],
  masks: readonly Uint8Array[],
  /** What the layers mean (target, day, k …), written beside the level in the collection's metadata. */
  meta: Record<string, unknown> = {},
  /** Per volume, the index of its target in the network (default 0: the study's target). */
  volumeTargets?: readonly number[],
  /** Ground per cell (m), for volumes with an AGL band. */
  ground?: Float32Array,
) {
  const features = [];
  const cells = grid.width * grid.height;
  // The level's true altitude on the study's day (the network holds it).
  const altitudeM = network.altitudesM[f];
  const mask = new Uint8Array(cells);
  for (const kind of KINDS) {
    const fold = network.foldOf(kind, f);
    let max = 0;
    for (let i = 0; i < cells; i++) if (fold[i] > max) max = fold[i];
    const siteIds = network.contributingSites(kind, f);
    for (let k = 1; k <= Math.min(max, maxFoldLayers(volumes)); k++) {
      for (let i = 0; i < cells; i++) mask[i] = fold[i] >= k ? 1 : 0;
      const f = maskLayer(mask, grid, {
        flightLevel: fl,
        altitudeM,
        fold: k,
        kind,
        siteIds,
        layer: 'coverage',
      });
      if (f) features.push(f);
    }
  }
  volumes.forEach((v, vi) => {
    const vm = cellsAtLevel(v, masks[vi], fl, altitudeM, ground);
    if (vm === null) return;
    const t = volumeTargets?.[vi] ?? 0;
    const any = network.foldOf('any', f, t);
    const pri = network.foldOf('primary', f, t);
    const sec = network.foldOf('secondary', f, t);
    const adsb = network.foldOf('adsb', f, t);
    const mlat = network.foldOf('mlat', f, t);
    let n = 0;
    for (let i = 0; i < cells; i++) {
      mask[i] = vm[i] && !meets(v.requiredFold, any[i], pri[i], sec[i], adsb[i], mlat[i]) ? 1 : 0;
      n += mask[i];
    }
    if (n === 0) return;
    const gap = maskLayer(mask, grid, {
      flightLevel: fl,
      altitudeM,
      fold: 0,
      kind: 'any',
      siteIds: [],
      layer: 'gap',
      volumeId: v.id,
    });
    if (gap) features.push(gap);
  });
  return featureCollection(features, { ...meta, flightLevel: fl, altitudeM });
}
