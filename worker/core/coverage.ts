/**
 * The coverage job: line-of-sight floors per site, footprints per (site, type), and the network they form.
 *
 *   per site:  computeFloor on the analysis grid (pooled: sweep + resample)  → floor, distance
 *   per type:  sensorBand (sensor limits vs distance)  ×  floor              → footprint (lo, hi per cell)
 *   network:   distinct sites per cell and flight level, per kind           → folds, network floor, stats
 *
 * Sensor types on one site share its floor (the horizon cache makes a second run with the same sites free).
 */
import { computeFloor, type Executor, type Progress } from './floor.ts';
import { buildFootprint, sensorBand, type Footprint } from './footprint.ts';
import type { GridGeo } from './grid.ts';
import type { HorizonCache } from './horizon-cache.ts';
import type { TerrainRaster } from './horizon.ts';
import type { SensorModel, Target } from './sensor.ts';

export interface CoverageSite {
  id: string;
  name: string;
  lon: number;
  lat: number;
  mastHeightM: number;
  /** Antenna tilt, degrees (default 0). */
  tiltDeg?: number;
}

export interface Candidate {
  site: CoverageSite;
  model: SensorModel;
  /** The aircraft this footprint is for (the study's, or a volume's own). */
  target: Target;
}

export interface CoverageRequest {
  grid: GridGeo;
  /** Terrain height under each analysis cell centre (m), NaN where unknown. */
  ground: Float32Array;
  candidates: readonly Candidate[];
  kFactor: number;
  earthRadiusM?: number;
  /** Upper bound on ranges computed (m); each site also stops at its longest sensor range. */
  maxRangeM: number;
  weather?: boolean;
  /** Gaseous attenuation (default true). */
  atmosphere?: boolean;
  /**
   * The study's other targets (volumes with their own): each footprint then carries the same sensor's footprints
   * for them in `byTarget`, from the same floor (the band alone depends on the target).
   */
  extraTargets?: readonly Target[];
  /** Range step along the radials (default: one terrain pixel at the site). */
  rangeStepM?: number;
  /** Arc between neighbouring radials (default: 0.75 of the analysis cell's shorter side). */
  arcStepM?: number;
}

export interface SiteFloor {
  site: CoverageSite;
  floor: Float32Array;
  distance: Float32Array;
  antennaAltM: number;
  groundM: number;
}

export async function computeFootprints(
  terrain: TerrainRaster,
  req: CoverageRequest,
  exec: Executor,
  opts: { onProgress?: Progress; cache?: HorizonCache } = {},
): Promise<{ footprints: Footprint[]; siteFloors: SiteFloor[] }> {
  const bySite = new Map<string, Candidate[]>();
  for (const c of req.candidates) {
    const list = bySite.get(c.site.id) ?? [];
    list.push(c);
    bySite.set(c.site.id, list);
  }
  const reM = req.kFactor * (req.earthRadiusM ?? 6_371_000);
  const arcStepM = req.arcStepM ?? 1.5 * halfCellM(req.grid);
  const footprints: Footprint[] = [];
  const siteFloors: SiteFloor[] = [];
  let done = 0;
  // Pipelined: while the pool computes one site's floor, this thread turns the previous site's into footprints.
  const groups = [...bySite.values()];
  const reachOf = (cands: Candidate[]) =>
    Math.min(req.maxRangeM, Math.max(...cands.map((c) => c.model.instrumentedRangeM)));
  const floorOf = (cands: Candidate[]) => {
    const site = cands[0].site;
    return computeFloor(
      terrain,
      {
        lon: site.lon,
        lat: site.lat,
        mastM: site.mastHeightM,
        kFactor: req.kFactor,
        earthRadiusM: req.earthRadiusM,
        maxRangeM: reachOf(cands),
        arcStepM,
        // One terrain pixel between range samples: analysis cells are many terrain pixels wide, and the finer
        // step of the engine's default buys nothing at that scale (test/coverage.test.ts checks the radar horizon).
        rangeStepM: req.rangeStepM ?? terrainPixelM(terrain, site),
      },
      req.grid,
      req.ground,
      exec,
      {
        withDistance: true,
        cache: opts.cache,
        onProgress: (f, stage) => opts.onProgress?.((done + f) / groups.length, `${site.name}: ${stage}`),
      },
    );
  };
  const footprintFor = (
    c: Candidate,
    target: Target,
    floor: Float32Array,
    distance: Float32Array,
    antennaAltM: number,
    maxRangeM: number,
  ): Footprint => {
    const profile = c.model.profile({
      target,
      antennaAltM,
      tiltDeg: c.site.tiltDeg,
      weather: req.weather,
      atmosphere: req.atmosphere,
    });
    const band = sensorBand(profile, { antennaAltM, reM, maxRangeM });
    return buildFootprint(c.site.id, c.model, floor, distance, band);
  };
  let next = groups.length > 0 ? floorOf(groups[0]) : null;
  for (let g = 0; g < groups.length; g++) {
    const cands = groups[g];
    const site = cands[0].site;
    const res = await next!;
    next = g + 1 < groups.length ? floorOf(groups[g + 1]) : null;
    const distance = res.distance!;
    siteFloors.push({
      site,
      floor: res.floor,
      distance,
      antennaAltM: res.stats.antennaAltM,
      groundM: res.stats.groundM,
    });
    for (const c of cands) {
      const fp = footprintFor(
        c,
        c.target,
        res.floor,
        distance,
        res.stats.antennaAltM,
        res.horizon.layout.maxRangeM,
      );
      if (req.extraTargets?.length) {
        // Targets that differ only in what this type does not depend on share its footprint.
        const key0 = c.model.targetKey(c.target);
        fp.byTarget = req.extraTargets.map((t) =>
          c.model.targetKey(t) === key0
            ? fp
            : footprintFor(c, t, res.floor, distance, res.stats.antennaAltM, res.horizon.layout.maxRangeM),
        );
      }
      footprints.push(fp);
    }
    done++;
    opts.onProgress?.(done / groups.length, `${site.name}: done`);
  }
  return { footprints, siteFloors };
}

function terrainPixelM(terrain: TerrainRaster, site: CoverageSite): number {
  const p = terrain.metresPerPixel(site.lon, site.lat);
  return Math.min(p.x, p.y);
}

function halfCellM(grid: GridGeo): number {
  if (grid.crs.kind === 'projected') return Math.min(Math.abs(grid.pixelX), Math.abs(grid.pixelY)) / 2;
  const latMid = grid.originY + (grid.height / 2) * grid.pixelY;
  const m = 111_320;
  return (
    (Math.min(Math.abs(grid.pixelX) * Math.cos((latMid * Math.PI) / 180), Math.abs(grid.pixelY)) * m) / 2
  );
}
