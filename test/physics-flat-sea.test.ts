/**
 * The physics end to end on a flat sea (terrain 0 m everywhere): the product's footprints (worker/core/coverage.ts:
 * the line-of-sight floor of the horizon engine × the sensor band of footprint.ts × the detection profile of
 * sensor.ts) along one radial, compared with published relations. Each check isolates one effect: over-sea
 * lobing is not applied here (the core applies it only when asked), and the gaseous attenuation is switched off
 * where a check is about something else (and said so).
 *
 * Sources (test/REFERENCES.md):
 * - Radar equation: R ∝ σ^¼ (Skolnik, Introduction to Radar Systems [pub]).
 * - Swerling 1 single pulse Pd = Pfa^(1/(1+SNR)) (Swerling, IRE Trans. IT-6, 1960 [pub]) against the steady
 *   target's 13.18 dB at Pd 0.9, Pfa 1e−6 (Marcum, IRE Trans. IT-6, 1960 [pub]): ~8 dB, radius × 0.63–0.66.
 * - Radar horizon on the effective earth, exact spherical form √((Re+ha)² − Re²) + √((Re+h)² − Re²) (Skolnik,
 *   horizon on the 4/3 earth [memory]); 30 m antenna, FL100 → ≈ 250.1 km.
 * - True altitude on a cold low-pressure day: the hypsometric equation with the ICAO standard atmosphere
 *   (ICAO Doc 7488 [pub]); QNH 980 hPa, ISA −20 °C puts FL100 at about 2,560–2,600 m (the figure, which
 *   follows from the same equation [calc]).
 * - Beam heights on the effective earth: Doviak & Zrnić, Doppler Radar and Weather Observations (1993),
 *   eq. 2.28b–c [memory, standard]: 100 km at 0° from 0 m → 588.6 m (k = 4/3), 784.8 m (k = 1); at 1° 2333.5 m.
 * - The cone of silence radius h / tan θmax (geometry [calc]).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { flToMetres } from '../shared/units.ts';
import { computeFootprints, type Candidate } from '../worker/core/coverage.ts';
import { inlineExecutor } from '../worker/core/floor.ts';
import { coversAt, hiAt, loAt, sensorBand, slantGeometry, type Footprint } from '../worker/core/footprint.ts';
import { DEFAULT_TARGET, type RadarTypeSpec, type Target } from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { levelAltitudesM } from '../worker/io/study.ts';
import { WGS84_GEOGRAPHIC } from '../worker/core/grid.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { firstLobeFactor } from '../worker/core/multipath.ts';
import { cellLonLat, metricGeo, metricTerrain } from './support/dem.ts';

const R = 6_371_000;
const K = 4 / 3;
const RE = K * R;
const T = (o: Partial<Target> = {}): Target => ({ ...DEFAULT_TARGET, ...o });

/** A strip of flat sea, `cells` long (east–west) and 5 cells high, antenna in the middle of the middle row. */
function strip(cells: number, pixelM: number) {
  const H = 5;
  const data = new Float32Array(cells * H);
  const terrain = metricTerrain(data, cells, H, pixelM);
  const geo = metricGeo(cells, H, pixelM);
  const c0 = (cells - 1) / 2;
  const site = { id: 'buoy', name: 'Test buoy', ...cellLonLat(geo, c0, 2), mastHeightM: 30 };
  return { terrain, geo, data, site, c0, cells, pixelM };
}

type Strip = ReturnType<typeof strip>;

async function footprints(
  st: Strip,
  list: { spec: RadarTypeSpec; target: Target }[],
  o: { atmosphere?: boolean; maxRangeM?: number } = {},
): Promise<Footprint[]> {
  const candidates: Candidate[] = list.map((x) => ({
    site: st.site,
    model: buildSensorModel(x.spec, x.spec.id),
    target: x.target,
  }));
  const r = await computeFootprints(
    st.terrain,
    {
      grid: st.geo,
      ground: st.data,
      candidates,
      kFactor: K,
      maxRangeM: o.maxRangeM ?? ((st.cells - 1) / 2) * st.pixelM,
      atmosphere: o.atmosphere,
    },
    inlineExecutor(st.terrain),
  );
  return r.footprints;
}

