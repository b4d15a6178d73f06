/**
 * A new study from the planner's own data, pure (no file access, no DOM), shared by `airshade init` and the app:
 * from the DEM tiles' georeferencing (any CRS), the sites (CSV or GeoJSON), optional volumes (GeoJSON polygons)
 * and sensor types (else the default catalog, given by the caller), the scenario document of DESIGN §5, checked
 * with `parseScenario` and `checkAgainstTerrain` before it is returned. Nothing of the demo is used: no names,
 * sites, volumes or layouts.
 *
 * What is chosen, and why:
 * - The study area (`grid.bounds`) is the geographic bounding box of the tiles (each tile's outline, densified,
 *   mapped to lon/lat through its CRS), shrunk to whole analysis cells, so that every cell lies inside it.
 * - The analysis cell (`chooseCell`): the finest of CELL_LADDER_ARCSEC that is no finer than the DEM's pixel (a
 *   finer cell shows nothing the terrain can tell) and keeps the grid within MAX_GRID_CELLS cells.
 * - Flight levels 30, 50, 100, 150, 200, 300, 400: terminal, low, middle and upper levels (common practice for a
 *   network study). k = 4/3, the standard atmosphere's effective earth (docs/PHYSICS.md). The target: 2 m²,
 *   Swerling 1, the low-power transponder class (the schema's defaults, common practice for a small aircraft seen
 *   scan to scan). The ICAO standard day, written out. Sea lobing "auto", analysis out to 400 km (the schema's
 *   defaults).
 * - Sensor types and sites are copied into the study (inline), so the study is one file beside its terrain: it
 *   can be moved with its tiles, the app opens it with the tiles alone, the SHA-256 of the scenario in every
 *   output's provenance covers the sensor figures, and a later revision of the default catalog cannot change a
 *   study silently. Terrain tiles are referenced (`terrain.files`, as the caller gives them).
 * - Without a volumes file, one volume "study-area": the study area (clipped to where some tile has terrain, when
 *   the tiles do not fill their bounding box), from the lowest to the highest level, needing fold 1 of each
 *   sensor kind that the sites may carry.
 * - A volumes file: GeoJSON polygons (a FeatureCollection, a Feature or a bare geometry); each feature's
 *   properties may give id, name, flMin, flMax, altitudeBand, requiredFold (or flat primaryFold, secondaryFold,
 *   anyFold, adsbFold, mlatFold), requiredMlatAccuracyM (the multilateration fix's 1σ horizontal DRMS bound, m),
 *   weight and a target (targetRcsM2, targetFluctuation, targetTransponder); the rest comes from the defaults
 *   above. Other properties are ignored and listed in a warning. Each value is checked by the scenario schema,
 *   and a bad one is named by its feature and property.
 *
 * Every problem names the file it comes from: a CSV row and column (`sites.csv: row 7, column "lat"`), a GeoJSON
 * feature and property (`volumes.geojson: features[2].properties.flMin`), a site off the terrain with its id,
 * position and the DEM's extent.
 */
import { isRadarKind, SENSOR_KINDS, type SensorKind } from '../../shared/sensor-kinds.ts';
import { area } from '@turf/area';
import { featureCollection, polygon as turfPolygon } from '@turf/helpers';
import { intersect } from '@turf/intersect';
import { union } from '@turf/union';
import type { MultiPolygon, Polygon } from 'geojson';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import {
  fileLocator,
  formatPath,
  parseScenario,
  SCENARIO_DEFAULTS,
  ScenarioError,
  showValue,
  type Bounds,
  type FieldPath,
  type Locator,
  type Scenario,
} from '../../shared/scenario.ts';
import { ISA_SEA_LEVEL_PRESSURE_HPA, NM_M } from '../../shared/units.ts';
import { gridMapper, type GridGeo } from '../core/grid.ts';
import { checkAgainstTerrain, csvLocator, isRecord, parseJsonText, readSitesCsv } from './scenario-text.ts';

