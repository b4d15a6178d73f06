/**
 * `airshade plan`: the cheapest set of (site, type) that gives every airspace volume its required folds at the
 * flight levels of its band — or, with a budget, the most demand within it — with a proven lower bound and gap.
 */
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { formatFl } from '../../shared/units.ts';
import { conventionsText, layerMeta, levelAltitudesM, studyConventions, studyNetwork } from '../io/study.ts';
import type { Candidate } from '../core/coverage.ts';
import { Network } from '../core/network.ts';
import {
  DEFAULT_SAFETY_TIME_LIMIT_MS,
  DEFAULT_SOLVER_NODES,
  SAFETY_LIMIT_NOTE,
  beginSolve,
  type AccuracyResult,
  type PlanResult,
} from '../core/plan.ts';
import { volumeStats } from '../core/volumes.ts';
import { undated } from '../io/provenance.ts';
import { NodePool } from '../runtime/node-pool.ts';
import {
  coldDayHelp,
  numberArg,
  one,
  parseArgs,
  required,
  scenarioArg,
  threadsArg,
  weatherHelp,
} from './args.ts';
import {
  buildDemand,
  coveredPointsView,
  DEMAND_POINT_BYTES,
  planInstance,
  type Demand,
} from '../io/study.ts';
import type { Footprint } from '../core/footprint.ts';
import { OVERHEAD, sitesFootprintBytes, type MemoryLedger } from '../core/memory-estimate.ts';
import { memoryLimitArg, planKnob } from './budget-check.ts';
import { finishRun, RunFolder, runFolderHelp } from './files.ts';
import { scenarioProvenance } from './provenance.ts';
import {
  allCandidates,
  footprintsFor,
  KEEP_NONE,
  type FootprintsOptions,
  layoutCandidates,
  openCommandSession,
  planLedger,
  siteOf,
  type Session,
  SESSION_OPTIONS,
  sessionHelp,
  cacheHelp,
  CACHE_OPTION,
  levelLayerTexts,
} from './session.ts';
import { openDiskSpill } from './footprint-cache.ts';

export const PLAN_HELP = `airshade plan — the cheapest sites and sensor types that meet the airspace's requirements

Usage:
  airshade plan SCENARIO.json --out DIR [--budget COST] [--keep LAYOUT] [--exclude SITE …] [--weather] [--cold-day]
                [--solver-nodes N] [--time-limit-s S] [--threads N] [--quiet] [--debug]

Demand: every cell of every volume at every scenario flight level inside the volume's band, weighted by cell area
times the volume's weight, needing the volume's required folds (distinct sites per kind). Candidates: every
allowed (site, type); cost = the site's cost once (0 for an existing site) plus each type's cost. The planner
picks greedily by covered demand per cost (lazy evaluation), prunes and swaps, and bounds the optimum with the
LP relaxation (HiGHS; the exact MILP on small instances), so the plan reports its own gap.
With a budget (--budget, or the scenario's budget) it covers the most demand within the budget instead.
Writes DIR/plan.json and DIR/plan-coverage-FL050.geojson … (the plan's coverage layers).
Memory: the coverage is estimated before it starts; the plan's own arrays (which depend on what each sensor
covers) are counted as they are made, and the run stops before one would pass --max-memory.

Options:
  --keep LAYOUT     the sensors of this layout are kept by force (e.g. the existing network); those on sites
                    marked existing already stand: they cost nothing new, and their value is shown apart
  --exclude SITE    never use this site (repeat)
  --budget COST     the budget (overrides the scenario's); --budget none plans without one
  --solver-nodes N  work limit of the exact search: the branch-and-bound nodes the MILP may explore (default
                    ${DEFAULT_SOLVER_NODES}; 0 skips it: the heuristic plan with the LP bound). The solver stops on this count, not
                    on the clock, so the same inputs give the same plan.json on any machine and under any load
  --time-limit-s S  safety time limit for the LP and MILP together (default ${DEFAULT_SAFETY_TIME_LIMIT_MS / 1000}), meant never to be reached:
                    a plan it stops says so (on screen, in plan.json's solverStop and log) and may differ on
                    another machine
${weatherHelp(20)}
${coldDayHelp(20)}
${cacheHelp(20)}
${sessionHelp(20)}

${runFolderHelp()}`;

const SPEC = {
  out: { value: true },
  budget: { value: true },
  keep: { value: true },
  exclude: { value: true, repeat: true },
  weather: {},
  'cold-day': {},
  'solver-nodes': { value: true },
  'time-limit-s': { value: true },
  threads: { value: true },
  ...CACHE_OPTION,
  ...SESSION_OPTIONS,
  quiet: {},
  debug: {},
  help: {},
} as const;