/** Farthest ground distance east of the antenna (m, to a cell) at which the footprint covers altitude h. */
function outerEdgeM(st: Strip, fp: Footprint, h: number): number {
  let edge = 0;
  for (let c = Math.ceil(st.c0) + 1; c < st.cells; c++) {
    const i = 2 * st.cells + c;
    if (coversAt(fp, i, h)) edge = (c - st.c0) * st.pixelM;
  }
  return edge;
}

/** Nearest ground distance east of the antenna (m) at which the footprint covers altitude h. */
function innerEdgeM(st: Strip, fp: Footprint, h: number): number {
  for (let c = Math.ceil(st.c0) + 1; c < st.cells; c++) {
    const i = 2 * st.cells + c;
    if (coversAt(fp, i, h)) return (c - st.c0) * st.pixelM;
  }
  return NaN;
}

/** A primary with physical parameters, a flat elevation pattern (0 dB everywhere) and no range cap. */
function flatPrimary(over: Partial<RadarTypeSpec> = {}): RadarTypeSpec {
  return {
    id: 'flat-psr',
    name: 'Test primary with a flat pattern',
    kind: 'primary',
    frequencyMHz: 1300,
    cost: 1,
    maxElevationDeg: 90,
    instrumentedRangeNm: 10_000,
    elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
    detection: {
      peakPowerKw: 2000,
      antennaGainDbi: 38,
      pulseWidthUs: 10,
      noiseFigureDb: 3,
      lossesDb: 8,
      pd: 0.9,
      pfa: 1e-6,
    },
    ...over,
  };
}

/** Slant range (m) from the antenna (altitude ha) to altitude h at ground arc s: the law of cosines on the sphere. */
const slantM = (s: number, h: number, ha = 30) =>
  Math.sqrt((RE + ha) ** 2 + (RE + h) ** 2 - 2 * (RE + ha) * (RE + h) * Math.cos(s / RE));

/** Exact radar horizon (ground arc) for antenna ha and target h on the sphere Re. */
const horizonM = (ha: number, h: number) => RE * (Math.acos(RE / (RE + ha)) + Math.acos(RE / (RE + h)));

describe('flat sea: the target belongs to the study', () => {
  it('σ 1 → 16 m² doubles the radius (fourth-root law), less the extra gaseous loss — whatever targetRcsM2 the type carries', async () => {
    const st = strip(1201, 1000);
    // A high altitude keeps the horizon (≈ 605 km at 20 km) beyond the detection range: the range sets the edge.
    const h = 20_000;
    const spec = flatPrimary({ targetRcsM2: 100 }); // a leftover, ignored with a warning
    expect(buildSensorModel(spec, 'x').warnings).toHaveLength(1);
    const list = [
      { spec, target: T({ rcsM2: 1 }) },
      { spec, target: T({ rcsM2: 16 }) },
    ];
    const [a, b] = await footprints(st, list, { atmosphere: false });
    // The law is for the slant range: the edges' ground distances are turned into slant ranges.
    const r1 = slantM(outerEdgeM(st, a, h), h);
    const r16 = slantM(outerEdgeM(st, b, h), h);
    expect(r1).toBeGreaterThan(100_000);
    expect(outerEdgeM(st, b, h)).toBeLessThan(horizonM(30, h) - 20_000);
    expect(r16 / r1).toBeGreaterThan(2 - 2 * (1000 / r1)); // ×2 to a cell (no atmosphere)
    expect(r16 / r1).toBeLessThan(2 + 2 * (1000 / r1));
    // With the gaseous loss on, the longer path loses more: a little short of ×2, and never beyond it.
    const [c, d] = await footprints(st, list);
    const ratio = slantM(outerEdgeM(st, d, h), h) / slantM(outerEdgeM(st, c, h), h);
    expect(ratio).toBeGreaterThan(1.85);
    expect(ratio).toBeLessThan(2);
  });

  it('Pd 0.9, Pfa 1e−6, one pulse: Swerling 1 shortens the radius to 0.63–0.66 of a steady target’s', async () => {
    const st = strip(1201, 1000);
    const h = 20_000;
    const spec = flatPrimary();
    const [s0, s1] = await footprints(
      st,
      [
        { spec, target: T({ fluctuation: 'swerling0' }) },
        { spec, target: T({ fluctuation: 'swerling1' }) },
      ],
      { atmosphere: false },
    );
    const ratio = slantM(outerEdgeM(st, s1, h), h) / slantM(outerEdgeM(st, s0, h), h);
    expect(ratio).toBeGreaterThan(0.63);
    expect(ratio).toBeLessThan(0.66);
  });
});

