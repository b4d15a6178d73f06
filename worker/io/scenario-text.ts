/**
 * Scenario text without file access, shared by the CLI and the web app: JSON with line/column on syntax errors,
 * sites from CSV, the assembly of a scenario from its own JSON and the files it references (read by the caller),
 * validated through `parseScenario` with messages that name the file each value came from, and the check of
 * sites and volumes against the terrain's extent.
 *
 * Sites CSV: a header row, then one row per site. Columns (names matched without regard to case, any order,
 * other columns ignored): lon, lat, id, name, mastHeightM, siteCost, and optionally existing (true/false,
 * yes/no, 1/0; empty = false), allowedTypes (sensor type ids separated by `;`; empty = every type) and tiltDeg
 * (antenna tilt in degrees; empty = 0).
 * Parsed with csv-parse (RFC 4180 quoting). A row number in a message is the row's line in the file, the
 * header being row 1.
 */
import { nearLon } from '../core/terrain.ts';
import { parse as parseCsv, type CsvError } from 'csv-parse/sync';
import { parse as scanJson, printParseErrorCode, type ParseError } from 'jsonc-parser';
import { InputError } from '../../shared/errors.ts';
import {
  fileLocator,
  parseScenario,
  parseWith,
  ScenarioError,
  SiteCollectionSchema,
  showValue,
  type Bounds,
  type FieldPath,
  type Locator,
  type Scenario,
} from '../../shared/scenario.ts';

function lineColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1 };
}

const JSON_EXPECTED: Record<string, string> = {
  ValueExpected: 'a value (number, text in double quotes, true, false, null, object or list)',
  CommaExpected: 'a comma between entries',
  ColonExpected: 'a colon after the field name',
  PropertyNameExpected: 'a field name in double quotes',
  CloseBraceExpected: 'a closing }',
  CloseBracketExpected: 'a closing ]',
  EndOfFileExpected: 'the end of the file after the JSON value',
  InvalidCommentToken: 'no comments (JSON has none)',
  UnexpectedEndOfComment: 'no comments (JSON has none)',
  UnexpectedEndOfString: 'a closing double quote',
  UnexpectedEndOfNumber: 'a complete number',
  InvalidUnicode: 'a valid \\u escape',
  InvalidEscapeCharacter: 'a valid escape (\\", \\\\, \\/, \\b, \\f, \\n, \\r, \\t, \\u)',
  InvalidCharacter: 'no control characters inside text',
  InvalidSymbol: 'valid JSON',
  InvalidNumberFormat: 'a number in JSON form',
};

/**
 * Limits of a JSON input, checked before it is parsed: its size (a scenario, a sites file or a sensor catalog is
 * kilobytes to a few megabytes; detailed volume polygons stay well under this) and its nesting (the deepest
 * legitimate place, a MultiPolygon's coordinates inside a volume inside the scenario, is 7 levels deep). Deeper
 * nesting would exhaust the stack of the validators that walk it.
 */
export const JSON_LIMITS = Object.freeze({ maxChars: 256 * 1024 * 1024, maxDepth: 64 });

/** The first place where `text`'s nesting passes `maxDepth` (its offset), or -1. Strings are skipped. */
export function tooDeepAt(text: string, maxDepth: number): number {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92)
        i++; // backslash: skip the escaped character
      else if (c === 34) inString = false;
    } else if (c === 34) inString = true;
    else if (c === 91 || c === 123) {
      if (++depth > maxDepth) return i;
    } else if (c === 93 || c === 125) depth--;
  }
  return -1;
}

/** What a character is, in words (a message never echoes the file's own text). */
function charKind(ch: string): string {
  if (ch === '') return 'the end of the file';
  if (/[A-Za-z]/.test(ch)) return 'a letter';
  if (/[0-9]/.test(ch)) return 'a digit';
  if (ch === '"' || ch === "'") return 'a quote';
  if (/[{}[\],:]/.test(ch)) return `"${ch}"`; // JSON punctuation: part of the syntax, not of the content
  if (/\s/.test(ch)) return 'white space';
  if (ch.charCodeAt(0) < 32) return 'a control character';
  if (ch.charCodeAt(0) > 126) return 'a non-ASCII character';
  return 'a punctuation mark';
}

/**
 * JSON.parse, and on a syntax error a message with the line and column. Node's own message does not always
 * say where the error is, so the position comes from a JSON scanner (jsonc-parser, with comments and
 * trailing commas disallowed as in strict JSON). The file's text is never echoed: what stands at the error is
 * described (a letter, a digit, a quote …), so a file named by mistake does not leak into a log.
 */
