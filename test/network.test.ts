/**
 * The network (worker/core/network.ts) and the volume statistics (worker/core/volumes.ts), as properties over
 * random small footprints built directly as `Footprint` objects (fast-check), each against a naive reference
 * computed here from the definition.
 *
 * Outside yardsticks, each named beside its check:
 * - "Covered by ≥ 2 distinct sites" ⇔ "still covered after any one site fails"; count sites, not sensors:
 *   sensors on one site fail together (test/REFERENCES.md, [calc]).
 * - Cell areas on the sphere: @turf/area (a reference library; the same sphere of radius 6 371 008.8 m), and
 *   the area of a spherical zone 2πR²·|sin φ₁ − sin φ₀| (any spherical geometry text).
 * - Point in polygon: @turf/boolean-point-in-polygon (a reference library).
 */
import { area as turfArea, booleanPointInPolygon } from '@turf/turf';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isInputError } from '../shared/errors.ts';
import { NO_COVER_LO, wholeWindow, type Footprint } from '../worker/core/footprint.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { KINDS, Network, type FoldKind } from '../worker/core/network.ts';
import {
  HISTOGRAM_BINS,
  meets,
  rasterizeVolume,
  rowAreasKm2,
  volumeStats,
  type VolumeLike,
} from '../worker/core/volumes.ts';

// ---------------------------------------------------------------------------------------------------------
// Random footprints

const SITES = ['s0', 's1', 's2', 's3'];

/** One cell of a footprint: nothing (the NO_COVER marker), an interval, or an inverted (empty) interval. */
const cellArb = fc.oneof(
  fc.constant([NO_COVER_LO, 0] as [number, number]),
  fc
    .tuple(fc.integer({ min: 0, max: 1200 }), fc.integer({ min: 0, max: 1200 }))
    .map(([a, b]) => (a <= b ? ([a, b] as [number, number]) : ([b, a] as [number, number]))),
  fc.tuple(fc.integer({ min: 0, max: 1200 }), fc.integer({ min: 0, max: 1200 })),
);

function footprintArb(cells: number) {
  return fc
    .record({
      siteId: fc.constantFrom(...SITES),
      typeId: fc.constantFrom('t-a', 't-b', 't-c'),
      kind: fc.constantFrom<'primary' | 'secondary'>('primary', 'secondary'),
      intervals: fc.array(cellArb, { minLength: cells, maxLength: cells }),
    })
    .map(({ siteId, typeId, kind, intervals }): Footprint => ({
      siteId,
      typeId,
      kind,
      lo: Uint16Array.from(intervals.map((x) => x[0])),
      hi: Uint16Array.from(intervals.map((x) => x[1])),
      window: wholeWindow(cells, 1),
    }));
}

interface Case {
  cells: number;
  altitudesM: number[];
  footprints: Footprint[];
  active: boolean[];
}

/** 1–40 cells, 1–32 levels (all three bit widths of the level masks), up to 8 sensors on up to 4 sites. */
const caseArb: fc.Arbitrary<Case> = fc
  .record({ cells: fc.integer({ min: 1, max: 40 }), nFl: fc.integer({ min: 1, max: 32 }) })
  .chain(({ cells, nFl }) =>
    fc.record({
      cells: fc.constant(cells),
      // Altitudes with a decimal (FL245 = 7467.6 m) and whole ones, unsorted or ascending (as a study's are: the
      // network then reads its level bits from tables, network.ts levelTables).
      altitudesM: fc
        .tuple(
          fc.uniqueArray(
            fc.integer({ min: 0, max: 12_000 }).map((x) => x / 10),
            { minLength: nFl, maxLength: nFl },
          ),
          fc.boolean(),
        )
        .map(([a, ascending]) => (ascending ? [...a].sort((x, y) => x - y) : a)),
      footprints: fc.array(footprintArb(cells), { minLength: 0, maxLength: 8 }),
    }),
  )
  .chain((c) =>
    fc
      .array(fc.boolean(), { minLength: c.footprints.length, maxLength: c.footprints.length })
      .map((active) => ({ ...c, active })),
  );