// ---------------------------------------------------------------------------------------------------
// Defaults

/** The defaults of a new study (see the module comment for the reason of each). */
export const NEW_STUDY_DEFAULTS = Object.freeze({
  flightLevels: Object.freeze([30, 50, 100, 150, 200, 300, 400]),
  kFactor: 4 / 3,
  targetRcsM2: SCENARIO_DEFAULTS.targetRcsM2,
  targetFluctuation: SCENARIO_DEFAULTS.targetFluctuation,
  targetTransponder: SCENARIO_DEFAULTS.targetTransponder,
  day: Object.freeze({ qnhHpa: ISA_SEA_LEVEL_PRESSURE_HPA, isaDeviationC: 0 }),
  multipath: 'auto',
  maxRangeKm: SCENARIO_DEFAULTS.maxRangeKm,
});

/**
 * Most analysis cells a new study's grid gets. A coverage run costs about cells × sensors × levels after the
 * per-site sweeps; 400 000 cells (about 630 × 630) is the size of grid this project's own runs are sized for (a
 * 5° × 5° area at 30″ is 360 000): a run of a few dozen sites stays within minutes on two cores. Our own choice,
 * not a figure from elsewhere; the cell can be changed in the file (`grid.cellArcSec`).
 */
export const MAX_GRID_CELLS = 400_000;

/** Cell sizes (arc-seconds) to pick from: each divides a degree, so cell edges fall on whole degrees. */
export const CELL_LADDER_ARCSEC = Object.freeze([
  1, 2, 3, 5, 6, 10, 12, 15, 20, 30, 45, 60, 90, 120, 180, 240, 300, 600, 900, 1800, 3600,
]);

/**
 * Metres per arc-second of latitude, to compare a projected DEM's pixel with a cell in arc-seconds: one nautical
 * mile (1852 m) per minute of arc (the definition of the international nautical mile; common practice).
 */
export const M_PER_ARCSEC = NM_M / 60;

/** Id of the volume a study gets when no volumes file is given. */
export const STUDY_AREA_VOLUME_ID = 'study-area';

// ---------------------------------------------------------------------------------------------------
// The terrain's extent and the cell

/** A DEM tile as the builder needs it: how `terrain.files` will name it, a name for messages, its grid. */
export interface StudyTile {
  /** The path written into `terrain.files` (relative to the study file, as the caller decides). */
  ref: string;
  /** As shown in messages (the path the user gave, or the file name). */
  name: string;
  geo: GridGeo;
}

/** Points along each edge of a tile's outline when it is mapped to lon/lat. */
const OUTLINE_STEPS = 32;

/** A tile's outline in lon/lat (closed ring, counter-clockwise), OUTLINE_STEPS points per edge. */
export function tileOutline(geo: GridGeo): [number, number][] {
  const m = gridMapper(geo);
  const out: [number, number][] = [];
  const ll = [0, 0];
  const { width: w, height: h } = geo;
  // Pixel rows grow southward on a north-up raster: (0, h) is the south-west corner.
  const edges: [number, number, number, number][] = [
    [0, h, w, h],
    [w, h, w, 0],
    [w, 0, 0, 0],
    [0, 0, 0, h],
  ];
  for (const [x0, y0, x1, y1] of edges) {
    for (let k = 0; k < OUTLINE_STEPS; k++) {
      const f = k / OUTLINE_STEPS;
      try {
        m.pixelToLonLat(x0 + f * (x1 - x0), y0 + f * (y1 - y0), ll);
      } catch {
        continue; // outside the projection's domain
      }
      if (Number.isFinite(ll[0]) && Number.isFinite(ll[1])) out.push([ll[0], ll[1]]);
    }
  }
  if (out.length > 0) out.push([out[0][0], out[0][1]]);
  if (geo.pixelY > 0) out.reverse(); // a south-up raster walks the other way round
  return out;
}

