/**
 * The invented-landscape generator: determinism, range, the demo region's sea and land, continuity
 * (including across tiles and the slow-field lattice), the test scenes, and the committed demo inputs.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  DEMO_LAYOUT,
  DEMO_REGION,
  DEMO_WORLD,
  SYNTH_MAX_HEIGHT_M,
  createSynthWorld,
  fillGeographic,
  fillProjected,
  latOfLocalY,
  localXM,
  localYM,
  lonOfLocalX,
  synthHeightAtLonLat,
  synthHeightM,
  testWorld,
  type SynthWorld,
} from '../worker/demo/synth-terrain.ts';
import { isInputError } from '../shared/errors.ts';

const DEMO_INPUTS = new URL('../data/demo-inputs/', import.meta.url);

/** The demo region sampled at `stepDeg` (pixel centres), row 0 at the north. */
function sampleRegion(stepDeg: number, world: SynthWorld = DEMO_WORLD) {
  const width = Math.round((DEMO_REGION.east - DEMO_REGION.west) / stepDeg);
  const height = Math.round((DEMO_REGION.north - DEMO_REGION.south) / stepDeg);
  const data = new Float32Array(width * height);
  fillGeographic(data, DEMO_REGION.west, DEMO_REGION.north, stepDeg, width, height, world);
  return { data, width, height };
}

const REGION = sampleRegion(0.02);

describe('determinism', () => {
  it('the same seed gives the same heights, another seed different ones', () => {
    const n = 64;
    const a = new Float32Array(n * n);
    const b = new Float32Array(n * n);
    const c = new Float32Array(n * n);
    // an inland block of the demo land (about 60 km east of the centre)
    fillProjected(a, n, n, 500, DEMO_WORLD, 60_000, 0);
    fillProjected(b, n, n, 500, createSynthWorld(DEMO_LAYOUT), 60_000, 0);
    fillProjected(c, n, n, 500, createSynthWorld({ ...DEMO_LAYOUT, seed: DEMO_LAYOUT.seed + 1 }), 60_000, 0);
    expect(b).toEqual(a);
    let differ = 0;
    for (let i = 0; i < a.length; i++) if (Math.abs(a[i] - c[i]) > 1) differ++;
    expect(differ).toBeGreaterThan(0.9 * a.length);
  });

  it('a single point equals the filled pixel at the same position', () => {
    const n = 40;
    const px = 90;
    const out = new Float32Array(n * n);
    fillProjected(out, n, n, px, DEMO_WORLD, 20_000, -15_000);
    for (const [c, r] of [
      [0, 0],
      [17, 23],
      [39, 39],
      [5, 31],
    ]) {
      const x = 20_000 + (c + 0.5 - n / 2) * px;
      const y = -15_000 + (n / 2 - r - 0.5) * px;
      expect(out[r * n + c]).toBe(Math.fround(synthHeightM(x, y, DEMO_WORLD)));
    }
  });

  it('grids of pixels much coarser than the lattice give the same point values', () => {
    const n = 5;
    const px = 40_000;
    const out = new Float32Array(n * n);
    fillProjected(out, n, n, px, DEMO_WORLD);
    for (let r = 0; r < n; r++) {
      for (let c = 0; c < n; c++) {
        const z = synthHeightM((c + 0.5 - n / 2) * px, (n / 2 - r - 0.5) * px, DEMO_WORLD);
        expect(out[r * n + c]).toBe(Math.fround(z));
      }
    }
  });

  it('geographic fills put row 0 at the north and agree with single lon/lat samples', () => {
    const w = 30;
    const h = 20;
    const px = 0.01;
    const out = new Float32Array(w * h);
    fillGeographic(out, -29.2, -40.1, px, w, h, DEMO_WORLD);
    for (const [c, r] of [
      [0, 0],
      [29, 19],
      [12, 7],
    ]) {
      const lon = -29.2 + (c + 0.5) * px;
      const lat = -40.1 - (r + 0.5) * px;
      expect(out[r * w + c]).toBe(Math.fround(synthHeightAtLonLat(lon, lat, DEMO_WORLD)));
    }
    expect(lonOfLocalX(localXM(-28.3, DEMO_WORLD), DEMO_WORLD)).toBeCloseTo(-28.3, 9);
    expect(latOfLocalY(localYM(-42.7, DEMO_WORLD), DEMO_WORLD)).toBeCloseTo(-42.7, 9);
  });
});

