/**
 * Numbers as the user reads and types them, in one of two unit sets chosen by the switch in the top bar:
 * aviation (NM, ft, FL) or metric (km, m). Flight levels are shown as FL in both. Every formatted number carries
 * its unit. Inside the program everything is SI (shared/units.ts does the conversions).
 */
import { InputError } from '../shared/errors.ts';
import { FT_M, NM_M, formatFl } from '../shared/units.ts';
import type { Units } from './state.ts';

const KM2_PER_NM2 = (NM_M / 1000) ** 2;

export function fmtAltitude(m: number | null | undefined, u: Units): string {
  if (m === null || m === undefined || !Number.isFinite(m)) return '—';
  return u === 'aviation'
    ? `${Math.round(m / FT_M).toLocaleString('en')} ft`
    : `${Math.round(m).toLocaleString('en')} m`;
}

/** A short height above ground (masts): one decimal. */
export function fmtHeight(m: number, u: Units): string {
  return u === 'aviation' ? `${(m / FT_M).toFixed(0)} ft` : `${m.toFixed(1)} m`;
}

export function heightUnit(u: Units): string {
  return u === 'aviation' ? 'ft' : 'm';
}

export function heightToUser(m: number, u: Units): number {
  return u === 'aviation' ? Math.round((m / FT_M) * 10) / 10 : m;
}

export function heightFromUser(v: number, u: Units): number {
  return u === 'aviation' ? v * FT_M : v;
}

export function fmtRange(m: number, u: Units): string {
  return u === 'aviation' ? `${(m / NM_M).toFixed(1)} NM` : `${(m / 1000).toFixed(1)} km`;
}

export function rangeUnit(u: Units): string {
  return u === 'aviation' ? 'NM' : 'km';
}

export function fmtArea(km2: number, u: Units): string {
  return u === 'aviation'
    ? `${Math.round(km2 / KM2_PER_NM2).toLocaleString('en')} NM²`
    : `${Math.round(km2).toLocaleString('en')} km²`;
}

/**
 * A flight level with its true altitude on the study's day (`altitudeM`, from the engine: a flight level is a
 * pressure altitude, so it sits lower on a cold or low-pressure day); the level alone when that is not known yet.
 */
export function fmtLevel(fl: number, altitudeM: number | undefined, u: Units): string {
  return altitudeM === undefined ? formatFl(fl) : `${formatFl(fl)} (${fmtAltitude(altitudeM, u)})`;
}

export function fmtPct(v: number): string {
  return `${v.toFixed(1)} %`;
}

export function fmtCost(v: number): string {
  return `${v.toLocaleString('en', { maximumFractionDigits: 2 })} M`;
}

export function fmtLonLat(lon: number, lat: number): string {
  return `${lat >= 0 ? 'N' : 'S'} ${Math.abs(lat).toFixed(4)}°, ${lon >= 0 ? 'E' : 'W'} ${Math.abs(lon).toFixed(4)}°`;
}

/**
 * A height the user typed (a mast), checked in the units it was typed in and returned in metres: a bad value is
 * reported in those units (the schema, which works in metres, would quote the converted number).
 */
export function heightInputM(v: number, u: Units, where: string): number {
  if (!(Number.isFinite(v) && v >= 0))
    throw new InputError(where, typedValue(v, heightUnit(u)), `a height of 0 ${heightUnit(u)} or more`);
  return heightFromUser(v, u);
}

/**
 * A range the user typed (a sensor type's instrumented range), checked in the units it was typed in — above zero
 * and above the type's minimum range when it has one, and at most `maxRangeNm` when the kind has a ceiling (a
 * receiver's 1000 NM) — and returned in NM (the scenario's unit for ranges).
 */
export function rangeInputNm(
  v: number,
  u: Units,
  where: string,
  minRangeNm = 0,
  maxRangeNm = Infinity,
): number {
  const unit = rangeUnit(u);
  const nm = u === 'aviation' ? v : (v * 1000) / NM_M;
  const floor = minRangeNm > 0 ? `${fmtRange(minRangeNm * NM_M, u)} (the type's minimum range)` : `0 ${unit}`;
  if (!(Number.isFinite(v) && v > 0 && nm > minRangeNm))
    throw new InputError(where, typedValue(v, unit), `a range of more than ${floor}`);
  if (nm > maxRangeNm)
    throw new InputError(
      where,
      typedValue(v, unit),
      `a range of more than ${floor} and at most ${fmtRange(maxRangeNm * NM_M, u)}`,
    );
  return nm;
}

/** What was typed, with its unit ("nothing" for an empty field). */
function typedValue(v: number, unit: string): string {
  return Number.isNaN(v) ? 'nothing' : `${v} ${unit}`;
}

/**
 * Demand weight, the planner's and the outage tables' measure: for each lost (or covered) cell of a volume at each
 * level of its band, the cell's area in km² times the volume's weight, summed. With the study's total it is also
 * given as a share, which needs no unit to be read.
 */
export function fmtDemandWeight(w: number, totalW?: number): string {
  const v = Math.round(w).toLocaleString('en');
  return totalW && totalW > 0 ? `${v} (${fmtPct((100 * w) / totalW)} of all demand)` : v;
}

/** What the demand weight counts, in one line for hints and titles. */
export const DEMAND_WEIGHT_TEXT =
  'Demand weight: each volume cell at each flight level of its band counts its area in km² times the volume’s weight.';

/** The cursor read-out's figures: what the engine's probe gives under the cursor (worker/runtime/engine.ts ProbeResult). */
export interface ReadoutFigures {
  lon: number;
  lat: number;
  groundM: number | null;
  /** The exact network floor of the cell (null: no sensor sees it), and the floor map's step it is drawn in. */
  floorM: number | null;
  floorStep?: string | null;
  fold: { any: number; primary: number; secondary: number; adsb?: number; mlat?: number } | null;
}

/**
 * The read-out line: position, ground, and once coverage is computed the exact network floor with the step of the
 * floor map it falls in, and the folds at the level shown (`level`, already formatted).
 */
export function fmtReadout(r: ReadoutFigures, u: Units, coverage: { level: string } | null): string {
  const parts = [
    fmtLonLat(r.lon, r.lat),
    `ground ${r.groundM === null ? 'no data' : fmtAltitude(r.groundM, u)}`,
  ];
  if (coverage) {
    parts.push(
      r.floorM === null
        ? 'network floor: not seen'
        : `network floor ${fmtAltitude(r.floorM, u)}${r.floorStep ? ` (map step ${r.floorStep})` : ''}`,
    );
    if (r.fold) {
      // Receivers only where some are seen, so radar-only studies read as before; where they are, the first
      // count says it is of radar sites (the `any` fold counts radars only, shared/sensor-kinds.ts).
      const rx = [
        r.fold.adsb ? `ADS-B ${r.fold.adsb}` : '',
        r.fold.mlat ? `multilateration ${r.fold.mlat}` : '',
      ].filter(Boolean);
      parts.push(
        `${rx.length ? 'radar sites' : 'sites'} at ${coverage.level}: ${r.fold.any} (PSR ${r.fold.primary}, SSR ${r.fold.secondary})`,
      );
      if (rx.length) parts.push(`receivers: ${rx.join(', ')}`);
    }
  }
  return parts.join(' · ');
}
