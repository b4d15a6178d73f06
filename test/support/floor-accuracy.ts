/**
 * A floor raster against the exact reference walk's (test/reference/raywalk.ts), as the accuracy tests score it:
 * the |floor error| over the cells the reference shadows (floor above the ground), and per target altitude the
 * share of cells where both say the same about visibility (visible iff altitude ≥ ground and ≥ floor).
 */
export interface FloorScore {
  /** |floor − reference| over the shadowed cells, ascending. */
  errors: number[];
  median: number;
  p95: number;
  /** Per altitude of `altitudesM`, the share of cells (0…1) that agree. */
  agreement: number[];
}

export function scoreFloor(
  ground: Float32Array,
  floor: Float32Array,
  reference: Float32Array,
  altitudesM: readonly number[],
): FloorScore {
  const n = ground.length;
  const errors: number[] = [];
  for (let i = 0; i < n; i++)
    if (reference[i] > ground[i] + 0.01) errors.push(Math.abs(floor[i] - reference[i]));
  errors.sort((a, b) => a - b);
  const agreement = altitudesM.map((alt) => {
    let agree = 0;
    for (let i = 0; i < n; i++) {
      const a = alt >= ground[i] && alt >= floor[i];
      const b = alt >= ground[i] && alt >= reference[i];
      if (a === b) agree++;
    }
    return agree / n;
  });
  return {
    errors,
    median: errors[Math.floor(errors.length / 2)],
    p95: errors[Math.floor(errors.length * 0.95)],
    agreement,
  };
}
