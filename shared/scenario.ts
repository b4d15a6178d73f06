/**
 * The scenario: what the planner is asked about (terrain, analysis grid, flight levels, sensor types,
 * candidate sites, airspace volumes, named layouts). This module is the schema (zod) and the validator;
 * it is pure (no Node APIs) so the browser app and the CLI share it. Reading files and resolving paths
 * is the CLI's job (worker/cli/scenario.ts); this module sees only plain values.
 *
 * The file contract is DESIGN §5. Optional extras and their defaults:
 * - The study's target (scenario, or a volume's own): `targetRcsM2` (default 2 m², common practice),
 *   `targetFluctuation` (default "swerling1", common practice for aircraft seen scan to scan),
 *   `targetTransponder` (default "low-power", the conservative class). A sensor type's leftover `targetRcsM2`
 *   loads with a warning and is ignored: the target belongs to the study.
 * - `day` { qnhHpa, isaDeviationC }: flight levels (pressure altitudes) are taken at their true altitude on that
 *   day (worker/core/altimetry.ts); default the ISA standard day. `multipath`: "auto" (default) applies over-sea
 *   lobing where the reflection point lies over sea; "off" never.
 * - Volume `altitudeBand` { reference: "amsl" | "agl", minFt, maxFt } instead of (or besides) flMin/flMax.
 * - Site `tiltDeg`: antenna tilt, degrees (default 0).
 * - `maxRangeKm` (scenario): how far from a site the analysis goes, default 400 km.
 * - `grid.bounds` {west, south, east, north} (degrees): the analysis area; when absent, the terrain's
 *   extent. Areas crossing the antimeridian are not supported.
 * - `layouts`: named sets of sensors `{ name, sensors: [{ siteId, typeId }] }`; default none.
 * - SensorType `minRangeNm`, `weatherLossDb` (primary only), `elevationPattern.beamwidthDeg` (cosec2),
 *   physical detection `hitsIntegrated`, and `detection.antenna` { apertureM2, efficiency } as the
 *   alternative to `antennaGainDbi` (exactly one of the two). These stay absent when not given: their
 *   defaults belong to the sensor model (worker/core/sensor.ts: 0.5 NM, 0 dB, 2·startDeg, 1 pulse).
 *   The physical form is for primary sensors; secondary sensors take `{ referenceRangeNm, referenceElevationDeg? }`
 *   or SSR link parameters `{ interrogatorPowerW, antennaGainDbi, cableLossDb, receiverSensitivityDbm }`. A
 *   primary's spec point may state `referencePd`, `referencePfa`, `referenceFluctuation`, `referenceElevationDeg`
 *   and `hitsIntegrated` (sensor.ts: SPEC_POINT_DEFAULTS).
 * - Site `existing` defaults to false; a site without `allowedTypes` may take every sensor type.
 * - Volume `weight` defaults to 1.
 * - Receivers (issue 14): sensor types of kind `adsb` / `mlat` (receive-only fields, see `receiverFields`;
 *   `mlat` adds `timingErrorNs`); volume `requiredFold.adsb` / `.mlat` and `requiredMlatAccuracyM`; scenario
 *   `mlatAltitudeAided` (default true). `requiredFold.any` keeps counting radars only.
 *
 * Unknown fields are refused in the scenario's own objects (a misspelt optional field would otherwise be
 * ignored without a word) but ignored in the GeoJSON parts (GIS exports carry extra attributes).
 *
 * `parseScenario` turns every zod issue into one `InputError(where, found, expected)` and throws them
 * together as a `ScenarioError` (an `InputError` whose message has one line per problem).
 */
// turf's own modules, not the whole @turf/turf bundle: every command loads this file, and the bundle alone is
// about 25 MiB of resident memory in Node (measured with /usr/bin/time on an import).
import { booleanPointInPolygon } from '@turf/boolean-point-in-polygon';
import { kinks } from '@turf/kinks';
import { z } from 'zod';
import { InputError } from './errors.ts';
import { COLD_DAY, K_LIMITS, K_TEXT, kFactorProblem } from './units.ts';
import { RADAR_KINDS } from './sensor-kinds.ts';
import { DETECTION_LIMITS, ECHO_SPEC_FIELDS, FLUCTUATION_IDS, TRANSPONDER_IDS } from './target-terms.ts';

// zod compiles object schemas with `new Function` unless told not to, and probes for it with `Function('')` when
// the first schema is built: under the app's Content-Security-Policy (no 'unsafe-eval', bin/serve.mjs) each probe
// is a reported violation. Its plain path gives the same results (the demo scenario parses in 1.8 ms against 1.7).
z.config({ jitless: true });

export { FLUCTUATION_IDS, TRANSPONDER_IDS } from './target-terms.ts';

/** Defaults of the optional fields (see the module comment). */
export const SCENARIO_DEFAULTS = {
  /** m²: a small aircraft (common practice). */
  targetRcsM2: 2,
  targetFluctuation: 'swerling1',
  targetTransponder: 'low-power',
  maxRangeKm: 400,
  volumeWeight: 1,
  existing: false,
  mlatAltitudeAided: true,
} as const;

export { COLD_DAY, K_LIMITS };

/** Flight levels accepted anywhere in a scenario (hundreds of feet). */
export const FL_MIN = 0;
export const FL_MAX = 600;

/** Limits of the detection laws (shared/target-terms.ts). */
const DETECTION = DETECTION_LIMITS;
const inRange = (lo: number, hi: number, text: string) =>
  z.number({ error: text }).min(lo, { error: text }).max(hi, { error: text });
const PD_TEXT = `a probability of detection from ${DETECTION.pdMin} to ${DETECTION.pdMax}`;
const PFA_TEXT = `a false-alarm probability from ${DETECTION.pfaMin} to ${DETECTION.pfaMax}`;

/** Most problems listed in one error message; the rest are counted. */
const MAX_LISTED_PROBLEMS = 40;

// ---------------------------------------------------------------------------------------------------
// Problem reporting

export type FieldPath = readonly PropertyKey[];
/** Turns a field path inside the validated value into the `where` of a message (file and field). */
export type Locator = (path: FieldPath) => string;

