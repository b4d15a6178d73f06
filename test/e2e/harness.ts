/**
 * Helpers for browser end-to-end tests: playwright-core driving Debian's chromium (/usr/bin/chromium,
 * headless, software WebGL through SwiftShader), with watchers for console errors, page errors and long
 * tasks, a block on every request that leaves this machine, artefacts under test-output/e2e/, and a
 * read-back of a canvas to tell a drawn map from a blank one.
 *
 * Typical use (see serve.test.ts):
 *
 *   const browser = await launchBrowser();
 *   const outside = await blockOutside(browser.context);
 *   const watch = await watchPage(browser.page);   // before the first goto: the long-task observer is an init script
 *   await browser.page.goto(server.url);
 *   ...
 *   expect(watch.consoleErrors).toEqual([]);
 *   expect(outside.blocked).toEqual([]);
 *   await browser.close();
 *
 * Page-side code here is typed against the few DOM members it uses (test/tsconfig.json has no DOM lib).
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, isAbsolute, join, normalize, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM_PATH = '/usr/bin/chromium';

/** Where saveArtefact writes (git-ignored through test-output/). */
export const ARTEFACT_DIR = fileURLToPath(new URL('../../test-output/e2e/', import.meta.url));

export const VIEWPORT = { width: 1400, height: 900 } as const;

/** Chromium flags: headless, no GPU (WebGL through SwiftShader), no traffic of the browser's own. */
export const CHROMIUM_ARGS: readonly string[] = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--use-gl=angle',
  '--use-angle=swiftshader',
  '--enable-unsafe-swiftshader',
  '--ignore-gpu-blocklist',
];

export interface LaunchedBrowser {
  context: BrowserContext;
  /** The context's first page (a persistent context opens with one). */
  page: Page;
  /** The fresh profile folder (removed by close). */
  userDataDir: string;
  /** Closes the browser and removes the profile folder. */
  close(): Promise<void>;
}

export interface LaunchOptions {
  /**
   * Give every WebGL canvas `preserveDrawingBuffer: true` (default true), so that canvasNonBlank can read a
   * WebGL canvas back after its frame was shown. See installCanvasWatch.
   */
  preserveDrawingBuffer?: boolean;
}

/** Starts chromium with a fresh, empty profile (so IndexedDB and caches start empty every time). */
export async function launchBrowser(options: LaunchOptions = {}): Promise<LaunchedBrowser> {
  const userDataDir = mkdtempSync(join(tmpdir(), 'airshade-e2e-profile-'));
  let context: BrowserContext;
  try {
    context = await chromium.launchPersistentContext(userDataDir, {
      executablePath: CHROMIUM_PATH,
      headless: true,
      acceptDownloads: true,
      viewport: { ...VIEWPORT },
      args: [...CHROMIUM_ARGS],
    });
  } catch (e) {
    rmSync(userDataDir, { recursive: true, force: true });
    throw e;
  }
  await installCanvasWatch(context, options.preserveDrawingBuffer ?? true);
  const page = context.pages()[0] ?? (await context.newPage());
  let closing: Promise<void> | undefined;
  return {
    context,
    page,
    userDataDir,
    close() {
      closing ??= context
        .close()
        .catch(() => undefined)
        .then(() => rmSync(userDataDir, { recursive: true, force: true }));
      return closing;
    },
  };
}

/** Page-side canvas watch (JavaScript text, not a function: a transpiler's helpers do not exist in the page). */
const canvasScript = (preserve: boolean) => `(() => {
  const proto = globalThis.HTMLCanvasElement && HTMLCanvasElement.prototype;
  if (!proto || proto.getContext.__airshadeWrapped) return;
  const preserve = ${preserve ? 'true' : 'false'};
  const original = proto.getContext;
  const wrapped = function (kind, attrs) {
    const webgl = kind === 'webgl' || kind === 'webgl2' || kind === 'experimental-webgl';
    const ctx = original.call(this, kind, webgl && preserve ? { ...(attrs || {}), preserveDrawingBuffer: true } : attrs);
    if (ctx && !('__airshadeContextKind' in this)) {
      Object.defineProperty(this, '__airshadeContextKind', { value: kind, configurable: true });
    }
    return ctx;
  };
  Object.defineProperty(wrapped, '__airshadeWrapped', { value: true });
  proto.getContext = wrapped;
})();`;

/**
 * For every document loaded in `context` from now on, each canvas remembers the kind of context it got (which
 * canvasNonBlank checks), and with `preserveDrawingBuffer` (default) WebGL canvases are created with
 * `preserveDrawingBuffer: true`: otherwise the browser clears a WebGL canvas once its frame is shown, and a
 * read-back gives transparent black. launchBrowser calls this.
 */