describe('flat sea: true altitudes on the day', () => {
  it('QNH 980 hPa, ISA −20 °C: FL100 at 2,560–2,600 m true, and its edge moves in from the 250.1 km horizon to about 232 km', async () => {
    const ha = 30;
    const [isa] = levelAltitudesM({}, [100]);
    const [cold] = levelAltitudesM({ day: { qnhHpa: 980, isaDeviationC: -20 } }, [100]);
    expect(isa).toBe(flToMetres(100));
    expect(cold).toBeGreaterThan(2560);
    expect(cold).toBeLessThan(2600);
    // A secondary with margin to spare: the horizon sets the edge.
    const st = strip(1201, 500);
    const spec: RadarTypeSpec = {
      id: 'ssr-x',
      name: 'Test secondary',
      kind: 'secondary',
      frequencyMHz: 1030,
      cost: 1,
      maxElevationDeg: 45,
      instrumentedRangeNm: 1000,
      elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
      detection: { referenceRangeNm: 2000 },
    };
    const [fp] = await footprints(st, [{ spec, target: T() }]);
    const eIsa = outerEdgeM(st, fp, isa);
    const eCold = outerEdgeM(st, fp, cold);
    // Skolnik's 4/3-earth horizon, exact spherical form [memory]: 250.1 km at FL100 in the ISA.
    expect(Math.abs(eIsa - horizonM(ha, isa))).toBeLessThan(1000);
    expect(Math.abs(horizonM(ha, flToMetres(100)) / 1000 - 250.1)).toBeLessThan(0.2);
    expect(Math.abs(eCold - horizonM(ha, cold))).toBeLessThan(1000);
    expect(eCold / 1000).toBeGreaterThan(229);
    expect(eCold / 1000).toBeLessThan(235);
  });
});

describe('flat sea: the default catalog', () => {
  const catalog: RadarTypeSpec[] = JSON.parse(
    readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
  );
  const lva = catalog.find((t) => t.id === 'ssr-mono-lva')!;

  it('the long-range SSR on a 30 m mast reaches at FL400 at least 95 % of the nearer of its instrumented range and the radio horizon', async () => {
    const st = strip(1101, 1000);
    const h = flToMetres(400);
    // Aircraft at FL400 carry the high-power transponder class (ICAO Annex 10 Vol. IV [memory]: above 15 000 ft).
    const [fp] = await footprints(st, [{ spec: lva, target: T({ transponder: 'high-power' }) }]);
    const limit = Math.min(lva.instrumentedRangeNm * 1852, horizonM(30, h));
    expect(outerEdgeM(st, fp, h)).toBeGreaterThanOrEqual(0.95 * limit);
    // And at FL300 (horizon ≈ 441 km).
    const h3 = flToMetres(300);
    expect(outerEdgeM(st, fp, h3)).toBeGreaterThanOrEqual(
      0.95 * Math.min(lva.instrumentedRangeNm * 1852, horizonM(30, h3)),
    );
  });
});