/** `['sensorTypes', 2, 'elevationPattern', 'deg']` → `sensorTypes[2].elevationPattern.deg`. */
export function formatPath(path: FieldPath): string {
  let s = '';
  for (const k of path) {
    if (typeof k === 'number') s += `[${k}]`;
    else s += s === '' ? String(k) : `.${String(k)}`;
  }
  return s;
}

/** The plain locator: `file: field.path` (or just `file` for the whole document). */
export function fileLocator(file: string): Locator {
  return (path) => (path.length === 0 ? file : `${file}: ${formatPath(path)}`);
}

/** Several input problems at once. `where`/`found`/`expected` are the first one's; `message` lists all. */
export class ScenarioError extends InputError {
  constructor(readonly problems: readonly InputError[]) {
    super(problems[0].where, problems[0].found, problems[0].expected);
    if (problems.length > 1) {
      const lines = problems.slice(0, MAX_LISTED_PROBLEMS).map((p) => p.message);
      if (problems.length > MAX_LISTED_PROBLEMS) {
        lines.push(`… and ${problems.length - MAX_LISTED_PROBLEMS} more problems`);
      }
      this.message = lines.join('\n');
    }
  }
}

/** A value as shown in a message: JSON, shortened. */
export function showValue(v: unknown, maxChars = 60): string {
  if (v === undefined) return 'nothing (the field is missing)';
  let s: string;
  try {
    s = typeof v === 'number' && !Number.isFinite(v) ? String(v) : (JSON.stringify(v) ?? String(v));
  } catch {
    // A value too deep or circular to print: its kind only (String() of a deep list would overflow too).
    s = Array.isArray(v) ? 'a list' : typeof v === 'object' ? 'an object' : typeof v;
  }
  return s.length > maxChars ? `${s.slice(0, maxChars - 1)}…` : s;
}

function kindOf(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'a list';
  switch (typeof v) {
    case 'string':
      return 'text';
    case 'number':
      return 'a number';
    case 'boolean':
      return 'true/false';
    case 'object':
      return 'an object';
    default:
      return typeof v;
  }
}

const EXPECTED_TYPE: Record<string, string> = {
  number: 'a number',
  int: 'a whole number',
  string: 'text (a JSON string)',
  boolean: 'true or false',
  array: 'a list (JSON array)',
  object: 'an object',
  tuple: 'a position [lon, lat]',
};

function bound(origin: string, value: number | bigint, inclusive: boolean | undefined, big: boolean): string {
  const op = big ? (inclusive ? '≤' : '<') : inclusive ? '≥' : '>';
  switch (origin) {
    case 'array':
      return big ? `at most ${value} entries` : `at least ${value} ${value === 1 ? 'entry' : 'entries'}`;
    case 'string':
      return big
        ? `text of at most ${value} characters`
        : value === 1
          ? 'non-empty text'
          : `text of ${value}+ characters`;
    case 'int':
      return `a whole number ${op} ${value}`;
    default:
      return `a number ${op} ${value}`;
  }
}

/** The per-parse error map: what was expected, for zod's own issue codes (custom ones carry their text). */
function expectedText(iss: z.core.$ZodRawIssue): string | undefined {
  switch (iss.code) {
    case 'invalid_type':
      return EXPECTED_TYPE[iss.expected] ?? `a value of type ${iss.expected}`;
    case 'too_small':
      return bound(iss.origin, iss.minimum, iss.inclusive, false);
    case 'too_big':
      return bound(iss.origin, iss.maximum, iss.inclusive, true);
    case 'invalid_value':
      return iss.values.length === 1
        ? showValue(iss.values[0])
        : `one of ${iss.values.map((v) => showValue(v)).join(', ')}`;
    case 'not_multiple_of':
      return `a multiple of ${iss.divisor}`;
    case 'invalid_format':
      return iss.format === 'regex' ? `text matching ${iss.pattern}` : `text in ${iss.format} form`;
    case 'unrecognized_keys':
      return 'no other fields';
    case 'invalid_union':
      return 'one of the allowed forms';
    default:
      return undefined;
  }
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/**
 * Against a union branch, a top-level field of the wrong fixed value (a sensor type's `kind`) counts most — the
 * user named the other form —, then issues missing a required field: the user meant the other form.
 */
function branchScore(issues: readonly z.core.$ZodIssue[]): number {
  let missing = 0;
  let tag = 0;
  for (const i of issues) {
    if (i.code === 'invalid_type' && i.input === undefined) missing++;
    if (i.code === 'invalid_value' && i.path.length === 1) tag++;
  }
  return tag * 1_000_000 + missing * 1000 + issues.length;
}

function collectProblems(
  issues: readonly z.core.$ZodIssue[],
  prefix: FieldPath,
  locate: Locator,
  out: InputError[],
): void {
  for (const iss of issues) {
    const path = [...prefix, ...iss.path];
    switch (iss.code) {
      case 'invalid_union': {
        if (iss.errors.length === 0) {
          // A discriminated union whose discriminator matched no option (the path already names it).
          const found = isRecord(iss.input) && iss.discriminator ? iss.input[iss.discriminator] : iss.input;
          const options = 'options' in iss && iss.options ? iss.options : [];
          out.push(
            new InputError(
              locate(path),
              showValue(found),
              options.length ? `one of ${options.map((o) => showValue(o)).join(', ')}` : iss.message,
            ),
          );
          break;
        }
        let best = iss.errors[0];
        for (const b of iss.errors) if (branchScore(b) < branchScore(best)) best = b;
        collectProblems(best, path, locate, out);
        break;
      }
      case 'unrecognized_keys':
        for (const k of iss.keys) {
          out.push(new InputError(locate([...path, k]), 'a field that is not known here', iss.message));
        }
        break;
      case 'invalid_type':
        out.push(
          new InputError(
            locate(path),
            iss.input === undefined ? showValue(undefined) : `${showValue(iss.input)} (${kindOf(iss.input)})`,
            iss.message,
          ),
        );
        break;
      case 'custom': {
        const found = iss.params && 'found' in iss.params ? String(iss.params.found) : showValue(iss.input);
        let expected = iss.message;
        if (iss.params && Array.isArray(iss.params.firstAt)) {
          // firstAt is relative to the object the check ran on, as the issue's own path was.
          const base = path.slice(0, path.length - Number(iss.params.relLength ?? 0));
          expected += ` (first used at ${locate([...base, ...(iss.params.firstAt as PropertyKey[])])})`;
        }
        out.push(new InputError(locate(path), found, expected));
        break;
      }
      default:
        out.push(new InputError(locate(path), showValue(iss.input), iss.message));
    }
  }
}

/** Validates `value` against any of the schemas here; throws one `ScenarioError` listing every problem. */
export function parseWith<S extends z.ZodType>(schema: S, value: unknown, locate: Locator): z.output<S> {
  const r = schema.safeParse(value, { reportInput: true, error: expectedText });
  if (r.success) return r.data;
  const problems: InputError[] = [];
  collectProblems(r.error.issues, [], locate, problems);
  const seen = new Set<string>();
  const unique = problems.filter((p) => !seen.has(p.message) && seen.add(p.message));
  throw new ScenarioError(
    unique.length ? unique : [new InputError(locate([]), 'invalid input', 'a scenario')],
  );
}

/**
 * Validates a scenario whose `sites` and `sensorTypes` are inline (a GeoJSON FeatureCollection and an
 * array; the CLI loader resolves paths first). Returns it with defaults filled and `sites` as an array of
 * features. `locate` maps a field path to the `where` of a message (default: `file: field.path`).
 */
export function parseScenario(json: unknown, file: string, locate: Locator = fileLocator(file)): Scenario {
  return parseWith(ScenarioSchema, json, locate);
}

// ---------------------------------------------------------------------------------------------------
// Refinement helpers

type Ctx = z.core.$RefinementCtx<unknown>;

function problem(
  ctx: Ctx,
  path: PropertyKey[],
  found: string,
  expected: string,
  firstAt?: PropertyKey[],
): void {
  ctx.addIssue({
    code: 'custom',
    path,
    message: expected,
    params: firstAt ? { found, firstAt, relLength: path.length } : { found },
  });
}

/**
 * Runs a cross-field check even when other fields of the same object have problems (collect them all),
 * as long as the value is an object or array at all. The checks guard each field they read.
 */
const always = { when: (p: { value: unknown }) => typeof p.value === 'object' && p.value !== null };

/**
 * A whole number. zod's own `.int()` marks its issue as aborting, which would silence the cross-field
 * checks of every enclosing object; this refinement does not.
 */
const whole = (text: string) => z.number({ error: text }).refine(Number.isInteger, { error: text });

const num = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);
const str = (v: unknown): v is string => typeof v === 'string';

