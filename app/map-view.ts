/**
 * The map: MapLibre with a style of our own that loads nothing from outside (no tiles, glyphs, sprites or fonts):
 * raster images made by the engine worker (relief, network floor, folds, gaps, losses, layout differences) laid
 * under the map's transparent canvas, the airspace volumes, an azimuth line for the vertical coverage diagram, a drawing
 * preview, and the sites as draggable markers whose labels are text nodes.
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

export type ImageLayerId = 'relief' | 'floor' | 'fold' | 'gap' | 'compare' | 'compare-lost' | 'loss';
/** The raster canvases, bottom to top (MapLibre's canvas, with the vector layers, lies above them all). */
const IMAGE_ORDER: readonly ImageLayerId[] = [
  'relief',
  'floor',
  'fold',
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

  constructor(
    container: HTMLElement,
    private readonly handlers: {
      onSiteClick: (id: string) => void;
      onSiteDrag: (id: string, lon: number, lat: number) => void;
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
    for (const id of ['relief', 'floor', 'fold', 'gap', 'loss'] as const) img(id, settings[id]);
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
        const el = document.createElement('div');
        el.className = 'site';
        el.dataset.siteId = s.id;
        const dot = document.createElement('span');
        dot.className = 'site-dot';
        const label = document.createElement('span');
        label.className = 'site-label';
        el.append(dot, label);
        el.addEventListener('click', (e) => {
          e.stopPropagation();
          this.handlers.onSiteClick(s.id);
        });
        const marker = new maplibregl.Marker({ element: el, draggable })
          .setLngLat([s.lon, s.lat])
          .addTo(this.map);
        marker.on('dragend', () => {
          const p = marker.getLngLat();
          this.handlers.onSiteDrag(s.id, p.lng, p.lat);
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
    }
    this.applySettings();
  }

  fitBounds(b: { west: number; south: number; east: number; north: number }): void {
    this.map.fitBounds(
      [
        [b.west, b.south],
        [b.east, b.north],
      ],
      { padding: 30, duration: 0 },
    );
  }
}
