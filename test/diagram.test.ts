/**
 * Vertical coverage diagram: the data along one radial (worker/core/diagram.ts) and its SVG (worker/io/diagram-svg.ts).
 *
 * Sources of the check values:
 * - Radar horizon on a smooth sphere of radius Re (exact spherical form: the tangent ray from the antenna grazes
 *   the sphere at arc Re·acos(Re/(Re+ha)) and climbs to altitude h over a further arc Re·acos(Re/(Re+h))), and
 *   the check value 30 m antenna → FL100 at ≈ 250.1 km on the 4/3 earth: test/REFERENCES.md (Skolnik, Introduction
 *   to Radar Systems, horizon on the 4/3 earth — recalled from memory).
 * - Cone of silence at FL100 for a 40° maximum elevation: 3048 m / tan 40° = 3632 m, geometry [calc]
 *   (test/REFERENCES.md).
 * - A cosecant-squared elevation pattern gives R·sin ε ≈ const, a constant-altitude envelope on a flat earth:
 *   test/REFERENCES.md (Skolnik, ibid. — recalled from memory).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { diagramData, rayGroundRangeM } from '../worker/core/diagram.ts';
import { renderDiagramSvg, escapeXml } from '../worker/io/diagram-svg.ts';
import { computeHorizon, floorAt, planHorizon, traceRadial } from '../worker/core/horizon.ts';
import { pseudoToAzimuthRad } from '../worker/core/geodesy.ts';
import {
  DEFAULT_TARGET,
  describeTarget,
  type RadarTypeSpec,
  type ReceiverTypeSpec,
  type SensorModel,
} from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';

const TARGET = DEFAULT_TARGET;
import { isInputError } from '../shared/errors.ts';
import { CAUTION } from '../shared/caution.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';
import { bumpyDem } from './support/bumps.ts';

const R = 6_371_000;
const RAD_TO_DEG = 180 / Math.PI;

/** An invented beacon interrogator (secondary: range independent of RCS) with a cosec² elevation pattern. */
function cosec2Sensor(o: {
  startDeg: number;
  endDeg: number;
  maxElevationDeg: number;
  referenceRangeNm: number;
  instrumentedRangeNm?: number;
}): SensorModel {
  return buildSensorModel(
    {
      id: 'test-beacon',
      name: 'Test beacon interrogator',
      kind: 'secondary',
      frequencyMHz: 1030,
      cost: 1,
      maxElevationDeg: o.maxElevationDeg,
      instrumentedRangeNm: o.instrumentedRangeNm ?? 250,
      minRangeNm: 0,
      elevationPattern: { type: 'cosec2', startDeg: o.startDeg, endDeg: o.endDeg },
      detection: { referenceRangeNm: o.referenceRangeNm },
    },
    'test sensor',
  );
}

const beacon = cosec2Sensor({ startDeg: 2, endDeg: 45, maxElevationDeg: 40, referenceRangeNm: 150 });

/** A square metric grid with the site on its centre cell. */
function grid(n: number, pixelM: number, height: (xM: number, yM: number) => number) {
  const c = (n - 1) / 2;
  const data = new Float32Array(n * n);
  for (let r = 0; r < n; r++) {
    for (let col = 0; col < n; col++) data[r * n + col] = height((col - c) * pixelM, (c - r) * pixelM);
  }
  const terrain = metricTerrain(data, n, n, pixelM);
  const site = cellLonLat(metricGeo(n, n, pixelM), c, c);
  return { terrain, site, data };
}

/** Exact floor on a smooth sphere: the altitude whose tangent-ray arc completes `s`. */
function exactFloor(s: number, ha: number, re: number): number {
  const s1 = re * Math.acos(re / (re + ha));
  const s2 = s - s1;
  return s2 <= 0 ? 0 : re / Math.cos(s2 / re) - re;
}

