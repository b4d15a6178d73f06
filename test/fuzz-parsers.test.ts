/**
 * Property-based fuzzing (fast-check) of the parsers that read a planner's files: the scenario (JSON text and
 * its assembly and validation), the sites CSV and GeoJSON, and the GeoTIFF header and body reader. Whatever the
 * input, each either returns or throws an InputError with a message — never another exception (a stack overflow,
 * a RangeError from an allocation, a TypeError from a missing field). Issue 13.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { readDemTile } from '../worker/io/geotiff-read.ts';
import { assembleScenario, parseJsonText, readSitesCsv, tooDeepAt } from '../worker/io/scenario-text.ts';
import {
  FIXTURE_PRIMARY,
  FIXTURE_SECONDARY,
  siteFeature,
  DEFAULT_SITES,
} from './support/scenario-fixture.ts';
import { encodeTiff } from './support/tiff-encoder.ts';

/** Runs `f`; a thrown value must be an InputError with a non-empty message. */
async function messageOrResult(f: () => unknown): Promise<void> {
  try {
    await f();
  } catch (e) {
    if (!isInputError(e)) throw new Error(`not an InputError: ${String((e as Error)?.stack ?? e)}`);
    expect(e.message.length).toBeGreaterThan(0);
  }
}

const BASE = {
  name: 'Fuzz study (invented)',
  terrain: { files: ['terrain.tif'] },
  earth: { kFactor: 1.3333 },
  grid: { cellArcSec: 60 },
  flightLevels: [50, 100],
  sensorTypes: [FIXTURE_PRIMARY, FIXTURE_SECONDARY],
  sites: { type: 'FeatureCollection', features: DEFAULT_SITES.map(siteFeature) },
  volumes: [],
};

/** A JSON value with one place replaced by an arbitrary value (by path of keys and indices). */
function mutate(value: unknown, path: readonly number[], replacement: unknown): unknown {
  if (path.length === 0 || value === null || typeof value !== 'object') return replacement;
  const keys = Object.keys(value);
  if (keys.length === 0) return replacement;
  const k = keys[path[0] % keys.length];
  const copy: Record<string, unknown> | unknown[] = Array.isArray(value) ? [...value] : { ...value };
  (copy as Record<string, unknown>)[k] = mutate(
    (value as Record<string, unknown>)[k],
    path.slice(1),
    replacement,
  );
  return copy;
}

const nested = fc
  .tuple(fc.integer({ min: 60, max: 3000 }), fc.constantFrom('[', '{"a":'))
  .map(([n, open]) => open.repeat(n) + '1' + (open === '[' ? ']' : '}').repeat(n));

const anyJsonish = fc.oneof(
  fc.jsonValue({ maxDepth: 6 }),
  fc.anything({ maxDepth: 4 }),
  fc.constantFrom(NaN, Infinity, -0, 1e308, -1e-300, '', '../x', null, [], {}),
);

describe('scenario JSON', () => {
  it('parseJsonText: any text gives a value or a message', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(fc.string(), fc.json(), nested, fc.string({ unit: 'binary' })),
        async (text) => messageOrResult(() => parseJsonText(text, 'fuzz.json', 'a scenario file (JSON)')),
      ),
      { numRuns: 400 },
    );
  });

  it('tooDeepAt finds nesting past the limit and ignores brackets inside strings', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 200 }), (n) => {
        const text = '['.repeat(n) + ']'.repeat(n);
        expect(tooDeepAt(text, 64) >= 0).toBe(n > 64);
        expect(tooDeepAt(`"${'['.repeat(n)}"`, 64)).toBe(-1);
      }),
    );
  });

  it('assembleScenario: a valid scenario with any one field replaced by anything gives a result or a message', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(fc.nat(), { maxLength: 6 }), anyJsonish, async (path, replacement) =>
        messageOrResult(() =>
          assembleScenario(mutate(BASE, path, replacement), 'fuzz.json', (field, ref) => ({
            display: ref,
            text: field === 'sites' ? 'lon,lat,id,name,mastHeightM,siteCost\n-30,-41,a,A,10,1\n' : '[]',
          })),
        ),
      ),
      { numRuns: 400 },
    );
  });

  it('assembleScenario: referenced files with any text give a result or a message', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom('sites.csv', 'sites.geojson', 'types.json'),
        fc.oneof(fc.string(), fc.json(), nested),
        async (ref, text) =>
          messageOrResult(() =>
            assembleScenario(
              { ...BASE, ...(ref === 'types.json' ? { sensorTypes: ref } : { sites: ref }) },
              'fuzz.json',
              () => ({ display: ref, text }),
            ),
          ),
      ),
      { numRuns: 300 },
    );
  });
});

