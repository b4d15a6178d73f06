/**
 * The receiver kinds in the web app (issue 14; app/receivers.ts and the pure parts of app/units.ts and
 * app/new-study.ts): a receiver type's own fields edited from what the user typed, in their units and against the
 * schema's own limits; a volume's multilateration accuracy bound; the altitude-aided choice; the sensors of a
 * network counted per kind; and a workspace with receivers saved and restored. The starting state is the demo with
 * receivers (data/demo-receivers-scenario.json: invented names over open ocean), read the way the CLI reads it.
 * Each refused edit is checked for an InputError naming the field and for leaving its state as it was.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError, isInputError } from '../shared/errors.ts';
import {
  AdsbTypeSchema,
  MlatTypeSchema,
  parseScenario,
  type ReceiverType,
  type Scenario,
} from '../shared/scenario.ts';
import { NM_M } from '../shared/units.ts';
import { withAltitudeAided, type NewStudy } from '../app/new-study.ts';
import {
  altitudeAided,
  compareKinds,
  kindCounts,
  kindCountText,
  profileText,
  RECEIVER_FIELD_RULES,
  receiverFieldInput,
  requirementNotes,
  requirementText,
  setAltitudeAided,
  setMlatAccuracy,
  sectorText,
  setReceiverField,
  siteKindsText,
  type ReceiverField,
} from '../app/receivers.ts';
import {
  restoreState,
  scenarioFileText,
  stateFromScenario,
  useLayout,
  type WorkState,
} from '../app/state.ts';
import { fmtReadout } from '../app/units.ts';
import { loadScenario } from '../worker/cli/scenario.ts';

let demo: Scenario;
beforeAll(async () => {
  ({ scenario: demo } = await loadScenario('data/demo-receivers-scenario.json', {
    checkTerrainFiles: false,
  }));
});

const fresh = (): WorkState => stateFromScenario(structuredClone(demo), 'demo-receivers-scenario.json');

const receiver = (s: WorkState, id: string): ReceiverType => {
  const t = s.doc.sensorTypes.find((x) => x.id === id);
  if (!t || (t.kind !== 'adsb' && t.kind !== 'mlat')) throw new Error(`test: no receiver type ${id}`);
  return t;
};

/** Runs an edit that must be refused: an InputError whose message contains each of `words`, the state untouched. */
function refused(state: WorkState, edit: (s: WorkState) => unknown, ...words: string[]): InputError {
  const before = structuredClone(state);
  let thrown: unknown;
  try {
    edit(state);
  } catch (e) {
    thrown = e;
  }
  expect(isInputError(thrown), `expected an InputError, got ${String(thrown)}`).toBe(true);
  for (const w of words) expect((thrown as InputError).message).toContain(w);
  expect(state).toStrictEqual(before);
  return thrown as InputError;
}

/** The saved scenario file, read back by the schema (what opens again in the app or the CLI). */
const reread = (s: WorkState) => parseScenario(JSON.parse(scenarioFileText(s)), 'saved.json');

