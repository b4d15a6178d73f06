/**
 * The map: MapLibre with a style of our own that loads nothing from outside (no tiles, glyphs, sprites or fonts):
 * raster images made by the engine worker (relief, network floor, folds, multilateration accuracy, gaps, losses,
 * layout differences) laid under the map's transparent canvas, the airspace volumes, an azimuth line for the
 * vertical coverage diagram, a drawing preview, and the sites as markers whose labels are text nodes. Each marker
 * is its symbol alone, centred on the site; its label sits beside it, on whichever side is free of other labels and
 * symbols (a label with no free side hides until the pointer rests on its site). A "Move sites" switch on the map
 * lets sites be dragged from any panel.
 */
import * as maplibregl from 'maplibre-gl';
import type { GeoJSONSource, StyleSpecification } from 'maplibre-gl';
import workerUrl from 'maplibre-gl/dist/maplibre-gl-worker.mjs?url';
import 'maplibre-gl/dist/maplibre-gl.css';
import type { LayerId, LayerSetting } from './state.ts';

maplibregl.setWorkerUrl(workerUrl);

export interface MapImage {
  bitmap: ImageBitmap;
  width: number;
  height: number;
  corners: [number, number][];
}

export type ImageLayerId =
  'relief' | 'floor' | 'fold' | 'accuracy' | 'gap' | 'compare' | 'compare-lost' | 'loss';
/** The raster canvases, bottom to top (MapLibre's canvas, with the vector layers, lies above them all). */
const IMAGE_ORDER: readonly ImageLayerId[] = [
  'relief',
  'floor',
  'fold',
  'accuracy',
  'gap',
  'compare',
  'compare-lost',
  'loss',
];

export interface SiteMarker {
  id: string;
  name: string;
  lon: number;
  lat: number;
  existing: boolean;
  inNetwork: boolean;
  failed: boolean;
  /** Chosen by the last plan. */
  planned: boolean;
}

const STYLE: StyleSpecification = {
  version: 8,
  sources: {},
  // No background layer: the canvas stays transparent over the overlay images (the container has the colour).
  layers: [],
};

export class MapView {
  readonly map: maplibregl.Map;
  private readonly images = new Map<string, { el: HTMLCanvasElement; corners: [number, number][] }>();
  private readonly overlay: HTMLElement;
  private readonly markers = new Map<string, { marker: maplibregl.Marker; el: HTMLElement }>();
  private settings: Partial<Record<LayerId, LayerSetting>> = {};
  readonly ready: Promise<void>;
  private readonly scale = new maplibregl.ScaleControl({ maxWidth: 160, unit: 'nautical' });
  private readonly moveButton: HTMLButtonElement;
  private readonly moveHint: HTMLElement;
  /** Sites drawn last, in the order their labels get first choice of a place. */
  private siteOrder: SiteMarker[] = [];

  constructor(
    container: HTMLElement,
    private readonly handlers: {
      onSiteClick: (id: string) => void;
      onSiteDrag: (id: string, lon: number, lat: number) => void;
      /** The "Move sites" switch on the map was pressed. */
      onMoveSites: (on: boolean) => void;
    },
  ) {
    this.map = new maplibregl.Map({
      container,
      style: STYLE,
      center: [-29.5, -41.5],
      zoom: 6,
      attributionControl: false,
      // Nautical miles as aviation writes them.
      locale: { 'ScaleControl.NauticalMiles': 'NM' },
      canvasContextAttributes: { preserveDrawingBuffer: false, antialias: false },
    });
    // North up, no tilt: the overlay images are placed as axis-aligned rectangles.
    this.map.dragRotate.disable();
    this.map.touchZoomRotate.disableRotation();
    this.map.keyboard.disableRotation();
    this.map.addControl(new maplibregl.NavigationControl({ showCompass: false }), 'top-right');
    this.overlay = document.createElement('div');
    this.overlay.className = 'overlays';
    container.prepend(this.overlay);
    this.map.on('move', () => this.place());
    this.map.on('resize', () => this.place());
    this.map.addControl(this.scale, 'bottom-left');
    // Our own switch for moving sites from any panel (a control like the zoom buttons), and its hint.
    this.moveButton = document.createElement('button');
    this.moveButton.type = 'button';
    this.moveButton.id = 'move-sites';
    this.moveButton.className = 'move-sites';
    this.moveButton.textContent = 'Move sites';
    this.moveButton.setAttribute('aria-pressed', 'false');
    this.moveButton.title = 'Drag sites on the map to move them (from any panel)';
    this.moveButton.addEventListener('click', () =>
      this.handlers.onMoveSites(this.moveButton.getAttribute('aria-pressed') !== 'true'),
    );
    const moveBox = document.createElement('div');
    moveBox.className = 'maplibregl-ctrl maplibregl-ctrl-group move-sites-ctrl';
    moveBox.appendChild(this.moveButton);
    this.map.addControl({ onAdd: () => moveBox, onRemove: () => moveBox.remove() }, 'top-left');
    this.moveHint = document.createElement('div');
    this.moveHint.id = 'move-hint';
    this.moveHint.className = 'map-hint';
    this.moveHint.hidden = true;
    this.moveHint.textContent =
      'Moving sites: drag a site to its new place; its coverage is computed again. Press “Move sites” again to stop.';
    container.appendChild(this.moveHint);
    this.map.on('moveend', () => this.placeLabels());
    this.map.on('resize', () => this.placeLabels());
    this.ready = new Promise((res) => this.map.once('load', () => res()));
    void this.ready.then(() => this.addVectorLayers());
  }

