/**
 * The receiver kinds in the app (issue 14), pure (no DOM): a receiver type's own fields as the Sensor types panel
 * edits them (their units, the schema's limits, a refusal naming the type and the field), a network's sensors
 * counted per kind, a volume's requirement in words with its multilateration accuracy bound, and the scenario's
 * altitude-aided choice. Unit-tested in test/app-receivers.test.ts.
 */
import { InputError } from '../shared/errors.ts';
import type { ReceiverType, SensorType, Volume } from '../shared/scenario.ts';
import {
  FOLD_KINDS,
  isReceiverKind,
  KIND_LABELS,
  mlatMinReceivers,
  SENSOR_KINDS,
  type SensorKind,
} from '../shared/sensor-kinds.ts';
import { editVolume, replaceSensorType, type SensorRef, type Units, type WorkState } from './state.ts';
import { rangeInputNm } from './units.ts';

/** A receiver type's numeric fields the Sensor types panel edits in its table (the range is apart: it has units). */
export type ReceiverField = 'sensitivityDbm' | 'cableLossDb' | 'antennaGainDbi' | 'timingErrorNs';

interface FieldRule {
  /** In plain words, for labels and messages. */
  label: string;
  unit: string;
  min: number;
  max: number;
  /** Whether the bound itself is refused (the schema's gt / lt). */
  minOpen: boolean;
  maxOpen: boolean;
}

/** The limits are shared/scenario.ts's receiverFields and MlatTypeSchema (worker/core/receiver.ts builds from them). */
export const RECEIVER_FIELD_RULES: Readonly<Record<ReceiverField, FieldRule>> = {
  sensitivityDbm: { label: 'sensitivity', unit: 'dBm', min: -120, max: -40, minOpen: false, maxOpen: false },
  cableLossDb: { label: 'cable loss', unit: 'dB', min: 0, max: 20, minOpen: false, maxOpen: true },
  antennaGainDbi: { label: 'antenna gain', unit: 'dBi', min: -20, max: 40, minOpen: false, maxOpen: false },
  timingErrorNs: {
    label: 'arrival-time error (1σ)',
    unit: 'ns',
    min: 0,
    max: 1000,
    minOpen: true,
    maxOpen: false,
  },
};

/** The longest instrumented range a receiver type may have (shared/scenario.ts receiverFields). */
export const RECEIVER_MAX_RANGE_NM = 1000;

/** What a field's rule accepts, in words ("a cable loss from 0 dB to below 20 dB"). */
export function ruleText(field: ReceiverField): string {
  const r = RECEIVER_FIELD_RULES[field];
  const lo = r.minOpen ? `above ${fmtSigned(r.min)} ${r.unit}` : `from ${fmtSigned(r.min)} ${r.unit}`;
  const hi = r.maxOpen ? `to below ${fmtSigned(r.max)} ${r.unit}` : `to ${fmtSigned(r.max)} ${r.unit}`;
  return `a ${r.label} ${lo} ${hi}`;
}

/** Minus as the sign (−87), as the schema's messages write it. */
function fmtSigned(v: number): string {
  return v < 0 ? `−${-v}` : String(v);
}

function typed(v: number, unit: string): string {
  return Number.isNaN(v) ? 'nothing' : `${v} ${unit}`;
}

/** A value typed for a receiver field, checked against the field's rule; throws an InputError naming `where`. */
export function receiverFieldInput(field: ReceiverField, v: number, where: string): number {
  const r = RECEIVER_FIELD_RULES[field];
  const ok =
    Number.isFinite(v) && (r.minOpen ? v > r.min : v >= r.min) && (r.maxOpen ? v < r.max : v <= r.max);
  if (!ok) throw new InputError(where, typed(v, r.unit), ruleText(field));
  return v;
}

function receiverOf(state: WorkState, typeId: string): ReceiverType {
  const t = state.doc.sensorTypes.find((x) => x.id === typeId);
  if (!t)
    throw new InputError('sensor type', JSON.stringify(typeId), 'the id of a sensor type in the scenario');
  if (!isReceiverKind(t.kind))
    throw new InputError(
      `sensor type ${typeId} (kind)`,
      `"${t.kind}", a radar`,
      'a receiver type (kind "adsb" or "mlat")',
    );
  return t as ReceiverType;
}

/**
 * Sets one field of a receiver type from what the user typed: the range in the user's units (returned in NM),
 * the others in their own units (dBm, dB, dBi, ns). The timing error is a multilateration receiver's only.
 * A refusal names the type and the field and leaves the state as it was.
 */
