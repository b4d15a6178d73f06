/**
 * The multilateration accuracy outputs of a scenario command (issue 14): per flight level, where the network's
 * `mlat` receivers give a fix, its 1σ horizontal DRMS (worker/core/mlat-map.ts) as `mlat-accuracy-FLnnn.tif` and
 * nested contour bands `mlat-accuracy-FLnnn.geojson` (worker/io/mlat-layers.ts), and per volume that asks for an
 * accuracy (`requiredMlatAccuracyM`) the share of its cells at each level that meet it.
 */
import type { Candidate } from '../core/coverage.ts';
import type { Footprint } from '../core/footprint.ts';
import { mlatAccuracyBands, mlatAccuracyGeoTiff } from '../io/mlat-layers.ts';
import {
  mlatFigures,
  mlatOutageOf,
  mlatStudyOf,
  type MlatSiteLoss,
  type MlatVolumeAccuracy,
} from '../io/mlat-figures.ts';
import { stringifyGeoJson } from '../io/geojson.ts';
import type { Provenance } from '../io/provenance.ts';
import type { Session } from './session.ts';

export type { MlatVolumeAccuracy };

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

/**
 * The N−1 table of the accuracy bounds for `siteIds` (mlat-figures.ts `mlatOutageLosses`); null when the network
 * has no `mlat` receiver or no volume bounds the accuracy.
 */
export function mlatOutage(
  session: Session,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
  siteIds: readonly string[],
): MlatSiteLoss[] | null {
  return mlatOutageOf(mlatStudyOf(session), candidates, footprints, fls, altitudesM, siteIds);
}

/** The accuracy maps and per-volume figures without writing anything (the report uses them). */
export function mlatMaps(
  session: Session,
  candidates: readonly Candidate[],
  footprints: readonly Footprint[],
  fls: readonly number[],
  altitudesM: readonly number[],
): MlatMaps | null {
  const m = mlatFigures(mlatStudyOf(session), candidates, footprints, fls, altitudesM);
  return m === null ? null : { ...m, files: [] };
}