describe('a receiver type’s own fields (Sensor types panel)', () => {
  it('the demo holds one receiver type of each kind', () => {
    const s = fresh();
    expect(receiver(s, 'rx-adsb-omni').kind).toBe('adsb');
    expect(receiver(s, 'rx-mlat-omni').kind).toBe('mlat');
  });

  it('an edit of each field round-trips through the saved file, leaving the other fields as they were', () => {
    let s = fresh();
    const before = receiver(s, 'rx-mlat-omni');
    s = setReceiverField(s, 'rx-mlat-omni', 'sensitivityDbm', -90, 'aviation');
    s = setReceiverField(s, 'rx-mlat-omni', 'cableLossDb', 3.5, 'aviation');
    s = setReceiverField(s, 'rx-mlat-omni', 'antennaGainDbi', 4, 'aviation');
    s = setReceiverField(s, 'rx-mlat-omni', 'timingErrorNs', 25, 'aviation');
    s = setReceiverField(s, 'rx-mlat-omni', 'instrumentedRangeNm', 180, 'aviation');
    const after = receiver(s, 'rx-mlat-omni');
    expect(after).toEqual({
      ...before,
      sensitivityDbm: -90,
      cableLossDb: 3.5,
      antennaGainDbi: 4,
      timingErrorNs: 25,
      instrumentedRangeNm: 180,
    });
    const back = reread(s).sensorTypes.find((t) => t.id === 'rx-mlat-omni');
    expect(back).toEqual(after);
    // The ADS-B type was not touched.
    expect(receiver(s, 'rx-adsb-omni')).toEqual(receiver(fresh(), 'rx-adsb-omni'));
  });

  it('a range typed in km is stored in NM; beyond a receiver’s 1000 NM it is refused in km', () => {
    const s = setReceiverField(fresh(), 'rx-adsb-omni', 'instrumentedRangeNm', 370.4, 'metric');
    expect(receiver(s, 'rx-adsb-omni').instrumentedRangeNm).toBeCloseTo((370.4 * 1000) / NM_M, 9);
    refused(
      fresh(),
      (x) => setReceiverField(x, 'rx-adsb-omni', 'instrumentedRangeNm', 2000, 'metric'),
      'instrumentedRangeNm',
      'rx-adsb-omni',
      '2000 km',
      'at most 1852.0 km',
    );
    refused(
      fresh(),
      (x) => setReceiverField(x, 'rx-adsb-omni', 'instrumentedRangeNm', 0, 'aviation'),
      'instrumentedRangeNm',
      'more than 0 NM',
    );
  });

  it('refuses a value out of range naming the type, the field, what was typed and what is accepted', () => {
    const s = fresh();
    refused(
      s,
      (x) => setReceiverField(x, 'rx-adsb-omni', 'sensitivityDbm', -30, 'aviation'),
      'sensitivity of rx-adsb-omni (sensitivityDbm)',
      '-30 dBm',
      'from −120 dBm to −40 dBm',
    );
    refused(
      s,
      (x) => setReceiverField(x, 'rx-adsb-omni', 'cableLossDb', 20, 'aviation'),
      'cableLossDb',
      'to below 20 dB',
    );
    refused(s, (x) => setReceiverField(x, 'rx-mlat-omni', 'antennaGainDbi', -21, 'metric'), 'antennaGainDbi');
    refused(
      s,
      (x) => setReceiverField(x, 'rx-mlat-omni', 'timingErrorNs', 0, 'aviation'),
      'timingErrorNs',
      'above 0 ns',
    );
    // An empty field is "nothing", not NaN.
    refused(s, (x) => setReceiverField(x, 'rx-mlat-omni', 'timingErrorNs', NaN, 'aviation'), 'found nothing');
    // The timing error is a multilateration receiver's only; a radar has none of these fields.
    refused(
      s,
      (x) => setReceiverField(x, 'rx-adsb-omni', 'timingErrorNs', 20, 'aviation'),
      'timingErrorNs',
      'found an ADS-B station',
      'a multilateration receiver',
    );
    const radar = s.doc.sensorTypes.find((t) => t.kind === 'secondary')!;
    refused(
      s,
      (x) => setReceiverField(x, radar.id, 'sensitivityDbm', -80, 'aviation'),
      radar.id,
      'a receiver type',
    );
    refused(s, (x) => setReceiverField(x, 'no-such-type', 'sensitivityDbm', -80, 'aviation'), 'no-such-type');
  });

  it('says the antenna: omnidirectional, or its sector clockwise', () => {
    const t = receiver(fresh(), 'rx-adsb-omni');
    expect(sectorText(t)).toBe('omnidirectional');
    expect(sectorText({ ...t, sector: { fromDeg: 300, toDeg: 60 } })).toBe('sector 300° → 60° (clockwise)');
  });

  it('the panel’s limits are the schema’s: at each bound and just beyond, both accept or both refuse', () => {
    const base = receiver(fresh(), 'rx-mlat-omni');
    const fields = Object.keys(RECEIVER_FIELD_RULES) as ReceiverField[];
    for (const f of fields) {
      const r = RECEIVER_FIELD_RULES[f];
      for (const v of [r.min - 0.01, r.min, r.min + 0.01, r.max - 0.01, r.max, r.max + 0.01]) {
        let mine = true;
        try {
          receiverFieldInput(f, v, f);
        } catch {
          mine = false;
        }
        const schema = MlatTypeSchema.safeParse({ ...base, [f]: v }).success;
        expect(mine, `${f} = ${v}`).toBe(schema);
        if (f !== 'timingErrorNs') {
          const { timingErrorNs: _t, ...adsb } = { ...(base as ReceiverType & { timingErrorNs: number }) };
          expect(
            AdsbTypeSchema.safeParse({ ...adsb, kind: 'adsb', [f]: v }).success,
            `adsb ${f} = ${v}`,
          ).toBe(schema);
        }
      }
    }
  });
});

