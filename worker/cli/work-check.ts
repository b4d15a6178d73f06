/**
 * Refuse what would run for hours: the time a run will take, estimated from its inputs before the long work
 * starts, against a limit (`--max-work-min`, default 60 minutes). The memory check (budget-check.ts) bounds what a
 * run holds at once; this one bounds what it does in total — many sites each sweeping a long range over fine
 * terrain, or a long list of flight levels over many cells and sensors, fit in memory and still take all day.
 *
 * The estimate counts two kinds of work, each the inner loop of its stage:
 * - sweeps: per site, the horizon's screening-tan samples out to the site's reach (range² over range step × arc
 *   step, the bound of budget-check.ts `horizonSamples`), those on the terrain (at most the terrain's area over a
 *   sample's) dearer than those beyond it; the sweeps run in the worker pool, so this part is divided by its size;
 * - cells: analysis cells × (sites + (site, type) pairs × targets × (1 + levels)) — per site the floor resampled
 *   onto the grid, per pair and target its footprint, and per level its bits in the network, folds and layers;
 *   this part runs on the main thread.
 *
 * The seconds per unit are measured on the machine this was written on (2 cores shared with other work, Node 22):
 * `node bin/airshade.mjs floor` and `coverage … --threads 0` on the demo at several ranges, cells and levels (the
 * runs and figures are in the comments of the constants). The estimate is meant to tell an absurd run (days) from a
 * long one (minutes), not to predict; a run refused here is at least several times the limit on this machine, and
 * the limit can be raised.
 */
import { InputError } from '../../shared/errors.ts';
import { helpOption, type Parsed } from './args.ts';
import { horizonSamples } from './budget-check.ts';

/**
 * Seconds per screening-tan sample on the terrain, one thread, with what a site's sweep brings along (its resample
 * onto the grid, its sea mask, its types' profiles and footprints): 50 ns. With it (and the two constants below)
 * the estimate against measured wall time, `coverage SCENARIO --threads 0` on the demo scenario (33 sites, 165
 * pairs, 400 km, 5° × 5° of 3″ terrain), the machine shared by other work (load 2–4 on 2 cores): 120″ cells 4.1 s
 * estimated, 7.3 s measured; 60″ 8.4 s, 11.7–22.9 s; 30″ 17.5 s, 21.6 s; 20″ 27.2 s, 38.9 s (measured times include
 * 2–3 s of start-up and terrain reading, left out of the estimate). The estimate leans short, the safe side for a
 * refusal.
 */
export const SECONDS_PER_SAMPLE = 50e-9;
/**
 * Seconds per sample beyond the terrain (the sweep steps on through unknown terrain, writing "unknown"): 8000
 * sites of one long-range secondary (463 km) on 1.5° × 1.5° of 1″ terrain, 60″ cells, 2 threads, swept 851 sites
 * in 117 s — 0.27 thread-seconds a site for 1.2 M samples on the terrain and 35.6 M off it: 7 ns each.
 */
export const SECONDS_PER_SAMPLE_OFF_TERRAIN = 7e-9;
/**
 * Seconds per cell unit (module comment), main thread. The same runs less their footprint stage took 1.0–3.6 s for
 * 38/152/606 M units (9 levels), and no more with 1 level than with 9 within the noise: 2 ns per unit at most;
 * taken as 2 ns.
 */
export const SECONDS_PER_CELL_UNIT = 2e-9;
/** Default limit, minutes. */
export const DEFAULT_MAX_WORK_MIN = 60;

export const WORK_OPTION = { 'max-work-min': { value: true } } as const;

export function workHelp(column: number): string {
  return helpOption('--max-work-min M', column, [
    `refuse at once a run estimated to take more than M minutes on this machine (default ${DEFAULT_MAX_WORK_MIN};`,
    'the estimate is rough: it tells a run of days from one of minutes)',
  ]);
}

