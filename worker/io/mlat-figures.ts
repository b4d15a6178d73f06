/**
 * The multilateration accuracy figures of a network (issue 14), shared by the CLI (`coverage`, `report`:
 * worker/cli/mlat-outputs.ts) and the app's engine (worker/runtime/engine.ts): which of the network's sensors are
 * `mlat` receivers and where their antennas stand, the 1σ horizontal DRMS map per level (worker/core/mlat-map.ts,
 * Torrieri 1984 TOA least squares), and per volume that asks for an accuracy (`requiredMlatAccuracyM`) the share of
 * its cells at each level that meet it. Pure: everything it needs is passed in (no session, no files).
 */
import { flToMetres } from '../../shared/units.ts';
import { mlatMinReceivers } from '../../shared/sensor-kinds.ts';
import type { Volume } from '../../shared/scenario.ts';
import type { Candidate } from '../core/coverage.ts';
import type { Footprint } from '../core/footprint.ts';
import type { GridGeo } from '../core/grid.ts';
import { mlatAccuracyMap, type MlatReceiver } from '../core/mlat-map.ts';
import { cellsAtLevel, rowAreasKm2 } from '../core/volumes.ts';
import type { Study } from './study.ts';

export interface MlatVolumeAccuracy {
  volumeId: string;
  flightLevel: number;
  /** The volume's bound: 1σ horizontal DRMS, metres. */
  requiredM: number;
  /** Share of the volume's cells at this level where the fix meets the bound (no fix counts as not met), %. */
  metPct: number;
  /** Median DRMS over the volume's cells with a fix (m); null when none has one. */
  medianM: number | null;
  /** Share of the volume's cells with a fix at all, %. */
  fixPct: number;
}

/** The network's multilateration receivers and what a fix needs. */
export interface MlatNetwork {
  receivers: MlatReceiver[];
  /** Their site ids, in footprint order. */
  receiverSites: string[];
  minReceivers: number;
  altitudeKnown: boolean;
}

/** What the figures are computed on: the study's grid, scenario, volume cells and ground, and the terrain. */
export interface MlatStudy {
  grid: GridGeo;
  scenario: { volumes: readonly Volume[]; mlatAltitudeAided: boolean };
  /** Cells of each volume, in the scenario's order. */
  volumeMasks: readonly Uint8Array[];
  /** Terrain height under each analysis cell (m), for volumes banded above ground. */
  ground: Float32Array;
  /** Terrain height (m AMSL) at a point: where each receiver's antenna stands (ground + mast). */
  groundAt: (lon: number, lat: number) => number;
}

/** The accuracy maps per level and what each accuracy-bound volume meets. */
export interface MlatFigures extends Omit<MlatNetwork, 'receivers'> {
  /** Per level (in `fls` order): the DRMS map (m, NaN where no fix). */
  maps: Float32Array[];
  /** Volume by volume (the scenario's order), each by level. */
  volumes: MlatVolumeAccuracy[];
}

/**
 * The `mlat` receivers among a network's sensors (`candidates[i]` with `footprints[i]`); null when there is none.
 * A receiver type without `timingErrorNs` is left out (the schema requires it for `mlat`).
 */
export function mlatNetwork(
  study: Pick<MlatStudy, 'scenario' | 'groundAt'>,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
): MlatNetwork | null {
  const receivers: MlatReceiver[] = [];
  const receiverSites: string[] = [];
  footprints.forEach((fp, i) => {
    if (fp.kind !== 'mlat') return;
    const c = candidates[i];
    const timingErrorNs = (c.model.spec as { timingErrorNs?: number }).timingErrorNs;
    if (timingErrorNs === undefined) return;
    receivers.push({
      footprint: fp,
      lonDeg: c.site.lon,
      latDeg: c.site.lat,
      antennaAltM: study.groundAt(c.site.lon, c.site.lat) + c.site.mastHeightM,
      timingErrorNs,
    });
    receiverSites.push(fp.siteId);
  });
  if (receivers.length === 0) return null;
  const altitudeKnown = study.scenario.mlatAltitudeAided;
  return { receivers, receiverSites, minReceivers: mlatMinReceivers(altitudeKnown), altitudeKnown };
}

/** The DRMS map of one level (true altitude `altitudeM`): metres per cell, NaN where no fix. */
export function mlatLevelMap(grid: GridGeo, net: MlatNetwork, altitudeM: number): Float32Array {
  return mlatAccuracyMap({
    grid,
    receivers: net.receivers,
    altitudeM,
    altitudeKnown: net.altitudeKnown,
    minReceivers: net.minReceivers,
  });
}

