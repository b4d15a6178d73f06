/**
 * A plan's spill folder that stops taking files (a full disk, here a write made to fail): the plan goes on, says so
 * once on stderr, sweeps again the chosen sites whose footprints it could not write, and gives the same plan.json
 * and layers as a run with room for every footprint in memory; the folder is removed.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import { runCli } from './support/run-cli.ts';

const writes = vi.hoisted(() => ({ spill: 0 }));

vi.mock('../worker/cli/footprint-cache.ts', async (importOriginal) => {
  const orig = await importOriginal<typeof import('../worker/cli/footprint-cache.ts')>();
  return {
    ...orig,
    // The spill's writes (off the thread, or on it when four are in flight): the third and later fail as a full
    // disk would.
    writeSpilledSite: async (...args: Parameters<typeof orig.writeSpilledSite>) => {
      if (++writes.spill >= 3) throw new Error('ENOSPC: no space left on device (made up)');
      return orig.writeSpilledSite(...args);
    },
    writeCachedSite: (...args: Parameters<typeof orig.writeCachedSite>) => {
      if (args[5] === true && ++writes.spill >= 3)
        throw new Error('ENOSPC: no space left on device (made up)');
      return orig.writeCachedSite(...args);
    },
  };
});

describe('a spill folder that cannot take more', () => {
  const dir = mkdtempSync(join(tmpdir(), 'airshade-disk-spill-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('the plan goes on, sweeps the chosen sites not written again, and gives the plan of a run with room', async () => {
    const args = ['plan', 'data/demo-scenario.json', '--budget', 'none'];
    const full = await runCli(...args, '--out', join(dir, 'full'), '--max-memory', '750M');
    expect(full.code).toBe(0);
    expect(writes.spill).toBeGreaterThanOrEqual(3);
    expect(
      full.err.match(
        /the spill folder .* cannot take more \(.*ENOSPC.*\); the chosen sites not written there will be swept again/g,
      ),
    ).toHaveLength(1);
    expect(full.out).toMatch(
      /were not kept \(they would have passed --max-memory\) and were computed again for the layers/,
    );
    expect(readdirSync(join(dir, 'full')).filter((f) => f.startsWith('.'))).toEqual([]);
    const roomy = await runCli(...args, '--out', join(dir, 'roomy'), '--quiet');
    expect(roomy.code).toBe(0);
    for (const f of readdirSync(join(dir, 'roomy')).filter(
      (x) => x.endsWith('json') && !x.startsWith('airshade-run'),
    )) {
      const read = (d: string) => {
        const { provenance: _p, ...rest } = JSON.parse(readFileSync(join(dir, d, f), 'utf8'));
        return rest;
      };
      expect(read('full'), f).toEqual(read('roomy'));
    }
  }, 180_000);
});