describe('a volume’s receiver requirement (Airspace panel)', () => {
  it('states the demo terminal area’s requirement per kind with its accuracy bound', () => {
    const v = fresh().doc.volumes.find((x) => x.id === 'zellantis-terminal')!;
    expect(requirementText(v)).toBe(
      'PSR 1 · SSR 2 · multilateration 3 · multilateration accuracy ≤ 50 m (1σ)',
    );
    expect(requirementText({ requiredFold: {} })).toBe('any radar 1');
  });

  it('sets an accuracy bound, saves it, removes it again (the key gone from the file)', () => {
    let s = setMlatAccuracy(fresh(), 'upper-enroute', 75);
    expect(reread(s).volumes.find((v) => v.id === 'upper-enroute')!.requiredMlatAccuracyM).toBe(75);
    s = setMlatAccuracy(s, 'upper-enroute', null);
    const saved = JSON.parse(scenarioFileText(s)) as { volumes: Record<string, unknown>[] };
    expect(saved.volumes.find((v) => v.id === 'upper-enroute')).not.toHaveProperty('requiredMlatAccuracyM');
    // The others keep theirs.
    expect(reread(s).volumes.find((v) => v.id === 'zellantis-terminal')!.requiredMlatAccuracyM).toBe(50);
  });

  it('refuses an accuracy of 0, below 0 or not a number, naming the volume and the field', () => {
    for (const bad of [0, -5, NaN, Infinity])
      refused(
        fresh(),
        (x) => setMlatAccuracy(x, 'zellantis-terminal', bad),
        'multilateration accuracy of zellantis-terminal (requiredMlatAccuracyM)',
        'above 0',
      );
    refused(fresh(), (x) => setMlatAccuracy(x, 'no-such-volume', 10), 'no-such-volume');
  });

  it('says when a count is below what a fix needs, and that a bound asks for a fix', () => {
    const v = fresh().doc.volumes.find((x) => x.id === 'zellantis-terminal')!;
    // Three receivers make a fix only with the reported altitude (shared/sensor-kinds.ts mlatMinReceivers).
    expect(requirementNotes(v, true)).toEqual([]);
    // Without it, the bound makes the plan count 4 (worker/core/plan/accuracy.ts withImpliedMlatFolds).
    const unaided = requirementNotes(v, false);
    expect(unaided).toHaveLength(1);
    expect(unaided[0]).toContain('counts 4 multilateration receivers');
    const { requiredMlatAccuracyM: _b, ...noBound } = v;
    expect(requirementNotes(noBound, false)[0]).toContain('fewer than the 4 a fix needs');
    expect(
      requirementNotes({ id: 'x', requiredFold: { secondary: 1 }, requiredMlatAccuracyM: 30 }, true)[0],
    ).toContain('counts 3 multilateration receivers');
    expect(requirementNotes({ id: 'x', requiredFold: { secondary: 1 } }, false)).toEqual([]);
  });

  it('the altitude-aided choice is the scenario’s: off is saved and read back; on is the default', () => {
    const s0 = fresh();
    expect(altitudeAided(s0)).toBe(true);
    const s = setAltitudeAided(s0, false);
    expect(altitudeAided(s)).toBe(false);
    expect(reread(s).mlatAltitudeAided).toBe(false);
    expect(altitudeAided(s0)).toBe(true);
  });
});

