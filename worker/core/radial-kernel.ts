/**
 * The radial sweep's WebAssembly kernel (worker/kernel/radial-kernel.ts, compiled by scripts/build-kernel.mjs) and
 * the memory it works in: the terrain's own. A terrain read for a study is put at the start of a shared
 * WebAssembly.Memory (`terrainMemory`); the polar buffers of screening tans and each thread's range tables are
 * regions grown at its end (`growRegion`), so the kernel reads the terrain and writes the tans where they are, with
 * no copy. Every thread that sweeps instantiates the kernel once on that memory (`radialKernel`). Where WebAssembly,
 * its SIMD or its threads are missing, these answer null and horizon.ts runs its JavaScript sweep, which gives the
 * same bits (test/radial-kernel.test.ts).
 */
import { RADIAL_KERNEL_WASM_BASE64 } from './radial-kernel-wasm.ts';
import { decodeBase64 } from './line-kernel.ts';

/** A WebAssembly.Memory as used here (the core's type libraries do not declare WebAssembly). */
export interface WasmMemory {
  readonly buffer: ArrayBuffer | SharedArrayBuffer;
  grow(pages: number): number;
}

interface Wasm {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: Record<string, unknown> };
  Memory: new (desc: { initial: number; maximum: number; shared: boolean }) => WasmMemory;
}

const PAGE = 65_536;
/** The most pages a memory can have: 4 GiB, what the kernel's 32-bit addresses reach. */
const MAX_PAGES = 65_536;
/**
 * A terrain larger than this (bytes) stays out of WebAssembly memory: the rest of the 4 GiB is left for the polar
 * buffers (about 180 MB for a 400 km reach over 3″ terrain) and the range tables.
 */
export const TERRAIN_MEMORY_MAX_BYTES = 3 * 2 ** 30;

function wasmApi(): Wasm | undefined {
  return (globalThis as { WebAssembly?: Wasm }).WebAssembly;
}

let compiled: object | null | undefined;

function kernelModule(): object | null {
  if (compiled === undefined) {
    const wasm = wasmApi();
    try {
      compiled = wasm === undefined ? null : new wasm.Module(decodeBase64(RADIAL_KERNEL_WASM_BASE64));
    } catch {
      compiled = null; // no SIMD or threads here, or compiling refused (a content security policy)
    }
  }
  return compiled;
}

/**
 * A shared memory with room for `cells` Float32 at byte 0 (zeroed), growable to 4 GiB; null where the kernel cannot
 * run here or the raster is larger than TERRAIN_MEMORY_MAX_BYTES.
 */
export function terrainMemory(cells: number): WasmMemory | null {
  const wasm = wasmApi();
  if (wasm === undefined || kernelModule() === null || cells * 4 > TERRAIN_MEMORY_MAX_BYTES) return null;
  try {
    return new wasm.Memory({
      initial: Math.max(1, Math.ceil((cells * 4) / PAGE)),
      maximum: MAX_PAGES,
      shared: true,
    });
  } catch {
    return null; // the address space could not be reserved
  }
}

/** Byte offset of a fresh zeroed region of at least `bytes` bytes, grown at the memory's end; −1 when it cannot grow. */
export function growRegion(memory: WasmMemory, bytes: number): number {
  try {
    return memory.grow(Math.ceil(bytes / PAGE)) * PAGE;
  } catch {
    return -1;
  }
}

/** The kernel's exports (`pairRun` as documented in worker/kernel/radial-kernel.ts) and this thread's tables. */
export interface RadialKernel {
  pairRun(
    data: number,
    W: number,
    j0: number,
    jEnd: number,
    pxA: number,
    pxB: number,
    pyA: number,
    pyB: number,
    vxA: number,
    vxB: number,
    vyA: number,
    vyB: number,
    axA: number,
    axB: number,
    ayA: number,
    ayB: number,
    TA: number,
    TB: number,
    re: number,
    rha: number,
    cosP: number,
    sinP: number,
    dst: number,
    stride: number,
  ): void;
  readonly stoppedAt: { readonly value: number };
  readonly tanA: { readonly value: number };
  readonly tanB: { readonly value: number };
  /**
   * Byte offsets of this thread's cos and sin tables, copied in from `cos` and `sin` (the range tables of one sweep);
   * −1 when the memory cannot grow for them.
   */
  tables(cos: Float64Array, sin: Float64Array): number;
}

const kernels = new WeakMap<WasmMemory, RadialKernel | null>();

/** This thread's kernel on `memory` (one instance per thread and memory), or null where it cannot run. */
export function radialKernel(memory: WasmMemory): RadialKernel | null {
  let k = kernels.get(memory);
  if (k === undefined) {
    k = instantiate(memory);
    kernels.set(memory, k);
  }
  return k;
}

function instantiate(memory: WasmMemory): RadialKernel | null {
  const wasm = wasmApi();
  const module = kernelModule();
  if (wasm === undefined || module === null) return null;
  let e: Record<string, unknown>;
  try {
    e = new wasm.Instance(module, { env: { memory } }).exports;
  } catch {
    return null; // a memory the module cannot import (not shared)
  }
  let at = -1;
  let room = 0;
  return {
    pairRun: e.pairRun as RadialKernel['pairRun'],
    stoppedAt: e.stoppedAt as RadialKernel['stoppedAt'],
    tanA: e.tanA as RadialKernel['tanA'],
    tanB: e.tanB as RadialKernel['tanB'],
    tables(cos, sin) {
      const n = cos.length;
      if (n > room) {
        // Grown once a thread, again only for a longer sweep (the region before it is left unused).
        at = growRegion(memory, 16 * n);
        room = at < 0 ? 0 : n;
        if (at < 0) return -1;
      }
      const t = new Float64Array(memory.buffer, at, 2 * n);
      t.set(cos);
      t.set(sin, n);
      return at;
    },
  };
}
