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
import type { PanelHost } from './panel-host.ts';
import { appProvenance, geoJsonWithProvenance, sha256Hex } from './provenance.ts';
import { scenarioFileText } from './state.ts';

/** What the exports read of the host: the study, its results and the engine that holds the layers. */
export type ExportHost = Pick<
  PanelHost,
  'state' | 'engine' | 'study' | 'coverage' | 'outage' | 'plan' | 'nMinus1' | 'compare'
>;

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
export const scenarioFileName = (host: ExportHost) => `${slug(host.state.doc.name)}.scenario.json`;

/** The terrain tiles with the SHA-256 of the bytes the engine read. */
async function terrainDigests(host: ExportHost): Promise<FileDigest[]> {
  return host.engine.tileDigests();
}

/**
 * The scenario file as the app saves it: the working document, with a provenance that has no date and no digest
 * of itself (the same work saves to the same bytes).
 */
export async function savedScenarioText(host: ExportHost): Promise<string> {
  const p = appProvenance({
    command: 'app scenario',
    terrain: await terrainDigests(host),
    conventions: host.study?.conventions ?? null,
    kFactor: host.state.doc.earth.kFactor,
  });
  return scenarioFileText(host.state, p);
}

/** The provenance of an export: the saved scenario's digest, the terrain's, the conventions, the date. */
export async function exportProvenance(
  host: ExportHost,
  command: string,
  options: Provenance['options'] = {},
  conventions = host.coverage?.conventions ?? host.study?.conventions ?? null,
): Promise<Provenance> {
  const text = await savedScenarioText(host);
  return appProvenance({
    command,
    options,
    scenario: { file: scenarioFileName(host), sha256: await sha256Hex(text) },
    terrain: await terrainDigests(host),
    conventions,
    kFactor: host.state.doc.earth.kFactor,
    createdUtc: new Date().toISOString(),
  });
}

/** The summary document: what the app computed, its conventions, the caution and the provenance. */
export async function summaryText(host: ExportHost): Promise<string> {
  const s = host.state;
  const doc = {
    scenario: s.doc.name,
    caution: CAUTION,
    // What the figures mean, as the CLI's summary.json states it: the run's, else the scenario's as it stands.
    conventions: host.coverage?.conventions ?? host.study?.conventions ?? null,
    warnings: host.coverage?.warnings ?? host.study?.warnings ?? [],
    network: s.network,
    coverage: host.coverage,
    outage: host.outage,
    plan: host.plan
      ? {
          cost: host.plan.cost,
          // plan.json's names: what the plan spends anew (= cost), and the kept sensors already standing apart
          newSpend: host.plan.newSpend,
          existingValue: host.plan.existingValue,
          lowerBound: host.plan.lowerBound,
          gapPct: host.plan.gapPct,
          entries: host.plan.entries,
          volumes: host.plan.volumes,
          method: host.plan.method,
          solverStop: host.plan.solverStop,
        }
      : null,
    nMinus1: host.nMinus1,
    // The accuracy bounds' N−1 table, under the name outage.json gives it (it rides on the table's array).
    ...(host.nMinus1?.accuracy ? { mlatAccuracyLosses: host.nMinus1.accuracy } : {}),
    compare: host.compare,
    provenance: await exportProvenance(host, 'app summary', networkOptions(host)),
  };
  return JSON.stringify(doc, null, 2) + '\n';
}

/** The network a layer export shows, and the failed sites, as the provenance's options. */
function networkOptions(host: ExportHost): Provenance['options'] {
  const s = host.state;
  return {
    network: s.network.map((r) => `${r.siteId}:${r.typeId}`),
    ...(s.failed.length ? { failed: [...s.failed] } : {}),
  };
}

/** One level's coverage layers (as `airshade coverage` writes them), with their provenance. */
export async function levelLayersText(host: ExportHost, fl: number, p?: Provenance): Promise<string> {
  const text = await host.engine.levelGeoJson(fl);
  return geoJsonWithProvenance(text, p ?? (await exportProvenance(host, 'app layers', networkOptions(host))));
}

/** The comparison layers of one level, with their provenance. */
export async function compareLayersText(host: ExportHost, fl: number): Promise<string> {
  const names = host.compare?.names ?? ['', ''];
  const text = await host.engine.compareGeoJson(fl);
  return geoJsonWithProvenance(
    text,
    await exportProvenance(host, 'app compare', { a: names[0], b: names[1] }),
  );
}

export const layerFileName = (fl: number) => `coverage-${formatFl(fl)}.geojson`;

/**
 * Every computed level's layers, the summary and the scenario file in one zip (bytes), each layer collection with
 * the same provenance. `progress` is told after each level.
 */
export async function allLevelsZip(
  host: ExportHost,
  progress: (done: number, total: number) => void = () => {},
): Promise<{ name: string; bytes: Uint8Array; files: string[] }> {
  const levels = host.coverage?.flightLevels ?? [];
  const p = await exportProvenance(host, 'app layers', networkOptions(host));
  const entries: Record<string, Uint8Array> = {};
  for (let i = 0; i < levels.length; i++) {
    entries[layerFileName(levels[i])] = strToU8(await levelLayersText(host, levels[i], p));
    progress(i + 1, levels.length);
  }
  entries['summary.json'] = strToU8(await summaryText(host));
  entries[scenarioFileName(host)] = strToU8(await savedScenarioText(host));
  const bytes = zipSync(entries, { level: 6 });
  return { name: `${slug(host.state.doc.name)}-layers.zip`, bytes, files: Object.keys(entries) };
}
