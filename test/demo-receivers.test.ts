/**
 * The demo with receivers (data/demo-receivers-scenario.json, issue 14): the demo's radars, sites and volumes with
 * twelve invented receiver sites round the two terminal areas. Its files repeat the demo's and the catalog's, so
 * they are checked against them here: the variant cannot drift from what it extends.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { isReceiverKind } from '../shared/sensor-kinds.ts';
import { loadScenario } from '../worker/cli/scenario.ts';

const DATA = join(import.meta.dirname, '..', 'data');
const json = (p: string) => JSON.parse(readFileSync(join(DATA, p), 'utf8'));

describe('the demo with receivers', () => {
  it('takes the catalog’s radars and receivers, unchanged and in order', () => {
    expect(json('demo-inputs/types-with-receivers.json')).toEqual([
      ...json('catalog/sensor-types.json'),
      ...json('catalog/receiver-types.json'),
    ]);
  });

  it('keeps every demo site as it is and adds receiver-only sites', () => {
    const demo = json('demo-inputs/sites.geojson').features;
    const variant = json('demo-inputs/sites-with-receivers.geojson').features;
    expect(variant.slice(0, demo.length)).toEqual(demo);
    const added = variant.slice(demo.length);
    expect(added.length).toBe(12);
    const types = new Map(
      (json('demo-inputs/types-with-receivers.json') as { id: string; kind: string }[]).map((t) => [
        t.id,
        t.kind,
      ]),
    );
    for (const f of added) {
      expect(f.properties.allowedTypes.length).toBeGreaterThan(0);
      for (const id of f.properties.allowedTypes) expect(isReceiverKind(types.get(id)!)).toBe(true);
    }
  });

  it('differs from the demo scenario only in its name, files, receiver requirements and one layout', async () => {
    const demo = json('demo-scenario.json');
    const variant = json('demo-receivers-scenario.json');
    const { name: _n1, sites: _s1, sensorTypes: _t1, volumes: v1, layouts: l1, ...restDemo } = demo;
    const {
      name: _n2,
      sites: _s2,
      sensorTypes: _t2,
      volumes: v2,
      layouts: l2,
      mlatAltitudeAided,
      ...restVariant
    } = variant;
    expect(restVariant).toEqual(restDemo);
    expect(mlatAltitudeAided).toBe(true);
    expect(l2.slice(0, l1.length)).toEqual(l1);
    expect(l2).toHaveLength(l1.length + 1);
    v2.forEach((v: Record<string, unknown>, i: number) => {
      const {
        requiredFold,
        requiredMlatAccuracyM: _a,
        ...rest
      } = v as { requiredFold: Record<string, number>; requiredMlatAccuracyM?: number };
      const { requiredFold: demoFold, ...demoRest } = v1[i];
      expect(rest).toEqual(demoRest);
      const { mlat: _m, ...radarFold } = requiredFold;
      expect(radarFold).toEqual(demoFold);
    });
    // It loads as a user's scenario does.
    const loaded = await loadScenario(join(DATA, 'demo-receivers-scenario.json'));
    expect(loaded.scenario.sensorTypes.map((t) => t.kind)).toContain('mlat');
  });
});
