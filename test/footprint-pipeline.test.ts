/**
 * The footprint pipeline's buffers (worker/core/coverage.ts `computeFootprints`): the floor and distance grids of a
 * site whose footprints are built serve a later site, and only the geodesics a site's range box reads are tabulated.
 * Neither may change a footprint: the footprints of several sites on a geographic grid much larger than their reach
 * are compared with those of a run that keeps every site's grids (`keepSiteFloors`: nothing reused), cell by cell,
 * and each site's kept floor is checked to be NaN outside its reach [calc]. Invented terrain over open ocean (the
 * South Atlantic test box of test/REFERENCES.md).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { computeFootprints, type Candidate } from '../worker/core/coverage.ts';
import { inlineExecutor } from '../worker/core/floor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { DEFAULT_TARGET } from '../worker/core/sensor.ts';
import { Terrain } from '../worker/core/terrain.ts';
import { bumpyDem } from './support/bumps.ts';
import { oceanBoxGeo } from './support/dem.ts';

const CATALOG = JSON.parse(
  readFileSync(new URL('../data/catalog/sensor-types.json', import.meta.url), 'utf8'),
);

describe('footprints with reused grids and windowed geodesics', () => {
  it('are the same as with every grid kept, site by site and cell by cell', async () => {
    // 1.5° × 1° at 36″ (150 × 100 cells, about 1 km); three sites, each reaching well inside the box.
    const geo = oceanBoxGeo();
    const data = bumpyDem(7, geo.width, geo.height);
    const terrain = Terrain.fromParts({ geo, data, warnings: [], sources: ['generated'] });
    const spec = CATALOG.find((t: { kind: string }) => t.kind === 'secondary');
    const model = buildSensorModel(spec, spec.id);
    const sites = [
      { id: 'a', name: 'Test buoy A', lon: -30.7, lat: -40.3, mastHeightM: 20 },
      { id: 'b', name: 'Test buoy B', lon: -30.1, lat: -40.6, mastHeightM: 35 },
      { id: 'c', name: 'Test buoy C', lon: -29.8, lat: -40.25, mastHeightM: 10 },
    ];
    const candidates: Candidate[] = sites.map((site) => ({ site, model, target: DEFAULT_TARGET }));
    const req = { grid: geo, ground: data, candidates, kFactor: 4 / 3, maxRangeM: 30_000 };
    const reused = await computeFootprints(terrain, req, inlineExecutor(terrain));
    const kept = await computeFootprints(terrain, req, inlineExecutor(terrain), { keepSiteFloors: true });
    expect(reused.siteFloors).toEqual([]);
    expect(kept.siteFloors.map((f) => f.site.id)).toEqual(['a', 'b', 'c']);
    expect(reused.footprints.length).toBe(3);
    reused.footprints.forEach((fp, i) => {
      const other = kept.footprints[i];
      expect(fp.window).toEqual(other.window);
      expect(Array.from(fp.lo)).toEqual(Array.from(other.lo));
      expect(Array.from(fp.hi)).toEqual(Array.from(other.hi));
      // Some cover, and a window well short of the grid: the windowed geodesics are what this run used.
      expect(fp.lo.some((l, k) => l <= fp.hi[k])).toBe(true);
      expect((fp.window.row1 - fp.window.row0) * (fp.window.col1 - fp.window.col0)).toBeLessThan(
        (geo.width * geo.height) / 2,
      );
    });
    // A kept floor is NaN beyond the site's 30 km (cells farther than 40 km by the kept distances, and the rows
    // outside its box).
    for (const f of kept.siteFloors) {
      let far = 0;
      for (let i = 0; i < f.floor.length; i++) {
        if (f.distance[i] > 40_000) {
          far++;
          expect(f.floor[i]).toBeNaN();
        }
      }
      expect(f.floor.filter((v) => v === v).length).toBeGreaterThan(100);
      expect(far + f.distance.filter((d) => d !== d).length).toBeGreaterThan(geo.width * geo.height * 0.5);
    }
  });
});
