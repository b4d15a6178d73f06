/**
 * The one error type for bad input. Every message names where the problem is (a file, a field
 * path or a command-line argument), what was found and what was expected, so that a user can
 * fix the input without reading code. The CLI prints `message` alone (no stack) unless --debug.
 */
export class InputError extends Error {
  override readonly name = 'InputError';
  constructor(
    /** File, field path or argument, e.g. `tiles/a.tif`, `scenario.json: sites[3].mastHeightM`, `--site`. */
    readonly where: string,
    /** What was found, in the user's terms. */
    readonly found: string,
    /** What was expected instead. */
    readonly expected: string,
  ) {
    super(`${where}: found ${found}; expected ${expected}`);
  }
}

export function isInputError(e: unknown): e is InputError {
  return e instanceof Error && e.name === 'InputError' && 'where' in e;
}