describe('the demo region', () => {
  it('heights stay within 0–3000 m and the ranges rise high', () => {
    let max = 0;
    let bad = 0;
    for (const v of REGION.data) {
      if (!(v >= 0 && v < SYNTH_MAX_HEIGHT_M)) bad++;
      if (v > max) max = v;
    }
    expect(bad).toBe(0);
    expect(max).toBeGreaterThan(2500);
  });

  it('has substantial sea and land, sea on the west and south-west, land inland to the east', () => {
    const { data, width, height } = REGION;
    let sea = 0;
    for (const v of data) if (v === 0) sea++;
    const seaFraction = sea / data.length;
    expect(seaFraction).toBeGreaterThan(0.2);
    expect(seaFraction).toBeLessThan(0.6);
    const frac = (c0: number, c1: number, r0: number, r1: number, pred: (v: number) => boolean): number => {
      let k = 0;
      let n = 0;
      for (let r = r0; r < r1; r++) for (let c = c0; c < c1; c++, n++) if (pred(data[r * width + c])) k++;
      return k / n;
    };
    const w5 = Math.floor(width / 5);
    const h5 = Math.floor(height / 5);
    // westernmost fifth mostly sea; south-west corner block all sea; easternmost fifth all land
    expect(frac(0, w5, 0, height, (v) => v === 0)).toBeGreaterThan(0.7);
    expect(frac(0, w5, height - h5, height, (v) => v === 0)).toBe(1);
    expect(frac(width - w5, width, 0, height, (v) => v > 0)).toBe(1);
    // the land has lowlands (< 200 m) as well as mountains (> 1500 m)
    expect(frac(0, width, 0, height, (v) => v > 0 && v < 200)).toBeGreaterThan(0.05);
    expect(frac(0, width, 0, height, (v) => v > 1500)).toBeGreaterThan(0.03);
  });
});

describe('continuity', () => {
  it('adjacent tiles sharing an edge row or column get identical values there', () => {
    // 1° tiles of 121 × 121 samples at 30″, neighbours sharing their edge (as common DEM tiles do)
    const n = 121;
    const px = 1 / 120;
    const tile = (lon: number, lat: number): Float32Array => {
      const out = new Float32Array(n * n);
      fillGeographic(out, lon - px / 2, lat + 1 + px / 2, px, n, n, DEMO_WORLD);
      return out;
    };
    const a = tile(-30, -41); // west
    const b = tile(-29, -41); // east of a
    const c = tile(-30, -42); // south of a
    let land = 0;
    for (let r = 0; r < n; r++) {
      expect(b[r * n]).toBe(a[r * n + n - 1]);
      if (a[r * n + n - 1] > 0) land++;
    }
    for (let col = 0; col < n; col++) expect(c[col]).toBe(a[(n - 1) * n + col]);
    expect(land).toBeGreaterThan(n / 2); // the shared edge is not all sea
  });

  it('two abutting tiles equal one fill of their union', () => {
    const w = 50;
    const h = 40;
    const px = 1 / 1200;
    const lon0 = -29.37;
    const lat0 = -41.02;
    const whole = new Float32Array(2 * w * h);
    fillGeographic(whole, lon0, lat0, px, 2 * w, h, DEMO_WORLD);
    const west = new Float32Array(w * h);
    const east = new Float32Array(w * h);
    fillGeographic(west, lon0, lat0, px, w, h, DEMO_WORLD);
    fillGeographic(east, lon0 + w * px, lat0, px, w, h, DEMO_WORLD);
    for (let r = 0; r < h; r++) {
      for (let c = 0; c < w; c++) {
        expect(west[r * w + c]).toBe(whole[r * 2 * w + c]);
        expect(east[r * w + c]).toBe(whole[r * 2 * w + w + c]);
      }
    }
  });

  it('heights change by millimetres over a millimetre, everywhere (coast, lattice lines, valleys)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -200_000, max: 200_000, noNaN: true }),
        fc.double({ min: -270_000, max: 270_000, noNaN: true }),
        fc.double({ min: 0, max: 2 * Math.PI, noNaN: true }),
        (x, y, a) => {
          const d = 0.001;
          const h0 = synthHeightM(x, y, DEMO_WORLD);
          const h1 = synthHeightM(x + d * Math.cos(a), y + d * Math.sin(a), DEMO_WORLD);
          // tolerance 5 m per m (79°), steeper than the generator's slopes: a jump would show up as metres
          expect(Math.abs(h1 - h0)).toBeLessThan(5 * d);
        },
      ),
      { numRuns: 3000 },
    );
    // straddling lattice lines and a lattice node exactly
    for (const [x, y] of [
      [60_000, 12_345],
      [61_234, -7000],
      [-3000, 45_000],
    ]) {
      const h0 = synthHeightM(x - 1e-7, y - 1e-7, DEMO_WORLD);
      const h1 = synthHeightM(x + 1e-7, y + 1e-7, DEMO_WORLD);
      expect(Math.abs(h1 - h0)).toBeLessThan(1e-4);
    }
  });

  it('the land rises from exactly 0 at the shore', () => {
    // walk east along the centre latitude from far out at sea: heights are 0, then grow continuously
    let x = -200_000;
    while (synthHeightM(x, 0, DEMO_WORLD) === 0) x += 10;
    expect(x).toBeLessThan(0);
    const step = 0.01;
    let xs = x - 10; // last sea sample
    while (synthHeightM(xs + step, 0, DEMO_WORLD) === 0) xs += step;
    expect(synthHeightM(xs + step, 0, DEMO_WORLD)).toBeGreaterThan(0);
    expect(synthHeightM(xs + step, 0, DEMO_WORLD)).toBeLessThan(0.01);
  });
});

