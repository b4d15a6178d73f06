// comlink ships node-adapter.d.ts beside node-adapter.mjs, but TypeScript does not pair them for a deep import.
declare module 'comlink/dist/esm/node-adapter.mjs' {
  import type { Endpoint } from 'comlink';
  interface NodeEndpoint {
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    postMessage(message: any, transfer?: any[]): void;
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    on(type: string, listener: (value: any) => void): void;
    // eslint-disable-next-line @typescript-eslint/no-explicit-any
    off(type: string, listener: (value: any) => void): void;
    start?: () => void;
  }
  export default function nodeEndpoint(nep: NodeEndpoint): Endpoint;
}
