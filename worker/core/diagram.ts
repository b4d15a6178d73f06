/**
 * Vertical coverage diagram data: what one sensor on one site sees along one azimuth, as range–height curves.
 *
 * Everything is on the effective earth of radius Re = k·R and is reported as altitude AMSL against ground
 * (arc) distance along the WGS84 geodesic radial. Drawn on flat axes, the curved geometry shows up in the
 * curves themselves (the line-of-sight floor bends upward with range, constant elevation is not a straight
 * line); the axes are not curved.
 *
 * The terrain profile is sampled at the positions the horizon engine uses (horizon.ts: planHorizon's range step,
 * the RadialFan knot formula P(s) = P0 + s·Q(θ, s), bilinear terrain), and the line-of-sight floor comes from
 * the same running screening: T(s) = max tan ε of the terrain before s (none within the antenna's own pixel; the
 * near field sampled NEAR_SUBSTEPS times per step), floor = (Re + ha)/(cos(s/Re) − T·sin(s/Re)) − Re. Beyond the
 * first unknown terrain sample the floor is unknown (NaN), never sea level.
 *
 * The sensor's own limits (pattern-limited detection range, instrumented and minimum range, cone of silence)
 * come from footprint.ts `sensorBand`; the cone-of-silence edge is solved exactly on the sphere.
 */
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD, flToMetres, formatFl, RAD_TO_DEG } from '../../shared/units.ts';
import { STANDARD_DAY, trueAltitudeM, type Day } from './altimetry.ts';
import { RadialFan } from './geodesy.ts';
import { FLOOR_CAP_M, planHorizon, radialScreening, type TerrainRaster } from './horizon.ts';
import { seaBand, sensorBand, TOP_M } from './footprint.ts';
import { firstLobeFactor, reflectionDistanceM } from './multipath.ts';
import { SEA_LEVEL_TOLERANCE_M } from './coverage.ts';
import { describeTarget, type SensorModel, type Target } from './sensor.ts';
import type { SensorKind } from '../../shared/sensor-kinds.ts';

/** The engine's marker for "nothing screens yet" (next to the antenna). */
const NOTHING = -1e9;
/** At most this many chart samples along the radial (every stride-th engine sample is kept). */
const MAX_CHART_POINTS = 3000;
/** Envelope rows: at most this many, and never closer than the chart step. */
const MAX_ENVELOPE_ROWS = 800;
/** A sample is in shadow when the line-of-sight floor is this far above the terrain. */
const SHADOW_TOLERANCE_M = 0.5;
/** The cone-of-silence edge is tabulated from the antenna up to this altitude (above FL600 with room). */
const CONE_TOP_M = 25_000;
const CONE_POINTS = 64;

export interface DiagramSite {
  lon: number;
  lat: number;
  /** Antenna height above ground, metres. */
  mastM: number;
  /** Antenna tilt, degrees (default 0). */
  tiltDeg?: number;
}

export interface DiagramOptions {
  /** Azimuth of the radial, degrees clockwise from true north. */
  azimuthDeg: number;
  /** Effective-earth factor k (default 4/3). */
  kFactor?: number;
  /** Farthest ground range drawn, metres (default: the sensor's instrumented range). */
  maxRangeM?: number;
  /** The study's target. */
  target: Target;
  /** The day: flight levels are drawn at their true altitudes (default the ISA standard day). */
  day?: Day;
  /** Gaseous attenuation (default true). */
  atmosphere?: boolean;
  /** Over-sea lobing where the specular point lies on sea along the radial (default false). */
  multipath?: boolean;
  /** Detection in rain (the sensor's weather range), default false. */
  weather?: boolean;
  /** Flight levels to mark (whole numbers; pressure altitudes, drawn at their true altitude on the day). */
  flightLevels: number[];
  /** Earth radius R, metres (default 6 371 000). */
  earthRadiusM?: number;
}

export interface RangeRun {
  /** First and last chart sample of the run (ground range, m). */
  fromM: number;
  toM: number;
}

export interface DiagramFlightLevel {
  fl: number;
  /** 'FL100'. */
  label: string;
  altitudeM: number;
  /** Ground range at which this altitude enters the cone of silence (0 at or below the antenna). */
  coneEdgeM: number;
}