describe('flat sea: an edge set by the sensor’s own limits, not the horizon', () => {
  it('the cone of silence at FL100 for a 40° maximum elevation: inner edge at h / tan 40° ≈ 3.6 km (geometry [calc])', async () => {
    const st = strip(401, 50);
    const spec: RadarTypeSpec = {
      id: 'cone',
      name: 'Test primary with a 40° cone',
      kind: 'primary',
      frequencyMHz: 2800,
      cost: 1,
      maxElevationDeg: 40,
      instrumentedRangeNm: 60,
      minRangeNm: 0.1,
      elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
      detection: { referenceRangeNm: 50, referenceRcsM2: 1 },
    };
    const [fp] = await footprints(st, [{ spec, target: T() }], { maxRangeM: 10_000 });
    const h = flToMetres(100);
    const expected = (h - 30) / Math.tan((40 * Math.PI) / 180); // antenna at 30 m
    expect(Math.abs(innerEdgeM(st, fp, h) - expected)).toBeLessThanOrEqual(50);
  });

  it('the instrumented range sets the outer edge where it is nearer than range and horizon', async () => {
    const st = strip(801, 500);
    const spec = flatPrimary({ instrumentedRangeNm: 100 });
    const [fp] = await footprints(st, [{ spec, target: T({ rcsM2: 100 }) }]);
    expect(Math.abs(slantM(outerEdgeM(st, fp, 15_000), 15_000) - 185_200)).toBeLessThanOrEqual(500);
  });
});

describe('beam heights on the effective earth (Doviak & Zrnić 1993, eq. 2.28b–c [memory, standard])', () => {
  // h = √(r² + Re² + 2·r·Re·sin θ) − Re + ha and s = Re·asin(r·cos θ / (Re + h)): the published heights are checked
  // against the product's slant geometry (footprint.ts), which must give back r = 100 km and θ there.
  for (const [k, thetaDeg, hPub] of [
    [4 / 3, 0, 588.6],
    [1, 0, 784.8],
    [4 / 3, 1, 2333.5],
  ] as const) {
    it(`k = ${k.toFixed(4)}, θ = ${thetaDeg}°: ${hPub} m at 100 km slant range`, () => {
      const re = k * R;
      const th = (thetaDeg * Math.PI) / 180;
      const s = re * Math.asin((100_000 * Math.cos(th)) / (re + hPub));
      const out = { rangeM: 0, elevationRad: 0 };
      slantGeometry(s, hPub, 0, re, out);
      expect(Math.abs(out.rangeM - 100_000)).toBeLessThan(1);
      expect(Math.abs(out.elevationRad - th)).toBeLessThan(2e-6);
    });
  }
});

