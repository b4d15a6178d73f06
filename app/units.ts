/**
 * Numbers as the user reads and types them, in one of two unit sets chosen by the switch in the top bar:
 * aviation (NM, ft, FL) or metric (km, m). Flight levels are shown as FL in both. Every formatted number carries
 * its unit. Inside the program everything is SI (shared/units.ts does the conversions).
 */
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