/** Reports repeated values of `key` among the records of `list` (path `[...base, index, ...keyPath]`). */
function checkUnique(
  ctx: Ctx,
  list: unknown,
  get: (item: Record<string, unknown>) => unknown,
  base: PropertyKey[],
  keyPath: PropertyKey[],
  what: string,
): Map<string, number> {
  const first = new Map<string, number>();
  if (!Array.isArray(list)) return first;
  list.forEach((item, i) => {
    if (!isRecord(item)) return;
    const id = get(item);
    if (!str(id)) return;
    const at = first.get(id);
    if (at === undefined) first.set(id, i);
    else
      problem(ctx, [...base, i, ...keyPath], `${showValue(id)} again`, `a unique ${what}`, [
        ...base,
        at,
        ...keyPath,
      ]);
  });
  return first;
}

/** An object that refuses unknown fields, naming the fields it knows in the message. */
function strictObject<T extends z.core.$ZodLooseShape>(shape: T) {
  const known = Object.keys(shape).join(', ');
  return z.strictObject(shape, {
    error: (iss) => (iss.code === 'unrecognized_keys' ? `only the fields ${known}` : undefined),
  });
}

// ---------------------------------------------------------------------------------------------------
// Common fields

const ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;
const Id = z.string().regex(ID_PATTERN, {
  error: 'an id of letters, digits, ".", "_" or "-" (ids appear in output file names)',
});
const Name = z.string().min(1);

const FL_TEXT = `a flight level: a whole number from ${FL_MIN} to ${FL_MAX} (hundreds of feet)`;
export const FlightLevelSchema = whole(FL_TEXT)
  .min(FL_MIN, { error: FL_TEXT })
  .max(FL_MAX, { error: FL_TEXT });

const RCS_TEXT = 'a radar cross-section > 0 m²';
const Rcs = z.number({ error: RCS_TEXT }).positive({ error: RCS_TEXT });
const positive = (unit: string) => {
  const text = `a number > 0 (${unit})`;
  return z.number({ error: text }).positive({ error: text });
};
const nonNegative = (unit: string) => {
  const text = `a number ≥ 0 (${unit})`;
  return z.number({ error: text }).min(0, { error: text });
};

const LON_TEXT = 'a longitude from -180 to 180 (degrees east)';
const LAT_TEXT = 'a latitude from -90 to 90 (degrees north)';
const Lon = z.number({ error: LON_TEXT }).min(-180, { error: LON_TEXT }).max(180, { error: LON_TEXT });
const Lat = z.number({ error: LAT_TEXT }).min(-90, { error: LAT_TEXT }).max(90, { error: LAT_TEXT });
/** GeoJSON position: [lon, lat] with an optional altitude (ignored). */
export const PositionSchema = z.tuple([Lon, Lat], z.number());

export const BoundsSchema = strictObject({ west: Lon, south: Lat, east: Lon, north: Lat }).superRefine(
  (b, ctx) => {
    if (num(b.west) && num(b.east) && !(b.west < b.east)) {
      problem(
        ctx,
        ['east'],
        `east ${b.east} ≤ west ${b.west}`,
        'east > west (areas across the antimeridian are not supported)',
      );
    }
    if (num(b.south) && num(b.north) && !(b.south < b.north)) {
      problem(ctx, ['north'], `north ${b.north} ≤ south ${b.south}`, 'north > south');
    }
  },
  always,
);
export type Bounds = z.output<typeof BoundsSchema>;

// ---------------------------------------------------------------------------------------------------
// Polygons (airspace volumes)

const RING_TEXT =
  'a closed ring: at least 4 positions, the last equal to the first (GeoJSON, RFC 7946 §3.1.6)';
const Ring = z
  .array(PositionSchema)
  .min(4, { error: RING_TEXT })
  .superRefine((ring, ctx) => {
    if (ring.length < 2 || !ring.every((p) => Array.isArray(p) && num(p[0]) && num(p[1]))) return;
    const a = ring[0];
    const b = ring[ring.length - 1];
    if (a[0] !== b[0] || a[1] !== b[1]) {
      problem(ctx, [], `a ring from ${showValue(a)} that ends at ${showValue(b)}`, RING_TEXT);
    }
  });

