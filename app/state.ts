/**
 * The app's working state and every change a user can make to it, as pure functions (no DOM, no worker): the
 * scenario document (sites and sensor types inline, as a scenario file holds them), the network being looked at,
 * the failed sites, the view settings and the units. Each edit returns a new state or an `InputError` saying
 * what was wrong; a rejected edit leaves the state as it was. Unit-tested in test/app-state.test.ts.
 */
import { CAUTION } from '../shared/caution.ts';
import { InputError } from '../shared/errors.ts';
import type { Provenance } from '../worker/io/provenance.ts';
import { formatBytes } from '../worker/core/memory-estimate.ts';
import { COLD_DAY as SCENARIO_COLD_DAY } from '../shared/scenario.ts';
import {
  fileLocator,
  parseScenario,
  ScenarioError,
  showValue,
  type Layout,
  type Locator,
  type Scenario,
  type SensorType,
  type SiteProperties,
  type Volume,
} from '../shared/scenario.ts';
import { FOLD_KINDS, type FoldKind as SharedFoldKind } from '../shared/sensor-kinds.ts';

export type Units = 'aviation' | 'metric';
export type FoldKind = SharedFoldKind;
export type LayerId =
  'relief' | 'floor' | 'fold' | 'accuracy' | 'gap' | 'loss' | 'compare' | 'volumes' | 'sites';

export interface SensorRef {
  siteId: string;
  typeId: string;
}

/** The scenario as a file holds it, with sites and sensor types inline. */
export type ScenarioDoc = Omit<Scenario, 'sites'> & {
  sites: { type: 'FeatureCollection'; features: Scenario['sites'] };
};

export interface LayerSetting {
  on: boolean;
  opacity: number;
}

export interface WorkState {
  version: 1;
  doc: ScenarioDoc;
  /** Where the scenario came from (shown in messages). */
  source: string;
  /** The sensors of the network being looked at. */
  network: SensorRef[];
  failed: string[];
  units: Units;
  view: { fl: number; kind: FoldKind; layers: Record<LayerId, LayerSetting> };
}

export const DEFAULT_LAYERS: Record<LayerId, LayerSetting> = {
  relief: { on: true, opacity: 1 },
  floor: { on: false, opacity: 0.75 },
  fold: { on: true, opacity: 0.6 },
  /** The multilateration accuracy (offered only when the network has mlat receivers). */
  accuracy: { on: false, opacity: 0.75 },
  gap: { on: true, opacity: 0.75 },
  loss: { on: true, opacity: 0.9 },
  compare: { on: true, opacity: 0.8 },
  volumes: { on: true, opacity: 1 },
  sites: { on: true, opacity: 1 },
};

export function docOf(s: Scenario): ScenarioDoc {
  return { ...s, sites: { type: 'FeatureCollection', features: s.sites } };
}

/** Validates a document with the scenario schema (the messages name the field). */
export function validateDoc(doc: unknown, source: string): Scenario {
  return parseScenario(doc, source);
}

/** A fresh working state from a validated scenario: the network is its first layout, or its existing sites. */
export function stateFromScenario(s: Scenario, source: string, units: Units = 'aviation'): WorkState {
  const layout =
    s.layouts.find((l) => l.name === WORKING_LAYOUT) ??
    s.layouts.find((l) => /exist/i.test(l.name)) ??
    s.layouts[0];
  const network = layout ? layout.sensors.map((x) => ({ ...x })) : existingSensors(s);
  return {
    version: 1,
    doc: docOf(s),
    source,
    network,
    failed: [],
    units,
    view: { fl: s.flightLevels[0], kind: 'any', layers: structuredClone(DEFAULT_LAYERS) },
  };
}

/** One sensor per existing site: its first allowed type. */
export function existingSensors(s: Scenario): SensorRef[] {
  return s.sites
    .filter((f) => f.properties.existing)
    .map((f) => ({
      siteId: f.properties.id,
      typeId: (f.properties.allowedTypes ?? [s.sensorTypes[0]?.id])[0],
    }))
    .filter((r) => r.typeId !== undefined);
}

/**
 * Applies a change to the document and validates the result; throws (state untouched) when it is invalid.
 * `locate` names the fields in messages (default: their path in "the working scenario").
 */