describe.each([1, 4 / 3])('flat sea, k = %s', (k) => {
  const N = 1101;
  const PIXEL_M = 500;
  const { terrain, site } = grid(N, PIXEL_M, () => 0);
  const ha = 30;
  const re = k * R;
  const d = diagramData(terrain, { ...site, mastM: ha }, beacon, {
    azimuthDeg: 37,
    kFactor: k,
    maxRangeM: 270_000,
    target: TARGET,
    flightLevels: [100],
  });

  it('the floor curve is the radar-horizon relation (exact spherical form) within 0.5 %', () => {
    let worst = 0;
    let checked = 0;
    for (let i = 0; i < d.rangesM.length; i++) {
      const exact = exactFloor(d.rangesM[i], ha, re);
      if (exact < 200) continue;
      worst = Math.max(worst, Math.abs(d.floorM[i] - exact) / exact);
      checked++;
    }
    expect(checked).toBeGreaterThan(300);
    expect(worst).toBeLessThan(0.005);
    expect(d.terrainM.every((z) => z === 0)).toBe(true);
    // The shadow is the earth's curvature: beyond the radar horizon s1 = Re·acos(Re/(Re+ha)) the floor rises as
    // ≈ (s − s1)²/(2Re), so it clears the 0.5 m shadow tolerance at s1 + √(Re) and never comes down again.
    const startM = re * Math.acos(re / (re + ha)) + Math.sqrt(2 * re * 0.5);
    expect(d.shadow.length).toBe(1);
    expect(Math.abs(d.shadow[0].fromM - startM)).toBeLessThanOrEqual(2 * d.stepM);
    expect(d.shadow[0].toM).toBe(d.rangesM[d.rangesM.length - 1]);
  });

  if (k === 4 / 3) {
    it('FL100 enters line of sight at ≈ 250.1 km for a 30 m antenna (test/REFERENCES.md) within 0.5 %', () => {
      const i = d.floorM.findIndex((f) => f >= 3048);
      expect(i).toBeGreaterThan(0);
      expect(Math.abs(d.rangesM[i] - 250_100) / 250_100).toBeLessThan(0.005);
    });
  }
});

describe('agreement with the horizon engine', () => {
  const N = 121;
  const PIXEL_M = 90;
  const C = (N - 1) / 2;
  const data = bumpyDem(20240611, N, N);
  // Plus a sharp knoll a few pixels from the antenna, inside the engine's finely sampled near field.
  for (let r = 0; r < N; r++) {
    for (let c = 0; c < N; c++)
      data[r * N + c] += 250 * Math.max(0, 1 - Math.hypot(c - C - 4, r - C + 3) / 2);
  }
  const terrain = metricTerrain(data, N, N, PIXEL_M);
  const site = cellLonLat(terrain.geo, C, C);
  const spec = { ...site, mastM: 12, maxRangeM: 5000 };

  it('the floor equals the engine floor along one of its own radials, and the profile its sample positions', () => {
    const horizon = computeHorizon(terrain, spec);
    const n0 = horizon.layout.levels[0].azimuthCount;
    let shadowSeen = 0;
    for (let i = 0; i < n0; i += 37) {
      const pseudo = (i / n0) * 2 * Math.PI;
      const azRad = pseudoToAzimuthRad(pseudo);
      const d = diagramData(terrain, spec, beacon, {
        azimuthDeg: azRad * RAD_TO_DEG,
        target: TARGET,
        maxRangeM: 5000,
        flightLevels: [],
      });
      expect(d.engineStepM).toBe(horizon.layout.rangeStepM);
      expect(d.stepM).toBe(d.engineStepM);
      let worst = 0;
      // From j = 1: at range 0 (the antenna's own position) nothing can screen and the diagram puts the floor on
      // the ground, where the engine's formula gives the antenna altitude (no cell of a floor raster sits there).
      for (let j = 1; j < d.rangesM.length; j++) {
        const s = d.rangesM[j];
        const engine = Math.max(floorAt(horizon, pseudo, s), d.terrainM[j]);
        worst = Math.max(worst, Math.abs(engine - d.floorM[j]));
        if (d.floorM[j] > d.terrainM[j] + 1) shadowSeen++;
      }
      expect(worst).toBeLessThan(0.05);
      const layout = planHorizon(terrain, spec);
      const trace = traceRadial(terrain, layout, azRad);
      for (let j = 0; j < d.rangesM.length; j++) {
        expect(Math.abs(d.terrainM[j] - terrain.samplePixel(trace[2 * j], trace[2 * j + 1]))).toBeLessThan(
          1e-3,
        );
      }
    }
    expect(shadowSeen).toBeGreaterThan(50); // the landscape does screen: the comparison is not vacuous
  });
});

