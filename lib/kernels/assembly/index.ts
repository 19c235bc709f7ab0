// Entry of the WebAssembly kernel module (AssemblyScript). Built by scripts/build-kernels.mjs.
export * from "./product";
export * from "./qr";
export * from "./fourier";
export * from "./condition";

/** First byte of linear memory free for the caller (above the module's own static data), 64-byte aligned. */
export function heapBase(): usize {
  return (__heap_base + 63) & ~63;
}
