/**
 * ADS-B and multilateration ground receivers: the range to which a receiver decodes a target's 1090 MHz
 * transmissions (extended squitters, replies), per elevation angle.
 *
 * One-way downlink budget (Friis, "A note on a simple transmission formula", Proc. IRE 34, 1946):
 *
 *   Pr(d, ε) = Ptx + Gtx − Linst + Grx·g(ε) − Lcable − FSPL(d) − Lgas(ε, d)       (dBm, dB)
 *   FSPL(d)  = 20·log10(4π·d/λ),  λ = c / 1090 MHz
 *
 * received iff Pr ≥ the receiver's sensitivity S. Ptx, Gtx and Linst come from the study's transponder class
 * (sensor.ts TRANSPONDER_CLASSES: the class's minimum reply power, a 0 dBi aircraft antenna, its installation
 * loss; ICAO Annex 10 Vol. IV, from memory); the 1090 MHz extended squitter is taken to leave at that same power
 * (the same transmitter, from memory). Grx is the receiving antenna's peak gain (dBi), g(ε) its normalised
 * elevation pattern (the pattern spec of sensor.ts: cosec² or a table), Lcable its cable loss, Lgas the one-way
 * gaseous loss of ITU-R P.676 along the path (atmosphere.ts, through sensor.ts's shared loss tables).
 *
 * Without gaseous loss the range solves FSPL = M, M = Ptx + Gtx − Linst + Grx − Lcable − S:
 *   d(ε) = λ/(4π)·10^(M/20)·√g(ε)       (sensor.ts linkRangeM),
 * and with it d = d0(ε)·10^(−Lgas(ε, d)/20), solved by fixed-point iteration (Lgas grows slowly with d), capped at
 * the receiver's instrumented range. A sector receiver (azimuth limits) receives nothing outside its sector.
 *
 * The result is shaped like sensor.ts's DetectionProfile (rangeM(ε), minRangeM, coneOfSilenceRad …), and
 * `buildReceiverSensorModel` wraps a receiver catalog entry (kind `adsb` / `mlat`) as a SensorModel, so that the
 * footprints, folds and plans take receivers as they take radars: R(ε) tabulated every PATTERN_TABLE_STEP_DEG with a node at the pattern's
 * peak, linear between nodes, nothing allocated per call. Line of sight over the terrain is decided separately
 * (the horizon engine), as for the radars.
 *
 * Assumptions and limits (docs/PHYSICS.md §7a): free space plus gaseous loss; no multipath, no garbling, FRUIT or
 * channel occupancy; the aircraft antenna is omnidirectional (no airframe shadowing); the pattern is the same at
 * every azimuth inside the sector.
 */
import { InputError } from '../../shared/errors.ts';
import { DEG_TO_RAD, nmToM } from '../../shared/units.ts';
import type { PathLossTable } from './atmosphere.ts';
import {
  buildPattern,
  linkRangeM,
  num,
  PATTERN_TABLE_STEP_DEG,
  show,
  pathLossTable,
  SSR_REPLY_MHZ,
  TRANSPONDER_CLASSES,
  wattsToDbm,
  type DetectionProfile,
  type ElevationPatternSpec,
  type Pattern,
  type ProfileRequest,
  type ReceiverTypeSpec,
  type SensorModel,
  type Target,
  type TransponderClass,
} from './sensor.ts';

/** A 1090 MHz ground receiver (ADS-B ground station or multilateration receiver). */
export interface ReceiverSpec {
  /** Minimum decoded signal level at the receiver input, dBm. */
  sensitivityDbm: number;
  /** Loss between the antenna and the receiver input, dB. */
  cableLossDb: number;
  /** Antenna gain at the elevation pattern's peak, dBi. */
  antennaGainDbi: number;
  /** Normalised elevation pattern (the pattern spec of sensor.ts). */
  elevationPattern: ElevationPatternSpec;
  /** Range beyond which nothing is reported, m. */
  instrumentedRangeM: number;
  /**
   * Azimuth limits of a sector antenna, degrees clockwise from true north: the sector runs clockwise from
   * fromDeg to toDeg (fromDeg 300, toDeg 60 is the 120° sector through north). Absent: omnidirectional.
   */
  sector?: { fromDeg: number; toDeg: number };
}

