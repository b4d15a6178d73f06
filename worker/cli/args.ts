/**
 * A small argument parser. Options that take a value always take the next token, even when it starts with a
 * minus sign, so `--site -27.0,-40.0` and `--site=-27.0,-40.0` both work (coordinates are often negative).
 */
import { availableParallelism } from 'node:os';
import { InputError } from '../../shared/errors.ts';
import { COLD_DAY } from '../../shared/units.ts';

export interface OptionSpec {
  /** Takes a value (otherwise a flag). */
  value?: boolean;
  /** May be given more than once (values collect in order). */
  repeat?: boolean;
}

export interface Parsed {
  positional: string[];
  values: Map<string, string[]>;
  flags: Set<string>;
}

export function parseArgs(
  argv: readonly string[],
  spec: Record<string, OptionSpec>,
  command: string,
): Parsed {
  const out: Parsed = { positional: [], values: new Map(), flags: new Set() };
  for (let i = 0; i < argv.length; i++) {
    const tok = argv[i];
    if (!tok.startsWith('--') || tok === '--') {
      if (tok.startsWith('-') && tok.length > 1 && !/^-[\d.]/.test(tok)) {
        throw new InputError(
          `argument ${tok}`,
          'an option with one dash',
          `options spelled with two dashes (see airshade ${command} --help)`,
        );
      }
      out.positional.push(tok);
      continue;
    }
    const eq = tok.indexOf('=');
    const name = eq >= 0 ? tok.slice(2, eq) : tok.slice(2);
    const opt = spec[name];
    if (!opt) {
      const known = Object.keys(spec)
        .map((k) => `--${k}`)
        .join(', ');
      throw new InputError(
        `--${name}`,
        `an option that airshade ${command} does not have`,
        `one of ${known}`,
      );
    }
    if (!opt.value) {
      if (eq >= 0) throw new InputError(`--${name}`, `a value (${tok})`, 'no value: it is a switch');
      out.flags.add(name);
      continue;
    }
    let v: string;
    if (eq >= 0) v = tok.slice(eq + 1);
    else {
      if (i + 1 >= argv.length) throw new InputError(`--${name}`, 'nothing after it', 'a value');
      v = argv[++i];
    }
    const list = out.values.get(name) ?? [];
    if (list.length > 0 && !opt.repeat) {
      throw new InputError(`--${name}`, 'the option given twice', 'it once');
    }
    list.push(v);
    out.values.set(name, list);
  }
  return out;
}

export function one(p: Parsed, name: string): string | undefined {
  return p.values.get(name)?.[0];
}

export function required(p: Parsed, name: string, what: string): string {
  const v = one(p, name);
  if (v === undefined) throw new InputError(`--${name}`, 'nothing (the option is missing)', what);
  return v;
}

/**
 * A finite number within [min, max] (above min when `minExclusive`); the message names the option, the text
 * found and the range.
 */
export function numberArg(
  name: string,
  text: string,
  min: number,
  max: number,
  what: string,
  minExclusive = false,
): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v))
    throw new InputError(`--${name}`, JSON.stringify(text), what);
  if (v < min || v > max || (minExclusive && v === min)) throw new InputError(`--${name}`, `${v}`, what);
  return v;
}

/** "LON,LAT" in decimal degrees. */
export function lonLatArg(name: string, text: string): { lon: number; lat: number } {
  const parts = text.split(',');
  const what = 'LON,LAT in decimal degrees, e.g. -29.5,-41.2 (longitude −180…180, latitude −90…90)';
  if (parts.length !== 2) throw new InputError(`--${name}`, `"${text}"`, what);
  const lon = Number(parts[0]);
  const lat = Number(parts[1]);
  if (parts.some((s) => s.trim() === '') || !Number.isFinite(lon) || !Number.isFinite(lat)) {
    throw new InputError(`--${name}`, `"${text}"`, what);
  }
  if (lon < -180 || lon > 180 || lat < -90 || lat > 90) throw new InputError(`--${name}`, `"${text}"`, what);
  return { lon, lat };
}

/** The one positional argument of the scenario commands. */
export function scenarioArg(p: Parsed, command: string): string {
  if (p.positional.length !== 1) {
    throw new InputError(
      'the scenario argument',
      p.positional.length === 0
        ? 'no scenario file'
        : `${p.positional.length} arguments that are not options`,
      `one SCENARIO.json (see airshade ${command} --help)`,
    );
  }
  return p.positional[0];
}

/**
 * --threads N: a whole number from 0 (the main thread) to this machine's cores (more threads than cores only add
 * memory: each worker holds its own heap); `fallback` when absent (one per core, from the caller).
 */
export function threadsArg(p: Parsed, fallback: number, cores = availableParallelism()): number {
  const text = one(p, 'threads');
  if (text === undefined) return Math.min(fallback, cores);
  const what = `a whole number of worker threads from 0 to ${cores} (this machine's cores; 0 = the main thread)`;
  if (!/^\s*\+?\d+\s*$/.test(text)) throw new InputError('--threads', JSON.stringify(text), what);
  const n = Number(text);
  if (n > cores) throw new InputError('--threads', String(n), what);
  return n;
}

/**
 * The help of --weather (the same option in coverage, plan, outage, compare and diagram), as an options-list entry
 * whose description starts at `column`, wrapped to `width` characters. The model is worker/core/sensor.ts's.
 */
export function weatherHelp(column: number, width = 112): string {
  const text =
    "weather mode: each primary's detection range is reduced by its type's two-way weather loss weatherLossDb " +
    '(rain clutter and attenuation, circular polarization in heavy rain): the range is multiplied by ' +
    '10^(−weatherLossDb/40); ' +
    'secondaries are unaffected';
  const lines: string[] = [];
  let line = '  --weather'.padEnd(column);
  for (const word of text.split(' ')) {
    if (line.length > column && line.length + 1 + word.length > width) {
      lines.push(line);
      line = ' '.repeat(column) + word;
    } else line = line.length > column ? `${line} ${word}` : line + word;
  }
  lines.push(line);
  return lines.join('\n');
}

/** Help of `--cold-day`, the same in every command that takes it; `column` as for helpOption. */
export function coldDayHelp(column: number): string {
  return helpOption('--cold-day', column, [
    `the cold, low-pressure worst case: QNH ${COLD_DAY.qnhHpa} hPa, ISA ${COLD_DAY.isaDeviationC} °C, in place of the`,
    "scenario's day (flight levels are pressure altitudes; on such a day they sit lowest)",
  ]);
}

/** With `--cold-day`, the scenario's day becomes the cold, low-pressure worst case (the caller's scenario). */
export function applyColdDay(p: Parsed, scenario: { day?: { qnhHpa: number; isaDeviationC: number } }): void {
  if (p.flags.has('cold-day')) scenario.day = { ...COLD_DAY };
}

/**
 * One option of a command's help: the label, then its text from `column` (the 0-based position where the command's
 * option texts start, as for weatherHelp); a label too long for the column gets its text on the next lines.
 */
export function helpOption(label: string, column: number, lines: readonly string[]): string {
  const pad = ' '.repeat(column);
  const head = `  ${label}`;
  const fits = head.length < column;
  const body = lines.map((l, i) => (i === 0 && fits ? l : pad + l));
  return fits ? head.padEnd(column) + body.join('\n') : [head, ...body].join('\n');
}
