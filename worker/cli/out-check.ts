/**
 * The output path, checked before any long work: it can be written (a probe file is created and removed in the
 * nearest folder that exists), it is of the right kind (a file path is not a folder, a folder path is not a
 * file), and it is none of the inputs (an output never overwrites what the run reads).
 */
import { randomBytes } from 'node:crypto';
import { realpathSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { InputError } from '../../shared/errors.ts';

function realOrResolved(path: string): string {
  try {
    return realpathSync(path);
  } catch {
    return resolve(path);
  }
}

/**
 * Throws an `InputError` naming `where` (default `--out`) when `path` cannot take the output. `inputs`: the files
 * the run reads (a file output equal to one of them is refused; so is a folder output that is an input file).
 */
export function checkOutput(
  path: string,
  kind: 'file' | 'folder',
  inputs: readonly string[] = [],
  where = '--out',
): void {
  const expected = kind === 'file' ? 'a file path that can be written' : 'a folder that can be written';
  if (path.trim() === '') throw new InputError(where, 'an empty path', expected);
  const abs = resolve(path);
  let st;
  try {
    st = statSync(abs);
  } catch {
    st = undefined;
  }
  if (st?.isDirectory() && kind === 'file') throw new InputError(where, `${path}, a folder`, expected);
  if (st && !st.isDirectory() && kind === 'folder') {
    throw new InputError(where, `${path}, an existing file`, `${expected} (not a file)`);
  }
  const real = realOrResolved(abs);
  for (const input of inputs) {
    if (realOrResolved(input) === real) {
      throw new InputError(
        where,
        `${path}, which is also an input of this run (${input})`,
        `${expected}, not an input`,
      );
    }
  }
  // The nearest folder that exists must take a new file (the output, or the folders leading to it).
  let dir = kind === 'folder' && st?.isDirectory() ? abs : dirname(abs);
  for (;;) {
    let d;
    try {
      d = statSync(dir);
    } catch {
      d = undefined;
    }
    if (d) {
      if (!d.isDirectory()) throw new InputError(where, `${path}, under ${dir}, which is a file`, expected);
      break;
    }
    const up = dirname(dir);
    if (up === dir) break;
    dir = up;
  }
  const probe = join(dir, `.airshade-probe-${randomBytes(6).toString('hex')}`);
  try {
    writeFileSync(probe, '');
  } catch (e) {
    throw new InputError(
      where,
      `${path}, where nothing can be written (${(e as NodeJS.ErrnoException).code ?? 'error'} in ${dir})`,
      expected,
    );
  } finally {
    rmSync(probe, { force: true });
  }
}