function ringIsUsable(ring: unknown): ring is [number, number][] {
  if (!Array.isArray(ring) || ring.length < 4) return false;
  if (!ring.every((p) => Array.isArray(p) && num(p[0]) && num(p[1]))) return false;
  const a = ring[0];
  const b = ring[ring.length - 1];
  return a[0] === b[0] && a[1] === b[1];
}

const SIMPLE_TEXT = 'a simple polygon: rings that neither cross themselves nor each other';
const fmtPt = (p: number[]) => `lon ${+p[0].toFixed(5)}, lat ${+p[1].toFixed(5)}`;

/**
 * Self-intersection (turf kinks) and holes inside their shell (turf booleanPointInPolygon). Runs only on
 * rings that passed the ring checks; returns whether the rings are simple.
 */
function checkPolygonRings(rings: unknown, ctx: Ctx, base: PropertyKey[]): boolean {
  if (!Array.isArray(rings) || rings.length === 0 || !rings.every(ringIsUsable)) return false;
  let simple = true;
  rings.forEach((ring, r) => {
    const k = kinks({ type: 'LineString', coordinates: ring });
    if (k.features.length > 0) {
      simple = false;
      const at = k.features[0].geometry.coordinates;
      problem(ctx, [...base, r], `a ring whose edges cross at ${fmtPt(at)}`, SIMPLE_TEXT);
    }
  });
  if (!simple || rings.length === 1) return simple;
  const k = kinks({ type: 'Polygon', coordinates: rings });
  if (k.features.length > 0) {
    const at = k.features[0].geometry.coordinates;
    problem(ctx, base, `rings that cross each other at ${fmtPt(at)}`, SIMPLE_TEXT);
    return false;
  }
  const shell = { type: 'Polygon' as const, coordinates: [rings[0]] };
  for (let r = 1; r < rings.length; r++) {
    const outside = rings[r].find((p) => !booleanPointInPolygon(p, shell));
    if (outside) {
      simple = false;
      problem(
        ctx,
        [...base, r],
        `a hole with a vertex outside the outer ring (${fmtPt(outside)})`,
        'holes inside the outer ring',
      );
    }
  }
  return simple;
}

export const PolygonSchema = z
  .object({ type: z.literal('Polygon'), coordinates: z.array(Ring).min(1) })
  .superRefine((g, ctx) => void checkPolygonRings(g.coordinates, ctx, ['coordinates']), always);
export const MultiPolygonSchema = z
  .object({ type: z.literal('MultiPolygon'), coordinates: z.array(z.array(Ring).min(1)).min(1) })
  .superRefine((g, ctx) => {
    if (!Array.isArray(g.coordinates)) return;
    let simple = true;
    g.coordinates.forEach((rings, i) => {
      if (!checkPolygonRings(rings, ctx, ['coordinates', i])) simple = false;
    });
    if (!simple || g.coordinates.length < 2) return;
    // Each polygon is simple on its own: any crossing left is between two of them.
    const k = kinks({ type: 'MultiPolygon', coordinates: g.coordinates });
    if (k.features.length > 0) {
      const at = k.features[0].geometry.coordinates;
      problem(ctx, ['coordinates'], `polygons that cross each other at ${fmtPt(at)}`, SIMPLE_TEXT);
    }
  }, always);
export const AreaGeometrySchema = z.discriminatedUnion('type', [PolygonSchema, MultiPolygonSchema]);

const FOLD_TEXT = 'a whole number ≥ 0 of sensors';
const Fold = whole(FOLD_TEXT).min(0, { error: FOLD_TEXT });

const FT_TEXT = 'an altitude in feet from -1500 to 60000';
const Feet = inRange(-1500, 60_000, FT_TEXT);

/**
 * A volume's vertical extent given as altitudes instead of flight levels: feet above mean sea level (`amsl`) or
 * above each cell's ground (`agl`: low-level routes). The scenario's flight levels whose true altitude on the day
 * falls inside it (above each cell's ground for `agl`) are the levels the volume is evaluated at.
 */
export const AltitudeBandSchema = strictObject({
  reference: z.enum(['amsl', 'agl']),
  minFt: Feet,
  maxFt: Feet,
}).superRefine((b, ctx) => {
  if (num(b.minFt) && num(b.maxFt) && b.minFt > b.maxFt) {
    problem(ctx, ['maxFt'], `maxFt ${b.maxFt} below minFt ${b.minFt}`, 'minFt ≤ maxFt');
  }
}, always);
export type AltitudeBand = z.output<typeof AltitudeBandSchema>;

export const VolumeSchema = strictObject({
  id: Id,
  name: Name,
  polygon: AreaGeometrySchema,
  /** The band in flight levels; with `altitudeBand` both may be left out (then every level may apply). */
  flMin: FlightLevelSchema.optional(),
  flMax: FlightLevelSchema.optional(),
  altitudeBand: AltitudeBandSchema.optional(),
  /**
   * Distinct sites per kind that must see each cell. `any` counts radars (primary or secondary) only; `adsb` and
   * `mlat` count receivers of that kind (shared/sensor-kinds.ts). An mlat fold counts the receivers that see the
   * cell: a fix needs at least 4, or 3 when the scenario's `mlatAltitudeAided` holds.
   */
  requiredFold: strictObject({
    primary: Fold.optional(),
    secondary: Fold.optional(),
    any: Fold.optional(),
    adsb: Fold.optional(),
    mlat: Fold.optional(),
  }),
  /**
   * The 1σ horizontal DRMS (m) the multilateration fix must reach in this volume (checked against the accuracy
   * map, worker/core/mlat.ts); absent: no accuracy requirement.
   */
  requiredMlatAccuracyM: positive('m, a 1σ horizontal DRMS').optional(),
  weight: positive('relative demand weight').default(SCENARIO_DEFAULTS.volumeWeight),
  /** This volume's own target (e.g. a terminal area studied for small aircraft); default the scenario's. */
  targetRcsM2: Rcs.optional(),
  targetFluctuation: z.enum(FLUCTUATION_IDS).optional(),
  targetTransponder: z.enum(TRANSPONDER_IDS).optional(),
})
  .superRefine((v, ctx) => {
    if (num(v.flMin) && num(v.flMax) && v.flMin > v.flMax) {
      problem(ctx, ['flMax'], `flMax ${v.flMax} below flMin ${v.flMin}`, 'flMin ≤ flMax');
    }
    if (v.altitudeBand === undefined) {
      for (const k of ['flMin', 'flMax'] as const) {
        if (v[k] === undefined) {
          problem(
            ctx,
            [k],
            showValue(undefined),
            `${FL_TEXT} — or give the band as altitudeBand { reference: "amsl" | "agl", minFt, maxFt }`,
          );
        }
      }
    }
  }, always)
  .transform((v) => ({ ...v, flMin: v.flMin ?? FL_MIN, flMax: v.flMax ?? FL_MAX }));