describe('test scenes', () => {
  const SEEDS = [1, 2, 7, 42, 2024];
  const ring = (world: SynthWorld, x: number, y: number, radiusM: number, n = 36): number[] => {
    const out: number[] = [];
    for (let i = 0; i < n; i++) {
      const a = (2 * Math.PI * i) / n;
      out.push(synthHeightM(x + radiusM * Math.cos(a), y + radiusM * Math.sin(a), world));
    }
    return out;
  };

  it.each(SEEDS)('valley (seed %i): the antenna is on a floor lower than its surroundings', (seed) => {
    const { world, antenna } = testWorld(seed, 'valley');
    const h = synthHeightM(antenna.xM, antenna.yM, world);
    for (const radius of [2000, 3500]) {
      const around = ring(world, antenna.xM, antenna.yM, radius);
      const higher = around.filter((z) => z > h + 20).length;
      expect(higher / around.length).toBeGreaterThan(0.7);
    }
    // the valley walls rise hundreds of metres on both sides
    expect(synthHeightM(antenna.xM - 4000, antenna.yM, world)).toBeGreaterThan(h + 300);
    expect(synthHeightM(antenna.xM + 4000, antenna.yM, world)).toBeGreaterThan(h + 300);
  });

  it.each(SEEDS)('summit (seed %i): the antenna is the highest point within 3 km', (seed) => {
    const { world, antenna } = testWorld(seed, 'summit');
    const h = synthHeightM(antenna.xM, antenna.yM, world);
    for (let dy = -3000; dy <= 3000; dy += 100) {
      for (let dx = -3000; dx <= 3000; dx += 100) {
        if ((dx === 0 && dy === 0) || dx * dx + dy * dy > 3000 * 3000) continue;
        expect(synthHeightM(antenna.xM + dx, antenna.yM + dy, world)).toBeLessThan(h);
      }
    }
    for (const z of ring(world, antenna.xM, antenna.yM, 3000)) expect(z).toBeLessThan(h - 200);
  });

  it.each(SEEDS)('coast (seed %i): sea on one side within a few km, land on the other', (seed) => {
    const { world, antenna } = testWorld(seed, 'coast');
    const { xM, yM } = antenna;
    expect(synthHeightM(xM, yM, world)).toBeGreaterThan(0);
    let seaWest = 0;
    let landEast = 0;
    let n = 0;
    for (let a = -40; a <= 40; a += 10) {
      const r = (a * Math.PI) / 180;
      for (const d of [1000, 2000, 3000]) {
        n++;
        if (synthHeightM(xM - d * Math.cos(r), yM + d * Math.sin(r), world) === 0) seaWest++;
        if (synthHeightM(xM + d * Math.cos(r), yM + d * Math.sin(r), world) > 0) landEast++;
      }
    }
    expect(seaWest / n).toBeGreaterThan(0.8);
    expect(landEast).toBe(n);
  });

  it('rejects an unknown scenario and a bad layout with a message naming the field', () => {
    expect(() => testWorld(1, 'ridge' as never)).toThrow(/testWorld: scenario/);
    let err: unknown;
    try {
      createSynthWorld({
        ...DEMO_LAYOUT,
        ranges: [{ name: 'x', axisM: [[0, 0]], crestM: 1, halfWidthM: 1 }],
      });
    } catch (e) {
      err = e;
    }
    expect(isInputError(err)).toBe(true);
    expect((err as Error).message).toMatch(/ranges\[0\]\.axisM.*at least 2 vertices/);
    expect(() => fillProjected(new Float32Array(5), 2, 2, 30, DEMO_WORLD)).toThrow(/fillProjected: out/);
  });
});