export async function installCanvasWatch(
  context: BrowserContext,
  preserveDrawingBuffer = true,
): Promise<void> {
  await context.addInitScript({ content: canvasScript(preserveDrawingBuffer) });
}

export interface LongTask {
  /** performance.now() at the task's start (ms). */
  start: number;
  duration: number;
}

export interface PageWatch {
  /** Text of every console message of type 'error' (with its source location when known). */
  consoleErrors: string[];
  /** Uncaught exceptions and unhandled rejections in the page. */
  pageErrors: string[];
  /** Responses with status ≥ 400, as "status url". */
  httpErrors: string[];
}

/** Keeps 'longtask' entries in window.__longTasks (JavaScript text, so no transpiler helper is needed). */
const LONG_TASK_SCRIPT = `(() => {
  if (globalThis.__longTasks) return;
  const tasks = [];
  globalThis.__longTasks = tasks;
  const PO = globalThis.PerformanceObserver;
  if (!PO || !(PO.supportedEntryTypes || []).includes('longtask')) return;
  new PO((list) => {
    for (const e of list.getEntries()) tasks.push({ start: e.startTime, duration: e.duration });
  }).observe({ type: 'longtask', buffered: true });
})();`;

/**
 * Collects console errors, page errors and failed responses of `page`, and installs (for every document loaded
 * in the page's context from now on) a PerformanceObserver that keeps 'longtask' entries in
 * `window.__longTasks`. Call it before the page's first goto.
 */
export async function watchPage(page: Page): Promise<PageWatch> {
  const watch: PageWatch = { consoleErrors: [], pageErrors: [], httpErrors: [] };
  page.on('console', (msg) => {
    if (msg.type() !== 'error') return;
    const at = msg.location();
    const where = at.url ? ` (${at.url}:${at.lineNumber})` : '';
    watch.consoleErrors.push(`${msg.text()}${where}`);
  });
  page.on('pageerror', (err) => {
    watch.pageErrors.push(err.stack ?? `${err.name}: ${err.message}`);
  });
  page.on('response', (res) => {
    if (res.status() >= 400) watch.httpErrors.push(`${res.status()} ${res.url()}`);
  });
  await page.context().addInitScript({ content: LONG_TASK_SCRIPT });
  return watch;
}

/** The long tasks recorded so far in the page's current document (empty when none, or not observed). */
export async function longTasks(page: Page): Promise<LongTask[]> {
  return page.evaluate(() => {
    const g = globalThis as unknown as { __longTasks?: { start: number; duration: number }[] };
    return (g.__longTasks ?? []).map((t) => ({ start: t.start, duration: t.duration }));
  });
}

export interface OutsideBlock {
  /** URLs of the requests that were aborted, in order. */
  blocked: string[];
}

/** Loopback hosts: the only ones a test may reach. */
export function isLocalUrl(url: URL): boolean {
  if (url.protocol === 'data:' || url.protocol === 'blob:' || url.protocol === 'about:') return true;
  const h = url.hostname;
  return h === 'localhost' || h === '[::1]' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h);
}

/**
 * Aborts every request of `context` (pages and, as far as playwright routes them, their workers) that is not
 * to 127.0.0.1 / localhost / [::1] (data: and blob: pass), and every WebSocket to elsewhere, recording the
 * URLs. Requests that the page's Content-Security-Policy refuses never reach the network and so are not
 * recorded here; they show up as console errors in watchPage instead.
 */
export async function blockOutside(context: BrowserContext): Promise<OutsideBlock> {
  const block: OutsideBlock = { blocked: [] };
  await context.route(
    (url) => !isLocalUrl(url),
    async (route) => {
      block.blocked.push(route.request().url());
      await route.abort('blockedbyclient');
    },
  );
  await context.routeWebSocket(
    (url) => !isLocalUrl(url),
    async (ws) => {
      block.blocked.push(ws.url());
      await ws.close({ code: 1008, reason: 'blocked by the test harness' });
    },
  );
  return block;
}

/**
 * Writes `data` to test-output/e2e/`name` (sub-folders allowed, created as needed) and returns the path.
 * `name` must stay inside that folder.
 */
