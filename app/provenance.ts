/**
 * Provenance of the web app's exports (DESIGN §5; the type is the CLI's, worker/io/provenance.ts): the tool and
 * its version (package.json's, put in at build time), the SHA-256 of the scenario as the app saves it and of each
 * terrain tile as the engine read it, the study's conventions (k, target, day, flight levels with their true
 * altitudes, sea lobing) and the date. Every GeoJSON collection carries it as its top-level `provenance` member,
 * every JSON document as a `provenance` field, the saved scenario file too (without a date and without a digest
 * of itself, so that the same work saves to the same bytes, and the digest the layers name is the file's).
 */
import { version } from '../package.json';
import type { Geometry } from 'geojson';
import { stringifyGeoJson, type LayerCollection } from '../worker/io/geojson.ts';
import type { CommandOptions, FileDigest, Provenance } from '../worker/io/provenance.ts';
import type { StudyConventions } from '../worker/io/study.ts';

/** package.json's version, read when the app is built. */
export const APP_VERSION: string = version;

const hex = (buf: ArrayBuffer) =>
  Array.from(new Uint8Array(buf), (b) => b.toString(16).padStart(2, '0')).join('');

/** SHA-256 (lowercase hex) of text (as UTF-8) or bytes, through the Web Crypto API. */
export async function sha256Hex(data: string | ArrayBuffer | Uint8Array): Promise<string> {
  const bytes = typeof data === 'string' ? new TextEncoder().encode(data) : data;
  return hex(await crypto.subtle.digest('SHA-256', bytes as BufferSource));
}

export interface AppProvenanceInput {
  /** What the app made: `app layers`, `app summary`, `app scenario`, `app compare`, `app diagram`. */
  command: string;
  options?: CommandOptions;
  /** The scenario file as the app saves it, and its digest (absent for the scenario file itself). */
  scenario?: FileDigest;
  terrain: FileDigest[];
  /** The study's conventions (the engine's), or null before a study exists. */
  conventions: StudyConventions | null;
  /** The scenario's k (used when no conventions are known). */
  kFactor: number;
  /** ISO 8601 UTC; absent for the saved scenario. */
  createdUtc?: string;
  version?: string;
}

/** The provenance of one export of the app. */
export function appProvenance(x: AppProvenanceInput): Provenance {
  const c = x.conventions;
  return {
    tool: 'airshade',
    version: x.version ?? APP_VERSION,
    ...(x.createdUtc ? { createdUtc: x.createdUtc } : {}),
    command: x.command,
    options: x.options ?? {},
    ...(x.scenario ? { scenario: x.scenario } : {}),
    terrain: x.terrain.map((t) => ({ ...t })),
    kFactor: c?.kFactor ?? x.kFactor,
    ...(c
      ? {
          target: c.target,
          day: c.day,
          flightLevels: c.levels,
          multipath: c.multipath,
        }
      : {}),
  };
}

/** A GeoJSON collection's text with `provenance` as a top-level member (written as the CLI writes layers). */
export function geoJsonWithProvenance(text: string, p: Provenance): string {
  const fc = JSON.parse(text) as LayerCollection<Geometry, unknown>;
  fc.provenance = p;
  return stringifyGeoJson(fc);
}