export async function planCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'plan');
  if (p.flags.has('help')) {
    log(PLAN_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'plan');
  const outDir = required(p, 'out', 'the output folder');
  const run = RunFolder.open(outDir, 'plan');
  const threads = threadsArg(p, NodePool.defaultSize());
  const limitText = one(p, 'time-limit-s');
  const timeLimitMs =
    limitText === undefined
      ? DEFAULT_SAFETY_TIME_LIMIT_MS
      : numberArg('time-limit-s', limitText, 0.1, 3600, 'a time limit in seconds from 0.1 to 3600') * 1000;
  const solverNodes = solverNodesArg(one(p, 'solver-nodes'));
  const started = performance.now();
  const { session, progress } = await openCommandSession(
    p,
    'plan',
    scenarioPath,
    threads,
    { path: outDir, kind: 'folder' },
    undefined,
    undefined,
    // One site's footprints at a time, and more kept while they fit (below).
    'one site',
  );
  const s = session.loaded.scenario;
  const budgetText = one(p, 'budget');
  const budget =
    budgetText === 'none'
      ? undefined
      : budgetText !== undefined
        ? numberArg('budget', budgetText, 0, 1e12, 'a budget ≥ 0 in the scenario’s cost units, or none')
        : s.budget;
  const excluded = new Set((p.values.get('exclude') ?? []).map((id) => siteOf(session, id, '--exclude').id));
  const candidates = allCandidates(session);
  const keyOf = (c: Candidate) => `${c.site.id}\u0000${c.model.spec.id}`;
  const index = new Map(candidates.map((c, i) => [keyOf(c), i]));
  const keepName = one(p, 'keep');
  const forced =
    keepName === undefined
      ? []
      : layoutCandidates(session, keepName, '--keep').map((c) => index.get(keyOf(c))!);
  progress.update(0, 'demand points');
  const fls = s.flightLevels;
  const altitudes = levelAltitudesM(s, fls);
  const demand = buildDemand(session, fls);
  // The plan's arrays against --max-memory as their sizes become known, with the horizons in flight until the
  // footprints are done.
  const horizons = { bytes: 0 };
  const memory = planLedger(session, memoryLimitArg(p), horizons);
  const cached = session.cacheDir !== undefined;
  memory.take(DEMAND_POINT_BYTES * demand.cell.length, 'the demand points');
  const inst = planInstance(session, candidates, null, demand, altitudes, {
    forced,
    excludedSiteIds: excluded,
    budget,
    timeLimitMs,
    solverNodes,
    memory,
  });
  memory.take(4 * demand.cell.length, "the scratch list of a candidate's covered points");
  // What the solve's arrays take is let go with it (below): the model is not kept.
  const beforeSolve = memory.bytes;
  const plan = beginSolve(inst, {
    onProgress: (f, stage) => progress.update(0.65 + 0.3 * f, stage),
    // The whole LP (no row truncation) and the MILP whenever it fits: on the demo the LP relaxation alone
    // leaves a gap of a few per cent, the MILP closes it at its root node, well within the node limit.
    lpMaxNonzeros: 2_000_000,
    exactMaxCandidates: 1_000,
    // Nothing here reads the cover lists after the model is built from them.
    releaseCovers: true,
    memory,
  });
  // Each candidate's covers are made as its site's footprints come and handed to the plan's grouping (but a
  // multilateration receiver's are kept when the volumes bound accuracy: the plan reads them again). The
  // footprints are kept, to spare computing the chosen sites' again for the layers, when all of them fit under
  // --max-memory by the estimate (part of them would cost their page faults and still leave most chosen sites to
  // compute: on the national box at 15″ 8 GiB kept, all let go during the solve, 42 s slower); they are let go (the
  // account's spill) as soon as one of the plan's own arrays would not fit, so keeping them never refuses a plan
  // that fits one site at a time.
  const kept = new Map<number, Footprint>();
  let keptBytes = 0;
  let keeping = memory.fits(sitesFootprintBytes(s, session.grid, session.targets.length));
  memory.spill = () => {
    const bytes = keptBytes;
    kept.clear();
    keptBytes = 0;
    keeping = false;
    return bytes;
  };
  const allowed = new Uint8Array(candidates.length);
  for (const c of plan.allowedList) allowed[c] = 1;
  const keepMlatCovers = inst.accuracy !== undefined;
  // Footprints that will not be kept are spilled to the output folder's disk as they come, so that the chosen
  // sites' are read back for the layers instead of swept again (on the national box at 15″: about 84 s of sweeps for
  // its 96 chosen sites). AIRSHADE_DISK_SPILL=0 turns it off.
  const diskSpill =
    !cached && !keeping && process.env.AIRSHADE_DISK_SPILL !== '0'
      ? openDiskSpill(outDir, sitesFootprintBytes(s, session.grid, session.targets.length))
      : null;
  if (diskSpill !== null) {
    session.cacheDir = diskSpill.dir;
    session.cacheIsSpill = true;
  }
  // The footprints pass, the solve and the chosen sites' footprints, with the spill folder removed however they end.
  const passes = async () => {
    await footprintsFor(session, candidates, {
      weather: p.flags.has('weather'),
      progress,
      share: [0, 0.6],
      onSite: (fps) => {
        if (cached) memory.setKnob(planKnob(true, true));
        const at = fps.map((fp) => index.get(`${fp.siteId}\u0000${fp.typeId}`)!);
        fps.forEach((fp, j) => {
          const c = at[j];
          if (!allowed[c]) return;
          // A view of one scratch list, read by the grouping at once.
          const cv = coveredPointsView(fp, demand, altitudes, candidates[c].model.kind);
          plan.add(c, cv);
          if (keepMlatCovers && candidates[c].model.kind === 'mlat') {
            memory.take(cv.byteLength, "the multilateration receivers' covered points");
            inst.candidates[c].covers = cv.slice();
          }
        });
        if (!keeping) return;
        const bytes = fps.reduce((n, fp) => n + footprintBytesHeld(fp), 0);
        if (!memory.fits(bytes)) {
          keeping = false;
          return;
        }
        memory.take(bytes, 'footprints kept for the layers');
        keptBytes += bytes;
        fps.forEach((fp, j) => kept.set(at[j], fp));
      },
      retain: KEEP_NONE,
    });
    memory.give(horizons.bytes);
    const tBuilt = performance.now();
    progress.update(0.65, 'prepare');
    const result = await plan.solve();
    memory.spill = undefined;
    memory.rewind(beforeSolve + OVERHEAD * keptBytes);
    const tSolved = performance.now();
    // The chosen sensors' footprints: those kept, and the others' sites read back from the spill folder or computed again.
    const missing = result.chosen.filter((i) => !kept.has(i));
    const again =
      missing.length === 0
        ? []
        : await chosenFootprints(session, candidates, missing, memory, {
            weather: p.flags.has('weather'),
            progress,
            share: [0.95, 0.04],
          });
    const byIndex = new Map(again.map((fp) => [index.get(`${fp.siteId}\u0000${fp.typeId}`)!, fp]));
    const chosenFps = result.chosen.map((i) => kept.get(i) ?? byIndex.get(i)!);
    kept.clear();
    const recomputedSites = new Set(missing.map((i) => candidates[i].site.id)).size;
    return {
      result,
      chosenFps,
      recomputedSites,
      tBuilt,
      tSolved,
      spilledBytes: diskSpill === null || session.spillStopped ? undefined : diskSpill.bytes(),
    };
  };
  let done: Awaited<ReturnType<typeof passes>>;
  try {
    done = await passes();
  } finally {
    if (diskSpill !== null) {
      session.cacheDir = undefined;
      session.cacheIsSpill = undefined;
      session.spillStopped = undefined;
      diskSpill.remove();
    }
  }
  const { result, chosenFps, recomputedSites, tBuilt, tSolved, spilledBytes } = done;
  progress.update(0.99, 'layers');
  const network = studyNetwork(session, fls, chosenFps);
  // No date in plan.json and its layers: the same inputs give the same bytes.
  const provenance = undated(
    scenarioProvenance('plan', p, SPEC, session.loaded, studyConventions(session, fls, altitudes)),
  );
  const meta = layerMeta(studyConventions(session, fls, altitudes));
  const texts = await levelLayerTexts(session, network, fls, meta, provenance, { memory });
  texts.forEach((text, f) => run.write(`plan-coverage-${formatFl(fls[f])}.geojson`, text));
  const doc = planDocument(session, candidates, result, network, fls, demand);
  run.write('plan.json', JSON.stringify({ ...doc, provenance }, null, 2) + '\n');
  for (const line of finishRun(run, 'plan', outDir)) log(line);
  progress.done();
  log(
    planSummary(session, doc, result, outDir, {
      build: tBuilt - started,
      solve: tSolved - tBuilt,
      total: performance.now() - started,
      ...(recomputedSites > 0
        ? { recomputedSites, chosenSites: new Set(result.chosen.map((i) => candidates[i].site.id)).size }
        : {}),
      ...(spilledBytes !== undefined ? { spilledBytes } : {}),
    }),
  );
  log(conventionsText(doc.conventions));
  log(CAUTION);
  return 0;
}

