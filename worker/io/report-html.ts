/**
 * The coverage report for a safety case as one self-contained HTML document (a string; no DOM, no Node): the
 * scenario and its provenance, the assumptions the results hold under, a map per flight level and the network
 * floor (each with its key, a scale bar in km and NM, a north arrow, the volumes' outlines), the per-volume table,
 * the single-site outage (N−1) table, an optional plan, and the caution on the cover, in every printed page's
 * footer and at the end.
 *
 * Self-contained: images are PNG data URIs, styles inline, no script; a Content-Security-Policy meta element
 * (`default-src 'none'; img-src data:; style-src 'unsafe-inline'`) stops any load from outside. Every text taken
 * from input is escaped (io/diagram-svg.ts's escapeXml), and the markup is also well-formed XML (void elements
 * closed, only XML's named entities), so a plain XML parser can check it. Print: A4 portrait by default (A3 on
 * request), table rows never split, a page per map, table heads repeated.
 *
 * Maps: the images are on Web Mercator rows (worker/io/render.ts), so they stretch linearly between the bounds, and
 * every vector (outlines, coast, sites, graticule) is placed with the spherical Mercator of EPSG:3857:
 * x = R(λ − λ0), y = R ln tan(π/4 + φ/2); its scale factor is sec φ in every direction (Snyder, Map Projections —
 * A Working Manual, USGS Professional Paper 1395, 1987, §7), so the scale bar is drawn true at its own latitude and
 * says which. Longitudes are placed within ±180° of the map's middle (worker/core/terrain.ts `nearLon`, the rule
 * the terrain, the sites and the volumes' cells follow), so on a study across 180° a vertex or site given as
 * −179.8° is drawn east of 180°, beside its neighbours, not at the map's other edge.
 */
import type { MultiPolygonCoords } from '../core/contour.ts';
import type { SiteLoss } from '../core/outage.ts';
import type { VolumeLevelStats } from '../core/volumes.ts';
import type { MlatReportSection } from './mlat-figures.ts';
import type { StudyConventions } from './study.ts';
import type { Bounds } from './render.ts';
import { NM_M } from '../../shared/units.ts';
import { nearLon } from '../core/terrain.ts';
import { escapeXml } from './diagram-svg.ts';
import type { Provenance } from './provenance.ts';
import type { ReportImage, ReportLegendEntry, ReportMap } from './report-maps.ts';

export type { ReportImage, ReportLegendEntry, ReportMap } from './report-maps.ts';

export interface ReportVolume {
  id: string;
  name: string;
  polygon:
    { type: 'Polygon'; coordinates: number[][][] } | { type: 'MultiPolygon'; coordinates: number[][][][] };
  flMin: number;
  flMax: number;
  altitudeBand?: { reference: 'amsl' | 'agl'; minFt: number; maxFt: number };
  requiredFold: { primary?: number; secondary?: number; any?: number; adsb?: number; mlat?: number };
  weight?: number;
}

export interface ReportSite {
  id: string;
  name: string;
  lon: number;
  lat: number;
  mastHeightM: number;
  /** The sensor types this site carries in the network. */
  typeIds: string[];
}

/** A plan.json of `airshade plan`, as far as the report shows it. */
export interface ReportPlan {
  /** The file as the user named it. */
  file: string;
  /**
   * Where the plan was made, when not by `airshade plan` into `file` (the app's Plan panel): one sentence, shown
   * instead of the file's.
   */
  origin?: string;
  mode?: string;
  cost: number;
  lowerBound: number;
  gapPct: number;
  method?: string;
  demandMet?: boolean;
  solverStop?: string | null;
  budget?: number;
  entries: { siteId: string; typeId: string; cost: number }[];
  volumes: VolumeLevelStats[];
  unmeetable?: {
    volumeId: string;
    volumeName?: string;
    kind: string;
    required: number;
    achievable: number;
  }[];
  /**
   * When volumes bound the multilateration accuracy: the share of the bounded volume-levels (by demand weight) the
   * plan meets, the share no allowed receivers can meet, and the receivers it added for accuracy alone.
   */
  mlatAccuracy?: {
    metPct: number;
    unmeetablePct: number;
    addedForAccuracy: { siteId: string; typeId: string }[];
  };
}

/** The multilateration fix's accuracy per volume that bounds it, at each level of its band, and its N−1 table. */
export type ReportMlat = MlatReportSection;

export interface ReportModel {
  scenarioName: string;
  provenance: Provenance;
  conventions: StudyConventions;
  network: { label: string; weatherMode: boolean };
  /** The network's sites (with the types each carries). */
  sites: ReportSite[];
  volumes: ReportVolume[];
  warnings: string[];
  /** Lon/lat extent of every map. */
  bounds: Bounds;
  /** The coastline (lon/lat polygons), drawn on every map. */
  coast?: MultiPolygonCoords;
  maps: ReportMap[];
  volumeStats: VolumeLevelStats[];
  /** Each site's outage, worst first (core/outage.ts outageTable). */
  outage: SiteLoss[];
  plan?: ReportPlan;
  /** Multilateration accuracy, when the network has mlat receivers (worker/cli/mlat-outputs.ts figures). */
  mlat?: ReportMlat;
  caution: string;
  /** Page size of the print (default A4). */
  paper?: 'A4' | 'A3';
}

// ---------------------------------------------------------------------------------------------------------------
// Small helpers

const esc = (s: string | number) => escapeXml(String(s));
const DEG = Math.PI / 180;
/** Mean earth radius (IUGG, the one @turf uses), for the scale bar. */
const SCALE_RADIUS_KM = 6371.0088;
const mercY = (lat: number) => Math.log(Math.tan(Math.PI / 4 + (lat * DEG) / 2));
const invMercY = (y: number) => (2 * Math.atan(Math.exp(y)) - Math.PI / 2) / DEG;

/** Width of every map's frame in SVG units; the height follows from the bounds. */
export const MAP_WIDTH = 1000;
const PAD = { left: 84, right: 16, top: 16, bottom: 38 };

const BASE64 = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';

/** Standard base64 (RFC 4648 §4) of bytes. */
export function base64(bytes: Uint8Array): string {
  const parts: string[] = [];
  let chunk = '';
  for (let i = 0; i < bytes.length; i += 3) {
    const a = bytes[i];
    const b = i + 1 < bytes.length ? bytes[i + 1] : 0;
    const c = i + 2 < bytes.length ? bytes[i + 2] : 0;
    const n = (a << 16) | (b << 8) | c;
    chunk +=
      BASE64[(n >> 18) & 63] +
      BASE64[(n >> 12) & 63] +
      (i + 1 < bytes.length ? BASE64[(n >> 6) & 63] : '=') +
      (i + 2 < bytes.length ? BASE64[n & 63] : '=');
    if (chunk.length >= 8192) {
      parts.push(chunk);
      chunk = '';
    }
  }
  parts.push(chunk);
  return parts.join('');
}

