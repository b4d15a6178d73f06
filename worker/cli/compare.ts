/**
 * `airshade compare`: two named layouts of the scenario side by side — cost, coverage per volume and flight level,
 * fold histograms, and layers of what B gains and loses against A.
 */
import { CAUTION } from '../../shared/caution.ts';
import { formatFl } from '../../shared/units.ts';
import { conventionsText, layerMeta, levelAltitudesM, studyConventions, studyNetwork } from '../io/study.ts';
import type { Candidate } from '../core/coverage.ts';
import { Network } from '../core/network.ts';
import { difference, servedMasks, tally } from '../core/outage.ts';
import { volumeStats } from '../core/volumes.ts';
import { featureCollection, stringifyGeoJson } from '../io/geojson.ts';
import { undated } from '../io/provenance.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { coldDayHelp, parseArgs, required, scenarioArg, threadsArg, weatherHelp } from './args.ts';
import { maskLayer } from '../io/layers.ts';
import { finishRun, RunFolder, runFolderHelp } from './files.ts';
import { scenarioProvenance } from './provenance.ts';
import {
  footprintsFor,
  layoutCandidates,
  openCommandSession,
  type Session,
  SESSION_OPTIONS,
  sessionHelp,
  cacheHelp,
  CACHE_OPTION,
} from './session.ts';

export const COMPARE_HELP = `airshade compare — two layouts side by side

Usage:
  airshade compare SCENARIO.json --a NAME --b NAME --out DIR [--weather] [--cold-day] [--threads N] [--quiet] [--debug]

Compares two named layouts of the scenario: the cost of each (sensor types, plus sites that are not existing),
the coverage per volume and flight level (covered, meeting the required folds, fold histograms), and where B
serves demand that A does not (gained) and the reverse (lost). Writes DIR/compare.json and
DIR/compare-FL050.geojson … with the gained and lost areas per volume.

Options:
${weatherHelp(19)}
${coldDayHelp(19)}
${cacheHelp(19)}
${sessionHelp(19)}

${runFolderHelp()}`;