/** Lon/lat bounding box of the tiles (their densified outlines). */
export function demBounds(tiles: readonly Pick<StudyTile, 'name' | 'geo'>[]): Bounds {
  let west = Infinity;
  let east = -Infinity;
  let south = Infinity;
  let north = -Infinity;
  for (const t of tiles) {
    const ring = tileOutline(t.geo);
    if (ring.length < 4) {
      throw new InputError(
        t.name,
        `a tile that ${t.geo.crs.label} cannot place on the earth`,
        'a DEM tile whose corners map to longitude and latitude',
      );
    }
    for (const [lon, lat] of ring) {
      west = Math.min(west, lon);
      east = Math.max(east, lon);
      south = Math.min(south, lat);
      north = Math.max(north, lat);
    }
  }
  if (tiles.length === 0) {
    throw new InputError('--dem', 'no DEM tiles', 'at least one GeoTIFF elevation tile');
  }
  if (west < -180 || east > 180) {
    throw new InputError(
      tiles.map((t) => t.name).join(', '),
      `tiles reaching to longitude ${fmtDeg(west < -180 ? west : east)}`,
      'tiles within longitudes −180…180 (studies across the antimeridian are not supported)',
    );
  }
  return { west, south, east, north };
}

/**
 * The DEM's pixel in arc-seconds of latitude: the latitude step of one pixel down the first tile's centre column
 * (the terrain mosaic lies on the first tile's lattice, worker/core/terrain.ts). For a geographic tile this is its
 * pixel height in arc-seconds; for a projected one, its pixel's ground length north–south over M_PER_ARCSEC.
 */
export function demPixelArcSec(geo: GridGeo): number {
  const m = gridMapper(geo);
  const a = [0, 0];
  const b = [0, 0];
  const cx = geo.width / 2;
  const cy = geo.height / 2;
  m.pixelToLonLat(cx, cy - 0.5, a);
  m.pixelToLonLat(cx, cy + 0.5, b);
  return Math.abs(a[1] - b[1]) * 3600;
}

/** `bounds` shrunk to whole cells of `cellArcSec` (edges on multiples of the cell), and its size in cells. */
export function shrinkToCells(
  b: Bounds,
  cellArcSec: number,
): { bounds: Bounds; width: number; height: number } {
  const eps = 1e-6;
  const w = Math.ceil((b.west * 3600) / cellArcSec - eps);
  const e = Math.floor((b.east * 3600) / cellArcSec + eps);
  const s = Math.ceil((b.south * 3600) / cellArcSec - eps);
  const n = Math.floor((b.north * 3600) / cellArcSec + eps);
  const deg = (k: number) => Number(((k * cellArcSec) / 3600).toFixed(9));
  return {
    bounds: { west: deg(w), south: deg(s), east: deg(e), north: deg(n) },
    width: Math.max(0, e - w),
    height: Math.max(0, n - s),
  };
}

export interface CellChoice {
  cellArcSec: number;
  /** The study area: the DEM's bounds shrunk to whole cells. */
  bounds: Bounds;
  width: number;
  height: number;
  demPixelArcSec: number;
  /** The rule in words, with this study's figures. */
  rule: string;
}

/** Fewest cells across the study area in either direction. */
const MIN_CELLS_ACROSS = 2;

/**
 * The analysis cell: the finest of CELL_LADDER_ARCSEC that is no finer than the DEM's pixel and keeps the grid
 * (the DEM's bounds shrunk to whole cells) within MAX_GRID_CELLS. Throws when the DEM is too small to hold
 * MIN_CELLS_ACROSS cells each way.
 */