export function setReceiverField(
  state: WorkState,
  typeId: string,
  field: ReceiverField | 'instrumentedRangeNm',
  v: number,
  u: Units,
): WorkState {
  const t = receiverOf(state, typeId);
  const where = `${field === 'instrumentedRangeNm' ? 'instrumented range' : RECEIVER_FIELD_RULES[field].label} of ${t.id} (${field})`;
  if (field === 'timingErrorNs' && t.kind !== 'mlat')
    throw new InputError(where, 'an ADS-B station (kind "adsb")', 'a multilateration receiver (kind "mlat")');
  const value =
    field === 'instrumentedRangeNm'
      ? rangeInputNm(v, u, where, 0, RECEIVER_MAX_RANGE_NM)
      : receiverFieldInput(field, v, where);
  return replaceSensorType(state, t.id, { ...t, [field]: value });
}

/** A receiver's antenna in words: omnidirectional, or its sector clockwise. */
export function sectorText(t: ReceiverType): string {
  return t.sector ? `sector ${t.sector.fromDeg}° → ${t.sector.toDeg}° (clockwise)` : 'omnidirectional';
}

// ------------------------------------------------------------------------------------------- counts per kind

/** How many sensors of each kind a list of sensors holds (a reference to an unknown type counts nowhere). */
export function kindCounts(
  refs: readonly SensorRef[],
  types: readonly Pick<SensorType, 'id' | 'kind'>[],
): Record<SensorKind, number> {
  const kindOf = new Map(types.map((t) => [t.id, t.kind]));
  const out = Object.fromEntries(SENSOR_KINDS.map((k) => [k, 0])) as Record<SensorKind, number>;
  for (const r of refs) {
    const k = kindOf.get(r.typeId);
    if (k) out[k]++;
  }
  return out;
}

const KIND_NOUNS: Readonly<Record<SensorKind, [string, string]>> = {
  primary: ['PSR', 'PSR'],
  secondary: ['SSR', 'SSR'],
  adsb: ['ADS-B station', 'ADS-B stations'],
  mlat: ['multilateration receiver', 'multilateration receivers'],
};

/** "1 PSR, 3 SSR, 4 ADS-B stations, 6 multilateration receivers" (kinds with none left out; "none" when empty). */
export function kindCountText(c: Readonly<Record<SensorKind, number>>): string {
  const parts = SENSOR_KINDS.filter((k) => c[k] > 0).map(
    (k) => `${c[k]} ${KIND_NOUNS[k][c[k] === 1 ? 0 : 1]}`,
  );
  return parts.length ? parts.join(', ') : 'none';
}

/**
 * Two sets of sensors side by side per kind, as table rows [kind, count in A, count in B]: the kinds either holds
 * (radar kinds always, so a radar-only comparison reads as before), then the total.
 */
export function compareKinds(
  a: readonly SensorRef[],
  b: readonly SensorRef[],
  types: readonly Pick<SensorType, 'id' | 'kind'>[],
): [string, string, string][] {
  const ca = kindCounts(a, types);
  const cb = kindCounts(b, types);
  const rows: [string, string, string][] = SENSOR_KINDS.filter(
    (k) => !isReceiverKind(k) || ca[k] > 0 || cb[k] > 0,
  ).map((k) => [KIND_LABELS[k], String(ca[k]), String(cb[k])]);
  rows.push(['all sensors', String(a.length), String(b.length)]);
  return rows;
}

/** The kinds a site carries in a list of sensors, as short labels ("SSR, ADS-B"); "" when none. */
export function siteKindsText(
  siteId: string,
  refs: readonly SensorRef[],
  types: readonly Pick<SensorType, 'id' | 'kind'>[],
): string {
  const c = kindCounts(
    refs.filter((r) => r.siteId === siteId),
    types,
  );
  return SENSOR_KINDS.filter((k) => c[k] > 0)
    .map((k) => KIND_LABELS[k])
    .join(', ');
}

// ----------------------------------------------------------------------------------------- requirements

type Requirement = Pick<Volume, 'requiredFold' | 'requiredMlatAccuracyM'>;

/**
 * A volume's requirement in words: the sites required per kind, and its multilateration accuracy bound. A volume
 * that requires nothing asks for one radar (worker/core/volumes.ts meets).
 */