describe('sites CSV', () => {
  const cell = fc.oneof(
    fc.string({ maxLength: 8 }),
    fc.double().map(String),
    fc.constantFrom('', '"', '""', '"a,b"', 'true', '-0', '1e999', 'NaN'),
  );
  const header = fc.shuffledSubarray(
    ['lon', 'lat', 'id', 'name', 'mastHeightM', 'siteCost', 'existing', 'allowedTypes', 'tiltDeg', 'x'],
    { minLength: 0 },
  );
  it('readSitesCsv: any table gives sites or a message', async () => {
    await fc.assert(
      fc.asyncProperty(
        header,
        fc.array(fc.array(cell, { maxLength: 11 }), { maxLength: 6 }),
        fc.constantFrom('\n', '\r\n', '\r'),
        async (cols, rows, eol) =>
          messageOrResult(() =>
            readSitesCsv([cols.join(','), ...rows.map((r) => r.join(','))].join(eol), 'fuzz.csv'),
          ),
      ),
      { numRuns: 400 },
    );
  });
  it('readSitesCsv: any text gives sites or a message', async () => {
    await fc.assert(
      fc.asyncProperty(fc.string({ unit: 'binary' }), async (text) =>
        messageOrResult(() => readSitesCsv(text, 'fuzz.csv')),
      ),
      { numRuns: 300 },
    );
  });
});

describe('GeoTIFF', () => {
  const tiles = [
    encodeTiff({
      width: 16,
      height: 12,
      values: Array.from({ length: 192 }, (_, i) => i % 37),
      sampleType: 'int16',
      georef: { x0: -31, y0: -40, dx: 0.01, dy: 0.01 },
    }),
    encodeTiff({
      width: 16,
      height: 16,
      values: Array.from({ length: 256 }, (_, i) => i * 0.5),
      sampleType: 'float32',
      compression: 'deflate',
      predictor: 3,
      layout: { kind: 'tiles', tileWidth: 16, tileHeight: 16 },
      georef: { x0: -31, y0: -40, dx: 0.01, dy: 0.01 },
      nodata: '-9999',
    }),
  ];

  it('readDemTile: a valid tile with bytes overwritten, a field made huge, or cut short gives a tile or a message', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.nat({ max: tiles.length - 1 }),
        fc.array(fc.tuple(fc.nat(), fc.oneof(fc.integer({ min: 0, max: 255 }), fc.constant(0xff))), {
          minLength: 1,
          maxLength: 8,
        }),
        fc.option(fc.nat(), { nil: undefined }),
        async (which, edits, cut) => {
          const src = new Uint8Array(tiles[which]);
          const bytes = src.slice(0, cut === undefined ? src.length : cut % (src.length + 1));
          // Header bytes (the first 300) are hit more often: that is where the sizes and offsets live.
          for (const [at, v] of edits)
            if (bytes.length) bytes[at % Math.min(bytes.length, at % 2 ? 300 : bytes.length)] = v;
          await messageOrResult(() => readDemTile(bytes.buffer, 'fuzz.tif'));
        },
      ),
      { numRuns: 300 },
    );
  });

  it('readDemTile: any bytes give a tile or a message', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.uint8Array({ maxLength: 64 }),
          fc
            .uint8Array({ maxLength: 200 })
            .map((b) => Uint8Array.from([0x49, 0x49, 42, 0, 8, 0, 0, 0, ...b])),
        ),
        async (b) => messageOrResult(() => readDemTile(b.slice().buffer, 'fuzz.tif')),
      ),
      { numRuns: 300 },
    );
  });
});
