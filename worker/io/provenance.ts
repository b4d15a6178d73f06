/**
 * Provenance of an output (DESIGN §5): which tool and version made it, from which files (SHA-256 of the bytes
 * read), with which options, and under which conventions (k, target, day, flight levels, sea lobing). Every
 * GeoJSON collection, JSON document, SVG and GeoTIFF the CLI writes carries one: as the `provenance` member, in
 * the SVG's <metadata>, and in the GeoTIFF's ImageDescription after the caution. Pure: the CLI fills it
 * (worker/cli/provenance.ts).
 */
import type { Day } from '../core/altimetry.ts';
import type { Target } from '../core/sensor.ts';

/** A file an output was computed from: its absolute path and the SHA-256 (lowercase hex) of the bytes read. */
export interface FileDigest {
  file: string;
  sha256: string;
}

/** The options of a command that can change its result, as given (flags as true, repeated options as lists). */
export type CommandOptions = Record<string, string | string[] | true>;

export interface Provenance {
  tool: 'airshade';
  /** package.json's version. */
  version: string;
  /** The git commit of the checkout the tool ran from, when it could be read (absent in an installed copy). */
  commit?: string;
  /**
   * When the run started (ISO 8601, UTC). Absent from outputs whose bytes are meant to be the same for the same
   * inputs (layers, rasters, plan.json): their run's JSON document holds it.
   */
  createdUtc?: string;
  command: string;
  options: CommandOptions;
  /** The scenario file, and the sensor-type and site files it names (absent when inline); none for `floor`. */
  scenario?: FileDigest;
  sensorTypes?: FileDigest;
  sites?: FileDigest;
  /** Each terrain (DEM) tile, in the order read. */
  terrain: FileDigest[];
  kFactor: number;
  target?: Target & { text: string };
  day?: Day & { text: string };
  /** Each flight level with its pressure altitude and its true altitude on the day (m). */
  flightLevels?: { flightLevel: number; pressureAltitudeM: number; trueAltitudeM: number }[];
  multipath?: 'auto' | 'off';
  /** `floor`: the antenna (the command's own inputs, as parsed). */
  antenna?: { lon: number; lat: number; mastM: number };
  maxRangeKm?: number;
}

/** The provenance without its date, for outputs that must be the same bytes for the same inputs. */
export function undated(p: Provenance): Provenance {
  const out = { ...p };
  delete out.createdUtc;
  return out;
}

/**
 * The provenance as JSON in printable ASCII (every other character as a \uXXXX escape), as a TIFF ASCII field
 * holds it; JSON.parse gives the same object back.
 */
export function provenanceAscii(p: Provenance): string {
  return JSON.stringify(p).replace(
    /[^\x20-\x7e]/g,
    (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`,
  );
}

/** What separates the caution from the provenance JSON in a GeoTIFF's ImageDescription. */
export const PROVENANCE_MARK = ' Provenance: ';

/** The provenance written after `text` in a GeoTIFF's ImageDescription (printable ASCII). */
export function describeWithProvenance(text: string, p: Provenance): string {
  return `${text}${PROVENANCE_MARK}${provenanceAscii(p)}`;
}

/** The provenance back from an ImageDescription written by `describeWithProvenance` (null when it has none). */
export function provenanceOfDescription(description: string): Provenance | null {
  const at = description.indexOf(PROVENANCE_MARK);
  if (at < 0) return null;
  return JSON.parse(description.slice(at + PROVENANCE_MARK.length).replace(/\0+$/, '')) as Provenance;
}