export interface DiagramData {
  readonly lon: number;
  readonly lat: number;
  readonly azimuthDeg: number;
  readonly kFactor: number;
  readonly earthRadiusM: number;
  /** Effective earth radius k·R. */
  readonly reM: number;
  readonly mastM: number;
  readonly groundM: number;
  readonly antennaAltM: number;
  readonly maxRangeM: number;
  /** The horizon engine's range step (terrain is taken in at every one of these). */
  readonly engineStepM: number;
  /** Spacing of `rangesM` (a whole multiple of engineStepM). */
  readonly stepM: number;
  /** Ground range of each chart sample, m. */
  readonly rangesM: Float64Array;
  /** Terrain at each chart sample, m AMSL; NaN where unknown. */
  readonly terrainM: Float64Array;
  /**
   * Line-of-sight floor at each chart sample, m AMSL: the lowest altitude in line of sight of the antenna, never
   * below the terrain, capped at FLOOR_CAP_M; NaN where the sight line crosses unknown terrain.
   */
  readonly floorM: Float64Array;
  /** Where the floor stands above the terrain (terrain and earth-curvature shadow). */
  readonly shadow: RangeRun[];
  /** Where the terrain is unknown. */
  readonly unknown: RangeRun[];
  /** Detection envelope from the sensor's limits only (no terrain): per row, lowest and highest altitude. */
  readonly envelope: {
    readonly stepM: number;
    readonly rangesM: Float64Array;
    /** m AMSL; NaN where nothing is detected at that range. */
    readonly loM: Float64Array;
    readonly hiM: Float64Array;
  };
  /** Edge of the cone of silence: ground range (m) at which each altitude reaches the maximum elevation. */
  readonly cone: {
    /** Where the cone of silence begins: the type's maximum elevation plus tilt, or where the usable gain ends. */
    readonly maxElevationDeg: number;
    readonly altitudesM: Float64Array;
    readonly rangesM: Float64Array;
  };
  readonly flightLevels: DiagramFlightLevel[];
  readonly sensor: {
    readonly id: string;
    readonly kind: SensorKind;
    readonly rcsM2: number;
    /** The target in one line (RCS, fluctuation, transponder class). */
    readonly target: string;
    /** The type's specification convention in one line. */
    readonly convention: string;
    readonly tiltDeg: number;
    readonly weather: boolean;
    readonly instrumentedRangeM: number;
    readonly minRangeM: number;
  };
  /** Highest altitude the envelope search reaches (m): a flat envelope top here is this limit, not the sensor's. */
  readonly searchTopM: number;
  /** The day the flight levels are drawn for. */
  readonly day: Day;
  /** Envelope rows whose lower edge is the first lobe's over sea (0 when lobing is off or no sea is in view). */
  readonly seaLobingRows: number;
}

/** Whether an azimuth (degrees from north) lies in a sector, clockwise from fromDeg to toDeg; true without one. */
function inSector(sector: SensorModel['sector'], azimuthDeg: number): boolean {
  if (!sector) return true;
  const wrap = (a: number) => ((a % 360) + 360) % 360;
  return wrap(azimuthDeg - sector.fromDeg) <= wrap(sector.toDeg - sector.fromDeg);
}

/**
 * Ground range at which a ray leaving the antenna (altitude ha) at elevation ε reaches altitude h on a sphere
 * of radius re. Triangle centre–antenna–target: the angle at the antenna is π/2 + ε, so by the law of sines
 * the angle at the target is φ = asin((re + ha)·cos ε / (re + h)) and the central angle is π/2 − ε − φ.
 */
export function rayGroundRangeM(h: number, ha: number, re: number, elevationRad: number): number {
  if (h <= ha) return 0;
  const phi = Math.asin(((re + ha) * Math.cos(elevationRad)) / (re + h));
  return re * Math.max(0, Math.PI / 2 - elevationRad - phi);
}