/** Per accuracy-bound volume present at level `fl`: its cells with a fix, meeting the bound, and the median. */
export function mlatVolumeRows(
  study: Pick<MlatStudy, 'scenario' | 'volumeMasks' | 'ground'>,
  fl: number,
  altitudeM: number | undefined,
  drmsM: Float32Array,
): MlatVolumeAccuracy[] {
  const rows: MlatVolumeAccuracy[] = [];
  study.scenario.volumes.forEach((v, vi) => {
    const requiredM = v.requiredMlatAccuracyM;
    if (requiredM === undefined) return;
    const mask = cellsAtLevel(v, study.volumeMasks[vi], fl, altitudeM ?? flToMetres(fl), study.ground);
    if (mask === null) return;
    let cells = 0;
    let met = 0;
    const fixes: number[] = [];
    for (let c = 0; c < mask.length; c++) {
      if (!mask[c]) continue;
      cells++;
      const d = drmsM[c];
      if (d === d) {
        fixes.push(d);
        if (d <= requiredM) met++;
      }
    }
    if (cells === 0) return;
    fixes.sort((a, b) => a - b);
    rows.push({
      volumeId: v.id,
      flightLevel: fl,
      requiredM,
      metPct: (100 * met) / cells,
      medianM: fixes.length > 0 ? fixes[fixes.length >> 1] : null,
      fixPct: (100 * fixes.length) / cells,
    });
  });
  return rows;
}

/** Puts the per-volume rows volume by volume (the scenario's order), each by level. */
export function sortVolumeRows(
  volumes: readonly { id: string }[],
  rows: MlatVolumeAccuracy[],
): MlatVolumeAccuracy[] {
  const order = new Map(volumes.map((v, i) => [v.id, i]));
  return rows.sort(
    (a, b) => order.get(a.volumeId)! - order.get(b.volumeId)! || a.flightLevel - b.flightLevel,
  );
}

/**
 * The accuracy maps at every level of `fls` (true altitudes `altitudesM`) and the per-volume figures; null when
 * the network has no `mlat` receiver.
 */
export function mlatFigures(
  study: MlatStudy,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
): MlatFigures | null {
  const net = mlatNetwork(study, candidates, footprints);
  if (net === null) return null;
  const maps: Float32Array[] = [];
  const volumes: MlatVolumeAccuracy[] = [];
  fls.forEach((fl, f) => {
    const drmsM = mlatLevelMap(study.grid, net, altitudesM[f]);
    maps.push(drmsM);
    volumes.push(...mlatVolumeRows(study, fl, altitudesM[f], drmsM));
  });
  return {
    receiverSites: net.receiverSites,
    minReceivers: net.minReceivers,
    altitudeKnown: net.altitudeKnown,
    maps,
    volumes: sortVolumeRows(study.scenario.volumes, volumes),
  };
}

/** What one site's outage costs the accuracy bounds: cells meeting their bound with it and not without it. */
export interface MlatSiteLoss {
  siteId: string;
  /** Area (km²) of the cells that lose their bound at one level or more, and their demand weight (area × weight). */
  areaKm2Lost: number;
  demandWeightLost: number;
  /** Per accuracy-bound volume and level: the area lost and the share meeting the bound before and after. */
  byVolume: {
    volumeId: string;
    flightLevel: number;
    areaKm2Lost: number;
    metPctBefore: number;
    metPctAfter: number;
  }[];
}

/**
 * The N−1 table of the accuracy bounds: for each site of `siteIds` that carries `mlat` receivers, the cells of
 * each accuracy-bound volume (at each level of its band) whose fix meets the bound with every receiver up and not
 * with that site's receivers down — a receiver lost can leave every fold met and still spoil the geometry. Worst
 * first (demand weight lost, then site id). Only the bounded volumes' cells are computed.
 */
