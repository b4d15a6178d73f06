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
import { cellsAtLevel } from '../core/volumes.ts';

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
