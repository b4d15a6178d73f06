/**
 * `airshade coverage`: what the network detects at each flight level, as GeoJSON layers per level and a summary.
 * Builds the footprints of every sensor in the network (a named layout, or every allowed (site, type) pair),
 * the network from them, the statistics per volume and level, and the layers.
 */
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { KFactorSchema, parseWith } from '../../shared/scenario.ts';
import { formatFl } from '../../shared/units.ts';
import {
  conventionsText,
  layerMeta,
  levelAltitudesM,
  grownStudyNetwork,
  modelWarnings,
  studyConventions,
} from '../io/study.ts';
import { volumeStats, type VolumeLevelStats } from '../core/volumes.ts';
import type { Footprint } from '../core/footprint.ts';
import { encodeGeoTiff } from '../io/geotiff-write.ts';
import { undated } from '../io/provenance.ts';
import { NodePool } from '../runtime/node-pool.ts';
import { coldDayHelp, one, parseArgs, required, scenarioArg, threadsArg, weatherHelp } from './args.ts';
import { memoryLimitArg } from './budget-check.ts';
import { finishRun, RunFolder, runFolderHelp } from './files.ts';
import { scenarioProvenance } from './provenance.ts';
import { writeMlatOutputs, type MlatOutputs } from './mlat-outputs.ts';
import type { LoadedScenario } from './scenario.ts';
import {
  cacheHelp,
  CACHE_OPTION,
  footprintsFor,
  KEEP_NONE,
  networkChoice,
  openCommandSession,
  SESSION_OPTIONS,
  sessionHelp,
  levelLayerTexts,
} from './session.ts';

export { analysisGrid, groundOnGrid, terrainBounds } from '../io/study.ts';
export { levelLayers, maskLayer } from '../io/layers.ts';

export const COVERAGE_HELP = `airshade coverage — what the network detects at each flight level

Usage:
  airshade coverage SCENARIO.json [--fl 50,100,245] [--layout NAME] [--weather] [--cold-day] --out DIR
                    [--k-sweep 1.3333,1,0.6667,0.5] [--threads N] [--quiet] [--debug]

Computes, on the scenario's analysis grid, every sensor's footprint (terrain-masked line of sight on the
effective earth, limited by the sensor's detection range per elevation, cone of silence, instrumented and
minimum range), and from them how many distinct sites see each cell at each flight level, per kind.
Writes DIR/coverage-FL050.geojson … (features per fold ≥1, ≥2, … for any radar, primary and secondary, for
the adsb and mlat receivers when the network has them, and the gaps inside each volume), DIR/summary.json
(statistics per volume and flight level) and DIR/network-floor.tif (lowest altitude a radar covers, m AMSL).

Options:
  --fl LIST        flight levels, comma-separated (default: the scenario's flightLevels)
  --layout NAME    the network is this layout of the scenario (default: every allowed site and type)
${weatherHelp(19)}
${coldDayHelp(19)}
  --k-sweep LIST   refraction cases: the network again at each effective-earth factor k in LIST (e.g.
                   1.3333,1,0.6667,0.5 for standard, no and sub-refraction); DIR/k-sweep.json and a table give,
                   per volume and level, the share meeting its requirement at each k and what is lost against the
                   scenario's k. A k outside 0.2–20 is refused (near −157 N/km the ray follows the earth: ducting)
  --out DIR        output folder
  --threads N      worker threads (default: one per core; 0 runs on the main thread)
${cacheHelp(19)}
${sessionHelp(19)}

${runFolderHelp()}`;

const SPEC = {
  fl: { value: true },
  layout: { value: true },
  weather: {},
  'cold-day': {},
  'k-sweep': { value: true },
  out: { value: true },
  threads: { value: true },
  ...CACHE_OPTION,
  ...SESSION_OPTIONS,
  quiet: {},
  debug: {},
  help: {},
} as const;

/**
 * Runs `airshade coverage`; prints the caution last unless `opts.caution` is false (the demo prints it after its
 * own closing lines, so that it is said once, at the end).
 */