// ---------------------------------------------------------------------------------------------------------
// Naive references, from the definitions

function covers(fp: Footprint, c: number, altM: number): boolean {
  return fp.lo[c] <= altM && altM <= fp.hi[c];
}

/** Distinct sites with an active sensor of `kind` covering cell c at altM. */
function refFold(k: Case, active: readonly boolean[], kind: FoldKind, altM: number): number[] {
  const out: number[] = [];
  for (let c = 0; c < k.cells; c++) {
    const sites = new Set<string>();
    k.footprints.forEach((fp, i) => {
      if (active[i] && (kind === 'any' || fp.kind === kind) && covers(fp, c, altM)) sites.add(fp.siteId);
    });
    out.push(sites.size);
  }
  return out;
}

function refFloor(k: Case, active: readonly boolean[]): number[] {
  const out: number[] = [];
  for (let c = 0; c < k.cells; c++) {
    let m = NaN;
    k.footprints.forEach((fp, i) => {
      if (active[i] && fp.lo[c] <= fp.hi[c] && !(m <= fp.lo[c])) m = fp.lo[c];
    });
    out.push(m);
  }
  return out;
}

function refContributing(k: Case, active: readonly boolean[], kind: FoldKind, altM: number): string[] {
  const out = new Set<string>();
  k.footprints.forEach((fp, i) => {
    if (!active[i] || (kind !== 'any' && fp.kind !== kind)) return;
    for (let c = 0; c < k.cells; c++) if (covers(fp, c, altM)) out.add(fp.siteId);
  });
  return [...out].sort();
}

/** Every fold array of a network, copied. */
function snapshot(n: Network): number[][] {
  return n.fold.map((a) => Array.from(a));
}

const sitesOf = (k: Case) => [...new Set(k.footprints.map((f) => f.siteId))];

// ---------------------------------------------------------------------------------------------------------