describe('terrain features', () => {
  const N = 201;
  const PIXEL_M = 200;
  const CREST_M = 10_000;
  const ridge = (x: number) => 300 * Math.exp(-(((x - CREST_M) / 1000) ** 2));

  it('on a single ridge the shadow starts at the ridge crest', () => {
    const { terrain, site } = grid(N, PIXEL_M, (x) => ridge(x));
    const d = diagramData(terrain, { ...site, mastM: 20 }, beacon, {
      azimuthDeg: 90,
      maxRangeM: 18_000,
      target: TARGET,
      flightLevels: [],
    });
    expect(d.stepM).toBe(d.engineStepM);
    expect(d.stepM).toBeLessThanOrEqual(PIXEL_M);
    expect(d.shadow.length).toBe(1);
    expect(d.shadow[0].fromM).toBeGreaterThan(CREST_M);
    expect(d.shadow[0].fromM).toBeLessThanOrEqual(CREST_M + 2 * d.stepM);
    // In front of the ridge everything is seen down to the ground.
    for (let i = 0; d.rangesM[i] <= CREST_M; i++) expect(d.floorM[i]).toBe(d.terrainM[i]);
    // Behind it the floor is the ray grazing the crest: above the ground, rising outward.
    const behind = d.rangesM.findIndex((s) => s >= 15_000);
    expect(d.floorM[behind] - d.terrainM[behind]).toBeGreaterThan(100);
    expect(d.floorM[behind + 10]).toBeGreaterThan(d.floorM[behind]);
  });

  it('terrain that is unknown is NaN, and so is the floor beyond it', () => {
    const { terrain, site } = grid(N, PIXEL_M, (x) => (x > 12_000 ? NaN : ridge(x)));
    const d = diagramData(terrain, { ...site, mastM: 20 }, beacon, {
      azimuthDeg: 90,
      maxRangeM: 18_000,
      target: TARGET,
      flightLevels: [],
    });
    expect(d.unknown.length).toBe(1);
    const from = d.unknown[0].fromM;
    // The last known cell centre is at 12 000 m: bilinear terrain is unknown past it.
    expect(from).toBeGreaterThan(12_000 - 0.01);
    expect(from).toBeLessThanOrEqual(12_000 + 2 * d.stepM);
    expect(d.unknown[0].toM).toBe(d.rangesM[d.rangesM.length - 1]);
    for (let i = 0; i < d.rangesM.length; i++) {
      if (d.rangesM[i] < from) expect(Number.isFinite(d.floorM[i])).toBe(true);
      else expect(Number.isNaN(d.floorM[i]) && Number.isNaN(d.terrainM[i])).toBe(true);
    }
  });
});