/** --solver-nodes: a whole number of branch-and-bound nodes (default DEFAULT_SOLVER_NODES). */
function solverNodesArg(text: string | undefined): number {
  if (text === undefined) return DEFAULT_SOLVER_NODES;
  const what = 'a whole number of nodes from 0 to 1000000000';
  const v = numberArg('solver-nodes', text, 0, 1e9, what);
  if (!Number.isInteger(v)) throw new InputError('--solver-nodes', `"${text}"`, what);
  return v;
}

/** The bytes a footprint holds: its window's two arrays, and its other targets' (counted even where shared). */
function footprintBytesHeld(fp: Footprint): number {
  let n = fp.lo.byteLength + fp.hi.byteLength;
  for (const t of fp.byTarget ?? []) n += t.lo.byteLength + t.hi.byteLength;
  return n;
}

/**
 * The footprints of the plan's chosen candidates `chosen` (those not kept while the run held one site's at a time), in the
 * candidates' order: each chosen site with every allowed type is swept (one sweep serves a site's types, and with
 * --cache a site's file holds them all), the chosen kept. Counted in the plan's memory account first.
 */
async function chosenFootprints(
  session: Session,
  candidates: readonly Candidate[],
  chosen: readonly number[],
  memory: MemoryLedger,
  opts: Pick<FootprintsOptions, 'weather' | 'progress' | 'share'>,
): Promise<Footprint[]> {
  const sites = new Set(chosen.map((i) => candidates[i].site.id));
  const s = session.loaded.scenario;
  memory.take(
    sitesFootprintBytes(
      { ...s, sites: s.sites.filter((f) => sites.has(f.properties.id)) },
      session.grid,
      session.targets.length,
    ),
    "the chosen sites' footprints, read back or computed again for the layers",
  );
  const keep = new Set(chosen.map((i) => `${candidates[i].site.id}\u0000${candidates[i].model.spec.id}`));
  return footprintsFor(
    session,
    candidates.filter((c) => sites.has(c.site.id)),
    { ...opts, retain: (fp) => keep.has(`${fp.siteId}\u0000${fp.typeId}`) },
  );
}

