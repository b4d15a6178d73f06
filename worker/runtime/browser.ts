/**
 * Web Worker entry of a floor worker (the app's pool): exposes the worker API on the MessagePort the app sends
 * it, so that the engine worker drives it directly (worker/runtime/pool.ts) without a hop through the main thread.
 */
import { expose } from 'comlink';
import { api } from './api.ts';

self.addEventListener('message', (e: MessageEvent) => {
  const port = (e.data as { airshadePort?: MessagePort } | null)?.airshadePort;
  if (port) expose(api, port);
});
