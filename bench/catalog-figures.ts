/**
 * Derived figures of the default catalog (data/catalog/sensor-types.json), computed by the product's own code so
 * that data/catalog/README.md can quote them without anyone working them out by hand:
 *
 *   npx tsx bench/catalog-figures.ts          (Markdown on stdout; a few seconds)
 *
 * For each type and target (the study's default 2 m² Swerling 1 with the low-power transponder class; for a
 * primary also a steady 2 m² target, for a link-budget secondary also the high-power class):
 * - free-space peak range R0 (`SensorModel.peakRangeM`: no atmosphere, no instrumented range) and, for a
 *   secondary, which link sets it;
 * - the range at 0° and at 2° elevation from an antenna 30 m above the sea, with the gaseous attenuation of the
 *   standard atmosphere (`profile().rangeM`), as the product uses it (capped at the instrumented range) and before
 *   the cap (the same type with a 10 000 NM instrumented range);
 * - the cone of silence (`profile().coneOfSilenceRad`) and what sets it (the maximum elevation, or the end of the
 *   pattern's usable gain);
 * - the flat-earth cosec² ceiling R0·sin(startDeg) (free space), and the highest altitude the sensor's band reaches
 *   on the 4/3 earth with the atmosphere and the instrumented range (`sensorBand` of footprint.ts);
 * - the reach on a flat sea from a 30 m mast at FL100, FL245, FL300 and FL400 (ISA: FL × 30.48 m): the farthest
 *   ground distance where the product's footprint covers the level, and the altitudes covered at 60 NM, without and
 *   with the over-sea first-lobe lobing (`multipath` "off" / "auto" on open sea). Two ways: (a) the sensor band of
 *   footprint.ts (and, with lobing, its `seaBand` with multipath.ts's `firstLobeFactor`, built as
 *   worker/core/coverage.ts builds it) against the closed-form line-of-sight floor of a smooth sphere (0 out to the
 *   antenna's horizon arc s1 = Re·acos(Re/(Re+ha)), then Re/cos((s − s1)/Re) − Re), evaluated as `buildFootprint`
 *   does; (b) end to end, as test/physics-flat-sea.test.ts does: `computeFootprints` on a geographic strip of flat
 *   sea (30″ cells), the edge read as the geodesic distance of the farthest covered cell. They agree to about a cell.
 *
 * k = 4/3, ISA standard day, no terrain.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { flToMetres, nmToM } from '../shared/units.ts';
import { computeFootprints } from '../worker/core/coverage.ts';
import { requiredSnrDb } from '../worker/core/detection.ts';
import { inlineExecutor } from '../worker/core/floor.ts';
import { seaBand, sensorBand, TOP_M, type Footprint, type SensorBand } from '../worker/core/footprint.ts';
import { WGS84_GEOGRAPHIC, type GridGeo } from '../worker/core/grid.ts';
import { firstLobeFactor } from '../worker/core/multipath.ts';
import {
  describeTarget,
  linkRangeM,
  SSR_REPLY_MHZ,
  TRANSPONDER_CLASSES,
  wattsToDbm,
  type SecondaryLinkSpec,
  type SensorModel,
  type RadarTypeSpec,
  type Target,
} from '../worker/core/sensor.ts';
import { buildSensorModel } from '../worker/core/sensor-model.ts';
import { Terrain } from '../worker/core/terrain.ts';

const root = join(import.meta.dirname, '..');
const catalog: RadarTypeSpec[] = JSON.parse(
  readFileSync(join(root, 'data/catalog/sensor-types.json'), 'utf8'),
);

const DEG = Math.PI / 180;
const R = 6_371_000;
const K = 4 / 3;
const RE = K * R;
const MAST_M = 30;
const LEVELS = [100, 245, 300, 400];
/** The polarisation worker/core/coverage.ts takes for the sea reflection (its LOBING_POLARIZATION). */
const POLARIZATION = 'vertical' as const;
/** Ground-distance step of the closed-form bands, m. */
const STEP_M = 100;

