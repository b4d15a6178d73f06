/**
 * The one way to build a report's model (io/report-html.ts ReportModel) from a computed network: the statistics per
 * volume and level (core/volumes.ts volumeStats), the single-site outage table (core/outage.ts outageTable, each
 * site switched off in turn), the map pictures (io/report-maps.ts), the coastline, the study's conventions and the
 * network's sites. `airshade report` (worker/cli/report.ts) and the app's engine (worker/runtime/engine.ts `report`) both
 * call it, so the app's report and the CLI's hold the same figures for the same scenario and network.
 *
 * Pure: no DOM, no file access. The network must have every site up (outageTable switches each one off and on
 * again); the callers build it from their footprints for this purpose.
 */
import type { Candidate } from '../core/coverage.ts';
import type { Network } from '../core/network.ts';
import { outageTable } from '../core/outage.ts';
import { volumeStats } from '../core/volumes.ts';
import { studyConventions, type Study, type StudyConventions } from './study.ts';
import type { Provenance } from './provenance.ts';
import type { ReportMlat, ReportModel, ReportPlan, ReportSite } from './report-html.ts';
import { coastPolygons, reportMaps } from './report-maps.ts';

export interface ReportModelInput {
  /** The study the network was computed on (grid, ground, volume cells and targets, scenario). */
  study: Pick<Study, 'grid' | 'ground' | 'volumeMasks' | 'volumeTargets' | 'loaded' | 'models'>;
  /** The network, every site up, at `flightLevels`. */
  network: Network;
  flightLevels: readonly number[];
  /** The network's sensors (their sites and types are listed in the report). */
  candidates: readonly Candidate[];
  /** What the network is, in words ("layout …", "the app's working network …"). */
  label: string;
  weatherMode: boolean;
  warnings: string[];
  /** The provenance, or how to make it from the conventions (the CLI's records them in its options). */
  provenance: Provenance | ((conventions: StudyConventions) => Provenance);
  plan?: ReportPlan;
  /** The multilateration accuracy figures, when the caller computed them (the CLI does). */
  mlat?: ReportMlat;
  paper?: 'A4' | 'A3';
  caution: string;
  /** Stages within the model (fraction 0…1 of this step). */
  onStage?: (fraction: number, stage: string) => void;
}

export interface ReportModelBuilt {
  model: ReportModel;
  /** Time spent on the statistics and the N−1 table, and on the maps (ms). */
  timingsMs: { statisticsAndOutage: number; maps: number };
}

/** The network's sites, each with the types it carries, in the order the sensors first name them. */
export function reportSites(candidates: readonly Candidate[]): ReportSite[] {
  const bySite = new Map<string, ReportSite>();
  for (const c of candidates) {
    const s = bySite.get(c.site.id);
    if (s) s.typeIds.push(c.model.spec.id);
    else
      bySite.set(c.site.id, {
        id: c.site.id,
        name: c.site.name,
        lon: c.site.lon,
        lat: c.site.lat,
        mastHeightM: c.site.mastHeightM,
        typeIds: [c.model.spec.id],
      });
  }
  return [...bySite.values()];
}

/** The report's model of a network on a study (see the module note). */
export function buildReportModel(input: ReportModelInput): ReportModelBuilt {
  const { study, network } = input;
  const s = study.loaded.scenario;
  const fls = [...input.flightLevels];
  const t0 = performance.now();
  input.onStage?.(0, 'statistics');
  const stats = volumeStats(
    network,
    s.volumes,
    study.volumeMasks,
    fls,
    study.grid,
    study.volumeTargets,
    study.ground,
  );
  input.onStage?.(0.1, 'switching sites off');
  const losses = outageTable(
    network,
    s.volumes,
    study.volumeMasks,
    fls,
    study.grid,
    undefined,
    undefined,
    study.volumeTargets,
    study.ground,
  );
  const t1 = performance.now();
  input.onStage?.(0.5, 'maps');
  const { bounds, maps } = reportMaps({
    grid: study.grid,
    ground: study.ground,
    network,
    volumes: s.volumes,
    masks: study.volumeMasks,
    flightLevels: fls,
    volumeTargets: study.volumeTargets,
  });
  const coast = coastPolygons(study.grid, study.ground);
  const t2 = performance.now();
  input.onStage?.(0.9, 'the document');
  const conventions = studyConventions(study, fls);
  const provenance =
    typeof input.provenance === 'function' ? input.provenance(conventions) : input.provenance;
  const model: ReportModel = {
    scenarioName: s.name,
    provenance,
    conventions,
    network: { label: input.label, weatherMode: input.weatherMode },
    sites: reportSites(input.candidates),
    volumes: s.volumes,
    warnings: input.warnings,
    bounds,
    coast,
    maps,
    volumeStats: stats,
    outage: losses,
    ...(input.plan ? { plan: input.plan } : {}),
    ...(input.mlat ? { mlat: input.mlat } : {}),
    caution: input.caution,
    paper: input.paper ?? 'A4',
  };
  return { model, timingsMs: { statisticsAndOutage: t1 - t0, maps: t2 - t1 } };
}
