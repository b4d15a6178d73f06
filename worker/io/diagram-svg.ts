/**
 * A vertical coverage diagram as one standalone SVG document (a string; no DOM needed), from `diagramData`.
 *
 * Layers, bottom to top: the sensor's detection envelope (its own limits, no terrain), the radar shadow (between
 * the terrain and the line-of-sight floor), the terrain, the line-of-sight floor, the cone of silence, flight
 * levels, the antenna. A receiver (ADS-B, multilateration) has a reception envelope instead, and no cone of
 * silence. Scales and path strings come from d3-scale and d3-shape (both DOM-free); colours from the open
 * viridis and cividis ramps of d3-scale-chromatic. Every piece of user text is escaped.
 */
import { max, min } from 'd3-array';
import { scaleLinear } from 'd3-scale';
import { interpolateCividis, interpolateViridis } from 'd3-scale-chromatic';
import { area, line } from 'd3-shape';
import { CAUTION } from '../../shared/caution.ts';
import { InputError } from '../../shared/errors.ts';
import { isReceiverKind } from '../../shared/sensor-kinds.ts';
import { FT_M, NM_M } from '../../shared/units.ts';
import type { DiagramData } from '../core/diagram.ts';
import type { Provenance } from './provenance.ts';

export interface DiagramSvgOptions {
  /** Heading of the chart (user text: escaped). */
  title: string;
  /** 'metric': km and m; 'aviation': NM and ft. Flight levels are marked in both. */
  units: 'metric' | 'aviation';
  /** Size in CSS pixels (default 960 × 560). */
  width?: number;
  height?: number;
  /** Top of the altitude axis, m AMSL (default: above the highest flight level, terrain and envelope). */
  topM?: number;
  /** Written as JSON (escaped) in the document's <metadata> element (io/provenance.ts). */
  provenance?: Provenance;
}

const PALETTE = {
  text: '#222222',
  muted: '#555555',
  grid: '#e9e9e9',
  axis: '#666666',
  terrain: interpolateCividis(0.38),
  terrainEdge: interpolateCividis(0.18),
  shadow: interpolateCividis(0.08),
  envelope: interpolateViridis(0.62),
  envelopeEdge: interpolateViridis(0.5),
  floor: interpolateViridis(0.02),
  cone: interpolateViridis(0.3),
  flightLevel: '#7d7d7d',
  unknown: '#9a9a9a',
  antenna: interpolateViridis(0.02),
};
const FONT = "system-ui, 'Helvetica Neue', Arial, sans-serif";
/** Shadow is drawn where the floor stands this far above the terrain (as in diagram.ts). */
const SHADOW_TOLERANCE_M = 0.5;
const CAPTION_PX = 10.5;

