/**
 * Load (issue 13): the static server of the built app (bin/serve.mjs) under a crowd of concurrent clients asking
 * for valid and invalid paths, and the app's engine (worker/runtime/engine.ts, run in Node as test/engine.test.ts does)
 * under storms of start / cancel / restart, inline and over the worker_threads pool (worker/runtime/node-pool.ts). After
 * each storm a full run must give exactly the figures of a clean run on a fresh engine, and the pool's workers
 * must all be gone once it is closed. Inputs are invented (test/e2e/fixture.ts: terrain over the open ocean).
 */
import {
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { request, Agent } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer, SECURITY_HEADERS, type RunningServer } from '../bin/serve.mjs';
import { docOf, type ScenarioDoc } from '../app/state.ts';
import { Cancelled, Engine, type CoverageSummary, type SensorRef } from '../worker/runtime/engine.ts';
import { NodePool } from '../worker/runtime/node-pool.ts';
import { loadScenario } from '../worker/cli/scenario.ts';
import { E2E_BOUNDS, writeE2eData, type E2eData } from './e2e/fixture.ts';

let dir: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'airshade-load-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A small seeded generator (mulberry32), so that a storm is the same storm every run. */
function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

// ---------------------------------------------------------------------------------------------------------------
// The static server

interface Answer {
  status: number;
  headers: Record<string, string | string[] | undefined>;
  body: Buffer;
}

function fetchRaw(
  url: string,
  path: string,
  agent: Agent,
  opts: { method?: string; headers?: Record<string, string>; abortAfterBytes?: number } = {},
): Promise<Answer | 'aborted'> {
  const u = new URL(url);
  return new Promise((resolve, reject) => {
    const req = request(
      { host: u.hostname, port: u.port, path, method: opts.method ?? 'GET', headers: opts.headers, agent },
      (res) => {
        const chunks: Buffer[] = [];
        let n = 0;
        res.on('data', (c: Buffer) => {
          chunks.push(c);
          n += c.length;
          if (opts.abortAfterBytes !== undefined && n >= opts.abortAfterBytes) {
            req.destroy();
            resolve('aborted');
          }
        });
        res.on('end', () =>
          resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }),
        );
        res.on('error', () => resolve('aborted'));
      },
    );
    req.on('error', (e) => (opts.abortAfterBytes !== undefined ? resolve('aborted') : reject(e)));
    req.end();
  });
}