export function diagramData(
  terrain: TerrainRaster,
  site: DiagramSite,
  model: SensorModel,
  opts: DiagramOptions,
): DiagramData {
  if (!Number.isFinite(opts.azimuthDeg)) {
    throw new InputError('azimuthDeg', String(opts.azimuthDeg), 'an azimuth in degrees clockwise from north');
  }
  if (!(opts.target?.rcsM2 > 0) || !Number.isFinite(opts.target.rcsM2)) {
    throw new InputError(
      'target.rcsM2',
      String(opts.target?.rcsM2),
      'a positive target radar cross-section in m²',
    );
  }
  if (!Array.isArray(opts.flightLevels)) {
    throw new InputError(
      'flightLevels',
      String(opts.flightLevels),
      'a list of flight levels such as [50, 100]',
    );
  }
  const flightLevels = opts.flightLevels.map((fl, i) => {
    if (!Number.isInteger(fl) || fl < 0 || fl > 999) {
      throw new InputError(`flightLevels[${i}]`, String(fl), 'a whole flight level from 0 to 999');
    }
    return fl;
  });
  const maxRangeM = opts.maxRangeM ?? model.instrumentedRangeM;
  const layout = planHorizon(terrain, {
    lon: site.lon,
    lat: site.lat,
    mastM: site.mastM,
    kFactor: opts.kFactor,
    maxRangeM,
    earthRadiusM: opts.earthRadiusM,
  });
  const azimuthDeg = ((opts.azimuthDeg % 360) + 360) % 360;
  const day = opts.day ?? STANDARD_DAY;
  const re = layout.reM;
  const ha = layout.antennaAltM;
  const rha = re + ha;
  const ds = layout.rangeStepM;

  // --- The engine's sweep along this one radial, at every engine sample. ---
  const fan = new RadialFan(layout.fan);
  const knots = new Float64Array(fan.rangeKnotCount * 2);
  fan.knotsForAzimuth(azimuthDeg * DEG_TO_RAD, knots);
  const lastKnot = fan.rangeKnotCount - 2;
  const knotM = fan.rangeKnotM;
  // Terrain at ground range s through the fan's knot formula (RadialFan.position without its allocation).
  const terrainAt = (s: number): number => {
    const m = Math.min(Math.floor(s / knotM), lastKnot);
    const f = (s - m * knotM) / knotM;
    const x = fan.x0 + s * (knots[m * 2] * (1 - f) + knots[m * 2 + 2] * f);
    const y = fan.y0 + s * (knots[m * 2 + 1] * (1 - f) + knots[m * 2 + 3] * f);
    return terrain.samplePixel(x, y);
  };
  const n = Math.floor(maxRangeM / ds + 1e-9) + 1; // samples j·ds ≤ maxRangeM
  // The engine's own sweep along this azimuth: the screening before each sample, near field included.
  const screening = radialScreening(terrain, layout, azimuthDeg * DEG_TO_RAD);
  const stride = Math.max(1, Math.ceil((n - 1) / (MAX_CHART_POINTS - 1)));
  const m = Math.floor((n - 1) / stride) + 1;
  const rangesM = new Float64Array(m);
  const terrainM = new Float64Array(m);
  const floorM = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const j = i * stride;
    const s = j * ds;
    const z = terrainAt(s);
    const T = screening[j];
    rangesM[i] = s;
    terrainM[i] = z;
    let h: number;
    if (T !== T || z !== z) h = NaN;
    else if (T <= NOTHING) h = z;
    else {
      const den = Math.cos(s / re) - T * Math.sin(s / re);
      h = den > 1e-9 ? Math.min(FLOOR_CAP_M, rha / den - re) : FLOOR_CAP_M;
      if (h < z) h = z;
    }
    floorM[i] = h;
  }

  const shadow = runs(rangesM, (i) => floorM[i] - terrainM[i] > SHADOW_TOLERANCE_M);
  const unknown = runs(rangesM, (i) => terrainM[i] !== terrainM[i]);

  // --- Sensor limits (no terrain). ---
  let lowestM = 0;
  for (let i = 0; i < m; i++) if (terrainM[i] < lowestM) lowestM = terrainM[i];
  const stepM = stride * ds;
  const envStepM = Math.max(stepM, maxRangeM / MAX_ENVELOPE_ROWS);
  const weather = opts.weather ?? false;
  const tiltDeg = site.tiltDeg ?? 0;
  const own = model.profile({
    target: opts.target,
    antennaAltM: ha,
    tiltDeg,
    weather,
    atmosphere: opts.atmosphere,
  });
  // A sector receiver along an azimuth outside its sector hears nothing there (as its footprint, coverage.ts).
  const profile = inSector(model.sector, opts.azimuthDeg) ? own : { ...own, rangeM: () => 0 };
  const band = sensorBand(profile, {
    antennaAltM: ha,
    reM: re,
    maxRangeM,
    stepM: envStepM,
    bottomM: lowestM,
  });
  // Over-sea lobing: where the specular point of a row's lowest detected altitude lies on sea along this radial,
  // the envelope's lower edge is the first lobe's (coverage.ts does the same on the map).
  let seaRows = 0;
  if (opts.multipath) {
    const h1 = Math.max(0, ha);
    const fMHz = model.frequencyMHz;
    const tiltRad = tiltDeg * DEG_TO_RAD;
    const voltage = (e: number) => Math.sqrt(model.patternGain(e, tiltRad));
    const over = seaBand(profile, band, { antennaAltM: ha, reM: re }, (s, h) =>
      firstLobeFactor(h1, Math.max(0, h), s, re, fMHz, 'vertical', voltage),
    );
    for (let k = 0; k < band.lo.length; k++) {
      const h = over.lo[k];
      if (!(h === h) || h === band.lo[k]) continue;
      const d1 = reflectionDistanceM(h1, Math.max(0, h), k * envStepM, re);
      const z = d1 === d1 ? terrainAt(d1) : NaN;
      if (z >= -SEA_LEVEL_TOLERANCE_M && z <= SEA_LEVEL_TOLERANCE_M) {
        band.lo[k] = h;
        seaRows++;
      }
    }
  }
  const rows = Math.floor(maxRangeM / envStepM + 1e-9) + 1;
  const envRanges = new Float64Array(rows);
  for (let i = 0; i < rows; i++) envRanges[i] = i * envStepM;

  const eMax = profile.coneOfSilenceRad;
  const coneAlt = new Float64Array(CONE_POINTS);
  const coneRange = new Float64Array(CONE_POINTS);
  for (let i = 0; i < CONE_POINTS; i++) {
    const h = ha + ((CONE_TOP_M - ha) * i) / (CONE_POINTS - 1);
    coneAlt[i] = h;
    coneRange[i] = rayGroundRangeM(h, ha, re, eMax);
  }

  return {
    lon: layout.lon,
    lat: layout.lat,
    azimuthDeg,
    kFactor: layout.kFactor,
    earthRadiusM: layout.earthRadiusM,
    reM: re,
    mastM: layout.mastM,
    groundM: layout.groundM,
    antennaAltM: ha,
    maxRangeM,
    engineStepM: ds,
    stepM,
    rangesM,
    terrainM,
    floorM,
    shadow,
    unknown,
    envelope: {
      stepM: envStepM,
      rangesM: envRanges,
      loM: band.lo.slice(0, rows),
      hiM: band.hi.slice(0, rows),
    },
    cone: { maxElevationDeg: eMax * RAD_TO_DEG, altitudesM: coneAlt, rangesM: coneRange },
    flightLevels: flightLevels.map((fl) => {
      const altitudeM = levelAltitudeM(fl, day);
      return { fl, label: formatFl(fl), altitudeM, coneEdgeM: rayGroundRangeM(altitudeM, ha, re, eMax) };
    }),
    searchTopM: TOP_M,
    day,
    seaLobingRows: seaRows,
    sensor: {
      id: model.spec.id,
      kind: model.kind,
      rcsM2: opts.target.rcsM2,
      target: describeTarget(opts.target, model.kind),
      convention: model.convention,
      tiltDeg,
      weather,
      instrumentedRangeM: model.instrumentedRangeM,
      minRangeM: model.minRangeM,
    },
  };
}

/** Maximal runs of consecutive samples for which `inside(i)` holds. */
function runs(rangesM: Float64Array, inside: (i: number) => boolean): RangeRun[] {
  const out: RangeRun[] = [];
  let start = -1;
  for (let i = 0; i <= rangesM.length; i++) {
    const on = i < rangesM.length && inside(i);
    if (on && start < 0) start = i;
    else if (!on && start >= 0) {
      out.push({ fromM: rangesM[start], toM: rangesM[i - 1] });
      start = -1;
    }
  }
  return out;
}

/** True altitude of a flight level on the day (the standard day exactly: FL × 30.48 m). */
function levelAltitudeM(fl: number, day: Day): number {
  const p = flToMetres(fl);
  return day.qnhHpa === STANDARD_DAY.qnhHpa && day.isaDeviationC === STANDARD_DAY.isaDeviationC
    ? p
    : trueAltitudeM(p, day);
}