describe('sensor limits', () => {
  it('the cone-of-silence edge at FL100 is 3048/tan 40° ≈ 3632 m for a 40° maximum elevation [calc]', () => {
    const { terrain, site } = grid(101, 500, () => 0);
    const d = diagramData(terrain, { ...site, mastM: 0 }, beacon, {
      azimuthDeg: 200,
      maxRangeM: 20_000,
      target: TARGET,
      flightLevels: [50, 100],
    });
    const fl100 = d.flightLevels.find((f) => f.fl === 100)!;
    expect(fl100.label).toBe('FL100');
    expect(fl100.altitudeM).toBeCloseTo(3048, 6);
    // Flat geometry gives 3048/tan 40° = 3632.5 m. On the 4/3 earth the edge comes ≈ 2.2 m closer: the target
    // sits s²/(2Re) ≈ 0.8 m below the antenna's horizontal plane (−0.9 m of range at 40°) and its horizontal
    // distance is s·(1 + h/Re) (−1.3 m) [calc].
    const flatM = 3048 / Math.tan(40 / RAD_TO_DEG);
    expect(Math.abs(flatM - 3632)).toBeLessThan(1);
    expect(fl100.coneEdgeM - flatM).toBeLessThan(-1.5);
    expect(fl100.coneEdgeM - flatM).toBeGreaterThan(-3);
    // The envelope's upper edge (sensorBand) meets FL100 there too, within one envelope row.
    const env = d.envelope;
    const row = env.hiM.findIndex((h) => h >= 3048);
    expect(row).toBeGreaterThan(0);
    expect(Math.abs(env.rangesM[row] - flatM)).toBeLessThanOrEqual(env.stepM);
    // And the tabulated cone edge passes through the same point.
    const c = d.cone;
    const k = c.altitudesM.findIndex((h) => h >= 3048);
    const f = (3048 - c.altitudesM[k - 1]) / (c.altitudesM[k] - c.altitudesM[k - 1]);
    expect(Math.abs(c.rangesM[k - 1] + f * (c.rangesM[k] - c.rangesM[k - 1]) - fl100.coneEdgeM)).toBeLessThan(
      1,
    );
    expect(c.maxElevationDeg).toBeCloseTo(40, 9);
  });

  it('rayGroundRangeM inverts the engine geometry: the point it gives is seen at exactly that elevation', () => {
    const re = (4 / 3) * R;
    for (const [h, ha, eDeg] of [
      [3048, 30, 40],
      [12_000, 500, 5],
      [800, 100, 0.3],
    ]) {
      const s = rayGroundRangeM(h, ha, re, eDeg / RAD_TO_DEG);
      const tanE = ((re + h) * Math.cos(s / re) - (re + ha)) / ((re + h) * Math.sin(s / re)); // DESIGN §4
      expect(Math.atan(tanE) * RAD_TO_DEG).toBeCloseTo(eDeg, 7);
    }
  });

  it('a cosec² sensor on a flat earth (k = 1000) has a flat envelope between its angles, within 2 %', () => {
    const startDeg = 2;
    const endDeg = 30;
    const model = cosec2Sensor({ startDeg, endDeg, maxElevationDeg: 40, referenceRangeNm: 100 });
    // The free-space peak range (the 100 NM spec point is quoted in the standard atmosphere: sensor.ts).
    const r0 = model.peakRangeM(TARGET);
    const { terrain, site } = grid(101, 500, () => 0);
    // Free space (no gaseous loss), to isolate the pattern's shape.
    const d = diagramData(terrain, { ...site, mastM: 0 }, model, {
      azimuthDeg: 0,
      kFactor: 1000,
      maxRangeM: 250_000,
      target: TARGET,
      flightLevels: [],
      atmosphere: false,
    });
    const expected = r0 * Math.sin(startDeg / RAD_TO_DEG); // R·sin ε = const (flat earth, antenna at 0 m)
    const sNear = (expected / Math.tan(endDeg / RAD_TO_DEG)) * 1.1;
    const sFar = r0 * Math.cos(startDeg / RAD_TO_DEG) * 0.9;
    const env = d.envelope;
    let lo = Infinity;
    let hi = -Infinity;
    let rows = 0;
    for (let i = 0; i < env.rangesM.length; i++) {
      if (env.rangesM[i] < sNear || env.rangesM[i] > sFar) continue;
      lo = Math.min(lo, env.hiM[i]);
      hi = Math.max(hi, env.hiM[i]);
      expect(Math.abs(env.hiM[i] - expected) / expected).toBeLessThan(0.02);
      rows++;
    }
    expect(rows).toBeGreaterThan(100);
    expect((hi - lo) / expected).toBeLessThan(0.02);
    // Beyond the peak range nothing is detected.
    const past = env.rangesM.findIndex((s) => s > r0 * 1.01);
    expect(past).toBeGreaterThan(0);
    expect(Number.isNaN(env.hiM[past])).toBe(true);
  });

  it('bad options name the field', () => {
    const { terrain, site } = grid(21, 500, () => 0);
    const base = { azimuthDeg: 0, maxRangeM: 4000, target: TARGET, flightLevels: [100] };
    const cases: [object, string][] = [
      [{ target: { ...TARGET, rcsM2: 0 } }, 'target.rcsM2'],
      [{ azimuthDeg: NaN }, 'azimuthDeg'],
      [{ flightLevels: [100, 12.5] }, 'flightLevels[1]'],
    ];
    for (const [patch, where] of cases) {
      let err: unknown;
      try {
        diagramData(terrain, { ...site, mastM: 10 }, beacon, { ...base, ...patch });
      } catch (e) {
        err = e;
      }
      expect(isInputError(err) && err.where).toBe(where);
    }
  });
});