describe('static server under concurrent clients', () => {
  let server: RunningServer;
  let root: string;
  const big = Buffer.alloc(3 << 20);
  const files: Record<string, Buffer> = {};

  beforeAll(async () => {
    root = join(dir, 'app');
    const data = join(dir, 'data');
    mkdirSync(join(root, 'assets'), { recursive: true });
    mkdirSync(join(data, 'demo'), { recursive: true });
    for (let i = 0; i < big.length; i++) big[i] = (i * 2654435761) >>> 24;
    files['/'] = Buffer.from('<!doctype html><title>Airshade</title>\n');
    files['/assets/app.js'] = Buffer.from('console.log("invented");\n'.repeat(200));
    files['/assets/big.bin'] = big;
    files['/data/demo/scenario.json'] = Buffer.from('{"name":"invented"}\n');
    writeFileSync(join(root, 'index.html'), files['/']);
    writeFileSync(join(root, 'assets', 'app.js'), files['/assets/app.js']);
    writeFileSync(join(root, 'assets', 'big.bin'), big);
    writeFileSync(join(data, 'demo', 'scenario.json'), files['/data/demo/scenario.json']);
    writeFileSync(join(dir, 'secret.txt'), 'outside the served folders\n');
    symlinkSync(join(dir, 'secret.txt'), join(root, 'assets', 'out-link.txt'));
    server = await startServer({ root, dataDir: data });
  });
  afterAll(async () => server?.close());

  /** One request of the mix and what its answer must be. */
  type Case = {
    path: string;
    method?: string;
    headers?: Record<string, string>;
    status: number;
    body?: Buffer;
    abortAfterBytes?: number;
  };
  const mix = (): Case[] => [
    { path: '/', status: 200, body: files['/'] },
    { path: '/index.html?x=1#y', status: 200, body: files['/'] },
    { path: '/assets/app.js', status: 200, body: files['/assets/app.js'] },
    { path: '/assets/big.bin', status: 200, body: big },
    {
      path: '/assets/big.bin',
      headers: { Range: 'bytes=1000-1999' },
      status: 206,
      body: big.subarray(1000, 2000),
    },
    {
      path: '/assets/big.bin',
      headers: { Range: 'bytes=-10' },
      status: 206,
      body: big.subarray(big.length - 10),
    },
    { path: '/assets/big.bin', headers: { Range: `bytes=${big.length}-` }, status: 416 },
    { path: '/assets/big.bin', abortAfterBytes: 64 << 10, status: 0 },
    { path: '/assets/app.js', method: 'HEAD', status: 200, body: Buffer.alloc(0) },
    { path: '/data/demo/scenario.json', status: 200, body: files['/data/demo/scenario.json'] },
    { path: '/data/../secret.txt', status: 404 },
    { path: '/data/%2e%2e/%2e%2e/secret.txt', status: 404 },
    { path: '/..%2fsecret.txt', status: 404 },
    { path: '/assets/out-link.txt', status: 404 },
    { path: '/assets/%zz', status: 404 },
    { path: '/assets/app.js%00.html', status: 404 },
    { path: '/nothing/here', status: 404 },
    { path: '/assets/app.js', method: 'POST', status: 405 },
    { path: '/assets/app.js', method: 'DELETE', status: 405 },
    { path: '/' + 'a/'.repeat(2000), status: 404 },
  ];

  async function storm(count: number, seed: number): Promise<number> {
    const agent = new Agent({ keepAlive: true, maxSockets: 64 });
    const cases = mix();
    const r = rng(seed);
    const picked = Array.from({ length: count }, () => cases[Math.floor(r() * cases.length)]);
    const answers = await Promise.all(
      picked.map((c) =>
        fetchRaw(server.url, c.path, agent, {
          method: c.method,
          headers: c.headers,
          abortAfterBytes: c.abortAfterBytes,
        }),
      ),
    );
    agent.destroy();
    let checked = 0;
    answers.forEach((a, i) => {
      const c = picked[i];
      if (c.abortAfterBytes !== undefined) {
        expect(a).toBe('aborted');
        return;
      }
      expect(a, c.path).not.toBe('aborted');
      const ans = a as Answer;
      expect([c.method ?? 'GET', c.path, ans.status]).toEqual([c.method ?? 'GET', c.path, c.status]);
      // The isolation and CSP headers on every answer, whatever its status.
      for (const [k, v] of Object.entries(SECURITY_HEADERS)) expect(ans.headers[k.toLowerCase()]).toBe(v);
      if (c.body !== undefined) expect(ans.body.equals(c.body), c.path).toBe(true);
      if (c.status >= 400) expect(ans.body.toString()).not.toContain('outside the served folders');
      checked++;
    });
    return checked;
  }

  it('answers 200 mixed concurrent requests correctly, five times over, with steady memory', async () => {
    // Round 1 warms up (code paths compiled, buffers pooled); rounds 2–5 must not grow the process.
    expect(await storm(200, 1)).toBeGreaterThan(150);
    const rss: number[] = [];
    for (let round = 2; round <= 5; round++) {
      expect(await storm(200, round)).toBeGreaterThan(150);
      rss.push(process.memoryUsage().rss);
    }
    // Each round moves ~60 MiB through the server (a 3 MiB file many times): a leak of one buffer per request
    // would grow the process by hundreds of MiB over the rounds.
    expect(rss[3] - rss[0]).toBeLessThan(96 << 20);
    // Still serving, and its folder listing is what we wrote (nothing left behind).
    const after = await fetchRaw(server.url, '/', new Agent());
    expect((after as Answer).status).toBe(200);
    expect(readdirSync(join(root, 'assets')).sort()).toEqual(['app.js', 'big.bin', 'out-link.txt']);
  });
});

// ---------------------------------------------------------------------------------------------------------------
// The engine under cancel storms

