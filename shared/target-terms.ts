/**
 * The words and limits the scenario schema (shared/scenario.ts) and the detection and sensor models
 * (worker/core/detection.ts, sensor.ts) share, said once: the Swerling cases, the transponder classes, the limits
 * of the detection laws, and the spec-point fields that only a primary's echo gives meaning to.
 */

/** Target fluctuation: Swerling cases 0 (steady) to 4. */
export const FLUCTUATION_IDS = ['swerling0', 'swerling1', 'swerling2', 'swerling3', 'swerling4'] as const;
export type Fluctuation = (typeof FLUCTUATION_IDS)[number];

/** Transponder classes (worker/core/sensor.ts TRANSPONDER_CLASSES gives their values). */
export const TRANSPONDER_IDS = ['high-power', 'low-power'] as const;
export type TransponderClass = (typeof TRANSPONDER_IDS)[number];

/**
 * Limits of the detection laws as the product accepts them (worker/core/detection.ts): Pd 0.1 … 0.99 (Shnidman's
 * published Pd range), Pfa 1e−10 … 1e−3, n a whole number of pulses from 1 to 8096 (Albersheim's published n
 * range). The exact laws hold beyond them.
 */
export const DETECTION_LIMITS = Object.freeze({
  pdMin: 0.1,
  pdMax: 0.99,
  pfaMin: 1e-10,
  pfaMax: 1e-3,
  nMin: 1,
  nMax: 8096,
});

/** Spec-point fields about the target's echo: a primary's only (a secondary's range comes from its links). */
export const ECHO_SPEC_FIELDS = [
  'referenceRcsM2',
  'referencePd',
  'referencePfa',
  'referenceFluctuation',
  'hitsIntegrated',
] as const;
