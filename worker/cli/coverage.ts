/**
 * `airshade coverage`: what the network detects at each flight level, as GeoJSON layers per level and a summary.
 * Builds the footprints of every sensor in the network (a named layout, or every allowed (site, type) pair),
 * the network from them, the statistics per volume and level, and the layers.
 */
import { InputError } from '../../shared/errors.ts';
import { flToMetres, formatFl } from '../../shared/units.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../core/grid.ts';
import { Network, KINDS } from '../core/network.ts';
import { Terrain } from '../core/terrain.ts';
import { meets, volumeStats, type VolumeLevelStats } from '../core/volumes.ts';
import { maskToPolygons, maskAreaKm2 } from '../core/contour.ts';
import { featureCollection, layerFeature, stringifyGeoJson, type LayerFeatureProps } from '../io/geojson.ts';
import { encodeGeoTiff } from '../io/geotiff-write.ts';
import { NodePool } from '../node-pool.ts';
import { one, parseArgs, required, scenarioArg, threadsArg } from './args.ts';
import { writeFileChecked } from './files.ts';
import { ProgressLine } from './progress.ts';
import type { LoadedScenario } from './scenario.ts';
import { allCandidates, footprintsFor, layoutCandidates, openSession } from './session.ts';

export const COVERAGE_HELP = `airshade coverage — what the network detects at each flight level

Usage:
  airshade coverage SCENARIO.json [--fl 50,100,245] [--layout NAME] [--weather] --out DIR
                    [--threads N] [--quiet] [--debug]

Computes, on the scenario's analysis grid, every sensor's footprint (terrain-masked line of sight on the
effective earth, limited by the sensor's detection range per elevation, cone of silence, instrumented and
minimum range), and from them how many distinct sites see each cell at each flight level, per kind.
Writes DIR/coverage-FL050.geojson … (features per fold ≥1, ≥2, … for any kind, primary and secondary, and
the gaps inside each volume), DIR/summary.json (statistics per volume and flight level) and
DIR/network-floor.tif (lowest covered altitude, m AMSL).

Options:
  --fl LIST        flight levels, comma-separated (default: the scenario's flightLevels)
  --layout NAME    the network is this layout of the scenario (default: every allowed site and type)
  --weather        weather mode: primaries lose their weather loss (circular polarization in heavy rain)
  --out DIR        output folder
  --threads N      worker threads (default: one per core; 0 runs on the main thread)
`;

const SPEC = {
  fl: { value: true },
  layout: { value: true },
  weather: {},
  out: { value: true },
  threads: { value: true },
  quiet: {},
  debug: {},
  help: {},
} as const;

/** The analysis grid: the scenario's bounds (or the terrain's extent) in whole cells of cellArcSec. */
export function analysisGrid(loaded: LoadedScenario, terrain: Terrain): GridGeo {
  const s = loaded.scenario;
  const cell = s.grid.cellArcSec / 3600;
  const b = s.grid.bounds ?? terrainBounds(terrain);
  const west = Math.floor(b.west / cell + 1e-9) * cell;
  const north = Math.ceil(b.north / cell - 1e-9) * cell;
  const width = Math.max(1, Math.round((b.east - west) / cell));
  const height = Math.max(1, Math.round((north - b.south) / cell));
  return { width, height, originX: west, originY: north, pixelX: cell, pixelY: -cell, crs: WGS84_GEOGRAPHIC };
}

/** Lon/lat extent of the terrain (its corners and edge midpoints mapped back to lon/lat). */
export function terrainBounds(terrain: Terrain): {
  west: number;
  south: number;
  east: number;
  north: number;
} {
  const g = terrain.geo;
  const ll = [0, 0];
  let west = Infinity;
  let east = -Infinity;
  let south = Infinity;
  let north = -Infinity;
  for (let i = 0; i <= 8; i++) {
    for (const [x, y] of [
      [(i / 8) * g.width, 0],
      [(i / 8) * g.width, g.height],
      [0, (i / 8) * g.height],
      [g.width, (i / 8) * g.height],
    ]) {
      terrain.pixelToLonLat(x, y, ll);
      west = Math.min(west, ll[0]);
      east = Math.max(east, ll[0]);
      south = Math.min(south, ll[1]);
      north = Math.max(north, ll[1]);
    }
  }
  return { west, south, east, north };
}

export function groundOnGrid(terrain: Terrain, grid: GridGeo): Float32Array {
  const out = new Float32Array(grid.width * grid.height);
  for (let r = 0; r < grid.height; r++) {
    const lat = grid.originY + (r + 0.5) * grid.pixelY;
    for (let c = 0; c < grid.width; c++)
      out[r * grid.width + c] = terrain.sampleLonLat(grid.originX + (c + 0.5) * grid.pixelX, lat);
  }
  return out;
}

