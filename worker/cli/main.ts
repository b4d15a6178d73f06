/**
 * The `airshade` command. Thin adapter over the compute core: argument parsing, files, progress, worker pool.
 * Bad input ends with one message (file/field/argument, found, expected) and a non-zero exit status; a stack
 * trace only with --debug.
 */
import { isInputError } from '../../shared/errors.ts';
const HELP = `airshade — radar network coverage planner (planning aid; see the cautions in README.md)

Usage: airshade <command> [options]     airshade <command> --help

Commands:
  demo          coverage of the invented demo network, with a summary per airspace volume and flight level
  demo-data     generate the demo terrain tiles (data/demo/terrain) if they are missing
  init          a new study from your own DEM tiles and sites (and optionally volumes and sensor types)
  floor         lowest line-of-sight altitude above every cell of a DEM, as a GeoTIFF
  coverage      what a network of sensors detects at each flight level: GeoJSON layers and statistics
  diagram       vertical coverage diagram (range–height) of one sensor on one site along one azimuth, as SVG
  plan          the cheapest sites and sensor types meeting every volume's required folds, with its gap
  outage        what is lost, per volume and flight level, when each site of a plan or layout goes down
  compare       two layouts side by side: cost, coverage per volume and level, gained and lost areas
  report        one self-contained HTML report of a network for a safety case: maps, tables, provenance
  footprints    the footprints of a range of sites into a cache folder, to run a study in shards (docs/BATCH.md)
`;

type Command = (argv: readonly string[], log: (s: string) => void) => Promise<number>;
/**
 * Each command's module is loaded when the command runs: a command pays only for its own libraries at start-up
 * (`airshade floor` needs no planner, no schema of the scenario file, no contouring).
 */
const COMMANDS: Record<string, () => Promise<Command>> = {
  init: async () => (await import('./init.ts')).initCommand,
  floor: async () => (await import('./floor.ts')).floorCommand,
  coverage: async () => (await import('./coverage.ts')).coverageCommand,
  diagram: async () => (await import('./diagram.ts')).diagramCommand,
  plan: async () => (await import('./plan.ts')).planCommand,
  outage: async () => (await import('./outage.ts')).outageCommand,
  compare: async () => (await import('./compare.ts')).compareCommand,
  report: async () => (await import('./report.ts')).reportCommand,
  footprints: async () => (await import('./footprints.ts')).footprintsCommand,
  demo: async () => (await import('./demo.ts')).demoCommand,
  'demo-data': async () => (await import('./demo.ts')).demoDataCommand,
};

export async function main(argv: readonly string[]): Promise<number> {
  const log = (s: string) => process.stdout.write(s.endsWith('\n') ? s : s + '\n');
  const debug = argv.includes('--debug');
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    log(HELP);
    return name === undefined ? 1 : 0;
  }
  const load = COMMANDS[name];
  if (!load) {
    process.stderr.write(
      `airshade: found the command "${name}"; expected one of ${Object.keys(COMMANDS).join(', ')} (airshade --help)\n`,
    );
    return 2;
  }
  // The floor's workers start while its modules load (floor-early.ts); closed at the end if it never took them.
  const early = name === 'floor' ? await import('./floor-early.ts') : null;
  early?.bootFloorWorkersEarly(rest);
  try {
    return await (
      await load()
    )(rest, log);
  } catch (e) {
    if (process.stderr.isTTY) process.stderr.write('\r\x1b[K');
    if (isInputError(e)) {
      // One prefix per message, even when the message already starts with the command's name.
      const prefix = `airshade ${name}: `;
      const text = e.message.startsWith(prefix) ? e.message.slice(prefix.length) : e.message;
      process.stderr.write(`${prefix}${text}\n`);
      if (debug) process.stderr.write(`${e.stack}\n`);
      return 2;
    }
    const err = e as Error;
    process.stderr.write(`airshade ${name}: internal error: ${err?.message ?? String(e)}\n`);
    process.stderr.write(
      debug ? `${err?.stack}\n` : '(run again with --debug for the stack trace, and please report it)\n',
    );
    return 70;
  } finally {
    await early?.closeEarlyWorkers();
  }
}