describe('Network: folds count distinct sites', () => {
  it('fold = number of distinct active sites covering the cell, per kind and level', () => {
    fc.assert(
      fc.property(caseArb, (k) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        k.altitudesM.forEach((alt, f) => {
          for (const kind of KINDS)
            expect(Array.from(n.foldOf(kind, f))).toEqual(refFold(k, k.active, kind, alt));
        });
      }),
    );
  });

  it('two sensors on one site count once; on two sites twice (sensors on one site fail together)', () => {
    // test/REFERENCES.md [calc]: count sites, not sensors.
    const full = (siteId: string, kind: 'primary' | 'secondary'): Footprint => ({
      siteId,
      typeId: `${kind}-type`,
      kind,
      lo: Uint16Array.from([0, 0, NO_COVER_LO]),
      hi: Uint16Array.from([5000, 5000, 0]),
      window: wholeWindow(3, 1),
    });
    const one = new Network(3, [1524, 3048], [full('a', 'primary'), full('a', 'secondary')]);
    const two = new Network(3, [1524, 3048], [full('a', 'primary'), full('b', 'secondary')]);
    for (const f of [0, 1]) {
      expect(Array.from(one.foldOf('any', f))).toEqual([1, 1, 0]);
      expect(Array.from(one.foldOf('primary', f))).toEqual([1, 1, 0]);
      expect(Array.from(one.foldOf('secondary', f))).toEqual([1, 1, 0]);
      expect(Array.from(two.foldOf('any', f))).toEqual([2, 2, 0]);
    }
    const same = new Network(3, [3048], [full('a', 'secondary'), full('a', 'secondary')]);
    expect(Array.from(same.foldOf('secondary', 0))).toEqual([1, 1, 0]);
  });

  it('fold ≥ k+1 implies fold ≥ k; any ≥ each kind and ≤ their sum', () => {
    let multiFold = 0;
    fc.assert(
      fc.property(caseArb, (k) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        k.altitudesM.forEach((_, f) => {
          const any = n.foldOf('any', f);
          const pri = n.foldOf('primary', f);
          const sec = n.foldOf('secondary', f);
          // The layers written per fold k (cells with fold ≥ k) are nested.
          for (let j = 1; j <= 4; j++) {
            const atLeast = (m: number) => Array.from(any, (v) => v >= m);
            const upper = atLeast(j + 1);
            const lower = atLeast(j);
            expect(upper.every((u, c) => !u || lower[c])).toBe(true);
          }
          let bad = -1;
          for (let c = 0; c < k.cells; c++) {
            if (any[c] < Math.max(pri[c], sec[c]) || any[c] > pri[c] + sec[c]) bad = c;
            if (any[c] >= 2) multiFold++;
          }
          expect(bad, `cell ${bad}`).toBe(-1);
        });
      }),
    );
    expect(multiFold).toBeGreaterThan(0); // the property was exercised on cells seen twice or more
  });

  it('fold ≥ 2 ⇔ still covered (fold ≥ 1) after any one site fails (test/REFERENCES.md, set identity)', () => {
    let twice = 0;
    fc.assert(
      fc.property(caseArb, (k) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        const before = k.altitudesM.map((_, f) => Array.from(n.foldOf('any', f)));
        // survives[f][c]: covered after every single-site failure tried so far.
        const survives = before.map((row) => row.map((v) => v >= 1));
        for (const s of n.siteIds()) {
          n.setSite(s, false);
          k.altitudesM.forEach((_, f) => {
            const a = n.foldOf('any', f);
            for (let c = 0; c < k.cells; c++) if (a[c] < 1) survives[f][c] = false;
          });
          // Back to the case's own active flags for that site's sensors.
          k.footprints.forEach((fp, i) => fp.siteId === s && n.setSensor(i, k.active[i]));
        }
        before.forEach((row, f) => {
          expect(row.map((v) => v >= 2)).toEqual(survives[f]);
          for (const v of row) if (v >= 2) twice++;
        });
      }),
    );
    expect(twice).toBeGreaterThan(0);
  });
});

