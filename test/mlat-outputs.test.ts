/**
 * The multilateration accuracy through the commands (issue 14): `airshade coverage` writes the accuracy raster and
 * bands per level and the per-volume accuracy in summary.json; `airshade report` shows it. On a flat sea with four
 * receivers at the corners of a 40 km square, altitude reported (3 receivers make a fix), the accuracy at the
 * square's centre at FL100 matches the closed-form least-squares value (issue 14's done-when: within 10 %).
 *
 * Closed form [calc] (test/REFERENCES.md, multilateration on a circle): N receivers evenly spaced round the target at
 * one elevation angle α give a horizontal DRMS of 2·c·σ/(√N·cos α); four corners of a square, target above the
 * centre: c·σ/cos α. Here the corners lie √2 · 20 km from the centre and 20 m up, the target at 3048 m (FL100 on the
 * standard day, ICAO Doc 7488), σ the catalog receiver's timingErrorNs.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fromArrayBuffer } from 'geotiff';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EnuFrame, mlatHorizontalDrms } from '../worker/core/mlat.ts';
import { runCli } from './support/run-cli.ts';
import { writeScenarioFixture, type Fixture } from './support/scenario-fixture.ts';
import {
  C,
  HALF_LAT,
  HALF_LON,
  LAT0,
  LON0,
  RECEIVER_CATALOG,
  flatSeaDem,
  squareBuoys,
  squareVolume,
} from './support/mlat-sea.ts';

const catalog = RECEIVER_CATALOG;
const MLAT = catalog.find((t) => t.kind === 'mlat')!;

describe('multilateration accuracy from the commands, four receivers on a square over a flat sea', () => {
  let fx: Fixture;
  const out = () => join(fx.dir, 'out');
  beforeAll(async () => {
    fx = writeScenarioFixture({
      dem: flatSeaDem(),
      cellArcSec: 30,
      flightLevels: [100],
      sensorTypes: [MLAT],
      sites: squareBuoys(() => [MLAT.id]),
      volumes: [squareVolume(100, 100)],
      layouts: [],
      extra: { multipath: 'off', mlatAltitudeAided: true },
    });
    const r = await runCli('coverage', fx.scenarioPath, '--out', out(), '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
  });
  afterAll(() => fx.cleanup());

  it('writes the accuracy raster; at the centre it matches c·σ/cos α within 10 %', async () => {
    const buf = readFileSync(join(out(), 'mlat-accuracy-FL100.tif'));
    const tiff = await fromArrayBuffer(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
    const img = await tiff.getImage();
    const [ox, oy] = img.getOrigin();
    const [px, py] = img.getResolution();
    const [data] = (await img.readRasters()) as unknown as Float32Array[];
    const col = Math.floor((LON0 - ox) / px);
    const row = Math.floor((LAT0 - oy) / py);
    const centre = data[row * img.getWidth() + col];
    const sigma = (MLAT.timingErrorNs as number) * 1e-9;
    const horizontal = Math.SQRT2 * 20_000;
    const cosA = horizontal / Math.hypot(horizontal, 3048 - 20);
    const closed = (C * sigma) / cosA;
    console.log(`centre DRMS ${centre.toFixed(3)} m, closed form ${closed.toFixed(3)} m`);
    expect(Math.abs(centre - closed) / closed).toBeLessThan(0.1);
    // Cells without a fix are nodata (NaN).
    expect(img.getGDALNoData()).toBeNaN();
  });

  it('writes nested bands and the per-volume accuracy in summary.json, and the text summary says it', () => {
    const bands = JSON.parse(readFileSync(join(out(), 'mlat-accuracy-FL100.geojson'), 'utf8'));
    expect(bands.type).toBe('FeatureCollection');
    expect(bands.features.length).toBeGreaterThan(0);
    expect(bands.features.every((f: { properties: { kind: string } }) => f.properties.kind === 'mlat')).toBe(
      true,
    );
    const summary = JSON.parse(readFileSync(join(out(), 'summary.json'), 'utf8'));
    const a = summary.mlatAccuracy;
    expect(a.minReceivers).toBe(3);
    expect(a.altitudeKnown).toBe(true);
    expect(a.receiverSites).toHaveLength(4);
    expect(a.files).toEqual(['mlat-accuracy-FL100.tif', 'mlat-accuracy-FL100.geojson']);
    const row = a.volumes.find((v: { volumeId: string }) => v.volumeId === 'square');
    expect(row.flightLevel).toBe(100);
    expect(row.requiredM).toBe(10);
    expect(row.fixPct).toBe(100);
    // Inside the square the DRMS stays within a few metres of its centre value (c·σ/cos α ≈ 4.5 m for 15 ns).
    expect(row.metPct).toBe(100);
    expect(row.medianM).toBeGreaterThan(3);
    expect(row.medianM).toBeLessThan(10);
  });

  it('a bound tighter than the geometry allows is reported short, not met', async () => {
    const text = readFileSync(fx.scenarioPath, 'utf8').replace(
      '"requiredMlatAccuracyM": 10',
      '"requiredMlatAccuracyM": 1',
    );
    const path = join(fx.dir, 'tight.json');
    writeFileSync(path, text);
    const r = await runCli('coverage', path, '--out', join(fx.dir, 'tight'), '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
    const summary = JSON.parse(readFileSync(join(fx.dir, 'tight', 'summary.json'), 'utf8'));
    expect(summary.mlatAccuracy.volumes[0].metPct).toBe(0);
    expect(r.out).toMatch(/multilateration: 4 receivers; a fix needs 3/);
  });

  it('the N−1 table shows a corner lost: every fold still met, the accuracy bound lost at the centre', async () => {
    // A bound between the centre's DRMS from all four corners and from three (EnuFrame + mlatHorizontalDrms,
    // mlat.ts's own path): with any corner down the centre still has its fix (3 receivers) but misses the bound.
    const corners: [number, number][] = [
      [LON0 + HALF_LON, LAT0 + HALF_LAT],
      [LON0 - HALF_LON, LAT0 + HALF_LAT],
      [LON0 - HALF_LON, LAT0 - HALF_LAT],
      [LON0 + HALF_LON, LAT0 - HALF_LAT],
    ];
    const frame = new EnuFrame(LON0, LAT0, 3048);
    const drms = (list: [number, number][]) =>
      mlatHorizontalDrms(
        list.map(([lon, lat]) => frame.toEnu(lon, lat, 20)),
        { e: 0, n: 0, u: 0 },
        (MLAT.timingErrorNs as number) * 1e-9,
        { altitudeKnown: true },
      );
    const all = drms(corners);
    const three = drms(corners.slice(1));
    expect(three).toBeGreaterThan(all * 1.1);
    const bound = Math.sqrt(all * three);
    const text = readFileSync(fx.scenarioPath, 'utf8').replace(
      '"requiredMlatAccuracyM": 10',
      `"requiredMlatAccuracyM": ${bound}`,
    );
    const path = join(fx.dir, 'n-1.json');
    writeFileSync(path, text);
    const dir = join(fx.dir, 'n-1');
    const r = await runCli('outage', path, '--out', dir, '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
    const doc = JSON.parse(readFileSync(join(dir, 'outage.json'), 'utf8'));
    // The folds: three corners still hear the whole square, so nothing is lost.
    expect(doc.losses.every((l: { demandWeightLost: number }) => l.demandWeightLost === 0)).toBe(true);
    // The accuracy: every corner's loss costs area, and the centre's level is met less after than before.
    expect(doc.mlatAccuracyLosses).toHaveLength(4);
    for (const l of doc.mlatAccuracyLosses) {
      expect(l.areaKm2Lost).toBeGreaterThan(0);
      const row = l.byVolume[0];
      expect(row).toMatchObject({ volumeId: 'square', flightLevel: 100 });
      expect(row.metPctAfter).toBeLessThan(row.metPctBefore);
    }
    expect(r.out).toMatch(/multilateration accuracy bounds: area whose fix meets its bound/);
  });

  it('the report has a multilateration accuracy section with the volume’s row', async () => {
    const html = join(fx.dir, 'report.html');
    const r = await runCli('report', fx.scenarioPath, '--out', html, '--threads', '0', '--quiet');
    expect(r.code, r.err).toBe(0);
    const text = readFileSync(html, 'utf8');
    expect(text).toMatch(/<section class="text" id="mlat">/);
    expect(text).toMatch(/<tr data-volume="square" data-level="100">/);
    expect(text).toMatch(/Multilateration accuracy/);
    // The fold split names radars as radars, and gives the receivers their own column.
    expect(text).toMatch(/Radar sites seeing: 0 \/ 1 \/ 2 \/ 3 \/ ≥4/);
    expect(text).toMatch(/Multilateration receivers hearing: 0 \/ 1 \/ 2 \/ 3 \/ ≥4/);
    expect(text).not.toMatch(/ADS-B stations hearing/);
    // The accuracy bounds' N−1 table: one row per buoy (each with receivers).
    expect(
      text
        .match(/<table class="grid" data-table="mlat-outage">[\s\S]*?<\/table>/)![0]
        .match(/<tr data-site=/g),
    ).toHaveLength(4);
    // In the square all four receivers hear: the column's last bin (≥ 4) holds the whole area.
    expect(text).toMatch(
      /<td class="n hist">100 \/ 0 \/ 0 \/ 0 \/ 0<\/td><td class="n hist">0 \/ 0 \/ 0 \/ 0 \/ 100<\/td>/,
    );
  });
});
