/**
 * Scenario files in the browser: the scenario JSON with the files it names (a sites file, a sensor-type list,
 * GeoTIFF tiles) picked or dropped together and matched by file name, assembled and validated by the same code
 * as the CLI (worker/io/scenario-text.ts), so the messages name the same files and fields. And the demo, fetched
 * from the app's own site.
 */
import { InputError } from '../shared/errors.ts';
import { showValue, type Scenario } from '../shared/scenario.ts';
import { givenJson, givenSites, type GivenFile } from '../worker/io/new-study.ts';
import { assembleScenario, parseJsonText } from '../worker/io/scenario-text.ts';

const baseName = (p: string) => p.split(/[\\/]/).pop() ?? p;
const utf8 = new TextDecoder('utf-8', { fatal: true });

async function textOf(f: Blob, name: string, what: string): Promise<string> {
  try {
    return utf8.decode(await f.arrayBuffer());
  } catch {
    throw new InputError(name, 'bytes that are not UTF-8 text', what);
  }
}

export interface PickedScenario {
  scenario: Scenario;
  source: string;
  /** The terrain tiles the scenario names that were picked with it, by name. */
  tiles: { name: string; file: File }[];
  /** Tiles the scenario names that were not among the picked files. */
  missingTiles: string[];
}

export const isTiff = (name: string) => /\.tiff?$/i.test(name);

/**
 * A scenario from picked files: exactly one .json file that is a scenario (the others may be its sensor types or
 * sites), plus whatever it names.
 */
export async function readPickedScenario(files: File[]): Promise<PickedScenario> {
  const texts = new Map<string, string>();
  for (const f of files) if (!isTiff(f.name)) texts.set(f.name, await textOf(f, f.name, 'a text file'));
  const candidates: { name: string; json: unknown }[] = [];
  for (const [name, text] of texts) {
    if (!/\.json$/i.test(name)) continue;
    const json = parseJsonText(text, name, 'a scenario file (JSON)');
    if (json && typeof json === 'object' && !Array.isArray(json) && 'terrain' in json)
      candidates.push({ name, json });
  }
  if (candidates.length !== 1) {
    throw new InputError(
      files.map((f) => f.name).join(', ') || 'the picked files',
      candidates.length === 0 ? 'no scenario file among them' : `${candidates.length} scenario files`,
      'one scenario file (JSON with a "terrain" field), with the files it names if they are not inline',
    );
  }
  const { name, json } = candidates[0];
  const { scenario } = assembleScenario(json, name, (field, ref, what) => {
    const text = texts.get(baseName(ref));
    if (text === undefined)
      throw new InputError(
        `${name}: ${field}`,
        `${showValue(ref)}, a file not picked with the scenario`,
        what,
      );
    return { display: baseName(ref), text };
  });
  const byName = new Map(files.filter((f) => isTiff(f.name)).map((f) => [f.name, f]));
  const tiles: PickedScenario['tiles'] = [];
  const missingTiles: string[] = [];
  for (const ref of scenario.terrain.files) {
    const f = byName.get(baseName(ref));
    if (f) tiles.push({ name: f.name, file: f });
    else missingTiles.push(baseName(ref));
  }
  return { scenario, source: name, tiles, missingTiles };
}

/** The demo (or any scenario served with the app): the scenario and the files it names, fetched. */
export async function fetchScenario(
  url: string,
): Promise<{ scenario: Scenario; tileUrls: { name: string; url: string }[] }> {
  const base = new URL(url, location.href);
  const get = async (u: URL, what: string) => {
    const res = await fetch(u);
    if (!res.ok) throw new InputError(u.pathname, `HTTP ${res.status}`, what);
    return res.text();
  };
  const display = baseName(base.pathname);
  const json = parseJsonText(await get(base, 'the demo scenario'), display, 'a scenario file (JSON)');
  // Referenced files are fetched first (assembleScenario reads synchronously).
  const refs = new Map<string, string>();
  if (json && typeof json === 'object') {
    for (const field of ['sensorTypes', 'sites'] as const) {
      const ref = (json as Record<string, unknown>)[field];
      if (typeof ref === 'string')
        refs.set(ref, await get(new URL(ref, base), `the file the scenario names in ${field}`));
    }
  }
  const { scenario } = assembleScenario(json, display, (_field, ref) => ({
    display: ref,
    text: refs.get(ref)!,
  }));
  const tileUrls = scenario.terrain.files.map((f) => ({ name: baseName(f), url: new URL(f, base).href }));
  return { scenario, tileUrls };
}

/**
 * Sites from a picked GeoJSON or CSV file, as a FeatureCollection (not yet validated), with the locator that
 * names a field in the file: a CSV row and column (`sites.csv: row 7, column "lat"`), or a GeoJSON path. Read as
 * `airshade init` reads it (worker/io/new-study.ts givenSites).
 */
export async function readSitesFile(f: Blob & { name: string }): Promise<GivenFile> {
  return givenSites(await textOf(f, f.name, 'a sites file (GeoJSON or CSV)'), f.name);
}

/** A picked JSON or GeoJSON file, parsed (line and column on a syntax error). */
export async function readJsonFile(f: Blob & { name: string }, what: string): Promise<GivenFile> {
  return givenJson(await textOf(f, f.name, what), f.name, what);
}

/** The polygons of a picked GeoJSON file (Polygon / MultiPolygon geometries, features or a collection). */
export async function readPolygonFile(f: File): Promise<{ name: string; polygon: unknown }[]> {
  const json = parseJsonText(await textOf(f, f.name, 'a GeoJSON file'), f.name, 'GeoJSON with polygons');
  const out: { name: string; polygon: unknown }[] = [];
  const visit = (g: unknown, name: string) => {
    if (!g || typeof g !== 'object') return;
    const o = g as Record<string, unknown>;
    if (o.type === 'FeatureCollection' && Array.isArray(o.features))
      o.features.forEach((x, i) => visit(x, `${name} ${i + 1}`));
    else if (o.type === 'Feature') {
      const p = (o.properties ?? {}) as Record<string, unknown>;
      visit(o.geometry, typeof p.name === 'string' ? p.name : name);
    } else if (o.type === 'Polygon' || o.type === 'MultiPolygon') out.push({ name, polygon: g });
  };
  visit(json, f.name.replace(/\.(geo)?json$/i, ''));
  if (out.length === 0)
    throw new InputError(f.name, 'no Polygon or MultiPolygon in it', 'GeoJSON with at least one polygon');
  return out;
}