describe('engine under start / cancel / restart storms', () => {
  let data: E2eData;
  let doc: ScenarioDoc;
  let tiles: { name: string; buffer: ArrayBuffer }[];
  let all: SensorRef[];

  beforeAll(async () => {
    data = writeE2eData(join(dir, 'e2e'));
    const { scenario } = await loadScenario(data.scenarioPath);
    doc = docOf(scenario);
    tiles = data.tiles.map((t) => {
      const b = readFileSync(t.path);
      return {
        name: t.file.split('/').pop()!,
        buffer: b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer,
      };
    });
    all = doc.sites.features.flatMap((f) =>
      (f.properties.allowedTypes ?? doc.sensorTypes.map((t) => t.id)).map((typeId) => ({
        siteId: f.properties.id,
        typeId,
      })),
    );
  });

  async function engineWith(executorFor?: ConstructorParameters<typeof Engine>[0]): Promise<Engine> {
    const e = new Engine(executorFor, { shared: executorFor !== undefined });
    await e.loadTiles(
      tiles.map((t) => ({ name: t.name, buffer: t.buffer.slice(0) })),
      true,
      { input: structuredClone(doc), display: 'fixture' },
    );
    return e;
  }

  /** Everything a full run shows: the volume figures, each level's layers, and probes across the terrain. */
  function figures(e: Engine, r: CoverageSummary) {
    const probes = [];
    const { west: w, south: s, east, north: n } = E2E_BOUNDS;
    for (let i = 0; i <= 6; i++)
      for (let j = 0; j <= 6; j++) probes.push(e.probe(w + ((east - w) * i) / 6, s + ((n - s) * j) / 6));
    return {
      volumes: r.volumes,
      layers: r.flightLevels.map((fl) => e.levelGeoJson(fl)),
      probes,
    };
  }

  /**
   * 100 cycles: a coverage job of every sensor starts, and is stopped — by `cancel()` or by a scenario change
   * (another k, so that every cycle has fresh footprints to compute) — after a seeded number of progress steps or
   * a seeded delay; the next cycle starts at once, while pieces of the stopped job may still be running. Every
   * tenth job is let finish. Returns how the jobs ended.
   */
  async function cancelStorm(e: Engine, seed: number): Promise<{ cancelled: number; finished: number }> {
    const r = rng(seed);
    let cancelled = 0;
    let finished = 0;
    let pending: Promise<unknown> = Promise.resolve();
    // A cancel by delay may outlive its own job (a job quicker than its delay): cleared at the end of the storm so
    // that it cannot fall on the run after it.
    const timers: ReturnType<typeof setTimeout>[] = [];
    for (let cycle = 0; cycle < 100; cycle++) {
      const k = 1.2 + cycle * 0.001;
      e.setScenario({ ...structuredClone(doc), earth: { kFactor: k } }, `storm-${cycle}.json`);
      const stopAfter = Math.floor(r() * 12);
      const byDelay = r() < 0.3;
      const letFinish = cycle % 10 === 9;
      let steps = 0;
      const job = e.coverage(all, undefined, () => {
        if (!letFinish && !byDelay && ++steps === stopAfter + 1) {
          if (r() < 0.5) e.cancel();
          else e.setScenario({ ...structuredClone(doc), earth: { kFactor: k + 0.5 } }, 'moved.json');
        }
      });
      if (byDelay && !letFinish) timers.push(setTimeout(() => e.cancel(), Math.floor(r() * 20)));
      const outcome = job.then(
        () => 'finished' as const,
        (err: unknown) => {
          if (err instanceof Cancelled) return 'cancelled' as const;
          throw err;
        },
      );
      // Restart at once: the next cycle's job overlaps this one's tail.
      pending = Promise.all([pending, outcome.then((o) => (o === 'finished' ? finished++ : cancelled++))]);
      if (letFinish || cycle % 7 === 0) await pending;
    }
    await pending;
    for (const t of timers) clearTimeout(t);
    return { cancelled, finished };
  }

  it('inline: 100 cycles, then a full run equals a clean run', async () => {
    const clean = await engineWith();
    const want = figures(clean, await clean.coverage(all, undefined));

    const e = await engineWith();
    const tally = await cancelStorm(e, 11);
    expect(tally.cancelled + tally.finished).toBe(100);
    expect(tally.cancelled).toBeGreaterThan(50);
    expect(tally.finished).toBeGreaterThanOrEqual(10);
    e.setScenario(structuredClone(doc), 'fixture');
    const got = figures(e, await e.coverage(all, undefined));
    expect(got).toEqual(want);
  });

  it('worker pool: 100 cycles over 2 worker threads, then a full run equals a clean run, and no worker is left', async () => {
    const threadsBefore = readdirSync('/proc/self/task').length;
    const handles = () => process.getActiveResourcesInfo().filter((h) => /Worker|MessagePort/.test(h)).length;
    const handlesBefore = handles();
    const pools: NodePool[] = [];
    const executorFor: ConstructorParameters<typeof Engine>[0] = async (t) => {
      const pool = await NodePool.start(2, t.toParts());
      pools.push(pool);
      return pool.executor();
    };
    const clean = await engineWith();
    const want = figures(clean, await clean.coverage(all, undefined));

    const e = await engineWith(executorFor);
    try {
      expect(readdirSync('/proc/self/task').length).toBeGreaterThanOrEqual(threadsBefore + 2);
      const tally = await cancelStorm(e, 23);
      expect(tally.cancelled + tally.finished).toBe(100);
      expect(tally.cancelled).toBeGreaterThan(50);
      e.setScenario(structuredClone(doc), 'fixture');
      const got = figures(e, await e.coverage(all, undefined));
      expect(got).toEqual(want);
      // One pool for the one terrain: a storm starts no workers of its own.
      expect(pools.length).toBe(1);
    } finally {
      await Promise.all(pools.map((p) => p.close()));
    }
    // Every worker thread ended and its handles closed (threads end a moment after terminate() resolves).
    for (let i = 0; i < 50 && readdirSync('/proc/self/task').length > threadsBefore; i++) {
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(readdirSync('/proc/self/task').length).toBeLessThanOrEqual(threadsBefore);
    expect(handles()).toBe(handlesBefore);
  });
});
