/**
 * Loads the grid sweep's line kernel (worker/kernel/line-kernel.ts, compiled by scripts/build-kernel.mjs): one
 * instance per octant, with its own memory. Where WebAssembly or its SIMD is missing, `lineKernel` answers null and
 * grid-sweep.ts runs the same operations in JavaScript.
 */
import { LINE_KERNEL_WASM_BASE64 } from './line-kernel-wasm.ts';

/** The kernel's exports; every pointer is a byte offset into `buffer`. */
export interface LineKernel {
  readonly buffer: ArrayBuffer;
  widen(src: number, first: number, step: number, mEnd: number, z: number): void;
  emit(h: number, dst: number, first: number, step: number, wLo: number, wHi: number, len: number): number;
  distances(
    v: number,
    nx: number,
    ny: number,
    bk: number,
    c: number,
    r: number,
    dc: number,
    dr: number,
    mEnd: number,
    maxRange: number,
    s: number,
  ): number;
  farLine(
    tp: number,
    zp: number,
    last: number,
    T: number,
    z: number,
    s: number,
    h: number,
    d: number,
    len: number,
    re: number,
    invRe: number,
    rha: number,
    cap: number,
  ): void;
}

/** The part of the WebAssembly API used here (the core's type libraries do not declare it). */
interface Wasm {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: Record<string, unknown> };
  Memory: new (desc: { initial: number }) => { buffer: ArrayBuffer };
}

let compiled: object | null | undefined;

/** The bytes of a base64 text (the kernels' embedded WebAssembly; no platform decoder needed). */
export function decodeBase64(text: string): Uint8Array {
  const abc = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
  const clean = text.replace(/=+$/, '');
  const out = new Uint8Array(Math.floor((clean.length * 3) / 4));
  let bits = 0;
  let acc = 0;
  let o = 0;
  for (let i = 0; i < clean.length; i++) {
    acc = (acc << 6) | abc.indexOf(clean[i]);
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (acc >> bits) & 255;
    }
  }
  return out;
}

/** A kernel instance with at least `bytes` bytes of its own memory, or null where it cannot run. */
export function lineKernel(bytes: number): LineKernel | null {
  const wasm = (globalThis as { WebAssembly?: Wasm }).WebAssembly;
  if (compiled === undefined) {
    try {
      compiled = wasm === undefined ? null : new wasm.Module(decodeBase64(LINE_KERNEL_WASM_BASE64));
    } catch {
      compiled = null; // no SIMD here, or compiling refused (a content security policy)
    }
  }
  if (compiled === null || wasm === undefined) return null;
  const memory = new wasm.Memory({ initial: Math.ceil(bytes / 65536) });
  const e = new wasm.Instance(compiled, { env: { memory } }).exports;
  return {
    buffer: memory.buffer,
    widen: e.widen as LineKernel['widen'],
    emit: e.emit as LineKernel['emit'],
    distances: e.distances as LineKernel['distances'],
    farLine: e.farLine as LineKernel['farLine'],
  };
}