  setScaleUnits(units: 'aviation' | 'metric'): void {
    this.scale.setUnit(units === 'aviation' ? 'nautical' : 'metric');
  }

  /** The vector layers, in drawing order (each added on top of the last). */
  private addVectorLayers(): void {
    const m = this.map;
    const empty = { type: 'FeatureCollection' as const, features: [] };
    m.addSource('volumes', { type: 'geojson', data: empty });
    m.addLayer({
      id: 'volumes-fill',
      type: 'fill',
      source: 'volumes',
      paint: { 'fill-color': '#2a3f5f', 'fill-opacity': 0.06 },
    });
    m.addLayer({
      id: 'volumes-line',
      type: 'line',
      source: 'volumes',
      paint: { 'line-color': '#1f2d44', 'line-width': 1.6, 'line-dasharray': [4, 2] },
    });
    m.addSource('azimuth', { type: 'geojson', data: empty });
    m.addLayer({
      id: 'azimuth',
      type: 'line',
      source: 'azimuth',
      paint: { 'line-color': '#111', 'line-width': 2 },
    });
    m.addSource('draft', { type: 'geojson', data: empty });
    m.addLayer({
      id: 'draft-line',
      type: 'line',
      source: 'draft',
      paint: { 'line-color': '#7a1f5c', 'line-width': 2 },
    });
    m.addLayer({
      id: 'draft-points',
      type: 'circle',
      source: 'draft',
      paint: { 'circle-radius': 4, 'circle-color': '#7a1f5c' },
    });
    this.applySettings();
  }

  /**
   * Shows (or replaces) an image layer; null removes it. Raster layers are <canvas> elements stacked under the map's
   * (transparent) canvas and moved with the map by a CSS transform, so the browser's compositor draws them: with
   * software WebGL (no GPU, as on the machines this is tested on) every WebGL raster layer cost the main thread
   * 50–90 ms per frame, while vector layers and markers cost next to nothing.
   */
  async setImage(id: ImageLayerId, img: MapImage | null): Promise<void> {
    const old = this.images.get(id);
    if (!img) {
      old?.el.remove();
      this.images.delete(id);
      return;
    }
    const el = old?.el ?? document.createElement('canvas');
    el.className = `overlay overlay-${id}`;
    el.width = img.width;
    el.height = img.height;
    // The bitmap was made (and transferred) by the engine worker: handing it over copies nothing.
    el.getContext('bitmaprenderer')!.transferFromImageBitmap(img.bitmap);
    el.style.zIndex = String(IMAGE_ORDER.indexOf(id) + 1);
    if (!old) this.overlay.appendChild(el);
    this.images.set(id, { el, corners: img.corners });
    this.place();
    this.applySettings();
  }

  /** Puts every overlay image where its corners project (north-up map: a Mercator-aligned rectangle). */
  private place(): void {
    for (const { el, corners } of this.images.values()) {
      const tl = this.map.project(corners[0] as [number, number]);
      const br = this.map.project(corners[2] as [number, number]);
      const w = el.width || 1;
      const hgt = el.height || 1;
      el.style.transform = `translate(${tl.x}px, ${tl.y}px) scale(${(br.x - tl.x) / w}, ${(br.y - tl.y) / hgt})`;
    }
  }