const PNG_SIGNATURE = [137, 80, 78, 71, 13, 10, 26, 10];

/** A PNG image as a data URI (bytes are checked to be PNG; a URI must already be a base64 PNG data URI). */
export function pngDataUri(img: ReportImage): string {
  if (typeof img.png === 'string') {
    if (!/^data:image\/png;base64,[A-Za-z0-9+/]+=*$/.test(img.png))
      throw new Error('report: an image URI must be data:image/png;base64,…');
    return img.png;
  }
  if (!PNG_SIGNATURE.every((b, i) => img.png[i] === b)) throw new Error('report: an image is not PNG bytes');
  return `data:image/png;base64,${base64(img.png)}`;
}

/** A CSS colour we write into attributes: #rgb / #rrggbb / rgb(r, g, b) only. */
function colour(c: string): string {
  if (!/^(#[0-9a-fA-F]{3}|#[0-9a-fA-F]{6}|rgb\(\s*\d{1,3}\s*,\s*\d{1,3}\s*,\s*\d{1,3}\s*\))$/.test(c))
    throw new Error(`report: not a colour: ${c.slice(0, 40)}`);
  return c;
}

/** An id fragment from a key: letters, digits and dashes. */
const idOf = (key: string) => key.replace(/[^A-Za-z0-9-]/g, '-');

/** A CSS string literal (for @page margin boxes): quotes, backslashes, line ends and markup characters escaped. */
function cssString(s: string): string {
  return `"${s.replace(/[\\"<>&\n\r]/g, (c) => `\\${c.charCodeAt(0).toString(16)} `)}"`;
}

const fmt = (v: number, digits: number) => (Number.isFinite(v) ? v.toFixed(digits) : '—');
const flText = (fl: number) => `FL${String(fl).padStart(3, '0')}`;

/** A number cell: the figure shown, the exact value in data-value. */
function num(v: number, digits: number, unit = ''): string {
  return `<td class="n" data-value="${esc(String(v))}">${fmt(v, digits)}${unit}</td>`;
}

// ---------------------------------------------------------------------------------------------------------------
// Map geometry

export interface MapFrame {
  bounds: Bounds;
  width: number;
  height: number;
  x(lon: number): number;
  y(lat: number): number;
  lat(y: number): number;
}

/** The map frame of the bounds: MAP_WIDTH wide, as tall as the Mercator strip of the bounds. */
export function mapFrame(bounds: Bounds): MapFrame {
  const { west, east, north, south } = bounds;
  const yn = mercY(north);
  const ys = mercY(south);
  const width = MAP_WIDTH;
  const height = (width * (yn - ys)) / ((east - west) * DEG);
  const mid = (west + east) / 2;
  return {
    bounds,
    width,
    height,
    x: (lon) => ((nearLon(lon, mid) - west) / (east - west)) * width,
    y: (lat) => ((yn - mercY(lat)) / (yn - ys)) * height,
    lat: (y) => invMercY(yn - (y / height) * (yn - ys)),
  };
}

/** Map units per kilometre along a parallel at latitude `latDeg` (Mercator: scale sec φ). */
export function unitsPerKm(frame: MapFrame, latDeg: number): number {
  const { west, east } = frame.bounds;
  return frame.width / ((east - west) * DEG * SCALE_RADIUS_KM * Math.cos(latDeg * DEG));
}

/** The longest 1, 2 or 5 × 10^n not above `x`. */
export function niceBelow(x: number): number {
  const p = 10 ** Math.floor(Math.log10(x));
  for (const m of [5, 2, 1]) if (m * p <= x) return m * p;
  return p;
}

const r1 = (v: number) => Math.round(v * 10) / 10;

function ringsPath(coords: number[][][][], f: MapFrame): string {
  const out: string[] = [];
  for (const poly of coords) {
    for (const ring of poly) {
      let d = '';
      let lx = NaN;
      let ly = NaN;
      for (let i = 0; i < ring.length; i++) {
        const x = r1(f.x(ring[i][0]));
        const y = r1(f.y(ring[i][1]));
        if (x === lx && y === ly) continue;
        d += `${d === '' ? 'M' : 'L'}${x} ${y}`;
        lx = x;
        ly = y;
      }
      if (d !== '') out.push(d + 'Z');
    }
  }
  return out.join('');
}

const DASHES = ['', '16 7', '5 5', '18 6 4 6', '9 4'];
/** The outline dash of the i-th volume (solid, then dashes that differ in black and white). */
const volumeDash = (i: number) => DASHES[i % DASHES.length];

/** The graticule step (degrees) giving 3 to 8 lines across `span` degrees. */
function graticuleStep(span: number): number {
  for (const s of [0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 5, 10, 15, 30]) if (span / s <= 8) return s;
  return 45;
}

function degText(v: number, pos: string, neg: string): string {
  const a = Math.abs(v);
  const t = Number.isInteger(a) ? String(a) : String(+a.toFixed(2));
  return `${t}°${v === 0 ? '' : ' ' + (v > 0 ? pos : neg)}`;
}

/** A longitude as a label, within ±180° (a study across 180° runs on past it: 180.5 is 179.5° W). */
function lonText(lon: number): string {
  const l = +nearLon(lon, 0).toFixed(6);
  return Math.abs(l) === 180 ? '180°' : degText(l, 'E', 'W');
}

/** What every map shares, drawn once (a hidden SVG) and used by reference: patterns, coast, volumes, sites. */
function sharedDefs(m: ReportModel, f: MapFrame): string {
  const mid = (f.bounds.west + f.bounds.east) / 2;
  const coast = m.coast && m.coast.length > 0 ? ringsPath(m.coast, f) : '';
  const volumes = m.volumes
    .map((v, i) => {
      const coords = v.polygon.type === 'Polygon' ? [v.polygon.coordinates] : v.polygon.coordinates;
      const dash = volumeDash(i);
      // The id centred under the volume's southern edge (above its northern edge near the frame's foot).
      let w = Infinity;
      let e = -Infinity;
      let so = Infinity;
      let no = -Infinity;
      for (const p of coords)
        for (const r of p)
          for (const c of r) {
            const lon = nearLon(c[0], mid);
            w = Math.min(w, lon);
            e = Math.max(e, lon);
            so = Math.min(so, c[1]);
            no = Math.max(no, c[1]);
          }
      const lx = Math.min(f.width - 10, Math.max(10, f.x((w + e) / 2)));
      const below = f.y(so) + 26;
      const ly = below < f.height - 90 ? below : Math.max(24, f.y(no) - 10);
      const d = ringsPath(coords, f);
      return (
        `<path d="${d}" fill="none" stroke="#fff" stroke-width="5.4"/>` +
        `<path d="${d}" fill="none" stroke="#111" stroke-width="2.6"${dash ? ` stroke-dasharray="${dash}"` : ''}/>` +
        `<text x="${r1(lx)}" y="${r1(ly)}" text-anchor="middle" class="halo vlabel">${esc(v.id)}</text>`
      );
    })
    .join('');
  const sites = m.sites
    .map((s) => {
      const x = r1(f.x(s.lon));
      const y = r1(f.y(s.lat));
      return `<circle cx="${x}" cy="${y}" r="7" fill="#fff" stroke="#111" stroke-width="2.4"/><circle cx="${x}" cy="${y}" r="2.2" fill="#111"/><text x="${r1(x + 10)}" y="${r1(y - 8)}" class="halo slabel">${esc(s.id)}</text>`;
    })
    .join('');
  return `<svg class="defs" width="0" height="0" aria-hidden="true" focusable="false"><defs>
<pattern id="as-hatch" patternUnits="userSpaceOnUse" width="12" height="12" patternTransform="rotate(45)"><line x1="2" y1="0" x2="2" y2="12" stroke="#fff" stroke-width="3.2"/><line x1="5.2" y1="0" x2="5.2" y2="12" stroke="#000" stroke-width="3.2"/></pattern>
<clipPath id="as-frame" clipPathUnits="userSpaceOnUse"><rect x="0" y="0" width="${r1(f.width)}" height="${r1(f.height)}"/></clipPath>
<g id="as-coast"><path d="${coast}" fill="none" stroke="#fff" stroke-width="3"/><path d="${coast}" fill="none" stroke="#3a3a3a" stroke-width="1.2"/></g>
<g id="as-volumes">${volumes}</g>
<g id="as-sites">${sites}</g>
</defs></svg>`;
}

/** Graticule lines (dotted, inside the frame) and their labels (outside it, left and below). */
function graticule(f: MapFrame): { lines: string; labels: string } {
  const { west, east, south, north } = f.bounds;
  const lines: string[] = [];
  const labels: string[] = [];
  const sx = graticuleStep(east - west);
  for (let lon = Math.ceil(west / sx - 1e-9) * sx; lon <= east + 1e-9; lon += sx) {
    const x = r1(f.x(lon));
    lines.push(`<line x1="${x}" y1="0" x2="${x}" y2="${r1(f.height)}" class="grat"/>`);
    labels.push(
      `<text x="${x}" y="${r1(f.height + 27)}" text-anchor="middle" class="tick">${lonText(lon)}</text>`,
    );
  }
  const sy = graticuleStep(north - south);
  for (let lat = Math.ceil(south / sy - 1e-9) * sy; lat <= north + 1e-9; lat += sy) {
    const y = r1(f.y(lat));
    lines.push(`<line x1="0" y1="${y}" x2="${r1(f.width)}" y2="${y}" class="grat"/>`);
    labels.push(
      `<text x="-8" y="${r1(y + 6)}" text-anchor="end" class="tick">${degText(+lat.toFixed(6), 'N', 'S')}</text>`,
    );
  }
  return { lines: lines.join(''), labels: labels.join('') };
}

/** Scale bars in km and NM at the lower left, true at their own latitude (said beside them). */
export function scaleBar(f: MapFrame): { svg: string; kmLength: number; nmLength: number; latDeg: number } {
  const boxW = 380;
  const boxH = 108;
  const bx = 10;
  const by = f.height - boxH - 10;
  const barY = by + 34;
  const latDeg = f.lat(barY + 12);
  const perKm = unitsPerKm(f, latDeg);
  const maxUnits = boxW - 110;
  const kmLength = niceBelow(maxUnits / perKm);
  const nmLength = niceBelow(maxUnits / (perKm * (NM_M / 1000)));
  const bar = (y: number, len: number, unitKm: number, unit: string) => {
    const w = len * unitKm * perKm;
    const segs = 4;
    let s = '';
    for (let i = 0; i < segs; i++)
      s += `<rect x="${r1(bx + 14 + (i * w) / segs)}" y="${r1(y)}" width="${r1(w / segs)}" height="9" fill="${i % 2 ? '#fff' : '#111'}" stroke="#111" stroke-width="1.2"/>`;
    s += `<text x="${r1(bx + 14)}" y="${r1(y - 4)}" text-anchor="middle" class="tick">0</text>`;
    s += `<text x="${r1(bx + 14 + w)}" y="${r1(y - 4)}" text-anchor="middle" class="tick">${len}</text>`;
    s += `<text x="${r1(bx + 14 + w + 16)}" y="${r1(y + 10)}" class="tick">${unit}</text>`;
    return s;
  };
  const latText = degText(+latDeg.toFixed(1), 'N', 'S');
  const svg =
    `<g class="scale" data-km="${kmLength}" data-nm="${nmLength}" data-lat="${latDeg.toFixed(4)}">` +
    `<rect x="${bx}" y="${r1(by)}" width="${boxW}" height="${boxH}" fill="#fff" fill-opacity="0.88" stroke="#777" stroke-width="0.8"/>` +
    bar(barY, kmLength, 1, 'km') +
    bar(barY + 36, nmLength, NM_M / 1000, 'NM') +
    `<text x="${bx + 8}" y="${r1(by + boxH - 8)}" class="tick small">scale true at ${latText}</text></g>`;
  return { svg, kmLength, nmLength, latDeg };
}

function northArrow(f: MapFrame): string {
  const cx = f.width - 40;
  const cy = 62;
  return (
    `<g class="north"><rect x="${cx - 26}" y="${cy - 52}" width="52" height="86" fill="#fff" fill-opacity="0.88" stroke="#777" stroke-width="0.8"/>` +
    `<path d="M${cx} ${cy - 24}L${cx + 12} ${cy + 24}L${cx} ${cy + 14}Z" fill="#111"/>` +
    `<path d="M${cx} ${cy - 24}L${cx - 12} ${cy + 24}L${cx} ${cy + 14}Z" fill="#fff" stroke="#111" stroke-width="1.4"/>` +
    `<text x="${cx}" y="${cy - 30}" text-anchor="middle" class="north-n">N</text></g>`
  );
}

function mapSvg(map: ReportMap, f: MapFrame): string {
  const id = idOf(map.key);
  const W = r1(f.width);
  const H = r1(f.height);
  const vb = `${-PAD.left} ${-PAD.top} ${r1(W + PAD.left + PAD.right)} ${r1(H + PAD.top + PAD.bottom)}`;
  const img = (m: ReportImage, cls: string) =>
    `<image class="${cls}" href="${pngDataUri(m)}" x="0" y="0" width="${W}" height="${H}" preserveAspectRatio="none"/>`;
  const grat = graticule(f);
  const hatch = map.hatch
    ? `<mask id="as-unmet-${id}" maskUnits="userSpaceOnUse" x="0" y="0" width="${W}" height="${H}" mask-type="alpha">${img(map.hatch, 'cells')}</mask>` +
      `<rect x="0" y="0" width="${W}" height="${H}" fill="url(#as-hatch)" mask="url(#as-unmet-${id})" class="unmet"/>`
    : '';
  return (
    `<svg class="map" viewBox="${vb}" role="img" aria-label="${esc(map.title)}" data-key="${esc(map.key)}">` +
    `<g clip-path="url(#as-frame)">${img(map.fill, 'cells fill')}${hatch}${grat.lines}` +
    `<use href="#as-coast"/><use href="#as-volumes"/><use href="#as-sites"/></g>` +
    `<rect x="0" y="0" width="${W}" height="${H}" fill="none" stroke="#111" stroke-width="1.4"/>` +
    grat.labels +
    scaleBar(f).svg +
    northArrow(f) +
    `</svg>`
  );
}

/** Key entries of the volumes' outlines, each with its own dash. */
function volumeKey(volumes: readonly ReportVolume[]): string {
  return volumes
    .map((v, i) => {
      const dash = volumeDash(i);
      return `<li><svg class="sw" viewBox="0 0 28 16" aria-hidden="true"><line x1="1" y1="8" x2="27" y2="8" stroke="#111" stroke-width="2"${
        dash
          ? ` stroke-dasharray="${dash
              .split(' ')
              .map((d) => +d / 2.5)
              .join(' ')}"`
          : ''
      }/></svg><span>volume <code>${esc(v.id)}</code>: ${esc(v.name)}</span></li>`;
    })
    .join('');
}

function swatch(e: ReportLegendEntry): string {
  const s = e.swatch;
  let inner: string;
  if ('fill' in s)
    inner = `<rect x="1" y="1" width="26" height="14" fill="${colour(s.fill)}" stroke="#555" stroke-width="0.8"/>`;
  else if ('hatch' in s)
    inner = `<rect x="1" y="1" width="26" height="14" fill="url(#as-hatch)" stroke="#555" stroke-width="0.8"/>`;
  else if ('line' in s)
    inner =
      s.line === 'volume'
        ? `<line x1="1" y1="8" x2="27" y2="8" stroke="#111" stroke-width="2" stroke-dasharray="6 3"/>`
        : `<line x1="1" y1="8" x2="27" y2="8" stroke="#4a4a4a" stroke-width="1.2"/>`;
  else
    inner = `<circle cx="14" cy="8" r="5" fill="#fff" stroke="#111" stroke-width="1.6"/><circle cx="14" cy="8" r="1.5" fill="#111"/>`;
  return `<svg class="sw" viewBox="0 0 28 16" aria-hidden="true">${inner}</svg>`;
}

function mapSection(map: ReportMap, f: MapFrame, n: string, volumes: readonly ReportVolume[]): string {
  const level = map.flightLevel !== undefined ? ` data-level="${map.flightLevel}"` : '';
  return `<section class="map-page" data-map="${esc(map.key)}"${level}>
<h3>${n} ${esc(map.title)}</h3>
<figure class="map">${mapSvg(map, f)}
<figcaption>${esc(map.caption)}</figcaption>
<ul class="key">${map.legend.map((e) => `<li>${swatch(e)}<span>${esc(e.label)}</span></li>`).join('')}${volumeKey(volumes)}</ul>
</figure>
</section>`;
}

// ---------------------------------------------------------------------------------------------------------------
// Text sections

function requirementText(r: ReportVolume['requiredFold']): string {
  const parts: string[] = [];
  if (r.primary) parts.push(`${r.primary} primary`);
  if (r.secondary) parts.push(`${r.secondary} secondary`);
  if (r.any) parts.push(`${r.any} radar${r.any > 1 ? 's' : ''} of either kind`);
  if (r.adsb) parts.push(`${r.adsb} ADS-B receiver${r.adsb > 1 ? 's' : ''}`);
  if (r.mlat) parts.push(`${r.mlat} multilateration receiver${r.mlat > 1 ? 's' : ''}`);
  return parts.length ? parts.join(' and ') + ' (distinct sites)' : '1 radar of either kind (distinct sites)';
}

function bandText(v: ReportVolume): string {
  const b = v.altitudeBand;
  if (b) return `${b.minFt}–${b.maxFt} ft ${b.reference === 'agl' ? 'above ground' : 'AMSL'}`;
  return `${flText(v.flMin)}–${flText(v.flMax)}`;
}

function rows(pairs: [string, string][]): string {
  return pairs.map(([k, v]) => `<tr><th scope="row">${esc(k)}</th><td>${v}</td></tr>`).join('\n');
}

function provenanceSection(m: ReportModel): string {
  const p = m.provenance;
  const digest = (d?: { file: string; sha256: string }) =>
    d ? `${esc(d.file)}<br/><code class="sha">${esc(d.sha256)}</code>` : 'inline in the scenario file';
  const opts = Object.entries(p.options)
    .map(([k, v]) => `--${k}${v === true ? '' : ' ' + (Array.isArray(v) ? v.join(' ') : v)}`)
    .join(' ');
  return `<section class="text" id="scenario">
<h2>1 Scenario and provenance</h2>
<table class="kv"><tbody>
${rows([
  ['Scenario', esc(m.scenarioName)],
  ['Scenario file (SHA-256)', digest(p.scenario)],
  ['Sensor types file', digest(p.sensorTypes)],
  ['Sites file', digest(p.sites)],
  [
    'Terrain tiles',
    `${p.terrain.length} file${p.terrain.length === 1 ? '' : 's'}, listed with their SHA-256 in appendix A`,
  ],
  ['Network', esc(m.network.label)],
  ['Made by', `${esc(p.tool)} ${esc(p.version)}${p.commit ? ` (commit <code>${esc(p.commit)}</code>)` : ''}`],
  // The web app records its actions as "app <action>" (app/exports.ts): not a command anyone can type.
  p.command.startsWith('app ')
    ? ['Made in', `the web app: ${esc(p.command.slice(4))}${opts ? ` (${esc(opts)})` : ''}`]
    : ['Command', `<code>airshade ${esc(p.command)}${opts ? ' ' + esc(opts) : ''}</code>`],
  ['Run started (UTC)', esc(p.createdUtc ?? 'not recorded')],
])}
</tbody></table>
<h3>Sites of the network</h3>
<table class="grid" data-table="sites"><thead><tr><th>Site</th><th>Name</th><th class="n">Lon °</th><th class="n">Lat °</th><th class="n">Mast m</th><th>Sensor types</th></tr></thead>
<tbody>${m.sites
    .map(
      (s) =>
        `<tr data-site="${esc(s.id)}"><td><code>${esc(s.id)}</code></td><td>${esc(s.name)}</td><td class="n">${s.lon.toFixed(4)}</td><td class="n">${s.lat.toFixed(4)}</td><td class="n">${fmt(s.mastHeightM, 1)}</td><td>${esc(s.typeIds.join(', '))}</td></tr>`,
    )
    .join('\n')}</tbody></table>
</section>`;
}

function assumptionsSection(m: ReportModel): string {
  const c = m.conventions;
  const levels = c.levels
    .map(
      (l) =>
        `<tr><td>${flText(l.flightLevel)}</td><td class="n">${l.pressureAltitudeM.toFixed(0)}</td><td class="n">${l.trueAltitudeM.toFixed(0)}</td></tr>`,
    )
    .join('');
  const warnings = [...m.warnings, ...c.unevaluated];
  return `<section class="text" id="assumptions">
<h2>2 Assumptions</h2>
<table class="kv"><tbody>
${rows([
  [
    'Refraction',
    `effective earth radius factor k = ${esc(String(+c.kFactor.toFixed(4)))} (effective radius ${(c.kFactor * 6371).toFixed(0)} km)`,
  ],
  ['Target', esc(c.target.text)],
  ...c.volumeTargets.map((v): [string, string] => [`Target of volume ${v.volumeId}`, esc(v.text)]),
  ['Fluctuation', esc(c.target.fluctuation.replace('swerling', 'Swerling case '))],
  ['Day', esc(c.day.text)],
  ['Sea lobing (multipath)', esc(c.multipath)],
  [
    'Weather mode',
    m.network.weatherMode ? 'on: primaries’ ranges reduced by their types’ weather loss' : 'off',
  ],
  ['What “seen” means', esc(c.seen)],
])}
</tbody></table>
<h3>Flight levels and their true altitudes on the day</h3>
<table class="grid narrow" data-table="levels"><thead><tr><th>Level</th><th class="n">Pressure altitude m</th><th class="n">True altitude m</th></tr></thead><tbody>${levels}</tbody></table>
<h3>Sensor types: how each is specified</h3>
<table class="grid" data-table="types"><thead><tr><th>Type</th><th>Specification</th></tr></thead><tbody>${c.sensorTypes
    .map((t) => `<tr><td><code>${esc(t.id)}</code></td><td>${esc(t.convention)}</td></tr>`)
    .join('')}</tbody></table>
<h3>Airspace volumes</h3>
<table class="grid" data-table="volume-list"><thead><tr><th>Volume</th><th>Name</th><th>Band</th><th>Required folds</th><th class="n">Weight</th></tr></thead><tbody>${m.volumes
    .map(
      (v) =>
        `<tr><td><code>${esc(v.id)}</code></td><td>${esc(v.name)}</td><td>${esc(bandText(v))}</td><td>${esc(requirementText(v.requiredFold))}</td><td class="n">${esc(String(v.weight ?? 1))}</td></tr>`,
    )
    .join('')}</tbody></table>
${
  warnings.length
    ? `<h3>Warnings</h3><ul class="warnings">${warnings.map((w) => `<li>${esc(w)}</li>`).join('')}</ul>`
    : '<p>No warnings were raised for this scenario.</p>'
}
</section>`;
}

function statsTable(
  stats: readonly VolumeLevelStats[],
  volumes: readonly ReportVolume[],
  altitudeOf: (fl: number) => number | undefined,
  table: string,
): string {
  // The radar histogram always; one per receiver kind the network has (its stats carry it only then).
  const receiverKinds = (['adsb', 'mlat'] as const).filter((k) => stats.some((s) => s.foldHistogramKm2[k]));
  const pctOf = (s: VolumeLevelStats, bins: readonly number[]) =>
    bins.map((a) => (s.areaKm2 > 0 ? (100 * a) / s.areaKm2 : 0).toFixed(0)).join(' / ');
  const groups = volumes
    .map((v) => {
      const mine = stats.filter((s) => s.volumeId === v.id);
      if (mine.length === 0) return '';
      const head = `<tr class="group"><th colspan="${8 + receiverKinds.length}">${esc(v.name)} <code>${esc(v.id)}</code> — ${esc(bandText(v))}; requires ${esc(requirementText(v.requiredFold))}</th></tr>`;
      const body = mine
        .map((s) => {
          const short = s.areaKm2 - s.meetsRequirementKm2;
          const alt = altitudeOf(s.flightLevel);
          return (
            `<tr data-volume="${esc(s.volumeId)}" data-level="${s.flightLevel}"${s.meetsRequirementPct < 100 - 1e-9 ? ' class="short"' : ''}>` +
            `<td>${flText(s.flightLevel)}</td><td class="n">${alt === undefined ? '—' : alt.toFixed(0)}</td>` +
            num(s.areaKm2, 0) +
            num(s.coveredPct, 1) +
            num(s.meetsRequirementPct, 1) +
            num(s.meetsRequirementKm2, 0) +
            num(short, 0) +
            `<td class="n hist">${pctOf(s, s.foldHistogramKm2.any)}</td>` +
            receiverKinds
              .map((k) => `<td class="n hist">${pctOf(s, s.foldHistogramKm2[k] ?? [])}</td>`)
              .join('') +
            '</tr>'
          );
        })
        .join('\n');
      return `<tbody>${head}\n${body}</tbody>`;
    })
    .join('\n');
  return `<table class="grid stats" data-table="${table}"><thead><tr><th>Level</th><th class="n">True alt. m</th><th class="n">Area km²</th><th class="n">Seen %</th><th class="n">Meets req. %</th><th class="n">Meets req. km²</th><th class="n">Short km²</th><th class="n">Radar sites seeing: 0 / 1 / 2 / 3 / ≥4, % of area</th>${receiverKinds.map((k) => `<th class="n">${k === 'adsb' ? 'ADS-B stations' : 'Multilateration receivers'} hearing: 0 / 1 / 2 / 3 / ≥4, % of area</th>`).join('')}</tr></thead>
${groups}</table>`;
}

function volumesSection(m: ReportModel, n: number): string {
  const alt = new Map(m.conventions.levels.map((l) => [l.flightLevel, l.trueAltitudeM]));
  return `<section class="text" id="volumes">
<h2>${n} Coverage per volume and level</h2>
<p>For every volume at every computed level inside its band: its area, the share seen by at least one site of the
network, the share and area meeting its required folds (all of its kinds at once), the area short of them, and
how the area splits by the number of radar sites seeing it (and, where the network has receivers, by the number
of each kind's receiver sites hearing it). Rows short of the requirement are marked ▸ before the level.</p>
${statsTable(m.volumeStats, m.volumes, (fl) => alt.get(fl), 'volumes')}
</section>`;
}

function outageSection(m: ReportModel, n: number): string {
  const name = new Map(m.sites.map((s) => [s.id, s]));
  const vname = new Map(m.volumes.map((v) => [v.id, v.name]));
  const body = m.outage
    .map((l, i) => {
      const top = [...l.byVolume].sort((a, b) => b.demandWeightLost - a.demandWeightLost)[0];
      const s = name.get(l.siteId);
      const worst =
        top && top.demandWeightLost > 0
          ? `${esc(vname.get(top.volumeId) ?? top.volumeId)}, ${flText(top.flightLevel)}: ${top.areaKm2Lost.toFixed(0)} km²`
          : 'nothing lost';
      return (
        `<tr data-site="${esc(l.siteId)}"><td class="n">${i + 1}</td><td>${esc(s?.name ?? l.siteId)} <code>${esc(l.siteId)}</code></td>` +
        `<td>${esc(s?.typeIds.join(', ') ?? '')}</td>` +
        num(l.demandWeightLost, 0) +
        num(l.areaKm2Lost, 0) +
        `<td>${worst}</td></tr>`
      );
    })
    .join('\n');
  const worst = m.outage[0];
  const lead =
    worst && worst.demandWeightLost > 0
      ? `The worst single failure is ${esc(name.get(worst.siteId)?.name ?? worst.siteId)} (<code>${esc(worst.siteId)}</code>): ${worst.demandWeightLost.toFixed(0)} units of demand weight and ${worst.areaKm2Lost.toFixed(0)} km² lose service.`
      : 'No single site’s failure takes service away from any volume.';
  return `<section class="text" id="outage">
<h2>${n} Single-site outages (N−1)</h2>
<p>Each site of the network switched off in turn, every other sensor on: what loses service — cells of a volume, at
a level of its band, that met the volume's required folds and no longer do. Demand weight = area × the volume's
weight, summed over levels; area = the cells that lose service at one level or more. ${lead}</p>
<table class="grid" data-table="outage"><thead><tr><th class="n">#</th><th>Site down</th><th>Its sensor types</th><th class="n">Demand weight lost</th><th class="n">Area lost km²</th><th>Worst volume and level</th></tr></thead>
<tbody>${body}</tbody></table>
</section>`;
}

function mlatSection(m: ReportModel, n: number): string {
  const a = m.mlat;
  if (!a) return '';
  const vname = new Map(m.volumes.map((v) => [v.id, v.name]));
  const rows = a.rows
    .map(
      (r) =>
        `<tr data-volume="${esc(r.volumeId)}" data-level="${r.flightLevel}"><td>${esc(vname.get(r.volumeId) ?? r.volumeId)}</td><td>${r.metPct < 100 - 1e-9 ? '▸ ' : ''}${flText(r.flightLevel)}</td>` +
        num(r.requiredM, 0) +
        num(r.fixPct, 1) +
        (r.medianM === null ? '<td class="n">—</td>' : num(r.medianM, 1)) +
        num(r.metPct, 1) +
        '</tr>',
    )
    .join('\n');
  return `<section class="text" id="mlat">
<h2>${n} Multilateration accuracy</h2>
<p>The 1σ horizontal DRMS of the multilateration fix (time-of-arrival least squares with the emission time unknown;
Torrieri 1984), per cell, from the ${a.receivers} receivers of the network that see it: a fix needs ${a.minReceivers}
(${a.altitudeKnown ? 'the target reports its pressure altitude' : 'the altitude is not used'}). Per volume that bounds the
accuracy, at each level of its band: the share of its cells with a fix, their median DRMS and the share meeting the
bound (a cell without a fix does not meet it). Rows short of the bound are marked ▸. The maps are written by
<code>airshade coverage</code> as <code>mlat-accuracy-FL….tif</code> and <code>.geojson</code>.</p>
<table class="grid" data-table="mlat"><thead><tr><th>Volume</th><th>Level</th><th class="n">Bound m</th><th class="n">A fix %</th><th class="n">Median DRMS m</th><th class="n">Meets the bound %</th></tr></thead>
<tbody>${rows || '<tr><td colspan="6">No volume bounds the accuracy.</td></tr>'}</tbody></table>
${mlatOutageTable(m)}
</section>`;
}

/** The accuracy bounds' N−1 table: a receiver lost can leave every fold met and still spoil the fix. */
function mlatOutageTable(m: ReportModel): string {
  const list = m.mlat?.outage;
  if (!list || list.length === 0) return '';
  const vname = new Map(m.volumes.map((v) => [v.id, v.name]));
  const sname = new Map(m.sites.map((s) => [s.id, s.name]));
  const body = list
    .map((l, i) => {
      const top = [...l.byVolume].sort((a, b) => b.areaKm2Lost - a.areaKm2Lost)[0];
      const worst =
        top && top.areaKm2Lost > 0
          ? `${esc(vname.get(top.volumeId) ?? top.volumeId)} ${flText(top.flightLevel)}: ${top.metPctBefore.toFixed(1)} % → ${top.metPctAfter.toFixed(1)} % meeting the bound`
          : '—';
      return `<tr data-site="${esc(l.siteId)}"><td class="n">${i + 1}</td><td><code>${esc(l.siteId)}</code>${sname.get(l.siteId) ? ' ' + esc(sname.get(l.siteId)!) : ''}</td>${num(l.areaKm2Lost, 0)}<td>${worst}</td></tr>`;
    })
    .join('\n');
  return `<h3>One receiver site down at a time</h3>
<p>Per site with multilateration receivers, taken out alone: the area of the bounded volumes (over the levels of
their bands, a cell counted once) whose fix meets its bound with every receiver up and not without that site. A
receiver lost can leave every fold met and still spoil the geometry; the fold losses are in the N−1 table.</p>
<table class="grid" data-table="mlat-outage"><thead><tr><th class="n">#</th><th>Site down</th><th class="n">Area losing its bound km²</th><th>Worst volume and level</th></tr></thead>
<tbody>${body}</tbody></table>`;
}

function planSection(m: ReportModel, n: number): string {
  const p = m.plan;
  if (!p) return '';
  const name = (id: string) => m.sites.find((s) => s.id === id)?.name;
  const entries = p.entries
    .map(
      (e) =>
        `<tr data-site="${esc(e.siteId)}" data-type="${esc(e.typeId)}"><td><code>${esc(e.siteId)}</code>${name(e.siteId) ? ' ' + esc(name(e.siteId)!) : ''}</td><td><code>${esc(e.typeId)}</code></td>${num(e.cost, 2)}</tr>`,
    )
    .join('');
  const alt = new Map(m.conventions.levels.map((l) => [l.flightLevel, l.trueAltitudeM]));
  return `<section class="text" id="plan">
<h2>${n} The plan</h2>
<p>${
    p.origin
      ? esc(p.origin)
      : `From <code>${esc(p.file)}</code> (written by <code>airshade plan</code> for this scenario file: its SHA-256
matches).`
  } The figures are the plan's own, for its sensors; the maps and tables above are those of the network
named in section 1.</p>
<table class="kv" data-table="plan-summary"><tbody>
${rows([
  [
    'Goal',
    esc(p.mode === 'budget' ? 'the most demand within the budget' : 'the least cost meeting the demand'),
  ],
  ...(p.budget !== undefined ? [['Budget', esc(String(p.budget))] as [string, string]] : []),
  ['Cost', `<span data-value="${esc(String(p.cost))}">${fmt(p.cost, 2)}</span>`],
  ['Lower bound', `<span data-value="${esc(String(p.lowerBound))}">${fmt(p.lowerBound, 2)}</span>`],
  ['Gap', `<span data-value="${esc(String(p.gapPct))}">${fmt(p.gapPct, 2)} %</span>`],
  ['Method', esc(p.method ?? '—')],
  ['Demand', p.demandMet === undefined ? '—' : p.demandMet ? 'met' : 'not fully met'],
  ...(p.mlatAccuracy
    ? [
        [
          'Multilateration accuracy',
          `${fmt(p.mlatAccuracy.metPct, 1)} % of the bounded demand meets its bound` +
            (p.mlatAccuracy.unmeetablePct > 0
              ? `; ${fmt(p.mlatAccuracy.unmeetablePct, 1)} % is beyond what every allowed receiver together reaches`
              : '') +
            (p.mlatAccuracy.addedForAccuracy.length > 0
              ? `; receivers added for accuracy alone: ${p.mlatAccuracy.addedForAccuracy.map((a) => `<code>${esc(a.siteId)}</code>`).join(', ')}`
              : ''),
        ] as [string, string],
      ]
    : []),
  ...(p.solverStop ? [['Solver stop', esc(p.solverStop)] as [string, string]] : []),
])}
</tbody></table>
<h3>Sensors of the plan</h3>
<table class="grid narrow" data-table="plan-entries"><thead><tr><th>Site</th><th>Sensor type</th><th class="n">Cost</th></tr></thead><tbody>${entries}</tbody></table>
${
  p.unmeetable && p.unmeetable.length
    ? `<ul class="warnings">${p.unmeetable.map((u) => `<li>${esc(u.volumeName ?? u.volumeId)} needs ${esc(u.kind)} fold ${u.required} where at most ${u.achievable} is possible: planned to ${u.achievable}</li>`).join('')}</ul>`
    : ''
}
<h3>The plan's coverage per volume and level</h3>
${statsTable(p.volumes, m.volumes, (fl) => alt.get(fl), 'plan-volumes')}
</section>`;
}

function appendix(m: ReportModel): string {
  const p = m.provenance;
  return `<section class="text" id="appendix">
<h2>Appendix A — Terrain tiles</h2>
<table class="grid" data-table="terrain"><thead><tr><th>File</th><th>SHA-256</th></tr></thead><tbody>${p.terrain
    .map((t) => `<tr><td>${esc(t.file)}</td><td><code class="sha">${esc(t.sha256)}</code></td></tr>`)
    .join('')}</tbody></table>
<h2>Appendix B — Provenance record</h2>
<p>The provenance as the other outputs of Airshade carry it (JSON).</p>
<pre class="json">${esc(JSON.stringify(p, null, 1))}</pre>
</section>`;
}

// ---------------------------------------------------------------------------------------------------------------
// Page

function style(paper: 'A4' | 'A3', caution: string): string {
  const mapH = paper === 'A3' ? '300mm' : '198mm';
  return `
@page { size: ${paper} portrait; margin: 14mm 13mm 17mm 13mm;
  @bottom-left { content: ${cssString(caution)}; font: 6.5pt/1.25 sans-serif; color: #333; width: 80%; vertical-align: top; }
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7pt sans-serif; color: #333; vertical-align: top; } }
:root { --map-h: ${mapH}; }
* { box-sizing: border-box; }
html { background: #fff; color: #161616; }
body { margin: 0 auto; max-width: 200mm; padding: 10mm 8mm; font: 9.5pt/1.4 "Liberation Sans", "DejaVu Sans", Arial, Helvetica, sans-serif; }
h1 { font-size: 20pt; font-weight: 600; margin: 0 0 2mm; letter-spacing: 0.01em; }
h2 { font-size: 13pt; font-weight: 600; margin: 7mm 0 2.5mm; padding-bottom: 1mm; border-bottom: 0.6pt solid #161616; break-after: avoid; }
h3 { font-size: 10.5pt; font-weight: 600; margin: 4mm 0 1.5mm; break-after: avoid; }
p { margin: 1.5mm 0 2.5mm; }
code { font: 8.5pt "DejaVu Sans Mono", "Liberation Mono", monospace; }
code.sha { word-break: break-all; }
table { border-collapse: collapse; width: 100%; margin: 1.5mm 0 3mm; }
table.narrow { width: auto; min-width: 50%; }
thead { display: table-header-group; }
tr { break-inside: avoid; page-break-inside: avoid; }
th, td { text-align: left; vertical-align: top; padding: 0.9mm 1.6mm; }
table.grid th, table.grid td { border-bottom: 0.4pt solid #9a9a9a; }
table.grid thead th { border-bottom: 1pt solid #161616; font-weight: 600; font-size: 8.5pt; vertical-align: bottom; }
table.kv th { width: 28%; font-weight: 600; border-bottom: 0.4pt solid #c8c8c8; }
table.kv td { border-bottom: 0.4pt solid #c8c8c8; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.hist { font-size: 8pt; }
table.stats td:first-child, table.stats th:first-child { white-space: nowrap; }
table[data-table="terrain"] code.sha { font-size: 6.6pt; word-break: normal; white-space: nowrap; }
table[data-table="terrain"] td:first-child { word-break: break-all; }
tr.group th { background: #ececec; font-weight: 600; padding-top: 1.4mm; }
tr.short td:first-child::before { content: "▸ "; }
ul.warnings { padding-left: 5mm; }
ul.warnings li { margin-bottom: 1mm; }
pre.json { font: 7pt/1.3 "DejaVu Sans Mono", "Liberation Mono", monospace; white-space: pre-wrap; word-break: break-all; border: 0.4pt solid #9a9a9a; padding: 2mm; }
.cover { break-after: page; }
ol.plain { list-style: none; }
.cover .kind { text-transform: uppercase; letter-spacing: 0.18em; font-size: 8.5pt; color: #444; margin: 0 0 14mm; }
.cover .name { font-size: 14pt; margin: 0 0 6mm; }
.cover dl { display: grid; grid-template-columns: 40mm 1fr; gap: 1.2mm 4mm; margin: 4mm 0 8mm; }
.cover dt { font-weight: 600; }
.cover dd { margin: 0; }
.caution { border: 1.2pt solid #161616; padding: 3mm 4mm; margin: 4mm 0; font-size: 10pt; break-inside: avoid; }
.caution strong { letter-spacing: 0.08em; text-transform: uppercase; font-size: 8.5pt; display: block; margin-bottom: 1mm; }
.cover ol { margin: 2mm 0 0; padding-left: 6mm; }
.map-page { break-before: page; break-inside: avoid; }
figure.map { margin: 0; }
svg.map { display: block; width: 100%; height: auto; max-height: var(--map-h); margin: 0 auto; font-family: "Liberation Sans", "DejaVu Sans", Arial, sans-serif; }
svg.map .cells { image-rendering: pixelated; }
svg.map .grat { stroke: #6f6f6f; stroke-width: 0.6; stroke-dasharray: 2 5; }
svg.map .tick { font-size: 20px; fill: #161616; }
svg.map .tick.small { font-size: 17px; fill: #333; }
svg.map .north-n { font-size: 24px; font-weight: 700; }
svg .halo { paint-order: stroke; stroke: #fff; stroke-width: 5px; stroke-linejoin: round; fill: #111; }
svg .vlabel { font-size: 23px; font-weight: 700; font-style: italic; }
svg .slabel { font-size: 17px; }
svg.defs { position: absolute; width: 0; height: 0; overflow: hidden; }
figcaption { font-size: 8.5pt; margin: 2mm 0 1.5mm; color: #222; }
ul.key { list-style: none; padding: 0; margin: 0; columns: 2; column-gap: 6mm; font-size: 8.5pt; }
ul.key li { break-inside: avoid; display: flex; align-items: center; gap: 2mm; margin: 0.5mm 0; }
svg.sw { width: 9mm; height: 5.2mm; flex: none; }
footer.caution-end { margin-top: 8mm; }
@media screen { body { box-shadow: 0 0 0 1px #ddd; margin-top: 6mm; margin-bottom: 6mm; } .map-page { margin-top: 10mm; border-top: 0.6pt dashed #999; padding-top: 4mm; } }
@media print { body { max-width: none; padding: 0; } }
`;
}

/** The whole report as one HTML document (well-formed XML too). */
export function buildReportHtml(m: ReportModel): string {
  const paper = m.paper ?? 'A4';
  const f = mapFrame(m.bounds);
  const p = m.provenance;
  const levelMaps = m.maps.filter((x) => x.flightLevel !== undefined);
  const otherMaps = m.maps.filter((x) => x.flightLevel === undefined);
  let sec = 3;
  const mapsN = sec++;
  const volumesN = sec++;
  const outageN = sec++;
  const planN = m.plan ? sec++ : 0;
  const mlatN = m.mlat ? sec++ : 0;
  const cautionN = sec++;
  const maps = [...levelMaps, ...otherMaps]
    .map((x, i) => mapSection(x, f, `${mapsN}.${i + 1}`, m.volumes))
    .join('\n');
  const contents = [
    '1 Scenario and provenance',
    '2 Assumptions',
    `${mapsN} Maps: ${levelMaps.length} flight level${levelMaps.length === 1 ? '' : 's'}${otherMaps.length ? ' and the network floor' : ''}`,
    `${volumesN} Coverage per volume and level`,
    `${outageN} Single-site outages (N−1)`,
    ...(m.plan ? [`${planN} The plan`] : []),
    ...(m.mlat ? [`${mlatN} Multilateration accuracy`] : []),
    `${cautionN} Cautions`,
    'Appendices: terrain tiles, provenance record',
  ];
  const sha = p.scenario?.sha256 ?? '';
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8"/>
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; img-src data:; style-src 'unsafe-inline'"/>
<meta name="viewport" content="width=device-width, initial-scale=1"/>
<meta name="generator" content="${esc(`${p.tool} ${p.version}`)}"/>
<meta name="airshade-scenario-sha256" content="${esc(sha)}"/>
<title>Coverage report — ${esc(m.scenarioName)}</title>
<style>${style(paper, m.caution)}</style>
</head>
<body>
${sharedDefs(m, f)}
<section class="cover">
<p class="kind">Airshade · coverage report for a safety case</p>
<h1>Coverage report</h1>
<p class="name">${esc(m.scenarioName)}</p>
<div class="caution" id="caution-cover"><strong>Caution</strong>${esc(m.caution)}</div>
<dl>
<dt>Network</dt><dd>${esc(m.network.label)}</dd>
<dt>Flight levels</dt><dd>${m.conventions.levels.map((l) => flText(l.flightLevel)).join(', ')}</dd>
<dt>Scenario SHA-256</dt><dd><code class="sha" id="scenario-sha256">${esc(sha)}</code></dd>
<dt>Made</dt><dd>${esc(p.createdUtc ?? 'date not recorded')} by ${esc(p.tool)} ${esc(p.version)}</dd>
<dt>Paper</dt><dd>${paper} portrait</dd>
</dl>
<h3>Contents</h3>
<ol class="plain">${contents.map((c) => `<li>${esc(c)}</li>`).join('')}</ol>
</section>
${provenanceSection(m)}
${assumptionsSection(m)}
<section class="text" id="maps"><h2>${mapsN} Maps</h2>
<p>One page per flight level, then the network floor. North is up (Mercator); every map covers the analysis grid
(${esc(degText(+m.bounds.west.toFixed(4), 'E', 'W'))} to ${esc(degText(+m.bounds.east.toFixed(4), 'E', 'W'))},
${esc(degText(+m.bounds.south.toFixed(4), 'N', 'S'))} to ${esc(degText(+m.bounds.north.toFixed(4), 'N', 'S'))}); each cell is drawn as a square block. Colours
step in lightness from dark to light, so the keys also read in black and white; the cells short of a requirement
are hatched.</p></section>
${maps}
${volumesSection(m, volumesN)}
${outageSection(m, outageN)}
${planSection(m, planN)}
${mlatSection(m, mlatN)}
<section class="text" id="cautions">
<h2>${cautionN} Cautions</h2>
<div class="caution"><strong>Caution</strong>${esc(m.caution)}</div>
<p>The results hold for the assumptions of section 2 only: the stated target, day and refraction, noise-limited
detection over the terrain data used. Warnings raised for this scenario are listed there too.</p>
</section>
${appendix(m)}
<footer class="caution caution-end" id="caution-footer"><strong>Caution</strong>${esc(m.caution)}</footer>
</body>
</html>
`;
}
