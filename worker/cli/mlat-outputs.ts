/**
 * The multilateration accuracy outputs of a scenario command (issue 14): per flight level, where the network's
 * `mlat` receivers give a fix, its 1σ horizontal DRMS (worker/core/mlat-map.ts) as `mlat-accuracy-FLnnn.tif` and
 * nested contour bands `mlat-accuracy-FLnnn.geojson` (worker/io/mlat-layers.ts), and per volume that asks for an
 * accuracy (`requiredMlatAccuracyM`) the share of its cells at each level that meet it.
 */
import { flToMetres } from '../../shared/units.ts';
import { mlatMinReceivers } from '../../shared/sensor-kinds.ts';
import type { Candidate } from '../core/coverage.ts';
import type { Footprint } from '../core/footprint.ts';
import { mlatAccuracyMap, type MlatReceiver } from '../core/mlat-map.ts';
import { cellsAtLevel } from '../core/volumes.ts';
import { mlatAccuracyBands, mlatAccuracyGeoTiff } from '../io/mlat-layers.ts';
import { stringifyGeoJson } from '../io/geojson.ts';
import type { Provenance } from '../io/provenance.ts';
import type { Session } from './session.ts';

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

export interface MlatOutputs {
  /** The files written, in order. */
  files: string[];
  volumes: MlatVolumeAccuracy[];
  /** Receivers the maps used (site ids, in footprint order). */
  receiverSites: string[];
  minReceivers: number;
  altitudeKnown: boolean;
}

/** The accuracy maps per level and what each accuracy-bound volume meets; null without `mlat` receivers. */
export interface MlatMaps extends MlatOutputs {
  /** Per level (in `fls` order): the DRMS map (m, NaN where no fix). */
  maps: Float32Array[];
}

/**
 * Writes the accuracy raster and bands per level with `write` and returns what each accuracy-bound volume meets;
 * null when the network has no `mlat` receiver (nothing is written then).
 */
export function writeMlatOutputs(
  session: Session,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
  write: (name: string, data: ArrayBuffer | string) => void,
  opts: { provenance?: Provenance; meta?: Record<string, unknown> } = {},
): MlatOutputs | null {
  const m = mlatMaps(session, candidates, footprints, fls, altitudesM);
  if (m === null) return null;
  const grid = session.grid;
  fls.forEach((fl, f) => {
    const drmsM = m.maps[f];
    const tag = `FL${String(fl).padStart(3, '0')}`;
    const tif = `mlat-accuracy-${tag}.tif`;
    write(
      tif,
      mlatAccuracyGeoTiff({ grid, drmsM, ...(opts.provenance ? { provenance: opts.provenance } : {}) }),
    );
    const bands = mlatAccuracyBands({
      grid,
      drmsM,
      flightLevel: fl,
      altitudeM: altitudesM[f],
      altitudeKnown: m.altitudeKnown,
      minReceivers: m.minReceivers,
      siteIds: m.receiverSites,
      ...(opts.meta ? { meta: opts.meta } : {}),
      ...(opts.provenance ? { provenance: opts.provenance } : {}),
    });
    const geojson = `mlat-accuracy-${tag}.geojson`;
    write(geojson, stringifyGeoJson(bands));
    m.files.push(tif, geojson);
  });
  return {
    files: m.files,
    volumes: m.volumes,
    receiverSites: m.receiverSites,
    minReceivers: m.minReceivers,
    altitudeKnown: m.altitudeKnown,
  };
}

/** The accuracy maps and per-volume figures without writing anything (the report uses them). */
export function mlatMaps(
  session: Session,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
): MlatMaps | null {
  const receivers: MlatReceiver[] = [];
  const siteIds: string[] = [];
  footprints.forEach((fp, i) => {
    if (fp.kind !== 'mlat') return;
    const c = candidates[i];
    const timingErrorNs = (c.model.spec as { timingErrorNs?: number }).timingErrorNs;
    if (timingErrorNs === undefined) return;
    const ground = session.terrain.sampleLonLat(c.site.lon, c.site.lat);
    receivers.push({
      footprint: fp,
      lonDeg: c.site.lon,
      latDeg: c.site.lat,
      antennaAltM: ground + c.site.mastHeightM,
      timingErrorNs,
    });
    siteIds.push(fp.siteId);
  });
  if (receivers.length === 0) return null;
  const s = session.loaded.scenario;
  const altitudeKnown = s.mlatAltitudeAided;
  const minReceivers = mlatMinReceivers(altitudeKnown);
  const grid = session.grid;
  const files: string[] = [];
  const volumes: MlatVolumeAccuracy[] = [];
  const maps: Float32Array[] = [];
  fls.forEach((fl, f) => {
    const drmsM = mlatAccuracyMap({ grid, receivers, altitudeM: altitudesM[f], altitudeKnown, minReceivers });
    maps.push(drmsM);
    s.volumes.forEach((v, vi) => {
      const requiredM = v.requiredMlatAccuracyM;
      if (requiredM === undefined) return;
      const mask = cellsAtLevel(
        v,
        session.volumeMasks[vi],
        fl,
        altitudesM[f] ?? flToMetres(fl),
        session.ground,
      );
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
      volumes.push({
        volumeId: v.id,
        flightLevel: fl,
        requiredM,
        metPct: (100 * met) / cells,
        medianM: fixes.length > 0 ? fixes[fixes.length >> 1] : null,
        fixPct: (100 * fixes.length) / cells,
      });
    });
  });
  // Volume by volume (the scenario's order), each by level.
  const order = new Map(s.volumes.map((v, i) => [v.id, i]));
  volumes.sort((a, b) => order.get(a.volumeId)! - order.get(b.volumeId)! || a.flightLevel - b.flightLevel);
  return { files, volumes, receiverSites: siteIds, minReceivers, altitudeKnown, maps };
}