const DEFAULT: Target = { rcsM2: 2, fluctuation: 'swerling1', transponder: 'low-power' };
const STEADY: Target = { rcsM2: 2, fluctuation: 'swerling0', transponder: 'low-power' };
const HIGH: Target = { rcsM2: 2, fluctuation: 'swerling1', transponder: 'high-power' };

const km = (m: number) => (m / 1000).toFixed(1);
const nm = (m: number) => (m / 1852).toFixed(1);
const both = (m: number) => (m > 0 ? `${km(m)} km (${nm(m)} NM)` : 'not seen');

function hasLinks(spec: RadarTypeSpec): boolean {
  return 'interrogatorPowerW' in (spec.detection as unknown as Record<string, unknown>);
}

/** The targets a type's range depends on. */
function targetsOf(spec: RadarTypeSpec): { label: string; target: Target }[] {
  if (spec.kind === 'primary') {
    return [
      { label: 'default', target: DEFAULT },
      { label: 'steady 2 m²', target: STEADY },
    ];
  }
  if (hasLinks(spec)) {
    return [
      { label: 'default', target: DEFAULT },
      { label: 'high-power transponder', target: HIGH },
    ];
  }
  return [{ label: 'default (any transponder: reference form)', target: DEFAULT }];
}

/** The same type with no practical instrumented range: what the physics gives before the cap. */
function uncapped(spec: RadarTypeSpec): SensorModel {
  return buildSensorModel({ ...spec, instrumentedRangeNm: 10_000 }, `${spec.id} (uncapped)`);
}

/** Line-of-sight floor (m) over a smooth sphere of radius RE at ground arc s from an antenna ha above it. */
function sphereFloorM(s: number, ha: number): number {
  const s1 = RE * Math.acos(RE / (RE + ha));
  if (s <= s1) return 0;
  const c = Math.cos((s - s1) / RE);
  return c > 0 ? RE / c - RE : Infinity;
}

/** The sensor band over the flat sea, without or with the first-lobe lobing, as coverage.ts builds it. */
function bandOf(model: SensorModel, target: Target, lobing: boolean, maxRangeM: number): SensorBand {
  const profile = model.profile({ target, antennaAltM: MAST_M });
  const req = { antennaAltM: MAST_M, reM: RE };
  const land = sensorBand(profile, { ...req, maxRangeM, stepM: STEP_M });
  if (!lobing) return land;
  const voltage = (e: number) => Math.sqrt(model.patternGain(e, 0));
  const fMHz = model.frequencyMHz;
  return seaBand(profile, land, req, (s, h) =>
    firstLobeFactor(MAST_M, Math.max(0, h), s, RE, fMHz, POLARIZATION, voltage),
  );
}

/** Covered altitudes [lo, hi] (whole metres, as buildFootprint stores them) at band row i, or null. */
function coveredAt(band: SensorBand, i: number): [number, number] | null {
  const s = i * band.stepM;
  const lo = Math.ceil(Math.max(sphereFloorM(s, MAST_M), band.lo[i]));
  const hi = Math.floor(band.hi[i]);
  return lo <= hi ? [lo, hi] : null;
}

/** (a) Farthest ground distance at which altitude h is covered. */
function reachM(band: SensorBand, h: number): number {
  let edge = 0;
  for (let i = 0; i < band.lo.length; i++) {
    const c = coveredAt(band, i);
    if (c && c[0] <= h && h <= c[1]) edge = i * band.stepM;
  }
  return edge;
}

/** The highest altitude (m) of the sensor's band anywhere (4/3 earth, atmosphere, instrumented range). */
function bandTopM(band: SensorBand): { topM: number; atM: number } {
  let topM = 0;
  let atM = 0;
  for (let i = 0; i < band.hi.length; i++) {
    if (band.hi[i] > topM) {
      topM = band.hi[i];
      atM = i * band.stepM;
    }
  }
  return { topM, atM };
}

interface Strip {
  footprints: Footprint[];
  distance: Float32Array;
  width: number;
}