export async function coverageCommand(
  argv: readonly string[],
  log: (s: string) => void,
  opts: { caution?: boolean } = {},
): Promise<number> {
  const p = parseArgs(argv, SPEC, 'coverage');
  if (p.flags.has('help')) {
    log(COVERAGE_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'coverage');
  const outDir = required(p, 'out', 'the output folder');
  const run = RunFolder.open(outDir, 'coverage');
  const threads = threadsArg(p, NodePool.defaultSize());
  const started = performance.now();
  const flArg = parseFlightLevels(one(p, 'fl'));
  const { session, progress } = await openCommandSession(
    p,
    'coverage',
    scenarioPath,
    threads,
    { path: outDir, kind: 'folder' },
    flArg && { list: flArg, where: '--fl' },
    undefined,
    // Its network counts each site's footprints and lets them go (below): one site's held at a time.
    'one site',
  );
  const s = session.loaded.scenario;
  const grid = session.grid;
  const fls = flArg ?? s.flightLevels;
  const layoutName = one(p, 'layout');
  const choice = networkChoice(session, layoutName, '--layout');
  const { candidates } = choice;
  const weather = p.flags.has('weather');
  const sweep = parseKSweep(one(p, 'k-sweep'));
  for (const w of modelWarnings(session)) log(`warning: ${w}`);
  const tSetup = performance.now();
  // The network grows site by site while the pool sweeps the next sites (the same network as one built from all
  // the footprints after: test/network.test.ts), and lets each site's footprints go once counted: the run holds
  // one site's at a time, not every sensor's (the national box at 15″: 31.7 GiB of footprints otherwise). The first
  // site keeps its own, for the what-if figure below; the multilateration receivers' are kept for their accuracy.
  const kinds = new Set(candidates.map((c) => c.model.kind));
  const network = grownStudyNetwork(session, fls, kinds);
  const sensors: { siteId: string; typeId: string; kind: Footprint['kind'] }[] = [];
  const kept = await footprintsFor(session, candidates, {
    weather,
    progress,
    onSite: (fps) => {
      network.addSite(fps, { release: sensors.length > 0 });
      for (const fp of fps) sensors.push({ siteId: fp.siteId, typeId: fp.typeId, kind: fp.kind });
    },
    retain: (fp) => fp.kind === 'mlat',
  });
  const tFootprints = performance.now();
  const altitudes = levelAltitudesM(s, fls);
  const tNetwork = performance.now();
  // The what-if figure: switching one site off and on again from the cached footprints, once the folds have been
  // read (the network is built cell-major and turned into one array per level at the first read: a switch after
  // that is what the app's what-ifs cost).
  progress.update(0.9, 'statistics');
  network.readyToRead();
  const someSite = network.siteIds()[0];
  const tw0 = performance.now();
  if (someSite !== undefined) {
    network.setSite(someSite, false);
    network.setSite(someSite, true);
  }
  const toggleMs = (performance.now() - tw0) / 2;
  const conventions = studyConventions(session, fls, altitudes);
  // The run's date in its JSON documents only: the layers and the raster stay the same bytes for the same inputs.
  const provenance = scenarioProvenance('coverage', p, SPEC, session.loaded, conventions);
  run.setProvenance(provenance);
  const masks = session.volumeMasks;
  const stats = volumeStats(network, s.volumes, masks, fls, grid, session.volumeTargets, session.ground);
  progress.update(0.92, 'layers');
  const texts = await levelLayerTexts(session, network, fls, layerMeta(conventions), undated(provenance), {
    memory: { limit: memoryLimitArg(p) },
  });
  texts.forEach((text, f) => run.write(`coverage-${formatFl(fls[f])}.geojson`, text));
  const floor = network.networkFloor();
  run.write(
    'network-floor.tif',
    encodeGeoTiff({
      geo: grid,
      data: floor,
      nodata: NaN,
      description: CAUTION,
      provenance: undated(provenance),
    }),
  );
  // Multilateration accuracy per level, when the network has mlat receivers (issue 14).
  const byPair = new Map(candidates.map((c) => [pairKey(c.site.id, c.model.spec.id), c]));
  const mlat = writeMlatOutputs(
    session,
    kept.map((fp) => byPair.get(pairKey(fp.siteId, fp.typeId))!),
    kept,
    fls,
    altitudes,
    (n, d) => run.write(n, d),
    {
      provenance: undated(provenance),
      meta: layerMeta(conventions),
    },
  );
  const tLayers = performance.now();
  const summary = {
    scenario: s.name,
    file: session.loaded.file,
    caution: CAUTION,
    provenance,
    earth: { kFactor: s.earth.kFactor, effectiveRadiusKm: (s.earth.kFactor * 6371).toFixed(1) },
    grid: {
      cellArcSec: s.grid.cellArcSec,
      width: grid.width,
      height: grid.height,
      west: grid.originX,
      north: grid.originY,
    },
    flightLevels: fls,
    conventions,
    weatherMode: weather,
    network: {
      label: choice.label,
      sensors,
    },
    volumes: stats,
    ...(mlat
      ? {
          mlatAccuracy: {
            quantity: '1-sigma horizontal DRMS of the multilateration fix, metres',
            altitudeKnown: mlat.altitudeKnown,
            minReceivers: mlat.minReceivers,
            receiverSites: mlat.receiverSites,
            files: mlat.files,
            volumes: mlat.volumes,
          },
        }
      : {}),
    timingsMs: {
      setup: Math.round(tSetup - started),
      footprints: Math.round(tFootprints - tSetup),
      network: Math.round(tNetwork - tFootprints),
      siteToggle: Math.round(toggleMs * 10) / 10,
      layers: Math.round(tLayers - tNetwork),
      total: Math.round(performance.now() - started),
    },
  };
  run.write('summary.json', JSON.stringify(summary, null, 2) + '\n');
  progress.done();
  if (sweep) {
    const cases = [];
    for (const k of sweep) {
      progress.update(0.95, `refraction k = ${k}`);
      const atK = { ...session, loaded: { ...session.loaded, scenario: { ...s, earth: { kFactor: k } } } };
      const net = grownStudyNetwork(atK, fls, kinds);
      await footprintsFor(atK, candidates, {
        weather,
        onSite: (fps) => net.addSite(fps, { release: true }),
        retain: KEEP_NONE,
      });
      cases.push({
        kFactor: k,
        volumes: volumeStats(net, s.volumes, masks, fls, grid, session.volumeTargets, session.ground),
      });
    }
    const table = kSweepTable(s.earth.kFactor, stats, cases, s.volumes);
    run.write(
      'k-sweep.json',
      JSON.stringify(
        {
          scenario: s.name,
          caution: CAUTION,
          provenance,
          conventions,
          network: choice.label,
          referenceKFactor: s.earth.kFactor,
          note: 'per volume and level: the share (%) meeting the requirement at each k, and the loss against the scenario k',
          rows: table.rows,
        },
        null,
        2,
      ) + '\n',
    );
    log(table.text);
  }
  for (const line of finishRun(run, 'coverage', outDir)) log(line);
  log(summaryText(s.name, choice.label, stats, fls, outDir, summary.timingsMs, s.volumes));
  if (mlat) log(mlatText(mlat, s.volumes, outDir));
  log(conventionsText(summary.conventions));
  if (opts.caution !== false) log(CAUTION);
  return 0;
}

function parseFlightLevels(text: string | undefined): number[] | undefined {
  if (text === undefined) return undefined;
  const parts = text.split(',').map((x) => x.trim());
  const out = parts.map((x) => Number(x));
  if (parts.some((x) => !/^\d+$/.test(x)) || out.some((v) => v > 600)) {
    throw new InputError(
      '--fl',
      JSON.stringify(text),
      'flight levels as whole numbers from 0 to 600, comma-separated, e.g. 50,100,245',
    );
  }
  return [...new Set(out)].sort((a, b) => a - b);
}

type Vol = LoadedScenario['scenario']['volumes'][number];

function summaryText(
  name: string,
  network: string,
  stats: VolumeLevelStats[],
  fls: readonly number[],
  outDir: string,
  t: Record<string, number>,
  volumes: readonly Vol[],
): string {
  const lines = [`coverage of "${name}" — network: ${network}`, ''];
  lines.push(
    `  ${'volume'.padEnd(28)} ${'level'.padEnd(6)} ${'area km²'.padStart(9)} ${'covered'.padStart(8)} ${'meets req.'.padStart(10)}`,
  );
  for (const v of volumes) {
    for (const st of stats.filter((x) => x.volumeId === v.id)) {
      lines.push(
        `  ${v.name.slice(0, 28).padEnd(28)} ${formatFl(st.flightLevel).padEnd(6)} ${st.areaKm2.toFixed(0).padStart(9)} ${(st.coveredPct.toFixed(1) + ' %').padStart(8)} ${(st.meetsRequirementPct.toFixed(1) + ' %').padStart(10)}`,
      );
    }
  }
  lines.push('');
  lines.push(
    `layers: ${outDir}/coverage-${formatFl(fls[0])}.geojson … (${fls.length} levels), ${outDir}/summary.json, ${outDir}/network-floor.tif`,
  );
  lines.push(
    `time: ${(t.total / 1000).toFixed(1)} s (footprints ${(t.footprints / 1000).toFixed(1)} s); one site switched off and on: ${t.siteToggle} ms; peak memory ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB`,
  );
  return lines.join('\n');
}

/** The multilateration accuracy per volume that asks for one, and where the maps are. */
function mlatText(m: MlatOutputs, volumes: readonly Vol[], outDir: string): string {
  const lines = [
    '',
    `multilateration: ${m.receiverSites.length} receivers; a fix needs ${m.minReceivers} (${m.altitudeKnown ? 'the altitude reported' : 'the altitude not used'}); 1σ horizontal DRMS in ${outDir}/mlat-accuracy-FL….tif and .geojson`,
  ];
  if (m.volumes.length > 0) {
    lines.push(
      `  ${'volume'.padEnd(28)} ${'level'.padEnd(6)} ${'bound m'.padStart(8)} ${'a fix'.padStart(8)} ${'median m'.padStart(9)} ${'meets'.padStart(8)}`,
    );
    for (const a of m.volumes) {
      const name = volumes.find((v) => v.id === a.volumeId)?.name ?? a.volumeId;
      lines.push(
        `  ${name.slice(0, 28).padEnd(28)} ${formatFl(a.flightLevel).padEnd(6)} ${a.requiredM.toFixed(0).padStart(8)} ${(a.fixPct.toFixed(1) + ' %').padStart(8)} ${(a.medianM === null ? '—' : a.medianM.toFixed(0)).padStart(9)} ${(a.metPct.toFixed(1) + ' %').padStart(8)}`,
      );
    }
  }
  return lines.join('\n');
}

/** `--k-sweep 1.3333,1,0.6667`: each k checked as the scenario's kFactor is (the ducting refusal included). */
function parseKSweep(text: string | undefined): number[] | undefined {
  if (text === undefined) return undefined;
  const parts = text.split(',').map((x) => x.trim());
  const values = parts.map(Number);
  if (parts.length === 0 || parts.some((x) => x === '') || values.some((v) => !Number.isFinite(v))) {
    throw new InputError(
      '--k-sweep',
      JSON.stringify(text),
      'effective-earth factors k, comma-separated, e.g. 1.3333,1,0.6667,0.5',
    );
  }
  return values.map((k) => parseWith(KFactorSchema, k, () => '--k-sweep'));
}

interface KSweepRow {
  volumeId: string;
  flightLevel: number;
  meetsPct: Record<string, number>;
  /** Percentage points lost at each k against the scenario's k (positive = lost). */
  lostPts: Record<string, number>;
}

function kSweepTable(
  k0: number,
  base: readonly VolumeLevelStats[],
  cases: { kFactor: number; volumes: VolumeLevelStats[] }[],
  volumes: readonly Vol[],
): { rows: KSweepRow[]; text: string } {
  const label = (k: number) => `k=${+k.toFixed(4)}`;
  const rows: KSweepRow[] = base.map((b) => {
    const meetsPct: Record<string, number> = { [label(k0)]: round1(b.meetsRequirementPct) };
    const lostPts: Record<string, number> = {};
    for (const c of cases) {
      const st = c.volumes.find((x) => x.volumeId === b.volumeId && x.flightLevel === b.flightLevel)!;
      meetsPct[label(c.kFactor)] = round1(st.meetsRequirementPct);
      lostPts[label(c.kFactor)] = round1(b.meetsRequirementPct - st.meetsRequirementPct);
    }
    return { volumeId: b.volumeId, flightLevel: b.flightLevel, meetsPct, lostPts };
  });
  const ks = [k0, ...cases.map((c) => c.kFactor)];
  const lines = [
    'refraction cases: share of each volume meeting its requirement (%), and what is lost against k = ' +
      `${+k0.toFixed(4)} (points)`,
    `  ${'volume'.padEnd(28)} ${'level'.padEnd(6)} ${ks.map((k) => label(k).padStart(10)).join(' ')}   lost at the lowest k`,
  ];
  const lowest = label(Math.min(...cases.map((c) => c.kFactor)));
  for (const r of rows) {
    const name = volumes.find((v) => v.id === r.volumeId)?.name ?? r.volumeId;
    lines.push(
      `  ${name.slice(0, 28).padEnd(28)} ${formatFl(r.flightLevel).padEnd(6)} ${ks
        .map((k) => `${r.meetsPct[label(k)].toFixed(1)}`.padStart(10))
        .join(' ')}   ${(r.lostPts[lowest] ?? 0).toFixed(1).padStart(6)}`,
    );
  }
  return { rows, text: lines.join('\n') + '\n' };
}

const round1 = (x: number) => Math.round(x * 10) / 10;

/** A (site, type) pair's key. */
function pairKey(siteId: string, typeId: string): string {
  return `${siteId}\u0000${typeId}`;
}