export type Volume = z.output<typeof VolumeSchema>;

// ---------------------------------------------------------------------------------------------------
// Sensor types (the limits match worker/core/sensor.ts, so a type that passes here also builds a model)

const ANGLE_TEXT = 'an elevation angle from -90 to 90 degrees';
const ElevationDeg = z
  .number({ error: ANGLE_TEXT })
  .min(-90, { error: ANGLE_TEXT })
  .max(90, { error: ANGLE_TEXT });
const aboveZeroTo90 = (what: string, top: 'lt' | 'lte') => {
  const text = `${what} above 0 and ${top === 'lt' ? 'below' : 'at most'} 90 degrees`;
  const n = z.number({ error: text }).gt(0, { error: text });
  return top === 'lt' ? n.lt(90, { error: text }) : n.max(90, { error: text });
};

const Cosec2Pattern = strictObject({
  type: z.literal('cosec2'),
  /** Peak of the beam; the cosec² shape runs from here to endDeg. */
  startDeg: aboveZeroTo90('an elevation angle', 'lt'),
  endDeg: aboveZeroTo90('an elevation angle', 'lte'),
  /** Half-power beamwidth of the main beam below startDeg (default 2·startDeg, see worker/core/sensor.ts). */
  beamwidthDeg: aboveZeroTo90('a half-power beamwidth', 'lte').optional(),
}).superRefine((p, ctx) => {
  if (num(p.startDeg) && num(p.endDeg) && !(p.startDeg < p.endDeg)) {
    problem(ctx, ['endDeg'], `endDeg ${p.endDeg} ≤ startDeg ${p.startDeg}`, 'startDeg < endDeg');
  }
}, always);
const TablePattern = strictObject({
  type: z.literal('table'),
  deg: z.array(ElevationDeg).min(2),
  gainDb: z.array(z.number()).min(2),
}).superRefine((p, ctx) => {
  if (Array.isArray(p.deg)) {
    for (let i = 1; i < p.deg.length; i++) {
      const a = p.deg[i - 1];
      const b = p.deg[i];
      if (num(a) && num(b) && !(b > a)) {
        problem(
          ctx,
          ['deg'],
          `${b} after ${a} (entries ${i - 1} and ${i})`,
          'elevation angles in strictly increasing order',
        );
        break;
      }
    }
  }
  if (Array.isArray(p.deg) && Array.isArray(p.gainDb) && p.deg.length !== p.gainDb.length) {
    problem(
      ctx,
      ['gainDb'],
      `${p.gainDb.length} gains for ${p.deg.length} angles`,
      `one gainDb entry per deg entry (${p.deg.length})`,
    );
  }
}, always);
export const ElevationPatternSchema = z.discriminatedUnion('type', [Cosec2Pattern, TablePattern]);

/** Detection given by a measured range on a reference target (primary sensors need its RCS). */
export const ReferenceDetectionSchema = strictObject({
  referenceRangeNm: positive('NM'),
  referenceRcsM2: Rcs.optional(),
  /** Primary: the Pd, Pfa and target fluctuation the range is quoted for (defaults 0.8, 1e-6, swerling1). */
  referencePd: z.number().optional(),
  referencePfa: z.number().optional(),
  referenceFluctuation: z.enum(FLUCTUATION_IDS).optional(),
  /** Elevation the range applies to, degrees (default: the pattern's peak). */
  referenceElevationDeg: z.number().min(-10).max(90).optional(),
  hitsIntegrated: z.number().optional(),
}).superRefine((d, ctx) => {
  if (num(d.referencePd) && !(d.referencePd >= DETECTION.pdMin && d.referencePd <= DETECTION.pdMax))
    problem(ctx, ['referencePd'], showValue(d.referencePd), PD_TEXT);
  if (num(d.referencePfa) && !(d.referencePfa >= DETECTION.pfaMin && d.referencePfa <= DETECTION.pfaMax))
    problem(ctx, ['referencePfa'], showValue(d.referencePfa), PFA_TEXT);
  if (
    d.hitsIntegrated !== undefined &&
    !(
      Number.isInteger(d.hitsIntegrated) &&
      d.hitsIntegrated >= DETECTION.nMin &&
      d.hitsIntegrated <= DETECTION.nMax
    )
  )
    problem(ctx, ['hitsIntegrated'], showValue(d.hitsIntegrated), HITS_TEXT);
}, always);

/** An SSR's half of the uplink and downlink budgets (the transponder's half is the study's transponder class). */
export const SecondaryLinkSchema = strictObject({
  interrogatorPowerW: inRange(1e-3, 1e5, 'an interrogator peak power in W from 0.001 to 100 000'),
  antennaGainDbi: z.number().gt(0).lt(50),
  cableLossDb: z.number().min(0).lt(20),
  receiverSensitivityDbm: inRange(-120, -40, 'a receiver sensitivity in dBm from −120 to −40'),
});

const GAIN_TEXT = 'an antenna gain in dBi above 0 and below 70';
const EFFICIENCY_TEXT = 'an aperture efficiency above 0 and at most 1';
const NF_TEXT = 'a noise figure in dB from 0 to below 30';
const LOSSES_TEXT = 'system losses in dB from 0 to below 60';
const HITS_TEXT = `a whole number of pulses integrated from ${DETECTION.nMin} to ${DETECTION.nMax}`;

