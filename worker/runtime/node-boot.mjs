// Development boot for the worker_threads entry: Node 20 cannot start a .ts worker directly (not even with
// --import tsx), so this plain module loads it through tsx. The built CLI uses dist/cli/node.js instead.
import { tsImport } from 'tsx/esm/api';

await tsImport('./node.ts', import.meta.url);