/** `--max-work-min M`: minutes, a number more than 0 (at most a week). */
export function workLimitArg(p: Parsed): number {
  const text = p.values.get('max-work-min')?.[0];
  if (text === undefined) return DEFAULT_MAX_WORK_MIN;
  const m = /^\s*(\d+(?:\.\d+)?|\.\d+)\s*$/.exec(text);
  const min = m ? Number(m[1]) : NaN;
  if (!(min > 0 && min <= 7 * 24 * 60)) {
    throw new InputError(
      '--max-work-min',
      JSON.stringify(text),
      'a number of minutes, more than 0 and at most 10080 (a week)',
    );
  }
  return min;
}

export interface WorkShape {
  /** Per site: the reach of its horizon (m); range step and arc step (m) of the sweep. */
  sweeps: readonly { reachM: number; rangeStepM: number; arcStepM: number }[];
  /** Area of the terrain (m²): a sweep's samples on it are at most this over its sample's area. */
  terrainAreaM2: number;
  /** Analysis cells (grid width × height; the output raster of a floor run). */
  cells: number;
  sites: number;
  /** (site, type) pairs, targets (1 + volumes' own) and flight levels; 0, 1, 0 for a floor run. */
  pairs: number;
  /** Cells of every pair's window added up (footprints are built in their windows); default pairs × cells. */
  pairCells?: number;
  targets: number;
  levels: number;
  /** Worker threads (0 = the main thread alone). */
  threads: number;
}

export interface WorkEstimate {
  seconds: number;
  parts: { sweeps: number; cells: number };
}

export function estimateWork(s: WorkShape): WorkEstimate {
  let seconds = 0;
  for (const w of s.sweeps) {
    const all = horizonSamples(w.reachM, w.rangeStepM, w.arcStepM);
    const on = Math.min(all, s.terrainAreaM2 / (0.75 * w.rangeStepM * w.arcStepM));
    seconds += on * SECONDS_PER_SAMPLE + (all - on) * SECONDS_PER_SAMPLE_OFF_TERRAIN;
  }
  const sweeps = seconds / Math.max(1, s.threads);
  const pairCells = s.pairCells ?? s.pairs * s.cells;
  const cells = (s.cells * s.sites + pairCells * s.targets * (1 + s.levels)) * SECONDS_PER_CELL_UNIT;
  return { seconds: sweeps + cells, parts: { sweeps, cells } };
}

export function formatDuration(seconds: number): string {
  if (seconds < 1) return `${Math.max(1, Math.round(seconds * 1000))} ms`;
  if (seconds < 90) return `${Math.round(seconds)} s`;
  if (seconds < 90 * 60) return `${Math.round(seconds / 60)} min`;
  if (seconds < 48 * 3600) return `${(seconds / 3600).toFixed(1)} h`;
  return `${(seconds / 86400).toFixed(1)} days`;
}

/**
 * Throws when the estimate exceeds `limitMin` minutes: the message names the input that drives the larger part
 * (`blame`), the estimate, and the knob.
 */
export function checkWork(
  est: WorkEstimate,
  limitMin: number,
  blame: Record<keyof WorkEstimate['parts'], string>,
): void {
  if (est.seconds <= limitMin * 60) return;
  const part: keyof WorkEstimate['parts'] = est.parts.sweeps >= est.parts.cells ? 'sweeps' : 'cells';
  const words = {
    sweeps: "the sites' horizon sweeps (range² over terrain pixel × cell, per site)",
    cells: 'cells × sensors × flight levels',
  };
  throw new InputError(
    blame[part],
    `a run estimated at about ${formatDuration(est.seconds)} on this machine (mostly ${words[part]}: ` +
      `${formatDuration(est.parts[part])})`,
    `at most ${formatDuration(limitMin * 60)} (--max-work-min; raise it if you mean it, or make the input ` +
      'smaller: coarser grid.cellArcSec, smaller grid.bounds or maxRangeKm, fewer sites, types or flight levels)',
  );
}
