/** `airshade diagram`: the vertical coverage diagram of one sensor on one site along one azimuth, as SVG. */
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { diagramData } from '../core/diagram.ts';
import { dayText, studyConventions, studyDay, studyTarget } from '../io/study.ts';
import { buildSensorModel } from '../core/sensor-model.ts';
import { renderDiagramSvg } from '../io/diagram-svg.ts';
import { applyColdDay, coldDayHelp, numberArg, one, parseArgs, required, weatherHelp } from './args.ts';
import { writeOutputFile } from './files.ts';
import { memoryLimitArg } from './budget-check.ts';
import { readTerrainWithin } from './dem-open.ts';
import { checkOutput } from './out-check.ts';
import { SESSION_OPTIONS, sessionHelp } from './session.ts';
import { workLimitArg } from './work-check.ts';
import { scenarioProvenance } from './provenance.ts';
import { loadScenario } from './scenario.ts';

export const DIAGRAM_HELP = `airshade diagram — vertical coverage diagram of one sensor on one site

Usage:
  airshade diagram SCENARIO.json --site ID --type ID --azimuth DEG --out FILE.svg
                   [--units metric|aviation] [--weather] [--cold-day] [--max-range-km R] [--debug]

Draws, along the geodesic radial at the azimuth (degrees clockwise from true north), the terrain profile, the
terrain shadow and line-of-sight floor, the sensor's detection envelope on the effective earth, the cone of
silence and the scenario's flight levels, as a range–height chart (altitude above mean sea level against
ground range).

Options:
${weatherHelp(19)}
${coldDayHelp(19)}
${sessionHelp(19)}
`;

const SPEC = {
  site: { value: true },
  type: { value: true },
  azimuth: { value: true },
  out: { value: true },
  ...SESSION_OPTIONS,
  units: { value: true },
  weather: {},
  'cold-day': {},
  'max-range-km': { value: true },
  debug: {},
  help: {},
} as const;

export async function diagramCommand(argv: readonly string[], log: (s: string) => void): Promise<number> {
  const p = parseArgs(argv, SPEC, 'diagram');
  if (p.flags.has('help')) {
    log(DIAGRAM_HELP);
    return 0;
  }
  if (p.positional.length !== 1) {
    throw new InputError(
      'airshade diagram',
      p.positional.length === 0 ? 'no scenario file' : `${p.positional.length} positional arguments`,
      'one SCENARIO.json (see --help)',
    );
  }
  const siteId = required(p, 'site', 'the id of a site in the scenario');
  const typeId = required(p, 'type', 'the id of a sensor type in the scenario');
  const azimuthDeg = numberArg(
    'azimuth',
    required(p, 'azimuth', 'an azimuth in degrees'),
    -360,
    360,
    'an azimuth in degrees clockwise from true north (0–360)',
  );
  const outPath = required(p, 'out', 'the output SVG path');
  const unitsText = one(p, 'units') ?? 'metric';
  if (unitsText !== 'metric' && unitsText !== 'aviation')
    throw new InputError('--units', JSON.stringify(unitsText), 'metric (km, m) or aviation (NM, ft)');
  const rangeText = one(p, 'max-range-km');
  const maxRangeM =
    rangeText === undefined
      ? undefined
      : numberArg('max-range-km', rangeText, 1, 2000, 'a range in km from 1 to 2000') * 1000;
  const memoryLimit = memoryLimitArg(p);
  // One radial: far below any time limit, but a bad --max-work-min is still named.
  workLimitArg(p);
  const loaded = await loadScenario(p.positional[0], {
    allowOutsidePaths: p.flags.has('allow-outside-paths'),
  });
  checkOutput(outPath, 'file', [loaded.file, ...loaded.terrainPaths]);
  const s = loaded.scenario;
  applyColdDay(p, s);
  const site = s.sites.find((f) => f.properties.id === siteId);
  if (!site) {
    throw new InputError(
      '--site',
      JSON.stringify(siteId),
      `the id of a site in ${loaded.file} (${s.sites
        .slice(0, 8)
        .map((f) => f.properties.id)
        .join(', ')}${s.sites.length > 8 ? ', …' : ''})`,
    );
  }
  const ti = s.sensorTypes.findIndex((t) => t.id === typeId);
  if (ti < 0)
    throw new InputError(
      '--type',
      JSON.stringify(typeId),
      `the id of a sensor type in ${loaded.file} (${s.sensorTypes.map((t) => t.id).join(', ')})`,
    );
  const model = buildSensorModel(s.sensorTypes[ti], loaded.locate(['sensorTypes', ti]));
  const { terrain } = await readTerrainWithin(loaded.terrainPaths, memoryLimit);
  const [lon, lat] = site.geometry.coordinates;
  for (const w of model.warnings) log(`warning: ${w}`);
  const data = diagramData(
    terrain,
    { lon, lat, mastM: site.properties.mastHeightM, tiltDeg: site.properties.tiltDeg },
    model,
    {
      azimuthDeg: ((azimuthDeg % 360) + 360) % 360,
      kFactor: s.earth.kFactor,
      maxRangeM,
      target: studyTarget(s),
      day: studyDay(s),
      multipath: s.multipath === 'auto',
      weather: p.flags.has('weather'),
      flightLevels: s.flightLevels,
    },
  );
  const title = `${site.properties.name} — ${model.spec.name} — azimuth ${data.azimuthDeg.toFixed(1)}°`;
  const provenance = scenarioProvenance(
    'diagram',
    p,
    SPEC,
    loaded,
    studyConventions({ loaded, models: new Map([[model.spec.id, model]]) }, s.flightLevels),
  );
  writeOutputFile(outPath, renderDiagramSvg(data, { title, units: unitsText, provenance }));
  const shadowKm = data.shadow.reduce((a, r) => a + (r.toM - r.fromM), 0) / 1000;
  log(
    [
      `diagram written to ${outPath}`,
      `  ${title}`,
      `  antenna ${data.antennaAltM.toFixed(0)} m AMSL, tilt ${data.sensor.tiltDeg}°; ${shadowKm.toFixed(1)} km of the ${(data.maxRangeM / 1000).toFixed(0)} km radial lie in terrain shadow at ground level`,
      `  target: ${data.sensor.target}; day: ${dayText(data.day)}; k = ${+data.kFactor.toFixed(4)}`,
      `  sensor: ${data.sensor.convention}`,
      `  ${data.cone.maxElevationDeg >= 90 ? 'no cone of silence: overhead, the elevation pattern alone limits the range' : `cone of silence from ${data.cone.maxElevationDeg.toFixed(1)}°`}${data.seaLobingRows > 0 ? '; over sea the lower edge is the first lobe’s' : ''}`,
    ].join('\n'),
  );
  log(CAUTION);
  return 0;
}