describe('Network: what-if toggles', () => {
  it('switching a site off never raises a fold; switching it back on restores the exact arrays', () => {
    let lowered = 0;
    fc.assert(
      fc.property(caseArb, fc.constantFrom(...SITES), (k, site) => {
        // Every sensor on, so that switching the site back on restores the starting state.
        const n = new Network(k.cells, k.altitudesM, k.footprints);
        const before = snapshot(n);
        const floorBefore = Array.from(n.networkFloor());
        n.setSite(site, false);
        const off = snapshot(n);
        const raised = off.some((row, j) => row.some((v, c) => v > before[j][c]));
        expect(raised).toBe(false);
        if (off.some((row, j) => row.some((v, c) => v < before[j][c]))) lowered++;
        // What is left is the network without that site.
        const without = k.footprints.map((fp) => fp.siteId !== site);
        k.altitudesM.forEach((alt, f) => {
          for (const kind of KINDS)
            expect(Array.from(n.foldOf(kind, f))).toEqual(refFold(k, without, kind, alt));
        });
        n.setSite(site, true);
        expect(snapshot(n)).toEqual(before);
        expect(Array.from(n.networkFloor())).toEqual(floorBefore);
      }),
    );
    expect(lowered).toBeGreaterThan(0); // some outages did lose coverage
  });

  it('any sequence of sensor and site toggles equals a network built from scratch with the same active set', () => {
    const opArb = fc.oneof(
      fc.record({ sensor: fc.nat({ max: 7 }), on: fc.boolean() }),
      fc.record({ site: fc.constantFrom(...SITES), on: fc.boolean() }),
    );
    fc.assert(
      fc.property(caseArb, fc.array(opArb, { maxLength: 12 }), (k, ops) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        const active = [...k.active];
        for (const op of ops) {
          if ('sensor' in op) {
            if (op.sensor >= k.footprints.length) continue;
            const changed = n.setSensor(op.sensor, op.on);
            expect(changed).toBe(active[op.sensor] !== op.on);
            active[op.sensor] = op.on;
          } else {
            n.setSite(op.site, op.on);
            k.footprints.forEach((fp, i) => fp.siteId === op.site && (active[i] = op.on));
          }
        }
        expect(n.active).toEqual(active);
        const fresh = new Network(k.cells, k.altitudesM, k.footprints, active);
        expect(snapshot(n)).toEqual(snapshot(fresh));
        expect(Array.from(n.networkFloor())).toEqual(Array.from(fresh.networkFloor()));
        k.altitudesM.forEach((alt, f) => {
          for (const kind of KINDS) {
            expect(Array.from(n.foldOf(kind, f))).toEqual(refFold(k, active, kind, alt));
            expect([...n.contributingSites(kind, f)].sort()).toEqual(refContributing(k, active, kind, alt));
          }
        });
      }),
    );
  });

  it('a network grown site by site (addSite) is the network of the same footprints given at once', () => {
    fc.assert(
      fc.property(caseArb, (k) => {
        // Site by site, in the order of each site's first footprint: the order computeFootprints hands them out.
        const bySite = sitesOf(k).map((site) => k.footprints.filter((f) => f.siteId === site));
        const ordered = bySite.flat();
        const kinds = new Set(k.footprints.map((f) => f.kind));
        const grown = new Network(k.cells, k.altitudesM, [], undefined, undefined, { kinds, targets: 1 });
        for (const group of bySite) grown.addSite(group);
        const whole = new Network(k.cells, k.altitudesM, ordered);
        expect(grown.footprints).toEqual(whole.footprints);
        expect(grown.siteIds()).toEqual(whole.siteIds());
        expect([...grown.kindsPresent].sort()).toEqual([...whole.kindsPresent].sort());
        expect(snapshot(grown)).toEqual(snapshot(whole));
        expect(Array.from(grown.networkFloor())).toEqual(Array.from(whole.networkFloor()));
        k.altitudesM.forEach((_, f) => {
          for (const kind of KINDS)
            expect(grown.contributingSites(kind, f)).toEqual(whole.contributingSites(kind, f));
        });
        // And it toggles as the whole one does.
        const site = bySite[0]?.[0]?.siteId;
        if (site !== undefined) {
          grown.setSite(site, false);
          whole.setSite(site, false);
          expect(snapshot(grown)).toEqual(snapshot(whole));
          expect(() => grown.addSite(bySite[0])).toThrow(/in the network already/);
        }
      }),
    );
  });

  it('a network that lets each site go once counted (addSite with release) has the same folds, floor and contributing sites; only its kept sites switch', () => {
    fc.assert(
      fc.property(caseArb, fc.array(fc.boolean(), { minLength: 4, maxLength: 4 }), (k0, letGo) => {
        // Receivers too: the released radars' floor must leave them out, as networkFloor does.
        const k = {
          ...k0,
          footprints: k0.footprints.map((f, i) => (i % 3 === 2 ? { ...f, kind: 'adsb' as const } : f)),
        };
        const bySite = sitesOf(k).map((site) => k.footprints.filter((f) => f.siteId === site));
        const ordered = bySite.flat();
        const kinds = new Set(k.footprints.map((f) => f.kind));
        const lean = new Network(k.cells, k.altitudesM, [], undefined, undefined, { kinds, targets: 1 });
        const released = new Set<string>();
        bySite.forEach((group, g) => {
          lean.addSite(group, { release: letGo[g] });
          if (letGo[g]) released.add(group[0].siteId);
        });
        const whole = new Network(k.cells, k.altitudesM, ordered);
        const same = () => {
          expect(snapshot(lean)).toEqual(snapshot(whole));
          expect(Array.from(lean.networkFloor())).toEqual(Array.from(whole.networkFloor()));
          k.altitudesM.forEach((_, f) => {
            for (const kind of KINDS)
              expect(lean.contributingSites(kind, f)).toEqual(whole.contributingSites(kind, f));
          });
        };
        same();
        expect(lean.siteIds()).toEqual(whole.siteIds());
        // The released sensors hold no cells; their ids and kinds stay.
        lean.footprints.forEach((fp, i) => {
          expect([fp.siteId, fp.typeId, fp.kind]).toEqual([
            ordered[i].siteId,
            ordered[i].typeId,
            ordered[i].kind,
          ]);
          if (released.has(fp.siteId)) expect(fp.lo.length + fp.hi.length).toBe(0);
        });
        for (const site of sitesOf(k)) {
          if (released.has(site)) {
            expect(() => lean.setSite(site, false)).toThrow(/let go/);
            expect(() => lean.siteCells(site)).toThrow(/let go/);
          } else {
            lean.setSite(site, false);
            whole.setSite(site, false);
          }
          same();
        }
      }),
    );
  });

  it('siteIds lists each site of the footprints once', () => {
    fc.assert(
      fc.property(caseArb, (k) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        expect([...n.siteIds()].sort()).toEqual(sitesOf(k).sort());
      }),
    );
  });
});

