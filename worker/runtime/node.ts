/** worker_threads entry: exposes the worker API to the CLI's pool. */
import { parentPort } from 'node:worker_threads';
import { expose } from 'comlink';
import nodeEndpoint from 'comlink/dist/esm/node-adapter.mjs';
import { api } from './api.ts';

if (!parentPort) throw new Error('worker/runtime/node.ts must run inside a worker thread');
expose(api, nodeEndpoint(parentPort));