describe('over-sea lobing: the first lobe’s lower edge (Blake 1980 / Barton 2005 two-ray model [memory])', () => {
  // On a flat earth (k = 1000: Re ≈ 6.4e9 m) with the reflection coefficient Γ ≈ −1 at grazing incidence, the
  // two-ray factor is F = 2·|sin(2π·h1·h2/(λ·d))| (Blake, Barton [pub formula]). A link whose free-space range is
  // twice the distance d needs F ≥ 1/2 there: 2π·h1·h2/(λ·d) = asin(1/4), h2 = λ·d·asin(1/4)/(2π·h1) [calc].
  const H = 5;
  const W = 241;
  const cell = 10 / 3600; // 10″: about 210 m east–west at 41° S
  function seaStrip(multipath: boolean, landToM = 0) {
    const data = new Float32Array(W * H);
    // Optionally a low island (5 m) from the antenna out to landToM east: the specular points fall on land.
    const metres = cell * 111_320 * Math.cos((41 * Math.PI) / 180);
    for (let r = 0; r < H; r++)
      for (let c = 0; c < W; c++) {
        const x = (c - (W - 1) / 2) * metres;
        if (x >= -metres && x <= landToM) data[r * W + c] = landToM > 0 ? 5 : 0;
      }
    const geo = {
      width: W,
      height: H,
      originX: -30 - (W / 2) * cell,
      originY: -41 + (H / 2) * cell,
      pixelX: cell,
      pixelY: -cell,
      crs: WGS84_GEOGRAPHIC,
    };
    const terrain = Terrain.fromParts({ geo, data, warnings: [], sources: ['generated'] });
    return { data, geo, terrain, multipath };
  }
  const spec = (): RadarTypeSpec => ({
    id: 'ssr-l',
    name: 'Test secondary at 1030 MHz',
    kind: 'secondary',
    frequencyMHz: 1030,
    cost: 1,
    maxElevationDeg: 45,
    instrumentedRangeNm: 1000,
    elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
    detection: { referenceRangeNm: 40_000 / 1852 },
  });

  it('with the sea in view the lowest altitude seen at 20 km rises to the first lobe’s edge; with "off" it stays on the sea', async () => {
    const out: Record<string, Footprint> = {};
    for (const [key, mp, land] of [
      ['true', true, 0],
      ['false', false, 0],
      ['island', true, 15_000],
    ] as const) {
      const st = seaStrip(mp, land);
      const site = { id: 'buoy', name: 'Test buoy', lon: -30, lat: -41, mastHeightM: 10 };
      const r = await computeFootprints(
        st.terrain,
        {
          grid: st.geo,
          ground: st.data,
          candidates: [{ site, model: buildSensorModel(spec(), 'x'), target: T() }],
          kFactor: 1000,
          maxRangeM: 25_000,
          multipath: mp,
          atmosphere: false,
        },
        inlineExecutor(st.terrain),
      );
      out[key] = r.footprints[0];
    }
    // The cell of the middle row about 20 km east of the antenna.
    const metresPerCell = cell * 111_320 * Math.cos((41 * Math.PI) / 180);
    const c = Math.round((W - 1) / 2 + 20_000 / metresPerCell);
    const d = (c - (W - 1) / 2) * metresPerCell;
    const i = 2 * W + c;
    const lambda = 299_792_458 / 1.03e9;
    const expected = (lambda * d * Math.asin(0.25)) / (2 * Math.PI * 10);
    expect(loAt(out.false, i)).toBe(0); // free space down to the sea surface
    expect(loAt(out.true, i)).toBeGreaterThan(0.75 * expected);
    expect(loAt(out.true, i)).toBeLessThan(1.25 * expected);
    // Above the edge nothing changes.
    expect(hiAt(out.true, i)).toBe(hiAt(out.false, i));
    // The first-lobe factor is capped at free space and is exactly free space above the first lobe's peak
    // (2πΔ/λ ≥ arg Γ, i.e. above h2 ≈ λ·d/(4·h1) on the flat earth [calc]): lobe maxima are not counted.
    const reFlat = 1000 * 6_371_000;
    for (let h2 = 1; h2 < 400; h2 += 3) {
      const f = firstLobeFactor(10, h2, d, reFlat, 1030, 'vertical', () => 1);
      expect(f).toBeLessThanOrEqual(1);
      if (h2 > (1.05 * lambda * d) / (4 * 10)) expect(f).toBe(1);
    }
    // With land under the specular points (about 8–9 km out here) the reflection is not the sea's: not applied.
    expect(loAt(out.island, i)).toBeLessThan(0.25 * expected);
  });
});