export function parseJsonText(text: string, display: string, what: string): unknown {
  if (text.length > JSON_LIMITS.maxChars) {
    throw new InputError(
      display,
      `${(text.length / 1048576).toFixed(0)} MiB of text`,
      `${what} of at most ${JSON_LIMITS.maxChars / 1048576} MiB`,
    );
  }
  const deep = tooDeepAt(text, JSON_LIMITS.maxDepth);
  if (deep >= 0) {
    const { line, column } = lineColumn(text, deep);
    throw new InputError(
      `${display}: line ${line}, column ${column}`,
      `lists or objects nested more than ${JSON_LIMITS.maxDepth} levels deep`,
      `${what}, nested at most ${JSON_LIMITS.maxDepth} levels`,
    );
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    if (text.trim() === '') throw new InputError(display, 'an empty file', what);
    const errors: ParseError[] = [];
    scanJson(text, errors, { disallowComments: true, allowTrailingComma: false, allowEmptyContent: false });
    if (errors.length === 0) {
      // Node's message may quote the text: only its kind is kept.
      throw new InputError(display, `invalid JSON (${(e as Error).name})`, what);
    }
    const first = errors[0];
    const { line, column } = lineColumn(text, first.offset);
    const found = first.offset >= text.length ? 'the end of the file' : charKind(text.charAt(first.offset));
    const code = printParseErrorCode(first.error);
    throw new InputError(
      `${display}: line ${line}, column ${column}`,
      `${found}, which is not valid JSON`,
      `${JSON_EXPECTED[code] ?? 'valid JSON'} (in ${what})`,
    );
  }
}

const CSV_COLUMNS = [
  'lon',
  'lat',
  'id',
  'name',
  'mastHeightM',
  'siteCost',
  'existing',
  'allowedTypes',
  'tiltDeg',
] as const;
type CsvColumn = (typeof CSV_COLUMNS)[number];
const CSV_REQUIRED = CSV_COLUMNS.slice(0, 6);
const NUMBER_TEXT = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/**
 * What each column's cells must hold, in the words of the messages (the ranges as shared/scenario.ts words them,
 * which checks them after this reader has checked the form of each cell).
 */
const CSV_CELL: Record<
  Exclude<CsvColumn, 'allowedTypes'>,
  { kind: 'number' | 'text' | 'boolean'; text: string }
> = {
  lon: { kind: 'number', text: 'a longitude from -180 to 180 (degrees east), in decimal degrees' },
  lat: { kind: 'number', text: 'a latitude from -90 to 90 (degrees north), in decimal degrees' },
  id: { kind: 'text', text: 'a site id of letters, digits, ".", "_" or "-"' },
  name: { kind: 'text', text: 'the site’s name' },
  mastHeightM: { kind: 'number', text: 'a number ≥ 0 (m, antenna height above ground)' },
  siteCost: { kind: 'number', text: 'a number ≥ 0 (M units)' },
  existing: { kind: 'boolean', text: 'true/false, yes/no, 1/0, or an empty cell (= false)' },
  tiltDeg: { kind: 'number', text: 'an antenna tilt from −10 to 20 degrees, or an empty cell (= 0)' },
};
const CSV_OPTIONAL = new Set<CsvColumn>(['existing', 'allowedTypes', 'tiltDeg']);

function csvNumber(cell: string | undefined): number | string | undefined {
  if (cell === undefined || cell === '') return undefined;
  return NUMBER_TEXT.test(cell) ? Number(cell) : cell;
}

function csvBoolean(cell: string | undefined): boolean | string | undefined {
  if (cell === undefined || cell === '') return undefined;
  const c = cell.toLowerCase();
  if (c === 'true' || c === 'yes' || c === '1') return true;
  if (c === 'false' || c === 'no' || c === '0') return false;
  return cell;
}

interface CsvSites {
  /** A GeoJSON FeatureCollection built from the rows (cells kept as text where they are not numbers). */
  collection: unknown;
  /** Line in the file of each feature's row. */
  rows: number[];
  /** Each known column as the file's header spells it (e.g. `Lat` for `lat`), for messages. */
  columns: Record<string, string>;
}

/** `sites.csv: row 7, column "lat"`: where a cell stands, as a spreadsheet shows it (the header is row 1). */
export function csvCellWhere(display: string, row: number | string, column?: string): string {
  return column === undefined ? `${display}: row ${row}` : `${display}: row ${row}, column "${column}"`;
}

