/**
 * The app's side of a new study, pure (no DOM, no worker): the builder is the one `airshade init` uses
 * (worker/io/new-study.ts: study area from the tiles, the cell rule, the defaults, the checks); here are the
 * catalog the app is built with, the defaults in words for the form, the check of the planner's files before any
 * tile is read, and the study on the tiles the engine decoded. Unit-tested in test/app-state.test.ts.
 */
import catalog from '../data/catalog/sensor-types.json';
import { SCENARIO_DEFAULTS, type Scenario } from '../shared/scenario.ts';
import { formatFl } from '../shared/units.ts';
import { WGS84_GEOGRAPHIC } from '../worker/core/grid.ts';
import type { TerrainSummary } from '../worker/runtime/engine.ts';
import {
  buildNewStudy,
  MAX_GRID_CELLS,
  NEW_STUDY_DEFAULTS,
  type GivenFile,
  type NewStudy,
  type StudyTile,
} from '../worker/io/new-study.ts';

export type { GivenFile, NewStudy };

/** The default sensor catalog (data/catalog/sensor-types.json, put into the app when it is built). */
export const DEFAULT_CATALOG: GivenFile = {
  display: 'the default sensor catalog',
  value: catalog as unknown[],
};

/** How the new study is named in messages about its own fields. */
export const NEW_STUDY_DISPLAY = 'the new study';

/** What a new study starts with, in words, from the builder's own defaults. */
export function newStudyDefaultText(): string[] {
  const d = NEW_STUDY_DEFAULTS;
  return [
    `Flight levels ${d.flightLevels.map((fl) => formatFl(fl)).join(', ')} (change them in Coverage).`,
    `Effective earth radius factor k = 4/3; the ICAO standard day (QNH ${d.day.qnhHpa} hPa, ISA +0 °C).`,
    `Target: ${d.targetRcsM2} m², Swerling 1, low-power transponder (change it in Coverage).`,
    `Analysis out to ${d.maxRangeKm} km from each site; sea lobing where the reflection point lies over sea.`,
    `Study area: the tiles’ extent; analysis cell: the finest of 1, 2, 3, 5 … 3600″ no finer than the DEM’s pixel that keeps the grid within ${MAX_GRID_CELLS.toLocaleString('en-US')} cells.`,
    'Without a volumes file: one volume over the study area, from the lowest to the highest level, needing one sensor of each radar kind the sites may carry (of each receiver kind, ADS-B or multilateration, when the sites carry receivers only).',
    'A volumes file may ask for receivers per kind (requiredFold.adsb and .mlat, or the properties adsbFold and mlatFold); a multilateration accuracy bound is set afterwards in Airspace.',
    `Multilateration: ${SCENARIO_DEFAULTS.mlatAltitudeAided ? 'the target reports its pressure altitude, so a fix needs 3 receivers' : 'a fix needs 4 receivers'} (the choice below; change it later in Airspace).`,
    `Without a sensor-types file: the default catalog (${(catalog as unknown[]).length} generic radar types; for receivers give your own list, e.g. with data/catalog/receiver-types.json’s types).`,
  ];
}

/** The planner's files for a new study, read and parsed (the tiles go to the engine). */
export interface NewStudyFiles {
  name: string;
  /** The tiles' file names, as `terrain.files` will list them. */
  tileNames: string[];
  sites: GivenFile;
  volumes: GivenFile | null;
  sensorTypes: GivenFile | null;
}

/**
 * A stand-in tile that covers the whole earth in one-degree pixels: the builder run on it checks the planner's
 * files alone (schema, ids, references), since every site and volume lies on it.
 */
const WHOLE_EARTH: StudyTile['geo'] = {
  width: 360,
  height: 180,
  originX: -180,
  originY: 90,
  pixelX: 1,
  pixelY: -1,
  crs: WGS84_GEOGRAPHIC,
};

/** Checks the planner's files before any tile is read; throws the builder's messages (row, column, feature). */
export function checkFilesAlone(f: NewStudyFiles): void {
  buildNewStudy({
    display: NEW_STUDY_DISPLAY,
    name: f.name,
    tiles: [{ ref: f.tileNames[0] ?? 'terrain.tif', name: 'the terrain tiles', geo: WHOLE_EARTH }],
    sites: f.sites,
    volumes: f.volumes,
    sensorTypes: f.sensorTypes,
    catalog: DEFAULT_CATALOG,
  });
}

/** The new study on the tiles the engine decoded (their georeferencing from its terrain summary). */
export function studyOnTerrain(terrain: Pick<TerrainSummary, 'tiles'>, f: NewStudyFiles): NewStudy {
  return buildNewStudy({
    display: NEW_STUDY_DISPLAY,
    name: f.name,
    tiles: terrain.tiles.map((t) => ({ ref: t.name, name: t.name, geo: t.geo })),
    sites: f.sites,
    volumes: f.volumes,
    sensorTypes: f.sensorTypes,
    catalog: DEFAULT_CATALOG,
  });
}

/**
 * The new study with the planner's multilateration choice (the builder takes the schema's default): whether the
 * target reports its pressure altitude, so that a fix needs 3 receivers instead of 4. Written into the document
 * only when it differs from the default, so a study without receivers reads as the CLI's `init` writes it.
 */
export function withAltitudeAided(built: NewStudy, on: boolean): NewStudy {
  const doc = { ...built.doc };
  if (on === SCENARIO_DEFAULTS.mlatAltitudeAided) delete doc.mlatAltitudeAided;
  else doc.mlatAltitudeAided = on;
  const scenario: Scenario = { ...built.scenario, mlatAltitudeAided: on };
  return { ...built, doc, scenario };
}