  applySettings(settings = this.settings): void {
    this.settings = settings;
    const m = this.map;
    // Only what changed goes to MapLibre: each style change redraws the WebGL canvas.
    const vis = (layer: string, s: LayerSetting | undefined, prop: string) => {
      if (!s || !m.getLayer(layer)) return;
      const visibility = s.on ? 'visible' : 'none';
      const opacity = prop === 'fill-opacity' ? 0.06 * s.opacity : s.opacity;
      if (m.getLayoutProperty(layer, 'visibility') !== visibility)
        m.setLayoutProperty(layer, 'visibility', visibility);
      if (m.getPaintProperty(layer, prop as 'line-opacity') !== opacity)
        m.setPaintProperty(layer, prop as 'line-opacity', opacity);
    };
    const img = (id: ImageLayerId, set: LayerSetting | undefined) => {
      const el = this.images.get(id)?.el;
      if (!el || !set) return;
      el.style.display = set.on ? '' : 'none';
      el.style.opacity = String(set.opacity);
    };
    for (const id of ['relief', 'floor', 'fold', 'accuracy', 'gap', 'loss'] as const) img(id, settings[id]);
    img('compare', settings.compare);
    img('compare-lost', settings.compare);
    vis('volumes-line', settings.volumes, 'line-opacity');
    vis('volumes-fill', settings.volumes, 'fill-opacity');
    const sitesOn = settings.sites?.on ?? true;
    for (const { el } of this.markers.values()) el.style.display = sitesOn ? '' : 'none';
  }

  private volumesText = '';

  /**
   * The volume outlines; unchanged data is not sent again: every WebGL frame costs the main thread tens of ms
   * with software WebGL (its buffer is copied out on each commit), so the map's canvas redraws only when its own
   * content changes.
   */
  setVolumes(fc: GeoJSON.FeatureCollection): void {
    const text = JSON.stringify(fc);
    const src = this.map.getSource('volumes') as GeoJSONSource | undefined;
    if (!src || text === this.volumesText) return;
    this.volumesText = text;
    src.setData(fc);
  }

  /** Shows the state of the "Move sites" switch and its hint. */
  setMoveSites(on: boolean): void {
    this.moveButton.setAttribute('aria-pressed', String(on));
    this.moveButton.classList.toggle('on', on);
    this.moveHint.hidden = !on;
  }

  setAzimuth(line: [number, number][] | null): void {
    (this.map.getSource('azimuth') as GeoJSONSource | undefined)?.setData({
      type: 'FeatureCollection',
      features: line
        ? [{ type: 'Feature', properties: {}, geometry: { type: 'LineString', coordinates: line } }]
        : [],
    });
  }

  setDraft(points: [number, number][]): void {
    const features: GeoJSON.Feature[] = points.map((p) => ({
      type: 'Feature',
      properties: {},
      geometry: { type: 'Point', coordinates: p },
    }));
    if (points.length > 1)
      features.push({
        type: 'Feature',
        properties: {},
        geometry: { type: 'LineString', coordinates: [...points, points[0]] },
      });
    (this.map.getSource('draft') as GeoJSONSource | undefined)?.setData({
      type: 'FeatureCollection',
      features,
    });
  }

