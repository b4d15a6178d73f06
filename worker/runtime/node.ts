/** worker_threads entry: exposes the worker API to the CLI's pool. */
import { parentPort } from 'node:worker_threads';
import { expose } from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { api, type WorkerApi } from './api.ts';
import { digestFile, type ChunkedDigest } from '../cli/file-digest.ts';

/** The worker API with what only Node has: a file's SHA-256 read on this thread (the floor's DEM, see floor.ts). */
export interface NodeWorkerApi extends WorkerApi {
  fileDigest(path: string): ChunkedDigest;
}

if (!parentPort) throw new Error('worker/runtime/node.ts must run inside a worker thread');
const nodeApi: NodeWorkerApi = { ...api, fileDigest: digestFile };
expose(nodeApi, nodeEndpoint(parentPort));