describe('committed demo inputs', () => {
  interface SiteFeature {
    type: string;
    geometry: { type: string; coordinates: [number, number] };
    properties: { id: string; name: string; mastHeightM: number; siteCost: number; existing?: boolean };
  }
  const sites = JSON.parse(readFileSync(new URL('sites.geojson', DEMO_INPUTS), 'utf8')) as {
    type: string;
    features: SiteFeature[];
  };
  const volumes = JSON.parse(readFileSync(new URL('volumes.json', DEMO_INPUTS), 'utf8')) as {
    id: string;
    name: string;
    polygon: { type: string; coordinates: [number, number][][] };
    flMin: number;
    flMax: number;
    requiredFold: { primary?: number; secondary?: number; any?: number };
    weight?: number;
  }[];
  const inRegion = ([lon, lat]: [number, number]): boolean =>
    lon > DEMO_REGION.west && lon < DEMO_REGION.east && lat > DEMO_REGION.south && lat < DEMO_REGION.north;
  // Flat approximation with 111.2 km per degree of a great circle on the 6371 km sphere (2π·6371/360 = 111.19
  // [calc]); it measures the demo's own invented layout, not an outside figure.
  const kmBetween = (a: [number, number], b: [number, number]): number =>
    Math.hypot((a[0] - b[0]) * 111.2 * Math.cos((a[1] * Math.PI) / 180), (a[1] - b[1]) * 111.2);

  it('at least 28 sites, on land inside the region, with valid properties', () => {
    expect(sites.type).toBe('FeatureCollection');
    expect(sites.features.length).toBeGreaterThanOrEqual(28);
    const ids = new Set<string>();
    for (const f of sites.features) {
      const p = f.properties;
      expect(f.geometry.type).toBe('Point');
      expect(inRegion(f.geometry.coordinates)).toBe(true);
      expect(
        synthHeightAtLonLat(f.geometry.coordinates[0], f.geometry.coordinates[1], DEMO_WORLD),
        p.id,
      ).toBeGreaterThan(0);
      expect(p.id).toMatch(/^[a-z][a-z0-9-]{1,15}$/);
      expect(ids.has(p.id)).toBe(false);
      ids.add(p.id);
      expect(p.name.length).toBeGreaterThan(2);
      expect(p.mastHeightM).toBeGreaterThanOrEqual(10);
      expect(p.mastHeightM).toBeLessThanOrEqual(40);
      expect(p.siteCost).toBeGreaterThanOrEqual(0.4);
      expect(p.siteCost).toBeLessThanOrEqual(3.0);
    }
    const existing = sites.features.filter((f) => f.properties.existing === true).length;
    expect(existing).toBeGreaterThanOrEqual(4);
    expect(existing).toBeLessThanOrEqual(5);
  });

  it('several sites on tops, some on the coast, some near each aerodrome', () => {
    const stepDeg = 100 / 111_200; // ~100 m (111.2 km per degree, as in kmBetween)
    let tops = 0;
    let coastal = 0;
    for (const f of sites.features) {
      const [lon, lat] = f.geometry.coordinates;
      const h = synthHeightAtLonLat(lon, lat, DEMO_WORLD);
      let isTop = true;
      for (let dy = -10; dy <= 10 && isTop; dy++) {
        for (let dx = -10; dx <= 10; dx++) {
          if (dx * dx + dy * dy > 100 || (dx === 0 && dy === 0)) continue;
          if (synthHeightAtLonLat(lon + (dx * stepDeg) / 0.75, lat + dy * stepDeg, DEMO_WORLD) > h) {
            isTop = false;
            break;
          }
        }
      }
      if (isTop && h > 1200) tops++;
      let sea = false;
      for (let a = 0; a < 16 && !sea; a++) {
        const d = 5 / 111.2; // 5 km
        const dLon = (d * Math.cos((a * Math.PI) / 8)) / Math.cos((lat * Math.PI) / 180);
        if (synthHeightAtLonLat(lon + dLon, lat + d * Math.sin((a * Math.PI) / 8), DEMO_WORLD) === 0)
          sea = true;
      }
      if (sea) coastal++;
    }
    expect(tops).toBeGreaterThanOrEqual(6);
    expect(coastal).toBeGreaterThanOrEqual(5);
    for (const v of volumes.filter((v) => v.weight === 3)) {
      const ringPts = v.polygon.coordinates[0];
      const centre: [number, number] = [
        ringPts.slice(0, -1).reduce((s, p) => s + p[0], 0) / (ringPts.length - 1),
        ringPts.slice(0, -1).reduce((s, p) => s + p[1], 0) / (ringPts.length - 1),
      ];
      const near = sites.features.filter((f) => kmBetween(f.geometry.coordinates, centre) < 25).length;
      expect(near, v.id).toBeGreaterThanOrEqual(2);
    }
  });

  it('volumes: valid counter-clockwise polygons inside the region, with the planned bands and folds', () => {
    // RFC 7946 §3.1.6: closed linear rings, exterior counter-clockwise
    const signedArea = (ring: [number, number][]): number => {
      let s = 0;
      for (let i = 0; i + 1 < ring.length; i++)
        s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
      return s / 2;
    };
    const cross = (o: number[], a: number[], b: number[]) =>
      (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
    const segmentsCross = (p1: number[], p2: number[], q1: number[], q2: number[]): boolean =>
      cross(p1, p2, q1) * cross(p1, p2, q2) < 0 && cross(q1, q2, p1) * cross(q1, q2, p2) < 0;
    expect(volumes.length).toBe(3);
    expect(new Set(volumes.map((v) => v.id)).size).toBe(3);
    for (const v of volumes) {
      expect(v.polygon.type).toBe('Polygon');
      const ring = v.polygon.coordinates[0];
      expect(ring.length).toBeGreaterThanOrEqual(4);
      expect(ring[ring.length - 1]).toEqual(ring[0]);
      expect(signedArea(ring)).toBeGreaterThan(0);
      for (const p of ring) expect(inRegion(p)).toBe(true);
      for (let i = 0; i + 1 < ring.length; i++) {
        for (let j = i + 2; j + 1 < ring.length; j++) {
          if (i === 0 && j === ring.length - 2) continue; // neighbours through the closing vertex
          expect(segmentsCross(ring[i], ring[i + 1], ring[j], ring[j + 1])).toBe(false);
        }
      }
      expect(v.flMin).toBeLessThan(v.flMax);
    }
    const enroute = volumes.filter((v) => v.weight === 1);
    const terminals = volumes.filter((v) => v.weight === 3);
    expect(enroute).toHaveLength(1);
    expect(terminals).toHaveLength(2);
    expect(enroute[0]).toMatchObject({ flMin: 245, flMax: 460, requiredFold: { secondary: 2 } });
    for (const t of terminals) {
      expect(t.requiredFold).toEqual({ primary: 1, secondary: 2 });
      expect(t.flMax).toBeLessThanOrEqual(enroute[0].flMin);
      const ring = t.polygon.coordinates[0];
      const lons = ring.map((p) => p[0]);
      const lats = ring.map((p) => p[1]);
      const lat = (Math.max(...lats) + Math.min(...lats)) / 2;
      const acrossKm = kmBetween([Math.min(...lons), lat], [Math.max(...lons), lat]);
      const upKm = (Math.max(...lats) - Math.min(...lats)) * 111.2;
      for (const d of [acrossKm, upKm]) {
        expect(d).toBeGreaterThanOrEqual(40);
        expect(d).toBeLessThanOrEqual(60);
      }
    }
  });

  it('the en-route block covers most of the land', () => {
    const ring = volumes.find((v) => v.weight === 1)!.polygon.coordinates[0];
    const inside = (lon: number, lat: number): boolean => {
      let c = false;
      for (let i = 0, j = ring.length - 2; i < ring.length - 1; j = i++) {
        const [xi, yi] = ring[i];
        const [xj, yj] = ring[j];
        if (yi > lat !== yj > lat && lon < ((xj - xi) * (lat - yi)) / (yj - yi) + xi) c = !c;
      }
      return c;
    };
    const { data, width, height } = REGION;
    let land = 0;
    let covered = 0;
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) {
        if (data[r * width + c] === 0) continue;
        land++;
        if (inside(DEMO_REGION.west + (c + 0.5) * 0.02, DEMO_REGION.north - (r + 0.5) * 0.02)) covered++;
      }
    }
    expect(covered / land).toBeGreaterThan(0.85);
  });
});
