/**
 * `airshade outage`: what each site's failure costs a set of sensors (a plan, a layout, or every candidate), per
 * volume and flight level, the worst single failure, and the lost coverage as layers.
 */
import { readFileSync } from 'node:fs';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { formatFl } from '../../shared/units.ts';
import { conventionsText, layerMeta, levelAltitudesM, studyConventions, studyNetwork } from '../io/study.ts';
import type { Candidate } from '../core/coverage.ts';
import { outageTable } from '../core/outage.ts';
import { featureCollection, stringifyGeoJson } from '../io/geojson.ts';
import { undated } from '../io/provenance.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { coldDayHelp, one, parseArgs, required, scenarioArg, threadsArg, weatherHelp } from './args.ts';
import { maskLayer } from '../io/layers.ts';
import { mlatOutage } from './mlat-outputs.ts';
import { finishRun, RunFolder, runFolderHelp } from './files.ts';
import { scenarioProvenance } from './provenance.ts';
import {
  candidate,
  footprintsFor,
  networkChoice,
  openCommandSession,
  siteOf,
  type Session,
  SESSION_OPTIONS,
  sessionHelp,
  cacheHelp,
  CACHE_OPTION,
} from './session.ts';

export const OUTAGE_HELP = `airshade outage — what is lost when a site goes down

Usage:
  airshade outage SCENARIO.json [--plan DIR/plan.json | --layout NAME] [--site ID …] --out DIR
                  [--weather] [--cold-day] [--threads N] [--quiet] [--debug]

For the sensors of a plan (plan.json from \`airshade plan\`), of a layout of the scenario, or else every allowed
site and type, switches each site off in turn (or only the --site ones) and reports the demand weight and area
that stop meeting their volume's required folds, per volume and flight level, worst first. A demand point is a
volume cell at a flight level in the volume's band; its weight is the cell's area times the volume's weight.
Writes DIR/outage.json and DIR/outage-<site>-FL050.geojson … (the lost coverage, per volume). When volumes bound
the multilateration accuracy (requiredMlatAccuracyM), a second table gives, per site with mlat receivers, the
area whose fix meets its bound with every receiver up and not with the site down (outage.json
mlatAccuracyLosses): a receiver lost can leave every fold met and still spoil the geometry.

Options:
${weatherHelp(19)}
${coldDayHelp(19)}
${cacheHelp(19)}
${sessionHelp(19)}

${runFolderHelp()}`;

const SPEC = {
  plan: { value: true },
  layout: { value: true },
  site: { value: true, repeat: true },
  out: { value: true },
  weather: {},
  'cold-day': {},
  threads: { value: true },
  ...CACHE_OPTION,
  ...SESSION_OPTIONS,
  quiet: {},
  debug: {},
  help: {},
} as const;

/** The sensors listed in a plan.json written by `airshade plan`. */
export function planCandidates(session: Session, path: string): Candidate[] {
  let doc: unknown;
  try {
    doc = JSON.parse(readFileSync(path, 'utf8'));
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(
      path,
      code ? `a file that cannot be read (${code})` : `text that is not JSON (${(e as Error).message})`,
      'a plan.json written by airshade plan',
    );
  }
  const entries = (doc as { entries?: unknown }).entries;
  if (!Array.isArray(entries))
    throw new InputError(
      `${path}: entries`,
      JSON.stringify(entries)?.slice(0, 40) ?? 'nothing',
      'an array of { siteId, typeId, cost }',
    );
  return entries.map((e, i) => {
    const r = e as { siteId?: unknown; typeId?: unknown };
    if (typeof r.siteId !== 'string' || typeof r.typeId !== 'string') {
      throw new InputError(
        `${path}: entries[${i}]`,
        JSON.stringify(e).slice(0, 60),
        'an object with string siteId and typeId',
      );
    }
    return candidate(session, r.siteId, r.typeId, `${path}: entries[${i}]`);
  });
}