function withDoc(state: WorkState, change: (doc: ScenarioDoc) => void, locate?: Locator): WorkState {
  const doc = structuredClone(state.doc);
  change(doc);
  dropDanglingLayoutEntries(doc);
  const s = locate
    ? parseScenario(doc, 'the working scenario', locate)
    : validateDoc(doc, 'the working scenario');
  const next: WorkState = { ...state, doc: docOf(s) };
  return prune(next);
}

/** Layout entries whose site or type is gone, or whose type the site no longer allows, leave the layout. */
function dropDanglingLayoutEntries(doc: ScenarioDoc): void {
  if (!Array.isArray(doc.layouts) || !Array.isArray(doc.sites?.features) || !Array.isArray(doc.sensorTypes))
    return;
  const sites = new Map(doc.sites.features.map((f) => [f.properties?.id, f.properties]));
  const types = new Set(doc.sensorTypes.map((t) => t?.id));
  for (const l of doc.layouts) {
    if (!Array.isArray(l?.sensors)) continue;
    l.sensors = l.sensors.filter((r) => {
      const p = sites.get(r.siteId);
      return p !== undefined && types.has(r.typeId) && (!p.allowedTypes || p.allowedTypes.includes(r.typeId));
    });
  }
}

/** Drops network entries and failures that point at sites or types that no longer exist. */
function prune(state: WorkState): WorkState {
  const sites = new Map(state.doc.sites.features.map((f) => [f.properties.id, f.properties]));
  const types = new Set(state.doc.sensorTypes.map((t) => t.id));
  const ok = (r: SensorRef) => {
    const p = sites.get(r.siteId);
    return p !== undefined && types.has(r.typeId) && (!p.allowedTypes || p.allowedTypes.includes(r.typeId));
  };
  return {
    ...state,
    network: state.network.filter(ok),
    failed: state.failed.filter((id) => sites.has(id)),
  };
}

function findSite(doc: ScenarioDoc, id: string) {
  const f = doc.sites.features.find((x) => x.properties.id === id);
  if (!f) throw new InputError('site', JSON.stringify(id), 'the id of a site in the scenario');
  return f;
}

// --------------------------------------------------------------------------------------------------- sites

/** A new site at a point, with a fresh id and default mast and cost. */
export function addSite(state: WorkState, lon: number, lat: number, props: Partial<SiteProperties> = {}) {
  const ids = new Set(state.doc.sites.features.map((f) => f.properties.id));
  let n = ids.size + 1;
  while (ids.has(`site-${n}`)) n++;
  const id = props.id ?? `site-${n}`;
  const next = withDoc(state, (doc) => {
    doc.sites.features.push({
      type: 'Feature',
      geometry: { type: 'Point', coordinates: [round6(lon), round6(lat)] },
      properties: {
        id,
        name: props.name ?? `New site ${n}`,
        mastHeightM: props.mastHeightM ?? 20,
        siteCost: props.siteCost ?? 5,
        existing: props.existing ?? false,
        ...(props.allowedTypes ? { allowedTypes: props.allowedTypes } : {}),
      },
    });
  });
  return { state: next, id };
}

export function moveSite(state: WorkState, id: string, lon: number, lat: number): WorkState {
  return withDoc(state, (doc) => {
    findSite(doc, id).geometry.coordinates = [round6(lon), round6(lat)];
  });
}

export type SitePatch = Partial<Pick<SiteProperties, 'name' | 'mastHeightM' | 'siteCost' | 'existing'>> & {
  allowedTypes?: string[] | null;
  /** Antenna tilt in degrees (−10…20); null removes it (the default, 0°). */
  tiltDeg?: number | null;
  lon?: number;
  lat?: number;
};

export function editSite(state: WorkState, id: string, patch: SitePatch): WorkState {
  return withDoc(state, (doc) => {
    const f = findSite(doc, id);
    const { allowedTypes, lon, lat, tiltDeg, ...rest } = patch;
    Object.assign(f.properties, rest);
    if (allowedTypes === null) delete f.properties.allowedTypes;
    else if (allowedTypes !== undefined) f.properties.allowedTypes = allowedTypes;
    if (tiltDeg === null) delete f.properties.tiltDeg;
    else if (tiltDeg !== undefined) f.properties.tiltDeg = tiltDeg;
    if (lon !== undefined || lat !== undefined)
      f.geometry.coordinates = [
        round6(lon ?? f.geometry.coordinates[0]),
        round6(lat ?? f.geometry.coordinates[1]),
      ];
  });
}

