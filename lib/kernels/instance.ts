import { KERNELS_WASM_BASE64 } from "./wasmBinary.generated.ts";

/** The functions the WebAssembly module exports (byte offsets into its memory for every array). */
export interface KernelExports {
  memory: WebAssembly.Memory;
  heapBase(): number;
  gemmWorkBytes(): number;
  gemmF32(m: number, n: number, k: number, a: number, lda: number, transA: number, b: number, bPanelStride: number,
    c: number, ldc: number, mode: number, work: number): void;
  gemmF64(m: number, n: number, k: number, a: number, lda: number, transA: number, b: number, bPanelStride: number,
    c: number, ldc: number, mode: number, work: number): void;
  gemvF32(k: number, n: number, f: number, b: number, bPanelStride: number, out: number): void;
  gemvF64(k: number, n: number, f: number, b: number, bPanelStride: number, out: number): void;
  packPanelsF32(src: number, ld: number, transSrc: number, k: number, n: number, dst: number, panelStride: number): void;
  packPanelsF64(src: number, ld: number, transSrc: number, k: number, n: number, dst: number, panelStride: number): void;
  rowMaxAbsF32(c: number, rows: number, cols: number, ldc: number, out: number): void;
  rowMaxAbsF64(c: number, rows: number, cols: number, ldc: number, out: number): void;
  qrWorkBytes(rows: number, cols: number, rhsCount: number): number;
  qrFactor(a: number, rows: number, cols: number, tau: number, work: number): void;
  applyQTranspose(a: number, rows: number, cols: number, tau: number, rhs: number, rhsCount: number, work: number): void;
  solveUpper(a: number, rows: number, cols: number, x: number, rhsCount: number, work: number): void;
  dominantEigenvalue(rr: number, n: number, inverse: number, maxIterations: number, work: number): number;
  foldedSums(halfNodes: number, pairs: number, count: number, kernels: number,
    pRe: number, pIm: number, qRe: number, qIm: number, moment: number, out: number): void;
}

/** Store modes of the product kernels. */
export const MODE_SET = 0;
export const MODE_ADD = 1;
export const MODE_SUBTRACT = 2;

const PAGE = 65536;
/** Resident arrays (packed model coefficients, transform kernels) kept at most this many bytes before a reset. */
const RESIDENT_LIMIT_BYTES = 256 << 20;

interface Resident {
  ptr: number;
  generation: number;
}

/**
 * One instance of the kernel module and a simple manager of its linear memory. Memory is laid out as
 * `[module data][resident arrays ...][scratch of the current call]`: resident arrays (a model's packed
 * coefficients, say) stay between calls, keyed by the object they were made from; scratch is reused by every call.
 * When the residents pass {@link RESIDENT_LIMIT_BYTES} they are all dropped and rebuilt on demand. A call may hold
 * one resident only (taken before its scratch), so a reset never pulls one out from under a running call.
 * Everything is synchronous, and each thread has its own instance (module state is per thread in JavaScript).
 */
export class KernelInstance {
  readonly exports: KernelExports;
  private readonly base: number;
  private residentTop: number;
  private scratchTop: number;
  private generation = 0;
  private readonly residents = new WeakMap<object, Resident>();
  private buffer: ArrayBuffer | null = null;
  private view32: Float32Array = new Float32Array(0);
  private view64: Float64Array = new Float64Array(0);

  constructor(exports: KernelExports) {
    this.exports = exports;
    this.base = exports.heapBase();
    this.residentTop = this.base;
    this.scratchTop = this.base;
  }

  /** float32 view of the whole memory (renewed after the memory grows). */
  get f32(): Float32Array {
    this.refresh();
    return this.view32;
  }

  /** float64 view of the whole memory. */
  get f64(): Float64Array {
    this.refresh();
    return this.view64;
  }

  private refresh(): void {
    const buffer = this.exports.memory.buffer;
    if (buffer !== this.buffer) {
      this.buffer = buffer;
      this.view32 = new Float32Array(buffer);
      this.view64 = new Float64Array(buffer);
    }
  }

  private ensure(end: number): void {
    const have = this.exports.memory.buffer.byteLength;
    if (end > have) this.exports.memory.grow(Math.ceil((end - have) / PAGE));
  }

  /**
   * Offset of the resident array made from `key` (built by `fill(ptr)` on first use or after a reset).
   * Starts a new call: scratch taken earlier is released.
   */
  resident(key: object, bytes: number, fill: (ptr: number) => void): number {
    const found = this.residents.get(key);
    if (found && found.generation === this.generation) {
      this.scratchTop = this.residentTop;
      return found.ptr;
    }
    if (this.residentTop + bytes - this.base > RESIDENT_LIMIT_BYTES && this.residentTop > this.base) {
      this.generation++;
      this.residentTop = this.base;
    }
    const ptr = this.residentTop;
    this.residentTop = align(ptr + bytes);
    this.ensure(this.residentTop);
    this.residents.set(key, { ptr, generation: this.generation });
    // fill may use scratch above the new resident.
    this.scratchTop = this.residentTop;
    fill(ptr);
    this.scratchTop = this.residentTop;
    return ptr;
  }

  /** Start a call that holds no resident: all scratch is released. */
  begin(): void {
    this.scratchTop = this.residentTop;
  }

  /** `bytes` of scratch, 64-byte aligned, valid until the next call starts. */
  scratch(bytes: number): number {
    const ptr = this.scratchTop;
    this.scratchTop = align(ptr + bytes);
    this.ensure(this.scratchTop);
    return ptr;
  }
}

function align(bytes: number): number {
  return (bytes + 63) & ~63;
}

function decodeBase64(text: string): Uint8Array<ArrayBuffer> {
  const binary = atob(text);
  const bytes = new Uint8Array(new ArrayBuffer(binary.length));
  for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

let instance: KernelInstance | null | undefined;
let enabled = true;

/**
 * Turn the kernels off (or on again) in this thread, so that every caller runs its TypeScript reference: for
 * benchmarks and tests that put the two side by side. Returns the previous setting.
 */
export function setKernelsEnabled(on: boolean): boolean {
  const previous = enabled;
  enabled = on;
  return previous;
}

/**
 * The kernel module of this thread, instantiated on first use (synchronously: the module is about 10 KB), or
 * null where WebAssembly with 128-bit SIMD is not available; callers then run the TypeScript reference.
 */
export function kernelInstance(): KernelInstance | null {
  if (!enabled) return null;
  if (instance === undefined) {
    instance = null;
    if (typeof WebAssembly === "object") {
      const bytes = decodeBase64(KERNELS_WASM_BASE64);
      if (WebAssembly.validate(bytes)) {
        const module = new WebAssembly.Module(bytes);
        instance = new KernelInstance(new WebAssembly.Instance(module, {}).exports as unknown as KernelExports);
      }
    }
  }
  return instance;
}