/** Escapes text for XML content and attribute values; drops characters XML 1.0 does not allow. */
export function escapeXml(s: string): string {
  return (
    String(s)
      // eslint-disable-next-line no-control-regex
      .replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/g, '')
      .replace(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g, '\uFFFD')
      .replace(/&/g, '&amp;')
      .replace(/</g, '&lt;')
      .replace(/>/g, '&gt;')
      .replace(/"/g, '&quot;')
      .replace(/'/g, '&apos;')
  );
}

/** Two decimals: short path strings, sub-pixel exact. */
function r2(v: number): number {
  return Math.round(v * 100) / 100;
}

/** A small stable hash, so ids stay unique when several diagrams share one page. */
function idSuffix(s: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return (h >>> 0).toString(36);
}

interface LegendItem {
  label: string;
  swatch: string;
}

export function renderDiagramSvg(data: DiagramData, opts: DiagramSvgOptions): string {
  const width = opts.width ?? 960;
  const height = opts.height ?? 560;
  if (!(width >= 320 && width <= 10_000)) {
    throw new InputError('diagram width', String(opts.width), 'a width from 320 to 10000 pixels');
  }
  if (!(height >= 240 && height <= 10_000)) {
    throw new InputError('diagram height', String(opts.height), 'a height from 240 to 10000 pixels');
  }
  if (opts.units !== 'metric' && opts.units !== 'aviation') {
    throw new InputError('diagram units', String(opts.units), "'metric' (km, m) or 'aviation' (NM, ft)");
  }
  const aviation = opts.units === 'aviation';
  const xUnitM = aviation ? NM_M : 1000;
  const yUnitM = aviation ? FT_M : 1;
  const xUnit = aviation ? 'NM' : 'km';
  const yUnit = aviation ? 'ft' : 'm';
  const uid = idSuffix(`${opts.title}|${data.lon}|${data.lat}|${data.azimuthDeg}|${data.sensor.id}`);
  const clipId = `airshade-plot-${uid}`;
  const hatchId = `airshade-unknown-${uid}`;
  const out: string[] = [];
  const n = data.rangesM.length;

  // --- Legend first: its rows decide how tall the plot can be. ---
  const k = data.kFactor;
  // A receiver (ADS-B, multilateration) hears the aircraft's 1090 MHz transmissions: no echo, no RCS, no SSR
  // links, and no cone of silence beyond its pattern (worker/core/receiver.ts: coneOfSilenceRad = 90°).
  const receiver = isReceiverKind(data.sensor.kind);
  const legend: LegendItem[] = [
    { label: 'Terrain', swatch: 'terrain' },
    {
      label: receiver ? 'Shadow (below line of sight)' : 'Radar shadow (below line of sight)',
      swatch: 'shadow',
    },
    {
      // A secondary's range comes from its link budget, not from the target's echo: no RCS to name.
      label:
        data.sensor.kind === 'primary'
          ? `Detection envelope (RCS ${fmtNumber(data.sensor.rcsM2)} m²)`
          : receiver
            ? `Reception envelope (1090 MHz, ${data.sensor.target})`
            : 'Detection envelope (both SSR links)',
      swatch: 'envelope',
    },
    { label: 'Line-of-sight floor', swatch: 'floor' },
    ...(receiver
      ? []
      : [{ label: `Cone of silence (above ${fmtNumber(data.cone.maxElevationDeg)}°)`, swatch: 'cone' }]),
    { label: 'Flight level', swatch: 'fl' },
    { label: 'Antenna', swatch: 'antenna' },
  ];
  if (data.unknown.length > 0) legend.push({ label: 'Terrain unknown', swatch: 'unknown' });
  const left = 74;
  const right = width - 26;
  const legendRows: { item: LegendItem; x: number; row: number }[] = [];
  {
    let x = left;
    let row = 0;
    for (const item of legend) {
      const w = 22 + item.label.length * 6.4 + 18;
      if (x + w > right && x > left) {
        row++;
        x = left;
      }
      legendRows.push({ item, x, row });
      x += w;
    }
  }
  const legendRowCount = (legendRows.at(-1)?.row ?? 0) + 1;
  // Captions: how to read the chart, and the caution; wrapped to the plot width.
  const kText = Math.abs(k - 4 / 3) < 5e-4 ? '4/3' : fmtNumber(k, 4);
  const note =
    `Altitude above mean sea level against ground distance along the earth's surface: a flat chart of curved ` +
    `geometry; earth curvature (effective earth k = ${kText}) is drawn into the curves, not the axes. ` +
    `Target: ${data.sensor.target}. Sensor: ${data.sensor.convention}. Flight levels at their true altitude ` +
    `(${data.day.qnhHpa === 1013.25 && data.day.isaDeviationC === 0 ? 'ISA standard day' : `QNH ${data.day.qnhHpa} hPa, ISA ${data.day.isaDeviationC >= 0 ? '+' : '−'}${Math.abs(data.day.isaDeviationC)} °C`}). ` +
    `The envelope is searched up to ${fmtNumber(data.searchTopM / 1000, 0)} km: a flat top there is that search limit, not the sensor's.` +
    (data.seaLobingRows > 0
      ? ' Over sea the envelope’s lower edge is the first interference lobe’s (sea reflection, two-ray model); higher lobes and their nulls are not drawn.'
      : '');
  // The caution in full (shared/caution.ts), then the refraction this chart assumed.
  const caution = `${CAUTION} Refraction assumed here: effective earth k = ${kText}.`;
  const captionChars = Math.max(30, Math.floor((right - left) / (CAPTION_PX * 0.56)));
  const captionLines = [
    ...wrap(note, captionChars).map((t) => ({ t, bold: false })),
    ...wrap(caution, captionChars).map((t) => ({ t, bold: true })),
  ];
  // Heading: the title and a line of facts, each wrapped to the width (a narrow chart, as the app's side panel
  // shows, would otherwise cut them off at its right edge).
  const antennaText = aviation
    ? `${fmtNumber(data.antennaAltM / FT_M, 0)} ft AMSL (mast ${fmtNumber(data.mastM / FT_M, 0)} ft)`
    : `${fmtNumber(data.antennaAltM, 0)} m AMSL (mast ${fmtNumber(data.mastM, 0)} m)`;
  const sub =
    `Azimuth ${data.azimuthDeg.toFixed(1).padStart(5, '0')}° · antenna ${antennaText} · ` +
    `sensor ${data.sensor.id} (${data.sensor.kind})${data.sensor.weather ? ' in rain' : ''} · ` +
    `tilt ${fmtNumber(data.sensor.tiltDeg)}° · ` +
    `site ${fmtLonLat(data.lon, data.lat)}`;
  const titleLines = wrap(opts.title, Math.max(20, Math.floor((width - left - 10) / (17 * 0.56))));
  const subLines = wrap(sub, Math.max(30, Math.floor((width - left - 10) / (12 * 0.52))));
  const top = 64 + 20 * (titleLines.length - 1) + 15 * (subLines.length - 1);
  const captionH = captionLines.length * 14 + 12;
  const bottom = height - (46 + legendRowCount * 20 + captionH);
  if (bottom - top < 60) {
    throw new InputError(
      'diagram height',
      String(height),
      'a taller chart (the legend leaves no room to plot)',
    );
  }

  // --- Scales (metres inside; display units only for ticks). ---
  const lowest = Math.min(0, min(data.terrainM) ?? 0);
  const topM =
    opts.topM ??
    Math.max(
      (max(data.flightLevels, (f) => f.altitudeM) ?? 0) * 1.08,
      (max(data.terrainM) ?? 0) * 1.15 + 100,
      (max(data.envelope.hiM) ?? 0) * 1.05,
      data.antennaAltM + 100,
    );
  if (!(topM > lowest)) {
    throw new InputError('diagram topM', String(opts.topM), `an altitude above ${lowest} m`);
  }
  const yDisp = scaleLinear()
    .domain([lowest / yUnitM, topM / yUnitM])
    .nice()
    .range([bottom, top]);
  const [yLoD, yHiD] = yDisp.domain();
  const yLoM = yLoD * yUnitM;
  const yHiM = yHiD * yUnitM;
  const xDisp = scaleLinear()
    .domain([0, data.maxRangeM / xUnitM])
    .range([left, right]);
  const X = (m: number) => r2(xDisp(m / xUnitM));
  // Not clamped: the clip path trims what leaves the plot, and clamping would bend lines that cross its edge.
  const Y = (m: number) => r2(yDisp(m / yUnitM));
  const idx = Array.from({ length: n }, (_, i) => i);
  const R = data.rangesM;
  const Tm = data.terrainM;
  const F = data.floorM;
  const fin = (v: number) => v === v;

  // --- Document head. ---
  const title = escapeXml(opts.title);
  const subTop = 46 + 20 * (titleLines.length - 1);
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" ` +
      `role="img" aria-labelledby="airshade-title-${uid}" aria-describedby="airshade-desc-${uid}" ` +
      `font-family="${escapeXml(FONT)}">`,
    `<title id="airshade-title-${uid}">${title}</title>`,
    // The caution whole in one element, for readers of the file (the caption below wraps it into lines).
    `<desc id="airshade-desc-${uid}">${escapeXml(CAUTION)}</desc>`,
    // Which inputs and conventions the chart was drawn from, as JSON text.
    ...(opts.provenance
      ? [`<metadata id="airshade-provenance-${uid}">${escapeXml(JSON.stringify(opts.provenance))}</metadata>`]
      : []),
    '<defs>',
    `<clipPath id="${clipId}"><rect x="${left}" y="${top}" width="${r2(right - left)}" height="${r2(bottom - top)}"/></clipPath>`,
    `<pattern id="${hatchId}" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">` +
      `<line x1="0" y1="0" x2="0" y2="6" stroke="${PALETTE.unknown}" stroke-width="1.2"/></pattern>`,
    '</defs>',
    `<rect width="${width}" height="${height}" fill="#ffffff"/>`,
    ...titleLines.map(
      (t, i) =>
        `<text x="${left}" y="${26 + 20 * i}" font-size="17" font-weight="600" fill="${PALETTE.text}">${escapeXml(t)}</text>`,
    ),
  );
  for (const [i, t] of subLines.entries())
    out.push(
      `<text x="${left}" y="${subTop + 15 * i}" font-size="12" fill="${PALETTE.muted}">${escapeXml(t)}</text>`,
    );

  // --- Grid and axes. ---
  const yTicks = yDisp.ticks(8);
  const yFmt = yDisp.tickFormat(8, ',~f');
  const xTicks = xDisp.ticks(10);
  const xFmt = xDisp.tickFormat(10, ',~f');
  out.push(`<g stroke="${PALETTE.grid}" stroke-width="1">`);
  for (const t of yTicks)
    out.push(`<line x1="${left}" x2="${right}" y1="${r2(yDisp(t))}" y2="${r2(yDisp(t))}"/>`);
  for (const t of xTicks)
    out.push(`<line x1="${r2(xDisp(t))}" x2="${r2(xDisp(t))}" y1="${top}" y2="${bottom}"/>`);
  out.push('</g>');

  // --- Data layers, clipped to the plot. ---
  out.push(`<g clip-path="url(#${clipId})">`);
  const env = data.envelope;
  const envIdx = Array.from({ length: env.rangesM.length }, (_, i) => i);
  const envArea = area<number>()
    .defined((i) => fin(env.loM[i]) && fin(env.hiM[i]))
    .x((i) => X(env.rangesM[i]))
    .y0((i) => Y(env.loM[i]))
    .y1((i) => Y(env.hiM[i]));
  const envTop = line<number>()
    .defined((i) => fin(env.hiM[i]))
    .x((i) => X(env.rangesM[i]))
    .y((i) => Y(env.hiM[i]));
  pushPath(out, envArea(envIdx), `fill="${PALETTE.envelope}" fill-opacity="0.35" stroke="none"`);
  pushPath(out, envTop(envIdx), `fill="none" stroke="${PALETTE.envelopeEdge}" stroke-width="1.4"`);

  const shadowArea = area<number>()
    .defined((i) => fin(F[i]) && fin(Tm[i]) && F[i] - Tm[i] > SHADOW_TOLERANCE_M)
    .x((i) => X(R[i]))
    .y0((i) => Y(Tm[i]))
    .y1((i) => Y(F[i]));
  pushPath(out, shadowArea(idx), `fill="${PALETTE.shadow}" fill-opacity="0.45" stroke="none"`);

  const terrainArea = area<number>()
    .defined((i) => fin(Tm[i]))
    .x((i) => X(R[i]))
    .y0(r2(bottom) + 1)
    .y1((i) => Y(Tm[i]));
  pushPath(
    out,
    terrainArea(idx),
    `fill="${PALETTE.terrain}" stroke="${PALETTE.terrainEdge}" stroke-width="0.8" stroke-linejoin="round"`,
  );

  for (const u of data.unknown) {
    const x0 = X(Math.max(0, u.fromM - data.stepM / 2));
    const x1 = X(Math.min(data.maxRangeM, u.toM + data.stepM / 2));
    out.push(
      `<rect x="${x0}" y="${top}" width="${r2(Math.max(0.5, x1 - x0))}" height="${r2(bottom - top)}" ` +
        `fill="url(#${hatchId})" stroke="none"/>`,
    );
  }

  const floorLine = line<number>()
    .defined((i) => fin(F[i]))
    .x((i) => X(R[i]))
    .y((i) => Y(F[i]));
  pushPath(
    out,
    floorLine(idx),
    `fill="none" stroke="${PALETTE.floor}" stroke-width="1.5" stroke-linejoin="round"`,
  );

  const cone = data.cone;
  const coneIdx = Array.from({ length: cone.rangesM.length }, (_, i) => i);
  const coneLine = line<number>()
    .x((i) => X(cone.rangesM[i]))
    .y((i) => Y(cone.altitudesM[i]));
  const coneEdge = receiver ? null : coneLine(coneIdx);
  if (coneEdge) {
    const topY = Y(cone.altitudesM[cone.altitudesM.length - 1]);
    out.push(
      `<path d="${coneEdge}L${X(0)},${topY}Z" fill="${PALETTE.cone}" fill-opacity="0.08" stroke="none"/>`,
      `<path d="${coneEdge}" fill="none" stroke="${PALETTE.cone}" stroke-width="1.3" stroke-dasharray="6 4"/>`,
    );
  }
  out.push('</g>');

  // --- Flight levels (labelled at the far end, with a white halo for legibility). ---
  out.push(`<g font-size="11" fill="${PALETTE.flightLevel}">`);
  for (const f of data.flightLevels) {
    if (f.altitudeM < yLoM || f.altitudeM > yHiM) continue;
    const y = Y(f.altitudeM);
    out.push(
      `<line x1="${left}" x2="${right}" y1="${y}" y2="${y}" stroke="${PALETTE.flightLevel}" stroke-width="0.9" stroke-dasharray="2 3"/>`,
      `<text x="${r2(right - 4)}" y="${r2(y - 3)}" text-anchor="end" stroke="#ffffff" stroke-width="3" ` +
        `paint-order="stroke">${escapeXml(f.label)}</text>`,
    );
  }
  out.push('</g>');

  // --- Antenna marker. ---
  {
    const ax = X(0);
    const ay = Y(data.antennaAltM);
    out.push(
      `<path d="M${ax},${r2(ay - 1)}L${r2(ax - 5)},${r2(ay - 10)}L${r2(ax + 5)},${r2(ay - 10)}Z" ` +
        `fill="${PALETTE.antenna}" stroke="#ffffff" stroke-width="0.8"/>`,
    );
  }

  // --- Axes. ---
  out.push(`<g stroke="${PALETTE.axis}" stroke-width="1" fill="none">`);
  out.push(`<rect x="${left}" y="${top}" width="${r2(right - left)}" height="${r2(bottom - top)}"/>`);
  for (const t of yTicks)
    out.push(`<line x1="${left - 5}" x2="${left}" y1="${r2(yDisp(t))}" y2="${r2(yDisp(t))}"/>`);
  for (const t of xTicks)
    out.push(`<line x1="${r2(xDisp(t))}" x2="${r2(xDisp(t))}" y1="${bottom}" y2="${bottom + 5}"/>`);
  out.push('</g>');
  out.push(`<g font-size="11" fill="${PALETTE.text}">`);
  for (const t of yTicks) {
    out.push(`<text x="${left - 8}" y="${r2(yDisp(t) + 4)}" text-anchor="end">${escapeXml(yFmt(t))}</text>`);
  }
  for (const t of xTicks) {
    out.push(
      `<text x="${r2(xDisp(t))}" y="${bottom + 18}" text-anchor="middle">${escapeXml(xFmt(t))}</text>`,
    );
  }
  out.push('</g>');
  out.push(
    `<text x="${r2((left + right) / 2)}" y="${bottom + 36}" text-anchor="middle" font-size="12" fill="${PALETTE.text}">` +
      `Ground range along the radial (${xUnit})</text>`,
    `<text transform="translate(16 ${r2((top + bottom) / 2)}) rotate(-90)" text-anchor="middle" font-size="12" ` +
      `fill="${PALETTE.text}">Altitude AMSL (${yUnit})</text>`,
  );

  // --- Legend. ---
  const legendTop = bottom + 52;
  out.push(`<g font-size="11" fill="${PALETTE.text}">`);
  for (const { item, x, row } of legendRows) {
    const y = legendTop + row * 20;
    out.push(
      swatch(item.swatch, x, y, hatchId),
      `<text x="${r2(x + 22)}" y="${y + 4}">${escapeXml(item.label)}</text>`,
    );
  }
  out.push('</g>');

  // --- Captions. ---
  captionLines.forEach(({ t, bold }, i) => {
    const y = height - 10 - (captionLines.length - 1 - i) * 14;
    out.push(
      `<text x="${left}" y="${y}" font-size="${CAPTION_PX}"${bold ? ' font-weight="600"' : ''} ` +
        `fill="${PALETTE.muted}">${escapeXml(t)}</text>`,
    );
  });
  out.push('</svg>');
  return out.join('\n') + '\n';
}

