/**
 * The static server (bin/serve.mjs) on its own, the e2e demo data folder (fixture.ts), and the browser harness
 * (harness.ts) on a tiny page: headers, MIME types, path traversal, methods, byte ranges; the demo data loads
 * as a scenario; chromium launched through the harness gets a cross-origin isolated page, reads its canvases
 * back, and cannot reach anything outside this machine.
 */
import { spawn } from 'node:child_process';
import {
  copyFileSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CSP, startServer, type RunningServer } from '../../bin/serve.mjs';
import { loadScenario } from '../../worker/cli/scenario.ts';
import { checkAgainstTerrain } from '../../worker/io/scenario-text.ts';
import { readDemTile } from '../../worker/io/geotiff-read.ts';
import { E2E_BOUNDS, E2E_LAYOUT_NAME, E2E_SCENARIO_FILE, writeE2eData } from './fixture.ts';
import {
  blockOutside,
  canvasNonBlank,
  launchBrowser,
  longTasks,
  saveArtefact,
  watchPage,
} from './harness.ts';

const EXPECTED_HEADERS: Record<string, string> = {
  'cross-origin-opener-policy': 'same-origin',
  'cross-origin-embedder-policy': 'require-corp',
  'cross-origin-resource-policy': 'same-origin',
  'x-content-type-options': 'nosniff',
  'cache-control': 'no-cache',
  'content-security-policy': CSP,
};

interface RawResponse {
  status: number;
  headers: Record<string, string | string[] | undefined>;
  body: Buffer;
}

/** One request with the path sent exactly as given (fetch would normalise `..` away before sending). */
function raw(
  base: string,
  path: string,
  opts: { method?: string; headers?: Record<string, string> } = {},
): Promise<RawResponse> {
  const u = new URL(base);
  return new Promise((ok, fail) => {
    const req = request(
      { host: u.hostname, port: u.port, path, method: opts.method ?? 'GET', headers: opts.headers },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () =>
          ok({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }),
        );
        res.on('error', fail);
      },
    );
    req.on('error', fail);
    req.end();
  });
}

function expectSecurityHeaders(headers: RawResponse['headers']): void {
  for (const [name, value] of Object.entries(EXPECTED_HEADERS)) expect(headers[name], name).toBe(value);
}