/** Detection from physical parameters (radar equation + the detection laws of worker/core/detection.ts); primary only. */
export const PhysicalDetectionSchema = strictObject({
  peakPowerKw: positive('kW'),
  antennaGainDbi: z
    .number({ error: GAIN_TEXT })
    .gt(0, { error: GAIN_TEXT })
    .lt(70, { error: GAIN_TEXT })
    .optional(),
  antenna: strictObject({
    apertureM2: positive('m²'),
    efficiency: z
      .number({ error: EFFICIENCY_TEXT })
      .gt(0, { error: EFFICIENCY_TEXT })
      .max(1, { error: EFFICIENCY_TEXT }),
  }).optional(),
  pulseWidthUs: positive('µs'),
  noiseFigureDb: z.number({ error: NF_TEXT }).min(0, { error: NF_TEXT }).lt(30, { error: NF_TEXT }),
  lossesDb: z.number({ error: LOSSES_TEXT }).min(0, { error: LOSSES_TEXT }).lt(60, { error: LOSSES_TEXT }),
  pd: inRange(DETECTION.pdMin, DETECTION.pdMax, PD_TEXT),
  pfa: inRange(DETECTION.pfaMin, DETECTION.pfaMax, PFA_TEXT),
  /** Pulses integrated non-coherently; default 1. */
  hitsIntegrated: whole(HITS_TEXT)
    .min(DETECTION.nMin, { error: HITS_TEXT })
    .max(DETECTION.nMax, { error: HITS_TEXT })
    .optional(),
}).superRefine((d, ctx) => {
  const gain = d.antennaGainDbi !== undefined;
  const ant = d.antenna !== undefined;
  if (gain === ant) {
    problem(
      ctx,
      gain ? ['antenna'] : ['antennaGainDbi'],
      gain ? 'both antennaGainDbi and antenna' : showValue(undefined),
      'exactly one of antennaGainDbi (dBi) or antenna { apertureM2, efficiency }',
    );
  }
}, always);
export const DetectionSchema = z.union([
  ReferenceDetectionSchema,
  PhysicalDetectionSchema,
  SecondaryLinkSchema,
]);

const FREQ_TEXT = 'a frequency in MHz from 1 to 300 000';
const WEATHER_TEXT = 'a two-way weather loss in dB from 0 to below 40';

const KIND_TEXT =
  'a sensor kind: "primary" or "secondary" (a radar, with frequencyMHz, maxElevationDeg and detection) or "adsb" or "mlat" (a receiver, with sensitivityDbm, cableLossDb and antennaGainDbi)';

/** A radar (primary or secondary). */
export const RadarTypeSchema = strictObject({
  id: Id,
  name: Name,
  kind: z.enum(RADAR_KINDS, { error: KIND_TEXT }),
  frequencyMHz: inRange(1, 300_000, FREQ_TEXT),
  cost: nonNegative('M units'),
  /** Above this elevation lies the cone of silence. */
  maxElevationDeg: aboveZeroTo90('an elevation angle', 'lte'),
  instrumentedRangeNm: positive('NM'),
  /** Default: the sensor model's (0.5 NM, worker/core/sensor.ts). */
  minRangeNm: nonNegative('NM').optional(),
  /** Primary only; default 0 dB. */
  weatherLossDb: z
    .number({ error: WEATHER_TEXT })
    .min(0, { error: WEATHER_TEXT })
    .lt(40, { error: WEATHER_TEXT })
    .optional(),
  elevationPattern: ElevationPatternSchema,
  detection: DetectionSchema,
  /** Leftover of earlier files: loads with a warning; the study's target governs (worker/core/sensor.ts). */
  targetRcsM2: Rcs.optional(),
}).superRefine((t, ctx) => {
  if (num(t.minRangeNm) && num(t.instrumentedRangeNm) && t.minRangeNm >= t.instrumentedRangeNm) {
    problem(
      ctx,
      ['minRangeNm'],
      `${t.minRangeNm} NM, not below instrumentedRangeNm ${t.instrumentedRangeNm} NM`,
      'minRangeNm < instrumentedRangeNm',
    );
  }
  const d = t.detection as unknown;
  if (!isRecord(d)) return;
  const reference = 'referenceRangeNm' in d;
  if (t.kind === 'primary' && reference && d.referenceRcsM2 === undefined) {
    problem(
      ctx,
      ['detection', 'referenceRcsM2'],
      showValue(undefined),
      'the RCS (m²) of the reference target: a primary sensor’s range depends on the target’s RCS',
    );
  }
  if (t.kind === 'primary' && 'interrogatorPowerW' in d) {
    problem(
      ctx,
      ['detection'],
      'SSR link parameters (interrogatorPowerW …)',
      'a specification point { referenceRangeNm, referenceRcsM2, … } or physical radar parameters { peakPowerKw, … }',
    );
  }
  if (t.kind !== 'secondary') return;
  const notTarget = "nothing: a secondary's range comes from its links, not from a target's echo";
  for (const k of ECHO_SPEC_FIELDS) {
    if (reference && d[k] !== undefined) problem(ctx, ['detection', k], showValue(d[k]), notTarget);
  }
  if (!reference && 'peakPowerKw' in d) {
    problem(
      ctx,
      ['detection'],
      'physical radar parameters (peakPowerKw …)',
      "a reference range { referenceRangeNm } or link parameters { interrogatorPowerW, … }: a secondary's range comes from its link budget, not the radar equation",
    );
  }
  if (t.weatherLossDb !== undefined) {
    problem(
      ctx,
      ['weatherLossDb'],
      showValue(t.weatherLossDb),
      'nothing: a secondary is not affected by weather mode',
    );
  }
}, always);

const SENS_TEXT = 'a receiver sensitivity in dBm from −120 to −40';
const CABLE_TEXT = 'a cable loss in dB from 0 to below 20';
const RX_GAIN_TEXT = 'an antenna gain in dBi from −20 to 40';
const RX_RANGE_TEXT = 'a range in NM above 0 and at most 1000';
const AZ_TEXT = 'an azimuth in degrees from −360 to 360 (clockwise from true north)';
const TIMING_TEXT = 'a 1σ arrival-time error in ns above 0 and at most 1000';

/**
 * A receiver's azimuth sector: it runs clockwise from fromDeg to toDeg (fromDeg 300, toDeg 60 is the 120° sector
 * through north); absent: omnidirectional.
 */
