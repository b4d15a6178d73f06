/**
 * Horizons cached by their inputs. Sensor types on one site share a horizon (DESIGN §3 stage 2), and a what-if
 * that moves nothing recomputes nothing. Keyed by the terrain object (a new mosaic is a new terrain) and every
 * input that shapes the horizon; least recently used entries go first once the byte budget is spent.
 */
import type { Horizon, HorizonSpec, TerrainRaster } from './horizon.ts';

export class HorizonCache {
  private readonly byTerrain = new WeakMap<TerrainRaster, Map<string, Horizon>>();
  /** Recency order over all terrains: key → owner map. */
  private readonly order = new Map<string, { terrain: WeakRef<TerrainRaster>; key: string; bytes: number }>();
  private bytes = 0;
  private serial = 0;
  private readonly terrainIds = new WeakMap<TerrainRaster, number>();

  constructor(readonly maxBytes = 1 << 30) {}

  static key(spec: HorizonSpec): string {
    return JSON.stringify([
      spec.lon,
      spec.lat,
      spec.mastM,
      spec.kFactor ?? null,
      spec.earthRadiusM ?? null,
      spec.maxRangeM,
      spec.rangeStepM ?? null,
      spec.arcStepM ?? null,
    ]);
  }

  get(terrain: TerrainRaster, spec: HorizonSpec): Horizon | undefined {
    const key = HorizonCache.key(spec);
    const h = this.byTerrain.get(terrain)?.get(key);
    if (h) {
      const id = this.orderKey(terrain, key);
      const e = this.order.get(id)!;
      this.order.delete(id);
      this.order.set(id, e);
    }
    return h;
  }

  set(terrain: TerrainRaster, spec: HorizonSpec, horizon: Horizon): void {
    const key = HorizonCache.key(spec);
    let m = this.byTerrain.get(terrain);
    if (!m) {
      m = new Map();
      this.byTerrain.set(terrain, m);
    }
    const id = this.orderKey(terrain, key);
    const old = this.order.get(id);
    if (old) this.bytes -= old.bytes;
    m.set(key, horizon);
    this.order.delete(id);
    this.order.set(id, { terrain: new WeakRef(terrain), key, bytes: horizon.tan.byteLength });
    this.bytes += horizon.tan.byteLength;
    for (const [oid, e] of this.order) {
      if (this.bytes <= this.maxBytes || oid === id) break;
      this.order.delete(oid);
      this.bytes -= e.bytes;
      const t = e.terrain.deref();
      if (t) this.byTerrain.get(t)?.delete(e.key);
    }
  }

  get sizeBytes(): number {
    return this.bytes;
  }

  private orderKey(terrain: TerrainRaster, key: string): string {
    let id = this.terrainIds.get(terrain);
    if (id === undefined) {
      id = ++this.serial;
      this.terrainIds.set(terrain, id);
    }
    return `${id}|${key}`;
  }
}