describe('bin/serve.mjs', () => {
  let top: string;
  let root: string;
  let dataDir: string;
  let server: RunningServer;
  const indexHtml = '<!doctype html><title>root page</title>\n';
  const tiff = Buffer.from([0x49, 0x49, 0x2a, 0x00, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);

  beforeAll(async () => {
    // top/{app,data}: a file in top/ is what a traversal out of either folder would reach.
    top = mkdtempSync(join(tmpdir(), 'airshade-serve-'));
    root = join(top, 'app');
    dataDir = join(top, 'data');
    mkdirSync(join(root, 'assets'), { recursive: true });
    mkdirSync(join(dataDir, 'terrain'), { recursive: true });
    writeFileSync(join(top, 'package.json'), '{"secret": true}\n');
    writeFileSync(join(root, 'index.html'), indexHtml);
    writeFileSync(join(root, 'assets', 'main.js'), 'export const x = 1;\n');
    writeFileSync(join(root, 'assets', 'engine.wasm'), Buffer.from([0, 0x61, 0x73, 0x6d, 1, 0, 0, 0]));
    writeFileSync(join(root, 'assets', 'style.css'), 'body { margin: 0; }\n');
    writeFileSync(join(dataDir, 'sites.geojson'), '{"type":"FeatureCollection","features":[]}\n');
    writeFileSync(join(dataDir, 'sites.csv'), 'id,name\n');
    writeFileSync(join(dataDir, 'terrain', 'a tile.tif'), tiff);
    writeFileSync(join(dataDir, 'blob.bin'), 'x');
    // Links (issue 13): to a file and a folder outside the served folders, and one that stays inside.
    symlinkSync(join(top, 'package.json'), join(dataDir, 'linked-out.json'));
    symlinkSync(top, join(root, 'linked-folder'));
    symlinkSync(join(dataDir, 'sites.geojson'), join(dataDir, 'linked-in.geojson'));
    server = await startServer({ root, dataDir });
  });

  afterAll(async () => {
    await server?.close();
    rmSync(top, { recursive: true, force: true });
  });

  it('listens on 127.0.0.1 on a free port and serves index.html at / with the isolation and CSP headers', async () => {
    expect(server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/$/);
    const r = await raw(server.url, '/');
    expect(r.status).toBe(200);
    expect(r.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(r.headers['content-length']).toBe(String(Buffer.byteLength(indexHtml)));
    expect(r.body.toString()).toBe(indexHtml);
    expectSecurityHeaders(r.headers);
    expect(CSP).toContain("script-src 'self' 'wasm-unsafe-eval'");
    expect(CSP).toContain("frame-ancestors 'none'");

    const same = await raw(server.url, '/index.html?v=2');
    expect(same.status).toBe(200);
    expect(same.body.toString()).toBe(indexHtml);
  });

  it('gives each file type its MIME type, from the app folder and from /data/', async () => {
    const cases: [string, string][] = [
      ['/assets/main.js', 'text/javascript; charset=utf-8'],
      ['/assets/engine.wasm', 'application/wasm'],
      ['/assets/style.css', 'text/css; charset=utf-8'],
      ['/data/sites.geojson', 'application/geo+json'],
      ['/data/sites.csv', 'text/csv; charset=utf-8'],
      ['/data/terrain/a%20tile.tif', 'image/tiff'],
      ['/data/blob.bin', 'application/octet-stream'],
    ];
    for (const [path, type] of cases) {
      const r = await raw(server.url, path);
      expect(r.status, path).toBe(200);
      expect(r.headers['content-type'], path).toBe(type);
      expectSecurityHeaders(r.headers);
    }
    const t = await raw(server.url, '/data/terrain/a%20tile.tif');
    expect(t.body.equals(tiff)).toBe(true);
    expect(t.headers['content-length']).toBe(String(tiff.length));
  });

  it('answers HEAD with the headers and no body', async () => {
    const r = await raw(server.url, '/data/terrain/a%20tile.tif', { method: 'HEAD' });
    expect(r.status).toBe(200);
    expect(r.headers['content-length']).toBe(String(tiff.length));
    expect(r.headers['content-type']).toBe('image/tiff');
    expect(r.body.length).toBe(0);
    expectSecurityHeaders(r.headers);
  });

  it('refuses paths that leave the data or app folder with 404, however they are spelt', async () => {
    // Sanity: the file a traversal would reach exists, so a 404 here means the server refused.
    expect(readFileSync(join(dataDir, '..', 'package.json'), 'utf8')).toContain('secret');
    for (const path of [
      '/data/../package.json',
      '/data/%2e%2e/package.json',
      '/data/%2E%2E/package.json',
      '/data/..%2fpackage.json',
      '/data/%2e%2e%2fpackage.json',
      '/data/terrain/../../package.json',
      '/../package.json',
      '/%2e%2e/package.json',
      '/assets/%2e%2e/%2e%2e/package.json',
      '/data/%00x',
      '/data/%zz',
    ]) {
      const r = await raw(server.url, path);
      expect(r.status, path).toBe(404);
      expect(r.body.toString(), path).not.toContain('secret');
      expectSecurityHeaders(r.headers);
    }
    // Inside the folder, `..` is fine.
    const inside = await raw(server.url, '/data/terrain/../sites.geojson');
    expect(inside.status).toBe(200);
    expect(inside.headers['content-type']).toBe('application/geo+json');
  });

  it('follows no link out of its folders: the real path of a served file stays inside (issue 13)', async () => {
    for (const path of [
      '/data/linked-out.json',
      '/linked-folder/package.json',
      '/linked-folder/data/blob.bin',
    ]) {
      const r = await raw(server.url, path);
      expect(r.status, path).toBe(404);
      expect(r.body.toString(), path).not.toContain('secret');
      expectSecurityHeaders(r.headers);
    }
    // A link that stays inside is served, with the type of the name asked for.
    const inside = await raw(server.url, '/data/linked-in.geojson');
    expect(inside.status).toBe(200);
    expect(inside.headers['content-type']).toBe('application/geo+json');
    expect(inside.body.toString()).toContain('FeatureCollection');
  });

  it('gives 404 for a missing file and for a folder without index.html', async () => {
    for (const path of ['/nope.js', '/data/nope.json', '/data/terrain/', '/data/']) {
      const r = await raw(server.url, path);
      expect(r.status, path).toBe(404);
      expectSecurityHeaders(r.headers);
    }
  });

  it('answers other methods with 405 and an Allow header', async () => {
    for (const method of ['POST', 'PUT', 'DELETE', 'OPTIONS']) {
      const r = await raw(server.url, '/index.html', { method });
      expect(r.status, method).toBe(405);
      expect(r.headers.allow, method).toBe('GET, HEAD');
      expectSecurityHeaders(r.headers);
    }
  });

  it('serves a single byte range with 206 and refuses a range past the end with 416', async () => {
    const path = '/data/terrain/a%20tile.tif';
    const mid = await raw(server.url, path, { headers: { Range: 'bytes=4-7' } });
    expect(mid.status).toBe(206);
    expect(mid.headers['content-range']).toBe(`bytes 4-7/${tiff.length}`);
    expect(mid.headers['content-length']).toBe('4');
    expect([...mid.body]).toEqual([1, 2, 3, 4]);
    expectSecurityHeaders(mid.headers);

    const tail = await raw(server.url, path, { headers: { Range: 'bytes=-3' } });
    expect(tail.status).toBe(206);
    expect([...tail.body]).toEqual([8, 9, 10]);

    const open = await raw(server.url, path, { headers: { Range: 'bytes=12-' } });
    expect(open.status).toBe(206);
    expect([...open.body]).toEqual([9, 10]);

    const past = await raw(server.url, path, { headers: { Range: `bytes=${tiff.length}-` } });
    expect(past.status).toBe(416);
    expect(past.headers['content-range']).toBe(`bytes */${tiff.length}`);

    // Several ranges: the whole file (allowed by RFC 9110).
    const multi = await raw(server.url, path, { headers: { Range: 'bytes=0-1,4-5' } });
    expect(multi.status).toBe(200);
    expect(multi.body.equals(tiff)).toBe(true);
  });

  it('answers a matching If-None-Match with 304', async () => {
    const first = await raw(server.url, '/assets/main.js');
    const etag = first.headers.etag;
    expect(typeof etag).toBe('string');
    const again = await raw(server.url, '/assets/main.js', { headers: { 'If-None-Match': String(etag) } });
    expect(again.status).toBe(304);
    expect(again.body.length).toBe(0);
    expectSecurityHeaders(again.headers);
  });

  it('rejects with EADDRINUSE when the port is taken, and close() can be called twice', async () => {
    const port = Number(new URL(server.url).port);
    await expect(startServer({ root, dataDir, port })).rejects.toMatchObject({ code: 'EADDRINUSE' });
    const other = await startServer({ root, dataDir });
    await other.close();
    await other.close();
    await expect(raw(other.url, '/')).rejects.toThrow();
  });
});

const SERVE_MJS = fileURLToPath(new URL('../../bin/serve.mjs', import.meta.url));

/** Runs a copy of bin/serve.mjs laid out in `repo` (bin/, dist/app/, data/) until its first line of output. */
function runCommand(
  repo: string,
  args: string[],
): Promise<{ line: string; exited: Promise<number | null>; stop(): Promise<void> }> {
  const child = spawn(process.execPath, [join(repo, 'bin', 'serve.mjs'), ...args], {
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  const exited = new Promise<number | null>((ok) => child.on('exit', (code) => ok(code)));
  const stop = async () => {
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM');
    await exited;
  };
  return new Promise((ok, fail) => {
    let out = '';
    const onData = (chunk: Buffer) => {
      out += chunk.toString();
      const nl = out.indexOf('\n');
      if (nl >= 0) ok({ line: out.slice(0, nl), exited, stop });
    };
    child.stdout.on('data', onData);
    child.stderr.on('data', onData);
    child.on('error', fail);
    void exited.then(() => ok({ line: out.trim(), exited, stop }));
  });
}

describe('node bin/serve.mjs (the command)', () => {
  let repo: string;

  beforeAll(() => {
    repo = mkdtempSync(join(tmpdir(), 'airshade-serve-cmd-'));
    mkdirSync(join(repo, 'bin'));
    mkdirSync(join(repo, 'dist', 'app'), { recursive: true });
    mkdirSync(join(repo, 'data'));
    copyFileSync(SERVE_MJS, join(repo, 'bin', 'serve.mjs'));
    writeFileSync(join(repo, 'dist', 'app', 'index.html'), '<p>built app</p>\n');
    writeFileSync(join(repo, 'data', 'demo-scenario.json'), '{"name": "x"}\n');
  });
  afterAll(() => rmSync(repo, { recursive: true, force: true }));

  it('serves dist/app and data/ beside bin/, moving past a busy port', async () => {
    const busy = await startServer({ root: repo, dataDir: repo });
    const port = Number(new URL(busy.url).port);
    const run = await runCommand(repo, ['--port', String(port)]);
    try {
      const m = /^Airshade is running at (http:\/\/127\.0\.0\.1:(\d+)\/)$/.exec(run.line);
      expect(m, run.line).not.toBeNull();
      expect(Number(m![2])).toBeGreaterThan(port);
      const page = await raw(m![1], '/');
      expect(page.body.toString()).toBe('<p>built app</p>\n');
      expectSecurityHeaders(page.headers);
      const data = await raw(m![1], '/data/demo-scenario.json');
      expect(data.status).toBe(200);
      expect(data.headers['content-type']).toBe('application/json; charset=utf-8');
    } finally {
      await run.stop();
      await busy.close();
    }
  });

  it('names the bad argument and what it expected', async () => {
    const bad = await runCommand(repo, ['--port', 'eighty']);
    expect(bad.line).toBe('serve: --port: found "eighty", expected a port number from 0 to 65535');
    expect(await bad.exited).toBe(2);
    const unknown = await runCommand(repo, ['--root', 'x']);
    expect(unknown.line).toMatch(
      /^serve: argument "--root": not known, expected one of --port, --data, --host$/,
    );
    expect(await unknown.exited).toBe(2);
    const noData = await runCommand(repo, ['--data', join(repo, 'missing')]);
    expect(noData.line).toMatch(/^serve: --data .*missing: does not exist, expected a data folder$/);
    expect(await noData.exited).toBe(1);
  });
});

describe('e2e demo data (fixture.ts)', () => {
  let dir: string;

  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'airshade-e2e-data-'));
    writeE2eData(dir);
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('loads as a scenario, with every site and volume on its terrain', async () => {
    const loaded = await loadScenario(join(dir, E2E_SCENARIO_FILE));
    const s = loaded.scenario;
    expect(s.sensorTypes.map((t) => t.kind).sort()).toEqual(['primary', 'secondary']);
    for (const t of s.sensorTypes) {
      expect(t.instrumentedRangeNm).toBeGreaterThanOrEqual(60);
      expect(t.instrumentedRangeNm).toBeLessThanOrEqual(100);
    }
    expect(s.sites).toHaveLength(4);
    expect(s.sites.map((f) => f.properties.id)).toContain('halvoran-north');
    expect(s.flightLevels).toEqual([50, 100, 200]);
    expect(s.grid.cellArcSec).toBe(60);
    expect(s.budget).toBeGreaterThan(0);
    expect(s.volumes.length).toBeGreaterThanOrEqual(1);
    const layout = s.layouts.find((l) => l.name === E2E_LAYOUT_NAME);
    expect(layout?.sensors.length).toBeGreaterThanOrEqual(2);
    expect(layout?.sensors.length).toBeLessThanOrEqual(3);
    expect(loaded.sources.sites).toMatch(/sites\.geojson$/);
    expect(loaded.terrainPaths).toHaveLength(2);
    checkAgainstTerrain(s, E2E_BOUNDS, loaded.file);
  });

  it('writes terrain tiles that the GeoTIFF reader takes back, side by side over the stated bounds', async () => {
    const loaded = await loadScenario(join(dir, E2E_SCENARIO_FILE));
    const tiles = [];
    for (const p of loaded.terrainPaths) {
      const buf = readFileSync(p);
      tiles.push(await readDemTile(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.length), p));
    }
    const [w, e] = tiles;
    expect(w.geo.crs.epsg).toBe(4326);
    expect(w.geo.originX).toBeCloseTo(E2E_BOUNDS.west, 9);
    expect(w.geo.originY).toBeCloseTo(E2E_BOUNDS.north, 9);
    expect(e.geo.originX).toBeCloseTo(w.geo.originX + w.geo.width * w.geo.pixelX, 9);
    expect(e.geo.originX + e.geo.width * e.geo.pixelX).toBeCloseTo(E2E_BOUNDS.east, 9);
    expect(w.geo.originY + w.geo.height * w.geo.pixelY).toBeCloseTo(E2E_BOUNDS.south, 9);
    expect(w.geo.pixelX * 3600).toBeCloseTo(30, 6);
    for (const t of tiles) {
      expect(t.voidsFilled).toBe(0);
      let lo = Infinity;
      let hi = -Infinity;
      for (const z of t.data) {
        lo = Math.min(lo, z);
        hi = Math.max(hi, z);
      }
      expect(hi - lo).toBeGreaterThan(50); // hills, not a flat plate
    }
  });

  it('is served under /data/ with the right MIME types', async () => {
    const server = await startServer({ root: dir, dataDir: dir });
    try {
      const sc = await raw(server.url, `/data/${E2E_SCENARIO_FILE}`);
      expect(sc.status).toBe(200);
      expect(sc.headers['content-type']).toBe('application/json; charset=utf-8');
      const scenario = JSON.parse(sc.body.toString()) as { sites: string; terrain: { files: string[] } };
      const sites = await raw(server.url, `/data/${scenario.sites}`);
      expect(sites.headers['content-type']).toBe('application/geo+json');
      for (const f of scenario.terrain.files) {
        const t = await raw(server.url, `/data/${f}`);
        expect(t.status, f).toBe(200);
        expect(t.headers['content-type'], f).toBe('image/tiff');
        expect(t.body.equals(readFileSync(join(dir, f))), f).toBe(true);
      }
    } finally {
      await server.close();
    }
  });
});

const PAGE_HTML = `<!doctype html>
<html>
  <head>
    <meta charset="utf-8" />
    <link rel="icon" href="data:," />
    <title>harness check</title>
    <script type="module" src="./main.js"></script>
  </head>
  <body>
    <canvas id="flat" width="120" height="80"></canvas>
    <canvas id="gl" width="120" height="80"></canvas>
    <canvas id="blank" width="40" height="30"></canvas>
  </body>
</html>
`;

const PAGE_JS = `
const flat = document.getElementById('flat').getContext('2d');
flat.fillStyle = '#1d4e89';
flat.fillRect(0, 0, 120, 80);
flat.fillStyle = '#f2b134';
flat.fillRect(20, 10, 50, 40);

const gl = document.getElementById('gl').getContext('webgl2');
if (gl) {
  gl.clearColor(0.1, 0.5, 0.3, 1);
  gl.clear(gl.COLOR_BUFFER_BIT);
  gl.enable(gl.SCISSOR_TEST);
  gl.scissor(10, 10, 40, 30);
  gl.clearColor(0.9, 0.1, 0.2, 1);
  gl.clear(gl.COLOR_BUFFER_BIT);
}
document.body.dataset.webgl = gl ? 'yes' : 'no';

// One deliberately long task, so that the long-task observer has something to report.
setTimeout(() => {
  const t0 = performance.now();
  while (performance.now() - t0 < 120) {}
  document.body.dataset.ready = 'yes';
}, 0);
`;

describe('browser harness on a tiny page', () => {
  let top: string;
  let server: RunningServer;

  beforeAll(async () => {
    top = mkdtempSync(join(tmpdir(), 'airshade-harness-'));
    mkdirSync(join(top, 'app'));
    mkdirSync(join(top, 'data'));
    writeFileSync(join(top, 'app', 'index.html'), PAGE_HTML);
    writeFileSync(join(top, 'app', 'main.js'), PAGE_JS);
    server = await startServer({ root: join(top, 'app'), dataDir: join(top, 'data') });
  });

  afterAll(async () => {
    await server?.close();
    rmSync(top, { recursive: true, force: true });
  });

  it('loads without errors, cross-origin isolated, reads canvases back, and reaches nothing outside', async () => {
    const browser = await launchBrowser();
    try {
      const { page, context } = browser;
      const outside = await blockOutside(context);
      const watch = await watchPage(page);
      await page.goto(server.url);
      await page.waitForSelector('body[data-ready="yes"]');

      expect(watch.consoleErrors).toEqual([]);
      expect(watch.pageErrors).toEqual([]);
      expect(watch.httpErrors).toEqual([]);
      expect(
        await page.evaluate(() => (globalThis as { crossOriginIsolated?: boolean }).crossOriginIsolated),
      ).toBe(true);
      expect(await page.evaluate(() => typeof SharedArrayBuffer)).toBe('function');

      const flat = await canvasNonBlank(page, '#flat');
      expect(flat).toMatchObject({ width: 120, height: 80, nonUniform: true, opaquePixels: 120 * 80 });
      expect(flat.distinctColours).toBeGreaterThanOrEqual(2);
      const blank = await canvasNonBlank(page, '#blank');
      expect(blank).toMatchObject({ distinctColours: 1, nonUniform: false, opaquePixels: 0 });

      // WebGL through SwiftShader, read back after its frame was shown (preserveDrawingBuffer from the harness).
      expect(await page.locator('body').getAttribute('data-webgl')).toBe('yes');
      const gl = await canvasNonBlank(page, '#gl');
      expect(gl).toMatchObject({ nonUniform: true, opaquePixels: 120 * 80 });
      const glShot = await canvasNonBlank(page, '#gl', { via: 'screenshot' });
      expect(glShot.nonUniform).toBe(true);
      await expect(canvasNonBlank(page, '#missing')).rejects.toThrow(/nothing matches #missing/);

      // The page spins 120 ms on its main thread; a long task is one of 50 ms or more (W3C Long Tasks API).
      const tasks = await longTasks(page);
      expect(tasks.some((t) => t.duration >= 50)).toBe(true);

      const shot = saveArtefact('harness/tiny-page.png', await page.screenshot());
      expect(readFileSync(shot).subarray(1, 4).toString()).toBe('PNG');

      // The page's CSP refuses a fetch to elsewhere before it reaches the network; watchPage sees the refusal.
      const fetched = await page.evaluate(() =>
        fetch('https://example.invalid/').then(
          () => 'reached',
          () => 'refused',
        ),
      );
      expect(fetched).toBe('refused');
      expect(watch.consoleErrors.some((m) => m.includes('example.invalid'))).toBe(true);
      expect(outside.blocked).toEqual([]);

      // What CSP does not cover (a navigation) is aborted by blockOutside and recorded.
      await expect(page.goto('https://example.invalid/')).rejects.toThrow(/ERR_BLOCKED_BY_CLIENT/);
      expect(outside.blocked).toEqual(['https://example.invalid/']);
    } finally {
      await browser.close();
    }
  });

  it('refuses to read back a WebGL canvas whose drawing buffer was not kept, rather than call it blank', async () => {
    const browser = await launchBrowser({ preserveDrawingBuffer: false });
    try {
      const { page } = browser;
      await page.goto(server.url);
      await page.waitForSelector('body[data-ready="yes"]');
      await expect(canvasNonBlank(page, '#gl')).rejects.toThrow(
        /webgl2 canvas without preserveDrawingBuffer/,
      );
      // What the page shows is still there to count, and a 2D canvas reads back as before.
      expect((await canvasNonBlank(page, '#gl', { via: 'screenshot' })).nonUniform).toBe(true);
      expect((await canvasNonBlank(page, '#flat')).nonUniform).toBe(true);
    } finally {
      await browser.close();
    }
  });
});