/** (b) End to end: computeFootprints on a geographic strip of flat sea, antenna in the middle on a 30 m mast. */
async function strip(list: { model: SensorModel; target: Target }[], multipath: boolean): Promise<Strip> {
  // On the equator the strip's row is itself a geodesic (elsewhere an eastward geodesic leaves a parallel); open
  // ocean, nearly 1000 km from the nearest land. Nothing real is implied.
  const cell = 30 / 3600;
  const lat0 = 0;
  const lon0 = -20;
  const metres = cell * 111_320 * Math.cos(lat0 * DEG);
  const half = Math.ceil(490_000 / metres);
  const width = 2 * half + 1;
  const height = 5;
  const geo: GridGeo = {
    width,
    height,
    originX: lon0 - (width / 2) * cell,
    originY: lat0 + (height / 2) * cell,
    pixelX: cell,
    pixelY: -cell,
    crs: WGS84_GEOGRAPHIC,
  };
  const data = new Float32Array(width * height);
  const terrain = Terrain.fromParts({ geo, data, warnings: [], sources: ['generated'] });
  const site = { id: 'buoy', name: 'Figure buoy', lon: lon0, lat: lat0, mastHeightM: MAST_M };
  const r = await computeFootprints(
    terrain,
    {
      grid: geo,
      ground: data,
      candidates: list.map((x) => ({ site, model: x.model, target: x.target })),
      kFactor: K,
      maxRangeM: 490_000,
      multipath,
    },
    inlineExecutor(terrain),
    { keepSiteFloors: true },
  );
  return { footprints: r.footprints, distance: r.siteFloors[0].distance, width };
}

function stripEdgeM(s: Strip, k: number, h: number): number {
  const fp = s.footprints[k];
  let edge = 0;
  for (let c = (s.width - 1) / 2 + 1; c < s.width; c++) {
    const i = 2 * s.width + c;
    if (fp.lo[i] <= h && h <= fp.hi[i]) edge = Math.max(edge, s.distance[i]);
  }
  return edge;
}