/** Greedy word wrap to at most `width` characters a line (text widths are estimated: no DOM to measure). */
function wrap(text: string, width: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(' ')) {
    if (line && line.length + 1 + word.length > width) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(line);
  return lines;
}

function pushPath(out: string[], d: string | null, attrs: string): void {
  if (d) out.push(`<path d="${d}" ${attrs}/>`);
}

function swatch(kind: string, x: number, y: number, hatchId: string): string {
  const box = (fill: string, extra = '') =>
    `<rect x="${x}" y="${y - 5}" width="16" height="10" fill="${fill}" ${extra}/>`;
  const stroke = (color: string, extra = '') =>
    `<line x1="${x}" x2="${x + 16}" y1="${y}" y2="${y}" stroke="${color}" ${extra}/>`;
  switch (kind) {
    case 'terrain':
      return box(PALETTE.terrain, `stroke="${PALETTE.terrainEdge}" stroke-width="0.8"`);
    case 'shadow':
      return box(PALETTE.shadow, 'fill-opacity="0.45"');
    case 'envelope':
      return box(PALETTE.envelope, `fill-opacity="0.35" stroke="${PALETTE.envelopeEdge}" stroke-width="1"`);
    case 'floor':
      return stroke(PALETTE.floor, 'stroke-width="1.5"');
    case 'cone':
      return stroke(PALETTE.cone, 'stroke-width="1.3" stroke-dasharray="6 4"');
    case 'fl':
      return stroke(PALETTE.flightLevel, 'stroke-width="0.9" stroke-dasharray="2 3"');
    case 'antenna':
      return `<path d="M${x + 8},${y + 5}L${x + 3},${y - 4}L${x + 13},${y - 4}Z" fill="${PALETTE.antenna}"/>`;
    default:
      return box(`url(#${hatchId})`, `stroke="${PALETTE.unknown}" stroke-width="0.8"`);
  }
}

/** A number for captions: up to `digits` decimals, trailing zeros dropped. */
function fmtNumber(v: number, digits = 2): string {
  return String(Number(v.toFixed(digits)));
}

function fmtLonLat(lon: number, lat: number): string {
  const ns = lat >= 0 ? 'N' : 'S';
  const ew = lon >= 0 ? 'E' : 'W';
  return `${Math.abs(lat).toFixed(4)}° ${ns}, ${Math.abs(lon).toFixed(4)}° ${ew}`;
}