export function chooseCell(dem: Bounds, pixelArcSec: number, where: string): CellChoice {
  const floor = Number.isFinite(pixelArcSec) && pixelArcSec > 0 ? pixelArcSec : 0;
  const ladder = CELL_LADDER_ARCSEC.filter((c) => c >= floor * (1 - 1e-6));
  for (const cell of ladder.length ? ladder : [3600]) {
    const g = shrinkToCells(dem, cell);
    if (g.width * g.height > MAX_GRID_CELLS) continue;
    if (g.width < MIN_CELLS_ACROSS || g.height < MIN_CELLS_ACROSS) break;
    const limitedBy =
      cell === ladder[0] ? "the DEM's pixel" : `the ${MAX_GRID_CELLS.toLocaleString('en-US')}-cell limit`;
    return {
      cellArcSec: cell,
      ...g,
      demPixelArcSec: pixelArcSec,
      rule:
        `no finer than the DEM's ${fmtArcSec(pixelArcSec)} pixel, at most ${MAX_GRID_CELLS.toLocaleString('en-US')} cells, ` +
        `from ${CELL_LADDER_ARCSEC.slice(0, 4).join(', ')} … ${CELL_LADDER_ARCSEC[CELL_LADDER_ARCSEC.length - 1]}″; set by ${limitedBy}`,
    };
  }
  throw new InputError(
    where,
    `terrain of ${fmtDeg(dem.east - dem.west)}° × ${fmtDeg(dem.north - dem.south)}° with ${fmtArcSec(pixelArcSec)} pixels`,
    `terrain at least ${MIN_CELLS_ACROSS} analysis cells across each way (a larger DEM)`,
  );
}

// ---------------------------------------------------------------------------------------------------
// Inputs

/** A file the planner gave, parsed, with the locator that names a place inside its value in messages. */
export interface GivenFile<T = unknown> {
  display: string;
  value: T;
  /** Names a path inside `value` (['features', 3, 'properties', 'lat'] → `sites.csv: row 5, column "lat"`). */
  locate?: Locator;
}

/** Sites from a file's text: CSV when the name ends in .csv, else a GeoJSON FeatureCollection of Points. */
export function givenSites(text: string, display: string): GivenFile {
  if (/\.csv$/i.test(display)) {
    const csv = readSitesCsv(text, display);
    return { display, value: csv.collection, locate: csvLocator(display, csv.rows, csv.columns) };
  }
  return {
    display,
    value: parseJsonText(text, display, 'a GeoJSON FeatureCollection of sites (Points)'),
    locate: fileLocator(display),
  };
}

/** Any JSON file (volumes GeoJSON, sensor types), parsed with line and column on a syntax error. */
export function givenJson(text: string, display: string, what: string): GivenFile {
  return { display, value: parseJsonText(text, display, what), locate: fileLocator(display) };
}

export interface NewStudyInput {
  /** How the study is named in messages about its own fields (its file name). */
  display: string;
  /** The study's name; default from the sites file and the tiles. */
  name?: string;
  tiles: readonly StudyTile[];
  sites: GivenFile;
  volumes?: GivenFile | null;
  /** The planner's sensor types (a JSON list); without them, `catalog`. */
  sensorTypes?: GivenFile | null;
  /** The default catalog (data/catalog/sensor-types.json), read by the caller. */
  catalog: GivenFile;
}

/** What was chosen, for the screen and the app's form. */
export interface StudyChoices {
  dem: Bounds;
  area: Bounds;
  cell: CellChoice;
  flightLevels: number[];
  siteCount: number;
  /** The sites file, as shown in messages. */
  sitesFrom: string;
  existingSites: number;
  sensorTypes: { from: string; ids: string[] };
  kinds: string[];
  volumes: { id: string; name: string; flMin: number; flMax: number; requiredFold: Record<string, number> }[];
  /** True when the volumes are the one default study-area volume. */
  defaultVolume: boolean;
  warnings: string[];
}

export interface NewStudy {
  /** The scenario document to write (sites and sensor types inline, terrain by reference, the caution). */
  doc: Record<string, unknown>;
  /** The document validated (defaults filled). */
  scenario: Scenario;
  /** Names each field of the document in the file it came from. */
  locate: Locator;
  choices: StudyChoices;
}

// ---------------------------------------------------------------------------------------------------
// The builder

/**
 * The scenario document of a new study, validated: the schema (each problem named in its own file), every site on
 * a DEM tile, every volume inside the DEM's extent. Throws `InputError` (a `ScenarioError` listing several
 * problems when there are several).
 */