export function removeSite(state: WorkState, id: string): WorkState {
  return withDoc(state, (doc) => {
    findSite(doc, id);
    doc.sites.features = doc.sites.features.filter((f) => f.properties.id !== id);
    doc.layouts = doc.layouts.map((l) => ({ ...l, sensors: l.sensors.filter((s) => s.siteId !== id) }));
  });
}

// ------------------------------------------------------------------------------------ sites from a file

/** What replacing the sites does to the saved layouts, counted before the planner chooses. */
export interface SitesOffer {
  /** Sites of the scenario that the file does not have (by id). */
  sitesGone: string[];
  /** Saved layouts, in all. */
  layouts: number;
  /** Layouts naming a site the file does not have (or a type the file's site no longer allows). */
  affected: string[];
  /** Layout entries that would go with those sites, over all affected layouts. */
  entriesGone: number;
  /** Affected layouts that would be left with no sensor if kept. */
  emptied: number;
  /** Sensors of the network being looked at that would go. */
  networkGone: number;
}

const idsOf = (collection: unknown): Map<unknown, Record<string, unknown>> => {
  const out = new Map<unknown, Record<string, unknown>>();
  const c = collection as { features?: unknown };
  if (!c || typeof c !== 'object' || !Array.isArray(c.features)) return out;
  for (const f of c.features as { properties?: unknown }[]) {
    const p = f && typeof f.properties === 'object' && f.properties !== null ? f.properties : null;
    if (p) out.set((p as Record<string, unknown>).id, p as Record<string, unknown>);
  }
  return out;
};

/**
 * The counts behind the question "drop or keep the layouts?" when the sites are replaced by `collection` (not yet
 * validated: malformed features count as no site). Nothing is changed.
 */
export function sitesOffer(state: WorkState, collection: unknown): SitesOffer {
  const next = idsOf(collection);
  const types = new Set(state.doc.sensorTypes.map((t) => t.id));
  const stays = (r: SensorRef) => {
    const p = next.get(r.siteId);
    if (!p || !types.has(r.typeId)) return false;
    const allowed = p.allowedTypes;
    return !Array.isArray(allowed) || allowed.includes(r.typeId);
  };
  const affected: string[] = [];
  let entriesGone = 0;
  let emptied = 0;
  for (const l of state.doc.layouts) {
    const gone = l.sensors.filter((r) => !stays(r)).length;
    if (gone === 0) continue;
    affected.push(l.name);
    entriesGone += gone;
    if (gone === l.sensors.length) emptied++;
  }
  return {
    sitesGone: state.doc.sites.features.map((f) => f.properties.id).filter((id) => !next.has(id)),
    layouts: state.doc.layouts.length,
    affected,
    entriesGone,
    emptied,
    networkGone: state.network.filter((r) => !stays(r)).length,
  };
}

/** `2 layouts`, `1 layout`. */
export const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** The question's lines, from the counts. */
export function offerText(offer: SitesOffer, file: string): string[] {
  const gone = offer.sitesGone;
  return [
    `${offer.affected.length} of ${plural(offer.layouts, 'saved layout')} name${offer.affected.length === 1 ? 's' : ''} sites that ${file} does not have (${plural(offer.entriesGone, 'sensor entry', 'sensor entries')}${offer.emptied ? `; ${plural(offer.emptied, 'layout')} would be left with no sensor` : ''}): ${offer.affected.join(', ')}.`,
    `${plural(gone.length, 'site')} of the scenario ${gone.length === 1 ? 'is' : 'are'} not in the file${gone.length ? `: ${gone.slice(0, 8).join(', ')}${gone.length > 8 ? ', …' : ''}` : ''}.`,
    offer.networkGone
      ? `${plural(offer.networkGone, 'sensor')} of the network being looked at will leave it either way.`
      : '',
  ].filter((l) => l !== '');
}

/**
 * Replaces every site with those of `collection` (a FeatureCollection read from a GeoJSON or CSV file). Layouts
 * that name a site the file does not have are dropped (`layouts: 'drop'`) or kept without those entries
 * ('keep'); either way the replacement goes through when the file is valid. Network sensors and failures at sites
 * that are gone leave. `locate` names a site's fields in its own file (a CSV row and column: csvLocator); the
 * other fields keep their path in the working scenario.
 */