function planDocument(
  session: Session,
  candidates: Candidate[],
  r: PlanResult,
  network: Network,
  fls: readonly number[],
  demand: Demand,
) {
  const s = session.loaded.scenario;
  // Each entry's share of the cost: its type (0 for a sensor already standing) and its site's cost on the site's
  // first entry (0 for an existing site).
  const entries = r.chosen.map((i, j) => ({
    siteId: candidates[i].site.id,
    typeId: candidates[i].model.spec.id,
    cost: r.chosenCost[j],
  }));
  const existingSensors = r.chosen
    .filter((_, j) => r.chosenStanding[j])
    .map((i) => ({
      siteId: candidates[i].site.id,
      typeId: candidates[i].model.spec.id,
      value: candidates[i].model.spec.cost,
    }));
  const unmeetable = r.unmeetable.map((u) => ({
    volumeId: s.volumes[demand.volume[u.firstPoint]].id,
    volumeName: s.volumes[demand.volume[u.firstPoint]].name,
    kind: u.kind,
    required: u.required,
    achievable: u.achievable,
    points: u.points,
    weight: u.weight,
  }));
  // Deterministic: no timings in the file (they are printed), so the same input gives the same bytes.
  return {
    scenario: s.name,
    mode: r.mode,
    cost: r.cost,
    lowerBound: r.lowerBound,
    gapPct: r.gapPct,
    // `cost` is the new spend; the existing sensors kept (standing already) are valued apart, not in it.
    newSpend: r.cost,
    existingValue: r.existingValue,
    existingSensors,
    ...(r.mode === 'budget' ? { budget: s.budget, weightUpperBound: r.weightUpperBound } : {}),
    demandMet: r.demandMet,
    coveredWeight: r.coveredWeight,
    achievableWeight: r.achievableWeight,
    totalWeight: r.totalWeight,
    method: r.method,
    solverStop: r.solverStop,
    entries,
    volumes: volumeStats(
      network,
      s.volumes,
      session.volumeMasks,
      fls,
      session.grid,
      session.volumeTargets,
      session.ground,
    ),
    unmeetable,
    ...(r.accuracy ? { mlatAccuracy: accuracyDoc(r.accuracy, candidates) } : {}),
    log: r.log,
    conventions: studyConventions(session, fls),
    caution: CAUTION,
  };
}

