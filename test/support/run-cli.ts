/** Runs the `airshade` command in-process (as a user would, minus the process), capturing what it prints. */
import { vi } from 'vitest';
import { main } from '../../worker/cli/main.ts';

export async function runCli(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((s) => ((out += String(s)), true));
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((s) => ((err += String(s)), true));
  try {
    const code = await main(argv);
    return { code, out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}

/**
 * A command on a scenario into an output folder, on the main thread and quiet (`--threads 0 --quiet`), with any
 * further arguments: the way most tests run one.
 */
export function runQuiet(
  command: string,
  scenarioPath: string,
  outDir: string,
  ...extra: string[]
): Promise<{ code: number; out: string; err: string }> {
  return runCli(command, scenarioPath, '--out', outDir, '--threads', '0', '--quiet', ...extra);
}