export function mlatOutageLosses(
  study: Pick<MlatStudy, 'grid' | 'scenario' | 'volumeMasks' | 'ground'>,
  net: MlatNetwork,
  fls: readonly number[],
  altitudesM: readonly number[],
  siteIds: readonly string[],
): MlatSiteLoss[] {
  const { grid } = study;
  const W = grid.width;
  const rowArea = rowAreasKm2(grid);
  const bounded: { v: Volume; f: number; mask: Uint8Array; requiredM: number }[] = [];
  const box = { row0: grid.height, row1: 0, col0: W, col1: 0 };
  study.scenario.volumes.forEach((v, vi) => {
    const requiredM = v.requiredMlatAccuracyM;
    if (requiredM === undefined) return;
    fls.forEach((fl, f) => {
      const mask = cellsAtLevel(v, study.volumeMasks[vi], fl, altitudesM[f], study.ground);
      if (mask === null) return;
      let any = false;
      for (let c = 0; c < mask.length; c++) {
        if (!mask[c]) continue;
        any = true;
        const r = (c / W) | 0;
        const col = c - r * W;
        box.row0 = Math.min(box.row0, r);
        box.row1 = Math.max(box.row1, r + 1);
        box.col0 = Math.min(box.col0, col);
        box.col1 = Math.max(box.col1, col + 1);
      }
      if (any) bounded.push({ v, f, mask, requiredM });
    });
  });
  if (bounded.length === 0) return [];
  const levels = [...new Set(bounded.map((b) => b.f))];
  const mapsOf = (receivers: MlatReceiver[]) =>
    new Map(
      levels.map((f) => [
        f,
        mlatAccuracyMap({
          grid,
          receivers,
          altitudeM: altitudesM[f],
          altitudeKnown: net.altitudeKnown,
          minReceivers: net.minReceivers,
          only: box,
        }),
      ]),
    );
  const before = mapsOf(net.receivers);
  const out: MlatSiteLoss[] = [];
  for (const siteId of siteIds) {
    if (!net.receiverSites.includes(siteId)) continue;
    const after = mapsOf(net.receivers.filter((_, i) => net.receiverSites[i] !== siteId));
    const lostAnywhere = new Uint8Array(grid.width * grid.height);
    let demandWeightLost = 0;
    const byVolume: MlatSiteLoss['byVolume'] = [];
    for (const { v, f, mask, requiredM } of bounded) {
      const d0 = before.get(f)!;
      const d1 = after.get(f)!;
      let cells = 0;
      let met0 = 0;
      let met1 = 0;
      let area = 0;
      for (let r = box.row0; r < box.row1; r++) {
        for (let c = r * W + box.col0; c < r * W + box.col1; c++) {
          if (!mask[c]) continue;
          cells++;
          const ok0 = d0[c] <= requiredM;
          const ok1 = d1[c] <= requiredM;
          if (ok0) met0++;
          if (ok1) met1++;
          if (ok0 && !ok1) {
            area += rowArea[r];
            lostAnywhere[c] = 1;
          }
        }
      }
      demandWeightLost += area * (v.weight ?? 1);
      byVolume.push({
        volumeId: v.id,
        flightLevel: fls[f],
        areaKm2Lost: area,
        metPctBefore: (100 * met0) / cells,
        metPctAfter: (100 * met1) / cells,
      });
    }
    let areaKm2Lost = 0;
    for (let r = box.row0; r < box.row1; r++)
      for (let c = r * W + box.col0; c < r * W + box.col1; c++)
        if (lostAnywhere[c]) areaKm2Lost += rowArea[r];
    out.push({ siteId, areaKm2Lost, demandWeightLost, byVolume });
  }
  return out.sort((a, b) => b.demandWeightLost - a.demandWeightLost || (a.siteId < b.siteId ? -1 : 1));
}

/** A study as the figures take it. */
export function mlatStudyOf(study: Study): MlatStudy {
  return {
    grid: study.grid,
    scenario: study.loaded.scenario,
    volumeMasks: study.volumeMasks,
    ground: study.ground,
    groundAt: (lon, lat) => study.terrain.sampleLonLat(lon, lat),
  };
}

/**
 * The accuracy bounds' N−1 table of a network (`mlatOutageLosses`) for `siteIds` (default: every site with `mlat`
 * receivers); null when no volume bounds the accuracy or the network has no `mlat` receiver.
 */
export function mlatOutageOf(
  study: MlatStudy,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
  siteIds?: readonly string[],
): MlatSiteLoss[] | null {
  if (!study.scenario.volumes.some((v) => v.requiredMlatAccuracyM !== undefined)) return null;
  const net = mlatNetwork(study, candidates, footprints);
  if (net === null) return null;
  return mlatOutageLosses(study, net, fls, altitudesM, siteIds ?? [...new Set(net.receiverSites)]);
}

/** The report's multilateration section: the network's receivers, the rows per bounded volume and level, its N−1. */
export interface MlatReportSection {
  receivers: number;
  minReceivers: number;
  altitudeKnown: boolean;
  rows: MlatVolumeAccuracy[];
  /** One site with receivers down at a time; absent when no volume bounds the accuracy. */
  outage?: MlatSiteLoss[];
}

/** The report's section for a network with every site up (the CLI's and the app's alike); null without `mlat`. */
export function mlatReport(
  study: MlatStudy,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
): MlatReportSection | null {
  const f = mlatFigures(study, candidates, footprints, fls, altitudesM);
  if (f === null) return null;
  const outage = mlatOutageOf(study, candidates, footprints, fls, altitudesM);
  return {
    receivers: f.receiverSites.length,
    minReceivers: f.minReceivers,
    altitudeKnown: f.altitudeKnown,
    rows: f.volumes,
    ...(outage ? { outage } : {}),
  };
}
