/**
 * `airshade report`: one self-contained HTML file for a safety case — the scenario and its provenance, the
 * assumptions, a map per flight level and the network floor, the per-volume table, the single-site outage (N−1)
 * table, optionally a plan of `airshade plan`, and the caution. The network is computed as `airshade coverage`
 * computes it (a layout, or every allowed site and type); the outage table as `airshade outage` does
 * (core/outage.ts outageTable). The model is built by io/report-model.ts and the document by io/report-html.ts (both
 * pure, shared with the app's engine).
 */
import { mkdirSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { formatFl } from '../../shared/units.ts';
import { conventionsText, levelAltitudesM, modelWarnings, studyNetwork } from '../io/study.ts';
import { mlatReport, mlatStudyOf } from '../io/mlat-figures.ts';
import type { VolumeLevelStats } from '../core/volumes.ts';
import type { Provenance } from '../io/provenance.ts';
import { buildReportHtml, type ReportPlan } from '../io/report-html.ts';
import { buildReportModel } from '../io/report-model.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { coldDayHelp, one, parseArgs, required, scenarioArg, threadsArg, weatherHelp } from './args.ts';
import { readFileChecked, writeOutputFile } from './files.ts';
import type { Candidate } from '../core/coverage.ts';
import { planCandidates } from './outage.ts';
import { scenarioProvenance } from './provenance.ts';
import {
  footprintsFor,
  networkChoice,
  openCommandSession,
  type Session,
  SESSION_OPTIONS,
  sessionHelp,
} from './session.ts';

export const REPORT_HELP = `airshade report — one self-contained HTML report of a network, for a safety case

Usage:
  airshade report SCENARIO.json --out FILE.html|DIR [--layout NAME] [--plan DIR/plan.json] [--paper A4|A3]
                  [--weather] [--cold-day] [--threads N] [--quiet] [--debug]

Computes the network (the layout given; else the plan's sensors with --plan; else, as \`airshade coverage\`, every
allowed site and type) and writes
one HTML file that needs nothing else (images inline, no script, nothing loaded from outside): the scenario with
the SHA-256 of every file read, the assumptions (k, target, fluctuation, day, true altitude of each level), a map
per flight level (sites seeing each cell, cells short of a volume's requirement hatched) and one of the network
floor, each with its key, scale bars in km and NM and a north arrow; the coverage per volume and level; the
single-site outage table (N−1); with --plan the plan's cost, bound, gap, sensors and coverage; and the caution.
Open it in a browser and print it (to PDF) on A4 or A3.

Options:
  --layout NAME    the network is this layout of the scenario (default: the plan's sensors with --plan, else every
                   allowed site and type)
  --plan FILE      a plan.json written by \`airshade plan\` for this same scenario file (its SHA-256 is checked):
                   its table goes into the report, and its sensors are the network unless --layout is given
  --paper SIZE     A4 (default) or A3: the page size the print layout is set for
${weatherHelp(19)}
${coldDayHelp(19)}
  --out FILE|DIR   the HTML file to write (a path ending in .html), or a folder to write report.html into; the
                   file is written whole or not at all
  --threads N      worker threads (default: one per core; 0 runs on the main thread)
${sessionHelp(19)}
`;

const SPEC = {
  layout: { value: true },
  plan: { value: true },
  paper: { value: true },
  weather: {},
  'cold-day': {},
  out: { value: true },
  threads: { value: true },
  ...SESSION_OPTIONS,
  quiet: {},
  debug: {},
  help: {},
} as const;

const PLAN_WHAT = 'a plan.json written by airshade plan';

/** Reads a plan.json, checks that it was made for this scenario file, and keeps what the report shows. */
/** plan.json's mlatAccuracy as the report shows it; nothing when the plan has none (or not in that shape). */
function planAccuracy(a: unknown): Pick<ReportPlan, 'mlatAccuracy'> {
  const r = a as Record<string, unknown> | null | undefined;
  const n = (k: string) => (typeof r?.[k] === 'number' ? (r[k] as number) : NaN);
  const bounded = n('boundedWeight');
  if (!(bounded > 0) || !Number.isFinite(n('metWeight')) || !Array.isArray(r?.addedForAccuracy)) return {};
  return {
    mlatAccuracy: {
      metPct: (100 * n('metWeight')) / bounded,
      unmeetablePct: (100 * (Number.isFinite(n('unmeetableWeight')) ? n('unmeetableWeight') : 0)) / bounded,
      addedForAccuracy: (r.addedForAccuracy as { siteId: string; typeId: string }[]).map((x) => ({
        siteId: String(x.siteId),
        typeId: String(x.typeId),
      })),
    },
  };
}

export function readPlanForReport(
  session: Session,
  path: string,
  run: { coldDay: boolean; weather: boolean },
): { plan: ReportPlan; warnings: string[]; candidates: Candidate[] } {
  const bytes = readFileChecked(path, PLAN_WHAT);
  let doc: Record<string, unknown>;
  try {
    doc = JSON.parse(new TextDecoder().decode(bytes)) as Record<string, unknown>;
  } catch (e) {
    throw new InputError(path, `text that is not JSON (${(e as Error).message})`, PLAN_WHAT);
  }
  if (doc === null || typeof doc !== 'object' || Array.isArray(doc))
    throw new InputError(path, 'JSON that is not an object', PLAN_WHAT);
  const prov = doc.provenance as Partial<Provenance> | undefined;
  const found = prov?.scenario?.sha256;
  const own = session.loaded.digests.scenario;
  if (typeof found !== 'string') {
    throw new InputError(
      `${path}: provenance.scenario.sha256`,
      'nothing',
      `the SHA-256 of the scenario file the plan was made for (${PLAN_WHAT})`,
    );
  }
  if (found !== own.sha256) {
    const other = typeof prov?.scenario?.file === 'string' ? `, of ${prov.scenario.file}` : '';
    throw new InputError(
      `${path}: provenance.scenario.sha256`,
      `${found} (a plan for another scenario file${other})`,
      `${own.sha256}, the SHA-256 of ${own.file}: a plan made by airshade plan for this scenario file as it is now`,
    );
  }
  const candidates = planCandidates(session, path); // every entry names a site and type of this scenario
  const numberAt = (field: string): number => {
    const v = doc[field];
    if (typeof v !== 'number' || !Number.isFinite(v))
      throw new InputError(`${path}: ${field}`, JSON.stringify(v) ?? 'nothing', `a number (${PLAN_WHAT})`);
    return v;
  };
  if (!Array.isArray(doc.volumes))
    throw new InputError(
      `${path}: volumes`,
      JSON.stringify(doc.volumes)?.slice(0, 40) ?? 'nothing',
      'an array of per-volume coverage per level',
    );
  const volumes = doc.volumes as VolumeLevelStats[];
  volumes.forEach((v, i) => {
    const ok =
      v &&
      typeof v.volumeId === 'string' &&
      typeof v.flightLevel === 'number' &&
      ['areaKm2', 'coveredPct', 'meetsRequirementPct', 'meetsRequirementKm2'].every(
        (k) => typeof (v as unknown as Record<string, unknown>)[k] === 'number',
      ) &&
      Array.isArray(v.foldHistogramKm2?.any);
    if (!ok)
      throw new InputError(
        `${path}: volumes[${i}]`,
        JSON.stringify(v)?.slice(0, 60) ?? 'nothing',
        'an object with volumeId, flightLevel, areaKm2, coveredPct, meetsRequirementPct, meetsRequirementKm2 and foldHistogramKm2',
      );
  });
  const warnings: string[] = [];
  const opts = prov?.options ?? {};
  const said = (flag: string, on: boolean, name: string) => {
    if ((opts[flag] === true) !== on)
      warnings.push(
        `the plan ${path} was made ${opts[flag] === true ? 'with' : 'without'} --${flag} and this report ${on ? 'with' : 'without'} it: its figures hold for ${opts[flag] === true ? name : 'the scenario as written'}`,
      );
  };
  said('cold-day', run.coldDay, 'the cold, low-pressure day');
  said('weather', run.weather, 'weather mode');
  return {
    candidates,
    plan: {
      file: path,
      mode: typeof doc.mode === 'string' ? doc.mode : undefined,
      cost: numberAt('cost'),
      lowerBound: numberAt('lowerBound'),
      gapPct: numberAt('gapPct'),
      method: typeof doc.method === 'string' ? doc.method : undefined,
      demandMet: typeof doc.demandMet === 'boolean' ? doc.demandMet : undefined,
      solverStop: typeof doc.solverStop === 'string' ? doc.solverStop : null,
      budget: typeof doc.budget === 'number' ? doc.budget : undefined,
      entries: (doc.entries as { siteId: string; typeId: string; cost: number }[]).map((e) => ({
        siteId: e.siteId,
        typeId: e.typeId,
        cost: Number(e.cost),
      })),
      volumes,
      unmeetable: Array.isArray(doc.unmeetable) ? (doc.unmeetable as ReportPlan['unmeetable']) : [],
      ...planAccuracy(doc.mlatAccuracy),
    },
    warnings,
  };
}

/**
 * The file to write: `--out` itself when it ends in .html or .htm (not an existing folder), otherwise a folder that
 * receives report.html (the design note's `--out DIR`). The folder is made now, so a bad path is refused before
 * the work.
 */
function outputPath(out: string): string {
  const isDir = (p: string) => {
    try {
      return statSync(p).isDirectory();
    } catch {
      return false;
    }
  };
  const file = /\.html?$/i.test(out) ? out : join(out, 'report.html');
  if (isDir(file))
    throw new InputError(
      '--out',
      `${out}, a folder`,
      'the HTML file to write (a path ending in .html), or a folder to write report.html into',
    );
  try {
    mkdirSync(dirname(resolve(file)), { recursive: true });
  } catch (e) {
    throw new InputError(
      '--out',
      `${out}, where a folder cannot be made (${(e as NodeJS.ErrnoException).code ?? 'error'})`,
      'a writable path for the HTML file',
    );
  }
  return file;
}

const sec = (ms: number) => (ms / 1000).toFixed(1);

export async function reportCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'report');
  if (p.flags.has('help')) {
    log(REPORT_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'report');
  const outPath = outputPath(required(p, 'out', 'the HTML file to write, e.g. out/report.html, or a folder'));
  const paperText = one(p, 'paper') ?? 'A4';
  const paper = paperText.toUpperCase();
  if (paper !== 'A4' && paper !== 'A3') throw new InputError('--paper', `"${paperText}"`, 'A4 or A3');
  const threads = threadsArg(p, NodePool.defaultSize());
  const weather = p.flags.has('weather');
  const started = performance.now();
  const { session, progress } = await openCommandSession(p, 'report', scenarioPath, threads, {
    path: outPath,
    kind: 'file',
  });
  const s = session.loaded.scenario;
  const planPath = one(p, 'plan');
  const planRead =
    planPath === undefined
      ? null
      : readPlanForReport(session, planPath, { coldDay: p.flags.has('cold-day'), weather });
  const layoutName = one(p, 'layout');
  // With a plan and no layout, the report is the plan's: its sensors are the network mapped and taken out one
  // site at a time. A layout given as well is mapped instead, beside the plan's table.
  const { candidates, label } =
    planRead && layoutName === undefined
      ? {
          candidates: planRead.candidates,
          label: `the plan's sensors (${planRead.candidates.length} sensors on ${new Set(planRead.candidates.map((c) => c.site.id)).size} sites, from ${planPath})`,
        }
      : networkChoice(session, layoutName, '--layout');
  const warnings = [...modelWarnings(session), ...(planRead?.warnings ?? [])];
  for (const w of warnings) log(`warning: ${w}`);

  const tSetup = performance.now();
  const footprints = await footprintsFor(session, candidates, { weather, progress, share: [0, 0.8] });
  const tFootprints = performance.now();
  const fls = s.flightLevels;
  const mlat = mlatReport(mlatStudyOf(session), candidates, footprints, fls, levelAltitudesM(s, fls));
  const { model, timingsMs } = buildReportModel({
    study: session,
    network: studyNetwork(session, fls, footprints),
    flightLevels: fls,
    candidates,
    label,
    weatherMode: weather,
    warnings,
    provenance: (conventions) => scenarioProvenance('report', p, SPEC, session.loaded, conventions),
    ...(planRead ? { plan: planRead.plan } : {}),
    ...(mlat ? { mlat } : {}),
    caution: CAUTION,
    paper,
    onStage: (f, stage) => progress.update(0.8 + 0.15 * f, stage),
  });
  const tModel = performance.now();
  const { volumeStats: stats, outage: losses, maps, conventions } = model;
  progress.update(0.95, 'writing');
  const html = buildReportHtml(model);
  writeOutputFile(outPath, html);
  progress.done();
  const worst = losses[0];
  const levelMaps = maps.filter((m) => m.flightLevel !== undefined).length;
  const short = stats.filter((x) => x.meetsRequirementPct < 100 - 1e-9).length;
  log(
    [
      `report of "${s.name}" — network: ${label}`,
      `  maps: ${levelMaps} flight level${levelMaps === 1 ? '' : 's'} (${formatFl(fls[0])} … ${formatFl(fls[fls.length - 1])}) and the network floor`,
      `  per volume and level: ${stats.length} rows, ${short} short of their requirement`,
      `  N−1: ${losses.length} sites; worst single failure: ${worst && worst.demandWeightLost > 0 ? `${worst.siteId} (demand weight ${worst.demandWeightLost.toFixed(0)}, ${worst.areaKm2Lost.toFixed(0)} km²)` : 'none loses service'}`,
      ...(planRead
        ? [
            `  plan: ${planPath} (cost ${planRead.plan.cost.toFixed(2)}, gap ${planRead.plan.gapPct.toFixed(2)} %)`,
          ]
        : []),
      '',
      `written to ${outPath} (${(Buffer.byteLength(html) / 1048576).toFixed(1)} MiB, ${paper})`,
      `time: ${sec(performance.now() - started)} s (setup ${sec(tSetup - started)} s, footprints ${sec(tFootprints - tSetup)} s, statistics and N−1 ${sec(timingsMs.statisticsAndOutage)} s, maps ${sec(timingsMs.maps)} s, document ${sec(performance.now() - tModel)} s)`,
    ].join('\n'),
  );
  log(conventionsText(conventions));
  log(CAUTION);
  return 0;
}