describe('sensors per kind (Sites, Plan, Outages, Layouts panels)', () => {
  it('counts the demo’s receiver layout per kind from its types', () => {
    const s = fresh();
    const l = s.doc.layouts.find((x) => x.name === 'existing network with receivers')!;
    const c = kindCounts(l.sensors, s.doc.sensorTypes);
    const kindOf = new Map(s.doc.sensorTypes.map((t) => [t.id, t.kind]));
    for (const k of ['primary', 'secondary', 'adsb', 'mlat'] as const)
      expect(c[k]).toBe(l.sensors.filter((r) => kindOf.get(r.typeId) === k).length);
    expect(c.primary + c.secondary + c.adsb + c.mlat).toBe(l.sensors.length);
    expect(c.adsb + c.mlat).toBeGreaterThan(0);
  });

  it('says the counts in words, leaving out kinds with none, with singular and plural', () => {
    expect(kindCountText({ primary: 1, secondary: 3, adsb: 1, mlat: 6 })).toBe(
      '1 PSR, 3 SSR, 1 ADS-B station, 6 multilateration receivers',
    );
    expect(kindCountText({ primary: 0, secondary: 2, adsb: 0, mlat: 0 })).toBe('2 SSR');
    expect(kindCountText({ primary: 0, secondary: 0, adsb: 0, mlat: 0 })).toBe('none');
  });

  it('names the kinds a site carries, and compares two layouts per kind (receivers only when either has some)', () => {
    const s = fresh();
    const types = s.doc.sensorTypes;
    const radarsOnly = s.doc.layouts.find((x) => x.name === 'existing network')!.sensors;
    const withRx = s.doc.layouts.find((x) => x.name === 'existing network with receivers')!.sensors;
    const rx = withRx.find((r) => types.find((t) => t.id === r.typeId)?.kind === 'mlat')!;
    expect(siteKindsText(rx.siteId, withRx, types)).toContain('multilateration');
    expect(siteKindsText(rx.siteId, radarsOnly, types)).toBe('');
    expect(compareKinds(radarsOnly, radarsOnly, types).map((r) => r[0])).toEqual([
      'PSR',
      'SSR',
      'all sensors',
    ]);
    // The demo's receiver layout adds multilateration receivers and no ADS-B station: no ADS-B row.
    const c = kindCounts(withRx, types);
    expect([c.adsb, c.mlat > 0]).toEqual([0, true]);
    const rows = compareKinds(radarsOnly, withRx, types);
    expect(rows.map((r) => r[0])).toEqual(['PSR', 'SSR', 'multilateration', 'all sensors']);
    expect(rows[2]).toEqual(['multilateration', '0', String(c.mlat)]);
    expect(rows.at(-1)).toEqual(['all sensors', String(radarsOnly.length), String(withRx.length)]);
  });
});

describe('a workspace with receivers', () => {
  it('restores from its saved JSON: receiver network, receiver fold kind, edited fields and choices', () => {
    let s = useLayout(fresh(), 'existing network with receivers');
    s = setReceiverField(s, 'rx-adsb-omni', 'sensitivityDbm', -84, 'metric');
    s = setMlatAccuracy(s, 'vaskerrow-terminal', 40);
    s = setAltitudeAided(s, false);
    s = { ...s, view: { ...s.view, kind: 'mlat' } };
    const back = restoreState(JSON.parse(JSON.stringify(s)));
    expect(back.network).toEqual(s.network);
    expect(back.view.kind).toBe('mlat');
    expect(receiver(back, 'rx-adsb-omni').sensitivityDbm).toBe(-84);
    expect(back.doc.volumes.find((v) => v.id === 'vaskerrow-terminal')!.requiredMlatAccuracyM).toBe(40);
    expect(altitudeAided(back)).toBe(false);
    expect(kindCounts(back.network, back.doc.sensorTypes).mlat).toBeGreaterThan(0);
  });
});

describe('words and figures for receivers', () => {
  it('the read-out says "radar sites" beside receiver counts, and reads as before without receivers', () => {
    const r = {
      lon: -29.5,
      lat: -41.25,
      groundM: 0,
      floorM: 100,
      fold: { any: 2, primary: 1, secondary: 1, adsb: 3, mlat: 4 },
    };
    expect(fmtReadout(r, 'metric', { level: 'FL100' })).toContain(
      'radar sites at FL100: 2 (PSR 1, SSR 1) · receivers: ADS-B 3, multilateration 4',
    );
    const radarOnly = fmtReadout({ ...r, fold: { ...r.fold, adsb: 0, mlat: 0 } }, 'metric', {
      level: 'FL100',
    });
    expect(radarOnly).toContain(' · sites at FL100: 2 (PSR 1, SSR 1)');
    expect(radarOnly).not.toContain('receivers');
  });

  it('the Profile panel describes a receiver’s diagram without radar-only wording', () => {
    for (const k of ['adsb', 'mlat'] as const) {
      const t = profileText(k);
      expect(t).toContain('1090 MHz');
      expect(t).not.toMatch(/detection envelope|cone of silence and|SSR/i);
    }
    expect(profileText('primary')).toContain('cone of silence');
    expect(profileText(undefined)).toContain('detection envelope');
  });

  it('a new study takes the planner’s altitude-aided choice, written only when it is not the default', () => {
    const built = {
      doc: { name: 'Invented new study', mlatAltitudeAided: true },
      scenario: structuredClone(demo),
    } as unknown as NewStudy;
    const copy = structuredClone(built);
    const off = withAltitudeAided(built, false);
    expect(off.doc.mlatAltitudeAided).toBe(false);
    expect(off.scenario.mlatAltitudeAided).toBe(false);
    const on = withAltitudeAided(built, true);
    expect(on.doc).not.toHaveProperty('mlatAltitudeAided');
    expect(on.scenario.mlatAltitudeAided).toBe(true);
    expect(built).toStrictEqual(copy);
  });
});