export function replaceSites(
  state: WorkState,
  collection: unknown,
  opts: { layouts: 'keep' | 'drop'; locate?: Locator },
): WorkState {
  const offer = sitesOffer(state, collection);
  const own = fileLocator('the working scenario');
  const locate: Locator | undefined = opts.locate
    ? (p) => (p[0] === 'sites' ? opts.locate!(p.slice(1)) : own(p))
    : undefined;
  return withDoc(
    state,
    (doc) => {
      doc.sites = collection as ScenarioDoc['sites'];
      if (opts.layouts === 'drop') doc.layouts = doc.layouts.filter((l) => !offer.affected.includes(l.name));
    },
    locate,
  );
}

// ------------------------------------------------------------------------------------------- sensor types

export function addSensorType(state: WorkState, type: unknown): WorkState {
  return withDoc(state, (doc) => {
    doc.sensorTypes.push(type as SensorType);
  });
}

/** Replaces a sensor type (its id may change; references follow). */
export function replaceSensorType(state: WorkState, id: string, type: unknown): WorkState {
  const i = state.doc.sensorTypes.findIndex((x) => x.id === id);
  if (typeof type !== 'object' || type === null || Array.isArray(type))
    throw new InputError(`sensorTypes[${i}]`, showValue(type), 'a sensor type object (JSON)');
  const t = type as SensorType;
  const next = withDoc(state, (doc) => {
    const i = doc.sensorTypes.findIndex((x) => x.id === id);
    if (i < 0)
      throw new InputError('sensor type', JSON.stringify(id), 'the id of a sensor type in the scenario');
    doc.sensorTypes[i] = t;
    if (t.id !== id) {
      for (const f of doc.sites.features)
        f.properties.allowedTypes = f.properties.allowedTypes?.map((x) => (x === id ? t.id : x));
      for (const l of doc.layouts)
        l.sensors = l.sensors.map((s) => (s.typeId === id ? { ...s, typeId: t.id } : s));
    }
  });
  return {
    ...next,
    network: state.network.map((r) => (r.typeId === id ? { ...r, typeId: t.id } : r)),
  };
}

export function removeSensorType(state: WorkState, id: string): WorkState {
  return withDoc(state, (doc) => {
    doc.sensorTypes = doc.sensorTypes.filter((t) => t.id !== id);
    for (const f of doc.sites.features) {
      if (!f.properties.allowedTypes) continue;
      const left = f.properties.allowedTypes.filter((x) => x !== id);
      if (left.length === 0) delete f.properties.allowedTypes;
      else f.properties.allowedTypes = left;
    }
    doc.layouts = doc.layouts.map((l) => ({ ...l, sensors: l.sensors.filter((s) => s.typeId !== id) }));
  });
}

// ------------------------------------------------------------------------------------------------ volumes

export function addVolume(state: WorkState, v: Omit<Volume, 'id'> & { id?: string }): WorkState {
  const ids = new Set(state.doc.volumes.map((x) => x.id));
  let n = ids.size + 1;
  while (ids.has(`volume-${n}`)) n++;
  return withDoc(state, (doc) => {
    doc.volumes.push({ ...v, id: v.id ?? `volume-${n}` } as Volume);
  });
}

export function editVolume(state: WorkState, id: string, patch: Partial<Volume>): WorkState {
  return withDoc(state, (doc) => {
    const v = doc.volumes.find((x) => x.id === id);
    if (!v) throw new InputError('volume', JSON.stringify(id), 'the id of a volume in the scenario');
    Object.assign(v, patch);
  });
}

export function removeVolume(state: WorkState, id: string): WorkState {
  return withDoc(state, (doc) => {
    doc.volumes = doc.volumes.filter((v) => v.id !== id);
  });
}

// ------------------------------------------------------------------------------------ the target, the day

/** The fields that name the target the study looks for (the scenario's, or a volume's own). */
export type TargetFields = Pick<Scenario, 'targetRcsM2' | 'targetFluctuation' | 'targetTransponder'>;
/** A change of a volume's own target: a value sets it, null removes it (the volume then studies the scenario's). */
export type VolumeTargetPatch = { [K in keyof TargetFields]?: TargetFields[K] | null };
export const TARGET_KEYS = ['targetRcsM2', 'targetFluctuation', 'targetTransponder'] as const;