/** The plan's accuracy figures as plan.json gives them (weights in km²-weighted units, as the folds'). */
function accuracyDoc(a: AccuracyResult, candidates: Candidate[]) {
  const sensor = (i: number) => ({ siteId: candidates[i].site.id, typeId: candidates[i].model.spec.id });
  return {
    boundedPoints: a.points,
    metPoints: a.metPoints,
    shortPoints: a.shortPoints,
    unmeetablePoints: a.unmeetablePoints,
    boundedWeight: a.weight,
    metWeight: a.metWeight,
    unmeetableWeight: a.unmeetableWeight,
    addedForAccuracy: a.added.map(sensor),
    droppedAfter: a.dropped.map(sensor),
  };
}

function planSummary(
  session: Session,
  doc: ReturnType<typeof planDocument>,
  r: PlanResult,
  outDir: string,
  t: Record<string, number>,
): string {
  const s = session.loaded.scenario;
  const lines = [
    `plan for "${s.name}" — ${r.mode === 'budget' ? 'most demand within the budget' : 'least cost meeting the demand'}`,
    `  cost ${doc.cost.toFixed(2)}, lower bound ${doc.lowerBound.toFixed(2)}, gap ${doc.gapPct.toFixed(2)} % (${r.method}); demand ${r.demandMet ? 'met' : 'not fully met'}`,
  ];
  if (doc.existingSensors.length > 0) {
    lines.push(
      `  existing sensors kept: ${doc.existingSensors.length}, worth ${doc.existingValue.toFixed(2)} — already standing, so not in the cost (the new spend)`,
    );
  }
  lines.push('', `  ${'site'.padEnd(24)} ${'sensor type'.padEnd(18)} ${'cost'.padStart(7)}`);
  doc.entries.forEach((e, j) => {
    const name = s.sites.find((f) => f.properties.id === e.siteId)?.properties.name ?? e.siteId;
    const standing = r.chosenStanding[j]
      ? `  already standing (worth ${s.sensorTypes.find((t) => t.id === e.typeId)!.cost.toFixed(2)})`
      : '';
    lines.push(
      `  ${name.slice(0, 24).padEnd(24)} ${e.typeId.padEnd(18)} ${e.cost.toFixed(2).padStart(7)}${standing}`,
    );
  });
  if (r.accuracy) {
    const a = r.accuracy;
    const pct = (x: number) => (a.weight > 0 ? ((100 * x) / a.weight).toFixed(1) : '0.0');
    lines.push(
      `  multilateration accuracy: ${pct(a.metWeight)} % of the bounded volume-levels meet their bound` +
        (a.unmeetablePoints > 0
          ? `; ${pct(a.unmeetableWeight)} % lie beyond what every allowed receiver together reaches`
          : '') +
        (a.added.length > 0 ? `; ${a.added.length} receiver(s) added for accuracy` : ''),
    );
  }
  for (const u of doc.unmeetable) {
    lines.push(
      `  note: ${u.volumeName} needs ${u.kind} fold ${u.required} where at most ${u.achievable} is possible (${u.points} points): planned to ${u.achievable}`,
    );
  }
  if (t.recomputedSites !== undefined) {
    lines.push(
      t.spilledBytes !== undefined
        ? `  memory: the footprints of ${t.recomputedSites} of the ${t.chosenSites} chosen sites were not kept in memory (they would have passed --max-memory); every site's were written to a spill folder in the output folder as they came (${(t.spilledBytes / 2 ** 30).toFixed(2)} GiB), the chosen read back for the layers, and the folder removed`
        : `  memory: the footprints of ${t.recomputedSites} of the ${t.chosenSites} chosen sites were not kept (they would have passed --max-memory) and were computed again for the layers`,
    );
  }
  if (r.solverStop === 'safety time limit') {
    lines.push(
      `  warning: the solver was ${SAFETY_LIMIT_NOTE} (raise --time-limit-s, or lower --solver-nodes)`,
    );
  } else if (r.solverStop === 'work limit') {
    lines.push(
      '  note: the solver stopped at its work limit (--solver-nodes): the same plan on any machine; more nodes may narrow the gap',
    );
  }
  lines.push('');
  lines.push(
    `written to ${outDir}/plan.json and plan-coverage-FL….geojson; demand + candidates ${(t.build / 1000).toFixed(1)} s, solver ${(t.solve / 1000).toFixed(1)} s, total ${(t.total / 1000).toFixed(1)} s`,
  );
  return lines.join('\n');
}