describe('SVG', () => {
  const { terrain, site } = grid(201, 200, (x) => 300 * Math.exp(-(((x - 10_000) / 1000) ** 2)));
  const d = diagramData(terrain, { ...site, mastM: 20 }, beacon, {
    azimuthDeg: 90,
    maxRangeM: 30_000, // past the grid: some terrain unknown
    target: TARGET,
    flightLevels: [50, 100, 245],
  });
  const title = 'Site <Ridge & "Co"> — beacon';
  /** All text of the drawing in document order, lines joined by spaces (captions wrap to the chart width). */
  const textOf = (svg: string) => [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]).join(' ');

  it.each(['metric', 'aviation'] as const)(
    'is well-formed XML with FL labels and escaped text (%s)',
    (units) => {
      const svg = renderDiagramSvg(d, { title, units });
      expect(XMLValidator.validate(svg)).toBe(true);
      const doc = new XMLParser({ ignoreAttributes: false }).parse(svg);
      expect(doc.svg['@_xmlns']).toBe('http://www.w3.org/2000/svg');
      for (const label of ['FL050', 'FL100']) expect(svg).toContain(`>${label}</text>`);
      expect(svg).toContain('&lt;Ridge &amp; &quot;Co&quot;&gt;');
      expect(svg).not.toContain('<Ridge');
      // The whole caution (shared/caution.ts) in the caption, then the refraction assumed.
      expect(textOf(svg)).toContain(escapeXml(CAUTION));
      expect(textOf(svg)).toContain('Refraction assumed here: effective earth k = 4/3.');
      expect(svg).toContain(units === 'metric' ? '(km)' : '(NM)');
      expect(svg).toContain(units === 'metric' ? 'Altitude AMSL (m)' : 'Altitude AMSL (ft)');
      expect(svg).toContain('Terrain unknown');
      expect(textOf(svg)).toContain('a flat chart of curved geometry');
      expect(svg).not.toMatch(/NaN|undefined|Infinity/);
    },
  );

  it('names a non-standard k in the caution line', () => {
    const d12 = diagramData(terrain, { ...site, mastM: 20 }, beacon, {
      azimuthDeg: 90,
      kFactor: 1.2,
      maxRangeM: 15_000,
      target: TARGET,
      flightLevels: [100],
    });
    const svg = renderDiagramSvg(d12, { title: 'k test', units: 'metric', width: 640, height: 420 });
    expect(XMLValidator.validate(svg)).toBe(true);
    expect(textOf(svg)).toContain('Refraction assumed here: effective earth k = 1.2.');
    expect(svg).toContain('width="640" height="420"');
    expect(svg).not.toContain('Terrain unknown');
  });

  it('escapeXml leaves no markup and drops characters XML forbids', () => {
    const s = escapeXml(`a<b>&"c'\u0001\uD800`);
    expect(s).toBe('a&lt;b&gt;&amp;&quot;c&apos;\uFFFD');
    expect(XMLValidator.validate(`<t>${s}</t>`)).toBe(true);
  });

  // Issue 14: a 1090 MHz receiver hears the aircraft's own transmissions (worker/core/receiver.ts, Friis 1946):
  // no echo, no SSR links, no cone of silence below 90°. Its legend says so; a radar's stays as it was.
  /** The cone's dash pattern: its edge in the plot and its swatch in the legend. */
  const CONE_DASH = 'stroke-dasharray="6 4"';
  const receiverTypes: ReceiverTypeSpec[] = JSON.parse(
    readFileSync(new URL('../data/catalog/receiver-types.json', import.meta.url), 'utf8'),
  );
  const primaryType = (
    JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    ) as RadarTypeSpec[]
  ).find((t) => t.kind === 'primary')!;
  const draw = (model: SensorModel) =>
    diagramData(terrain, { ...site, mastM: 20 }, model, {
      azimuthDeg: 90,
      maxRangeM: 30_000,
      target: TARGET,
      flightLevels: [50, 100, 245],
    });

  it.each(receiverTypes.map((t) => [t.kind, t] as const))(
    'a receiver (%s) names its reception envelope and has no cone of silence, in legend or plot',
    (kind, type) => {
      const rd = draw(buildSensorModel(type, `receiver-types.json: ${type.id}`));
      expect(rd.sensor.kind).toBe(kind);
      for (const units of ['metric', 'aviation'] as const) {
        const svg = renderDiagramSvg(rd, { title: 'receiver', units });
        expect(XMLValidator.validate(svg)).toBe(true);
        const text = textOf(svg);
        expect(text).toContain(escapeXml(`Reception envelope (1090 MHz, ${describeTarget(TARGET, kind)})`));
        expect(text).toContain('Shadow (below line of sight)');
        expect(text).not.toMatch(/Cone of silence|Radar shadow|Detection envelope|SSR links|RCS/);
        expect(svg).not.toContain(CONE_DASH);
        expect(svg).not.toMatch(/NaN|undefined|Infinity/);
      }
    },
  );

  it('a radar keeps its legend: radar shadow, its detection envelope and the cone of silence with its edge', () => {
    const secondary = renderDiagramSvg(d, { title, units: 'metric' });
    const text = textOf(secondary);
    expect(text).toContain('Radar shadow (below line of sight)');
    expect(text).toContain('Detection envelope (both SSR links)');
    expect(text).toContain('Cone of silence (above 40°)');
    expect(text).not.toContain('Reception envelope');
    expect(secondary.split(CONE_DASH).length - 1).toBe(2); // the edge and the swatch
    const primary = renderDiagramSvg(draw(buildSensorModel(primaryType, 'sensor-types.json')), {
      title: 'primary',
      units: 'metric',
    });
    expect(textOf(primary)).toContain(`Detection envelope (RCS ${TARGET.rcsM2} m²)`);
    expect(textOf(primary)).toContain(`Cone of silence (above ${primaryType.maxElevationDeg}°)`);
    expect(primary.split(CONE_DASH).length - 1).toBe(2);
  });
});