describe('Network: floor and limits', () => {
  it('networkFloor is the minimum lo over the active covering sensors (NaN where none covers)', () => {
    fc.assert(
      fc.property(caseArb, (k) => {
        const n = new Network(k.cells, k.altitudesM, k.footprints, k.active);
        expect(Array.from(n.networkFloor())).toEqual(refFloor(k, k.active));
      }),
    );
  });

  it('256 sites over one cell: the fold does not wrap round to 0 (an 8-bit count would)', () => {
    // A network of every candidate (the default of `airshade coverage`) can hold hundreds of sites. Any of these
    // would do: an exact count, a count that saturates at 255, or an InputError refusing so many sites.
    const fps: Footprint[] = Array.from({ length: 256 }, (_, i) => ({
      siteId: `site-${i}`,
      typeId: 't',
      kind: 'secondary',
      lo: Uint16Array.from([0]),
      hi: Uint16Array.from([5000]),
      window: wholeWindow(1, 1),
    }));
    let n: Network;
    try {
      n = new Network(1, [3048], fps);
    } catch (e) {
      expect(isInputError(e)).toBe(true);
      return;
    }
    expect(n.foldOf('any', 0)[0]).toBeGreaterThanOrEqual(255);
    expect(n.foldOf('secondary', 0)[0]).toBeGreaterThanOrEqual(255);
  });

  it('more than 32 flight levels in one network is an InputError naming flightLevels', () => {
    const levels = Array.from({ length: 33 }, (_, i) => i * 300);
    let err: unknown;
    try {
      new Network(1, levels, []);
    } catch (e) {
      err = e;
    }
    expect(isInputError(err)).toBe(true);
    expect((err as Error).message).toMatch(/^flightLevels: found 33 levels; expected at most 32/);
  });
});

// ---------------------------------------------------------------------------------------------------------
// Volumes

/** A small geographic grid over invented open ocean near 41° S 30° W. */
const gridArb: fc.Arbitrary<GridGeo> = fc
  .record({
    width: fc.integer({ min: 1, max: 8 }),
    height: fc.integer({ min: 1, max: 5 }),
    originX: fc.double({ min: -31, max: -29, noNaN: true }),
    originY: fc.double({ min: -42, max: -40, noNaN: true }),
    cellDeg: fc.constantFrom(1 / 120, 1 / 60, 1 / 30, 0.1),
  })
  .map(({ width, height, originX, originY, cellDeg }) => ({
    width,
    height,
    originX,
    originY,
    pixelX: cellDeg,
    pixelY: -cellDeg,
    crs: WGS84_GEOGRAPHIC,
  }));