const SectorSchema = strictObject({
  fromDeg: inRange(-360, 360, AZ_TEXT),
  toDeg: inRange(-360, 360, AZ_TEXT),
}).superRefine((s, ctx) => {
  if (num(s.fromDeg) && num(s.toDeg) && (((s.toDeg - s.fromDeg) % 360) + 360) % 360 === 0) {
    problem(
      ctx,
      ['toDeg'],
      `toDeg ${s.toDeg}, the same direction as fromDeg ${s.fromDeg}`,
      'a sector of some width (leave sector out for an omnidirectional antenna)',
    );
  }
}, always);

/**
 * A 1090 MHz ground receiver's fields (receive only; the limits match worker/core/receiver.ts): its sensitivity,
 * cable loss and antenna gain, the elevation pattern (the same spec as the radars'), its instrumented range and
 * an optional azimuth sector. No frequency (1090 MHz), no cone of silence beyond the pattern, no minimum range.
 */
const receiverFields = {
  id: Id,
  name: Name,
  cost: nonNegative('M units'),
  sensitivityDbm: inRange(-120, -40, SENS_TEXT),
  cableLossDb: z.number({ error: CABLE_TEXT }).min(0, { error: CABLE_TEXT }).lt(20, { error: CABLE_TEXT }),
  antennaGainDbi: inRange(-20, 40, RX_GAIN_TEXT),
  elevationPattern: ElevationPatternSchema,
  instrumentedRangeNm: z
    .number({ error: RX_RANGE_TEXT })
    .gt(0, { error: RX_RANGE_TEXT })
    .max(1000, { error: RX_RANGE_TEXT }),
  sector: SectorSchema.optional(),
};

/** An ADS-B ground station. */
export const AdsbTypeSchema = strictObject({
  ...receiverFields,
  kind: z.literal('adsb', { error: KIND_TEXT }),
});
/** A multilateration receiver: an ADS-B radio plus its 1σ time-of-arrival error (ns), synchronisation included. */
export const MlatTypeSchema = strictObject({
  ...receiverFields,
  kind: z.literal('mlat', { error: KIND_TEXT }),
  timingErrorNs: z
    .number({ error: TIMING_TEXT })
    .gt(0, { error: TIMING_TEXT })
    .max(1000, { error: TIMING_TEXT }),
});

/**
 * Any sensor type, told apart by `kind`. A plain union, not a discriminated one: with a kind that is none of them
 * every other problem of the object is still reported, from the form it is nearest to (parseWith's branchScore).
 */
export const SensorTypeSchema = z.union([RadarTypeSchema, AdsbTypeSchema, MlatTypeSchema]);
export type SensorType = z.output<typeof SensorTypeSchema>;
export type RadarType = z.output<typeof RadarTypeSchema>;
export type ReceiverType = z.output<typeof AdsbTypeSchema> | z.output<typeof MlatTypeSchema>;
export type ElevationPattern = z.output<typeof ElevationPatternSchema>;
export type Detection = z.output<typeof DetectionSchema>;
export type ReferenceDetection = z.output<typeof ReferenceDetectionSchema>;
export type PhysicalDetection = z.output<typeof PhysicalDetectionSchema>;

/** A sensor types file: an array of sensor types with unique ids. */
export const SensorTypeListSchema = z.array(SensorTypeSchema).superRefine((list, ctx) => {
  checkUnique(ctx, list, (t) => t.id, [], ['id'], 'sensor type id');
}, always);

// ---------------------------------------------------------------------------------------------------
// Sites (GeoJSON Points)

const SITES_TEXT =
  'a GeoJSON FeatureCollection of sites (in a scenario file, or the path of a GeoJSON or CSV file)';

export const SitePropertiesSchema = z.object({
  id: Id,
  name: Name,
  mastHeightM: nonNegative('m, antenna height above ground'),
  /** Antenna tilt, degrees above the horizontal (default 0): raises the whole elevation pattern. */
  tiltDeg: inRange(-10, 20, 'an antenna tilt from −10 to 20 degrees').optional(),
  siteCost: nonNegative('M units'),
  existing: z.boolean().default(SCENARIO_DEFAULTS.existing),
  allowedTypes: z
    .array(Id)
    .min(1, { error: 'at least one sensor type id (leave the field out to allow every type)' })
    .optional(),
});
export const SiteFeatureSchema = z.object({
  type: z.literal('Feature'),
  id: z.union([z.string(), z.number()]).optional(),
  geometry: z.object({ type: z.literal('Point'), coordinates: PositionSchema }),
  properties: SitePropertiesSchema,
});
export const SiteCollectionSchema = z.object(
  { type: z.literal('FeatureCollection'), features: z.array(SiteFeatureSchema) },
  { error: (iss) => (iss.code === 'invalid_type' ? SITES_TEXT : undefined) },
);
export type SiteFeature = z.output<typeof SiteFeatureSchema>;
export type SiteProperties = z.output<typeof SitePropertiesSchema>;

// ---------------------------------------------------------------------------------------------------
// Layouts and the scenario

export const LayoutSchema = strictObject({
  name: Name,
  sensors: z.array(strictObject({ siteId: Id, typeId: Id })),
});
export type Layout = z.output<typeof LayoutSchema>;