/** Sets the study's target (RCS m², Swerling case, transponder class); the schema checks every value. */
export function setTarget(state: WorkState, patch: Partial<TargetFields>): WorkState {
  return withDoc(state, (doc) => {
    for (const k of TARGET_KEYS) if (k in patch) (doc as Record<string, unknown>)[k] = patch[k];
  });
}

/** Sets or removes (null) a volume's own target fields; the others stay as they are. */
export function setVolumeTarget(state: WorkState, id: string, patch: VolumeTargetPatch): WorkState {
  return withDoc(state, (doc) => {
    const v = doc.volumes.find((x) => x.id === id);
    if (!v) throw new InputError('volume', JSON.stringify(id), 'the id of a volume in the scenario');
    for (const k of TARGET_KEYS) {
      if (!(k in patch)) continue;
      const x = patch[k];
      if (x === null || x === undefined) delete v[k];
      else (v as Record<string, unknown>)[k] = x;
    }
  });
}

/** The day of a study: sea-level pressure (QNH, hPa) and the deviation from the ISA temperature (°C). */
export type Day = NonNullable<Scenario['day']>;
/** The ICAO standard day (what a scenario without `day` studies). */
export const STANDARD_DAY: Day = Object.freeze({ qnhHpa: 1013.25, isaDeviationC: 0 });
/** The switch "Cold, low-pressure day": flight levels sit lowest on such a day (shared/scenario.ts). */
export const COLD_DAY: Day = SCENARIO_COLD_DAY;

/** The day a state studies (the standard day when the scenario gives none). */
export function dayOf(state: WorkState): Day {
  return state.doc.day ?? STANDARD_DAY;
}

export function isColdDay(state: WorkState): boolean {
  const d = state.doc.day;
  return d !== undefined && d.qnhHpa === COLD_DAY.qnhHpa && d.isaDeviationC === COLD_DAY.isaDeviationC;
}

/**
 * Sets the day (schema-checked: QNH 870…1090 hPa, ISA deviation −60…+40 °C), or removes it with null; a part
 * left out keeps its present value. The standard day is stored as no day at all (the scenario's default).
 */
export function setDay(state: WorkState, day: Partial<Day> | null): WorkState {
  return withDoc(state, (doc) => {
    if (day === null) {
      delete doc.day;
      return;
    }
    const next = { ...(doc.day ?? STANDARD_DAY), ...day };
    if (next.qnhHpa === STANDARD_DAY.qnhHpa && next.isaDeviationC === STANDARD_DAY.isaDeviationC)
      delete doc.day;
    else doc.day = next;
  });
}

// -------------------------------------------------------------------------------------- network, layouts

