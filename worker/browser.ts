/** Web Worker entry: exposes the worker API to the app's pool (the app wraps it as Remote<WorkerApi>). */
import { expose } from 'comlink';
import { api } from './api.ts';

expose(api);