describe('over-sea lobing in the diagram (two-ray model, Blake 1980 / Barton 2005 [memory]; multipath.ts)', () => {
  // A 20 NM secondary on a 10 m mast: at a few km the first lobe's underside decides the lowest altitude seen.
  const weak = cosec2Sensor({ startDeg: 2, endDeg: 45, maxElevationDeg: 40, referenceRangeNm: 20 });
  const run = (surfaceM: number, multipath: boolean) => {
    const { terrain, site } = grid(201, 250, () => surfaceM);
    return diagramData(terrain, { ...site, mastM: 10 }, weak, {
      azimuthDeg: 90,
      maxRangeM: 20_000,
      target: TARGET,
      flightLevels: [],
      atmosphere: false,
      multipath,
    });
  };
  it('over sea the envelope’s lower edge rises (the first lobe); over land, or with lobing off, it does not', () => {
    const sea = run(0, true);
    const off = run(0, false);
    const land = run(5, true);
    expect(sea.seaLobingRows).toBeGreaterThan(10);
    expect(off.seaLobingRows).toBe(0);
    expect(land.seaLobingRows).toBe(0);
    let higher = 0;
    for (let i = 0; i < sea.envelope.loM.length; i++) {
      expect(sea.envelope.loM[i] >= off.envelope.loM[i] || Number.isNaN(off.envelope.loM[i])).toBe(true);
      if (sea.envelope.loM[i] > off.envelope.loM[i] + 1) higher++;
    }
    expect(higher).toBeGreaterThan(10);
    expect(renderDiagramSvg(sea, { title: 't', units: 'metric' })).toMatch(/first interference lobe/);
  });
});