/** What a reception profile is built for. */
export interface ReceptionRequest {
  target: Target;
  /** Antenna altitude AMSL, m (the gaseous loss depends on it). */
  antennaAltM: number;
  /** Gaseous attenuation on (default true). */
  atmosphere?: boolean;
  /** The site's antenna tilt, degrees (default 0): raises the whole elevation pattern, as for the radars. */
  tiltDeg?: number;
}

/** The reception range of one receiver for one target, per elevation (and azimuth, for a sector). */
export interface ReceptionProfile extends DetectionProfile {
  /** True inside the sector (always for an omni receiver); azimuth clockwise from north, radians. */
  inSector(azimuthRad: number): boolean;
  /** min(instrumented range, reception range) at ε inside the sector, 0 outside it. */
  rangeAtM(elevationRad: number, azimuthRad: number): number;
}

/** The downlink budget before path loss, M = Ptx + Gtx − Linst + Grx − Lcable − S (dB), at the pattern's peak. */
export function downlinkBudgetDb(
  spec: Pick<ReceiverSpec, 'sensitivityDbm' | 'cableLossDb' | 'antennaGainDbi'>,
  transponder: TransponderClass,
): number {
  const x = TRANSPONDER_CLASSES[transponder];
  return (
    wattsToDbm(x.replyPowerW) +
    x.antennaGainDbi -
    x.installationLossDb +
    spec.antennaGainDbi -
    spec.cableLossDb -
    spec.sensitivityDbm
  );
}

/** A validated receiver: its pattern and its limits. */
export interface ReceiverModel {
  readonly spec: ReceiverSpec;
  readonly instrumentedRangeM: number;
  /** Normalised one-way power gain g(ε − tilt), 0…1. */
  patternGain(elevationRad: number, tiltRad?: number): number;
  /** Free-space range at the pattern's peak for the target, m (no atmosphere, no instrumented range). */
  peakRangeM(target: Target): number;
  profile(req: ReceptionRequest): ReceptionProfile;
}

/**
 * Validates a receiver spec and builds its model. `where` names it in the user's terms (e.g.
 * `scenario.json: receivers[2]`); bad fields throw InputError(where.field, found, expected).
 */
export function buildReceiverModel(spec: ReceiverSpec, where: string): ReceiverModel {
  const s: unknown = spec;
  if (typeof s !== 'object' || s === null || Array.isArray(s)) {
    throw new InputError(where, show(s), 'a receiver object { sensitivityDbm, cableLossDb, … }');
  }
  const o = s as Record<string, unknown>;
  num(o, 'sensitivityDbm', where, (v) => v >= -120 && v <= -40, 'a sensitivity in dBm from −120 to −40');
  num(o, 'cableLossDb', where, (v) => v >= 0 && v < 20, 'a loss in dB from 0 to below 20');
  num(o, 'antennaGainDbi', where, (v) => v >= -20 && v <= 40, 'a gain in dBi from −20 to 40');
  const instr = num(
    o,
    'instrumentedRangeM',
    where,
    (v) => v > 0 && v <= 2_000_000,
    'a range in m above 0 and at most 2 000 000',
  );
  let sector: { from: number; width: number } | null = null;
  if (o.sector !== undefined) {
    const sp = `${where}.sector`;
    const sec = o.sector;
    if (typeof sec !== 'object' || sec === null || Array.isArray(sec)) {
      throw new InputError(sp, show(sec), '{ fromDeg, toDeg } (clockwise from fromDeg to toDeg, from north)');
    }
    const so = sec as Record<string, unknown>;
    const angle = (v: number) => v >= -360 && v <= 360;
    const from = num(so, 'fromDeg', sp, angle, 'an azimuth in degrees from −360 to 360');
    const to = num(so, 'toDeg', sp, angle, 'an azimuth in degrees from −360 to 360');
    const width = (((to - from) % 360) + 360) % 360;
    if (width === 0) {
      throw new InputError(
        `${sp}.toDeg`,
        show(to),
        `an azimuth other than fromDeg (${from}); omit sector for omni`,
      );
    }
    sector = { from: wrapRad(from * DEG_TO_RAD), width: width * DEG_TO_RAD };
  }
  // The pattern: validated and evaluated by sensor.ts's own code, the same as a radar's.
  const pattern = buildPattern(spec.elevationPattern, `${where}.elevationPattern`);
  return new Receiver(spec, instr, pattern, sector);
}