describe('sensorBand directly (footprint.ts)', () => {
  it('on a flat earth a range-limited, pattern-flat sensor’s band top is √(R² − s²) above a sea-level antenna (geometry [calc])', () => {
    const spec: RadarTypeSpec = {
      id: 'r',
      name: 'Test range-limited secondary',
      kind: 'secondary',
      frequencyMHz: 1030,
      cost: 1,
      maxElevationDeg: 90,
      instrumentedRangeNm: 30,
      minRangeNm: 0,
      elevationPattern: { type: 'table', deg: [-90, 90], gainDb: [0, 0] },
      detection: { referenceRangeNm: 1000 },
    };
    const profile = buildSensorModel(spec, 's').profile({ target: T(), antennaAltM: 0, atmosphere: false });
    const R = 30 * 1852;
    // k = 1000: a flat earth to well within a metre here (a far larger radius would lose precision in the law of
    // cosines the slant geometry uses; the product keeps k ≤ 20).
    const band = sensorBand(profile, { antennaAltM: 0, reM: 1000 * 6_371_000, maxRangeM: R, stepM: 1000 });
    for (let i = 1; i * 1000 < R - 2000; i++) {
      const s = i * 1000;
      expect(band.lo[i]).toBe(0);
      // The band's top is searched to 25 km (footprint.ts TOP_M).
      expect(Math.abs(band.hi[i] - Math.min(25_000, Math.sqrt(R * R - s * s)))).toBeLessThan(1);
    }
    expect(Number.isNaN(band.lo[Math.ceil(R / 1000) + 1])).toBe(true);
  });

  it("settling a climb's stretches from the profile's range bounds changes no band value: the same bands asked altitude by altitude", () => {
    // sensorBand skips a stretch of its 100 m ladder when bounds prove every altitude in it detected (or none);
    // the same profile without `rangeBounds` asks each altitude. Every type of the default catalog, antennas from
    // sea level to 1.6 km, tilts 0 and 2°, two effective earths: the bands must agree to the bit.
    const catalog: RadarTypeSpec[] = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    let rows = 0;
    for (const spec of catalog) {
      const model = buildSensorModel(spec, spec.id);
      for (const antennaAltM of [0, 35, 420, 1600]) {
        for (const tiltDeg of [0, 2]) {
          for (const k of [4 / 3, 1]) {
            const profile = model.profile({ target: T(), antennaAltM, tiltDeg });
            expect(profile.rangeBounds).toBeDefined();
            const plain = {
              minRangeM: profile.minRangeM,
              instrumentedRangeM: profile.instrumentedRangeM,
              coneOfSilenceRad: profile.coneOfSilenceRad,
              peakRangeM: profile.peakRangeM,
              rangeM: (e: number) => profile.rangeM(e),
            };
            const req = { antennaAltM, reM: k * 6_371_000, maxRangeM: model.instrumentedRangeM };
            const a = sensorBand(profile, req);
            const b = sensorBand(plain, req);
            expect(Array.from(a.lo)).toEqual(Array.from(b.lo));
            expect(Array.from(a.hi)).toEqual(Array.from(b.hi));
            rows += a.lo.length;
          }
        }
      }
    }
    expect(rows).toBeGreaterThan(20_000);
  });

  it('rangeBounds holds every rangeM between its elevations (the table is linear between nodes)', () => {
    const catalog: RadarTypeSpec[] = JSON.parse(
      readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
    );
    const out = [0, 0];
    for (const spec of catalog) {
      const profile = buildSensorModel(spec, spec.id).profile({ target: T(), antennaAltM: 100 });
      for (let k = 0; k < 200; k++) {
        const e1 = -0.2 + (k * 0.7) / 200;
        const e2 = e1 + 0.001 + (k % 7) * 0.01;
        profile.rangeBounds!(e1, e2, out);
        let lo = Infinity;
        let hi = -Infinity;
        for (let q = 0; q <= 400; q++) {
          const r = profile.rangeM(e1 + ((e2 - e1) * q) / 400);
          lo = Math.min(lo, r);
          hi = Math.max(hi, r);
        }
        expect(out[0]).toBeLessThanOrEqual(lo);
        expect(out[1]).toBeGreaterThanOrEqual(hi);
        // Tight: the extremes are attained (at an end, at a node, or at the cone of silence).
        expect(out[1] - hi).toBeLessThanOrEqual(0.02 * Math.max(1, hi));
      }
    }
  });
});
