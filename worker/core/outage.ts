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
import { cellsAtLevel, meets, requiresNothing, rowAreasKm2, type VolumeLike } from './volumes.ts';

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
      const adsb = network.foldOf('adsb', f, t);
      const mlat = network.foldOf('mlat', f, t);
      const m = new Uint8Array(vm.length);
      for (let i = 0; i < vm.length; i++)
        if (vm[i] && meets(v.requiredFold, any[i], pri[i], sec[i], adsb[i], mlat[i])) m[i] = 1;
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

/**
 * Weight and area of a set of lost (or gained) cells per (volume, level), the area of their union over every
 * volume and level, and per level (increasing) the area of the union over the volumes (a cell in two volumes
 * counts once at that level).
 * The one count behind every outage figure: the app's outage panel, its per-level table and its map layer, and the
 * N−1 table (`outageTable`) and the CLI's outage.json. `cells`, when given, lists the only cells that can be set
 * (a failed site's own cells), so the loops skip the rest of the grid.
 */
export function tally(
  diff: Map<string, Uint8Array>,
  volumes: readonly VolumeLike[],
  grid: GridGeo,
  cells?: Int32Array,
): {
  byVolume: LevelLoss[];
  demandWeight: number;
  unionAreaKm2: number;
  byLevel: { flightLevel: number; areaKm2: number }[];
} {
  const rowArea = rowAreasKm2(grid);
  const W = grid.width;
  const n = grid.width * grid.height;
  const count = cells ? cells.length : n;
  const union = new Uint8Array(n);
  // Cells already counted at the level at hand (cleared between levels).
  const mark = new Uint8Array(n);
  const entries = [...diff].map(([key, m], order) => {
    const [volumeId, flText] = key.split('|');
    return { order, volumeId, fl: Number(flText), m };
  });
  const levels = [...new Set(entries.map((e) => e.fl))].sort((x, y) => x - y);
  const byVolume: LevelLoss[] = new Array<LevelLoss>(entries.length);
  const byLevel: { flightLevel: number; areaKm2: number }[] = [];
  let demandWeight = 0;
  for (const fl of levels) {
    let levelArea = 0;
    for (const e of entries) {
      if (e.fl !== fl) continue;
      const m = e.m;
      let area = 0;
      for (let k = 0; k < count; k++) {
        const i = cells ? cells[k] : k;
        if (!m[i]) continue;
        const a = rowArea[(i / W) | 0];
        area += a;
        union[i] = 1;
        if (!mark[i]) {
          mark[i] = 1;
          levelArea += a;
        }
      }
      const v = volumes.find((x) => x.id === e.volumeId)!;
      const weight = area * (v.weight ?? 1);
      demandWeight += weight;
      byVolume[e.order] = {
        volumeId: e.volumeId,
        flightLevel: fl,
        areaKm2Lost: area,
        demandWeightLost: weight,
      };
    }
    byLevel.push({ flightLevel: fl, areaKm2: levelArea });
    if (cells) for (let k = 0; k < count; k++) mark[cells[k]] = 0;
    else mark.fill(0);
  }
  let unionAreaKm2 = 0;
  for (let k = 0; k < count; k++) {
    const i = cells ? cells[k] : k;
    if (union[i]) unionAreaKm2 += rowArea[(i / W) | 0];
  }
  return { byVolume, demandWeight, unionAreaKm2, byLevel };
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
  const ids = siteIds ?? network.siteIds().filter((id) => network.isSiteActive(id));
  const keys = [...base.keys()].map((k) => {
    const [volumeId, fl] = k.split('|');
    const vi = volumes.findIndex((v) => v.id === volumeId);
    return { key: k, v: volumes[vi], vi, fl: Number(fl), f: flightLevels.indexOf(Number(fl)) };
  });
  const out: SiteLoss[] = [];
  for (const id of ids) {
    // Only the cells this site covers can lose service when it goes down.
    const cells = network.siteCells(id);
    network.setSite(id, false);
    const lostMaps = new Map<string, Uint8Array>();
    for (const k of keys) {
      const t = volumeTargets?.[k.vi] ?? 0;
      const any = network.foldOf('any', k.f, t);
      const pri = network.foldOf('primary', k.f, t);
      const sec = network.foldOf('secondary', k.f, t);
      const adsb = network.foldOf('adsb', k.f, t);
      const mlat = network.foldOf('mlat', k.f, t);
      const was = base.get(k.key)!;
      // meets() inlined: the same rule, with the volume's numbers pulled out of the loop.
      const req = k.v.requiredFold;
      const rAny = requiresNothing(req) ? Math.max(1, req.any ?? 0) : (req.any ?? 0);
      const rPri = req.primary ?? 0;
      const rSec = req.secondary ?? 0;
      const rAdsb = req.adsb ?? 0;
      const rMlat = req.mlat ?? 0;
      let lost: Uint8Array | null = null;
      for (let n = 0; n < cells.length; n++) {
        const i = cells[n];
        if (
          !was[i] ||
          (any[i] >= rAny && pri[i] >= rPri && sec[i] >= rSec && adsb[i] >= rAdsb && mlat[i] >= rMlat)
        )
          continue;
        lost ??= new Uint8Array(was.length);
        lost[i] = 1;
      }
      if (lost) lostMaps.set(k.key, lost);
    }
    network.setSite(id, true);
    // The same count as the app's outage panel (tally), over this site's cells only.
    const t = tally(lostMaps, volumes, grid, cells);
    const byVolume = keys.map(
      (k): LevelLoss =>
        t.byVolume.find((x) => x.volumeId === k.v.id && x.flightLevel === k.fl) ?? {
          volumeId: k.v.id,
          flightLevel: k.fl,
          areaKm2Lost: 0,
          demandWeightLost: 0,
        },
    );
    onLoss?.(id, lostMaps);
    out.push({ siteId: id, demandWeightLost: t.demandWeight, areaKm2Lost: t.unionAreaKm2, byVolume });
  }
  return out.sort((a, b) => b.demandWeightLost - a.demandWeightLost || (a.siteId < b.siteId ? -1 : 1));
}