/** Reception range per elevation for a receiver spec and a target (validates the spec; see buildReceiverModel). */
export function receptionProfile(spec: ReceiverSpec, req: ReceptionRequest, where: string): ReceptionProfile {
  return buildReceiverModel(spec, where).profile(req);
}

class Receiver implements ReceiverModel {
  constructor(
    readonly spec: ReceiverSpec,
    readonly instrumentedRangeM: number,
    private readonly pattern: Pattern,
    private readonly sector: { from: number; width: number } | null,
  ) {}

  patternGain(elevationRad: number, tiltRad = 0): number {
    return this.pattern.gain(elevationRad - tiltRad);
  }

  peakRangeM(target: Target): number {
    return linkRangeM(downlinkBudgetDb(this.spec, target.transponder), SSR_REPLY_MHZ);
  }

  profile(req: ReceptionRequest): ReceptionProfile {
    const peakM = this.peakRangeM(req.target);
    const instr = this.instrumentedRangeM;
    const table = (req.atmosphere ?? true) ? pathLossTable(SSR_REPLY_MHZ, req.antennaAltM, instr) : null;
    const step = PATTERN_TABLE_STEP_DEG * DEG_TO_RAD;
    const tilt = (req.tiltDeg ?? 0) * DEG_TO_RAD;
    const peak = this.pattern.peakRad + tilt;
    const below = Math.ceil((peak + Math.PI / 2) / step - 1e-9);
    const lo = peak - below * step;
    const n = Math.ceil((Math.PI / 2 - lo) / step - 1e-9) + 2;
    const t = new Float64Array(n);
    let factor = 1;
    for (let i = 0; i < n; i++) {
      const e = Math.min(lo + i * step, Math.PI / 2);
      const r0 = peakM * Math.sqrt(this.patternGain(e, tilt));
      if (table !== null && r0 > 0) factor = lossFactor(r0, factor, e, table, instr);
      const r = r0 * (table === null ? 1 : factor);
      t[i] = r > instr ? instr : r;
    }
    return new Profile(instr, peakM, t, lo, 1 / step, this.sector);
  }
}

/**
 * The factor K = d/d0 with d = d0·10^(−Lgas(ε, d)/20), by fixed-point iteration from the previous node's factor;
 * each step gains about a decimal (the map's slope is ln10/20·d·dL/dd, a small fraction of a dB's effect). Where
 * d reaches the instrumented range the factor at that range is kept (enough to decide that it reaches it).
 */
function lossFactor(r0: number, guess: number, e: number, table: PathLossTable, cap: number): number {
  let r = Math.min(r0 * guess, cap);
  for (let k = 0; k < 4; k++) r = Math.min(r0 * Math.pow(10, -table.oneWayDb(e, r) / 20), cap);
  return r >= cap ? Math.pow(10, -table.oneWayDb(e, cap) / 20) : r / r0;
}

class Profile implements ReceptionProfile {
  readonly minRangeM = 0;
  readonly coneOfSilenceRad = Math.PI / 2;
  readonly limitingLink = undefined;
  constructor(
    readonly instrumentedRangeM: number,
    readonly peakRangeM: number,
    private readonly table: Float64Array,
    private readonly loRad: number,
    private readonly invStepRad: number,
    private readonly sector: { from: number; width: number } | null,
  ) {}

  rangeM(elevationRad: number): number {
    let x = (elevationRad - this.loRad) * this.invStepRad;
    if (x < 0) x = 0;
    const t = this.table;
    const last = t.length - 1;
    if (x >= last) return t[last];
    const i = x | 0;
    const a = t[i];
    return a + (x - i) * (t[i + 1] - a);
  }

  inSector(azimuthRad: number): boolean {
    const s = this.sector;
    if (s === null) return true;
    return wrapRad(azimuthRad - s.from) <= s.width;
  }

  rangeAtM(elevationRad: number, azimuthRad: number): number {
    return this.inSector(azimuthRad) ? this.rangeM(elevationRad) : 0;
  }
}

/**
 * A receiver catalog entry (kind `adsb` or `mlat`) as a SensorModel, so that footprints, folds, plans and diagrams
 * take it like a radar: its profile is the reception profile above (no minimum range, no cone of silence beyond
 * the pattern: `maxElevationRad` is 90°), its range depends on the target's transponder class only, and weather
 * does not change it. The sector is applied by the footprint (coverage.ts), per cell azimuth.
 */