export async function coverageCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'coverage');
  if (p.flags.has('help')) {
    log(COVERAGE_HELP);
    return 0;
  }
  const scenarioPath = scenarioArg(p, 'coverage');
  const outDir = required(p, 'out', 'the output folder');
  const threads = threadsArg(p, NodePool.defaultSize());
  const started = performance.now();
  const progress = new ProgressLine('coverage', p.flags.has('quiet'));
  const session = await openSession(scenarioPath, threads, progress);
  const s = session.loaded.scenario;
  const grid = session.grid;
  const fls = parseFlightLevels(one(p, 'fl')) ?? s.flightLevels;
  const layoutName = one(p, 'layout');
  const candidates =
    layoutName === undefined ? allCandidates(session) : layoutCandidates(session, layoutName, '--layout');
  const choice = {
    candidates,
    label:
      layoutName === undefined
        ? `every allowed site and type (${candidates.length} sensors on ${s.sites.length} sites)`
        : `layout "${layoutName}" (${candidates.length} sensors)`,
  };
  const weather = p.flags.has('weather');
  const tSetup = performance.now();
  const result = { footprints: await footprintsFor(session, candidates, { weather, progress }) };
  const tFootprints = performance.now();
  const altitudes = fls.map(flToMetres);
  const network = new Network(grid.width * grid.height, altitudes, result.footprints);
  const tNetwork = performance.now();
  // The what-if figure: switching one site off and on again from the cached footprints.
  const someSite = network.siteIds()[0];
  const tw0 = performance.now();
  if (someSite !== undefined) {
    network.setSite(someSite, false);
    network.setSite(someSite, true);
  }
  const toggleMs = (performance.now() - tw0) / 2;
  progress.update(0.9, 'statistics');
  const masks = session.volumeMasks;
  const stats = volumeStats(network, s.volumes, masks, fls, grid);
  progress.update(0.92, 'layers');
  for (let f = 0; f < fls.length; f++) {
    const fc = levelLayers(network, f, fls[f], grid, s.volumes, masks);
    writeFileChecked(`${outDir}/coverage-${formatFl(fls[f])}.geojson`, stringifyGeoJson(fc));
  }
  const floor = network.networkFloor();
  writeFileChecked(`${outDir}/network-floor.tif`, encodeGeoTiff({ geo: grid, data: floor, nodata: NaN }));
  const tLayers = performance.now();
  const summary = {
    scenario: s.name,
    file: session.loaded.file,
    caution:
      'Planning aid: not a certified or flight-inspected result. Results depend on the terrain data and the refraction assumed; defer to the local authority’s standards and licensed engineering practice.',
    earth: { kFactor: s.earth.kFactor, effectiveRadiusKm: (s.earth.kFactor * 6371).toFixed(1) },
    grid: {
      cellArcSec: s.grid.cellArcSec,
      width: grid.width,
      height: grid.height,
      west: grid.originX,
      north: grid.originY,
    },
    flightLevels: fls,
    weatherMode: weather,
    network: {
      label: choice.label,
      sensors: result.footprints.map((fp) => ({ siteId: fp.siteId, typeId: fp.typeId, kind: fp.kind })),
    },
    volumes: stats,
    timingsMs: {
      setup: Math.round(tSetup - started),
      footprints: Math.round(tFootprints - tSetup),
      network: Math.round(tNetwork - tFootprints),
      siteToggle: Math.round(toggleMs * 10) / 10,
      layers: Math.round(tLayers - tNetwork),
      total: Math.round(performance.now() - started),
    },
  };
  writeFileChecked(`${outDir}/summary.json`, JSON.stringify(summary, null, 2) + '\n');
  progress.done();
  log(summaryText(s.name, choice.label, stats, fls, outDir, summary.timingsMs, s.volumes));
  return 0;
}

function parseFlightLevels(text: string | undefined): number[] | undefined {
  if (text === undefined) return undefined;
  const parts = text.split(',').map((x) => x.trim());
  const out = parts.map((x) => Number(x));
  if (parts.some((x) => !/^\d+$/.test(x)) || out.some((v) => v > 600)) {
    throw new InputError(
      '--fl',
      JSON.stringify(text),
      'flight levels as whole numbers from 0 to 600, comma-separated, e.g. 50,100,245',
    );
  }
  return [...new Set(out)].sort((a, b) => a - b);
}