/**
 * Sites from CSV text into a (not yet validated) FeatureCollection. The table's shape (a header with the required
 * columns, each once; one cell per column in every row) and the form of every cell (numbers where numbers belong,
 * no empty required cell) are checked here, each problem naming the row and the column; the values' ranges and the
 * ids are checked by the scenario's schema afterwards (through `csvLocator`, with the same row and column).
 */
export function readSitesCsv(text: string, display: string): CsvSites {
  let records: { record: Record<string, string>; info: { lines: number } }[];
  let header: string[] = [];
  try {
    records = parseCsv(text, {
      columns: (h: string[]) => {
        header = h.map((c) => c.trim());
        return header.map((c) => CSV_COLUMNS.find((k) => k.toLowerCase() === c.toLowerCase()) ?? c);
      },
      skip_empty_lines: true,
      trim: true,
      info: true,
    }) as unknown as typeof records;
  } catch (e) {
    const err = e as CsvError & { lines?: number; record?: unknown };
    const sitesHeader = header.some((h) => CSV_COLUMNS.some((k) => k.toLowerCase() === h.toLowerCase()));
    if (
      err.code === 'CSV_RECORD_INCONSISTENT_COLUMNS' &&
      Array.isArray(err.record) &&
      err.lines &&
      sitesHeader
    ) {
      const n = err.record.length;
      throw new InputError(
        csvCellWhere(display, err.lines),
        `${n} cell${n === 1 ? '' : 's'}`,
        `${header.length} cells, one per column of the header row (${header.join(', ')}); ` +
          'a value that holds a comma goes in double quotes ("North Hill, upper")',
      );
    }
    // csv-parse's own message quotes the text: only its code is kept.
    throw new InputError(
      err.lines ? csvCellWhere(display, err.lines) : display,
      `text that is not a well-formed CSV table (${err.code ?? 'unreadable'})`,
      `a header row (${CSV_COLUMNS.join(', ')}) and one row per site, each with one value per column`,
    );
  }
  const present = new Set(header.map((c) => c.toLowerCase()));
  const missing = CSV_REQUIRED.filter((c) => !present.has(c.toLowerCase()));
  // The header is shown only when it is recognisably a sites table's (a file named by mistake is not echoed).
  const known = header.filter((h) => CSV_COLUMNS.some((k) => k.toLowerCase() === h.toLowerCase()));
  if (missing.length > 0) {
    throw new InputError(
      csvCellWhere(display, 1),
      header.length === 0
        ? 'no header row'
        : known.length > 0
          ? `the columns ${header.join(', ')}`
          : `a first row of ${header.length} cell${header.length === 1 ? '' : 's'}, none of them a known column`,
      `a header row with the columns ${CSV_REQUIRED.join(', ')} (optional: existing, allowedTypes, tiltDeg); missing ${missing.join(', ')}`,
    );
  }
  const columns: Record<string, string> = {};
  const firstAt = new Map<CsvColumn, number>();
  header.forEach((h, i) => {
    const k = CSV_COLUMNS.find((c) => c.toLowerCase() === h.toLowerCase());
    if (k === undefined) return;
    const at = firstAt.get(k);
    if (at !== undefined) {
      throw new InputError(
        csvCellWhere(display, 1, h),
        `the column ${k} a second time (columns ${at + 1} and ${i + 1})`,
        'each column once: the header names every column of the table once',
      );
    }
    firstAt.set(k, i);
    columns[k] = h;
  });

  const problems: InputError[] = [];
  for (const { record: r, info } of records) {
    for (const [k, cell] of Object.entries(CSV_CELL) as [keyof typeof CSV_CELL, (typeof CSV_CELL)['lon']][]) {
      const v = r[k];
      if (v === undefined) continue; // an optional column that the table does not have
      const where = csvCellWhere(display, info.lines, columns[k]);
      if (v === '') {
        if (!CSV_OPTIONAL.has(k)) problems.push(new InputError(where, 'an empty cell', cell.text));
      } else if (
        (cell.kind === 'number' && typeof csvNumber(v) !== 'number') ||
        (cell.kind === 'boolean' && typeof csvBoolean(v) !== 'boolean')
      ) {
        problems.push(new InputError(where, showValue(v), cell.text));
      }
    }
  }
  const rows: number[] = [];
  const features = records.map(({ record: r, info }) => {
    rows.push(info.lines);
    const allowed = r.allowedTypes
      ?.split(';')
      .map((t) => t.trim())
      .filter((t) => t !== '');
    return {
      type: 'Feature',
      geometry: { type: 'Point', coordinates: [csvNumber(r.lon), csvNumber(r.lat)] },
      properties: {
        id: r.id === '' ? undefined : r.id,
        name: r.name === '' ? undefined : r.name,
        mastHeightM: csvNumber(r.mastHeightM),
        siteCost: csvNumber(r.siteCost),
        existing: csvBoolean(r.existing),
        allowedTypes: allowed && allowed.length > 0 ? allowed : undefined,
        tiltDeg: r.tiltDeg === undefined || r.tiltDeg.trim() === '' ? undefined : csvNumber(r.tiltDeg),
      },
    };
  });
  const collection = { type: 'FeatureCollection', features };
  if (problems.length > 0) throw allProblems(problems, collection, display, rows, columns);
  return { collection, rows, columns };
}