export function saveArtefact(name: string, data: Buffer | Uint8Array | string): string {
  const rel = normalize(name);
  if (name === '' || isAbsolute(rel) || rel === '..' || rel.startsWith('..' + sep)) {
    throw new Error(
      `saveArtefact: name ${JSON.stringify(name)}: expected a relative path inside ${ARTEFACT_DIR}`,
    );
  }
  const path = resolve(ARTEFACT_DIR, rel);
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, data);
  return path;
}

export interface CanvasReadback {
  width: number;
  height: number;
  /** Distinct RGBA values over every pixel. */
  distinctColours: number;
  /** More than one colour: something was drawn. */
  nonUniform: boolean;
  /** Pixels with alpha > 0. */
  opaquePixels: number;
}

export interface CanvasReadbackOptions {
  /**
   * 'canvas' (default): draw the canvas itself onto a 2D canvas in the page and read that; a WebGL canvas must
   * have been created with preserveDrawingBuffer (launchBrowser sees to it), or this throws rather than count a
   * cleared buffer. 'screenshot': what the page shows in the canvas's box (a PNG decoded by the browser), for
   * any kind of canvas; it includes whatever is drawn over the canvas (map controls, popups).
   */
  via?: 'canvas' | 'screenshot';
}

/** Minimal DOM shapes used by the page-side read-back. */
interface Ctx2d {
  drawImage(src: unknown, x: number, y: number): void;
  getImageData(x: number, y: number, w: number, h: number): { data: Uint8ClampedArray };
}
interface CanvasEl {
  width: number;
  height: number;
  tagName?: string;
  __airshadeContextKind?: string;
  getContext(kind: '2d', opts?: { willReadFrequently: boolean }): Ctx2d | null;
  getContext(kind: string): { getContextAttributes(): { preserveDrawingBuffer?: boolean } | null } | null;
}
interface Doc {
  querySelector(selector: string): unknown;
  createElement(tag: 'canvas'): CanvasEl;
  createElement(tag: 'img'): {
    src: string;
    decode(): Promise<void>;
    naturalWidth: number;
    naturalHeight: number;
  };
}

/**
 * Reads the pixels of the canvas matching `selector` and counts its colours. Throws when nothing matches, the
 * element is not a canvas, or it has no pixels.
 */
export async function canvasNonBlank(
  page: Page,
  selector: string,
  options: CanvasReadbackOptions = {},
): Promise<CanvasReadback> {
  const png =
    options.via === 'screenshot' ? (await page.locator(selector).screenshot()).toString('base64') : null;
  return page.evaluate(
    async ({ selector, png }) => {
      const doc = (globalThis as unknown as { document: Doc }).document;
      const el = doc.querySelector(selector) as CanvasEl | null;
      if (!el) throw new Error(`canvasNonBlank: nothing matches ${selector}`);
      const kind = el.__airshadeContextKind;
      if (png === null && kind !== undefined && kind !== '2d') {
        const attrs = el.getContext(kind)?.getContextAttributes();
        if (!attrs?.preserveDrawingBuffer) {
          throw new Error(
            `canvasNonBlank: ${selector} is a ${kind} canvas without preserveDrawingBuffer, so its pixels ` +
              "cannot be read back; launch with preserveDrawingBuffer (the default) or use via: 'screenshot'",
          );
        }
      }
      let source: unknown = el;
      let width = el.width;
      let height = el.height;
      if (png !== null) {
        const img = doc.createElement('img');
        img.src = `data:image/png;base64,${png}`;
        await img.decode();
        source = img;
        width = img.naturalWidth;
        height = img.naturalHeight;
      } else if (el.tagName !== 'CANVAS') {
        throw new Error(`canvasNonBlank: ${selector} is a ${String(el.tagName)}, not a canvas`);
      }
      if (!(width > 0 && height > 0)) throw new Error(`canvasNonBlank: ${selector} is ${width} x ${height}`);
      const copy = doc.createElement('canvas');
      copy.width = width;
      copy.height = height;
      const ctx = copy.getContext('2d', { willReadFrequently: true });
      if (!ctx) throw new Error('canvasNonBlank: no 2D context for the copy');
      ctx.drawImage(source, 0, 0);
      const bytes = ctx.getImageData(0, 0, width, height).data;
      const px = new Uint32Array(bytes.buffer, bytes.byteOffset, bytes.length / 4);
      const colours = new Set<number>();
      let opaque = 0;
      for (let i = 0; i < px.length; i++) {
        colours.add(px[i]);
        if (bytes[4 * i + 3] !== 0) opaque++;
      }
      return {
        width,
        height,
        distinctColours: colours.size,
        nonUniform: colours.size > 1,
        opaquePixels: opaque,
      };
    },
    { selector, png },
  );
}