export function buildNewStudy(input: NewStudyInput): NewStudy {
  const warnings: string[] = [];
  const dem = demBounds(input.tiles);
  const cell = chooseCell(dem, demPixelArcSec(input.tiles[0].geo), input.tiles[0].name);
  const levels = [...NEW_STUDY_DEFAULTS.flightLevels];

  const typesFile = input.sensorTypes ?? input.catalog;
  const types = typesFile.value;
  if (!Array.isArray(types) || types.length === 0) {
    throw new InputError(
      typesFile.display,
      Array.isArray(types) ? 'an empty list' : showValue(types, 40),
      'a JSON list of sensor types (as data/catalog/sensor-types.json holds them)',
    );
  }
  const sites = input.sites.value;
  const features = isRecord(sites) && Array.isArray(sites.features) ? sites.features : null;
  if (features !== null && features.length === 0) {
    throw new InputError(input.sites.display, 'no sites', 'at least one site (a row, or a Point feature)');
  }

  const kinds = kindsPresent(types, sites);
  const fold = defaultFold(kinds);
  const sitesLocate = input.sites.locate ?? fileLocator(input.sites.display);
  const typesLocate = typesFile.locate ?? fileLocator(typesFile.display);
  let volumes: Record<string, unknown>[];
  let volumesLocate: Locator | null = null;
  if (input.volumes) {
    const v = volumesOf(input.volumes, levels, fold, warnings);
    volumes = v.volumes;
    volumesLocate = v.locate;
  } else {
    volumes = [studyAreaVolume(input.tiles, cell.bounds, levels, fold, warnings)];
  }

  const doc: Record<string, unknown> = {
    name: input.name?.trim() || defaultName(input),
    caution: CAUTION,
    terrain: { files: input.tiles.map((t) => t.ref) },
    earth: { kFactor: NEW_STUDY_DEFAULTS.kFactor },
    grid: { cellArcSec: cell.cellArcSec, bounds: cell.bounds },
    flightLevels: levels,
    targetRcsM2: NEW_STUDY_DEFAULTS.targetRcsM2,
    targetFluctuation: NEW_STUDY_DEFAULTS.targetFluctuation,
    targetTransponder: NEW_STUDY_DEFAULTS.targetTransponder,
    day: { ...NEW_STUDY_DEFAULTS.day },
    multipath: NEW_STUDY_DEFAULTS.multipath,
    maxRangeKm: NEW_STUDY_DEFAULTS.maxRangeKm,
    sensorTypes: types,
    sites,
    volumes,
  };
  const own = fileLocator(input.display);
  const locate: Locator = (p) => {
    if (p[0] === 'sites') return sitesLocate(p.slice(1));
    if (p[0] === 'sensorTypes') return typesLocate(p.slice(1));
    if (p[0] === 'volumes' && volumesLocate) return volumesLocate(p.slice(1));
    return own(p);
  };
  const scenario = parseScenario(doc, input.display, locate);
  checkSitesOnTiles(scenario, input.tiles, dem, locate);
  checkAgainstTerrain(scenario, dem, input.display, locate);

  return {
    doc,
    scenario,
    locate,
    choices: {
      dem,
      area: cell.bounds,
      cell,
      flightLevels: levels,
      siteCount: scenario.sites.length,
      sitesFrom: input.sites.display,
      existingSites: scenario.sites.filter((f) => f.properties.existing).length,
      sensorTypes: { from: typesFile.display, ids: scenario.sensorTypes.map((t) => t.id) },
      kinds,
      volumes: scenario.volumes.map((v) => ({
        id: v.id,
        name: v.name,
        flMin: v.flMin,
        flMax: v.flMax,
        requiredFold: { ...v.requiredFold } as Record<string, number>,
      })),
      defaultVolume: !input.volumes,
      warnings,
    },
  };
}

const baseName = (p: string) => p.split(/[\\/]/).pop() ?? p;

