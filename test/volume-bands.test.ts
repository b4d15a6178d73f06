/**
 * Volume bands given as altitudes — feet above mean sea level or above each cell's ground — and volumes with their
 * own target. Outside references: the foot is 0.3048 m exactly (1959 international yard and pound agreement [pub]);
 * a flight level is a pressure altitude, FL × 100 ft in the ISA (ICAO Doc 7488 [pub]). The rest are invariants of
 * the product's own definitions (a level belongs to an AGL band above a cell when its true altitude minus the
 * cell's ground lies inside the band).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { flToMetres } from '../shared/units.ts';
import { ProgressLine } from '../worker/cli/progress.ts';
import { allCandidates, footprintsFor, openSession, type Session } from '../worker/cli/session.ts';
import { coversAt, loAt } from '../worker/core/footprint.ts';
import { cellsAtLevel, rowAreasKm2, volumeStats } from '../worker/core/volumes.ts';
import { buildDemand, coveredPoints, studyNetwork } from '../worker/io/study.ts';
import { DEFAULT_VOLUMES, writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';

const box = DEFAULT_VOLUMES[0].polygon;

describe('volume bands in feet AMSL and AGL', () => {
  let fx: Fixture;
  let session: Session;
  beforeAll(async () => {
    fx = writeScenarioFixture({
      flightLevels: [10, 20, 50, 100],
      volumes: [
        {
          id: 'amsl',
          name: 'Approach block',
          polygon: box,
          altitudeBand: { reference: 'amsl', minFt: 1500, maxFt: 6000 },
          requiredFold: { any: 1 },
        },
        {
          id: 'agl',
          name: 'Low route',
          polygon: box,
          altitudeBand: { reference: 'agl', minFt: 500, maxFt: 3000 },
          requiredFold: { any: 1 },
        },
        {
          id: 'small',
          name: 'Small aircraft block',
          polygon: box,
          flMin: 50,
          flMax: 100,
          requiredFold: { primary: 1 },
          targetRcsM2: 0.5,
        },
      ],
    });
    session = await openSession(fx.scenarioPath, 0, new ProgressLine('test', true));
  });
  afterAll(() => fx.cleanup());

  it('an AMSL band takes the levels whose altitude lies inside it (1500–6000 ft: FL020 and FL050, not FL010 or FL100)', () => {
    const v = session.loaded.scenario.volumes[0];
    const m = session.volumeMasks[0];
    expect(cellsAtLevel(v, m, 10, flToMetres(10))).toBeNull();
    expect(cellsAtLevel(v, m, 20, flToMetres(20))).toBe(m);
    expect(cellsAtLevel(v, m, 50, flToMetres(50))).toBe(m);
    expect(cellsAtLevel(v, m, 100, flToMetres(100))).toBeNull();
  });

  it('an AGL band holds, per cell, the levels 500–3000 ft above that cell’s ground', () => {
    const v = session.loaded.scenario.volumes[1];
    const m = session.volumeMasks[1];
    const g = session.ground;
    for (const fl of [10, 20, 50, 100]) {
      const h = flToMetres(fl);
      const cells = cellsAtLevel(v, m, fl, h, g);
      for (let i = 0; i < m.length; i++) {
        const inside = m[i] === 1 && h - g[i] >= 500 * 0.3048 && h - g[i] <= 3000 * 0.3048;
        expect(cells?.[i] === 1, `FL${fl} cell ${i}`).toBe(inside);
      }
    }
  });

  it('statistics and demand points follow the bands; a volume with its own target uses its footprints', async () => {
    const s = session.loaded.scenario;
    const fls = s.flightLevels;
    const fps = await footprintsFor(session, allCandidates(session));
    expect(fps[0].byTarget).toHaveLength(1); // the 0.5 m² target of the third volume
    const net = studyNetwork(session, fls, fps);
    const stats = volumeStats(
      net,
      s.volumes,
      session.volumeMasks,
      fls,
      session.grid,
      session.volumeTargets,
      session.ground,
    );
    const rows = rowAreasKm2(session.grid);
    const W = session.grid.width;
    expect(stats.filter((x) => x.volumeId === 'amsl').map((x) => x.flightLevel)).toEqual([20, 50]);
    for (const st of stats.filter((x) => x.volumeId === 'agl')) {
      const cells = cellsAtLevel(
        s.volumes[1],
        session.volumeMasks[1],
        st.flightLevel,
        flToMetres(st.flightLevel),
        session.ground,
      )!;
      let area = 0;
      for (let i = 0; i < cells.length; i++) if (cells[i]) area += rows[(i / W) | 0];
      expect(st.areaKm2).toBeCloseTo(area, 6);
    }
    // The 0.5 m² volume's primary coverage never exceeds what the study's 2 m² target gets over the same cells.
    const small = stats.filter((x) => x.volumeId === 'small');
    expect(small.length).toBe(2);
    const big = volumeStats(
      net,
      [s.volumes[2]],
      [session.volumeMasks[2]],
      fls,
      session.grid,
      [0],
      session.ground,
    );
    for (const st of small) {
      const b = big.find((x) => x.flightLevel === st.flightLevel)!;
      expect(st.meetsRequirementKm2).toBeLessThanOrEqual(b.meetsRequirementKm2 + 1e-9);
    }
    const demand = buildDemand(session, fls);
    const aglPoints = [...demand.volume].filter((v) => v === 1).length;
    const aglCells = stats.filter((x) => x.volumeId === 'agl').length;
    expect(aglPoints).toBeGreaterThan(0);
    expect(aglCells).toBeGreaterThan(0);
    expect([...demand.target].every((t, p) => t === (demand.volume[p] === 2 ? 1 : 0))).toBe(true);
    // Each demand point is covered by its own volume's target's footprint (coveredPoints).
    const altitudes = fls.map(flToMetres);
    for (const fp of fps) {
      const covered = new Set(coveredPoints(fp, demand, altitudes));
      for (let p = 0; p < demand.cell.length; p += 7) {
        const f = demand.target[p] === 1 ? fp.byTarget![0] : fp;
        const c = demand.cell[p];
        const h = altitudes[demand.level[p]];
        expect(covered.has(p)).toBe(coversAt(f, c, h));
      }
    }
    // …and the 0.5 m² target is seen less than the 2 m² one somewhere, so the check above can tell them apart.
    expect(
      fps.some((fp) => {
        const other = fp.byTarget![0];
        if (other === fp) return false;
        for (let c = 0; c < session.grid.width * session.grid.height; c++)
          if (loAt(other, c) !== loAt(fp, c)) return true;
        return false;
      }),
    ).toBe(true);
  });

  it('a volume with neither flight levels nor an altitude band is refused, naming the field', async () => {
    const { parseScenario } = await import('../shared/scenario.ts');
    const bad = { ...(fx.scenario as Record<string, unknown>) };
    bad.volumes = [{ id: 'x', name: 'x', polygon: box, requiredFold: { any: 1 } }];
    bad.sites = { type: 'FeatureCollection', features: [] };
    bad.sensorTypes = [];
    expect(() => parseScenario(bad, 's.json')).toThrow(/s\.json: volumes\[0\]\.flMin: .*altitudeBand/);
  });
});

describe('levels a band needs but the run does not compute are said, not passed over', () => {
  const v = (id: string, flMin: number, flMax: number) => ({ id, name: id, flMin, flMax });
  it('a band starting below the lowest computed level is named, with the level to add', async () => {
    const { unevaluatedBands } = await import('../worker/io/study.ts');
    const w = unevaluatedBands(
      [v('t', 30, 245), v('u', 245, 460), v('x', 500, 550)],
      [50, 100, 245, 300, 460],
    );
    expect(w).toHaveLength(2);
    expect(w[0]).toMatch(/volume t .*FL030–FL245 .*FL030 up to FL050 is not evaluated — add FL030/);
    expect(w[1]).toMatch(/volume x .*no computed level lies in its band FL500–FL550/);
    expect(unevaluatedBands([v('t', 50, 245)], [50, 245])).toEqual([]);
  });
});
