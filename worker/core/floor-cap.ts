/**
 * Floors above this are written as this value: no aircraft flies there, and Float32 stays finite. In a module of its
 * own so that the grid sweep (and a worker that only runs it) does not load the radial engine and its geodesics.
 */
export const FLOOR_CAP_M = 100_000;
