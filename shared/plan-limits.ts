/**
 * The planner's solver limits, shared by the CLI, the worker engine and the app's Plan panel (which must not
 * import the solver itself).
 */
/**
 * Default work limit of the exact MILP, in branch-and-bound nodes: the solver stops on this count, not on the
 * clock, so the plan is the same on every machine. The demo's MILP closes at its root node, so the demo plans in
 * the time it did under the old 8 s clock limit whatever this count; on seeded demo-sized instances that branch
 * (165 candidates, 45 000 points, 530 000 nonzeros) a node cost 0.01–0.07 s here and 100 nodes kept the whole
 * solve at 8–11 s, about what the old clock limit allowed (README, "Planner").
 */
export const DEFAULT_SOLVER_NODES = 100;
/**
 * Default safety time limit for HiGHS (ms), LP and MILP together: generous (the slowest root node measured here,
 * a demo plan with a tight budget, took about 80 s), so that the work limits (these nodes, and the
 * LP's interior-point iterations in worker/core/plan.ts) stop it first.
 */
export const DEFAULT_SAFETY_TIME_LIMIT_MS = 300_000;