type Vol = LoadedScenario['scenario']['volumes'][number];

/** One layer feature from a cell mask of the analysis grid (null when the mask is empty). */
export function maskLayer(
  mask: Uint8Array,
  grid: GridGeo,
  props: Omit<LayerFeatureProps, 'altitudeM' | 'areaKm2'>,
): ReturnType<typeof layerFeature> | null {
  const coords = maskToPolygons(mask, grid.width, grid.height, grid);
  if (coords.length === 0) return null;
  return layerFeature(coords, {
    ...props,
    altitudeM: flToMetres(props.flightLevel),
    areaKm2: maskAreaKm2(mask, grid.width, grid.height, grid),
  });
}

/** Fold layers written per kind: ≥1 … ≥4, or up to the highest fold a volume requires if that is more. */
export function maxFoldLayers(volumes: readonly Vol[]): number {
  let m = 4;
  for (const v of volumes)
    m = Math.max(m, v.requiredFold.any ?? 0, v.requiredFold.primary ?? 0, v.requiredFold.secondary ?? 0);
  return m;
}

/** One flight level's FeatureCollection: folds per kind, then the gaps inside each volume. */
export function levelLayers(
  network: Network,
  f: number,
  fl: number,
  grid: GridGeo,
  volumes: readonly Vol[],
  masks: readonly Uint8Array[],
) {
  const features = [];
  const cells = grid.width * grid.height;
  const altitudeM = flToMetres(fl);
  const mask = new Uint8Array(cells);
  for (const kind of KINDS) {
    const fold = network.foldOf(kind, f);
    let max = 0;
    for (let i = 0; i < cells; i++) if (fold[i] > max) max = fold[i];
    const siteIds = network.contributingSites(kind, f);
    for (let k = 1; k <= Math.min(max, maxFoldLayers(volumes)); k++) {
      for (let i = 0; i < cells; i++) mask[i] = fold[i] >= k ? 1 : 0;
      const f = maskLayer(mask, grid, { flightLevel: fl, fold: k, kind, siteIds, layer: 'coverage' });
      if (f) features.push(f);
    }
  }
  const any = network.foldOf('any', f);
  const pri = network.foldOf('primary', f);
  const sec = network.foldOf('secondary', f);
  volumes.forEach((v, vi) => {
    if (fl < v.flMin || fl > v.flMax) return;
    const vm = masks[vi];
    let n = 0;
    for (let i = 0; i < cells; i++) {
      mask[i] = vm[i] && !meets(v.requiredFold, any[i], pri[i], sec[i]) ? 1 : 0;
      n += mask[i];
    }
    if (n === 0) return;
    const f = maskLayer(mask, grid, {
      flightLevel: fl,
      fold: 0,
      kind: 'any',
      siteIds: [],
      layer: 'gap',
      volumeId: v.id,
    });
    if (f) features.push(f);
  });
  return featureCollection(features, { flightLevel: fl, altitudeM });
}

function summaryText(
  name: string,
  network: string,
  stats: VolumeLevelStats[],
  fls: readonly number[],
  outDir: string,
  t: Record<string, number>,
  volumes: readonly Vol[],
): string {
  const lines = [`coverage of "${name}" — network: ${network}`, ''];
  lines.push(
    `  ${'volume'.padEnd(28)} ${'level'.padEnd(6)} ${'area km²'.padStart(9)} ${'covered'.padStart(8)} ${'meets req.'.padStart(10)}`,
  );
  for (const v of volumes) {
    for (const st of stats.filter((x) => x.volumeId === v.id)) {
      lines.push(
        `  ${v.name.slice(0, 28).padEnd(28)} ${formatFl(st.flightLevel).padEnd(6)} ${st.areaKm2.toFixed(0).padStart(9)} ${(st.coveredPct.toFixed(1) + ' %').padStart(8)} ${(st.meetsRequirementPct.toFixed(1) + ' %').padStart(10)}`,
      );
    }
  }
  lines.push('');
  lines.push(
    `layers: ${outDir}/coverage-${formatFl(fls[0])}.geojson … (${fls.length} levels), ${outDir}/summary.json, ${outDir}/network-floor.tif`,
  );
  lines.push(
    `time: ${(t.total / 1000).toFixed(1)} s (footprints ${(t.footprints / 1000).toFixed(1)} s); one site switched off and on: ${t.siteToggle} ms; peak memory ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB`,
  );
  lines.push(
    'Planning aid only — not a certified or flight-inspected result; depends on terrain data and refraction.',
  );
  return lines.join('\n');
}