async function main(): Promise<void> {
  const out: string[] = [];
  const push = (s = '') => out.push(s);
  push('# Derived figures of the default catalog');
  push();
  push(
    `Computed by \`npx tsx bench/catalog-figures.ts\` with the product's code: k = 4/3, antenna ${MAST_M} m above a flat sea, ISA standard day, gaseous attenuation of the standard atmosphere unless marked free space.`,
  );
  push();

  const items: { spec: RadarTypeSpec; model: SensorModel; label: string; target: Target }[] = [];
  for (const spec of catalog) {
    const model = buildSensorModel(spec, spec.id);
    for (const { label, target } of targetsOf(spec)) items.push({ spec, model, label, target });
  }

  push('## Ranges, cone of silence, ceilings');
  push();
  push(
    '| type | target | free-space peak range R0 | limiting link | range at 0° | range at 2° | cone of silence from | flat-earth cosec² ceiling R0·sin(start) | highest altitude of the band (4/3 earth, no lobing) |',
  );
  push('|---|---|---|---|---|---|---|---|---|');
  for (const { spec, model, label, target } of items) {
    const p = model.profile({ target, antennaAltM: MAST_M });
    const pf = uncapped(spec).profile({ target, antennaAltM: MAST_M });
    const r0 = model.peakRangeM(target);
    const coneDeg = p.coneOfSilenceRad / DEG;
    const coneBy = Math.abs(coneDeg - spec.maxElevationDeg) < 1e-9 ? 'max elevation' : 'end of usable gain';
    const pat = spec.elevationPattern;
    const flatCeiling = pat.type === 'cosec2' ? `${km(r0 * Math.sin(pat.startDeg * DEG))} km` : '—';
    const top = bandTopM(bandOf(model, target, false, model.instrumentedRangeM));
    // A reference-form secondary has one range for both links: no link limits it.
    const link = hasLinks(spec) ? (p.limitingLink ?? '—') : '—';
    const at = (e: number) => {
      const capped = p.rangeM(e * DEG);
      const raw = pf.rangeM(e * DEG);
      // The two profiles' loss tables differ in reach (and so in resolution): equal within 0.1 % is equal.
      return Math.abs(capped / raw - 1) < 1e-3 ? both(capped) : `${both(capped)} [uncapped ${both(raw)}]`;
    };
    const cells = [
      spec.id,
      label,
      both(r0),
      link,
      at(0),
      at(2),
      `${coneDeg.toFixed(2)}° (${coneBy})`,
      flatCeiling,
      top.topM >= TOP_M
        ? `≥ ${km(TOP_M)} km (the band's search top)`
        : `${km(top.topM)} km at ${km(top.atM)} km`,
    ];
    push(`| ${cells.join(' | ')} |`);
  }
  push();
  push(
    'Range at 0° and 2°: as the product uses it (capped at the instrumented range); in brackets before the cap.',
  );
  push();

  push('## Specification points: the standard atmosphere taken out');
  push();
  for (const spec of catalog) {
    const d = spec.detection as unknown as Record<string, unknown>;
    if (!('referenceRangeNm' in d)) continue;
    const m = buildSensorModel(spec, spec.id);
    const rRef = nmToM(d.referenceRangeNm as number);
    const eRef = (d.referenceElevationDeg as number | undefined) ?? NaN;
    // The spec point's own target: its RCS and fluctuation (a secondary's reference form has no target).
    const own: Target = {
      rcsM2: (d.referenceRcsM2 as number | undefined) ?? 1,
      fluctuation: (d.referenceFluctuation as Target['fluctuation'] | undefined) ?? 'swerling1',
      transponder: 'low-power',
    };
    const fs = m.peakRangeM(own) * Math.sqrt(m.patternGain(eRef * DEG));
    // Rfs = R·10^(2A/40) for a primary (two-way loss 2A), R·10^(A/20) for a link (one-way A): sensor.ts.
    const lossDb = (spec.kind === 'primary' ? 40 : 20) * Math.log10(fs / rRef);
    push(
      `- ${spec.id}: ${nm(rRef)} NM at ${eRef}° in the standard atmosphere (antenna at sea level) = ${nm(fs)} NM in free space there: ${lossDb.toFixed(2)} dB ${spec.kind === 'primary' ? 'two-way' : 'one-way'} gaseous loss taken out.`,
    );
  }
  push();

  push('## Required SNR per pulse of the primaries (detection.ts, exact)');
  push();
  push('| type | Pd, Pfa, pulses | steady (Swerling 0) | Swerling 1 | difference | range ratio 10^(−Δ/40) |');
  push('|---|---|---|---|---|---|');
  for (const spec of catalog) {
    if (spec.kind !== 'primary') continue;
    const d = spec.detection as unknown as Record<string, number>;
    const pd = d.pd ?? d.referencePd ?? 0.8;
    const pfa = d.pfa ?? d.referencePfa ?? 1e-6;
    const n = d.hitsIntegrated ?? 1;
    const s0 = requiredSnrDb(pd, pfa, n, 'swerling0');
    const s1 = requiredSnrDb(pd, pfa, n, 'swerling1');
    push(
      `| ${spec.id} | ${pd}, ${pfa}, ${n} | ${s0.toFixed(2)} dB | ${s1.toFixed(2)} dB | ${(s1 - s0).toFixed(2)} dB | ${Math.pow(10, -(s1 - s0) / 40).toFixed(3)} |`,
    );
  }
  push();

  push('## SSR link budgets (free space, at the pattern peak)');
  push();
  push(
    '| type | transponder class | uplink budget before path loss | uplink range | downlink budget before path loss | downlink range | limiting link |',
  );
  push('|---|---|---|---|---|---|---|');
  for (const spec of catalog) {
    if (!hasLinks(spec)) continue;
    const d = spec.detection as SecondaryLinkSpec;
    for (const cls of ['low-power', 'high-power'] as const) {
      const x = TRANSPONDER_CLASSES[cls];
      const ac = x.antennaGainDbi - x.installationLossDb;
      // The budgets of sensor.ts's module header, written out with its exported helpers.
      const up = wattsToDbm(d.interrogatorPowerW) + d.antennaGainDbi - d.cableLossDb + ac - x.minTriggerDbm;
      const down =
        wattsToDbm(x.replyPowerW) + ac + d.antennaGainDbi - d.cableLossDb - d.receiverSensitivityDbm;
      const ru = linkRangeM(up, spec.frequencyMHz);
      const rd = linkRangeM(down, SSR_REPLY_MHZ);
      push(
        `| ${spec.id} | ${cls} | ${up.toFixed(2)} dB | ${both(ru)} | ${down.toFixed(2)} dB | ${both(rd)} | ${ru <= rd ? 'uplink' : 'downlink'} |`,
      );
    }
  }
  push();

  const list = items.map(({ model, target }) => ({ model, target }));
  for (const lobing of [false, true]) {
    const s = await strip(list, lobing);
    push(
      lobing
        ? '## Reach on a flat sea from a 30 m mast, with sea lobing (multipath "auto", open sea: the first lobe’s lower edge)'
        : '## Reach on a flat sea from a 30 m mast, without sea lobing (multipath "off")',
    );
    push();
    push(
      'Farthest ground distance at which the level is covered: (a) closed-form sphere floor × the sensor band · (b) end to end on a geographic strip of 30″ cells, km.',
    );
    push();
    push(
      `| type | target | ${LEVELS.map((fl) => `FL${fl} (${flToMetres(fl).toFixed(0)} m)`).join(' | ')} | altitudes covered at 60 NM ground distance |`,
    );
    push(`|---|---|${LEVELS.map(() => '---').join('|')}|---|`);
    items.forEach(({ spec, model, label, target }, k) => {
      const band = bandOf(model, target, lobing, model.instrumentedRangeM);
      const reach = LEVELS.map((fl) => {
        const h = flToMetres(fl);
        return `${both(reachM(band, h))} · ${km(stripEdgeM(s, k, h))}`;
      });
      const i60 = Math.round(nmToM(60) / STEP_M);
      const at60 = i60 < band.lo.length ? coveredAt(band, i60) : null;
      push(`| ${[spec.id, label, ...reach, at60 ? `${at60[0]}–${at60[1]} m` : 'nothing'].join(' | ')} |`);
    });
    push();
  }

  push('## How much the sea lobing raises the lowest covered altitude (closed form)');
  push();
  push('| type | target | largest rise | where (ground distance, lowest altitude without → with lobing) |');
  push('|---|---|---|---|');
  for (const { spec, model, label, target } of items) {
    const land = bandOf(model, target, false, model.instrumentedRangeM);
    const sea = bandOf(model, target, true, model.instrumentedRangeM);
    let best = 0;
    let at = -1;
    for (let i = 0; i < land.lo.length; i++) {
      const a = coveredAt(land, i);
      const b = coveredAt(sea, i);
      if (!a) continue;
      const rise = (b ? b[0] : a[1]) - a[0];
      if (rise > best) {
        best = rise;
        at = i;
      }
    }
    const where =
      at < 0
        ? '—'
        : `${km(at * STEP_M)} km: ${coveredAt(land, at)![0]} → ${coveredAt(sea, at)?.[0] ?? 'nothing'} m`;
    push(`| ${spec.id} | ${label} | ${best} m | ${where} |`);
  }
  push();

  push('Radio horizon of a 30 m antenna on the 4/3 earth (closed form, no sensor limits):');
  push();
  for (const fl of LEVELS) {
    const h = flToMetres(fl);
    const d = RE * (Math.acos(RE / (RE + MAST_M)) + Math.acos(RE / (RE + h)));
    push(`- FL${fl}: ${both(d)}`);
  }
  push();
  push(
    `Targets: default = ${describeTarget(DEFAULT)}; steady = ${describeTarget(STEADY)}; high-power = ${describeTarget(HIGH)}.`,
  );
  push(
    `Instrumented ranges: ${catalog.map((t) => `${t.id} ${t.instrumentedRangeNm} NM (${km(nmToM(t.instrumentedRangeNm))} km)`).join('; ')}.`,
  );
  console.log(out.join('\n'));
}

await main();