/**
 * One list of every problem of the file: the cells of the wrong form (`cellProblems`), then what the schema finds
 * in the other cells (ranges, ids) and repeated site ids, so that a planner fixes the file in one pass.
 */
function allProblems(
  cellProblems: InputError[],
  collection: unknown,
  display: string,
  rows: readonly number[],
  columns: Readonly<Record<string, string>>,
): ScenarioError {
  const locate = csvLocator(display, rows, columns);
  const out = [...cellProblems];
  const seen = new Set(cellProblems.map((p) => p.where));
  try {
    parseWith(SiteCollectionSchema, collection, locate);
  } catch (e) {
    const more = e instanceof ScenarioError ? e.problems : [];
    // A cell already named for its form is not named again for its value.
    for (const p of more) if (!seen.has(p.where)) out.push(p);
  }
  const features = (collection as { features: { properties: { id?: unknown } }[] }).features;
  const first = new Map<unknown, number>();
  features.forEach((f, i) => {
    const id = f.properties.id;
    if (typeof id !== 'string') return;
    const at = first.get(id);
    if (at === undefined) first.set(id, i);
    else
      out.push(
        new InputError(
          locate(['features', i, 'properties', 'id']),
          `${showValue(id)} again`,
          `a unique site id (first used at ${locate(['features', at, 'properties', 'id'])})`,
        ),
      );
  });
  const rowOf = (p: InputError) => Number(/: row (\d+)/.exec(p.where)?.[1] ?? 0);
  return new ScenarioError(
    out
      .map((p, i) => ({ p, i }))
      .sort((a, b) => rowOf(a.p) - rowOf(b.p) || a.i - b.i)
      .map((x) => x.p),
  );
}

/**
 * `['features', i, 'properties', 'mastHeightM']` → `sites.csv: row 7, column "mastHeightM"` (the row's line in the
 * file, the column as the file's header spells it when `columns` is given).
 */
export function csvLocator(
  display: string,
  rows: readonly number[],
  columns: Readonly<Record<string, string>> = {},
): Locator {
  const col = (k: string) => columns[k] ?? k;
  return (path) => {
    // path is inside the FeatureCollection: ['features', i, ...rest]
    if (path[0] !== 'features' || typeof path[1] !== 'number') return fileLocator(display)(path);
    const row = rows[path[1]] ?? '?';
    const rest = path.slice(2);
    if (rest[0] === 'properties' && rest.length > 1) return csvCellWhere(display, row, col(String(rest[1])));
    if (rest[0] === 'geometry') {
      if (rest[2] === 0) return csvCellWhere(display, row, col('lon'));
      if (rest[2] === 1) return csvCellWhere(display, row, col('lat'));
      return `${csvCellWhere(display, row)}, columns "${col('lon')}", "${col('lat')}"`;
    }
    return csvCellWhere(display, row);
  };
}

// ---------------------------------------------------------------------------------------------------
// The scenario

export function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** A file the scenario names (sensorTypes or sites), read by the caller: as shown in messages, and its text. */
export interface ReferencedText {
  display: string;
  text: string;
}

/** Reads the file a scenario field names; throws an InputError naming the field when it cannot. */
export type ReferenceReader = (field: 'sensorTypes' | 'sites', ref: string, what: string) => ReferencedText;

export const SENSOR_TYPES_WHAT =
  'the path of a JSON file holding a list of sensor types, relative to the scenario file';
export const SITES_WHAT =
  'the path of a sites file (GeoJSON FeatureCollection, or CSV), relative to the scenario file';