function defaultName(input: NewStudyInput): string {
  const n = input.tiles.length;
  const terrain = n === 1 ? baseName(input.tiles[0].name) : `${n} DEM tiles`;
  return `Study of the sites in ${baseName(input.sites.display)} on ${terrain}`;
}

type Kind = SensorKind;
const KINDS: readonly Kind[] = SENSOR_KINDS;

/** The kinds of sensor the sites may carry (their allowed types, or every type), in the order of KINDS. */
function kindsPresent(types: readonly unknown[], sites: unknown): Kind[] {
  const kindOf = new Map<unknown, unknown>();
  for (const t of types) if (isRecord(t)) kindOf.set(t.id, t.kind);
  const features = isRecord(sites) && Array.isArray(sites.features) ? sites.features : [];
  const seen = new Set<unknown>();
  for (const f of features) {
    const p = isRecord(f) && isRecord(f.properties) ? f.properties : {};
    const allowed = Array.isArray(p.allowedTypes) ? p.allowedTypes : [...kindOf.keys()];
    for (const id of allowed) seen.add(kindOf.get(id));
  }
  return KINDS.filter((k) => seen.has(k));
}

/**
 * Fold 1 of each radar kind present; of each receiver kind when the sites carry receivers only (any one radar
 * when no kind is known).
 */
function defaultFold(present: readonly Kind[]): Record<string, number> {
  const radars = present.filter(isRadarKind);
  const kinds = radars.length > 0 ? radars : present;
  if (kinds.length === 0) return { any: 1 };
  return Object.fromEntries(kinds.map((k) => [k, 1]));
}

const round8 = (v: number) => Math.round(v * 1e8) / 1e8;

/**
 * The default volume: the study area from the lowest to the highest level, needing `fold`. Where the tiles do not
 * fill the study area (a projected tile's corners, gaps between tiles) it is clipped to the tiles' outlines, so
 * that no cell without terrain counts as a gap.
 */
function studyAreaVolume(
  tiles: readonly StudyTile[],
  studyArea: Bounds,
  levels: readonly number[],
  fold: Record<string, number>,
  warnings: string[],
): Record<string, unknown> {
  const { west: w, south: s, east: e, north: n } = studyArea;
  const rect: Polygon = {
    type: 'Polygon',
    coordinates: [
      [
        [w, s],
        [e, s],
        [e, n],
        [w, n],
        [w, s],
      ],
    ],
  };
  let geometry: Polygon | MultiPolygon = rect;
  let name = 'Study area';
  const outlines = tiles.map((t) => turfPolygon([tileOutline(t.geo)]));
  const merged = outlines.length === 1 ? outlines[0] : union(featureCollection(outlines));
  const clipped = merged ? intersect(featureCollection([turfPolygon(rect.coordinates), merged])) : null;
  const full = area({ type: 'Feature', geometry: rect, properties: {} });
  const inside = clipped ? area(clipped) : 0;
  if (clipped && inside < full * (1 - 1e-4)) {
    const g = clipped.geometry;
    geometry =
      g.type === 'Polygon'
        ? {
            type: 'Polygon',
            coordinates: g.coordinates.map((r) => r.map(([x, y]) => [round8(x), round8(y)])),
          }
        : {
            type: 'MultiPolygon',
            coordinates: g.coordinates.map((p) => p.map((r) => r.map(([x, y]) => [round8(x), round8(y)]))),
          };
    name = 'Study area on the DEM';
    const pct = (100 * (1 - inside / full)).toFixed(1);
    warnings.push(
      `${pct} % of the study area lies on no DEM tile (the tiles do not fill their lon/lat bounding box): ` +
        'those cells have no terrain and no coverage; the study-area volume leaves them out',
    );
  }
  return {
    id: STUDY_AREA_VOLUME_ID,
    name,
    polygon: geometry,
    flMin: levels[0],
    flMax: levels[levels.length - 1],
    requiredFold: fold,
  };
}