  /** Sites: existing (square), candidate (round), in the network (filled), failed (struck), planned (halo). */
  setSites(sites: SiteMarker[], draggable: boolean): void {
    const keep = new Set(sites.map((s) => s.id));
    for (const [id, m] of this.markers) {
      if (!keep.has(id)) {
        m.marker.remove();
        this.markers.delete(id);
      }
    }
    for (const s of sites) {
      let m = this.markers.get(s.id);
      if (!m) {
        // The marker's element is the symbol alone (so its centre is the site); the label is placed beside it.
        const el = document.createElement('div');
        el.className = 'site';
        el.dataset.siteId = s.id;
        const dot = document.createElement('span');
        dot.className = 'site-dot';
        const label = document.createElement('span');
        label.className = 'site-label at-right';
        el.append(dot, label);
        let dragged = false;
        el.addEventListener('click', (e) => {
          e.stopPropagation();
          // The click that ends a drag is not a click on the site.
          if (dragged) {
            dragged = false;
            return;
          }
          this.handlers.onSiteClick(s.id);
        });
        const marker = new maplibregl.Marker({ element: el, draggable })
          .setLngLat([s.lon, s.lat])
          .addTo(this.map);
        marker.on('dragstart', () => {
          dragged = true;
        });
        marker.on('dragend', () => {
          const p = marker.getLngLat();
          // A click may not follow (the pointer left the symbol): forget the drag soon after.
          setTimeout(() => (dragged = false), 300);
          this.handlers.onSiteDrag(s.id, p.lng, p.lat);
          this.placeLabels();
        });
        m = { marker, el };
        this.markers.set(s.id, m);
      }
      m.marker.setLngLat([s.lon, s.lat]);
      m.marker.setDraggable(draggable);
      (m.el.querySelector('.site-label') as HTMLElement).textContent = s.name;
      m.el.title = `${s.name} (${s.id})`;
      m.el.classList.toggle('existing', s.existing);
      m.el.classList.toggle('in-network', s.inNetwork);
      m.el.classList.toggle('failed', s.failed);
      m.el.classList.toggle('planned', s.planned);
      m.el.classList.toggle('movable', draggable);
    }
    // Labels choose their place in this order: sites that matter now (down, planned, in the network, existing)
    // first, then by name, so the same view always gives the same labels.
    const rank = (s: SiteMarker) =>
      (s.failed ? 0 : 8) + (s.planned ? 0 : 4) + (s.inNetwork ? 0 : 2) + (s.existing ? 0 : 1);
    this.siteOrder = [...sites].sort((a, b) => rank(a) - rank(b) || a.name.localeCompare(b.name));
    this.applySettings();
    this.placeLabels();
  }

  /**
   * Puts each site's label on the first side — right, left, above, below — where it overlaps no symbol and no label
   * placed before it (greedy, in `siteOrder`); a label with no free side is hidden (shown while the pointer rests
   * on its site). Runs when the view settles and when the sites change, not on every frame of a pan.
   */
  placeLabels(): void {
    const sites = this.siteOrder.filter((s) => this.markers.has(s.id));
    if (sites.length === 0) return;
    const GAP = 3;
    const DOT = 11; // half the symbol's 13 px box and the plan's 4 px ring, with a pixel to spare
    const pts = sites.map((s) => this.map.project([s.lon, s.lat]));
    const labels = sites.map((s) => this.markers.get(s.id)!.el.querySelector('.site-label') as HTMLElement);
    // Read every size first, then write every class: one layout, not one per label.
    const sizes = labels.map((l) => [l.offsetWidth, l.offsetHeight]);
    const taken: [number, number, number, number][] = pts.map((p) => [
      p.x - DOT,
      p.y - DOT,
      p.x + DOT,
      p.y + DOT,
    ]);
    const free = (b: [number, number, number, number], own: number) =>
      !taken.some((t, k) => k !== own && b[0] < t[2] && b[2] > t[0] && b[1] < t[3] && b[3] > t[1]);
    const places: string[] = sites.map((_, i) => {
      const { x, y } = pts[i];
      const [w, hgt] = sizes[i];
      if (w === 0) return 'at-right'; // hidden (sites layer off): keep its place
      const options: [string, [number, number, number, number]][] = [
        ['at-right', [x + DOT, y - hgt / 2, x + DOT + GAP + w, y + hgt / 2]],
        ['at-left', [x - DOT - GAP - w, y - hgt / 2, x - DOT, y + hgt / 2]],
        ['at-top', [x - w / 2, y - DOT - GAP - hgt, x + w / 2, y - DOT]],
        ['at-bottom', [x - w / 2, y + DOT, x + w / 2, y + DOT + GAP + hgt]],
      ];
      const pick = options.find(([, b]) => free(b, i));
      if (!pick) return 'crowded';
      taken.push(pick[1]);
      return pick[0];
    });
    labels.forEach((l, i) => {
      const cls = `site-label ${places[i]}`;
      if (l.className !== cls) l.className = cls;
    });
  }

  /**
   * Shows the whole of `b`, clear of the legend box at the lower right (`rightPx`: the room it takes) and of the
   * controls along the top.
   */
  fitBounds(b: { west: number; south: number; east: number; north: number }, rightPx = 0): void {
    const c = this.map.getContainer();
    // Keep the legend's room only when enough map is left beside it.
    const right = rightPx > 0 && c.clientWidth - rightPx > 240 ? rightPx + 20 : 30;
    this.map.fitBounds(
      [
        [b.west, b.south],
        [b.east, b.north],
      ],
      { padding: { top: 44, bottom: 30, left: 30, right }, duration: 0 },
    );
  }
}