export function buildReceiverSensorModel(spec: ReceiverTypeSpec, where: string): SensorModel {
  const o = spec as unknown as Record<string, unknown>;
  if (typeof o.id !== 'string' || o.id.trim() === '') {
    throw new InputError(`${where}.id`, show(o.id), 'a non-empty identifier string');
  }
  if (typeof o.name !== 'string' || o.name.trim() === '') {
    throw new InputError(`${where}.name`, show(o.name), 'a non-empty name');
  }
  num(o, 'cost', where, (v) => v >= 0, 'a cost of zero or more');
  const instrNm = num(
    o,
    'instrumentedRangeNm',
    where,
    (v) => v > 0 && v <= 1000,
    'a range in NM above 0 and at most 1000',
  );
  if (spec.kind === 'mlat') {
    num(
      o,
      'timingErrorNs',
      where,
      (v) => v > 0 && v <= 1000,
      'a 1σ arrival-time error in ns above 0 and at most 1000',
    );
  } else if (o.timingErrorNs !== undefined) {
    throw new InputError(
      `${where}.timingErrorNs`,
      show(o.timingErrorNs),
      "nothing: an ADS-B station takes positions from the aircraft's own reports (kind 'mlat' for a multilateration receiver)",
    );
  }
  const rx = buildReceiverModel(
    {
      sensitivityDbm: spec.sensitivityDbm,
      cableLossDb: spec.cableLossDb,
      antennaGainDbi: spec.antennaGainDbi,
      elevationPattern: spec.elevationPattern,
      instrumentedRangeM: nmToM(instrNm),
      ...(spec.sector ? { sector: spec.sector } : {}),
    },
    where,
  );
  return new ReceiverSensor(spec, rx);
}

class ReceiverSensor implements SensorModel {
  readonly kind: 'adsb' | 'mlat';
  readonly frequencyMHz = SSR_REPLY_MHZ;
  readonly maxElevationRad = Math.PI / 2;
  readonly instrumentedRangeM: number;
  readonly minRangeM = 0;
  readonly weatherFactor = 1;
  readonly warnings: readonly string[] = [];
  readonly convention: string;
  readonly sector?: { fromDeg: number; toDeg: number };
  private readonly profiles = new Map<string, ReceptionProfile>();

  constructor(
    readonly spec: ReceiverTypeSpec,
    private readonly rx: ReceiverModel,
  ) {
    this.kind = spec.kind;
    this.instrumentedRangeM = rx.instrumentedRangeM;
    if (spec.sector) this.sector = { fromDeg: spec.sector.fromDeg, toDeg: spec.sector.toDeg };
    const sector = spec.sector ? `, sector ${spec.sector.fromDeg}° to ${spec.sector.toDeg}° clockwise` : '';
    const timing = spec.kind === 'mlat' ? `; arrival-time error ${spec.timingErrorNs} ns (1σ)` : '';
    this.convention = `receives ${SSR_REPLY_MHZ} MHz: sensitivity ${spec.sensitivityDbm} dBm, ${spec.antennaGainDbi} dBi, ${spec.cableLossDb} dB cable${sector}${timing}`;
  }

  peakRangeM(target: Target): number {
    return this.rx.peakRangeM(target);
  }

  patternGain(elevationRad: number, tiltRad = 0): number {
    return this.rx.patternGain(elevationRad, tiltRad);
  }

  /** Reception profiles by transponder class, tilt and loss table (weather does not enter). */
  profile(req: ProfileRequest): ReceptionProfile {
    const atmOn = req.atmosphere ?? true;
    const key = [
      this.targetKey(req.target),
      req.tiltDeg ?? 0,
      atmOn ? Math.max(0, Math.round(req.antennaAltM / 250)) : 'free space',
    ].join('|');
    let p = this.profiles.get(key);
    if (p === undefined) {
      if (this.profiles.size >= 256) this.profiles.clear();
      p = this.rx.profile({
        target: req.target,
        antennaAltM: req.antennaAltM,
        atmosphere: atmOn,
        tiltDeg: req.tiltDeg,
      });
      this.profiles.set(key, p);
    }
    return p;
  }

  targetKey(target: Target): string {
    return target.transponder;
  }
}

/** An angle wrapped into [0, 2π). */
function wrapRad(a: number): number {
  const two = 2 * Math.PI;
  const r = a % two;
  return r < 0 ? r + two : r;
}
