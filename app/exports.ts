/**
 * What the Files panel writes: the scenario file, a level's coverage layers, every level's layers at once, the
 * summary — each with its provenance (app/provenance.ts) and the caution.
 *
 * Every level at once is one zip file (fflate, a small, well-kept zip library with no dependencies) holding what
 * `airshade coverage` writes into its folder: coverage-FLxxx.geojson per level and summary.json, plus the scenario
 * file the provenance names. One file rather than a download per level: browsers ask before letting a page start
 * several downloads, and a planner gets one archive to file with the safety case. GeoJSON packs well (deflate
 * level 6, about a tenth of its size).
 */
import { zipSync, strToU8 } from 'fflate';
import { CAUTION } from '../shared/caution.ts';
import { formatFl } from '../shared/units.ts';
import type { FileDigest, Provenance } from '../worker/io/provenance.ts';
import type { App } from './app.ts';
import { appProvenance, geoJsonWithProvenance, sha256Hex } from './provenance.ts';
import { scenarioFileText } from './state.ts';

/** A file-name stem from a study's name: lower case, words joined by "-", at most 40 characters. */
export function slug(s: string): string {
  return (
    s
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, '-')
      .slice(0, 40)
      .replace(/^-+|-+$/g, '') || 'scenario'
  );
}

/** The scenario file's name when saved. */
export const scenarioFileName = (app: App) => `${slug(app.state.doc.name)}.scenario.json`;

/** The terrain tiles with the SHA-256 of the bytes the engine read. */
async function terrainDigests(app: App): Promise<FileDigest[]> {
  return app.engine.tileDigests();
}

/**
 * The scenario file as the app saves it: the working document, with a provenance that has no date and no digest
 * of itself (the same work saves to the same bytes).
 */
export async function savedScenarioText(app: App): Promise<string> {
  const p = appProvenance({
    command: 'app scenario',
    terrain: await terrainDigests(app),
    conventions: app.study?.conventions ?? null,
    kFactor: app.state.doc.earth.kFactor,
  });
  return scenarioFileText(app.state, p);
}

/** The provenance of an export: the saved scenario's digest, the terrain's, the conventions, the date. */
export async function exportProvenance(
  app: App,
  command: string,
  options: Provenance['options'] = {},
  conventions = app.coverage?.conventions ?? app.study?.conventions ?? null,
): Promise<Provenance> {
  const text = await savedScenarioText(app);
  return appProvenance({
    command,
    options,
    scenario: { file: scenarioFileName(app), sha256: await sha256Hex(text) },
    terrain: await terrainDigests(app),
    conventions,
    kFactor: app.state.doc.earth.kFactor,
    createdUtc: new Date().toISOString(),
  });
}

/** The summary document: what the app computed, its conventions, the caution and the provenance. */
export async function summaryText(app: App): Promise<string> {
  const s = app.state;
  const doc = {
    scenario: s.doc.name,
    caution: CAUTION,
    // What the figures mean, as the CLI's summary.json states it: the run's, else the scenario's as it stands.
    conventions: app.coverage?.conventions ?? app.study?.conventions ?? null,
    warnings: app.coverage?.warnings ?? app.study?.warnings ?? [],
    network: s.network,
    coverage: app.coverage,
    outage: app.outage,
    plan: app.plan
      ? {
          cost: app.plan.cost,
          lowerBound: app.plan.lowerBound,
          gapPct: app.plan.gapPct,
          entries: app.plan.entries,
          volumes: app.plan.volumes,
          method: app.plan.method,
          solverStop: app.plan.solverStop,
        }
      : null,
    nMinus1: app.nMinus1,
    compare: app.compare,
    provenance: await exportProvenance(app, 'app summary', networkOptions(app)),
  };
  return JSON.stringify(doc, null, 2) + '\n';
}

/** The network a layer export shows, and the failed sites, as the provenance's options. */
function networkOptions(app: App): Provenance['options'] {
  const s = app.state;
  return {
    network: s.network.map((r) => `${r.siteId}:${r.typeId}`),
    ...(s.failed.length ? { failed: [...s.failed] } : {}),
  };
}

/** One level's coverage layers (as `airshade coverage` writes them), with their provenance. */
export async function levelLayersText(app: App, fl: number, p?: Provenance): Promise<string> {
  const text = await app.engine.levelGeoJson(fl);
  return geoJsonWithProvenance(text, p ?? (await exportProvenance(app, 'app layers', networkOptions(app))));
}

/** The comparison layers of one level, with their provenance. */
export async function compareLayersText(app: App, fl: number): Promise<string> {
  const names = app.compare?.names ?? ['', ''];
  const text = await app.engine.compareGeoJson(fl);
  return geoJsonWithProvenance(
    text,
    await exportProvenance(app, 'app compare', { a: names[0], b: names[1] }),
  );
}

export const layerFileName = (fl: number) => `coverage-${formatFl(fl)}.geojson`;

/**
 * Every computed level's layers, the summary and the scenario file in one zip (bytes), each layer collection with
 * the same provenance. `progress` is told after each level.
 */
export async function allLevelsZip(
  app: App,
  progress: (done: number, total: number) => void = () => {},
): Promise<{ name: string; bytes: Uint8Array; files: string[] }> {
  const levels = app.coverage?.flightLevels ?? [];
  const p = await exportProvenance(app, 'app layers', networkOptions(app));
  const entries: Record<string, Uint8Array> = {};
  for (let i = 0; i < levels.length; i++) {
    entries[layerFileName(levels[i])] = strToU8(await levelLayersText(app, levels[i], p));
    progress(i + 1, levels.length);
  }
  entries['summary.json'] = strToU8(await summaryText(app));
  entries[scenarioFileName(app)] = strToU8(await savedScenarioText(app));
  const bytes = zipSync(entries, { level: 6 });
  return { name: `${slug(app.state.doc.name)}-layers.zip`, bytes, files: Object.keys(entries) };
}