/** Properties of a volume feature that the builder reads. */
const VOLUME_PROPERTIES = [
  'id',
  'name',
  'flMin',
  'flMax',
  'altitudeBand',
  'requiredFold',
  'primaryFold',
  'secondaryFold',
  'anyFold',
  'adsbFold',
  'mlatFold',
  'requiredMlatAccuracyM',
  'weight',
  'targetRcsM2',
  'targetFluctuation',
  'targetTransponder',
] as const;
const FLAT_FOLDS = {
  primaryFold: 'primary',
  secondaryFold: 'secondary',
  anyFold: 'any',
  adsbFold: 'adsb',
  mlatFold: 'mlat',
} as const;
const VOLUMES_WHAT =
  'GeoJSON with one or more Polygon or MultiPolygon features (a FeatureCollection, a Feature or a geometry)';

/**
 * Volumes from a GeoJSON file: each Polygon or MultiPolygon feature becomes a volume whose properties may give
 * VOLUME_PROPERTIES, the rest from the defaults. A feature of another geometry is refused, naming it.
 */
function volumesOf(
  given: GivenFile,
  levels: readonly number[],
  fold: Record<string, number>,
  warnings: string[],
): { volumes: Record<string, unknown>[]; locate: Locator } {
  const own = given.locate ?? fileLocator(given.display);
  const v = given.value;
  const items: { geometry: unknown; props: Record<string, unknown>; featureId: unknown; at: FieldPath }[] =
    [];
  if (isRecord(v) && v.type === 'FeatureCollection' && Array.isArray(v.features)) {
    v.features.forEach((f, i) => {
      const at: FieldPath = ['features', i];
      if (!isRecord(f) || f.type !== 'Feature')
        throw new InputError(own(at), showValue(f, 40), 'a GeoJSON Feature with a polygon');
      items.push({
        geometry: f.geometry,
        props: isRecord(f.properties) ? f.properties : {},
        featureId: f.id,
        at,
      });
    });
  } else if (isRecord(v) && v.type === 'Feature') {
    items.push({
      geometry: v.geometry,
      props: isRecord(v.properties) ? v.properties : {},
      featureId: v.id,
      at: [],
    });
  } else if (isRecord(v) && (v.type === 'Polygon' || v.type === 'MultiPolygon')) {
    items.push({ geometry: v, props: {}, featureId: undefined, at: [] });
  } else {
    throw new InputError(given.display, showValue(v, 40), VOLUMES_WHAT);
  }
  if (items.length === 0) throw new InputError(given.display, 'no features', VOLUMES_WHAT);

  const volumes: Record<string, unknown>[] = [];
  const where: FieldPath[] = [];
  const flat: boolean[] = [];
  const unread = new Set<string>();
  items.forEach(({ geometry: g, props, featureId, at }, i) => {
    if (!isRecord(g) || (g.type !== 'Polygon' && g.type !== 'MultiPolygon')) {
      throw new InputError(
        own([...at, 'geometry']),
        g === null || g === undefined ? 'no geometry' : `a ${showValue(isRecord(g) ? g.type : g)} geometry`,
        'a Polygon or MultiPolygon: the outline of an airspace volume',
      );
    }
    for (const k of Object.keys(props)) {
      if (!(VOLUME_PROPERTIES as readonly string[]).includes(k)) unread.add(k);
    }
    const idOf = (x: unknown) => (typeof x === 'number' ? String(x) : x);
    const id = idOf(props.id) ?? (featureId !== undefined ? idOf(featureId) : `volume-${i + 1}`);
    const flatFold: Record<string, unknown> = {};
    for (const [k, kind] of Object.entries(FLAT_FOLDS)) if (props[k] !== undefined) flatFold[kind] = props[k];
    const usesFlat = props.requiredFold === undefined && Object.keys(flatFold).length > 0;
    const band = props.altitudeBand !== undefined;
    const vol: Record<string, unknown> = {
      id,
      name: props.name ?? (typeof id === 'string' ? id : `Volume ${i + 1}`),
      polygon: g,
      ...(props.flMin !== undefined || !band ? { flMin: props.flMin ?? levels[0] } : {}),
      ...(props.flMax !== undefined || !band ? { flMax: props.flMax ?? levels[levels.length - 1] } : {}),
      requiredFold: props.requiredFold ?? (usesFlat ? flatFold : fold),
    };
    for (const k of [
      'altitudeBand',
      'requiredMlatAccuracyM',
      'weight',
      'targetRcsM2',
      'targetFluctuation',
      'targetTransponder',
    ])
      if (props[k] !== undefined) vol[k] = props[k];
    volumes.push(vol);
    where.push(at);
    flat.push(usesFlat);
  });
  if (unread.size > 0) {
    warnings.push(
      `${given.display}: feature properties not read: ${[...unread].sort().join(', ')} ` +
        `(the properties read: ${VOLUME_PROPERTIES.join(', ')})`,
    );
  }
  // A volume's field: its feature's property (polygon → geometry) in the given file.
  const locate: Locator = (p) => {
    const i = typeof p[0] === 'number' ? p[0] : -1;
    const at = where[i];
    if (!at) return own(p);
    const rest = p.slice(1);
    if (rest.length === 0) return own(at);
    if (rest[0] === 'polygon') return own([...at, 'geometry', ...rest.slice(1)]);
    if (rest[0] === 'requiredFold' && flat[i] && typeof rest[1] === 'string') {
      const k = Object.entries(FLAT_FOLDS).find(([, kind]) => kind === rest[1])?.[0] ?? formatPath(rest);
      return own([...at, 'properties', k]);
    }
    return own([...at, 'properties', ...rest]);
  };
  return { volumes, locate };
}