const SPEC = {
  a: { value: true },
  b: { value: true },
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

/** Cost of a set of sensors: each type's cost, plus each site's cost once unless the site exists already. */
export function layoutCost(
  session: Session,
  sensors: readonly Candidate[],
): { total: number; sites: number; types: number } {
  const sites = new Set(sensors.map((c) => c.site.id));
  let siteCost = 0;
  for (const id of sites) {
    const f = session.loaded.scenario.sites.find((x) => x.properties.id === id)!;
    if (!f.properties.existing) siteCost += f.properties.siteCost;
  }
  const types = sensors.reduce((a, c) => a + c.model.spec.cost, 0);
  return { total: siteCost + types, sites: siteCost, types };
}

export async function compareCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'compare');
  if (p.flags.has('help')) {
    log(COMPARE_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'compare');
  const nameA = required(p, 'a', 'the name of a layout of the scenario');
  const nameB = required(p, 'b', 'the name of a layout of the scenario');
  const outDir = required(p, 'out', 'the output folder');
  const run = RunFolder.open(outDir, 'compare');
  const threads = threadsArg(p, NodePool.defaultSize());
  const { session, progress } = await openCommandSession(p, 'compare', scenarioPath, threads, {
    path: outDir,
    kind: 'folder',
  });
  const s = session.loaded.scenario;
  const a = layoutCandidates(session, nameA, '--a');
  const b = layoutCandidates(session, nameB, '--b');
  // One footprint per distinct sensor of the two layouts.
  const key = (c: Candidate) => `${c.site.id}\u0000${c.model.spec.id}`;
  const union = new Map<string, Candidate>();
  for (const c of [...a, ...b]) union.set(key(c), c);
  const all = [...union.values()];
  const footprints = await footprintsFor(session, all, { weather: p.flags.has('weather'), progress });
  const fls = s.flightLevels;
  const inA = new Set(a.map(key));
  const inB = new Set(b.map(key));
  const netA = studyNetwork(
    session,
    fls,
    footprints,
    all.map((c) => inA.has(key(c))),
  );
  const netB = studyNetwork(
    session,
    fls,
    footprints,
    all.map((c) => inB.has(key(c))),
  );
  const servedA = servedMasks(
    netA,
    s.volumes,
    session.volumeMasks,
    fls,
    session.volumeTargets,
    session.ground,
  );
  const servedB = servedMasks(
    netB,
    s.volumes,
    session.volumeMasks,
    fls,
    session.volumeTargets,
    session.ground,
  );
  const gained = difference(servedB, servedA);
  const lost = difference(servedA, servedB);
  progress.update(0.95, 'layers');
  // The run's date in compare.json only: the layers stay the same bytes for the same inputs.
  const provenance = scenarioProvenance('compare', p, SPEC, session.loaded, studyConventions(session, fls));
  for (const fl of fls) {
    const features = [];
    for (const v of s.volumes) {
      for (const [layer, diff] of [
        ['gained', gained],
        ['lost', lost],
      ] as const) {
        const m = diff.get(`${v.id}|${fl}`);
        if (!m) continue;
        const f = maskLayer(m, session.grid, {
          flightLevel: fl,
          altitudeM: levelAltitudesM(s, [fl])[0],
          fold: 0,
          kind: 'any',
          siteIds: [],
          layer,
          volumeId: v.id,
        });
        if (f) features.push(f);
      }
    }
    run.write(
      `compare-${formatFl(fl)}.geojson`,
      stringifyGeoJson(
        featureCollection(
          features,
          {
            ...layerMeta(studyConventions(session, fls)),
            flightLevel: fl,
            a: nameA,
            b: nameB,
          },
          undated(provenance),
        ),
      ),
    );
  }
  const g = tally(gained, s.volumes, session.grid);
  const l = tally(lost, s.volumes, session.grid);
  const side = (name: string, sensors: Candidate[], net: Network) => ({
    name,
    cost: layoutCost(session, sensors),
    sensors: sensors.map((c) => ({ siteId: c.site.id, typeId: c.model.spec.id })),
    volumes: volumeStats(
      net,
      s.volumes,
      session.volumeMasks,
      fls,
      session.grid,
      session.volumeTargets,
      session.ground,
    ),
  });
  const A = side(nameA, a, netA);
  const B = side(nameB, b, netB);
  const doc = {
    scenario: s.name,
    a: A,
    b: B,
    bGainsOverA: { demandWeight: g.demandWeight, areaKm2: g.unionAreaKm2, byVolume: g.byVolume },
    bLosesAgainstA: { demandWeight: l.demandWeight, areaKm2: l.unionAreaKm2, byVolume: l.byVolume },
    caution: CAUTION,
    provenance,
    conventions: studyConventions(session, fls),
  };
  run.write('compare.json', JSON.stringify(doc, null, 2) + '\n');
  for (const line of finishRun(run, 'compare', outDir)) log(line);
  progress.done();
  const lines = [
    `compare  A = "${nameA}" (${a.length} sensors, cost ${A.cost.total.toFixed(2)})  with  B = "${nameB}" (${b.length} sensors, cost ${B.cost.total.toFixed(2)})`,
    '',
    `  ${'volume'.padEnd(26)} ${'level'.padEnd(6)} ${'A meets'.padStart(8)} ${'B meets'.padStart(8)}`,
  ];
  for (let i = 0; i < A.volumes.length; i++) {
    const x = A.volumes[i];
    const y = B.volumes[i];
    const name = s.volumes.find((v) => v.id === x.volumeId)?.name ?? x.volumeId;
    lines.push(
      `  ${name.slice(0, 26).padEnd(26)} ${formatFl(x.flightLevel).padEnd(6)} ${(x.meetsRequirementPct.toFixed(1) + ' %').padStart(8)} ${(y.meetsRequirementPct.toFixed(1) + ' %').padStart(8)}`,
    );
  }
  lines.push('');
  lines.push(
    `B gains ${g.unionAreaKm2.toFixed(0)} km² (demand weight ${g.demandWeight.toFixed(0)}) and loses ${l.unionAreaKm2.toFixed(0)} km² (${l.demandWeight.toFixed(0)}) against A; written to ${outDir}/compare.json`,
  );
  log(lines.join('\n'));
  log(conventionsText(studyConventions(session, fls)));
  log(CAUTION);
  return 0;
}