/** Cross-field checks: unique ids and names, and every reference to a site or sensor type resolves. */
function checkReferences(s: Record<string, unknown>, ctx: Ctx): void {
  const types = checkUnique(ctx, s.sensorTypes, (t) => t.id, ['sensorTypes'], ['id'], 'sensor type id');
  const features = isRecord(s.sites) && Array.isArray(s.sites.features) ? s.sites.features : undefined;
  const props = (f: Record<string, unknown>) => (isRecord(f.properties) ? f.properties : {});
  const sites = checkUnique(
    ctx,
    features,
    (f) => props(f).id,
    ['sites', 'features'],
    ['properties', 'id'],
    'site id',
  );
  checkUnique(ctx, s.volumes, (v) => v.id, ['volumes'], ['id'], 'volume id');
  checkUnique(ctx, s.layouts, (l) => l.name, ['layouts'], ['name'], 'layout name');
  const typesKnown = Array.isArray(s.sensorTypes);
  const typeList = [...types.keys()].map((k) => JSON.stringify(k)).join(', ');
  const typeText = `the id of a sensor type in sensorTypes (${typeList || 'none defined'})`;
  const allowed = new Map<string, unknown[]>();
  features?.forEach((f, i) => {
    if (!isRecord(f)) return;
    const p = props(f);
    const list = p.allowedTypes;
    if (str(p.id) && Array.isArray(list)) allowed.set(p.id, list);
    if (!typesKnown || !Array.isArray(list)) return;
    list.forEach((t, j) => {
      if (str(t) && !types.has(t))
        problem(ctx, ['sites', 'features', i, 'properties', 'allowedTypes', j], showValue(t), typeText);
    });
  });
  if (!Array.isArray(s.layouts)) return;
  s.layouts.forEach((l, li) => {
    if (!isRecord(l) || !Array.isArray(l.sensors)) return;
    const pairs = new Map<string, number>();
    l.sensors.forEach((e, ei) => {
      if (!isRecord(e) || !str(e.siteId) || !str(e.typeId)) return;
      const at = ['layouts', li, 'sensors', ei];
      if (features && !sites.has(e.siteId)) {
        problem(ctx, [...at, 'siteId'], showValue(e.siteId), 'the id of a site in sites');
      }
      if (typesKnown && !types.has(e.typeId)) problem(ctx, [...at, 'typeId'], showValue(e.typeId), typeText);
      const ok = allowed.get(e.siteId);
      if (ok && types.has(e.typeId) && !ok.includes(e.typeId)) {
        problem(
          ctx,
          [...at, 'typeId'],
          `${showValue(e.typeId)} at site ${showValue(e.siteId)}`,
          `a type allowed at that site (${ok.map((t) => JSON.stringify(t)).join(', ')})`,
        );
      }
      const key = `${e.siteId}\u0000${e.typeId}`;
      const first = pairs.get(key);
      if (first === undefined) pairs.set(key, ei);
      else
        problem(ctx, at, `${e.typeId} at ${e.siteId} again`, 'each (site, type) once per layout', [
          'layouts',
          li,
          'sensors',
          first,
        ]);
    });
  });
}

/** The effective-earth factor's accepted range and its problems: shared/units.ts (K_LIMITS, kFactorProblem). */
export const KFactorSchema = z.number({ error: K_TEXT }).superRefine((k, ctx) => {
  const why = kFactorProblem(k);
  if (why !== undefined) problem(ctx, [], String(k), why);
});
const CELL_TEXT = 'a cell size in arc-seconds, > 0 and ≤ 3600';
const SENSOR_TYPES_TEXT =
  'a list of sensor types (in a scenario file, or the path of a JSON file holding one)';

const ScenarioObjectSchema = strictObject({
  name: Name,
  terrain: strictObject({
    files: z.array(z.string().min(1)).min(1, { error: 'at least one terrain file (GeoTIFF)' }),
  }),
  earth: strictObject({ kFactor: KFactorSchema }),
  grid: strictObject({
    cellArcSec: z.number({ error: CELL_TEXT }).positive({ error: CELL_TEXT }).max(3600, { error: CELL_TEXT }),
    bounds: BoundsSchema.optional(),
  }),
  flightLevels: z
    .array(FlightLevelSchema)
    .min(1)
    .superRefine((fls, ctx) => {
      if (!Array.isArray(fls)) return; // `always` runs this on a value that failed the list check too
      const seen = new Map<number, number>();
      fls.forEach((fl, i) => {
        if (!num(fl)) return;
        const at = seen.get(fl);
        if (at === undefined) seen.set(fl, i);
        else problem(ctx, [i], `${fl} again`, 'each flight level once', [at]);
      });
    }, always),
  sensorTypes: z.array(SensorTypeSchema, { error: SENSOR_TYPES_TEXT }),
  sites: SiteCollectionSchema,
  volumes: z.array(VolumeSchema),
  layouts: z.array(LayoutSchema).default([]),
  budget: nonNegative('M units').optional(),
  targetRcsM2: Rcs.default(SCENARIO_DEFAULTS.targetRcsM2),
  /** The target's fluctuation (Swerling case); default swerling1, common practice for aircraft scan to scan. */
  targetFluctuation: z.enum(FLUCTUATION_IDS).default(SCENARIO_DEFAULTS.targetFluctuation),
  /** The target's transponder class (worker/core/sensor.ts TRANSPONDER_CLASSES); default the low-power class. */
  targetTransponder: z.enum(TRANSPONDER_IDS).default(SCENARIO_DEFAULTS.targetTransponder),
  /** The day: flight levels become true altitudes through the altimetry of worker/core/altimetry.ts. */
  day: strictObject({
    qnhHpa: inRange(870, 1090, 'a sea-level pressure (QNH) in hPa from 870 to 1090'),
    isaDeviationC: inRange(-60, 40, 'a temperature deviation from the ISA in °C from −60 to +40'),
  }).optional(),
  /** Over-sea two-ray lobing where the reflection point lies over sea ("auto", default) or never ("off"). */
  multipath: z.enum(['auto', 'off']).default('auto'),
  maxRangeKm: positive('km').default(SCENARIO_DEFAULTS.maxRangeKm),
  /**
   * Whether targets report their pressure altitude to the multilateration fix (Mode S and ADS-B replies carry
   * it): then a fix needs 3 receivers instead of 4 (shared/sensor-kinds.ts mlatMinReceivers). Default true:
   * every transponder class the study models reports it (from memory: altitude reporting is required with the
   * transponder in controlled airspace); set false to plan for the unaided 4-receiver fix.
   */
  mlatAltitudeAided: z.boolean().default(SCENARIO_DEFAULTS.mlatAltitudeAided),
  /**
   * The record of the tool that wrote the file (worker/io/provenance.ts: version, terrain digests, conventions),
   * as the web app saves it: accepted and set aside on load, so a saved scenario opens again.
   */
  provenance: z.looseObject({}).optional(),
  /** The caution (shared/caution.ts), which `airshade init` writes into the study it makes: set aside on load. */
  caution: z.string().optional(),
});

/** The scenario with inline sites and sensor types; the output has `sites` as an array of features. */
export const ScenarioSchema = ScenarioObjectSchema.superRefine(
  (s, ctx) => checkReferences(s as unknown as Record<string, unknown>, ctx),
  always,
).transform(({ sites, provenance: _provenance, caution: _caution, ...rest }) => ({
  ...rest,
  sites: sites.features,
}));

export type Scenario = z.output<typeof ScenarioSchema>;
export type ScenarioInput = z.input<typeof ScenarioSchema>;