export function setNetwork(state: WorkState, network: SensorRef[]): WorkState {
  const seen = new Set<string>();
  const list = network.filter((r) => {
    const k = `${r.siteId}\u0000${r.typeId}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
  return prune({ ...state, network: list, failed: state.failed });
}

export function toggleSensor(state: WorkState, siteId: string, typeId: string, on: boolean): WorkState {
  const rest = state.network.filter((r) => !(r.siteId === siteId && r.typeId === typeId));
  return setNetwork(state, on ? [...rest, { siteId, typeId }] : rest);
}

/** Saves the current network as a named layout (replacing one of the same name). */
export function saveLayout(state: WorkState, name: string): WorkState {
  const clean = name.trim();
  if (clean === '') throw new InputError('layout name', 'an empty name', 'a name for the layout');
  return withDoc(state, (doc) => {
    const layout: Layout = { name: clean, sensors: state.network.map((r) => ({ ...r })) };
    const i = doc.layouts.findIndex((l) => l.name === clean);
    if (i >= 0) doc.layouts[i] = layout;
    else doc.layouts.push(layout);
  });
}

export function useLayout(state: WorkState, name: string): WorkState {
  const l = state.doc.layouts.find((x) => x.name === name);
  if (!l) throw new InputError('layout', JSON.stringify(name), 'the name of a saved layout');
  return setNetwork(
    state,
    l.sensors.map((r) => ({ ...r })),
  );
}

export function removeLayout(state: WorkState, name: string): WorkState {
  return withDoc(state, (doc) => {
    doc.layouts = doc.layouts.filter((l) => l.name !== name);
  });
}

export function setFailed(state: WorkState, siteId: string, failed: boolean): WorkState {
  const rest = state.failed.filter((x) => x !== siteId);
  return { ...state, failed: failed ? [...rest, siteId] : rest };
}

export function setFlightLevels(state: WorkState, fls: number[]): WorkState {
  const next = withDoc(state, (doc) => {
    doc.flightLevels = [...new Set(fls)].sort((a, b) => a - b);
  });
  const fl = next.doc.flightLevels.includes(state.view.fl) ? state.view.fl : next.doc.flightLevels[0];
  return { ...next, view: { ...next.view, fl } };
}

// --------------------------------------------------------------------------------------------- the file

export const WORKING_LAYOUT = 'working network';

/** A set of sensors as one string, the same whatever their order (to tell whether two sets are equal). */
export function sensorSetKey(l: readonly SensorRef[]): string {
  return l
    .map((r) => `${r.siteId}\u0000${r.typeId}`)
    .sort()
    .join('\n');
}

/**
 * The scenario file the app saves: the working document, with the current network as the layout "working
 * network" unless a saved layout already holds exactly that set (opening the file brings the network back), and
 * with the provenance given, the caution and that provenance as its last members (app/provenance.ts; the schema
 * sets both aside on load).
 */
export function scenarioFileText(state: WorkState, provenance?: Provenance): string {
  const doc = structuredClone(state.doc);
  const key = sensorSetKey;
  const mine = key(state.network);
  if (
    state.network.length > 0 &&
    !doc.layouts.some((l) => l.name !== WORKING_LAYOUT && key(l.sensors) === mine)
  ) {
    const layout = { name: WORKING_LAYOUT, sensors: state.network.map((r) => ({ ...r })) };
    const i = doc.layouts.findIndex((l) => l.name === WORKING_LAYOUT);
    if (i >= 0) doc.layouts[i] = layout;
    else doc.layouts.push(layout);
  }
  return JSON.stringify(provenance ? { ...doc, caution: CAUTION, provenance } : doc, null, 2) + '\n';
}

/** Restores a saved working state (autosave); anything malformed throws and the caller starts from the demo. */
export function restoreState(saved: unknown): WorkState {
  if (typeof saved !== 'object' || saved === null || (saved as WorkState).version !== 1)
    throw new InputError(
      'saved work',
      'an unknown format',
      'a working state saved by this version of Airshade',
    );
  const w = saved as WorkState;
  const s = validateDoc(w.doc, 'the saved working scenario');
  const base = stateFromScenario(s, w.source, w.units === 'metric' ? 'metric' : 'aviation');
  const layers = structuredClone(DEFAULT_LAYERS);
  const savedLayers = (w.view?.layers ?? {}) as Record<string, unknown>;
  for (const id of Object.keys(layers) as LayerId[]) {
    const x = savedLayers[id] as Partial<LayerSetting> | null | undefined;
    if (x && typeof x.on === 'boolean' && typeof x.opacity === 'number' && x.opacity >= 0 && x.opacity <= 1)
      layers[id] = { on: x.on, opacity: x.opacity };
  }
  const fl = s.flightLevels.includes(w.view?.fl) ? w.view.fl : s.flightLevels[0];
  const kind: FoldKind = (FOLD_KINDS as readonly string[]).includes(w.view?.kind) ? w.view.kind : 'any';
  return prune({
    ...base,
    network: Array.isArray(w.network) ? w.network.filter((r) => typeof r?.siteId === 'string') : base.network,
    failed: Array.isArray(w.failed) ? w.failed.filter((x) => typeof x === 'string') : [],
    view: { fl, kind, layers },
  });
}

// ------------------------------------------------------------------------------------- saved in the browser

/** What the app keeps in the browser (IndexedDB) between visits: the working state and what it was made on. */
export interface SavedWork {
  state: WorkState;
  /** Names of the terrain tiles (their bytes are kept apart, by name). */
  tiles: string[];
  /** Whether coverage had been computed (a reload computes it again; results themselves are not stored). */
  results?: { coverage?: boolean };
  /** When it was saved (ISO 8601, UTC); absent in work saved by older versions. */
  savedAt?: string;
}

/** Work older than this is marked as such when it comes back. */
export const STALE_AFTER_MS = 24 * 3600 * 1000;

/** "2026-03-01 14:05 UTC": a date a planner can quote. */
export function utcText(d: Date): string {
  return `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

const RELATIVE = new Intl.RelativeTimeFormat('en', { numeric: 'auto' });

/** How long ago `then` was, seen at `now`: "less than a minute ago", "5 minutes ago", "yesterday", "3 days ago". */
export function ageText(then: Date, now: Date): string {
  const s = (now.getTime() - then.getTime()) / 1000;
  if (!(s >= 0)) return "in the future by this computer's clock";
  if (s < 60) return 'less than a minute ago';
  const days = s / 86400;
  if (s < 3600) return RELATIVE.format(-Math.floor(s / 60), 'minute');
  if (days < 1) return RELATIVE.format(-Math.floor(s / 3600), 'hour');
  if (days < 60) return RELATIVE.format(-Math.floor(days), 'day');
  if (days < 730) return RELATIVE.format(-Math.floor(days / 30.44), 'month');
  return RELATIVE.format(-Math.floor(days / 365.25), 'year');
}

/**
 * The message of work brought back from the last visit: what it is, how old it is and which data it used (where
 * the scenario came from, the terrain tiles), marked when older than a day. `coverage`: whether its coverage is
 * being computed again, or is back.
 */
export function restoredLines(
  saved: SavedWork,
  now: Date,
  coverage: 'none' | 'again' | 'done' = 'none',
): string[] {
  const name = saved.state.doc.name;
  const first =
    coverage === 'again'
      ? `Restored your work from the last visit (${name}); its coverage is being computed again (progress below).`
      : coverage === 'done'
        ? `Restored your work from the last visit (${name}) and its coverage, computed again.`
        : `Restored your work from the last visit (${name}).`;
  const at = saved.savedAt ? new Date(saved.savedAt) : null;
  const when =
    at && !Number.isNaN(at.getTime())
      ? `Saved ${ageText(at, now)} (${utcText(at)})`
      : 'Saved at a time not recorded';
  const tiles = saved.tiles.length
    ? `${plural(saved.tiles.length, 'terrain tile')}: ${saved.tiles.join(', ')}`
    : 'no terrain tile';
  const lines = [first, `${when}; scenario from ${saved.state.source}, on ${tiles}.`];
  if (!at || now.getTime() - at.getTime() > STALE_AFTER_MS)
    lines.push(
      `This work ${at ? 'is more than a day old' : 'may be old'}: check that its scenario and terrain are still the ones to use (Files and Ground panels).`,
    );
  return lines;
}

/** Whether an error is the browser's storage being full (IndexedDB or localStorage, in any browser's words). */
export function isQuotaError(e: unknown): boolean {
  const name = typeof e === 'object' && e !== null ? (e as { name?: unknown }).name : undefined;
  if (name === 'QuotaExceededError' || name === 'NS_ERROR_DOM_QUOTA_REACHED') return true;
  return typeof e === 'string' && /QuotaExceededError|quota/i.test(e);
}

/**
 * The message when the work could not be saved in the browser: why (the storage full, with what the browser says
 * it uses and allows when it tells), and that the work is still in the page, to be downloaded.
 */
export function saveFailureLines(e: unknown, storage?: { usage?: number; quota?: number }): string[] {
  const detail = errorLines(e).join(' ');
  const named = e instanceof Error && e.name && e.name !== 'Error' ? `${e.name}: ${detail}` : detail;
  const lines = isQuotaError(e)
    ? [
        `Your work could not be saved in this browser: its storage for this site is full (${named}).`,
        ...(storage?.usage !== undefined && storage.quota
          ? [
              `This site uses ${formatBytes(storage.usage)} of the ${formatBytes(storage.quota)} the browser allows it (the terrain tiles kept for the next visit included).`,
            ]
          : []),
      ]
    : [`Your work could not be saved in this browser (${named}).`];
  lines.push(
    'Nothing is lost while this page stays open: download the scenario (and the results) to keep them; the scenario file opens again in the Files panel.',
  );
  return lines;
}

/** One line per problem of an error (a ScenarioError lists several). */
export function errorLines(e: unknown): string[] {
  if (e instanceof ScenarioError) return e.problems.map((p) => p.message);
  if (e instanceof Error) return e.message.split('\n').filter((l) => l.trim() !== '');
  return [String(e)];
}

function round6(v: number): number {
  return Math.round(v * 1e6) / 1e6;
}