describe('volumes: cell areas and statistics', () => {
  it('rowAreasKm2 matches @turf/area of each cell and sums to the zone area 2πR²|Δsin φ|·Δλ/2π', () => {
    fc.assert(
      fc.property(gridArb, (g) => {
        const rows = rowAreasKm2(g);
        expect(rows).toHaveLength(g.height);
        const x0 = g.originX;
        const x1 = g.originX + g.pixelX;
        for (let r = 0; r < g.height; r++) {
          const y0 = g.originY + r * g.pixelY;
          const y1 = y0 + g.pixelY;
          const cell = {
            type: 'Polygon' as const,
            coordinates: [
              [
                [x0, y1],
                [x1, y1],
                [x1, y0],
                [x0, y0],
                [x0, y1],
              ],
            ],
          };
          // @turf/area, reference library (its sphere: 6 371 008.8 m).
          expect(Math.abs(rows[r] / (turfArea(cell) / 1e6) - 1)).toBeLessThan(1e-6);
        }
        // Spherical zone: 2πR²|sin φ₁ − sin φ₀|, times the grid's share of the full circle of longitude.
        const R = 6_371_008.8;
        const phi0 = (g.originY * Math.PI) / 180;
        const phi1 = ((g.originY + g.height * g.pixelY) * Math.PI) / 180;
        const zone = (2 * Math.PI * R * R * Math.abs(Math.sin(phi1) - Math.sin(phi0)) * g.pixelX) / 360 / 1e6;
        expect(Math.abs(rows.reduce((a, b) => a + b, 0) / zone - 1)).toBeLessThan(1e-9);
      }),
    );
  });

  it('volumeStats: covered area = Σ cell areas with fold ≥ 1 inside the volume; meets and histograms agree', () => {
    const arb = gridArb.chain((g) => {
      const cells = g.width * g.height;
      return fc.record({
        g: fc.constant(g),
        footprints: fc.array(footprintArb(cells), { maxLength: 6 }),
        altitudesM: fc.uniqueArray(fc.integer({ min: 0, max: 1200 }), { minLength: 1, maxLength: 4 }),
        mask: fc.array(fc.constantFrom(0, 1), { minLength: cells, maxLength: cells }),
        req: fc.record(
          {
            any: fc.integer({ min: 0, max: 3 }),
            primary: fc.integer({ min: 0, max: 2 }),
            secondary: fc.integer({ min: 0, max: 2 }),
          },
          { requiredKeys: [] },
        ),
      });
    });
    fc.assert(
      fc.property(arb, ({ g, footprints, altitudesM, mask, req }) => {
        const cells = g.width * g.height;
        const n = new Network(cells, altitudesM, footprints);
        const fls = altitudesM.map((_, i) => 10 * (i + 1)); // labels only: the network holds the altitudes
        const ring = [
          [-31, -42],
          [-29, -42],
          [-29, -40],
          [-31, -40],
          [-31, -42],
        ];
        const v: VolumeLike = {
          id: 'v',
          name: 'Random volume',
          polygon: { type: 'Polygon', coordinates: [ring] },
          flMin: 0,
          flMax: 600,
          requiredFold: req,
        };
        const m = Uint8Array.from(mask);
        const all = new Uint8Array(cells).fill(1);
        const stats = volumeStats(n, [v, { ...v, id: 'whole' }], [m, all], fls, g);
        expect(stats).toHaveLength(2 * fls.length);
        const rows = rowAreasKm2(g);
        const areaOf = (c: number) => rows[Math.floor(c / g.width)];
        for (const st of stats) {
          const f = fls.indexOf(st.flightLevel);
          const mk = st.volumeId === 'v' ? m : all;
          const any = n.foldOf('any', f);
          const pri = n.foldOf('primary', f);
          const sec = n.foldOf('secondary', f);
          let area = 0;
          let covered = 0;
          let ok = 0;
          for (let c = 0; c < cells; c++) {
            if (!mk[c]) continue;
            area += areaOf(c);
            if (any[c] >= 1) covered += areaOf(c);
            const need =
              any[c] >= (req.any ?? 0) &&
              pri[c] >= (req.primary ?? 0) &&
              sec[c] >= (req.secondary ?? 0) &&
              any[c] >= 1;
            if (need) ok += areaOf(c);
            expect(meets(req, any[c], pri[c], sec[c])).toBe(need);
          }
          expect(st.areaKm2).toBeCloseTo(area, 9);
          expect(st.coveredKm2).toBeCloseTo(covered, 9);
          expect(st.meetsRequirementKm2).toBeCloseTo(ok, 9);
          expect(st.coveredPct).toBeCloseTo(area > 0 ? (100 * covered) / area : 0, 9);
          for (const kind of KINDS) {
            const h = st.foldHistogramKm2[kind as 'any'];
            // Receiver kinds are in the histogram only when the network has receivers.
            if (h === undefined && (kind === 'adsb' || kind === 'mlat')) continue;
            expect(h).toHaveLength(HISTOGRAM_BINS);
            expect(h.reduce((a, b) => a + b, 0)).toBeCloseTo(area, 9);
          }
          // Fold 0 in the histogram is the uncovered part.
          expect(st.foldHistogramKm2.any[0]).toBeCloseTo(area - covered, 9);
        }
      }),
    );
  });

  it('volumeStats leaves out the levels outside a volume’s FL band', () => {
    const g: GridGeo = {
      width: 2,
      height: 2,
      originX: -30,
      originY: -41,
      pixelX: 0.1,
      pixelY: -0.1,
      crs: WGS84_GEOGRAPHIC,
    };
    const n = new Network(4, [1524, 3048, 6096], []);
    const v: VolumeLike = {
      id: 'band',
      name: 'Band',
      polygon: {
        type: 'Polygon',
        coordinates: [
          [
            [-30, -41.2],
            [-29.8, -41.2],
            [-29.8, -41],
            [-30, -41],
            [-30, -41.2],
          ],
        ],
      },
      flMin: 80,
      flMax: 150,
      requiredFold: { any: 1 },
    };
    const stats = volumeStats(n, [v], [rasterizeVolume(v, g)], [50, 100, 200], g);
    expect(stats.map((s) => s.flightLevel)).toEqual([100]);
    expect(stats[0].coveredKm2).toBe(0);
    expect(stats[0].meetsRequirementKm2).toBe(0);
  });
});