export async function outageCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'outage');
  if (p.flags.has('help')) {
    log(OUTAGE_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'outage');
  const outDir = required(p, 'out', 'the output folder');
  const run = RunFolder.open(outDir, 'outage');
  const planPath = one(p, 'plan');
  const layoutName = one(p, 'layout');
  if (planPath !== undefined && layoutName !== undefined)
    throw new InputError('--layout', 'both --plan and --layout', 'one of them');
  const threads = threadsArg(p, NodePool.defaultSize());
  const started = performance.now();
  const { session, progress } = await openCommandSession(p, 'outage', scenarioPath, threads, {
    path: outDir,
    kind: 'folder',
  });
  const s = session.loaded.scenario;
  const sensors =
    planPath !== undefined
      ? planCandidates(session, planPath)
      : networkChoice(session, layoutName, '--layout').candidates;
  const label =
    planPath ?? (layoutName !== undefined ? `layout "${layoutName}"` : 'every allowed site and type');
  const siteIds = p.values.get('site');
  siteIds?.forEach((id) => {
    siteOf(session, id, '--site');
    if (!sensors.some((c) => c.site.id === id))
      throw new InputError('--site', JSON.stringify(id), `a site with a sensor in ${label}`);
  });
  const footprints = await footprintsFor(session, sensors, { weather: p.flags.has('weather'), progress });
  const fls = s.flightLevels;
  const tBuilt = performance.now();
  const network = studyNetwork(session, fls, footprints);
  progress.update(0.9, 'switching sites off');
  const lostBySite = new Map<string, Map<string, Uint8Array>>();
  const losses = outageTable(
    network,
    s.volumes,
    session.volumeMasks,
    fls,
    session.grid,
    siteIds,
    (siteId, lost) => lostBySite.set(siteId, lost),
    session.volumeTargets,
    session.ground,
  );
  // Accuracy bounds: a receiver lost can keep every fold and still spoil the fix's geometry (issue 14).
  const accuracyLosses = mlatOutage(
    session,
    sensors,
    footprints,
    fls,
    levelAltitudesM(s, fls),
    siteIds ?? network.siteIds().filter((id) => network.isSiteActive(id)),
  );
  const tableMs = performance.now() - tBuilt;
  progress.update(0.95, 'layers');
  // The run's date in outage.json only: the layers stay the same bytes for the same inputs.
  const provenance = scenarioProvenance('outage', p, SPEC, session.loaded, studyConventions(session, fls));
  for (const [siteId, lost] of lostBySite) {
    for (const fl of fls) {
      const features: NonNullable<ReturnType<typeof maskLayer>>[] = [];
      for (const v of s.volumes) {
        const m = lost.get(`${v.id}|${fl}`);
        if (!m) continue;
        const f = maskLayer(m, session.grid, {
          flightLevel: fl,
          altitudeM: levelAltitudesM(s, [fl])[0],
          fold: 0,
          kind: 'any',
          siteIds: [siteId],
          layer: 'lost',
          volumeId: v.id,
        });
        if (f) features.push(f);
      }
      run.write(
        `outage-${siteId}-${formatFl(fl)}.geojson`,
        stringifyGeoJson(
          featureCollection(
            features,
            {
              ...layerMeta(studyConventions(session, fls)),
              flightLevel: fl,
              siteDown: siteId,
            },
            undated(provenance),
          ),
        ),
      );
    }
  }
  const worst = losses[0] ?? null;
  const doc = {
    scenario: s.name,
    sensors: sensors.map((c) => ({ siteId: c.site.id, typeId: c.model.spec.id })),
    source: label,
    worst: worst && {
      siteId: worst.siteId,
      demandWeightLost: worst.demandWeightLost,
      areaKm2Lost: worst.areaKm2Lost,
    },
    losses,
    ...(accuracyLosses ? { mlatAccuracyLosses: accuracyLosses } : {}),
    timingsMs: { outageTable: Math.round(tableMs), total: Math.round(performance.now() - started) },
    caution: CAUTION,
    provenance,
    conventions: studyConventions(session, fls),
  };
  run.write('outage.json', JSON.stringify(doc, null, 2) + '\n');
  for (const line of finishRun(run, 'outage', outDir)) log(line);
  progress.done();
  const lines = [`outage of each site — sensors: ${label} (${sensors.length})`, ''];
  lines.push(
    `  ${'site down'.padEnd(24)} ${'weight lost'.padStart(12)} ${'area lost km²'.padStart(14)}  worst volume and level`,
  );
  for (const l of losses) {
    const top = [...l.byVolume].sort((a, b) => b.demandWeightLost - a.demandWeightLost)[0];
    const name = s.sites.find((f) => f.properties.id === l.siteId)?.properties.name ?? l.siteId;
    lines.push(
      `  ${name.slice(0, 24).padEnd(24)} ${l.demandWeightLost.toFixed(0).padStart(12)} ${l.areaKm2Lost.toFixed(0).padStart(14)}  ${top && top.demandWeightLost > 0 ? `${top.volumeId} ${formatFl(top.flightLevel)}` : '—'}`,
    );
  }
  if (accuracyLosses && accuracyLosses.length > 0) {
    lines.push(
      '',
      '  multilateration accuracy bounds: area whose fix meets its bound with every receiver up and not without the site',
      `  ${'site down'.padEnd(24)} ${'area lost km²'.padStart(14)}  worst volume and level (share meeting the bound, before → after)`,
    );
    for (const l of accuracyLosses) {
      const top = [...l.byVolume].sort((a, b) => b.areaKm2Lost - a.areaKm2Lost)[0];
      const name = s.sites.find((f) => f.properties.id === l.siteId)?.properties.name ?? l.siteId;
      lines.push(
        `  ${name.slice(0, 24).padEnd(24)} ${l.areaKm2Lost.toFixed(0).padStart(14)}  ${top && top.areaKm2Lost > 0 ? `${top.volumeId} ${formatFl(top.flightLevel)} (${top.metPctBefore.toFixed(1)} % → ${top.metPctAfter.toFixed(1)} %)` : '—'}`,
      );
    }
  }
  lines.push('');
  lines.push(
    `worst single failure: ${worst ? worst.siteId : 'none'}; outage table of ${losses.length} sites in ${(tableMs / 1000).toFixed(2)} s (layers not included); written to ${outDir}/outage.json`,
  );
  log(lines.join('\n'));
  log(conventionsText(studyConventions(session, fls)));
  log(CAUTION);
  return 0;
}
