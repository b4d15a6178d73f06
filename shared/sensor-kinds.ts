/**
 * The sensor kinds, said once for every layer.
 *
 * - Radars: `primary` (PSR, sees the echo) and `secondary` (SSR / Mode S, interrogates the transponder).
 * - 1090 MHz ground receivers (receive only, issue 14): `adsb` (an ADS-B ground station) and `mlat` (a
 *   multilateration receiver: the same radio, plus its arrival-time error).
 *
 * Folds are kept per kind, plus `any`, which counts RADARS only (a site with a primary or a secondary that sees the
 * cell): studies written before the receivers keep their numbers, and a receiver never stands in for a radar in a
 * volume's `any` requirement. Receivers are required per kind (`requiredFold.adsb`, `requiredFold.mlat`).
 */
export const RADAR_KINDS = ['primary', 'secondary'] as const;
export const RECEIVER_KINDS = ['adsb', 'mlat'] as const;
export const SENSOR_KINDS = [...RADAR_KINDS, ...RECEIVER_KINDS] as const;
/** Fold kinds in their fixed order (layers, tables, the planner's kind slots): `any` first. */
export const FOLD_KINDS = ['any', ...SENSOR_KINDS] as const;

export type RadarKind = (typeof RADAR_KINDS)[number];
export type ReceiverKind = (typeof RECEIVER_KINDS)[number];
export type SensorKind = (typeof SENSOR_KINDS)[number];
export type FoldKind = (typeof FOLD_KINDS)[number];

/** A volume's required fold per kind (each absent means 0). */
export type RequiredFold = Partial<Record<FoldKind, number>>;

export function isRadarKind(k: string): k is RadarKind {
  return k === 'primary' || k === 'secondary';
}

export function isReceiverKind(k: string): k is ReceiverKind {
  return k === 'adsb' || k === 'mlat';
}

/** Short names for tables and legends (PSR, SSR, ADS-B: terms of the trade; "MLAT receivers" our own). */
export const KIND_LABELS: Readonly<Record<FoldKind, string>> = {
  any: 'any radar',
  primary: 'PSR',
  secondary: 'SSR',
  adsb: 'ADS-B',
  mlat: 'multilateration',
};

/**
 * Receivers a multilateration fix needs (worker/core/mlat.ts MLAT_MIN_RECEIVERS): 4 for position and emission
 * time, 3 when the target reports its pressure altitude and the fix takes it as known.
 */
export function mlatMinReceivers(altitudeAided: boolean): number {
  return altitudeAided ? 3 : 4;
}