export interface AssembledScenario {
  scenario: Scenario;
  /** The files the sensor types and sites came from, as shown in messages (null when inline). */
  sources: { sensorTypes: string | null; sites: string | null };
  locate: Locator;
}

/**
 * A scenario from its parsed JSON: referenced sensor-type and site files read through `read`, then validated.
 * Throws `InputError` (a `ScenarioError` listing several problems when there are several).
 */
export function assembleScenario(json: unknown, display: string, read: ReferenceReader): AssembledScenario {
  const sources: AssembledScenario['sources'] = { sensorTypes: null, sites: null };
  const locators: { sensorTypes?: Locator; sites?: Locator } = {};
  let input: unknown = json;
  if (isRecord(json)) {
    const merged: Record<string, unknown> = { ...json };
    if (typeof json.sensorTypes === 'string') {
      const f = read('sensorTypes', json.sensorTypes, SENSOR_TYPES_WHAT);
      merged.sensorTypes = parseJsonText(f.text, f.display, 'a JSON list of sensor types');
      sources.sensorTypes = f.display;
      locators.sensorTypes = fileLocator(f.display);
    }
    if (typeof json.sites === 'string') {
      const f = read('sites', json.sites, SITES_WHAT);
      sources.sites = f.display;
      if (/\.csv$/i.test(json.sites)) {
        const csv = readSitesCsv(f.text, f.display);
        merged.sites = csv.collection;
        locators.sites = csvLocator(f.display, csv.rows, csv.columns);
      } else {
        merged.sites = parseJsonText(f.text, f.display, 'a GeoJSON FeatureCollection of sites');
        locators.sites = fileLocator(f.display);
      }
    }
    input = merged;
  }
  const own = fileLocator(display);
  const locate: Locator = (p: FieldPath) => {
    if (p[0] === 'sensorTypes' && locators.sensorTypes) return locators.sensorTypes(p.slice(1));
    if (p[0] === 'sites' && locators.sites) return locators.sites(p.slice(1));
    return own(p);
  };
  return { scenario: parseScenario(input, display, locate), sources, locate };
}

// ---------------------------------------------------------------------------------------------------
// Against the terrain

const fmt = (v: number) => String(+v.toFixed(5));

/**
 * Every site and every volume vertex must lie inside the terrain's extent (degrees, as read from the DEM
 * tiles). Throws one problem per site or volume outside, naming its id. `locate` (from `loadScenario`)
 * names a site's row or feature in its own file; by default the field path in `file`.
 */
export function checkAgainstTerrain(
  s: Scenario,
  bounds: Bounds,
  file: string,
  locate: Locator = fileLocator(file),
): void {
  const inside = (lon: number, lat: number) =>
    lon >= bounds.west && lon <= bounds.east && lat >= bounds.south && lat <= bounds.north;
  const extent = `${fmt(bounds.west)}…${fmt(bounds.east)}° E, ${fmt(bounds.south)}…${fmt(bounds.north)}° N`;
  const problems: InputError[] = [];
  // A site's or volume vertex's longitude is taken within ±180° of the terrain's middle: terrain across the
  // antimeridian has continuous bounds (e.g. 179.5…180.5° E) and a point there may be given as −179.8° (the
  // volume rasteriser, worker/core/volumes.ts, takes vertices the same way).
  const midLon = (bounds.west + bounds.east) / 2;
  s.sites.forEach((f, i) => {
    const [lon, lat] = f.geometry.coordinates;
    if (!inside(nearLon(lon, midLon), lat)) {
      problems.push(
        new InputError(
          locate(['sites', 'features', i]),
          `site ${showValue(f.properties.id)} at lon ${fmt(lon)}, lat ${fmt(lat)}, outside the terrain`,
          `a site inside the terrain (${extent})`,
        ),
      );
    }
  });
  s.volumes.forEach((v, i) => {
    const polys = v.polygon.type === 'Polygon' ? [v.polygon.coordinates] : v.polygon.coordinates;
    for (const rings of polys) {
      for (const ring of rings) {
        const out = ring.find((p) => !inside(nearLon(p[0], midLon), p[1]));
        if (out) {
          problems.push(
            new InputError(
              locate(['volumes', i, 'polygon']),
              `volume ${showValue(v.id)} with a vertex at lon ${fmt(out[0])}, lat ${fmt(out[1])}, outside the terrain`,
              `a volume inside the terrain (${extent})`,
            ),
          );
          return;
        }
      }
    }
  });
  if (problems.length > 0) throw new ScenarioError(problems);
}