const fmtDeg = (v: number) => String(+v.toFixed(5));
const fmtArcSec = (v: number) => `${+v.toFixed(v < 10 ? 2 : 1)}″`;

/** The DEM's extent in words, for messages. */
export function boundsText(b: Bounds): string {
  return `lon ${fmtDeg(b.west)}…${fmtDeg(b.east)}, lat ${fmtDeg(b.south)}…${fmtDeg(b.north)}`;
}

/**
 * Every site on a tile: its position, mapped into each tile's CRS, inside that tile's raster. One problem per site
 * off the terrain, naming its id, its position and the DEM's extent.
 */
function checkSitesOnTiles(s: Scenario, tiles: readonly StudyTile[], dem: Bounds, locate: Locator): void {
  const mappers = tiles.map((t) => ({ m: gridMapper(t.geo), w: t.geo.width, h: t.geo.height }));
  const px = [0, 0];
  const onTile = (lon: number, lat: number) =>
    mappers.some(({ m, w, h }) => {
      try {
        m.lonLatToPixel(lon, lat, px);
      } catch {
        return false;
      }
      return px[0] >= 0 && px[0] <= w && px[1] >= 0 && px[1] <= h;
    });
  const names = tiles.map((t) => baseName(t.name));
  const tileText =
    names.length <= 4 ? names.join(', ') : `${names.slice(0, 3).join(', ')} and ${names.length - 3} more`;
  const problems: InputError[] = [];
  s.sites.forEach((f, i) => {
    const [lon, lat] = f.geometry.coordinates;
    if (onTile(lon, lat)) return;
    const inBox = lon >= dem.west && lon <= dem.east && lat >= dem.south && lat <= dem.north;
    problems.push(
      new InputError(
        locate(['sites', 'features', i]),
        `site ${showValue(f.properties.id)} at lon ${fmtDeg(lon)}, lat ${fmtDeg(lat)}, ` +
          (inBox ? 'inside the DEM’s bounding box but on none of its tiles' : 'outside the DEM'),
        `a site on the terrain: the DEM (${tileText}) covers ${boundsText(dem)}`,
      ),
    );
  });
  if (problems.length > 0) throw new ScenarioError(problems);
}

export { ScenarioError };
