#!/usr/bin/env node
// A small static file server for the built web app (dist/app) and its data folder, with the headers the app
// needs: cross-origin isolation (COOP + COEP, so SharedArrayBuffer works in the page and its workers), a strict
// Content-Security-Policy, and no caching surprises. Only node:http / node:fs / node:path.
//
//   node bin/serve.mjs [--port N] [--data DIR] [--host H]
//
// Routes: /data/... → files under the data folder; everything else → files under the app folder; a folder
// (and so `/`) → its index.html. A path that resolves outside its folder is 404, and so is a file whose real path
// (links followed) leaves the folder's real path: a symbolic link inside does not lead out. Only GET and HEAD. A single
// byte range (`Range: bytes=a-b`) is answered with 206, so readers that fetch parts of a GeoTIFF work too.
import { createReadStream, realpathSync } from 'node:fs';
import { realpath, stat } from 'node:fs/promises';
import { createServer } from 'node:http';
import { extname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * The caution printed on start. A copy of CAUTION in shared/caution.ts (this file runs in plain node, without a
 * TypeScript loader): keep the two identical — test/caution.test.ts checks that they are.
 */
export const CAUTION =
  'A planning aid, not a certified or flight-inspected result. Results depend on the terrain data and on the ' +
  "refraction assumed; defer to the local authority's standards and licensed engineering practice.";

/** The Content-Security-Policy sent with every response. */
export const CSP = [
  "default-src 'self'",
  "script-src 'self' 'wasm-unsafe-eval'",
  "worker-src 'self' blob:",
  "img-src 'self' data: blob:",
  "style-src 'self'",
  "connect-src 'self' blob: data:",
  "font-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "frame-ancestors 'none'",
].join('; ');

/** Headers on every response, whatever its status. */
export const SECURITY_HEADERS = Object.freeze({
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Embedder-Policy': 'require-corp',
  'Cross-Origin-Resource-Policy': 'same-origin',
  'X-Content-Type-Options': 'nosniff',
  'Cache-Control': 'no-cache',
  'Content-Security-Policy': CSP,
});

/** Content types by file extension (lower case); anything else is application/octet-stream. */
export const MIME_TYPES = Object.freeze({
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.wasm': 'application/wasm',
  '.tif': 'image/tiff',
  '.tiff': 'image/tiff',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.geojson': 'application/geo+json',
  '.csv': 'text/csv; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.txt': 'text/plain; charset=utf-8',
  '.ico': 'image/x-icon',
});

const DATA_PREFIX = '/data/';
const DEFAULT_PORT = 5178;
/** How many ports after the asked one the command tries when it is busy. */
const PORT_TRIES = 20;

/** The content type for a file name. */
export function mimeType(file) {
  return MIME_TYPES[extname(file).toLowerCase()] ?? 'application/octet-stream';
}

/**
 * The file a request path names under `base`, or null when it leaves `base` (or cannot be decoded). `rest` is
 * the raw (still percent-encoded) path below the route's prefix, without the query.
 */
function fileUnder(base, rest) {
  let decoded;
  try {
    decoded = decodeURIComponent(rest);
  } catch {
    return null;
  }
  if (decoded.includes('\0')) return null;
  const file = resolve(base, '.' + sep + decoded);
  const rel = relative(base, file);
  if (rel === '..' || rel.startsWith('..' + sep) || isAbsolute(rel)) return null;
  return file;
}

/** `bytes=a-b` / `bytes=a-` / `bytes=-n` → {start, end} (inclusive); 'unsatisfiable'; or null to send it all. */
function parseRange(header, size) {
  if (typeof header !== 'string') return null;
  const m = /^bytes=(\d*)-(\d*)$/.exec(header.trim());
  if (!m || (m[1] === '' && m[2] === '')) return null; // several ranges or another unit: send the whole file
  let start;
  let end;
  if (m[1] === '') {
    const n = Number(m[2]);
    if (n === 0) return 'unsatisfiable';
    start = Math.max(0, size - n);
    end = size - 1;
  } else {
    start = Number(m[1]);
    end = m[2] === '' ? size - 1 : Math.min(Number(m[2]), size - 1);
    if (m[2] !== '' && Number(m[2]) < start) return null; // invalid: ignore the header (RFC 9110 §14.2)
  }
  if (start >= size) return 'unsatisfiable';
  return { start, end };
}

function sendStatus(res, status, text, extra = {}) {
  const body = `${status} ${text}\n`;
  res.writeHead(status, {
    ...SECURITY_HEADERS,
    'Content-Type': 'text/plain; charset=utf-8',
    'Content-Length': Buffer.byteLength(body),
    ...extra,
  });
  res.end(res.req.method === 'HEAD' ? undefined : body);
}

/** Whether `file` lies inside `base` (both absolute). */
function isInside(base, file) {
  const rel = relative(base, file);
  return rel !== '..' && !rel.startsWith('..' + sep) && !isAbsolute(rel);
}

/**
 * The file to send for `file` (a folder's index.html), by its real path, or null. With `realBase` (the real path of
 * the route's folder), a file whose real path leaves it is null: links inside the folder never lead out.
 */
async function findFile(file, realBase) {
  try {
    let st = await stat(file);
    if (st.isDirectory()) {
      file = join(file, 'index.html');
      st = await stat(file);
    }
    if (!st.isFile()) return null;
    const real = await realpath(file);
    if (realBase !== undefined && !isInside(realBase, real)) return null;
    return { file, real, st };
  } catch {
    return null;
  }
}

async function handle(req, res, root, dataDir, realRoot, realData) {
  if (req.method !== 'GET' && req.method !== 'HEAD') {
    sendStatus(res, 405, 'Method Not Allowed', { Allow: 'GET, HEAD' });
    return;
  }
  const rawPath = (req.url ?? '/').split(/[?#]/, 1)[0];
  if (!rawPath.startsWith('/')) {
    sendStatus(res, 400, 'Bad Request');
    return;
  }
  const inData = rawPath.startsWith(DATA_PREFIX);
  const target = inData
    ? fileUnder(dataDir, rawPath.slice(DATA_PREFIX.length))
    : fileUnder(root, rawPath.slice(1));
  const found = target === null ? null : await findFile(target, inData ? realData : realRoot);
  if (found === null) {
    sendStatus(res, 404, 'Not Found');
    return;
  }
  const { file, st } = found;
  const etag = `W/"${st.size.toString(16)}-${Math.floor(st.mtimeMs).toString(16)}"`;
  const headers = {
    ...SECURITY_HEADERS,
    'Content-Type': mimeType(file),
    'Accept-Ranges': 'bytes',
    'Last-Modified': st.mtime.toUTCString(),
    ETag: etag,
  };
  if (req.headers['if-none-match'] === etag) {
    res.writeHead(304, headers);
    res.end();
    return;
  }
  const range = parseRange(req.headers.range, st.size);
  if (range === 'unsatisfiable') {
    sendStatus(res, 416, 'Range Not Satisfiable', { 'Content-Range': `bytes */${st.size}` });
    return;
  }
  const start = range ? range.start : 0;
  const end = range ? range.end : st.size - 1;
  const length = end - start + 1;
  if (range) headers['Content-Range'] = `bytes ${start}-${end}/${st.size}`;
  res.writeHead(range ? 206 : 200, { ...headers, 'Content-Length': length });
  if (req.method === 'HEAD' || length <= 0) {
    res.end();
    return;
  }
  const stream = createReadStream(found.real, { start, end });
  stream.on('error', () => res.destroy());
  res.on('close', () => stream.destroy());
  stream.pipe(res);
}

function formatUrl(host, port) {
  const h = host.includes(':') ? `[${host}]` : host;
  return `http://${h}:${port}/`;
}

/**
 * Starts the server. `root`: the app folder; `dataDir`: the folder served under /data/; `port` 0 picks a free
 * one. Resolves once listening (rejects with the listen error, e.g. EADDRINUSE).
 */
export async function startServer({ root, dataDir, port = 0, host = '127.0.0.1' }) {
  if (typeof root !== 'string' || root === '') throw new TypeError('startServer: root must be a folder path');
  if (typeof dataDir !== 'string' || dataDir === '') {
    throw new TypeError('startServer: dataDir must be a folder path');
  }
  const rootAbs = resolve(root);
  const dataAbs = resolve(dataDir);
  // The folders' own real paths (they may themselves be links): what a served file must stay inside.
  const realRoot = await realpath(rootAbs).catch(() => rootAbs);
  const realData = await realpath(dataAbs).catch(() => dataAbs);
  const server = createServer((req, res) => {
    handle(req, res, rootAbs, dataAbs, realRoot, realData).catch(() => {
      if (!res.headersSent) sendStatus(res, 500, 'Internal Server Error');
      else res.destroy();
    });
  });
  await new Promise((ok, fail) => {
    server.once('error', fail);
    server.listen(port, host, () => {
      server.off('error', fail);
      ok();
    });
  });
  const address = server.address();
  const url = formatUrl(host, typeof address === 'object' && address ? address.port : port);
  let closing;
  return {
    url,
    close() {
      closing ??= new Promise((ok) => {
        server.close(() => ok());
        server.closeAllConnections();
      });
      return closing;
    },
  };
}

// ---------------------------------------------------------------------------------------------------
// The command

const USAGE = 'usage: node bin/serve.mjs [--port N] [--data DIR] [--host HOST]';

function parseArgs(argv) {
  const opts = { port: DEFAULT_PORT, data: null, host: '127.0.0.1', help: false };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const eq = a.indexOf('=');
    const name = a.startsWith('--') && eq > 0 ? a.slice(0, eq) : a;
    const value = () => {
      if (eq > 0 && a.startsWith('--')) return a.slice(eq + 1);
      if (i + 1 >= argv.length)
        throw new Error(`${name}: found nothing after it, expected a value (${USAGE})`);
      return argv[++i];
    };
    if (name === '--help' || name === '-h') opts.help = true;
    else if (name === '--port') {
      const v = value();
      const n = Number(v);
      if (!/^\d+$/.test(v) || n > 65535) {
        throw new Error(`--port: found ${JSON.stringify(v)}, expected a port number from 0 to 65535`);
      }
      opts.port = n;
    } else if (name === '--data') opts.data = value();
    else if (name === '--host') opts.host = value();
    else throw new Error(`argument ${JSON.stringify(a)}: not known, expected one of --port, --data, --host`);
  }
  return opts;
}

async function main(argv) {
  let opts;
  try {
    opts = parseArgs(argv);
  } catch (e) {
    console.error(`serve: ${e.message}`);
    return 2;
  }
  if (opts.help) {
    console.log(USAGE);
    console.log('Serves the built web app (dist/app) and its data folder (default: data/).');
    return 0;
  }
  const repo = fileURLToPath(new URL('..', import.meta.url));
  const root = join(repo, 'dist', 'app');
  const dataDir = opts.data === null ? join(repo, 'data') : resolve(opts.data);
  const index = await findFile(root);
  if (index === null) {
    console.error(
      `serve: ${join(root, 'index.html')}: not found, expected the built web app (run npx vite build)`,
    );
    return 1;
  }
  const dataSt = await stat(dataDir).catch(() => null);
  if (!dataSt?.isDirectory()) {
    console.error(
      `serve: --data ${dataDir}: ${dataSt ? 'not a folder' : 'does not exist'}, expected a data folder`,
    );
    return 1;
  }
  const tries = opts.port === 0 ? 1 : PORT_TRIES;
  let server = null;
  for (let k = 0; k < tries && server === null; k++) {
    const port = opts.port + k;
    if (port > 65535) break;
    try {
      server = await startServer({ root, dataDir, port, host: opts.host });
    } catch (e) {
      if (e?.code !== 'EADDRINUSE' || k === tries - 1) {
        console.error(`serve: cannot listen on ${opts.host}:${port}: ${e?.message ?? e}`);
        return 1;
      }
    }
  }
  if (server === null) {
    console.error(`serve: no free port from ${opts.port}`);
    return 1;
  }
  console.log(`Airshade is running at ${server.url}`);
  console.log(
    'Open it in Chromium, Chrome, Edge or Firefox; the demo loads on the first visit. Ctrl+C stops the server.',
  );
  console.log(CAUTION);
  const stop = () => {
    server.close().then(() => process.exit(0));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
  return null;
}

function runDirectly() {
  if (!process.argv[1]) return false;
  try {
    return realpathSync(process.argv[1]) === realpathSync(fileURLToPath(import.meta.url));
  } catch {
    return false;
  }
}

if (runDirectly()) {
  const code = await main(process.argv.slice(2));
  if (code !== null) process.exitCode = code;
}