describe('rasterizeVolume', () => {
  it('a rectangle selects exactly the cells whose centres lie inside (turf point-in-polygon as reference)', () => {
    const arb = gridArb.chain((g) => {
      const w = g.width * g.pixelX;
      const h = g.height * -g.pixelY;
      const x = fc.double({ min: g.originX - 0.3 * w, max: g.originX + 1.3 * w, noNaN: true });
      const y = fc.double({ min: g.originY - 1.3 * h, max: g.originY + 0.3 * h, noNaN: true });
      return fc.record({ g: fc.constant(g), xs: fc.tuple(x, x), ys: fc.tuple(y, y) });
    });
    fc.assert(
      fc.property(arb, ({ g, xs, ys }) => {
        const [w, e] = xs[0] < xs[1] ? xs : [xs[1], xs[0]];
        const [s, n] = ys[0] < ys[1] ? ys : [ys[1], ys[0]];
        fc.pre(e > w && n > s);
        const polygon = {
          type: 'Polygon' as const,
          coordinates: [
            [
              [w, s],
              [e, s],
              [e, n],
              [w, n],
              [w, s],
            ],
          ],
        };
        const v: VolumeLike = { id: 'r', name: 'Rect', polygon, flMin: 0, flMax: 600, requiredFold: {} };
        const mask = rasterizeVolume(v, g);
        expect(mask).toHaveLength(g.width * g.height);
        for (let r = 0; r < g.height; r++) {
          const lat = g.originY + (r + 0.5) * g.pixelY;
          for (let c = 0; c < g.width; c++) {
            const lon = g.originX + (c + 0.5) * g.pixelX;
            // A centre exactly on an edge is a tie the rule may settle either way: skip it (measure zero).
            if (lon === w || lon === e || lat === s || lat === n) continue;
            const inside = booleanPointInPolygon([lon, lat], polygon);
            expect(inside).toBe(lon > w && lon < e && lat > s && lat < n);
            expect(mask[r * g.width + c], `cell (${c}, ${r})`).toBe(inside ? 1 : 0);
          }
        }
      }),
    );
  });

  it('a random simple (star-shaped) polygon selects the cells whose centres turf finds inside', () => {
    const arb = gridArb.chain((g) => {
      const cx = g.originX + (g.width * g.pixelX) / 2;
      const cy = g.originY + (g.height * g.pixelY) / 2;
      const size = Math.max(g.width * g.pixelX, -g.height * g.pixelY);
      return fc.record({
        g: fc.constant(g),
        centre: fc.tuple(
          fc.double({ min: cx - size / 2, max: cx + size / 2, noNaN: true }),
          fc.double({ min: cy - size / 2, max: cy + size / 2, noNaN: true }),
        ),
        radii: fc.array(fc.double({ min: 0.05 * size, max: size, noNaN: true }), {
          minLength: 3,
          maxLength: 12,
        }),
      });
    });
    fc.assert(
      fc.property(arb, ({ g, centre, radii }) => {
        // Vertices at increasing angles around the centre: simple by construction, counter-clockwise.
        const ring = radii.map((r, i) => {
          const a = (2 * Math.PI * i) / radii.length;
          return [centre[0] + r * Math.cos(a), centre[1] + r * Math.sin(a)];
        });
        ring.push([...ring[0]]);
        const polygon = { type: 'Polygon' as const, coordinates: [ring] };
        const v: VolumeLike = { id: 's', name: 'Star', polygon, flMin: 0, flMax: 600, requiredFold: {} };
        const mask = rasterizeVolume(v, g);
        let bad = '';
        for (let r = 0; r < g.height; r++) {
          for (let c = 0; c < g.width; c++) {
            const pt = [g.originX + (c + 0.5) * g.pixelX, g.originY + (r + 0.5) * g.pixelY];
            const inside = booleanPointInPolygon(pt, polygon, { ignoreBoundary: true });
            const onEdge = booleanPointInPolygon(pt, polygon) !== inside;
            if (!onEdge && mask[r * g.width + c] !== (inside ? 1 : 0)) bad = `cell (${c}, ${r})`;
          }
        }
        expect(bad).toBe('');
      }),
    );
  });

  it('holes and multipolygons: a centre in a hole is out, in any part is in', () => {
    const g: GridGeo = {
      width: 10,
      height: 6,
      originX: -31,
      originY: -40,
      pixelX: 0.1,
      pixelY: -0.1,
      crs: WGS84_GEOGRAPHIC,
    };
    const rect = (w: number, s: number, e: number, n: number) => [
      [w, s],
      [e, s],
      [e, n],
      [w, n],
      [w, s],
    ];
    const polygon = {
      type: 'MultiPolygon' as const,
      coordinates: [
        [rect(-31, -40.6, -30.5, -40), rect(-30.88, -40.42, -30.62, -40.18).reverse()],
        [rect(-30.32, -40.28, -30.08, -40.12)],
      ],
    };
    const v: VolumeLike = { id: 'm', name: 'Multi', polygon, flMin: 0, flMax: 600, requiredFold: {} };
    const mask = rasterizeVolume(v, g);
    const rows: string[] = [];
    for (let r = 0; r < g.height; r++) {
      let line = '';
      for (let c = 0; c < g.width; c++) {
        const pt = [g.originX + (c + 0.5) * g.pixelX, g.originY + (r + 0.5) * g.pixelY];
        expect(mask[r * g.width + c]).toBe(booleanPointInPolygon(pt, polygon) ? 1 : 0);
        line += mask[r * g.width + c] ? '#' : '.';
      }
      rows.push(line);
    }
    expect(rows).toEqual([
      '#####.....',
      '#####..##.',
      '#...#..##.',
      '#...#.....',
      '#####.....',
      '#####.....',
    ]);
  });
});
