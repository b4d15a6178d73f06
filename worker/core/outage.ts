/**
 * Outage what-ifs and layout comparisons on a Network built from cached footprints.
 *
 * A demand point (volume cell × flight level in the volume's band) is served when its folds meet the volume's
 * required folds. A site's outage loses the points served with the site and not without it; what is lost is
 * counted as demand weight (cell area × volume weight) and area, per volume and level, and as one area over all
 * volumes and levels (cells that lose service at any level).
 */
import type { GridGeo } from './grid.ts';
import type { Network } from './network.ts';
import { cellsAtLevel, meets, rowAreasKm2, type VolumeLike } from './volumes.ts';

export interface LevelLoss {
  volumeId: string;
  flightLevel: number;
  areaKm2Lost: number;
  demandWeightLost: number;
}

export interface SiteLoss {
  siteId: string;
  demandWeightLost: number;
  /** Area of the cells that lose service at one level or more. */
  areaKm2Lost: number;
  byVolume: LevelLoss[];
}

/** Per (volume, level in its band): which cells are served now. */
export function servedMasks(
  network: Network,
  volumes: readonly VolumeLike[],
  masks: readonly Uint8Array[],
  flightLevels: readonly number[],
  /** Per volume, the index of its target in the network (default 0: the study's target). */
  volumeTargets?: readonly number[],
  /** Ground per cell (m), for volumes with an AGL band. */
  ground?: Float32Array,
): Map<string, Uint8Array> {
  const out = new Map<string, Uint8Array>();
  volumes.forEach((v, vi) => {
    const t = volumeTargets?.[vi] ?? 0;
    flightLevels.forEach((fl, f) => {
      const vm = cellsAtLevel(v, masks[vi], fl, network.altitudesM[f], ground);
      if (vm === null) return;
      const any = network.foldOf('any', f, t);
      const pri = network.foldOf('primary', f, t);
      const sec = network.foldOf('secondary', f, t);
      const m = new Uint8Array(vm.length);
      for (let i = 0; i < vm.length; i++)
        if (vm[i] && meets(v.requiredFold, any[i], pri[i], sec[i])) m[i] = 1;
      out.set(`${v.id}|${fl}`, m);
    });
  });
  return out;
}

/** Cells served in `before` and not in `after`, per (volume, level) key. */
export function difference(
  before: Map<string, Uint8Array>,
  after: Map<string, Uint8Array>,
): Map<string, Uint8Array> {
  const out = new Map<string, Uint8Array>();
  for (const [k, a] of before) {
    const b = after.get(k)!;
    const d = new Uint8Array(a.length);
    for (let i = 0; i < a.length; i++) d[i] = a[i] && !b[i] ? 1 : 0;
    out.set(k, d);
  }
  return out;
}

/** Weight and area of a set of lost (or gained) cells per (volume, level), and the area of their union. */
export function tally(
  diff: Map<string, Uint8Array>,
  volumes: readonly VolumeLike[],
  grid: GridGeo,
): { byVolume: LevelLoss[]; demandWeight: number; unionAreaKm2: number } {
  const rowArea = rowAreasKm2(grid);
  const W = grid.width;
  const union = new Uint8Array(grid.width * grid.height);
  const byVolume: LevelLoss[] = [];
  let demandWeight = 0;
  for (const [key, m] of diff) {
    const [volumeId, flText] = key.split('|');
    const v = volumes.find((x) => x.id === volumeId)!;
    let area = 0;
    for (let i = 0; i < m.length; i++) {
      if (!m[i]) continue;
      area += rowArea[(i / W) | 0];
      union[i] = 1;
    }
    const weight = area * (v.weight ?? 1);
    demandWeight += weight;
    byVolume.push({ volumeId, flightLevel: Number(flText), areaKm2Lost: area, demandWeightLost: weight });
  }
  let unionAreaKm2 = 0;
  for (let i = 0; i < union.length; i++) if (union[i]) unionAreaKm2 += rowArea[(i / W) | 0];
  return { byVolume, demandWeight, unionAreaKm2 };
}

/**
 * The loss of each site in `siteIds` (default: every site of the network with an active sensor), one at a time,
 * sorted by demand weight lost (worst first; ties by site id). `onLoss` receives each site's lost cells (for
 * layers) while the site is down.
 */
export function outageTable(
  network: Network,
  volumes: readonly VolumeLike[],
  masks: readonly Uint8Array[],
  flightLevels: readonly number[],
  grid: GridGeo,
  siteIds?: readonly string[],
  onLoss?: (siteId: string, lost: Map<string, Uint8Array>) => void,
  volumeTargets?: readonly number[],
  ground?: Float32Array,
): SiteLoss[] {
  const base = servedMasks(network, volumes, masks, flightLevels, volumeTargets, ground);
  const rowArea = rowAreasKm2(grid);
  const W = grid.width;
  const ids = siteIds ?? network.siteIds().filter((id) => network.isSiteActive(id));
  const keys = [...base.keys()].map((k) => {
    const [volumeId, fl] = k.split('|');
    const vi = volumes.findIndex((v) => v.id === volumeId);
    return { key: k, v: volumes[vi], vi, fl: Number(fl), f: flightLevels.indexOf(Number(fl)) };
  });
  const out: SiteLoss[] = [];
  const unionMark = new Uint8Array(grid.width * grid.height);
  for (const id of ids) {
    // Only the cells this site covers can lose service when it goes down.
    const cells = network.siteCells(id);
    network.setSite(id, false);
    const lostMaps = new Map<string, Uint8Array>();
    const byVolume: LevelLoss[] = [];
    let weight = 0;
    for (const k of keys) {
      const t = volumeTargets?.[k.vi] ?? 0;
      const any = network.foldOf('any', k.f, t);
      const pri = network.foldOf('primary', k.f, t);
      const sec = network.foldOf('secondary', k.f, t);
      const was = base.get(k.key)!;
      // meets() inlined: the same rule, with the volume's numbers pulled out of the loop.
      const rAny = Math.max(1, k.v.requiredFold.any ?? 0);
      const rPri = k.v.requiredFold.primary ?? 0;
      const rSec = k.v.requiredFold.secondary ?? 0;
      let lost: Uint8Array | null = null;
      let area = 0;
      for (let n = 0; n < cells.length; n++) {
        const i = cells[n];
        if (!was[i] || (any[i] >= rAny && pri[i] >= rPri && sec[i] >= rSec)) continue;
        lost ??= new Uint8Array(was.length);
        lost[i] = 1;
        unionMark[i] = 1;
        area += rowArea[(i / W) | 0];
      }
      const w = area * (k.v.weight ?? 1);
      weight += w;
      byVolume.push({ volumeId: k.v.id, flightLevel: k.fl, areaKm2Lost: area, demandWeightLost: w });
      if (lost) lostMaps.set(k.key, lost);
    }
    network.setSite(id, true);
    let union = 0;
    for (let n = 0; n < cells.length; n++) {
      const i = cells[n];
      if (unionMark[i]) {
        union += rowArea[(i / W) | 0];
        unionMark[i] = 0;
      }
    }
    onLoss?.(id, lostMaps);
    out.push({ siteId: id, demandWeightLost: weight, areaKm2Lost: union, byVolume });
  }
  return out.sort((a, b) => b.demandWeightLost - a.demandWeightLost || (a.siteId < b.siteId ? -1 : 1));
}