export function requirementText(v: Requirement): string {
  const rf = v.requiredFold;
  const parts = FOLD_KINDS.filter((k) => (rf[k] ?? 0) > 0).map((k) => `${KIND_LABELS[k]} ${rf[k]}`);
  if (parts.length === 0) parts.push(`${KIND_LABELS.any} 1`);
  if (v.requiredMlatAccuracyM !== undefined)
    parts.push(`multilateration accuracy ≤ ${fmtAccuracyM(v.requiredMlatAccuracyM)}`);
  return parts.join(' · ');
}

/** A 1σ horizontal accuracy (DRMS) in metres: always metres, as the trade states it. */
export function fmtAccuracyM(m: number): string {
  return `${m.toLocaleString('en', { maximumFractionDigits: 1 })} m (1σ)`;
}

/**
 * What a volume's multilateration requirement comes to, in words (none: []). An accuracy bound asks for a fix, so
 * the planner counts at least the receivers a fix needs wherever a volume bounds the accuracy (worker/core/plan/
 * accuracy.ts withImpliedMlatFolds); a count below that without a bound asks for hearing, not for a fix.
 */
export function requirementNotes(v: Requirement & { id: string }, altitudeAided: boolean): string[] {
  const need = mlatMinReceivers(altitudeAided);
  const mlat = v.requiredFold.mlat ?? 0;
  const how = altitudeAided ? 'with the reported altitude' : 'without the reported altitude';
  if (v.requiredMlatAccuracyM !== undefined && mlat < need)
    return [
      `${v.id}: its accuracy bound asks for a fix, so the plan counts ${need} multilateration receivers at each cell (a fix ${how}), not ${mlat}`,
    ];
  if (mlat > 0 && mlat < need)
    return [
      `${v.id}: ${mlat} multilateration receiver${mlat > 1 ? 's' : ''} hearing each cell, fewer than the ${need} a fix needs ${how}: the cells may be heard without a position fix`,
    ];
  return [];
}

/**
 * Sets or removes (null) a volume's multilateration accuracy bound, typed in metres: above 0 and finite, else
 * an InputError naming the volume and the field.
 */
export function setMlatAccuracy(state: WorkState, volumeId: string, m: number | null): WorkState {
  const where = `multilateration accuracy of ${volumeId} (requiredMlatAccuracyM)`;
  if (m !== null && !(Number.isFinite(m) && m > 0))
    throw new InputError(
      where,
      typed(m, 'm'),
      'a 1σ horizontal accuracy in metres above 0, or an empty field for none',
    );
  const next = editVolume(state, volumeId, { requiredMlatAccuracyM: m ?? undefined });
  if (m !== null) return next;
  // editVolume assigns: drop the emptied key so the saved file does not carry it.
  const volumes = next.doc.volumes.map((v) => {
    if (v.id !== volumeId) return v;
    const { requiredMlatAccuracyM: _gone, ...rest } = v;
    return rest as Volume;
  });
  return { ...next, doc: { ...next.doc, volumes } };
}

/** Whether the scenario's multilateration fixes take the target's reported pressure altitude (3 receivers, not 4). */
export function altitudeAided(state: WorkState): boolean {
  return state.doc.mlatAltitudeAided ?? true;
}

/** Sets the scenario's altitude-aided choice (a whole-study setting: every volume's multilateration fold). */
export function setAltitudeAided(state: WorkState, on: boolean): WorkState {
  return { ...state, doc: { ...state.doc, mlatAltitudeAided: on } };
}

/** Whether the study has any receiver type (panels show their receiver columns only then). */
export function hasReceivers(types: readonly Pick<SensorType, 'kind'>[]): boolean {
  return types.some((t) => isReceiverKind(t.kind));
}

/** What the diagram shows, in the words of the kind picked: a receiver hears, it has no cone of silence or RCS. */
export function profileText(kind: SensorKind | undefined): string {
  if (kind !== undefined && isReceiverKind(kind))
    return `A vertical coverage diagram along one azimuth for a${kind === 'adsb' ? 'n ADS-B ground station' : ' multilateration receiver'}: terrain profile, screening, where the aircraft's 1090 MHz transmissions are heard (the target's transponder class against the receiver's sensitivity, cable loss and antenna pattern) and flight levels. A receiver has no cone of silence beyond its pattern and no RCS.`;
  if (kind === 'secondary')
    return 'A vertical coverage diagram along one azimuth: terrain profile, screening, the envelope of both SSR links (the target’s transponder class), cone of silence and flight levels.';
  return 'A vertical coverage diagram along one azimuth: terrain profile, screening, detection envelope, cone of silence and flight levels.';
}
